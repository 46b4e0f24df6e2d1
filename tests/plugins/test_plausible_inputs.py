"""Plausible ranges of the method inputs (plugins/contract.py ``QuantityInput``, plugins/titration.py).

Each quantity input may declare, beside its hard bounds (beyond them: refused), a plausible range
with its source (outside it: accepted, with a review warning naming the input). That every
registered plugin's ranges are consistent is checked in test_contract.py; here, the per-method
checks hold the declared ranges against the standards' test-portion masses, with each fact's tag
from shared/references.md.
"""
from __future__ import annotations

from decimal import Decimal

import pytest
from molmass import Formula

from plugins.contract import MethodInputError, MethodPlugin, QuantityInput, WorkedExample
from plugins.registry import get_registry, plugin_problem
from plugins.review_warnings import input_warnings, raw_input_warnings, review_warnings
from plugins.titration import TITRE_PLAUSIBLE_MAXIMUM

REGISTRY = get_registry()
BUILT_IN_TITRATIONS = ["av", "ffa", "iv", "pv", "sv"]


def spec_of(code: str, name: str) -> QuantityInput:
    return next(spec for spec in REGISTRY.get(code).inputs if spec.name == name)


# --- the contract, for every registered plugin ------------------------------------------


@pytest.mark.parametrize("code", BUILT_IN_TITRATIONS)
def test_every_built_in_titration_declares_plausible_portion_and_titres(code):
    for name in ("sample_mass", "sample_volume", "blank_volume"):
        assert spec_of(code, name).has_plausible_range(), name
    # titres: one filling of a 50 mL burette (common practice, no source)
    assert spec_of(code, "sample_volume").plausible_maximum == TITRE_PLAUSIBLE_MAXIMUM == 50.0


class _Plain(MethodPlugin):
    """A third-party plugin written before plausible ranges existed."""

    code = "plainmass"
    title = "Plain mass"
    version = "1"
    standards = ("none (test plugin)",)
    inputs = (QuantityInput("sample_mass", "g", "Test portion", minimum=0.0, minimum_inclusive=False),)
    result_unit = "g"
    decimals = 2
    examples = (WorkedExample({"sample_mass": 2.0}, expected=2.0, source="identity"),)

    def compute(self, values):
        return values["sample_mass"]


def test_a_plugin_without_plausible_ranges_loads_and_warns_of_nothing():
    assert plugin_problem(_Plain) is None
    plugin = _Plain()
    result = plugin.calculate({"sample_mass": "0.000001"})
    assert input_warnings(plugin, result.inputs) == []
    assert _Plain.inputs[0].describe()["plausible_minimum"] is None


@pytest.mark.parametrize(
    "spec, words",
    [
        (QuantityInput("sample_mass", "g", "x", minimum=1.0, plausible_minimum=0.5, plausible_maximum=2.0, plausible_source="s"), "below its hard minimum"),
        (QuantityInput("sample_mass", "g", "x", maximum=10.0, plausible_minimum=1.0, plausible_maximum=20.0, plausible_source="s"), "above its hard maximum"),
        (QuantityInput("sample_mass", "g", "x", plausible_minimum=3.0, plausible_maximum=2.0, plausible_source="s"), "above its plausible maximum"),
        (QuantityInput("sample_mass", "g", "x", plausible_minimum=1.0), "without its source"),
    ],
    ids=["below-hard", "above-hard", "inverted", "no-source"],
)
def test_a_plugin_whose_plausible_range_cannot_be_right_is_left_out_naming_the_input(spec, words):
    broken = type("Broken", (_Plain,), {"code": "brokenrange", "inputs": (spec,)})
    problem = plugin_problem(broken)
    assert problem is not None and "sample_mass" in problem and words in problem


# --- the range decided in decimal arithmetic ---------------------------------------------


def test_the_plausible_bounds_themselves_are_inside_and_the_warning_names_the_input():
    pv = REGISTRY.get("pv")
    mass = spec_of("pv", "sample_mass")
    # AOCS Cd 8b-90: 5.00 ± 0.05 g (references.md, found)
    assert (mass.plausible_minimum, mass.plausible_maximum) == (4.95, 5.05)
    for inside in ("4.95", "5.05", "5020 mg", "4950 mg"):
        assert mass.implausible(mass.parse_exact(inside)) is None, inside
    for outside, side in (("4.949", "below"), ("5.051", "above"), ("2.5", "below")):
        warning = mass.implausible(mass.parse_exact(outside))
        assert warning is not None and warning.startswith(f"sample_mass {Decimal(outside).normalize():f} g is {side}")
        assert "AOCS Cd 8b-90" in warning
    values = pv.validate({"sample_mass": "2.5", "sample_volume": "5", "blank_volume": "0", "titrant_concentration": "0.01"})
    assert [w.split(" ")[0] for w in input_warnings(pv, values)] == ["sample_mass"]


def test_a_titre_beyond_one_burette_filling_warns_and_the_calculation_says_so():
    av = REGISTRY.get("av")
    result = av.calculate({"sample_mass": "20", "sample_volume": "52.0", "blank_volume": "0.05", "titrant_concentration": "0.1"})
    warnings = review_warnings(av, result.inputs, result.judged)
    assert len(warnings) == 1 and warnings[0].startswith("sample_volume 52 mL is above its plausible maximum 50 mL")
    assert raw_input_warnings(av, {"sample_mass": "20000 mg", "sample_volume": "0.052 L"}) == warnings


def test_the_acid_value_of_the_issue_is_refused_at_the_hard_bound_naming_the_portion():
    # issue 13: 0.000001 g gave AV 1,963,500 mg KOH/g; ISO 660 Table 1's smallest portion is 0.1 g (from memory)
    av = REGISTRY.get("av")
    with pytest.raises(MethodInputError) as refused:
        av.calculate({"sample_mass": "0.000001", "sample_volume": "3.5", "titrant_concentration": "0.1"})
    assert refused.value.field == "sample_mass"
    assert "at least 0.01 g" in refused.value.reason and "ISO 660" in refused.value.reason
    with pytest.raises(MethodInputError) as refused:
        av.calculate({"sample_mass": "201", "sample_volume": "3.5", "titrant_concentration": "0.1"})
    assert refused.value.field == "sample_mass"


# --- each method's range against its standard's test portions ----------------------------


def _inside(spec: QuantityInput, grams: str) -> bool:
    return spec.implausible(Decimal(grams)) is None


def test_acid_value_portions_of_iso_660_table_1_are_plausible():
    # ISO 660 Table 1 / AOCS Cd 3d-63 test portions by expected AV: 20, 10, 2.5, 0.5, 0.1 g (from memory)
    mass = spec_of("av", "sample_mass")
    assert all(_inside(mass, grams) for grams in ("20", "10", "2.5", "0.5", "0.1"))
    assert not _inside(mass, "0.05") and not _inside(mass, "25")


def test_free_fatty_acid_portions_of_ca_5a_40_are_plausible():
    # AOCS Ca 5a-40 sample-mass table: 56.4, 28.2, 7.05, 3.525 g (references.md, found)
    mass = spec_of("ffa", "sample_mass")
    assert all(_inside(mass, grams) for grams in ("56.4", "28.2", "7.05", "3.525"))
    assert not _inside(mass, "2.0") and not _inside(mass, "100")


def test_iodine_value_portions_of_iso_3961_are_plausible():
    # ISO 3961 test mass by expected IV: 15, 10, 3, 1, 0.4, 0.2, 0.13, 0.10 g (references.md, memory)
    mass = spec_of("iv", "sample_mass")
    assert all(_inside(mass, grams) for grams in ("15", "10", "3", "1", "0.4", "0.2", "0.13", "0.10"))
    assert not _inside(mass, "0.05")


def test_saponification_portion_of_iso_3657_is_plausible():
    # ISO 3657: about 2 g (references.md, found); AOCS Cd 3-25: 4 to 5 g (from memory)
    mass = spec_of("sv", "sample_mass")
    assert _inside(mass, "2.0") and _inside(mass, "1.965") and _inside(mass, "5.0")
    assert not _inside(mass, "0.5")


def test_ca_5a_40_never_needs_more_than_one_50_ml_burette_filling():
    """Independent check of the 50 mL titre range against a found table: at the top of each FFA
    band of AOCS Ca 5a-40 (references.md, found), with its portion and titrant strength, the
    titre V = FFA% x m x 10 / (M(oleic acid) x c) stays within 50 mL. Molar mass from molmass."""
    oleic = Formula("C18H34O2").mass  # 282.46 g/mol
    bands = [("0.2", "56.4", "0.1"), ("1", "28.2", "0.1"), ("30", "7.05", "0.25"), ("50", "7.05", "0.25"), ("100", "3.525", "1.0")]
    titre = spec_of("ffa", "sample_volume")
    for percent, grams, strength in bands:
        volume = float(percent) * float(grams) * 10 / (oleic * float(strength))
        assert volume <= TITRE_PLAUSIBLE_MAXIMUM, (percent, volume)
        assert titre.implausible(Decimal(f"{volume:.2f}")) is None


def test_acid_value_portions_keep_the_titre_within_one_burette_filling():
    """Independent check: at the top of each ISO 660 Table 1 band (from memory), with its portion
    and 0.1 mol/L KOH (ISO 660:2020, found), V = AV x m / (M(KOH) x c) stays within 50 mL."""
    koh = Formula("KOH").mass  # 56.106 g/mol
    for acid_value, grams in ((1, 20), (4, 10), (15, 2.5), (75, 0.5)):
        assert acid_value * grams / (koh * 0.1) <= TITRE_PLAUSIBLE_MAXIMUM
