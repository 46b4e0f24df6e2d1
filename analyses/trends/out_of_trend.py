"""Out-of-trend: a result far from what its series' recent trend predicts, though in spec.

The rule (the project's own choice; common practice, no source): fit an ordinary
least-squares line of value on time through the last ``window`` results (default 10)
and flag the new result when it lies strictly outside the two-sided ``level`` (default
99 %) prediction interval for a single new observation at its time. A result outside
the specification is an out-of-specification result instead, so it is not also
called out-of-trend.
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.lib.stride_tricks import sliding_window_view
import pandas as pd
import statsmodels.api as sm
from scipy import stats

from analyses.errors import InvalidInput
from analyses.trends.episodes import RuleMarks, single_point_marks
from analyses.trends.inputs import finite_number, finite_vector, same_length
from analyses.trends.layout import SeriesLayout, layout_single

DEFAULT_WINDOW = 10
DEFAULT_LEVEL = 0.99
MINIMUM_WINDOW = 3  # a line through n points needs n >= 3 for a residual SD


@dataclass(frozen=True)
class OutOfTrendCheck:
    value: float
    predicted: float
    lower: float
    upper: float
    outside_prediction: bool
    in_specification: bool | None  # None when no specification limit was given
    out_of_trend: bool
    points_used: int
    level: float


def out_of_trend_check(
    times: Sequence[float],
    values: Sequence[float],
    new_time: float,
    new_value: float,
    *,
    window: int = DEFAULT_WINDOW,
    level: float = DEFAULT_LEVEL,
    spec_lower: float | None = None,
    spec_upper: float | None = None,
) -> OutOfTrendCheck:
    """Judge ``new_value`` against the trend of the last ``window`` earlier results
    (all of them when there are fewer, but at least 3)."""
    window, level = check_trend_parameters(window, level)
    history_times = finite_vector(times, "times", MINIMUM_WINDOW)
    history_values = finite_vector(values, "values", MINIMUM_WINDOW)
    same_length("values", history_values, len(history_times))
    order = np.argsort(history_times, kind="stable")[-window:]
    fit = sm.OLS(history_values[order], sm.add_constant(history_times[order])).fit()
    new_time = finite_number(new_time, "new_time")
    new_value = finite_number(new_value, "new_value")
    frame = fit.get_prediction(np.array([[1.0, new_time]])).summary_frame(alpha=1 - level)
    lower, upper = float(frame["obs_ci_lower"].iloc[0]), float(frame["obs_ci_upper"].iloc[0])
    outside = bool(new_value < lower or new_value > upper)
    in_spec = _in_specification(new_value, spec_lower, spec_upper)
    return OutOfTrendCheck(
        value=new_value,
        predicted=float(frame["mean"].iloc[0]),
        lower=lower,
        upper=upper,
        outside_prediction=outside,
        in_specification=in_spec,
        out_of_trend=outside and in_spec is not False,
        points_used=len(order),
        level=level,
    )


def out_of_trend_series(
    times: Sequence[float], values: Sequence[float], *, window: int = DEFAULT_WINDOW, level: float = DEFAULT_LEVEL
) -> pd.DataFrame:
    """Every point judged against the ``window`` results before it (NaN for the first ``window``).

    Columns: predicted, lower, upper, outside.
    """
    window, level = check_trend_parameters(window, level)
    t = finite_vector(times, "times")
    y = finite_vector(values, "values")
    same_length("values", y, len(t))
    if np.any(np.diff(t) <= 0):
        raise InvalidInput.for_field("times", "must increase strictly")
    predicted, lower, upper = prediction_bands(t - t[0], y, layout_single(len(t)), window, level)
    return pd.DataFrame({"predicted": predicted, "lower": lower, "upper": upper, "outside": (y < lower) | (y > upper)})


def prediction_bands(
    times: np.ndarray, values: np.ndarray, layout: SeriesLayout, window: int, level: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Prediction interval for each point from the line through the ``window`` points before it,
    for flat arrays of many series (NaN where a series has fewer earlier points).

    The least-squares line and its interval come from centred sums over each window
    (a sliding-window view, so one pass of numpy over n x window numbers):
    s² (1 + 1/w + (t − t̄)² / Sxx) is the variance of a new observation at t.
    """
    n = len(values)
    nan = np.full(n, np.nan)
    if n <= window:
        return nan, nan.copy(), nan.copy()
    # Windows ending at point i - 1 predict point i.
    t_windows = sliding_window_view(times.astype(float), window)[:-1]
    y_windows = sliding_window_view(values.astype(float), window)[:-1]
    t_mean, y_mean = t_windows.mean(axis=1), y_windows.mean(axis=1)
    t_dev, y_dev = t_windows - t_mean[:, None], y_windows - y_mean[:, None]
    with np.errstate(divide="ignore", invalid="ignore"):  # windows across two series are masked below
        sxx = np.einsum("ij,ij->i", t_dev, t_dev)
        sxy = np.einsum("ij,ij->i", t_dev, y_dev)
        slope = sxy / sxx
        sse = np.maximum(np.einsum("ij,ij->i", y_dev, y_dev) - slope * sxy, 0.0)
        t_new = times[window:].astype(float)
        predicted = y_mean + slope * (t_new - t_mean)
        variance = sse / (window - 2) * (1 + 1 / window + (t_new - t_mean) ** 2 / sxx)
    half = stats.t.ppf(0.5 + level / 2, window - 2) * np.sqrt(variance)
    valid = layout.position[window:] >= window
    out = [np.concatenate([np.full(window, np.nan), np.where(valid, band, np.nan)]) for band in (predicted, predicted - half, predicted + half)]
    return out[0], out[1], out[2]


def out_of_trend_marks(
    times: np.ndarray, values: np.ndarray, layout: SeriesLayout, window: int, level: float
) -> list[RuleMarks]:
    _, lower, upper = prediction_bands(times, values, layout, window, level)
    return [
        single_point_marks("out_of_trend", "+", values > upper),
        single_point_marks("out_of_trend", "-", values < lower),
    ]


def check_trend_parameters(window: int, level: float) -> tuple[int, float]:
    if isinstance(window, bool) or not isinstance(window, (int, np.integer)) or window < MINIMUM_WINDOW:
        raise InvalidInput.for_field("window", f"must be a whole number of at least {MINIMUM_WINDOW}")
    level = finite_number(level, "level")
    if not 0 < level < 1:
        raise InvalidInput.for_field("level", f"must lie between 0 and 1, got {level:g}")
    return int(window), level


def _in_specification(value: float, lower: float | None, upper: float | None) -> bool | None:
    if lower is None and upper is None:
        return None
    low = finite_number(lower, "spec_lower") if lower is not None else -np.inf
    high = finite_number(upper, "spec_upper") if upper is not None else np.inf
    return bool(low <= value <= high)
