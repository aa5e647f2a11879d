"""Capacity-constrained cells against outside references.

References: ``scipy.optimize.linprog`` (HiGHS) on the transportation program with cost
``|x - s|²`` written out here; brute force over the sites for power-cell membership;
``scipy.spatial.cKDTree`` for nearest-site (Voronoi) assignment.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st
from scipy.optimize import linprog
from scipy.sparse import coo_matrix
from scipy.spatial import cKDTree
from scipy.spatial.distance import cdist

import placewise as pw


def squared_transport(points, sites, caps, weights):
    """min Σ |x_i - s_j|² y_ij, Σ_j y_ij = w_i, Σ_i y_ij ≤ cap_j, y ≥ 0, by HiGHS."""
    c = cdist(points, sites, "sqeuclidean")
    n, m = c.shape
    cols = np.arange(n * m)
    a_point = coo_matrix((np.ones(n * m), (np.repeat(np.arange(n), m), cols)), shape=(n, n * m))
    a_site = coo_matrix((np.ones(n * m), (np.tile(np.arange(m), n), cols)), shape=(m, n * m))
    res = linprog(c.ravel(), A_ub=a_site, b_ub=caps, A_eq=a_point, b_eq=weights, method="highs")
    assert res.status == 0
    return res.fun


def instance(seed, n=60, m=5, slack=1.0):
    rng = np.random.default_rng(seed)
    points = rng.uniform(0, 100, size=(n, 2))
    sites = rng.uniform(0, 100, size=(m, 2))
    weights = rng.uniform(0.5, 3.0, size=n)
    shares = rng.uniform(0.5, 1.5, size=m)
    return points, sites, shares / shares.sum() * weights.sum() * slack, weights


def dual_value(points, sites, caps, weights, power):
    """The dual of the transportation problem at ``power`` (valid when ``power <= 0`` or the
    totals are equal): Σ w_i min_j (|x_i - s_j|² - power_j) + Σ cap_j power_j (brute force)."""
    pd = cdist(points, sites, "sqeuclidean") - power
    return float(weights @ pd.min(axis=1) + np.asarray(caps) @ power)


def assert_cells_hold(points, sites, caps, cells, slop=1e-9):
    """Every unsplit point of positive demand lies in the power cell of its site (brute force
    over the sites with capacity); every load within its capacity."""
    scale = np.ptp(np.vstack([points, sites]), axis=0) @ np.ptp(np.vstack([points, sites]), axis=0) + 1.0
    power_distance = cdist(points, sites, "sqeuclidean") - cells.power
    power_distance[:, np.asarray(caps) <= 0] = np.inf
    split = np.isin(np.arange(len(points)), cells.part_point)
    own = power_distance[np.arange(len(points)), cells.assignment]
    assert np.all((own <= power_distance.min(axis=1) + slop * scale)[~split])
    assert np.all(cells.load <= np.asarray(caps) * (1 + 1e-9) + 1e-12)


@pytest.mark.parametrize("seed", range(6))
@pytest.mark.parametrize("slack", [1.0, 1.2])
def test_cost_is_the_squared_distance_transport_optimum(seed, slack):
    points, sites, caps, w = instance(seed, n=20 + 8 * seed, m=2 + seed % 5, slack=slack)
    cells = pw.capacity_cells(points, sites, caps, w)
    best = squared_transport(points, sites, caps, w)  # scipy.optimize.linprog (HiGHS)
    assert cells.total_cost == pytest.approx(best, rel=1e-9)
    assert_cells_hold(points, sites, caps, cells)  # brute force over the sites
    if slack == 1.0:
        np.testing.assert_allclose(cells.load, caps, rtol=1e-9)
    else:
        assert np.all(cells.power <= 0) and cells.power.max() == 0
        assert np.all(cells.power[cells.slack > 1e-9 * caps] == 0)  # complementary slackness
    assert cells.load.sum() == pytest.approx(w.sum(), rel=1e-12)
    # Strong duality: the powers' dual value equals the plan's cost (no gap: both optimal).
    assert dual_value(points, sites, caps, w, cells.power) == pytest.approx(cells.total_cost, rel=1e-9)
    # The parts of each split point add up to its demand.
    for i in np.unique(cells.part_point):
        assert cells.part_amount[cells.part_point == i].sum() == pytest.approx(w[i], rel=1e-12)
    # The plain-distance cost of the same plan, recomputed from its parts.
    d = cdist(points, sites)
    whole = ~np.isin(np.arange(len(points)), cells.part_point)
    plain = (w * d[np.arange(len(points)), cells.assignment])[whole].sum()
    plain += (cells.part_amount * d[cells.part_point, cells.part_site]).sum()
    assert cells.total_distance_cost == pytest.approx(plain, rel=1e-12)


def test_capacities_equal_to_voronoi_loads_keep_the_voronoi_cells():
    rng = np.random.default_rng(4)
    points = rng.uniform(0, 1000, (5000, 2))
    sites = rng.uniform(0, 1000, (30, 2))
    nearest = cKDTree(sites).query(points)[1]  # scipy's nearest site: the Voronoi cells
    caps = np.bincount(nearest, minlength=30).astype(float)
    cells = pw.capacity_cells(points, sites, caps)
    np.testing.assert_array_equal(cells.assignment, nearest)
    np.testing.assert_allclose(cells.load, caps)
    assert len(cells.part_point) == 0
    # Zero powers are optimal here; for point demand the optimal powers form a polytope
    # (the dual is piecewise linear) and the finish returns one of its vertices, so the
    # check is that both give the same dual value, the optimal cost (brute force).
    assert dual_value(points, sites, caps, np.ones(5000), cells.power) == pytest.approx(cells.total_cost, rel=1e-12)
    assert dual_value(points, sites, caps, np.ones(5000), np.zeros(30)) == pytest.approx(cells.total_cost, rel=1e-12)


def test_large_instance_meets_capacities_and_cells():
    rng = np.random.default_rng(9)
    towns = rng.uniform(0, 50_000, (8, 2))
    points = towns[rng.integers(0, 8, 60_000)] + rng.normal(0, 3_000, (60_000, 2))
    sites = rng.uniform(0, 50_000, (120, 2))
    w = rng.integers(1, 5, 60_000).astype(float)
    shares = rng.uniform(0.5, 1.5, 120)
    caps = shares / shares.sum() * w.sum()
    cells = pw.capacity_cells(points, sites, caps, w)
    np.testing.assert_allclose(cells.load, caps, rtol=1e-9)
    assert_cells_hold(points, sites, caps, cells, slop=1e-11)  # brute force over the sites
    assert len(np.unique(cells.part_point)) <= len(sites) - 1  # a vertex of the transport polytope


def test_duplicate_sites_zero_capacity_and_zero_weights():
    points = np.array([[0, 0], [1, 0], [2, 0], [3, 0], [4, 0], [2, 1]], float)
    sites = np.array([[0, 0], [0, 0], [4, 0], [9, 9]], float)
    caps = [1.0, 1.0, 3.0, 0.0]
    w = np.array([1, 1, 1, 1, 1, 0], float)
    cells = pw.capacity_cells(points, sites, caps, w)
    assert cells.power[0] == cells.power[1]
    np.testing.assert_allclose(cells.load, [1, 1, 3, 0])
    assert_cells_hold(points, sites, caps, cells)
    # The site without capacity serves nothing and sits at the largest such power:
    # some point is exactly on its cell's edge (brute force).
    pd = cdist(points[:5], sites, "sqeuclidean") - cells.power
    assert np.min(pd[:, 3] - pd[:, :3].min(axis=1)) == pytest.approx(0, abs=1e-9)
    assert squared_transport(points[:5], sites, caps, w[:5]) == pytest.approx(cells.total_cost, rel=1e-9)


def test_all_demand_at_one_point_is_split_by_capacity():
    points = np.zeros((10, 2))
    sites = np.array([[1.0, 0], [0, 2.0], [5, 5]])
    cells = pw.capacity_cells(points, sites, [4, 4, 2])
    np.testing.assert_allclose(cells.load, [4, 4, 2])
    assert cells.total_cost == pytest.approx(squared_transport(points, sites, [4, 4, 2], np.ones(10)), rel=1e-12)


def test_inputs_are_checked():
    points = [[0, 0], [1, 1]]
    sites = [[0, 0], [1, 0]]
    with pytest.raises(pw.InputError, match="1 is below total demand 4, 3 short") as e:
        pw.capacity_cells(points, sites, [0.5, 0.5], [2, 2])
    assert e.value.argument == "capacities"
    # The cells share out all the demand: the advice does not offer unserved demand, which
    # this model has no option for (it did).
    assert str(e.value).endswith("raise capacities (this model serves all the demand)")
    with pytest.raises(pw.InputError, match="raise capacities or allow unserved demand"):
        pw.capacity_allocation(points, sites, [0.5, 0.5], [2, 2])
    with pytest.raises(pw.InputError, match=r"capacities\[1\] = -1"):
        pw.capacity_cells(points, sites, [1, -1])
    with pytest.raises(pw.InputError, match="one entry per site"):
        pw.capacity_cells(points, sites, [1, 1, 1])
    with pytest.raises(pw.InputError, match="repeats the location"):
        pw.capacity_cells(points, [[0, 0], [0, 0]], [1, 2])
    with pytest.raises(pw.InputError, match=r"tol must be in \(0, 1\)"):
        pw.capacity_cells(points, sites, [1, 1], tol=0)
    with pytest.raises(pw.InputError, match="capacities must be finite"):
        pw.capacity_cells(points, sites, [1, np.nan])
    # Within tol of the demand counts as equal: capacities are scaled to it.
    cells = pw.capacity_cells(points, sites, [1, 1 - 1e-12])
    assert cells.load.sum() == pytest.approx(2.0, rel=1e-15)


def test_tables():
    points, sites, caps, w = instance(3, n=40, m=4, slack=1.1)
    cells = pw.capacity_cells(points, sites, caps, w, unit="m")
    assert list(cells.to_frame().columns) == ["assignment", "share", "cost_m2"]
    frame = cells.sites_frame()
    assert list(frame.columns) == ["x", "y", "capacity", "load", "slack", "power_m2"]
    np.testing.assert_allclose(frame["slack"], caps - cells.load)
    summary = cells.summary()
    assert summary["cost_m2"].iloc[0] == cells.total_cost
    assert summary["slack"].iloc[0] == pytest.approx(caps.sum() - w.sum())


@settings(deadline=None, max_examples=40)
@given(
    st.integers(1, 25), st.integers(1, 5), st.integers(0, 2**32 - 1), st.booleans(), st.booleans(),
    st.sampled_from([1.0, 1.5]),
)
@example(1, 1, 540, False, False, 1.0)  # the one point on the one site
def test_random_instances_match_highs(n, m, seed, repeat, far, slack):
    rng = np.random.default_rng(seed)
    points = rng.integers(0, 6, (n, 2)).astype(float)  # repeated locations are common
    if repeat:
        points[:] = points[0]
    sites = rng.integers(0, 6, (m, 2)).astype(float)
    if far:
        sites[-1] = [1e4, -1e4]
    w = rng.integers(0, 4, n).astype(float)
    if w.sum() == 0:
        w[0] = 1.0
    shares = rng.uniform(0.2, 1.0, m)
    caps = shares / shares.sum() * w.sum() * slack
    _, first = np.unique(sites, axis=0, return_index=True)
    keep = np.zeros(m, bool)
    keep[first] = True
    caps = np.where(keep, caps, 0.0)  # a repeated location: one capacity (the rest 0)
    for j in np.flatnonzero(~keep):
        caps[j] = caps[np.flatnonzero((sites == sites[j]).all(axis=1))[0]]
    try:
        cells = pw.capacity_cells(points, sites, caps, w)
    except pw.DegenerateInputError as exc:
        # Every point and site at one location: no default region to cut cells from
        # (numpy: the bounding box has no extent), and the message asks for one.
        assert exc.argument == "region" and np.ptp(np.vstack([points, sites]), axis=0).max() == 0
        return
    except pw.InputError as exc:
        assert exc.argument == "capacities" and "short" in str(exc)
        assert caps.sum() < w.sum()
        return
    assert cells.total_cost == pytest.approx(squared_transport(points, sites, caps, w), rel=1e-9, abs=1e-9)
    assert_cells_hold(points, sites, caps, cells)
    assert cells.load.sum() == pytest.approx(w.sum(), rel=1e-12)


def test_gis_form_labels_sites_and_rows():
    gpd = pytest.importorskip("geopandas")
    from placewise import gis

    points, sites, caps, w = instance(5, n=30, m=3)
    sf = gpd.GeoDataFrame({"room": caps}, index=["a", "b", "c"], geometry=gpd.points_from_xy(*sites.T))
    df = gpd.GeoDataFrame({"w": w}, geometry=gpd.points_from_xy(*points.T))
    plan = gis.capacity_cells(df, sf, "room", "w", planar=True)
    cells = pw.capacity_cells(points, sites, caps, w)
    assert plan.demand["site"].tolist() == list(np.array(["a", "b", "c"])[cells.assignment])
    np.testing.assert_allclose(plan.sites["load"], caps, rtol=1e-9)
    assert plan.summary["cost_u2"].iloc[0] == pytest.approx(cells.total_cost)
    with pytest.raises(pw.InputError, match="short"):
        gis.capacity_cells(df, sf, caps / 2, "w", planar=True)
