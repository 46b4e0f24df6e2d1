"""Where each point sits when one or many series share one flat array.

Every rule works on flat arrays ordered by (series, sequence); ``position`` is the
point's place in its own series, so a window never reaches into the previous series.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class SeriesLayout:
    group: np.ndarray  # series code per point, non-decreasing
    position: np.ndarray  # 0-based place in its own series
    starts: np.ndarray  # flat index where each series begins
    counts: np.ndarray  # points per series

    @property
    def size(self) -> int:
        return len(self.position)


def layout_single(length: int) -> SeriesLayout:
    return SeriesLayout(
        group=np.zeros(length, dtype=np.int64),
        position=np.arange(length, dtype=np.int64),
        starts=np.array([0], dtype=np.int64),
        counts=np.array([length], dtype=np.int64),
    )


def layout_from_codes(codes: np.ndarray) -> SeriesLayout:
    """Layout for contiguous series codes 0, 0, 1, 1, 1, 2, ... (sorted by series)."""
    codes = np.asarray(codes, dtype=np.int64)
    n = len(codes)
    is_start = np.ones(n, dtype=bool)
    if n:
        is_start[1:] = codes[1:] != codes[:-1]
    starts = np.flatnonzero(is_start)
    counts = np.diff(np.append(starts, n))
    position = np.arange(n, dtype=np.int64) - np.repeat(starts, counts)
    return SeriesLayout(group=codes, position=position, starts=starts, counts=counts)
