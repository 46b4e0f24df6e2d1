"""Unsaponifiable matter, ISO 3596 / AOCS Ca 6a-40 (plugins/unsaponifiable.py)."""
from __future__ import annotations

from decimal import Decimal

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from plugins.contract import MethodInputError
from plugins.unsaponifiable import UnsaponifiableMatter

PLUGIN = UnsaponifiableMatter()


def test_hand_worked_fatty_acid_correction():
    # by hand: 1.00 mL x 0.02 mol/L x 0.282 g/mmol = 0.00564 g; (0.0700 - 0.0020 - 0.00564) x 100 / 5.000 = 1.2472 %
    result = PLUGIN.calculate({
        "sample_mass": "5.000", "residue_mass": "0.0700", "blank_residue_mass": "0.0020",
        "sample_volume": "1.00", "titrant_concentration": "0.02",
    })
    assert result.exact == Decimal("1.2472")
    assert str(result.reported) == "1.25"


def test_a_correction_larger_than_the_residue_is_refused():
    with pytest.raises(MethodInputError) as refused:
        PLUGIN.calculate({"sample_mass": "5", "residue_mass": "0.002", "sample_volume": "1.0", "titrant_concentration": "0.02"})
    assert refused.value.field == "residue_mass"


@settings(deadline=None)
@given(scale=st.decimals(min_value="0.5", max_value="4", places=2))
def test_scaling_every_mass_and_the_titre_together_keeps_the_result(scale):
    # a mass fraction: twice the oil gives twice the residue and twice the acids, and the same %
    base = {"sample_mass": Decimal("5.0"), "residue_mass": Decimal("0.06"), "blank_residue_mass": Decimal("0.001"),
            "sample_volume": Decimal("0.5"), "titrant_concentration": Decimal("0.02")}
    scaled = {**base, **{k: base[k] * scale for k in ("sample_mass", "residue_mass", "blank_residue_mass", "sample_volume")}}
    assert PLUGIN.calculate(scaled).exact == PLUGIN.calculate(base).exact
