"""Tests of groundstep.addin.worksheet.cache: bounded, thread-safe caches and exact cell digests."""

from __future__ import annotations

import threading

import numpy as np
import pytest

from groundstep.addin.worksheet import cache as cache_module
from groundstep.addin.worksheet.cache import (
    CellIndex,
    LRUCache,
    PeriodMemory,
    cell_digest,
    digest,
    is_plain,
    strict_digest,
)


def test_least_recently_used_entry_goes_first():
    """Beyond its capacity the cache drops the entry used longest ago, not the oldest stored."""
    cache = LRUCache(2)
    cache.get_or_compute("a", lambda: 1)
    cache.get_or_compute("b", lambda: 2)
    cache.get_or_compute("a", lambda: 99)  # a hit: "a" becomes the most recent
    cache.get_or_compute("c", lambda: 3)  # drops "b"
    assert len(cache) == 2
    assert cache.get_or_compute("a", lambda: -1) == 1
    assert cache.get_or_compute("b", lambda: 20) == 20  # recomputed: it was dropped
    assert (cache.hits, cache.misses) == (2, 4)


def test_a_failing_computation_stores_nothing():
    """An exception from the computation propagates and the key stays a miss."""
    cache = LRUCache(4)
    with pytest.raises(ZeroDivisionError):
        cache.get_or_compute("k", lambda: 1 / 0)
    assert len(cache) == 0
    assert cache.get_or_compute("k", lambda: 5) == 5


def test_capacity_must_be_positive():
    """A cache of no entries is refused with the value named."""
    with pytest.raises(ValueError, match="`capacity` must be >= 1, got 0"):
        LRUCache(0)


def test_digest_is_exact_about_values_and_types():
    """Equal cells give equal digests; a changed sample, or 1 where 1.0 was, gives another."""
    cells = [["Accel [g]"], [0.1], [0.2], [None]]
    assert digest(cells) == digest([["Accel [g]"], [0.1], [0.2], [None]])
    assert digest(cells) != digest([["Accel [g]"], [0.1], [0.2000000001], [None]])
    assert digest([[1.0]]) != digest([[1]])  # a number typed as integer is another cell value


def test_digest_of_cells_marshal_cannot_write():
    """Dates (which marshal refuses) are digested too, through pickle."""
    import datetime

    assert digest([[datetime.date(2026, 1, 2)]]) != digest([[datetime.date(2026, 1, 3)]])


def test_many_threads_stay_within_the_bound():
    """Eight threads storing 200 keys each leave at most `capacity` entries and consistent counters."""
    cache = LRUCache(50)

    def work(offset: int) -> None:
        for index in range(200):
            assert cache.get_or_compute((offset, index), lambda i=index: i * 2) == index * 2

    threads = [threading.Thread(target=work, args=(t,)) for t in range(8)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert len(cache) == 50
    assert cache.hits + cache.misses == 8 * 200


@pytest.mark.parametrize(
    ("first", "second"),
    [
        ([[0.1], [0.2]], [[0.1], [0.2 + 2**-54]]),  # the last bit of one sample
        ([[1.0], [2.0]], [[1], [2.0]]),  # 1 and 1.0: equal numbers, other cell types
        ([["1"], [2.0]], [[1], [2.0]]),  # the text "1" and the number 1
        ([[float("nan")], [2.0]], [[None], [2.0]]),  # a NaN cell and a blank
        ([[True], [2.0]], [[1], [2.0]]),  # a Boolean and the integer it equals
        ([[0.1, 0.2]], [[0.1], [0.2]]),  # one row against one column of the same values
        ([0.1, 0.2], ([0.1, 0.2],)),  # a list and a tuple holding it
    ],
)
def test_digest_tells_apart_cells_that_differ_in_value_type_or_shape(first, second):
    """Two ranges share a digest only when every cell is equal and of the same type, in the same shape."""
    assert is_plain(first) and is_plain(second)
    assert digest(first) != digest(second)
    assert digest(first) == digest([row[:] if isinstance(row, list) else row for row in first])  # equal copy: same


def test_digest_of_numpy_arrays_names_dtype_and_shape():
    """Arrays with equal bytes but another dtype or shape get other digests."""
    values = np.array([1.0, 2.0, 3.0, 4.0])
    assert digest(values) == digest(values.copy())
    assert digest(values) != digest(values.view(np.int64))
    assert digest(values) != digest(values.reshape(2, 2))
    assert is_plain(values) and not is_plain(np.array([1.0, "a"], dtype=object))


def test_cells_the_fast_digest_cannot_tell_apart_are_not_plain():
    """numpy scalars are written by marshal as raw bytes: their fast digests may collide, so they are not plain."""
    as_float = [[np.float64(1.0)], [np.float64(2.0)]]
    as_int = [[np.float64(1.0).view(np.int64)], [np.float64(2.0).view(np.int64)]]
    assert digest(as_float) == digest(as_int)  # the collision that is_plain guards against
    assert not is_plain(as_float) and not is_plain(as_int)
    assert strict_digest(as_float) != strict_digest(as_int)


def test_period_memory_hands_remembered_periods_to_the_first_cell_of_a_new_record():
    """Each record's first cell of a setting gets every period asked before; later cells get their own only."""
    memory = PeriodMemory(periods=3)
    assert memory.batch("record A", "5%", 1.0) == (1.0,)
    assert memory.batch("record A", "5%", 2.0) == (2.0,)
    assert memory.batch("record B", "5%", 3.0) == (3.0, 1.0, 2.0)
    assert memory.batch("record B", "5%", 4.0) == (4.0,)
    assert memory.batch("record C", "2%", 1.0) == (1.0,)  # another damping remembers its own periods
    assert memory.batch("record D", "5%", 2.0) == (2.0, 3.0, 4.0)  # bounded: period 1.0 was forgotten


@pytest.fixture()
def fresh_index(monkeypatch):
    """An empty `CELLS` index for one test."""
    index = CellIndex()
    monkeypatch.setattr(cache_module, "CELLS", index)
    return index


def _column(values):
    return [["Accel [g]"], *([v] for v in values), [None], [None]]


@pytest.mark.parametrize(
    "make",
    [
        lambda v: _column(v),
        lambda v: tuple(tuple(row) for row in _column(v)),
        lambda v: np.array(v),
        lambda v: np.array(v, dtype=np.float32).reshape(-1, 1),
    ],
    ids=["list of lists", "tuple of tuples", "float64 array", "float32 column array"],
)
def test_cell_digest_is_the_digest_and_a_repeat_is_found_by_comparison(fresh_index, make):
    """cell_digest gives digest's bytes (the same cache keys); an equal copy is a hit of the index, not hashed again."""
    values = [0.25 * k - 3.0 for k in range(1000)]
    first, again = make(values), make(values)
    assert cell_digest(first) == digest(first)
    assert (fresh_index.hits, fresh_index.misses, len(fresh_index)) == (0, 1, 1)
    assert cell_digest(again) == digest(first)
    assert (fresh_index.hits, fresh_index.misses, len(fresh_index)) == (1, 1, 1)


def _changed_inside(values, new=None):
    """`values` with sample 337 (away from every slice the fingerprint reads) one ulp up, or `new`."""
    changed = list(values)
    changed[337] = float(np.nextafter(changed[337], np.inf)) if new is None else new
    return changed


@pytest.mark.parametrize(
    ("first", "second"),
    [
        (_column([0.5] * 600), _column(_changed_inside([0.5] * 600))),  # the same fingerprint, one ulp apart inside
        (_column([0.0] * 600), _column(_changed_inside([0.0] * 600, -0.0))),  # 0.0 == -0.0 in Python
        (_column([1.0] * 600), _column(_changed_inside([1.0] * 600, True))),  # True == 1.0 in Python
        (_column([1.0] * 600), _column(_changed_inside([1.0] * 600, 1))),  # 1 == 1.0 in Python
        (np.full(600, 0.5), np.array(_changed_inside([0.5] * 600))),  # arrays one ulp apart inside
        (np.zeros(600), np.array(_changed_inside([0.0] * 600, -0.0))),  # array_equal says equal; the bits differ
        (np.full(600, np.nan), (np.full(600, np.nan).view(np.int64) | 1).view(np.float64)),  # NaNs of other bits
        (np.arange(600.0), np.arange(600.0).reshape(300, 2)),  # same bytes, other shape
    ],
)
def test_cell_digest_never_hands_back_the_kept_digest_for_other_cells(fresh_index, first, second):
    """Cells equal by Python's == but of another type, sign of zero, bits, dtype or shape get another key (never a stale hit)."""
    assert is_plain(first) and is_plain(second)
    kept = cell_digest(first)
    assert cell_digest(second) == digest(second) != kept  # the digest itself tells them apart (reference)
    assert fresh_index.hits == 0


def test_cell_digest_keeps_a_copy_of_an_array_changed_in_place(fresh_index):
    """An array changed in place after it was seen is not found under its former digest."""
    values = np.linspace(-1.0, 1.0, 500)
    kept = cell_digest(values)
    values[250] += 1e-9
    assert cell_digest(values) == digest(values) != kept


def test_cell_digest_refuses_cells_it_cannot_key_exactly(fresh_index):
    """Cells whose fast digest is not exact (numpy scalars, arrays of objects) get None (the caller keys them strictly)."""
    assert cell_digest([[np.float64(1.0)], [np.float64(2.0)]]) is None
    assert cell_digest(np.array([1.0, "a"], dtype=object)) is None
    assert len(fresh_index) == 0


def test_cell_index_is_bounded_by_entries_and_bytes():
    """The index drops its least recently used forms beyond its capacity or its byte bound."""
    index = CellIndex(capacity=3, max_bytes=10_000)
    for k in range(5):
        fingerprint, exact = CellIndex.form([float(k)] * 10)
        index.remember(fingerprint, exact, bytes([k]))
    assert len(index) == 3 and index.find(*CellIndex.form([0.0] * 10)) is None
    assert index.find(*CellIndex.form([4.0] * 10)) == bytes([4])
    large = CellIndex.form(np.zeros(1000))  # 8,000 bytes: one fits, two do not
    assert large is not None
    index.remember(*large, b"a")
    index.remember(*CellIndex.form(np.ones(1000)), b"b")
    assert index.nbytes <= 10_000 and index.find(*large) is None
