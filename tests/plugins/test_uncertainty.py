"""First-order uncertainty budgets (plugins/uncertainty.py, plugins/default_budget.py).

Published figures: Eurachem/CITAC QUAM examples A2 and A3 (shared/references.md, found).
The Monte Carlo check follows JCGM 101:2008 (GUM Supplement 1, found): draw the inputs, evaluate
the model, take the standard deviation of the outputs. Inputs are drawn as Gaussians with the
budget's u (the default budget states no other distribution).
"""
from __future__ import annotations

from collections.abc import Mapping
from decimal import Decimal
from typing import Any

import numpy as np
import pytest
from uncertainties import ufloat, wrap

from plugins.contract import MethodPlugin, QuantityInput
from plugins.default_budget import DefaultBudget
from plugins.registry import get_registry
from plugins.uncertainty import (
    REPEATABILITY,
    Budget,
    StandardUncertainty,
    mean_budget,
    repeatability_from_duplicates,
    result_budget,
    two_significant_up,
)

# Typical inputs per method (common practice, no source): IV 0.13 g of soybean oil (IV ~130) as
# ISO 3961 scales the test portion; SV 2 g, 25 mL of 0.5 mol/L KOH; AV 20 g of a refined oil;
# FFA 28.2 g (AOCS Ca 5a-40 table, 0.2-1 %); PV 5 g of a fresh refined oil with 0.002 mol/L
# thiosulfate; AnV 2 g in 25 mL.
TYPICAL = {
    "iv": {"sample_mass": "0.13", "sample_volume": "31.7", "blank_volume": "45.0", "titrant_concentration": "0.1"},
    "sv": {"sample_mass": "2.0", "sample_volume": "11.5", "blank_volume": "25.0", "titrant_concentration": "0.5"},
    "av": {"sample_mass": "20", "sample_volume": "1.30", "blank_volume": "0.05", "titrant_concentration": "0.1"},
    "ffa": {"sample_mass": "28.2", "sample_volume": "2.5", "titrant_concentration": "0.1"},
    "pv": {"sample_mass": "5.0", "sample_volume": "5.0", "blank_volume": "0.05", "titrant_concentration": "0.002"},
    "anv": {"sample_mass": "2.0", "absorbance_unreacted": "0.080", "absorbance_reacted": "0.300"},
    # Moisture 5 g losing 5 mg (0.10 %) at 103 degC (ISO 662); insoluble impurities 20 g leaving 5 mg;
    # soap 40 g with 0.01 mol/L HCl (AOCS Cc 17-95, found); unsaponifiable matter 5 g, a 52 mg residue
    # holding 0.5 mL of 0.02 mol/L NaOH of fatty acids; OSI 11.7 h at 110 degC (Cd 12b-92's own
    # example, found); slip melting point three tubes of a palm oil (common practice, no source).
    "mv": {"sample_mass": "5.0", "mass_loss": "0.0050", "oven_temperature": "103"},
    "insol": {"sample_mass": "20.0", "residue_mass": "0.0050"},
    "soap": {"sample_mass": "40.0", "sample_volume": "0.60", "blank_volume": "0.05", "titrant_concentration": "0.01"},
    "unsap": {
        "sample_mass": "5.0", "residue_mass": "0.0520", "blank_residue_mass": "0.0010", "sample_volume": "0.50",
        "titrant_concentration": "0.02",
    },
    "osi": {"induction_time": "11.7", "temperature": "110"},
    "smp": {"tube_1": "35.8", "tube_2": "36.0", "tube_3": "36.2"},
    # a soybean oil's GC run as area % (invented, inside the Codex ranges); the budget is that of the
    # headline (the calculated IV) through the area-% normalisation, each area with 1 % relative u
    # (common practice, no source); tests/plugins/test_fatty_acid_composition.py checks the components
    "fac": {"C16:0": "10.5", "C18:0": "4.0", "C18:1": "23.0", "C18:2": "54.0", "C18:3": "7.5", "C20:0": "0.4", "unidentified": "0.6"},
}


def _budget(code: str) -> tuple[MethodPlugin, dict[str, Any], Budget]:
    plugin = get_registry().get(code)
    values = plugin.validate(TYPICAL[code])
    return plugin, values, result_budget(plugin, values, DefaultBudget(), given=TYPICAL[code])


class _Published:
    """A budget source that hands out the u values a worked example publishes; the example's
    repeatability factor (relative) becomes the budget's repeatability term."""

    name = "published example"

    def __init__(self, u: Mapping[str, float], repeatability: float):
        self.u, self.relative_repeatability = u, repeatability

    def input_uncertainty(self, plugin, spec, value):
        return StandardUncertainty(self.u[spec.name], "QUAM")

    def repeatability(self, plugin, result):
        return StandardUncertainty(self.relative_repeatability * result, "QUAM repeatability factor")


def _q(name: str, unit: str = "dimensionless") -> QuantityInput:
    return QuantityInput(name, unit, name, minimum=0.0, minimum_inclusive=False)


class _QuamA2(MethodPlugin):
    """QUAM A2: c_NaOH = 1000 m_KHP P_KHP / (M_KHP V_T)."""

    code, title, version, standards = "quam_a2", "QUAM A2", "1", ("QUAM A2",)
    inputs = (_q("m_khp", "g"), _q("p_khp"), _q("m_molar"), _q("v_t", "mL"))
    result_unit, decimals = "mol/L", 5

    def compute(self, v):
        return 1000 * v["m_khp"] * v["p_khp"] / (v["m_molar"] * v["v_t"])


class _QuamA3(MethodPlugin):
    """QUAM A3: c_HCl = 1000 m_KHP P_KHP V_T2 / (V_T1 M_KHP V_HCl)."""

    code, title, version, standards = "quam_a3", "QUAM A3", "1", ("QUAM A3",)
    inputs = (_q("m_khp", "g"), _q("p_khp"), _q("v_t2", "mL"), _q("v_t1", "mL"), _q("m_molar"), _q("v_hcl", "mL"))
    result_unit, decimals = "mol/L", 5

    def compute(self, v):
        return 1000 * v["m_khp"] * v["p_khp"] * v["v_t2"] / (v["v_t1"] * v["m_molar"] * v["v_hcl"])


# value, u (shared/references.md, found); the repeatability factor is a relative u of the result
QUAM_A2 = {
    "m_khp": ("0.3888", 0.00013), "p_khp": ("1.0", 0.00029), "m_molar": ("204.2212", 0.0038), "v_t": ("18.64", 0.013),
}
QUAM_A3 = {
    "m_khp": ("0.3888", 0.00013), "p_khp": ("1.0", 0.00029), "v_t2": ("14.89", 0.015),
    "v_t1": ("18.64", 0.016), "m_molar": ("204.2212", 0.0038), "v_hcl": ("15", 0.011),
}


def _quam(plugin_class, example, repeatability) -> Budget:
    plugin = plugin_class()
    values = plugin.validate({name: v for name, (v, _) in example.items()})
    return result_budget(plugin, values, _Published({name: s for name, (_, s) in example.items()}, repeatability))


def test_quam_a2_reproduces_its_published_figures():
    budget = _quam(_QuamA2, QUAM_A2, 0.0005)
    # QUAM prints c and u to 5 decimal places: c = 0.10214 mol/L, u = 0.00010 mol/L, relative 0.00097
    assert round(budget.value, 5) == 0.10214
    assert round(budget.combined, 5) == 0.00010
    assert round(budget.combined / budget.value, 5) == 0.00097
    assert budget.expanded == two_significant_up(2 * budget.combined)


# QUAM A3.4's influence quantities as the GTC documentation restates them (MSLNZ/GTC
# docs/API/CITAC_A3.rst, found): burette calibration +-0.03 mL triangular, pipette +-0.02 mL
# triangular, temperature +-4 degC x 2.1e-4 /degC rectangular, balance linearity 0.15 mg
# rectangular twice, purity 0.0005 rectangular. The summary table's u values are these, rounded.
_TRI, _RECT = 6 ** 0.5, 3 ** 0.5
QUAM_A3_COMPONENTS = {
    **QUAM_A3,
    "m_khp": ("0.3888", 2 ** 0.5 * 0.15e-3 / _RECT),
    "p_khp": ("1.0", 0.0005 / _RECT),
    "v_t2": ("14.89", ((0.03 / _TRI) ** 2 + (15 * 2.1e-4 * 4 / _RECT) ** 2) ** 0.5),
    "v_t1": ("18.64", ((0.03 / _TRI) ** 2 + (19 * 2.1e-4 * 4 / _RECT) ** 2) ** 0.5),
    "v_hcl": ("15", ((0.02 / _TRI) ** 2 + (15 * 2.1e-4 * 4 / _RECT) ** 2) ** 0.5),
}


def test_quam_a3_reproduces_its_published_figures_as_the_mean_of_three():
    """QUAM A3's final u (0.00016 mol/L) takes the repeatability of the whole procedure as
    0.001 / sqrt(3) (QUAM A3.6, as reproduced in the GTC documentation, found), i.e. a mean of
    three runs with the other inputs shared by them: exactly what mean_budget does."""
    single = _quam(_QuamA3, QUAM_A3_COMPONENTS, 0.001)
    assert round(single.value, 5) == 0.10139
    assert round(single.combined, 5) == 0.00018  # GTC docs: 0.0001843 for one run (found)
    mean = mean_budget([single, single, single])
    assert round(mean.value, 5) == 0.10139
    assert round(mean.combined, 5) == 0.00016
    # GTC docs (found): with the repeatability reduced, V_T2, V_T1 and V_HCl lead, in that order
    order = [t.name for t in sorted(mean.terms, key=lambda t: -t.contribution)]
    assert order[:3] == ["v_t2", "v_t1", "v_hcl"]


def test_quam_a3_summary_table_values_land_near_the_published_u():
    """With the summary table's rounded u values (shared/references.md) the mean of three gives
    0.000170, 6 % above the published 0.00016: the rounding of the table, not the method."""
    mean = mean_budget([_quam(_QuamA3, QUAM_A3, 0.001)] * 3)
    assert mean.combined == pytest.approx(0.00016, rel=0.07)


@pytest.mark.parametrize("code", sorted(TYPICAL))
def test_the_contract_sensitivities_agree_with_the_uncertainties_package(code):
    """The library differentiates a float version of compute() by itself; our central
    differences on the exact compute() must give the same coefficients and u_c."""
    plugin, values, budget = _budget(code)
    names = [t.name for t in budget.terms if t.name != REPEATABILITY]

    def as_float(*xs: float) -> float:
        return float(plugin.compute({**values, **{n: Decimal(repr(x)) for n, x in zip(names, xs)}}))

    variables = [ufloat(float(values[n]), t.u, tag=n) for n, t in zip(names, budget.terms)]
    y = wrap(as_float)(*variables)
    by_library = {v.tag: abs(c) for v, c in y.error_components().items()}
    for term in budget.terms:
        if term.name != REPEATABILITY:
            assert term.contribution == pytest.approx(by_library[term.name], rel=1e-5)
    repeatability = [t.contribution for t in budget.terms if t.name == REPEATABILITY]
    assert budget.combined == pytest.approx((y.std_dev ** 2 + sum(r * r for r in repeatability)) ** 0.5, rel=1e-6)


@pytest.mark.parametrize("code", sorted(TYPICAL))
def test_monte_carlo_per_jcgm_101_agrees_within_five_percent(code):
    plugin, values, budget = _budget(code)
    rng = np.random.default_rng(20081)
    draws = 20_000  # the standard error of a standard deviation from N draws is about u / sqrt(2N): 0.5 %
    inputs = [t for t in budget.terms if t.name != REPEATABILITY]
    samples = {t.name: rng.normal(t.value, t.u, draws) for t in inputs}
    outputs = np.array(
        [float(plugin.compute({**values, **{t.name: Decimal(float(samples[t.name][i])) for t in inputs}})) for i in range(draws)]
    )
    for term in budget.terms:
        if term.name == REPEATABILITY:
            outputs = outputs + rng.normal(0.0, term.u, draws)
    assert np.std(outputs, ddof=1) == pytest.approx(budget.combined, rel=0.05)


# The term a chemist expects to dominate, among the measured inputs, at the typical inputs above.
EXPECTED_DOMINANT = {
    # 0.13 g on a 0.1 mg balance is 0.15 % relative; the 13 mL titre difference and the 0.1 %
    # titrant standardisation are each about 0.1 % (common practice, no source)
    "iv": "sample_mass",
    # 2 g makes the mass negligible; the 0.5 mol/L HCl's standardisation (0.1 %) edges out each
    # titre (0.013 mL on 13.5 mL) (common practice, no source)
    "sv": "titrant_concentration",
    # a 1.3 mL titre on 20 g: reading the small titre is everything (common practice, no source)
    "av": "sample_volume",
    "ffa": "sample_volume",
    "pv": "sample_volume",
    # AnV takes 1.2 x the reacted absorbance: the larger coefficient (common practice, no source)
    "anv": "absorbance_reacted",
    # 5 mg lost from 5 g: 0.2 mg on the loss is 4 %, on the portion 0.004 % (common practice, no source);
    # the oven temperature is recorded, not in the formula, and weighs nothing
    "mv": "mass_loss",
    "insol": "residue_mass",
    # 0.55 mL net on a 5 mL microburette: the titre's reading (the blank ties with it; the titre is named first)
    "soap": "sample_volume",
    # the 52 mg residue's weighing (tied with the blank residue's) outweighs the fatty-acid titre, which
    # corrects by only 2.8 mg (common practice, no source)
    "unsap": "residue_mass",
    # a direct reading: its own end point is the only term
    "osi": "induction_time",
    # three tubes weigh equally (1/3 each); the first is named
    "smp": "tube_1",
}
# Methods whose sources gave no precision figure that was found or recalled: their budgets have no
# repeatability term until the laboratory's own duplicates supply one (analyses/services/uncertainty.py).
WITHOUT_REPEATABILITY = {"mv", "insol", "soap", "unsap", "osi", "smp"}


@pytest.mark.parametrize("code", sorted(EXPECTED_DOMINANT))
def test_each_method_has_the_dominant_input_a_chemist_expects(code):
    _, _, budget = _budget(code)
    terms = {t.name for t in budget.terms}
    dominant = budget.dominant(inputs_only=True).name
    assert dominant == EXPECTED_DOMINANT[code], [(t.name, t.contribution) for t in budget.terms]
    if code in WITHOUT_REPEATABILITY:
        assert REPEATABILITY not in terms
        assert budget.dominant().name == EXPECTED_DOMINANT[code]
    else:
        # The duplicates' scatter (the plugins' repeatability) outweighs every calibration term in routine
        # oil titrations (common practice, no source).
        assert REPEATABILITY in terms and budget.dominant().name == REPEATABILITY
    assert sum(t.share for t in budget.terms) == pytest.approx(1.0)


def test_iv_sensitivity_to_the_mass_is_minus_iv_over_m():
    plugin, values, budget = _budget("iv")
    mass = next(t for t in budget.terms if t.name == "sample_mass")
    assert mass.sensitivity == pytest.approx(-budget.value / 0.13, rel=1e-10)


def test_a_blank_not_entered_has_no_term():
    plugin, values, budget = _budget("ffa")  # FFA with no blank: the default 0 was not measured
    assert "blank_volume" not in {t.name for t in budget.terms}
    assert "blank_volume" in plugin.sensitivities(values)


def test_a_titre_equal_to_its_blank_takes_a_one_sided_difference():
    plugin = get_registry().get("av")
    values = plugin.validate({"sample_mass": "20", "sample_volume": "0.05", "blank_volume": "0.05", "titrant_concentration": "0.1"})
    assert plugin.sensitivities(values)["sample_volume"] == pytest.approx(0.2805)


def test_the_mean_of_replicates_keeps_shared_inputs_and_divides_repeatability():
    plugin = get_registry().get("iv")
    source = DefaultBudget()
    first = result_budget(plugin, plugin.validate(TYPICAL["iv"]), source)
    second = result_budget(plugin, plugin.validate({**TYPICAL["iv"], "sample_volume": "31.5"}), source)
    mean = mean_budget([first, second.as_dict()])
    assert mean.replicates == 2
    assert mean.value == pytest.approx((first.value + second.value) / 2)
    rep = {b: next(t for t in b.terms if t.name == REPEATABILITY) for b in (first, second, mean)}
    assert rep[mean].u == pytest.approx((rep[first].u + rep[second].u) / 2 / 2 ** 0.5)
    mass = [next(t for t in b.terms if t.name == "sample_mass") for b in (first, second, mean)]
    assert mass[2].sensitivity == pytest.approx((mass[0].sensitivity + mass[1].sensitivity) / 2)
    assert mean.combined < max(first.combined, second.combined)


def test_lab_duplicates_give_the_pooled_repeatability():
    # s_r = sqrt(sum d^2 / 2N): d = 0.2, 0.4 -> sqrt(0.2 / 4) (common practice, no source)
    assert repeatability_from_duplicates([(10.0, 10.2), (11.0, 10.6)], relative=False) == pytest.approx(0.05 ** 0.5)
    plugin = get_registry().get("iv")
    source = DefaultBudget(lab_repeatability=(0.002, True, "the lab's duplicates"))
    budget = result_budget(plugin, plugin.validate(TYPICAL["iv"]), source)
    rep = next(t for t in budget.terms if t.name == REPEATABILITY)
    assert rep.u == pytest.approx(0.002 * budget.value) and rep.basis == "the lab's duplicates"


@pytest.mark.parametrize("number, written", [(0.55, "0.55"), (1.1027, "1.2"), (3 * 0.1, "0.30"), (0.0, "0")])
def test_expanded_uncertainty_is_two_significant_digits_rounded_up(number, written):
    assert str(two_significant_up(number)) == written


def test_combine_gives_what_the_uncertainties_package_propagates():
    """u_c and each |c| u by the ``uncertainties`` package's own first-order propagation of
    y = sum(c_i dx_i) with independent dx_i (a c = 0 term included)."""
    from plugins.uncertainty import _Term, combine

    terms = [_Term("a", "g", 20.0, 0.0002, -0.0651, ""), _Term("b", "mL", 1.3, 0.0093, 2.8055, ""),
             _Term("c", "mL", 0.05, 0.0093, -2.8055, ""), _Term("d", "mL", 0.0, 0.01, 0.0, ""),
             _Term(REPEATABILITY, "mg/g", 0.0, 0.0214, 1.0, "")]
    deviations = [ufloat(0.0, t.u, tag=t.name) for t in terms]
    y = sum((t.sensitivity * d for t, d in zip(terms, deviations)), start=0.0)
    by_library = y.error_components()

    combined, contributions = combine(terms)

    assert combined == pytest.approx(y.std_dev, rel=1e-12)
    assert contributions == pytest.approx([abs(by_library.get(d, 0.0)) for d in deviations], rel=1e-12)


def test_a_budget_without_terms_is_refused_not_zero():
    """No input with an uncertainty and no repeatability: there is no budget, not u_c = 0."""
    from plugins.uncertainty import combine

    with pytest.raises(ValueError, match="at least one term"):
        combine([])
