"""Long capacity runs a person can watch and stop: progress, time limits and Ctrl-C for
capacity_allocation, capacity_cells and the capacitated p-median."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import linprog
from scipy.spatial.distance import cdist

import placewise as pw
from interrupting import Enough, check_progress_reports, check_prompt_interrupt, child_code, stop_at_first_report

RNG = np.random.default_rng(23)
POINTS = RNG.uniform(0, 1000, (1500, 2))
SITES = RNG.uniform(0, 1000, (8, 2))
# Capacities that hold the demand only together: most points cannot use their nearest site.
CAPS = np.full(len(SITES), len(POINTS) / len(SITES))
# The capacitated p-median: 6 sites anywhere holding 2 % more than the demand together (tight
# enough that location-allocation needs several rounds), or 6 of 40 candidate lots each
# holding a fifth of it.
P = 6
TIGHT = np.full(P, len(POINTS) / P * 1.02)
LOTS = RNG.uniform(0, 1000, (40, 2))
LOT_CAPS = np.full(len(LOTS), len(POINTS) / 5)

MODELS = {
    "capacity_allocation": lambda **kw: pw.capacity_allocation(POINTS, SITES, CAPS, **kw),
    "capacity_cells": lambda **kw: pw.capacity_cells(POINTS, SITES, CAPS, **kw),
    "capacitated_p_median": lambda **kw: pw.capacitated_p_median(POINTS, P, TIGHT, **kw),
    "capacitated_p_median candidates": lambda **kw: pw.capacitated_p_median(POINTS, P, LOT_CAPS, candidates=LOTS,
                                                                            **kw),
}


def _transport_optimum(sites: np.ndarray, caps: np.ndarray) -> float:
    """The least Σ d_ij x_ij serving every point from ``sites`` within ``caps`` (Σ_j x_ij = 1,
    Σ_i x_ij <= cap_j, x >= 0), by scipy's HiGHS LP (an outside reference)."""
    import scipy.sparse as sparse

    d = cdist(POINTS, sites)
    n, m = d.shape
    rows = sparse.kron(sparse.eye(n), np.ones((1, m)), format="csr")
    columns = sparse.kron(np.ones((1, n)), sparse.eye(m), format="csr")
    lp = linprog(d.ravel(), A_ub=columns, b_ub=caps, A_eq=rows, b_eq=np.ones(n), method="highs")
    assert lp.status == 0
    return float(lp.fun)


@pytest.mark.parametrize("name", MODELS)
def test_progress_counts_grow_and_end_at_the_total(name: str) -> None:
    check_progress_reports(MODELS[name])


def test_a_watched_allocation_is_the_transportation_optimum_within_its_capacities() -> None:
    plan = MODELS["capacity_allocation"](time_limit=60.0, progress=lambda done, total: None)
    # Loads within the capacities, every unit of demand served.
    assert (plan.load <= CAPS + 1e-9).all() and plan.total_unserved == 0
    # The optimum of the same transportation problem by scipy's HiGHS LP (an outside
    # reference).
    np.testing.assert_allclose(plan.total_cost, _transport_optimum(SITES, CAPS), rtol=1e-9)


@pytest.mark.parametrize("name", MODELS)
def test_a_limit_too_short_for_any_plan_is_a_clear_error(name: str) -> None:
    # No plan meets the capacities before the exact solve ends: a limit that passes first is
    # an error naming time_limit, never a plan that breaks the capacities.
    with pytest.raises(pw.InputError) as caught:
        MODELS[name](time_limit=1e-9)
    assert caught.value.argument == "time_limit"
    assert "allow more time" in str(caught.value)
    assert "  " not in str(caught.value)  # one sentence (a run of 18 spaces stood in its middle)
    with pytest.raises(pw.InputError, match="time_limit must be finite and > 0"):
        MODELS[name](time_limit=-1.0)


@pytest.mark.parametrize("name", MODELS)
def test_a_raising_progress_callable_stops_the_run(name: str) -> None:
    with pytest.raises(Enough):
        MODELS[name](progress=stop_at_first_report)


@pytest.mark.parametrize("name", ["capacitated_p_median", "capacitated_p_median candidates"])
def test_a_capacitated_p_median_cut_short_is_a_true_flagged_plan(name: str) -> None:
    full = MODELS[name]()
    assert full.converged
    plans = [MODELS[name](max_rounds=1), full]
    # Limits from very short (an InputError: no plan meets the capacities yet) to ample;
    # every plan returned is checked, whichever stage the limit cut.
    for limit in (0.02, 0.1, 0.5, 2.0):
        try:
            plans.append(MODELS[name](time_limit=limit))
        except pw.InputError as caught:
            assert caught.argument == "time_limit" and "allow more time" in str(caught)
    assert len(plans) >= 2
    for plan in plans:
        # The allocation is exact for the sites returned (its cost is the LP optimum) and
        # within their capacities.
        assert (plan.load <= plan.capacities * (1 + 1e-12)).all() and plan.total_unserved == 0
        np.testing.assert_allclose(plan.total_cost, _transport_optimum(plan.sites, plan.capacities), rtol=1e-9)
        if not np.isnan(plan.median_lower_bound):
            assert plan.median_lower_bound <= full.total_cost * (1 + 1e-12)
    # Where one round does not settle the plan, that plan is flagged and no better than where
    # the rounds settle (sites anywhere: several rounds on this instance).
    if full.rounds > 1:
        assert not plans[0].converged and plans[0].rounds == 1
        assert plans[0].total_cost >= full.total_cost * (1 - 1e-12)
        assert plans[0].summary()["converged"].tolist() == [False]
    else:
        assert name.endswith("candidates"), full.rounds


def test_p_median_with_capacities_passes_the_watch_on() -> None:
    with pytest.raises(Enough):
        pw.p_median(POINTS, P, capacities=TIGHT, progress=stop_at_first_report)
    with pytest.raises(pw.InputError) as caught:
        pw.p_median(POINTS, P, capacities=TIGHT, time_limit=1e-9)
    assert caught.value.argument == "time_limit"


# 20,000 points, 20 sites of 1,050 each: about 7 s and 35 rounds left alone (load 1.4); the
# 2,000-point run used before took 1.1 s on an idle machine, too short to tell a prompt stop
# from its end.
_INTERRUPTED_CHILD = child_code("""
rng = np.random.default_rng(10)
pts = rng.uniform(0, 20_000, (20_000, 2))
""", "pw.capacitated_p_median(pts, 20, np.full(20, 1_050.0))")


def test_ctrl_c_stops_the_capacitated_p_median_promptly() -> None:
    # SIGINT one second into a run of several seconds: KeyboardInterrupt within half a
    # second, while the same run left alone goes on for seconds more.
    runtime, latency = check_prompt_interrupt(_INTERRUPTED_CHILD, 1.0)
    print(f"capacitated p_median: runs {runtime:.2f} s; Ctrl-C latency {latency:.3f} s")
