"""Tests of groundstep.core.rotd against identities of rotation and brute-force rotated records."""

from __future__ import annotations

import doctest
import math
import warnings

import numpy as np
import pytest
from numpy.testing import assert_allclose

from groundstep.core import Record, SubstepWarning, elastic_spectrum, linear_response
from groundstep.core import rotd as rotd_module
from groundstep.core.rotd import rotd_spectrum

DT = 0.01
#: Linearity u(θ) = u_x cosθ + u_y sinθ holds exactly in exact arithmetic; the
#: two routes differ only by round-off of a few operations per step, which
#: the stable recurrence does not amplify: 1e-9 relative is far above it.
ROUND_OFF = 1e-9


def _pair(seed: int, n: int = 2000, growing: bool = False) -> tuple[Record, Record]:
    """Invented pair: seeded, smoothed Gaussian noise under a rise-and-decay (or steadily rising) envelope [m/s²]."""
    rng = np.random.default_rng(seed)
    t = np.arange(n) * DT
    envelope = t / t[-1] if growing else (t / 3.0) * np.exp(1.0 - t / 3.0)
    smooth = np.ones(5) / 5.0
    x = np.convolve(rng.normal(size=n + 4), smooth, mode="valid") * envelope
    y = np.convolve(rng.normal(size=n + 4), smooth, mode="valid") * envelope * 0.7
    return Record(x, DT, unit="m/s2"), Record(y, DT, unit="m/s2")


def _quiet(function, *args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", SubstepWarning)
        return function(*args, **kwargs)


def _turned(record_x: Record, record_y: Record, degrees: float) -> Record:
    """The ground motion along direction θ: ü_x cosθ + ü_y sinθ (Boore et al. 2006, eq. 1)."""
    theta = math.radians(degrees)
    return Record(record_x.accel * math.cos(theta) + record_y.accel * math.sin(theta), DT, unit="m/s2")


def test_identical_components_give_root_two_and_the_component():
    """x = y: RotD100 = √2·PSA exactly, at 45°, and RotD50 = PSA on the 1° grid."""
    x, _ = _pair(1)
    periods = [0.1, 0.5, 2.0]
    result = rotd_spectrum(x, x, periods)
    psa = elastic_spectrum(x, periods).psa[0]
    # u(θ) = u_x (cosθ + sinθ) = √2 cos(θ - 45°) u_x, largest at 45°: √2 PSA (same recurrence: round-off only)
    assert_allclose(result.rotd100, math.sqrt(2.0) * psa, rtol=1e-12)
    assert_allclose(result.angle_rotd100, 45.0, rtol=0, atol=1e-9)
    # On θ = 0..179° the values √2|cos(θ - 45°)| are √2|cos k°| for k = 0..179; sorted, the 90th and
    # 91st are both √2 cos 45° = 1, so the median is PSA itself, to round-off
    assert_allclose(result.rotd50, psa, rtol=1e-12)


def test_identical_components_median_within_the_angle_step():
    """x = y on a 4° grid: RotD50 lies within one grid step of the continuous median PSA."""
    x, _ = _pair(2)
    periods = [0.2, 1.0]
    result = rotd_spectrum(x, x, periods, angle_step=4.0)
    psa = elastic_spectrum(x, periods).psa[0]
    # median of √2|cos(θ - 45°)| is an order statistic at a grid angle within one step Δ of 45°,
    # so it lies in [√2 cos(45° + Δ), √2 cos(45° - Δ)] times PSA
    step = math.radians(4.0)
    low, high = math.sqrt(2) * math.cos(math.pi / 4 + step), math.sqrt(2) * math.cos(math.pi / 4 - step)
    ratio = result.rotd50 / psa
    assert np.all((ratio >= low) & (ratio <= high))


@pytest.mark.parametrize("method", ["average", "exact"])
def test_against_brute_force_rotation(method):
    """Different components: every angle's PSA, RotD0/50/90 and RotD100 match one spectrum per turned record."""
    x, y = _pair(3)
    periods = [0.0, 0.05, 0.3, 1.0, 3.0]
    result = _quiet(rotd_spectrum, x, y, periods, method=method, percentiles=(0, 50, 90, 100))
    # brute force: one elastic_spectrum per turned record, 1° steps (Boore 2010)
    brute = np.array([_quiet(elastic_spectrum, _turned(x, y, a), periods, method=method).psa[0]
                      for a in range(180)]).T  # fmt: skip
    assert_allclose(result.peaks_by_angle, brute, rtol=ROUND_OFF)
    for row, p in zip(result.values[:3], (0, 50, 90)):
        # numpy.percentile with linear interpolation over the 180 brute-force values
        assert_allclose(row, np.percentile(brute, p, axis=1), rtol=ROUND_OFF)
    # RotD100 is the exact maximum over all directions: at least the 1° grid's maximum, and above it
    # by at most 1/cos(0.5°) (the true direction is within half a step of a grid angle)
    grid_max = brute.max(axis=1)
    assert np.all(result.rotd100 >= grid_max * (1 - ROUND_OFF))
    assert np.all(result.rotd100 <= grid_max / math.cos(math.radians(0.5)) * (1 + ROUND_OFF))
    assert_allclose(result.values[3], result.rotd100, rtol=0)


def test_peaks_equal_projection_of_every_sample_on_a_long_record():
    """Hull filter is exact: angle peaks equal projecting all 20,000 sample pairs of linear_response."""
    # a steadily rising envelope keeps the orbit growing, so thousands of points stay candidates
    # and the kernel's buffers must grow past their first size
    x, y = _pair(4, n=20000, growing=True)
    periods = [0.2, 0.8, 2.5]  # Δt/T <= 0.05: no sub-steps, so the samples are every point
    result = rotd_spectrum(x, y, periods)
    radians = np.deg2rad(result.angles)
    for row, period in enumerate(periods):
        ux = linear_response(x, period).displacement
        uy = linear_response(y, period).displacement
        projected = np.abs(np.outer(np.cos(radians), ux) + np.outer(np.sin(radians), uy)).max(axis=1)
        omega2 = (2 * math.pi / period) ** 2
        assert_allclose(result.peaks_by_angle[row], omega2 * projected, rtol=ROUND_OFF)
        assert_allclose(result.rotd100[row], omega2 * np.hypot(ux, uy).max(), rtol=ROUND_OFF)


def test_turning_the_sensors_leaves_rotd_unchanged():
    """Components rotated by 30°: RotD50 and RotD100 are the same and the RotD100 direction moves by 30°."""
    x, y = _pair(5)
    periods = [0.1, 0.4, 1.5]
    before = rotd_spectrum(x, y, periods)
    # new axes at 30° and 120°: x' = x cos30 + y sin30, y' = -x sin30 + y cos30
    turned_x, turned_y = _turned(x, y, 30.0), _turned(x, y, 120.0)
    after = rotd_spectrum(turned_x, turned_y, periods)
    # 30° is a whole number of grid steps, so the angle set maps onto itself: equal to round-off
    assert_allclose(after.rotd50, before.rotd50, rtol=ROUND_OFF)
    assert_allclose(after.rotd100, before.rotd100, rtol=ROUND_OFF)
    shift = (before.angle_rotd100 - after.angle_rotd100) % 180.0
    assert_allclose(np.minimum(shift, 180.0 - shift), [30.0] * 3, rtol=0, atol=1e-6)


def test_polarised_motion_along_a_line():
    """y = x/2: the orbit is a segment at atan(1/2); RotD100 = sqrt(1.25)·PSA_x in that direction."""
    x, _ = _pair(6)
    y = Record(0.5 * x.accel, DT, unit="m/s2")
    periods = [0.3, 1.2]
    result = rotd_spectrum(x, y, periods)
    psa = elastic_spectrum(x, periods).psa[0]
    # u = u_x (1, 1/2): |u| = sqrt(1 + 1/4)|u_x| along atan(1/2) = 26.565°
    assert_allclose(result.rotd100, math.sqrt(1.25) * psa, rtol=1e-12)
    assert_allclose(result.angle_rotd100, math.degrees(math.atan(0.5)), rtol=0, atol=1e-9)
    # each angle: |cosθ + sinθ/2|·PSA (linearity), checked against the closed form
    radians = np.deg2rad(result.angles)
    assert_allclose(result.peaks_by_angle, np.outer(psa, np.abs(np.cos(radians) + 0.5 * np.sin(radians))),
                    rtol=1e-12, atol=1e-14 * psa.max())  # fmt: skip


def test_component_spectra_and_geometric_mean():
    """psa_x, psa_y equal elastic_spectrum of each component; geometric_mean is their root product."""
    x, y = _pair(7)
    periods = [0.0, 0.2, 1.0]
    result = rotd_spectrum(x, y, periods)
    psa_x = elastic_spectrum(x, periods).psa[0]
    psa_y = elastic_spectrum(y, periods).psa[0]
    assert_allclose(result.psa_x, psa_x, rtol=1e-12)
    assert_allclose(result.psa_y, psa_y, rtol=1e-12)
    # Boore et al. (2006): GMxy = sqrt(PSA_x·PSA_y) of the as-recorded components
    assert_allclose(result.geometric_mean, np.sqrt(psa_x * psa_y), rtol=1e-12)


def test_rigid_oscillator_is_the_ground_motion():
    """T = 0: RotD100 is the largest horizontal ground acceleration magnitude."""
    x, y = _pair(8)
    result = rotd_spectrum(x, y, [0.0])
    assert_allclose(result.rotd100, [np.hypot(x.accel, y.accel).max()], rtol=1e-15)
    assert_allclose(result.psa_x, [x.pga], rtol=1e-15)


def test_sub_steps_follow_elastic_spectrum_rule():
    """A short period is sub-stepped as in elastic_spectrum (warning, counts, peaks at every sub-step)."""
    x, y = _pair(9)
    periods = [0.02, 0.5]  # dt/T = 0.5 > 0.1: 5 sub-steps for 0.02 s
    with pytest.warns(SubstepWarning, match="1 of 2 periods sub-stepped"):
        result = rotd_spectrum(x, y, periods)
    reference = _quiet(elastic_spectrum, x, periods)
    assert result.substeps.tolist() == reference.substeps[0].tolist() == [5, 1]
    assert_allclose(result.psa_x, reference.psa[0], rtol=1e-12)


def test_percentile_method_and_values():
    """percentile(100) is the exact RotD100, percentiles order RotD0 <= RotD50 <= RotD100, values stack them."""
    x, y = _pair(10)
    result = rotd_spectrum(x, y, [0.3, 1.0], percentiles=(50, 100))
    assert result.values.shape == (2, 2)
    assert_allclose(result.percentile(100), result.rotd100, rtol=0)
    assert_allclose(result.values[0], result.rotd50, rtol=0)
    assert np.all(result.percentile(0) <= result.rotd50) and np.all(result.rotd50 <= result.rotd100)
    assert result.angles.size == 180 and result.angles[-1] == 179.0
    assert "RotDSpectrum(n_periods=2" in repr(result)


@pytest.mark.parametrize(
    ("change", "error", "match"),
    [
        ({"record_y": "dt"}, ValueError, "share one time step"),
        ({"record_y": "short"}, ValueError, "same number of samples"),
        ({"record_y": "array"}, TypeError, "`record_y` must be a groundstep Record"),
        ({"angle_step": 7.0}, ValueError, "`angle_step` must divide 180"),
        ({"percentiles": (50, 150)}, ValueError, "`percentiles` must lie in"),
        ({"damping": 5.0}, ValueError, "looks like a percentage"),
    ],
)
def test_bad_input_is_refused(change, error, match):
    """Mismatched records, a bad angle step, percentile or damping raise with a message naming the rule."""
    x, y = _pair(11, n=300)
    kwargs = {"record_y": y}
    kwargs.update(change)
    if kwargs["record_y"] == "dt":
        kwargs["record_y"] = Record(y.accel, 0.02, unit="m/s2")
    elif kwargs["record_y"] == "short":
        kwargs["record_y"] = Record(y.accel[:-1], DT, unit="m/s2")
    elif kwargs["record_y"] == "array":
        kwargs["record_y"] = y.accel
    record_y = kwargs.pop("record_y")
    with pytest.raises(error, match=match):
        rotd_spectrum(x, record_y, [0.5], **kwargs)


def test_docstring_examples_run():
    """The Examples section of groundstep.core.rotd runs and prints what it shows."""
    failures, attempted = doctest.testmod(rotd_module, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert failures == 0 and attempted > 0


def test_threaded_chunks_match_one_thread_and_every_projection():
    """Chunks taken by two threads give the bits of one thread, and the peaks of projecting every sample."""
    import numba

    x, y = _pair(8, n=6000)
    periods = np.linspace(0.2, 4.0, 150)  # 5 chunks of 32 or fewer; 6,000 x 150 oscillator-steps: above SERIAL_WORK
    threads = numba.get_num_threads()
    numba.set_num_threads(1)
    try:
        alone = rotd_spectrum(x, y, periods)  # one thread: every chunk on the caller
    finally:
        numba.set_num_threads(threads)
    numba.set_num_threads(min(2, numba.config.NUMBA_NUM_THREADS))  # two threads take the chunks
    try:
        shared = rotd_spectrum(x, y, periods)
    finally:
        numba.set_num_threads(threads)
    for field in ("peaks_by_angle", "rotd100", "angle_rotd100", "psa_x", "psa_y"):
        # each chunk is one call of the same kernel on its own rows, whichever thread runs it: bit for bit
        assert np.array_equal(getattr(alone, field), getattr(shared, field)), field
    radians = np.deg2rad(shared.angles)
    for row in (0, 100, 149):  # one oscillator of each chunk; Δt/T <= 0.05: no sub-steps
        ux = linear_response(x, periods[row]).displacement
        uy = linear_response(y, periods[row]).displacement
        projected = np.abs(np.outer(np.cos(radians), ux) + np.outer(np.sin(radians), uy)).max(axis=1)
        omega2 = (2 * math.pi / periods[row]) ** 2
        # linearity, as in test_peaks_equal_projection_of_every_sample_on_a_long_record
        assert_allclose(shared.peaks_by_angle[row], omega2 * projected, rtol=ROUND_OFF)
