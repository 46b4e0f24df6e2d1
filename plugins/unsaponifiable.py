"""Unsaponifiable matter, ISO 3596 / AOCS Ca 6a-40 (gravimetric, with the fatty-acid correction).

% = (R - Rb - FA) x 100 / m, in % (m/m), with FA = V x c x 0.282:
the test portion is saponified with ethanolic KOH, the unsaponifiable matter extracted with a
solvent (diethyl ether in ISO 3596, light petroleum in Ca 6a-40), washed, dried and weighed (R, g).
The residue is then dissolved in neutralised ethanol and titrated with NaOH: the fatty acids it
still holds (FA, g, as oleic acid: 0.282 g per mmol) are subtracted, as is the residue of a reagent
blank (Rb, g). m is the test portion (g), V the NaOH titre (mL), c its concentration (mol/L).

Evidence: the definition (substances that the usual caustic treatment cannot saponify but that
dissolve in fat solvents: higher aliphatic alcohols, sterols, pigments, hydrocarbons) was found in a
copy of AOCS Ca 6b-53, the companion method; the hexane method ISO 18609 gives systematically lower
results than ISO 3596 (found, ISO 18609 scope). The formula, the 0.282 factor (M(oleic acid) / 1000,
which tests/plugins/test_independent_checks.py checks with molmass), about 5 g of test portion and
the 0.02 mol/L NaOH of Ca 6a-40 are from memory, not confirmed.
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

from plugins import codex
from plugins.contract import TITRATION_INSTRUMENTS, MethodInputError, MethodPlugin, MethodScope, QuantityInput, WorkedExample
from plugins.titration import PortionRange, refuse_more_than_portion, sample_mass, sample_volume, titrant_concentration

OLEIC_ACID_PER_MMOL = Decimal("0.282")  # g of oleic acid per mmol of NaOH (M = 282 g/mol; from memory)


def fatty_acids_in_residue(values: Mapping[str, Any]) -> Decimal:
    """The free fatty acids the residue still holds, in g as oleic acid."""
    return values["sample_volume"] * values["titrant_concentration"] * OLEIC_ACID_PER_MMOL


def corrected_residue(values: Mapping[str, Any]) -> Decimal:
    """R - Rb - FA, refused when negative (the correction cannot exceed what was weighed)."""
    corrected = values["residue_mass"] - values.get("blank_residue_mass", 0) - fatty_acids_in_residue(values)
    if corrected < 0:
        raise MethodInputError(
            "residue_mass",
            f"residue {values['residue_mass']} g is less than the blank residue and the fatty acids "
            f"titrated in it ({fatty_acids_in_residue(values)} g as oleic); check the masses and the titre",
        )
    return corrected


class UnsaponifiableMatter(MethodPlugin):
    code = "unsap"
    title = "Unsaponifiable matter"
    version = "1.0"
    titrants = ("NaOH",)  # the fatty acids left in the residue are titrated with NaOH
    # the residue is dried before weighing; the drying means differ between the two standards
    # (from memory), so no oven is required by name
    instruments = TITRATION_INSTRUMENTS
    standards = ("ISO 3596", "AOCS Ca 6a-40")
    inputs = (
        sample_mass(
            "Test portion, about 5 g (from memory, not confirmed)",
            PortionRange("5", "5", "ISO 3596: a test portion of about 5 g", evidence="from memory"),
            refuse_beyond=False,  # the portion is from memory: outside it only warns
        ),
        QuantityInput("residue_mass", "g", "Dried residue of the extract, weighed by difference", minimum=0.0),
        QuantityInput(
            "blank_residue_mass", "g", "Dried residue of the reagent blank (no oil); 0 when none was left",
            minimum=0.0, required=False, default=0.0,
        ),
        sample_volume("NaOH titre of the residue redissolved in neutralised ethanol (the free fatty acids it holds)"),
        titrant_concentration("NaOH concentration, e.g. 0.02 mol/L (AOCS Ca 6a-40, from memory)"),
    )
    result_unit = "%"
    decimals = 2
    # No precision figure of ISO 3596 or Ca 6a-40 was found or is recalled: no repeatability limit.
    repeatability = None
    spec_limits = codex.limits_for("unsap")
    scope = (MethodScope(source="ISO 3596 (a mass fraction of the test portion)", minimum=0.0, maximum=100.0),)
    # worked examples restate the formula (transcription guards); the independent check (a residue of a
    # known unsaponifiable mass with a known mass of oleic acid, molmass) is in
    # tests/plugins/test_independent_checks.py
    examples = (
        WorkedExample(
            {
                "sample_mass": 5.0, "residue_mass": 0.0520, "blank_residue_mass": 0.0010,
                "sample_volume": 0.50, "titrant_concentration": 0.02,
            },
            expected=(0.0520 - 0.0010 - 0.50 * 0.02 * 0.282) * 100 / 5.0,
            source=(
                "ISO 3596 / Ca 6a-40 by hand: fatty acids 0.50 mL x 0.02 mol/L x 0.282 = 0.00282 g; "
                "(0.0520 - 0.0010 - 0.00282) g x 100 / 5.0 g = 0.9636 %"
            ),
        ),
        WorkedExample(
            {"sample_mass": 5.0, "residue_mass": 0.0600, "sample_volume": 0.0, "titrant_concentration": 0.02},
            expected=1.2,
            source="ISO 3596 by hand: an acid-free residue of 60.0 mg from 5.0 g is 1.20 %, the Codex palm limit (memory)",
        ),
    )
    cautions = (
        "Diethyl ether is extremely flammable and forms explosive peroxides; light petroleum is highly "
        "flammable; ethanolic KOH is corrosive. Extract in a fume hood away from ignition sources, test "
        "the ether for peroxides, and evaporate the solvent on a water bath, never to dryness over a "
        "flame. Follow local regulations, the safety data sheets and the laboratory's own validated procedure."
    )

    def check(self, values: Mapping[str, Any]) -> None:
        refuse_more_than_portion(values, "residue_mass")
        corrected_residue(values)

    def compute(self, values: Mapping[str, Any]) -> Decimal:
        return corrected_residue(values) * 100 / values["sample_mass"]
