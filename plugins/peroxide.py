"""Peroxide value, AOCS Cd 8b-90 (iso-octane) / ISO 3960.

PV = (S - B) * c * 1000 / m, in meq O2/kg: peroxides free iodine from potassium iodide,
which is titrated with sodium thiosulfate. S and B are the sample and blank titres (mL),
c the thiosulfate concentration (mol/L), m the test portion (g, about 5 g).

Where each fact was found:
- formula, 5.00 +- 0.05 g, the dichromate standardisation (20.394) and "erratic results at
  PV >= 70": copies of AOCS Cd 8b-90 (found);
- range 0-30 meq/kg: the scope of ISO 3960:2007 and 2017 (found, in the standard's abstract);
- thiosulfate 0.002 mol/L below an expected PV of 12 and 0.01 mol/L above, a blank run with
  every series, and a blank of more than 0.05 mL of 0.01 mol/L meaning impure reagents: Annex III
  of Commission Regulation (EEC) No 2568/91, a text of the ISO 3960 family (found). They are not
  credited to Cd 8b-90, which (from memory, not confirmed) uses 0.1 and 0.01 N thiosulfate.
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

from plugins import codex
from plugins.blanks import check_blank_declared, prescribed_blank_inputs
from plugins.contract import TITRATION_INSTRUMENTS, BlankRule, MethodPlugin, MethodScope, QuantityInput, Repeatability, WorkedExample
from plugins.titration import PortionRange, direct_titration_volume, sample_mass, sample_volume, titrant_concentration

DICHROMATE_FACTOR = 20.394  # AOCS Cd 8b-90 (found): c = 20.394 x g K2Cr2O7 / mL of thiosulfate
EU_2568_91_ANNEX_III = "Commission Regulation (EEC) No 2568/91, Annex III (peroxide value)"

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
        sample_mass(
            "Test portion, 5.00 ± 0.05 g (AOCS Cd 8b-90)",
            PortionRange("5.00", "5.00", "AOCS Cd 8b-90 test portion: 5.00 g", tolerance="0.05"),
        ),
        sample_volume("Sodium thiosulfate titre for the sample"),
        *prescribed_blank_inputs(
            f"Sodium thiosulfate titre for the blank; required unless blank_not_run ({EU_2568_91_ANNEX_III}: "
            "a blank with every series; more than 0.05 mL of 0.01 mol/L means impure reagents)"
        ),
        titrant_concentration(
            f"Sodium thiosulfate, 0.002 mol/L for an expected PV below 12, 0.01 mol/L above ({EU_2568_91_ANNEX_III})"
        ),
    )
    result_unit = "meq O2/kg"
    decimals = 1
    repeatability = Repeatability(
        source="ISO 3960 precision data; value from memory, not confirmed", relative=0.10
    )
    spec_limits = codex.limits_for("pv")
    scope = (
        MethodScope(source="ISO 3960 (scope: 0 to 30 meq/kg)", minimum=0.0, maximum=30.0),
        MethodScope(
            source="AOCS Cd 8b-90", maximum=70.0, maximum_inclusive=False,
            note="the method gives erratic results at a peroxide value of 70 or more",
        ),
    )
    blank = BlankRule(
        prescribed=True,
        source=EU_2568_91_ANNEX_III,
        limit_mmol=0.0005,  # 0.05 mL x 0.01 mol/L
        limit_source=f"{EU_2568_91_ANNEX_III} (more means impure reagents, to be replaced)",
    )
    # worked examples restate the formula (transcription guards); the independent checks are in
    # tests/plugins/test_independent_checks.py
    examples = (
        WorkedExample(
            {"sample_mass": 5.0, "sample_volume": 12.5, "blank_volume": 0.05, "titrant_concentration": 0.002},
            expected=12.45 * 0.002 * 1000 / 5.0,
            source=(
                "AOCS Cd 8b-90 formula applied by hand, 0.002 mol/L below PV 12 as in "
                f"{EU_2568_91_ANNEX_III}: 12.45 mL x 0.002 mol/L x 1000 / 5.0 g = 4.98"
            ),
        ),
        WorkedExample(
            {"sample_mass": 5.0, "sample_volume": 10.0, "blank_volume": 0.0, "titrant_concentration": 0.01},
            expected=20.0,
            source=(
                f"AOCS Cd 8b-90 formula, 0.01 mol/L above PV 12 as in {EU_2568_91_ANNEX_III}: "
                "10.0 mL of 0.01 mol/L on 5 g is 0.1 meq in 5 g, 20.0 meq O2/kg"
            ),
        ),
    )
    cautions = (
        "Iso-octane and chloroform (older procedures) are flammable or toxic; acetic acid is "
        "corrosive. Work in a fume hood. Follow local regulations, the safety data sheets and the "
        "laboratory's own validated procedure."
    )

    def check(self, values: Mapping[str, Any]) -> None:
        check_blank_declared(self.blank, values)
        direct_titration_volume(values)

    def compute(self, values: Mapping[str, Any]) -> Decimal:
        volume = direct_titration_volume(values)
        return volume * values["titrant_concentration"] * 1000 / values["sample_mass"]
