"""Out-of-trend rule. The rule itself is the project's choice (common practice, no source);
the prediction interval is cross-checked against the textbook OLS formula, computed here
with scipy: ŷ ± t(1 − α/2, n − 2) · s · sqrt(1 + 1/n + (x0 − x̄)² / Sxx) (from memory).
"""
from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from analyses.errors import InvalidInput
from analyses.trends.out_of_trend import out_of_trend_check, out_of_trend_series
from analyses.trends.scan import series_scan


def invented_series(seed=2, n=40):
    rng = np.random.default_rng(seed)
    times = np.arange(n) * 3.0
    values = 5 + 0.02 * times + rng.normal(0, 0.1, n)  # invented PV-like drift
    values[30] += 0.6
    return times, values


def textbook_interval(x, y, x0, level):
    fit = stats.linregress(x, y)
    n = len(x)
    residuals = y - (fit.intercept + fit.slope * x)
    s = math.sqrt(np.sum(residuals**2) / (n - 2))
    sxx = np.sum((x - x.mean()) ** 2)
    half = stats.t.ppf(0.5 + level / 2, n - 2) * s * math.sqrt(1 + 1 / n + (x0 - x.mean()) ** 2 / sxx)
    centre = fit.intercept + fit.slope * x0
    return centre - half, centre + half


def test_check_uses_the_last_window_and_the_textbook_interval():
    times, values = invented_series()
    check = out_of_trend_check(times[:30], values[:30], times[30], values[30], window=10, level=0.99)
    lower, upper = textbook_interval(times[20:30], values[20:30], times[30], 0.99)
    assert check.points_used == 10
    assert check.lower == pytest.approx(lower, rel=1e-10) and check.upper == pytest.approx(upper, rel=1e-10)
    assert check.outside_prediction and check.out_of_trend and check.in_specification is None


def test_a_result_on_the_trend_is_not_flagged():
    times, values = invented_series()
    check = out_of_trend_check(times[:20], values[:20], times[20], values[20])
    assert check.lower < check.value < check.upper
    assert not check.out_of_trend


def test_out_of_specification_is_not_also_out_of_trend():
    times, values = invented_series()
    inside = out_of_trend_check(times[:30], values[:30], times[30], values[30], spec_upper=10.0)
    assert inside.in_specification and inside.out_of_trend
    beyond = out_of_trend_check(times[:30], values[:30], times[30], values[30], spec_upper=7.0)
    assert beyond.outside_prediction and beyond.in_specification is False and not beyond.out_of_trend


def test_series_version_agrees_with_the_single_check():
    times, values = invented_series()
    bands = out_of_trend_series(times, values, window=8, level=0.95)
    assert bands.iloc[:8]["predicted"].isna().all()
    for i in (8, 15, 30, 39):
        check = out_of_trend_check(times[:i], values[:i], times[i], values[i], window=8, level=0.95)
        assert bands.loc[i, "lower"] == pytest.approx(check.lower, rel=1e-9)
        assert bands.loc[i, "upper"] == pytest.approx(check.upper, rel=1e-9)
        assert bool(bands.loc[i, "outside"]) == check.outside_prediction
    assert 30 in bands["outside"].to_numpy().nonzero()[0].tolist()  # the invented jump


def test_scan_family_matches_the_series_version():
    frames, expected = [], set()
    for seed in (2, 4, 6):
        times, values = invented_series(seed)
        frames.append(pd.DataFrame({"series_id": seed, "sequence": times + 100.0, "value": values}))
        outside = out_of_trend_series(times, values)["outside"].to_numpy()
        expected |= {(seed, int(i)) for i in np.flatnonzero(outside)}
    scan = series_scan(pd.concat(frames), families=["out_of_trend"])
    assert {(r.series_id, p) for r in scan.itertuples() for p in r.points} == expected


@pytest.mark.parametrize(
    "kwargs, field",
    [({"window": 2}, "window"), ({"level": 1.0}, "level"), ({"new_value": float("inf")}, "new_value")],
)
def test_bad_input_names_the_field(kwargs, field):
    times, values = invented_series()
    arguments = {"new_time": 120.0, "new_value": 7.0} | kwargs
    with pytest.raises(InvalidInput) as caught:
        out_of_trend_check(times, values, **arguments)
    assert field in caught.value.fields


def test_series_times_must_increase():
    with pytest.raises(InvalidInput) as caught:
        out_of_trend_series([0, 1, 1, 2, 3], [1, 2, 3, 4, 5], window=3)
    assert "times" in caught.value.fields
