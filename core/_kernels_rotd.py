"""Compiled kernel for orientation-independent spectra (numba, cached on disk).

Private layer: plain float64 arrays and floats in, arrays out, no checks.

Each oscillator is stepped twice at once, under the x and the y component,
with the shared affine map of ``_kernels._advance``. By linearity the
response to the ground motion turned by θ is u(θ) = u_x·cosθ + u_y·sinθ, so
the peak over time in direction θ is the support function of the point set
{±(u_x, u_y)} over every sub-step: the largest projection of a vertex of its
convex hull on (cosθ, sinθ). Points strictly inside the hull never decide a
peak, so the kernel keeps only points that may be hull vertices:

* it tracks, for ``N_DIRECTIONS`` fixed directions, the largest projection
  and the point that reached it (a "witness"); the witnesses and their
  mirror images, in order of direction, span a convex polygon Q that lies
  inside the hull of the points seen so far;
* a point inside Q (first tested cheaply against the circle inscribed in Q,
  then edge by edge) is inside the final hull and is dropped; any other
  point is kept in a buffer;
* at the end, the peak for each requested angle is the largest |projection|
  over the witnesses and the buffered points outside the final Q.

This gives the same maxima as projecting every point (to round-off of the
inside tests), for any motion, including one polarised along a line (Q is
then a segment; the test against Q's largest vertex radius keeps it exact).
Q is rebuilt only when a point that did not move a witness needs the test,
so a growing orbit does not rebuild it at every step.

Each chunk of oscillators is one call of the ``nogil`` kernel `rotd_chunk`;
`rotd_peaks` hands the chunks to Python threads one at a time
(``_jit.PART_THREADS.run_each``). The kernel copies and clears with element
loops, allocates only 2-D float arrays and leaves `_inside` a call: numba
builds no slice-assignment or error-message code for it, which was most of
its cold compile (see DEVELOPERS.md, "Where the time goes").
"""

from __future__ import annotations

import math

import numpy as np

from ._jit import PART_THREADS, get_num_threads, njit
from ._kernels import CHUNK, _advance

#: Fixed directions of the inner polygon, spread over [0°, 180°): eight gives
#: a polygon within 1 - cos(11.25°) ≈ 2 % of a round orbit's hull.
N_DIRECTIONS = 8
#: Columns of `extremes`: max |u_x|, max |u_y|, max radius, then u_x and u_y at it.
N_EXTREMES = 5
_FIRST_BUFFER = 1024
#: Oscillator-sub-steps below which `rotd_peaks` runs every chunk on the calling thread: about
#: 1 ms of work at the 10-15 ns an oscillator-sub-step costs here (bench_rotd.py), the same time
#: as ``_kernels.SERIAL_WORK`` of the linear spectrum, whose steps cost 40x less.
SERIAL_WORK = 100_000


@njit(cache=True)
def _rebuild(wx, wy, nx, ny, offset, vertex_r2, j):
    """Edge lines of polygon Q of oscillator `j`; returns its squared inscribed radius.

    Q has the vertices w_0 .. w_{K-1}, -w_0 .. -w_{K-1} (counter-clockwise),
    w_k = (wx[j, k], wy[j, k]). Edge k runs from vertex k to vertex k + 1
    (vertex K is -w_0) and edge K + k is its mirror image, so z is inside
    or on Q exactly when |n_k·z| <= c_k for every k < K, with
    n_k = (dy, -dx) and c_k = dy·ax - dx·ay for the edge a -> b, d = b - a
    (cross(b - a, z - a) >= 0). The circle about the origin inside Q has
    the radius of the nearest edge line, min c_k/|d| (Q is convex and holds
    the origin). A repeated vertex (no edge) gives n = 0, c = 0: no limit.
    Also sets ``vertex_r2[j]``, the squared largest vertex radius.
    """
    k_count = wx.shape[1]
    inner2 = math.inf
    largest = 0.0
    for k in range(k_count):
        ax, ay = wx[j, k], wy[j, k]
        if k + 1 < k_count:
            bx, by = wx[j, k + 1], wy[j, k + 1]
        else:
            bx, by = -wx[j, 0], -wy[j, 0]
        dx, dy = bx - ax, by - ay
        c = dy * ax - dx * ay
        nx[j, k] = dy
        ny[j, k] = -dx
        offset[j, k] = c
        length2 = dx * dx + dy * dy
        if length2 > 0.0:
            inner2 = min(inner2, c * c / length2)
        largest = max(largest, ax * ax + ay * ay)
    vertex_r2[j] = largest
    return 0.0 if inner2 == math.inf else min(inner2, largest)


@njit(cache=True)
def _inside(nx, ny, offset, vertex_r2, j, zx, zy):
    """True when z lies inside or on polygon Q of oscillator `j` (edge lines from `_rebuild`).

    The test against the largest vertex radius (`vertex_r2`) makes it exact
    for a degenerate Q too: a segment through the origin (every edge line is
    the segment's line) or the origin alone (no edges).
    """
    if zx * zx + zy * zy > vertex_r2[j]:
        return False
    for k in range(nx.shape[1]):
        if abs(nx[j, k] * zx + ny[j, k] * zy) > offset[j, k]:
            return False
    return True


# Rows of the per-chunk work array `w` (one column per oscillator): two states, radius², running
# peaks, the inner polygon's radii, the hull bookkeeping, then the map.
_UX, _VX, _UY, _VY, _R2, _PX, _PY = 0, 1, 2, 3, 4, 5, 6
_INNER2 = 7  # squared inscribed radius of each polygon Q
_VERTEX2 = 8  # squared largest vertex radius of each polygon Q (written by _rebuild)
_STALE = 9  # 1.0 when witnesses moved since Q's edges were built
_PEAK2, _AT_X, _AT_Y = 10, 11, 12  # largest radius² and the point that first reached it
_KEPT = 13  # points in the buffer (a whole number held as a float)
_A0 = 14  # rows _A0 .. _A0 + 9 hold the ten coefficients
_ROWS = _A0 + 10


@njit(cache=True, nogil=True)
def rotd_chunk(load_x, load_y, coef, substeps, starts, cosines, sines, peaks, extremes, step):
    """Chunk ``n_chunks - 1 - step`` of `rotd_peaks` (so step 0 is the one with the most sub-steps).

    Arguments as `rotd_peaks`, plus `step`. Holds no GIL: `rotd_peaks`
    runs chunks on several threads; each writes only its own rows.
    """
    n_steps = load_x.shape[0] - 1
    n_angles = cosines.shape[0]
    chunk = starts.shape[0] - 2 - step
    lo = starts[chunk]
    m = starts[chunk + 1] - lo
    s = substeps[lo]
    w = np.zeros((_ROWS, CHUNK))
    for j in range(m):
        for r in range(10):
            w[_A0 + r, j] = coef[r, lo + j]
    a = w[_A0:, :]
    direction = np.zeros((2, N_DIRECTIONS))  # cos and sin of the fixed directions
    for k in range(N_DIRECTIONS):
        direction[0, k] = math.cos(math.pi * k / N_DIRECTIONS)
        direction[1, k] = math.sin(math.pi * k / N_DIRECTIONS)
    reach = np.zeros((CHUNK, N_DIRECTIONS))  # largest |projection| on each fixed direction
    wx = np.zeros((CHUNK, N_DIRECTIONS))  # witnesses, signed so that w·d = reach
    wy = np.zeros((CHUNK, N_DIRECTIONS))
    nx = np.zeros((CHUNK, N_DIRECTIONS))  # edge lines of each polygon Q (see _rebuild)
    ny = np.zeros((CHUNK, N_DIRECTIONS))
    offset = np.zeros((CHUNK, N_DIRECTIONS))
    vertex_r2 = w[_VERTEX2]
    buffer_x = np.zeros((CHUNK, _FIRST_BUFFER))
    buffer_y = np.zeros((CHUNK, _FIRST_BUFFER))
    for i in range(n_steps):
        px0 = load_x[i]
        py0 = load_y[i]
        dpx = (load_x[i + 1] - px0) / s
        dpy = (load_y[i + 1] - py0) / s
        for sub in range(s):
            pxa = px0 + dpx * sub
            pxb = px0 + dpx * (sub + 1)
            pya = py0 + dpy * sub
            pyb = py0 + dpy * (sub + 1)
            excess = 0.0
            for j in range(m):
                ux, vx = _advance(a, j, w[_UX, j], w[_VX, j], pxa, pxb)
                uy, vy = _advance(a, j, w[_UY, j], w[_VY, j], pya, pyb)
                w[_UX, j] = ux
                w[_VX, j] = vx
                w[_UY, j] = uy
                w[_VY, j] = vy
                w[_PX, j] = max(w[_PX, j], abs(ux))
                w[_PY, j] = max(w[_PY, j], abs(uy))
                r2 = ux * ux + uy * uy
                w[_R2, j] = r2
                excess = max(excess, r2 - w[_INNER2, j])
            if excess <= 0.0:
                continue  # every point inside its inscribed circle
            for j in range(m):
                r2 = w[_R2, j]
                if r2 <= w[_INNER2, j]:
                    continue  # inside the inscribed circle of Q, so inside the hull
                ux = w[_UX, j]
                uy = w[_UY, j]
                if r2 > w[_PEAK2, j]:
                    w[_PEAK2, j] = r2
                    w[_AT_X, j] = ux
                    w[_AT_Y, j] = uy
                grew = False
                for k in range(N_DIRECTIONS):
                    projection = ux * direction[0, k] + uy * direction[1, k]
                    if abs(projection) > reach[j, k]:
                        reach[j, k] = abs(projection)
                        sign = 1.0 if projection > 0.0 else -1.0
                        wx[j, k] = sign * ux
                        wy[j, k] = sign * uy
                        grew = True
                if grew:
                    w[_STALE, j] = 1.0  # Q is rebuilt when next needed; inner2 stays valid (Q only grows)
                else:
                    if w[_STALE, j] != 0.0:
                        w[_INNER2, j] = _rebuild(wx, wy, nx, ny, offset, vertex_r2, j)
                        w[_STALE, j] = 0.0
                    if _inside(nx, ny, offset, vertex_r2, j, ux, uy):
                        continue  # inside Q, so inside the hull
                kept = int(w[_KEPT, j])
                size = buffer_x.shape[1]
                if kept == size:
                    bigger_x = np.zeros((CHUNK, 2 * size))
                    bigger_y = np.zeros((CHUNK, 2 * size))
                    for row in range(CHUNK):  # element loops: no slice-assignment code to compile
                        for point in range(size):
                            bigger_x[row, point] = buffer_x[row, point]
                            bigger_y[row, point] = buffer_y[row, point]
                    buffer_x, buffer_y = bigger_x, bigger_y
                buffer_x[j, kept] = ux
                buffer_y[j, kept] = uy
                w[_KEPT, j] = kept + 1
    best = np.zeros((1, n_angles))  # one local row: the angle loops vectorise
    for j in range(m):
        row = lo + j
        if w[_STALE, j] != 0.0:
            _rebuild(wx, wy, nx, ny, offset, vertex_r2, j)
        for q in range(n_angles):
            best[0, q] = 0.0
        for k in range(N_DIRECTIONS):
            zx = wx[j, k]
            zy = wy[j, k]
            for q in range(n_angles):
                best[0, q] = max(best[0, q], abs(zx * cosines[q] + zy * sines[q]))
        for point in range(int(w[_KEPT, j])):
            zx = buffer_x[j, point]
            zy = buffer_y[j, point]
            if _inside(nx, ny, offset, vertex_r2, j, zx, zy):
                continue  # inside the final Q: bounded by the witnesses counted above
            for q in range(n_angles):
                best[0, q] = max(best[0, q], abs(zx * cosines[q] + zy * sines[q]))
        for q in range(n_angles):
            peaks[row, q] = best[0, q]
        extremes[row, 0] = w[_PX, j]
        extremes[row, 1] = w[_PY, j]
        extremes[row, 2] = math.sqrt(w[_PEAK2, j])
        extremes[row, 3] = w[_AT_X, j]
        extremes[row, 4] = w[_AT_Y, j]


def rotd_peaks(load_x, load_y, coef, substeps, starts, cosines, sines, peaks, extremes):
    """Peak |u(θ)| over every sub-step for each oscillator and angle, from rest.

    Parameters
    ----------
    load_x, load_y : (n_samples,) float64, p = -ü_g of the two components [m/s²]
    coef : (10, n_osc) float64, the map of ONE sub-step (h = dt / s)
    substeps : (n_osc,) int64, sub-steps s per record step, equal within a chunk
        and ascending over chunks
    starts : (n_chunks + 1,) int64, chunk boundaries (``_kernels.chunk_starts``)
    cosines, sines : (n_angles,) float64, cosθ and sinθ of the angles
    peaks : (n_osc, n_angles) float64, filled with max over t of
        |u_x cosθ + u_y sinθ|
    extremes : (n_osc, N_EXTREMES) float64, filled with max |u_x|, max |u_y|,
        max sqrt(u_x² + u_y²), and u_x, u_y where that maximum first occurs

    As in ``_kernels.peaks``, the oscillators of a chunk are stepped
    together (the loop over them vectorises) with the load linear inside
    each record step. Chunks run on numba's thread count of Python threads
    (``_jit.PART_THREADS.run_each``), which take them one at a time, the
    chunks with the most sub-steps first: the hull filter's work differs
    from chunk to chunk, so no share fixed in advance balances it. Below
    `SERIAL_WORK` oscillator-sub-steps every chunk runs on the
    calling thread (waking a thread costs more than that). After each sub-step a second loop sends the few points
    outside their oscillator's inscribed circle to the hull filter described
    in the module docstring.
    """
    n_chunks = starts.shape[0] - 1
    work = (load_x.shape[0] - 1) * int(substeps.sum())
    threads = 1 if work < SERIAL_WORK else get_num_threads()
    PART_THREADS.run_each(rotd_chunk, (load_x, load_y, coef, substeps, starts, cosines, sines, peaks, extremes),
                          n_chunks, threads)
