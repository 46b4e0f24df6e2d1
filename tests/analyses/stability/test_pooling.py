"""ICH Q1E poolability (references.md, "found": slopes first, then intercepts, each at
α = 0.25). The F-tests are recomputed here with numpy least squares and scipy.stats.f.
"""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from analyses.stability.pooling import POOLING_ALPHA, pooling_decide

TIMES = np.array([0.0, 3.0, 6.0, 9.0, 12.0, 18.0])
NOISE = np.array([[0.1, -0.2, 0.15, 0.0, -0.1, 0.05], [-0.05, 0.1, -0.1, 0.2, 0.0, -0.15], [0.0, 0.05, -0.2, -0.05, 0.1, 0.1]])


def lots_frame(slopes, intercepts):
    rows = [
        (t, b0 + b1 * t + e, name)
        for name, b1, b0, noise in zip("ABC", slopes, intercepts, NOISE)
        for t, e in zip(TIMES, noise)
    ]
    return pd.DataFrame(rows, columns=["time", "value", "lot"])


def rss(design, y):
    coef, *_ = np.linalg.lstsq(design, y, rcond=None)
    return float(np.sum((y - design @ coef) ** 2)), len(y) - design.shape[1]


def f_test_p(reduced, full, y):
    rss_r, df_r = rss(reduced, y)
    rss_f, df_f = rss(full, y)
    f = ((rss_r - rss_f) / (df_r - df_f)) / (rss_f / df_f)
    return stats.f.sf(f, df_r - df_f, df_f)


def designs(frame):
    dummies = pd.get_dummies(frame["lot"]).to_numpy(dtype=float)
    t = frame["time"].to_numpy()[:, None]
    return {
        "pooled": np.hstack([np.ones_like(t), t]),
        "common slope": np.hstack([dummies, t]),
        "separate": np.hstack([dummies, dummies * t]),
    }


def test_alpha_is_ich_q1e():
    assert POOLING_ALPHA == 0.25  # ICH Q1E (references.md, "found")


def test_equal_lots_are_pooled_and_p_values_match():
    frame = lots_frame([0.3, 0.3, 0.3], [2.0, 2.0, 2.0])
    decision = pooling_decide(frame)
    d, y = designs(frame), frame["value"].to_numpy()
    assert decision.slopes_p == pytest.approx(f_test_p(d["common slope"], d["separate"], y), rel=1e-8)
    assert decision.intercepts_p == pytest.approx(f_test_p(d["pooled"], d["common slope"], y), rel=1e-8)
    assert decision.slopes_p >= 0.25 and decision.intercepts_p >= 0.25
    assert decision.model == "pooled"


def test_different_intercepts_give_a_common_slope():
    frame = lots_frame([0.3, 0.3, 0.3], [2.0, 3.0, 4.0])
    decision = pooling_decide(frame)
    d, y = designs(frame), frame["value"].to_numpy()
    assert decision.intercepts_p == pytest.approx(f_test_p(d["pooled"], d["common slope"], y), rel=1e-8)
    assert decision.model == "common slope" and decision.intercepts_p < 0.25


def test_different_slopes_keep_lots_separate():
    frame = lots_frame([0.2, 0.3, 0.45], [2.0, 2.0, 2.0])
    decision = pooling_decide(frame)
    d, y = designs(frame), frame["value"].to_numpy()
    assert decision.slopes_p == pytest.approx(f_test_p(d["common slope"], d["separate"], y), rel=1e-8)
    assert decision.model == "separate" and decision.intercepts_p is None


def test_one_lot_needs_no_test():
    frame = lots_frame([0.3], [2.0])
    assert pooling_decide(frame).model == "single lot"
