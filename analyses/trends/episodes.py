"""Episodes: one contiguous violation of one rule, with a key that survives appends.

A rule marks two things per point: ``covered`` (inside a window that broke the rule)
and ``flagged`` (a covered point that itself meets the rule's condition). A maximal
run of covered points within one series is one episode; its points are the flagged
ones. Windows only end at existing points, so appending results can extend or merge
an episode but never moves the first point of an existing one: (series, rule, first)
is a stable key for deduplicating alerts.
"""
from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from analyses.trends.layout import SeriesLayout
from analyses.trends.windows import covered, window_trigger

EPISODE_COLUMNS = ["group", "rule", "side", "first", "last", "first_index", "last_index", "points"]


@dataclass(frozen=True)
class Episode:
    rule: str
    side: str  # "+" above / "-" below the centre, "up" / "down" for trends, "" when the rule has no side
    first: int  # position of the first flagged point in the series
    last: int
    points: tuple[int, ...]


@dataclass(frozen=True)
class RuleMarks:
    rule: str
    side: str
    flagged: np.ndarray
    covered: np.ndarray


def window_marks(
    rule: str, side: str, condition: np.ndarray, needed: int, width: int, layout: SeriesLayout
) -> RuleMarks:
    """Marks for "at least ``needed`` of ``width`` consecutive points meet ``condition``"."""
    cover = covered(window_trigger(condition, needed, width, layout.position), width)
    return RuleMarks(rule, side, condition & cover, cover)


def single_point_marks(rule: str, side: str, condition: np.ndarray) -> RuleMarks:
    return RuleMarks(rule, side, condition, condition)


def episode_table(marks: Iterable[RuleMarks], layout: SeriesLayout) -> pd.DataFrame:
    """All episodes of all ``marks`` as a DataFrame (columns ``EPISODE_COLUMNS``),
    ordered by series, then rule in the order given, then first point."""
    frames = []
    ranks: dict[str, int] = {}
    for mark in marks:
        frame = _episodes_of(mark, layout)
        frame["rank"] = ranks.setdefault(mark.rule, len(ranks))
        frames.append(frame)
    if not frames:
        return pd.DataFrame(columns=EPISODE_COLUMNS)
    table = pd.concat(frames, ignore_index=True)
    table = table.sort_values(["group", "rank", "first"], kind="stable").drop(columns="rank")
    return table.reset_index(drop=True)


def episodes_of_table(table: pd.DataFrame) -> list[Episode]:
    return [
        Episode(rule=row.rule, side=row.side, first=int(row.first), last=int(row.last), points=row.points)
        for row in table.itertuples(index=False)
    ]


def episodes_by_rule(episodes: Iterable[Episode], rule_codes: Iterable[str]) -> dict[str, list[Episode]]:
    """The episodes of each rule in ``rule_codes`` (an empty list for a rule not broken)."""
    grouped: dict[str, list[Episode]] = {code: [] for code in rule_codes}
    for episode in episodes:
        grouped.setdefault(episode.rule, []).append(episode)
    return grouped


def _episodes_of(mark: RuleMarks, layout: SeriesLayout) -> pd.DataFrame:
    cover = mark.covered
    previous = np.concatenate(([False], cover[:-1]))
    begins = cover & (~previous | (layout.position == 0))
    number = np.cumsum(begins)
    flat = np.flatnonzero(mark.flagged)
    episode = number[flat]
    cut = np.flatnonzero(episode[1:] != episode[:-1]) + 1
    first_index = flat[np.concatenate(([0], cut))] if len(flat) else flat
    last_index = flat[np.concatenate((cut - 1, [len(flat) - 1]))] if len(flat) else flat
    # Slicing one Python list is several times faster than np.split for many small episodes.
    positions = layout.position[flat].tolist()
    bounds = np.concatenate(([0], cut, [len(flat)])).tolist()
    points = [tuple(positions[a:b]) for a, b in zip(bounds[:-1], bounds[1:])] if len(flat) else []
    return pd.DataFrame(
        {
            "group": layout.group[first_index],
            "rule": mark.rule,
            "side": mark.side,
            "first": layout.position[first_index],
            "last": layout.position[last_index],
            "first_index": first_index,
            "last_index": last_index,
            "points": pd.Series(points, dtype=object),
        }
    )
