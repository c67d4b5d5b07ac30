"""Tests of collect_warnings: core's warnings as data, per thread, without process-wide filters."""

from __future__ import annotations

import doctest
import threading
import warnings

import numpy as np
import pytest

from groundstep.core import (
    ConvergenceWarning,
    DuctilityTargetWarning,
    Record,
    RecordTextWarning,
    SubstepWarning,
    _ductility_search,
    _notices,
    collect_warnings,
    inelastic_response,
    linear_response,
)


def _record() -> Record:
    """Invented record: a decaying 2 Hz sine sampled at 0.02 s [m/s²]."""
    t = np.arange(0.0, 4.0, 0.02)
    return Record(np.sin(2 * np.pi * 2.0 * t) * np.exp(-0.5 * t), 0.02, "m/s2")


def test_docstring_example_runs():
    """The Example of collect_warnings runs and prints what it shows."""
    failures, attempted = doctest.testmod(_notices, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert failures == 0 and attempted > 0


def test_collected_list_holds_the_instances_with_their_messages():
    """Inside the block warnings are appended as objects, not emitted; outside they are emitted."""
    record = _record()
    with warnings.catch_warnings(record=True) as emitted:  # only to prove nothing reaches warnings
        warnings.simplefilter("always")
        with collect_warnings() as caught:
            result = linear_response(record, 0.05)  # dt/T = 0.4 > 0.1: 4 sub-steps
            Record.from_text("acceleration\n0.1\n0.2\n", dt=0.01, unit="g")
    assert emitted == []
    assert [type(w) for w in caught] == [SubstepWarning, RecordTextWarning]
    assert result.substeps == 4 and "split into 4 sub-steps" in str(caught[0])
    assert "skipped 1 non-numeric header line" in str(caught[1])
    with pytest.warns(SubstepWarning, match="split into 4 sub-steps"):
        linear_response(record, 0.05)


def test_engines_report_each_warning_once():
    """The yielding engine reports its sub-steps once (its inner linear run is collected and dropped)."""
    with collect_warnings() as caught:
        inelastic_response(_record(), 0.05, reduction_factor=2.0)
    assert [type(w) for w in caught] == [SubstepWarning]


def test_convergence_and_ductility_target_warnings_are_collected():
    """ConvergenceWarning and DuctilityTargetWarning (a RuntimeWarning) arrive in the list too."""
    record = _record()
    with collect_warnings() as caught:
        inelastic_response(record, 0.02, reduction_factor=4.0, max_step_ratio=None, max_iterations=2)
    assert any(isinstance(w, ConvergenceWarning) for w in caught)
    assert issubclass(DuctilityTargetWarning, RuntimeWarning)

    class _NeverYields:
        """A stand-in solver whose oscillators never pass μ = 1, so no target > 1 can be reached."""

        def ductility(self, periods, fy, substeps):
            return np.ones(periods.size)

    with collect_warnings() as caught:
        reduction, _ = _ductility_search.search(_NeverYields(), np.array([0.5]), np.array([1.0]),
                                                np.array([1]), np.array([2.0]))  # fmt: skip
    assert [type(w) for w in caught] == [DuctilityTargetWarning]
    assert "not reached with reduction factors up to 10000; NaN returned" in str(caught[0])
    assert np.isnan(reduction[0, 0])


def test_two_threads_one_collecting_one_not():
    """A collecting thread gets its own warnings as data; a thread that does not collect emits its own."""
    record = _record()
    barrier = threading.Barrier(2)
    collected: list[list[Warning]] = []

    def collecting() -> None:
        with collect_warnings() as caught:
            barrier.wait()  # both threads step at the same time
            for _ in range(20):
                linear_response(record, 0.05)  # 4 sub-steps
        collected.append(caught)

    def emitting() -> None:
        barrier.wait()
        for _ in range(20):
            linear_response(record, 0.08)  # 3 sub-steps

    # the recorder is the test's window on what reached the warnings machinery; core needs none
    with warnings.catch_warnings(record=True) as emitted:
        warnings.simplefilter("always")
        threads = [threading.Thread(target=collecting), threading.Thread(target=emitting)]
        for thread in threads:
            thread.start()
        for thread in threads:
            thread.join()
    (caught,) = collected
    assert len(caught) == 20
    assert all(isinstance(w, SubstepWarning) and "split into 4 sub-steps" in str(w) for w in caught)
    assert len(emitted) == 20
    assert all(item.category is SubstepWarning and "split into 3 sub-steps" in str(item.message) for item in emitted)


def test_nested_collectors_and_reset():
    """An inner block takes its own warnings; the outer list is active again after it."""
    record = _record()
    with collect_warnings() as outer:
        with collect_warnings() as inner:
            linear_response(record, 0.05)
        linear_response(record, 0.08)
    assert len(inner) == 1 and len(outer) == 1 and "3 sub-steps" in str(outer[0])
