"""Scan many control series at once with every trend rule.

All series share one flat array ordered by (series, sequence); each rule is a handful
of numpy operations over the whole array, so the cost grows with the number of
results, not with the number of series.
"""
from __future__ import annotations

from collections.abc import Collection

import numpy as np
import pandas as pd

from analyses.errors import InvalidInput
from analyses.trends.episodes import RuleMarks, episode_table
from analyses.trends.ewma import DEFAULT_SMOOTHING, DEFAULT_WIDTH, check_parameters, ewma_marks
from analyses.trends.layout import SeriesLayout, layout_from_codes
from analyses.trends.out_of_trend import DEFAULT_LEVEL, DEFAULT_WINDOW, check_trend_parameters, out_of_trend_marks
from analyses.trends.run_rules import nelson_marks
from analyses.trends.westgard import MINIMUM_BASELINE_POINTS, run_codes, westgard_marks, z_of

FAMILIES = ("westgard", "nelson", "ewma")
OPTIONAL_FAMILIES = ("out_of_trend",)
SCAN_COLUMNS = [
    "series_id", "rule", "side", "first", "last", "first_sequence", "last_sequence", "n_points", "points", "key",
]


def series_scan(
    results: pd.DataFrame,
    limits: pd.DataFrame | None = None,
    *,
    baseline_points: int = MINIMUM_BASELINE_POINTS,
    families: Collection[str] = FAMILIES,
    ewma_smoothing: float = DEFAULT_SMOOTHING,
    ewma_width: float = DEFAULT_WIDTH,
    trend_window: int = DEFAULT_WINDOW,
    trend_level: float = DEFAULT_LEVEL,
) -> pd.DataFrame:
    """Episodes of every rule in ``families`` on every series of ``results``.

    ``results`` has columns series_id, sequence (number or time), value and optionally
    run_id. ``limits`` has series_id (column or index), mean and sd; without it each
    series' first ``baseline_points`` results set its mean and SD. The optional family
    "out_of_trend" (see ``out_of_trend``) needs a numeric or datetime sequence (days).

    Returns one row per episode (``SCAN_COLUMNS``): ``first``/``last``/``points`` are
    0-based positions in the series, ``first_sequence``/``last_sequence`` the sequence
    values there, and ``key`` = "series_id|rule|first_sequence", stable when results
    are appended, for deduplicating alerts (keep the sequence's type the same between
    scans: 5 and 5.0 print differently).
    """
    unknown = set(families) - set(FAMILIES) - set(OPTIONAL_FAMILIES)
    if unknown:
        raise InvalidInput.for_field("families", f"unknown rule families: {sorted(unknown)}")
    smoothing, width = check_parameters(ewma_smoothing, ewma_width)
    ordered, series_ids = _ordered(results)
    layout = layout_from_codes(ordered["code"].to_numpy())
    values = ordered["value"].to_numpy(dtype=float)
    if limits is None:
        mean, sd = _baseline_limits(values, layout, series_ids, baseline_points)
    else:
        mean, sd = given_limits(limits, series_ids)
    z = z_of(values, mean[layout.group], sd[layout.group])

    marks: list[RuleMarks] = []
    if "westgard" in families:
        runs = run_codes(layout.group, ordered["run_id"].to_numpy()) if "run_id" in ordered else None
        marks += westgard_marks(z, layout, runs)
    if "nelson" in families:
        marks += nelson_marks(values, z, layout)
    if "ewma" in families:
        marks += ewma_marks(z, layout, smoothing, width)
    if "out_of_trend" in families:
        window, level = check_trend_parameters(trend_window, trend_level)
        times = _elapsed(ordered["sequence"], layout)
        marks += out_of_trend_marks(times, values, layout, window, level)
    return scan_table(episode_table(marks, layout), ordered["sequence"].to_numpy(), series_ids)


def _ordered(results: pd.DataFrame) -> tuple[pd.DataFrame, np.ndarray]:
    missing = [name for name in ("series_id", "sequence", "value") if name not in results.columns]
    if missing:
        raise InvalidInput("results lacks columns: " + ", ".join(missing), {name: ["required"] for name in missing})
    values = pd.to_numeric(results["value"], errors="coerce").to_numpy(dtype=float)
    if not np.all(np.isfinite(values)):
        raise InvalidInput.for_field("value", "must contain finite numbers only")
    if results["sequence"].isna().any() or results["series_id"].isna().any():
        raise InvalidInput.for_field("sequence", "series_id and sequence must be given for every result")
    try:
        codes, series_ids = pd.factorize(results["series_id"], sort=True)
    except TypeError:  # ids of mixed types cannot be sorted; keep first-seen order
        codes, series_ids = pd.factorize(results["series_id"], sort=False)
    frame = pd.DataFrame({"code": codes, "sequence": results["sequence"].reset_index(drop=True), "value": values})
    if "run_id" in results.columns:
        frame["run_id"] = results["run_id"].to_numpy()
    try:
        frame = frame.sort_values(["code", "sequence"], kind="stable").reset_index(drop=True)
    except TypeError:
        raise InvalidInput.for_field("sequence", "must be values of one kind (all numbers or all times)") from None
    code, sequence = frame["code"].to_numpy(), frame["sequence"].to_numpy()
    if np.any((code[1:] == code[:-1]) & (sequence[1:] == sequence[:-1])):
        raise InvalidInput.for_field("sequence", "repeats within a series")
    return frame, np.asarray(series_ids)


def _elapsed(sequence: pd.Series, layout: SeriesLayout) -> np.ndarray:
    """Time since each series' first result: days for datetimes, the sequence itself otherwise."""
    if pd.api.types.is_datetime64_any_dtype(sequence):
        numbers = (sequence - sequence.min()).dt.total_seconds().to_numpy() / 86400.0
    elif pd.api.types.is_numeric_dtype(sequence):
        numbers = sequence.to_numpy(dtype=float)
    else:
        raise InvalidInput.for_field("sequence", "must be numbers or datetimes for the out-of-trend rule")
    return numbers - np.repeat(numbers[layout.starts], layout.counts)


def _baseline_limits(
    values: np.ndarray, layout: SeriesLayout, series_ids: np.ndarray, baseline_points: int
) -> tuple[np.ndarray, np.ndarray]:
    short = layout.counts < baseline_points
    if short.any():
        raise InvalidInput.for_field(
            "results", f"series {series_ids[short][:5].tolist()} have fewer than {baseline_points} results for a baseline"
        )
    head = layout.position < baseline_points
    stats = pd.Series(values[head]).groupby(layout.group[head]).agg(["mean", "std"])
    return _checked(stats["mean"].to_numpy(), stats["std"].to_numpy(), series_ids)


def given_limits(limits: pd.DataFrame, series_ids: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Mean and SD of each of ``series_ids`` from ``limits``; InvalidInput if one is missing or unusable."""
    table = limits.set_index("series_id") if "series_id" in limits.columns else limits
    if not {"mean", "sd"} <= set(table.columns):
        raise InvalidInput.for_field("limits", "needs columns mean and sd")
    table = table.reindex(series_ids)
    absent = table["mean"].isna() | table["sd"].isna()
    if absent.any():
        raise InvalidInput.for_field("limits", f"no mean/SD for series {series_ids[absent.to_numpy()][:5].tolist()}")
    return _checked(table["mean"].to_numpy(dtype=float), table["sd"].to_numpy(dtype=float), series_ids)


def _checked(mean: np.ndarray, sd: np.ndarray, series_ids: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    bad = ~(np.isfinite(sd) & (sd > 0)) | ~np.isfinite(mean)
    if bad.any():
        raise InvalidInput.for_field("limits", f"series {series_ids[bad][:5].tolist()} need a finite mean and an SD above 0")
    return mean, sd


def scan_table(table: pd.DataFrame, sequence: np.ndarray, series_ids: np.ndarray) -> pd.DataFrame:
    """An ``episode_table`` as ``SCAN_COLUMNS``: series ids, sequence values and keys."""
    first_index = table["first_index"].to_numpy(dtype=np.int64)
    out = pd.DataFrame(
        {
            "series_id": series_ids[table["group"].to_numpy(dtype=np.int64)],
            "rule": table["rule"].to_numpy(),
            "side": table["side"].to_numpy(),
            "first": table["first"].to_numpy(dtype=np.int64),
            "last": table["last"].to_numpy(dtype=np.int64),
            "first_sequence": sequence[first_index],
            "last_sequence": sequence[table["last_index"].to_numpy(dtype=np.int64)],
            "n_points": table["points"].map(len).to_numpy(dtype=np.int64),
            "points": table["points"].to_numpy(),
        },
        columns=SCAN_COLUMNS[:-1],
    )
    out["key"] = out["series_id"].astype(str) + "|" + out["rule"].astype(str) + "|" + _sequence_text(out["first_sequence"])
    return out


def _sequence_text(sequence: pd.Series) -> pd.Series:
    """Sequence values as key text in one fixed format, whatever else is in the batch
    (pandas would print midnight-only datetimes without their time)."""
    if pd.api.types.is_datetime64_any_dtype(sequence):
        return sequence.dt.strftime("%Y-%m-%dT%H:%M:%S.%f%z")
    return sequence.astype(str)
