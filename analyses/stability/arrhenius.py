"""Arrhenius extrapolation of rate constants from accelerated storage.

ln k = ln A − Ea / (R T): OLS of ln k on 1/T (kelvin) gives Ea = −slope · R.
Q10 at temperature T: exp(10 Ea / (R T (T + 10))). For vegetable oils Ea is about
79–104 kJ/mol and Q10 about 2–3 (references.md, "found").
"""
from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import statsmodels.api as sm
from scipy.constants import R

from analyses.errors import InvalidInput
from analyses.trends.inputs import finite_number, finite_vector, same_length
from plugins.units import registry


@dataclass(frozen=True)
class ArrheniusFit:
    activation_energy: float  # J/mol
    activation_energy_se: float | None  # None with only two points (no residual degrees of freedom)
    ln_pre_exponential: float
    n: int
    studied_min_k: float
    studied_max_k: float
    storage_temperature_k: float
    q10: float  # at the storage temperature
    rate: float  # predicted rate constant at the storage temperature
    rate_lower: float | None
    rate_upper: float | None
    confidence: float
    extrapolated: bool  # storage temperature outside the studied range


@dataclass(frozen=True)
class PredictedShelfLife:
    time: float  # in the time unit of the rate constants
    lower: float | None
    upper: float | None
    extrapolated: bool


def kelvin(celsius: Sequence[float] | np.ndarray | float) -> np.ndarray:
    ureg = registry()
    return np.asarray(ureg.Quantity(np.asarray(celsius, dtype=float), ureg.degC).to(ureg.kelvin).magnitude)


def q10(activation_energy: float, temperature_k: float) -> float:
    return float(np.exp(10.0 * activation_energy / (R * temperature_k * (temperature_k + 10.0))))


def arrhenius_fit(
    temperatures_c: Sequence[float],
    rate_constants: Sequence[float],
    storage_temperature_c: float,
    *,
    confidence: float = 0.95,
) -> ArrheniusFit:
    """Fit rate constants measured at two or more temperatures (°C) and predict the
    rate at ``storage_temperature_c`` with a ``confidence`` interval."""
    temperatures = kelvin(finite_vector(temperatures_c, "temperatures_c", 2))
    rates = finite_vector(rate_constants, "rate_constants", 2)
    same_length("rate_constants", rates, len(temperatures))
    if np.any(rates <= 0):
        raise InvalidInput.for_field("rate_constants", "must all be above 0 (their logarithm is fitted)")
    if np.any(temperatures <= 0):
        raise InvalidInput.for_field("temperatures_c", "must be above absolute zero")
    if len(np.unique(temperatures)) < 2:
        raise InvalidInput.for_field("temperatures_c", "needs at least two different temperatures")
    storage = float(kelvin(finite_number(storage_temperature_c, "storage_temperature_c")))
    confidence = finite_number(confidence, "confidence")
    if not 0 < confidence < 1:
        raise InvalidInput.for_field("confidence", "must lie between 0 and 1")

    fit = sm.OLS(np.log(rates), sm.add_constant(1.0 / temperatures)).fit()
    ln_a, slope = (float(p) for p in fit.params)
    activation_energy = -slope * R
    has_spread = fit.df_resid > 0
    rate_lower = rate_upper = None
    if has_spread:
        interval = fit.get_prediction(np.array([[1.0, 1.0 / storage]])).conf_int(alpha=1 - confidence)[0]
        rate_lower, rate_upper = float(np.exp(interval[0])), float(np.exp(interval[1]))
    return ArrheniusFit(
        activation_energy=activation_energy,
        activation_energy_se=float(fit.bse[1]) * R if has_spread else None,
        ln_pre_exponential=ln_a,
        n=len(rates),
        studied_min_k=float(temperatures.min()),
        studied_max_k=float(temperatures.max()),
        storage_temperature_k=storage,
        q10=q10(activation_energy, storage),
        rate=float(np.exp(ln_a + slope / storage)),
        rate_lower=rate_lower,
        rate_upper=rate_upper,
        confidence=confidence,
        extrapolated=not temperatures.min() <= storage <= temperatures.max(),
    )


def arrhenius_shelf_life(fit: ArrheniusFit, initial_value: float, limit: float) -> PredictedShelfLife:
    """Time for zero-order growth from ``initial_value`` to ``limit``: (limit − C0) / k,
    with the interval from the rate's interval (a faster rate gives the shorter time)."""
    initial_value = finite_number(initial_value, "initial_value")
    limit = finite_number(limit, "limit")
    if limit <= initial_value:
        raise InvalidInput.for_field("limit", "must lie above the initial value for a growing attribute")
    headroom = limit - initial_value
    return PredictedShelfLife(
        time=headroom / fit.rate,
        lower=headroom / fit.rate_upper if fit.rate_upper is not None else None,
        upper=headroom / fit.rate_lower if fit.rate_lower is not None else None,
        extrapolated=fit.extrapolated,
    )
