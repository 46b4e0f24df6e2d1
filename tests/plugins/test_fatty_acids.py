"""Molar masses of the fatty acids and the AOCS Cd 1c-85 factors (plugins/fatty_acids.py), against
the molmass library (independent: molmass's own atomic weights and formula parser)."""
from __future__ import annotations

from decimal import Decimal

import pytest
from molmass import Formula

from plugins.fatty_acids import (
    BY_SHORTHAND,
    CD_1C_85_FACTORS,
    CD_1C_85_FREE_ACID_FACTORS,
    FATTY_ACIDS,
    GLYCEROL_RESIDUE,
    IODINE_MOLAR_MASS,
    iodine_factor,
    theoretical_fid_factor,
)

I2 = Formula("I2").mass
GLYCEROL = Formula("C3H8O3").mass
WATER = Formula("H2O").mass
# molmass uses the IUPAC abridged weights (C 12.0107 ...), our constants the conventional ones
# (C 12.011, H 1.008, O 15.999; shared/references.md): they differ by about 0.01 g/mol per 300.
MOLAR_MASS_TOLERANCE = 0.02


@pytest.mark.parametrize("acid", FATTY_ACIDS, ids=lambda a: a.shorthand)
def test_every_constant_molar_mass_is_a_decimal_that_molmass_confirms(acid):
    assert isinstance(acid.molar_mass, Decimal) and isinstance(acid.triglyceride_molar_mass, Decimal)
    assert float(acid.molar_mass) == pytest.approx(Formula(acid.formula).mass, abs=MOLAR_MASS_TOLERANCE)
    assert float(acid.methyl_ester_molar_mass) == pytest.approx(Formula(acid.methyl_ester_formula).mass, abs=MOLAR_MASS_TOLERANCE)
    # triglyceride = glycerol + 3 acids - 3 water, each from molmass
    triglyceride = GLYCEROL + 3 * Formula(acid.formula).mass - 3 * WATER
    assert float(acid.triglyceride_molar_mass) == pytest.approx(triglyceride, abs=3 * MOLAR_MASS_TOLERANCE)


def test_named_acids_have_the_formulas_of_the_handbooks():
    # oleic C18H34O2, linoleic C18H32O2, alpha-linolenic C18H30O2, palmitic C16H32O2, erucic C22H42O2
    # (CRC Handbook of Chemistry and Physics, from memory)
    expected = {"C18:1": "C18H34O2", "C18:2": "C18H32O2", "C18:3": "C18H30O2", "C16:0": "C16H32O2", "C22:1": "C22H42O2"}
    assert {name: BY_SHORTHAND[name].formula for name in expected} == expected


def test_glycerol_residue_and_iodine_match_molmass():
    # shared/references.md (memory): M_TG = 3 x mean acid MW + 38.049
    assert GLYCEROL_RESIDUE == Decimal("38.049")
    assert float(GLYCEROL_RESIDUE) == pytest.approx(GLYCEROL - 3 * WATER, abs=0.005)
    assert float(IODINE_MOLAR_MASS) == pytest.approx(I2, abs=0.005)


@pytest.mark.parametrize("shorthand", sorted(CD_1C_85_FACTORS))
def test_cd_1c_85_factors_are_double_bonds_times_iodine_over_a_third_of_the_triglyceride(shorthand):
    """AOCS Cd 1c-85 factors (found) against molmass: C=C x M(I2) / (M(triglyceride) / 3). The
    standard's triglyceride column uses the triglyceride mass / 3; its free-acid column uses the
    acid's own molar mass. Both are checked, and the triglyceride factors are shown NOT to be the
    acid-mass form (they differ by some 4 %, far beyond the third decimal)."""
    acid = BY_SHORTHAND[shorthand]
    triglyceride = GLYCEROL + 3 * Formula(acid.formula).mass - 3 * WATER
    by_triglyceride = acid.double_bonds * I2 / (triglyceride / 3)
    by_free_acid = acid.double_bonds * I2 / Formula(acid.formula).mass
    # the standard writes three places: half a unit of the third is 0.0005
    assert float(CD_1C_85_FACTORS[shorthand]) == pytest.approx(by_triglyceride, abs=0.0006)
    assert float(CD_1C_85_FACTORS[shorthand]) != pytest.approx(by_free_acid, abs=0.01)
    assert float(CD_1C_85_FREE_ACID_FACTORS[shorthand]) == pytest.approx(by_free_acid, abs=0.0006)


@pytest.mark.parametrize("acid", [a for a in FATTY_ACIDS if a.double_bonds], ids=lambda a: a.shorthand)
def test_factors_beyond_the_standards_table_follow_its_rule(acid):
    # computed here by the Cd 1c-85 rule for acids the table does not list (C20:5, trans isomers ...)
    triglyceride = GLYCEROL + 3 * Formula(acid.formula).mass - 3 * WATER
    assert float(iodine_factor(acid)) == pytest.approx(acid.double_bonds * I2 / (triglyceride / 3), abs=0.0006)


def test_saturated_acids_take_up_no_iodine():
    assert all(iodine_factor(a) == 0 for a in FATTY_ACIDS if a.double_bonds == 0)


def test_theoretical_fid_factors_are_mass_per_active_carbon():
    # methyl stearate is the reference; methyl palmitate has more mass per carbon it burns: factor > 1
    # (from memory: the theoretical factors rise for short chains, e.g. C4:0 well above 1.3)
    assert theoretical_fid_factor(BY_SHORTHAND["C18:0"]) == 1
    palmitate = Formula("C17H34O2").mass / 16 / (Formula("C19H38O2").mass / 18)
    assert float(theoretical_fid_factor(BY_SHORTHAND["C16:0"])) == pytest.approx(palmitate, rel=1e-4)
    assert theoretical_fid_factor(BY_SHORTHAND["C4:0"]) > Decimal("1.3")
