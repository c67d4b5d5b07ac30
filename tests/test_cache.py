"""Tests of groundstep.addin.worksheet.cache: bounded, thread-safe caches and exact cell digests."""

from __future__ import annotations

import threading

import numpy as np
import pytest

from groundstep.addin.worksheet.cache import LRUCache, PeriodMemory, digest, is_plain, strict_digest


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
