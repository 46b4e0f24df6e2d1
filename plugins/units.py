"""Unit handling through pint: a bare number is taken in the default unit.

A quantity string is read as a number followed by a unit ("2015 mg", "0.5 mol/L"). The
unit is checked against a small grammar before pint sees it, because pint evaluates
arithmetic in the text: "9**9**9 g" would tie up the process for minutes.
"""
from __future__ import annotations

import re
from decimal import Context, Decimal, localcontext
from functools import lru_cache
from numbers import Real
from typing import Any

from plugins.pint_import import pint

MAX_TEXT_LENGTH = 64

# A number, optionally signed, with an optional exponent: 2, 2.5, .5, 1e-3.
_NUMBER = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
# A unit word with at most one small exponent (mL, cm**3, m^2); words joined by / * · or spaces.
_WORD = r"[^\W\d_]+(?:(?:\*\*|\^)[+-]?\d{1,2})?"
_UNIT = rf"{_WORD}(?:\s*[/*·]\s*{_WORD}|\s+{_WORD})*"
_QUANTITY = re.compile(rf"\s*(?P<number>{_NUMBER})\s*(?P<unit>{_UNIT})\s*")


class UnitProblem(ValueError):
    """A value that is not a quantity, or has a unit of the wrong dimension."""


@lru_cache(maxsize=1)
def registry() -> pint.UnitRegistry:
    return pint.UnitRegistry()


@lru_cache(maxsize=1)
def exact_registry() -> pint.UnitRegistry:
    """A registry whose conversion factors are Decimals, so "2015 mg" is exactly 2.015 g."""
    return pint.UnitRegistry(non_int_type=Decimal)


def dimensionality(unit: str) -> Any:
    return registry().Quantity(1, unit).dimensionality


def to_decimal(raw: Any, unit: str) -> Decimal:
    """``raw`` in ``unit`` as an exact Decimal: the number as written, converted exactly.

    Call it on a value ``to_magnitude`` has accepted. A float (a JSON number) is taken as
    its shortest decimal form: 1.30 sent as a JSON number arrives as 1.3 and is 1.3 here.
    """
    if isinstance(raw, Decimal):
        return raw
    if isinstance(raw, int):
        return Decimal(raw)
    if isinstance(raw, Real):
        return Decimal(repr(float(raw)))
    text = str(raw).strip()
    try:
        return Decimal(text)
    except ArithmeticError:
        pass
    match = _QUANTITY.fullmatch(text)
    if match is None:  # to_magnitude refuses what does not match; keep the two in step
        raise UnitProblem(f"cannot read {raw!r} as a quantity in {unit}")
    ureg = exact_registry()
    given = ureg.Quantity(Decimal(match["number"]), ureg.Unit(match["unit"]))
    target = ureg.Quantity(Decimal(1), ureg.Unit(unit))
    if not (given._is_multiplicative and target._is_multiplicative):
        return given.to(unit).magnitude  # an offset unit (degF -> degC): pint's own conversion
    # number x (given in base units) / (target in base units), in one high-precision step: pint's
    # single factor is rounded to 28 digits where it does not terminate (1 min = 0.01666... h), so
    # 375 min would be 6.250000000000000000000000001 h, not the 6.25 h it is.
    given_base, target_base = given.to_base_units(), target.to_base_units()
    if given_base.units != target_base.units:
        raise UnitProblem(f"has unit {match['unit']!r}, which cannot be converted to {unit}")
    with localcontext(Context(prec=60)):
        converted = given_base.magnitude / target_base.magnitude
        # written without an exponent, as the analyst would write it: 1.30 L is 1300 mL, not 1.30E+3
        return converted.quantize(Decimal(1)) if converted.as_tuple().exponent > 0 else converted


def to_magnitude(raw: Any, unit: str) -> float:
    """Convert ``raw`` (a number, or a string such as "2015 mg") to a float in ``unit``."""
    if isinstance(raw, bool):
        raise UnitProblem(f"must be a number or a quantity in {unit}, got {raw!r}")
    if isinstance(raw, (Real, Decimal)):
        try:
            return float(raw)
        except (OverflowError, ValueError, TypeError):
            raise UnitProblem(f"is too large to be a quantity in {unit}") from None
    if not isinstance(raw, str):
        raise UnitProblem(f"must be a number or a quantity string such as '2 {unit}', got {raw!r}")
    if len(raw) > MAX_TEXT_LENGTH:
        raise UnitProblem(f"is longer than {MAX_TEXT_LENGTH} characters; give a number and a unit such as '2 {unit}'")
    text = raw.strip()
    if "," in text:
        # "1,5 g" is 1.5 g in much of Europe and 15 g to pint: refuse rather than guess.
        raise UnitProblem(f"contains a comma; write the number with a decimal point, e.g. '1.5 {unit}'")
    try:
        return float(text)
    except ValueError:
        pass
    match = _QUANTITY.fullmatch(text)
    if match is None:
        raise UnitProblem(f"cannot read {raw!r} as a quantity in {unit}; give a number and a unit such as '2 {unit}'")
    ureg = registry()
    try:
        given_unit = ureg.Unit(match["unit"])
    except (pint.errors.PintError, ValueError, TypeError, AttributeError, KeyError):
        raise UnitProblem(f"has unit {match['unit']!r}, which is not a known unit") from None
    try:
        return float(ureg.Quantity(float(match["number"]), given_unit).to(unit).magnitude)
    except pint.errors.DimensionalityError:
        raise UnitProblem(f"has unit {match['unit']!r}, which cannot be converted to {unit}") from None
    except (pint.errors.PintError, OverflowError, ArithmeticError):
        raise UnitProblem(f"cannot be converted to {unit}") from None
