"""Westgard multirules on a QC series, in z-scores from a baseline mean and SD.

Rule definitions as in /work/shared/references.md (Westgard multirules, "found").
"Beyond ±k s" is strict: |z| > k, so a point at exactly 2.0 s does not trigger 1-2s. A z-score
is rounded to Z_DECIMALS places first (``z_of``): the float arithmetic of (x - mean) / s would
otherwise put a point that lies on the line, such as 10.7 for mean 10.1 and s 0.3, a hair beyond it.
These rules look at one control material; ``across_materials`` compares the materials
(levels) measured in the same run.
"""
from __future__ import annotations

from collections.abc import Hashable, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from analyses.errors import InvalidInput
from analyses.trends.episodes import (
    Episode,
    RuleMarks,
    episode_table,
    episodes_of_table,
    single_point_marks,
    window_marks,
)
from analyses.trends.inputs import finite_number, finite_vector, positive_number, same_length
from analyses.trends.layout import SeriesLayout, layout_single
from analyses.trends.windows import covered, runs_covered

# far below any reading's resolution, far above float noise (common practice, no source)
Z_DECIMALS = 9
# Westgard's advice is to set mean and SD from at least 20 control results (from memory).
MINIMUM_BASELINE_POINTS = 20


@dataclass(frozen=True)
class ControlBaseline:
    mean: float
    sd: float  # sample standard deviation (n - 1)
    n: int


def baseline_establish(values: Sequence[float], minimum_points: int = MINIMUM_BASELINE_POINTS) -> ControlBaseline:
    """Mean and SD of a baseline period of at least ``minimum_points`` control results."""
    array = finite_vector(values, "values")
    if len(array) < minimum_points:
        raise InvalidInput.for_field(
            "values", f"a baseline needs at least {minimum_points} results, got {len(array)}"
        )
    sd = float(np.std(array, ddof=1))
    if sd <= 0:
        raise InvalidInput.for_field("values", "baseline results are all equal; the SD would be 0")
    return ControlBaseline(mean=float(np.mean(array)), sd=sd, n=len(array))


def z_of(values: np.ndarray, mean: np.ndarray | float, sd: np.ndarray | float) -> np.ndarray:
    """(values - mean) / sd, rounded to Z_DECIMALS places (see the module docstring)."""
    return np.round((values - mean) / sd, Z_DECIMALS)


def z_scores(values: Sequence[float], mean: float, sd: float) -> np.ndarray:
    array = finite_vector(values, "values")
    return z_of(array, finite_number(mean, "mean"), positive_number(sd, "sd"))


def run_codes(group: np.ndarray, run_ids: Sequence[Hashable] | np.ndarray) -> np.ndarray:
    """One integer per (series, run); a missing run id makes the point a run of its own."""
    run_code, _ = pd.factorize(pd.Series(run_ids, dtype=object))
    missing = run_code < 0
    combined = group.astype(np.int64) * (int(run_code.max(initial=0)) + 1) + run_code
    combined[missing] = -1 - np.arange(int(missing.sum()))
    codes, _ = pd.factorize(combined)
    return codes


def westgard_marks(z: np.ndarray, layout: SeriesLayout, runs: np.ndarray | None = None) -> list[RuleMarks]:
    """Marks of every Westgard rule on flat z-scores; ``runs`` from :func:`run_codes` or None."""
    marks: list[RuleMarks] = []
    for side, beyond in (("+", z), ("-", -z)):
        marks.append(single_point_marks("westgard_1_2s", side, beyond > 2))
    for side, beyond in (("+", z), ("-", -z)):
        marks.append(single_point_marks("westgard_1_3s", side, beyond > 3))
    for side, beyond in (("+", z), ("-", -z)):
        marks.append(window_marks("westgard_2_2s", side, beyond > 2, 2, 2, layout))
    marks.append(_range_marks(z, layout, runs))
    for side, beyond in (("+", z), ("-", -z)):
        marks.append(window_marks("westgard_4_1s", side, beyond > 1, 4, 4, layout))
    for side, beyond in (("+", z), ("-", -z)):
        marks.append(window_marks("westgard_10_x", side, beyond > 0, 10, 10, layout))
    return marks


def westgard_evaluate(
    values: Sequence[float], mean: float, sd: float, run_ids: Sequence[Hashable] | None = None
) -> list[Episode]:
    """Episodes of every Westgard rule on one series in time order.

    With ``run_ids`` (one per point) R-4s compares points of the same run; without,
    it compares each pair of consecutive points.
    """
    z = z_scores(values, mean, sd)
    layout = layout_single(len(z))
    runs = None
    if run_ids is not None:
        run_array = np.asarray(run_ids, dtype=object)
        same_length("run_ids", run_array, len(z))
        runs = run_codes(layout.group, run_array)
    return episodes_of_table(episode_table(westgard_marks(z, layout, runs), layout))


def _range_marks(z: np.ndarray, layout: SeriesLayout, runs: np.ndarray | None) -> RuleMarks:
    above, below = z > 2, z < -2
    if runs is None:
        previous_above = np.concatenate(([False], above[:-1]))
        previous_below = np.concatenate(([False], below[:-1]))
        trigger = (layout.position >= 1) & ((above & previous_below) | (below & previous_above))
        cover = covered(trigger, 2)
        return RuleMarks("westgard_r_4s", "", (above | below) & cover, cover)
    count = int(runs.max(initial=-1)) + 1
    broken = (np.bincount(runs, weights=above, minlength=count) > 0) & (
        np.bincount(runs, weights=below, minlength=count) > 0
    )
    in_broken = broken[runs]
    # A broken run covers the stretch from its first to its last point.
    return RuleMarks("westgard_r_4s", "", (above | below) & in_broken, runs_covered(runs, in_broken))
