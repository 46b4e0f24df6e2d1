"""rows_insert and rows_update: many rows of one model written at once."""
from __future__ import annotations

import datetime as dt
import math
from decimal import Decimal

import pytest
from django.db import IntegrityError, connection, transaction
from django.utils import timezone
from django.test.utils import CaptureQueriesContext

from analyses.audit import PendingEntry, audit_append_many
from analyses.models import AuditAction, AuditEntry, Product, Test
from analyses.models.immutable import ImmutableRowError
from analyses.row_writes import _db_value, ids_reserve, rows_insert, rows_update
from tests.factories import TestFactory, UserFactory

pytestmark = pytest.mark.django_db


def test_each_row_gets_its_own_values_nulls_and_json_included():
    first, second, untouched = TestFactory(), TestFactory(), TestFactory()
    first.value, first.value_exact, first.reported, first.duplicate_check = 0.5, "0.5", "0.50", None
    first.review_warnings = ["replicates differ by more than r", 'a "quoted" word']
    second.value, second.value_exact, second.reported = None, "", ""
    second.duplicate_check = {"within_r": True, "difference": "0.01"}
    second.review_warnings = []
    before_untouched = Test.objects.values().get(pk=untouched.pk)

    rows_update([first, second], ["value", "value_exact", "reported", "duplicate_check", "review_warnings"])

    stored = {row["id"]: row for row in Test.objects.values()}
    assert stored[first.pk]["value"] == 0.5 and stored[first.pk]["reported"] == "0.50"
    assert stored[first.pk]["duplicate_check"] is None
    assert stored[first.pk]["review_warnings"] == ["replicates differ by more than r", 'a "quoted" word']
    assert stored[second.pk]["value"] is None and stored[second.pk]["value_exact"] == ""
    assert stored[second.pk]["duplicate_check"] == {"within_r": True, "difference": "0.01"}
    assert stored[untouched.pk] == before_untouched


def test_postgresql_takes_one_statement_whatever_the_number_of_rows(postgres):
    tests = [TestFactory() for _ in range(12)]
    for number, test in enumerate(tests):
        test.reported = f"{number}.0"
    with CaptureQueriesContext(postgres) as captured:
        rows_update(tests, ["reported"])
    assert len(captured.captured_queries) == 1
    sql = captured.captured_queries[0]["sql"]
    # one array per field, not a parameter per value; the rows are also named by id in an
    # array, which the primary key's index answers
    assert "FROM unnest(" in sql and '"analyses_test"."id" = ANY(' in sql
    assert sorted(Test.objects.values_list("reported", flat=True)) == sorted(f"{n}.0" for n in range(12))


def test_append_only_rows_are_refused():
    test = TestFactory()
    with transaction.atomic():
        [entry] = audit_append_many([PendingEntry(None, AuditAction.CHANGE, test, {"reported": ["", "1"]})])
    with pytest.raises(ImmutableRowError):
        rows_update([entry], ["reason"])
    assert AuditEntry.objects.get(pk=entry.pk).reason == entry.reason


def test_unsaved_rows_are_refused():
    with pytest.raises(ValueError, match="saved"):
        rows_update([Test(reported="1")], ["reported"])


def test_nothing_to_update_runs_no_query():
    with CaptureQueriesContext(connection) as captured:
        rows_update([], ["reported"])
    assert captured.captured_queries == []


def test_inserted_rows_get_their_ids_and_every_value_as_written():
    by = UserFactory()
    now = timezone.now()
    names = ['Crude "degummed" soybean', "Palm olein \\ RBD", "Rapeseed, cold-pressed\ttab", "Sunflower\nsecond line"]
    rows = [Product(code=f"RW-{n}", name=name, oil_type="", created_by=by, created_at=now) for n, name in enumerate(names)]

    rows_insert(rows)

    assert all(row.pk is not None and not row._state.adding for row in rows)
    stored = {p.pk: p for p in Product.objects.filter(code__startswith="RW-")}
    assert {pk: (p.code, p.name, p.created_by_id, p.created_at) for pk, p in stored.items()} == {
        row.pk: (row.code, row.name, by.pk, now) for row in rows
    }


def test_inserted_json_keeps_its_structure(postgres):
    test = TestFactory()
    with transaction.atomic():
        [entry] = audit_append_many([PendingEntry(None, AuditAction.CHANGE, test, {"inputs": [None, {"note": 'a "q" \\ b', "n": [1, 2.5]}]})])
    assert AuditEntry.objects.get(pk=entry.pk).changes == {"inputs": [None, {"note": 'a "q" \\ b', "n": [1, 2.5]}]}


def test_a_duplicate_key_is_an_integrity_error_and_nothing_of_the_batch_stays():
    by = UserFactory()
    now = timezone.now()
    Product.objects.create(code="RW-TAKEN", name="first", created_by=by, created_at=now)
    rows = [Product(code="RW-FREE", name="second", created_by=by, created_at=now), Product(code="RW-TAKEN", name="again", created_by=by, created_at=now)]
    with pytest.raises(IntegrityError), transaction.atomic():
        rows_insert(rows)
    assert list(Product.objects.filter(code__startswith="RW-").values_list("code", flat=True)) == ["RW-TAKEN"]


def test_rows_that_are_already_saved_are_refused():
    test = TestFactory()
    with pytest.raises(ValueError, match="new"):
        rows_insert([test])


def test_a_value_too_long_for_its_column_is_refused_not_cut(postgres):
    from django.db import DataError

    test = TestFactory()
    test.reported = "9" * 41  # reported is varchar(40)
    with pytest.raises(DataError), transaction.atomic():
        rows_update([test], ["reported"])
    assert Test.objects.get(pk=test.pk).reported != "9" * 40


def test_values_of_other_types_are_prepared_as_bulk_create_prepares_them(postgres):
    """The plain values go as they are; anything else (a number as text for a key, a choice
    member, a local time from another zone) takes Django's own preparation, so both paths
    store the same rows."""
    import datetime as dt
    import warnings

    from analyses.models import TestState

    by = UserFactory()
    elsewhere = dt.datetime(2026, 3, 1, 9, 30, tzinfo=dt.timezone(dt.timedelta(hours=5)))

    def odd(code: str) -> Product:
        # bytes in a text field: Django stores their str, where psycopg alone would send them as bytea
        return Product(code=code, name=TestState.ASSIGNED, oil_type="", description=b"as Django keeps it",
                       created_by_id=str(by.pk), created_at=elsewhere)

    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no naive-datetime warning either way
        rows_insert([odd("RW-COPY")])
        Product.objects.bulk_create([odd("RW-BULK")])
    copied, bulk = (Product.objects.values().get(code=code) for code in ("RW-COPY", "RW-BULK"))
    assert {k: v for k, v in copied.items() if k not in ("id", "code")} == {k: v for k, v in bulk.items() if k not in ("id", "code")}
    assert copied["name"] == "assigned" and type(copied["name"]) is str
    assert copied["created_by_id"] == by.pk and copied["created_at"] == elsewhere
    assert copied["description"] == "b'as Django keeps it'"


def test_json_is_stored_as_bulk_create_stores_it(postgres):
    """JSON values through COPY: quotes, backslashes, control characters and other scripts kept,
    numbers as jsonb keeps them, and SQL NULL kept apart from an expression's JSON null."""
    from django.db.models import JSONField, Value

    from analyses.models import Result

    test, by, now = TestFactory(), UserFactory(), timezone.now()
    tricky = {"note": 'a "q" \\ b\nnext\ttab', "µ": "½ — ü", "n": [1, 2.5, -0.0, 1e300, None, True], "nested": {"": {}}}
    # without a null anywhere, orjson writes it (row_writes._as_json_text); with one, Django does
    no_null = {**tricky, "n": [1, 2.5, -0.0, 1e300, 1e-5, 1e16, 0.1 + 0.2, 2**63 - 1, True],
               "control": "\x01\x1f\x7f \u2028 😀", "ints": [0, -1]}
    cases = [
        {"inputs": tricky, "components": {}, "duplicate_check": None},  # SQL NULL
        {"inputs": no_null, "components": {"C18:1": {"exact": "39.0"}}, "duplicate_check": {"passed": True, "r": 0.06}},
        {"inputs": "a JSON string", "components": [1, "x"], "duplicate_check": {"passed": False}},
        {"inputs": {}, "components": {}, "duplicate_check": Value(None, JSONField())},  # JSON null
    ]

    def rows(first: int) -> list[Result]:
        return [
            Result(test=test, replicate=first + n, value=0.35, value_exact="0.35", reported="0.35", unit="mg KOH/g",
                   method_code="av", method_version="1", verdict="pass", entered_by=by, entered_at=now, **case)
            for n, case in enumerate(cases)
        ]

    copied, bulk = rows(1), rows(11)
    rows_insert(copied)
    Result.objects.bulk_create(bulk)
    fields = ("inputs", "components", "duplicate_check")
    for mine, theirs in zip(copied, bulk):
        assert Result.objects.values(*fields).get(pk=mine.pk) == Result.objects.values(*fields).get(pk=theirs.pk)
    stored = Result.objects.values_list("inputs", flat=True).get(pk=copied[0].pk)
    # the text as written; the numbers as jsonb keeps them (numeric: no -0.0, no exponent)
    assert {key: stored[key] for key in ("note", "µ", "nested")} == {key: tricky[key] for key in ("note", "µ", "nested")}
    assert stored["n"] == [1, 2.5, 0.0, 10**300, None, True]
    assert math.copysign(1, stored["n"][2]) == 1  # 0.0, not -0.0 (which == 0.0 too)
    assert type(stored["n"][3]) is int
    # SQL NULL and JSON null stay apart, as bulk_create keeps them
    null = set(Result.objects.filter(duplicate_check__isnull=True).values_list("pk", flat=True))
    assert null == {copied[0].pk, bulk[0].pk}
    assert Result.objects.values_list("inputs", flat=True).get(pk=copied[1].pk)["control"] == no_null["control"]
    assert isinstance(_db_value(Result._meta.get_field("inputs"))(rows(1)[1], connection), str)  # orjson's text


class _Text(str):
    """A str subclass (as a choice is): orjson leaves it to Django's path."""


@pytest.mark.parametrize("value", [
    {1: "a key that is not a string"}, {"big": 2**70}, {"choice": _Text("assigned")}, [_Text("x")],
    {"nan": float("nan")}, {"inf": [float("inf")]}, {"amount": Decimal("1.5")}, {"when": dt.date(2026, 12, 3)},
], ids=["int-key", "big-int", "str-subclass", "str-subclass-in-list", "nan", "infinity", "decimal", "date"])
def test_json_that_orjson_would_write_otherwise_takes_djangos_path(postgres, value):
    """Each value goes Django's way, and stores as bulk_create stores it or is refused with the
    same error."""
    from analyses.models import Result

    test, by, now = TestFactory(), UserFactory(), timezone.now()

    def row(replicate: int) -> Result:
        return Result(test=test, replicate=replicate, value=0.35, value_exact="0.35", reported="0.35", unit="mg KOH/g",
                      method_code="av", method_version="1", verdict="pass", entered_by=by, entered_at=now, inputs=value)

    # Django's preparation (psycopg's Jsonb), not orjson's text
    assert not isinstance(_db_value(Result._meta.get_field("inputs"))(row(1), connection), str)
    outcomes = []
    for write, replicate in ((rows_insert, 1), (Result.objects.bulk_create, 2)):
        try:
            with transaction.atomic():
                [written] = write([row(replicate)]) or Result.objects.filter(test=test, replicate=replicate)
            outcomes.append(Result.objects.values_list("inputs", flat=True).get(pk=written.pk))
        except Exception as exc:  # noqa: BLE001 - the error itself is what is compared
            outcomes.append(type(exc))
    assert outcomes[0] == outcomes[1]


AWKWARD_TEXTS = ['a "quoted" word', "back\\slash", "{braces}, commas", "NULL", "", " padded ", "line\nbreak", "tab\there",
                 "Ölsäure 18:1 ω-9", "it's"]


def test_awkward_values_are_stored_as_djangos_bulk_update_stores_them(postgres):
    """Each field's values go as one array, written inside the statement (psycopg binds on the
    client): texts and JSON with quotes, backslashes, braces, commas, the word NULL, line
    breaks and other scripts, and NULLs, come back as Django's own bulk_update stores them."""
    ours, djangos = [TestFactory() for _ in AWKWARD_TEXTS], [TestFactory() for _ in AWKWARD_TEXTS]
    fields = ["value", "value_exact", "reported", "unit", "duplicate_check", "review_warnings"]
    for tests in (ours, djangos):
        for number, (test, text) in enumerate(zip(tests, AWKWARD_TEXTS)):
            test.value = None if number % 3 == 0 else (-0.0 if number == 1 else 1e300 / (number + 1))
            test.value_exact, test.reported, test.unit = text, text[:20], text[:20]
            test.duplicate_check = None if number % 4 == 0 else {text: [text, None, number, 0.1]}
            test.review_warnings = [text, f"{text}\\{text}"]
    rows_update(ours, fields)
    Test.objects.bulk_update(djangos, fields)
    for mine, theirs in zip(ours, djangos):
        stored, expected = (Test.objects.values(*fields).get(pk=test.pk) for test in (mine, theirs))
        assert stored == expected
        assert stored["value_exact"] == mine.value_exact and stored["review_warnings"] == mine.review_warnings


def test_a_field_that_is_null_in_every_row_is_written(postgres):
    tests = [TestFactory(value=1.5, duplicate_check={"within_r": True}) for _ in range(3)]
    for test in tests:
        test.value, test.duplicate_check = None, None
    rows_update(tests, ["value", "duplicate_check"])
    assert list(Test.objects.filter(pk__in=[t.pk for t in tests]).values_list("value", "duplicate_check")) == [(None, None)] * 3


def _state(obj) -> dict:
    """Every column's value and every relation kept on ``obj``."""
    return {
        "values": {f.attname: getattr(obj, f.attname) for f in obj._meta.concrete_fields},
        "cached": dict(obj._state.fields_cache),
        "adding": obj._state.adding, "db": obj._state.db,
    }


def test_new_row_builds_what_the_model_builds_from_keywords():
    """new_row(model, **values) against model(**values): relations as objects or ids, one-to-one
    relations kept on both sides, defaults (callables included) for fields not given."""
    from analyses.models import Result, ResultUncertainty
    from analyses.row_writes import new_row

    test, user = TestFactory(), UserFactory()
    given = {"test": test, "entered_by": user, "reagent_lot": None, "replicate": 2, "inputs": {"sample_mass": "20.0"},
             "value": 0.35, "value_exact": "0.350625", "reported": "0.35", "unit": "mg KOH/g", "method_code": "av",
             "standardisation_id": None, "entered_at": timezone.now()}
    ours, theirs = new_row(Result, **given), Result(**given)
    assert _state(ours) == _state(theirs)
    assert ours.test is test and ours.entered_by is user and ours.reagent_lot is None
    budget = {"result": ours, "budget": {"terms": []}, "combined": 0.1, "expanded": "0.2", "source": "s", "computed_at": timezone.now()}
    row = new_row(ResultUncertainty, **budget)
    assert _state(row) == _state(ResultUncertainty(**{**budget, "result": theirs}))  | {"cached": {"result": ours}}
    assert ours.uncertainty is row  # the one-to-one kept on the result too, as the descriptor keeps it
    assert type(ours.__dict__["inputs"]) is dict and ours.inputs is given["inputs"]  # stored as given, as the model stores it
    assert _state(new_row(Result)) == _state(Result())  # every default, none of the relations
    with pytest.raises(TypeError):
        new_row(Result, no_such_field=1)
    with pytest.raises(ValueError):
        new_row(Result, test=user)


def test_rows_made_during_the_copy_may_not_read_the_database(postgres):
    """values_copy draws its rows while the COPY runs; psycopg would wait for ever for a query
    made meanwhile on the same connection (found by a review), so such a query is refused and
    the COPY ends with nothing written."""
    from analyses.row_writes import QueryDuringCopy, values_copy

    by = UserFactory()
    now = timezone.now()

    def rows():
        yield ["RW-ONE", "one", "", "", by.pk, now]
        yield ["RW-TWO", Product.objects.count(), "", "", by.pk, now]  # reads the database

    fields = ["code", "name", "oil_type", "description", "created_by_id", "created_at"]
    assert {f.attname for f in Product._meta.concrete_fields} >= set(fields)
    with pytest.raises(QueryDuringCopy), transaction.atomic():
        values_copy(Product, fields, rows(), ids=False)
    assert not Product.objects.filter(code__startswith="RW-").exists()


def test_rows_that_are_not_as_many_as_counted_are_refused(postgres):
    from analyses.row_writes import values_copy

    by = UserFactory()
    now = timezone.now()
    rows = (["RW-ONE", "one", "", "", by.pk, now] for _ in range(1))
    with pytest.raises(ValueError), transaction.atomic():
        values_copy(Product, ["code", "name", "oil_type", "description", "created_by_id", "created_at"], rows, count=2)
    assert not Product.objects.filter(code__startswith="RW-").exists()


def test_ids_reserved_for_several_models_in_one_query_are_the_ids_the_rows_get(postgres):
    by = UserFactory()
    now = timezone.now()
    products = [Product(code=f"RW-R{n}", name="reserved", created_by=by, created_at=now) for n in range(3)]
    entries_before = AuditEntry.objects.count()
    with CaptureQueriesContext(connection) as captured:
        reserved = ids_reserve({Product: 3, AuditEntry: 2, Test: 0})
    assert len(captured) == 1
    assert [len(reserved[Product]), len(reserved[AuditEntry]), reserved[Test]] == [3, 2, []]
    assert reserved[Product] == sorted(reserved[Product])  # in order, as the sequence gives them
    with CaptureQueriesContext(connection) as captured:
        rows_insert(products, ids=reserved[Product])
    assert not any("nextval" in q["sql"] for q in captured.captured_queries)
    assert [p.pk for p in products] == reserved[Product]
    assert sorted(Product.objects.filter(code__startswith="RW-R").values_list("pk", flat=True)) == reserved[Product]
    # the table's own sequence is past them: a row inserted the usual way gets a later id
    later = Product.objects.create(code="RW-LATER", name="later", created_by=by, created_at=now)
    assert later.pk > max(reserved[Product])
    assert AuditEntry.objects.count() == entries_before  # reserving writes nothing
    with pytest.raises(ValueError, match="2 ids reserved for 3 Product rows"):
        rows_insert([Product(code=f"RW-S{n}", name="short", created_by=by, created_at=now) for n in range(3)], ids=reserved[AuditEntry])


def test_nothing_to_reserve_runs_no_query_and_sqlite_leaves_ids_to_bulk_create():
    with CaptureQueriesContext(connection) as captured:
        reserved = ids_reserve({Product: 0})
    assert len(captured) == 0
    assert reserved == ({Product: []} if connection.vendor == "postgresql" else None)


def _result(test, user):
    from analyses.models import Result
    from analyses.row_writes import new_row

    return new_row(Result, test=test, entered_by=user, replicate=1, inputs={"sample_mass": "20.0"}, value=0.35,
                   value_exact="0.35", reported="0.35", unit="mg KOH/g", method_code="av", entered_at=timezone.now())


def test_rows_kept_on_an_instance_are_what_prefetch_related_leaves():
    """related_rows_keep(result, "instrument_uses", rows) against Django's own prefetch of the
    same rows: the same queryset (its class, its SQL, its hints and known related objects),
    read without a query, and another query made on it filtered on the result."""
    from analyses.models import InstrumentKind, Result, ResultInstrument
    from analyses.row_writes import new_row, related_rows_keep
    from tests.factories import usable_instrument

    result = _result(TestFactory(), UserFactory())
    rows_insert([result])
    instruments = [usable_instrument("RW-BAL-1"), usable_instrument("RW-BAL-2", InstrumentKind.BALANCE)]
    uses = [new_row(ResultInstrument, result=result, instrument=i, calibration_id=i.calibrations.get().pk) for i in instruments]
    rows_insert(uses)
    related_rows_keep(result, "instrument_uses", uses)

    read = Result.objects.prefetch_related("instrument_uses").get(pk=result.pk)
    ours, theirs = result.instrument_uses.all(), read.instrument_uses.all()
    with CaptureQueriesContext(connection) as captured:
        assert list(ours) == list(theirs) and list(ours)[0] is uses[0]
        assert ours.count() == 2 and ours.exists()  # answered from the rows kept
    assert len(captured) == 0
    assert type(ours) is type(theirs)
    assert str(ours.query) == str(theirs.query)  # the filter kept back, applied as the manager's is
    assert ours._hints == {"instance": result} and theirs._hints == {"instance": read}
    field = ResultInstrument._meta.get_field("result")
    assert ours._known_related_objects == {field: {result.pk: result}}
    assert theirs._known_related_objects == {field: {read.pk: read}}
    [first] = ours.filter(instrument=instruments[0])  # a new query, on this result's rows only
    assert first.pk == uses[0].pk and first.result is result
    other = _result(TestFactory(), UserFactory())
    rows_insert([other])
    related_rows_keep(other, "instrument_uses", [])
    assert list(other.instrument_uses.all()) == [] and not other.instrument_uses.filter(pk=uses[0].pk).exists()


def test_rows_are_kept_only_on_the_reverse_side_of_a_foreign_key_of_a_saved_instance():
    from analyses.row_writes import related_rows_keep

    test, user = TestFactory(), UserFactory()
    with pytest.raises(ValueError, match="reverse side"):
        related_rows_keep(_result(test, user), "test", [])
    with pytest.raises(ValueError, match="must be saved"):
        related_rows_keep(_result(test, user), "instrument_uses", [])


def test_related_objects_are_checked_and_mended_as_bulk_create_does():
    """rows_insert's own check of the related objects kept on each row gives what Django's
    Model._prepare_related_fields_for_save gives: an unsaved one refused with the same message,
    the id of one saved after it was given taken, and one whose id changed let go."""
    from analyses.models import Result

    test, user = TestFactory(), UserFactory()
    unsaved = TestFactory.build()
    refused = _result(unsaved, user)
    with pytest.raises(ValueError) as ours, transaction.atomic():
        rows_insert([_result(test, user), refused])
    with pytest.raises(ValueError) as djangos:
        _result(unsaved, user)._prepare_related_fields_for_save(operation_name="rows_insert")
    # off PostgreSQL rows_insert is bulk_create, whose message names itself
    named = "rows_insert" if connection.vendor == "postgresql" else "bulk_create"
    assert str(ours.value) == str(djangos.value).replace("rows_insert", named)
    assert "unsaved related object 'test'" in str(ours.value)
    assert not Result.objects.exists()

    later = TestFactory.build(sample=test.sample, specification_line=test.specification_line)
    given_before_saved = _result(later, user)
    assert given_before_saved.test_id is None
    later.save()
    moved = _result(test, user)
    moved.test_id = TestFactory().pk  # the id changed after the object was given
    plain = _result(test, user)
    rows_insert([given_before_saved, moved, plain])
    assert given_before_saved.test_id == later.pk and given_before_saved.test is later
    assert "test" not in moved._state.fields_cache  # the object let go, as Django lets it go
    assert plain.test is test
    stored = dict(Result.objects.values_list("pk", "test_id"))
    assert stored == {given_before_saved.pk: later.pk, moved.pk: moved.test_id, plain.pk: test.pk}
    assert all(not r._state.adding and r._state.db == "default" for r in (given_before_saved, moved, plain))


def test_new_row_leaves_the_object_to_the_model_when_someone_listens_for_its_making():
    """A receiver of pre_init or post_init (an app may connect one) hears of every new_row, as it
    hears of every model(...): new_row then builds the object through Model.__init__."""
    from django.db.models.signals import post_init, pre_init

    from analyses.models import Result
    from analyses.row_writes import new_row

    heard = []

    def listen(sender, **kwargs):
        heard.append((sender, kwargs.get("instance")))

    test, user = TestFactory(), UserFactory()
    for signal in (pre_init, post_init):
        signal.connect(listen, sender=Result)
        try:
            row = new_row(Result, test=test, entered_by=user, replicate=1)
        finally:
            signal.disconnect(listen, sender=Result)
        assert heard[-1][0] is Result and heard[-1][1] in (None, row)
        assert _state(row) == _state(Result(test=test, entered_by=user, replicate=1))
    assert len(heard) == 2
    new_row(Result, test=test, entered_by=user, replicate=1)  # no one listens now: no one hears
    assert len(heard) == 2


def test_new_row_leaves_a_model_with_an_attribute_of_its_own_to_the_model():
    """A field whose attribute is not Django's plain one (a file field's), or a model with an
    __init__ of its own, is built through Model.__init__: new_row gives what the model gives."""
    from django.db import models
    from django.test.utils import isolate_apps

    from analyses.row_writes import _row_fields, new_row

    with isolate_apps("analyses"):
        class Filed(models.Model):
            label = models.CharField(max_length=20)
            sheet = models.FileField(upload_to="sheets")

            class Meta:
                app_label = "analyses"

        class Initialised(models.Model):
            label = models.CharField(max_length=20)

            class Meta:
                app_label = "analyses"

            def __init__(self, *args, **kwargs):
                super().__init__(*args, **kwargs)
                self.made_by_init = True

        assert _row_fields(Filed)[2] is None and _row_fields(Initialised)[2] is None
        row = new_row(Filed, label="sheet 1", sheet="sheets/a.csv")
        assert row.sheet.name == "sheets/a.csv" and type(row.sheet).__name__ == "FieldFile"
        assert row.label == Filed(label="sheet 1").label
        assert new_row(Initialised, label="x").made_by_init is True


def test_cached_relations_are_dropped_and_read_again_when_asked():
    from analyses.models import Result
    from analyses.row_writes import cached_relations_drop

    result = _result(TestFactory(), UserFactory())
    rows_insert([result])
    read = Result.objects.select_related("test").prefetch_related("instrument_uses").get(pk=result.pk)
    test = read.test
    assert "test" in read._state.fields_cache and "_prefetched_objects_cache" in read.__dict__
    cached_relations_drop([read])
    assert read._state.fields_cache == {} and "_prefetched_objects_cache" not in read.__dict__
    with CaptureQueriesContext(connection) as captured:
        assert read.test.pk == test.pk and list(read.instrument_uses.all()) == []
    assert len(captured) == 2  # each read again from the database
