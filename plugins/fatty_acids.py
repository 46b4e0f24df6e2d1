"""Fatty acids by the trade's shorthand (C18:2), with their molar masses as exact Decimals.

A fatty acid CX:Y is C_X H_(2X-2Y) O_2 (Y double bonds, each two hydrogens fewer); its methyl
ester adds CH2; a triglyceride of three acids weighs 3 M(acid) + M(glycerol) - 3 M(water)
= 3 M(acid) + 38.049 (C3H2). Atomic weights are the IUPAC conventional values that
shared/references.md uses (C 12.011, H 1.008, O 15.999; computed there); tests check every
mass here against the molmass library. The omega family is given where the common
positional isomer of edible oils settles it (C18:3 as alpha-linolenic, omega-3: the form in
soybean, rapeseed and linseed oil; gamma-linolenic, omega-6, from borage or evening primrose
oil, would be reported under its own name). Trans isomers are separate components ("C18:1t").
"""
from __future__ import annotations

from dataclasses import dataclass
from decimal import Decimal

CARBON = Decimal("12.011")
HYDROGEN = Decimal("1.008")
OXYGEN = Decimal("15.999")
IODINE_MOLAR_MASS = Decimal("253.81")  # I2, g/mol (shared/references.md, computed from IUPAC weights)
# glycerol C3H8O3 minus three water H2O: what the glycerol backbone adds to three acids (C3H2)
GLYCEROL_RESIDUE = 3 * CARBON + 2 * HYDROGEN


def molar_mass(carbons: int, hydrogens: int, oxygens: int) -> Decimal:
    return carbons * CARBON + hydrogens * HYDROGEN + oxygens * OXYGEN


@dataclass(frozen=True)
class FattyAcid:
    shorthand: str
    name: str
    carbons: int
    double_bonds: int
    trans: bool = False
    omega: int | None = None  # 3 or 6 where the family is settled; None otherwise

    @property
    def hydrogens(self) -> int:
        return 2 * self.carbons - 2 * self.double_bonds

    @property
    def formula(self) -> str:
        return f"C{self.carbons}H{self.hydrogens}O2"

    @property
    def methyl_ester_formula(self) -> str:
        return f"C{self.carbons + 1}H{self.hydrogens + 2}O2"

    @property
    def molar_mass(self) -> Decimal:
        return molar_mass(self.carbons, self.hydrogens, 2)

    @property
    def methyl_ester_molar_mass(self) -> Decimal:
        return molar_mass(self.carbons + 1, self.hydrogens + 2, 2)

    @property
    def triglyceride_molar_mass(self) -> Decimal:
        """The simple triglyceride of this acid (triolein for C18:1)."""
        return 3 * self.molar_mass + GLYCEROL_RESIDUE

    @property
    def saturated(self) -> bool:
        return self.double_bonds == 0

    @property
    def family(self) -> str:
        """sfa, mufa, pufa (cis, as the isomer is normally reported) or trans."""
        if self.trans:
            return "trans"
        if self.double_bonds == 0:
            return "sfa"
        return "mufa" if self.double_bonds == 1 else "pufa"


FATTY_ACIDS: tuple[FattyAcid, ...] = (
    FattyAcid("C4:0", "butyric", 4, 0),
    FattyAcid("C6:0", "caproic", 6, 0),
    FattyAcid("C8:0", "caprylic", 8, 0),
    FattyAcid("C10:0", "capric", 10, 0),
    FattyAcid("C12:0", "lauric", 12, 0),
    FattyAcid("C14:0", "myristic", 14, 0),
    FattyAcid("C14:1", "myristoleic", 14, 1),
    FattyAcid("C15:0", "pentadecanoic", 15, 0),
    FattyAcid("C16:0", "palmitic", 16, 0),
    FattyAcid("C16:1", "palmitoleic", 16, 1),
    FattyAcid("C17:0", "heptadecanoic (margaric)", 17, 0),
    FattyAcid("C17:1", "heptadecenoic", 17, 1),
    FattyAcid("C18:0", "stearic", 18, 0),
    FattyAcid("C18:1", "oleic (cis isomers)", 18, 1),
    FattyAcid("C18:1t", "octadecenoic, trans isomers (elaidic)", 18, 1, trans=True),
    FattyAcid("C18:2", "linoleic", 18, 2, omega=6),
    FattyAcid("C18:2t", "octadecadienoic, trans isomers", 18, 2, trans=True),
    FattyAcid("C18:3", "alpha-linolenic", 18, 3, omega=3),
    FattyAcid("C18:3t", "octadecatrienoic, trans isomers", 18, 3, trans=True),
    FattyAcid("C20:0", "arachidic", 20, 0),
    FattyAcid("C20:1", "gondoic (eicosenoic)", 20, 1),
    FattyAcid("C20:2", "eicosadienoic", 20, 2, omega=6),
    FattyAcid("C20:4", "arachidonic", 20, 4, omega=6),
    FattyAcid("C20:5", "eicosapentaenoic (EPA)", 20, 5, omega=3),
    FattyAcid("C22:0", "behenic", 22, 0),
    FattyAcid("C22:1", "erucic", 22, 1),
    FattyAcid("C22:6", "docosahexaenoic (DHA)", 22, 6, omega=3),
    FattyAcid("C24:0", "lignoceric", 24, 0),
    FattyAcid("C24:1", "nervonic", 24, 1),
)
BY_SHORTHAND: dict[str, FattyAcid] = {acid.shorthand: acid for acid in FATTY_ACIDS}

# AOCS Cd 1c-85, iodine value from the composition: factor per % of each acid, triglyceride basis
# (shared/references.md, found). Each is C=C count x M(I2) / (triglyceride molar mass / 3): the
# grams of iodine 100 g of the acid's triglyceride takes up, per % (tests check each against molmass,
# and that the free-acid molar mass would give the standard's other, free-fatty-acid column).
CD_1C_85_FACTORS: dict[str, Decimal] = {
    "C16:1": Decimal("0.950"),
    "C18:1": Decimal("0.860"),
    "C18:2": Decimal("1.732"),
    "C18:3": Decimal("2.616"),
    "C20:1": Decimal("0.785"),
    "C22:1": Decimal("0.723"),
}
# the standard's free-fatty-acid factors (found), for the tests that show which basis the table uses
CD_1C_85_FREE_ACID_FACTORS: dict[str, Decimal] = {
    "C16:1": Decimal("0.9976"),
    "C18:1": Decimal("0.8986"),
    "C18:2": Decimal("1.810"),
    "C18:3": Decimal("2.735"),
    "C20:1": Decimal("0.8175"),
    "C22:1": Decimal("0.7497"),
}
FACTOR_PLACES = Decimal("0.001")  # Cd 1c-85 writes its triglyceride factors to three places


def iodine_factor(acid: FattyAcid) -> Decimal:
    """The Cd 1c-85 factor where the standard lists the acid; for any other unsaturated acid
    (C14:1, C17:1, C20:2 ... and trans isomers, which take up iodine like their cis forms) the
    same rule applied and written to the standard's three places: computed here, not in its table."""
    if acid.shorthand in CD_1C_85_FACTORS:
        return CD_1C_85_FACTORS[acid.shorthand]
    if acid.double_bonds == 0:
        return Decimal(0)
    exact = acid.double_bonds * IODINE_MOLAR_MASS * 3 / acid.triglyceride_molar_mass
    return exact.quantize(FACTOR_PLACES)


def theoretical_fid_factor(acid: FattyAcid) -> Decimal:
    """Theoretical FID response factor of the acid's methyl ester relative to methyl stearate:
    the detector answers to the carbons it burns except the carbonyl carbon ("active carbons",
    as many as the acid has), so mass per active carbon sets the factor,
    F = (M_FAME / n) / (M_FAME(C18:0) / 18). AOCS Ce 1h-05 applies such theoretical factors;
    the form is from memory, not confirmed against the standard's table. The reference acid
    does not matter: normalisation divides it out."""
    stearic = BY_SHORTHAND["C18:0"]
    return (acid.methyl_ester_molar_mass / acid.carbons) / (stearic.methyl_ester_molar_mass / stearic.carbons)
