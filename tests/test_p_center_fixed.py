"""The p-center beside fixed existing sites (the conditional p-center): placewise.p_center
with ``fixed=``, its candidates form, gis and the command line.

Outside references, named beside each check: exhaustive search over every assignment of the
points to the new sites or the fixed ones, with each cluster's smallest enclosing circle from
the textbook two- and three-point characterisation; scipy.optimize.milp (HiGHS) on the
textbook p-center integer program with the fixed candidates open; scipy.spatial cdist and
cKDTree for every distance; closed forms.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
import scipy.optimize
import scipy.sparse
import scipy.spatial
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

import placewise as pw
from interrupting import Enough, check_progress_reports, stop_at_first_report
from test_discrete import milp_p_center
from test_multi import enclosing_radius_brute_force


def to_nearest(points: np.ndarray, sites: np.ndarray) -> np.ndarray:
    """Distance of every point to its nearest site (scipy.spatial.distance.cdist)."""
    return scipy.spatial.distance.cdist(points, sites).min(axis=1)


def conditional_brute_force(points: np.ndarray, fixed: np.ndarray, p: int) -> float:
    """Exhaustive search (unit weights): every assignment of each point to one of p new sites
    or to the fixed ones; a new cluster costs its smallest enclosing circle (two- and
    three-point circles, independent of the library), a point left to the fixed sites its
    cdist distance to the nearest; the least largest cost."""
    n = len(points)
    by_fixed = to_nearest(points, fixed)
    radius = {0: 0.0}
    for mask in range(1, 1 << n):
        radius[mask] = enclosing_radius_brute_force(points[[i for i in range(n) if mask >> i & 1]])
    best = np.inf
    for labels in itertools.product(range(p + 1), repeat=n):
        worst = max([by_fixed[i] for i in range(n) if labels[i] == p], default=0.0)
        for part in range(p):
            worst = max(worst, radius[sum(1 << i for i in range(n) if labels[i] == part)])
        best = min(best, worst)
    return float(best)


SQUARE = np.array([[0.0, 0.0], [2.0, 0.0], [0.0, 2.0], [2.0, 2.0]])


# ------------------------------------------------------------------ outside references

@pytest.mark.parametrize("seed", range(5))
@pytest.mark.parametrize("p", [1, 2])
def test_tiny_instances_match_exhaustive_search(seed: int, p: int) -> None:
    rng = np.random.default_rng(300 + seed)
    pts = rng.uniform(0, 10, size=(6, 2))
    fixed = rng.uniform(0, 10, size=(1 + seed % 2, 2))
    plan = pw.p_center(pts, p, fixed=fixed)
    assert plan.optimal and plan.converged
    # Exhaustive search over assignments, circles from two- and three-point characterisation.
    assert plan.weighted_radius == pytest.approx(conditional_brute_force(pts, fixed, p), rel=1e-9)
    # The objective of the reported sites, new and fixed (scipy cdist).
    assert plan.weighted_radius == pytest.approx(float(to_nearest(pts, np.vstack([plan.sites, fixed])).max()),
                                                 rel=1e-12)


@pytest.mark.parametrize("seed", range(3))
def test_candidates_with_fixed_match_milp(seed: int) -> None:
    rng = np.random.default_rng(40 + seed)
    pts, cands = rng.uniform(0, 100, (25, 2)), rng.uniform(0, 100, (12, 2))
    w = rng.integers(1, 5, 25).astype(float)
    fixed = [3, 7]
    chosen = pw.p_center(pts, 2, w, candidates=cands, fixed=fixed)
    costs = scipy.spatial.distance.cdist(pts, cands)
    best = milp_p_center(costs, w, 2, fixed=tuple(fixed))  # scipy.optimize.milp (HiGHS)
    assert float(chosen.weighted_worst) == pytest.approx(best, rel=1e-9)
    assert float(chosen.relative_gap) == 0.0
    assert set(fixed) <= set(chosen.open.tolist()) and len(chosen.open) == 4


def test_fixed_site_at_a_cluster_centre_sends_new_sites_to_the_others() -> None:
    # Closed form: three 2 x 2 squares far apart, an existing site at the first one's centre;
    # the two new sites go to the other two centres, every corner sqrt(2) from its site.
    pts = np.vstack([SQUARE, SQUARE + [40, 0], SQUARE + [80, 0]])
    plan = pw.p_center(pts, 2, fixed=[[1, 1]])
    assert plan.weighted_radius == pytest.approx(np.sqrt(2), rel=1e-12)
    np.testing.assert_allclose(sorted(plan.sites.tolist()), [[41, 1], [81, 1]], atol=1e-9)
    assert plan.count.tolist() == [4, 4, 4]
    frame = plan.sites_frame()
    assert frame["fixed"].tolist() == [False, False, True]
    np.testing.assert_array_equal(frame[["x", "y"]].to_numpy()[2], [1, 1])


def test_weighted_closed_form_on_a_line() -> None:
    # Points at 0 (weight 1), 6 (weight 1) and 10 (weight 3), an existing site at 0.
    plan = pw.p_center([[0, 0], [10, 0], [6, 0]], 1, [1, 3, 1], fixed=[[0, 0]])
    # Closed form: the site between 6 (w 1) and 10 (w 3) where 1 * (x - 6) = 3 * (10 - x),
    # x = 9, value 3, against the point at 6 left to the fixed site (6): 3 wins.
    assert plan.weighted_radius == pytest.approx(3.0, rel=1e-12)
    np.testing.assert_allclose(plan.sites, [[9, 0]], atol=1e-12)


# ------------------------------------------------------------------ properties

coords = st.floats(-100, 100, allow_nan=False, allow_infinity=False)


@settings(max_examples=40, deadline=None)
@given(arrays(np.float64, st.tuples(st.integers(3, 8), st.just(2)), elements=coords),
       arrays(np.float64, st.tuples(st.integers(1, 3), st.just(2)), elements=coords),
       st.integers(1, 2), st.data())
def test_property_bounds_of_the_conditional_plan(pts: np.ndarray, fixed: np.ndarray, p: int,
                                                 data: st.DataObject) -> None:
    w = data.draw(arrays(np.float64, (len(pts),), elements=st.floats(0.5, 3.0)))
    if len(np.unique(pts, axis=0)) < p:
        return
    plan = pw.p_center(pts, p, w, fixed=fixed)
    np.testing.assert_array_equal(plan.fixed, fixed)  # the fixed sites never move
    assert plan.sites.shape == (p, 2) and np.isfinite(plan.sites).all()
    scale = max(1.0, float(np.abs(np.vstack([pts, fixed])).max())) * 3.0
    # The objective of the reported sites (scipy cdist over new and fixed).
    own = float(np.max(w * to_nearest(pts, np.vstack([plan.sites, fixed]))))
    assert plan.weighted_radius == pytest.approx(own, rel=1e-9, abs=1e-12 * scale)
    # Tiny instances are exact: never above the plain p-center nor the fixed sites alone.
    assert plan.optimal
    alone = pw.p_center(pts, p, w).weighted_radius
    assert plan.weighted_radius <= alone * (1 + 1e-9) + 1e-12 * scale
    assert plan.weighted_radius <= float(np.max(w * to_nearest(pts, fixed))) * (1 + 1e-12) + 1e-12 * scale
    # Fixed sites far beyond every point serve nobody better than new ones: the plain value.
    far = pw.p_center(pts, p, w, fixed=fixed + 1e6)
    assert far.weighted_radius == pytest.approx(alone, rel=1e-9, abs=1e-12 * scale)


def test_same_input_same_plan_and_a_time_limit_keeps_a_plan() -> None:
    rng = np.random.default_rng(5)
    pts = rng.uniform(0, 100, (3000, 2))
    fixed = [[0, 0], [100, 100]]
    a, b = pw.p_center(pts, 4, fixed=fixed, effort="fast"), pw.p_center(pts, 4, fixed=fixed, effort="fast")
    np.testing.assert_array_equal(a.sites, b.sites)
    assert a.converged and a.weighted_radius == b.weighted_radius
    cut = pw.p_center(pts, 4, fixed=fixed, time_limit=1e-9)
    assert not cut.converged and not cut.optimal and cut.sites.shape == (4, 2)
    # Whatever the cut, the reported value is its sites' objective (scipy cdist).
    assert cut.weighted_radius == pytest.approx(float(to_nearest(pts, np.vstack([cut.sites, fixed])).max()),
                                                rel=1e-12)


def test_progress_counts_the_search_and_a_raising_callable_stops_it() -> None:
    rng = np.random.default_rng(6)
    pts = rng.uniform(0, 100, (20_000, 2))
    fixed = [[0, 0], [50, 50]]
    check_progress_reports(lambda progress: pw.p_center(pts, 5, fixed=fixed, effort="fast", progress=progress))
    # The callable's exception cancels the watch the threshold search polls, and reaches the caller.
    with pytest.raises(Enough):
        pw.p_center(pts, 5, fixed=fixed, progress=stop_at_first_report)


def test_points_all_on_fixed_sites() -> None:
    pts = [[0, 0], [5, 0], [5, 0], [9, 9]]
    plan = pw.p_center(pts, 2, fixed=[[0, 0], [5, 0], [9, 9]])
    assert plan.weighted_radius == 0.0 and plan.optimal
    assert plan.sites.shape == (2, 2) and np.isfinite(plan.sites).all()


# ------------------------------------------------------------------ hostile input

def test_hostile_fixed() -> None:
    pts = np.vstack([SQUARE, SQUARE + [20, 0]])
    with pytest.raises(pw.InputError) as caught:
        pw.p_center(pts, 1, fixed=[[0, 0], [np.nan, 1]])
    assert caught.value.argument == "fixed" and caught.value.row == 1
    with pytest.raises(pw.InputError) as caught:
        pw.p_center(pts, 1, fixed=[[0, 0, 0]])
    assert caught.value.argument == "fixed"
    # An empty array is the same as none.
    none, empty = pw.p_center(pts, 2), pw.p_center(pts, 2, fixed=np.empty((0, 2)))
    np.testing.assert_array_equal(none.sites, empty.sites)
    assert empty.fixed.shape == (0, 2) and len(empty.load) == 2
    # Duplicate fixed sites serve as one (the first of them takes the demand).
    once = pw.p_center(pts, 1, fixed=[[1, 1]])
    twice = pw.p_center(pts, 1, fixed=[[1, 1], [1, 1]])
    np.testing.assert_array_equal(once.sites, twice.sites)
    assert twice.count.tolist() == [4, 4, 0]
    with pytest.raises(pw.InputError, match="fixed_groups is given without groups") as caught:
        pw.p_center(pts, 1, fixed=[[0, 0]], fixed_groups=[0])
    assert caught.value.argument == "fixed_groups"


# ------------------------------------------------------------------ groups

def test_grouped_fixed_sites_serve_only_their_group() -> None:
    pts = np.vstack([SQUARE, SQUARE + 50.0])
    groups = np.array([1] * 4 + [2] * 4)
    # The fixed site at group 2's square centre belongs to group 1: group 2 may not use it.
    plans = pw.p_center(pts, 1, groups=groups, fixed=[[51, 51], [1, 1]], fixed_groups=[1, 2])
    one, two = plans[1], plans[2]
    np.testing.assert_array_equal(one.fixed, [[51, 51]])
    np.testing.assert_array_equal(two.fixed, [[1, 1]])
    # Closed form: each square's new site at its own centre; corners sqrt(2) away.
    np.testing.assert_allclose(one.sites, [[1, 1]], atol=1e-9)
    np.testing.assert_allclose(two.sites, [[51, 51]], atol=1e-9)
    assert one.count.tolist() == [4, 0] and two.count.tolist() == [4, 0]
    assert plans.sites_frame()["fixed"].tolist() == [False, True, False, True]
    np.testing.assert_allclose(plans.weighted_radius, [np.sqrt(2)] * 2, rtol=1e-12)
    alone = pw.p_center(pts[4:], 1, fixed=[[1, 1]])
    np.testing.assert_array_equal(two.sites, alone.sites)
    with pytest.raises(pw.InputError, match="fixed_groups must be given") as caught:
        pw.p_center(pts, 1, groups=groups, fixed=[[0.0, 0.0]])
    assert caught.value.argument == "fixed_groups"
    # A bad fixed site is named by its row in ``fixed``, before the groups split them.
    with pytest.raises(pw.InputError) as caught:
        pw.p_center(pts, 1, groups=groups, fixed=[[0, 0], [np.inf, 0]], fixed_groups=[1, 2])
    assert caught.value.argument == "fixed" and caught.value.row == 1
    with pytest.raises(pw.InputError, match=r"fixed_groups: must hold the group label of every fixed site \(1\)"):
        pw.p_center(pts, 1, groups=groups, fixed=[[0, 0]], fixed_groups=[1, 2])
    # An empty fixed array needs no labels and changes nothing.
    np.testing.assert_array_equal(pw.p_center(pts, 1, groups=groups, fixed=np.empty((0, 2))).sites,
                                  pw.p_center(pts, 1, groups=groups).sites)


# ------------------------------------------------------------------ gis and the command line

def test_gis_p_center_with_fixed_sites() -> None:
    gpd = pytest.importorskip("geopandas")
    from placewise import gis

    homes = gpd.GeoSeries(gpd.points_from_xy(*np.vstack([SQUARE, SQUARE + [40, 0], SQUARE + [80, 0]]).T))
    existing = gpd.GeoDataFrame({"name": ["old"]}, geometry=gpd.points_from_xy([1], [1]), index=["old"])
    plan = gis.p_center(homes, 2, fixed=existing, planar=True)
    assert plan.sites["fixed"].tolist() == [False, False, True]
    # Closed form as above: corners sqrt(2) from their site.
    assert float(plan.summary["weighted_radius_u"].iloc[0]) == pytest.approx(np.sqrt(2), rel=1e-12)
    site_xy = plan.sites[["x", "y"]].to_numpy()
    d, i = scipy.spatial.cKDTree(site_xy).query(np.column_stack([homes.x, homes.y]))  # scipy
    np.testing.assert_allclose(plan.demand["distance_u"], d, rtol=1e-12, atol=1e-12)
    assert plan.demand["site"].tolist() == plan.sites.index[i].tolist()
    # Grouped: each existing site serves its own group only.
    frame = gpd.GeoDataFrame({"g": ["a"] * 8 + ["b"] * 4}, geometry=homes.values)
    old = gpd.GeoDataFrame({"g": ["a"]}, geometry=gpd.points_from_xy([1], [1]))
    grouped = gis.p_center(frame, 1, by="g", fixed=old, planar=True)
    assert grouped.sites.groupby("g")["fixed"].sum().tolist() == [1, 0]
    np.testing.assert_allclose(grouped.summary["weighted_radius_u"], [np.sqrt(2)] * 2, rtol=1e-12)


def test_cli_p_center_with_fixed(tmp_path, capsys) -> None:
    pd = pytest.importorskip("pandas")
    pytest.importorskip("geopandas")
    from placewise.cli import main

    pts = np.vstack([SQUARE, SQUARE + [40, 0], SQUARE + [80, 0]]) * 100 + [500_000, 6_600_000]
    pd.DataFrame({"east": pts[:, 0], "north": pts[:, 1]}).to_csv(tmp_path / "homes.csv", index=False)
    pd.DataFrame({"east": [500_100.0], "north": [6_600_100.0]}).to_csv(tmp_path / "old.csv", index=False)
    common = ["--x", "east", "--y", "north", "--crs", "EPSG:32632"]
    code = main(["p-center", str(tmp_path / "homes.csv"), *common, "-p", "2", "--fixed", str(tmp_path / "old.csv"),
                 "-o", str(tmp_path / "sites.csv"), "--summary", str(tmp_path / "summary.csv")])
    err = capsys.readouterr().err
    assert code == 0, err
    sites, summary = pd.read_csv(tmp_path / "sites.csv"), pd.read_csv(tmp_path / "summary.csv")
    assert sites["fixed"].tolist() == [False, False, True]
    # Closed form: every corner 100 * sqrt(2) m from its site.
    assert float(summary["weighted_radius_m"].iloc[0]) == pytest.approx(100 * np.sqrt(2), rel=1e-9)
    np.testing.assert_allclose(sorted(sites["east"][:2]), [504_100, 508_100], rtol=0, atol=1e-6)
