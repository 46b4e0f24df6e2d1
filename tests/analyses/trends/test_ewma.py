"""EWMA chart, checked against the NIST/SEMATECH e-Handbook formulas (references.md, "found"):
z_t = λ x_t + (1 − λ) z_(t−1), z_0 = μ0; σ_z² = σ² λ/(2 − λ) [1 − (1 − λ)^(2t)]; limits μ0 ± L σ_z.
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from analyses.errors import InvalidInput
from analyses.trends.ewma import ewma_chart

VALUES = [52.0, 47.0, 53.0, 49.3, 50.1, 47.0, 51.0, 50.1, 51.2, 50.5, 49.6, 47.6, 49.9, 51.3, 47.8]  # invented


def nist_statistic(values, target, smoothing):
    # The e-Handbook recursion, written out independently of the code under test.
    z, out = target, []
    for x in values:
        z = smoothing * x + (1 - smoothing) * z
        out.append(z)
    return out


def nist_sigma(sd, smoothing, t):
    return math.sqrt(sd**2 * smoothing / (2 - smoothing) * (1 - (1 - smoothing) ** (2 * t)))


@pytest.mark.parametrize("smoothing", [0.2, 0.3])
def test_statistic_and_limits_follow_the_handbook(smoothing):
    target, sd, width = 50.0, 2.0539, 3.0
    chart = ewma_chart(VALUES, target, sd, smoothing=smoothing, width=width)
    assert chart.statistic == pytest.approx(nist_statistic(VALUES, target, smoothing), rel=1e-12)
    for t in (1, 2, 3, 10):
        half_width = width * nist_sigma(sd, smoothing, t)
        assert chart.upper[t - 1] == pytest.approx(target + half_width, rel=1e-12)
        assert chart.lower[t - 1] == pytest.approx(target - half_width, rel=1e-12)


def test_limits_tend_to_the_asymptote():
    # Asymptotic limits μ0 ± L σ sqrt(λ/(2 − λ)) (NIST/SEMATECH, "found").
    target, sd, smoothing, width = 10.0, 0.5, 0.2, 3.0
    chart = ewma_chart([10.0] * 200, target, sd, smoothing=smoothing, width=width)
    asymptote = width * sd * math.sqrt(smoothing / (2 - smoothing))
    assert chart.upper[-1] == pytest.approx(target + asymptote, rel=1e-12)
    assert chart.lower[-1] == pytest.approx(target - asymptote, rel=1e-12)
    assert np.all(np.diff(chart.upper) >= 0)  # limits widen from the start


def test_handbook_example_asymptotic_limits():
    # e-Handbook example (λ = 0.3, target 50, s = 2.0539): UCL 52.5884, LCL 47.4115 (from memory).
    chart = ewma_chart([50.0] * 100, 50.0, 2.0539, smoothing=0.3)
    assert chart.upper[-1] == pytest.approx(52.5884, abs=1e-3)
    assert chart.lower[-1] == pytest.approx(47.4115, abs=1e-3)


def test_flags_are_points_whose_statistic_lies_outside_the_limits():
    rng = np.random.default_rng(7)
    values = np.concatenate([rng.normal(0, 1, 30), rng.normal(1.5, 1, 30)])  # invented shift of 1.5 σ
    chart = ewma_chart(values, 0.0, 1.0)
    expected = (np.array(chart.statistic) > chart.upper) | (np.array(chart.statistic) < chart.lower)
    assert chart.flagged.tolist() == expected.tolist()
    assert chart.flagged[30:].any()
    assert [p for e in chart.episodes for p in e.points] == np.flatnonzero(expected).tolist()
    assert {e.side for e in chart.episodes} <= {"+", "-"}


def test_a_steady_series_is_not_flagged():
    chart = ewma_chart([5.0, 5.1, 4.9, 5.0, 5.05], 5.0, 0.1)
    assert not chart.flagged.any() and chart.episodes == []


@pytest.mark.parametrize("field, kwargs", [("smoothing", {"smoothing": 0.0}), ("smoothing", {"smoothing": 1.5}), ("width", {"width": -1})])
def test_bad_parameters_name_the_field(field, kwargs):
    with pytest.raises(InvalidInput) as caught:
        ewma_chart([1.0, 2.0], 1.0, 1.0, **kwargs)
    assert field in caught.value.fields
