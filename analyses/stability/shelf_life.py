"""Shelf life by regression, ICH Q1E (references.md, "found"): the earliest time at
which the one-sided 95 % confidence bound of the regression mean meets the limit.

An attribute that rises towards an upper limit (PV ≤ 10) uses the upper bound; one
that falls towards a lower limit uses the lower bound. Lots are combined as
``pooling.pooling_decide`` says; with separate lots each gets its own regression and
the shelf life is the shortest. Times are in months.

Extrapolation: the reported shelf life is capped at what ICH Q1E allows beyond the data
and flagged. How far that is depends on the Appendix A branch (``extrapolation.py``); the
defaults here are its most permissive branch (up to 2X, at most X + 12 months), which
holds only for room-temperature storage without significant change at the accelerated
condition. Pass ``extrapolation_factor=1, extrapolation_months=0`` for no extrapolation.
"""
from __future__ import annotations

from collections.abc import Hashable, Sequence
from dataclasses import dataclass
from typing import Literal

import numpy as np
import pandas as pd
import statsmodels.formula.api as smf
from scipy.optimize import brentq
from statsmodels.regression.linear_model import RegressionResultsWrapper

from analyses.errors import InvalidInput
from analyses.stability.pooling import COMMON_SLOPE, POOLED, POOLING_ALPHA, PoolingDecision, pooling_decide
from analyses.trends.inputs import finite_number, finite_vector, same_length

LimitSide = Literal["upper", "lower"]
EXTRAPOLATION_FACTOR = 2.0
EXTRAPOLATION_MONTHS = 12.0
MINIMUM_POINTS_PER_LOT = 3
GRID_POINTS = 401
HORIZON_FACTOR = 10.0  # search for the crossing up to 10x the widest cap, then call it "not reached"


@dataclass(frozen=True)
class BoundCurve:
    times: np.ndarray
    fitted: np.ndarray  # regression mean
    bound: np.ndarray  # one-sided confidence bound of the mean


@dataclass(frozen=True)
class LotShelfLife:
    lot: str
    crossing: float | None  # earliest time the bound meets the limit; None if not within the horizon
    slope: float
    intercept: float
    curve: BoundCurve


@dataclass(frozen=True)
class ShelfLifeResult:
    shelf_life: float  # reported: the estimate, capped at the allowed extrapolation
    estimate: float | None  # shortest crossing over lots; None if not reached within the horizon
    governing_lot: str | None
    limit: float
    limit_side: LimitSide
    confidence: float
    pooling: PoolingDecision
    lots: list[LotShelfLife]
    last_time: float
    extrapolation_cap: float
    extrapolated: bool  # the estimate lies beyond the last observed time
    capped: bool  # the estimate lies beyond the cap (or was not reached); shelf_life is the cap
    limit_met_at_start: bool  # the bound already meets the limit at time 0


def shelf_life_estimate(
    times: Sequence[float],
    values: Sequence[float],
    limit: float,
    *,
    limit_side: LimitSide = "upper",
    lots: Sequence[Hashable] | None = None,
    confidence: float = 0.95,
    pooling_alpha: float = POOLING_ALPHA,
    extrapolation_factor: float = EXTRAPOLATION_FACTOR,
    extrapolation_months: float = EXTRAPOLATION_MONTHS,
) -> ShelfLifeResult:
    """Shelf life of the data (one lot, or several with ``lots`` giving each point's lot)."""
    data = _study_frame(times, values, lots)
    limit = finite_number(limit, "limit")
    if limit_side not in ("upper", "lower"):
        raise InvalidInput.for_field("limit_side", "must be 'upper' or 'lower'")
    confidence = finite_number(confidence, "confidence")
    if not 0.5 < confidence < 1:
        raise InvalidInput.for_field("confidence", "must lie between 0.5 and 1")

    last_time = float(data["time"].max())
    cap = min(extrapolation_factor * last_time, last_time + extrapolation_months)
    decision = pooling_decide(data, pooling_alpha)
    lot_fits = _lot_models(data, decision)
    # The search horizon ignores the branch's cap, so the estimate (a prediction) is the same
    # whichever branch applies; only what is reported as supported changes.
    horizon = HORIZON_FACTOR * max(min(EXTRAPOLATION_FACTOR * last_time, last_time + EXTRAPOLATION_MONTHS), last_time)
    alpha = 2 * (1 - confidence)  # a two-sided (1 - alpha) interval's edge is the one-sided bound
    results = [_lot_shelf_life(lot, fit, limit, limit_side, alpha, horizon, cap) for lot, fit in lot_fits]

    reached = [r for r in results if r.crossing is not None]
    governing = min(reached, key=lambda r: r.crossing) if reached else None
    estimate = governing.crossing if governing else None
    capped = estimate is None or estimate > cap
    return ShelfLifeResult(
        shelf_life=cap if capped else float(estimate),
        estimate=estimate,
        governing_lot=governing.lot if governing else None,
        limit=limit,
        limit_side=limit_side,
        confidence=confidence,
        pooling=decision,
        lots=results,
        last_time=last_time,
        extrapolation_cap=cap,
        extrapolated=estimate is None or estimate > last_time,
        capped=capped,
        limit_met_at_start=estimate == 0.0,
    )


def _study_frame(
    times: Sequence[float], values: Sequence[float], lots: Sequence[Hashable] | None
) -> pd.DataFrame:
    t = finite_vector(times, "times", MINIMUM_POINTS_PER_LOT)
    y = finite_vector(values, "values", MINIMUM_POINTS_PER_LOT)
    same_length("values", y, len(t))
    if np.any(t < 0):
        raise InvalidInput.for_field("times", "must not be negative")
    if lots is None:
        lot = np.full(len(t), "all")
    else:
        lot = np.asarray([str(x) for x in lots], dtype=object)
        same_length("lots", lot, len(t))
    data = pd.DataFrame({"time": t, "value": y, "lot": lot})
    for name, group in data.groupby("lot"):
        if group["time"].nunique() < MINIMUM_POINTS_PER_LOT - 1 or len(group) < MINIMUM_POINTS_PER_LOT:
            raise InvalidInput.for_field(
                "times", f"lot {name} needs at least {MINIMUM_POINTS_PER_LOT} results at two or more times"
            )
    return data


def _lot_models(data: pd.DataFrame, decision: PoolingDecision) -> list[tuple[str, RegressionResultsWrapper]]:
    """(lot, fitted model) pairs whose predictions at (time, lot) give that lot's line."""
    names = sorted(data["lot"].unique())
    if decision.model in ("single lot", "pooled"):
        fit = smf.ols(POOLED, data).fit()
        return [("all" if decision.model == "pooled" else names[0], fit)]
    if decision.model == "common slope":
        fit = smf.ols(COMMON_SLOPE, data).fit()
        return [(name, fit) for name in names]
    return [(name, smf.ols(POOLED, data[data["lot"] == name]).fit()) for name in names]


def _lot_shelf_life(
    lot: str, fit: RegressionResultsWrapper, limit: float, side: LimitSide, alpha: float, horizon: float, cap: float
) -> LotShelfLife:
    def prediction(t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        frame = pd.DataFrame({"time": np.atleast_1d(t).astype(float), "lot": lot})
        summary = fit.get_prediction(frame).summary_frame(alpha=alpha)
        edge = summary["mean_ci_upper"] if side == "upper" else summary["mean_ci_lower"]
        return summary["mean"].to_numpy(), edge.to_numpy()

    def excess(t: float) -> float:
        bound = prediction(np.array([t]))[1][0]
        return bound - limit if side == "upper" else limit - bound

    # The upper bound is convex in time (the lower concave), so past time 0 the bound
    # crosses the limit at most once: the first sign change on a grid brackets it.
    grid = np.linspace(0.0, horizon, GRID_POINTS)
    _, bound = prediction(grid)
    over = (bound >= limit) if side == "upper" else (bound <= limit)
    crossing: float | None
    if over[0]:
        crossing = 0.0
    elif over.any():
        i = int(np.argmax(over))
        crossing = float(brentq(excess, grid[i - 1], grid[i], xtol=1e-10))
    else:
        crossing = None
    end = max(cap, crossing if crossing is not None else 0.0) * 1.05
    curve_times = np.linspace(0.0, end, 101)
    fitted, curve_bound = prediction(curve_times)
    slope = float(fit.params["time"])
    intercept = float(fit.predict(pd.DataFrame({"time": [0.0], "lot": [lot]})).iloc[0])
    return LotShelfLife(lot, crossing, slope, intercept, BoundCurve(curve_times, fitted, curve_bound))
