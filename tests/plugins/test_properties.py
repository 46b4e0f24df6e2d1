"""Properties of the method plugins, tested with hypothesis (plugins/*.py).

The titration formulas (shared/references.md, found) are all of the form volume x c x factor / m, so:
the result is proportional to 1/m; a quantity in another unit gives the same result; back
titrations (SV, IV) cannot give a negative value; and no input at all can make validation
raise anything but MethodInputError (the API turns that into a 400 naming the field).
"""
from __future__ import annotations

import math
from decimal import Decimal

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from plugins.contract import MethodInputError
from plugins.registry import get_registry

PLUGINS = get_registry().all()
CODES = [plugin.code for plugin in PLUGINS]
# Titrations share their input names; other methods test these properties in their own module.
# Unsaponifiable matter titrates too, but its result is a corrected residue mass, not volume x c x factor / m:
# it has no titre blank, and tests/plugins/test_unsaponifiable.py checks its own properties.
TITRATIONS = [plugin for plugin in PLUGINS if {"titrant_concentration", "blank_volume"} <= {spec.name for spec in plugin.inputs}]
TITRATION_CODES = [plugin.code for plugin in TITRATIONS]
BACK_TITRATIONS = ["sv", "iv"]  # B - S: the sample consumes reagent
NO_DEADLINE = settings(deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])

# within each plugin's hard bounds, and at most half its maximum so that doubling stays inside
MASSES = (0.01, 100.0)
concentrations = st.floats(min_value=0.001, max_value=2.0)
volumes = st.floats(min_value=0.0, max_value=100.0)


def masses(plugin) -> st.SearchStrategy[float]:
    """Test portions the plugin accepts (its hard bounds on ``sample_mass``), up to half the largest."""
    spec = next(spec for spec in plugin.inputs if spec.name == "sample_mass")
    low = max(MASSES[0], spec.minimum or 0.0)
    high = min(MASSES[1], spec.maximum / 2 if spec.maximum is not None else MASSES[1])
    return st.floats(min_value=low, max_value=high)


@st.composite
def valid_inputs(draw, plugin):
    """Inputs the plugin must accept: titres on the right side of the blank, a portion within its bounds."""
    first, second = sorted((draw(volumes), draw(volumes)))
    inputs = {"sample_mass": draw(masses(plugin)), "titrant_concentration": draw(concentrations)}
    if plugin.code in BACK_TITRATIONS:
        inputs.update(sample_volume=first, blank_volume=second)
    else:
        inputs.update(sample_volume=second, blank_volume=first)
    if plugin.code == "ffa":
        inputs["fatty_acid_basis"] = draw(st.sampled_from(["oleic", "palmitic", "lauric"]))
    return inputs


def decimal_text(value: float, factor: str, unit: str) -> str:
    return f"{Decimal(repr(value)) * Decimal(factor)} {unit}"


@pytest.mark.parametrize("plugin", TITRATIONS, ids=TITRATION_CODES)
@NO_DEADLINE
@given(data=st.data())
def test_doubling_the_mass_halves_the_result(plugin, data):
    inputs = data.draw(valid_inputs(plugin))
    single = plugin.calculate(inputs).value
    double = plugin.calculate(dict(inputs, sample_mass=2 * inputs["sample_mass"])).value
    assert double == pytest.approx(single / 2, rel=1e-12, abs=1e-300)


@pytest.mark.parametrize("plugin", TITRATIONS, ids=TITRATION_CODES)
@NO_DEADLINE
@given(data=st.data())
def test_units_converted_by_hand_give_the_same_result(plugin, data):
    inputs = data.draw(valid_inputs(plugin))
    # g -> mg, mL -> L, mol/L -> mmol/L (SI prefixes), written with exact decimal arithmetic
    converted = dict(
        inputs,
        sample_mass=decimal_text(inputs["sample_mass"], "1000", "mg"),
        sample_volume=decimal_text(inputs["sample_volume"], "0.001", "L"),
        blank_volume=decimal_text(inputs["blank_volume"], "0.001", "L"),
        titrant_concentration=decimal_text(inputs["titrant_concentration"], "1000", "mmol/L"),
    )
    plain = plugin.calculate(inputs).value
    # pint converts with a float factor, so agreement is to the last bits, not bit for bit
    assert plugin.calculate(converted).value == pytest.approx(plain, rel=1e-9, abs=1e-12)


@pytest.mark.parametrize("code", BACK_TITRATIONS)
@NO_DEADLINE
@given(
    sample_mass=st.floats(allow_nan=True, allow_infinity=True),
    sample_volume=st.floats(allow_nan=True, allow_infinity=True),
    blank_volume=st.floats(allow_nan=True, allow_infinity=True),
    titrant_concentration=st.floats(allow_nan=True, allow_infinity=True),
)
def test_back_titrations_are_never_negative(code, sample_mass, sample_volume, blank_volume, titrant_concentration):
    inputs = {
        "sample_mass": sample_mass,
        "sample_volume": sample_volume,
        "blank_volume": blank_volume,
        "titrant_concentration": titrant_concentration,
    }
    try:
        result = get_registry().get(code).calculate(inputs)
    except MethodInputError:
        return  # refused, with a field named
    assert result.value >= 0
    assert math.isfinite(result.value)


junk = st.one_of(
    st.none(),
    st.booleans(),
    st.text(max_size=80),
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(min_value=-(10**400), max_value=10**400),
    st.decimals(allow_nan=True, allow_infinity=True),
    st.sampled_from(["2 mL", "1,5 g", "9**9**9 g", "1/0 g", "(", "g", "1e400 mg", "-2 g", "nan", "inf", "2 degC", "oleic"]),
    st.lists(st.integers(), max_size=3),
    st.dictionaries(st.text(max_size=5), st.integers(), max_size=2),
    st.binary(max_size=8),
)


@pytest.mark.parametrize("plugin", PLUGINS, ids=CODES)
@NO_DEADLINE
@given(data=st.data())
def test_junk_input_raises_only_method_input_error(plugin, data):
    names = [spec.name for spec in plugin.inputs]
    keys = st.one_of(st.sampled_from(names), st.text(max_size=12))
    raw = data.draw(st.dictionaries(keys, junk, max_size=len(names) + 2))
    try:
        plugin.calculate(raw)
    except MethodInputError as refused:
        assert refused.field and refused.reason
    else:
        # accepted junk must still be a full set of readable inputs
        assert set(raw) <= set(names)


@pytest.mark.parametrize("plugin", TITRATIONS, ids=TITRATION_CODES)
@NO_DEADLINE
@given(data=st.data())
def test_one_junk_value_among_valid_inputs_is_refused_by_its_name(plugin, data):
    inputs = data.draw(valid_inputs(plugin))
    name = data.draw(st.sampled_from(sorted(inputs)))
    value = data.draw(junk)
    try:
        plugin.validate(dict(inputs, **{name: value}))
    except MethodInputError as refused:
        # the bad field itself, or the titre it contradicts (sample against blank)
        assert refused.field in {name, "sample_volume"}


@pytest.mark.parametrize("plugin", PLUGINS, ids=CODES)
@NO_DEADLINE
@given(raw=junk)
def test_inputs_that_are_not_a_mapping_raise_only_method_input_error(plugin, raw):
    if isinstance(raw, dict):
        raw = list(raw)
    with pytest.raises(MethodInputError):
        plugin.validate(raw)
