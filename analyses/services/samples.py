"""Samples: registration, receipt (which creates the tests), hold, resume and cancel."""
from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import Conflict, InvalidInput
from analyses.models import (
    AuditAction,
    Investigation,
    InvestigationState,
    Lot,
    Priority,
    Sample,
    SampleKind,
    SampleState,
    Test,
)
from analyses.selectors.specifications import specification_effective
from analyses.services.access import Actor, fetch, require_permission, required_text
from analyses.services.uniqueness import UniqueKey
from analyses.services.transitions import (
    cancel_open_tests,
    lot_takes_work,
    sample_move,
    sample_move_check,
    sample_require_lot_takes_work,
    sample_sync,
)
from plugins.registry import get_registry

SAMPLE_FIELDS = ("lot", "label", "kind", "state", "taken_at")
RECEIPT_FIELDS = ("received_by", "received_at", "condition_on_receipt", "storage_place", "specification")
TEST_FIELDS = ("sample", "specification_line", "method_code", "replicates", "priority", "due_on", "state", "retest_of")
# Retain samples are stored, not tested; the other kinds get the specification's tests.
TESTED_KINDS = (SampleKind.ROUTINE, SampleKind.QC_CHECK, SampleKind.STABILITY_PULL)
# how far ahead of our clock a client's clock may be (common practice, no source)
CLOCK_SKEW = dt.timedelta(minutes=5)


def _not_in_future(moment: dt.datetime, field: str) -> None:
    if moment > timezone.now() + CLOCK_SKEW:
        raise InvalidInput.for_field(field, "must not be in the future")


def _check_lot_takes(lot: Lot, kind: str) -> None:
    if not lot_takes_work(lot, kind):
        raise Conflict(f"lot {lot.code} is {lot.state}; a {kind} sample cannot be taken from it")


def _next_label(lot: Lot) -> str:
    number = lot.samples.count() + 1
    while Sample.objects.filter(label=f"{lot.code}-S{number}").exists():
        number += 1
    return f"{lot.code}-S{number}"


def sample_register(
    actor: Actor,
    lot: Lot | int,
    *,
    kind: str = SampleKind.ROUTINE,
    label: str | None = None,
    taken_at: dt.datetime | None = None,
    registered_at: dt.datetime | None = None,
) -> Sample:
    """Register a sample taken from an open lot; ``label`` must be unique (default:
    "<lot>-S<n>"). ``registered_at`` (default now, never in the future) lets a sample
    logged late keep the time it was logged on paper. Needs ``register_sample`` (lab
    manager, admin)."""
    require_permission(actor, "register_sample", "register samples")
    if kind not in SampleKind.values:
        raise InvalidInput.for_field("kind", f"must be one of {', '.join(SampleKind.values)}")
    if registered_at is not None:
        _not_in_future(registered_at, "registered_at")
    with transaction.atomic():
        lot = fetch(Lot, lot, lock=True)
        _check_lot_takes(lot, kind)
        label = required_text(label, "label") if label is not None else _next_label(lot)
        key = UniqueKey(Sample, "label", label, f"sample label {label!r} is already used")
        key.refuse_if_taken()
        # the lot's lock serialises its own labels; a label chosen on another lot at the same time meets the index
        with key.insert():
            sample = Sample.objects.create(
                lot=lot, label=label, kind=kind, taken_at=taken_at, registered_by=actor,
                registered_at=registered_at or timezone.now(),
            )
            audit_append(actor, AuditAction.CREATE, sample, created(sample, SAMPLE_FIELDS), lot_ref=lot.pk, sample_ref=sample.pk)
    return sample


def sample_receive(
    actor: Actor,
    sample: Sample | int,
    *,
    condition: str,
    storage_place: str,
    received_at: dt.datetime | None = None,
    priority: int = Priority.NORMAL,
    due_on: dt.date | None = None,
    methods: Sequence[str] | None = None,
) -> Sample:
    """Receive a registered sample: record who, when, its condition and storage place, and
    create one test per line (or per line of ``methods`` only) of the product's approved specification in effect on the day
    of receipt (retain samples get none). Each test takes the plugin's replicate count,
    ``priority``, and ``due_on`` (default: receipt date + the line's turnaround days).
    ``received_at`` may not be in the future (5 minutes' clock skew allowed) nor before
    the sample's registration; ``due_on`` not before the receipt date.
    Conflict when no approved specification is in effect or a method is not installed.
    Needs ``receive_sample`` (lab manager, admin)."""
    require_permission(actor, "receive_sample", "receive samples")
    condition = required_text(condition, "condition")
    storage_place = required_text(storage_place, "storage_place")
    if priority not in Priority.values:
        raise InvalidInput.for_field("priority", f"must be one of {', '.join(map(str, Priority.values))}")
    received_at = received_at or timezone.now()
    _not_in_future(received_at, "received_at")
    receipt_day = timezone.localdate(received_at)
    if due_on is not None and due_on < receipt_day:
        raise InvalidInput.for_field("due_on", f"must not be before the receipt date {receipt_day.isoformat()}")
    with transaction.atomic():
        sample = fetch(Sample, sample, lock=True)
        if received_at < sample.registered_at:
            raise InvalidInput.for_field(
                "received_at", f"must not be before the sample's registration ({sample.registered_at.isoformat()})"
            )
        lot = Lot.objects.select_related("product").get(pk=sample.lot_id)
        _check_lot_takes(lot, sample.kind)
        sample_move_check(sample, SampleState.RECEIVED)
        specification = None
        lines = []
        if sample.kind in TESTED_KINDS:
            specification = specification_effective(lot.product_id, receipt_day)
            if specification is None:
                raise Conflict(
                    f"no approved specification of {lot.product.code} is in effect on {receipt_day}",
                    missing=[f"approved specification for {lot.product.code}"],
                )
            lines = list(specification.lines.all())
            if methods is not None:  # e.g. a stability pull tests only the study's methods
                absent = sorted(set(methods) - {line.method_code for line in lines})
                if absent:
                    raise Conflict(
                        f"specification {lot.product.code} v{specification.version} has no line for {', '.join(absent)}",
                        missing=absent,
                    )
                lines = [line for line in lines if line.method_code in methods]
            registry = get_registry()
            absent = [line.method_code for line in lines if line.method_code not in registry]
            if absent:
                raise Conflict(f"method plugin(s) not installed: {', '.join(absent)}", missing=absent)
        sample.received_by = actor
        sample.received_at = received_at
        sample.condition_on_receipt = condition
        sample.storage_place = storage_place
        sample.specification = specification
        sample.save(update_fields=list(RECEIPT_FIELDS))
        audit_append(
            actor, AuditAction.CHANGE, sample, created(sample, RECEIPT_FIELDS), lot_ref=lot.pk, sample_ref=sample.pk
        )
        sample_move(actor, sample, SampleState.RECEIVED)
        now = timezone.now()
        for line in lines:
            test = Test.objects.create(
                sample=sample,
                specification_line=line,
                method_code=line.method_code,
                replicates=max(1, get_registry().get(line.method_code).replicates),
                priority=priority,
                due_on=due_on or receipt_day + dt.timedelta(days=line.turnaround_days),
                created_at=now,
            )
            audit_append(actor, AuditAction.CREATE, test, created(test, TEST_FIELDS), lot_ref=lot.pk, sample_ref=sample.pk)
    return sample


def sample_hold(actor: Actor, sample: Sample | int, *, reason: str) -> Sample:
    """Put a sample on hold (it remembers the state to resume to). Work on its tests waits.
    Needs ``hold_sample`` (lab manager, QA, admin)."""
    require_permission(actor, "hold_sample", "put samples on hold")
    reason = required_text(reason, "reason")
    with transaction.atomic():
        sample = fetch(Sample, sample, lock=True)
        return sample_move(actor, sample, SampleState.ON_HOLD, reason=reason)


def sample_resume(actor: Actor, sample: Sample | int, *, reason: str) -> Sample:
    """Return a held sample to the state it was held from (its hold reason cleared), then
    follow its tests: a retest created meanwhile takes it back to in_testing. Needs
    ``hold_sample``."""
    require_permission(actor, "hold_sample", "resume samples")
    reason = required_text(reason, "reason")
    with transaction.atomic():
        sample = fetch(Sample, sample, lock=True)
        if sample.state != SampleState.ON_HOLD:
            raise Conflict(f"sample {sample.label} is {sample.state}, not on hold")
        sample_move(actor, sample, sample.resume_state, reason=reason)
        # tests may have changed while it was held (e.g. a retest after a lab error)
        return sample_sync(actor, sample, reason=reason)


def sample_cancel(actor: Actor, sample: Sample | int, *, reason: str) -> Sample:
    """Cancel a sample that is not yet final, whose lot still takes work on it and that has
    no open OOS investigation (Conflict naming it); its open tests are cancelled. Needs
    ``cancel_sample`` (lab manager, admin)."""
    require_permission(actor, "cancel_sample", "cancel samples")
    reason = required_text(reason, "reason")
    with transaction.atomic():
        sample = fetch(Sample, sample, lock=True)
        sample_move_check(sample, SampleState.CANCELLED)
        sample_require_lot_takes_work(sample)
        open_investigations = list(
            Investigation.objects.filter(test__sample=sample, state=InvestigationState.OPEN).order_by("pk").values_list("pk", flat=True)
        )
        if open_investigations:
            named = [f"OOS investigation {pk} is open" for pk in open_investigations]
            raise Conflict(f"sample {sample.label} cannot be cancelled: {'; '.join(named)}", missing=named)
        cancel_open_tests(actor, sample, reason=f"sample cancelled: {reason}")
        return sample_move(actor, sample, SampleState.CANCELLED, reason=reason)
