"""Independent checks: each method's result against a value worked out without its formula.

The other plugin tests mostly restate the formula the plugin implements (a worked example is
the formula applied by hand); they guard against transcription slips but cannot catch a wrong
formula. Here the expected value comes from outside the code instead:

- stoichiometry of a pure compound, with molar masses from the molmass library (not from the
  project's constants 56.1, 12.69, 28.2, ...); the titre is what that compound would consume;
- for the p-anisidine value, absorbances built by the Beer-Lambert law from the value's
  definition (found: 100 x the absorbance of 1.00 g in 100 mL, 1 cm, at 350 nm).

Tolerances are stated where the standards' rounded constants differ from molmass's molar masses.
DEVELOPERS.md lists these checks beside the transcription guards.
"""
from __future__ import annotations

import pytest
from molmass import Formula

from plugins.acid import AcidValue
from plugins.anisidine import AnisidineValue
from plugins.free_fatty_acids import FreeFattyAcids
from plugins.iodine import IodineValueWijs
from plugins.peroxide import PeroxideValue
from plugins.saponification import SaponificationValue

KOH = Formula("KOH").mass  # 56.1056 g/mol; the standards write 56.1 (0.01 % lower)
I2 = Formula("I2").mass  # 253.809 g/mol; Cd 1d-92 writes 12.69 for I2 / 20 (0.004 % lower)

# triglyceride formulas; C=C per molecule (common practice, no source: two H fewer per double bond)
TRIOLEIN, TRILINOLEIN, TRIPALMITIN, TRILAURIN = "C57H104O6", "C57H98O6", "C51H98O6", "C39H74O6"
OLEIC, PALMITIC, LAURIC = "C18H34O2", "C16H32O2", "C12H24O2"


@pytest.mark.parametrize("triglyceride", [TRIOLEIN, TRIPALMITIN, TRILAURIN])
def test_sv_of_a_pure_triglyceride_is_three_koh_per_molecule(triglyceride):
    # Three ester bonds per molecule: 1 mol takes 3 mol KOH, so SV = 3 x M(KOH) x 1000 / M(TG) mg KOH/g.
    molar_mass = Formula(triglyceride).mass
    expected = 3 * KOH * 1000 / molar_mass
    mass, hcl, blank = 2.0, 0.5, 25.0
    consumed_ml = 3 * mass / molar_mass / hcl * 1000  # HCl the saponified KOH would have taken
    inputs = {"sample_mass": mass, "sample_volume": blank - consumed_ml, "blank_volume": blank, "titrant_concentration": hcl}
    result = SaponificationValue().calculate(inputs)
    # 56.1 against 56.1056: 1.0e-4 relative, within 2e-4
    assert float(result.value) == pytest.approx(expected, rel=2e-4)


@pytest.mark.parametrize(("triglyceride", "double_bonds"), [(TRIOLEIN, 3), (TRILINOLEIN, 6)])
def test_iv_of_a_pure_triglyceride_is_one_i2_per_double_bond(triglyceride, double_bonds):
    # Each C=C adds one I2 (as ICl): IV = n x M(I2) x 100 / M(TG) g I2/100 g; each I2 frees back 2 thiosulfate.
    molar_mass = Formula(triglyceride).mass
    expected = double_bonds * I2 * 100 / molar_mass
    mass, thiosulfate, blank = 0.15, 0.1, 45.0
    consumed_ml = 2 * double_bonds * mass / molar_mass / thiosulfate * 1000
    inputs = {"sample_mass": mass, "sample_volume": blank - consumed_ml, "blank_volume": blank, "titrant_concentration": thiosulfate}
    result = IodineValueWijs().calculate(inputs)
    # 12.69 against 12.6904: 3.5e-5 relative, within 1e-4
    assert float(result.value) == pytest.approx(expected, rel=1e-4)


def test_av_of_pure_oleic_acid_is_one_koh_per_molecule():
    # One carboxyl group: AV = M(KOH) x 1000 / M(oleic acid) = 198.6 mg KOH/g
    expected = KOH * 1000 / Formula(OLEIC).mass
    assert expected == pytest.approx(198.63, abs=0.01)
    mass, koh = 0.5, 0.1
    titre = mass / Formula(OLEIC).mass / koh * 1000
    result = AcidValue().calculate({"sample_mass": mass, "sample_volume": titre, "titrant_concentration": koh})
    assert float(result.value) == pytest.approx(expected, rel=2e-4)


@pytest.mark.parametrize(("acid", "basis"), [(OLEIC, "oleic"), (PALMITIC, "palmitic"), (LAURIC, "lauric")])
def test_ffa_of_a_pure_fatty_acid_on_its_own_basis_is_100_percent(acid, basis):
    # A pure acid expressed as itself is 100 % free fatty acid, whatever the mass or titrant.
    mass, naoh = 3.525, 1.0  # the Ca 5a-40 portion for 50-100 % FFA (found)
    titre = mass / Formula(acid).mass / naoh * 1000
    inputs = {"sample_mass": mass, "sample_volume": titre, "titrant_concentration": naoh, "fatty_acid_basis": basis}
    result = FreeFattyAcids().calculate(inputs)
    # Ca 5a-40 rounds M/10 to three figures (28.2 for 28.246): up to 0.17 % low, within 0.2 %
    assert float(result.value) == pytest.approx(100.0, rel=2e-3)
    assert result.unit == f"% as {basis}"


def test_av_to_ffa_factor_is_the_molar_mass_ratio():
    # Ca 5a-40's AV = 1.99 x %FFA (oleic): one titre read both ways gives M(KOH) x 10 / M(oleic) = 1.986
    assert round(KOH * 10 / Formula(OLEIC).mass, 2) == 1.99


def test_pv_of_oil_with_a_known_hydroperoxide_content():
    # 1.00 mg methyl linoleate hydroperoxide (C19H34O4) in 5.00 g of peroxide-free oil. ROOH + 2 I- + 2 H+
    # -> ROH + I2 + H2O, and I2 takes 2 thiosulfate: 2 meq per mmol ROOH. PV = 2 x n / m x 10^6 meq/kg.
    hydroperoxide = Formula("C19H34O4").mass
    mmol = 1.00 / hydroperoxide  # mg / (g/mol)
    expected = 2 * mmol / 5.00 * 1000  # meq per kg of oil
    assert expected == pytest.approx(1.2252, abs=1e-4)
    thiosulfate = 0.002
    titre = 2 * mmol / thiosulfate  # mL: mmol / (mol/L)
    inputs = {"sample_mass": 5.00, "sample_volume": titre, "blank_volume": 0.0, "titrant_concentration": thiosulfate}
    result = PeroxideValue().calculate(inputs)
    assert float(result.value) == pytest.approx(expected, rel=1e-9)  # no rounded constant in PV


@pytest.mark.parametrize("mass", [0.25, 0.5, 1.0, 2.0])
@pytest.mark.parametrize(("anisidine_value", "background"), [(2.0, 0.05), (10.0, 0.1), (20.0, 0.02)])
def test_anv_from_absorbances_built_by_the_definition(mass, anisidine_value, background):
    # Definition (found): AnV = 100 x absorbance increase of 1.00 g oil in 100 mL, 1 cm, 350 nm.
    # Beer-Lambert: absorbance is proportional to concentration. m g in 25 mL is 4m times 1 g/100 mL.
    # ``background`` is the unreacted absorbance at 1 g/100 mL. The reacted solution is 5 mL of the
    # test solution plus 1 mL of reagent (from memory), so it is at 5/6 of the concentration.
    strength = 4 * mass
    unreacted = background * strength
    reacted = (background + anisidine_value / 100) * strength * 5 / 6
    assert max(unreacted, reacted) <= 2.0  # within the plugin's absorbance bound
    inputs = {"sample_mass": mass, "absorbance_unreacted": unreacted, "absorbance_reacted": reacted}
    assert float(AnisidineValue().calculate(inputs).value) == pytest.approx(anisidine_value, rel=1e-9)
