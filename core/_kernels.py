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

A record step of s sub-steps applies the one-sub-step map s times with the
load interpolated linearly; histories are kept at the record's samples and
peaks are read at every sub-step (``history``, ``peaks``), as if the record
had been resampled linearly onto the sub-step grid.
"""

from __future__ import annotations

import numpy as np

from ._jit import PART_THREADS, get_num_threads, njit

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
    return _chunk_starts(np.asarray(substeps, dtype=np.int64), size)


@njit(cache=True)
def _chunk_starts(substeps, size):
    n = substeps.shape[0]
    starts = np.empty(n + 1, dtype=np.int64)  # at most one chunk per oscillator
    starts[0] = 0
    count, lo = 1, 0
    while lo < n:
        same = lo + 1  # the first oscillator past lo with another count (sorted: the searchsorted right)
        while same < n and substeps[same] == substeps[lo]:
            same += 1
        lo = min(lo + size, same)
        starts[count] = lo
        count += 1
    return starts[:count].copy()


#: Relative shortfall allowed before a ratio dt/(limit·T) rounds up to one more sub-step: keeps a
#: ratio exactly at the limit, computed with round-off, at its count (``methods.substep_count``
#: applies the same rule to one period on floats).
SUBSTEP_SLACK = 1e-12


@njit(cache=True)
def substep_counts(dt, periods, limit, most, counts):
    """Sub-steps s = ceil(dt / (limit·T)·(1 - SUBSTEP_SLACK)), at least 1, of each period T > 0 into `counts`.

    Periods <= 0 (rigid) take 1. Returns (index, needed): the first period
    that needs the most sub-steps when that is more than `most`, else
    (-1, 0.0); `counts` is then not filled. The rule of ``methods.substep_counts``.
    """
    worst, worst_needed = -1, 0.0
    for p in range(periods.shape[0]):
        if periods[p] > 0.0:
            needed = np.ceil(dt / (limit * periods[p]) * (1.0 - SUBSTEP_SLACK))
            if needed > most and (worst < 0 or needed > worst_needed):
                worst, worst_needed = p, needed
            elif worst < 0:
                counts[p] = max(needed, 1.0)
        else:
            counts[p] = 1
    return worst, worst_needed


@njit(cache=True)
def spectrum_plan(periods, dampings, dt, limit, most):
    """Sub-step counts and sorted order of the grid of a spectrum (oscillator f = d·n_periods + p).

    Returns (counts, order, sorted_counts, starts, total, largest, split,
    worst, needed): the count of each oscillator (1 when rigid), the moving
    oscillators (period > 0) stably sorted by count, their counts in that
    order, the chunk boundaries over them (``chunk_starts``), the sum and
    the largest of the moving counts, how many exceed 1; `worst` and `needed` as
    `substep_counts` returns them (the rest is not to be used when `worst` >= 0).
    """
    n_periods, n_dampings = periods.shape[0], dampings.shape[0]
    per_period = np.ones(n_periods, dtype=np.int64)
    worst, needed = substep_counts(dt, periods, limit, most, per_period)
    moving = split = 0
    smallest, largest, per_damping = most + 1, 0, 0
    for p in range(n_periods):
        if periods[p] > 0.0:
            moving += 1
            if per_period[p] > 1:
                split += 1
            per_damping += per_period[p]
            smallest = min(smallest, per_period[p])
            largest = max(largest, per_period[p])
    n = moving * n_dampings if worst < 0 else 0  # refused: nothing to sort
    counts = np.empty(n_periods * n_dampings, dtype=np.int64)
    order = np.empty(n, dtype=np.int64)
    sorted_counts = np.empty(n, dtype=np.int64)
    for f in range(counts.shape[0]):
        counts[f] = per_period[f % n_periods]
    if n and smallest == largest:  # one count (no sub-steps anywhere, say): the grid order is sorted
        j = 0
        for f in range(counts.shape[0]):
            if periods[f % n_periods] > 0.0:
                order[j] = f
                j += 1
    elif n:  # a stable counting sort by sub-step count
        first = np.zeros(largest + 2, dtype=np.int64)
        for f in range(counts.shape[0]):
            if periods[f % n_periods] > 0.0:
                first[counts[f] + 1] += 1
        for s in range(1, largest + 2):
            first[s] += first[s - 1]
        for f in range(counts.shape[0]):
            if periods[f % n_periods] > 0.0:
                order[first[counts[f]]] = f
                first[counts[f]] += 1
    for j in range(n):
        sorted_counts[j] = counts[order[j]]
    starts = _chunk_starts(sorted_counts, CHUNK)
    return counts, order, sorted_counts, starts, per_damping * n_dampings, largest, split * n_dampings, worst, needed


@njit(cache=True)
def spectrum_values(found, order, periods, n_dampings, accel):
    """(5, n_dampings·n_periods) SD, SV, SA, PSV = ω·SD, PSA = ω²·SD in grid order from the sorted peaks.

    `found` (3, len(order)) are the kernels' peaks of the oscillators
    `order` lists; a rigid oscillator (period 0) has SD = SV = PSV = 0 and
    SA = PSA = max |ü_g| of `accel`.
    """
    n_periods = periods.shape[0]
    n = n_periods * n_dampings
    values = np.zeros((5, n))
    if order.shape[0] < n:  # rigid oscillators: max|ü_g|, without a record-length |ü_g| temporary
        high, low = accel[0], accel[0]
        for i in range(1, accel.shape[0]):
            high = max(high, accel[i])
            low = min(low, accel[i])
        peak = max(high, -low)
        for f in range(n):
            if not periods[f % n_periods] > 0.0:
                values[2, f] = peak
                values[4, f] = peak
    for j in range(order.shape[0]):
        f = order[j]
        omega = 2.0 * np.pi / periods[f % n_periods]
        sd = found[0, j]
        values[0, f], values[1, f], values[2, f] = sd, found[1, j], found[2, j]
        values[3, f] = omega * sd
        values[4, f] = omega * omega * sd
    return values


#: Sub-steps each oscillator takes per visit of the chunk loop in `peaks`:
#: the state and coefficients stay in registers over these steps and the loop
#: over the chunk's oscillators is still the innermost one, so it vectorises.
VISIT = 4
#: A chunk's oscillator loop runs over a multiple of this many lanes (one
#: AVX-512 register of float64, two AVX2 ones): the lanes past the chunk's
#: last oscillator hold a zero map, stay at rest and are never read, so no
#: oscillator falls into the loop's scalar remainder (8x slower per
#: oscillator); chunks of sub-stepped periods are often short and odd-sized.
LANES = 8
#: Oscillator-steps below which `spectrum_peaks` runs on the calling thread:
#: waking a second thread on a busy machine costs milliseconds, more than a
#: small spectrum takes (measured by benchmarks/bench_linear.py).
SERIAL_WORK = 2_000_000


@njit(cache=True, inline="always")
def _visit(w, lanes, pa0, pb0, pa1, pb1, pa2, pb2, pa3, pb3):
    """Four sub-steps of every lane of a chunk (loads (pa, pb) of each sub-step)."""
    a = w[_A0:, :]
    for j in range(lanes):
        u, v = w[_U, j], w[_V, j]
        c, k = a[8, j], a[9, j]
        pu, pv, pt = w[_PU, j], w[_PV, j], w[_PA, j]
        u, v = _advance(a, j, u, v, pa0, pb0)
        pu, pv, pt = max(pu, abs(u)), max(pv, abs(v)), max(pt, abs(c * v + k * u))
        u, v = _advance(a, j, u, v, pa1, pb1)
        pu, pv, pt = max(pu, abs(u)), max(pv, abs(v)), max(pt, abs(c * v + k * u))
        u, v = _advance(a, j, u, v, pa2, pb2)
        pu, pv, pt = max(pu, abs(u)), max(pv, abs(v)), max(pt, abs(c * v + k * u))
        u, v = _advance(a, j, u, v, pa3, pb3)
        pu, pv, pt = max(pu, abs(u)), max(pv, abs(v)), max(pt, abs(c * v + k * u))
        w[_U, j], w[_V, j] = u, v
        w[_PU, j], w[_PV, j], w[_PA, j] = pu, pv, pt


@njit(cache=True, inline="always")
def _single(w, lanes, pa, pb):
    """One sub-step of every lane of a chunk."""
    a = w[_A0:, :]
    for j in range(lanes):
        u, v = _advance(a, j, w[_U, j], w[_V, j], pa, pb)
        w[_U, j], w[_V, j] = u, v
        w[_PU, j] = max(w[_PU, j], abs(u))
        w[_PV, j] = max(w[_PV, j], abs(v))
        w[_PA, j] = max(w[_PA, j], abs(a[8, j] * v + a[9, j] * u))


@njit(cache=True, inline="always")
def _lanes(m):
    """Lanes a chunk of `m` oscillators runs: `m` rounded up to a multiple of `LANES`."""
    return min(CHUNK, (m + LANES - 1) // LANES * LANES)


@njit(cache=True, inline="always", fastmath=True)
def _chunk(load, coef, substeps, starts, u0, v0, out, chunk):
    """Peaks of the oscillators of one chunk (see `peaks`)."""
    n_steps = load.shape[0] - 1
    lo = starts[chunk]
    m = starts[chunk + 1] - lo
    lanes = _lanes(m)
    s = substeps[lo]
    w = np.zeros((_ROWS, CHUNK))  # lanes m .. lanes - 1 keep a zero map: at rest, never read
    for j in range(m):
        for r in range(N_COEFFICIENTS):
            w[_A0 + r, j] = coef[r, lo + j]
        w[_U, j] = u0[lo + j]
        w[_V, j] = v0[lo + j]
        w[_PU, j] = abs(u0[lo + j])
        w[_PV, j] = abs(v0[lo + j])
        w[_PA, j] = abs(w[_A0 + 8, j] * v0[lo + j] + w[_A0 + 9, j] * u0[lo + j])
    # the loads (pa, pb) of every sub-step in order, queued four at a time
    queue = np.empty((2, VISIT))
    queued = 0
    for i in range(n_steps):
        p0 = load[i]
        dp = (load[i + 1] - p0) / s
        for sub in range(s):
            queue[0, queued] = p0 + dp * sub
            queue[1, queued] = p0 + dp * (sub + 1)
            queued += 1
            if queued == VISIT:
                _visit(w, lanes, queue[0, 0], queue[1, 0], queue[0, 1], queue[1, 1],
                       queue[0, 2], queue[1, 2], queue[0, 3], queue[1, 3])  # fmt: skip
                queued = 0
    for q in range(queued):
        _single(w, lanes, queue[0, q], queue[1, q])
    for j in range(m):
        out[0, lo + j] = w[_PU, j]
        out[1, lo + j] = w[_PV, j]
        out[2, lo + j] = w[_PA, j]


def balance(substeps, starts, parts):
    """Share chunks among `parts` threads by work (lanes x sub-steps): the owner of each chunk (`share`).

    The few heavy chunks of sub-stepped short periods, which sort last, do
    not all land on one thread as an even split of the chunk range would
    put them.
    """
    sizes = np.diff(starts)
    lanes = np.minimum(CHUNK, (sizes + LANES - 1) // LANES * LANES)
    return share(lanes * substeps[starts[:-1]], parts)


def share(work, parts):
    """The owner (0 .. parts-1) of each item of `work`: longest first, each to the least loaded thread (Graham 1969).

    Ties keep the items' order, and the first least loaded thread is taken.
    Plain Python and numpy: tens to hundreds of items, and a compiled
    version cost about 2 s of numba compilation on a cold cache.

    References
    ----------
    Graham, R. L. (1969). Bounds on multiprocessing timing anomalies. SIAM
    Journal on Applied Mathematics, 17(2), 416-429.
    """
    work = np.asarray(work).tolist()
    n_items = len(work)
    owner = np.zeros(n_items, dtype=np.int64)
    parts = max(1, min(parts, n_items))
    if parts == 1:
        return owner
    load = [0] * parts
    for item in sorted(range(n_items), key=work.__getitem__, reverse=True):  # stable: ties keep item order
        part = load.index(min(load))  # the first least loaded, as argmin
        owner[item] = part
        load[part] += work[item]
    return owner


@njit(cache=True, nogil=True, fastmath=True)
def peaks(load, coef, substeps, starts, u0, v0, out, owner, part):
    """Peak |u|, |v| and |ü + ü_g| of the oscillators in the chunks `owner` gives to `part`.

    Parameters
    ----------
    load : (n_samples,) float64, p = -ü_g [m/s²]
    coef : (10, n_osc) float64, the map of ONE sub-step (h = dt / s)
    substeps : (n_osc,) int64, sub-steps s per record step, equal within a chunk
    starts : (n_chunks + 1,) int64, chunk boundaries (``chunk_starts``)
    u0, v0 : (n_osc,) float64 initial state
    out : (3, n_osc) float64, filled with the three peaks of those chunks
    owner : (n_chunks,) int64, the thread of each chunk (``balance``)
    part : int, the thread this call is

    The load is linear inside each record step, so sub-step m of s runs from
    p0 + (p1 - p0)·m/s to p0 + (p1 - p0)·(m + 1)/s. Oscillators of a chunk
    are interleaved so the loop over them vectorises; all per-oscillator
    values live in one work array whose row stride the compiler knows, so
    it can prove the rows do not overlap. Each visit of that loop takes
    `VISIT` sub-steps with the state held in registers (the loads of those
    sub-steps queued first, whatever the sub-step count), so sub-stepped and
    plain chunks run the same loop, over a multiple of `LANES` lanes. The
    function holds no GIL: `spectrum_peaks` runs its parts on threads.
    """
    for chunk in range(starts.shape[0] - 1):
        if owner[chunk] == part:
            _chunk(load, coef, substeps, starts, u0, v0, out, chunk)


def peaks_serial(load, coef, substeps, starts, u0, v0, out):
    """`peaks` of every chunk on the calling thread (small work: see `SERIAL_WORK`)."""
    peaks(load, coef, substeps, starts, u0, v0, out, np.zeros(starts.shape[0] - 1, np.int64), 0)


def spectrum_peaks(load, coef, substeps, starts, u0, v0, out, total=None):
    """`peaks` over chunks shared by `balance` among numba's thread count, or on this thread below `SERIAL_WORK`.

    `total` is ``substeps.sum()`` when the caller has it.
    """
    work = (load.shape[0] - 1) * int(substeps.sum() if total is None else total)
    parts = 1 if work < SERIAL_WORK else get_num_threads()
    if parts == 1:
        peaks_serial(load, coef, substeps, starts, u0, v0, out)
    else:
        owner = balance(substeps, starts, parts)
        PART_THREADS.run(peaks, (load, coef, substeps, starts, u0, v0, out, owner), parts)


@njit(cache=True)
def history(load, coef, substeps, dt, u0, v0, time, u, v, total, out):
    """Histories of one oscillator at the samples, and its peaks read at every sub-step.

    Parameters
    ----------
    load : (n_samples,) float64, p = -ü_g [m/s²], or ü_g with `coef`'s load rows negated
    coef : (10,) float64, the map of ONE sub-step (h = dt / substeps)
    substeps : int, sub-steps per record step (load linear in between)
    dt : float, record step [s]
    u0, v0 : float, initial state
    time, u, v, total : (n_samples,) float64, filled with the sample times
        i·dt, the state and the total acceleration ü + ü_g = -(c·v + k·u)
    out : (6,) float64, filled with max |u|, max |v|, max |ü + ü_g| over
        every sub-step, then the time [s] of the first occurrence of each

    The peaks are kept with branch-free selects and their times as sub-step
    counts, turned into seconds once at the end (same values as dividing
    at every sub-step, without a division on the loop's path).
    """
    s = substeps
    a = coef.reshape((N_COEFFICIENTS, 1))
    c, k = a[8, 0], a[9, 0]
    ui, vi = u0, v0
    time[0] = 0.0
    u[0], v[0] = ui, vi
    total[0] = -(c * vi + k * ui)
    pu, pv, pa = abs(ui), abs(vi), abs(c * vi + k * ui)
    ku, kv, ka = 0, 0, 0  # sub-steps from the start to each peak
    step = 0
    for i in range(load.shape[0] - 1):
        p0 = load[i]
        dp = (load[i + 1] - p0) / s
        at = 0.0
        for sub in range(s):
            ui, vi = _advance(a, 0, ui, vi, p0 + dp * sub, p0 + dp * (sub + 1))
            step += 1
            au, av = abs(ui), abs(vi)
            at = c * vi + k * ui
            aa = abs(at)
            ku = step if au > pu else ku
            pu = au if au > pu else pu
            kv = step if av > pv else kv
            pv = av if av > pv else pv
            ka = step if aa > pa else ka
            pa = aa if aa > pa else pa
        time[i + 1] = (i + 1) * dt
        u[i + 1], v[i + 1] = ui, vi
        total[i + 1] = -at
    out[0], out[1], out[2] = pu, pv, pa
    out[3], out[4], out[5] = ku / s * dt, kv / s * dt, ka / s * dt
