"""The sample state machine, and state changes that follow from test progress.

Allowed moves (anything else raises Conflict and changes nothing)::

    registered        -> received, on_hold, cancelled, rejected
    received          -> in_testing, testing_complete, on_hold, cancelled, rejected
    in_testing        -> testing_complete, on_hold, cancelled, rejected
    testing_complete  -> released, rejected, in_testing (a retest), on_hold, cancelled
    on_hold           -> the state it was held from (resume), cancelled, rejected
    released, rejected, cancelled: final

``rejected`` is reached only through the lot (QA rejection or a confirmed OOS);
``released`` only through lot release.
"""
from __future__ import annotations

from django.db.models import Q

from analyses.audit import audit_append
from analyses.errors import Conflict
from analyses.models import (
    OPEN_TEST_STATES,
    AuditAction,
    Lot,
    LotState,
    Sample,
    SampleKind,
    SampleState,
    Test,
    TestState,
)
from analyses.services.access import Actor

S = SampleState
ALLOWED_MOVES: dict[str, frozenset[str]] = {
    S.REGISTERED: frozenset({S.RECEIVED, S.ON_HOLD, S.CANCELLED, S.REJECTED}),
    S.RECEIVED: frozenset({S.IN_TESTING, S.TESTING_COMPLETE, S.ON_HOLD, S.CANCELLED, S.REJECTED}),
    S.IN_TESTING: frozenset({S.TESTING_COMPLETE, S.ON_HOLD, S.CANCELLED, S.REJECTED}),
    S.TESTING_COMPLETE: frozenset({S.RELEASED, S.REJECTED, S.IN_TESTING, S.ON_HOLD, S.CANCELLED}),
    S.ON_HOLD: frozenset({S.CANCELLED, S.REJECTED}),  # resume is checked against resume_state
    S.RELEASED: frozenset(),
    S.REJECTED: frozenset(),
    S.CANCELLED: frozenset(),
}
FINAL_SAMPLE_STATES = (S.RELEASED, S.REJECTED, S.CANCELLED)
# A stability study follows a lot after it is released; its pulls and retains are still
# sampled and (pulls) tested then.
AFTER_RELEASE_KINDS = (SampleKind.STABILITY_PULL, SampleKind.RETAIN)
# tests that count for a sample's progress (invalidated and cancelled ones are history)
LIVE_TEST_Q = ~Q(state__in=[TestState.INVALIDATED, TestState.CANCELLED])


def sample_move_check(sample: Sample, target: str) -> None:
    """Conflict unless ``sample`` may move to ``target`` now."""
    if sample.state == S.ON_HOLD and target == sample.resume_state:
        return
    if target not in ALLOWED_MOVES[sample.state]:
        raise Conflict(f"sample {sample.label} is {sample.state}; it cannot move to {target}")


def sample_move(actor: Actor, sample: Sample, target: str, *, reason: str = "") -> Sample:
    """Move a (locked) sample to ``target``, recording the transition; Conflict if illegal."""
    sample_move_check(sample, target)
    old = sample.state
    changes: dict[str, list] = {"state": [old, target]}
    if target == S.ON_HOLD:
        changes["resume_state"] = [sample.resume_state, old]
        sample.resume_state = old
    elif old == S.ON_HOLD:
        changes["resume_state"] = [sample.resume_state, ""]
        sample.resume_state = ""
        if target not in (S.CANCELLED, S.REJECTED):  # resumed: the hold's reason no longer holds
            changes["state_reason"] = [sample.state_reason, ""]
            sample.state_reason = ""
    if reason and target in (S.ON_HOLD, S.CANCELLED, S.REJECTED):
        sample.state_reason = reason
    sample.state = target
    sample.save(update_fields=["state", "resume_state", "state_reason"])
    audit_append(
        actor, AuditAction.TRANSITION, sample, changes, reason=reason, lot_ref=sample.lot_id, sample_ref=sample.pk
    )
    return sample


def lot_takes_work(lot: Lot, kind: str) -> bool:
    """Whether samples of ``kind`` may be taken from ``lot`` in its state, and worked on
    (tests assigned, results entered or corrected, reviewed, sent back, the sample
    cancelled): any kind while it is open; stability pulls and retains after its release
    too. A decided lot's other samples are history."""
    return lot.state == LotState.OPEN or (lot.state == LotState.RELEASED and kind in AFTER_RELEASE_KINDS)


def sample_require_lot_takes_work(sample: Sample) -> None:
    """Conflict unless the sample's lot still takes work on samples of its kind."""
    lot = sample.lot
    if not lot_takes_work(lot, sample.kind):
        raise Conflict(f"lot {lot.code} is {lot.state}; its {sample.kind} sample {sample.label} takes no more work")


def sample_require_workable(sample: Sample) -> None:
    """Conflict when work on the sample's tests must wait (on hold) or has ended (the
    sample is final, or its lot decided: ``lot_takes_work``)."""
    sample_require_lot_takes_work(sample)
    if sample.state == S.ON_HOLD:
        raise Conflict(f"sample {sample.label} is on hold: {sample.state_reason}")
    if sample.state in FINAL_SAMPLE_STATES:
        raise Conflict(f"sample {sample.label} is {sample.state}")
    if sample.state == S.REGISTERED:
        raise Conflict(f"sample {sample.label} has not been received")


def sample_sync(actor: Actor, sample: Sample, *, reason: str) -> Sample:
    """Follow the tests: first assignment -> in_testing; every live test accepted ->
    testing_complete; a new test on a complete sample -> back to in_testing."""
    live = Test.objects.filter(sample=sample).filter(LIVE_TEST_Q)
    states = set(live.values_list("state", flat=True))
    if sample.state == S.RECEIVED and states - {TestState.PENDING}:
        sample_move(actor, sample, S.IN_TESTING, reason=reason)
    if sample.state == S.IN_TESTING and states and states == {TestState.ACCEPTED}:
        sample_move(actor, sample, S.TESTING_COMPLETE, reason=reason)
    elif sample.state == S.TESTING_COMPLETE and states != {TestState.ACCEPTED}:
        sample_move(actor, sample, S.IN_TESTING, reason=reason)
    return sample


def record_test_move(actor: Actor, test: Test, target: str, *, reason: str = "", extra: dict | None = None) -> Test:
    """Record a test's state change (the caller has checked that it is allowed)."""
    changes = {"state": [test.state, target], **(extra or {})}
    test.state = target
    audit_append(
        actor, AuditAction.TRANSITION, test, changes, reason=reason, lot_ref=test.sample.lot_id, sample_ref=test.sample_id
    )
    return test


def cancel_open_tests(actor: Actor, sample: Sample, *, reason: str, states=OPEN_TEST_STATES) -> int:
    """Cancel every test of ``sample`` in one of ``states`` (default: every test not yet
    accepted); returns how many."""
    count = 0
    for test in Test.objects.select_for_update().select_related("sample").filter(sample=sample, state__in=states).order_by("pk"):
        record_test_move(actor, test, TestState.CANCELLED, reason=reason)
        test.save(update_fields=["state"])
        count += 1
    return count
