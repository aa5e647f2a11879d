"""Capacities: capacitated allocation and capacitated p-median against outside references.

References: ``scipy.optimize.linprog`` (HiGHS) and ``scipy.optimize.milp`` on the
transportation program written out here, ``scipy.optimize.linear_sum_assignment`` when
every capacity is 1, ``scipy.optimize.minimize`` for the Fermat–Weber step, and brute force
over candidate subsets.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy.optimize import Bounds, LinearConstraint, linear_sum_assignment, linprog, milp, minimize
from scipy.sparse import coo_matrix
from scipy.spatial.distance import cdist

import placewise as pw


def transport_matrices(points, sites):
    """The data of the transportation program over x_ij (row-major, i the point): the costs
    c_ij = |p_i − s_j| (n × m), the per-point sums Σ_j x_ij and the per-site sums Σ_i x_ij
    (sparse rows)."""
    c = cdist(points, sites)
    n, m = c.shape
    rows = np.repeat(np.arange(n), m)
    cols = np.arange(n * m)
    a_point = coo_matrix((np.ones(n * m), (rows, cols)), shape=(n, n * m))
    a_site = coo_matrix((np.ones(n * m), (np.tile(np.arange(m), n), cols)), shape=(m, n * m))
    return c, a_point, a_site


def transport_program(points, sites, caps, weights, *, integral=False, serve=None):
    """The transportation program min Σ c_ij x_ij, Σ_j x_ij = w_i (or ≤ w_i with Σ x = serve),
    Σ_i x_ij ≤ cap_j, x ≥ 0, solved by HiGHS (linprog, or milp with x_ij = w_i y_ij, y binary)."""
    c, a_point, a_site = transport_matrices(points, sites)
    n, m = c.shape
    cols = np.arange(n * m)
    if integral:
        # y_ij ∈ {0, 1}: point i served whole by site j.
        scaled = coo_matrix((np.repeat(weights, m), (np.tile(np.arange(m), n), cols)), shape=(m, n * m))
        res = milp(
            (c * weights[:, None]).ravel(),
            constraints=[LinearConstraint(a_point, 1, 1), LinearConstraint(scaled, 0, caps)],
            integrality=np.ones(n * m),
            bounds=Bounds(0, 1),
        )
        assert res.status == 0
        return res.fun
    if serve is None:
        res = linprog(c.ravel(), A_ub=a_site, b_ub=caps, A_eq=a_point, b_eq=weights, method="highs")
    else:
        a_all = np.ones((1, n * m))
        res = linprog(c.ravel(), A_ub=coo_matrix(np.vstack([a_point.toarray(), a_site.toarray()])),
                      b_ub=np.r_[weights, caps], A_eq=a_all, b_eq=[serve], method="highs")
    assert res.status == 0
    return res.fun


def instance(seed, n=60, m=5, slack=1.15):
    rng = np.random.default_rng(seed)
    points = rng.uniform(0, 100, size=(n, 2))
    sites = rng.uniform(0, 100, size=(m, 2))
    weights = rng.uniform(0.5, 3.0, size=n)
    shares = rng.uniform(0.5, 1.5, size=m)
    caps = shares / shares.sum() * weights.sum() * slack
    return points, sites, caps, weights


@pytest.mark.parametrize("seed", range(6))
def test_split_plan_cost_equals_linprog(seed):
    points, sites, caps, weights = instance(seed)
    plan = pw.capacity_allocation(points, sites, caps, weights)
    # Outside check: scipy.optimize.linprog (HiGHS) on the transportation program.
    assert plan.total_cost == pytest.approx(transport_program(points, sites, caps, weights), rel=1e-9)
    assert np.all(plan.load <= caps * (1 + 1e-12))
    assert plan.slack == pytest.approx(caps - plan.load)
    served = np.zeros(len(points))
    np.add.at(served, np.arange(len(points)), plan.share * weights)
    parts = plan.parts_frame()
    assert len(parts.point.unique()) <= len(sites) - 1 + 0  # a vertex solution shares ≤ m − 1 points
    assert plan.lower_bound == plan.total_cost and plan.relative_gap == 0.0


@pytest.mark.parametrize("seed", range(4))
def test_every_capacity_one_matches_linear_sum_assignment(seed):
    rng = np.random.default_rng(100 + seed)
    points = rng.uniform(0, 10, size=(40, 2))
    sites = rng.uniform(0, 10, size=(55, 2))
    plan = pw.capacity_allocation(points, sites, np.ones(55))
    # Outside check: scipy.optimize.linear_sum_assignment on the distance matrix.
    r, c = linear_sum_assignment(cdist(points, sites))
    assert plan.total_cost == pytest.approx(cdist(points, sites)[r, c].sum(), rel=1e-12)
    # Integral data give an integral plan: every point whole at one site, each site ≤ 1.
    assert np.all(plan.share == 1.0) and plan.part_point.size == 0
    assert np.all(np.isin(plan.load, [0.0, 1.0]))


@pytest.mark.parametrize("seed", range(3))
def test_single_source_gap_is_proven_against_milp(seed):
    points, sites, caps, weights = instance(200 + seed, n=25, m=4, slack=1.2)
    split = pw.capacity_allocation(points, sites, caps, weights)
    single = pw.capacity_allocation(points, sites, caps, weights, split=False)
    # Outside check: scipy.optimize.milp on the single-source program.
    best = transport_program(points, sites, caps, weights, integral=True)
    assert single.total_cost >= best * (1 - 1e-9)
    assert split.total_cost <= single.lower_bound <= best * (1 + 1e-9)
    assert single.relative_gap == pytest.approx((single.total_cost - single.lower_bound) / single.total_cost)
    # 25 points: the exhaustive search finishes, so the plan is milp's optimum, gap 0.
    assert single.total_cost == pytest.approx(best, rel=1e-9) and single.relative_gap == 0.0
    assert np.all(single.share == 1.0)
    assert np.all(single.load <= caps * (1 + 1e-12))


def test_shortfall_refused_with_the_amount_or_left_unserved():
    points, sites, caps, weights = instance(7, slack=0.8)
    with pytest.raises(pw.InputError, match=r"short") as info:
        pw.capacity_allocation(points, sites, caps, weights)
    short = weights.sum() - caps.sum()
    assert f"{short:.6g}"[:5] in str(info.value).replace("e+", "e")
    assert info.value.argument == "capacities"
    plan = pw.capacity_allocation(points, sites, caps, weights, allow_unserved=True)
    assert plan.total_unserved == pytest.approx(short)
    assert plan.load == pytest.approx(caps)
    # Outside check: linprog serving exactly the total capacity at least cost.
    assert plan.total_cost == pytest.approx(
        transport_program(points, sites, caps, weights, serve=caps.sum()), rel=1e-9)


def test_prices_certify_the_split_plan():
    points, sites, caps, weights = instance(11, n=300, m=8, slack=1.05)
    plan = pw.capacity_allocation(points, sites, caps, weights)
    reduced = cdist(points, sites) + plan.price
    parts = plan.parts_frame()
    served = list(zip(parts.point, parts.site)) + [
        (i, j) for i, j in enumerate(plan.assignment) if i not in set(parts.point)]
    for i, j in served:
        assert reduced[i, j] <= reduced[i].min() + 1e-9
    assert np.all(plan.price[plan.slack > 1e-9] == 0.0)


@pytest.mark.parametrize("capacities, match", [
    ([1e3, -1.0, 1e3], r"capacities must be finite and >= 0; capacities\[1\] = -1"),
    ([1e3, np.nan, 1e3], r"capacities\[1\] = NaN|capacities\[1\] = nan"),
    ([1e3, 1e3], r"one entry per site \(3\); got 2"),
])
def test_bad_capacities_name_argument_and_row(capacities, match):
    with pytest.raises(pw.InputError, match=match) as info:
        pw.capacity_allocation([[0, 0], [1, 1]], [[0, 0], [1, 0], [2, 2]], capacities)
    assert info.value.argument == "capacities"


def test_one_location_with_two_capacities_is_refused():
    with pytest.raises(pw.InputError, match=r"sites\[2\] repeats the location of sites\[0\]"):
        pw.capacity_allocation([[0, 0]], [[0, 0], [1, 0], [0, 0]], [2, 2, 3])
    # The same capacity twice is two equal sites at one place: accepted.
    plan = pw.capacity_allocation([[0, 0], [0, 1]], [[0, 0], [1, 0], [0, 0]], [1, 1, 1])
    assert plan.total_cost == pytest.approx(1.0)


def test_one_candidate_location_with_two_capacities_names_candidates_and_rows():
    points = [[0, 0], [1, 0], [5, 0], [6, 0]]
    with pytest.raises(pw.InputError, match=r"candidates\[1\] repeats the location of candidates\[0\]") as info:
        pw.capacitated_p_median(points, 2, [1, 3, 2], candidates=[[0, 0], [0, 0], [6, 0]])
    assert info.value.argument == "candidates" and info.value.row == 1
    assert "sites" not in str(info.value)


def test_tables_and_plot():
    points, sites, caps, weights = instance(3)
    plan = pw.capacity_allocation(points, sites, caps, weights, unit="m")
    frame = plan.to_frame()
    assert list(frame.columns) == ["assignment", "share", "distance_m", "cost_m", "unserved"]
    assert frame.cost_m.sum() == pytest.approx(plan.total_cost)
    assert plan.summary().loc[0, "cost_m"] == plan.total_cost
    gdf = plan.to_geodataframe(crs="EPSG:3857")
    assert len(gdf) == len(points)
    sites_frame = plan.sites_frame()
    assert sites_frame.load.sum() == pytest.approx(weights.sum())


@given(st.integers(0, 10_000), st.integers(1, 6), st.integers(1, 30), st.booleans())
def test_property_split_cost_equals_linprog(seed, m, n, integral):
    rng = np.random.default_rng(seed)
    points = rng.integers(0, 5, size=(n, 2)).astype(float)  # repeated locations and ties
    sites = rng.integers(0, 5, size=(m, 2)).astype(float)
    sites = np.unique(sites, axis=0)
    m = len(sites)
    weights = rng.integers(0, 4, size=n).astype(float) if integral else rng.uniform(0, 2, size=n)
    if weights.sum() == 0:
        weights[0] = 1.0
    caps = rng.integers(0, 6, size=m).astype(float) if integral else rng.uniform(0, 3, size=m)
    if caps.sum() < weights.sum():
        caps[0] += weights.sum() - caps.sum() + 1.0
    plan = pw.capacity_allocation(points, sites, caps, weights)
    # Outside check: scipy.optimize.linprog (HiGHS).
    assert plan.total_cost == pytest.approx(transport_program(points, sites, caps, weights), rel=1e-7, abs=1e-9)
    assert np.all(plan.load <= caps + 1e-9)
    if integral:
        assert np.all(plan.part_amount == np.round(plan.part_amount))


def test_capacitated_p_median_with_candidates_against_brute_force():
    rng = np.random.default_rng(5)
    points = rng.uniform(0, 10, size=(40, 2))
    cands = rng.uniform(0, 10, size=(7, 2))
    caps = rng.uniform(10, 25, size=7)
    plan = pw.capacitated_p_median(points, 3, caps, candidates=cands)
    # Outside check: linprog on every subset of 3 candidates with room for the demand.
    best = min(
        transport_program(points, cands[list(s)], caps[list(s)], np.ones(40))
        for s in itertools.combinations(range(7), 3) if caps[list(s)].sum() >= 40
    )
    assert plan.total_cost >= best * (1 - 1e-9)
    assert plan.median_lower_bound <= best * (1 + 1e-9)
    assert np.all(plan.load <= caps[plan.chosen] * (1 + 1e-12))
    assert plan.total_cost == pytest.approx(
        transport_program(points, cands[plan.chosen], caps[plan.chosen], np.ones(40)), rel=1e-9)


def test_capacitated_p_median_with_candidates_may_need_more_sites_than_demand_locations():
    # Two towns of 10 units each and depot lots holding 4: five sites for two locations.
    # The run was refused ("points must hold at least 5 distinct points") although plans
    # exist. Outside check: linprog on every subset of 5 of the 6 lots (all have room).
    towns = np.array([[0.0, 0.0], [10.0, 0.0]])
    demand = np.array([10.0, 10.0])
    lots = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [10.0, 0.0], [9.0, 0.0], [10.0, 1.0]])
    caps = np.full(6, 4.0)
    plan = pw.capacitated_p_median(towns, 5, caps, demand, candidates=lots)
    assert len(plan.chosen) == len(set(plan.chosen.tolist())) == 5
    best = min(transport_program(towns, lots[list(s)], caps[list(s)], demand)
               for s in itertools.combinations(range(6), 5))
    chosen = transport_program(towns, lots[plan.chosen], caps[plan.chosen], demand)
    assert plan.total_cost == pytest.approx(chosen, rel=1e-9)
    assert plan.total_cost == pytest.approx(best, rel=1e-9)
    assert plan.median_lower_bound <= best * (1 + 1e-9)
    assert np.all(plan.load <= caps[plan.chosen] * (1 + 1e-12))
    assert plan.load.sum() == pytest.approx(demand.sum(), rel=1e-12)


def test_capacitated_p_median_continuous_sites_are_weber_points_of_their_demand():
    rng = np.random.default_rng(9)
    points = np.vstack([rng.normal([0, 0], 1, size=(60, 2)), rng.normal([8, 0], 1, size=(20, 2))])
    plan = pw.capacitated_p_median(points, 2, [40, 40])
    assert plan.load == pytest.approx([40, 40])
    # Each site is the Fermat–Weber point of what it serves: scipy.optimize.minimize.
    amounts = np.zeros((len(points), 2))
    for i, j in enumerate(plan.assignment):
        amounts[i, j] = plan.share[i]
    for row in plan.parts_frame().itertuples():
        amounts[row.point] = 0.0
    for row in plan.parts_frame().itertuples():
        amounts[row.point, row.site] = row.amount
    for j in range(2):
        def weber(x, j=j):
            return float(np.sum(amounts[:, j] * np.hypot(*(points - x).T)))
        ref = minimize(weber, points[amounts[:, j] > 0].mean(axis=0), method="Nelder-Mead",
                       options={"xatol": 1e-9, "fatol": 1e-12, "maxiter": 5000})
        assert weber(plan.sites[j]) <= ref.fun * (1 + 1e-6)


def test_capacitated_p_median_continuous_sites_may_meet_at_a_heavy_point():
    # A town of 20 units and three homes, two sites holding 12 and 11: both belong at the
    # town. The second site's move there was refused as "one location, two capacities" and
    # the run stopped, reporting convergence at cost 69.37 with that site at (5, 5).
    # Outside checks: linprog on the plan's sites, and the closed form of both sites at the
    # town: the homes travel 1 + 1 + √50 and the town nothing.
    points = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [5.0, 5.0]])
    demand = np.array([20.0, 1.0, 1.0, 1.0])
    plan = pw.capacitated_p_median(points, 2, [12.0, 11.0], demand)
    assert plan.total_cost == pytest.approx(
        transport_program(points, plan.sites, np.array([12.0, 11.0]), demand), rel=1e-9)
    assert plan.total_cost <= (2 + np.sqrt(50)) * (1 + 1e-9)
    assert plan.load.sum() == pytest.approx(demand.sum(), rel=1e-12)


def test_capacitated_p_median_refuses_short_capacity():
    with pytest.raises(pw.InputError, match="short"):
        pw.capacitated_p_median([[0, 0], [1, 1], [2, 2]], 2, [1, 1])
    with pytest.raises(pw.InputError, match="capacities"):
        pw.capacitated_p_median([[0, 0], [1, 1], [2, 2]], 2, [5, 5, 5])


# ------------------------------------------------------------- p_median(capacities=) and gis


def test_p_median_with_capacities_is_the_capacitated_kernel():
    rng = np.random.default_rng(21)
    points = rng.uniform(0, 10, size=(40, 2))
    cands = rng.uniform(0, 10, size=(6, 2))
    caps = rng.uniform(12, 25, size=6)
    plan = pw.p_median(points, 3, capacities=caps, candidates=cands)
    assert isinstance(plan, pw.CapacitatedMedianPlan)
    # Outside checks: linprog on the chosen candidates, and on every feasible subset of 3.
    assert plan.total_cost == pytest.approx(
        transport_program(points, cands[plan.chosen], caps[plan.chosen], np.ones(40)), rel=1e-9)
    best = min(transport_program(points, cands[list(s)], caps[list(s)], np.ones(40))
               for s in itertools.combinations(range(6), 3) if caps[list(s)].sum() >= 40)
    assert plan.total_cost >= best * (1 - 1e-9)
    sites = plan.sites_frame()
    np.testing.assert_allclose(sites.slack, sites.capacity - sites.load, atol=1e-12)
    continuous = pw.p_median(points, 2, capacities=[20, 20])
    assert continuous.load == pytest.approx([20, 20])
    assert continuous.total_cost == pytest.approx(
        transport_program(points, continuous.sites, np.array([20.0, 20.0]), np.ones(40)), rel=1e-9)


@pytest.mark.parametrize("option", [{"groups": [0, 1, 1]}, {"fixed": [[0, 0]]},
                                    {"effort": "fast"}, {"allow_unserved": True},
                                    {"region": [[0, 0], [3, 0], [3, 3]]}])
def test_p_median_with_capacities_refuses_what_it_has_no_form_of(option):
    with pytest.raises(pw.InputError) as info:
        pw.p_median([[0, 0], [1, 1], [2, 2]], 2, capacities=[2, 2], **option)
    assert info.value.argument == next(iter(option))


def test_p_median_capacity_shortfall_states_it():
    with pytest.raises(pw.InputError, match="1 short") as info:
        pw.p_median([[0, 0], [1, 1], [2, 2]], 2, capacities=[1, 1])
    assert info.value.argument == "capacities"
    with pytest.raises(pw.InputError, match="only with capacities"):
        pw.p_median([[0, 0], [1, 1], [2, 2]], 2, allow_unserved=True)


def test_gis_capacity_allocation_lonlat_is_projected_and_matches_linprog():
    gpd = pytest.importorskip("geopandas")
    from placewise import gis

    rng = np.random.default_rng(4)
    lonlat = rng.normal([10.0, 59.9], [0.03, 0.015], size=(60, 2))
    site_ll = rng.normal([10.0, 59.9], [0.03, 0.015], size=(4, 2))
    weights = rng.integers(1, 4, size=60).astype(float)
    caps = np.array([40.0, 30.0, 50.0, 20.0])
    homes = gpd.GeoDataFrame({"kids": weights}, geometry=gpd.points_from_xy(*lonlat.T), crs="EPSG:4326")
    schools = gpd.GeoDataFrame({"seats": caps}, geometry=gpd.points_from_xy(*site_ll.T), crs="EPSG:4326",
                               index=["a", "b", "c", "d"])
    plan = gis.capacity_allocation(homes, schools, "seats", "kids")
    # Outside check: pyproj to the UTM zone the summary names, then linprog on those metres.
    work = plan.summary["work_crs"].iloc[0]
    assert "UTM zone 32N" in work
    xy = np.column_stack(homes.to_crs(32632).geometry.pipe(lambda g: (g.x, g.y)))
    sxy = np.column_stack(schools.to_crs(32632).geometry.pipe(lambda g: (g.x, g.y)))
    assert plan.summary["cost_m"].iloc[0] == pytest.approx(transport_program(xy, sxy, caps, weights), rel=1e-9)
    assert plan.demand.crs == homes.crs and plan.sites.crs == schools.crs
    assert set(plan.demand["site"]) <= {"a", "b", "c", "d"}
    assert list(plan.sites.index) == ["a", "b", "c", "d"]
    assert plan.sites["load"].sum() == pytest.approx(weights.sum())
    assert set(plan.parts["site"].dropna()) <= {"a", "b", "c", "d"}
    with pytest.raises(pw.InputError, match="short"):
        gis.capacity_allocation(homes, schools.assign(seats=caps / 4), "seats", "kids")


def test_gis_p_median_with_capacities():
    gpd = pytest.importorskip("geopandas")
    from placewise import gis

    rng = np.random.default_rng(6)
    xy = rng.uniform(0, 1000, size=(50, 2))
    cands = rng.uniform(0, 1000, size=(6, 2))
    room = rng.uniform(15, 30, size=6)
    homes = gpd.GeoSeries(gpd.points_from_xy(*xy.T), crs="EPSG:32633")
    lots = gpd.GeoDataFrame({"room": room}, geometry=gpd.points_from_xy(*cands.T), crs="EPSG:32633",
                            index=[f"lot{k}" for k in range(6)])
    plan = gis.p_median(homes, 3, capacities="room", candidates=lots)
    chosen = [int(c[3:]) for c in plan.sites["source_row"]]
    # Outside check: linprog on the chosen lots.
    assert plan.summary["cost_m"].iloc[0] == pytest.approx(
        transport_program(xy, cands[chosen], room[chosen], np.ones(50)), rel=1e-9)
    np.testing.assert_allclose(plan.sites.geometry.x, cands[chosen, 0])
    assert set(plan.demand["site"]) <= set(plan.sites.index)
    anywhere = gis.p_median(homes, 2, capacities=[25, 25])
    assert anywhere.sites["load"].tolist() == pytest.approx([25, 25])
    # Without capacities, candidates give the discrete (uncapacitated) p-median: two lots.
    plain = gis.p_median(homes, 2, candidates=lots)
    assert set(plain.sites["source_row"]) <= set(lots.index) and len(plain.sites) == 2
