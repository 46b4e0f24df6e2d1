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

Decision rules (ISO/IEC 17025 7.8.6; ILAC G8:09/2019; JCGM 106:2012), per specification line:

simple      today's comparison above, nothing more (ILAC G8: up to 50 % risk of false
            acceptance for a result at the limit).
guard_band  the acceptance limits move inward by w = multiple x U (U the result's expanded
            uncertainty, k = 2): a result passes only if it is inside the limit by at least w,
            i.e. at most maximum - w and at least minimum + w; otherwise it is out of
            specification. With w = U the risk of false acceptance is below 2.5 % (ILAC G8).
non_binary  ILAC G8's four statements with the same w: pass (inside by at least w),
            conditional pass (inside the limit, by less than w), conditional fail (outside, by
            at most w), fail (outside by more than w). A conditional fail is an OOS; a
            conditional pass is not, and is shown in review and on readiness.

The ASTM E29 comparison stays as above and comes first: its compared value (unrounded, or
rounded to the limit's places) is what is held against the acceptance limits (limit -+ w).
U is a Decimal string (two significant digits, rounded up: plugins.uncertainty), so the
decision is made in exact decimal arithmetic; with no U (a method with no budget), the
rule falls back to simple acceptance.

Both paths start from the same value: the exact decimal result the plugin computed from the
inputs as written (``MethodResult.exact``, ``Result.value_exact``). A float, from a plugin
that declares inexact arithmetic or a row stored before exact values were kept, goes
through ``float_as_decimal`` (15 significant digits) first, on both paths alike. No float
is ever compared with a limit.
"""
from __future__ import annotations

from decimal import Context, Decimal, localcontext

from analyses.models import Comparison, DecisionRule, SpecificationLine, Verdict
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


_SEVERITY = [Verdict.PASS, Verdict.CONDITIONAL_PASS, Verdict.CONDITIONAL_FAIL, Verdict.OUT_OF_SPECIFICATION]


# limits (40 characters at most), U (two significant digits) and a multiple (20 characters) sum
# and multiply exactly within this many digits; the compared value itself is only ever compared
_BAND_CONTEXT = Context(prec=120)


def _statement(compared: Decimal, limit: Decimal, w: Decimal, *, upper: bool, rule: str) -> str:
    """One limit's verdict. Only the short numbers (limit, w) take part in arithmetic; the
    compared value, however many digits, is only compared, so nothing rounds it."""
    with localcontext(_BAND_CONTEXT):
        inner, outer = (limit - w, limit + w) if upper else (limit + w, limit - w)
    def within(bound: Decimal) -> bool:
        return compared <= bound if upper else compared >= bound
    if within(inner):
        return Verdict.PASS
    if rule == DecisionRule.GUARD_BAND:
        return Verdict.OUT_OF_SPECIFICATION
    if within(limit):
        return Verdict.CONDITIONAL_PASS
    if within(outer):
        return Verdict.CONDITIONAL_FAIL
    return Verdict.OUT_OF_SPECIFICATION


def rule_verdict(
    value: Decimal | float,
    *,
    minimum: Decimal | None,
    maximum: Decimal | None,
    comparison: str,
    rule: str = DecisionRule.SIMPLE,
    guard_band: Decimal | None = None,
) -> str:
    """The verdict under a decision rule; ``guard_band`` is w (= multiple x U), exact."""
    if rule == DecisionRule.SIMPLE or guard_band is None:
        return verdict_for(value, minimum=minimum, maximum=maximum, comparison=comparison)
    worst = Verdict.PASS
    for limit, upper in ((minimum, False), (maximum, True)):
        if limit is None:
            continue
        verdict = _statement(compared_value(value, limit, comparison), limit, guard_band, upper=upper, rule=rule)
        worst = max(worst, verdict, key=_SEVERITY.index)
    return worst


def guard_band_for(line: SpecificationLine, expanded: Decimal | str | None) -> Decimal | None:
    """w = the line's multiple x U, exact; None without a U."""
    if expanded in (None, ""):
        return None
    with localcontext(_BAND_CONTEXT):
        return Decimal(line.guard_band_multiple or "1") * Decimal(expanded)


def line_verdict(value: Decimal | float, line: SpecificationLine, expanded: Decimal | str | None = None) -> str:
    """The verdict of ``value`` against the line's limits, by its ASTM E29 comparison and its
    decision rule; ``expanded`` is the value's U (k = 2)."""
    return rule_verdict(
        value, minimum=line.minimum_decimal, maximum=line.maximum_decimal, comparison=line.comparison,
        rule=line.decision_rule, guard_band=guard_band_for(line, expanded),
    )
