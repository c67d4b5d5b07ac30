"""The one Newmark step: its constants, shared by the linear map and the yielding kernels.

Private layer, no checks. Newmark (1959) steps a unit-mass oscillator over
h with::

    u1 = u0 + h·v0 + h²·[(1/2 - β)·a0 + β·a1]
    v1 = v0 + h·[(1 - γ)·a0 + γ·a1]

Written in the displacement increment d = u1 - u0 (β > 0)::

    a1 = A·d - (B1·v0 + B2·a0),   A = 1/(β h²), B1 = 1/(β h), B2 = 1/(2β) - 1
    v1 = G·d + (G1·v0 + G2·a0),   G = γ/(β h),  G1 = 1 - γ/β, G2 = h·(1 - γ/(2β))

and equilibrium at the end of the step, a1 + c·v1 + fs(u0 + d) = p1, fixes d.
`newmark_constants` returns (A, B1, B2, G, G1, G2). The yielding kernels
solve for d by Newton's method; `linear_step` solves it in closed form for
the linear spring fs = k·u, and ``_coefficients.newmark`` builds the linear
map from `linear_step` on unit inputs, so both engines take the same step.

References
----------
Newmark, N. M. (1959). A method of computation for structural dynamics.
Journal of the Engineering Mechanics Division, ASCE, 85(EM3), 67-94.
"""

from __future__ import annotations

from ._jit import njit


@njit(cache=True, inline="always")
def newmark_constants(h, beta, gamma):
    """(A, B1, B2, G, G1, G2) of a Newmark step of size `h` (module docstring); β > 0.

    Compiled inside the kernels and the builders of the linear map
    (``_coefficients``); the arithmetic is the same in both.
    """
    a_coef = 1.0 / (beta * h * h)
    b1 = 1.0 / (beta * h)
    b2 = 0.5 / beta - 1.0
    g_coef = gamma / (beta * h)
    g1 = 1.0 - gamma / beta
    g2 = h * (1.0 - 0.5 * gamma / beta)
    return a_coef, b1, b2, g_coef, g1, g2


@njit(cache=True, inline="always")
def linear_step(constants, c, k, u0, v0, p0, p1):
    """One Newmark step of the linear oscillator ü + c·u̇ + k·u = p from its constants.

    The increment form of the module docstring with fs = k·u: a0 from
    equilibrium at the start, then d = (q - k·u0) / (A + c·G + k) with
    q = p1 + (B1·v0 + B2·a0) - c·(G1·v0 + G2·a0). Returns (u1, v1).
    Compiled on floats; ``.py_func`` runs the same arithmetic elementwise on
    numpy arrays.
    """
    a_coef, b1, b2, g_coef, g1, g2 = constants
    a0 = p0 - c * v0 - k * u0
    bq = b1 * v0 + b2 * a0
    vq = g1 * v0 + g2 * a0
    d = (p1 + bq - c * vq - k * u0) / (a_coef + c * g_coef + k)
    return u0 + d, g_coef * d + vq
