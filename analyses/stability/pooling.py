"""ICH Q1E poolability of lots: equal slopes, then equal intercepts, each by an ANCOVA
F-test at α = 0.25 (references.md, "found"), comparing nested OLS models with anova_lm.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import pandas as pd
import statsmodels.formula.api as smf
from statsmodels.regression.linear_model import RegressionResultsWrapper
from statsmodels.stats.anova import anova_lm

POOLING_ALPHA = 0.25
Pooling = Literal["single lot", "pooled", "common slope", "separate"]

SEPARATE = "value ~ C(lot) * time"
COMMON_SLOPE = "value ~ C(lot) + time"
POOLED = "value ~ time"


@dataclass(frozen=True)
class PoolingDecision:
    model: Pooling
    slopes_p: float | None  # p of "all lots share one slope"
    intercepts_p: float | None  # p of "all lots share one intercept", given a common slope
    alpha: float


def pooling_decide(data: pd.DataFrame, alpha: float = POOLING_ALPHA) -> PoolingDecision:
    """Decide how to combine lots; ``data`` has columns time, value, lot.

    Equality is rejected when p < alpha: slopes first (then lots stay separate), then
    intercepts (then lots share a slope only); otherwise all data are pooled.
    """
    if data["lot"].nunique() < 2:
        return PoolingDecision("single lot", None, None, alpha)
    separate = smf.ols(SEPARATE, data).fit()
    common_slope = smf.ols(COMMON_SLOPE, data).fit()
    slopes_p = _f_test_p(common_slope, separate)
    if slopes_p < alpha:
        return PoolingDecision("separate", slopes_p, None, alpha)
    intercepts_p = _f_test_p(smf.ols(POOLED, data).fit(), common_slope)
    model: Pooling = "common slope" if intercepts_p < alpha else "pooled"
    return PoolingDecision(model, slopes_p, intercepts_p, alpha)


def _f_test_p(reduced: RegressionResultsWrapper, full: RegressionResultsWrapper) -> float:
    return float(anova_lm(reduced, full)["Pr(>F)"].iloc[1])
