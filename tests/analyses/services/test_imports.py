"""Results from instrument files: the titrator layout through the bulk entry, all or nothing,
errors by row and column, and a re-import of the same file is a replay."""
from __future__ import annotations

import pytest

from analyses.errors import Conflict, InvalidInput, NotAllowed
from analyses.models import AuditEntry, ImportMapping, Result, ResultImport, Test
from analyses.services.imports import import_mapping_create, results_import
from tests.analyses.concurrency import race

pytestmark = pytest.mark.django_db

HEADINGS = "Sample,Method,V (mL),Blank (mL),Mass (g),Titrant,Instruments\n"
COLUMNS = {"sample": "Sample", "method": "Method", "titre": "V (mL)", "blank": "Blank (mL)",
           "sample_mass": "Mass (g)", "titrant_lot": "Titrant", "instruments": "Instruments"}


@pytest.fixture
def mapping(users):
    return import_mapping_create(users["manager"], name="titrator 2 export", layout="titrator", columns=COLUMNS)


def _file(*lines: str) -> bytes:
    return (HEADINGS + "".join(line + "\n" for line in lines)).encode()


# AV rows as lab_setup.AV_LOW and AV_LOW_TWIN (ISO 660: (1.30 - 0.05) * 0.1 * 56.1 / 20.0 = 0.350625),
# PV rows as PV_LOW and PV_LOW_TWIN, on the bench titrant lots and instruments
GOOD = _file(
    "L-100-A,av,1.30,0.05,20.0,KOH-BENCH,BAL-BENCH;BUR-BENCH",
    "L-100-A,av,1.33,0.05,20.0,KOH-BENCH,BAL-BENCH;BUR-BENCH",
    "L-100-A,pv,12.5,0.05,5.0,THIO-BENCH,BAL-BENCH;BUR-BENCH",
    "L-100-A,pv,12.7,0.05,5.0,THIO-BENCH,BAL-BENCH;BUR-BENCH",
)


def test_a_titrator_file_enters_every_row_as_a_result(users, assigned_tests, mapping):
    outcome = results_import(users["analyst"], content=GOOD, file_name="run-0412.csv", mapping="titrator 2 export")
    assert not outcome.replayed and outcome.result_import.rows == 4
    results = Result.objects.filter(pk__in=outcome.result_import.result_ids).order_by("pk")
    assert [(r.test.method_code, r.replicate) for r in results] == [("av", 1), ("av", 2), ("pv", 1), ("pv", 2)]
    # the same figure the plugin's worked example gives: ISO 660, 0.350625 mg KOH/g
    assert str(results[0].value_exact) == "0.350625"
    assert set(Test.objects.filter(pk__in=[t.pk for t in assigned_tests]).values_list("state", flat=True)) == {"result_entered"}
    assert AuditEntry.objects.filter(object_type="analyses.resultimport").count() == 1


def test_the_same_file_again_is_a_replay_not_a_duplicate(users, assigned_tests, mapping):
    first = results_import(users["analyst"], content=GOOD, file_name="run-0412.csv", mapping=mapping)
    again = results_import(users["analyst"], content=GOOD, file_name="renamed.csv", mapping=mapping)
    assert again.replayed and again.result_import.pk == first.result_import.pk
    assert Result.objects.count() == 4 and ResultImport.objects.count() == 1


def test_the_same_file_with_another_mapping_is_refused(users, assigned_tests, mapping):
    results_import(users["analyst"], content=GOOD, file_name="run.csv", mapping=mapping)
    other = import_mapping_create(users["manager"], name="copy", layout="titrator", columns=COLUMNS)
    with pytest.raises(Conflict, match="imported on .* with the mapping 'titrator 2 export'"):
        results_import(users["analyst"], content=GOOD, file_name="run.csv", mapping=other)


@pytest.mark.parametrize(
    ("bad_row", "message"),
    [
        ("L-100-A,pv,abc,0.05,5.0,THIO-BENCH,BAL-BENCH;BUR-BENCH", "row 3, column V (mL): "),
        ("L-100-A,pv,12.5,0.05,5.0,NO-SUCH-LOT,BAL-BENCH;BUR-BENCH", "row 3, column Titrant: "),
        ("L-999,pv,12.5,0.05,5.0,THIO-BENCH,BAL-BENCH;BUR-BENCH", "row 3, column Sample: sample 'L-999' has no 'pv' test"),
        ("L-100-A,pv,12.5,0.05,0,THIO-BENCH,BAL-BENCH;BUR-BENCH", "row 3, column Mass (g): "),
    ],
)
def test_a_bad_cell_is_named_by_row_and_column_and_nothing_is_entered(users, assigned_tests, mapping, bad_row, message):
    content = _file("L-100-A,av,1.30,0.05,20.0,KOH-BENCH,BAL-BENCH;BUR-BENCH", bad_row)
    with pytest.raises((InvalidInput, Conflict)) as problem:
        results_import(users["analyst"], content=content, file_name="run.csv", mapping=mapping)
    assert problem.value.detail.startswith(message), problem.value.detail
    # all or nothing: the good first row was not kept, and the file was not recorded as imported
    assert not Result.objects.exists() and not ResultImport.objects.exists()


def test_file_level_refusals_name_the_file(users, assigned_tests, mapping, settings):
    for content, name, reason in (
        (b"Sample,Method\nL-100-A,av\n", "run.csv", "no column"),
        (GOOD, "run.pdf", ".csv or .xlsx"),
        (HEADINGS.encode(), "run.csv", "no data rows"),
        (_file("L-100-A,av,=1+1,0.05,20.0,KOH-BENCH,BAL-BENCH"), "run.csv", "row 2, column V (mL): holds a formula"),
    ):
        with pytest.raises(InvalidInput) as problem:
            results_import(users["analyst"], content=content, file_name=name, mapping=mapping)
        assert list(problem.value.fields) == ["file"] and reason in problem.value.detail
    settings.OLEOTRACE_IMPORT_MAX_BYTES = 100
    with pytest.raises(InvalidInput, match="the limit is 100"):
        results_import(users["analyst"], content=GOOD, file_name="run.csv", mapping=mapping)


def test_qa_never_imports_and_only_managers_make_mappings(users, assigned_tests, mapping):
    with pytest.raises(NotAllowed):
        results_import(users["qa"], content=GOOD, file_name="run.csv", mapping=mapping)
    with pytest.raises(NotAllowed):
        import_mapping_create(users["analyst"], name="mine", layout="titrator", columns=COLUMNS)


def test_a_mapping_must_name_the_layouts_required_columns(users):
    with pytest.raises(InvalidInput) as problem:
        import_mapping_create(users["manager"], name="short", layout="titrator", columns={"sample": "S", "method": "M"})
    assert list(problem.value.fields) == ["columns.titre"]
    with pytest.raises(InvalidInput) as unknown:
        import_mapping_create(users["manager"], name="odd", layout="titrator", columns={**COLUMNS, "colour": "C"})
    assert list(unknown.value.fields) == ["columns.colour"]
    import_mapping_create(users["manager"], name="taken", layout="titrator", columns=COLUMNS)
    with pytest.raises(InvalidInput) as taken:
        import_mapping_create(users["manager"], name="taken", layout="titrator", columns=COLUMNS)
    assert list(taken.value.fields) == ["name"]
    assert ImportMapping.objects.count() == 1


@pytest.mark.django_db(transaction=True)
def test_two_imports_of_one_file_at_once_enter_it_once(postgres, users, assigned_tests, mapping):
    outcomes = race(lambda i: results_import(users["analyst"], content=GOOD, file_name=f"run-{i}.csv", mapping=mapping), threads=3)
    assert not [outcome for outcome in outcomes if isinstance(outcome, Exception)]
    assert sorted(outcome.replayed for outcome in outcomes) == [False, True, True]
    assert Result.objects.count() == 4 and ResultImport.objects.count() == 1
