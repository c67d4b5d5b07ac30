"""The constant-ductility search: the largest strength reaching each target, whatever else is asked (issue 9)."""

from __future__ import annotations

import numpy as np
import pytest

from groundstep.core import collect_warnings, ductility_spectrum, inelastic_response, synthetic_record

#: A case the old search got wrong: it returned R = 7.32 for μ = 4 although R = 6.90 (a strength
#: 6 % larger) also reaches μ = 4 (found by a brute-force scan over 400 strengths).
RECORD = synthetic_record(8.0, 0.01, pga=0.4, unit="g", seed=3)
PERIOD = float(np.geomspace(0.1, 3.0, 25)[13])  # 0.358 s


def test_returns_the_largest_strength_reaching_the_target():
    """No strength larger than the one returned (by more than 0.1 %) reaches μ = 4 on a 300-point scan."""
    with collect_warnings():
        spectrum = ductility_spectrum(RECORD, [PERIOD], [2.0, 4.0, 6.0], max_step_ratio=0.1)
    found = float(spectrum.reduction_factor[1, 0])
    assert found < 7.0  # before: 7.32
    # independent route: the single-oscillator engine at each strength of a fine scan of R in [1, found)
    scan = np.geomspace(1.0, found * (1 - 1e-3), 300)
    with collect_warnings():
        reached = [
            inelastic_response(RECORD, PERIOD, reduction_factor=r, max_step_ratio=0.1).ductility >= 4.0 for r in scan
        ]
    assert not any(reached), scan[np.argmax(reached)]
    with collect_warnings():
        at_found = inelastic_response(RECORD, PERIOD, reduction_factor=found, max_step_ratio=0.1).ductility
    assert at_found == pytest.approx(4.0, rel=1e-5)  # search tolerance 1e-6 on μ, plus round-off between kernels


def test_answer_does_not_depend_on_the_other_targets():
    """μ = 2 asked alone and beside μ = 4 and 6 gives the same strength (before: the scan grid moved with the largest target)."""
    periods = np.geomspace(0.1, 3.0, 25)
    with collect_warnings():
        alone = ductility_spectrum(RECORD, periods, [2.0])
        together = ductility_spectrum(RECORD, periods, [6.0, 2.0, 4.0])
    # same grid bracket, same refinement steps, and a lane's result does not depend on its chunk: equal
    np.testing.assert_array_equal(together.reduction_factor[1], alone.reduction_factor[0])


def test_grid_pass_size_does_not_change_the_answer(monkeypatch):
    """Scanning the fixed 1 % grid 16 strengths per pass gives the strengths of the former 64 per pass."""
    from groundstep.core import _ductility_search

    periods = np.geomspace(0.1, 3.0, 25)
    with collect_warnings():
        current = ductility_spectrum(RECORD, periods, [2.0, 4.0, 6.0], max_step_ratio=0.1)
        monkeypatch.setattr(_ductility_search, "_GRID_CANDIDATES", 64)  # the former pass size, as reference
        former = ductility_spectrum(RECORD, periods, [2.0, 4.0, 6.0], max_step_ratio=0.1)
    # same grid brackets, same refinement steps, and a lane's result does not depend on its chunk: equal
    np.testing.assert_array_equal(current.reduction_factor, former.reduction_factor)
    np.testing.assert_array_equal(current.achieved_ductility, former.achieved_ductility)


@pytest.mark.parametrize("hardening", [0.0, 0.05])
@pytest.mark.parametrize("method", ["average", "linear"])
def test_many_oscillator_peaks_equal_the_one_oscillator_kernel_bit_for_bit(hardening, method):
    """Each lane of the spectrum's interleaved kernel gives the peak |u| of `history` (one oscillator alone) exactly.

    Independent route: `history` steps one oscillator with its own Newton loop (and energies); a
    lane's iterates are the same operations in the same order (no fast-math in either kernel), so
    the peaks agree to the bit whatever else runs in the chunk, for elastic and yielding lanes.
    """
    from groundstep.core import _kernels_inelastic as kernels
    from groundstep.core.methods import resolve_method

    resolved = resolve_method(method)
    load = -RECORD.accel
    periods = np.repeat(np.geomspace(0.05, 3.0, 7), 6)  # 42 lanes: one chunk of mixed periods and strengths
    fy = np.tile([0.2, 0.5, 1.0, 2.0, 5.0, 1e6], 7)  # [m/s²]; 1e6 stays elastic
    omega = 2 * np.pi / periods
    k, c = omega**2, 2 * 0.05 * omega
    tol = 1e-9 * (fy + RECORD.pga)
    for s in (1, 3):  # sub-steps per record step
        substeps = np.full(periods.size, s, dtype=np.int64)
        init = np.zeros((kernels.STATE_ROWS, periods.size))
        init[2] = load[0]  # at rest: ü = p[0]
        peak, failed = np.empty(periods.size), np.zeros(periods.size)
        kernels.peaks(load, RECORD.dt, resolved.beta, resolved.gamma, hardening, k, c, fy, tol, substeps,
                      np.array([0, periods.size]), np.zeros(1, np.int64), init, 20, peak, failed,
                      np.zeros(1, np.int64), 0)  # fmt: skip
        assert not failed.any()
        for lane in range(periods.size):
            out = [np.empty(RECORD.n) for _ in range(6)]
            info = np.zeros(kernels.INFO_SIZE)
            kernels.history(load, RECORD.dt, s, k[lane], c[lane], fy[lane], hardening, resolved.beta,
                            resolved.gamma, tol[lane], 20, 1, *out, info)  # fmt: skip
            assert info[kernels.INFO_STATUS] == 0.0
            assert peak[lane] == info[kernels.INFO_PEAK], (s, lane)


@pytest.mark.parametrize(("hardening", "method", "ratio"), [(0.0, "average", 0.1), (0.05, "linear", 0.02)])
def test_elastic_lead_in_changes_no_bit(monkeypatch, hardening, method, ratio):
    """Starting each run from the elastic run's checkpoint before it can yield gives the spectrum of runs from rest, bit for bit.

    Reference: the same search with every oscillator run from rest (`LEAD_IN` off), the former path.
    """
    from groundstep.core import _ductility_search

    periods = np.geomspace(0.02, 4.0, 30)
    kwargs = dict(hardening=hardening, method=method, max_step_ratio=ratio)
    with collect_warnings():
        skipped = ductility_spectrum(RECORD, periods, [1.0, 1.5, 3.0, 8.0], **kwargs)
        monkeypatch.setattr(_ductility_search, "LEAD_IN", False)
        from_rest = ductility_spectrum(RECORD, periods, [1.0, 1.5, 3.0, 8.0], **kwargs)
    np.testing.assert_array_equal(skipped.reduction_factor, from_rest.reduction_factor)
    np.testing.assert_array_equal(skipped.achieved_ductility, from_rest.achieved_ductility)
