"""EWMA control chart (NIST/SEMATECH e-Handbook of Statistical Methods).

z_t = λ x_t + (1 − λ) z_(t−1), z_0 = μ0;
σ_z² = σ² λ/(2 − λ) [1 − (1 − λ)^(2t)]; limits μ0 ± L σ_z.
Defaults λ = 0.2 and L = 3: references.md gives L = 3 as typical and λ 0.2–0.3 as
typical (memory); 0.2 is our pick inside that range (common practice, no source).
A point is flagged when its EWMA statistic lies strictly outside the limits.
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy.signal import lfilter

from analyses.errors import InvalidInput
from analyses.trends.episodes import Episode, RuleMarks, episode_table, episodes_of_table, single_point_marks
from analyses.trends.inputs import finite_number, finite_vector, positive_number
from analyses.trends.layout import SeriesLayout, layout_single
from analyses.trends.westgard import z_scores

DEFAULT_SMOOTHING = 0.2
DEFAULT_WIDTH = 3.0


@dataclass(frozen=True)
class EwmaChart:
    values: np.ndarray
    statistic: np.ndarray  # z_t in the values' unit
    centre: float
    lower: np.ndarray
    upper: np.ndarray
    flagged: np.ndarray  # bool per point
    episodes: list[Episode]
    smoothing: float
    width: float


def check_parameters(smoothing: float, width: float) -> tuple[float, float]:
    smoothing = finite_number(smoothing, "smoothing")
    if not 0 < smoothing <= 1:
        raise InvalidInput.for_field("smoothing", f"must be in (0, 1], got {smoothing:g}")
    return smoothing, positive_number(width, "width")


def ewma_standardised(z: np.ndarray, layout: SeriesLayout, smoothing: float) -> tuple[np.ndarray, np.ndarray]:
    """EWMA statistic of z-scores (μ0 = 0, σ = 1) restarted at each series, and σ_z per point."""
    decay = 1.0 - smoothing
    running = lfilter([smoothing], [1.0, -decay], z)
    # lfilter runs across series boundaries; remove what the previous series carried in.
    carried = np.zeros(len(layout.starts))
    carried[1:] = running[layout.starts[1:] - 1]
    t = layout.position + 1
    statistic = running - decay**t * np.repeat(carried, layout.counts)
    sigma = np.sqrt(smoothing / (2.0 - smoothing) * (1.0 - decay ** (2 * t)))
    return statistic, sigma


def ewma_marks(z: np.ndarray, layout: SeriesLayout, smoothing: float, width: float) -> list[RuleMarks]:
    statistic, sigma = ewma_standardised(z, layout, smoothing)
    return _limit_marks(statistic, sigma, width)


def _limit_marks(statistic: np.ndarray, sigma: np.ndarray, width: float) -> list[RuleMarks]:
    return [
        single_point_marks("ewma", "+", statistic > width * sigma),
        single_point_marks("ewma", "-", statistic < -width * sigma),
    ]


def ewma_chart(
    values: Sequence[float],
    mean: float,
    sd: float,
    smoothing: float = DEFAULT_SMOOTHING,
    width: float = DEFAULT_WIDTH,
) -> EwmaChart:
    """EWMA chart of one series with target ``mean`` and process SD ``sd``."""
    smoothing, width = check_parameters(smoothing, width)
    # the drawn statistic from unrounded z (it is rebuilt in the values' units); the flags from
    # westgard.z_scores' rounded z, as the scan of many series decides them
    z = (finite_vector(values, "values") - finite_number(mean, "mean")) / positive_number(sd, "sd")
    layout = layout_single(len(z))
    statistic, sigma = ewma_standardised(z, layout, smoothing)
    judged, _ = ewma_standardised(z_scores(values, mean, sd), layout, smoothing)
    marks = _limit_marks(judged, sigma, width)
    return EwmaChart(
        values=np.asarray(values, dtype=float),
        statistic=mean + sd * statistic,
        centre=float(mean),
        lower=mean - width * sd * sigma,
        upper=mean + width * sd * sigma,
        flagged=marks[0].flagged | marks[1].flagged,
        episodes=episodes_of_table(episode_table(marks, layout)),
        smoothing=smoothing,
        width=width,
    )
