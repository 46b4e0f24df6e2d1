"""Slip melting point, AOCS Cc 3-25 (plugins/slip_melting_point.py)."""
from __future__ import annotations

from decimal import Decimal

import pytest

from plugins.contract import MethodInputError
from plugins.slip_melting_point import SlipMeltingPoint

PLUGIN = SlipMeltingPoint()


def test_at_least_three_tubes_are_required():
    # Cc 3-25: "at least 3" capillary tubes (found)
    with pytest.raises(MethodInputError) as refused:
        PLUGIN.calculate({"tube_1": "36.0", "tube_2": "36.2"})
    assert refused.value.field == "tube_3"


def test_five_tubes_mean_in_exact_arithmetic():
    result = PLUGIN.calculate({f"tube_{n}": v for n, v in enumerate(["36.1", "36.3", "36.2", "36.4", "36.0"], start=1)})
    assert result.exact == Decimal("36.2")
    assert PLUGIN.replicates == 1


@pytest.mark.parametrize("reading", ["-2.5", "80.5", "400 K"])
def test_a_reading_outside_the_thermometer_range_is_refused(reading):
    # Cc 3-25 thermometers read -2 to 68 or -2 to 80 degC (found)
    with pytest.raises(MethodInputError) as refused:
        PLUGIN.calculate({"tube_1": reading, "tube_2": "36.0", "tube_3": "36.0"})
    assert refused.value.field == "tube_1"


def test_kelvin_readings_convert_exactly():
    result = PLUGIN.calculate({"tube_1": "309.15 K", "tube_2": "309.25 K", "tube_3": "309.35 K"})
    assert result.exact == Decimal("36.1")
