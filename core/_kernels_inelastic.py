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
interleaved so the loop over oscillators vectorises) call them, and
``elastic_trace`` runs their elastic branch. None is compiled with
fast-math, so the same operations give the same bits in all three.
"""

from __future__ import annotations

import numpy as np
from numba.cpython.unsafe.numbers import trailing_zeros  # imports no array-math registry (see _jit)

from ._jit import njit
from ._newmark import newmark_constants

#: Oscillators per chunk (as in ``_kernels.py``): two dozen state and
#: constant vectors of this length stay in the L1 cache and vectorise. At
#: most 64: `peaks` keeps a pass's open lanes as the bits of one int64.
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
    above = trial > upper
    below = trial < lower
    force = upper if above else (lower if below else trial)
    branch = (1.0 if above else 0.0) - (1.0 if below else 0.0)
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


# Rows of the per-chunk work array of `peaks`: two sets of state (a sub-step
# reads one and writes the other), then flags and constants.
_U, _V, _A, _F, _BR, _PEAK = range(6)  # offsets inside a set of state
_SET_A, _SET_B = 0, 6
_BAD = 12
_K, _HK, _FYR, _M_EFF, _INV_EL, _INV_PL, _TOL, _C = range(13, 21)
_ROWS = 21
#: A chunk's oscillator loop runs over a multiple of this many lanes (padding
#: repeats the chunk's last oscillator), so no lane falls into the loop's
#: scalar remainder.
LANES = 8
#: Rows of the `init` array of `peaks` and of the checkpoints of `elastic_trace`.
STATE_ROWS = 5  # u [m], v [m/s], ü [m/s²], fs [m/s²], peak |u| so far [m]


@njit(cache=True, inline="always")
def _lanes(m):
    """Lanes a chunk of `m` oscillators runs: `m` rounded up to a multiple of `LANES`."""
    return min(CHUNK, (m + LANES - 1) // LANES * LANES)


@njit(cache=True, inline="always")
def _larger(a, b):
    """max(a, b) as one compare and select (numba's max branches on NaN, which stops vectorisation)."""
    return b if b > a else a


@njit(cache=True, inline="always")
def _pass(w, lanes, src, dst, pe, constants):
    """One sub-step of every lane: state set `src` in, set `dst` out; the lanes left open, as bits.

    Each lane takes the first iterate of `_newton` (the root unless the lane
    changes branch), so the loop has no branch and vectorises. A lane whose
    first iterate is not accepted is marked open (bit j of the result; a
    chunk holds at most 64 lanes) and redone by
    `_more_iterations` from the `src` set, which no store here touches, so every store is
    unconditional (a select between the new and the old value stored in
    place is compiled as a masked store, several times slower).
    """
    a_coef, b1, b2, g_coef, g1, g2 = constants
    open_lanes = 0
    for j in range(lanes):
        u0, v0, a0, f0 = w[src + _U, j], w[src + _V, j], w[src + _A, j], w[src + _F, j]
        br0, p_0 = w[src + _BR, j], w[src + _PEAK, j]
        kj, hk, fyr, m_eff, tj = w[_K, j], w[_HK, j], w[_FYR, j], w[_M_EFF, j], w[_TOL, j]
        inv_el, inv_pl = w[_INV_EL, j], w[_INV_PL, j]  # loaded before the selects, so it vectorises
        q, bq, vq = _predict(v0, a0, pe, w[_C, j], b1, b2, g1, g2)
        d = (q - f0) * (inv_el if br0 == 0.0 else inv_pl)
        force, branch = _spring(d, u0, f0, kj, hk, fyr)
        r = q - m_eff * d - force
        ok = abs(r) <= tj  # NaN is not ok
        u1 = u0 + d
        w[dst + _U, j] = u1
        w[dst + _A, j] = a_coef * d - bq
        w[dst + _V, j] = g_coef * d + vq
        w[dst + _F, j] = force
        w[dst + _BR, j] = branch
        w[dst + _PEAK, j] = _larger(p_0, abs(u1))  # read at every sub-step
        open_lanes |= (0 if ok else 1) << j
    return open_lanes


@njit(cache=True)
def _more_iterations(w, open_lanes, src, dst, pe, constants, max_iter):
    """Lanes whose first Newton iterate was not accepted: the step again by `_newton`, alone.

    Measured: computing the second iterate in `_pass` for every lane as well
    (branch-free, both kept, the accepted one selected) made the spectrum
    kernel 2x slower than this rare pass (twice the arithmetic and register
    spills in the vector loop).
    """
    a_coef, b1, b2, g_coef, g1, g2 = constants
    while open_lanes != 0:
        j = int(trailing_zeros(open_lanes))  # type: ignore[call-arg]  # a numba intrinsic
        open_lanes &= open_lanes - 1  # that lane done
        u0 = w[src + _U, j]
        const = (a_coef, b1, b2, g_coef, g1, g2, w[_M_EFF, j], w[_INV_EL, j], w[_INV_PL, j])
        ok, d, v1, a1, f1, br1, its, res = _newton(
            u0, w[src + _V, j], w[src + _A, j], w[src + _F, j], w[src + _BR, j], pe, w[_C, j], w[_K, j],
            w[_HK, j], w[_FYR, j], const, w[_TOL, j], max_iter,
        )  # fmt: skip
        u1 = u0 + d
        w[dst + _U, j], w[dst + _V, j], w[dst + _A, j], w[dst + _F, j], w[dst + _BR, j] = u1, v1, a1, f1, br1
        w[dst + _PEAK, j] = _larger(w[src + _PEAK, j], abs(u1))
        if not ok:
            w[_BAD, j] = 1.0


@njit(cache=True, inline="always")
def _chunk(load, dt, beta, gamma, hardening, k, c, fy, tol, substeps, starts, first, init, max_iter,
           peak, failed, chunk):  # fmt: skip
    """Peaks of the oscillators of one chunk (see `peaks`)."""
    n_steps = load.shape[0] - 1
    lo = starts[chunk]
    m = starts[chunk + 1] - lo
    lanes = _lanes(m)
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
        w[_SET_A + _U, j] = init[0, src]
        w[_SET_A + _V, j] = init[1, src]
        w[_SET_A + _A, j] = init[2, src]
        w[_SET_A + _F, j] = init[3, src]
        w[_SET_A + _PEAK, j] = init[4, src]  # the state given is elastic: branch 0
    constants = (a_coef, b1, b2, g_coef, g1, g2)
    in_b = False  # the current state is in set B
    for i in range(first[chunk], n_steps):
        p0 = load[i]
        dp = (load[i + 1] - p0) / s
        for sub in range(s):
            pe = p0 + dp * (sub + 1)
            src, dst = (_SET_B, _SET_A) if in_b else (_SET_A, _SET_B)
            open_lanes = _pass(w, lanes, src, dst, pe, constants)
            if open_lanes != 0:
                _more_iterations(w, open_lanes, src, dst, pe, constants, max_iter)
            in_b = not in_b
    now = _SET_B if in_b else _SET_A
    for j in range(m):
        peak[lo + j] = w[now + _PEAK, j]
        failed[lo + j] = w[_BAD, j]


@njit(cache=True, nogil=True)
def peaks(load, dt, beta, gamma, hardening, k, c, fy, tol, substeps, starts, first, init, max_iter,
          peak, failed, owner, part):  # fmt: skip
    """Peak |u|, read at every sub-step, of the yielding oscillators of the chunks `owner` gives to `part`.

    Parameters
    ----------
    load : (n,) p = -ü_g [m/s²]
    dt, beta, gamma, hardening : as in `history`, shared by all oscillators
    k, c, fy, tol : (n_osc,) ω², 2ζω, yield force [m/s²], accepted |R| [m/s²]
    substeps : (n_osc,) sub-steps per record step, equal within a chunk
    starts : (n_chunks + 1,) first oscillator of each chunk; chunks hold at
        most CHUNK oscillators
    first : (n_chunks,) record step each chunk starts from
    init : (STATE_ROWS, n_osc) state at that step: u, v, ü, fs and the peak
        |u| so far; an elastic state (from rest: zeros and ü = p[0] at step
        0, or a checkpoint of `elastic_trace` before the oscillator can
        first yield)
    max_iter : Newton iterations per step
    peak : (n_osc,) output, max |u| [m]
    failed : (n_osc,) output, 1.0 where a step did not converge (the caller
        repeats those oscillators with `history`, which splits steps)
    owner : (n_chunks,) the thread of each chunk; part : the thread this call is

    The oscillators of a chunk are interleaved: each sub-step is one pass
    over the chunk (`_pass`; the loop over oscillators vectorises) that
    takes every lane's first Newton iterate, its root unless the lane
    changes branch; the few lanes whose iterate is not accepted are redone
    alone by `_newton` (`_more_iterations`). Each lane's iterates are those
    of `_newton` for that oscillator alone, so its result does not depend on
    the chunk it runs in, and equals `history`'s peak. Compiled without
    fast-math (no contraction or reassociation), so `elastic_trace`, which
    runs the same operations, reproduces the elastic lead-in bit for bit.
    The function holds no GIL: the caller runs its parts on
    `_jit.PART_THREADS` (a ``parallel=True`` kernel costs numba's parallel
    compiler more on a cold cache).
    """
    for chunk in range(starts.shape[0] - 1):
        if owner[chunk] == part:
            _chunk(load, dt, beta, gamma, hardening, k, c, fy, tol, substeps, starts, first, init, max_iter,
                   peak, failed, chunk)  # fmt: skip


@njit(cache=True, nogil=True)
def elastic_trace(load, dt, beta, gamma, hardening, k, c, substeps, starts, stride, checkpoints, reach, residual):
    """Elastic run of many oscillators with the operations of `peaks`, checkpointed every `stride` steps.

    Parameters
    ----------
    load, dt, beta, gamma, hardening, k, c, substeps, starts : as in `peaks`
    stride : record steps per block
    checkpoints : (STATE_ROWS, n_osc, n_blocks + 1) output, the state at
        record step b·stride (rows as `peaks`'s `init`)
    reach : (n_osc, n_blocks) output, the largest ``|fs_trial - α·k·u| +
        1e-12·(|fs_trial| + |α·k·u|)`` [m/s²] of block b's sub-steps: an
        oscillator whose (1 - α)·fy exceeds (1 + 1e-12) times it stays
        elastic there, whatever the rounding of its bounding lines
    residual : (n_osc, n_blocks) output, the largest |R| [m/s²] after the
        first Newton iterate in block b: an oscillator that accepts it
        needs no second iterate there

    While an oscillator stays elastic and its first iterate is accepted,
    `peaks` runs exactly these operations (its spring returns the trial
    force unchanged), so its state at any checkpoint before the first block
    where it could yield or iterate is this one, to the bit.
    """
    n_steps = load.shape[0] - 1
    n_blocks = reach.shape[1]
    for chunk in range(starts.shape[0] - 1):
        lo = starts[chunk]
        m = starts[chunk + 1] - lo
        s = substeps[lo]
        h = dt / s
        for j in range(m):
            o = lo + j
            kj, cj = k[o], c[o]
            a_coef, b1, b2, g_coef, g1, g2, m_eff, inv_el, inv_pl = _step_constants(h, beta, gamma, kj, cj, hardening)
            hk = hardening * kj
            u, v, a, f, top = 0.0, 0.0, load[0], 0.0, 0.0
            for b in range(n_blocks + 1):
                checkpoints[0, o, b] = u
                checkpoints[1, o, b] = v
                checkpoints[2, o, b] = a
                checkpoints[3, o, b] = f
                checkpoints[4, o, b] = top
                if b == n_blocks:
                    break
                worst_reach, worst_residual = 0.0, 0.0
                for i in range(b * stride, min((b + 1) * stride, n_steps)):
                    p0 = load[i]
                    dp = (load[i + 1] - p0) / s
                    for sub in range(s):
                        pe = p0 + dp * (sub + 1)
                        q, bq, vq = _predict(v, a, pe, cj, b1, b2, g1, g2)
                        d = (q - f) * inv_el
                        u1 = u + d
                        trial = f + kj * d
                        r = q - m_eff * d - trial
                        line = hk * u1
                        gap = abs(trial - line) + 1e-12 * (abs(trial) + abs(line))
                        worst_reach = max(worst_reach, gap if gap <= np.inf else np.inf)  # NaN: never safe
                        rr = abs(r)
                        worst_residual = max(worst_residual, rr if rr <= np.inf else np.inf)
                        u = u1
                        a = a_coef * d - bq
                        v = g_coef * d + vq
                        f = trial
                        top = _larger(top, abs(u1))
                reach[o, b] = worst_reach
                residual[o, b] = worst_residual


@njit(cache=True)
def safe_blocks(reach, residual, columns, fyr, accepted, blocks):
    """Leading blocks of `elastic_trace` in which each lane stays on the elastic run.

    `reach` and `residual` are (n_osc, n_blocks), each row non-decreasing
    (cumulative maxima, `reach` already scaled by 1 + 1e-12); lane j (row
    `columns[j]`) is safe in block b while reach < fyr[j] and residual <=
    accepted[j]. blocks[j] is the first block where either fails (binary search).
    """
    n_blocks = reach.shape[1]
    for j in range(columns.shape[0]):
        row = columns[j]
        lo, hi = 0, n_blocks
        while lo < hi:
            mid = (lo + hi) // 2
            if reach[row, mid] < fyr[j] and residual[row, mid] <= accepted[j]:
                lo = mid + 1
            else:
                hi = mid
        blocks[j] = lo
