"""Lots: creation, release (with its certificate of analysis) and rejection by QA."""
from __future__ import annotations

import datetime as dt
from decimal import Decimal, InvalidOperation
from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import Conflict, InvalidInput
from analyses.models import (
    AuditAction,
    Certificate,
    Lot,
    LotOrigin,
    LotState,
    Product,
    SampleState,
    TestState,
)
from analyses.services.access import Actor, fetch, require_permission, required_text
from analyses.services.certificates import CUSTOMER_MAX, certificate_issue, lot_specification_versions
from analyses.services.release import RELEASE_KINDS, release_blockers
from analyses.services.signatures import rejection_meaning, release_meaning, signature_confirm
from analyses.services.transitions import cancel_open_tests, sample_move
from analyses.services.uniqueness import UniqueKey

# open tests that a release cancels (a result awaiting review blocks the release instead)
UNSTARTED_TEST_STATES = (TestState.PENDING, TestState.ASSIGNED, TestState.SENT_BACK)

LOT_FIELDS = ("code", "product", "origin", "supplier", "customer", "container_ref", "quantity_kg", "produced_on", "state")


def lot_create(
    actor: Actor,
    *,
    code: str,
    product: Product | int,
    origin: str,
    supplier: str = "",
    customer: str = "",
    container_ref: str = "",
    quantity_kg: Decimal | str | None = None,
    produced_on: dt.date | None = None,
) -> Lot:
    """A production lot, or an incoming delivery (``origin="delivery"``, which needs the
    supplier and the tank or container reference). ``customer``, where the lot is for one, is
    named on its certificate. Needs ``create_lot`` (lab manager, admin)."""
    require_permission(actor, "create_lot", "create lots")
    code = required_text(code, "code")
    if origin not in LotOrigin.values:
        raise InvalidInput.for_field("origin", f"must be one of {', '.join(LotOrigin.values)}")
    supplier = (supplier or "").strip()
    container_ref = (container_ref or "").strip()
    customer = (customer or "").strip()
    if len(customer) > CUSTOMER_MAX:
        raise InvalidInput.for_field("customer", f"must be at most {CUSTOMER_MAX} characters")
    if origin == LotOrigin.DELIVERY:
        required_text(supplier, "supplier")
        required_text(container_ref, "container_ref")
    quantity: Decimal | None = None
    if quantity_kg not in (None, ""):
        try:
            quantity = Decimal(str(quantity_kg))
        except InvalidOperation:
            raise InvalidInput.for_field("quantity_kg", "must be a number") from None
        if not quantity.is_finite() or quantity <= 0:
            raise InvalidInput.for_field("quantity_kg", "must be a positive number")
    today = timezone.localdate()
    if produced_on is not None and produced_on > today:
        # the lab's own date (TIME_ZONE): a lot is made or delivered before it is registered
        raise InvalidInput.for_field("produced_on", f"is {produced_on.isoformat()}, after today ({today.isoformat()}); a lot cannot be produced or delivered in the future")
    key = UniqueKey(Lot, "code", code, f"lot {code!r} already exists")
    key.refuse_if_taken()
    product = fetch(Product, product)
    with key.insert():  # a concurrent create of the same code gets the same answer
        lot = Lot.objects.create(
            code=code,
            product=product,
            origin=origin,
            supplier=supplier,
            customer=customer,
            container_ref=container_ref,
            quantity_kg=quantity,
            produced_on=produced_on,
            created_by=actor,
            created_at=timezone.now(),
        )
        audit_append(actor, AuditAction.CREATE, lot, created(lot, LOT_FIELDS), lot_ref=lot.pk)
    return lot


def _decide(actor: Actor, lot: Lot, state: str, reason: str, *, meaning: str) -> None:
    """Record the decision; ``meaning`` is what the signature on it means, kept in the audit trail."""
    old = lot.state
    lot.state = state
    lot.decision_reason = reason
    lot.decided_by = actor
    lot.decided_at = timezone.now()
    lot.save(update_fields=["state", "decision_reason", "decided_by", "decided_at"])
    audit_append(
        actor, AuditAction.TRANSITION, lot, {"state": [old, state], "signature_meaning": [None, meaning]},
        reason=reason, lot_ref=lot.pk,
    )


def _refuse_release(lot: Lot) -> None:
    if lot.state != LotState.OPEN:
        raise Conflict(f"lot {lot.code} is {lot.state}; only an open lot can be released")
    missing = release_blockers(lot)
    if missing:
        raise Conflict(f"lot {lot.code} cannot be released: {len(missing)} item(s) missing", missing=missing)


def lot_release(actor: Actor, lot: Lot | int, *, password: object, note: str = "", request=None) -> Certificate:
    """QA releases a lot and its certificate of analysis is issued.

    The release is an electronic signature: ``password`` is the user's own, re-entered
    (``signature_confirm``; InvalidInput naming ``password`` otherwise), and the audit entry
    records its meaning, "released for shipment against specification vN".

    Conflict (with ``missing``) unless every release-critical test of the lot's routine
    and QC-check samples is accepted and in specification, no result of theirs awaits
    review, and no investigation is open. The release cancels their remaining open
    (non-critical, not yet entered) tests and moves every one of those samples that is
    not cancelled to released; stability pulls and retains go on. Needs ``release_lot``."""
    require_permission(actor, "release_lot", "release lots")
    _refuse_release(fetch(Lot, lot))  # what else is wrong is said before the password is asked for
    # outside the transaction: a lock-out that a wrong password trips is recorded, not rolled back
    signature_confirm(actor, password, request=request)
    with transaction.atomic():
        lot = fetch(Lot, lot, lock=True)
        # Lock the samples before judging them again, so no result arrives between check and release.
        samples = list(
            lot.samples.select_for_update().filter(kind__in=RELEASE_KINDS).exclude(state=SampleState.CANCELLED).order_by("pk")
        )
        _refuse_release(lot)
        meaning = release_meaning(lot_specification_versions(lot))
        _decide(actor, lot, LotState.RELEASED, (note or "").strip(), meaning=meaning)
        reason = f"lot {lot.code} released"
        for sample in samples:
            cancel_open_tests(actor, sample, reason="lot released", states=UNSTARTED_TEST_STATES)
            if sample.state in (SampleState.RECEIVED, SampleState.IN_TESTING):
                # what testing it needed is done; the rest was cancelled above
                sample_move(actor, sample, SampleState.TESTING_COMPLETE, reason=reason)
            sample_move(actor, sample, SampleState.RELEASED, reason=reason)
        return certificate_issue(actor, lot)


def lot_reject_locked(actor: Actor, lot: Lot, reason: str) -> Lot:
    """Reject an open, already locked lot: its open samples become rejected and their open
    tests cancelled. Shared by ``lot_reject`` and a confirmed OOS investigation."""
    if lot.state != LotState.OPEN:
        raise Conflict(f"lot {lot.code} is {lot.state}; only an open lot can be rejected")
    _decide(actor, lot, LotState.REJECTED, reason, meaning=rejection_meaning(lot_specification_versions(lot)))
    closed = (SampleState.RELEASED, SampleState.REJECTED, SampleState.CANCELLED)
    for sample in lot.samples.select_for_update().exclude(state__in=closed):
        cancel_open_tests(actor, sample, reason=f"lot {lot.code} rejected")
        sample_move(actor, sample, SampleState.REJECTED, reason=f"lot {lot.code} rejected: {reason}")
    return lot


def lot_reject(actor: Actor, lot: Lot | int, *, reason: str, password: object, request=None) -> Lot:
    """QA rejects a lot, with a mandatory reason, signed with the user's re-entered ``password``
    as a release is. Needs ``release_lot``."""
    require_permission(actor, "release_lot", "reject lots")
    reason = required_text(reason, "reason")
    current = fetch(Lot, lot)
    if current.state != LotState.OPEN:
        raise Conflict(f"lot {current.code} is {current.state}; only an open lot can be rejected")
    signature_confirm(actor, password, request=request)  # outside the transaction, as for a release
    with transaction.atomic():
        lot = fetch(Lot, lot, lock=True)
        return lot_reject_locked(actor, lot, reason)

