"""Set-based result entry (issue 12): a fixed number of queries per batch whatever its size,
the same audit chain and the same outcome as entering one result at a time, replay, all or
nothing, and refusals naming the entry."""
from __future__ import annotations

from decimal import Decimal

import pytest
from django.db import connection
from django.utils import timezone
from django.test.utils import CaptureQueriesContext

from analyses.audit import audit_chain_verify
from analyses.errors import Conflict, InvalidInput, NotAllowed
from analyses.models import (
    AuditChainHead,
    AuditEntry,
    Result,
    ResultInstrument,
    ResultUncertainty,
    Test,
    TestState,
    TestUncertainty,
)
from analyses.services.assignments import test_assign_bulk
from analyses.services.cross_checks import own_warnings
from analyses.services.results import result_record, result_record_bulk, result_record_bulk_once
from analyses.services.samples import sample_receive, sample_register
from analyses.services.review_warnings import test_review_warnings
from analyses.services.uncertainty import budget_of
from plugins.registry import get_registry
from labcore.metrics import RESULTS_ENTERED
from tests.factories import usable_instrument
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, AV_TRACE, INPUTS, PV_LOW, PV_LOW_TWIN, PV_TRACE, TRACE

pytestmark = pytest.mark.django_db


def _assigned(users, lot, count: int, prefix: str) -> list[Test]:
    """The AV and PV tests of ``count`` new received samples, assigned to "analyst"."""
    tests: list[Test] = []
    for n in range(count):
        sample = sample_register(users["manager"], lot, label=f"{prefix}-{n}")
        sample_receive(users["manager"], sample, condition="sealed", storage_place="fridge 1")
        tests += list(Test.objects.filter(sample=sample).order_by("method_code"))
    return test_assign_bulk(users["manager"], tests, assignee=users["analyst"])


def _items(tests: list[Test]) -> list[dict]:
    """Both replicates of every test, passing inputs, with the bench's titrant lots and instruments."""
    return [
        {"test": test.pk, "inputs": inputs, **TRACE[test.method_code]}
        for test in tests
        for inputs in INPUTS[test.method_code]
    ]


def _written() -> tuple[int, ...]:
    return (
        Result.objects.count(), AuditEntry.objects.count(), ResultInstrument.objects.count(),
        ResultUncertainty.objects.count(), TestUncertainty.objects.count(),
    )


def _queries(callable_, *args, **kwargs) -> list[str]:
    with CaptureQueriesContext(connection) as captured:
        callable_(*args, **kwargs)
    return [query["sql"] for query in captured.captured_queries]


def test_a_batch_runs_the_same_number_of_queries_whatever_its_size(postgres, users, lot):
    small = _items(_assigned(users, lot, 2, "S"))  # 4 tests, 8 results
    large = _items(_assigned(users, lot, 13, "L"))  # 26 tests, 52 results

    def fresh():  # as a new request's user: nothing cached on it
        return type(users["analyst"]).objects.get(pk=users["analyst"].pk)

    small_sql = _queries(result_record_bulk, fresh(), small)
    large_sql = _queries(result_record_bulk, fresh(), large)
    assert len(large_sql) == len(small_sql), "\n".join(sql[:120] for sql in large_sql)
    assert len(large_sql) <= 40  # today's fixed cost; 18.5 queries per result before issue 12
    # the user's groups are read once per batch, not once per result (and Django reads the
    # permissions of those groups once, for has_perm)
    assert sum('"auth_group"."name"' in sql for sql in large_sql) == 1
    assert Result.objects.count() == len(small) + len(large)
    assert set(Test.objects.values_list("state", flat=True)) == {TestState.RESULT_ENTERED}


def test_a_replayed_batch_runs_a_fixed_number_of_queries_and_writes_nothing(postgres, users, lot):
    items = _items(_assigned(users, lot, 3, "R"))
    first = result_record_bulk_once(users["analyst"], items, idempotency_key="tablet-2:batch-1")
    before = _written()
    with CaptureQueriesContext(connection) as captured:
        again = result_record_bulk_once(users["analyst"], items, idempotency_key="tablet-2:batch-1")
    assert again.replayed and [r.pk for r in again.results] == [r.pk for r in first.results]
    assert _written() == before
    assert len(captured.captured_queries) <= 20


def test_a_batch_writes_what_one_entry_at_a_time_writes_and_the_chain_verifies(users, lot):
    one_by_one, batched = _assigned(users, lot, 2, "A"), _assigned(users, lot, 2, "B")
    start = AuditChainHead.objects.get().last_sequence
    for item in _items(one_by_one):
        result_record(users["analyst"], item.pop("test"), **item)
    middle = AuditChainHead.objects.get().last_sequence
    recorded = result_record_bulk(users["analyst"], _items(batched))

    def trail(first: int, last: int) -> list[tuple[str, str, list[str], str]]:
        entries = AuditEntry.objects.filter(sequence__gt=first, sequence__lte=last).order_by("sequence")
        return [(e.action, e.object_type, sorted(e.changes), e.reason) for e in entries]

    head = AuditChainHead.objects.get().last_sequence
    assert trail(middle, head) == trail(start, middle)
    report = audit_chain_verify()
    assert report.ok, report.problem
    assert report.head_sequence == head
    created = AuditEntry.objects.filter(object_type="analyses.result", action="create", sequence__gt=middle).order_by("sequence")
    assert [int(e.object_id) for e in created] == [r.pk for r in recorded]  # in the batch's order
    assert len({e.entry_hash for e in AuditEntry.objects.all()}) == AuditEntry.objects.count()
    # the same values, verdicts, budgets and test states as one at a time
    for alone, together in zip(one_by_one, batched):
        alone.refresh_from_db()
        together.refresh_from_db()
        fields = ("state", "value_exact", "reported", "verdict", "duplicate_check", "review_warnings")
        assert [getattr(together, f) for f in fields] == [getattr(alone, f) for f in fields]
        assert together.uncertainty.expanded == alone.uncertainty.expanded
        assert sorted(together.uncertainty.results) == sorted(together.results.values_list("pk", flat=True))
    for alone, together in zip(Result.objects.filter(test__in=one_by_one), Result.objects.filter(test__in=batched)):
        assert (together.replicate, together.value_exact, together.verdict, together.uncertainty.expanded) == (
            alone.replicate, alone.value_exact, alone.verdict, alone.uncertainty.expanded,
        )
        assert list(together.instrument_uses.values_list("instrument_id", "calibration_id")) == list(
            alone.instrument_uses.values_list("instrument_id", "calibration_id")
        )
        # the budget kept at entry (from the inputs the plugin validated, its trace shared by the
        # batch's results) is the one worked out afresh from the stored result
        for result in (alone, together):
            assert result.uncertainty.budget == budget_of(result).as_dict()


def test_an_error_at_a_later_entry_writes_nothing(users, lot):
    tests = _assigned(users, lot, 3, "E")
    items = _items(tests)
    items[5] = {**items[5], "inputs": {**items[5]["inputs"], "sample_mass": "-5"}}
    before, head = _written(), AuditChainHead.objects.get().last_hash
    with pytest.raises(InvalidInput) as caught:
        result_record_bulk(users["analyst"], items)
    assert list(caught.value.fields) == ["results.5.inputs.sample_mass"]
    assert _written() == before
    assert AuditChainHead.objects.get().last_hash == head
    assert set(Test.objects.filter(pk__in=[t.pk for t in tests]).values_list("state", flat=True)) == {TestState.ASSIGNED}


def test_traceability_refusals_name_the_entry(users, lot):
    av, pv = _assigned(users, lot, 1, "T")
    before = _written()
    items = [
        {"test": av.pk, "inputs": AV_LOW, **AV_TRACE},
        {"test": pv.pk, "inputs": PV_LOW, "titrant_lot": "THIO-BENCH", "instruments": ["BAL-BENCH", "NO-SUCH"]},
    ]
    with pytest.raises(InvalidInput) as caught:
        result_record_bulk(users["analyst"], items)
    assert list(caught.value.fields) == ["results.1.instruments.1"]
    # a lot of a titrant the method does not take (AV titrates with KOH or NaOH, not thiosulfate)
    items[1] = {"test": av.pk, "inputs": AV_LOW_TWIN, "titrant_lot": "THIO-BENCH", "instruments": AV_TRACE["instruments"]}
    with pytest.raises(Conflict) as conflict:
        result_record_bulk(users["analyst"], items)
    assert conflict.value.detail.startswith("results.1: titrant lot THIO-BENCH")
    assert _written() == before


def test_a_key_repeated_within_a_batch_returns_the_first_entry(users, lot):
    av, _ = _assigned(users, lot, 1, "K")
    item = {"test": av.pk, "inputs": AV_LOW, "idempotency_key": "row-1", **AV_TRACE}
    batch = result_record_bulk_once(users["analyst"], [item, dict(item)])
    assert not batch.replayed and batch.results[0] is batch.results[1]
    assert Result.objects.filter(test=av).count() == 1
    with pytest.raises(Conflict, match="other inputs"):
        result_record_bulk(users["analyst"], [{**item, "idempotency_key": "row-2"}, {**item, "idempotency_key": "row-2", "inputs": AV_LOW_TWIN}])


def test_results_entered_are_counted_once_committed(users, lot, django_capture_on_commit_callbacks):
    items = _items(_assigned(users, lot, 2, "M"))
    before = RESULTS_ENTERED._value.get()
    with django_capture_on_commit_callbacks(execute=True):
        result_record_bulk(users["analyst"], items)
    assert RESULTS_ENTERED._value.get() == before + len(items)




def test_a_trace_named_again_in_a_batch_is_checked_once_and_only_under_its_own_name(users, lot, bench, monkeypatch):
    """Entries naming the same lot and instruments share the trace checked first; a name that
    only equals an earlier one in Python (True and 1) is checked afresh, and refused."""
    from analyses.services import result_trace
    from analyses.services.result_trace import _trace_key
    from plugins.registry import get_registry

    checked = []
    real_lot = result_trace._lot
    monkeypatch.setattr(result_trace, "_lot", lambda *args: checked.append(args[1]) or real_lot(*args))
    av, pv = _assigned(users, lot, 1, "Q")
    koh = bench["KOH-BENCH"]
    by_pk = {"titrant_lot": koh.pk, "instruments": [bench["BAL-BENCH"].pk, bench["BUR-BENCH"].pk]}
    batch = result_record_bulk_once(users["analyst"], [
        {"test": av.pk, "inputs": AV_LOW, **by_pk},
        {"test": av.pk, "inputs": AV_LOW_TWIN, **by_pk},  # the same names: the trace checked above
    ])
    assert checked == [koh.pk]
    assert [r.reagent_lot_id for r in batch.results] == [koh.pk, koh.pk]
    assert [[u.instrument_id for u in r.instrument_uses.all()] for r in batch.results] == [sorted(by_pk["instruments"])] * 2
    before = _written()
    thio = bench["THIO-BENCH"]
    pv_by_pk = {"titrant_lot": thio.pk, "instruments": [bench["BAL-BENCH"].pk, bench["BUR-BENCH"].pk]}
    for odd, field in (({"titrant_lot": True}, "results.1.titrant_lot"), ({"instruments": [True, bench["BUR-BENCH"].pk]}, "results.1.instruments.0")):
        items = [{"test": pv.pk, "inputs": PV_LOW, **pv_by_pk}, {"test": pv.pk, "inputs": PV_LOW, **pv_by_pk, **odd}]
        with pytest.raises(InvalidInput) as caught:
            result_record_bulk(users["analyst"], items)
        assert list(caught.value.fields) == [field]
    assert _written() == before
    # the key tells the names apart by type, where Python's equality would not (True == 1)
    plugin, now = get_registry().get("av"), timezone.now()
    assert _trace_key(plugin, True, None, now) != _trace_key(plugin, 1, None, now)
    assert _trace_key(plugin, 7, [True], now) != _trace_key(plugin, 7, [1], now)
    assert _trace_key(plugin, 7, [1], now) != _trace_key(plugin, 7, (1,), now)
    assert _trace_key(plugin, 7, [1.0], now) is None  # checked afresh, and refused there


def test_results_measured_with_other_lots_and_instruments_keep_their_own_budgets(users, lot, bench):
    """A batch's results share a traced budget source only when their lot and calibrations are
    the same: each kept budget is the one worked out afresh from its stored result."""
    other_burette = usable_instrument("BUR-OTHER", "burette", by=users["manager"], tolerance="0.05")
    first, second = _assigned(users, lot, 2, "U")[0::2]  # two AV tests
    batch = result_record_bulk_once(users["analyst"], [
        {"test": first.pk, "inputs": AV_LOW, **AV_TRACE},
        {"test": first.pk, "inputs": AV_LOW_TWIN, "titrant_lot": "NAOH-0.1-BENCH", "instruments": AV_TRACE["instruments"]},
        {"test": second.pk, "inputs": AV_LOW, "titrant_lot": "KOH-BENCH", "instruments": ["BAL-BENCH", "BUR-OTHER"]},
        {"test": second.pk, "inputs": AV_LOW_TWIN, **AV_TRACE},
    ])
    bases = []
    for result in Result.objects.filter(pk__in=[r.pk for r in batch.results]).order_by("pk"):
        assert result.uncertainty.budget == budget_of(result).as_dict()
        bases.append({t["name"]: t["basis"] for t in result.uncertainty.budget["terms"]})
    assert "NAOH-0.1-BENCH" in bases[1]["titrant_concentration"] and "KOH-BENCH" in bases[0]["titrant_concentration"]
    assert other_burette.asset_id in bases[2]["sample_volume"] and other_burette.asset_id not in bases[3]["sample_volume"]


def test_review_warnings_worked_out_in_a_batch_are_those_read_back_from_the_stored_results(users, lot, monkeypatch):
    """A batch gives its review warnings the inputs its plugins validated to compute the
    results, where the results store those inputs as given; the warnings are the ones worked
    out afresh from the stored rows, also where the inputs were given otherwise (Decimals, kept
    as strings) and validated again."""
    pv_first, pv_second = [t for t in _assigned(users, lot, 2, "W") if t.method_code == "pv"]
    light = {**PV_LOW, "sample_mass": "2.5", "sample_volume": "6.25"}  # below the plausible minimum of 4.95 g
    no_blank = {**{k: v for k, v in PV_LOW.items() if k != "blank_volume"}, "blank_not_run": "true"}
    as_decimals = {k: Decimal(v) for k, v in PV_LOW_TWIN.items()}
    plugin_class = type(get_registry().get("pv"))
    validate, validated = plugin_class.validate, []
    monkeypatch.setattr(plugin_class, "validate", lambda self, raw: validated.append(dict(raw)) or validate(self, raw))
    result_record_bulk_once(users["analyst"], [
        {"test": pv_first.pk, "inputs": light, **PV_TRACE},
        {"test": pv_first.pk, "inputs": PV_LOW_TWIN, **PV_TRACE},
        {"test": pv_second.pk, "inputs": no_blank, **PV_TRACE},
        {"test": pv_second.pk, "inputs": as_decimals, **PV_TRACE},
    ])
    # once for each entry's result, and once more for the review warnings of the one entry whose
    # inputs are stored otherwise than given: the other three reuse what computing them validated
    assert len(validated) == 5
    assert validated[-1]["sample_mass"] == "5.0"  # as stored (a string), not as given (a Decimal)
    monkeypatch.undo()
    for test in (pv_first, pv_second):
        test = Test.objects.select_related("specification_line", "sample__lot__product").get(pk=test.pk)
        afresh = test_review_warnings(get_registry().get("pv"), test, Decimal(test.value_exact))
        assert own_warnings(test.review_warnings) == afresh
    assert Test.objects.get(pk=pv_first.pk).review_warnings[0].startswith("replicate 1: sample_mass 2.5 g is below")
    assert Test.objects.get(pk=pv_second.pk).review_warnings[0].startswith("replicate 1: no blank was run")


def test_an_entry_on_someone_elses_test_is_refused_naming_its_assignee(users, lot):
    """The batch reads the tests without their assignees (only a refusal names one)."""
    test = _assigned(users, lot, 1, "N")[0]
    item = {"test": test.pk, "inputs": INPUTS[test.method_code][0], **TRACE[test.method_code]}
    with pytest.raises(NotAllowed) as refused:
        result_record_bulk_once(users["analyst2"], [item])
    assert str(refused.value) == f"results.0: test {test.pk} is assigned to analyst; analyst2 may not enter its results"


@pytest.mark.django_db(transaction=True)
def test_a_key_committed_meanwhile_by_another_request_is_refused_naming_the_entry(postgres, users, lot, monkeypatch):
    """Two requests of one analyst send the same key for different tests at the same moment:
    both find the key unused, and the later insert meets the twin the other committed. The
    batch is refused naming its entry and the test the key went to; nothing of it is written,
    and the connection goes on working (a second batch is entered after the refusal)."""
    import threading

    from django.contrib.auth import get_user_model

    from analyses.services import result_batch

    tests = _assigned(users, lot, 2, "C")
    mine, theirs = tests[0], tests[2]  # on two samples, so that the other request is not kept waiting on a lock
    analyst_id = users["analyst"].pk

    def other_request() -> None:  # its own connection, committed before the batch inserts
        try:
            result_record_bulk(get_user_model().objects.get(pk=analyst_id), [
                {"test": theirs.pk, "inputs": INPUTS[theirs.method_code][0], "idempotency_key": "K-RACE", **TRACE[theirs.method_code]},
            ])
        finally:
            connection.close()

    real_catalog = result_batch.trace_catalog
    raced = []

    def catalog_then_race(*args, **kwargs):  # after the batch has looked its keys up, before it writes
        if not raced:  # the batch's own call, not the other request's
            raced.append(True)
            worker = threading.Thread(target=other_request)
            worker.start()
            worker.join()
        return real_catalog(*args, **kwargs)

    monkeypatch.setattr(result_batch, "trace_catalog", catalog_then_race)
    items = [
        {"test": tests[1].pk, "inputs": INPUTS[tests[1].method_code][0], **TRACE[tests[1].method_code]},
        {"test": mine.pk, "inputs": INPUTS[mine.method_code][0], "idempotency_key": "K-RACE", **TRACE[mine.method_code]},
    ]
    with pytest.raises(Conflict) as caught:
        result_record_bulk(users["analyst"], items)
    assert caught.value.detail == f"results.1: idempotency key 'K-RACE' was already used for test {theirs.pk}"
    assert list(Result.objects.values_list("test_id", flat=True)) == [theirs.pk]  # the twin alone
    monkeypatch.setattr(result_batch, "trace_catalog", real_catalog)
    entered = result_record_bulk(users["analyst"], [{**items[0]}, {**items[1], "idempotency_key": "K-AFTER"}])
    assert [r.test_id for r in entered] == [tests[1].pk, mine.pk]
    assert audit_chain_verify().ok


def test_a_test_completed_again_has_its_means_budget_replaced_and_audited(users, lot):
    """Sent back and entered again: the mean's stored budget (read with the locked test) is
    the row the new pair replaces, and the change is audited with the old and new results."""
    from analyses.services.review import test_send_back

    av = next(t for t in _assigned(users, lot, 1, "AG") if t.method_code == "av")
    first = result_record_bulk(users["analyst"], [{"test": av.pk, "inputs": inputs, **AV_TRACE} for inputs in INPUTS["av"]])
    mean = TestUncertainty.objects.get(test=av)
    assert sorted(mean.results) == sorted(r.pk for r in first)
    test_send_back(users["analyst2"], av, reason="burette not rinsed")
    again = result_record_bulk(users["analyst"], [{"test": av.pk, "inputs": inputs, **AV_TRACE} for inputs in INPUTS["av"]])
    replaced = TestUncertainty.objects.get(test=av)
    assert replaced.pk == mean.pk and sorted(replaced.results) == sorted(r.pk for r in again)
    change = AuditEntry.objects.filter(object_type="analyses.testuncertainty", object_id=str(mean.pk), action="change").get()
    assert [sorted(side) for side in change.changes["results"]] == [sorted(r.pk for r in first), sorted(r.pk for r in again)]
    assert audit_chain_verify().ok
