"""Fatty-acid composition by GC of the methyl esters, AOCS Ce 1h-05 / ISO 12966-2 and -4: a profile.

Inputs are the peak areas (or area %) of the identified fatty-acid methyl esters, by shorthand
("C18:2"), the area of the unidentified peaks, and optionally response factors: the theoretical
FID factors (``response_factors = theoretical``, ``plugins.fatty_acids.theoretical_fid_factor``,
from memory) or the laboratory's own per acid (``rf:C18:2``, from a reference mixture), which
take precedence. Each acid's share is normalised to 100 % of the identified fatty acids:

    w_i = A_i F_i / sum_j (A_j F_j) x 100

and the unidentified area is reported separately as % of the total area (no factor applies to
what is not identified). Derived values:

- ``iv_calc``: iodine value from the composition, AOCS Cd 1c-85 (the factors ISO 3961 Annex B
  uses; found): sum of w_i x factor_i (``plugins.fatty_acids.iodine_factor``).
- ``sv_calc``: saponification value from the composition, AOCS Cd 3a-94 (from memory):
  SV = 3 x 56.1 x 1000 / M_TG, with M_TG = 3 x mean fatty-acid molar mass + 38.049. The GC
  shares are mass % of methyl esters, so the mean acid molar mass is the mole-weighted one:
  moles of each acid n_i = w_i / M(FAME_i), mean = sum n_i M(acid_i) / sum n_i.
- sums: SFA, MUFA and PUFA (cis, as reported), trans (the t isomers), omega-3 and omega-6
  (the acids whose family the shorthand settles, ``plugins.fatty_acids``).

The identity screen (``profile_warnings``) holds the acids against the Codex CXS 210 ranges of
the product's oil type (``plugins.codex_composition``).
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

from plugins import codex, codex_composition
from plugins.contract import (
    ChoiceInput,
    Component,
    MethodInputError,
    MethodPlugin,
    MethodResult,
    QuantityInput,
    WorkedExample,
)
from plugins.default_budget import UnitDefault
from plugins.fatty_acids import FATTY_ACIDS, FattyAcid, iodine_factor, theoretical_fid_factor
from plugins.titration import KOH_MOLAR_MASS
from plugins.units import UnitProblem, to_decimal, to_magnitude

UNIDENTIFIED = "unidentified"
RESPONSE_FACTORS = "response_factors"
RF_PREFIX = "rf:"
HUNDRED = Decimal(100)
# Above this share of the total area the reviewer is told (common practice, no source) ...
UNIDENTIFIED_WARNING_PERCENT = Decimal(5)
# ... and at or above this one no composition is given at all: most of the chromatogram is not
# fatty-acid methyl esters the lab identified (common practice, no source).
UNIDENTIFIED_REFUSAL_PERCENT = Decimal(50)
# Peak areas integrate to about 1 % relative standard uncertainty for the main peaks of a routine
# FAME run (common practice, no source); the default budget takes it for every area.
AREA_UNCERTAINTY = UnitDefault("default budget: 1 % relative for an integrated GC peak area (common practice, no source)", relative=0.01)


def _area_input(acid: FattyAcid) -> QuantityInput:
    return QuantityInput(
        acid.shorthand, "dimensionless", f"{acid.name} methyl ester: peak area or area % (plain number; leave out if not detected)",
        minimum=0.0, required=False,
    )


def _factor_input(acid: FattyAcid) -> QuantityInput:
    return QuantityInput(
        f"{RF_PREFIX}{acid.shorthand}", "dimensionless",
        f"response factor of {acid.shorthand} from the laboratory's reference mixture (area x factor = mass); overrides the theoretical one",
        minimum=0.0, minimum_inclusive=False, required=False,
    )


def _percent(name: str, title: str, kind: str = "derived", help: str = "") -> Component:
    return Component(name, title, "%", 1, kind=kind, help=help)


SUMS = {
    "sfa": "saturated fatty acids",
    "mufa": "monounsaturated fatty acids (cis)",
    "pufa": "polyunsaturated fatty acids (cis)",
    "trans": "trans fatty acids",
    "omega3": "omega-3 fatty acids",
    "omega6": "omega-6 fatty acids",
}


class FattyAcidComposition(MethodPlugin):
    code = "fac"
    title = "Fatty-acid composition (GC of methyl esters)"
    version = "1.0"
    standards = ("AOCS Ce 1h-05", "ISO 12966-2", "ISO 12966-4", "AOCS Cd 1c-85", "AOCS Cd 3a-94")
    inputs = (
        *(_area_input(acid) for acid in FATTY_ACIDS),
        QuantityInput(UNIDENTIFIED, "dimensionless", "summed area of the peaks not identified (same scale as the acids)",
                      minimum=0.0, required=False),
        ChoiceInput(
            RESPONSE_FACTORS, ("none", "theoretical"),
            "none: area % is mass % (the usual FID approximation); theoretical: FID factors by active carbons "
            "(AOCS Ce 1h-05, from memory)", required=False, default="none",
        ),
        *(_factor_input(acid) for acid in FATTY_ACIDS),
    )
    # one injection of one methylation is the result (common practice, no source)
    replicates = 1
    # the headline, where one number stands for the profile: the calculated iodine value
    headline = "iv_calc"
    result_unit = "g I2/100 g"
    decimals = 1
    components = (
        *(
            Component(acid.shorthand, acid.name, "%", 1, spec_limits=codex_composition.limits_for(acid.shorthand),
                      help="% of the identified fatty acids (as methyl esters)")
            for acid in FATTY_ACIDS
        ),
        _percent(UNIDENTIFIED, "unidentified peaks", kind="measured", help="% of the total peak area"),
        Component("iv_calc", "iodine value calculated from the composition (AOCS Cd 1c-85)", "g I2/100 g", 1,
                  kind="derived", spec_limits=codex.limits_for("iv")),
        Component("sv_calc", "saponification value calculated from the composition (AOCS Cd 3a-94)", "mg KOH/g", 1,
                  kind="derived", spec_limits=codex.limits_for("sv")),
        *(_percent(name, title) for name, title in SUMS.items()),
    )
    instruments = (("balance",), ("gc",))  # the test portion for methylation (ISO 12966-2), the chromatograph
    default_uncertainties = {spec.name: AREA_UNCERTAINTY for spec in inputs if isinstance(spec, QuantityInput)
                             and not spec.name.startswith(RF_PREFIX)}
    examples = (
        # pure triolein: one acid, 100 %; Cd 1c-85: 100 x 0.860 = 86.0 (the computed IV of triolein is 86.0,
        # shared/references.md); the independent checks against molmass are in tests/plugins/test_fatty_acid_composition.py
        WorkedExample({"C18:1": "1000"}, expected=86.0, source="AOCS Cd 1c-85: 100 % C18:1 x 0.860 = 86.0"),
        WorkedExample({"C18:1": "1000"}, expected=190.1, tolerance=0.05, component="sv_calc",
                      source="triolein, MW 885.45 (shared/references.md, computed): SV 190.1"),
        WorkedExample({"C16:0": "44", "C18:1": "40", "C18:2": "10", "C18:0": "5", "unidentified": "1"},
                      expected=(40 * 0.860 + 10 * 1.732) * 100 / 99,
                      source="AOCS Cd 1c-85 by hand: the identified areas sum to 99, so (40 x 0.860 + 10 x 1.732) x 100 / 99 = 52.24"),
        WorkedExample({"C16:0": "44", "C18:1": "40", "C18:2": "10", "C18:0": "5", "unidentified": "1"},
                      expected=1.0, component="unidentified",
                      source="ISO 12966-4 area normalisation by hand: 1 of 100 area units unidentified = 1.0 %"),
    )
    cautions = (
        "Methylation reagents (boron trifluoride in methanol, methanolic KOH or sodium methoxide) are toxic and "
        "corrosive; methanol, iso-octane and hexane are flammable and harmful. Work in a fume hood with gloves and eye "
        "protection; keep the carrier and detector gases (hydrogen) away from ignition sources. Follow local "
        "regulations, the safety data sheets and the laboratory's own validated procedure."
    )

    # --- inputs --------------------------------------------------------------------
    def validate(self, raw: Mapping[str, Any]) -> dict[str, Any]:
        if isinstance(raw, Mapping):
            for name, given in raw.items():
                _refuse_scaled_text(str(name), given)
        return super().validate(raw)

    def check(self, values: Mapping[str, Any]) -> None:
        areas = self._areas(values)
        if not any(area > 0 for area in areas.values()):
            raise MethodInputError("inputs", "give the peak area of at least one identified fatty acid")
        for acid in FATTY_ACIDS:
            if f"{RF_PREFIX}{acid.shorthand}" in values and acid.shorthand not in values:
                raise MethodInputError(f"{RF_PREFIX}{acid.shorthand}", f"has no peak area of {acid.shorthand} to apply to")
        unidentified = values.get(UNIDENTIFIED, Decimal(0))
        share = unidentified * HUNDRED / (sum(areas.values()) + unidentified)
        if share >= UNIDENTIFIED_REFUSAL_PERCENT:
            raise MethodInputError(
                UNIDENTIFIED,
                f"is {share:.1f} % of the total area; at {UNIDENTIFIED_REFUSAL_PERCENT} % or more no composition is given "
                "(identify the peaks first; common practice, no source)",
            )

    @staticmethod
    def _areas(values: Mapping[str, Any]) -> dict[str, Decimal]:
        return {acid.shorthand: values[acid.shorthand] for acid in FATTY_ACIDS if acid.shorthand in values}

    def measured_components(self, values: Mapping[str, Any]) -> set[str]:
        given = {name for name, area in self._areas(values).items() if area > 0}
        return given | ({UNIDENTIFIED} if values.get(UNIDENTIFIED) else set())

    @staticmethod
    def factor(acid: FattyAcid, values: Mapping[str, Any]) -> Decimal:
        own = values.get(f"{RF_PREFIX}{acid.shorthand}")
        if own is not None:
            return own
        return theoretical_fid_factor(acid) if values.get(RESPONSE_FACTORS) == "theoretical" else Decimal(1)

    # --- the profile ---------------------------------------------------------------
    def compute_profile(self, values: Mapping[str, Any]) -> dict[str, Decimal]:
        areas = self._areas(values)
        corrected = {acid: areas.get(acid.shorthand, Decimal(0)) * self.factor(acid, values) for acid in FATTY_ACIDS}
        total = sum(corrected.values())
        shares = {acid: amount * HUNDRED / total for acid, amount in corrected.items()}
        profile: dict[str, Decimal] = {acid.shorthand: share for acid, share in shares.items()}
        unidentified = values.get(UNIDENTIFIED, Decimal(0))
        profile[UNIDENTIFIED] = unidentified * HUNDRED / (sum(areas.values()) + unidentified)
        profile["iv_calc"] = sum((share * iodine_factor(acid) for acid, share in shares.items()), Decimal(0))
        profile["sv_calc"] = saponification_value(shares)
        profile["sfa"] = _sum(shares, lambda a: a.family == "sfa")
        profile["mufa"] = _sum(shares, lambda a: a.family == "mufa")
        profile["pufa"] = _sum(shares, lambda a: a.family == "pufa")
        profile["trans"] = _sum(shares, lambda a: a.trans)
        profile["omega3"] = _sum(shares, lambda a: a.omega == 3 and not a.trans)
        profile["omega6"] = _sum(shares, lambda a: a.omega == 6 and not a.trans)
        return profile

    # --- review --------------------------------------------------------------------
    def profile_warnings(self, result: MethodResult, oil_type: str) -> list[str]:
        warnings = []
        unidentified = result.components.get(UNIDENTIFIED)
        if unidentified is not None and unidentified.exact > UNIDENTIFIED_WARNING_PERCENT:
            warnings.append(
                f"unidentified peaks are {unidentified.reported} % of the total area, above the "
                f"{UNIDENTIFIED_WARNING_PERCENT} % the laboratory accepts without review (common practice, no source)"
            )
        return warnings + codex_composition.identity_warnings(result.components, oil_type)


def saponification_value(shares: Mapping[FattyAcid, Decimal]) -> Decimal:
    """AOCS Cd 3a-94 (from memory): 3 x 56.1 x 1000 / (3 x mean acid molar mass + 38.049), the mean
    weighted by moles of each acid, from its methyl-ester mass share."""
    from plugins.fatty_acids import GLYCEROL_RESIDUE

    moles = {acid: share / acid.methyl_ester_molar_mass for acid, share in shares.items() if share}
    mean_acid = sum(n * acid.molar_mass for acid, n in moles.items()) / sum(moles.values())
    return 3 * KOH_MOLAR_MASS * 1000 / (3 * mean_acid + GLYCEROL_RESIDUE)


def _sum(shares: Mapping[FattyAcid, Decimal], belongs: Any) -> Decimal:
    return sum((share for acid, share in shares.items() if belongs(acid)), Decimal(0))


def _refuse_scaled_text(name: str, given: Any) -> None:
    """Areas are one scale: "12.5 %" would become 0.125 beside a plain 30. A unit that scales
    the number is refused, naming the input."""
    if not isinstance(given, str) or name == RESPONSE_FACTORS:
        return
    text = given.strip()
    try:
        Decimal(text)
        return
    except ArithmeticError:
        pass
    number = text.rstrip("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ% ")
    try:
        to_magnitude(text, "dimensionless")  # what the input's own parsing accepts, first
        scaled = to_decimal(text, "dimensionless")
        plain = Decimal(number)
    except (UnitProblem, ArithmeticError):
        return  # the input's own parsing names the problem
    if scaled != plain:
        raise MethodInputError(name, f"give areas and factors as plain numbers on one scale, not {given!r}")
