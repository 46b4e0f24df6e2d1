"""Result entry: field-named input errors, idempotent retries, bulk all-or-nothing, correction versions."""
from __future__ import annotations

import pytest

from analyses.errors import Conflict, InvalidInput, NotAllowed
from analyses.models import AuditEntry, Result, ResultStatus, Test, TestState
from analyses.services.results import (
    result_correct,
    result_correct_once,
    result_record,
    result_record_bulk,
    result_record_bulk_once,
    result_record_once,
)
from analyses.services.review import test_accept
from tests.analyses.lab_setup import AV_LOW, AV_LOW_TWIN, PV_LOW, PV_LOW_TWIN, AV_TRACE, PV_TRACE

pytestmark = pytest.mark.django_db


@pytest.fixture
def av(assigned_tests) -> Test:
    return next(t for t in assigned_tests if t.method_code == "av")


@pytest.fixture
def pv(assigned_tests) -> Test:
    return next(t for t in assigned_tests if t.method_code == "pv")


def _written() -> tuple[int, int]:
    return Result.objects.count(), AuditEntry.objects.count()


def test_a_plugin_input_error_names_the_input_and_writes_nothing(users, av):
    before = _written()
    with pytest.raises(InvalidInput) as caught:
        result_record(users["analyst"], av, inputs={**AV_LOW, "sample_mass": "0"}, **AV_TRACE)
    # the plugin's bound: sample mass must be greater than 0 g
    assert list(caught.value.fields) == ["inputs.sample_mass"]
    with pytest.raises(InvalidInput) as caught:
        result_record(users["analyst"], av, inputs={"sample_mass": "20"}, **AV_TRACE)
    assert "inputs.sample_volume" in caught.value.fields
    with pytest.raises(InvalidInput) as caught:
        result_record(users["analyst"], av, inputs=["not", "a", "mapping"], **AV_TRACE)
    assert list(caught.value.fields) == ["inputs"]
    assert _written() == before
    assert Test.objects.get(pk=av.pk).state == TestState.ASSIGNED


def test_a_tiny_portion_is_refused_by_the_methods_hard_bound_before_any_result(users, av):
    """1e-300 g once reached the reportable-size guard below; now the portion is refused as no
    test portion ISO 660 allows (a tenth of its smallest, 0.1 g: from memory), naming the field."""
    before = _written()
    with pytest.raises(InvalidInput) as caught:
        result_record(users["analyst"], av, inputs={**AV_LOW, "sample_mass": "1e-300"}, **AV_TRACE)
    assert list(caught.value.fields) == ["inputs.sample_mass"]
    assert _written() == before


@pytest.mark.parametrize(
    "changed",
    [{"sample_volume": "1e300"}],  # AV of some 300 digits (ISO 660 formula); a titre has no hard maximum
    ids=["vast-titre"],
)
def test_inputs_giving_a_result_too_large_to_report_are_refused(users, av, changed):
    before = _written()
    with pytest.raises(InvalidInput) as caught:
        result_record(users["analyst"], av, inputs={**AV_LOW, **changed}, **AV_TRACE)
    assert list(caught.value.fields) == ["inputs"]
    assert "too large to report" in caught.value.fields["inputs"][0]
    with pytest.raises(InvalidInput) as caught:
        result_record_bulk(users["analyst"], [{"test": av.pk, "inputs": {**AV_LOW, **changed}, **AV_TRACE}])
    assert list(caught.value.fields) == ["results.0.inputs"]
    first = result_record(users["analyst"], av, inputs=AV_LOW, **AV_TRACE)
    before = _written()
    with pytest.raises(InvalidInput) as caught:
        result_correct(users["analyst"], first, inputs={**AV_LOW, **changed}, reason="titre misread")
    assert list(caught.value.fields) == ["inputs"]
    assert _written() == before


def test_only_the_assignee_enters_and_not_before_assignment(users, received_sample, av):
    with pytest.raises(NotAllowed, match="assigned to analyst"):
        result_record(users["analyst2"], av, inputs=AV_LOW, **AV_TRACE)
    pending = Test.objects.create(
        sample=received_sample, specification_line=av.specification_line, method_code="av",
        replicates=2, due_on=av.due_on, created_at=av.created_at,
    )
    with pytest.raises(Conflict, match="pending"):
        result_record(users["admin"], pending, inputs=AV_LOW, **AV_TRACE)


def test_replicates_fill_in_order_and_a_full_test_refuses_more(users, av):
    assert result_record(users["analyst"], av, inputs=AV_LOW, **AV_TRACE).replicate == 1
    with pytest.raises(Conflict, match="already has replicate 1"):
        result_record(users["analyst"], av, inputs=AV_LOW, replicate=1, **AV_TRACE)
    with pytest.raises(InvalidInput) as caught:
        result_record(users["analyst"], av, inputs=AV_LOW, replicate=3, **AV_TRACE)
    assert "replicate" in caught.value.fields
    assert result_record(users["analyst"], av, inputs=AV_LOW_TWIN, **AV_TRACE).replicate == 2
    with pytest.raises(Conflict):  # the test has moved on to result_entered
        result_record(users["analyst"], av, inputs=AV_LOW, **AV_TRACE)


def test_the_same_idempotency_key_twice_records_one_result(users, av):
    first = result_record(users["analyst"], av, inputs=AV_LOW, idempotency_key="tablet-7:0001", **AV_TRACE)
    before = _written()
    again = result_record(users["analyst"], av, inputs=AV_LOW, idempotency_key="tablet-7:0001", **AV_TRACE)
    assert again.pk == first.pk
    assert _written() == before
    # a new key is a new result
    second = result_record(users["analyst"], av, inputs=AV_LOW_TWIN, idempotency_key="tablet-7:0002", **AV_TRACE)
    assert second.pk != first.pk and second.replicate == 2


def test_a_key_reused_for_another_test_is_a_conflict(users, av, pv):
    result_record(users["analyst"], av, inputs=AV_LOW, idempotency_key="k1", **AV_TRACE)
    with pytest.raises(Conflict, match="already used"):
        result_record(users["analyst"], pv, inputs=PV_LOW, idempotency_key="k1", **PV_TRACE)


def test_a_key_reused_with_other_inputs_is_a_conflict_not_a_silent_replay(users, av):
    first = result_record(users["analyst"], av, inputs=AV_LOW, idempotency_key="k2", **AV_TRACE)
    before = _written()
    with pytest.raises(Conflict, match="other inputs"):
        result_record(users["analyst"], av, inputs=AV_LOW_TWIN, idempotency_key="k2", **AV_TRACE)
    with pytest.raises(Conflict, match="other inputs"):
        result_record(users["analyst"], av, inputs="not an object", idempotency_key="k2")
    assert _written() == before
    assert result_record(users["analyst"], av, inputs=dict(AV_LOW), idempotency_key="k2", **AV_TRACE).pk == first.pk


def test_bulk_entry_is_all_or_nothing_and_names_the_item_and_field(users, av, pv):
    before = _written()
    items = [
        {"test": av.pk, "inputs": AV_LOW, **AV_TRACE},
        {"test": av.pk, "inputs": AV_LOW_TWIN, **AV_TRACE},
        {"test": pv.pk, "inputs": {**PV_LOW, "sample_mass": "-5"}, **PV_TRACE},
    ]
    with pytest.raises(InvalidInput) as caught:
        result_record_bulk(users["analyst"], items)
    assert list(caught.value.fields) == ["results.2.inputs.sample_mass"]
    assert _written() == before
    assert Test.objects.get(pk=av.pk).state == TestState.ASSIGNED

    with pytest.raises(InvalidInput) as caught:
        result_record_bulk(users["analyst"], [{"test": av.pk, "inputs": AV_LOW, **AV_TRACE}, {"inputs": AV_LOW}])
    assert list(caught.value.fields) == ["results.1.test"]
    with pytest.raises(InvalidInput) as caught:
        result_record_bulk(users["analyst"], [])
    assert list(caught.value.fields) == ["results"]
    assert _written() == before


def test_bulk_entry_stops_on_a_refusal_too(users, av, pv):
    before = _written()
    with pytest.raises(InvalidInput) as caught:  # test 0 does not exist
        result_record_bulk(users["analyst"], [{"test": av.pk, "inputs": AV_LOW, **AV_TRACE}, {"test": 0, "inputs": AV_LOW, **AV_TRACE}])
    assert list(caught.value.fields) == ["results.1.test"]
    Test.objects.filter(pk=pv.pk).update(assignee=users["analyst2"])
    with pytest.raises(NotAllowed) as caught:
        result_record_bulk(users["analyst"], [{"test": av.pk, "inputs": AV_LOW, **AV_TRACE}, {"test": pv.pk, "inputs": PV_LOW, **PV_TRACE}])
    assert caught.value.detail.startswith("results.1:")
    assert _written() == before


def test_bulk_entry_and_its_idempotent_retry(users, av, pv):
    items = [
        {"test": av.pk, "inputs": AV_LOW, "idempotency_key": "batch-1", **AV_TRACE},
        {"test": av.pk, "inputs": AV_LOW_TWIN, "idempotency_key": "batch-2", **AV_TRACE},
        {"test": pv.pk, "inputs": PV_LOW, "idempotency_key": "batch-3", **PV_TRACE},
        {"test": pv.pk, "inputs": PV_LOW_TWIN, "idempotency_key": "batch-4", **PV_TRACE},
    ]
    recorded = result_record_bulk(users["analyst"], items)
    assert [r.replicate for r in recorded] == [1, 2, 1, 2]
    before = _written()
    retried = result_record_bulk(users["analyst"], items)  # e.g. the response was lost
    assert [r.pk for r in retried] == [r.pk for r in recorded]
    assert _written() == before
    assert set(Test.objects.filter(pk__in=[av.pk, pv.pk]).values_list("state", flat=True)) == {TestState.RESULT_ENTERED}


def test_the_once_functions_say_whether_they_replayed(users, av):
    analyst = users["analyst"]
    first = result_record_once(analyst, av, inputs=AV_LOW, idempotency_key="k-1", **AV_TRACE)
    assert not first.replayed
    again = result_record_once(analyst, av, inputs=AV_LOW, idempotency_key="k-1", **AV_TRACE)
    assert again.replayed and again.result.pk == first.result.pk
    assert not result_record_once(analyst, av, inputs=AV_LOW_TWIN, **AV_TRACE).replayed  # no key: never a replay
    fixed = result_correct_once(analyst, first.result, inputs=AV_LOW_TWIN, reason="titre misread", idempotency_key="k-2")
    assert not fixed.replayed
    refixed = result_correct_once(analyst, first.result, inputs=AV_LOW_TWIN, reason="titre misread", idempotency_key="k-2")
    assert refixed.replayed and refixed.result.pk == fixed.result.pk


def test_a_batch_key_gives_each_item_its_own_key_and_a_retry_replays_the_batch(users, av, pv):
    items = [
        {"test": av.pk, "inputs": AV_LOW, **AV_TRACE},
        {"test": av.pk, "inputs": AV_LOW_TWIN, **AV_TRACE},
        {"test": pv.pk, "inputs": PV_LOW, "idempotency_key": "own-key", **PV_TRACE},  # an item's own key wins
    ]
    batch = result_record_bulk_once(users["analyst"], items, idempotency_key="tablet-7:batch-9")
    assert not batch.replayed
    assert [r.idempotency_key for r in batch.results] == ["tablet-7:batch-9#0", "tablet-7:batch-9#1", "own-key"]
    before = _written()
    retry = result_record_bulk_once(users["analyst"], items, idempotency_key="tablet-7:batch-9")
    assert retry.replayed and [r.pk for r in retry.results] == [r.pk for r in batch.results]
    assert _written() == before
    # a batch that adds a new item is not a replay, though its first items are
    grown = result_record_bulk_once(
        users["analyst"], [*items, {"test": pv.pk, "inputs": PV_LOW_TWIN, **PV_TRACE}], idempotency_key="tablet-7:batch-9"
    )
    assert not grown.replayed and grown.results[3].idempotency_key == "tablet-7:batch-9#3"
    with pytest.raises(InvalidInput) as caught:  # no room left for "#<item>"
        result_record_bulk_once(users["analyst"], items, idempotency_key="k" * 99)
    assert list(caught.value.fields) == ["idempotency_key"]


def test_a_correction_is_a_new_version_and_the_old_one_stays(users, av):
    analyst = users["analyst"]
    first = result_record(analyst, av, inputs=AV_LOW, **AV_TRACE)
    result_record(analyst, av, inputs=AV_LOW_TWIN, **AV_TRACE)
    with pytest.raises(InvalidInput) as caught:
        result_correct(analyst, first, inputs=AV_LOW_TWIN, reason="")
    assert caught.value.fields == {"reason": ["is required"]}

    corrected = result_correct(analyst, first, inputs=AV_LOW_TWIN, reason="titre misread: 1.33 not 1.30")
    first.refresh_from_db()
    assert first.status == ResultStatus.SUPERSEDED
    assert first.inputs == AV_LOW and first.reported == "0.35"  # the old values are untouched
    assert corrected.version == 2 and corrected.replicate == 1
    assert corrected.supersedes == first
    assert corrected.correction_reason == "titre misread: 1.33 not 1.30"
    assert corrected.status == ResultStatus.CURRENT
    av.refresh_from_db()
    # the test's mean now uses the corrected value: both replicates 0.35904
    assert av.value == pytest.approx(0.35904)
    with pytest.raises(Conflict, match="superseded"):
        result_correct(analyst, first, inputs=AV_LOW, reason="again")
    assert list(av.results.order_by("replicate", "version").values_list("replicate", "version", "status")) == [
        (1, 1, "superseded"),
        (1, 2, "current"),
        (2, 1, "current"),
    ]


def test_a_corrected_first_replicate_keeps_its_place_in_the_duplicate_check(users, av):
    """Correcting replicate 1 gives the mean's duplicate check the values in replicate order, as
    entering the same readings does: 0.350625 then 0.35904 (ISO 660 formula, lab_setup)."""
    analyst = users["analyst"]
    first = result_record(analyst, av, inputs=AV_LOW_TWIN, **AV_TRACE)
    result_record(analyst, av, inputs=AV_LOW_TWIN, **AV_TRACE)
    result_correct(analyst, first, inputs=AV_LOW, reason="titre misread: 1.30 not 1.33")
    av.refresh_from_db()
    assert [str(v) for v in av.duplicate_check["values"]] == ["0.350625", "0.35904"]


def test_a_correction_key_replays_only_the_same_correction(users, av):
    analyst = users["analyst"]
    first = result_record(analyst, av, inputs=AV_LOW, **AV_TRACE)
    second = result_record(analyst, av, inputs=AV_LOW_TWIN, **AV_TRACE)
    reason = "titre misread: 1.33 not 1.30"
    corrected = result_correct(analyst, first, inputs=AV_LOW_TWIN, reason=reason, idempotency_key="fix-1")
    before = _written()
    assert result_correct(analyst, first, inputs=dict(AV_LOW_TWIN), reason=reason, idempotency_key="fix-1").pk == corrected.pk
    with pytest.raises(Conflict, match="other inputs"):
        result_correct(analyst, first, inputs=AV_LOW, reason=reason, idempotency_key="fix-1")
    with pytest.raises(Conflict, match="another reason"):
        result_correct(analyst, first, inputs=AV_LOW_TWIN, reason="a different story", idempotency_key="fix-1")
    with pytest.raises(Conflict, match="already used"):
        result_correct(analyst, second, inputs=AV_LOW_TWIN, reason=reason, idempotency_key="fix-1")
    assert _written() == before


def test_no_correction_after_acceptance_and_never_by_qa(users, av):
    first = result_record(users["analyst"], av, inputs=AV_LOW, **AV_TRACE)
    with pytest.raises(NotAllowed):
        result_correct(users["qa"], first, inputs=AV_LOW_TWIN, reason="QA thinks so")
    result_record(users["analyst"], av, inputs=AV_LOW_TWIN, **AV_TRACE)
    test_accept(users["analyst2"], av)
    with pytest.raises(Conflict, match="accepted"):
        result_correct(users["analyst"], first, inputs=AV_LOW_TWIN, reason="late")
    assert Result.objects.filter(test=av).count() == 2


@pytest.mark.django_db(transaction=True)
def test_a_retry_racing_the_first_request_still_records_one_result_on_postgresql(users, av):
    """Two requests with one key arrive together (a client retrying on a timeout)."""
    import threading

    from django.db import connection

    from tests.conftest import service_missing

    if connection.vendor != "postgresql":
        service_missing("needs PostgreSQL: set DATABASE_URL=postgres://...")
    start, returned, errors = threading.Barrier(2), [], []

    def send() -> None:
        try:
            start.wait()
            returned.append(result_record(users["analyst"], av.pk, inputs=AV_LOW, idempotency_key="retry-1", **AV_TRACE).pk)
        except Exception as exc:  # reported below, never swallowed
            errors.append(exc)
        finally:
            connection.close()

    workers = [threading.Thread(target=send) for _ in range(2)]
    for worker in workers:
        worker.start()
    for worker in workers:
        worker.join()
    assert errors == []
    assert len(set(returned)) == 1
    assert Result.objects.filter(test=av).count() == 1
