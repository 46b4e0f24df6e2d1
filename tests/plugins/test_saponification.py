"""Saponification value (plugins/saponification.py) against AOCS Cd 3-25 / ISO 3657.

Formula (shared/references.md, found): SV = (B - S) x c x 56.1 / m, in mg KOH/g, with B and
S the blank and sample HCl titres (mL), c the HCl concentration (mol/L), m the test portion (g).
Expected values below are that formula worked by hand, never the plugin's own output.

Transcription guards: the hand-worked checks below restate the formula the plugin implements, so they
catch a slip in copying it, not a wrong formula. The independent checks (pure compounds by molmass)
are in tests/plugins/test_independent_checks.py; DEVELOPERS.md lists both kinds.
"""
from __future__ import annotations

from decimal import Decimal

import pytest
from molmass import Formula

from plugins.contract import MethodInputError
from plugins.saponification import SaponificationValue

SV = SaponificationValue()
TYPICAL = {"sample_mass": 2.0, "sample_volume": 11.5, "blank_volume": 25.0, "titrant_concentration": 0.5}


def test_hand_worked_example():
    # AOCS Cd 3-25 / ISO 3657 formula (found): 13.5 mL x 0.5 mol/L x 56.1 / 2.0 g = 189.3375
    result = SV.calculate(TYPICAL)
    assert result.value == pytest.approx(189.3375, abs=1e-9)
    assert result.reported == Decimal("189.3")
    assert result.unit == "mg KOH/g"


def test_weighed_example_with_unrounded_inputs():
    # AOCS Cd 3-25 formula (found): (24.85 - 11.02) mL x 0.4985 mol/L x 56.1 / 2.0134 g
    inputs = {"sample_mass": 2.0134, "sample_volume": 11.02, "blank_volume": 24.85, "titrant_concentration": 0.4985}
    assert SV.calculate(inputs).value == pytest.approx((24.85 - 11.02) * 0.4985 * 56.1 / 2.0134, rel=1e-12)


def test_uses_56_1_for_koh_as_the_standards_write_it():
    # AOCS Cd 3-25 / ISO 3657 (found) use 56.1; molmass gives KOH = 56.106 g/mol, which 56.1 rounds.
    assert Formula("KOH").mass == pytest.approx(56.1, abs=0.01)
    one_mmol = {"sample_mass": 1.0, "sample_volume": 0.0, "blank_volume": 1.0, "titrant_concentration": 1.0}
    assert SV.calculate(one_mmol).value == pytest.approx(56.1, abs=1e-12)


def test_coconut_oil_range_is_reachable():
    # Codex CXS 210 (found): coconut SV 248-265. A 2.0 g portion that consumes the KOH of
    # 17.9 mL of 0.5 mol/L HCl gives 17.9 x 0.5 x 56.1 / 2.0 = 251.0 by the Cd 3-25 formula.
    value = SV.calculate({"sample_mass": 2.0, "sample_volume": 7.1, "blank_volume": 25.0, "titrant_concentration": 0.5}).value
    assert value == pytest.approx(17.9 * 0.5 * 56.1 / 2.0, rel=1e-12)
    assert 248 <= value <= 265


def test_reports_to_one_decimal():
    # Codex CXS 210 gives SV ranges to whole units; the plugin reports one decimal (common practice, no source).
    assert SV.decimals == 1
    assert SV.calculate(dict(TYPICAL, sample_volume=11.55)).reported == Decimal("188.6")  # 13.45 x 0.5 x 56.1 / 2.0 = 188.63625 by hand


def test_blank_is_required_in_a_back_titration():
    with pytest.raises(MethodInputError) as refused:
        SV.calculate({k: v for k, v in TYPICAL.items() if k != "blank_volume"})
    assert refused.value.field == "blank_volume"


def test_sample_titre_equal_to_blank_gives_zero():
    # B - S = 0: nothing saponified (Cd 3-25 formula)
    assert SV.calculate(dict(TYPICAL, sample_volume=25.0)).value == 0.0


@pytest.mark.parametrize(
    ("change", "field"),
    [
        ({"sample_mass": 0}, "sample_mass"),
        ({"sample_mass": -2.0}, "sample_mass"),
        ({"sample_mass": "2 mL"}, "sample_mass"),  # a volume where a mass belongs
        ({"titrant_concentration": 0}, "titrant_concentration"),
        ({"titrant_concentration": -0.5}, "titrant_concentration"),
        ({"titrant_concentration": "0.5 g"}, "titrant_concentration"),
        ({"sample_volume": -1.0}, "sample_volume"),
        ({"blank_volume": -25.0}, "blank_volume"),
        ({"sample_volume": 25.5}, "sample_volume"),  # beyond the blank: the sample cannot give KOH back
        ({"sample_volume": "1,5 mL"}, "sample_volume"),  # decimal comma: refused, not read as 15
        ({"sample_volume": float("nan")}, "sample_volume"),
        ({"sample_volume": True}, "sample_volume"),
        ({"koh_volume": 25.0}, "koh_volume"),  # not an input of this method
    ],
)
def test_bad_input_is_refused_by_name(change, field):
    with pytest.raises(MethodInputError) as refused:
        SV.calculate(dict(TYPICAL, **change))
    assert refused.value.field == field
    assert refused.value.reason


def test_sample_beyond_blank_says_why():
    with pytest.raises(MethodInputError) as refused:
        SV.calculate(dict(TYPICAL, sample_volume=25.5))
    assert "exceeds the blank" in refused.value.reason
