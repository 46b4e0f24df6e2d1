"""Decision rules (analyses/services/verdicts.py) at their boundaries, in exact decimal arithmetic.

ILAC G8:09/2019 (shared/references.md, found): simple acceptance; a guard band w = U keeps the
risk of false acceptance below 2.5 %; conditional statements are allowed. "A result passes only
if it is inside the limit by at least U" is the issue's wording of w = U: a result exactly at
limit - U passes. U = 0.05 and the AV limit 0.6 (Codex refined oils, found) are examples.
"""
from __future__ import annotations

from decimal import Context, Decimal, localcontext

import pytest

from analyses.models import Comparison, DecisionRule, Verdict
from analyses.services.verdicts import rule_verdict

PASS, OOS = Verdict.PASS, Verdict.OUT_OF_SPECIFICATION
CPASS, CFAIL = Verdict.CONDITIONAL_PASS, Verdict.CONDITIONAL_FAIL
U = Decimal("0.05")
STEP = Decimal("1e-40")  # far beyond any float's reach: the decision is exact


def above(number: str) -> Decimal:
    """``number`` + 1e-40, kept whole (the default 28 digits would round it back to ``number``)."""
    with localcontext(Context(prec=100)):
        return Decimal(number) + STEP


def below(number: str) -> Decimal:
    with localcontext(Context(prec=100)):
        return Decimal(number) - STEP


def _verdict(value, *, rule=DecisionRule.GUARD_BAND, w=U, minimum=None, maximum="0.6", comparison=Comparison.ABSOLUTE):
    return rule_verdict(
        Decimal(value) if isinstance(value, str) else value,
        minimum=None if minimum is None else Decimal(minimum),
        maximum=None if maximum is None else Decimal(maximum),
        comparison=comparison, rule=rule, guard_band=w,
    )


@pytest.mark.parametrize(
    "value, expected",
    [
        (Decimal("0.55"), PASS),  # at limit - U: inside by exactly U
        (below("0.55"), PASS),  # just inside the acceptance limit
        (above("0.55"), OOS),  # just outside it, although inside the specification limit
        (Decimal("0.6"), OOS),  # at the limit: simple acceptance would pass it
    ],
)
def test_guard_band_w_equals_u_at_the_upper_limit(value, expected):
    assert _verdict(value) == expected


@pytest.mark.parametrize(
    "value, expected",
    [(Decimal("0.15"), PASS), (above("0.15"), PASS), (below("0.15"), OOS)],
)
def test_guard_band_at_a_lower_limit(value, expected):
    assert _verdict(value, minimum="0.1", maximum=None) == expected


def test_guard_band_of_a_stated_multiple():
    w = Decimal("1.5") * U  # 0.075
    assert _verdict(Decimal("0.525"), w=w) == PASS
    assert _verdict(above("0.525"), w=w) == OOS
    assert _verdict(Decimal("0.55"), w=w) == OOS


def test_simple_acceptance_ignores_u():
    assert _verdict(Decimal("0.6"), rule=DecisionRule.SIMPLE) == PASS
    assert _verdict(above("0.6"), rule=DecisionRule.SIMPLE) == OOS


def test_no_u_falls_back_to_simple_acceptance():
    assert _verdict(Decimal("0.59"), w=None) == PASS


@pytest.mark.parametrize(
    "value, expected",
    [
        (Decimal("0.55"), PASS),
        (above("0.55"), CPASS),
        (Decimal("0.6"), CPASS),  # at the limit: inside it
        (above("0.6"), CFAIL),
        (Decimal("0.65"), CFAIL),  # outside by exactly U
        (above("0.65"), OOS),
    ],
)
def test_ilac_g8_non_binary_statements(value, expected):
    assert _verdict(value, rule=DecisionRule.NON_BINARY) == expected


def test_non_binary_takes_the_worse_of_two_limits():
    # 0.12 is inside [0.1, 0.6] by 0.02 < U at the minimum: conditional pass, whatever the maximum says
    assert _verdict(Decimal("0.12"), rule=DecisionRule.NON_BINARY, minimum="0.1") == CPASS


def test_rounding_comparison_comes_first():
    """ASTM E29 rounding: the value rounded to the limit's places (0.6 -> one place) is held
    against the acceptance limit 0.55; so 0.549 (rounds to 0.5) passes and 0.551 (0.6) does not,
    where the absolute method judges 0.549 and 0.551 as they stand."""
    assert _verdict(Decimal("0.549"), comparison=Comparison.ROUNDING) == PASS
    assert _verdict(Decimal("0.551"), comparison=Comparison.ROUNDING) == OOS
    assert _verdict(Decimal("0.549"), comparison=Comparison.ABSOLUTE) == PASS
    assert _verdict(Decimal("0.551"), comparison=Comparison.ABSOLUTE) == OOS
    # 0.56 rounds to 0.6, above the acceptance limit 0.55
    assert _verdict(Decimal("0.56"), comparison=Comparison.ROUNDING) == OOS
    # non-binary with rounding: 0.64 rounds to 0.6 (at the limit): conditional pass; absolute: conditional fail
    assert _verdict(Decimal("0.64"), rule=DecisionRule.NON_BINARY, comparison=Comparison.ROUNDING) == CPASS
    assert _verdict(Decimal("0.64"), rule=DecisionRule.NON_BINARY, comparison=Comparison.ABSOLUTE) == CFAIL
