"""Checks on the numbers handed to the trend and stability functions."""
from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from analyses.errors import InvalidInput


def finite_vector(values: Sequence[float] | np.ndarray, field: str, minimum_length: int = 1) -> np.ndarray:
    """``values`` as a 1-D float array; InvalidInput naming ``field`` if not finite or too short."""
    try:
        array = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        raise InvalidInput.for_field(field, "must be a list of numbers") from None
    if array.ndim != 1:
        raise InvalidInput.for_field(field, "must be a flat list of numbers")
    if len(array) < minimum_length:
        raise InvalidInput.for_field(field, f"needs at least {minimum_length} values, got {len(array)}")
    if not np.all(np.isfinite(array)):
        raise InvalidInput.for_field(field, "must contain finite numbers only")
    return array


def positive_number(value: float, field: str) -> float:
    number = finite_number(value, field)
    if number <= 0:
        raise InvalidInput.for_field(field, f"must be greater than 0, got {number:g}")
    return number


def finite_number(value: float, field: str) -> float:
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise InvalidInput.for_field(field, "must be a number") from None
    if not np.isfinite(number):
        raise InvalidInput.for_field(field, "must be a finite number")
    return number


def same_length(field: str, array: np.ndarray, expected: int) -> None:
    if len(array) != expected:
        raise InvalidInput.for_field(field, f"must have one entry per value ({expected}), got {len(array)}")
