"""Small input checks shared by the public API; each checks one rule.

Every message names the argument in backticks, the rule and the value
received, and where it can, the fix.
"""

from __future__ import annotations

import math
from numbers import Real

import numpy as np
from numpy.typing import ArrayLike, NDArray


def as_float(value: object, argument: str) -> float:
    """Return `value` as a finite float or raise naming `argument`."""
    if isinstance(value, bool) or not isinstance(value, (Real, np.floating, np.integer)):
        raise TypeError(f"`{argument}` must be a number, got {type(value).__name__} {value!r}")
    number = float(value)
    if not math.isfinite(number):
        raise ValueError(f"`{argument}` must be finite, got {number!r}")
    return number


def positive(value: object, argument: str) -> float:
    """Return `value` as a float that must be > 0."""
    number = as_float(value, argument)
    if number <= 0.0:
        raise ValueError(f"`{argument}` must be > 0, got {number!r}")
    return number


def as_vector(values: ArrayLike, argument: str, *, min_size: int = 1) -> NDArray[np.float64]:
    """Return a 1-D float64 copy of `values` that holds only finite numbers.

    A scalar becomes a one-element vector. The message for a non-finite
    entry gives its index.
    """
    try:
        array = np.array(values, dtype=np.float64, copy=True)
    except (TypeError, ValueError) as exc:
        raise TypeError(f"`{argument}` must be numbers, got {values!r:.80}") from exc
    if array.ndim == 0:
        array = array.reshape(1)
    if array.ndim != 1:
        raise ValueError(f"`{argument}` must be one-dimensional, got shape {array.shape}")
    if array.size < min_size:
        what = "value" if min_size == 1 else "values"
        raise ValueError(f"`{argument}` needs at least {min_size} {what}, got {array.size}")
    bad = np.flatnonzero(~np.isfinite(array))
    if bad.size:
        index = int(bad[0])
        raise ValueError(
            f"`{argument}` must be finite; index {index} holds {float(array[index])!r}"
            + (f" ({bad.size} non-finite values in all)" if bad.size > 1 else "")
        )
    return array


def periods(values: ArrayLike, argument: str = "periods") -> NDArray[np.float64]:
    """Return oscillator periods [s]: finite and >= 0 (0 means rigid)."""
    array = as_vector(values, argument)
    negative = np.flatnonzero(array < 0.0)
    if negative.size:
        index = int(negative[0])
        raise ValueError(f"`{argument}` must be >= 0 s; index {index} holds {float(array[index])!r}")
    return array


def dampings(values: ArrayLike, argument: str = "dampings") -> NDArray[np.float64]:
    """Return damping ratios: in [0, 1), with a hint when one looks like a percentage."""
    array = as_vector(values, argument)
    for index, ratio in enumerate(array):
        if ratio < 0.0:
            raise ValueError(f"`{argument}` must be >= 0; index {index} holds {float(ratio)!r}")
        if ratio >= 1.0:
            hint = (
                f"; {ratio:g} looks like a percentage: enter {ratio / 100:g}"
                if 1.0 <= ratio <= 100.0
                else ""
            )
            raise ValueError(
                f"`{argument}` must be a ratio of critical damping in [0, 1)"
                f"; index {index} holds {float(ratio)!r}{hint}"
            )
    return array
