"""Threads: GIL release, concurrent callers, and the thread-count control."""

from __future__ import annotations

from concurrent.futures import ThreadPoolExecutor

import numpy as np
import pytest

import placewise as pw


def test_concurrent_calls_match_sequential() -> None:
    rng = np.random.default_rng(8)
    clouds = [rng.normal(size=(40_000, 2)) * (k + 1) for k in range(8)]
    sequential = [pw.weber_point(c) for c in clouds]
    with ThreadPoolExecutor(max_workers=4) as pool:
        concurrent = list(pool.map(pw.weber_point, clouds))
    for a, b in zip(sequential, concurrent):
        np.testing.assert_array_equal(a.location, b.location)
        assert a.cost == b.cost


@pytest.mark.parametrize("threads", [1, 2, 3])
def test_answers_do_not_depend_on_thread_count(threads: int) -> None:
    rng = np.random.default_rng(9)
    pts = rng.normal(size=(100_000, 2))
    labels = rng.integers(0, 50, size=100_000)
    reference = pw.weber_point(pts)
    grouped_reference = pw.weber_point(pts, groups=labels)
    try:
        pw.set_threads(threads)
        assert pw.thread_count() == threads
        again = pw.weber_point(pts)
        grouped = pw.weber_point(pts, groups=labels)
    finally:
        pw.set_threads(0)
    np.testing.assert_array_equal(again.location, reference.location)
    np.testing.assert_array_equal(grouped.location, grouped_reference.location)


def test_negative_thread_count_is_refused() -> None:
    with pytest.raises(pw.InputError, match="threads"):
        pw.set_threads(-1)
