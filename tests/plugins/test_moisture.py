"""Moisture and volatile matter, ISO 662 / AOCS Ca 2c-25 (plugins/moisture.py)."""
from __future__ import annotations

from decimal import Decimal

import pytest

from plugins.contract import MethodInputError
from plugins.moisture import MoistureVolatileMatter

PLUGIN = MoistureVolatileMatter()


def test_hand_worked_result_records_the_oven_temperature():
    # ISO 662 formula by hand: 0.0100 g lost from 10.00 g is 0.100 % (transcription guard)
    result = PLUGIN.calculate({"sample_mass": "10.00", "mass_loss": "0.0100", "oven_temperature": "103.5"})
    assert result.exact == Decimal("0.1")
    assert result.inputs["oven_temperature"] == Decimal("103.5")
    assert result.as_dict()["inputs"]["oven_temperature"] == "103.5"


@pytest.mark.parametrize("temperature", ["101", "105", "129", "131", "376.15 K"])  # 376.15 K = 103 degC
def test_both_standards_oven_windows_are_accepted(temperature):
    PLUGIN.calculate({"sample_mass": "5", "mass_loss": "0.01", "oven_temperature": temperature})


@pytest.mark.parametrize("temperature", ["100.9", "110", "128.9", "131.1", "230 degF"])  # 230 degF = 110 degC
def test_a_temperature_of_neither_standard_is_refused_by_name(temperature):
    with pytest.raises(MethodInputError) as refused:
        PLUGIN.calculate({"sample_mass": "5", "mass_loss": "0.01", "oven_temperature": temperature})
    assert refused.value.field == "oven_temperature"
    assert "ISO 662" in refused.value.reason and "Ca 2c-25" in refused.value.reason


def test_fahrenheit_at_the_edge_of_iso_662s_window_is_accepted():
    # 221 degF is exactly 105 degC by definition (NIST SP 811), the top of 103 +- 2 degC
    PLUGIN.calculate({"sample_mass": "5", "mass_loss": "0.01", "oven_temperature": "221 degF"})


def test_a_loss_above_the_portion_is_refused():
    with pytest.raises(MethodInputError) as refused:
        PLUGIN.calculate({"sample_mass": "5", "mass_loss": "5.1", "oven_temperature": "103"})
    assert refused.value.field == "mass_loss"


def test_codex_refined_limit_at_the_limit_is_exact():
    # 0.0100 g from 5.000 g is exactly 0.2 %, the CXS 210 volatile-matter limit (found)
    result = PLUGIN.calculate({"sample_mass": "5.000", "mass_loss": "0.0100", "oven_temperature": "103"})
    assert result.exact == Decimal("0.2") == Decimal(str(PLUGIN.limits_for("refined").maximum))
