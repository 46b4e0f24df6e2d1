"""Inputs shared by the titration methods. Every titration uses the same names."""
from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from decimal import Decimal
from typing import Any

from plugins.contract import MethodInputError, QuantityInput

KOH_MOLAR_MASS = Decimal("56.1")  # g/mol as the standards write it (AOCS Cd 3-25, Cd 3d-63; ISO 660, ISO 3657)


# A test portion more than ten times smaller than the smallest, or larger than the largest,
# that the standard gives is no portion the standard allows at all: refused (common practice, no source).
PORTION_HARD_FACTOR = Decimal(10)
# The standards' tables say "about" a mass ("about 20 g"): within 10 % of the table's masses a
# portion is plausible (common practice, no source), unless the standard states its own tolerance.
PORTION_ALLOWANCE = Decimal("0.1")
# A titre fits one filling of a 50 mL burette, the largest size in common use (common practice,
# no source); more is accepted with a review warning (a refill, or a slip in the entry).
TITRE_PLAUSIBLE_MAXIMUM = 50.0
TITRE_PLAUSIBLE_SOURCE = "one filling of a 50 mL burette (common practice, no source)"
TITRE_PLAUSIBLE_EVIDENCE = "common practice, no source"


@dataclass(frozen=True)
class PortionRange:
    """The test-portion masses a method's standard gives (g, written as in the standard), from
    the smallest to the largest of its table, with the source and its evidence tag.
    ``tolerance`` (g) where the standard states one ("5.00 ± 0.05 g"); otherwise "about"."""

    smallest: str
    largest: str
    source: str
    evidence: str = "found"
    tolerance: str | None = None

    def plausible(self) -> tuple[float, float]:
        low, high = Decimal(self.smallest), Decimal(self.largest)
        if self.tolerance is not None:
            return float(low - Decimal(self.tolerance)), float(high + Decimal(self.tolerance))
        return float(low * (1 - PORTION_ALLOWANCE)), float(high * (1 + PORTION_ALLOWANCE))

    def hard(self) -> tuple[float, float]:
        return float(Decimal(self.smallest) / PORTION_HARD_FACTOR), float(Decimal(self.largest) * PORTION_HARD_FACTOR)

    def words(self) -> str:
        tag = "" if self.evidence == "found" else f" ({self.evidence})"
        if self.tolerance is not None:
            return f"{self.source} ± {self.tolerance} g{tag}"
        return f"{self.source}{tag}; ± {PORTION_ALLOWANCE * 100:.0f} % for 'about' (common practice, no source)"


def refuse_more_than_portion(values, part: str) -> None:
    """A mass taken from the test portion (lost on drying, left on a filter, extracted) is never
    more than the portion; MethodInputError naming ``part`` otherwise."""
    if values[part] > values["sample_mass"]:
        raise MethodInputError(part, f"{values[part]} g is more than the test portion of {values['sample_mass']} g")


def sample_mass(help: str = "Mass of the test portion", portions: PortionRange | None = None, *, refuse_beyond: bool = True) -> QuantityInput:
    """The test portion. With ``portions``, its masses from the standard are the plausible
    range, and (``refuse_beyond``) a tenth of the smallest and ten times the largest the hard
    bounds; without, any mass above 0 g."""
    if portions is None:
        return QuantityInput("sample_mass", "g", help, minimum=0.0, minimum_inclusive=False)
    low, high = portions.plausible()
    if refuse_beyond:
        hard_low, hard_high = portions.hard()
        bounds = {
            "minimum": hard_low, "maximum": hard_high,
            "bounds_source": (
                f"the bounds are a tenth of the smallest and ten times the largest test portion; {portions.source}"
                f"{'' if portions.evidence == 'found' else f' ({portions.evidence})'}"
            ),
        }
    else:
        bounds = {"minimum": 0.0, "minimum_inclusive": False}
    return QuantityInput(
        "sample_mass", "g", help, **bounds,
        plausible_minimum=low, plausible_maximum=high, plausible_source=portions.words(), plausible_evidence=portions.evidence,
    )


def titre(name: str, help: str, **options: Any) -> QuantityInput:
    """A burette reading: 0 mL or more, plausible up to one filling of a 50 mL burette."""
    return QuantityInput(
        name, "mL", help, minimum=0.0,
        plausible_maximum=TITRE_PLAUSIBLE_MAXIMUM, plausible_source=TITRE_PLAUSIBLE_SOURCE,
        plausible_evidence=TITRE_PLAUSIBLE_EVIDENCE, **options,
    )


def sample_volume(help: str = "Titre for the sample") -> QuantityInput:
    return titre("sample_volume", help)


def blank_volume(help: str = "Titre for the blank", required: bool = True) -> QuantityInput:
    return titre("blank_volume", help, required=required, default=None if required else 0.0)


def titrant_concentration(help: str = "Concentration of the titrant") -> QuantityInput:
    return QuantityInput("titrant_concentration", "mol/L", help, minimum=0.0, minimum_inclusive=False)


def back_titration_volume(values: Mapping[str, Any]) -> Decimal:
    """B - S for methods that titrate back what the sample did not consume (SV, IV)."""
    difference = values["blank_volume"] - values["sample_volume"]
    if difference < 0:
        raise MethodInputError(
            "sample_volume",
            f"sample titre {values['sample_volume']:g} mL exceeds the blank titre {values['blank_volume']:g} mL; "
            "in a back-titration the sample can only consume reagent",
        )
    return difference


def direct_titration_volume(values: Mapping[str, Any]) -> Decimal:
    """S - B for methods that titrate what the sample released (AV, FFA, PV)."""
    difference = values["sample_volume"] - values.get("blank_volume", 0)
    if difference < 0:
        raise MethodInputError(
            "sample_volume",
            f"sample titre {values['sample_volume']:g} mL is below the blank titre "
            f"{values.get('blank_volume', 0.0):g} mL, which would give a negative result",
        )
    return difference
