"""Results from instrument files: the titrator layout through the bulk entry, all or nothing,
errors by row and column, and a re-import of the same file is a replay."""
from __future__ import annotations

import pytest

from analyses.errors import Conflict, InvalidInput, NotAllowed
from analyses.models import AuditEntry, ImportMapping, Result, ResultImport, Test
from analyses.services.imports import import_mapping_create, results_import
from tests.analyses.concurrency import race
from tests.analyses.services.test_profiles import gc, gc_product  # noqa: F401  (fixtures)

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


# --- the GC layout: a sample's peaks become one profile, entered on each of its fac tests ---------

GC_COLUMNS = {"sample": "Sample", "component": "Peak", "area": "Area"}


def _gc_file(run: dict, label: str = "L-GCI-A") -> bytes:
    return ("Sample,Peak,Area\n" + "".join(f"{label},{name},{area}\n" for name, area in run.items())).encode()


@pytest.fixture
def gc_tests(users, gc, gc_product):
    from tests.analyses.services.test_profiles import _tests  # noqa: PLC0415

    return _tests(users, gc_product, "L-GCI")


def test_a_gc_file_enters_one_profile_on_every_component_test_of_the_sample(users, gc_tests):
    from tests.analyses.services.test_profiles import SOYBEAN_RUN

    mapping = import_mapping_create(users["manager"], name="gc", layout="gc", columns=GC_COLUMNS,
                                    default_instruments=["BAL-BENCH", "GC-BENCH"])
    outcome = results_import(users["analyst"], content=_gc_file(SOYBEAN_RUN), file_name="gc-run.csv", mapping=mapping)
    assert outcome.result_import.rows == len(SOYBEAN_RUN)
    # three specification lines (fac:C18:2, fac:iv_calc, fac:C16:0): three tests, one result each, same run
    results = list(Result.objects.filter(pk__in=outcome.result_import.result_ids))
    assert sorted(r.test.method_code for r in results) == ["fac:C16:0", "fac:C18:2", "fac:iv_calc"]
    linoleic = next(r for r in results if r.test.method_code == "fac:C18:2")
    assert linoleic.components["C18:2"]["exact"] == "54"  # 54.0 of 100.0 identified area units


def test_a_bad_peak_is_named_by_its_own_row(users, gc_tests):
    mapping = import_mapping_create(users["manager"], name="gc", layout="gc", columns=GC_COLUMNS,
                                    default_instruments=["BAL-BENCH", "GC-BENCH"])
    content = _gc_file({"C16:0": "10.5", "C18:1": "23.0", "C18:2": "lots", "C18:3": "7.5"})
    with pytest.raises(InvalidInput) as problem:
        results_import(users["analyst"], content=content, file_name="gc-run.csv", mapping=mapping)
    assert problem.value.detail.startswith("row 4, column Area: "), problem.value.detail
    twice = _gc_file({"C16:0": "10.5"}) + b"L-GCI-A,C16:0,10.6\n"
    with pytest.raises(InvalidInput, match=r"row 3, column Peak: C16:0 of sample 'L-GCI-A' is already in row 2"):
        results_import(users["analyst"], content=twice, file_name="gc-run.csv", mapping=mapping)
    assert not Result.objects.exists()
