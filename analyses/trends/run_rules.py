"""Nelson's eight run rules (Nelson 1984, Journal of Quality Technology).

Thresholds as summarised in /work/shared/references.md ("found"). "Beyond k σ" is
strict (|z| > k); "within 1 σ" is its complement (|z| <= 1). A point exactly on the
centre line is on neither side; equal neighbours are neither rising nor falling.
Rule 8 ("eight in a row on both sides, none within 1 σ") is read, as references.md
puts it, as eight in a row with none within 1 σ, on either side.
"""
from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from analyses.trends.episodes import (
    Episode,
    RuleMarks,
    episode_table,
    episodes_of_table,
    single_point_marks,
    window_marks,
)
from analyses.trends.layout import SeriesLayout, layout_single
from analyses.trends.westgard import z_scores
from analyses.trends.windows import covered, run_trigger


def steps(values: np.ndarray, layout: SeriesLayout) -> np.ndarray:
    """Change from the previous point of the same series (NaN at each series' start)."""
    change = np.diff(values, prepend=np.nan)
    change[layout.position == 0] = np.nan
    return change


def nelson_marks(values: np.ndarray, z: np.ndarray, layout: SeriesLayout) -> list[RuleMarks]:
    """Marks of all eight Nelson rules; trends (3, 4) use ``values``, zones use ``z``."""
    marks: list[RuleMarks] = []
    for side, signed in (("+", z), ("-", -z)):
        marks.append(single_point_marks("nelson_1", side, signed > 3))
    for side, signed in (("+", z), ("-", -z)):
        marks.append(window_marks("nelson_2", side, signed > 0, 9, 9, layout))
    change = steps(values, layout)
    for side, moving in (("up", change > 0), ("down", change < 0)):
        # Six points rising = five rises in a row; the window holds six points.
        cover = covered(run_trigger(moving, 5, layout.position), 6)
        marks.append(RuleMarks("nelson_3", side, cover, cover))
    flips = np.zeros(len(values), dtype=bool)
    flips[1:] = change[1:] * change[:-1] < 0
    # Fourteen alternating points = thirteen steps = twelve sign flips in a row.
    cover = covered(run_trigger(flips, 12, layout.position), 14)
    marks.append(RuleMarks("nelson_4", "", cover, cover))
    for side, signed in (("+", z), ("-", -z)):
        marks.append(window_marks("nelson_5", side, signed > 2, 2, 3, layout))
    for side, signed in (("+", z), ("-", -z)):
        marks.append(window_marks("nelson_6", side, signed > 1, 4, 5, layout))
    distance = np.abs(z)
    marks.append(window_marks("nelson_7", "", distance <= 1, 15, 15, layout))
    marks.append(window_marks("nelson_8", "", distance > 1, 8, 8, layout))
    return marks


def nelson_evaluate(values: Sequence[float], mean: float, sd: float) -> list[Episode]:
    """Episodes of every Nelson rule on one series in time order."""
    z = z_scores(values, mean, sd)
    array = np.asarray(values, dtype=float)
    layout = layout_single(len(z))
    return episodes_of_table(episode_table(nelson_marks(array, z, layout), layout))
