"""Default settings of groundstep: one home for each, with its meaning and source.

Every public function and adapter takes its defaults from here.

Examples
--------
>>> from groundstep.core.defaults import DEFAULT_PERIOD_RANGE, default_periods
>>> periods = default_periods()
>>> periods.size == DEFAULT_PERIOD_RANGE[2], float(periods[0]), float(periods[-1])
(True, 0.02, 10.0)
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

__all__ = [
    "DEFAULT_DAMPING",
    "DEFAULT_DAMPINGS",
    "DEFAULT_MAX_ITERATIONS",
    "DEFAULT_PERIOD_RANGE",
    "DEFAULT_STEP_RATIO",
    "DEFAULT_TOLERANCE",
    "DEFAULT_YIELDING_STEP_RATIO",
    "HARDENING_RANGE",
    "default_periods",
]

#: Largest Δt/T for Newmark stepping before a record step is split: a tenth
#: of the period is common practice for the accuracy of peak response (the
#: period error of average acceleration is then about (ωΔt)²/12 ≈ 3 %).
DEFAULT_STEP_RATIO = 0.1

#: Largest Δt/T for yielding (bilinear) oscillators. Newmark stepping is
#: second order (Newmark 1959), but a yield or unloading event inside a step
#: costs accuracy: at Δt/T = 0.1 ductility was off the converged solution by
#: up to 5 % (T = 0.12 s, 10 s record at 0.01 s). The error falls as (Δt/T)²,
#: so 0.02 (25 times smaller) keeps ductility, peak and residual displacement
#: and hysteretic energy within 1 % of an event-driven reference
#: (tests/test_yielding_accuracy.py); the cost is at most 5 times the steps,
#: only at periods below 50·dt.
DEFAULT_YIELDING_STEP_RATIO = 0.02

#: Ratio of critical damping of one oscillator: 5 % is the value design
#: spectra are commonly given for (common practice).
DEFAULT_DAMPING = 0.05

#: Dampings of a spectrum table: 2 %, 5 % and 10 % of critical (common practice).
DEFAULT_DAMPINGS = (0.02, 0.05, 0.10)

#: (shortest [s], longest [s], count) of the default log-spaced period grid:
#: 0.02 s to 10 s covers the periods of buildings and bridges; 80 periods
#: give about 30 per decade (common practice).
DEFAULT_PERIOD_RANGE = (0.02, 10.0, 80)

#: Accepted residual force of the yielding solver, as a fraction of the
#: reference force fy/m + max|ü_g|. The spring is piecewise linear, so
#: Newton's method ends on the exact root; 1e-9 leaves room only for round-off.
DEFAULT_TOLERANCE = 1e-9

#: Newton iterations per step of the yielding solver; two are the norm at a
#: change of branch when Δt/T <= 0.1, so 20 is ample.
DEFAULT_MAX_ITERATIONS = 20

#: [low, high) of the post-yield stiffness ratio α (hardening): 0 is
#: elastoplastic; α < 0 (softening) is not modelled and α >= 1 would not yield.
HARDENING_RANGE = (0.0, 1.0)


def default_periods() -> NDArray[np.float64]:
    """The default period grid [s]: `period_grid` over `DEFAULT_PERIOD_RANGE`.

    Returns
    -------
    ndarray (80,)
        Log-spaced periods from 0.02 s to 10 s, both included.

    Examples
    --------
    >>> default_periods()[:2].round(4)
    array([0.02  , 0.0216])
    """
    from .linear import period_grid  # linear imports this module

    return period_grid(*DEFAULT_PERIOD_RANGE)
