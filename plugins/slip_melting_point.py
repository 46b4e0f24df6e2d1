"""Slip melting point, AOCS Cc 3-25 (open capillary tubes): a direct reading in degC.

The temperature at which a column of fat in an open capillary tube, heated in a water bath,
softens and rises. One determination fills at least three tubes and reads each; its result is
their mean.

Where each fact was found (a copy of AOCS Cc 3-25, reapproved 2009): the definition, at least 3
capillary tubes of 1 mm inner diameter with about 10 mm of fat, 16 h at 4-10 degC before the
reading, a thermometer of -2 to 68 degC or -2 to 80 degC calibrated against a traceable one, and
the scope (palm oil and hard fats: palm kernel, coconut, stearin, hydrogenated fats, hard tallows;
less satisfactory for lard, soft tallows and animal fats; unsatisfactory for lard compounds,
mixtures of hard and soft fats and emulsions): found. That the tubes' mean is reported is from
memory, not confirmed.
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

from plugins import codex
from plugins.contract import MethodPlugin, MethodScope, QuantityInput, WorkedExample

CC_3_25 = "AOCS Cc 3-25"
THERMOMETER_RANGE_C = (-2.0, 80.0)  # Cc 3-25 thermometers: -2 to 68 or -2 to 80 degC (found)
REQUIRED_TUBES = 3  # "at least 3" (found)
MAX_TUBES = 5


def tube_reading(number: int) -> QuantityInput:
    low, high = THERMOMETER_RANGE_C
    return QuantityInput(
        f"tube_{number}", "degC",
        f"Slip point read on tube {number}: the temperature at which its fat column rises",
        minimum=low, maximum=high, required=number <= REQUIRED_TUBES,
    )


class SlipMeltingPoint(MethodPlugin):
    code = "smp"
    title = "Slip melting point"
    version = "1.0"
    # nothing is weighed: the tubes are filled by dipping; the reading is the thermometer's
    instruments = (("thermometer",),)
    standards = (CC_3_25,)
    inputs = tuple(tube_reading(number) for number in range(1, MAX_TUBES + 1))
    result_unit = "°C"
    decimals = 1
    # one determination is the mean of its tubes; Cc 3-25 asks for no duplicate determination
    replicates = 1
    # No precision figure of Cc 3-25 was found or is recalled: no repeatability limit.
    repeatability = None
    spec_limits = codex.limits_for("smp")
    scope = (
        MethodScope(
            source=f"{CC_3_25} (thermometer range -2 to 80 °C)", minimum=THERMOMETER_RANGE_C[0],
            maximum=THERMOMETER_RANGE_C[1],
        ),
    )
    # worked examples restate the mean (transcription guards); the independent checks (an exact mean by
    # the standard library, readings in degF converted by definition) are in
    # tests/plugins/test_independent_checks.py
    examples = (
        WorkedExample(
            {"tube_1": 35.8, "tube_2": 36.0, "tube_3": 36.2},
            expected=36.0,
            source="AOCS Cc 3-25: three tubes read 35.8, 36.0 and 36.2 °C; their mean is 36.0 °C",
        ),
        WorkedExample(
            {"tube_1": 33.0, "tube_2": 33.4, "tube_3": 33.2, "tube_4": 33.3},
            expected=33.225,
            source="AOCS Cc 3-25 with a fourth tube: (33.0 + 33.4 + 33.2 + 33.3) / 4 = 33.225 °C (reported 33.2)",
        ),
    )
    cautions = (
        "Capillary tubes break into sharp splinters: handle them with care and discard them in a glass "
        "bin. The water bath and hot plate are hot. Follow local regulations, the safety data sheets and "
        "the laboratory's own validated procedure."
    )

    def compute(self, values: Mapping[str, Any]) -> Decimal:
        readings = [values[spec.name] for spec in self.inputs if values.get(spec.name) is not None]
        return sum(readings, Decimal(0)) / len(readings)
