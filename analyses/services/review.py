"""Review of entered results: accept (four-eyes) or send back for retest.

Four-eyes: nobody who entered a current result of a test may accept it or send it back,
admins included. An accepted test that is out of specification opens an OOS
investigation on the lot, which blocks release until QA closes it; on a released lot it
opens a post-release investigation instead (``post_release``). A stability pull beyond its
study's limits raises the study's alert and opens no investigation (``pull_judging``).
"""
from __future__ import annotations

from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import Conflict, NotAllowed
from analyses.models import OOS_VERDICTS, AuditAction, Investigation, LotState, ResultStatus, Test, TestState
from analyses.services.access import Actor, actor_name, require_permission, required_text
from analyses.services.derived_tests import derived_review_refusal
from analyses.services.follow_up import test_accepted_follow_up
from analyses.services.post_release import post_release_investigation_open
from analyses.services.pull_judging import pull_failure_alert, study_attribute_of
from analyses.services.results import AGGREGATE_FIELDS, lock_test_row, result_retire, set_test_aggregate
from analyses.services.transitions import record_test_move, sample_require_workable, sample_sync
from labcore.metrics import OOS_OPENED, count_on_commit

INVESTIGATION_FIELDS = ("lot", "test", "state")


def _four_eyes(actor: Actor, test: Test) -> None:
    enterers = set(test.results.filter(status=ResultStatus.CURRENT).values_list("entered_by_id", flat=True))
    if actor.pk in enterers:
        raise NotAllowed(
            f"four-eyes rule: {actor_name(actor)} entered a result of test {test.pk} and may not review it"
        )


def _reviewable(actor: Actor, test: Test, *, sending_back: bool = False) -> None:
    if test.state != TestState.RESULT_ENTERED:
        raise Conflict(f"test {test.pk} is {test.state}; only a test with its results entered can be reviewed")
    refusal = derived_review_refusal(test, sending_back=sending_back)
    if refusal is not None:
        raise refusal
    _four_eyes(actor, test)
    sample_require_workable(test.sample)


def test_accept(actor: Actor, test: Test | int, *, note: str = "") -> Test:
    """Accept a test whose replicates are all entered. Conflict when the duplicates do not
    agree within the method's repeatability (send it back instead). Out of specification:
    an investigation is opened (post-release on a released lot); a stability pull beyond its
    study's limits raises the study's alert instead. Needs ``review_test`` (analyst, lab manager, QA, admin)."""
    require_permission(actor, "review_test", "review tests")
    with transaction.atomic():
        test = lock_test_row(test)
        _reviewable(actor, test)
        check = test.duplicate_check or {}
        if check.get("agrees") is False:
            raise Conflict(
                f"test {test.pk}: replicates differ by {check['difference']:.4g}, more than the repeatability "
                f"limit {check['limit']:.4g} ({check['source']}); send it back for retest"
            )
        record_test_move(actor, test, TestState.ACCEPTED, reason=note, extra={"reviewed_by": [None, actor.pk]})
        test.reviewed_by = actor
        test.reviewed_at = timezone.now()
        test.review_note = (note or "").strip()
        test.save(update_fields=["state", "reviewed_by", "reviewed_at", "review_note"])
        if test.verdict in OOS_VERDICTS and study_attribute_of(test) is not None:
            pull_failure_alert(actor, test)  # judged against its study, which it fails: no release OOS
        elif test.verdict in OOS_VERDICTS and test.sample.lot.state == LotState.RELEASED:
            post_release_investigation_open(actor, test)
        elif test.verdict in OOS_VERDICTS:  # a conditional fail is an OOS too (ILAC G8 non-binary)
            investigation = Investigation.objects.create(
                lot_id=test.sample.lot_id, test=test, opened_by=actor, opened_at=timezone.now()
            )
            audit_append(
                actor, AuditAction.CREATE, investigation, created(investigation, INVESTIGATION_FIELDS),
                reason=f"{test.method_code} {test.reported} {test.unit} out of specification",
                lot_ref=test.sample.lot_id, sample_ref=test.sample_id,
            )
            count_on_commit(OOS_OPENED)
        sample_sync(actor, test.sample, reason=f"test {test.pk} accepted")
        test_accepted_follow_up(test)
    return test


def test_send_back(actor: Actor, test: Test | int, *, reason: str) -> Test:
    """Send an entered test back for retest, with a mandatory reason: its current results
    become invalidated (still visible) and the assignee enters new ones. Needs
    ``review_test``; the four-eyes rule applies."""
    require_permission(actor, "review_test", "review tests")
    reason = required_text(reason, "reason")
    with transaction.atomic():
        test = lock_test_row(test)
        _reviewable(actor, test, sending_back=True)
        for result in test.results.select_for_update().filter(status=ResultStatus.CURRENT):
            result_retire(actor, result, ResultStatus.INVALIDATED, reason=reason, test=test)
        set_test_aggregate(actor, test, None, reason=reason)
        record_test_move(actor, test, TestState.SENT_BACK, reason=reason)
        test.review_note = reason
        test.save(update_fields=["state", "review_note", *AGGREGATE_FIELDS])
    return test


test_accept.__test__ = False  # services, not pytest tests
test_send_back.__test__ = False
