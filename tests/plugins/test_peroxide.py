"""Peroxide value (plugins/peroxide.py) against AOCS Cd 8b-90 / ISO 3960.

Formula (shared/references.md, found): PV = (S - B) x c x 1000 / m, in meq O2/kg; 5.00 +- 0.05 g
(AOCS Cd 8b-90). Thiosulfate 0.002 mol/L below PV 12, 0.01 mol/L above, and a blank of at most
0.05 mL of 0.01 mol/L: found in Commission Regulation (EEC) No 2568/91 Annex III, a text of the ISO 3960
family, not in Cd 8b-90. ISO 3960 scope 0-30 (found). Thiosulfate standardisation, Cd 8b-90 (found):
c = 20.394 x g K2Cr2O7 / mL.

Transcription guards: the hand-worked checks below restate the formula the plugin implements, so they
catch a slip in copying it, not a wrong formula. The independent checks (pure compounds by molmass)
are in tests/plugins/test_independent_checks.py; DEVELOPERS.md lists both kinds.
"""
from __future__ import annotations

from decimal import Decimal

import pytest
from molmass import Formula

from plugins.contract import MethodInputError
from plugins.peroxide import DICHROMATE_FACTOR, PeroxideValue, thiosulfate_concentration

PV = PeroxideValue()
TYPICAL = {"sample_mass": 5.0, "sample_volume": 3.1, "blank_volume": 0.05, "titrant_concentration": 0.002}


def test_hand_worked_example():
    # Cd 8b-90 formula (found): (3.1 - 0.05) mL x 0.002 mol/L x 1000 / 5.0 g = 1.22 meq O2/kg
    result = PV.calculate(TYPICAL)
    assert result.value == pytest.approx(1.22, abs=1e-12)
    assert result.reported == Decimal("1.2")
    assert result.unit == "meq O2/kg"


def test_refined_oil_limit_with_the_weaker_titrant():
    # Codex CXS 210 appendix (found): refined oils PV <= 10; below PV 12 Reg. 2568/91 Annex III uses 0.002 mol/L,
    # and PV 10 on 5 g takes 10 x 5 / (0.002 x 1000) = 25 mL, within one 25 mL burette.
    at_limit = {"sample_mass": 5.0, "sample_volume": 25.0, "titrant_concentration": 0.002, "blank_not_run": True}
    assert PV.calculate(at_limit).value == pytest.approx(10.0, abs=1e-12)


@pytest.mark.parametrize("number", [1, 2])
def test_worked_examples_follow_cd_8b_90_and_annex_iii(number):
    example = PV.examples[number - 1]
    inputs = example.inputs
    # Cd 8b-90 (found): 5.00 +- 0.05 g. Reg. 2568/91 Annex III (found): blank at most 0.05 mL of 0.01 mol/L
    assert abs(inputs["sample_mass"] - 5.00) <= 0.05
    assert inputs["blank_volume"] * inputs["titrant_concentration"] <= 0.05 * 0.01 + 1e-12
    # Reg. 2568/91 Annex III (found): 0.002 mol/L thiosulfate below PV 12, 0.01 mol/L above
    assert inputs["titrant_concentration"] == (0.002 if example.expected < 12 else 0.01)
    # ISO 3960 scope (found): 0-30 meq O2/kg
    assert 0 <= example.expected <= 30
    # and the expectation is the Cd 8b-90 formula worked by hand
    by_hand = (inputs["sample_volume"] - inputs.get("blank_volume", 0.0)) * inputs["titrant_concentration"] * 1000 / inputs["sample_mass"]
    assert example.expected == pytest.approx(by_hand, abs=1e-12)


def test_dichromate_factor_is_published_value():
    # Cd 8b-90 (found): c = 20.394 x g K2Cr2O7 / mL
    assert DICHROMATE_FACTOR == 20.394


def test_dichromate_factor_follows_from_its_molar_mass():
    # Cr2O7(2-) takes 6 electrons, so 6 mol thiosulfate per mol K2Cr2O7: 6 x 1000 / M, M from molmass (computed)
    assert 6 * 1000 / Formula("K2Cr2O7").mass == pytest.approx(20.394, abs=0.01)


def test_thiosulfate_concentration_from_a_standardisation():
    # Transcription guard: 20.394 is on both sides; test_dichromate_factor_follows_from_its_molar_mass checks it.
    # Cd 8b-90 formula (found) on invented weighings: 0.1226 g K2Cr2O7 takes 25.00 mL -> 20.394 x 0.1226 / 25.00 = 0.10001 mol/L
    assert thiosulfate_concentration(0.1226, 25.0) == pytest.approx(20.394 * 0.1226 / 25.0, rel=1e-12)
    assert thiosulfate_concentration("122.6 mg", "0.025 L") == pytest.approx(20.394 * 0.1226 / 25.0, rel=1e-12)


@pytest.mark.parametrize(
    ("mass", "volume", "field"),
    [
        (0.0, 25.0, "dichromate_mass"),
        (-0.12, 25.0, "dichromate_mass"),
        ("0.12 mL", 25.0, "dichromate_mass"),
        (0.1226, 0.0, "thiosulfate_volume"),
        (0.1226, "25 g", "thiosulfate_volume"),
        (0.1226, None, "thiosulfate_volume"),
    ],
)
def test_thiosulfate_concentration_refuses_bad_input_by_name(mass, volume, field):
    with pytest.raises(MethodInputError) as refused:
        thiosulfate_concentration(mass, volume)
    assert refused.value.field == field


@pytest.mark.parametrize(
    ("change", "field"),
    [
        ({"sample_mass": 0.0}, "sample_mass"),
        ({"sample_mass": -5.0}, "sample_mass"),
        ({"sample_mass": "2 mL"}, "sample_mass"),
        ({"titrant_concentration": 0.0}, "titrant_concentration"),
        ({"titrant_concentration": -0.002}, "titrant_concentration"),
        ({"sample_volume": -3.1}, "sample_volume"),
        ({"blank_volume": -0.05}, "blank_volume"),
        ({"sample_volume": 0.01}, "sample_volume"),  # below the blank: a negative peroxide value
        ({"sample_volume": "inf"}, "sample_volume"),
        ({"thiosulfate_volume": 3.1}, "thiosulfate_volume"),
    ],
)
def test_bad_input_is_refused_by_name(change, field):
    with pytest.raises(MethodInputError) as refused:
        PV.calculate(dict(TYPICAL, **change))
    assert refused.value.field == field
    assert refused.value.reason
