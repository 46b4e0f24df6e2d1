"""Moisture and volatile matter, ISO 662 / AOCS Ca 2c-25: the mass lost on heating.

% = mass loss x 100 / m, in % (m/m): m is the test portion (g), the mass loss (g) the test
portion's loss in the oven, both weighed by difference on a dish dried beforehand.

Where each fact was found (shared/references.md, and copies of ISO 662:2016):
- the formula and 103 +- 2 degC (ISO 662), 130 +- 1 degC (AOCS Ca 2c-25): found;
- ISO 662:2016 method B (oven): about 5 g or 10 g by the expected content, 1 h at 103 degC, then
  30 min periods until two weighings differ by no more than 2 mg or 4 mg (by the portion's mass);
  a mass that grows on reheating means the fat autoxidised: found;
- neither for lauric nor for drying oils (the note in references.md): found.
The two standards dry at different temperatures and give different results on the same oil, so the
oven temperature is an input: recorded with every result, and refused outside both methods' windows.
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

from plugins import codex
from plugins.contract import MethodInputError, MethodPlugin, MethodScope, QuantityInput, WorkedExample
from plugins.titration import PortionRange, refuse_more_than_portion, sample_mass

# (low, high, standard): the oven temperatures each standard prescribes, in degC (found)
OVEN_WINDOWS = (
    (Decimal("101"), Decimal("105"), "ISO 662 (103 ± 2 °C)"),
    (Decimal("129"), Decimal("131"), "AOCS Ca 2c-25 (130 ± 1 °C)"),
)


def mass_loss(help: str) -> QuantityInput:
    return QuantityInput("mass_loss", "g", help, minimum=0.0)


class MoistureVolatileMatter(MethodPlugin):
    code = "mv"
    title = "Moisture and volatile matter"
    version = "1.0"
    instruments = (("balance",), ("oven",))
    standards = ("ISO 662", "AOCS Ca 2c-25")
    inputs = (
        sample_mass(
            "Test portion, about 5 g or 10 g by the expected content (ISO 662:2016, oven method)",
            PortionRange("5", "10", "ISO 662:2016 oven method: about 5 g or 10 g by the expected content"),
        ),
        mass_loss("Mass lost in the oven: the test portion's mass before heating minus its constant mass after"),
        QuantityInput(
            "oven_temperature", "degC",
            "Oven temperature during the determination: 103 ± 2 °C (ISO 662) or 130 ± 1 °C (AOCS Ca 2c-25)",
        ),
    )
    result_unit = "%"
    decimals = 2
    # No precision figure of ISO 662 or Ca 2c-25 was found or is recalled: no repeatability limit.
    repeatability = None
    spec_limits = codex.limits_for("mv")
    scope = (
        MethodScope(
            source="ISO 662 (a mass fraction lost on heating)", minimum=0.0, maximum=100.0,
            note="a loss above the test portion's own mass points to a weighing error",
        ),
    )
    # worked examples restate the formula (transcription guards); the independent check (a portion
    # with a known amount of water, molmass) is in tests/plugins/test_independent_checks.py
    examples = (
        WorkedExample(
            {"sample_mass": 10.0, "mass_loss": 0.012, "oven_temperature": 103},
            expected=0.12,
            source="ISO 662 formula applied by hand: 0.012 g lost from 10.0 g at 103 °C is 0.12 %",
        ),
        WorkedExample(
            {"sample_mass": 5.0, "mass_loss": 0.0125, "oven_temperature": 130},
            expected=0.25,
            source="AOCS Ca 2c-25 formula applied by hand: 0.0125 g lost from 5.0 g at 130 °C is 0.25 %",
        ),
    )
    cautions = (
        "The oven and the dishes are hot (103 °C or 130 °C): handle them with tongs and heat-resistant "
        "gloves, and let them cool in the desiccator. Not for lauric or drying oils. Follow local "
        "regulations, the safety data sheets and the laboratory's own validated procedure."
    )

    def check(self, values: Mapping[str, Any]) -> None:
        refuse_more_than_portion(values, "mass_loss")
        temperature = values["oven_temperature"]
        if not any(low <= temperature <= high for low, high, _ in OVEN_WINDOWS):
            windows = " or ".join(name for _, _, name in OVEN_WINDOWS)
            raise MethodInputError(
                "oven_temperature", f"{temperature} °C is outside the oven temperature of {windows}"
            )

    def compute(self, values: Mapping[str, Any]) -> Decimal:
        return values["mass_loss"] * 100 / values["sample_mass"]
