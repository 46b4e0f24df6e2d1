"""ICH Q1E shelf life (references.md, "found"): the earliest time at which the one-sided
95 % confidence bound of the regression mean meets the limit. The bound is recomputed
here independently: scipy.stats.linregress for one line, numpy least squares for the
common-slope model, each with t.ppf(0.95, residual df). Data are invented (a made-up
refinery, Northmoor Oils); the PV limit 10 meq/kg is Codex CXS 210 for refined oils
(references.md, "found").
"""
from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from analyses.errors import InvalidInput
from analyses.stability.shelf_life import shelf_life_estimate

TIMES = np.array([0.0, 3.0, 6.0, 9.0, 12.0, 18.0])
NOISE = np.array([[0.1, -0.2, 0.15, 0.0, -0.1, 0.05], [-0.05, 0.1, -0.1, 0.2, 0.0, -0.15], [0.0, 0.05, -0.2, -0.05, 0.1, 0.1]])
PV_LIMIT = 10.0


def one_sided_bound(x, y, t, side="upper"):
    fit = stats.linregress(x, y)
    n = len(x)
    s = math.sqrt(np.sum((y - fit.intercept - fit.slope * x) ** 2) / (n - 2))
    half = stats.t.ppf(0.95, n - 2) * s * math.sqrt(1 / n + (t - x.mean()) ** 2 / np.sum((x - x.mean()) ** 2))
    centre = fit.intercept + fit.slope * t
    return centre + half if side == "upper" else centre - half


def test_single_lot_bound_meets_the_limit_at_the_shelf_life():
    values = 1.0 + 0.3 * TIMES + NOISE[0]  # Northmoor Oils lot 1, PV in meq/kg (invented)
    result = shelf_life_estimate(TIMES, values, PV_LIMIT, limit_side="upper")
    assert result.pooling.model == "single lot"
    t = result.estimate
    assert one_sided_bound(TIMES, values, t) == pytest.approx(PV_LIMIT, abs=1e-8)
    assert one_sided_bound(TIMES, values, t - 0.01) < PV_LIMIT  # the earliest such time
    assert result.shelf_life == pytest.approx(t) and not result.capped
    assert result.extrapolated == (t > 18.0)


def test_falling_attribute_uses_the_lower_bound():
    values = 20.0 - 0.5 * TIMES + NOISE[1]  # an invented falling attribute with a lower limit of 12
    result = shelf_life_estimate(TIMES, values, 12.0, limit_side="lower")
    assert one_sided_bound(TIMES, values, result.estimate, "lower") == pytest.approx(12.0, abs=1e-8)
    assert result.lots[0].slope == pytest.approx(stats.linregress(TIMES, values).slope)


def three_lots(slopes, intercepts):
    times = np.tile(TIMES, 3)
    values = np.concatenate([b0 + b1 * TIMES + e for b1, b0, e in zip(slopes, intercepts, NOISE)])
    return times, values, np.repeat(["L1", "L2", "L3"], len(TIMES))


def test_pooled_lots_use_one_regression_of_all_data():
    times, values, lots = three_lots([0.3] * 3, [1.0] * 3)
    result = shelf_life_estimate(times, values, PV_LIMIT, lots=lots)
    assert result.pooling.model == "pooled" and len(result.lots) == 1
    assert one_sided_bound(times, values, result.estimate) == pytest.approx(PV_LIMIT, abs=1e-8)


def test_common_slope_gives_the_shortest_lot():
    times, values, lots = three_lots([0.3] * 3, [1.0, 1.5, 2.0])
    result = shelf_life_estimate(times, values, PV_LIMIT, lots=lots)
    assert result.pooling.model == "common slope"
    assert result.governing_lot == "L3"  # the highest start reaches the upper limit first
    assert result.estimate == min(lot.crossing for lot in result.lots)
    # Independent bound of the common-slope model for lot L3 at the estimate.
    dummies = pd.get_dummies(lots).to_numpy(dtype=float)
    design = np.hstack([dummies, times[:, None]])
    coef, *_ = np.linalg.lstsq(design, values, rcond=None)
    df = len(values) - design.shape[1]
    s2 = np.sum((values - design @ coef) ** 2) / df
    x0 = np.array([0.0, 0.0, 1.0, result.estimate])
    bound = x0 @ coef + stats.t.ppf(0.95, df) * math.sqrt(s2 * x0 @ np.linalg.inv(design.T @ design) @ x0)
    assert bound == pytest.approx(PV_LIMIT, abs=1e-8)


def test_separate_lots_each_have_their_own_regression():
    times, values, lots = three_lots([0.2, 0.3, 0.45], [1.0, 1.0, 1.0])
    result = shelf_life_estimate(times, values, PV_LIMIT, lots=lots)
    assert result.pooling.model == "separate"
    for lot in result.lots:
        mask = lots == lot.lot
        assert one_sided_bound(TIMES, values[mask], lot.crossing) == pytest.approx(PV_LIMIT, abs=1e-8)
    assert result.governing_lot == "L3" and result.estimate == result.lots[2].crossing


# Extrapolation cap: about twice the long-term data, at most 12 months beyond (ICH Q1E, memory).
def test_estimate_beyond_the_cap_is_capped_and_flagged():
    values = 1.0 + 0.1 * TIMES + NOISE[0]
    result = shelf_life_estimate(TIMES, values, PV_LIMIT)
    assert result.last_time == 18.0 and result.extrapolation_cap == 30.0  # min(2 x 18, 18 + 12)
    assert result.estimate > 30.0
    assert result.capped and result.extrapolated and result.shelf_life == 30.0


def test_short_studies_cap_at_twice_the_data():
    short = TIMES[:4]  # 0..9 months
    result = shelf_life_estimate(short, 1.0 + 0.05 * short + NOISE[0][:4], PV_LIMIT)
    assert result.extrapolation_cap == 18.0  # min(2 x 9, 9 + 12)


def test_estimate_between_last_time_and_cap_is_extrapolated_not_capped():
    values = 1.0 + 0.35 * TIMES + NOISE[0]
    result = shelf_life_estimate(TIMES, values, 10.0)
    assert 18.0 < result.estimate < 30.0
    assert result.extrapolated and not result.capped


def test_limit_already_met_at_the_start():
    values = 9.9 + 0.3 * TIMES + NOISE[0]
    result = shelf_life_estimate(TIMES, values, PV_LIMIT)
    assert result.limit_met_at_start and result.shelf_life == 0.0


def test_limit_never_reached():
    values = 5.0 - 0.2 * TIMES + NOISE[0] / 10
    result = shelf_life_estimate(TIMES, values, PV_LIMIT)
    assert result.estimate is None and result.capped and result.shelf_life == result.extrapolation_cap


def test_curve_for_plots():
    values = 1.0 + 0.3 * TIMES + NOISE[0]
    curve = shelf_life_estimate(TIMES, values, PV_LIMIT).lots[0].curve
    assert curve.times[0] == 0.0 and len(curve.times) == len(curve.fitted) == len(curve.bound)
    assert np.all(curve.bound >= curve.fitted)


@pytest.mark.parametrize(
    "kwargs, field",
    [
        ({"times": [0.0, 3.0], "values": [1.0, 2.0]}, "times"),
        ({"times": [-1.0, 3.0, 6.0], "values": [1.0, 2.0, 3.0]}, "times"),
        ({"limit_side": "both"}, "limit_side"),
        ({"limit": float("nan")}, "limit"),
    ],
)
def test_bad_input_names_the_field(kwargs, field):
    arguments = {"times": TIMES, "values": 1.0 + 0.3 * TIMES, "limit": PV_LIMIT} | kwargs
    with pytest.raises(InvalidInput) as caught:
        shelf_life_estimate(**arguments)
    assert field in caught.value.fields


def test_each_lot_needs_results_at_two_times():
    with pytest.raises(InvalidInput) as caught:
        shelf_life_estimate([0.0, 0.0, 0.0, 3.0, 6.0, 9.0], [1, 1.1, 0.9, 2, 3, 4], PV_LIMIT, lots="AAABBB")
    assert "times" in caught.value.fields and "lot A" in caught.value.detail
