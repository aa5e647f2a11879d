"""Capacities on float data where rounding decides: sites of capacity 0, points of weight 0
and capacities that meet the demand only to the last bit.

References: ``scipy.optimize.linprog`` (HiGHS) on the transportation program (the builder of
``test_capacity``), serving exactly the total capacity when demand is left unserved.
"""

from __future__ import annotations

import numpy as np
import pytest

import placewise as pw
from test_capacity import transport_program

# The rounding a load may pass its capacity by (documented on CapacityPlan): 4 ulps of the
# total demand.
ROUNDING = 4 * np.finfo(float).eps

# A float instance on which the solve never ended (moving the excess a few ulps per path).
POINTS = [[9.956638831635857, 1.0040240554275015], [5.823277999342019, 6.191817653351129],
          [7.257109157361324, 0.4526105481567022], [2.5977236118159794, 8.632425527291202],
          [5.386807388548711, 5.035137183098404], [1.092375321749196, 7.626396124696746],
          [3.9217465753290437, 3.34625231162358]]
SITES = [[3.7504131669466343, 6.522472578915303], [5.517217158171494, 7.856199003543808],
         [2.149301640492993, 4.341264156610876]]
CAPS = [0.0, 1.1504083180083717, 3.6243803772603935]
WEIGHTS = [0.0, 2.0, 0.0, 3.0, 1.0, 1.0, 3.0]


def reference(points, sites, caps, weights):
    """The least cost of serving min(demand, capacity) (scipy.optimize.linprog)."""
    points, sites = np.asarray(points, float), np.asarray(sites, float)
    caps, weights = np.asarray(caps, float), np.asarray(weights, float)
    if caps.sum() < weights.sum() * (1 - 1e-12):
        return transport_program(points, sites, caps, weights, serve=caps.sum())
    return transport_program(points, sites, caps, weights)


def check(plan, caps, weights):
    caps, weights = np.asarray(caps, float), np.asarray(weights, float)
    assert np.all(plan.load[caps == 0] == 0.0)
    assert np.all(plan.load <= caps + ROUNDING * weights.sum())


@pytest.mark.parametrize("split", [True, False])
def test_a_site_of_capacity_zero_does_not_stall_the_solve(split):
    # The time limit turns a stall into a refusal instead of a blocked run.
    plan = pw.capacity_allocation(POINTS, SITES, CAPS, WEIGHTS, split=split, allow_unserved=True,
                                  time_limit=30)
    check(plan, CAPS, WEIGHTS)
    if split:
        # Outside check: scipy.optimize.linprog serving the whole capacity at least cost.
        assert plan.total_cost == pytest.approx(reference(POINTS, SITES, CAPS, WEIGHTS), rel=1e-9)
        assert plan.total_unserved == pytest.approx(sum(WEIGHTS) - sum(CAPS), rel=1e-12)
    else:
        # Whole points only: it serves no more than the capacity, in whole points.
        assert np.all(np.isin(plan.share[np.asarray(WEIGHTS) > 0], [0.0, 1.0]))
        assert plan.total_unserved >= sum(WEIGHTS) - sum(CAPS)


def test_without_the_points_of_weight_zero_the_site_of_capacity_zero_stays_empty():
    keep = [1, 3, 4, 5, 6]
    points, weights = [POINTS[i] for i in keep], [WEIGHTS[i] for i in keep]
    plan = pw.capacity_allocation(points, SITES, CAPS, weights, allow_unserved=True, time_limit=30)
    assert plan.load[0] == 0.0  # it was 4.4e-16
    check(plan, CAPS, weights)
    # Outside check: scipy.optimize.linprog.
    assert plan.total_cost == pytest.approx(reference(points, SITES, CAPS, weights), rel=1e-9)


def test_capacities_meeting_the_demand_in_tenths_leave_no_load_past_them():
    # Binary 0.1 + 0.2 + 0.3 lies above binary 0.6: the site of capacity 0 kept 5.55e-17.
    plan = pw.capacity_allocation([[0, 0], [1, 0], [2, 0]], [[0, 0], [2, 0]], [0.6, 0.0], [0.1, 0.2, 0.3])
    assert plan.load.tolist() == [0.6, 0.0] and np.all(plan.slack >= 0.0)
    # Here 0.1 + 0.2 sums past 0.3 by one ulp, and neither point uses another site: the
    # residue stays within the stated rounding (a part of 5.55e-17 at the far site would
    # break the price certificate).
    plan = pw.capacity_allocation([[0, 0], [1, 0], [2, 0]], [[0, 0], [2, 0]], [0.3, 0.4], [0.1, 0.2, 0.3])
    check(plan, [0.3, 0.4], [0.1, 0.2, 0.3])
    assert plan.part_point.size == 0


@pytest.mark.parametrize("block", range(4))
def test_property_zero_capacities_zero_weights_and_exact_totals_match_linprog(block):
    # Seeded random float instances: some sites of capacity 0, some points of weight 0, and
    # capacities that sum to the demand (to rounding), to less, or to more. Each solve runs
    # under a time limit so that a stall fails here instead of blocking.
    rng = np.random.default_rng(2026 + block)
    for _ in range(150):
        n, m = int(rng.integers(2, 12)), int(rng.integers(1, 6))
        points = rng.uniform(0, 10, size=(n, 2))
        sites = rng.uniform(0, 10, size=(m, 2))
        weights = rng.integers(0, 4, size=n).astype(float) * rng.choice([1.0, 0.1, rng.uniform()], size=n)
        if weights.sum() == 0:
            weights[0] = 1.0
        share = rng.uniform(size=m) * (rng.uniform(size=m) < 0.7)
        if share.sum() == 0:
            share[-1] = 1.0
        caps = share / share.sum() * weights.sum() * rng.choice([1.0, 1.0, 0.5, 1.3])
        for split in (True, False):
            try:
                plan = pw.capacity_allocation(points, sites, caps, weights, split=split, allow_unserved=True,
                                              time_limit=30)
            except pw.InputError as e:
                # Only the single-source plan may find no placement; never the time limit.
                assert not split and e.argument == "capacities", str(e)
                continue
            check(plan, caps, weights)
            if split:
                # Outside check: scipy.optimize.linprog (HiGHS).
                best = reference(points, sites, caps, weights)
                assert plan.total_cost == pytest.approx(best, rel=1e-9, abs=1e-9)
