"""Compiled kernels for linear oscillators (numba, cached on disk).

Private layer: plain float64 arrays and floats in, arrays out, no checks.

Every linear method (Newmark with any beta/gamma, and the exact solution for
excitation linear between samples) advances the state (u, v) of a unit-mass
oscillator over one record step by the same affine map::

    u1 = A[0]*u0 + A[1]*v0 + A[4]*p0 + A[5]*p1
    v1 = A[2]*u0 + A[3]*v0 + A[6]*p0 + A[7]*p1

with p = -ü_g the load per unit mass at the two ends of the step; only the
eight coefficients differ between methods (built in ``_coefficients.py``).
``_advance`` is that map, the one recurrence every kernel here calls. The
total acceleration follows from equilibrium, ü + ü_g = -(c·v + k·u), with
c = A[8] = 2ζω and k = A[9] = ω².
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

#: Rows of a coefficient array (10, n_oscillators).
N_COEFFICIENTS = 10
#: Oscillators per parallel chunk: small enough for two state vectors and
#: ten coefficient rows to stay in the L1 cache, large enough to vectorise.
_CHUNK = 64


@njit(cache=True, inline="always")
def _advance(a, j, u, v, p0, p1):
    """One step of the shared affine recurrence for oscillator `j`."""
    u1 = a[0, j] * u + a[1, j] * v + a[4, j] * p0 + a[5, j] * p1
    v1 = a[2, j] * u + a[3, j] * v + a[6, j] * p0 + a[7, j] * p1
    return u1, v1


@njit(cache=True, parallel=True, fastmath=True)
def peaks(load, coef, u0, v0, out):
    """Peak |u|, |v| and |ü + ü_g| over all samples, many oscillators at once.

    Parameters
    ----------
    load : (n_samples,) float64, p = -ü_g [m/s²]
    coef : (10, n_osc) float64, rows as in the module docstring
    u0, v0 : (n_osc,) float64 initial state
    out : (3, n_osc) float64, filled with the three peaks

    Oscillators are interleaved in chunks so the inner loop over
    oscillators vectorises; chunks run in parallel threads.
    """
    n_osc = coef.shape[1]
    n_steps = load.shape[0] - 1
    n_chunks = (n_osc + _CHUNK - 1) // _CHUNK
    for chunk in prange(n_chunks):
        lo = chunk * _CHUNK
        hi = min(lo + _CHUNK, n_osc)
        m = hi - lo
        a = np.ascontiguousarray(coef[:, lo:hi])
        u = u0[lo:hi].copy()
        v = v0[lo:hi].copy()
        pu = np.empty(m)
        pv = np.empty(m)
        pa = np.empty(m)
        for j in range(m):
            pu[j] = abs(u[j])
            pv[j] = abs(v[j])
            pa[j] = abs(a[8, j] * v[j] + a[9, j] * u[j])
        for i in range(n_steps):
            p0 = load[i]
            p1 = load[i + 1]
            for j in range(m):
                u1, v1 = _advance(a, j, u[j], v[j], p0, p1)
                u[j] = u1
                v[j] = v1
                pu[j] = max(pu[j], abs(u1))
                pv[j] = max(pv[j], abs(v1))
                pa[j] = max(pa[j], abs(a[8, j] * v1 + a[9, j] * u1))
        for j in range(m):
            out[0, lo + j] = pu[j]
            out[1, lo + j] = pv[j]
            out[2, lo + j] = pa[j]


@njit(cache=True)
def history(load, coef, u0, v0, u, v):
    """Displacement and velocity histories of one oscillator (column 0 of `coef`).

    `u` and `v` (n_samples,) are filled; u[0] = u0, v[0] = v0.
    """
    u[0] = u0
    v[0] = v0
    for i in range(load.shape[0] - 1):
        u[i + 1], v[i + 1] = _advance(coef, 0, u[i], v[i], load[i], load[i + 1])


@njit(cache=True)
def compose(coef, substeps):
    """Coefficients of `substeps[j]` steps of size h = dt/substeps[j] in a row.

    `coef` holds the one-sub-step map of each oscillator. The load inside a
    record step is linear, so sub-step m (0-based) of s runs from
    p0 + (p1 - p0)·m/s to p0 + (p1 - p0)·(m + 1)/s and the composition is again
    an affine map in (u0, v0, p0, p1). Rows 8 and 9 are copied.
    """
    n_osc = coef.shape[1]
    out = coef.copy()
    for j in range(n_osc):
        s = substeps[j]
        if s == 1:
            continue
        # total map: [u; v] = T @ [u0; v0] + P0 * p0 + P1 * p1
        t00, t01, t10, t11 = 1.0, 0.0, 0.0, 1.0
        q0u, q0v, q1u, q1v = 0.0, 0.0, 0.0, 0.0
        a00, a01, a10, a11 = coef[0, j], coef[1, j], coef[2, j], coef[3, j]
        b0u, b1u, b0v, b1v = coef[4, j], coef[5, j], coef[6, j], coef[7, j]
        for m in range(s):
            w0 = m / s  # weight of p1 in the sub-step's starting load
            w1 = (m + 1) / s  # ... and in its ending load
            t00, t01, t10, t11 = (
                a00 * t00 + a01 * t10,
                a00 * t01 + a01 * t11,
                a10 * t00 + a11 * t10,
                a10 * t01 + a11 * t11,
            )
            q0u, q0v = (
                a00 * q0u + a01 * q0v + b0u * (1.0 - w0) + b1u * (1.0 - w1),
                a10 * q0u + a11 * q0v + b0v * (1.0 - w0) + b1v * (1.0 - w1),
            )
            q1u, q1v = (
                a00 * q1u + a01 * q1v + b0u * w0 + b1u * w1,
                a10 * q1u + a11 * q1v + b0v * w0 + b1v * w1,
            )
        out[0, j], out[1, j], out[2, j], out[3, j] = t00, t01, t10, t11
        out[4, j], out[5, j], out[6, j], out[7, j] = q0u, q1u, q0v, q1v
    return out
