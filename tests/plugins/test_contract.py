"""The method plugin contract (plugins/contract.py), checked once for every registered plugin.

The per-method modules check each formula against its standard; this module checks that
every plugin keeps the same promises, so a new plugin is covered the day it registers.
"""
from __future__ import annotations

import json
from decimal import Decimal

import pint
import pytest

from plugins.contract import ChoiceInput, MethodInputError, MethodPlugin, QuantityInput
from plugins.registry import get_registry

PLUGINS = get_registry().all()
CODES = [plugin.code for plugin in PLUGINS]
EXAMPLES = [
    pytest.param(plugin, number, example, id=f"{plugin.code}-example{number}")
    for plugin in PLUGINS
    for number, example in enumerate(plugin.examples, start=1)
]
QUANTITIES = [
    pytest.param(plugin, spec, id=f"{plugin.code}-{spec.name}")
    for plugin in PLUGINS
    for spec in plugin.inputs
    if isinstance(spec, QuantityInput)
]
REQUIRED_INPUTS = [
    pytest.param(plugin, spec.name, id=f"{plugin.code}-{spec.name}")
    for plugin in PLUGINS
    for spec in plugin.inputs
    if spec.required and spec.default is None
]

# An independent pint registry: the units must be pint's, not something our wrapper invents.
PINT = pint.UnitRegistry()

# The same quantity in another unit: (unit, factor from the input's own unit).
OTHER_UNIT = {"g": ("mg", Decimal(1000)), "mL": ("L", Decimal("0.001")), "mol/L": ("mmol/L", Decimal(1000)),
              # an absorbance has no other unit (percent would pass for % transmittance): its own, written out
              "dimensionless": ("dimensionless", Decimal(1)),
              "h": ("min", Decimal(60))}
# Offset units: (unit, offset added to the value in the input's own unit). 0 degC = 273.15 K (SI definition).
OTHER_OFFSET_UNIT = {"degC": ("K", Decimal("273.15"))}


def in_other_unit(spec: QuantityInput, value: float) -> str:
    """``value`` (in spec.unit) written as a string in another unit, with exact decimal arithmetic."""
    if spec.unit in OTHER_OFFSET_UNIT:
        other, offset = OTHER_OFFSET_UNIT[spec.unit]
        return f"{Decimal(repr(float(value))) + offset} {other}"
    if spec.unit not in OTHER_UNIT:
        pytest.fail(f"no alternative unit for {spec.unit!r}; add one to OTHER_UNIT")
    other, factor = OTHER_UNIT[spec.unit]
    return f"{Decimal(repr(float(value))) * factor} {other}"


def test_registry_holds_exactly_the_builtins():
    registry = get_registry()
    assert registry.codes() == ["anv", "av", "fac", "ffa", "insol", "iv", "mv", "osi", "pv", "smp", "soap", "sv", "totox", "unsap"]
    assert registry.rejected == []


@pytest.mark.parametrize("plugin", PLUGINS, ids=CODES)
def test_plugin_declares_its_static_facts(plugin):
    assert isinstance(plugin, MethodPlugin)
    assert isinstance(plugin.code, str) and plugin.code.isidentifier() and plugin.code == plugin.code.lower()
    assert isinstance(plugin.title, str) and plugin.title
    assert isinstance(plugin.version, str) and plugin.version
    assert isinstance(plugin.standards, tuple) and plugin.standards
    assert all(isinstance(standard, str) and standard for standard in plugin.standards)
    assert plugin.inputs and all(isinstance(spec, (QuantityInput, ChoiceInput)) for spec in plugin.inputs)
    assert isinstance(plugin.result_unit, str) and plugin.result_unit
    assert isinstance(plugin.decimals, int) and plugin.decimals >= 0


@pytest.mark.parametrize("plugin", PLUGINS, ids=CODES)
def test_every_quantity_unit_parses_in_pint(plugin):
    for spec in plugin.inputs:
        if isinstance(spec, QuantityInput):
            unit = PINT.Unit(spec.unit)  # raises if pint does not know it
            # only a deliberate "dimensionless" (an absorbance), never a unit that pint happens to read so
            assert spec.unit == "dimensionless" or not unit.dimensionless, f"{spec.name} has a dimensionless unit"


@pytest.mark.parametrize("plugin", PLUGINS, ids=CODES)
def test_titration_inputs_have_the_dimension_their_name_says(plugin):
    # The shared names of plugins/titration.py mean the same quantity in every method.
    expected = {
        "sample_mass": PINT.Unit("g").dimensionality,
        "sample_volume": PINT.Unit("mL").dimensionality,
        "blank_volume": PINT.Unit("mL").dimensionality,
        "titrant_concentration": PINT.Unit("mol/L").dimensionality,
    }
    for spec in plugin.inputs:
        if spec.name in expected:
            assert PINT.Unit(spec.unit).dimensionality == expected[spec.name], spec.name


@pytest.mark.parametrize("plugin", PLUGINS, ids=CODES)
def test_plugin_ships_worked_examples_with_sources(plugin):
    assert plugin.examples
    assert all(example.source for example in plugin.examples)


@pytest.mark.parametrize(("plugin", "number", "example"), EXAMPLES)
def test_worked_example_reproduces_within_tolerance(plugin, number, example):
    # The expectation is the example's own (its source is named in the plugin); the
    # per-method modules check the same formulas against independent numbers.
    result = plugin.calculate(example.inputs)
    if example.component:  # a profile plugin's example names the component it checks
        result = result.component(example.component)
    assert result.value == pytest.approx(example.expected, rel=0, abs=example.tolerance)


@pytest.mark.parametrize(("plugin", "number", "example"), EXAMPLES)
def test_same_quantity_in_another_unit_gives_the_same_result(plugin, number, example):
    specs = {spec.name: spec for spec in plugin.inputs}
    converted = {
        name: in_other_unit(specs[name], value) if isinstance(specs[name], QuantityInput) else value
        for name, value in example.inputs.items()
    }
    assert converted != dict(example.inputs)
    bare = plugin.calculate(example.inputs)
    other = plugin.calculate(converted)
    # pint multiplies by a float factor, so the last binary digit may differ; the reported value may not.
    assert other.value == pytest.approx(bare.value, rel=1e-12, abs=1e-15)
    assert other.reported == bare.reported
    assert other.unit == bare.unit
    assert {n: c.reported for n, c in other.components.items()} == {n: c.reported for n, c in bare.components.items()}


@pytest.mark.parametrize("plugin", PLUGINS, ids=CODES)
def test_describe_is_json_serialisable(plugin):
    description = plugin.describe()
    assert json.loads(json.dumps(description)) == description
    assert description["code"] == plugin.code
    assert description["result_unit"] == plugin.result_unit
    assert [spec["name"] for spec in description["inputs"]] == [spec.name for spec in plugin.inputs]


@pytest.mark.parametrize("plugin", PLUGINS, ids=CODES)
def test_every_spec_limit_names_a_source(plugin):
    for limit in plugin.spec_limits:
        assert limit.source.strip(), limit
        assert limit.evidence in {"found", "from memory"}, limit
        assert limit.minimum is not None or limit.maximum is not None, limit
    if plugin.repeatability is not None:
        assert plugin.repeatability.source.strip()


@pytest.mark.parametrize(("plugin", "name"), REQUIRED_INPUTS)
@pytest.mark.parametrize("absent", ["missing", None, "", "   "])
def test_missing_required_input_is_refused_by_name(plugin, name, absent):
    inputs = dict(plugin.examples[0].inputs)
    inputs.setdefault(name, 1.0)
    if absent == "missing":
        del inputs[name]
    else:
        inputs[name] = absent
    with pytest.raises(MethodInputError) as refused:
        plugin.calculate(inputs)
    assert refused.value.field == name
    assert "required" in refused.value.reason


@pytest.mark.parametrize("plugin", PLUGINS, ids=CODES)
def test_unknown_input_name_is_refused_by_name(plugin):
    inputs = dict(plugin.examples[0].inputs, sample_weight=2.0)
    with pytest.raises(MethodInputError) as refused:
        plugin.calculate(inputs)
    assert refused.value.field == "sample_weight"


@pytest.mark.parametrize("plugin", PLUGINS, ids=CODES)
def test_inputs_that_are_not_a_mapping_are_refused(plugin):
    with pytest.raises(MethodInputError) as refused:
        plugin.calculate([("sample_mass", 2.0)])
    assert refused.value.field == "inputs"


@pytest.mark.parametrize("plugin, spec", QUANTITIES)
def test_a_declared_plausible_range_has_a_source_and_lies_within_the_hard_bounds(plugin, spec):
    assert spec.plausible_range_problem() is None
    if not spec.has_plausible_range():
        return  # optional: a plugin without them still loads (test_plausible_inputs.py)
    assert spec.plausible_source.strip()
    low, high = spec.plausible_minimum, spec.plausible_maximum
    if low is not None and high is not None:
        assert low <= high
    if spec.minimum is not None and low is not None:
        assert low >= spec.minimum
    if spec.maximum is not None:
        assert high is not None and high <= spec.maximum
    described = spec.describe()
    assert (described["plausible_minimum"], described["plausible_maximum"]) == (low, high)
    assert described["plausible_source"] == spec.plausible_source
