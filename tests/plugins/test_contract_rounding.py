"""Rounding and duplicate checks of the plugin contract (plugins/contract.py).

ASTM E29 (shared/references.md): results are rounded half to even, 21.45 -> 21.4 (found);
that half-to-even is E29's own rule, rather than common practice, is from memory.
"""
from __future__ import annotations

from decimal import Decimal

import pytest

from plugins.acid import AcidValue
from plugins.contract import MethodPlugin, QuantityInput, WorkedExample, round_half_even
from plugins.iodine import IodineValueWijs
from plugins.peroxide import PeroxideValue
from plugins.saponification import SaponificationValue


@pytest.mark.parametrize(
    ("value", "decimals", "expected"),
    [
        (21.45, 1, "21.4"),  # ASTM E29 example (found): half to the even digit 4
        (21.35, 1, "21.4"),  # ASTM E29 half-to-even: 3 is odd, so up to 4
        (-21.45, 1, "-21.4"),  # half to even is symmetric about zero
        (2.675, 2, "2.68"),  # rounded as written: the binary double of 2.675 lies just below it
        (0.125, 2, "0.12"),  # half to even
        (0.135, 2, "0.14"),  # half to even
        (189.3375, 1, "189.3"),  # not a half: ordinary rounding
        (0.350625, 2, "0.35"),
        (4.5, 0, "4"),
        (5.5, 0, "6"),
        (0.0, 2, "0.00"),  # keeps the reporting precision
    ],
)
def test_round_half_even_follows_astm_e29(value, decimals, expected):
    assert round_half_even(value, decimals) == Decimal(expected)
    assert str(round_half_even(value, decimals)) == expected


@pytest.mark.parametrize("value", [1e27, 1e30, 1.7976931348623157e308, -1e200])
def test_round_half_even_takes_any_finite_float(value):
    # The default decimal context (28 digits) could not quantize these; a huge input must not crash.
    # A float is taken to 15 significant digits before rounding (float noise must not decide ties).
    assert round_half_even(value, 1) == Decimal(f"{value:.15g}")


@pytest.mark.parametrize(
    "plugin, inputs, expected",
    [
        # ISO 660: AV = 2.51 mL x 0.1 mol/L x 56.1 / 5.02 g = 2.805 exactly on paper; half to even -> 2.80
        (AcidValue(), {"sample_mass": "5.02", "sample_volume": "2.51", "titrant_concentration": "0.1"}, "2.80"),
        (AcidValue(), {"sample_mass": "5020 mg", "sample_volume": "2.51", "titrant_concentration": "0.1"}, "2.80"),
        # AOCS Cd 8b-90: PV = (0.5 - 0.05) mL x 0.01 mol/L x 1000 / 2 g = 2.25 exactly; half to even -> 2.2
        (PeroxideValue(), {"sample_mass": "2", "sample_volume": "0.5", "blank_volume": "0.05", "titrant_concentration": "0.01"}, "2.2"),
    ],
)
def test_a_tie_on_paper_rounds_to_even_whatever_the_float_noise_or_unit(plugin, inputs, expected):
    # ASTM E29 (references.md): round half to even; the float result here is 2.8050000000000006 or 2.2500000000000004
    assert str(plugin.calculate(inputs).reported) == expected


def test_result_keeps_the_unrounded_value_beside_the_reported_one():
    # AOCS Cd 3-25 formula by hand: (25.0 - 11.5) mL x 0.5 mol/L x 56.1 / 2.0 g = 189.3375
    result = SaponificationValue().calculate(
        {"sample_mass": 2.0, "sample_volume": 11.5, "blank_volume": 25.0, "titrant_concentration": 0.5}
    )
    assert result.value == pytest.approx(189.3375, abs=1e-9)
    assert result.reported == Decimal("189.3")
    assert result.as_dict()["value"] == pytest.approx(189.3375, abs=1e-9)
    assert result.as_dict()["reported"] == "189.3"


def test_duplicates_within_an_absolute_repeatability_agree():
    # SV repeatability 2.0 mg KOH/g (ISO 3657 precision, from memory per the plugin)
    check = SaponificationValue().duplicate_check([189.0, 190.5])
    assert check.difference == pytest.approx(1.5)
    assert check.limit == 2.0
    assert check.agrees is True
    assert "ISO 3657" in check.source


def test_duplicates_beyond_an_absolute_repeatability_disagree():
    check = SaponificationValue().duplicate_check([189.0, 191.5])
    assert check.difference == pytest.approx(2.5)
    assert check.agrees is False


def test_relative_repeatability_scales_with_the_mean():
    # IV repeatability 1 % of the mean (ISO 3961 precision, from memory per the plugin)
    agreeing = IodineValueWijs().duplicate_check([100.0, 100.8])
    assert agreeing.limit == pytest.approx(1.004)
    assert agreeing.agrees is True
    disagreeing = IodineValueWijs().duplicate_check([100.0, 101.5])
    assert disagreeing.agrees is False


def test_difference_exactly_at_the_limit_agrees():
    # "max - min <= r": a difference equal to the limit is acceptable
    assert SaponificationValue().duplicate_check([189.0, 191.0]).agrees is True


class NoRepeatability(MethodPlugin):
    """An invented method with no published repeatability."""

    code = "norep"
    title = "Ratio without repeatability"
    version = "0"
    standards = ("invented for the test",)
    inputs = (QuantityInput("sample_mass", "g", "mass", minimum=0.0, minimum_inclusive=False),)
    result_unit = "1/g"
    decimals = 2
    examples = (WorkedExample({"sample_mass": 2.0}, expected=0.5, source="1 / 2.0 g, arithmetic"),)

    def compute(self, values):
        return 1 / values["sample_mass"]


def test_no_repeatability_gives_no_verdict():
    check = NoRepeatability().duplicate_check([1.0, 5.0])
    assert check.difference == pytest.approx(4.0)
    assert check.limit is None
    assert check.agrees is None
    assert check.source is None


def test_a_single_value_gives_no_verdict():
    check = SaponificationValue().duplicate_check([189.0])
    assert check.limit is None
    assert check.agrees is None
