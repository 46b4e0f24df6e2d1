"""Free fatty acids (plugins/free_fatty_acids.py) against AOCS Ca 5a-40.

Formula (shared/references.md, found): %FFA = V x c x F / m, F = 28.2 oleic, 25.6 palmitic,
20.0 lauric; sample mass table 56.4 g / 28.2 g with 0.1 N, 7.05 g with 0.25 N, 3.525 g with 1.0 N.
Expected values are that formula worked by hand or molar masses from molmass.

Transcription guards: the hand-worked checks below restate the formula the plugin implements, so they
catch a slip in copying it, not a wrong formula. The independent checks (pure compounds by molmass)
are in tests/plugins/test_independent_checks.py; DEVELOPERS.md lists both kinds.
"""
from __future__ import annotations

from decimal import Decimal

import pytest
from molmass import Formula

from plugins.contract import MethodInputError
from plugins.free_fatty_acids import BASIS_FACTORS, FreeFattyAcids

FFA = FreeFattyAcids()
TYPICAL = {"sample_mass": 28.2, "sample_volume": 5.0, "titrant_concentration": 0.1, "fatty_acid_basis": "oleic"}


def test_published_basis_factors():
    # AOCS Ca 5a-40 (found)
    assert BASIS_FACTORS == {"oleic": Decimal("28.2"), "palmitic": Decimal("25.6"), "lauric": Decimal("20.0")}


@pytest.mark.parametrize(
    ("basis", "formula"),
    [("oleic", "C18H34O2"), ("palmitic", "C16H32O2"), ("lauric", "C12H24O2")],
)
def test_basis_factor_is_a_tenth_of_the_acids_molar_mass(basis, formula):
    # F = M / 10 (g/mol -> % with mL and mol/L); M from molmass (computed). ISO 660 (memory) writes 282, 256, 200.
    assert float(BASIS_FACTORS[basis]) == pytest.approx(Formula(formula).mass / 10, abs=0.1)


def test_hand_worked_example_oleic():
    # Ca 5a-40 (found): 28.2 g with 0.1 N, each mL is 0.1 % as oleic; 5.0 mL -> 5.0 x 0.1 x 28.2 / 28.2 = 0.50 %
    result = FFA.calculate(TYPICAL)
    assert result.value == pytest.approx(0.5, abs=1e-12)
    assert result.reported == Decimal("0.50")
    assert result.unit == "% as oleic"


@pytest.mark.parametrize(
    ("mass", "concentration", "percent_per_ml"),
    [
        (56.4, 0.1, 0.05),  # Ca 5a-40 table (found): 0-0.2 % FFA
        (28.2, 0.1, 0.1),  # 0.2-1 %
        (7.05, 0.25, 1.0),  # 1-30 %
        (3.525, 1.0, 8.0),  # 50-100 %
    ],
)
def test_sample_mass_table_gives_round_percent_per_ml(mass, concentration, percent_per_ml):
    # The Ca 5a-40 masses make each mL of titrant a round amount of FFA as oleic: c x 28.2 / m.
    one_ml = {"sample_mass": mass, "sample_volume": 1.0, "titrant_concentration": concentration}
    assert FFA.calculate(one_ml).value == pytest.approx(percent_per_ml, rel=1e-12)


@pytest.mark.parametrize(("basis", "factor"), [("oleic", 28.2), ("palmitic", 25.6), ("lauric", 20.0)])
def test_each_basis_uses_its_factor_and_names_it_in_the_unit(basis, factor):
    # Ca 5a-40 formula (found): 10.0 mL x 0.25 mol/L x F / 7.05 g
    result = FFA.calculate({"sample_mass": 7.05, "sample_volume": 10.0, "titrant_concentration": 0.25, "fatty_acid_basis": basis})
    assert result.value == pytest.approx(10.0 * 0.25 * factor / 7.05, rel=1e-12)
    assert result.unit == f"% as {basis}"


def test_basis_defaults_to_oleic_and_ignores_case():
    # Ca 5a-40: oleic unless stated (most oils)
    without = {k: v for k, v in TYPICAL.items() if k != "fatty_acid_basis"}
    assert FFA.calculate(without).unit == "% as oleic"
    assert FFA.calculate(dict(TYPICAL, fatty_acid_basis=" Lauric ")).unit == "% as lauric"


def test_blank_is_subtracted():
    # Ca 5a-40 formula with a blank: (5.1 - 0.1) mL x 0.1 x 28.2 / 28.2 g = 0.50 %
    assert FFA.calculate(dict(TYPICAL, sample_volume=5.1, blank_volume=0.1)).value == pytest.approx(0.5, abs=1e-12)


def test_olive_oil_limits_are_in_the_same_unit():
    # Codex CXS 33 (found): free acidity as oleic, extra virgin <= 0.8 g/100 g
    assert FFA.limits_for("olive_extra_virgin").maximum == 0.8
    assert FFA.calculate(dict(TYPICAL, sample_volume=8.0)).value == pytest.approx(0.8, abs=1e-12)


@pytest.mark.parametrize(
    ("change", "field"),
    [
        ({"sample_mass": 0.0}, "sample_mass"),
        ({"sample_mass": -28.2}, "sample_mass"),
        ({"sample_mass": "2 mL"}, "sample_mass"),
        ({"titrant_concentration": 0.0}, "titrant_concentration"),
        ({"titrant_concentration": -0.1}, "titrant_concentration"),
        ({"sample_volume": -5.0}, "sample_volume"),
        ({"blank_volume": -0.1}, "blank_volume"),
        ({"blank_volume": 5.5}, "sample_volume"),  # blank above the sample: a negative result
        ({"fatty_acid_basis": "stearic"}, "fatty_acid_basis"),
        ({"fatty_acid_basis": 28.2}, "fatty_acid_basis"),
        ({"fatty_acid_basis": True}, "fatty_acid_basis"),
        ({"basis": "oleic"}, "basis"),
    ],
)
def test_bad_input_is_refused_by_name(change, field):
    with pytest.raises(MethodInputError) as refused:
        FFA.calculate(dict(TYPICAL, **change))
    assert refused.value.field == field
    assert refused.value.reason


def test_unknown_basis_lists_the_choices():
    with pytest.raises(MethodInputError) as refused:
        FFA.calculate(dict(TYPICAL, fatty_acid_basis="stearic"))
    assert "oleic, palmitic, lauric" in refused.value.reason
