"""Iodine value, Wijs (plugins/iodine.py), against AOCS Cd 1d-92 / ISO 3961.

Formula (shared/references.md, found): IV = (B - S) x c x 12.69 / m, in g I2/100 g, with B and
S the blank and sample thiosulfate titres (mL), c in mol/L, m in g. Expected values are that
formula worked by hand or molar masses from molmass, never the plugin's own output.

Transcription guards: the hand-worked checks below restate the formula the plugin implements, so they
catch a slip in copying it, not a wrong formula. The independent checks (pure compounds by molmass)
are in tests/plugins/test_independent_checks.py; DEVELOPERS.md lists both kinds.
"""
from __future__ import annotations

from decimal import Decimal

import pytest
from molmass import Formula

from plugins.contract import MethodInputError
from plugins.iodine import IODINE_FACTOR, IodineValueWijs

IV = IodineValueWijs()
TYPICAL = {"sample_mass": 0.2, "sample_volume": 31.0, "blank_volume": 45.0, "titrant_concentration": 0.1}


def test_hand_worked_example():
    # AOCS Cd 1d-92 / ISO 3961 formula (found): 14.0 mL x 0.1 mol/L x 12.69 / 0.2 g = 88.83
    result = IV.calculate(TYPICAL)
    assert result.value == pytest.approx(88.83, abs=1e-9)
    assert result.reported == Decimal("88.8")
    assert result.unit == "g I2/100 g"


def test_weighed_example_with_unrounded_inputs():
    # AOCS Cd 1d-92 formula (found): (44.80 - 22.35) mL x 0.1012 mol/L x 12.69 / 0.1305 g
    inputs = {"sample_mass": 0.1305, "sample_volume": 22.35, "blank_volume": 44.80, "titrant_concentration": 0.1012}
    assert IV.calculate(inputs).value == pytest.approx((44.80 - 22.35) * 0.1012 * 12.69 / 0.1305, rel=1e-12)


def test_factor_12_69_is_half_the_molar_mass_of_iodine_per_100_g():
    # Cd 1d-92 (found) writes 12.69; two thiosulfate per I2, mL -> L, per 100 g:
    # 253.81 / 2 / 1000 x 100 with I2 from molmass (computed).
    assert IODINE_FACTOR == Decimal("12.69")
    assert Formula("I2").mass / 2 / 1000 * 100 == pytest.approx(12.69, abs=0.001)


def test_soybean_range_is_reachable():
    # Codex CXS 210 (found): soybean IV 124-139. 0.13 g (ISO 3961 mass for IV 100-150, from memory)
    # taking 13.5 mL of 0.1 mol/L gives 13.5 x 0.1 x 12.69 / 0.13 = 131.8 by the Cd 1d-92 formula.
    value = IV.calculate({"sample_mass": 0.13, "sample_volume": 31.5, "blank_volume": 45.0, "titrant_concentration": 0.1}).value
    assert value == pytest.approx(13.5 * 0.1 * 12.69 / 0.13, rel=1e-12)
    assert 124 <= value <= 139


def test_blank_is_required_in_a_back_titration():
    with pytest.raises(MethodInputError) as refused:
        IV.calculate({k: v for k, v in TYPICAL.items() if k != "blank_volume"})
    assert refused.value.field == "blank_volume"


def test_quantities_with_units_are_converted():
    # 200 mg = 0.2 g; 0.031 L = 31 mL; 100 mmol/L = 0.1 mol/L (SI prefixes)
    inputs = {"sample_mass": "200 mg", "sample_volume": "0.031 L", "blank_volume": "45 mL", "titrant_concentration": "100 mmol/L"}
    assert IV.calculate(inputs).value == pytest.approx(88.83, rel=1e-12)


@pytest.mark.parametrize(
    ("change", "field"),
    [
        ({"sample_mass": 0.0}, "sample_mass"),
        ({"sample_mass": -0.2}, "sample_mass"),
        ({"sample_mass": "2 mL"}, "sample_mass"),
        ({"titrant_concentration": 0.0}, "titrant_concentration"),
        ({"titrant_concentration": "-0.1 mol/L"}, "titrant_concentration"),
        ({"sample_volume": -0.01}, "sample_volume"),
        ({"blank_volume": -45.0}, "blank_volume"),
        ({"sample_volume": 45.1}, "sample_volume"),  # beyond the blank: the sample cannot give iodine back
        ({"sample_volume": "9**9**9 mL"}, "sample_volume"),  # arithmetic in text is not evaluated
        ({"blank_volume": "forty-five"}, "blank_volume"),
        ({"wijs_volume": 25.0}, "wijs_volume"),
    ],
)
def test_bad_input_is_refused_by_name(change, field):
    with pytest.raises(MethodInputError) as refused:
        IV.calculate(dict(TYPICAL, **change))
    assert refused.value.field == field
    assert refused.value.reason
