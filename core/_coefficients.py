"""Coefficients of the one-step affine map for each linear method.

Private layer: plain arrays in, a (10, n) coefficient array out (row layout
in ``_kernels.py``), no checks. Unit mass: c = 2ζω, k = ω², load p = -ü_g.
The maps are built in compiled code, one oscillator at a time, on the same
IEEE double arithmetic the former numpy expressions did (no fastmath: no
reassociation, no fused multiply-adds), so the coefficients are the same
bits; the spectrum builders write them straight in the kernels' sorted
order, with the load rows negated when the kernel is handed ü_g.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import NDArray

from ._jit import njit
from ._kernels import N_COEFFICIENTS
from ._newmark import linear_step, newmark_constants

#: Above this ωh the exact map uses the closed form; at or below it a power
#: series, which avoids the cancellation of the closed form for small ωh.
_SERIES_LIMIT = 1.0
#: Terms of the power series; (ωh)^n / n! < 1e-25 at n = 25 for ωh <= 1.
_SERIES_TERMS = 26


def _vector(value) -> NDArray[np.float64]:
    return np.ascontiguousarray(value, dtype=np.float64).reshape(-1)


def newmark(omega, zeta, h, beta, gamma) -> NDArray[np.float64]:
    """Map coefficients of one Newmark step of size `h` for each oscillator (β > 0), (10, n).

    The step is ``_newmark.linear_step`` on the constants of
    ``_newmark.newmark_constants``, the ones the yielding kernels use. It is
    linear in (u0, v0, p0, p1), so its coefficients are the step's response
    to each unit input in turn (``_newmark_column``, compiled).
    """
    omega, zeta, h = np.broadcast_arrays(_vector(omega), _vector(zeta), _vector(h))
    out = np.empty((N_COEFFICIENTS, omega.shape[0]))
    _newmark_columns(out, np.ascontiguousarray(omega), np.ascontiguousarray(zeta), np.ascontiguousarray(h),
                     float(beta), float(gamma))  # fmt: skip
    return out


@njit(cache=True, inline="always")
def _newmark_column(out, j, omega, zeta, h, beta, gamma, sign):
    """Column `j` of `out`: the map of one Newmark step, load rows A4..A7 times `sign` (1 or -1)."""
    constants = newmark_constants(h, beta, gamma)
    c, k = 2.0 * zeta * omega, omega * omega
    u_u, v_u = linear_step(constants, c, k, 1.0, 0.0, 0.0, 0.0)
    u_v, v_v = linear_step(constants, c, k, 0.0, 1.0, 0.0, 0.0)
    u_p0, v_p0 = linear_step(constants, c, k, 0.0, 0.0, 1.0, 0.0)
    u_p1, v_p1 = linear_step(constants, c, k, 0.0, 0.0, 0.0, 1.0)
    out[0, j], out[1, j], out[2, j], out[3, j] = u_u, u_v, v_u, v_v
    out[4, j], out[5, j], out[6, j], out[7, j] = sign * u_p0, sign * u_p1, sign * v_p0, sign * v_p1
    out[8, j], out[9, j] = c, k


@njit(cache=True)
def _newmark_columns(out, omega, zeta, h, beta, gamma):
    for j in range(omega.shape[0]):
        _newmark_column(out, j, omega[j], zeta[j], h[j], beta, gamma, 1.0)


@njit(cache=True)
def newmark_one(omega, zeta, h, beta, gamma, sign):
    """`newmark` for one oscillator on floats: its (10,) map, load rows times `sign`."""
    out = np.empty((N_COEFFICIENTS, 1))
    _newmark_column(out, 0, omega, zeta, h, beta, gamma, sign)
    return out[:, 0]


#: 1/n!, 1/(n+1)!, 1/(n+2)! of each term n of the power series of the exact map (Python's
#: float division of 1.0 by the integer factorial).
_SERIES_FACTORS = np.array(
    [[1.0 / math.factorial(term + shift) for shift in range(3)] for term in range(_SERIES_TERMS)]
)


def exact(omega, zeta, h, sign: float = 1.0) -> NDArray[np.float64]:
    """Map coefficients of the exact solution for load linear over a step `h` (scalar or per oscillator).

    Load rows A4..A7 are multiplied by `sign` (1, or -1 for a kernel stepping ü_g instead of -ü_g).

    Notes
    -----
    State x = (u, v), x' = F x + G p with F = [[0, 1], [-k, -c]], G = (0, 1).
    For p linear from p0 to p1 over the step (Nigam & Jennings 1969)::

        x1 = Φ x0 + (Ψ1 - Ψ2/h) G p0 + (Ψ2/h) G p1
        Φ = exp(F h),  Ψ1 = F⁻¹(Φ - I),  Ψ2 = F⁻¹(Ψ1 - h I)

    Φ uses the closed form of the damped free vibration (ζ < 1). For ωh <= 1
    all three come from their power series Φ = Σ (Fh)ⁿ/n!,
    Ψ1 = h Σ (Fh)ⁿ/(n+1)!, Ψ2 = h² Σ (Fh)ⁿ/(n+2)!, which keeps full precision
    at long periods where F⁻¹ would cancel digits. The closed form's exp,
    sin and cos are numpy's (``exact_trig``), the rest compiled
    (``_exact_column``).

    References
    ----------
    Nigam, N. C., and Jennings, P. C. (1969). Calculation of response spectra
    from strong-motion earthquake records. Bulletin of the Seismological
    Society of America, 59(2), 909-922.
    """
    omega, zeta, h = (np.ascontiguousarray(a) for a in np.broadcast_arrays(_vector(omega), _vector(zeta), _vector(h)))
    out = np.empty((N_COEFFICIENTS, omega.shape[0]))
    arguments = np.empty((2, omega.shape[0]))
    _exact_arguments(arguments, omega, zeta, h)
    _exact_columns(out, omega, zeta, h, exact_trig(arguments), _SERIES_FACTORS, float(sign))
    return out


def exact_trig(arguments: NDArray[np.float64]) -> NDArray[np.float64]:
    """exp(-ζωh), sin(ω_d h), cos(ω_d h) (3, n) from the arguments (2, n) of ``_exact_arguments``.

    numpy's exp, sin and cos, not the compiled ones: a numpy build may use
    its own SIMD routines, whose last bit can differ from the C library's.
    """
    trig = np.empty((3, arguments.shape[1]))
    np.exp(arguments[0], out=trig[0])
    np.sin(arguments[1], out=trig[1])
    np.cos(arguments[1], out=trig[2])
    return trig


@njit(cache=True, inline="always")
def _exact_argument(omega, zeta, h):
    """(-ζωh, ω_d h) of one oscillator, ω_d = ω·sqrt(1 - ζ²)."""
    wd = omega * np.sqrt(1.0 - zeta * zeta)
    return -zeta * omega * h, wd * h


@njit(cache=True)
def _exact_arguments(arguments, omega, zeta, h):
    for j in range(omega.shape[0]):
        arguments[0, j], arguments[1, j] = _exact_argument(omega[j], zeta[j], h[j])


@njit(cache=True, inline="always")
def _exact_column(out, j, omega, zeta, h, e, sn, cs, factors, sign):
    """Column `j` of `out`: the exact map (see `exact`), e, sn, cs from ``exact_trig``."""
    c = 2.0 * zeta * omega
    k = omega * omega
    if omega * h <= _SERIES_LIMIT:
        # z = (Fh)ⁿ e1 and y = (Fh)ⁿ e2, accumulated with 1/n!, 1/(n+1)!, 1/(n+2)!
        zu, zv, yu, yv = 1.0, 0.0, 0.0, 1.0
        phi0, phi1, phi2, phi3 = 0.0, 0.0, 0.0, 0.0
        g1u, g1v, g2u, g2v = 0.0, 0.0, 0.0, 0.0
        for term in range(factors.shape[0]):
            f0, f1, f2 = factors[term, 0], factors[term, 1], factors[term, 2]
            phi0, phi1, phi2, phi3 = phi0 + f0 * zu, phi1 + f0 * yu, phi2 + f0 * zv, phi3 + f0 * yv
            g1u, g1v = g1u + f1 * yu, g1v + f1 * yv
            g2u, g2v = g2u + f2 * yu, g2v + f2 * yv
            zu, zv = h * zv, h * (-k * zu - c * zv)
            yu, yv = h * yv, h * (-k * yu - c * yv)
        g1u, g1v = g1u * h, g1v * h
        hh = h * h
        g2u, g2v = g2u * hh, g2v * hh
        out[0, j], out[1, j], out[2, j], out[3, j] = phi0, phi1, phi2, phi3
    else:  # closed form (Nigam & Jennings 1969)
        wd = omega * np.sqrt(1.0 - zeta * zeta)
        f11 = e * (cs + zeta * omega / wd * sn)
        f12 = e * sn / wd
        f21 = -k * e * sn / wd
        f22 = e * (cs - zeta * omega / wd * sn)
        # F⁻¹ = (1/k) [[-c, -1], [k, 0]];  Ψ1 G = F⁻¹ (Φ G - G);  Ψ2 G = F⁻¹ (Ψ1 G - h G)
        g1u = (-c * f12 - (f22 - 1.0)) / k
        g1v = f12
        g2u = (-c * g1u - (g1v - h)) / k
        g2v = g1u
        out[0, j], out[1, j], out[2, j], out[3, j] = f11, f12, f21, f22
    out[4, j], out[5, j] = sign * (g1u - g2u / h), sign * (g2u / h)
    out[6, j], out[7, j] = sign * (g1v - g2v / h), sign * (g2v / h)
    out[8, j], out[9, j] = c, k


@njit(cache=True)
def _exact_columns(out, omega, zeta, h, trig, factors, sign):
    for j in range(omega.shape[0]):
        _exact_column(out, j, omega[j], zeta[j], h[j], trig[0, j], trig[1, j], trig[2, j], factors, sign)


# --- spectra: the maps in the kernels' sorted order ------------------------------------------
# A spectrum's oscillators are its flat grid f = d·n_periods + p (damping d, period p); `order`
# lists the moving ones (period > 0) sorted by sub-step count (``_kernels.spectrum_plan``).


@njit(cache=True, inline="always")
def _grid_oscillator(f, periods, dampings, counts, dt):
    """(ω, ζ, h) of flat oscillator `f`: ω = 2π/T, h = dt/s."""
    n_periods = periods.shape[0]
    return 2.0 * np.pi / periods[f % n_periods], dampings[f // n_periods], dt / counts[f]


@njit(cache=True)
def newmark_sorted(order, periods, dampings, counts, dt, beta, gamma, sign):
    """(10, len(order)) Newmark maps of ONE sub-step of the oscillators `order` lists, in that order."""
    out = np.empty((N_COEFFICIENTS, order.shape[0]))
    for j in range(order.shape[0]):
        omega, zeta, h = _grid_oscillator(order[j], periods, dampings, counts, dt)
        _newmark_column(out, j, omega, zeta, h, beta, gamma, sign)
    return out


@njit(cache=True)
def exact_sorted_arguments(order, periods, dampings, counts, dt):
    """The arguments (2, len(order)) of ``exact_trig`` for `exact_sorted`."""
    arguments = np.empty((2, order.shape[0]))
    for j in range(order.shape[0]):
        omega, zeta, h = _grid_oscillator(order[j], periods, dampings, counts, dt)
        arguments[0, j], arguments[1, j] = _exact_argument(omega, zeta, h)
    return arguments


@njit(cache=True)
def _exact_sorted(order, periods, dampings, counts, dt, trig, factors, sign):
    out = np.empty((N_COEFFICIENTS, order.shape[0]))
    for j in range(order.shape[0]):
        omega, zeta, h = _grid_oscillator(order[j], periods, dampings, counts, dt)
        _exact_column(out, j, omega, zeta, h, trig[0, j], trig[1, j], trig[2, j], factors, sign)
    return out


def exact_sorted(order, periods, dampings, counts, dt, sign):
    """(10, len(order)) exact maps of ONE sub-step of the oscillators `order` lists, in that order."""
    trig = exact_trig(exact_sorted_arguments(order, periods, dampings, counts, dt))
    return _exact_sorted(order, periods, dampings, counts, dt, trig, _SERIES_FACTORS, sign)


def stability_limit(beta: float, gamma: float) -> float:
    """Largest stable h/T of undamped Newmark stepping (inf if unconditional).

    For γ >= 1/2 and 2β < γ the method is stable while
    ωh <= 1 / sqrt(γ/2 - β) (Newmark 1959); linear acceleration (β = 1/6,
    γ = 1/2) gives h/T <= √3/π ≈ 0.551.
    """
    if 2.0 * beta >= gamma:
        return math.inf
    return 1.0 / math.sqrt(gamma / 2.0 - beta) / (2.0 * math.pi)
