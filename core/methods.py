"""Integration methods by name: one table, one resolver, the sub-step rule.

Examples
--------
>>> from groundstep.core.methods import resolve_method, substep_counts
>>> method = resolve_method("linear")
>>> method.describe()
'linear acceleration (Newmark 1959), beta = 0.1666666667, gamma = 0.5'
>>> substep_counts(0.02, [0.1, 1.0], method, 0.1).tolist()  # Δt/T <= 0.1
[2, 1]
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from . import _kernels, _validate
from ._coefficients import stability_limit

__all__ = [
    "MAX_SUBSTEPS",
    "METHODS",
    "Method",
    "resolve_method",
    "substep_counts",
]


@dataclass(frozen=True, slots=True, eq=False)
class Method:
    """A resolved integration method; build it with `resolve_method`.

    Attributes
    ----------
    name : str
        ``"average"``, ``"linear"``, ``"newmark"`` (any other beta and gamma)
        or ``"exact"``.
    beta, gamma : float
        Newmark parameters; NaN for ``"exact"``.

    Notes
    -----
    A Method equals another with the same name and parameters, and equals
    its name as a string (``method == "exact"``), as a numpy dtype equals
    its name.
    """

    name: str
    beta: float
    gamma: float

    def __eq__(self, other: object) -> bool:
        if isinstance(other, str):
            return self.name == other.strip().lower()
        if not isinstance(other, Method):
            return NotImplemented
        return self.name == other.name and _same(self.beta, other.beta) and _same(self.gamma, other.gamma)

    def __hash__(self) -> int:
        return hash(self.name)  # equal to hash(name), as equality with the name requires

    def __repr__(self) -> str:
        if not self.is_newmark:
            return "Method('exact')"
        return f"Method({self.name!r}, beta={self.beta:.10g}, gamma={self.gamma:.10g})"

    def __str__(self) -> str:
        return self.name

    @property
    def is_newmark(self) -> bool:
        """True for every Newmark variant, False for the exact solution."""
        return self.name != "exact"

    @property
    def stability_limit(self) -> float:
        """Largest stable Δt/T of the undamped method (inf if unconditional)."""
        return stability_limit(self.beta, self.gamma) if self.is_newmark else math.inf

    def describe(self) -> str:
        """One line for reports and audit sheets."""
        if not self.is_newmark:
            return "exact solution for excitation linear between samples (Nigam & Jennings 1969)"
        label = {"average": "average acceleration", "linear": "linear acceleration"}.get(self.name, "Newmark")
        return f"{label} (Newmark 1959), beta = {self.beta:.10g}, gamma = {self.gamma:.10g}"


def _same(a: float, b: float) -> bool:
    """Equal floats, NaN equal to NaN (the parameters of the exact method)."""
    return a == b or (math.isnan(a) and math.isnan(b))


#: The named methods. Average acceleration is unconditionally stable;
#: linear acceleration is stable for Δt/T <= √3/π (Newmark 1959).
METHODS: dict[str, Method] = {
    "average": Method("average", 0.25, 0.5),
    "linear": Method("linear", 1.0 / 6.0, 0.5),
    "exact": Method("exact", math.nan, math.nan),
}


def resolve_method(method: object) -> Method:
    """Turn ``"average"``, ``"linear"``, ``"exact"`` or ``(beta, gamma)`` into a Method.

    Parameters
    ----------
    method : str, (beta, gamma) or Method
        A name of `METHODS` (any case), a Newmark pair, or a Method (returned
        as it is).

    Returns
    -------
    Method
        The named preset when a pair matches one.

    Raises
    ------
    ValueError
        Unknown name; gamma < 1/2 (the step would add energy: Newmark 1959);
        beta < 0 or beta > 1/2 or gamma > 1.
    TypeError
        Neither a string nor a pair of numbers.
    """
    if isinstance(method, Method):
        return method
    if isinstance(method, str):
        key = method.strip().lower()
        if key not in METHODS:
            accepted = ", ".join(repr(name) for name in METHODS)
            raise ValueError(f"`method` {method!r} is not known; use {accepted} or a (beta, gamma) pair")
        return METHODS[key]
    beta_value: object
    gamma_value: object
    try:
        beta_value, gamma_value = method  # type: ignore[misc]
    except (TypeError, ValueError):
        raise TypeError(
            f"`method` must be 'average', 'linear', 'exact' or a (beta, gamma) pair, got {method!r}"
        ) from None
    beta = _validate.as_float(beta_value, "method beta")
    gamma = _validate.as_float(gamma_value, "method gamma")
    if not 0.0 <= beta <= 0.5:
        raise ValueError(f"`method` beta must lie in [0, 0.5], got {beta!r}")
    if not 0.5 <= gamma <= 1.0:
        raise ValueError(
            f"`method` gamma must lie in [0.5, 1] (below 0.5 the step adds energy), got {gamma!r}"
        )
    for named in METHODS.values():
        if named.is_newmark and math.isclose(named.beta, beta, rel_tol=1e-12) and named.gamma == gamma:
            return named
    return Method("newmark", beta, gamma)


#: Most sub-steps per record step: 10,000 keeps a 20,000-sample record under
#: about a second per oscillator and admits periods down to dt/1000 at the
#: default ratio 0.1 (1e-5 s for dt = 0.01 s).
MAX_SUBSTEPS = 10_000


def substep_counts(
    dt: float, periods: ArrayLike, method: Method, max_step_ratio: float | None
) -> NDArray[np.int64]:
    """Sub-steps per record step that keep h/T within the accuracy and stability limits.

    h = dt / s must satisfy h/T <= `max_step_ratio` (``None`` turns it off)
    and, for Newmark methods, h/T <= the method's stability limit (never
    turned off). For Newmark methods the ratio limits the integration error;
    for the exact method, whose states are exact at any step, it sets how
    often peaks are read between samples. Rigid oscillators (T = 0) need one
    step.

    Parameters
    ----------
    dt : float
        Record step [s].
    periods : array_like
        Periods T [s], >= 0.
    method : Method
        The resolved method.
    max_step_ratio : float or None
        Largest h/T for accuracy; None turns that limit off.

    Returns
    -------
    ndarray of int64, shape of `periods`
        Sub-steps s per record step (>= 1).

    Raises
    ------
    ValueError
        When a period would need more than `MAX_SUBSTEPS` sub-steps.
    """
    periods = np.asarray(periods, dtype=np.float64)
    counts = np.ones(periods.shape, dtype=np.int64)
    limit = step_limit(method, max_step_ratio)
    if math.isinf(limit):
        return counts
    if periods.size == 1:  # one oscillator: the same rule on floats
        counts.flat[0] = substep_count(dt, float(periods.flat[0]), method, max_step_ratio, limit)
        return counts
    worst, needed = _kernels.substep_counts(float(dt), periods.reshape(-1), limit, MAX_SUBSTEPS, counts.reshape(-1))
    if worst >= 0:
        raise _too_many(dt, float(periods.flat[worst]), needed, limit, method)
    return counts


def step_limit(method: Method, max_step_ratio: float | None) -> float:
    """The largest h/T in force: `max_step_ratio` (None: no limit) or the method's stability limit."""
    return min(math.inf if max_step_ratio is None else max_step_ratio, method.stability_limit)


def substep_count(dt: float, period: float, method: Method, max_step_ratio: float | None,
                  limit: float | None = None) -> int:  # fmt: skip
    """`substep_counts` of one period, on floats (`limit` is `step_limit`, when the caller has it)."""
    if limit is None:
        limit = step_limit(method, max_step_ratio)
    if math.isinf(limit) or not period > 0.0:
        return 1
    # the rule of the compiled grid version, with its slack (a ratio at the limit keeps its count)
    needed = math.ceil(dt / (limit * period) * (1.0 - _kernels.SUBSTEP_SLACK))
    if needed > MAX_SUBSTEPS:
        raise _too_many(dt, period, float(needed), limit, method)
    return max(needed, 1)


def _too_many(dt: float, period: float, needed: float, limit: float, method: Method) -> Exception:
    """The refusal of a period that would need more than `MAX_SUBSTEPS` sub-steps."""
    from .budget import LimitError  # budget builds on numpy only; imported here to keep methods first

    rigid = "an oscillator this stiff moves with the ground: use period 0 (rigid, PSA = PGA)"
    return LimitError(
        f"period {period:g} s would need {needed:.3g} sub-steps "
        f"of the {dt:g} s record step to keep Δt/T <= {limit:.4g}; more than {MAX_SUBSTEPS}",
        rigid + ("" if method.stability_limit < math.inf else " or a larger `max_step_ratio`"),
        rigid,
    )
