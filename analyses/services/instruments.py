"""Instruments, their calibrations and their routine checks.

Calibrations and checks are append-only: a wrong one is followed by a new one. An
instrument is usable while its latest calibration passed and is not past its due date and,
where it needs routine checks (``check_every_days``; a balance daily by default), its latest
check passed within that period (``analyses.traceability.usability``).
"""
from __future__ import annotations

import datetime as dt
from typing import Any

from django.db import transaction
from django.utils import timezone

from analyses.audit import audit_append, created
from analyses.errors import InvalidInput
from analyses.models import AuditAction, Calibration, CheckKind, Instrument, InstrumentCheck, InstrumentKind
from analyses.services.access import Actor, fetch, refuse_raw_data_edit_by_qa, require_permission, required_text
from analyses.services.quantities import a_date, plain_number, quantity

INSTRUMENT_FIELDS = ("asset_id", "kind", "description", "location", "check_every_days")
CALIBRATION_FIELDS = (
    "instrument", "calibrated_on", "due_on", "certificate_ref", "passed", "standard_uncertainty", "tolerance", "unit",
)
CHECK_FIELDS = ("instrument", "kind", "reference", "nominal", "measured", "tolerance", "unit", "passed", "performed_at")
# a balance is checked with a check weight every working day (the "daily balance check")
DEFAULT_CHECK_DAYS = {InstrumentKind.BALANCE: 1}
CHECK_FITS = {CheckKind.CHECK_WEIGHT: InstrumentKind.BALANCE, CheckKind.REFERENCE_FILTER: InstrumentKind.SPECTROPHOTOMETER}
CHECK_UNITS = {CheckKind.CHECK_WEIGHT: "g", CheckKind.REFERENCE_FILTER: "dimensionless"}


def instrument_register(
    actor: Actor,
    *,
    asset_id: str,
    kind: str,
    location: str = "",
    description: str = "",
    check_every_days: int | None | str = "default",
) -> Instrument:
    """Register an instrument. ``check_every_days`` is how often a routine check is required
    (default: daily for a balance, none otherwise; None: none). Needs ``manage_instruments``
    (lab manager, admin)."""
    require_permission(actor, "manage_instruments", "register instruments")
    asset_id = required_text(asset_id, "asset_id")
    if kind not in InstrumentKind.values:
        raise InvalidInput.for_field("kind", f"must be one of {', '.join(InstrumentKind.values)}")
    if check_every_days == "default":
        check_every_days = DEFAULT_CHECK_DAYS.get(kind)
    if check_every_days is not None and (
        isinstance(check_every_days, bool) or not isinstance(check_every_days, int) or not 1 <= check_every_days <= 366
    ):
        raise InvalidInput.for_field("check_every_days", "must be a whole number from 1 to 366, or null")
    if Instrument.objects.filter(asset_id=asset_id).exists():
        raise InvalidInput.for_field("asset_id", f"instrument {asset_id!r} already exists")
    with transaction.atomic():
        instrument = Instrument.objects.create(
            asset_id=asset_id, kind=kind, location=(location or "").strip(), description=(description or "").strip(),
            check_every_days=check_every_days, created_by=actor, created_at=timezone.now(),
        )
        audit_append(actor, AuditAction.CREATE, instrument, created(instrument, INSTRUMENT_FIELDS))
    return instrument


def _optional_amount(raw: Any, field: str) -> str:
    """A bare number (its unit is given beside it), as a Decimal string; "" when absent."""
    if raw in (None, ""):
        return ""
    return str(plain_number(raw, field, allow_zero=False))


def calibration_record(
    actor: Actor,
    instrument: Instrument | int,
    *,
    calibrated_on: dt.date | str,
    due_on: dt.date | str,
    certificate_ref: str,
    passed: bool,
    standard_uncertainty: Any = "",
    tolerance: Any = "",
    unit: str = "",
) -> Calibration:
    """Record a calibration and the standard uncertainty or tolerance its certificate states
    (in ``unit``: the balance's u in g, the burette's tolerance in mL). Needs
    ``manage_instruments`` (lab manager, admin)."""
    require_permission(actor, "manage_instruments", "record calibrations")
    instrument = fetch(Instrument, instrument, label="instrument")
    on = a_date(calibrated_on, "calibrated_on")
    due = a_date(due_on, "due_on")
    if on > timezone.localdate():
        raise InvalidInput.for_field("calibrated_on", "must not be in the future")
    if due <= on:
        raise InvalidInput.for_field("due_on", "must be after calibrated_on")
    if not isinstance(passed, bool):
        raise InvalidInput.for_field("passed", "must be true or false")
    reference = required_text(certificate_ref, "certificate_ref")
    unit = (unit or "").strip()
    if (standard_uncertainty not in (None, "") or tolerance not in (None, "")) and not unit:
        raise InvalidInput.for_field("unit", "is required with a standard uncertainty or tolerance")
    u = _optional_amount(standard_uncertainty, "standard_uncertainty")
    tol = _optional_amount(tolerance, "tolerance")
    with transaction.atomic():
        calibration = Calibration(
            instrument=instrument, calibrated_on=on, due_on=due, certificate_ref=reference, passed=passed,
            standard_uncertainty=u, tolerance=tol, unit=unit, recorded_by=actor, recorded_at=timezone.now(),
        )
        calibration.save()
        audit_append(actor, AuditAction.CREATE, calibration, created(calibration, CALIBRATION_FIELDS))
    return calibration


def instrument_check_record(
    actor: Actor,
    instrument: Instrument | int,
    *,
    kind: str,
    nominal: Any,
    measured: Any,
    tolerance: Any,
    reference: str = "",
    performed_at: dt.datetime | None = None,
) -> InstrumentCheck:
    """A routine check: a balance weighs its check weight, a spectrophotometer reads its
    reference filter. It passes when |measured − nominal| ≤ tolerance (g for a check weight,
    absorbance for a filter). Needs ``record_instrument_check`` (analyst, admin)."""
    require_permission(actor, "record_instrument_check", "record instrument checks")
    refuse_raw_data_edit_by_qa(actor)
    instrument = fetch(Instrument, instrument, label="instrument")
    if kind not in CheckKind.values:
        raise InvalidInput.for_field("kind", f"must be one of {', '.join(CheckKind.values)}")
    fits = CHECK_FITS.get(kind)
    if fits is not None and instrument.kind != fits:
        raise InvalidInput.for_field("kind", f"a {kind} check is for a {fits}; {instrument.asset_id} is a {instrument.kind}")
    unit = CHECK_UNITS.get(kind, "dimensionless")
    nominal_value = quantity(nominal, unit, "nominal", allow_zero=True)
    measured_value = quantity(measured, unit, "measured", allow_zero=True)
    tolerance_value = quantity(tolerance, unit, "tolerance", allow_zero=False)
    now = timezone.now()
    at = performed_at or now
    if at > now + dt.timedelta(minutes=5):
        raise InvalidInput.for_field("performed_at", "must not be in the future")
    with transaction.atomic():
        check = InstrumentCheck(
            instrument=instrument, kind=kind, reference=(reference or "").strip(), nominal=str(nominal_value),
            measured=str(measured_value), tolerance=str(tolerance_value), unit=unit if unit != "dimensionless" else "",
            passed=abs(measured_value - nominal_value) <= tolerance_value, performed_by=actor, performed_at=at,
        )
        check.save()
        audit_append(actor, AuditAction.CREATE, check, created(check, CHECK_FIELDS))
    return check
