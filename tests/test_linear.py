"""Tests of groundstep.core.linear against closed forms, scipy and published relations."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import signal

from groundstep.core import (
    Record,
    SubstepWarning,
    collect_warnings,
    elastic_spectrum,
    linear_response,
    period_grid,
)


def _random_record(seed: int, n: int = 1500, dt: float = 0.01) -> Record:
    """Invented record: seeded Gaussian noise smoothed by a 5-point moving average [m/s²]."""
    rng = np.random.default_rng(seed)
    noise = np.convolve(rng.normal(size=n + 4), np.ones(5) / 5.0, mode="valid")
    return Record(noise, dt=dt, unit="m/s2")


def _quiet(function, *args, **kwargs):
    with collect_warnings():
        return function(*args, **kwargs)


# --- free vibration ---------------------------------------------------------


@pytest.mark.parametrize("damping", [0.0, 0.05, 0.3])
def test_free_vibration_matches_closed_form(damping):
    """Damped free vibration from u0, v0 equals the closed-form solution (exact method)."""
    period, u0, v0 = 0.8, 0.02, -0.15
    record = Record(np.zeros(801), dt=0.005, unit="m/s2")
    result = linear_response(record, period, damping, "exact", initial_displacement=u0, initial_velocity=v0)
    # closed form of u'' + 2ζωu' + ω²u = 0 (any structural dynamics text; derived by hand)
    w = 2 * math.pi / period
    wd = w * math.sqrt(1 - damping**2)
    t = record.time
    expected = np.exp(-damping * w * t) * (u0 * np.cos(wd * t) + (v0 + damping * w * u0) / wd * np.sin(wd * t))
    # exact stepping: only round-off, which grows ~linearly over 800 steps
    assert_allclose(result.displacement, expected, rtol=0, atol=1e-13)


def test_free_vibration_average_acceleration_close_to_closed_form():
    """Average acceleration with Δt/T = 1/160 tracks free vibration within its period error."""
    period, damping, u0 = 0.8, 0.05, 0.02
    record = Record(np.zeros(481), dt=0.005, unit="m/s2")
    result = linear_response(record, period, damping, "average", initial_displacement=u0)
    w = 2 * math.pi / period
    wd = w * math.sqrt(1 - damping**2)
    t = record.time
    expected = np.exp(-damping * w * t) * u0 * (np.cos(wd * t) + damping * w / wd * np.sin(wd * t))
    # period elongation ≈ (ωΔt)²/12 = 1.3e-4 relative; after 3 cycles the phase
    # error is 2π·3·1.3e-4 ≈ 2.4e-3 rad, so the error stays below 3e-3·u0
    assert_allclose(result.displacement, expected, rtol=0, atol=3e-3 * u0)


def test_period_elongation_follows_published_relation():
    """Undamped average acceleration rotates by ω̄Δt per step with tan(ω̄Δt/2) = ωΔt/2."""
    period, dt = 1.0, 0.2  # Δt/T = 0.2, large enough to show elongation
    record = Record(np.zeros(200), dt=dt, unit="m/s2")
    u = linear_response(record, period, 0.0, "average", max_step_ratio=None, initial_displacement=1.0).displacement
    # a discrete rotation obeys u[n+1] + u[n-1] = 2 cos(θ) u[n]; least squares over all n
    cos_theta = np.dot(u[2:] + u[:-2], u[1:-1]) / (2 * np.dot(u[1:-1], u[1:-1]))
    omega = 2 * math.pi / period
    # Hughes (1987), The Finite Element Method, §9.3: trapezoidal rule period relation
    expected = 2 * math.atan(omega * dt / 2)
    assert math.acos(cos_theta) == pytest.approx(expected, rel=1e-12)
    # amplitude is preserved (average acceleration has no numerical damping)
    assert np.max(np.abs(u)) == pytest.approx(1.0, rel=1e-12)


# --- harmonic excitation ----------------------------------------------------


@pytest.mark.parametrize("method", ["exact", "average"])
@pytest.mark.parametrize("ratio", [0.5, 1.0, 2.0])
def test_harmonic_steady_state_amplitude(method, ratio):
    """Steady-state amplitude equals u_st·R_d, R_d = 1/sqrt((1 - r²)² + (2ζr)²) (closed form)."""
    period, damping, dt = 0.5, 0.1, 0.0025
    omega = 2 * math.pi / period
    forcing = ratio * omega
    t = np.arange(0.0, 40.0, dt)
    amplitude = 1.0  # ground acceleration amplitude [m/s²]
    record = Record(amplitude * np.sin(forcing * t), dt=dt, unit="m/s2")
    u = linear_response(record, period, damping, method).displacement
    steady = u[t > 30.0]  # transient decays as exp(-ζωt) < 1e-16 after 30 s
    r_d = 1.0 / math.sqrt((1 - ratio**2) ** 2 + (2 * damping * ratio) ** 2)
    expected = amplitude / omega**2 * r_d
    # tolerance: sampling of the crest (Ωdt)²/8 <= 5e-4 and, for average acceleration,
    # period elongation (ωΔt)²/12 ≈ 3e-4 shifting r; 2e-3 covers both
    assert np.max(np.abs(steady)) == pytest.approx(expected, rel=2e-3)


# --- exact method against scipy ---------------------------------------------


@pytest.mark.parametrize("seed", [1, 2, 3])
@pytest.mark.parametrize("period", [0.03, 0.05, 0.1, 0.7, 4.0, 60.0])
@pytest.mark.parametrize("damping", [0.0, 0.02, 0.2, 0.9])
def test_exact_matches_scipy_lsim(seed, period, damping):
    """The exact method equals scipy.signal.lsim with linear interpolation of the input."""
    record = _random_record(seed, n=600)
    omega = 2 * math.pi / period
    system = signal.StateSpace(
        np.array([[0.0, 1.0], [-omega**2, -2 * damping * omega]]),
        np.array([[0.0], [1.0]]),
        np.eye(2),
        np.zeros((2, 1)),
    )
    x0 = np.array([0.001, -0.01])
    _, _, states = signal.lsim(system, -record.accel, record.time, X0=x0, interp=True)
    result = linear_response(
        record, period, damping, "exact", max_step_ratio=None, initial_displacement=x0[0], initial_velocity=x0[1]
    )
    # both exact for piecewise-linear input; differences are round-off of two algorithms
    scale_u = np.max(np.abs(states[:, 0]))
    scale_v = np.max(np.abs(states[:, 1]))
    assert_allclose(result.displacement, states[:, 0], rtol=0, atol=1e-9 * scale_u)
    assert_allclose(result.velocity, states[:, 1], rtol=0, atol=1e-9 * scale_v)


# --- convergence --------------------------------------------------------------


def _smooth_record(dt: float) -> Record:
    t = np.arange(0.0, 6.0 + dt / 2, dt)
    accel = np.sin(2.1 * t) * np.exp(-0.3 * t) + 0.5 * np.sin(5.3 * t + 0.4)
    return Record(accel, dt=dt, unit="m/s2")


def test_average_acceleration_converges_at_second_order():
    """Halving Δt cuts the error against the exact solution by 4 (second order, Newmark 1959)."""
    errors = []
    for dt in (0.04, 0.02, 0.01, 0.005):
        record = _smooth_record(dt)
        exact = linear_response(record, 0.6, 0.05, "exact").displacement
        average = linear_response(record, 0.6, 0.05, "average", max_step_ratio=None).displacement
        errors.append(np.max(np.abs(average - exact)))
    ratios = np.array(errors[:-1]) / np.array(errors[1:])
    # asymptotic ratio 2² = 4; the coarsest pair (Δt/T = 1/15) is already close
    assert_allclose(ratios, 4.0, rtol=0.08)


def test_linear_acceleration_converges_at_second_order():
    """Linear acceleration is also second order (γ = 1/2)."""
    errors = []
    for dt in (0.02, 0.01, 0.005):
        record = _smooth_record(dt)
        exact = linear_response(record, 0.6, 0.05, "exact").displacement
        linear = linear_response(record, 0.6, 0.05, "linear", max_step_ratio=None).displacement
        errors.append(np.max(np.abs(linear - exact)))
    assert_allclose(np.array(errors[:-1]) / np.array(errors[1:]), 4.0, rtol=0.08)


# --- sub-stepping and stability -----------------------------------------------


def test_substeps_equal_stepping_an_interpolated_record():
    """Sub-stepping equals running the record linearly interpolated onto the sub-step grid."""
    record = _random_record(7, n=400, dt=0.02)
    period = 0.05  # Δt/T = 0.4 -> 4 sub-steps at the default limit 0.1
    with pytest.warns(SubstepWarning, match="split into 4 sub-steps"):
        result = linear_response(record, period, 0.05, "average")
    assert result.substeps == 4
    fine_time = np.arange((record.n - 1) * 4 + 1) * (record.dt / 4)
    fine = Record(np.interp(fine_time, record.time, record.accel), dt=record.dt / 4, unit="m/s2")
    reference = linear_response(fine, period, 0.05, "average", max_step_ratio=None)
    # same arithmetic in a different order: round-off only
    scale = np.max(np.abs(reference.displacement))
    assert_allclose(result.displacement, reference.displacement[::4], rtol=0, atol=1e-12 * scale)
    assert_allclose(result.velocity, reference.velocity[::4], rtol=0, atol=1e-11 * np.max(np.abs(reference.velocity)))
    # peaks are read at every sub-step, as on the resampled record
    assert result.peak_displacement == pytest.approx(reference.peak_displacement, rel=1e-12)
    assert result.peak_velocity == pytest.approx(reference.peak_velocity, rel=1e-12)
    assert result.peak_total_acceleration == pytest.approx(reference.peak_total_acceleration, rel=1e-12)
    assert result.time_of_peak_displacement == pytest.approx(reference.time_of_peak_displacement, rel=1e-12)
    spectrum = _quiet(elastic_spectrum, record, [period], [0.05], "average")
    assert spectrum.sd[0, 0] == pytest.approx(reference.peak_displacement, rel=1e-12)
    assert spectrum.sa[0, 0] == pytest.approx(reference.peak_total_acceleration, rel=1e-12)


@pytest.mark.parametrize("method", ["exact", "linear"])
def test_short_period_peaks_are_read_between_samples(method):
    """A short period's peaks come from the sub-step grid, equal to those of the resampled record."""
    record = _random_record(8, n=300, dt=0.02)
    period, s = 0.03, 7  # Δt/T = 0.67 -> 7 sub-steps at the default limit 0.1
    spectrum = _quiet(elastic_spectrum, record, [period], [0.02], method)
    assert spectrum.substeps[0, 0] == s
    fine_time = np.arange((record.n - 1) * s + 1) * (record.dt / s)
    fine = Record(np.interp(fine_time, record.time, record.accel), dt=record.dt / s, unit="m/s2")
    reference = linear_response(fine, period, 0.02, method, max_step_ratio=None)
    assert reference.substeps == 1
    for got, expected in [
        (spectrum.sd, reference.peak_displacement),
        (spectrum.sv, reference.peak_velocity),
        (spectrum.sa, reference.peak_total_acceleration),
    ]:
        assert got[0, 0] == pytest.approx(expected, rel=1e-11)  # same arithmetic, other order
    # reading only at the samples misses part of the peak for this oscillator
    coarse = _quiet(elastic_spectrum, record, [period], [0.02], method, max_step_ratio=None)
    assert coarse.sd[0, 0] < spectrum.sd[0, 0]


def test_substepping_brings_newmark_close_to_exact():
    """With sub-steps, a short-period oscillator on a coarse record is close to the exact answer."""
    record = _random_record(11, n=500, dt=0.02)
    exact = _quiet(linear_response, record, 0.04, 0.05, "exact", max_step_ratio=0.02).peak_displacement
    fine = _quiet(linear_response, record, 0.04, 0.05, "average", max_step_ratio=0.02).peak_displacement
    coarse = linear_response(record, 0.04, 0.05, "average", max_step_ratio=None).peak_displacement
    # at Δt/T = 0.02 the period error is (2π·0.02)²/12 ≈ 1.3e-3; 1 % is generous
    assert fine == pytest.approx(exact, rel=1e-2)
    assert abs(coarse - exact) > abs(fine - exact)


def test_linear_acceleration_diverges_past_stability_limit_without_substeps():
    """Linear acceleration at Δt/T = 0.6 > √3/π grows without bound (Newmark 1959)."""
    from groundstep.core import _coefficients, _kernels

    omega = 2 * math.pi / 1.0
    coef = _coefficients.newmark(np.array([omega]), np.array([0.0]), 0.6, 1.0 / 6.0, 0.5)
    n = 200
    u, v = np.empty(n), np.empty(n)
    _kernels.history(np.zeros(n), coef[:, 0], 1, 0.6, 1.0, 0.0, np.empty(n), u, v, np.empty(n), np.empty(6))
    assert np.max(np.abs(u)) > 1e6  # spectral radius > 1: geometric growth
    # just inside the limit (Δt/T = 0.55 < 0.5513) it stays bounded by its initial energy scale
    coef = _coefficients.newmark(np.array([omega]), np.array([0.0]), 0.55, 1.0 / 6.0, 0.5)
    _kernels.history(np.zeros(n), coef[:, 0], 1, 0.55, 1.0, 0.0, np.empty(n), u, v, np.empty(n), np.empty(6))
    assert np.max(np.abs(u)) < 10.0


def test_linear_acceleration_is_kept_stable_by_the_public_api():
    """Even with the accuracy limit off, the public API sub-steps linear acceleration to stay stable."""
    record = Record(np.zeros(200), dt=0.6, unit="m/s2")
    with pytest.warns(SubstepWarning, match="split into 2 sub-steps"):
        result = linear_response(record, 1.0, 0.0, "linear", max_step_ratio=None, initial_displacement=1.0)
    assert result.substeps == 2  # 0.6 / 2 = 0.3 <= √3/π
    assert result.peak_displacement < 1.5
    default = _quiet(linear_response, record, 1.0, 0.0, "linear", initial_displacement=1.0)
    assert default.substeps == 6  # default accuracy limit Δt/T <= 0.1
    assert default.peak_displacement < 1.5


def test_stability_limits():
    """Critical Δt/T: √3/π for linear acceleration, 1/π for central difference (Newmark 1959)."""
    from groundstep.core.methods import resolve_method

    assert resolve_method("linear").stability_limit == pytest.approx(math.sqrt(3) / math.pi, rel=1e-14)
    assert resolve_method((0.0, 0.5)).stability_limit == pytest.approx(1 / math.pi, rel=1e-14)
    assert math.isinf(resolve_method("average").stability_limit)
    assert resolve_method((0.25, 0.5)).name == "average"


@pytest.mark.parametrize(("beta", "gamma"), [(0.25, 0.5), (1 / 6, 0.5), (0.3, 0.6)])
def test_newmark_map_solves_the_1959_step_equations(beta, gamma):
    """The linear map (built from the shared increment-form constants) solves Newmark's equations.

    Reference: for each unit input (u0, v0, p0, p1) the three equations of one
    step (Newmark 1959) in the unknowns (u1, v1, a1), solved by numpy.linalg.solve::

        u1 - β h² a1 = u0 + h v0 + h² (1/2 - β) a0
        v1 - γ h a1  = v0 + h (1 - γ) a0
        k u1 + c v1 + a1 = p1,       a0 = p0 - c v0 - k u0
    """
    from groundstep.core import _coefficients

    periods = np.geomspace(0.01, 100.0, 25)
    omega, zeta, h = 2 * np.pi / periods, np.full(25, 0.05), np.full(25, 0.01)
    coef = _coefficients.newmark(omega, zeta, h, beta, gamma)
    rows = ((0, 2), (1, 3), (4, 6), (5, 7))
    for j in range(periods.size):
        c, k, step = 2 * zeta[j] * omega[j], omega[j] ** 2, h[j]
        matrix = np.array([[1.0, 0.0, -beta * step**2], [0.0, 1.0, -gamma * step], [k, c, 1.0]])
        for (row_u, row_v), (u0, v0, p0, p1) in zip(rows, np.eye(4)):
            a0 = p0 - c * v0 - k * u0
            rhs = [u0 + step * v0 + step**2 * (0.5 - beta) * a0, v0 + step * (1 - gamma) * a0, p1]
            u1, v1, _ = np.linalg.solve(matrix, rhs)
            # two routes to one linear solve: they differ by round-off of the largest term,
            # |u0| or |v0| = 1 here, times the condition of the 3×3 system (< 1e3 at ωh <= 2π)
            assert coef[row_u, j] == pytest.approx(u1, rel=1e-12, abs=1e-15)
            assert coef[row_v, j] == pytest.approx(v1, rel=1e-12, abs=1e-13)


# --- spectra ------------------------------------------------------------------


def test_pseudo_spectra_match_an_independent_scipy_run():
    """PSA and PSV of the exact method equal ω²·max|u| and ω·max|u| of scipy.signal.lsim runs.

    Reference: for each oscillator an independent state-space run (scipy.signal.lsim,
    linear interpolation of the input, exact for piecewise-linear ground motion);
    SD, PSV = ω·SD and PSA = ω²·SD are formed from its displacement history, and SV
    from its velocity. Periods >= 10·dt, so the spectrum reads peaks at the samples,
    as lsim reports them.
    """
    record = _random_record(5, n=800)
    periods = period_grid(0.1, 5.0, 12)
    dampings = [0.0, 0.05, 0.2]
    spectrum = elastic_spectrum(record, periods, dampings, "exact")
    assert spectrum.sd.shape == (3, 12) and spectrum.substeps.max() == 1
    for i, damping in enumerate(dampings):
        for j, period in enumerate(periods):
            omega = 2 * math.pi / period
            system = signal.StateSpace([[0.0, 1.0], [-omega**2, -2 * damping * omega]], [[0.0], [1.0]],
                                       np.eye(2), np.zeros((2, 1)))  # fmt: skip
            _, _, states = signal.lsim(system, -record.accel, record.time, interp=True)
            sd = np.max(np.abs(states[:, 0]))
            # both exact for piecewise-linear input: round-off of two algorithms, as in
            # test_exact_matches_scipy_lsim (1e-9 of the peak)
            assert spectrum.psa[i, j] == pytest.approx(omega**2 * sd, rel=1e-9)
            assert spectrum.psv[i, j] == pytest.approx(omega * sd, rel=1e-9)
            assert spectrum.sv[i, j] == pytest.approx(np.max(np.abs(states[:, 1])), rel=1e-9)


@pytest.mark.parametrize("method", ["average", "linear", "exact", (0.3, 0.6)])
def test_spectrum_equals_single_oscillator_peaks(method):
    """Each spectrum entry equals the peaks of linear_response for that oscillator."""
    record = _random_record(9)
    periods = [0.0, 0.04, 0.3, 2.0]
    spectrum = _quiet(elastic_spectrum, record, periods, [0.02, 0.1], method)
    for i, damping in enumerate([0.02, 0.1]):
        for j, period in enumerate(periods):
            single = _quiet(linear_response, record, period, damping, method)
            # two kernels, same recurrence; fastmath may reorder the sums
            assert spectrum.sd[i, j] == pytest.approx(single.peak_displacement, rel=1e-12, abs=1e-300)
            assert spectrum.sv[i, j] == pytest.approx(single.peak_velocity, rel=1e-12, abs=1e-300)
            assert spectrum.sa[i, j] == pytest.approx(single.peak_total_acceleration, rel=1e-12)
            assert spectrum.psa[i, j] == pytest.approx(single.pseudo_acceleration, rel=1e-12)


def test_rigid_oscillator_follows_the_ground():
    """Period 0: total acceleration is the ground acceleration; SD = SV = 0; PSA = SA = PGA."""
    record = _random_record(3)
    result = linear_response(record, 0.0)
    assert_allclose(result.total_acceleration, record.accel, rtol=0, atol=0)
    assert result.peak_displacement == 0.0
    spectrum = elastic_spectrum(record, [0.0], [0.05])
    assert spectrum.psa[0, 0] == spectrum.sa[0, 0] == record.pga


def test_short_period_psa_approaches_pga():
    """PSA at a very short period equals PGA (the oscillator moves with the ground)."""
    dt = 0.005
    t = np.arange(0.0, 8.0, dt)
    record = Record(np.sin(2 * np.pi * 1.3 * t) * np.exp(-0.2 * t) + 0.3 * np.sin(2 * np.pi * 4.1 * t), dt, "m/s2")
    spectrum = elastic_spectrum(record, [0.002], [0.05], "exact", max_step_ratio=None)
    # quasi-static error ≈ (f_ground / f_oscillator)² = (4.1 / 500)² ≈ 7e-5, plus sampling of the crest
    assert spectrum.psa[0, 0] == pytest.approx(record.pga, rel=1e-3)


@pytest.mark.parametrize("method", ["exact", "average", "linear"])
def test_long_period_sd_approaches_peak_ground_displacement(method):
    """SD at a very long period equals PGD for a ground motion that returns to rest."""
    dt, duration, peak = 0.005, 4.0, 0.12
    t = np.arange(0.0, duration + dt / 2, dt)
    # ground displacement d = D sin²(πt/τ): starts and ends at rest; ü_g = D (2π²/τ²) cos(2πt/τ)
    accel = peak * 2 * np.pi**2 / duration**2 * np.cos(2 * np.pi * t / duration)
    record = Record(np.concatenate([accel, np.zeros(400)]), dt, "m/s2")
    spectrum = elastic_spectrum(record, [1.0e5], [0.05], method)
    # the mass stays put: |u| = |d_g| up to the damping force's drag, relative 2ζωτ ≈ 2.5e-5,
    # the spring's (ωτ)² ≈ 6e-8, and O((dt/τ)²) ≈ 2e-6 from linear interpolation of ü_g
    # (Newmark adds its own O(dt²/τ²) ≈ 2e-6 integration error)
    assert spectrum.sd[0, 0] == pytest.approx(peak, rel=1e-4)


def test_zero_damping_and_very_long_period_stay_finite():
    """ζ = 0 and T = 1e6 s run without overflow: the relative motion is minus the ground's."""
    record = _smooth_record(0.005)
    ground = record.ground_displacement()
    for method in ("average", "exact"):
        result = linear_response(record, 1.0e6, 0.0, method)
        assert np.all(np.isfinite(result.displacement))
        # (ωt)² ≈ 1e-9 over the 6 s record: the mass does not move; the average-acceleration
        # rule integrates ü_g with an O(dt²) error of about 1e-5 of the peak on this smooth record
        assert_allclose(result.displacement, -ground, rtol=0, atol=1e-4 * np.max(np.abs(ground)))


def test_period_grid():
    """period_grid gives log-spaced periods with exact end points."""
    grid = period_grid(0.05, 5.0, 5)
    assert grid[0] == 0.05 and grid[-1] == 5.0
    assert_allclose(np.diff(np.log(grid)), np.log(100.0) / 4, rtol=1e-12)


# --- bad input ------------------------------------------------------------------


@pytest.mark.parametrize(
    ("kwargs", "error", "message"),
    [
        ({"period": -0.1}, ValueError, r"`period` must be >= 0 s; index 0 holds -0.1"),
        ({"period": [0.1, 0.2]}, ValueError, r"`period` must be one number"),
        ({"damping": 5.0}, ValueError, r"5 looks like a percentage: enter 0.05"),
        ({"damping": 1.0}, ValueError, r"`damping` must be a ratio of critical damping in \[0, 1\); got 1.0"),
        ({"damping": -0.01}, ValueError, r"`damping` must be >= 0"),
        ({"damping": float("nan")}, ValueError, r"`damping` must be finite"),
        ({"method": "wilson"}, ValueError, r"`method` 'wilson' is not known"),
        ({"method": (0.25, 0.4)}, ValueError, r"gamma must lie in \[0.5, 1\]"),
        ({"method": (0.7, 0.5)}, ValueError, r"beta must lie in \[0, 0.5\]"),
        ({"method": 3}, TypeError, r"`method` must be 'average', 'linear', 'exact' or a \(beta, gamma\) pair"),
        ({"max_step_ratio": 0.0}, ValueError, r"`max_step_ratio` must be > 0"),
        ({"initial_velocity": "fast"}, TypeError, r"`initial_velocity` must be a number"),
    ],
)
def test_bad_linear_input_is_named(kwargs, error, message):
    """Bad oscillator settings raise an error naming the argument, the rule and the value."""
    record = _random_record(1, n=50)
    arguments = {"period": 0.5} | kwargs
    with pytest.raises(error, match=message):
        linear_response(record, **arguments)


@pytest.mark.parametrize("method", ["average", "linear", "exact"])
def test_absurdly_short_period_is_refused_with_advice(method):
    """A period needing more than 10,000 sub-steps is refused, pointing to period 0 (rigid)."""
    record = _random_record(1, n=50)
    with pytest.raises(ValueError, match=r"period 1e-07 s would need 1e\+06 sub-steps .* use period 0 \(rigid"):
        elastic_spectrum(record, [0.5, 1e-7])
    with pytest.raises(ValueError, match=r"period 1e-07 s would need"):
        linear_response(record, 1e-7, 0.05, method)


def test_record_must_be_a_record():
    """A bare array in place of a Record gets a message saying how to build one."""
    with pytest.raises(TypeError, match=r"`record` must be a groundstep Record, got ndarray"):
        elastic_spectrum(np.zeros(10), [0.5])


def test_bad_spectrum_input_names_the_index():
    """A bad entry in periods or dampings is named by its index."""
    record = _random_record(1, n=50)
    with pytest.raises(ValueError, match=r"`periods` must be >= 0 s; index 2 holds -1.0"):
        elastic_spectrum(record, [0.1, 0.2, -1.0])
    with pytest.raises(ValueError, match=r"`dampings` .* index 1 holds 20.0; 20 looks like a percentage: enter 0.2"):
        elastic_spectrum(record, [0.1], [0.05, 20.0])


# --- result objects -------------------------------------------------------------


def test_results_have_short_one_line_reprs_and_the_method():
    """repr is one line with shapes, method and peaks (no arrays); the Method and its describe() are on the result."""
    record = _random_record(2, n=3000)
    spectrum = elastic_spectrum(record, period_grid(0.1, 4.0, 80), [0.02, 0.05, 0.1])
    single = linear_response(record, 0.5, 0.05, "linear")
    for result in (spectrum, single):
        text = repr(result)
        assert "\n" not in text and len(text) < 240 and "array" not in text
    assert repr(spectrum).startswith("ElasticSpectrum(3 dampings × 80 periods, T 0.1-4 s, ζ 0.02-0.1, method='average'")
    j = int(np.argmax(spectrum.psa) % 80)
    assert f"max PSA={spectrum.psa.max():.4g} m/s² at T={spectrum.periods[j]:g} s" in repr(spectrum)
    assert f"SD={single.peak_displacement:.4g} m" in repr(single) and "method='linear'" in repr(single)
    assert single.method == "linear" and single.beta == 1 / 6 and single.gamma == 0.5
    assert single.method.describe().startswith("linear acceleration (Newmark 1959)")
    assert spectrum.method.name == "average" and elastic_spectrum(record, [0.5], method="exact").method == "exact"


def test_results_are_built_from_named_fields():
    """Result constructors take keywords only (no long positional argument lists)."""
    from groundstep.core import ElasticSpectrum, LinearResponse

    single = linear_response(_random_record(2, n=50), 0.5)
    with pytest.raises(TypeError):
        LinearResponse(0.5, 0.05)  # type: ignore[misc]
    with pytest.raises(TypeError):
        ElasticSpectrum(np.ones(1))  # type: ignore[misc]
    copy = LinearResponse(**{name: getattr(single, name) for name in LinearResponse.__dataclass_fields__})
    assert copy.peak_displacement == single.peak_displacement


def test_serial_and_parallel_spectrum_kernels_agree_bit_for_bit():
    """The one-thread path (small work) and two threads sharing the chunks run the same chunk code: identical peaks."""
    from groundstep.core import _kernels
    from groundstep.core.linear import _step_coefficients
    from groundstep.core.methods import resolve_method

    rng = np.random.default_rng(7)
    load = rng.standard_normal(3001)
    periods = np.geomspace(0.005, 5.0, 150)  # short periods sub-stepped: chunks of several counts
    coef, used = _step_coefficients(0.01, periods, np.full(150, 0.05), resolve_method("average"), 0.1)
    order = np.argsort(used, kind="stable")
    coef, used = np.ascontiguousarray(coef[:, order]), used[order]
    starts, zeros = _kernels.chunk_starts(used), np.zeros(150)
    serial, parallel = np.empty((3, 150)), np.empty((3, 150))
    _kernels.peaks_serial(load, coef, used, starts, zeros, zeros, serial)
    owner = _kernels.balance(used, starts, 2)
    _kernels.PART_THREADS.run(_kernels.peaks, (load, coef, used, starts, zeros, zeros, parallel, owner), 2)
    np.testing.assert_array_equal(serial, parallel)  # exact: each chunk is computed by the same compiled code


def test_balance_shares_chunks_by_work_longest_first():
    """Threads get chunks by lanes x sub-steps, so the heavy sub-stepped chunks sorted last are split."""
    from groundstep.core import _kernels

    # chunks: four of 64 lanes x 1 sub-step, then 8 lanes x 10 and 16 lanes x 5 (80 lane-steps each)
    substeps = np.array([1] * 256 + [5] * 13 + [10] * 8, dtype=np.int64)
    substeps.sort()
    starts = _kernels.chunk_starts(substeps)
    owner = _kernels.balance(substeps, starts, 2)
    work = np.zeros(2)
    for chunk, part in enumerate(owner):  # 13 oscillators run 16 lanes (LANES = 8)
        lanes = -(-(starts[chunk + 1] - starts[chunk]) // _kernels.LANES) * _kernels.LANES
        work[part] += lanes * substeps[starts[chunk]]
    # total 256 + 80 + 80 = 416 lane-steps; longest first (80, 80, 64, 64, 64, 64) splits it 208 / 208
    np.testing.assert_array_equal(np.sort(work), [208.0, 208.0])
    assert set(_kernels.balance(substeps, starts, 8).tolist()) == set(range(6))  # never more threads than chunks


@pytest.mark.parametrize("count", [7, 700])  # below and above SERIAL_WORK: the serial and the parallel kernel
@pytest.mark.parametrize("method", ["average", "linear", "exact", (0.3, 0.6)])
def test_spectrum_on_the_record_itself_equals_the_kernel_on_the_negated_load(count, method):
    """elastic_spectrum hands the kernels ü_g with negated load coefficients: bit for bit the former negated-copy path."""
    from groundstep.core import _kernels
    from groundstep.core.linear import _step_coefficients
    from groundstep.core.methods import resolve_method

    rng = np.random.default_rng(11)
    record = Record(0.2 * rng.standard_normal(4000), 0.01, "g")
    periods = np.geomspace(0.02, 8.0, count)  # sub-stepped below T = 0.1 s
    spectrum = _quiet(elastic_spectrum, record, periods, 0.05, method)
    coef, used = _step_coefficients(record.dt, periods, np.full(count, 0.05), resolve_method(method), 0.1)
    order = np.argsort(used, kind="stable")
    found, zeros = np.empty((3, count)), np.zeros(count)
    # reference: the kernel on the load p = -ü_g itself, as elastic_spectrum called it before
    _kernels.spectrum_peaks(-record.accel, np.ascontiguousarray(coef[:, order]), used[order],
                            _kernels.chunk_starts(used[order]), zeros, zeros, found)  # fmt: skip
    reference = np.empty_like(found)
    reference[:, order] = found
    for row, name in enumerate(("sd", "sv", "sa")):
        assert np.array_equal(getattr(spectrum, name)[0], reference[row])  # exact: no tolerance


# --- the compiled plan of a spectrum ------------------------------------------


def _former_chunk_starts(substeps, size):
    """The chunk boundaries as first written: np.searchsorted from each chunk's first oscillator."""
    starts = [0]
    while starts[-1] < substeps.size:
        lo = starts[-1]
        starts.append(min(lo + size, int(np.searchsorted(substeps, substeps[lo], side="right"))))
    return starts


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_spectrum_plan_sorts_like_numpys_stable_sort(seed):
    """The plan's order is numpy's stable argsort of the moving oscillators' counts; its chunks follow searchsorted."""
    from groundstep.core import _kernels
    from groundstep.core.methods import MAX_SUBSTEPS, resolve_method, substep_counts

    rng = np.random.default_rng(seed)
    periods = rng.uniform(0.002, 3.0, 150)
    periods[rng.random(150) < 0.1] = 0.0  # rigid oscillators are left out of the order
    dampings = np.array([0.02, 0.05, 0.1])
    method = resolve_method("average")
    counts, order, used, starts, total, largest, split, worst, _ = _kernels.spectrum_plan(
        periods, dampings, 0.01, 0.1, MAX_SUBSTEPS
    )
    # reference: numpy's meshgrid of the grid, methods.substep_counts and a stable argsort
    flat = np.meshgrid(dampings, periods, indexing="ij")[1].ravel()
    expected = substep_counts(0.01, flat, method, 0.1)
    moving = np.flatnonzero(flat > 0.0)
    np.testing.assert_array_equal(counts, expected)
    np.testing.assert_array_equal(order, moving[np.argsort(expected[moving], kind="stable")])
    np.testing.assert_array_equal(used, expected[order])
    np.testing.assert_array_equal(starts, _former_chunk_starts(used, _kernels.CHUNK))
    assert (worst, total, largest, split) == (-1, expected[moving].sum(), expected.max(), np.count_nonzero(expected > 1))
    for size in (1, 5, 64):
        np.testing.assert_array_equal(_kernels.chunk_starts(used, size), _former_chunk_starts(used, size))


@pytest.mark.parametrize("method", ["average", "linear", "exact", (0.3, 0.6)])
def test_sorted_maps_are_the_grid_maps_in_plan_order_with_load_rows_negated(method):
    """The spectrum's maps, built in sorted order, are `newmark`/`exact` of the same oscillators, load rows negated."""
    from groundstep.core import _coefficients, _kernels
    from groundstep.core.methods import MAX_SUBSTEPS, resolve_method, step_limit

    resolved = resolve_method(method)
    periods = np.concatenate([[0.0], np.geomspace(0.003, 20.0, 60)])
    dampings = np.array([0.0, 0.05, 0.5])
    counts, order, *_ = _kernels.spectrum_plan(periods, dampings, 0.02, step_limit(resolved, 0.1), MAX_SUBSTEPS)
    grid_t = np.tile(periods, dampings.size)[order]
    grid_z = np.repeat(dampings, periods.size)[order]
    omega, h = 2.0 * np.pi / grid_t, 0.02 / counts[order]
    if resolved.is_newmark:
        reference = _coefficients.newmark(omega, grid_z, h, resolved.beta, resolved.gamma)
        built = _coefficients.newmark_sorted(order, periods, dampings, counts, 0.02, resolved.beta, resolved.gamma, -1.0)
    else:
        reference = _coefficients.exact(omega, grid_z, h)
        built = _coefficients.exact_sorted(order, periods, dampings, counts, 0.02, -1.0)
    reference[4:8] *= -1.0  # negation is exact
    assert np.array_equal(built.view(np.uint64), reference.view(np.uint64))  # bit for bit, signs of zeros included


def test_history_times_are_the_sample_times_of_its_peaks():
    """Without sub-steps the peaks are read at the samples: each peak time is the time of numpy's argmax of |history|."""
    record = _random_record(21, n=3000)
    result = linear_response(record, 1.3, 0.03)
    np.testing.assert_array_equal(result.time, np.arange(record.n) * record.dt)  # reference: numpy's sample times
    for history, when, peak in (
        (result.displacement, result.time_of_peak_displacement, result.peak_displacement),
        (result.velocity, result.time_of_peak_velocity, result.peak_velocity),
        (result.total_acceleration, result.time_of_peak_total_acceleration, result.peak_total_acceleration),
    ):
        index = int(np.argmax(np.abs(history)))  # the first largest, as the kernel keeps it
        assert when == result.time[index]
        assert peak == abs(history[index])
