"""Compiled kernels for linear oscillators (numba, cached on disk).

Private layer: plain float64 arrays and floats in, arrays out, no checks.

Every linear method (Newmark with any beta/gamma, and the exact solution for
excitation linear between samples) advances the state (u, v) of a unit-mass
oscillator over one step (a record step or a sub-step of it) by the same
affine map::

    u1 = A[0]*u0 + A[1]*v0 + A[4]*p0 + A[5]*p1
    v1 = A[2]*u0 + A[3]*v0 + A[6]*p0 + A[7]*p1

with p = -ü_g the load per unit mass at the two ends of the step; only the
eight coefficients differ between methods (built in ``_coefficients.py``).
``_advance`` is that map, the one recurrence every kernel here calls. The
total acceleration follows from equilibrium, ü + ü_g = -(c·v + k·u), with
c = A[8] = 2ζω and k = A[9] = ω².

Histories at the record's samples use the map of s sub-steps composed into
one record step (``compose``); peaks are read at every sub-step (``peaks``,
``substep_peaks``), as if the record had been resampled linearly onto the
sub-step grid.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

#: Rows of a coefficient array (10, n_oscillators).
N_COEFFICIENTS = 10
#: Oscillators per parallel chunk: small enough for the chunk's work array
#: (state, peaks and ten coefficient rows) to stay in the L1 cache, large
#: enough to vectorise.
CHUNK = 64


@njit(cache=True, inline="always")
def _advance(a, j, u, v, p0, p1):
    """One step of the shared affine recurrence for oscillator `j`."""
    u1 = a[0, j] * u + a[1, j] * v + a[4, j] * p0 + a[5, j] * p1
    v1 = a[2, j] * u + a[3, j] * v + a[6, j] * p0 + a[7, j] * p1
    return u1, v1


# Rows of the per-chunk work array of `peaks`: state, peaks, then the map.
_U, _V, _PU, _PV, _PA = 0, 1, 2, 3, 4
_A0 = 5  # rows _A0 .. _A0 + 9 hold the ten coefficients
_ROWS = _A0 + N_COEFFICIENTS


def chunk_starts(substeps, size=CHUNK):
    """Chunk boundaries over oscillators sorted by sub-step count.

    Each chunk holds at most `size` oscillators that share one sub-step
    count, so a chunk's inner loop has one trip count. `substeps` must be
    sorted ascending.
    """
    starts = [0]
    n = substeps.shape[0]
    while starts[-1] < n:
        lo = starts[-1]
        same = int(np.searchsorted(substeps, substeps[lo], side="right"))
        starts.append(min(lo + size, same))
    return np.array(starts, dtype=np.int64)


@njit(cache=True, parallel=True, fastmath=True)
def peaks(load, coef, substeps, starts, u0, v0, out):
    """Peak |u|, |v| and |ü + ü_g| of many oscillators, read at every sub-step.

    Parameters
    ----------
    load : (n_samples,) float64, p = -ü_g [m/s²]
    coef : (10, n_osc) float64, the map of ONE sub-step (h = dt / s)
    substeps : (n_osc,) int64, sub-steps s per record step, equal within a chunk
    starts : (n_chunks + 1,) int64, chunk boundaries (``chunk_starts``)
    u0, v0 : (n_osc,) float64 initial state
    out : (3, n_osc) float64, filled with the three peaks

    The load is linear inside each record step, so sub-step m of s runs from
    p0 + (p1 - p0)·m/s to p0 + (p1 - p0)·(m + 1)/s. Oscillators of a chunk
    are interleaved so the loop over them vectorises; all per-oscillator
    values live in one work array whose row stride the compiler knows, so
    it can prove the rows do not overlap. Chunks run in parallel threads.
    """
    n_steps = load.shape[0] - 1
    n_chunks = starts.shape[0] - 1
    for chunk in prange(n_chunks):
        lo = starts[chunk]
        m = starts[chunk + 1] - lo
        s = substeps[lo]
        w = np.zeros((_ROWS, CHUNK))
        for j in range(m):
            for r in range(N_COEFFICIENTS):
                w[_A0 + r, j] = coef[r, lo + j]
            w[_U, j] = u0[lo + j]
            w[_V, j] = v0[lo + j]
            w[_PU, j] = abs(u0[lo + j])
            w[_PV, j] = abs(v0[lo + j])
            w[_PA, j] = abs(w[_A0 + 8, j] * v0[lo + j] + w[_A0 + 9, j] * u0[lo + j])
        a = w[_A0:, :]
        for i in range(n_steps):
            p0 = load[i]
            dp = (load[i + 1] - p0) / s
            for sub in range(s):
                pa = p0 + dp * sub
                pb = p0 + dp * (sub + 1)
                for j in range(m):
                    u1, v1 = _advance(a, j, w[_U, j], w[_V, j], pa, pb)
                    w[_U, j] = u1
                    w[_V, j] = v1
                    w[_PU, j] = max(w[_PU, j], abs(u1))
                    w[_PV, j] = max(w[_PV, j], abs(v1))
                    w[_PA, j] = max(w[_PA, j], abs(a[8, j] * v1 + a[9, j] * u1))
        for j in range(m):
            out[0, lo + j] = w[_PU, j]
            out[1, lo + j] = w[_PV, j]
            out[2, lo + j] = w[_PA, j]


@njit(cache=True)
def substep_peaks(load, coef, substeps, u0, v0, out):
    """Peaks of one oscillator (column 0 of the ONE-sub-step `coef`) and their times.

    `out` (6,) receives max |u|, max |v|, max |ü + ü_g| over every sub-step,
    then the time of the first occurrence of each, in record steps (multiply
    by dt for seconds).
    """
    s = substeps
    u, v = u0, v0
    c, k = coef[8, 0], coef[9, 0]
    pu, pv, pa = abs(u), abs(v), abs(c * v + k * u)
    tu, tv, ta = 0.0, 0.0, 0.0
    for i in range(load.shape[0] - 1):
        p0 = load[i]
        dp = (load[i + 1] - p0) / s
        for sub in range(s):
            u, v = _advance(coef, 0, u, v, p0 + dp * sub, p0 + dp * (sub + 1))
            when = i + (sub + 1) / s
            if abs(u) > pu:
                pu, tu = abs(u), when
            if abs(v) > pv:
                pv, tv = abs(v), when
            at = abs(c * v + k * u)
            if at > pa:
                pa, ta = at, when
    out[0], out[1], out[2] = pu, pv, pa
    out[3], out[4], out[5] = tu, tv, ta


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
