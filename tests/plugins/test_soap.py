"""Soap content, AOCS Cc 17-95 (plugins/soap.py)."""
from __future__ import annotations

import pytest

from plugins.contract import MethodInputError
from plugins.review_warnings import review_warnings
from plugins.soap import SoapContent

PLUGIN = SoapContent()


def test_hand_worked_example():
    # Cc 17-95 by hand: (0.45 - 0.05) mL x 0.01 mol/L x 304.4 mg/mmol x 1000 / 40 g = 30.44 -> 30 mg/kg
    result = PLUGIN.calculate({"sample_mass": "40", "sample_volume": "0.45", "blank_volume": "0.05", "titrant_concentration": "0.01"})
    assert float(result.value) == pytest.approx(30.44)
    assert str(result.reported) == "30"
    assert result.unit == "mg/kg as sodium oleate"


def test_the_prescribed_blank_is_required_or_recorded_as_not_run():
    base = {"sample_mass": "40", "sample_volume": "0.45", "titrant_concentration": "0.01"}
    with pytest.raises(MethodInputError) as refused:
        PLUGIN.calculate(base)
    assert refused.value.field == "blank_volume" and "Cc 17-95" in refused.value.reason
    result = PLUGIN.calculate({**base, "blank_not_run": True})
    assert any("no blank was run" in w for w in review_warnings(PLUGIN, result.inputs, result.exact))


def test_a_titre_below_the_blank_is_refused():
    with pytest.raises(MethodInputError) as refused:
        PLUGIN.calculate({"sample_mass": "40", "sample_volume": "0.02", "blank_volume": "0.05", "titrant_concentration": "0.01"})
    assert refused.value.field == "sample_volume"
