"""When a titrant lot or an instrument may be used for a result: plain rules over plain
facts, each returning the reason it may not (or None). The services read the facts."""
from __future__ import annotations

import datetime as dt
from dataclasses import dataclass


@dataclass(frozen=True)
class LotFacts:
    code: str
    expires_on: dt.date
    standardisation_id: int | None  # the current (latest, not superseded) standardisation
    standardisation_valid_until: dt.datetime | None


def lot_refusal(lot: LotFacts, now: dt.datetime) -> str | None:
    """A lot is usable while in date and its latest standardisation is valid."""
    if now.date() > lot.expires_on:
        return f"titrant lot {lot.code} expired on {lot.expires_on.isoformat()}"
    if lot.standardisation_id is None:
        return f"titrant lot {lot.code} has no standardisation"
    if lot.standardisation_valid_until is not None and now > lot.standardisation_valid_until:
        return (
            f"titrant lot {lot.code}: standardisation {lot.standardisation_id} was valid until "
            f"{lot.standardisation_valid_until.isoformat(timespec='minutes')}"
        )
    return None


@dataclass(frozen=True)
class InstrumentFacts:
    asset_id: str
    calibration_id: int | None  # the latest calibration
    calibration_passed: bool | None
    calibration_due_on: dt.date | None
    check_every_days: int | None  # None: no routine check required
    check_id: int | None  # the latest routine check
    check_passed: bool | None
    check_at: dt.datetime | None


def instrument_refusal(instrument: InstrumentFacts, now: dt.datetime) -> str | None:
    """An instrument is usable while its latest calibration passed and is not overdue and,
    where routine checks are required, its latest check passed and is not overdue."""
    name = f"instrument {instrument.asset_id}"
    if instrument.calibration_id is None:
        return f"{name} is uncalibrated"
    if not instrument.calibration_passed:
        return f"{name} failed its calibration {instrument.calibration_id}"
    if instrument.calibration_due_on is not None and now.date() > instrument.calibration_due_on:
        return f"{name} is overdue for calibration (due {instrument.calibration_due_on.isoformat()})"
    if instrument.check_every_days:
        if instrument.check_id is None:
            return f"{name} has no routine check"
        if not instrument.check_passed:
            return f"{name} failed its routine check {instrument.check_id}"
        if instrument.check_at is not None and now - instrument.check_at > dt.timedelta(days=instrument.check_every_days):
            return f"{name} is overdue for its routine check (every {instrument.check_every_days} day(s))"
    return None
