"""Standardising a volumetric solution against a primary standard, in exact decimals.

For a primary standard of mass m (g), purity P (mass fraction) and molar mass M (g/mol),
titrated with V mL of the solution (titre less blank), with ``ratio`` moles of titrant per
mole of standard:

    c = 1000 · m · P · ratio / (M · V)          (mol/L)

This is the model of Eurachem/CITAC QUAM example A2 (KHP with NaOH, ratio 1) extended by the
stoichiometric ratio: dichromate and iodate each liberate iodine worth 6 mol of thiosulfate
(Cr2O7²⁻ + 6 I⁻ + 14 H⁺ → 2 Cr³⁺ + 3 I2 + 7 H2O; IO3⁻ + 5 I⁻ + 6 H⁺ → 3 I2 + 3 H2O;
I2 + 2 S2O3²⁻ → 2 I⁻ + S4O6²⁻), sodium carbonate takes 2 mol of HCl, TRIS 1.

A solution standardised against an already standardised one (HCl against a standardised
base, QUAM example A3): c = c_ref · V_ref · ratio / V_aliquot.

The standard uncertainty follows QUAM A2: the relative standard uncertainties of the
repeatability, m, P, M and V combine in quadrature (all inputs enter as products and
quotients), and u(c) = c · sqrt(Σ (u(x)/x)²).
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from decimal import Decimal, localcontext

from plugins.contract import exact_context

# IUPAC standard atomic weights with their stated uncertainties (±), as QUAM example A2
# uses them for C, H, O and K (its M_KHP = 204.2212 g/mol, u = 0.0038 follows from them:
# found, ../shared/references.md). Na, N, Cr and I are the IUPAC values of the same table
# (from memory); tests check every molar mass against molmass.
ATOMIC_WEIGHTS: dict[str, tuple[Decimal, Decimal]] = {
    "H": (Decimal("1.00794"), Decimal("0.00007")),
    "C": (Decimal("12.0107"), Decimal("0.0008")),
    "N": (Decimal("14.0067"), Decimal("0.0002")),
    "O": (Decimal("15.9994"), Decimal("0.0003")),
    "Na": (Decimal("22.989770"), Decimal("0.000002")),
    "K": (Decimal("39.0983"), Decimal("0.0001")),
    "Cr": (Decimal("51.9961"), Decimal("0.0006")),
    "I": (Decimal("126.90447"), Decimal("0.00003")),
}
SQRT3 = Decimal(3).sqrt()


@dataclass(frozen=True)
class PrimaryStandard:
    code: str
    name: str
    formula: str
    composition: Mapping[str, int]
    equivalents: int  # equivalents per mole in the standardising reaction
    titrant_reaction: str  # which titrants it standardises: "base", "acid" or "iodometric"


PRIMARY_STANDARDS: dict[str, PrimaryStandard] = {
    s.code: s
    for s in (
        PrimaryStandard("khp", "potassium hydrogen phthalate", "C8H5KO4", {"C": 8, "H": 5, "K": 1, "O": 4}, 1, "base"),
        PrimaryStandard("k2cr2o7", "potassium dichromate", "K2Cr2O7", {"K": 2, "Cr": 2, "O": 7}, 6, "iodometric"),
        PrimaryStandard("kio3", "potassium iodate", "KIO3", {"K": 1, "I": 1, "O": 3}, 6, "iodometric"),
        PrimaryStandard("na2co3", "sodium carbonate", "Na2CO3", {"Na": 2, "C": 1, "O": 3}, 2, "acid"),
        PrimaryStandard("tris", "tris(hydroxymethyl)aminomethane", "C4H11NO3", {"C": 4, "H": 11, "N": 1, "O": 3}, 1, "acid"),
    )
}
STANDARDISED_BASE = "standardised_base"  # an acid titrated against a standardised base (QUAM A3)


def molar_mass(standard: PrimaryStandard) -> tuple[Decimal, Decimal]:
    """M and its standard uncertainty, as QUAM A2 builds them: each atomic weight's ± taken
    as a rectangular distribution (÷ √3), multiplied by the atom count, combined in quadrature."""
    with localcontext(exact_context()):
        mass = sum(ATOMIC_WEIGHTS[element][0] * count for element, count in standard.composition.items())
        variance = sum((ATOMIC_WEIGHTS[element][1] / SQRT3 * count) ** 2 for element, count in standard.composition.items())
        return mass, variance.sqrt()


class StandardisationError(ValueError):
    """Input that cannot make a standardisation; ``field`` names it."""

    def __init__(self, field: str, reason: str):
        self.field = field
        self.reason = reason
        super().__init__(f"{field}: {reason}")


@dataclass(frozen=True)
class Replicate:
    """One titration: ``amount`` is the standard's mass in g (or, against a standardised
    base, the aliquot of the solution in mL); ``titre`` the volume read in mL."""

    amount: Decimal
    titre: Decimal


@dataclass(frozen=True)
class Outcome:
    concentrations: tuple[Decimal, ...]
    concentration: Decimal  # the mean, mol/L
    relative_spread: Decimal  # (max - min) / mean
    spread_limit: Decimal
    agrees: bool
    uncertainty: Decimal  # standard uncertainty of the mean, mol/L
    relative_uncertainty: Decimal


def relative_uncertainty(terms: Sequence[Decimal]) -> Decimal:
    """sqrt(Σ r²) of relative standard uncertainties r (QUAM A2, products and quotients)."""
    with localcontext(exact_context()):
        return sum((t * t for t in terms), Decimal(0)).sqrt()


def concentration_against_standard(
    *, mass: Decimal, purity: Decimal, molar_mass: Decimal, titre: Decimal, ratio: Decimal
) -> Decimal:
    """c = 1000 · m · P · ratio / (M · V), mol/L (QUAM A2 with the stoichiometric ratio)."""
    if titre <= 0:
        raise StandardisationError("replicates", "the titre less the blank must be positive")
    with localcontext(exact_context()):
        return 1000 * mass * purity * ratio / (molar_mass * titre)


def standardise(
    replicates: Sequence[Replicate],
    *,
    blank: Decimal,
    spread_limit: Decimal,
    ratio: Decimal,
    purity: Decimal = Decimal(1),
    purity_u: Decimal = Decimal(0),
    molar_mass: Decimal | None = None,
    molar_mass_u: Decimal = Decimal(0),
    reference_concentration: Decimal | None = None,
    reference_u: Decimal = Decimal(0),
    amount_u: Decimal = Decimal(0),
    titre_u: Decimal = Decimal(0),
    repeatability_u: Decimal | None = None,
) -> Outcome:
    """The concentration of a solution from its replicate titrations, the mean of the
    replicates' concentrations, with the relative spread judged against ``spread_limit`` and
    the standard uncertainty of QUAM A2.

    Against a primary standard give ``molar_mass`` (and ``purity``); against a standardised
    solution give ``reference_concentration`` instead. ``amount_u`` and ``titre_u`` are the
    standard uncertainties of one mass (g) or aliquot (mL) and of one titre (mL);
    ``repeatability_u`` is the relative standard uncertainty from repeatability: by default
    the standard deviation of the replicates' concentrations over the mean, ÷ √n (the
    standard uncertainty of a mean), QUAM A2 takes it from validation data (0.0005)."""
    if len(replicates) < 2:
        raise StandardisationError("replicates", "give at least two replicate titrations")
    if (molar_mass is None) == (reference_concentration is None):
        raise StandardisationError("primary_standard", "give either a primary standard or a reference standardisation")
    with localcontext(exact_context()):
        values: list[Decimal] = []
        for index, replicate in enumerate(replicates):
            if replicate.amount <= 0:
                raise StandardisationError(f"replicates.{index}.amount", "must be positive")
            net = replicate.titre - blank
            if net <= 0:
                raise StandardisationError(f"replicates.{index}.titre", "must exceed the blank")
            if molar_mass is not None:
                values.append(concentration_against_standard(
                    mass=replicate.amount, purity=purity, molar_mass=molar_mass, titre=net, ratio=ratio
                ))
            else:
                values.append(reference_concentration * net * ratio / replicate.amount)
        n = len(values)
        mean = sum(values) / n
        spread = (max(values) - min(values)) / mean
        if repeatability_u is None:
            variance = sum((v - mean) ** 2 for v in values) / (n - 1)
            repeatability_u = variance.sqrt() / mean / Decimal(n).sqrt()
        mean_amount = sum(r.amount for r in replicates) / n
        mean_titre = sum(r.titre for r in replicates) / n - blank
        terms = [repeatability_u, amount_u / mean_amount, titre_u / mean_titre]
        if molar_mass is not None:
            terms += [purity_u / purity, molar_mass_u / molar_mass]
        else:
            terms += [reference_u / reference_concentration]
        relative = relative_uncertainty(terms)
        return Outcome(
            concentrations=tuple(values),
            concentration=mean,
            relative_spread=spread,
            spread_limit=spread_limit,
            agrees=spread <= spread_limit,
            uncertainty=mean * relative,
            relative_uncertainty=relative,
        )


def titrant_ratio(standard_equivalents: int, titrant_equivalents: int) -> Decimal:
    """Moles of titrant per mole of standard: the standard's equivalents over the titrant's
    (KHP 1 with KOH 1 → 1; K2Cr2O7 6 with thiosulfate 1 → 6; Na2CO3 2 with H2SO4 2 → 1)."""
    with localcontext(exact_context()):
        return Decimal(standard_equivalents) / Decimal(titrant_equivalents)


# Uncertainty of one reading from an instrument's calibration, as QUAM A2 treats them.
def weighing_by_difference_u(balance_u: Decimal) -> Decimal:
    """A mass weighed by difference takes the balance's uncertainty twice: √2 · u (QUAM A2)."""
    with localcontext(exact_context()):
        return balance_u * Decimal(2).sqrt()


def tolerance_as_u(tolerance: Decimal) -> Decimal:
    """A volumetric tolerance ± a as a standard uncertainty: a / √6, the triangular
    distribution QUAM A2 uses for the burette."""
    with localcontext(exact_context()):
        return tolerance / Decimal(6).sqrt()
