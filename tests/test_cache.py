"""Tests of groundstep.addin.worksheet.cache: bounded, thread-safe caches and exact cell digests."""

from __future__ import annotations

import threading

import pytest

from groundstep.addin.worksheet.cache import LRUCache, digest


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
