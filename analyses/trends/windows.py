"""Rolling-window counts on flat boolean arrays (cumulative sums, no Python loops)."""
from __future__ import annotations

import numpy as np


def trailing_count(condition: np.ndarray, width: int) -> np.ndarray:
    """How many of the ``width`` points ending at each point meet ``condition``."""
    totals = np.concatenate(([0], np.cumsum(condition, dtype=np.int64)))
    end = np.arange(1, len(condition) + 1)
    return totals[end] - totals[np.maximum(end - width, 0)]


def window_trigger(condition: np.ndarray, needed: int, width: int, position: np.ndarray) -> np.ndarray:
    """True at the last point of each complete window of ``width`` points in one series
    in which at least ``needed`` points meet ``condition``."""
    return (position >= width - 1) & (trailing_count(condition, width) >= needed)


def run_trigger(condition: np.ndarray, length: int, position: np.ndarray) -> np.ndarray:
    """True at the last point of every ``length`` consecutive points meeting ``condition``."""
    return window_trigger(condition, length, length, position)


def covered(trigger: np.ndarray, width: int) -> np.ndarray:
    """True for every point inside a window of ``width`` points that ends at a trigger."""
    n = len(trigger)
    totals = np.concatenate(([0], np.cumsum(trigger, dtype=np.int64)))
    start = np.arange(n)
    return (totals[np.minimum(start + width, n)] - totals[start]) > 0


def runs_covered(runs: np.ndarray, member: np.ndarray) -> np.ndarray:
    """True for every point from the first to the last point of each run that has a
    ``member`` point (``runs``: one integer code per point)."""
    index = np.flatnonzero(member)
    steps = np.zeros(len(runs) + 1, dtype=np.int64)
    if len(index):
        code = runs[index]
        order = np.argsort(code, kind="stable")
        code, index = code[order], index[order]
        begins = np.concatenate(([True], code[1:] != code[:-1]))
        ends = np.concatenate((code[1:] != code[:-1], [True]))
        np.add.at(steps, index[begins], 1)
        np.add.at(steps, index[ends] + 1, -1)
    return np.cumsum(steps[:-1]) > 0
