"""Arrhenius fit. Model ln k = ln A − Ea/(R T) and Q10 = exp(10 Ea / (R T (T + 10))) as in
the brief (textbook, common practice, no source); Ea of vegetable oils about 79–104 kJ/mol
and Q10 about 2–3 (references.md, "found"). R is CODATA via scipy.constants. Rate constants
are invented (synthetic, from a known Ea).
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats
from scipy.constants import R

from analyses.errors import InvalidInput
from analyses.stability.arrhenius import arrhenius_fit, arrhenius_shelf_life, kelvin, q10

EA = 90_000.0  # J/mol, inside the found 79–104 kJ/mol range
LN_A = 30.0
TEMPERATURES_C = np.array([40.0, 50.0, 60.0, 70.0])  # accelerated storage (invented plan)
SCATTER = np.array([0.03, -0.02, -0.03, 0.02])  # invented scatter on ln k


def rates(temperatures_c, scatter=0.0):
    return np.exp(LN_A - EA / (R * (temperatures_c + 273.15)) + scatter)


def test_celsius_to_kelvin():
    # SI: T/K = t/°C + 273.15.
    assert kelvin([25.0, -273.15]).tolist() == pytest.approx([298.15, 0.0])


def test_exact_rates_recover_the_activation_energy():
    fit = arrhenius_fit(TEMPERATURES_C, rates(TEMPERATURES_C), 25.0)
    assert fit.activation_energy == pytest.approx(EA, rel=1e-9)
    assert fit.ln_pre_exponential == pytest.approx(LN_A, rel=1e-9)
    assert fit.rate == pytest.approx(rates(np.array([25.0]))[0], rel=1e-9)


def test_scattered_rates_match_linregress_and_bracket_the_truth():
    k = rates(TEMPERATURES_C, SCATTER)
    fit = arrhenius_fit(TEMPERATURES_C, k, 25.0)
    x = 1.0 / (TEMPERATURES_C + 273.15)
    reference = stats.linregress(x, np.log(k))
    assert fit.activation_energy == pytest.approx(-reference.slope * R, rel=1e-9)
    assert fit.activation_energy_se == pytest.approx(reference.stderr * R, rel=1e-9)
    assert 79_000 < fit.activation_energy < 104_000
    # Confidence interval of the mean ln k at 25 °C, textbook OLS form (from memory).
    n, x0 = len(x), 1.0 / 298.15
    s = math.sqrt(np.sum((np.log(k) - reference.intercept - reference.slope * x) ** 2) / (n - 2))
    half = stats.t.ppf(0.975, n - 2) * s * math.sqrt(1 / n + (x0 - x.mean()) ** 2 / np.sum((x - x.mean()) ** 2))
    centre = reference.intercept + reference.slope * x0
    assert fit.rate_lower == pytest.approx(math.exp(centre - half), rel=1e-9)
    assert fit.rate_upper == pytest.approx(math.exp(centre + half), rel=1e-9)
    assert fit.rate_lower < rates(np.array([25.0]))[0] < fit.rate_upper


def test_q10_follows_the_formula():
    fit = arrhenius_fit(TEMPERATURES_C, rates(TEMPERATURES_C), 25.0)
    assert fit.q10 == pytest.approx(math.exp(10 * EA / (R * 298.15 * 308.15)), rel=1e-9)


@pytest.mark.parametrize("ea, celsius", [(79_000.0, 25.0), (90_000.0, 60.0), (104_000.0, 70.0)])
def test_q10_of_typical_oils_is_about_2_to_3(ea, celsius):
    # Ea 79–104 kJ/mol and Q10 2–3 (references.md, "found") agree at these temperatures; at
    # 20–25 °C the top of the Ea range gives Q10 near 4, so "about 2–3" is loose there.
    assert 2.0 <= q10(ea, celsius + 273.15) <= 3.0


def test_extrapolation_is_flagged_outside_the_studied_range():
    k = rates(TEMPERATURES_C, SCATTER)
    assert arrhenius_fit(TEMPERATURES_C, k, 25.0).extrapolated
    assert not arrhenius_fit(TEMPERATURES_C, k, 55.0).extrapolated


def test_shelf_life_for_zero_order_growth():
    fit = arrhenius_fit(TEMPERATURES_C, rates(TEMPERATURES_C, SCATTER), 25.0)
    predicted = arrhenius_shelf_life(fit, initial_value=1.0, limit=10.0)
    assert predicted.time == pytest.approx(9.0 / fit.rate)
    assert predicted.lower == pytest.approx(9.0 / fit.rate_upper)
    assert predicted.upper == pytest.approx(9.0 / fit.rate_lower)
    assert predicted.lower < predicted.time < predicted.upper
    assert predicted.extrapolated


def test_two_temperatures_give_no_interval():
    fit = arrhenius_fit([40.0, 60.0], rates(np.array([40.0, 60.0])), 25.0)
    assert fit.activation_energy == pytest.approx(EA, rel=1e-9)
    assert fit.activation_energy_se is None and fit.rate_lower is None
    predicted = arrhenius_shelf_life(fit, 1.0, 10.0)
    assert predicted.lower is None and predicted.upper is None


@pytest.mark.parametrize(
    "temperatures, k, field",
    [
        ([40.0, 60.0], [0.1, -0.2], "rate_constants"),
        ([40.0, 40.0], [0.1, 0.2], "temperatures_c"),
        ([40.0], [0.1], "temperatures_c"),
        ([40.0, 60.0, 70.0], [0.1, 0.2], "rate_constants"),
    ],
)
def test_bad_input_names_the_field(temperatures, k, field):
    with pytest.raises(InvalidInput) as caught:
        arrhenius_fit(temperatures, k, 25.0)
    assert field in caught.value.fields


def test_limit_below_the_start_is_refused():
    fit = arrhenius_fit(TEMPERATURES_C, rates(TEMPERATURES_C), 25.0)
    with pytest.raises(InvalidInput) as caught:
        arrhenius_shelf_life(fit, initial_value=5.0, limit=4.0)
    assert "limit" in caught.value.fields
