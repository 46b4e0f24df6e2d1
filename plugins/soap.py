"""Soap content, AOCS Cc 17-95 (titrimetric): the alkalinity of a refined oil, as sodium oleate.

soap = (S - B) * c * 304.4 * 1000 / m, in mg/kg as sodium oleate: the soap in the oil is titrated
with hydrochloric acid in aqueous acetone to the bromophenol blue end point (green-blue to yellow).
S and B are the HCl titres for the sample and the blank (mL), c the HCl concentration (mol/L),
m the test portion (g). One mmol of HCl neutralises one mmol of sodium oleate, C18H33NaO2,
304.4 mg (molar mass from IUPAC atomic weights; tests/plugins/test_independent_checks.py checks it
with molmass).

Where each fact was found (a copy of AOCS Cc 17-95, reapproved 2009): the alkalinity expressed
as sodium oleate, applicable only to refined vegetable oils, 40 g test portion, about 0.01 mol/L
HCl accurately standardised, a 5 mL microburette, acetone with 2 % water, bromophenol blue, and a
blank determination: found. The written formula (ppm = mL x N x 304 400 / g) is from memory; it
follows from the stoichiometry above.
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

from plugins import codex
from plugins.blanks import check_blank_declared, prescribed_blank_inputs
from plugins.contract import TITRATION_INSTRUMENTS, BlankRule, MethodPlugin, WorkedExample
from plugins.titration import PortionRange, direct_titration_volume, sample_mass, sample_volume, titrant_concentration

SODIUM_OLEATE_MOLAR_MASS = Decimal("304.4")  # g/mol, C18H33NaO2 (computed; molmass: 304.44)
AOCS_CC_17_95 = "AOCS Cc 17-95"


class SoapContent(MethodPlugin):
    code = "soap"
    title = "Soap content"
    version = "1.0"
    titrants = ("HCl",)  # Cc 17-95 titrates the soap with hydrochloric acid (found)
    instruments = TITRATION_INSTRUMENTS
    standards = (AOCS_CC_17_95,)
    inputs = (
        sample_mass("Test portion, 40 g (AOCS Cc 17-95)", PortionRange("40", "40", "AOCS Cc 17-95: a 40 g test portion")),
        sample_volume("HCl titre for the sample, from a 5 mL microburette"),
        *prescribed_blank_inputs(
            f"HCl titre for the blank (the neutralised aqueous acetone with 1 mL of water, no oil); "
            f"required unless blank_not_run ({AOCS_CC_17_95} prescribes a blank)"
        ),
        titrant_concentration("HCl concentration, about 0.01 mol/L, accurately standardised (AOCS Cc 17-95)"),
    )
    result_unit = "mg/kg as sodium oleate"
    decimals = 0
    # No precision figure of Cc 17-95 was found or is recalled: no repeatability limit.
    repeatability = None
    spec_limits = codex.limits_for("soap")
    # No numeric scope: Cc 17-95 states where it applies (refined vegetable oils only, found), not a range.
    blank = BlankRule(prescribed=True, source=AOCS_CC_17_95)
    # worked examples restate the formula (transcription guards); the independent check (an oil with a
    # known mass of sodium oleate, molmass) is in tests/plugins/test_independent_checks.py
    examples = (
        WorkedExample(
            {"sample_mass": 40.0, "sample_volume": 0.60, "blank_volume": 0.05, "titrant_concentration": 0.01},
            expected=0.55 * 0.01 * 304.4 * 1000 / 40.0,
            tolerance=1e-9,
            source=(
                "AOCS Cc 17-95 by hand: (0.60 - 0.05) mL x 0.01 mol/L = 0.0055 mmol of sodium oleate, "
                "x 304.4 mg/mmol = 1.6742 mg in 40.0 g, 41.855 mg/kg"
            ),
        ),
        WorkedExample(
            {"sample_mass": 40.0, "sample_volume": 0.707, "blank_volume": 0.05, "titrant_concentration": 0.01},
            expected=50.0,
            tolerance=0.01,
            source="AOCS Cc 17-95 by hand: 0.657 mL of 0.01 mol/L HCl on 40 g is 50.0 mg/kg, the Codex limit (memory)",
        ),
    )
    cautions = (
        "Acetone is highly flammable: warm the tubes on a steam or water bath, never on a flame or hot "
        "plate, in a fume hood. Hydrochloric acid and sodium hydroxide are corrosive. Follow local "
        "regulations, the safety data sheets and the laboratory's own validated procedure."
    )

    def check(self, values: Mapping[str, Any]) -> None:
        check_blank_declared(self.blank, values)
        direct_titration_volume(values)

    def compute(self, values: Mapping[str, Any]) -> Decimal:
        volume = direct_titration_volume(values)
        return volume * values["titrant_concentration"] * SODIUM_OLEATE_MOLAR_MASS * 1000 / values["sample_mass"]
