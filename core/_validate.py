"""Small input checks shared by the public API; each checks one rule.

Private base of `groundstep.core.checks`. Every message names the argument
(in backticks when it is an argument name, as given otherwise, e.g.
"cell Input!C7"), the rule and the value received, and where it can, the fix.
"""

from __future__ import annotations

import math
from numbers import Real

import numpy as np
from numpy.typing import ArrayLike, NDArray


def named(label: str) -> str:
    """`label` in backticks when it is an argument name, else as it is ("cell Input!C7")."""
    return f"`{label}`" if label.isidentifier() else label


def as_float(value: object, argument: str) -> float:
    """Return `value` as a finite float or raise naming `argument`."""
    if type(value) is float and math.isfinite(value):  # the common case, without the abstract-class checks
        return value
    if isinstance(value, bool) or not isinstance(value, (Real, np.floating, np.integer)):
        raise TypeError(f"{named(argument)} must be a number, got {type(value).__name__} {value!r}")
    try:
        number = float(value)
    except OverflowError:  # an integer beyond float64's largest number (about 1.8e308)
        raise ValueError(f"{named(argument)} must be finite, got an integer of {len(str(abs(value)))} digits") from None
    if not math.isfinite(number):
        raise ValueError(f"{named(argument)} must be finite, got {number!r}")
    return number


def positive(value: object, argument: str) -> float:
    """Return `value` as a float that must be > 0."""
    number = as_float(value, argument)
    if number <= 0.0:
        raise ValueError(f"{named(argument)} must be > 0, got {number!r}")
    return number


def as_vector(values: ArrayLike, argument: str, *, min_size: int = 1) -> NDArray[np.float64]:
    """Return a 1-D float64 copy of `values` that holds only finite numbers.

    A scalar becomes a one-element vector. The message for a non-finite
    entry gives its index.
    """
    array = as_array(values, argument, min_size=min_size)
    if not all_finite(array):
        check_finite(array, argument)
    return array


def as_array(values: ArrayLike, argument: str, *, min_size: int = 1) -> NDArray[np.float64]:
    """`as_vector` without the check that every entry is finite (the caller's rule implies it)."""
    try:
        array = np.array(values, dtype=np.float64, copy=True)
    except OverflowError:
        raise ValueError(f"{named(argument)} holds an integer beyond float64's range (about 1.8e308)") from None
    except (TypeError, ValueError) as exc:
        raise TypeError(f"{named(argument)} must be numbers, got {values!r:.80}") from exc
    if array.ndim != 1:
        if array.ndim == 0:
            array = array.reshape(1)
        else:
            raise ValueError(f"{named(argument)} must be one-dimensional, got shape {array.shape}")
    if array.shape[0] < min_size:
        what = "value" if min_size == 1 else "values"
        raise ValueError(f"{named(argument)} needs at least {min_size} {what}, got {array.size}")
    return array


#: Up to this many entries a check runs on the Python floats of ``tolist()``: faster than
#: numpy's per-call cost for the few periods or dampings a worksheet cell passes.
SMALL = 16


def all_finite(array: NDArray[np.float64]) -> bool:
    """True when every entry of the 1-D `array` is finite."""
    if array.shape[0] <= SMALL:
        return all(map(math.isfinite, array.tolist()))
    return bool(np.isfinite(array).all())


def check_finite(array: NDArray[np.float64], argument: str) -> None:
    """Raise naming the index of the first non-finite entry of `array`, if any."""
    bad = np.flatnonzero(~np.isfinite(array))
    if bad.size:
        index = int(bad[0])
        raise ValueError(
            f"{named(argument)} must be finite; index {index} holds {float(array[index])!r}"
            + (f" ({bad.size} non-finite values in all)" if bad.size > 1 else "")
        )


def periods(values: ArrayLike, argument: str = "periods") -> NDArray[np.float64]:
    """Oscillator periods [s]; the rule lives in `checks.check_periods`."""
    from .checks import check_periods  # checks builds on this module

    return check_periods(values, argument)


def dampings(values: ArrayLike, argument: str = "dampings") -> NDArray[np.float64]:
    """Damping ratios; the rule lives in `checks.check_dampings`."""
    from .checks import check_dampings

    return check_dampings(values, argument)
