"""Zero- and first-order kinetics fits, cross-checked against scipy.stats.linregress.

The kinetic models (C = C0 + k t; ln C = ln C0 + k t) are textbook forms (common
practice, no source); the data are invented.
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from analyses.errors import InvalidInput
from analyses.stability.kinetics import kinetics_fit

TIMES = np.array([0.0, 1.0, 2.0, 3.0, 4.0, 6.0, 8.0])
NOISE = np.array([0.02, -0.03, 0.01, 0.03, -0.02, 0.01, -0.02])


def test_zero_order_fit_matches_linregress():
    values = 1.5 + 0.8 * TIMES + NOISE
    result = kinetics_fit(TIMES, values)
    reference = stats.linregress(TIMES, values)
    fit = result.zero_order
    assert fit.slope == pytest.approx(reference.slope, rel=1e-10)
    assert fit.intercept == pytest.approx(reference.intercept, rel=1e-10)
    assert fit.slope_se == pytest.approx(reference.stderr, rel=1e-10)
    assert fit.intercept_se == pytest.approx(reference.intercept_stderr, rel=1e-10)
    assert fit.r_squared == pytest.approx(reference.rvalue**2, rel=1e-10)
    residuals = values - (reference.intercept + reference.slope * TIMES)
    assert fit.residual_se == pytest.approx(np.sqrt(np.sum(residuals**2) / (len(TIMES) - 2)), rel=1e-10)
    assert fit.n == 7 and fit.initial_value == fit.intercept
    assert result.better == "zero"


def test_first_order_fit_matches_linregress_on_logs():
    values = 2.0 * np.exp(0.25 * TIMES) * (1 + NOISE / 10)
    result = kinetics_fit(TIMES, values)
    reference = stats.linregress(TIMES, np.log(values))
    fit = result.first_order
    assert fit.slope == pytest.approx(reference.slope, rel=1e-10)
    assert fit.intercept == pytest.approx(reference.intercept, rel=1e-10)
    assert fit.initial_value == pytest.approx(np.exp(reference.intercept), rel=1e-10)
    predicted = np.exp(reference.intercept + reference.slope * TIMES)
    assert fit.sse_original == pytest.approx(np.sum((values - predicted) ** 2), rel=1e-10)
    assert result.better == "first"
    assert fit.r_squared_original > result.zero_order.r_squared_original


def test_values_at_or_below_zero_allow_only_zero_order():
    result = kinetics_fit(TIMES, -1.0 + 0.5 * TIMES + NOISE)
    assert result.first_order is None and result.better == "zero"


def test_too_few_points_are_refused():
    with pytest.raises(InvalidInput) as caught:
        kinetics_fit([0.0, 1.0], [1.0, 2.0])
    assert "times" in caught.value.fields
