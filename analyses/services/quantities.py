"""Reading the numbers and dates the traceability services take: a quantity string or
number as an exact Decimal in a given unit (through pint), or InvalidInput naming the field."""
from __future__ import annotations

import datetime as dt
from decimal import Decimal
from typing import Any

from analyses.errors import InvalidInput
from plugins.units import UnitProblem, to_decimal, to_magnitude


def quantity(raw: Any, unit: str, field: str, *, positive: bool = True, allow_zero: bool = False) -> Decimal:
    """``raw`` ("0.3888 g", "388.8 mg", "18.64", 0.5) in ``unit`` as an exact Decimal."""
    if raw is None or (isinstance(raw, str) and not raw.strip()):
        raise InvalidInput.for_field(field, "is required")
    try:
        to_magnitude(raw, unit)  # checks the text and the unit's dimension
        value = to_decimal(raw, unit)
    except UnitProblem as problem:
        raise InvalidInput.for_field(field, str(problem)) from None
    if not value.is_finite():
        raise InvalidInput.for_field(field, "must be a finite number")
    if positive and (value < 0 or (value == 0 and not allow_zero)):
        raise InvalidInput.for_field(field, "must be positive" if not allow_zero else "must not be negative")
    return value


def plain_number(raw: Any, field: str, *, allow_zero: bool = True) -> Decimal:
    """A dimensionless number (a purity, a fraction)."""
    return quantity(raw, "dimensionless", field, allow_zero=allow_zero)


def a_date(raw: Any, field: str) -> dt.date:
    if isinstance(raw, dt.datetime):
        return raw.date()
    if isinstance(raw, dt.date):
        return raw
    if isinstance(raw, str):
        try:
            return dt.date.fromisoformat(raw.strip())
        except ValueError:
            pass
    raise InvalidInput.for_field(field, "must be a date, YYYY-MM-DD")
