"""Oxidative stability index, AOCS Cd 12b-92 (plugins/oxidative_stability.py)."""
from __future__ import annotations

import pytest

from plugins.contract import MethodInputError
from plugins.oxidative_stability import TEMPERATURES_C, OxidativeStabilityIndex

PLUGIN = OxidativeStabilityIndex()


def test_the_temperatures_are_cd_12b_92s():
    # AOCS Cd 12b-92 (found): 100, 110, 120, 130 and 140 degC
    assert TEMPERATURES_C == ("100", "110", "120", "130", "140")
    assert PLUGIN.basis.input_name == "temperature"


@pytest.mark.parametrize("temperature", TEMPERATURES_C)
def test_the_unit_carries_the_temperature(temperature):
    result = PLUGIN.calculate({"induction_time": "8.25", "temperature": temperature})
    assert result.unit == f"h at {temperature} °C"
    assert str(result.reported) == "8.2"  # ASTM E29: a tie goes to the even digit


@pytest.mark.parametrize("temperature", [None, "105", "110 degC"])
def test_a_temperature_cd_12b_92_does_not_name_is_refused_by_name(temperature):
    inputs = {"induction_time": "8"} if temperature is None else {"induction_time": "8", "temperature": temperature}
    with pytest.raises(MethodInputError) as refused:
        PLUGIN.calculate(inputs)
    assert refused.value.field == "temperature"


def test_a_zero_induction_time_is_refused():
    with pytest.raises(MethodInputError) as refused:
        PLUGIN.calculate({"induction_time": "0", "temperature": "110"})
    assert refused.value.field == "induction_time"
