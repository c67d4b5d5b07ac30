"""Strength search behind `ductility_spectrum` (private).

For each period and target ductility μ, the largest yield strength whose
response reaches μ: a grid stage over ln R from R = 1 upward finds the first
bracket, then regula falsi with the Illinois modification (Dowell & Jarratt
1971) refines every bracket at once. Ductility of many (period, strength)
lanes comes from one compiled kernel call per pass.
"""

from __future__ import annotations

import math
import time

import numpy as np

from . import _kernels_inelastic as _kernels
from . import _notices
from ._kernels import chunk_starts
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


class Solver:
    """Ductility of many (period, strength) oscillators of one record and settings."""

    def __init__(self, record, method, alpha, damping, relative_tolerance, max_iterations, stats):
        self.record, self.method, self.alpha, self.damping = record, method, alpha, damping
        self.relative_tolerance, self.max_iterations, self.stats = relative_tolerance, max_iterations, stats
        self.load = -record.accel

    def ductility(self, periods, fy, substeps):
        """μ = max|u|·k/fy for each lane (arrays of equal length)."""
        order = np.argsort(substeps, kind="stable")
        periods, fy, substeps = periods[order], fy[order], substeps[order]
        omega = 2.0 * np.pi / periods
        k, c = omega * omega, 2.0 * self.damping * omega
        accepted = self.relative_tolerance * (fy + self.record.pga)
        starts = chunk_starts(substeps, _kernels.CHUNK)
        peak, failed = np.empty(periods.size), np.empty(periods.size)
        began = time.perf_counter()
        _kernels.peaks(
            self.load, self.record.dt, self.method.beta, self.method.gamma, self.alpha, k, c, fy,
            accepted, substeps, starts, self.max_iterations, peak, failed,
        )  # fmt: skip
        if self.stats is not None:
            self.stats["kernel_seconds"] = self.stats.get("kernel_seconds", 0.0) + time.perf_counter() - began
            steps = int(np.sum(substeps)) * (self.record.n - 1)
            self.stats["oscillator_steps"] = self.stats.get("oscillator_steps", 0) + steps
        for lane in np.flatnonzero(failed):  # rare: repeat with step splitting
            peak[lane] = self._robust_peak(
                periods[lane], k[lane], c[lane], fy[lane], substeps[lane], accepted[lane]
            )
        mu = np.empty(periods.size)
        mu[order] = peak * k / fy
        return mu

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
