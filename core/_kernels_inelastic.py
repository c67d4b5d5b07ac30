"""Compiled kernels for yielding (bilinear) oscillators (numba, cached on disk).

Private layer: plain float64 arrays and floats in, arrays out, no checks.

Unit mass throughout: c = 2ζω, k = ω², load p = -ü_g, restoring force fs
and yield force fy per unit mass [m/s²].

The one recurrence
------------------
Each step of size h is an implicit Newmark step (Newmark 1959) written in
the displacement increment d = u1 - u0::

    ü1 = A·d - bq,       A = 1/(β h²),  bq = v0/(β h) + (1/(2β) - 1)·ü0
    u̇1 = G·d + vq,       G = γ/(β h),   vq = (1 - γ/β)·v0 + h·(1 - γ/(2β))·ü0
    R(d) = p1 - ü1 - c·u̇1 - fs(d) = q - M·d - fs(d),
           q = p1 + bq - c·vq,  M = A + c·G

and R(d) = 0 is solved by Newton-Raphson, d += R / (M + k_t), with k_t the
tangent of the hysteresis branch (k elastic, α·k yielding). The first
iteration starts from d = 0 with the tangent of the branch the oscillator
was on at the end of the previous step.

The bilinear spring with kinematic hardening (post-yield stiffness α·k) is
evaluated from the last converged state (u0, fs0) along a monotone path to
u0 + d (return mapping): the elastic trial fs0 + k·d is clipped to the
bounding lines α·k·u ± (1 - α)·fy. Because fs(d) is piecewise linear,
Newton's method lands on the exact root once it is on the right branch;
two iterations are the norm at a change of branch, one otherwise.

The constants A, B1 = 1/(β h), B2 = 1/(2β) - 1, G, G1 = 1 - γ/β and
G2 = h·(1 - γ/(2β)) come from ``_newmark.newmark_constants``, the same
function the linear map is built from (``_coefficients.newmark``).
``_predict``, ``_spring`` and ``_step_constants`` are that recurrence; both
kernels here (one history with energies and step sub-division, many peaks
interleaved so the loop over oscillators vectorises) call them.
"""

from __future__ import annotations

import numpy as np

from ._jit import njit, prange
from ._newmark import newmark_constants

#: Oscillators per parallel chunk (as in ``_kernels.py``): two dozen state
#: and constant vectors of this length stay in the L1 cache and vectorise.
CHUNK = 64
#: Length of the `info` array filled by `history`; indices below.
INFO_SIZE = 10
INFO_STATUS = 0  # 0 converged, 1 a step failed even after the finest split
INFO_FAIL_TIME = 1  # start time [s] of the piece that failed
INFO_FAIL_RESIDUAL = 2  # |R| [m/s²] after the last iteration there
INFO_ITERATIONS = 3  # Newton iterations (tangent solves) in all
INFO_EXCURSIONS = 4  # entries into a yielding branch
INFO_RETRIED = 5  # sub-steps that had to be split to converge
INFO_PIECES = 6  # largest split used
INFO_YIELDING = 7  # sub-steps that ended on a yielding branch
INFO_PEAK = 8  # max |u| [m] over every sub-step
INFO_PEAK_TIME = 9  # first time [s] of that peak


@njit(cache=True, inline="always")
def _step_constants(h, beta, gamma, k, c, hardening):
    """Constants of a Newmark step of size `h`: the shared ``newmark_constants`` and the tangents."""
    a_coef, b1, b2, g_coef, g1, g2 = newmark_constants(h, beta, gamma)
    m_eff = a_coef + c * g_coef
    inv_el = 1.0 / (m_eff + k)
    inv_pl = 1.0 / (m_eff + hardening * k)
    return a_coef, b1, b2, g_coef, g1, g2, m_eff, inv_el, inv_pl


@njit(cache=True, inline="always")
def _predict(v0, a0, p1, c, b1, b2, g1, g2):
    """q, bq, vq of the residual R(d) = q - M·d - fs(d) (module docstring)."""
    bq = b1 * v0 + b2 * a0
    vq = g1 * v0 + g2 * a0
    return p1 + bq - c * vq, bq, vq


@njit(cache=True, inline="always")
def _spring(d, u0, fs0, k, hk, fyr):
    """Bilinear spring force at u0 + d reached from (u0, fs0), and its branch.

    `hk` = α·k, `fyr` = (1 - α)·fy. Branch +1 / -1: on the upper / lower
    bounding line (yielding); 0: elastic. Branch-free so it vectorises.
    """
    u1 = u0 + d
    trial = fs0 + k * d
    upper = hk * u1 + fyr
    lower = hk * u1 - fyr
    force = min(max(trial, lower), upper)
    branch = (1.0 if trial > upper else 0.0) - (1.0 if trial < lower else 0.0)
    return force, branch


@njit(cache=True, inline="always")
def _spring_work(d, fs0, fs1, k, hk):
    """∫ fs du over the step's monotone path: elastic part, then yielding part.

    The elastic length de follows from fs1 - fs0 = k·de + α·k·(d - de); for
    an elastic step de = d and this is the trapezoid rule, exact for a line.
    """
    de = (fs1 - fs0 - hk * d) / (k - hk)
    fc = fs0 + k * de
    return 0.5 * (fs0 + fc) * de + 0.5 * (fc + fs1) * (d - de)


@njit(cache=True)
def _newton(u0, v0, a0, fs0, br0, p1, c, k, hk, fyr, const, tol, max_iter):
    """One implicit step by Newton-Raphson; returns the new state and status."""
    a_coef, b1, b2, g_coef, g1, g2, m_eff, inv_el, inv_pl = const
    q, bq, vq = _predict(v0, a0, p1, c, b1, b2, g1, g2)
    d = (q - fs0) * (inv_el if br0 == 0.0 else inv_pl)
    iterations = 1
    while True:
        force, branch = _spring(d, u0, fs0, k, hk, fyr)
        residual = q - m_eff * d - force
        if abs(residual) <= tol or iterations >= max_iter:
            break
        d += residual * (inv_el if branch == 0.0 else inv_pl)
        iterations += 1
    ok = abs(residual) <= tol
    return ok, d, g_coef * d + vq, a_coef * d - bq, force, branch, iterations, abs(residual)


@njit(cache=True)
def history(load, dt, substeps, k, c, fy, hardening, beta, gamma, tol, max_iter, max_pieces,
            u, v, fs, e_input, e_damping, e_spring, info):  # fmt: skip
    """Histories of one yielding oscillator at the record's sample times.

    The peak |u| and its time are read at every sub-step (info[INFO_PEAK],
    info[INFO_PEAK_TIME]), as in the linear kernels.

    Parameters
    ----------
    load : (n,) p = -ü_g [m/s²]
    dt : record step [s]; `substeps` equal sub-steps per record step,
        load linear in between
    k, c, fy, hardening : ω², 2ζω, yield force per unit mass, α
    beta, gamma : Newmark parameters (beta > 0)
    tol : largest accepted |R| [m/s²]; max_iter : Newton iterations per step
    max_pieces : finest split (a power of two) of a sub-step that fails
    u, v, fs, e_input, e_damping, e_spring : (n,) outputs; energies per unit
        mass [m²/s²]: ∫p du, ∫c u̇ du, ∫fs du (trapezoid in time for the
        first two, exact along the bilinear path for the third)
    info : (INFO_SIZE,) output, indices INFO_*

    A sub-step that does not converge is repeated from its start as 2, 4, …,
    `max_pieces` equal pieces. If the finest split fails, the kernel stops
    with info[INFO_STATUS] = 1 and the time and residual of the failure.
    """
    hk = hardening * k
    fyr = (1.0 - hardening) * fy
    h = dt / substeps
    base = _step_constants(h, beta, gamma, k, c, hardening)
    ui, vi, ai, fi, bi = 0.0, 0.0, load[0], 0.0, 0.0
    ei, ed, es = 0.0, 0.0, 0.0
    iterations, excursions, retried, pieces_used, yielding = 0, 0, 0, 1, 0
    peak, peak_time = 0.0, 0.0
    u[0], v[0], fs[0] = 0.0, 0.0, 0.0
    e_input[0], e_damping[0], e_spring[0] = 0.0, 0.0, 0.0
    info[INFO_STATUS] = 0.0
    for i in range(load.shape[0] - 1):
        p0 = load[i]
        dp = (load[i + 1] - p0) / substeps
        for sub in range(substeps):
            pieces = 1
            while True:
                piece_h = h / pieces
                const = base if pieces == 1 else _step_constants(piece_h, beta, gamma, k, c, hardening)
                su, sv, sa, sf, sb = ui, vi, ai, fi, bi
                se, sd, ss = ei, ed, es
                spent, shifts = 0, 0
                ok = True
                worst = 0.0
                failed_at = 0
                for piece in range(pieces):
                    pa = p0 + dp * (sub + piece / pieces)
                    pb = p0 + dp * (sub + (piece + 1) / pieces)
                    ok, d, v1, a1, f1, br1, its, res = _newton(
                        su, sv, sa, sf, sb, pb, c, k, hk, fyr, const, tol, max_iter
                    )
                    spent += its
                    if not ok:
                        worst = res
                        failed_at = piece
                        break
                    se += 0.5 * (pa + pb) * d
                    sd += c * 0.5 * (sv + v1) * d
                    ss += _spring_work(d, sf, f1, k, hk)
                    if br1 != 0.0 and br1 != sb:
                        shifts += 1
                    su, sv, sa, sf, sb = su + d, v1, a1, f1, br1
                iterations += spent
                if ok:
                    break
                if pieces >= max_pieces:
                    info[INFO_STATUS] = 1.0
                    info[INFO_FAIL_TIME] = (i + (sub + failed_at / pieces) / substeps) * dt
                    info[INFO_FAIL_RESIDUAL] = worst
                    info[INFO_ITERATIONS] = iterations
                    return
                pieces *= 2
            if pieces > 1:
                retried += 1
                pieces_used = max(pieces_used, pieces)
            excursions += shifts
            if sb != 0.0:
                yielding += 1
            ui, vi, ai, fi, bi = su, sv, sa, sf, sb
            ei, ed, es = se, sd, ss
            if abs(ui) > peak:
                peak = abs(ui)
                peak_time = (i + (sub + 1) / substeps) * dt
        u[i + 1], v[i + 1], fs[i + 1] = ui, vi, fi
        e_input[i + 1], e_damping[i + 1], e_spring[i + 1] = ei, ed, es
    info[INFO_ITERATIONS] = iterations
    info[INFO_EXCURSIONS] = excursions
    info[INFO_RETRIED] = retried
    info[INFO_PIECES] = pieces_used
    info[INFO_YIELDING] = yielding
    info[INFO_PEAK] = peak
    info[INFO_PEAK_TIME] = peak_time


# Rows of the per-chunk work array of `peaks` (state, iterates, constants).
_U, _V, _A, _F, _INV_T, _D, _Q, _BQ, _VQ, _F_NEW, _R, _INV_NEW = range(12)
_K, _HK, _FYR, _M_EFF, _INV_EL, _INV_PL, _TOL, _C, _PEAK, _BAD = range(12, 22)
_ROWS = 22
#: Lanes are processed in groups of this many (padding repeats the last lane).
_LANE_GROUP = 4


@njit(cache=True, parallel=True, fastmath=True)
def peaks(load, dt, beta, gamma, hardening, k, c, fy, tol, substeps, starts, max_iter, peak, failed):
    """Peak |u|, read at every sub-step, of many yielding oscillators at once.

    Parameters
    ----------
    load : (n,) p = -ü_g [m/s²]
    dt, beta, gamma, hardening : as in `history`, shared by all oscillators
    k, c, fy, tol : (n_osc,) ω², 2ζω, yield force [m/s²], accepted |R| [m/s²]
    substeps : (n_osc,) sub-steps per record step, equal within a chunk
    starts : (n_chunks + 1,) first oscillator of each chunk; chunks hold at
        most CHUNK oscillators
    max_iter : Newton iterations per step
    peak : (n_osc,) output, max |u| [m]
    failed : (n_osc,) output, 1.0 where a step did not converge (the caller
        repeats those oscillators with `history`, which splits steps)

    The oscillators of a chunk are interleaved: every Newton pass runs over
    the whole chunk (the loop over oscillators vectorises) and the chunk
    leaves the iteration when its largest residual is accepted. Extra passes
    for oscillators that have already converged change them by round-off
    only, since their Newton correction R/(M + k_t) is then negligible.
    All per-oscillator values of a chunk live in one work array whose row
    stride the compiler knows, so it can prove the rows do not overlap and
    vectorise without run-time alias checks.
    """
    n_steps = load.shape[0] - 1
    n_chunks = starts.shape[0] - 1
    for chunk in prange(n_chunks):
        lo = starts[chunk]
        m = starts[chunk + 1] - lo
        lanes = min(CHUNK, (m + _LANE_GROUP - 1) // _LANE_GROUP * _LANE_GROUP)
        s = substeps[lo]
        h = dt / s
        w = np.zeros((_ROWS, CHUNK))
        a_coef = b1 = b2 = g_coef = g1 = g2 = 0.0
        for j in range(lanes):
            src = lo + min(j, m - 1)
            kj = k[src]
            cj = c[src]
            a_coef, b1, b2, g_coef, g1, g2, w[_M_EFF, j], w[_INV_EL, j], w[_INV_PL, j] = _step_constants(
                h, beta, gamma, kj, cj, hardening
            )
            w[_K, j] = kj
            w[_C, j] = cj
            w[_HK, j] = hardening * kj
            w[_FYR, j] = (1.0 - hardening) * fy[src]
            w[_TOL, j] = tol[src]
            w[_A, j] = load[0]
            w[_INV_T, j] = w[_INV_EL, j]
        for i in range(n_steps):
            p0 = load[i]
            dp = (load[i + 1] - p0) / s
            for sub in range(s):
                pe = p0 + dp * (sub + 1)
                for j in range(lanes):
                    qj, bqj, vqj = _predict(w[_V, j], w[_A, j], pe, w[_C, j], b1, b2, g1, g2)
                    w[_Q, j] = qj
                    w[_BQ, j] = bqj
                    w[_VQ, j] = vqj
                    w[_D, j] = (qj - w[_F, j]) * w[_INV_T, j]
                for it in range(max_iter):
                    worst = -1.0
                    for j in range(lanes):
                        fj, brj = _spring(w[_D, j], w[_U, j], w[_F, j], w[_K, j], w[_HK, j], w[_FYR, j])
                        rj = w[_Q, j] - w[_M_EFF, j] * w[_D, j] - fj
                        w[_F_NEW, j] = fj
                        w[_R, j] = rj
                        w[_INV_NEW, j] = w[_INV_EL, j] if brj == 0.0 else w[_INV_PL, j]
                        worst = max(worst, abs(rj) - w[_TOL, j])
                    if worst <= 0.0:
                        break
                    if it == max_iter - 1:
                        for j in range(lanes):
                            if abs(w[_R, j]) > w[_TOL, j]:
                                w[_BAD, j] = 1.0
                        break
                    for j in range(lanes):
                        w[_D, j] += w[_R, j] * w[_INV_NEW, j]
                for j in range(lanes):
                    dj = w[_D, j]
                    w[_U, j] += dj
                    w[_A, j] = a_coef * dj - w[_BQ, j]
                    w[_V, j] = g_coef * dj + w[_VQ, j]
                    w[_F, j] = w[_F_NEW, j]
                    w[_INV_T, j] = w[_INV_NEW, j]
                    w[_PEAK, j] = max(w[_PEAK, j], abs(w[_U, j]))  # read at every sub-step
        for j in range(m):
            peak[lo + j] = w[_PEAK, j]
            failed[lo + j] = w[_BAD, j]
