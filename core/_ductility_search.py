"""Strength search behind `ductility_spectrum` (private).

For each period and target ductility μ, the largest yield strength whose
response reaches μ: a grid stage over ln R from R = 1 upward finds the first
bracket, then regula falsi with the Illinois modification (Dowell & Jarratt
1971) refines every bracket at once. Ductility of many (period, strength)
lanes comes from one compiled kernel call per pass.

Elastic lead-in: until an oscillator first leaves its elastic range its
history is the elastic one, whatever its strength. One elastic run per
period (``_kernels_inelastic.elastic_trace``, the operations of the yielding
kernel's elastic branch) keeps its state every few record steps and, per
block of steps, how far the trial force came to the bounding lines and the
largest first residual; each run then starts at the last checkpoint before
the first block where its strength could yield or need a second Newton
iterate (with a 1e-12 relative margin for the rounding of the bounding
lines). The peaks are bit for bit those of runs from rest
(tests/test_ductility_search.py).
"""

from __future__ import annotations

import math
import time

import numpy as np

from . import _kernels_inelastic as _kernels
from . import _notices
from ._jit import PART_THREADS, get_num_threads
from ._kernels import SERIAL_WORK as _SERIAL_WORK
from ._kernels import chunk_starts, share
from .inelastic_results import ConvergenceError, DuctilityTargetWarning

#: Finest split of a step that fails to converge (a power of two).
MAX_PIECES = 256
#: Strength candidates per period in each pass of the grid stage. Every grid
#: strength below the first one reaching the largest target must be run in
#: full, so the work of the stage is that many runs plus what the last pass
#: runs beyond it (half a pass on average). 16 rather than 64 cut the
#: oscillator-steps of benchmarks/bench_inelastic.py's spectrum from 121 to
#: 102 million (8 gave 99 million in twice the kernel calls, each with fewer
#: chunks to share between threads); the wall time fell less (0.96x on one
#: thread), as chunks then mix 4 periods and iterate more often. The answer
#: does not depend on it.
_GRID_CANDIDATES = 16
#: Spacing of the grid stage: R_j = GRID_RATIO**j, j = 1, 2, ... The grid is
#: the same whatever the targets of the call, so each target's bracket (the
#: first grid strength whose μ reaches it) does not depend on the others. μ(R)
#: is not monotone; a range of R narrower than one grid step in which μ
#: reaches the target and falls back can still be missed; 1 % steps caught
#: every case of a brute-force scan of 400 strengths (tests/test_ductility_search.py).
GRID_RATIO = 1.01
#: The search stops when |μ - target| <= _SEARCH_RTOL·target ...
_SEARCH_RTOL = 1e-6
#: ... or when the bracket on ln R is narrower than this.
_SEARCH_XTOL = 1e-10
#: Largest number of refinement passes (Illinois steps).
_SEARCH_PASSES = 60
#: Largest reduction factor searched before a target counts as unreachable.
_LARGEST_REDUCTION = 1e4


#: Start each run from the elastic run's state at the last checkpoint before
#: the oscillator can first yield (bit for bit the same peaks: see
#: `_kernels_inelastic.elastic_trace`); False runs every oscillator from rest.
LEAD_IN = True
#: Fewest record steps between checkpoints of the elastic run ...
_LEAD_IN_STRIDE = 8
#: ... and the most checkpoints per period (memory: 5 floats each).
_LEAD_IN_BLOCKS = 512


class Solver:
    """Ductility of many (period, strength) oscillators of one record and settings.

    The periods (all > 0) and their sub-step counts are fixed at
    construction (the elastic lead-in of each is run once, on first use);
    `ductility` takes lanes of those periods.
    """

    def __init__(self, record, method, alpha, damping, relative_tolerance, max_iterations, stats, periods, substeps):
        self.record, self.method, self.alpha, self.damping = record, method, alpha, damping
        self.relative_tolerance, self.max_iterations, self.stats = relative_tolerance, max_iterations, stats
        self.load = -record.accel
        self.periods, self.substeps = periods, substeps
        omega = 2.0 * np.pi / periods
        self.k, self.c = omega * omega, 2.0 * damping * omega
        self._trace = None  # (checkpoints, reach, residual), made on first use
        self._by_period = np.argsort(periods, kind="stable")

    def ductility(self, periods, fy, substeps):
        """μ = max|u|·k/fy for each lane (arrays of equal length; periods and sub-steps among the solver's)."""
        n_steps = self.record.n - 1
        sorted_periods = self.periods[self._by_period]
        place = np.minimum(np.searchsorted(sorted_periods, periods), sorted_periods.size - 1)
        columns = self._by_period[place]
        if not (np.array_equal(self.periods[columns], periods) and np.array_equal(self.substeps[columns], substeps)):
            raise ValueError("ductility lanes must use the periods and sub-steps the solver was made with")
        k, c, substeps = self.k[columns], self.c[columns], self.substeps[columns]
        accepted = self.relative_tolerance * (fy + self.record.pga)
        block = self._safe_blocks(columns, fy, accepted)
        order = np.lexsort((block, substeps))
        columns, fy, accepted, block = columns[order], fy[order], accepted[order], block[order]
        k, c, substeps = k[order], c[order], substeps[order]
        starts = chunk_starts(substeps, _kernels.CHUNK)
        chunk_block = block[starts[:-1]]  # the fewest safe blocks of the chunk (sorted ascending)
        first = np.minimum(chunk_block * self._stride(), n_steps)
        checkpoints = self._lead_in()[0]
        lane_block = np.repeat(chunk_block, np.diff(starts))
        init = np.ascontiguousarray(checkpoints[:, columns, lane_block])
        peak, failed = np.empty(columns.size), np.zeros(columns.size)
        work = (n_steps - first) * substeps[starts[:-1]] * np.diff(starts)
        parts = 1 if work.sum() < _SERIAL_WORK else get_num_threads()
        owner = share(work, parts)
        began = time.perf_counter()
        PART_THREADS.run(
            _kernels.peaks,
            (self.load, self.record.dt, self.method.beta, self.method.gamma, self.alpha, k, c, fy, accepted,
             substeps, starts, first, init, self.max_iterations, peak, failed, owner),
            int(owner.max()) + 1,
        )  # fmt: skip
        if self.stats is not None:
            self.stats["kernel_seconds"] = self.stats.get("kernel_seconds", 0.0) + time.perf_counter() - began
            self.stats["oscillator_steps"] = self.stats.get("oscillator_steps", 0) + int(work.sum())
        # rare: repeat with step splitting, in the order of lanes sorted by sub-steps alone (the
        # order the kernel ran them before the lead-in), so the first failure reported is the same
        place = np.empty(columns.size, dtype=np.int64)
        place[order] = np.arange(columns.size)
        by_substeps = place[np.argsort(self.substeps[columns[place]], kind="stable")]
        for lane in by_substeps[failed[by_substeps] != 0.0]:
            peak[lane] = self._robust_peak(
                self.periods[columns[lane]], k[lane], c[lane], fy[lane], substeps[lane], accepted[lane]
            )
        mu = np.empty(columns.size)
        mu[order] = peak * k / fy
        return mu

    def _stride(self):
        """Record steps per block of the elastic lead-in: at most about `_LEAD_IN_BLOCKS` blocks."""
        return max(_LEAD_IN_STRIDE, -(-(self.record.n - 1) // _LEAD_IN_BLOCKS))

    def _lead_in(self):
        """Checkpoints and cumulative reach and residual of the elastic run of every period."""
        if self._trace is None:
            began = time.perf_counter()
            n_steps, stride = self.record.n - 1, self._stride()
            n_blocks = -(-n_steps // stride)
            order = np.argsort(self.substeps, kind="stable")
            n_p = self.periods.size
            checkpoints = np.empty((_kernels.STATE_ROWS, n_p, n_blocks + 1))
            reach, residual = np.empty((n_p, n_blocks)), np.empty((n_p, n_blocks))
            sorted_checkpoints = np.empty_like(checkpoints)
            sorted_reach, sorted_residual = np.empty_like(reach), np.empty_like(residual)
            _kernels.elastic_trace(
                self.load, self.record.dt, self.method.beta, self.method.gamma, self.alpha, self.k[order],
                self.c[order], self.substeps[order], chunk_starts(self.substeps[order], _kernels.CHUNK), stride,
                sorted_checkpoints, sorted_reach, sorted_residual,
            )  # fmt: skip
            checkpoints[:, order] = sorted_checkpoints
            reach[order], residual[order] = sorted_reach, sorted_residual
            # block b is safe for fy if (1 - α)·fy > (1 + 1e-12)·reach there and accepted >= residual
            reach = np.maximum.accumulate(reach, axis=1) * (1.0 + 1e-12)
            residual = np.maximum.accumulate(residual, axis=1)
            self._trace = (checkpoints, reach, residual)
            if self.stats is not None:
                self.stats["trace_seconds"] = self.stats.get("trace_seconds", 0.0) + time.perf_counter() - began
        return self._trace

    def _safe_blocks(self, columns, fy, accepted):
        """Leading blocks of each lane's record in which it stays on the elastic run (0 without lead-in)."""
        if not LEAD_IN:
            return np.zeros(columns.size, dtype=np.int64)
        _, reach, residual = self._lead_in()
        fyr = (1.0 - self.alpha) * fy
        blocks = np.empty(columns.size, dtype=np.int64)
        _kernels.safe_blocks(reach, residual, columns, fyr, accepted, blocks)
        return blocks

    def _robust_peak(self, period, k, c, fy, substeps, accepted):
        n = self.record.n
        u, v, fs, e1, e2, e3 = (np.empty(n) for _ in range(6))
        info = np.zeros(_kernels.INFO_SIZE)
        _kernels.history(
            self.load, self.record.dt, int(substeps), k, c, fy, self.alpha, self.method.beta,
            self.method.gamma, accepted, self.max_iterations, MAX_PIECES, u, v, fs, e1, e2, e3, info,
        )  # fmt: skip
        raise_if_failed(info, period, fy, accepted)
        return float(np.max(np.abs(u)))


def search(solver, periods, elastic, substeps, targets):
    """Smallest R (largest strength) reaching each target: grid stage, then Illinois."""
    n_t, n_p = targets.size, periods.size
    x_lo = np.zeros((n_t, n_p))  # ln R at the bracket ends; μ(R = 1) = 1
    f_lo = 1.0 - targets[:, None] * np.ones((1, n_p))
    x_hi = np.full((n_t, n_p), np.nan)
    f_hi = np.full((n_t, n_p), np.nan)
    step, first_index = np.log(GRID_RATIO), 1
    while True:
        open_ = np.isnan(x_hi)
        columns = np.flatnonzero(open_.any(axis=0))
        if columns.size == 0 or step * (first_index - 1) >= np.log(_LARGEST_REDUCTION):
            break
        grid = np.exp(step * np.arange(first_index, first_index + _GRID_CANDIDATES))  # fixed points
        lanes_r = np.tile(grid, columns.size)
        lanes_p = np.repeat(columns, grid.size)
        mu = solver.ductility(periods[lanes_p], elastic[lanes_p] / lanes_r, substeps[lanes_p])
        mu = mu.reshape(columns.size, grid.size)
        for row in range(n_t):
            still = open_[row, columns]
            reached = mu >= targets[row]
            hit = reached.any(axis=1) & still
            first = np.argmax(reached, axis=1)
            cols = columns[hit]
            x_hi[row, cols] = np.log(grid[first[hit]])
            f_hi[row, cols] = mu[hit, first[hit]] - targets[row]
            before = first[hit] - 1
            inside = before >= 0
            x_lo[row, cols[inside]] = np.log(grid[before[inside]])
            f_lo[row, cols[inside]] = mu[hit, before][inside] - targets[row]
            miss = still & ~hit
            x_lo[row, columns[miss]] = np.log(grid[-1])
            f_lo[row, columns[miss]] = mu[miss, -1] - targets[row]
        first_index += _GRID_CANDIDATES
    reduction, achieved = _refine(solver, periods, elastic, substeps, targets, x_lo, f_lo, x_hi, f_hi)
    if np.isnan(reduction).any():
        _notices.warn(
            DuctilityTargetWarning(
                f"some target ductilities were not reached with reduction factors up to {_LARGEST_REDUCTION:g}; "
                "NaN returned there"
            ),
            stacklevel=4,
        )
    return reduction, achieved


def _refine(solver, periods, elastic, substeps, targets, x_lo, f_lo, x_hi, f_hi):
    """Regula falsi with the Illinois modification on each bracket, all brackets per pass."""
    goal = np.broadcast_to(targets[:, None], x_lo.shape).ravel()
    column = np.broadcast_to(np.arange(periods.size)[None, :], x_lo.shape).ravel()
    xl, fl, xh, fh = (array.ravel().copy() for array in (x_lo, f_lo, x_hi, f_hi))
    side = np.zeros(goal.size)
    x_best = np.full(goal.size, np.nan)
    mu_best = np.full(goal.size, np.nan)
    active = ~np.isnan(xh)
    for _ in range(_SEARCH_PASSES):
        lanes = np.flatnonzero(active)
        if lanes.size == 0:
            break
        width = xh[lanes] - xl[lanes]
        x = xh[lanes] - fh[lanes] * width / (fh[lanes] - fl[lanes])
        outside = ~((x > xl[lanes]) & (x < xh[lanes]))  # also catches NaN
        x[outside] = 0.5 * (xl[lanes] + xh[lanes])[outside]
        cols = column[lanes]
        mu = solver.ductility(periods[cols], elastic[cols] / np.exp(x), substeps[cols])
        f = mu - goal[lanes]
        x_best[lanes], mu_best[lanes] = x, mu
        up = f >= 0.0
        hi_lanes, lo_lanes = lanes[up], lanes[~up]
        fl[hi_lanes[side[hi_lanes] > 0]] *= 0.5
        fh[lo_lanes[side[lo_lanes] < 0]] *= 0.5
        xh[hi_lanes], fh[hi_lanes], side[hi_lanes] = x[up], f[up], 1.0
        xl[lo_lanes], fl[lo_lanes], side[lo_lanes] = x[~up], f[~up], -1.0
        done = (np.abs(f) <= _SEARCH_RTOL * goal[lanes]) | (xh[lanes] - xl[lanes] <= _SEARCH_XTOL)
        active[lanes[done]] = False
    if active.any():
        worst = float(np.max(np.abs(mu_best[active] - goal[active]) / goal[active]))
        _notices.warn(
            DuctilityTargetWarning(
                f"constant-ductility search stopped after {_SEARCH_PASSES} passes for {int(active.sum())} "
                f"entries; largest relative ductility miss {worst:.2g} (see `achieved_ductility`)"
            ),
            stacklevel=5,
        )
    return np.exp(x_best).reshape(x_lo.shape), mu_best.reshape(x_lo.shape)


def raise_if_failed(info, period, fy, accepted) -> None:
    if info[_kernels.INFO_STATUS] == 0.0:
        return
    when = float(info[_kernels.INFO_FAIL_TIME])
    residual = float(info[_kernels.INFO_FAIL_RESIDUAL])
    if not (math.isfinite(residual) and math.isfinite(when)):
        # a ConvergenceError carries a finite residual; a state that left float64 is a bad input
        raise ValueError(
            f"the yielding response left the range of float64 numbers (period {period:g} s, yield force "
            f"{fy:.6g} m/s²); the record, period or strength lies outside any physical range"
        )
    fact = (
        f"Newton iterations did not converge at t = {when:.6g} s (period {period:g} s, yield force "
        f"{fy:.6g} m/s²): residual force {residual:.3g} m/s² per unit mass exceeds {accepted:.3g} "
        f"even with the step split into {MAX_PIECES} pieces"
    )
    error = ConvergenceError(
        fact + "; raise `max_iterations`, loosen `tolerance` or lower `max_step_ratio`", when, residual
    )
    # adapters whose users cannot pass those keywords show the fact with their own advice
    error.fact = fact
    error.cell_advice = "try a different strength or hardening, or a record with a finer time step"
    raise error
