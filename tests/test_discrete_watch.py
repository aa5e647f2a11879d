"""Long discrete runs a person can watch and stop: progress, time limits and Ctrl-C for the
models on candidate sites (p-median, p-center, set and maximal covering)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.spatial.distance import cdist

import placewise as pw
from interrupting import Enough, check_progress_reports, child_code, interrupt, stop_at_first_report

RNG = np.random.default_rng(17)
POINTS = RNG.uniform(0, 100, (3000, 2))
CANDIDATES = RNG.uniform(0, 100, (300, 2))
WEIGHTS = RNG.integers(1, 10, len(POINTS)).astype(float)
# Straight-line costs by scipy (an outside reference for every check below).
COSTS = cdist(POINTS, CANDIDATES)
P, RADIUS = 6, 8.0

MODELS = {
    "p_median": lambda **kw: pw.p_median(POINTS, P, WEIGHTS, candidates=CANDIDATES, **kw),
    "p_center": lambda **kw: pw.p_center(POINTS, P, WEIGHTS, candidates=CANDIDATES, **kw),
    "cover_all": lambda **kw: pw.cover_all(POINTS, 30.0, weights=WEIGHTS, candidates=CANDIDATES, **kw),
    "cover_most": lambda **kw: pw.cover_most(POINTS, P, RADIUS, WEIGHTS, candidates=CANDIDATES, **kw),
    "cover_all anywhere": lambda **kw: pw.cover_all(POINTS[:400], 6.0, **kw),
}


@pytest.mark.parametrize("name", MODELS)
def test_progress_counts_grow_and_end_at_the_total(name: str) -> None:
    check_progress_reports(MODELS[name])


def _served(plan: pw.discrete.MedianSelection) -> np.ndarray:
    """Every point's cost to its nearest open site, recomputed from scipy's distances."""
    return COSTS[:, plan.open].min(axis=1)


def test_a_tiny_time_limit_still_returns_feasible_plans_with_valid_bounds() -> None:
    # The covering models need their complete coverage lists before any plan: a tiny limit
    # may stop them there (see the tests of the covering models' limits below).
    full = {name: MODELS[name]() for name in ("p_median", "p_center", "cover_all", "cover_most")}
    cut = {name: MODELS[name](time_limit=1e-6) for name in ("p_median", "p_center")}
    cut |= {name: MODELS[name](time_limit=5.0) for name in ("cover_all", "cover_most")}

    median = cut["p_median"]
    assert len(median.open) == P and (median.assignment >= 0).all()
    np.testing.assert_allclose(median.cost, _served(median), rtol=1e-12)
    np.testing.assert_allclose(median.total_cost, (WEIGHTS * _served(median)).sum(), rtol=1e-12)
    # No bound iteration ran: the bound proves nothing and the gap says so.
    assert median.lower_bound <= full["p_median"].total_cost and median.relative_gap > 0

    center = cut["p_center"]
    assert len(center.open) == P and (center.assignment >= 0).all()
    np.testing.assert_allclose(center.weighted_worst, (WEIGHTS * _served(center)).max(), rtol=1e-12)
    assert center.lower_bound <= full["p_center"].weighted_worst
    assert center.weighted_worst >= full["p_center"].lower_bound

    cover = cut["cover_all"]
    within = COSTS[:, cover.open] <= 30.0
    assert within.any(axis=1).all(), "a point was left uncovered"
    assert cover.lower_bound <= full["cover_all"].chosen and cover.chosen >= full["cover_all"].lower_bound

    most = cut["cover_most"]
    covered = (COSTS[:, most.open] <= RADIUS).any(axis=1)
    assert len(most.open) == P
    np.testing.assert_allclose(most.covered_weight, WEIGHTS[covered].sum(), rtol=1e-12)
    assert most.upper_bound >= full["cover_most"].covered_weight
    assert most.covered_weight <= full["cover_most"].upper_bound


def test_time_limit_is_checked_for_every_model() -> None:
    for name in MODELS:
        with pytest.raises(pw.InputError) as caught:
            MODELS[name](time_limit=0)
        assert caught.value.argument == "time_limit"
        assert str(caught.value) == "time_limit must be finite and > 0 (seconds); got 0"


@pytest.mark.parametrize("name", MODELS)
def test_a_raising_progress_callable_stops_the_model(name: str) -> None:
    with pytest.raises(Enough):
        MODELS[name](progress=stop_at_first_report)


_INTERRUPTED_CHILD = child_code("""
rng = np.random.default_rng(7)
pts, cands = rng.random((10_000, 2)) * 100, rng.random((1_000, 2)) * 100
""", "pw.p_median(pts, 50, candidates=cands)")


def test_ctrl_c_stops_the_discrete_p_median_promptly() -> None:
    # SIGINT 1.5 s into a discrete p-median of several seconds (10,000 x 1,000, p = 50):
    # KeyboardInterrupt must reach Python while the kernel works. The aim is 0.5 s; the
    # bound asserted leaves room for a loaded machine.
    word, latency = interrupt(_INTERRUPTED_CHILD, 1.5)
    assert word == "interrupted" and latency < 2.0


def test_covering_stopped_while_listing_the_coverage_says_no_plan_exists() -> None:
    # A deadline of a nanosecond has passed by the first row of the coverage lists: no plan
    # exists yet, and the error says so instead of returning one built from partial lists.
    for run in (lambda: pw.discrete.cover_all(COSTS, 30.0, time_limit=1e-9),
                lambda: pw.discrete.cover_most(COSTS, P, RADIUS, WEIGHTS, time_limit=1e-9)):
        with pytest.raises(pw.InputError) as caught:
            run()
        assert caught.value.argument == "time_limit"
        assert "before any" in str(caught.value) and "coverage of the points" in str(caught.value)


def test_sites_anywhere_stopped_while_their_candidates_are_listed_say_no_plan_exists() -> None:
    # The candidates for sites anywhere (Church's finite dominating set) are only dominating
    # when complete: a plan and bound chosen from part of them need not hold. A nanosecond
    # passes before the first point's meeting places are listed, and the refusal says so
    # (before, the part was passed on, and the coverage tests of the meeting places found
    # ran on without polling the clock: 76 s for a 0.2 s limit on 60,000 points).
    grid = np.array([[x, y] for x in range(40) for y in range(40)], dtype=float)
    for run in (lambda: pw.cover_all(grid, 1.5, time_limit=1e-9), lambda: pw.cover_most(grid, 5, 1.5, time_limit=1e-9),
                lambda: pw.cover_all(grid, 1.5, fixed=[[0.0, 0.0]], time_limit=1e-9)):
        with pytest.raises(pw.InputError) as caught:
            run()
        assert caught.value.argument == "time_limit"
        assert "before any plan existed" in str(caught.value) and "circles meet" in str(caught.value)
    # Without a limit the same grid is covered: brute force, a site at every other point of
    # every other row and column covers the 40 x 40 grid of unit spacing within 1.5.
    assert pw.cover_all(grid, 1.5).chosen <= 400


def test_a_generous_time_limit_gives_the_unstopped_plans() -> None:
    for name in ("cover_all", "cover_all anywhere", "cover_most"):
        free, timed = MODELS[name](), MODELS[name](time_limit=600.0)
        np.testing.assert_array_equal(timed.open, free.open)
        np.testing.assert_array_equal(timed.assignment, free.assignment)
        np.testing.assert_array_equal(timed.covering, free.covering)
        bound = "lower_bound" if name != "cover_most" else "upper_bound"
        assert getattr(timed, bound) == getattr(free, bound)


# Sites anywhere for uniform points at 2 per unit area and r = 1: a search of a few seconds,
# stopped by the limit below inside the search (the coverage lists take a small part of it).
SPREAD = np.random.default_rng(23).uniform(0, 45, (4000, 2))


def test_a_time_limit_inside_the_search_returns_a_cover_of_every_point() -> None:
    cut = pw.cover_all(SPREAD, 1.0, time_limit=1.0)
    # Coverage checked on scipy's distances from the points to the sites returned.
    nearest = cdist(SPREAD, cut.sites).min(axis=1)
    assert (nearest <= 1.0).all(), "a point was left uncovered"
    np.testing.assert_array_equal(cut.covering, (cdist(SPREAD, cut.sites) <= 1.0).sum(axis=1))
    np.testing.assert_allclose(cut.cost, nearest, rtol=1e-12)
    assert cut.chosen == len(cut.open) and 0 < cut.lower_bound <= cut.chosen
