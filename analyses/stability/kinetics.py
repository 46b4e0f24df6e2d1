"""Zero-order and first-order degradation kinetics fitted by OLS.

Zero order: C = C0 + k t. First order: ln C = ln C0 + k t (every value must be > 0).
Which fits better (the project's choice, common practice, no source): the smaller
residual sum of squares on the original scale, i.e. the larger R² on the original
scale. Both models have two parameters, so AIC on the original scale ranks them the
same way. A tie goes to zero order, the simpler reading.
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Literal

import numpy as np
import statsmodels.api as sm

from analyses.trends.inputs import finite_vector, same_length

Order = Literal["zero", "first"]
CRITERION = "smaller residual sum of squares on the original scale (larger R² there)"
MINIMUM_POINTS = 3


@dataclass(frozen=True)
class KineticFit:
    order: Order
    slope: float  # k: value units per time (zero order) or per time on the ln scale (first order)
    intercept: float  # C0 (zero order) or ln C0 (first order)
    slope_se: float
    intercept_se: float
    r_squared: float  # on the fitted scale
    residual_se: float  # on the fitted scale
    n: int
    initial_value: float  # C0 on the original scale
    sse_original: float
    r_squared_original: float


@dataclass(frozen=True)
class KineticsComparison:
    zero_order: KineticFit
    first_order: KineticFit | None  # None when some value is not above 0
    better: Order
    criterion: str = CRITERION


def kinetics_fit(times: Sequence[float], values: Sequence[float]) -> KineticsComparison:
    """Fit both orders to ``values`` over ``times`` and say which fits better."""
    t = finite_vector(times, "times", MINIMUM_POINTS)
    c = finite_vector(values, "values", MINIMUM_POINTS)
    same_length("values", c, len(t))
    zero = _fit("zero", t, c)
    first = _fit("first", t, c) if np.all(c > 0) else None
    better: Order = "first" if first is not None and first.sse_original < zero.sse_original else "zero"
    return KineticsComparison(zero_order=zero, first_order=first, better=better)


def _fit(order: Order, t: np.ndarray, c: np.ndarray) -> KineticFit:
    response = np.log(c) if order == "first" else c
    result = sm.OLS(response, sm.add_constant(t)).fit()
    fitted = result.fittedvalues
    on_original = np.exp(fitted) if order == "first" else fitted
    sse = float(np.sum((c - on_original) ** 2))
    sst = float(np.sum((c - c.mean()) ** 2))
    intercept, slope = (float(p) for p in result.params)
    intercept_se, slope_se = (float(s) for s in result.bse)
    return KineticFit(
        order=order,
        slope=slope,
        intercept=intercept,
        slope_se=slope_se,
        intercept_se=intercept_se,
        r_squared=float(result.rsquared),
        residual_se=float(np.sqrt(result.mse_resid)),
        n=len(t),
        initial_value=float(np.exp(intercept)) if order == "first" else intercept,
        sse_original=sse,
        r_squared_original=1.0 - sse / sst if sst > 0 else float("nan"),
    )
