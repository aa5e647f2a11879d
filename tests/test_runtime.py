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


@pytest.mark.parametrize("bad, message", [
    (1.5, "threads must be an integer; got 1.5 (float)"),
    (True, "threads must be an integer; got True (bool)"),
    ("2", "threads must be an integer; got '2' (str)"),
    (np.int64(-3), "threads must be an integer from 0 to 4096; got -3"),
    (2**70, "threads must be an integer from 0 to 4096; got 1180591620717411303424"),
])
def test_thread_count_must_be_a_plain_integer(bad, message: str) -> None:
    # Regression: set_threads(1.5) was accepted; numpy values printed as np.int64(-3).
    with pytest.raises(pw.InputError) as caught:
        pw.set_threads(bad)
    assert str(caught.value) == message
    assert caught.value.argument == "threads"


def test_number_arguments_print_plain_values() -> None:
    # Regression: weber_point(P, max_iter=-1) raised OverflowError, max_iter=0 ran one pass,
    # and NaN tolerances printed as np.float64(nan).
    pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]]
    cases = [
        ({"max_iter": -1}, "max_iter must be an integer >= 1; got -1"),
        ({"max_iter": 0}, "max_iter must be an integer >= 1; got 0"),
        ({"max_iter": 2.0}, "max_iter must be an integer; got 2.0 (float)"),
        ({"tol": np.float64("nan")}, "tol must be finite and >= 0; got nan"),
        ({"tol": "small"}, "tol must be a number (finite and >= 0); got 'small' (str)"),
    ]
    for options, message in cases:
        with pytest.raises(pw.InputError) as caught:
            pw.weber_point(pts, **options)
        assert str(caught.value) == message


def test_errors_name_the_group_and_the_input_row() -> None:
    # Row 3 is the second point of group 7: the error names group 7 and input row 3.
    pts = np.array([[0.0, 0.0], [1.0, 0.0], [2.0, 0.0], [np.nan, 0.0]])
    with pytest.raises(pw.InputError) as caught:
        pw.weber_point(pts, groups=[7, 9, 9, 7])
    assert str(caught.value) == "group 7: points[3] has a NaN coordinate; every coordinate must be finite"
    assert (caught.value.group, caught.value.row, caught.value.argument) == (7, 3, "points")


def test_skipped_groups_keep_their_place_with_the_reason() -> None:
    pts = np.array([[0.0, 0.0], [2.0, 0.0], [5.0, 5.0], [np.nan, 1.0]])
    result = pw.weber_point(pts, [1, 1, 1, 1], groups=[4, 4, 5, 6], errors="skip")
    assert len(result) == 3 and result.labels.tolist() == [4, 5, 6]
    nan_row = "group 6: points[3] has a NaN coordinate; every coordinate must be finite"
    assert result.problem.tolist() == [None, None, nan_row]
    frame = result.to_frame()
    assert frame["problem"].notna().tolist() == [False, False, True]
    # The solved groups equal separate calls (closed form: two points' median is anywhere
    # between them, cost 2; one point is its own median, cost 0).
    assert result[4].cost == pytest.approx(2.0) and result[5].cost == 0.0
    with pytest.raises(pw.InputError, match="group 6 was skipped"):
        result[6]
    with pytest.raises(KeyError):
        result[99]
