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

from decimal import Decimal

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


# --- the refinery's other quality tests (issue 11) -------------------------------------------------

WATER, SODIUM_OLEATE, CALCIUM_STEARATE = "H2O", "C18H33NaO2", "Ca(C18H35O2)2"


def test_sodium_oleate_molar_mass_is_the_soap_factor():
    # AOCS Cc 17-95 expresses soap as sodium oleate (found); its factor is M(C18H33NaO2) = 304.44 g/mol (molmass)
    from plugins.soap import SODIUM_OLEATE_MOLAR_MASS

    assert float(SODIUM_OLEATE_MOLAR_MASS) == pytest.approx(Formula(SODIUM_OLEATE).mass, rel=2e-4)


@pytest.mark.parametrize("soap_mg", [0.4, 2.0, 4.0])
def test_soap_of_oil_spiked_with_a_known_mass_of_sodium_oleate(soap_mg):
    # 40 g of soap-free refined oil (Cc 17-95's portion, found) with ``soap_mg`` mg of sodium oleate: one HCl per
    # molecule (RCOONa + HCl -> RCOOH + NaCl), titre = mmol / (mol/L); expected soap = mg / 0.040 kg.
    from plugins.soap import SoapContent

    mass, hcl, blank = 40.0, 0.01, 0.05
    titre = blank + soap_mg / Formula(SODIUM_OLEATE).mass / hcl
    inputs = {"sample_mass": mass, "sample_volume": titre, "blank_volume": blank, "titrant_concentration": hcl}
    result = SoapContent().calculate(inputs)
    # 304.4 against 304.44: 1.5e-4 relative, within 2e-4
    assert float(result.value) == pytest.approx(soap_mg / 0.040, rel=2e-4)


def test_unsaponifiable_residue_with_a_known_mass_of_oleic_acid():
    # A residue of 50.0 mg squalene (unsaponifiable, C30H50) carrying 3.0 mg oleic acid that escaped the
    # washing; the oleic acid takes one NaOH per molecule: titre = mmol / (mol/L), molmass. From 5.0 g of oil
    # the unsaponifiable matter is 50.0 mg / 5.0 g = 1.000 %, whatever the acid carried.
    from plugins.unsaponifiable import OLEIC_ACID_PER_MMOL, UnsaponifiableMatter

    assert float(OLEIC_ACID_PER_MMOL) * 1000 == pytest.approx(Formula(OLEIC).mass, rel=2e-3)  # 282 vs 282.46
    naoh, acid_g, unsap_g = 0.02, 0.0030, 0.0500
    titre = acid_g / Formula(OLEIC).mass * 1000 / naoh
    inputs = {"sample_mass": 5.0, "residue_mass": unsap_g + acid_g, "sample_volume": titre, "titrant_concentration": naoh}
    result = UnsaponifiableMatter().calculate(inputs)
    # 0.282 against 0.28246 misplaces 0.16 % of the 3 mg acid: 5e-6 g, 1e-4 % of the oil
    assert float(result.value) == pytest.approx(1.000, abs=2e-4)


def test_moisture_of_oil_with_a_known_amount_of_water():
    # 0.555 mmol of water (M from molmass, 18.015 g/mol: 10.0 mg) added to 10.0 g of dry oil; ISO 662's
    # loss is the water, so the result is 10.0 mg in 10.01 g: 0.0999 %.
    from plugins.moisture import MoistureVolatileMatter

    water_g = 0.555 * Formula(WATER).mass / 1000
    inputs = {"sample_mass": 10.0 + water_g, "mass_loss": water_g, "oven_temperature": 103}
    result = MoistureVolatileMatter().calculate(inputs)
    assert float(result.value) == pytest.approx(100 * 0.555 * 18.015 / 1000 / (10.0 + 0.555 * 18.015 / 1000), rel=1e-4)


def test_insoluble_impurities_of_oil_with_a_known_calcium_soap():
    # ISO 663 counts calcium soaps as insoluble impurities (found). 0.0100 mmol of calcium stearate
    # (Ca(C18H35O2)2, 607.0 g/mol by molmass) in 20.0 g of clean oil stays on the filter: 6.07 mg, 0.0304 %.
    from plugins.insoluble_impurities import InsolubleImpurities

    residue = 0.0100 * Formula(CALCIUM_STEARATE).mass / 1000
    assert residue == pytest.approx(0.00607, abs=1e-5)
    result = InsolubleImpurities().calculate({"sample_mass": 20.0, "residue_mass": residue})
    assert float(result.value) == pytest.approx(0.0304, abs=1e-4)
    assert str(result.reported) == "0.030"


def test_osi_published_reading_entered_in_minutes():
    # AOCS Cd 12b-92 (found, and the AACC 58-54.02 summary): results state the temperature, "OSI 11.7 hr at
    # 110 degC". 702 min is 11.7 h by the definition of the hour; the unit carries the temperature.
    from plugins.oxidative_stability import OxidativeStabilityIndex

    result = OxidativeStabilityIndex().calculate({"induction_time": "702 min", "temperature": "110"})
    assert result.exact == Decimal("11.7")
    assert str(result.reported) == "11.7"
    assert result.unit == "h at 110 °C"


def test_slip_melting_point_from_fahrenheit_readings_is_the_exact_mean():
    # Three tubes read on a degF thermometer; by definition t/degC = (t/degF - 32) / 1.8 (NIST SP 811).
    # The mean is taken with the standard library's exact arithmetic on fractions.
    from fractions import Fraction
    from statistics import mean

    from plugins.slip_melting_point import SlipMeltingPoint

    readings_f = ["96.8", "97.2", "97.7"]
    expected = mean((Fraction(r) - 32) / Fraction("1.8") for r in readings_f)
    inputs = {f"tube_{n}": f"{r} degF" for n, r in enumerate(readings_f, start=1)}
    result = SlipMeltingPoint().calculate(inputs)
    assert float(result.value) == pytest.approx(float(expected), rel=1e-12)
    assert str(result.reported) == "36.2"  # 36.1666...: a palm oil, inside CXS 210's 33-39 degC (memory)
