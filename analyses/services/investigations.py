"""Closing out-of-specification investigations (QA).

confirmed  the result stands: the lot is rejected (its open samples rejected, open tests
           cancelled). Rejecting an open lot is an electronic signature, as ``lot_reject``
           is: the QA user's password is re-entered, and the meaning is audited.
lab_error  the accepted test is invalidated with its results (kept, marked invalidated),
           and a retest is created: a NEW pending test on the same sample and
           specification line, with ``retest_of`` pointing at the invalidated one, for the
           manager to assign. The sample returns to in_testing. A derived test (TOTOX) is
           retested with the tests of its sources, and an accepted derived test worked out
           from the invalidated one is retested with it: its retest is worked out again once
           its sources' retests have their means.

On a released lot, ``confirmed`` is refused (it would change nothing); such an
investigation closes with ``no_action`` or ``hold_notice`` (``services/post_release.py``).
Every close records in ``effect`` what it changed.
"""
from __future__ import annotations

import datetime as dt

from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import Conflict, InvalidInput
from analyses.models import (
    AuditAction,
    Conclusion,
    Investigation,
    InvestigationState,
    Lot,
    LotState,
    ResultStatus,
    Sample,
    Test,
    TestState,
)
from analyses.services.access import Actor, fetch, require_permission, required_text
from analyses.services.certificates import lot_specification_versions
from analyses.services.cross_checks import cross_checks_refresh_partners
from analyses.services.derived_tests import accepted_derived_tests_of, derived_tests_refresh, standing_sources_of
from analyses.services.lots import lot_reject_locked
from analyses.services.post_release import (
    POST_RELEASE_CONCLUSIONS,
    clean_hold_reason,
    confirmed_refusal,
    investigation_record_close,
    post_release_close,
)
from analyses.services.signatures import rejection_meaning, signature_confirm
from analyses.services.samples import TEST_FIELDS
from analyses.services.transitions import FINAL_SAMPLE_STATES, lot_takes_work, record_test_move, sample_sync


def _retest(
    actor: Actor, test: Test, findings: str, cascaded: list[tuple[Test, Test]], *, cause: int, with_sources: bool = True
) -> Test:
    """Invalidate ``test`` and its results and create its retest, for investigation ``cause``.
    A derived test (TOTOX) found in lab error is nothing but its sources, so their accepted
    tests are retested with it (``with_sources``; ``investigation_close`` has made sure none has
    an open investigation of its own); an accepted derived test worked out from ``test`` is
    retested too, as it stands on invalidated results, but not its other sources. Each such
    (test, retest) pair is added to ``cascaded``. A derived retest is worked out again once its
    sources stand again (services/derived_tests.py)."""
    for result in test.results.select_for_update().filter(status=ResultStatus.CURRENT):
        result.status = ResultStatus.INVALIDATED
        result.status_reason = f"lab error: {findings}"
        result.save(update_fields=["status", "status_reason"])
        audit_append(
            actor, AuditAction.TRANSITION, result, {"status": [ResultStatus.CURRENT, ResultStatus.INVALIDATED]},
            reason=findings, lot_ref=test.sample.lot_id, sample_ref=test.sample_id,
        )
    record_test_move(actor, test, TestState.INVALIDATED, reason=f"lab error: {findings}")
    test.save(update_fields=["state"])
    # an invalidated result is no partner of a cross-check any more (services/cross_checks.py)
    cross_checks_refresh_partners(actor, test, reason=f"test {test.pk} invalidated (lab error)")
    derived_tests_refresh(actor, [test], reason=f"test {test.pk} invalidated (lab error)")
    for derived in accepted_derived_tests_of(test):
        why = f"worked out from {test.method_code} test {test.pk}, found in lab error by investigation {cause}: {findings}"
        cascaded.append((derived, _retest_with_investigations(actor, derived, why, cascaded, cause=cause, with_sources=False)))
    retest = Test.objects.create(
        sample=test.sample,
        specification_line=test.specification_line,
        method_code=test.method_code,
        replicates=test.replicates,
        priority=test.priority,
        due_on=timezone.localdate() + dt.timedelta(days=test.specification_line.turnaround_days),
        retest_of=test,
        created_at=timezone.now(),
    )
    audit_append(
        actor, AuditAction.CREATE, retest, created(retest, TEST_FIELDS),
        reason=f"retest of test {test.pk} after lab error", lot_ref=test.sample.lot_id, sample_ref=test.sample_id,
    )
    for source in standing_sources_of(test) if with_sources else ():
        why = f"{test.method_code} test {test.pk}, worked out from it, found in lab error by investigation {cause}: {findings}"
        cascaded.append((source, _retest(actor, source, why, cascaded, cause=cause)))
    return retest


def _sources_under_investigation(test: Test) -> Conflict | None:
    """A lab error in a derived test retests its sources' tests: refused while one of them has
    an open investigation of its own, which QA concludes first (a lab error there retests the
    derived test with it)."""
    sources = standing_sources_of(test)
    waiting = Investigation.objects.filter(test__in=sources, state=InvestigationState.OPEN).select_related("test").order_by("pk")
    for investigation in waiting:
        return Conflict(
            f"{investigation.test.method_code} test {investigation.test_id}, which {test.method_code} test {test.pk} is worked "
            f"out from, has its own open investigation {investigation.pk}; conclude that one first"
        )
    return None


def _retest_with_investigations(actor: Actor, test: Test, findings: str, cascaded: list[tuple[Test, Test]], **options) -> Test:
    """``_retest`` of a test retested along with another, closing its own open investigations
    (an OOS it showed) as lab errors for the same reason: they would otherwise block release."""
    retest = _retest(actor, test, findings, cascaded, **options)
    for investigation in Investigation.objects.select_for_update().filter(test=test, state=InvestigationState.OPEN).order_by("pk"):
        investigation.test = test
        investigation_record_close(
            actor, investigation, conclusion=Conclusion.LAB_ERROR, findings=findings, retest=retest,
            effect=f"test {test.pk} invalidated; retest {retest.pk} created on sample {test.sample.label}",
        )
    return retest


def investigation_close(
    actor: Actor,
    investigation: Investigation | int,
    *,
    conclusion: str,
    findings: str,
    hold_reason: str = "",
    password: object = None,
    request=None,
) -> Investigation:
    """QA closes an open investigation with ``conclusion`` and mandatory ``findings``:
    "confirmed" or "lab_error" (an open lot), "no_action" or "hold_notice" with
    ``hold_reason`` (a released lot: ``post_release_close``). ``effect`` on the answer says
    what it changed. Needs ``close_investigation`` (QA, admin).

    "confirmed" on an open lot rejects it, and is signed as ``lot_reject`` is: ``password`` is
    the user's own, re-entered (InvalidInput naming ``password`` otherwise, nothing written),
    and the audit entries record the signature's meaning."""
    require_permission(actor, "close_investigation", "close OOS investigations")
    if conclusion not in Conclusion.values:
        raise InvalidInput.for_field("conclusion", f"must be one of {', '.join(Conclusion.values)}")
    if conclusion in POST_RELEASE_CONCLUSIONS:
        return post_release_close(actor, investigation, conclusion=conclusion, findings=findings, hold_reason=hold_reason)
    findings = required_text(findings, "findings")
    clean_hold_reason(conclusion, hold_reason)
    pk = investigation.pk if isinstance(investigation, Investigation) else investigation
    lot_id = Investigation.objects.filter(pk=pk).values_list("lot_id", flat=True).first()
    if lot_id is None:
        fetch(Investigation, pk)  # raises NotFound
    signed = conclusion == Conclusion.CONFIRMED and _rejects(pk, lot_id)
    if signed:
        # outside the transaction, as for lot_reject: a lock-out a wrong password trips is kept
        signature_confirm(actor, password, request=request)
    with transaction.atomic():
        lot = fetch(Lot, lot_id, lock=True)
        investigation = fetch(Investigation, pk, lock=True)
        if investigation.state != InvestigationState.OPEN:
            raise Conflict(f"investigation {investigation.pk} is already closed ({investigation.conclusion})")
        if conclusion == Conclusion.CONFIRMED and lot.state == LotState.RELEASED:
            raise confirmed_refusal(lot)
        test = Test.objects.select_related("sample", "specification_line").get(pk=investigation.test_id)
        retest = None
        if conclusion == Conclusion.LAB_ERROR:
            if not lot_takes_work(lot, test.sample.kind):
                raise Conflict(f"lot {lot.code} is {lot.state}; a retest is no longer possible")
            test.sample = Sample.objects.select_for_update().get(pk=test.sample_id)
            if test.sample.state in FINAL_SAMPLE_STATES:
                raise Conflict(f"sample {test.sample.label} is {test.sample.state}; a retest is no longer possible")
            Test.objects.select_for_update().get(pk=test.pk)
            refusal = _sources_under_investigation(test)
            if refusal is not None:
                raise refusal
            cascaded: list[tuple[Test, Test]] = []
            retest = _retest(actor, test, findings, cascaded, cause=investigation.pk)
        if retest is not None:
            effect = f"test {test.pk} invalidated; retest {retest.pk} created on sample {test.sample.label}"
            if cascaded:
                with_it = sorted(cascaded, key=lambda pair: pair[0].pk)
                effect += "; with it " + ", ".join(f"{old.method_code} test {old.pk} (retest {new.pk})" for old, new in with_it)
        elif lot.state == LotState.OPEN:
            effect = f"lot {lot.code} is now rejected"
        else:  # a lot rejected meanwhile: the conclusion is recorded, the lot is as it was
            effect = f"no change to the lot: {lot.code} was already {lot.state}"
        rejects = conclusion == Conclusion.CONFIRMED and lot.state == LotState.OPEN
        signature = {}
        if rejects:
            if not signed:  # a decided lot never reopens; kept so that no rejection goes unsigned
                raise InvalidInput.for_field("password", "is required: confirming this OOS rejects the lot; re-enter your password to sign")
            signature = {"signature_meaning": [None, rejection_meaning(lot_specification_versions(lot))]}
        investigation.test = test
        investigation_record_close(actor, investigation, conclusion=conclusion, findings=findings, effect=effect,
                                   retest=retest, extra_changes=signature)
        if rejects:
            lot_reject_locked(actor, lot, f"OOS confirmed by investigation {investigation.pk}: {findings}")
        elif retest is not None:
            sample_sync(actor, test.sample, reason=f"retest {retest.pk} created")
    return investigation


def _rejects(investigation_id: int, lot_id: int) -> bool:
    """Whether closing the investigation as confirmed would reject its lot now (an open lot,
    an open investigation): then the closing is signed."""
    return (
        Investigation.objects.filter(pk=investigation_id, state=InvestigationState.OPEN).exists()
        and Lot.objects.filter(pk=lot_id, state=LotState.OPEN).exists()
    )
