"""Correcting an accepted result after its lot was released, and reissuing the certificate.

Two people, as for every result (four eyes; QA never enters raw data):

1. ``post_release_correction_propose``: whoever may correct the result before acceptance (its
   assignee; an admin) enters the corrected raw inputs with a reason. Nothing on the released
   record changes yet; the proposal keeps the inputs as entered and shows what the test's
   result and verdict would become (worked out by applying it inside a savepoint that is
   rolled back).
2. ``post_release_correction_approve``: a QA reviewer, not the proposer, signs with their
   password re-entered. In one transaction the result gets a new version (the old one is
   kept, superseded), the test's mean, U and verdict are decided again by the line's decision
   rule in exact decimals, every change is audited, and the certificate is reissued as a new
   version, reason "result correction: ...", that replaces the current one (which stays
   retrievable). ``post_release_correction_decline`` closes a proposal without applying it.

A correction whose replicates no longer agree within the method's repeatability is refused at
approval (409), as a review would not accept them. A correction that puts a release-critical
result outside its specification (out of
specification, or ILAC G8's conditional fail) is refused at approval with a 409 and nothing is
written: the certificate certified conformity for shipment, and a reissue must not state a
conformity that no longer holds, nor silently turn into a statement of nonconformity for a
lot already shipped. That is nonconforming work on a released lot (ISO/IEC 17025 §7.10): QA
investigates and decides on the lot (hold, customer notice) first. The proposal stays on
record with its inputs and the verdict it would give. A non-critical result that the
correction puts out of specification is applied (the certificate already lists such results
as "outside the limits but not release-critical") and opens an OOS investigation on the lot,
as at acceptance.

An accepted derived test worked out from the corrected one (TOTOX from PV and AnV) gets its new
result in the same transaction, stays accepted, and is held to the same two refusals; the
proposal's preview shows it (``derived``), and the reissued certificate does.

The correction keeps what the result was measured with (titrant lot, standardisation,
instruments): after release it corrects what was written down or worked out, not a new
measurement, which would be a new test.
"""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created, json_safe
from analyses.errors import Conflict, NotAllowed
from analyses.models import (
    OOS_VERDICTS,
    RELEASABLE_VERDICTS,
    AuditAction,
    CorrectionState,
    Investigation,
    InvestigationState,
    Lot,
    LotState,
    PostReleaseCorrection,
    Result,
    ResultStatus,
    Test,
    TestState,
)
from analyses.services.access import (
    Actor,
    actor_name,
    fetch,
    refuse_raw_data_edit_by_qa,
    require_permission,
    required_text,
)
from analyses.services.certificates import certificate_reissue_locked
from analyses.services.derived_tests import derived_tests_refresh
from analyses.services.release import RELEASE_KINDS
from analyses.services.result_trace import Trace, refuse_typed_titrant, trace_of, trace_save
from analyses.services.results import (
    AGGREGATE_FIELDS,
    check_may_enter,
    lock_test_row,
    method_outcome,
    new_result_fields,
    plugin_of_test,
    refuse_derived_correction,
    replicate_aggregate,
    replicate_values_with,
    result_created_changes,
    result_retire,
    set_test_aggregate,
)
from analyses.services.signatures import signature_confirm
from analyses.services.uncertainty import result_uncertainty_record
from labcore.metrics import OOS_OPENED, RESULTS_ENTERED, count_on_commit

CORRECTION_FIELDS = ("lot", "result", "inputs", "reason", "reported", "unit", "mean_reported", "verdict", "derived", "state")
REISSUE_REASON = "result correction"
INVESTIGATION_FIELDS = ("lot", "test", "state")


@dataclass(frozen=True)
class Applied:
    correction: Result
    test: Test
    derived: list[Test]  # accepted tests worked out from it (TOTOX), with their new results


def _check_correctable(result: Result, test: Test, lot: Lot) -> None:
    """Conflict unless ``result`` is a current replicate of an accepted test on a released lot's
    routine or QC-check sample (the samples its certificate reports)."""
    if lot.state != LotState.RELEASED:
        raise Conflict(
            f"lot {lot.code} is {lot.state}; only a released lot's results are corrected this way "
            "(before release, correct the result itself)"
        )
    if test.sample.kind not in RELEASE_KINDS:
        raise Conflict(f"sample {test.sample.label} is a {test.sample.kind} sample; its results are not on the certificate")
    if result.status != ResultStatus.CURRENT:
        raise Conflict(f"result {result.pk} is {result.status}; only a current result can be corrected")
    if test.state != TestState.ACCEPTED:
        raise Conflict(f"test {test.pk} is {test.state}; only an accepted test's result is corrected after release")


def _kept_trace(test: Test, old: Result, inputs: Any) -> Trace:
    trace = trace_of(old)
    if trace.standardisation is not None:
        refuse_typed_titrant(plugin_of_test(test), inputs)  # the concentration is the standardisation's
    return trace


def _apply(entered_by: Actor, actor: Actor, test: Test, old: Result, inputs: Mapping[str, Any], reason: str, entered_at) -> Applied:
    """The new version of ``old`` with ``inputs`` (entered by ``entered_by``), the old one
    superseded, the test's aggregate, U and verdict decided again; audited under ``actor``.
    Runs inside the caller's transaction, with the test locked."""
    plugin = plugin_of_test(test)
    trace = _kept_trace(test, old, inputs)
    outcome = method_outcome(plugin, test, inputs, trace)
    result_retire(actor, old, ResultStatus.SUPERSEDED, reason=reason, test=test)
    refs = {"lot_ref": test.sample.lot_id, "sample_ref": test.sample_id}
    values = replicate_values_with(test, old.replicate, outcome.judged)
    aggregate = replicate_aggregate(plugin, test, values, outcome.unit) if len(values) == test.replicates else None
    fields = new_result_fields(entered_by, test, inputs, outcome, aggregate, trace)
    fields["entered_at"] = entered_at  # when the analyst entered the corrected data
    correction = Result(replicate=old.replicate, version=old.version + 1, supersedes=old, correction_reason=reason, **fields)
    correction.save(force_insert=True)
    count_on_commit(RESULTS_ENTERED)  # a correction is entered data too (labcore/metrics.py)
    trace_save(correction, trace)
    result_uncertainty_record(correction, aggregate)  # its budget; the verdicts by the line's decision rule
    audit_append(actor, AuditAction.CREATE, correction, result_created_changes(correction, trace), reason=reason, **refs)
    derived: list[Test] = []
    if aggregate is not None:
        why = f"result {old.pk} corrected after release: {reason}"
        set_test_aggregate(actor, test, aggregate, reason=why)
        test.save(update_fields=list(AGGREGATE_FIELDS))
        derived = derived_tests_refresh(actor, [test], reason=why, accepted=True, entered_by=entered_by)
    return Applied(correction, test, derived)


def _locked(result_id: int) -> tuple[Lot, Test, Result]:
    """Lock the lot, then the sample and test (the project's lock order), then the result."""
    test_id = Result.objects.filter(pk=result_id).values_list("test_id", flat=True).first()
    if test_id is None:
        fetch(Result, result_id)  # raises NotFound
    lot_id = Test.objects.filter(pk=test_id).values_list("sample__lot_id", flat=True).get()
    lot = fetch(Lot, lot_id, lock=True)
    test = lock_test_row(test_id)
    return lot, test, fetch(Result, result_id, lock=True)


def post_release_correction_propose(
    actor: Actor, result: Result | int, *, inputs: Mapping[str, Any], reason: str
) -> PostReleaseCorrection:
    """The corrected raw ``inputs`` of an accepted result on a released lot, with the mandatory
    ``reason``, for QA to approve. Who may: whoever may correct the result before acceptance (its
    test's assignee; admins: any), never a QA reviewer. Conflict when the lot is not released,
    the result is not current or its test not accepted, or a proposal for it is already open;
    InvalidInput on ``inputs.<field>`` as for an entry. Nothing on the released record changes."""
    refuse_raw_data_edit_by_qa(actor)  # first, so that QA hears why
    require_permission(actor, "record_result", "correct results")
    reason = required_text(reason, "reason")
    pk = result.pk if isinstance(result, Result) else result
    with transaction.atomic():
        lot, test, old = _locked(pk)
        _check_correctable(old, test, lot)
        refuse_derived_correction(test)
        check_may_enter(actor, test)
        open_one = old.post_release_corrections.filter(state=CorrectionState.PROPOSED).first()
        if open_one is not None:
            raise Conflict(f"result {old.pk} already has a correction awaiting QA (#{open_one.pk}); QA approves or declines it first")
        with transaction.atomic():  # a preview: applied, read, and rolled back
            applied = _apply(actor, actor, test, old, inputs, reason, timezone.now())
            preview = {
                "reported": applied.correction.reported,
                "unit": applied.correction.unit,
                "mean_reported": applied.test.reported,
                "verdict": applied.test.verdict,
                "derived": [
                    {"test": t.pk, "method_code": t.method_code, "reported": t.reported, "unit": t.unit, "verdict": t.verdict}
                    for t in applied.derived
                ],
            }
            transaction.set_rollback(True)
        old.refresh_from_db()
        proposal = PostReleaseCorrection.objects.create(
            lot=lot, result=old, inputs=json_safe(dict(inputs)), reason=reason, proposed_by=actor, proposed_at=timezone.now(),
            **preview,
        )
        audit_append(
            actor, AuditAction.CREATE, proposal, created(proposal, CORRECTION_FIELDS),
            reason=reason, lot_ref=lot.pk, sample_ref=test.sample_id,
        )
    return proposal


def _check_open(proposal: PostReleaseCorrection) -> None:
    if proposal.state != CorrectionState.PROPOSED:
        raise Conflict(f"correction {proposal.pk} is already {proposal.state}")


def _four_eyes(actor: Actor, proposal: PostReleaseCorrection) -> None:
    """Nobody approves a correction they proposed, or one of a test whose current results they entered."""
    enterers = set(proposal.result.test.results.filter(status=ResultStatus.CURRENT).values_list("entered_by_id", flat=True))
    if actor.pk == proposal.proposed_by_id or actor.pk in enterers:
        raise NotAllowed(f"four-eyes rule: {actor_name(actor)} entered this data and may not approve its correction")


def _refuse_unacceptable(test: Test, proposal: PostReleaseCorrection) -> None:
    """Conflict when the corrected test could not be accepted (its replicates disagree) or no
    longer conforms where release depends on it."""
    check = test.duplicate_check or {}
    if check.get("agrees") is False:
        raise Conflict(
            f"with the correction, test {test.pk}'s replicates differ by {check['difference']:.4g}, more than the "
            f"repeatability limit {check['limit']:.4g} ({check['source']}); a review would not accept them. Nothing was "
            "changed; decline the proposal",
            missing=[f"correction {proposal.pk}: replicates of test {test.pk} disagree"],
        )
    line = test.specification_line
    if line.release_critical and test.verdict not in RELEASABLE_VERDICTS:
        raise Conflict(
            f"the corrected {test.method_code} result {test.reported} {test.unit} is out of specification "
            f"({test.verdict}) on a release-critical line: lot {proposal.lot.code} no longer conforms, and its certificate "
            "cannot be reissued stating that it does. Nothing was changed. Treat it as nonconforming work on a released "
            "lot (investigate, decide on the lot and tell the customer); the proposal stays open until it is declined",
            missing=[f"correction {proposal.pk}: {test.method_code} test {test.pk} {test.verdict}"],
        )


def _open_investigation(actor: Actor, test: Test) -> None:
    """A non-critical result now out of specification is investigated, as at acceptance."""
    if test.verdict in OOS_VERDICTS and not test.investigations.filter(state=InvestigationState.OPEN).exists():
        investigation = Investigation.objects.create(lot_id=test.sample.lot_id, test=test, opened_by=actor, opened_at=timezone.now())
        audit_append(
            actor, AuditAction.CREATE, investigation, created(investigation, INVESTIGATION_FIELDS),
            reason=f"{test.method_code} {test.reported} {test.unit} out of specification after a correction after release",
            lot_ref=test.sample.lot_id, sample_ref=test.sample_id,
        )
        count_on_commit(OOS_OPENED)


def post_release_correction_approve(
    actor: Actor, correction: PostReleaseCorrection | int, *, password: object, note: str = "", request=None
) -> PostReleaseCorrection:
    """QA applies a proposed correction and reissues the certificate, signed with the password
    re-entered (InvalidInput naming ``password`` otherwise). QA reviewers only (group
    membership; no superuser flag grants it), never the proposer or an enterer of the test's
    results. Conflict when the proposal is closed, the lot no longer released, the result
    corrected since, or when the correction would put a release-critical result out of
    specification (nothing is written; see the module docstring)."""
    require_permission(actor, "release_lot", "approve result corrections after release")
    proposal = fetch(PostReleaseCorrection, correction, label="correction")
    _check_open(proposal)  # what else is wrong is said before the password is asked for
    result = Result.objects.select_related("test__sample").get(pk=proposal.result_id)
    _check_correctable(result, result.test, fetch(Lot, proposal.lot_id))
    _four_eyes(actor, proposal)
    signature_confirm(actor, password, request=request)  # outside the transaction, as for a release
    note = (note or "").strip()
    with transaction.atomic():
        lot, test, old = _locked(proposal.result_id)
        proposal = fetch(PostReleaseCorrection, proposal.pk, lock=True, label="correction")
        _check_open(proposal)
        _check_correctable(old, test, lot)
        _four_eyes(actor, proposal)
        applied = _apply(proposal.proposed_by, actor, test, old, proposal.inputs, proposal.reason, proposal.proposed_at)
        for corrected in (applied.test, *applied.derived):
            _refuse_unacceptable(corrected, proposal)
            _open_investigation(actor, corrected)
        replaced = lot.certificates.order_by("-version").first()
        certificate = certificate_reissue_locked(actor, lot, reason=f"{REISSUE_REASON}: {proposal.reason}")
        meaning = (
            f"approved the correction of result {old.pk} after release; certificate {certificate.number} "
            f"replaces {replaced.number if replaced else '-'}"
        )
        proposal.state = CorrectionState.APPLIED
        proposal.decided_by = actor
        proposal.decided_at = timezone.now()
        proposal.decision_note = note
        proposal.correction = applied.correction
        proposal.certificate = certificate
        proposal.mean_reported = applied.test.reported
        proposal.verdict = applied.test.verdict
        proposal.save(update_fields=[
            "state", "decided_by", "decided_at", "decision_note", "correction", "certificate", "mean_reported", "verdict",
        ])
        audit_append(
            actor, AuditAction.TRANSITION, proposal,
            {
                "state": [CorrectionState.PROPOSED, CorrectionState.APPLIED],
                "correction": [None, applied.correction.pk],
                "certificate": [None, certificate.number],
                "verdict": [None, applied.test.verdict],
                "signature_meaning": [None, meaning],
            },
            reason=note or proposal.reason, lot_ref=lot.pk, sample_ref=test.sample_id,
        )
    return proposal


def post_release_correction_decline(actor: Actor, correction: PostReleaseCorrection | int, *, reason: str) -> PostReleaseCorrection:
    """QA closes a proposal without applying it, with a mandatory reason; the proposal and its
    inputs stay on record. QA reviewers only."""
    require_permission(actor, "release_lot", "decline result corrections after release")
    reason = required_text(reason, "reason")
    with transaction.atomic():
        proposal = fetch(PostReleaseCorrection, correction, lock=True, label="correction")
        _check_open(proposal)
        proposal.state = CorrectionState.DECLINED
        proposal.decided_by = actor
        proposal.decided_at = timezone.now()
        proposal.decision_note = reason
        proposal.save(update_fields=["state", "decided_by", "decided_at", "decision_note"])
        audit_append(
            actor, AuditAction.TRANSITION, proposal, {"state": [CorrectionState.PROPOSED, CorrectionState.DECLINED]},
            reason=reason, lot_ref=proposal.lot_id,
        )
    return proposal
