"""p-Anisidine value (AnV), AOCS Cd 18-90: secondary oxidation beside the peroxide value (TOTOX, from
both, is a method of its own: plugins/totox.py).

By definition (found) AnV is 100 x the absorbance at 350 nm, in a 1 cm cell, of a solution of
1.00 g of oil in 100 mL, measured as the increase on reaction with p-anisidine. With m grams in
25 mL of iso-octane (formula from memory, not confirmed):

    AnV = 25 * (1.2 * As - Ab) / m

As is the absorbance of the reacted solution (5 mL + 1 mL reagent, hence the 1.2 for dilution),
Ab that of the unreacted solution. At m = 0.25 g in 25 mL (1.00 g in 100 mL) this is
100 * (1.2 * As - Ab), which is the definition.

ISO 6885 measures the same quantity, but its 2016 formula has a blank term that is not confirmed
here, so the plugin claims AOCS Cd 18-90 only.
"""
from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass
from decimal import Decimal
from typing import Any

from plugins.contract import MethodInputError, MethodPlugin, QuantityInput, Repeatability, WorkedExample
from plugins.titration import PortionRange, sample_mass
from plugins.units import MAX_TEXT_LENGTH

SOLUTION_VOLUME_ML = Decimal("25")  # Cd 18-90: test portion made up to 25 mL with iso-octane (from memory)
REAGENT_DILUTION = Decimal("1.2")  # 5 mL of solution + 1 mL of reagent: 6 / 5 (from memory, with the formula)

# Above about A = 2 less than 1 % of the light reaches the detector and a spectrophotometer is no
# longer linear; such a solution is diluted or a smaller portion weighed (common practice, no source).
MAXIMUM_ABSORBANCE = 2.0

_PLAIN_NUMBER = re.compile(r"\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?\s*(?:dimensionless\s*)?")


@dataclass(frozen=True)
class UnitlessInput(QuantityInput):
    """A number without a unit, bare or written "0.3 dimensionless".

    pint reads percent, ppm and radian as dimensionless too; they are refused, so that a
    reading in % transmittance cannot pass for an absorbance ("45 percent" would be 0.45).
    """

    def parse(self, raw: Any) -> float:
        # Over-long text is left to the shared parser, which refuses it without echoing it.
        if isinstance(raw, str) and len(raw) <= MAX_TEXT_LENGTH and not _PLAIN_NUMBER.fullmatch(raw):
            raise MethodInputError(self.name, f"must be a plain number without a unit, got {raw!r}")
        return super().parse(raw)


def absorbance(name: str, help: str) -> UnitlessInput:
    return UnitlessInput(name, "dimensionless", help, minimum=0.0, maximum=MAXIMUM_ABSORBANCE)


def corrected_absorbance(values: Mapping[str, Any]) -> Decimal:
    """1.2 * As - Ab: what the reaction with p-anisidine added; refused when negative."""
    difference = REAGENT_DILUTION * values["absorbance_reacted"] - values["absorbance_unreacted"]
    if difference < 0:
        raise MethodInputError(
            "absorbance_reacted",
            f"1.2 x {values['absorbance_reacted']:g} is below the unreacted absorbance "
            f"{values['absorbance_unreacted']:g}, which would give a negative p-anisidine value",
        )
    return difference


class AnisidineValue(MethodPlugin):
    code = "anv"
    title = "p-Anisidine value"
    version = "1.0"
    instruments = (("balance",), ("spectrophotometer",))
    standards = ("AOCS Cd 18-90",)
    inputs = (
        # only a plausible range: the portion masses are from memory, too weak to refuse on
        sample_mass(
            "Test portion, dissolved and made up to 25 mL with iso-octane",
            PortionRange("0.5", "4.0", "AOCS Cd 18-90: 0.5 to 4.0 g made up to 25 mL", evidence="from memory"),
            refuse_beyond=False,
        ),
        absorbance("absorbance_unreacted", "Ab: absorbance at 350 nm of the unreacted solution, 1 cm cell"),
        absorbance("absorbance_reacted", "As: absorbance at 350 nm after reaction with p-anisidine, 1 cm cell"),
    )
    # AnV has no unit; the words say so on certificates and in the API.
    result_unit = "(dimensionless)"
    decimals = 1
    repeatability = Repeatability(
        source="AOCS Cd 18-90 / ISO 6885 precision data; value from memory, not confirmed", relative=0.10
    )
    # Codex sets no AnV limit: the CXS 210 appendix quality limits (found) cover AV, PV and volatile matter only.
    spec_limits = ()
    # No scope: no range of AnV was found in AOCS Cd 18-90; the absorbances are bounded as inputs.
    # worked examples restate the formula (transcription guards); the independent checks are in
    # tests/plugins/test_independent_checks.py
    examples = (
        WorkedExample(
            {"sample_mass": 0.25, "absorbance_unreacted": 0.100, "absorbance_reacted": 0.300},
            expected=26.0,
            source=(
                "AnV definition (found): 100 x absorbance of 1.00 g in 100 mL at 350 nm; 0.25 g in 25 mL is "
                "1.00 g in 100 mL, so AnV = 100 x (1.2 x 0.300 - 0.100) = 100 x 0.26 = 26.0"
            ),
        ),
        WorkedExample(
            {"sample_mass": 2.0, "absorbance_unreacted": 0.080, "absorbance_reacted": 0.300},
            expected=3.5,
            source=(
                "AOCS Cd 18-90 formula (from memory) by hand: 25 x (1.2 x 0.300 - 0.080) / 2.0 g "
                "= 25 x 0.28 / 2.0 = 3.5"
            ),
        ),
    )
    cautions = (
        "p-Anisidine is toxic, harmful by skin contact and by inhalation; iso-octane is flammable; "
        "glacial acetic acid is corrosive. Work in a fume hood with gloves and eye protection. Follow "
        "local regulations, the safety data sheets and the laboratory's own validated procedure."
    )

    def check(self, values: Mapping[str, Any]) -> None:
        corrected_absorbance(values)

    def compute(self, values: Mapping[str, Any]) -> Decimal:
        return SOLUTION_VOLUME_ML * corrected_absorbance(values) / values["sample_mass"]
