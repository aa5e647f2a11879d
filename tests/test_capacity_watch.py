"""Long capacity runs a person can watch and stop: progress, time limits and Ctrl-C for
capacity_allocation and capacity_cells."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import linprog
from scipy.spatial.distance import cdist

import placewise as pw
from interrupting import Enough, check_progress_reports, stop_at_first_report

RNG = np.random.default_rng(23)
POINTS = RNG.uniform(0, 1000, (1500, 2))
SITES = RNG.uniform(0, 1000, (8, 2))
# Capacities that hold the demand only together: most points cannot use their nearest site.
CAPS = np.full(len(SITES), len(POINTS) / len(SITES))

MODELS = {
    "capacity_allocation": lambda **kw: pw.capacity_allocation(POINTS, SITES, CAPS, **kw),
    "capacity_cells": lambda **kw: pw.capacity_cells(POINTS, SITES, CAPS, **kw),
}


@pytest.mark.parametrize("name", MODELS)
def test_progress_counts_grow_and_end_at_the_total(name: str) -> None:
    check_progress_reports(MODELS[name])


def test_a_watched_allocation_is_the_transportation_optimum_within_its_capacities() -> None:
    plan = MODELS["capacity_allocation"](time_limit=60.0, progress=lambda done, total: None)
    # Loads within the capacities, every unit of demand served.
    assert (plan.load <= CAPS + 1e-9).all() and plan.total_unserved == 0
    # The optimum of the same transportation problem by scipy's HiGHS LP (an outside
    # reference): min Σ d_ij x_ij, Σ_j x_ij = 1, Σ_i x_ij <= cap_j, x >= 0.
    import scipy.sparse as sparse

    d = cdist(POINTS, SITES)
    n, m = d.shape
    rows = sparse.kron(sparse.eye(n), np.ones((1, m)), format="csr")
    columns = sparse.kron(np.ones((1, n)), sparse.eye(m), format="csr")
    lp = linprog(d.ravel(), A_ub=columns, b_ub=CAPS, A_eq=rows, b_eq=np.ones(n), method="highs")
    assert lp.status == 0
    np.testing.assert_allclose(plan.total_cost, lp.fun, rtol=1e-9)


@pytest.mark.parametrize("name", MODELS)
def test_a_limit_too_short_for_any_plan_is_a_clear_error(name: str) -> None:
    # No plan meets the capacities before the exact solve ends: a limit that passes first is
    # an error naming time_limit, never a plan that breaks the capacities.
    with pytest.raises(pw.InputError) as caught:
        MODELS[name](time_limit=1e-9)
    assert caught.value.argument == "time_limit"
    assert "allow more time" in str(caught.value)
    with pytest.raises(pw.InputError, match="time_limit must be finite and > 0"):
        MODELS[name](time_limit=-1.0)


@pytest.mark.parametrize("name", MODELS)
def test_a_raising_progress_callable_stops_the_run(name: str) -> None:
    with pytest.raises(Enough):
        MODELS[name](progress=stop_at_first_report)
