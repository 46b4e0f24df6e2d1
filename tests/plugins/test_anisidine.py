"""p-Anisidine value and TOTOX (plugins/anisidine.py) against AOCS Cd 18-90.

Definition (shared/references.md, found): AnV = 100 x absorbance at 350 nm, 1 cm cell, of 1.00 g in 100 mL.
Formula (shared/references.md, from memory): AnV = 25 x (1.2 x As - Ab) / m, m in g in 25 mL of iso-octane.
TOTOX (shared/references.md, found): TOTOX = 2 x PV + AnV.

Transcription guards: the hand-worked checks below restate the formula the plugin implements, so they
catch a slip in copying it, not a wrong formula. The independent checks (pure compounds by molmass)
are in tests/plugins/test_independent_checks.py; DEVELOPERS.md lists both kinds.
"""
from __future__ import annotations

from decimal import Decimal

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from plugins.anisidine import MAXIMUM_ABSORBANCE, AnisidineValue
from plugins.contract import MethodInputError
from plugins.peroxide import PeroxideValue
from plugins.registry import get_registry

ANV = AnisidineValue()
DEFINITION_CASE = {"sample_mass": 0.25, "absorbance_unreacted": 0.100, "absorbance_reacted": 0.300}

absorbances = st.floats(min_value=0.0, max_value=MAXIMUM_ABSORBANCE)
masses = st.floats(min_value=0.01, max_value=20.0)


@st.composite
def valid_inputs(draw):
    """Readings the method must accept: 1.2 x As at least Ab."""
    reacted = draw(absorbances)
    unreacted = draw(st.floats(min_value=0.0, max_value=min(1.2 * reacted, MAXIMUM_ABSORBANCE)))
    return {"sample_mass": draw(masses), "absorbance_unreacted": unreacted, "absorbance_reacted": reacted}


def test_definition_one_gram_in_100_ml():
    # Definition (found): 0.25 g in 25 mL is 1.00 g in 100 mL, so AnV = 100 x the absorbance the
    # reaction adds, 1.2 x 0.300 - 0.100 = 0.26 -> 26.0
    result = ANV.calculate(DEFINITION_CASE)
    assert result.value == pytest.approx(100 * (1.2 * 0.300 - 0.100), abs=1e-9)
    assert result.value == pytest.approx(26.0, abs=1e-9)
    assert result.reported == Decimal("26.0")
    assert result.unit == "(dimensionless)"


def test_first_worked_example_is_the_definition_case():
    # the plugin's example 1 must be the definition check (found), and say so
    example = ANV.examples[0]
    assert dict(example.inputs) == DEFINITION_CASE
    assert example.expected == 26.0
    assert "definition" in example.source and "found" in example.source


def test_formula_worked_by_hand():
    # Cd 18-90 formula (from memory): 25 x (1.2 x 0.300 - 0.080) / 2.0 g = 25 x 0.28 / 2.0 = 3.5
    result = ANV.calculate({"sample_mass": 2.0, "absorbance_unreacted": 0.080, "absorbance_reacted": 0.300})
    assert result.value == pytest.approx(3.5, abs=1e-9)
    assert result.reported == Decimal("3.5")
    assert "from memory" in ANV.examples[1].source


def test_another_reading_by_hand():
    # Cd 18-90 formula (from memory), invented readings: 25 x (1.2 x 0.520 - 0.180) / 1.000 g = 25 x 0.444 = 11.1
    result = ANV.calculate({"sample_mass": "1000 mg", "absorbance_unreacted": "0.180", "absorbance_reacted": 0.520})
    assert result.value == pytest.approx(11.1, abs=1e-9)
    assert result.reported == Decimal("11.1")


@pytest.mark.parametrize("mass", [0.25, 0.5, 1.0, 2.0, 4.0])
def test_result_scales_with_one_over_mass(mass):
    # Cd 18-90 formula (from memory): AnV is proportional to 1/m; at 0.25 g it is the definition case (found), 26.0
    result = ANV.calculate(dict(DEFINITION_CASE, sample_mass=mass))
    assert result.value == pytest.approx(26.0 * 0.25 / mass, rel=1e-12)


@settings(deadline=None)
@given(inputs=valid_inputs())
def test_doubling_the_mass_halves_the_result(inputs):
    # Cd 18-90 formula (from memory): AnV is proportional to 1/m
    single = ANV.calculate(inputs).value
    double = ANV.calculate(dict(inputs, sample_mass=2 * inputs["sample_mass"])).value
    assert double == pytest.approx(single / 2, rel=1e-12, abs=1e-300)
    assert single >= 0


def test_equal_corrected_readings_give_zero_not_a_refusal():
    # 1.2 x 0.250 = 0.300 = Ab: nothing added by the reaction, AnV 0.0 (formula, from memory)
    result = ANV.calculate({"sample_mass": 1.0, "absorbance_unreacted": 0.300, "absorbance_reacted": 0.250})
    assert result.value == pytest.approx(0.0, abs=1e-12)
    assert result.value >= 0


def test_absorbances_are_plain_numbers_or_written_dimensionless():
    as_text = {"sample_mass": "250 mg", "absorbance_unreacted": "0.100 dimensionless", "absorbance_reacted": " 0.3 "}
    assert ANV.calculate(as_text).value == pytest.approx(26.0, abs=1e-9)  # the definition case (found)


@pytest.mark.parametrize(
    ("change", "field"),
    [
        ({"sample_mass": 0.0}, "sample_mass"),
        ({"sample_mass": -0.25}, "sample_mass"),
        ({"sample_mass": "0.25 mL"}, "sample_mass"),
        ({"absorbance_unreacted": -0.01}, "absorbance_unreacted"),
        ({"absorbance_unreacted": 2.5}, "absorbance_unreacted"),  # past the linear range (common practice, no source)
        ({"absorbance_reacted": 2.01}, "absorbance_reacted"),
        ({"absorbance_reacted": "abc"}, "absorbance_reacted"),
        ({"absorbance_reacted": "inf"}, "absorbance_reacted"),
        ({"absorbance_reacted": True}, "absorbance_reacted"),
        # a % transmittance reading must not pass for an absorbance, nor any other unit pint calls dimensionless
        ({"absorbance_reacted": "45 percent"}, "absorbance_reacted"),
        ({"absorbance_unreacted": "100000 ppm"}, "absorbance_unreacted"),
        ({"absorbance_unreacted": "0.1 radian"}, "absorbance_unreacted"),
        ({"absorbance_unreacted": "0.1 g"}, "absorbance_unreacted"),
        # 1.2 x 0.050 = 0.060 < 0.100: a negative AnV, refused naming the reacted reading
        ({"absorbance_reacted": 0.050}, "absorbance_reacted"),
        ({"absorbance_unreacted": 0.400}, "absorbance_reacted"),
        ({"absorbance": 0.3}, "absorbance"),
    ],
)
def test_bad_input_is_refused_by_name(change, field):
    with pytest.raises(MethodInputError) as refused:
        ANV.calculate(dict(DEFINITION_CASE, **change))
    assert refused.value.field == field
    assert refused.value.reason


def test_negative_result_refusal_says_why():
    with pytest.raises(MethodInputError) as refused:
        ANV.calculate(dict(DEFINITION_CASE, absorbance_reacted=0.050))
    assert "negative" in refused.value.reason


@settings(deadline=None)
@given(
    inputs=valid_inputs(),
    name=st.sampled_from(sorted(DEFINITION_CASE)),
    value=st.one_of(st.none(), st.text(max_size=20), st.floats(allow_nan=True, allow_infinity=True), st.booleans()),
)
def test_one_junk_value_among_valid_inputs_is_refused_by_its_name(inputs, name, value):
    try:
        ANV.validate(dict(inputs, **{name: value}))
    except MethodInputError as refused:
        # the bad field itself, or the reacted reading it now contradicts
        assert refused.field in {name, "absorbance_reacted"}


def test_description_states_the_facts():
    described = ANV.describe()
    assert described["standards"] == ["AOCS Cd 18-90"]
    assert [spec["unit"] for spec in described["inputs"]] == ["g", "dimensionless", "dimensionless"]
    assert described["result_unit"] == "(dimensionless)"
    assert described["decimals"] == 1
    # CXS 210 appendix quality limits (found, shared/references.md): AV, PV and volatile matter, no AnV
    assert described["spec_limits"] == []
    assert "from memory" in described["repeatability"]["source"]
    for hazard in ("p-Anisidine", "iso-octane", "acetic acid", "safety data sheets"):
        assert hazard in described["cautions"]


def test_registered_under_its_code():
    # pyproject.toml registers it as an outside package would; the shared contract test then covers it
    registry = get_registry()
    assert isinstance(registry.get("anv"), AnisidineValue)
    assert all("anv" not in rejected.entry_point for rejected in registry.rejected)
