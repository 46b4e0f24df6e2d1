"""SV and IV of pure triglycerides, titrated on paper (plugins/saponification.py, plugins/iodine.py).

Each titre is built from stoichiometry, with molar masses from molmass, not from our code:
- saponification (AOCS Cd 3-25): m g of triglyceride takes 3 m / MW mol KOH, so B - S = 3 m / MW / c x 1000 mL;
  the expected SV is 3 x 56.1 x 1000 / MW (the standards write KOH as 56.1);
- Wijs iodine value (AOCS Cd 1d-92): n C=C take n m / MW mol I2 = 2 n m / MW mol thiosulfate;
  the expected IV is n x M(I2) x 100 / MW.
The results are then compared with the table in shared/references.md (computed) and with the
AOCS Cd 1c-85 factors (found).
"""
from __future__ import annotations

import pytest
from molmass import Formula

from plugins.iodine import IodineValueWijs
from plugins.saponification import SaponificationValue

I2 = Formula("I2").mass
GLYCEROL = Formula("C3H8O3").mass
WATER = Formula("H2O").mass

# name, triglyceride formula, its fatty acid, C=C per molecule, table MW / SV / IV (references.md, computed)
TRIGLYCERIDES = [
    ("trilaurin", "C39H74O6", "C12H24O2", 0, 639.01, 263.4, 0.0),
    ("trimyristin", "C45H86O6", "C14H28O2", 0, 723.18, 232.7, 0.0),
    ("tripalmitin", "C51H98O6", "C16H32O2", 0, 807.34, 208.5, 0.0),
    ("tristearin", "C57H110O6", "C18H36O2", 0, 891.50, 188.8, 0.0),
    ("triolein", "C57H104O6", "C18H34O2", 3, 885.45, 190.1, 86.0),
    ("trilinolein", "C57H98O6", "C18H32O2", 6, 879.40, 191.4, 173.2),
    ("trilinolenin", "C57H92O6", "C18H30O2", 9, 873.36, 192.7, 261.6),
]
IDS = [row[0] for row in TRIGLYCERIDES]


def sv_titration(mw: float, mass: float = 2.0, concentration: float = 0.5, blank: float = 25.0) -> dict:
    consumed_ml = 3 * mass / mw / concentration * 1000  # mL of HCl the KOH taken up would have needed
    return {"sample_mass": mass, "sample_volume": blank - consumed_ml, "blank_volume": blank, "titrant_concentration": concentration}


def iv_titration(mw: float, double_bonds: float, mass: float = 0.1, concentration: float = 0.1, blank: float = 45.0) -> dict:
    consumed_ml = 2 * double_bonds * mass / mw / concentration * 1000  # two thiosulfate per I2
    return {"sample_mass": mass, "sample_volume": blank - consumed_ml, "blank_volume": blank, "titrant_concentration": concentration}


@pytest.mark.parametrize(("name", "formula", "acid", "double_bonds", "mw", "sv", "iv"), TRIGLYCERIDES, ids=IDS)
def test_formula_is_glycerol_plus_three_acids_less_three_water(name, formula, acid, double_bonds, mw, sv, iv):
    # Triglyceride MW = glycerol + 3 fatty acids - 3 water (references.md), all from molmass
    assert Formula(formula).mass == pytest.approx(GLYCEROL + 3 * Formula(acid).mass - 3 * WATER, abs=1e-6)
    # references.md table (computed, with C 12.011, H 1.008, O 15.999); molmass uses its own atomic weights
    assert Formula(formula).mass == pytest.approx(mw, abs=0.05)


@pytest.mark.parametrize(("name", "formula", "acid", "double_bonds", "mw", "sv", "iv"), TRIGLYCERIDES, ids=IDS)
def test_saponification_value_of_a_pure_triglyceride(name, formula, acid, double_bonds, mw, sv, iv):
    molar_mass = Formula(formula).mass
    result = SaponificationValue().calculate(sv_titration(molar_mass))
    # AOCS Cd 3-25 (found) with three ester groups per molecule: SV = 3 x 56.1 x 1000 / MW
    assert result.value == pytest.approx(3 * 56.1 * 1000 / molar_mass, rel=1e-9)
    # references.md table (computed), given to 0.1
    assert result.value == pytest.approx(sv, abs=0.06)


@pytest.mark.parametrize(("name", "formula", "acid", "double_bonds", "mw", "sv", "iv"), TRIGLYCERIDES, ids=IDS)
def test_iodine_value_of_a_pure_triglyceride(name, formula, acid, double_bonds, mw, sv, iv):
    molar_mass = Formula(formula).mass
    result = IodineValueWijs().calculate(iv_titration(molar_mass, double_bonds))
    # n C=C take n I2: IV = n x M(I2) x 100 / MW. Cd 1d-92 (found) writes M(I2)/20 as 12.69,
    # 0.004 % below molmass's 253.809/20, hence the small tolerance.
    assert result.value == pytest.approx(double_bonds * I2 * 100 / molar_mass, abs=0.02)
    # references.md table (computed, with 253.81), given to 0.1
    assert result.value == pytest.approx(iv, abs=0.06)


def test_saturated_triglycerides_have_no_iodine_value():
    # A saturated fat takes up no iodine: sample titre equals the blank (Cd 1d-92 formula gives 0).
    for name, formula, _, double_bonds, *_ in TRIGLYCERIDES:
        if double_bonds == 0:
            assert IodineValueWijs().calculate(iv_titration(Formula(formula).mass, 0)).value == 0.0, name


# Cd 1c-85 (found): IV factor per % of the fatty acid; (acid, C=C, triglyceride formula, TG factor, free-acid factor)
CD_1C_85 = [
    ("16:1", "C16H30O2", 1, "C51H92O6", 0.950, 0.9976),
    ("18:1", "C18H34O2", 1, "C57H104O6", 0.860, 0.8986),
    ("18:2", "C18H32O2", 2, "C57H98O6", 1.732, 1.810),
    ("18:3", "C18H30O2", 3, "C57H92O6", 2.616, 2.735),
    ("20:1", "C20H38O2", 1, "C63H116O6", 0.785, 0.8175),
    ("22:1", "C22H42O2", 1, "C69H128O6", 0.723, 0.7497),
]


@pytest.mark.parametrize(("acid", "acid_formula", "double_bonds", "tg_formula", "tg_factor", "acid_factor"), CD_1C_85, ids=[row[0] for row in CD_1C_85])
def test_cd_1c_85_factors_follow_from_molar_masses(acid, acid_formula, double_bonds, tg_formula, tg_factor, acid_factor):
    # references.md (computed): factor = C=C x 253.81 / (fatty-acid MW, or triglyceride MW / 3); masses from molmass
    assert Formula(tg_formula).mass == pytest.approx(GLYCEROL + 3 * Formula(acid_formula).mass - 3 * WATER, abs=1e-6)
    assert double_bonds * I2 / (Formula(tg_formula).mass / 3) == pytest.approx(tg_factor, abs=0.001)
    assert double_bonds * I2 / Formula(acid_formula).mass == pytest.approx(acid_factor, abs=0.001)


def test_titrated_iv_of_a_blend_matches_the_cd_1c_85_calculation():
    # 60 % triolein + 40 % trilinolein by mass, titrated on paper, against Cd 1c-85 (found):
    # IV = 60 x 0.860 + 40 x 1.732 = 120.88 (factors to three decimals, hence 0.05 tolerance).
    mass, concentration, blank = 0.15, 0.1, 45.0
    mol_i2 = 3 * 0.6 * mass / Formula("C57H104O6").mass + 6 * 0.4 * mass / Formula("C57H98O6").mass
    titre = {"sample_mass": mass, "sample_volume": blank - 2 * mol_i2 / concentration * 1000, "blank_volume": blank, "titrant_concentration": concentration}
    assert IodineValueWijs().calculate(titre).value == pytest.approx(60 * 0.860 + 40 * 1.732, abs=0.05)


def test_cd_3a_94_glycerol_term_follows_from_molar_masses():
    # Cd 3a-94 (memory): triglyceride MW = 3 x mean fatty-acid MW + 38.049; 38.049 = glycerol - 3 water (molmass)
    assert GLYCEROL - 3 * WATER == pytest.approx(38.049, abs=0.01)
