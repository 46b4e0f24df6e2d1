"""Sample receipt and its guarded transitions: an illegal move raises Conflict and changes nothing."""
from __future__ import annotations

import datetime as dt

import pytest
from django.utils import timezone

from analyses.errors import Conflict, InvalidInput
from analyses.models import AuditEntry, Sample, SampleState, Test, TestState
from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_reject, lot_release
from analyses.services.results import result_record
from analyses.services.review import test_accept
from analyses.services.samples import sample_cancel, sample_hold, sample_receive, sample_register, sample_resume
from analyses.services.specifications import specification_approve, specification_revise
from tests.analyses.lab_setup import AV_LOW, PV_LOW, PV_LOW_TWIN, enter_duplicates, enter_passing, AV_TRACE
from tests.factories import SIGNING_PASSWORD

pytestmark = pytest.mark.django_db


def _frozen(sample: Sample) -> tuple:
    fresh = Sample.objects.get(pk=sample.pk)
    return (fresh.state, fresh.resume_state, fresh.state_reason, AuditEntry.objects.count(), Test.objects.count())


def test_receipt_records_who_when_condition_place_and_creates_the_tests(users, sample):
    received = sample_receive(users["manager"], sample, condition="sealed, no leaks", storage_place="cold room B")
    assert received.state == SampleState.RECEIVED
    assert received.received_by == users["manager"]
    assert received.received_at is not None
    assert received.condition_on_receipt == "sealed, no leaks"
    assert received.storage_place == "cold room B"
    assert received.specification.version == 1
    tests = received.tests.order_by("method_code")
    assert [(t.method_code, t.replicates, t.state) for t in tests] == [("av", 2, "pending"), ("pv", 2, "pending")]
    # due date: receipt day + the line's turnaround (3 days by default)
    assert tests[0].due_on == timezone.localdate(received.received_at) + dt.timedelta(days=3)


@pytest.mark.parametrize(
    "move",
    [
        lambda u, s: sample_receive(u["manager"], s, condition="ok", storage_place="shelf"),  # received twice
        lambda u, s: sample_resume(u["manager"], s, reason="nothing to resume"),  # not on hold
    ],
    ids=["receive-twice", "resume-not-held"],
)
def test_illegal_moves_from_received_raise_conflict_and_change_nothing(users, received_sample, move):
    before = _frozen(received_sample)
    with pytest.raises(Conflict):
        move(users, received_sample)
    assert _frozen(received_sample) == before


def test_final_states_allow_no_move(users, received_sample):
    sample_cancel(users["manager"], received_sample, reason="container leaked")
    before = _frozen(received_sample)
    for move in (
        lambda: sample_hold(users["manager"], received_sample, reason="x"),
        lambda: sample_cancel(users["manager"], received_sample, reason="x"),
        lambda: sample_receive(users["manager"], received_sample, condition="ok", storage_place="x"),
    ):
        with pytest.raises(Conflict, match="cancelled"):
            move()
    assert _frozen(received_sample) == before


def test_hold_remembers_where_to_resume_and_blocks_work(users, assigned_tests):
    sample = assigned_tests[0].sample
    held = sample_hold(users["qa"], sample, reason="label does not match the lot")
    assert held.state == SampleState.ON_HOLD
    assert held.resume_state == SampleState.IN_TESTING
    assert held.state_reason == "label does not match the lot"
    with pytest.raises(Conflict, match="on hold"):
        result_record(users["analyst"], assigned_tests[0], inputs=AV_LOW, **AV_TRACE)
    with pytest.raises(Conflict):
        sample_hold(users["manager"], sample, reason="again")
    resumed = sample_resume(users["manager"], sample, reason="label confirmed with production")
    assert resumed.state == SampleState.IN_TESTING and resumed.resume_state == ""
    assert result_record(users["analyst"], assigned_tests[0], inputs=AV_LOW, **AV_TRACE).replicate == 1


@pytest.mark.parametrize("service", [sample_hold, sample_cancel, sample_resume])
def test_hold_cancel_and_resume_need_a_reason(users, received_sample, service):
    before = _frozen(received_sample)
    with pytest.raises(InvalidInput) as caught:
        service(users["manager"], received_sample, reason="")
    assert caught.value.fields == {"reason": ["is required"]}
    assert _frozen(received_sample) == before


def test_cancel_cancels_the_open_tests(users, assigned_tests):
    sample = sample_cancel(users["manager"], assigned_tests[0].sample, reason="wrong lot sampled")
    assert sample.state == SampleState.CANCELLED
    assert set(sample.tests.values_list("state", flat=True)) == {TestState.CANCELLED}


def test_receipt_without_an_effective_approved_specification_is_a_conflict(users, sample, specification):
    # a revision effective next year does not replace v1 today
    draft = specification_revise(
        users["qa"], specification, effective_from=timezone.localdate() + dt.timedelta(days=365)
    )
    specification_approve(users["qa"], draft)
    received = sample_receive(users["manager"], sample, condition="ok", storage_place="shelf")
    assert received.specification == specification
    # a sample received (and registered, on paper) before v1 was effective finds no specification
    other = sample_register(
        users["manager"], sample.lot, label="L-100-B", registered_at=dt.datetime(2019, 6, 1, tzinfo=dt.UTC)
    )
    before = _frozen(other)
    with pytest.raises(Conflict, match="no approved specification"):
        sample_receive(
            users["manager"], other, condition="ok", storage_place="shelf",
            received_at=dt.datetime(2019, 6, 1, tzinfo=dt.UTC),
        )
    assert _frozen(other) == before


def test_retain_samples_are_stored_without_tests(users, lot):
    retain = sample_register(users["manager"], lot, kind="retain")
    assert retain.label == "L-100-S1"  # default label: lot code and a number
    received = sample_receive(users["manager"], retain, condition="ok", storage_place="retain store")
    assert received.state == SampleState.RECEIVED
    assert not received.tests.exists()


def test_register_refuses_a_used_label_and_a_closed_lot(users, sample):
    with pytest.raises(InvalidInput) as caught:
        sample_register(users["manager"], sample.lot, label="L-100-A")
    assert "label" in caught.value.fields
    lot_reject(users["qa"], sample.lot, reason="supplier recall", password=SIGNING_PASSWORD)
    with pytest.raises(Conflict, match="rejected"):
        sample_register(users["manager"], sample.lot, label="L-100-Z")
    sample.refresh_from_db()
    assert sample.state == SampleState.REJECTED


def test_a_released_lot_still_takes_stability_pulls_and_their_tests_but_no_routine_sample(users, assigned_tests):
    manager = users["manager"]
    for test in enter_passing(users["analyst"], assigned_tests):
        test_accept(users["analyst2"], test)
    lot = assigned_tests[0].sample.lot
    lot_release(users["qa"], lot, password=SIGNING_PASSWORD)
    with pytest.raises(Conflict, match="released"):
        sample_register(manager, lot, label="L-100-LATE")
    pull = sample_register(manager, lot, kind="stability_pull", label="L-100-M3")
    pull = sample_receive(manager, pull, condition="ok", storage_place="chamber 25 C", methods=["pv"])
    (pv,) = pull.tests.all()
    test_assign_bulk(manager, [pv], assignee=users["analyst"])
    pv = enter_duplicates(users["analyst"], pv, PV_LOW, PV_LOW_TWIN)
    assert test_accept(users["analyst2"], pv).state == TestState.ACCEPTED
    pull.refresh_from_db()
    assert pull.state == SampleState.TESTING_COMPLETE


def test_receipt_times_are_not_in_the_future_nor_before_registration(users, sample):
    before = _frozen(sample)
    now = timezone.now()
    for received_at in (now + dt.timedelta(minutes=6), dt.datetime(9999, 12, 30, tzinfo=dt.UTC)):
        with pytest.raises(InvalidInput) as caught:
            sample_receive(users["manager"], sample, condition="ok", storage_place="shelf", received_at=received_at)
        assert list(caught.value.fields) == ["received_at"]
    with pytest.raises(InvalidInput) as caught:
        sample_receive(
            users["manager"], sample, condition="ok", storage_place="shelf",
            received_at=sample.registered_at - dt.timedelta(seconds=1),
        )
    assert list(caught.value.fields) == ["received_at"]
    assert _frozen(sample) == before
    # a client clock a few minutes ahead of ours is accepted (5 minutes' skew: common practice, no source)
    received = sample_receive(
        users["manager"], sample, condition="ok", storage_place="shelf", received_at=now + dt.timedelta(minutes=4)
    )
    assert received.state == SampleState.RECEIVED


def test_a_due_date_before_the_receipt_date_is_refused(users, sample):
    before = _frozen(sample)
    received_at = timezone.now()
    with pytest.raises(InvalidInput) as caught:
        sample_receive(
            users["manager"], sample, condition="ok", storage_place="shelf", received_at=received_at,
            due_on=timezone.localdate(received_at) - dt.timedelta(days=1),
        )
    assert list(caught.value.fields) == ["due_on"]
    assert _frozen(sample) == before
    due = timezone.localdate(received_at)  # due the day it arrives: allowed
    received = sample_receive(
        users["manager"], sample, condition="ok", storage_place="shelf", received_at=received_at, due_on=due
    )
    assert set(received.tests.values_list("due_on", flat=True)) == {due}


def test_registration_time_is_not_in_the_future(users, lot):
    with pytest.raises(InvalidInput) as caught:
        sample_register(users["manager"], lot, registered_at=timezone.now() + dt.timedelta(days=1))
    assert list(caught.value.fields) == ["registered_at"]
    assert not lot.samples.exists()
