"""Free fatty acids, AOCS Ca 5a-40, expressed as oleic, palmitic or lauric acid.

%FFA = (S - B) * c * F / m, with F = 28.2 (oleic), 25.6 (palmitic) or 20.0 (lauric):
F is the acid's molar mass / 10. S and B are the NaOH titres (mL; blank may be 0),
c the NaOH concentration (mol/L), m the test portion (g).
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

from plugins import codex
from plugins.contract import TITRATION_INSTRUMENTS, BlankRule, ChoiceInput, MethodPlugin, MethodScope, Repeatability, ResultBasis, WorkedExample
from plugins.titration import PortionRange, blank_volume, direct_titration_volume, sample_mass, sample_volume, titrant_concentration

BASIS_FACTORS = {"oleic": Decimal("28.2"), "palmitic": Decimal("25.6"), "lauric": Decimal("20.0")}  # AOCS Ca 5a-40


class FreeFattyAcids(MethodPlugin):
    code = "ffa"
    title = "Free fatty acids"
    version = "1.0"
    titrants = ("NaOH",)  # AOCS Ca 5a-40 titrates with NaOH
    instruments = TITRATION_INSTRUMENTS
    standards = ("AOCS Ca 5a-40",)
    inputs = (
        sample_mass(
            "Test portion; Ca 5a-40 sets it by the expected FFA (e.g. 28.2 g for 0.2-1 %)",
            PortionRange(
                "3.525", "56.4",
                "AOCS Ca 5a-40 sample-mass table: 3.525 g (expected FFA 50-100 %) to 56.4 g (below 0.2 %)",
            ),
        ),
        sample_volume("NaOH titre for the sample"),
        blank_volume("NaOH titre for the neutralised alcohol blank", required=False),
        titrant_concentration("NaOH concentration (0.1 or 0.25 mol/L by the expected FFA)"),
        ChoiceInput(
            "fatty_acid_basis",
            tuple(BASIS_FACTORS),
            "Acid the result is expressed as: oleic for most oils, palmitic for palm, lauric for coconut and palm kernel",
            default="oleic",
        ),
    )
    result_unit = "% as oleic"
    decimals = 2
    repeatability = Repeatability(
        source="AOCS Ca 5a-40 precision data; value from memory, not confirmed", relative=0.05
    )
    spec_limits = codex.limits_for("ffa")
    scope = (
        MethodScope(
            source="AOCS Ca 5a-40 (its sample-mass table runs from 0 to 100 % FFA)", minimum=0.0, maximum=100.0,
            note="more than 100 % free fatty acids points to a wrong basis, mass or titrant strength",
        ),
    )
    blank = BlankRule(
        prescribed=False,
        source="AOCS Ca 5a-40 titrates in alcohol neutralised beforehand, so it prescribes no separate blank",
        evidence="from memory",
    )
    basis = ResultBasis(
        input_name="fatty_acid_basis",
        source=codex.FFA_BASIS_SOURCE,
        evidence=codex.FFA_BASIS_EVIDENCE,
        by_oil_type=codex.FFA_BASIS_BY_OIL_TYPE,
    )
    # worked examples restate the formula (transcription guards); the independent checks are in
    # tests/plugins/test_independent_checks.py
    examples = (
        WorkedExample(
            {"sample_mass": 28.2, "sample_volume": 5.0, "titrant_concentration": 0.1, "fatty_acid_basis": "oleic"},
            expected=0.5,
            source="AOCS Ca 5a-40: with 28.2 g and 0.1 N NaOH, each mL is 0.1 % as oleic; 5.0 mL = 0.50 %",
        ),
        WorkedExample(
            {"sample_mass": 7.05, "sample_volume": 10.0, "titrant_concentration": 0.25, "fatty_acid_basis": "palmitic"},
            expected=10.0 * 0.25 * 25.6 / 7.05,
            source="AOCS Ca 5a-40 formula applied by hand, palmitic factor 25.6",
        ),
    )
    cautions = (
        "Ethanol is flammable and NaOH solution is corrosive. Warm the alcohol on a spark-free "
        "heater. Follow local regulations, the safety data sheets and the laboratory's own "
        "validated procedure."
    )

    def check(self, values: Mapping[str, Any]) -> None:
        direct_titration_volume(values)

    def unit_for(self, values: Mapping[str, Any]) -> str:
        return f"% as {values['fatty_acid_basis']}"

    def compute(self, values: Mapping[str, Any]) -> Decimal:
        volume = direct_titration_volume(values)
        factor = BASIS_FACTORS[values["fatty_acid_basis"]]
        return volume * values["titrant_concentration"] * factor / values["sample_mass"]
