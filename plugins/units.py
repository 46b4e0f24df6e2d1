"""Unit handling through pint: a bare number is taken in the default unit."""
from __future__ import annotations

from functools import lru_cache
from numbers import Real
from typing import Any

import pint


class UnitProblem(ValueError):
    """A value that is not a quantity, or has a unit of the wrong dimension."""


@lru_cache(maxsize=1)
def registry() -> pint.UnitRegistry:
    return pint.UnitRegistry()


def dimensionality(unit: str) -> Any:
    return registry().Quantity(1, unit).dimensionality


def to_magnitude(raw: Any, unit: str) -> float:
    """Convert ``raw`` (a number, or a string such as "2015 mg") to a float in ``unit``."""
    ureg = registry()
    if isinstance(raw, bool):
        raise UnitProblem(f"must be a number or a quantity in {unit}, got {raw!r}")
    if isinstance(raw, Real):
        return float(raw)
    if not isinstance(raw, str):
        raise UnitProblem(f"must be a number or a quantity string such as '2 {unit}', got {raw!r}")
    text = raw.strip()
    try:
        return float(text)
    except ValueError:
        pass
    try:
        quantity = ureg.Quantity(text)
    except (pint.errors.PintError, ValueError, TypeError, AttributeError, SyntaxError, KeyError, AssertionError):
        raise UnitProblem(f"cannot read {raw!r} as a quantity in {unit}") from None
    if not isinstance(quantity, ureg.Quantity):
        return float(quantity)
    if quantity.dimensionless and quantity.units == ureg.dimensionless:
        return float(quantity.magnitude)
    try:
        return float(quantity.to(unit).magnitude)
    except pint.errors.DimensionalityError:
        raise UnitProblem(f"has unit '{quantity.units:~}', which cannot be converted to {unit}") from None
