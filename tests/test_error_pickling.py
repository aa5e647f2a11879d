"""Errors and problem rows cross process boundaries whole.

``multiprocessing``, ``concurrent.futures`` and joblib pickle what a worker raises or returns.
The reference for each check is the object before the pickle: message, class and every
attribute (``argument``, ``group``, ``row``, and the ``detail``'s) must come back equal.
"""

from __future__ import annotations

import concurrent.futures
import multiprocessing
import pickle

import numpy as np
import pytest

import placewise as pw


def nan_row_error() -> pw.InputError:
    with pytest.raises(pw.InputError) as info:
        pw.weber_point(np.array([[0.0, 0.0], [np.nan, 1.0], [2.0, 0.0]]))
    return info.value


def detail_fields(detail) -> tuple:
    return detail.argument, detail.group, detail.row, detail.degenerate, repr(detail)


def test_an_input_error_pickles_with_its_attributes_and_detail() -> None:
    error = nan_row_error()
    back = pickle.loads(pickle.dumps(error))
    assert type(back) is type(error) and str(back) == str(error)
    assert (back.argument, back.group, back.row) == (error.argument, error.group, error.row) == ("points", None, 1)
    assert detail_fields(back.detail) == detail_fields(error.detail)
    # A restored detail describes itself by its message as it was: the names are in it.
    message = "points[1] has a NaN coordinate; every coordinate must be finite"
    assert back.detail.describe(str, str) == str(error) == message


def test_a_degenerate_input_error_keeps_its_class() -> None:
    with pytest.raises(pw.DegenerateInputError) as info:
        pw.enclosing_ellipse([[0.0, 0.0], [1.0, 1.0], [2.0, 2.0]])
    back = pickle.loads(pickle.dumps(info.value))
    assert type(back) is pw.DegenerateInputError and str(back) == str(info.value)
    assert back.detail.degenerate and detail_fields(back.detail) == detail_fields(info.value.detail)


def test_a_grouped_result_with_a_problem_row_pickles() -> None:
    pts = np.array([[0, 0], [9, 9], [4, 0], [4, 2], [0, 2]], dtype=float)
    pts[1, 0] = np.nan
    circles = pw.enclosing_circle(pts, groups=[3, 8, 3, 3, 3], errors="skip")
    back = pickle.loads(pickle.dumps(circles))
    assert back.problem.tolist() == circles.problem.tolist()
    assert back.problem[1] == "group 8: points[1] has a NaN coordinate; every coordinate must be finite"
    assert back.problem_detail[0] is None
    assert detail_fields(back.problem_detail[1]) == detail_fields(circles.problem_detail[1])
    assert back[3].radius == circles[3].radius


def _raise_in_worker() -> None:
    pw.weber_point(np.array([[0.0, 0.0], [np.nan, 1.0], [2.0, 0.0]]))


def test_an_error_raised_in_a_worker_process_reaches_the_caller() -> None:
    expected = nan_row_error()
    context = multiprocessing.get_context("spawn")  # no fork of a process that runs kernel threads
    with concurrent.futures.ProcessPoolExecutor(max_workers=1, mp_context=context) as pool:
        with pytest.raises(pw.InputError) as info:
            pool.submit(_raise_in_worker).result()
    assert str(info.value) == str(expected) and info.value.row == 1
    assert detail_fields(info.value.detail) == detail_fields(expected.detail)
