"""Peroxide value, AOCS Cd 8b-90 (iso-octane) / ISO 3960.

PV = (S - B) * c * 1000 / m, in meq O2/kg: peroxides free iodine from potassium iodide,
which is titrated with sodium thiosulfate. S and B are the sample and blank titres (mL),
c the thiosulfate concentration (mol/L), m the test portion (g, about 5 g).
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

from plugins import codex
from plugins.contract import TITRATION_INSTRUMENTS, MethodPlugin, QuantityInput, Repeatability, WorkedExample
from plugins.titration import blank_volume, direct_titration_volume, sample_mass, sample_volume, titrant_concentration

DICHROMATE_FACTOR = 20.394  # AOCS Cd 8b-90: c = 20.394 x g K2Cr2O7 / mL of thiosulfate

_DICHROMATE_MASS = QuantityInput(
    "dichromate_mass", "g", "Potassium dichromate weighed for the standardisation", minimum=0.0, minimum_inclusive=False
)
_STANDARDISATION_TITRE = QuantityInput(
    "thiosulfate_volume", "mL", "Sodium thiosulfate titre for that dichromate", minimum=0.0, minimum_inclusive=False
)


def thiosulfate_concentration(dichromate_mass: Any, thiosulfate_volume: Any) -> float:
    """Sodium thiosulfate concentration (mol/L) standardised on potassium dichromate, AOCS Cd 8b-90.

    Takes numbers (g, mL) or quantity strings; a bad value raises MethodInputError naming it.
    """
    mass = _DICHROMATE_MASS.parse(dichromate_mass)
    volume = _STANDARDISATION_TITRE.parse(thiosulfate_volume)
    return DICHROMATE_FACTOR * mass / volume


class PeroxideValue(MethodPlugin):
    code = "pv"
    title = "Peroxide value"
    version = "1.0"
    titrants = ("Na2S2O3",)
    instruments = TITRATION_INSTRUMENTS
    standards = ("AOCS Cd 8b-90", "ISO 3960")
    inputs = (
        sample_mass("Test portion, 5.00 ± 0.05 g"),
        sample_volume("Sodium thiosulfate titre for the sample"),
        blank_volume("Sodium thiosulfate titre for the blank (Cd 8b-90: at most 0.05 mL)", required=False),
        titrant_concentration("Sodium thiosulfate, 0.002 mol/L below PV 12, 0.01 mol/L above"),
    )
    result_unit = "meq O2/kg"
    decimals = 1
    repeatability = Repeatability(
        source="ISO 3960 precision data; value from memory, not confirmed", relative=0.10
    )
    spec_limits = codex.limits_for("pv")
    examples = (
        WorkedExample(
            {"sample_mass": 5.0, "sample_volume": 12.5, "blank_volume": 0.05, "titrant_concentration": 0.002},
            expected=12.45 * 0.002 * 1000 / 5.0,
            source="AOCS Cd 8b-90 formula applied by hand: 12.45 mL x 0.002 mol/L x 1000 / 5.0 g = 4.98",
        ),
        WorkedExample(
            {"sample_mass": 5.0, "sample_volume": 10.0, "blank_volume": 0.0, "titrant_concentration": 0.01},
            expected=20.0,
            source="AOCS Cd 8b-90, 0.01 mol/L above PV 12: 10.0 mL of 0.01 mol/L on 5 g is 0.1 meq in 5 g, 20.0 meq O2/kg",
        ),
    )
    cautions = (
        "Iso-octane and chloroform (older procedures) are flammable or toxic; acetic acid is "
        "corrosive. Work in a fume hood. Follow local regulations, the safety data sheets and the "
        "laboratory's own validated procedure."
    )

    def check(self, values: Mapping[str, Any]) -> None:
        direct_titration_volume(values)

    def compute(self, values: Mapping[str, Any]) -> Decimal:
        volume = direct_titration_volume(values)
        return volume * values["titrant_concentration"] * 1000 / values["sample_mass"]
