"""Comparing a result with a specification line's limits, by ASTM E29.

The specification line names the method (``Comparison``):

absolute  the unrounded computed value is compared with the limit as written; any excess,
          however small, is out of specification.
rounding  the value is first rounded (half to even, ASTM E29) to "the last right-hand
          place used in expressing the limit" (E29's wording, from memory) - the places
          the limit is written to ("0.6" -> 1 place, "189" -> units, "10" -> units; limits
          are stored in plain notation, so there is no "1E+1"), then compared. Each limit uses its
          own places. The rounding is done once, from the unrounded value: where the
          plugin's reporting precision is at least as fine as the limit's this is the
          reported value rounded to the limit's places, and it avoids the double rounding
          (0.651 -> 0.65 -> 0.6) that rounding the reported value again would bring.

Both paths start from the same value: the exact decimal result the plugin computed from the
inputs as written (``MethodResult.exact``, ``Result.value_exact``). A float, from a plugin
that declares inexact arithmetic or a row stored before exact values were kept, goes
through ``float_as_decimal`` (15 significant digits) first, on both paths alike. No float
is ever compared with a limit.
"""
from __future__ import annotations

from decimal import Decimal

from analyses.models import Comparison, SpecificationLine, Verdict
from plugins.contract import float_as_decimal, round_half_even


def limit_places(limit: Decimal) -> int:
    """Decimal places the limit is written to, in plain notation: "0.60" -> 2, "10" -> 0."""
    exponent = limit.as_tuple().exponent
    return max(0, -exponent) if isinstance(exponent, int) else 0


def compared_value(value: Decimal | float, limit: Decimal, comparison: str) -> Decimal:
    """The form of ``value`` that is compared with ``limit`` under ``comparison``."""
    exact = value if isinstance(value, Decimal) else float_as_decimal(value)
    if comparison == Comparison.ROUNDING:
        return round_half_even(exact, limit_places(limit))
    return exact


def verdict_for(
    value: Decimal | float, *, minimum: Decimal | None, maximum: Decimal | None, comparison: str
) -> str:
    """``Verdict.PASS`` when ``value`` is within [minimum, maximum], else ``OUT_OF_SPECIFICATION``."""
    if minimum is not None and compared_value(value, minimum, comparison) < minimum:
        return Verdict.OUT_OF_SPECIFICATION
    if maximum is not None and compared_value(value, maximum, comparison) > maximum:
        return Verdict.OUT_OF_SPECIFICATION
    return Verdict.PASS


def line_verdict(value: Decimal | float, line: SpecificationLine) -> str:
    return verdict_for(
        value, minimum=line.minimum_decimal, maximum=line.maximum_decimal, comparison=line.comparison
    )
