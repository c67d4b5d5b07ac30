"""The input rules of groundstep: one function and one wording per rule.

Core's public functions check their arguments with these, and adapters
call the same functions with their own label, so a spreadsheet shows the
same rule in the same words: ``check_damping(5, "cell Input!C7")`` raises
"cell Input!C7 must be a ratio of critical damping in [0, 1), got 5.0; 5
looks like a percentage: enter 0.05". A label that is an argument name
appears in backticks, any other label as given. Wrong kinds raise
TypeError, bad values ValueError.

Examples
--------
>>> from groundstep.core.checks import check_damping, percentage_hint
>>> check_damping(0.05)
0.05
>>> percentage_hint(5)
'5 looks like a percentage: enter 0.05'
"""

from __future__ import annotations

import math
from numbers import Real

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ._validate import SMALL, as_array, as_float, as_vector, check_finite, named, positive
from .budget import PERIOD_RANGE, LimitError
from .defaults import HARDENING_RANGE
from .methods import Method, resolve_method

__all__ = [
    "check_damping",
    "check_dampings",
    "check_ductilities",
    "check_hardening",
    "check_integer",
    "check_method",
    "check_period",
    "check_periods",
    "check_positive",
    "check_strength",
    "percentage_hint",
]


def percentage_hint(value: float) -> str:
    """The hint for a ratio entered as a percentage, or "" when `value` does not look like one.

    Parameters
    ----------
    value : float
        The ratio received (a damping, a hardening ratio).

    Returns
    -------
    str
        ``"5 looks like a percentage: enter 0.05"`` for 1 <= value <= 100,
        else ``""``.

    Examples
    --------
    >>> percentage_hint(2)
    '2 looks like a percentage: enter 0.02'
    >>> percentage_hint(0.5)
    ''
    """
    if 1.0 <= value <= 100.0:
        return f"{value:g} looks like a percentage: enter {value / 100.0:g}"
    return ""


def _with_hint(value: float) -> str:
    hint = percentage_hint(value)
    return f"; {hint}" if hint else ""


def check_positive(value: object, label: str) -> float:
    """A finite number > 0.

    Parameters
    ----------
    value : float
        The value received.
    label : str
        Argument name or cell named in the message.

    Returns
    -------
    float

    Raises
    ------
    TypeError
        Not a number.
    ValueError
        Not finite, or <= 0.

    Examples
    --------
    >>> check_positive(2, "dt")
    2.0
    """
    return positive(value, label)


def check_integer(value: object, label: str, minimum: int | None = None) -> int:
    """A whole number (an int, or a float with no fraction such as a cell's 20.0), >= `minimum`.

    Parameters
    ----------
    value : int or float
        The value received.
    label : str
        Argument name or cell named in the message.
    minimum : int, optional
        Smallest accepted value.

    Returns
    -------
    int

    Raises
    ------
    TypeError
        Not a number, or a number with a fraction (2.5).
    ValueError
        Below `minimum`.

    Examples
    --------
    >>> check_integer(20.0, "max_iterations", 1)
    20
    """
    integral = isinstance(value, (int, np.integer)) or (
        isinstance(value, (Real, np.floating)) and math.isfinite(float(value)) and float(value).is_integer()
    )
    if isinstance(value, bool) or not integral:
        raise TypeError(f"{named(label)} must be an integer, got {type(value).__name__} {value!r}")
    number = int(value)  # type: ignore[call-overload]
    if minimum is not None and number < minimum:
        raise ValueError(f"{named(label)} must be >= {minimum}, got {number!r}")
    return number


def check_damping(value: object, label: str = "damping") -> float:
    """One ratio of critical damping ζ in [0, 1), with the percentage hint.

    Parameters
    ----------
    value : float
        The value received.
    label : str, default "damping"
        Argument name or cell named in the message.

    Returns
    -------
    float

    Raises
    ------
    TypeError
        Not a number.
    ValueError
        Not finite, below 0 or at least 1.

    Examples
    --------
    >>> check_damping(0.02)
    0.02
    """
    ratio = as_float(value, label)
    _damping_rule(ratio, named(label), f"got {ratio!r}")
    return ratio


def check_dampings(values: ArrayLike, label: str = "dampings") -> NDArray[np.float64]:
    """Ratios of critical damping, each in [0, 1); a bad entry is named by its index.

    Parameters
    ----------
    values : float or array_like (n,)
        The values received.
    label : str, default "dampings"
        Argument name or range named in the message.

    Returns
    -------
    ndarray (n,)

    Raises
    ------
    TypeError, ValueError
        As `check_damping`, naming the index.

    Examples
    --------
    >>> check_dampings([0.02, 0.05]).tolist()
    [0.02, 0.05]
    """
    array = as_array(values, label)
    if array.shape[0] <= SMALL:
        ratios = array.tolist()
        if all(0.0 <= ratio < 1.0 for ratio in ratios):  # each fine (NaN is not)
            return array
    elif bool(((array >= 0.0) & (array < 1.0)).all()):
        return array
    check_finite(array, label)
    for index, ratio in enumerate(array.tolist()):
        _damping_rule(ratio, named(label), f"index {index} holds {ratio!r}")
    return array


def _damping_rule(ratio: float, name: str, received: str) -> None:
    if ratio < 0.0:
        raise ValueError(f"{name} must be >= 0; {received}")
    if ratio >= 1.0:
        raise ValueError(f"{name} must be a ratio of critical damping in [0, 1); {received}{_with_hint(ratio)}")


def check_period(value: ArrayLike, label: str = "period", *, rigid: bool = True) -> float:
    """One period T [s], >= 0 (0 is a rigid oscillator), or > 0 when `rigid` is False.

    Parameters
    ----------
    value : float
        The value received (a one-element sequence is accepted).
    label : str, default "period"
        Argument name or cell named in the message.
    rigid : bool, default True
        Accept T = 0. The yielding engine passes False: a rigid oscillator
        has no yield displacement.

    Returns
    -------
    float

    Raises
    ------
    TypeError
        Not a number.
    ValueError
        Not one finite number, negative, outside `budget.PERIOD_RANGE`, or 0
        when `rigid` is False.

    Examples
    --------
    >>> check_period(0.5)
    0.5
    """
    low, high = PERIOD_RANGE
    if type(value) is float and (value == 0.0 or low <= value <= high) and (rigid or value != 0.0):
        return value  # the common case on floats; NaN, negatives and the rest get the full checks below
    array = check_periods(value, label)
    if array.size != 1:
        raise ValueError(f"{named(label)} must be one number, got {array.size}; use a spectrum function for many")
    period = float(array[0])
    if not rigid and period == 0.0:
        raise ValueError(
            f"{named(label)} 0 is a rigid oscillator: it has no yield displacement, so its ductility is "
            "undefined; give a period > 0"
        )
    return period


def check_periods(values: ArrayLike, label: str = "periods") -> NDArray[np.float64]:
    """Periods T [s], each finite and >= 0 (0 is a rigid oscillator).

    Parameters
    ----------
    values : float or array_like (n,)
        The values received.
    label : str, default "periods"
        Argument name or range named in the message.

    Returns
    -------
    ndarray (n,)

    Raises
    ------
    TypeError, ValueError
        Not numbers; a non-finite or negative entry, or a positive one outside
        `budget.PERIOD_RANGE` (1e-12 to 1e6 s), named by its index.

    Examples
    --------
    >>> check_periods([0.0, 0.2]).tolist()
    [0.0, 0.2]
    """
    array = as_array(values, label)
    low, high = PERIOD_RANGE
    if array.shape[0] <= SMALL:
        if all(low <= period <= high or period == 0.0 for period in array.tolist()):  # each fine (NaN is not)
            return array
    elif bool((((array >= low) & (array <= high)) | (array == 0.0)).all()):
        return array
    check_finite(array, label)
    negative = np.flatnonzero(array < 0.0)
    if negative.size:
        index = int(negative[0])
        raise ValueError(f"{named(label)} must be >= 0 s; index {index} holds {float(array[index])!r}")
    low, high = PERIOD_RANGE
    outside = np.flatnonzero((array != 0.0) & ((array < low) | (array > high)))
    if outside.size:
        index = int(outside[0])
        raise LimitError(
            f"{named(label)} must be 0 (rigid) or lie in [{low:g}, {high:g}] s; index {index} holds "
            f"{float(array[index])!r}",
            "check the unit of the periods (seconds)",
            "check the unit of the periods (seconds)",
        )
    return array


def check_hardening(value: object, label: str = "hardening") -> float:
    """The post-yield stiffness ratio α, in `HARDENING_RANGE` = [0, 1).

    Parameters
    ----------
    value : float
        The value received.
    label : str, default "hardening"
        Argument name or cell named in the message.

    Returns
    -------
    float

    Raises
    ------
    TypeError
        Not a number.
    ValueError
        Not finite or outside [0, 1), with the percentage hint.

    Examples
    --------
    >>> check_hardening(0.03)
    0.03
    """
    alpha = as_float(value, label)
    low, high = HARDENING_RANGE
    if not low <= alpha < high:
        raise ValueError(
            f"{named(label)} must be a post-yield stiffness ratio in [{low:g}, {high:g}) (a fraction of the "
            "elastic stiffness; softening is not modelled, and a linear oscillator needs no hardening), "
            f"got {alpha!r}{_with_hint(alpha)}"
        )
    return alpha


def check_strength(
    yield_coefficient: object,
    reduction_factor: object,
    *,
    labels: tuple[str, str] = ("yield_coefficient", "reduction_factor"),
) -> tuple[float | None, float | None]:
    """Exactly one strength: a yield coefficient fy/(m·g) > 0 or a reduction factor R > 0.

    Parameters
    ----------
    yield_coefficient, reduction_factor : float or None
        The values received; exactly one must be given (an adapter that
        reads R alone passes ``None`` as the first).
    labels : (str, str)
        Names of the two in messages.

    Returns
    -------
    (float or None, float or None)
        The checked pair, None where not given.

    Raises
    ------
    TypeError
        The one given is not a number.
    ValueError
        Both or neither given; the one given is not finite or <= 0.

    Examples
    --------
    >>> check_strength(None, 4)
    (None, 4.0)
    """
    coefficient_label, reduction_label = labels
    if yield_coefficient is not None and reduction_factor is not None:
        raise ValueError(
            f"give exactly one of {named(coefficient_label)} and {named(reduction_label)}, not both "
            f"(got {yield_coefficient!r} and {reduction_factor!r})"
        )
    if yield_coefficient is None and reduction_factor is None:
        raise ValueError(
            f"give the strength as {named(coefficient_label)} (fy/(m·g)) or {named(reduction_label)} "
            "(peak elastic force / fy); got neither"
        )
    if yield_coefficient is not None:
        return positive(yield_coefficient, coefficient_label), None
    reduction = as_float(reduction_factor, reduction_label)
    if not reduction > 0.0:
        raise ValueError(
            f"{named(reduction_label)} must be > 0, got {reduction!r} (R = peak elastic force / yield "
            "strength: 1 keeps the oscillator just elastic, 4 gives a quarter of the elastic strength)"
        )
    return None, reduction


def check_ductilities(values: ArrayLike, label: str = "ductilities") -> NDArray[np.float64]:
    """Target ductilities μ, each finite and >= 1; a bad entry is named by its index.

    Parameters
    ----------
    values : float or array_like (n,)
        The values received.
    label : str, default "ductilities"
        Argument name or range named in the message.

    Returns
    -------
    ndarray (n,)

    Raises
    ------
    TypeError, ValueError
        Not numbers; an entry below 1 or not finite.

    Examples
    --------
    >>> check_ductilities([1, 4]).tolist()
    [1.0, 4.0]
    """
    array = as_vector(values, label)
    low = np.flatnonzero(array < 1.0)
    if low.size:
        index = int(low[0])
        raise ValueError(
            f"{named(label)} must be >= 1 (peak over yield displacement); "
            f"index {index} holds {float(array[index])!r}"
        )
    return array


def check_method(method: object, label: str = "method", *, yielding: bool = False) -> Method:
    """A method one of the engines can step: `resolve_method` plus the rules of the one Newmark step.

    Parameters
    ----------
    method : str, (beta, gamma) or Method
        As `resolve_method` accepts.
    label : str, default "method"
        Argument name or cell named in the message.
    yielding : bool, default False
        For the yielding engine, which has no exact solution.

    Returns
    -------
    Method

    Raises
    ------
    TypeError, ValueError
        As `resolve_method`; beta = 0 (the Newmark step is implicit, written
        with 1/beta); ``"exact"`` when `yielding`.

    Examples
    --------
    >>> check_method("exact").name
    'exact'
    """
    resolved = resolve_method(method)
    if not resolved.is_newmark:
        if yielding:
            raise ValueError(
                f"{named(label)} 'exact' applies to linear oscillators only; a yielding oscillator needs an "
                "implicit Newmark method: use 'average' or 'linear'"
            )
        return resolved
    if resolved.beta <= 0.0:
        raise ValueError(
            f"{named(label)} beta must be > 0: the Newmark step is implicit (beta 0, the explicit "
            f"central-difference step, is not offered), got {resolved.beta!r}; use 'average' or 'linear'"
        )
    if resolved.beta < MIN_BETA:
        # the step's coefficients scale as 1/(beta h²): below 1e-6 they pass 1e6/h² and, for a
        # subnormal beta, float64 altogether
        raise ValueError(
            f"{named(label)} beta must be >= {MIN_BETA:g} (the step divides by beta), got {resolved.beta!r}; "
            "use 'average' or 'linear'"
        )
    return resolved


#: Smallest Newmark beta accepted (see `check_method`).
MIN_BETA = 1e-6
