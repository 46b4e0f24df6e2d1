"""Findings after release: a retained sample tested after its lot's release, the
post-release investigation an out-of-specification result there opens, and its outcomes.

How a finding arises: the lab manager orders tests on a retained sample of a released lot
(``retain_tests_add``: a customer complaint, a periodic check), judged against the
specification the lot was released against. An accepted out-of-specification result on a
released lot opens a *post-release* investigation (``post_release_investigation_open``,
called by ``test_accept``) and notifies QA through the alert delivery. It does not block
anything: the lot is already released.

Its outcomes are explicit (``post_release_close``):

no_action    the finding does not touch the lot: nothing changes on it, and the close says so.
hold_notice  QA (the ``qa_reviewer`` group: a decision on a lot's standing) issues a hold
             notice with a reason: the lot stays released and is marked "released, under
             investigation"; the notice is audited and QA is notified through the alert
             delivery. ``lot_hold_lift`` ends it, with a reason.

``confirmed`` rejects an open lot; on a released lot it would change nothing, so it is refused
(409) naming these outcomes. ``lab_error`` works as before where a retest is possible (the
retained sample takes work after release). Every close records in ``effect`` what it changed.
Stability pulls never get here: they are judged against their study (``pull_judging``).
"""
from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import Conflict, InvalidInput
from analyses.models import (
    AlertSource,
    AuditAction,
    Conclusion,
    Investigation,
    InvestigationKind,
    InvestigationState,
    Lot,
    LotState,
    OPEN_TEST_STATES,
    Priority,
    Sample,
    SampleKind,
    Specification,
    Test,
)
from analyses.selectors.specifications import specification_effective
from analyses.services.access import Actor, fetch, require_permission, required_text
from analyses.services.alerts import AlertDraft, alerts_raise
from analyses.services.release import release_samples
from analyses.services.samples import TEST_FIELDS
from analyses.services.transitions import sample_require_workable, sample_sync
from labcore.metrics import OOS_OPENED, count_on_commit
from plugins.registry import get_registry

POST_RELEASE_CONCLUSIONS = (Conclusion.NO_ACTION, Conclusion.HOLD_NOTICE)
INVESTIGATION_FIELDS = ("lot", "test", "state", "kind")
HOLD_FIELDS = ("hold_notice_reason", "hold_notice_at", "hold_notice_by", "hold_notice_investigation")
UNDER_INVESTIGATION = "released, under investigation"


def released_against(lot: Lot) -> Specification | None:
    """The specification the lot's release tests were judged against (the latest version
    among them); for a lot released without any, the one in effect today."""
    ids = {test.specification_line.specification_id for sample in release_samples(lot) for test in sample.live_tests}
    found = Specification.objects.filter(pk__in=ids).order_by("-version").first()
    return found or specification_effective(lot.product_id, timezone.localdate())


def _clean_methods(methods: object) -> list[str]:
    if isinstance(methods, (str, bytes)) or not isinstance(methods, Sequence) or not methods:
        raise InvalidInput.for_field("methods", "give a list of at least one method code")
    clean: list[str] = []
    for index, code in enumerate(methods):
        if not isinstance(code, str) or not code.strip():
            raise InvalidInput.for_field(f"methods.{index}", "must be a method code")
        if code in clean:
            raise InvalidInput.for_field(f"methods.{index}", f"repeats {code}")
        clean.append(code)
    return clean


def retain_tests_add(actor: Actor, sample: Sample | int, *, methods: Sequence[str], reason: str) -> list[Test]:
    """Order tests on a retained sample of a released lot (one per method, on the lines of the
    specification the lot was released against), with the reason (a complaint, a periodic
    check). The tests follow the usual walk; an out-of-specification result accepted on them
    opens a post-release investigation. Conflict when the sample is not a received retained
    sample of a released lot, a method has no line, or a test of it is still open. Needs
    ``receive_sample`` (lab manager, admin)."""
    require_permission(actor, "receive_sample", "order tests on retained samples")
    codes = _clean_methods(methods)
    reason = required_text(reason, "reason")
    with transaction.atomic():
        sample = fetch(Sample, sample, lock=True)
        lot = Lot.objects.select_for_update().select_related("product").get(pk=sample.lot_id)
        sample.lot = lot
        if sample.kind != SampleKind.RETAIN:
            raise Conflict(f"sample {sample.label} is a {sample.kind} sample; only a retained sample is tested after release")
        if lot.state != LotState.RELEASED:
            raise Conflict(
                f"lot {lot.code} is {lot.state}; a retained sample is tested this way only after its lot's release"
            )
        sample_require_workable(sample)
        specification = released_against(lot)
        lines = {line.method_code: line for line in specification.lines.all()} if specification else {}
        absent = [code for code in codes if code not in lines]
        if absent:
            against = f"specification {lot.product.code} v{specification.version}" if specification else "no specification"
            raise Conflict(f"{against} has no line for {', '.join(absent)}", missing=absent)
        registry = get_registry()
        uninstalled = [code for code in codes if code not in registry]
        if uninstalled:
            raise Conflict(f"method plugin(s) not installed: {', '.join(uninstalled)}", missing=uninstalled)
        busy = sorted(set(sample.tests.filter(method_code__in=codes, state__in=OPEN_TEST_STATES).values_list("method_code", flat=True)))
        if busy:
            raise Conflict(f"sample {sample.label} already has an open test of {', '.join(busy)}", missing=busy)
        if sample.specification_id is None:
            sample.specification = specification
            sample.save(update_fields=["specification"])
            audit_append(
                actor, AuditAction.CHANGE, sample, {"specification": [None, specification.pk]},
                reason=reason, lot_ref=lot.pk, sample_ref=sample.pk,
            )
        now = timezone.now()
        tests = []
        for code in codes:
            line = lines[code]
            test = Test.objects.create(
                sample=sample, specification_line=line, method_code=code,
                replicates=max(1, registry.get(code).replicates), priority=Priority.HIGH,
                due_on=timezone.localdate() + dt.timedelta(days=line.turnaround_days), created_at=now,
            )
            audit_append(
                actor, AuditAction.CREATE, test, created(test, TEST_FIELDS),
                reason=f"retained sample tested after release: {reason}", lot_ref=lot.pk, sample_ref=sample.pk,
            )
            tests.append(test)
        sample_sync(actor, sample, reason=f"tests ordered after release: {reason}")
    return tests


def _notify(actor: Actor, investigation: Investigation, *, rule: str, message: str) -> None:
    """An alert for QA, delivered like every alert (e-mail, webhook, retried). One episode per
    investigation and rule; the investigation is locked by the caller, so the key is uncontested."""
    test = investigation.test
    alerts_raise([
        AlertDraft(
            source=AlertSource.POST_RELEASE, rule=rule, series_key=f"lot:{investigation.lot.code}",
            episode_key=f"investigation:{investigation.pk}|{rule}", message=message,
            points=[{"investigation": investigation.pk, "test_id": test.pk, "reported": test.reported, "unit": test.unit}],
            method_code=test.method_code, product_id=investigation.lot.product_id, lot_id=investigation.lot_id,
        )
    ], actor)


def post_release_investigation_open(actor: Actor, test: Test) -> Investigation:
    """Open the post-release investigation of an accepted out-of-specification test on a
    released lot, and notify QA. Runs in ``test_accept``'s transaction, the test locked."""
    lot = test.sample.lot
    investigation = Investigation.objects.create(
        lot=lot, test=test, kind=InvestigationKind.POST_RELEASE, opened_by=actor, opened_at=timezone.now()
    )
    finding = f"{test.method_code} {test.reported} {test.unit} out of specification on released lot {lot.code}"
    audit_append(
        actor, AuditAction.CREATE, investigation, created(investigation, INVESTIGATION_FIELDS),
        reason=f"{finding} (sample {test.sample.label})", lot_ref=lot.pk, sample_ref=test.sample_id,
    )
    count_on_commit(OOS_OPENED)
    _notify(
        actor, investigation, rule="released_lot_oos",
        message=f"Lot {lot.code} ({lot.product.code}) is released, and its {test.sample.kind} sample {test.sample.label} "
        f"gave {finding}: post-release investigation {investigation.pk} is open. Close it with no_action or a hold_notice.",
    )
    return investigation


def confirmed_refusal(lot: Lot) -> Conflict:
    """Why "confirmed" cannot close an investigation on a released lot."""
    return Conflict(
        f"lot {lot.code} is already released: 'confirmed' rejects an open lot and would change nothing here. "
        f"Close with 'no_action', or 'hold_notice' with a hold_reason to mark the lot {UNDER_INVESTIGATION}"
    )


def _clean_close(actor: Actor, conclusion: str, findings: str, hold_reason: str) -> tuple[str, str]:
    require_permission(actor, "close_investigation", "close OOS investigations")
    if conclusion == Conclusion.HOLD_NOTICE:
        # a decision on a released lot's standing: QA's alone, as release is
        require_permission(actor, "release_lot", "issue a hold notice on a released lot")
    findings = required_text(findings, "findings")
    return findings, clean_hold_reason(conclusion, hold_reason)


def clean_hold_reason(conclusion: str, hold_reason: object) -> str:
    """The hold notice's reason: required for ``hold_notice``, refused with any other conclusion."""
    if conclusion == Conclusion.HOLD_NOTICE:
        return required_text(hold_reason, "hold_reason")
    if hold_reason not in (None, "") and (not isinstance(hold_reason, str) or hold_reason.strip()):
        raise InvalidInput.for_field("hold_reason", "only a hold_notice conclusion takes a reason for the lot")
    return ""


def post_release_close(
    actor: Actor, investigation: Investigation | int, *, conclusion: str, findings: str, hold_reason: str = ""
) -> Investigation:
    """Close an investigation on a released lot with ``no_action`` or ``hold_notice`` (with
    ``hold_reason``); ``effect`` says what it changed. Conflict when the lot is not released
    (an open lot's investigation is closed as confirmed or lab_error), and for a hold notice
    on a lot already under one."""
    if conclusion not in POST_RELEASE_CONCLUSIONS:
        raise InvalidInput.for_field("conclusion", f"must be one of {', '.join(POST_RELEASE_CONCLUSIONS)}")
    findings, hold_reason = _clean_close(actor, conclusion, findings, hold_reason)
    pk = investigation.pk if isinstance(investigation, Investigation) else investigation
    lot_id = Investigation.objects.filter(pk=pk).values_list("lot_id", flat=True).first()
    if lot_id is None:
        fetch(Investigation, pk)  # raises NotFound
    with transaction.atomic():
        lot = Lot.objects.select_for_update().select_related("product").get(pk=lot_id)
        investigation = fetch(Investigation, pk, lock=True)
        if investigation.state != InvestigationState.OPEN:
            raise Conflict(f"investigation {investigation.pk} is already closed ({investigation.conclusion})")
        if lot.state != LotState.RELEASED:
            raise Conflict(
                f"lot {lot.code} is {lot.state}; '{conclusion}' closes an investigation on a released lot "
                f"(an open lot's is closed as 'confirmed' or 'lab_error')"
            )
        if conclusion == Conclusion.HOLD_NOTICE and lot.under_investigation:
            raise Conflict(
                f"lot {lot.code} is already {UNDER_INVESTIGATION} (hold notice of investigation "
                f"{lot.hold_notice_investigation_id}, {lot.hold_notice_at:%Y-%m-%d}); close this one with 'no_action' "
                f"or lift that notice first"
            )
        investigation.lot = lot
        if conclusion == Conclusion.HOLD_NOTICE:
            effect = _hold_issue(actor, lot, investigation, hold_reason)
        elif lot.under_investigation:
            effect = f"no change to the lot: {lot.code} stays {UNDER_INVESTIGATION} (hold notice of investigation {lot.hold_notice_investigation_id})"
        else:
            effect = f"no change to the lot: {lot.code} stays released"
        investigation_record_close(actor, investigation, conclusion=conclusion, findings=findings, effect=effect)
    return investigation


def investigation_record_close(
    actor: Actor, investigation: Investigation, *, conclusion: str, findings: str, effect: str, retest: Test | None = None,
    extra_changes: dict | None = None,
) -> None:
    """Mark a locked, open investigation closed with what it changed, and audit it (with
    ``extra_changes``, e.g. the meaning of the signature a rejecting close carries)."""
    investigation.state = InvestigationState.CLOSED
    investigation.conclusion = conclusion
    investigation.findings = findings
    investigation.closed_by = actor
    investigation.closed_at = timezone.now()
    investigation.retest = retest
    investigation.effect = effect
    investigation.save(update_fields=["state", "conclusion", "findings", "closed_by", "closed_at", "retest", "effect"])
    audit_append(
        actor, AuditAction.TRANSITION, investigation,
        {
            "state": [InvestigationState.OPEN, InvestigationState.CLOSED],
            "conclusion": ["", conclusion],
            "retest": [None, retest.pk if retest else None],
            "effect": ["", effect],
            **(extra_changes or {}),
        },
        reason=findings, lot_ref=investigation.lot_id, sample_ref=investigation.test.sample_id,
    )


def _hold_issue(actor: Actor, lot: Lot, investigation: Investigation, reason: str) -> str:
    before = {name: getattr(lot, name) for name in ("hold_notice_reason", "hold_notice_at", "hold_notice_by_id")}
    lot.hold_notice_reason = reason
    lot.hold_notice_at = timezone.now()
    lot.hold_notice_by = actor
    lot.hold_notice_investigation = investigation
    lot.save(update_fields=list(HOLD_FIELDS))
    audit_append(
        actor, AuditAction.CHANGE, lot,
        {
            "standing": [LotState.RELEASED, UNDER_INVESTIGATION],
            "hold_notice_reason": [before["hold_notice_reason"], reason],
            "hold_notice_at": [before["hold_notice_at"], lot.hold_notice_at],
            "hold_notice_by": [before["hold_notice_by_id"], actor.pk],
            "hold_notice_investigation": [None, investigation.pk],
        },
        reason=f"hold notice from post-release investigation {investigation.pk}: {reason}", lot_ref=lot.pk,
    )
    test = investigation.test
    _notify(
        actor, investigation, rule="lot_hold_notice",
        message=f"Hold notice on lot {lot.code} ({lot.product.code}): it is now {UNDER_INVESTIGATION}. Reason: {reason}. "
        f"From investigation {investigation.pk} ({test.method_code} {test.reported} {test.unit}).",
    )
    return f"lot {lot.code} is now {UNDER_INVESTIGATION}: {reason}; QA notified by alert"


def lot_hold_lift(actor: Actor, lot: Lot | int, *, reason: str) -> Lot:
    """End a released lot's hold notice, with a reason: it is plainly released again. Conflict
    when no notice stands. QA only (the ``qa_reviewer`` group)."""
    require_permission(actor, "release_lot", "lift a hold notice")
    reason = required_text(reason, "reason")
    with transaction.atomic():
        lot = fetch(Lot, lot, lock=True)
        if not lot.under_investigation:
            raise Conflict(f"lot {lot.code} is {lot.state} with no hold notice; there is nothing to lift")
        changes = {
            "standing": [UNDER_INVESTIGATION, LotState.RELEASED],
            "hold_notice_reason": [lot.hold_notice_reason, ""],
            "hold_notice_at": [lot.hold_notice_at, None],
            "hold_notice_by": [lot.hold_notice_by_id, None],
            "hold_notice_investigation": [lot.hold_notice_investigation_id, None],
        }
        lot.hold_notice_reason = ""
        lot.hold_notice_at = None
        lot.hold_notice_by = None
        lot.hold_notice_investigation = None
        lot.save(update_fields=list(HOLD_FIELDS))
        audit_append(actor, AuditAction.CHANGE, lot, changes, reason=f"hold notice lifted: {reason}", lot_ref=lot.pk)
    return lot
