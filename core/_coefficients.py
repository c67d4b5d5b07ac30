"""Coefficients of the one-step affine map for each linear method.

Private layer: plain arrays in, a (10, n) coefficient array out (row layout
in ``_kernels.py``), no checks. Unit mass: c = 2ζω, k = ω², load p = -ü_g.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import NDArray

from ._kernels import N_COEFFICIENTS
from ._newmark import linear_step, newmark_constants

#: Above this ωh the exact map uses the closed form; at or below it a power
#: series, which avoids the cancellation of the closed form for small ωh.
_SERIES_LIMIT = 1.0
#: Terms of the power series; (ωh)^n / n! < 1e-25 at n = 25 for ωh <= 1.
_SERIES_TERMS = 26


def newmark(omega, zeta, h, beta, gamma) -> NDArray[np.float64]:
    """Map coefficients of one Newmark step of size `h` for each oscillator (β > 0).

    The step is ``_newmark.linear_step`` on the constants of
    ``_newmark.newmark_constants``, the ones the yielding kernels use. It is
    linear in (u0, v0, p0, p1), so its coefficients are the step's response
    to each unit input in turn. One oscillator is evaluated on Python floats
    (the same IEEE double arithmetic, without numpy's per-call cost).
    """
    if np.size(omega) == 1 and np.size(zeta) == 1 and np.size(h) == 1:
        return newmark_one(float(np.ravel(omega)[0]), float(np.ravel(zeta)[0]), float(np.ravel(h)[0]), beta, gamma)
    omega = np.asarray(omega, dtype=np.float64)
    zeta = np.asarray(zeta, dtype=np.float64)
    h = np.asarray(h, dtype=np.float64)
    n = np.broadcast(omega, zeta, h).shape[0]
    out = np.empty((N_COEFFICIENTS, n))
    zero, one = np.zeros(n), np.ones(n)
    rows = ((0, 2), (1, 3), (4, 6), (5, 7))
    inputs = ((one, zero, zero, zero), (zero, one, zero, zero), (zero, zero, one, zero), (zero, zero, zero, one))
    constants = newmark_constants.py_func(np.broadcast_to(h, (n,)), beta, gamma)
    c, k = 2.0 * zeta * omega, omega * omega
    for (row_u, row_v), unit_input in zip(rows, inputs):
        out[row_u], out[row_v] = linear_step(constants, c, k, *unit_input)
    out[8] = 2.0 * zeta * omega
    out[9] = omega * omega
    return out


def newmark_one(omega: float, zeta: float, h: float, beta: float, gamma: float) -> NDArray[np.float64]:
    """`newmark` for one oscillator, on floats: (10, 1)."""
    constants = newmark_constants.py_func(h, beta, gamma)
    c, k = 2.0 * zeta * omega, omega * omega
    u_u, v_u = linear_step(constants, c, k, 1.0, 0.0, 0.0, 0.0)
    u_v, v_v = linear_step(constants, c, k, 0.0, 1.0, 0.0, 0.0)
    u_p0, v_p0 = linear_step(constants, c, k, 0.0, 0.0, 1.0, 0.0)
    u_p1, v_p1 = linear_step(constants, c, k, 0.0, 0.0, 0.0, 1.0)
    out = np.empty((N_COEFFICIENTS, 1))
    out[:, 0] = u_u, u_v, v_u, v_v, u_p0, u_p1, v_p0, v_p1, c, k
    return out


def exact(omega, zeta, h) -> NDArray[np.float64]:
    """Map coefficients of the exact solution for load linear over a step `h` (scalar or per oscillator).

    Notes
    -----
    State x = (u, v), x' = F x + G p with F = [[0, 1], [-k, -c]], G = (0, 1).
    For p linear from p0 to p1 over the step (Nigam & Jennings 1969)::

        x1 = Φ x0 + (Ψ1 - Ψ2/h) G p0 + (Ψ2/h) G p1
        Φ = exp(F h),  Ψ1 = F⁻¹(Φ - I),  Ψ2 = F⁻¹(Ψ1 - h I)

    Φ uses the closed form of the damped free vibration (ζ < 1). For ωh <= 1
    all three come from their power series Φ = Σ (Fh)ⁿ/n!,
    Ψ1 = h Σ (Fh)ⁿ/(n+1)!, Ψ2 = h² Σ (Fh)ⁿ/(n+2)!, which keeps full precision
    at long periods where F⁻¹ would cancel digits.

    References
    ----------
    Nigam, N. C., and Jennings, P. C. (1969). Calculation of response spectra
    from strong-motion earthquake records. Bulletin of the Seismological
    Society of America, 59(2), 909-922.
    """
    omega = np.asarray(omega, dtype=np.float64)
    zeta = np.asarray(zeta, dtype=np.float64)
    omega, zeta, step = np.broadcast_arrays(omega, zeta, np.asarray(h, dtype=np.float64))
    n = omega.shape[0]
    out = np.empty((N_COEFFICIENTS, n))
    c = 2.0 * zeta * omega
    k = omega * omega
    series = omega * step <= _SERIES_LIMIT
    closed = ~series

    # --- closed form (Nigam & Jennings 1969) -------------------------------
    w, z, cc, kk, h = omega[closed], zeta[closed], c[closed], k[closed], step[closed]
    wd = w * np.sqrt(1.0 - z * z)
    e = np.exp(-z * w * h)
    sn = np.sin(wd * h)
    cs = np.cos(wd * h)
    f11 = e * (cs + z * w / wd * sn)
    f12 = e * sn / wd
    f21 = -kk * e * sn / wd
    f22 = e * (cs - z * w / wd * sn)
    # F⁻¹ = (1/k) [[-c, -1], [k, 0]];  Ψ1 G = F⁻¹ (Φ G - G);  Ψ2 G = F⁻¹ (Ψ1 G - h G)
    g1u = (-cc * f12 - (f22 - 1.0)) / kk
    g1v = f12
    g2u = (-cc * g1u - (g1v - h)) / kk
    g2v = g1u
    out[:4, closed] = f11, f12, f21, f22
    out[4:8, closed] = g1u - g2u / h, g2u / h, g1v - g2v / h, g2v / h

    # --- power series -------------------------------------------------------
    cc, kk, h = c[series], k[series], step[series]
    m = series.sum()
    # z = (Fh)ⁿ e1 and y = (Fh)ⁿ e2, accumulated with 1/n!, 1/(n+1)!, 1/(n+2)!
    zu, zv = np.ones(m), np.zeros(m)
    yu, yv = np.zeros(m), np.ones(m)
    phi = np.zeros((4, m))
    g1 = np.zeros((2, m))
    g2 = np.zeros((2, m))
    for term in range(_SERIES_TERMS):
        f0 = 1.0 / math.factorial(term)
        f1 = 1.0 / math.factorial(term + 1)
        f2 = 1.0 / math.factorial(term + 2)
        phi += f0 * np.array([zu, yu, zv, yv])
        g1 += f1 * np.array([yu, yv])
        g2 += f2 * np.array([yu, yv])
        zu, zv = h * zv, h * (-kk * zu - cc * zv)
        yu, yv = h * yv, h * (-kk * yu - cc * yv)
    g1 *= h
    g2 *= h * h
    out[:4, series] = phi
    out[4:8, series] = g1[0] - g2[0] / h, g2[0] / h, g1[1] - g2[1] / h, g2[1] / h
    out[8] = c
    out[9] = k
    return out


def stability_limit(beta: float, gamma: float) -> float:
    """Largest stable h/T of undamped Newmark stepping (inf if unconditional).

    For γ >= 1/2 and 2β < γ the method is stable while
    ωh <= 1 / sqrt(γ/2 - β) (Newmark 1959); linear acceleration (β = 1/6,
    γ = 1/2) gives h/T <= √3/π ≈ 0.551.
    """
    if 2.0 * beta >= gamma:
        return math.inf
    return 1.0 / math.sqrt(gamma / 2.0 - beta) / (2.0 * math.pi)
