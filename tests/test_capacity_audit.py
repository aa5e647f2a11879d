"""Capacities: hostile and tight instances checked against outside references.

References: ``scipy.optimize.milp`` (HiGHS) on the single-source assignment program and on
the capacitated p-median program written out here, ``scipy.optimize.linprog`` (HiGHS) on the
transportation program, and closed forms where the answer is evident by hand.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import Bounds, LinearConstraint, linprog, milp
from scipy.spatial.distance import cdist

import placewise as pw


def single_source_milp(points, sites, caps, weights):
    """min Σ w_i c_ij y_ij with Σ_j y_ij = 1, Σ_i w_i y_ij ≤ cap_j, y binary (HiGHS); None
    when no single-source plan exists."""
    c = cdist(points, sites)
    n, m = c.shape
    one_site = np.kron(np.eye(n), np.ones(m))
    load = np.hstack([np.eye(m) * w for w in weights])
    res = milp((c * weights[:, None]).ravel(), integrality=np.ones(n * m), bounds=Bounds(0, 1),
               constraints=[LinearConstraint(one_site, 1, 1), LinearConstraint(load, 0, caps)])
    return res.fun if res.status == 0 else None


def split_linprog(points, sites, caps, weights):
    """min Σ c_ij x_ij with Σ_j x_ij = w_i, Σ_i x_ij ≤ cap_j, x ≥ 0 (HiGHS)."""
    c = cdist(points, sites)
    n, m = c.shape
    res = linprog(c.ravel(), A_ub=np.kron(np.ones(n), np.eye(m)), b_ub=caps,
                  A_eq=np.kron(np.eye(n), np.ones(m)), b_eq=weights, method="highs")
    assert res.status == 0
    return res.fun


def test_single_source_finds_the_plan_a_hand_count_shows():
    # Two heavy points beside site 0, two light ones beside site 1, 3 units at each: the
    # split plan shares one heavy point, and rounding it alone found no room ("no site has
    # room for the whole demand of points[1]"). By hand: one heavy and one light point at
    # each site; the best such plan costs 2·4.9 + 1·5 + 0.1 = 14.9, as milp finds.
    points = np.array([[0.0, 0.0], [0.1, 0.0], [5.0, 0.0], [5.1, 0.0]])
    weights = np.array([2.0, 2.0, 1.0, 1.0])
    sites = np.array([[0.0, 0.0], [5.0, 0.0]])
    plan = pw.capacity_allocation(points, sites, [3, 3], weights, split=False)
    best = single_source_milp(points, sites, np.array([3.0, 3.0]), weights)  # scipy.optimize.milp
    assert np.all(plan.share == 1.0)
    assert plan.load.tolist() == [3.0, 3.0]
    assert plan.total_cost == pytest.approx(best, rel=1e-12) and best == pytest.approx(14.9, rel=1e-12)
    assert plan.lower_bound <= best * (1 + 1e-12)
    assert plan.relative_gap == pytest.approx((plan.total_cost - plan.lower_bound) / plan.total_cost)


@pytest.mark.parametrize("seed", range(4))
def test_single_source_on_tight_capacities_is_never_refused_when_milp_finds_a_plan(seed):
    # Integral demand of 1–5 units, capacities a little above a third of it each: a quarter
    # of such instances were refused although a single-source plan exists.
    rng = np.random.default_rng(seed)
    refused = 0
    for _ in range(25):
        points = rng.uniform(0, 10, size=(8, 2))
        sites = rng.uniform(0, 10, size=(3, 2))
        weights = rng.integers(1, 6, size=8).astype(float)
        caps = np.full(3, np.ceil(weights.sum() / 3) + rng.integers(0, 3))
        best = single_source_milp(points, sites, caps, weights)  # scipy.optimize.milp
        try:
            plan = pw.capacity_allocation(points, sites, caps, weights, split=False)
        except pw.InputError:
            refused += best is not None
            continue
        assert best is not None
        assert np.all(plan.share == 1.0) and np.all(plan.load <= caps)
        # 8 points: the exhaustive search finishes, so the plan is milp's optimum and the
        # bound its cost; the split optimum (scipy.optimize.linprog) lies below both.
        assert plan.total_cost == pytest.approx(best, rel=1e-12)
        assert plan.lower_bound == pytest.approx(best, rel=1e-12) and plan.relative_gap == 0.0
        assert split_linprog(points, sites, caps, weights) <= best * (1 + 1e-12)
    assert refused == 0


def tight_instances(seed, count, n, m, slack):
    """Seeded single-source instances: integral demand of 1–5 units, every site holding a
    little more than an equal share of ``slack`` times the demand."""
    rng = np.random.default_rng(seed)
    for _ in range(count):
        points = rng.uniform(0, 10, size=(n, 2))
        sites = rng.uniform(0, 10, size=(m, 2))
        weights = rng.integers(1, 6, size=n).astype(float)
        caps = np.full(m, np.ceil(weights.sum() * slack / m) + rng.integers(0, 3))
        yield points, sites, caps, weights


def test_single_source_trades_and_search_reach_milp_on_forty_points():
    # 40 points, 5 sites with 5 % spare capacity. Wrong answer before: with shifts alone the
    # plans lay up to 6.3 % above milp's optimum (1.6 % on average, 38 of 50 instances
    # above it). Reference: scipy.optimize.milp on the single-source program. A plan the
    # search proves optimal (gap 0) must be milp's optimum; every plan must lie within 2 %
    # of it, and on average within 0.25 %.
    excess = []
    for points, sites, caps, weights in tight_instances(20, 20, 40, 5, 1.05):
        best = single_source_milp(points, sites, caps, weights)  # scipy.optimize.milp
        plan = pw.capacity_allocation(points, sites, caps, weights, split=False)
        assert np.all(plan.share == 1.0) and np.all(plan.load <= caps)
        assert plan.lower_bound <= best * (1 + 1e-12) and plan.total_cost >= best * (1 - 1e-12)
        if plan.relative_gap == 0.0:
            assert plan.total_cost == pytest.approx(best, rel=1e-12)
        excess.append(plan.total_cost / best - 1)
    assert max(excess) < 0.02 and np.mean(excess) < 0.0025


def test_single_source_search_is_deterministic_and_bounded_on_two_hundred_points():
    # 200 points, 8 sites: the search may stop at its budget; the plan is still whole, within
    # the capacities, above milp's optimum (scipy.optimize.milp) and the same on every call.
    for points, sites, caps, weights in tight_instances(21, 2, 200, 8, 1.05):
        best = single_source_milp(points, sites, caps, weights)  # scipy.optimize.milp
        plans = [pw.capacity_allocation(points, sites, caps, weights, split=False) for _ in range(2)]
        assert np.array_equal(plans[0].assignment, plans[1].assignment)
        plan = plans[0]
        assert np.all(plan.share == 1.0) and np.all(plan.load <= caps)
        assert plan.lower_bound <= best * (1 + 1e-9) <= plan.total_cost * (1 + 2e-9)
        assert plan.total_cost / best - 1 < 0.03


def test_single_source_refusal_says_the_heuristic_did_not_find_a_plan():
    # No single-source plan exists at all (a point of 3 units, sites of 2): the refusal
    # must not claim more than is known, nor less. Two points: the exhaustive search runs
    # to the end, so it knows no plan exists (by hand: 3 > 2 at either site).
    with pytest.raises(pw.InputError, match="no single-source plan exists") as info:
        pw.capacity_allocation([[0, 0], [1, 0]], [[0, 0], [1, 0]], [2, 2], [3, 1], split=False)
    assert info.value.argument == "capacities"
    plan = pw.capacity_allocation([[0, 0], [1, 0]], [[0, 0], [1, 0]], [2, 2], [3, 1], split=False,
                                  allow_unserved=True)
    # By hand: the 3-unit point fits nowhere whole, the 1-unit one stays at its own site.
    assert plan.unserved.tolist() == [3.0, 0.0] and plan.total_cost == 0.0


@pytest.mark.parametrize("p_median", [pw.capacitated_p_median,
                                      lambda *a, **k: pw.p_median(a[0], a[1], capacities=a[2], **k)])
def test_capacitated_p_median_shortfall_does_not_offer_unserved_demand(p_median):
    # The capacitated p-median has no option to leave demand unserved (p_median refuses
    # allow_unserved with capacities), so its shortfall advice must not offer one.
    points = [[0, 0], [1, 0], [2, 0], [4, 0]]
    with pytest.raises(pw.InputError, match="short") as info:
        p_median(points, 2, [1, 1])
    assert "unserved" not in str(info.value)
    assert "this model serves all the demand" in str(info.value)
    with pytest.raises(pw.InputError, match="short") as info:
        p_median(points, 1, [3, 3], candidates=[[0, 0], [1, 0]])
    assert "unserved" not in str(info.value)


def test_continuous_capacitated_p_median_places_several_sites_at_one_heavy_point():
    # All the demand (5 units) at one point, two sites of 3: both at that point, cost 0, by
    # hand. The run was refused ("points must hold at least 2 distinct points").
    plan = pw.capacitated_p_median([[0, 0], [1, 0], [2, 0], [4, 0]], 2, [3, 3], [0, 0, 0, 5])
    assert plan.sites.tolist() == [[4.0, 0.0], [4.0, 0.0]]
    assert plan.total_cost == 0.0 and plan.load.sum() == 5.0 and np.all(plan.load <= 3.0)
    # Four coincident points, sites of different capacities: both at the point, cost 0.
    plan = pw.p_median([[1, 1]] * 4, 2, capacities=[1, 3])
    assert plan.sites.tolist() == [[1.0, 1.0], [1.0, 1.0]]
    assert plan.load.tolist() == [1.0, 3.0] and plan.total_cost == 0.0


def test_continuous_capacitated_p_median_with_a_heavy_town_beside_light_ones():
    # A town of 10 units at the origin and two of 1 unit far out, sites of 4: three sites
    # must share the town (12 units of room for its 10 beside 2 far off), the fourth serves
    # the light towns. Outside check: the plan's cost is the transportation optimum for its
    # own sites (scipy.optimize.linprog), and every capacity holds.
    towns = np.array([[0.0, 0.0], [20.0, 0.0], [20.0, 2.0]])
    demand = np.array([10.0, 1.0, 1.0])
    plan = pw.capacitated_p_median(towns, 4, [4, 4, 4, 4], demand)
    assert np.all(plan.load <= 4.0 * (1 + 1e-12)) and plan.load.sum() == pytest.approx(12.0)
    assert plan.total_cost == pytest.approx(split_linprog(towns, plan.sites, np.full(4, 4.0), demand), abs=1e-9)
    # By hand: three sites at the town and one between the far ones cost 2·1 = 2 at best.
    assert plan.total_cost == pytest.approx(2.0, rel=1e-6)


def _fifty_points_three_sites():
    """The unscaled instance of the scale checks: 50 points and 3 sites uniform in a 10 x 10
    square (seed 2), capacities 20, 20 and 10 (exactly the demand)."""
    rng = np.random.default_rng(2)
    return rng.uniform(0, 10, size=(50, 2)), rng.uniform(0, 10, size=(3, 2)), np.array([20.0, 20.0, 10.0])


@pytest.mark.parametrize("scale", [1e-300, 1e-200, 1e200, 1e300])
def test_allocation_and_p_median_are_scale_free(scale):
    # Input: coordinates scaled by 1e-300. Wrong answer: a plan 1.42 times the optimum (the
    # squared differences underflowed to 0, so every distance read as 0 to the solver).
    # Outside check: scipy.optimize.linprog (HiGHS) on the unscaled program; the optimum
    # scales with the coordinates.
    points, sites, caps = _fifty_points_three_sites()
    best = split_linprog(points, sites, caps, np.ones(50))
    plan = pw.capacity_allocation(points * scale, sites * scale, caps)
    assert plan.total_cost / scale == pytest.approx(best, rel=1e-9)
    assert plan.load == pytest.approx(caps, rel=1e-12)
    unscaled = pw.capacity_allocation(points, sites, caps)
    assert np.array_equal(plan.assignment, unscaled.assignment)


@pytest.mark.parametrize("scale", [1e-300, 1e-200, 1e120, 1e150])
def test_capacity_cells_are_scale_free(scale):
    # Input: coordinates scaled by 1e-300. Wrong answer: a refusal naming "powers", an
    # argument the caller never passed (the squared distances underflowed); at 1e150 the
    # cells' areas and the cost scale as they should, checked here against shapely.
    # Outside checks: scipy.optimize.linprog (HiGHS) on the squared-distance transportation
    # program of the unscaled data; shapely for the polygons' areas, their tiling of the
    # region and each point lying in its site's cell.
    import shapely

    points, sites, caps = _fifty_points_three_sites()
    c = cdist(points, sites) ** 2
    res = linprog(c.ravel(), A_ub=np.kron(np.ones(50), np.eye(3)), b_ub=caps,
                  A_eq=np.kron(np.eye(50), np.ones(3)), b_eq=np.ones(50), method="highs")
    cells = pw.capacity_cells(points * scale, sites * scale, caps)
    assert cells.load == pytest.approx(caps, rel=1e-12)
    if scale > 1e-150:  # below, demand × squared distance underflows to 0 in these units
        assert cells.total_cost / scale**2 == pytest.approx(res.fun, rel=1e-9)
    polygons = [shapely.affinity.scale(g, 1 / scale, 1 / scale, origin=(0, 0)) for g in cells.cells.to_shapely()]
    region = shapely.box(*shapely.union_all(polygons).bounds)
    assert sum(g.area for g in polygons) == pytest.approx(region.area, rel=1e-9)
    assert shapely.union_all(polygons).area == pytest.approx(region.area, rel=1e-9)
    for i, j in enumerate(cells.assignment):
        assert polygons[j].distance(shapely.Point(points[i])) <= 1e-9 * 10


def test_capacity_cells_refuse_coordinates_whose_squares_overflow():
    # Input: coordinates near 1e200. Wrong answer: total_cost NaN and areas inf, returned
    # without a word. Reference: float64's range (squares of 1e200 exceed 1.8e308).
    rng = np.random.default_rng(2)
    points = rng.uniform(0, 10, size=(50, 2)) * 1e200
    sites = rng.uniform(0, 10, size=(3, 2)) * 1e200
    with pytest.raises(pw.InputError, match="rescale the coordinates") as info:
        pw.capacity_cells(points, sites, [20, 20, 10])
    assert info.value.argument == "points"


def heavy_and_unit_demand():
    """Three points of 1e15 beside 44 points of 1 and three of 1e-15."""
    rng = np.random.default_rng(2)
    points = rng.uniform(0, 10, size=(50, 2))
    sites = rng.uniform(0, 10, size=(3, 2))
    weights = np.ones(50)
    weights[:3] = 1e15
    weights[3:6] = 1e-15
    return points, sites, weights


def test_unit_demand_beside_huge_demand_does_not_overfill_a_site():
    # Input: capacities [1e15, 1e15, 1e15 + 50] for 3e15 + 44 units (3 points of 1e15, 44
    # of 1). Wrong answer: site 0 loaded 1e15 + 21 (slack -21) while site 2 had 40 to spare:
    # an imbalance below 1e-12 of the total counted as rounding. Reference: by hand, the
    # capacities hold the demand with 6 units to spare, and every value here is an integer
    # below 2**53, exact in float64, so a plan within the capacities is representable.
    points, sites, weights = heavy_and_unit_demand()
    caps = np.array([1e15, 1e15, 1e15 + 50])
    for split in (True, False):
        plan = pw.capacity_allocation(points, sites, caps, weights, split=split)
        assert np.all(plan.load <= caps), (split, plan.load - caps)
        assert plan.load.sum() == pytest.approx(weights.sum(), rel=1e-15)
        assert plan.total_unserved == 0.0


def test_a_shortfall_of_whole_units_beside_huge_demand_is_not_rounding():
    # Input: capacities [1e15] * 3 for 3e15 + 44 units. Wrong answer: no shortfall reported
    # (44 short counted as rounding of the totals), and a plan overfilling the sites by 44.
    # Reference: by hand, 44 units more demand than capacity, integers exact in float64.
    points, sites, weights = heavy_and_unit_demand()
    caps = np.full(3, 1e15)
    with pytest.raises(pw.InputError, match="short"):
        pw.capacity_allocation(points, sites, caps, weights)
    plan = pw.capacity_allocation(points, sites, caps, weights, allow_unserved=True)
    assert plan.total_unserved == pytest.approx(44.0, abs=1e-9)
    assert np.all(plan.load <= caps)


# ------------------------------------------------- the capacitated p-median against milp


def capacitated_median_program(points, cands, caps, weights, p, *, relaxed=False, time_limit=120.0):
    """The textbook capacitated p-median program, solved by ``scipy.optimize.milp`` (HiGHS):
    min Σ w_i d_ij x_ij with y_j binary, Σ_j y_j = p, Σ_j x_ij = 1, Σ_i w_i x_ij ≤ Q_j y_j,
    0 ≤ x_ij ≤ y_j (d Euclidean). ``relaxed`` drops the integrality (the LP relaxation).
    Returns the optimal value; None when HiGHS did not prove it within ``time_limit``."""
    from scipy.sparse import coo_matrix, hstack, vstack

    d = cdist(points, cands)
    n, m = d.shape
    nx = n * m
    cols = np.arange(nx)
    rows_i, cols_j = np.repeat(np.arange(n), m), np.tile(np.arange(m), n)
    assign = coo_matrix((np.ones(nx), (rows_i, cols)), shape=(n, nx))
    load = coo_matrix((np.repeat(weights, m), (cols_j, cols)), shape=(m, nx))
    open_cap = coo_matrix((-np.asarray(caps, float), (np.arange(m), np.arange(m))), shape=(m, m))
    link = coo_matrix((-np.ones(nx), (cols, cols_j)), shape=(nx, m))
    a = vstack([
        hstack([assign, coo_matrix((n, m))]),
        hstack([load, open_cap]),
        hstack([coo_matrix(np.eye(nx)), link]),
        hstack([coo_matrix((1, nx)), coo_matrix(np.ones((1, m)))]),
    ]).tocsr()
    lo = np.r_[np.ones(n), np.full(m, -np.inf), np.full(nx, -np.inf), [p]]
    hi = np.r_[np.ones(n), np.zeros(m), np.zeros(nx), [p]]
    cost = np.r_[(d * np.asarray(weights, float)[:, None]).ravel(), np.zeros(m)]
    integrality = np.r_[np.zeros(nx), np.zeros(m) if relaxed else np.ones(m)]
    res = milp(cost, constraints=LinearConstraint(a, lo, hi), integrality=integrality, bounds=Bounds(0, 1),
               options={"time_limit": time_limit})
    return res.fun if res.status == 0 else None


def capacitated_median_instance(n, m, p, tightness, seed):
    """A seeded audit instance: n points and m candidates uniform in a 100 × 100 square,
    integral demand 1–5, candidate capacities uniform(0.5, 1.5) scaled so that the p largest
    hold ``tightness`` × the demand."""
    rng = np.random.default_rng(seed)
    points = rng.uniform(0, 100, size=(n, 2))
    cands = rng.uniform(0, 100, size=(m, 2))
    weights = rng.integers(1, 6, size=n).astype(float)
    caps = rng.uniform(0.5, 1.5, size=m)
    caps *= tightness * weights.sum() / np.sort(caps)[-p:].sum()
    return points, cands, caps, weights


@pytest.mark.parametrize("tightness", [1.1, 1.3, 2.0])
def test_capacitated_median_bound_and_plan_against_milp(tightness):
    # Outside check: scipy.optimize.milp (HiGHS) on the textbook program above, its LP
    # relaxation (integrality off), and scipy.optimize.linprog on the transportation program
    # with every candidate open (the bound reported before the Lagrangian one). Wrong answers
    # seen: plans up to 50 % above the optimum and bounds at 45 % of it (every candidate open
    # drops the limit of p sites).
    for seed in range(8):
        points, cands, caps, w = capacitated_median_instance(40, 12, 4, tightness, seed)
        best = capacitated_median_program(points, cands, caps, w, 4)
        lp = capacitated_median_program(points, cands, caps, w, 4, relaxed=True)
        all_open = split_linprog(points, cands, caps, w)
        assert best is not None and lp is not None
        plan = pw.capacitated_p_median(points, 4, caps, w, candidates=cands)
        assert np.all(plan.load <= caps[plan.chosen] * (1 + 1e-12))
        assert plan.load.sum() == pytest.approx(w.sum(), rel=1e-12)
        assert plan.total_cost >= best * (1 - 1e-9)
        # Proven: never above the optimum.
        assert plan.median_lower_bound <= best * (1 + 1e-9)
        # Stronger than both the bound with every candidate open and (to the subgradient's
        # tolerance) the linear-programming relaxation.
        assert plan.median_lower_bound >= all_open * (1 - 1e-9)
        assert plan.median_lower_bound >= lp * (1 - 5e-3)
        # The plan: within 1 % of the optimum (the interchange and the Lagrangian heuristic).
        assert plan.total_cost <= best * 1.01
        assert plan.median_relative_gap == pytest.approx(1 - plan.median_lower_bound / plan.total_cost, abs=1e-12)


def test_capacitated_median_at_scale_against_milp():
    # 100 points, 25 candidates, p = 8, tight capacities: the same claims as above against
    # scipy.optimize.milp (HiGHS), and a gap below the one of every candidate open.
    points, cands, caps, w = capacitated_median_instance(100, 25, 8, 1.1, 0)
    best = capacitated_median_program(points, cands, caps, w, 8)
    assert best is not None
    plan = pw.capacitated_p_median(points, 8, caps, w, candidates=cands)
    assert best * (1 - 1e-9) <= plan.total_cost <= best * 1.01
    assert plan.median_lower_bound <= best * (1 + 1e-9)
    all_open = split_linprog(points, cands, caps, w)
    assert plan.median_relative_gap < 0.5 * (1 - all_open / plan.total_cost)


def test_capacitated_median_degenerate_candidates():
    rng = np.random.default_rng(4)
    points = rng.uniform(0, 10, size=(20, 2))
    cands = rng.uniform(0, 10, size=(5, 2))
    w = np.ones(20)
    # p = every candidate: the only plan, its transportation optimum (scipy.optimize.linprog),
    # gap 0.
    caps = np.array([4.0, 4.0, 4.0, 4.0, 4.0])  # exactly the demand
    plan = pw.capacitated_p_median(points, 5, caps, w, candidates=cands)
    assert sorted(plan.chosen.tolist()) == [0, 1, 2, 3, 4]
    assert plan.total_cost == pytest.approx(split_linprog(points, cands, caps, w), rel=1e-9)
    assert plan.median_relative_gap == 0.0 and plan.load == pytest.approx(caps, rel=1e-12)
    # Exactly tight: the p largest hold the demand exactly; checked against milp.
    caps = np.array([10.0, 10.0, 3.0, 3.0, 2.0])
    plan = pw.capacitated_p_median(points, 2, caps, w, candidates=cands)
    assert sorted(plan.chosen.tolist()) == [0, 1]  # by hand: no other pair holds 20
    best = capacitated_median_program(points, cands, caps, w, 2)  # scipy.optimize.milp
    assert plan.total_cost == pytest.approx(best, rel=1e-9)
    assert plan.median_lower_bound <= best * (1 + 1e-9)
    # A candidate of capacity 0 is never chosen while others hold the demand, and the bound
    # holds (scipy.optimize.milp).
    caps = np.array([0.0, 12.0, 12.0, 12.0, 12.0])
    plan = pw.capacitated_p_median(points, 2, caps, w, candidates=cands)
    assert 0 not in plan.chosen.tolist()
    best = capacitated_median_program(points, cands, caps, w, 2)
    assert best * (1 - 1e-9) <= plan.total_cost <= best * 1.01
    assert plan.median_lower_bound <= best * (1 + 1e-9)
    # All the demand at one place: the nearest candidates with room serve it; by hand with
    # candidates on a line, 2 sites of 6 for 12 units at the origin cost 6·1 + 6·2 = 18.
    line = np.array([[1.0, 0.0], [2.0, 0.0], [3.0, 0.0]])
    plan = pw.capacitated_p_median([[0, 0]] * 4, 2, [6, 6, 6], [3, 3, 3, 3], candidates=line)
    assert sorted(plan.chosen.tolist()) == [0, 1]
    assert plan.total_cost == pytest.approx(18.0, rel=1e-12)
    assert plan.median_lower_bound == pytest.approx(18.0, rel=1e-9)
    # Points of no demand (a third of them) change nothing: the plan and the optimum are
    # those of the demand alone (scipy.optimize.milp), and a second call gives the same plan.
    spread, lots, room, demand = capacitated_median_instance(30, 10, 3, 1.2, 3)
    demand[::3] = 0.0
    plan = pw.capacitated_p_median(spread, 3, room, demand, candidates=lots)
    best = capacitated_median_program(spread, lots, room, demand, 3)
    assert best * (1 - 1e-9) <= plan.total_cost <= best * 1.01
    assert plan.median_lower_bound <= best * (1 + 1e-9)
    again = pw.capacitated_p_median(spread, 3, room, demand, candidates=lots)
    assert again.chosen.tolist() == plan.chosen.tolist() and again.total_cost == plan.total_cost
    assert again.median_lower_bound == plan.median_lower_bound
    # Errors name the argument.
    with pytest.raises(pw.InputError, match="p") as info:
        pw.capacitated_p_median(points, 6, np.full(5, 10.0), w, candidates=cands)
    assert info.value.argument == "p"
    with pytest.raises(pw.InputError, match="short"):
        pw.capacitated_p_median(points, 2, [9.0, 9.0, 1.0, 1.0, 1.0], w, candidates=cands)
    with pytest.raises(pw.InputError) as info:
        pw.capacitated_p_median(points, 2, [9.0, -1.0, 12.0, 1.0, 1.0], w, candidates=cands)
    assert info.value.argument == "capacities"


def test_single_source_refusal_says_no_plan_exists_when_the_search_proved_it():
    # Three points of 2 and two sites holding 3 each: capacity meets demand, but no site holds
    # two points, so no single-source plan exists (scipy.optimize.milp finds none). The
    # exhaustive search covers every plan here, so the refusal must not say one may exist.
    points = np.array([[0.0, 0.0], [1.0, 0.0], [2.0, 0.0]])
    sites = np.array([[0.0, 1.0], [2.0, 1.0]])
    caps, weights = np.array([3.0, 3.0]), np.array([2.0, 2.0, 2.0])
    assert single_source_milp(points, sites, caps, weights) is None  # scipy.optimize.milp
    with pytest.raises(pw.DegenerateInputError, match="no single-source plan exists") as err:
        pw.capacity_allocation(points, sites, caps, weights, split=False)
    assert "may still exist" not in str(err.value)


@pytest.mark.parametrize("split", [True, False])
def test_capacity_costs_beyond_float64_are_refused_not_returned_as_nan(split):
    # Input: three points 1e10 apart carrying 1e300 each. Wrong answer before: total_cost NaN,
    # lower_bound NaN and relative_gap 0.0, returned as a plan. Reference: float64's range,
    # 3e300 of demand times distances of 1e10 exceed 1.8e308 (by hand).
    points = [[0, 0], [1e10, 0], [0, 1e10]]
    sites = [[0, 0], [1e10, 1e10]]
    weights = [1e300, 1e300, 1e300]
    with pytest.raises(pw.InputError, match="overflow") as info:
        pw.capacity_allocation(points, sites, [2e300, 1e300], weights, split=split)
    assert info.value.argument == "points"
    # The same demand a million times lighter fits, and its cost is finite and exact to the
    # hand count: site 0 serves points 0 and 2 (1e294 · 1e10), site 1 point 1 (1e294 · 1e10).
    plan = pw.capacity_allocation(points, sites, [2e294, 1e294], [1e294] * 3, split=split)
    assert plan.total_cost == pytest.approx(2e304, rel=1e-12) and plan.relative_gap == 0.0


def test_capacitated_p_median_costs_beyond_float64_are_refused():
    # The same overflow through the capacitated p-median, with sites anywhere and on
    # candidates. Reference: float64's range (by hand, as above).
    points = [[0, 0], [1e10, 0], [0, 1e10]]
    weights = [1e300, 1e300, 1e300]
    with pytest.raises(pw.InputError, match="overflow"):
        pw.capacitated_p_median(points, 2, [2e300, 2e300], weights)
    with pytest.raises(pw.InputError, match="overflow"):
        pw.capacitated_p_median(points, 2, [2e300, 2e300], weights, candidates=[[0, 0], [1e10, 1e10]])
