"""Insoluble impurities, ISO 663 (plugins/insoluble_impurities.py)."""
from __future__ import annotations

from decimal import Decimal

import pytest

from plugins.contract import MethodInputError
from plugins.insoluble_impurities import InsolubleImpurities

PLUGIN = InsolubleImpurities()


def test_hand_worked_example_in_milligrams():
    # ISO 663 formula by hand: 7.5 mg on the filter from 20.0 g is 0.0375 %, reported 0.038 (half to even)
    result = PLUGIN.calculate({"sample_mass": "20.0", "residue_mass": "7.5 mg"})
    assert result.exact == Decimal("0.0375")
    assert str(result.reported) == "0.038"


def test_a_residue_above_the_portion_is_refused():
    with pytest.raises(MethodInputError) as refused:
        PLUGIN.calculate({"sample_mass": "2", "residue_mass": "2.5"})
    assert refused.value.field == "residue_mass"
