"""An independent converged reference for a bilinear oscillator: scipy's DOP853 with exact branch events.

Not a test module (no ``test_`` prefix): the yielding-accuracy tests import it.
The ground acceleration is linear between samples (as groundstep assumes);
the spring is elastic until the yield surface, then on the post-yield line
until the velocity changes sign; each change of branch is an event located by
solve_ivp (Hairer, Nørsett & Wanner 1993, DOP853 dense output), so no step
straddles a kink. The state carries ∫fs·du to give the hysteretic energy.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.integrate import solve_ivp

from groundstep.core import Record


def bilinear_reference(record: Record, period: float, damping: float, fy: float, alpha: float = 0.0) -> dict[str, float]:
    """Peak |u| [m] (read at the samples and at every event), residual displacement [m], hysteretic energy [m²/s²]."""
    omega = 2 * math.pi / period
    k, c = omega**2, 2 * damping * omega
    hk, fyr = alpha * k, (1 - alpha) * fy
    time, accel = record.time, record.accel
    t, state, branch, anchor = 0.0, np.zeros(3), 0, (0.0, 0.0)
    peak = 0.0

    def spring(u):
        if branch == 0:
            return anchor[1] + k * (u - anchor[0])
        return hk * u + branch * fyr

    load = {"t0": 0.0, "a0": 0.0, "slope": 0.0}

    def rhs(t, y):
        f = spring(y[0])
        ground = load["a0"] + load["slope"] * (t - load["t0"])
        return [y[1], -ground - c * y[1] - f, f * y[1]]

    def hit_upper(t, y):
        return spring(y[0]) - (hk * y[0] + fyr) if branch == 0 else 1.0

    def hit_lower(t, y):
        return spring(y[0]) - (hk * y[0] - fyr) if branch == 0 else -1.0

    def turn(t, y):
        return y[1] if branch != 0 else 1.0

    hit_upper.terminal = hit_lower.terminal = turn.terminal = True
    hit_upper.direction, hit_lower.direction = 1, -1
    for i in range(record.n - 1):  # one sample interval at a time: the load is linear inside it
        t, end = time[i], time[i + 1]
        load.update(t0=time[i], a0=accel[i], slope=(accel[i + 1] - accel[i]) / record.dt)
        while t < end - 1e-14 * max(end, 1.0):
            sol = solve_ivp(
                rhs, (t, end), state, method="DOP853", rtol=1e-11, atol=1e-14,
                events=(hit_upper, hit_lower, turn), dense_output=True,
            )  # fmt: skip
            fine = np.linspace(t, sol.t[-1], max(3, int((sol.t[-1] - t) / (period / 400)) + 2))
            peak = max(peak, float(np.max(np.abs(sol.sol(fine)[0]))))  # between samples too, 400 per period
            t, state = sol.t[-1], sol.y[:, -1].copy()
            if sol.status == 1:
                if branch == 0:
                    branch = 1 if sol.t_events[0].size else -1
                else:
                    anchor, branch = (state[0], spring(state[0])), 0
    final_force = spring(state[0])
    return {
        "peak": peak,
        "residual": state[0] - final_force / k,
        "hysteretic": state[2] - final_force**2 / (2 * k),
    }
