"""The standardisation computation against QUAM example A2 and an independent molecular-mass library."""
from __future__ import annotations

from decimal import Decimal as D, localcontext

import pytest
from molmass import Formula

from analyses.traceability.concentration import molarity
from analyses.traceability.standardisation import (
    PRIMARY_STANDARDS,
    Replicate,
    StandardisationError,
    molar_mass,
    standardise,
    titrant_ratio,
    tolerance_as_u,
    weighing_by_difference_u,
)
from plugins.contract import exact_context
from plugins.units import UnitProblem


def test_quam_a2_concentration_and_uncertainty():
    # Eurachem/CITAC QUAM example A2 (found, ../shared/references.md): m_KHP 0.3888 g (u 0.00013),
    # P 1.0 (u 0.00029), M 204.2212 g/mol (u 0.0038), V_T 18.64 mL (u 0.013), repeatability 0.0005
    # -> c = 0.10214 mol/L, u = 0.00010 mol/L (relative 0.00097).
    outcome = standardise(
        [Replicate(D("0.3888"), D("18.64"))] * 2, blank=D(0), spread_limit=D("0.002"), ratio=D(1),
        purity=D("1.0"), purity_u=D("0.00029"), molar_mass=D("204.2212"), molar_mass_u=D("0.0038"),
        amount_u=D("0.00013"), titre_u=D("0.013"), repeatability_u=D("0.0005"),
    )
    assert round(outcome.concentration, 5) == D("0.10214")
    assert round(outcome.uncertainty, 5) == D("0.00010")
    assert round(outcome.relative_uncertainty, 5) == D("0.00097")
    assert outcome.agrees


def test_quam_a2_molar_mass_of_khp_and_its_uncertainty():
    # QUAM A2 (found): M_KHP = 204.2212 g/mol, u = 0.0038 g/mol from the IUPAC atomic weights
    mass, u = molar_mass(PRIMARY_STANDARDS["khp"])
    assert mass == D("204.2212")
    assert round(u, 4) == D("0.0038")


def test_quam_a2_component_uncertainties_from_calibrations():
    # QUAM A2 (found): balance linearity ±0.15 mg -> 0.09 mg (rectangular), weighed by difference
    # -> 0.13 mg; burette ±0.03 mL as a triangular distribution -> 0.012 mL
    assert round(weighing_by_difference_u(D("0.00009")), 5) == D("0.00013")
    assert round(tolerance_as_u(D("0.03")), 3) == D("0.012")


@pytest.mark.parametrize("code", ["khp", "k2cr2o7", "kio3", "na2co3", "tris"])
def test_molar_masses_agree_with_molmass(code):
    # molmass (PyPI, current IUPAC atomic weights) is independent of our table (IUPAC values
    # QUAM used): they agree within the expanded uncertainty U = 2u of our value (GUM k = 2)
    standard = PRIMARY_STANDARDS[code]
    mass, u = molar_mass(standard)
    assert abs(float(mass) - Formula(standard.formula).mass) <= 2 * float(u) + 1e-4
    assert {e: item.count for e, item in Formula(standard.formula).composition().items()} == dict(standard.composition)


@pytest.mark.parametrize(
    ("code", "equivalents"),
    # stoichiometry, computed (../shared/references.md): KHP 1:1 with KOH/NaOH; Cr2O7(2-) + 6 I- ->
    # 3 I2 -> 6 S2O3(2-); IO3- + 5 I- -> 3 I2 -> 6 S2O3(2-); CO3(2-) + 2 H+; TRIS + H+
    [("khp", 1), ("k2cr2o7", 6), ("kio3", 6), ("na2co3", 2), ("tris", 1)],
)
def test_equivalents_per_mole_of_each_primary_standard(code, equivalents):
    assert PRIMARY_STANDARDS[code].equivalents == equivalents


def test_thiosulfate_against_dichromate_matches_aocs_cd_8b_90_factor():
    # AOCS Cd 8b-90 (found): c = 20.394 x g K2Cr2O7 / mL; here 6000 / M_K2Cr2O7 per g and mL
    mass, _ = molar_mass(PRIMARY_STANDARDS["k2cr2o7"])
    outcome = standardise(
        [Replicate(D("0.2000"), D("40.00")), Replicate(D("0.2000"), D("40.00"))], blank=D(0),
        spread_limit=D("0.002"), ratio=titrant_ratio(6, 1), molar_mass=mass,
    )
    assert abs(outcome.concentration - D("20.394") * D("0.2000") / D("40.00")) < D("0.00001")


def test_khp_with_molmass_molar_mass():
    # c = 1000 m P / (M V) with molmass's M for KHP, by hand: 1000 x 0.5105 / (204.2215 x 25.00)
    expected = 1000 * 0.5105 / (Formula("C8H5KO4").mass * 25.00)
    mass, _ = molar_mass(PRIMARY_STANDARDS["khp"])
    outcome = standardise([Replicate(D("0.5105"), D("25.00"))] * 2, blank=D(0), spread_limit=D("0.002"), ratio=D(1), molar_mass=mass)
    assert abs(float(outcome.concentration) - expected) < 1e-6


def test_kio3_against_molmass():
    expected = 6000 * 0.1070 / (Formula("KIO3").mass * 50.00)
    mass, _ = molar_mass(PRIMARY_STANDARDS["kio3"])
    outcome = standardise([Replicate(D("0.1070"), D("50.00"))] * 2, blank=D(0), spread_limit=D("0.002"), ratio=D(6), molar_mass=mass)
    assert abs(float(outcome.concentration) - expected) < 1e-6


def test_standardised_acid_against_a_base_as_in_quam_a3():
    # QUAM A3 (found): c_HCl = c_NaOH x V_T2 / V_HCl = 0.10214 x 14.89 / 15 ~ 0.10139 mol/L
    outcome = standardise(
        [Replicate(D("15"), D("14.89"))] * 2, blank=D(0), spread_limit=D("0.002"), ratio=D(1),
        reference_concentration=D("0.10214"),
    )
    assert round(outcome.concentration, 5) == D("0.10139")


def test_blank_is_subtracted_and_spread_is_range_over_mean():
    outcome = standardise(
        [Replicate(D("0.4084"), D("20.05")), Replicate(D("0.4084"), D("20.15"))], blank=D("0.05"),
        spread_limit=D("0.002"), ratio=D(1), molar_mass=D("204.2212"),
    )
    c1, c2 = outcome.concentrations
    with localcontext(exact_context()):
        assert c1 == D(1000) * D("0.4084") / (D("204.2212") * D("20.00"))
        assert outcome.relative_spread == (c1 - c2) / ((c1 + c2) / 2)
    assert not outcome.agrees  # 0.5 % apart


def test_one_replicate_or_a_titre_below_the_blank_is_refused():
    with pytest.raises(StandardisationError):
        standardise([Replicate(D("0.4"), D("20"))], blank=D(0), spread_limit=D("0.002"), ratio=D(1), molar_mass=D(204))
    with pytest.raises(StandardisationError) as caught:
        standardise([Replicate(D("0.4"), D("0.01"))] * 2, blank=D("0.05"), spread_limit=D("0.002"), ratio=D(1), molar_mass=D(204))
    assert caught.value.field == "replicates.0.titre"


@pytest.mark.parametrize(
    ("written", "z", "expected"),
    [("0.1 N", 1, "0.1"), ("0.1 N", 2, "0.05"), ("0.2 eq/L", 2, "0.1"), ("0.5 mol/L", 1, "0.5"), ("100 mmol/L", 1, "0.1"), ("0.5 M", 1, "0.5")],
)
def test_nominal_concentration_and_normality_through_pint(written, z, expected):
    # normality N = c * z (IUPAC Gold Book, "normal"; from memory): 0.1 N H2SO4 is 0.05 mol/L
    assert molarity(written, z) == D(expected)


@pytest.mark.parametrize("written", ["3 g", "-0.1 N", "0 mol/L", "lots"])
def test_not_a_concentration(written):
    with pytest.raises(UnitProblem):
        molarity(written, 1)
