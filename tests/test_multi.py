"""Tests of the continuous p-median and p-center (placewise.p_median, placewise.p_center)."""

from __future__ import annotations

import itertools
import pickle
import typing
from pathlib import Path

import numpy as np
import pytest
import scipy.optimize
import scipy.spatial
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

import placewise as pw
from hostile import AWKWARD_POINTS, BAD_POINTS, BAD_WEIGHTS
from placewise.multi import CenterPlans, MedianPlans

DATA = Path(__file__).resolve().parent / "data" / "p654"


def p654() -> tuple[np.ndarray, dict[int, float]]:
    """TSPLIB p654 (Reinelt 1991) with the best-known multisource Weber objectives of
    Brimberg, Hansen, Mladenović and Taillard (2000); see data/p654/README.md."""
    points = np.loadtxt(DATA / "points.txt")[:, :2]
    best = {int(p): float(v) for p, v in np.loadtxt(DATA / "best_known.txt")}
    return points, best


def nearest(points: np.ndarray, sites: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Reference allocation: scipy.spatial.distance.cdist, then the nearest column."""
    d = scipy.spatial.distance.cdist(points, sites)
    return d.min(axis=1), d


def median_cost(points: np.ndarray, sites: np.ndarray, weights: np.ndarray | None = None) -> float:
    dmin, _ = nearest(points, sites)
    return float(np.sum(dmin if weights is None else weights * dmin))


def scipy_weber_cost(points: np.ndarray, weights: np.ndarray) -> float:
    """Reference single-site optimum: scipy.optimize.minimize (Nelder–Mead, then Powell) on
    the Fermat–Weber objective, in a local frame of unit size (so the tolerances are relative)."""
    origin = points.mean(axis=0)
    size = float(np.abs(points - origin).max()) or 1.0
    local = (points - origin) / size
    f = lambda x: float(np.sum(weights * np.hypot(local[:, 0] - x[0], local[:, 1] - x[1])))  # noqa: E731
    start = np.average(local, axis=0, weights=weights)
    simplex = {"xatol": 1e-12, "fatol": 1e-14, "maxiter": 20_000}
    a = scipy.optimize.minimize(f, start, method="Nelder-Mead", options=simplex)
    b = scipy.optimize.minimize(f, a.x, method="Powell", options={"xtol": 1e-12, "ftol": 1e-15})
    return min(float(a.fun), float(b.fun)) * size


def clustered(n: int, k: int, seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    centres = rng.uniform(0, 100, size=(k, 2))
    return centres[rng.integers(0, k, size=n)] + rng.normal(scale=3.0, size=(n, 2))


# --- the published benchmark -------------------------------------------------------------

@pytest.fixture(scope="module")
def p654_plans() -> dict[int, pw.MedianPlan]:
    points, best = p654()
    return {p: pw.p_median(points, p) for p in sorted(best)}


def test_p654_within_a_tenth_of_a_percent_of_best_known(p654_plans: dict[int, pw.MedianPlan]) -> None:
    # Brimberg, Hansen, Mladenović & Taillard (2000), Operations Research 48(3), best-known
    # objectives for p = 2..10 on TSPLIB p654 (tests/data/p654/best_known.txt).
    points, best = p654()
    assert len(points) == 654
    for p, known in best.items():
        plan = p654_plans[p]
        assert plan.cost <= known * 1.001, (p, plan.cost, known)
        # and the reported cost is the objective of the reported sites (scipy cdist)
        assert median_cost(points, plan.sites) == pytest.approx(plan.cost, rel=1e-12)


def test_p654_cost_never_rises_with_p(p654_plans: dict[int, pw.MedianPlan]) -> None:
    # The optimum is non-increasing in p (adding a site can only shorten trips).
    costs = [p654_plans[p].cost for p in sorted(p654_plans)]
    assert all(b <= a for a, b in zip(costs, costs[1:])), costs


def test_p654_plans_meet_both_local_optimality_conditions(p654_plans: dict[int, pw.MedianPlan]) -> None:
    # Cooper (1964): at a local optimum every point goes to its nearest site and every site is
    # the Fermat–Weber point of its cluster (checked against scipy.optimize.minimize).
    points, _ = p654()
    for p in (3, 7):
        plan = p654_plans[p]
        dmin, d = nearest(points, plan.sites)
        np.testing.assert_allclose(d[np.arange(len(points)), plan.assignment], dmin, rtol=1e-12)
        for j in range(p):
            cluster = points[plan.assignment == j]
            here = float(np.sum(np.hypot(*(cluster - plan.sites[j]).T)))
            assert here <= scipy_weber_cost(cluster, np.ones(len(cluster))) * (1 + 1e-9)


# --- p-median facts --------------------------------------------------------------------------

def test_one_site_equals_weber_point() -> None:
    # p = 1 is the Fermat–Weber problem by definition.
    rng = np.random.default_rng(3)
    pts = rng.normal(size=(200, 2)) * [50, 20] + [500_000, 6_000_000]
    w = rng.lognormal(size=200)
    plan = pw.p_median(pts, 1, w)
    single = pw.weber_point(pts, w)
    np.testing.assert_array_equal(plan.sites[0], single.location)
    assert plan.cost == pytest.approx(single.cost, rel=1e-12)
    assert plan.load[0] == pytest.approx(w.sum(), rel=1e-12)
    assert np.all(plan.assignment == 0)


def test_cost_never_rises_with_p_on_clusters() -> None:
    # The optimum is non-increasing in p; here up to p = 8 on a clustered cloud.
    pts = clustered(300, 6, 4)
    costs = [pw.p_median(pts, p).cost for p in range(1, 9)]
    assert all(b <= a * (1 + 1e-12) for a, b in zip(costs, costs[1:])), costs


def test_as_many_sites_as_distinct_points_costs_zero() -> None:
    # p = n: a site on every point, nothing to travel.
    pts = np.array([[0.0, 0.0], [3.0, 1.0], [3.0, 1.0], [-2.0, 5.0], [7.0, 7.0]])
    plan = pw.p_median(pts, 4)
    assert plan.cost == 0.0
    assert median_cost(pts, plan.sites) == 0.0
    np.testing.assert_array_equal(np.sort(plan.load), [1.0, 1.0, 1.0, 2.0])


def test_two_far_clusters_get_a_site_each() -> None:
    # Closed form: collinear pairs {0, 1} and {10, 11} -> any point between each pair, cost 2.
    plan = pw.p_median([[0, 0], [1, 0], [10, 0], [11, 0]], 2)
    assert plan.cost == pytest.approx(2.0, rel=1e-12)
    np.testing.assert_array_equal(plan.load, [2.0, 2.0])


def test_fixed_sites_stay_serve_demand_and_count_in_cost() -> None:
    pts = clustered(240, 4, 5)
    fixed = np.array([[0.0, 0.0], [100.0, 100.0]])
    plan = pw.p_median(pts, 3, fixed=fixed)
    assert plan.sites.shape == (3, 2)
    assert plan.load.shape == (5,)
    all_sites = np.vstack([plan.sites, fixed])
    dmin, d = nearest(pts, all_sites)
    np.testing.assert_allclose(d[np.arange(len(pts)), plan.assignment], dmin, rtol=1e-12)
    assert plan.cost == pytest.approx(float(dmin.sum()), rel=1e-12)
    # fixed sites only help: no worse than the same search without them plus nothing
    assert plan.cost <= pw.p_median(pts, 3).cost * (1 + 1e-12) + 1e-9
    np.testing.assert_array_equal(plan.fixed, fixed)


def test_fixed_site_on_a_cluster_frees_the_new_sites() -> None:
    # Two tight clusters; an existing site at one: the single new site goes to the other.
    a = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [1.0, 1.0]])
    pts = np.vstack([a, a + 50.0])
    plan = pw.p_median(pts, 1, fixed=[[0.5, 0.5]])
    assert np.all(np.abs(plan.sites[0] - 50.5) < 1e-6)
    # Closed form: the square's centre is its Fermat–Weber point; 8 corners at sqrt(2)/2.
    assert plan.cost == pytest.approx(8 * np.sqrt(0.5), rel=1e-9)


def test_same_seed_same_answer_and_seed_is_used() -> None:
    pts = clustered(400, 8, 6)
    a = pw.p_median(pts, 6, seed=17)
    b = pw.p_median(pts, 6, seed=17)
    np.testing.assert_array_equal(a.sites, b.sites)
    np.testing.assert_array_equal(a.assignment, b.assignment)
    assert a.cost == b.cost and a.iterations == b.iterations


def set_partitions(n: int, parts: int):
    """Every split of range(n) into exactly ``parts`` non-empty unlabelled blocks (restricted
    growth strings: item i joins a block already opened or opens the next one)."""

    def grow(i: int, labels: list[int], opened: int):
        if n - i < parts - opened:
            return
        if i == n:
            yield list(labels)
            return
        for b in range(opened + (opened < parts)):
            labels.append(b)
            yield from grow(i + 1, labels, max(opened, b + 1))
            labels.pop()

    yield from grow(0, [], 0)


def p_median_by_enumeration(points: np.ndarray, weights: np.ndarray, p: int, cost_of: dict[int, float]) -> float:
    """Independent reference for tiny sets: the optimum over every split of the points into
    p clusters, each served by its own Fermat–Weber point from scipy.optimize.minimize
    (an optimal plan's nearest-site allocation is such a split, and every split's cost is
    achieved by placing each cluster's site at its Weber point). ``cost_of`` caches the
    Weber cost of each cluster (a bit mask of its points) across calls on the same points."""
    best = np.inf
    for labels in set_partitions(len(points), p):
        labels = np.asarray(labels)
        total = 0.0
        for b in range(p):
            mask = int(np.sum(1 << np.flatnonzero(labels == b)))
            if mask not in cost_of:
                members = np.flatnonzero(labels == b)
                cost_of[mask] = scipy_weber_cost(points[members], weights[members]) if len(members) > 1 else 0.0
            total += cost_of[mask]
        best = min(best, total)
    return float(best)


@pytest.mark.parametrize("seed", range(3))
def test_every_effort_finds_the_optimum_of_tiny_instances(seed: int) -> None:
    # Reference: exhaustive enumeration of the splits into p clusters with scipy.optimize
    # Weber points (p_median_by_enumeration above). On 8 weighted points every effort must
    # reach the global optimum, not just a local one.
    rng = np.random.default_rng(300 + seed)
    pts = np.vstack([rng.normal(size=(4, 2)), rng.normal(size=(4, 2)) + [6.0, 1.0]]) * [10.0, 4.0]
    w = rng.uniform(0.5, 3.0, size=len(pts))
    cost_of: dict[int, float] = {}
    for p in (2, 3):
        reference = p_median_by_enumeration(pts, w, p, cost_of)
        for effort in ("fast", "normal", "thorough"):
            plan = pw.p_median(pts, p, w, effort=effort)
            assert plan.cost == pytest.approx(reference, rel=1e-7), (p, effort, plan.cost, reference)
            assert plan.cost == pytest.approx(median_cost(pts, plan.sites, w), rel=1e-12)


def test_set_partitions_count_is_the_stirling_number() -> None:
    # Stirling numbers of the second kind: S(5, 2) = 15, S(5, 3) = 25, S(6, 3) = 90 (closed
    # form S(n, 2) = 2**(n-1) - 1; the others from the recurrence S(n, k) = k S(n-1, k) + S(n-1, k-1)).
    assert sum(1 for _ in set_partitions(5, 2)) == 15
    assert sum(1 for _ in set_partitions(5, 3)) == 25
    assert sum(1 for _ in set_partitions(6, 3)) == 90


def test_weights_move_sites_toward_heavy_demand() -> None:
    # Majority theorem (Witzgall 1964), per cluster: a point holding half a cluster's weight
    # is that cluster's Fermat–Weber point.
    pts = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [30.0, 0.0], [31.0, 0.0], [30.0, 1.0]])
    w = np.array([5.0, 1.0, 1.0, 1.0, 1.0, 6.0])
    plan = pw.p_median(pts, 2, w)
    assert {tuple(s) for s in plan.sites} == {(0.0, 0.0), (30.0, 1.0)}


# --- p-center ------------------------------------------------------------------------------

def enclosing_radius_brute_force(points: np.ndarray) -> float:
    """Smallest enclosing circle by the textbook characterisation: it is fixed by two points
    (a diameter) or three (the circumcircle), so the least candidate containing all points."""
    if len(points) == 1:
        return 0.0
    best = np.inf
    cands = []
    for i, j in itertools.combinations(range(len(points)), 2):
        cands.append(((points[i] + points[j]) / 2, np.linalg.norm(points[i] - points[j]) / 2))
    for i, j, k in itertools.combinations(range(len(points)), 3):
        a, b, c = points[i], points[j], points[k]
        d = 2 * (a[0] * (b[1] - c[1]) + b[0] * (c[1] - a[1]) + c[0] * (a[1] - b[1]))
        if abs(d) < 1e-12:
            continue
        ux = ((a @ a) * (b[1] - c[1]) + (b @ b) * (c[1] - a[1]) + (c @ c) * (a[1] - b[1])) / d
        uy = ((a @ a) * (c[0] - b[0]) + (b @ b) * (a[0] - c[0]) + (c @ c) * (b[0] - a[0])) / d
        centre = np.array([ux, uy])
        cands.append((centre, np.linalg.norm(a - centre)))
    for centre, r in cands:
        if r < best and np.all(np.linalg.norm(points - centre, axis=1) <= r * (1 + 1e-9) + 1e-12):
            best = r
    return float(best)


def p_center_brute_force(points: np.ndarray, p: int) -> float:
    """Exhaustive search over every split of the points into p labelled parts, the largest
    enclosing circle of the parts minimised."""
    n = len(points)
    radius = {}
    for mask in range(1, 1 << n):
        radius[mask] = enclosing_radius_brute_force(points[[i for i in range(n) if mask >> i & 1]])
    best = np.inf
    for labels in itertools.product(range(p), repeat=n):
        worst = 0.0
        for part in range(p):
            mask = sum(1 << i for i in range(n) if labels[i] == part)
            if mask:
                worst = max(worst, radius[mask])
        best = min(best, worst)
    return float(best)


def test_p_center_one_site_equals_minimax_point() -> None:
    # p = 1 is the weighted 1-center by definition.
    rng = np.random.default_rng(8)
    pts = rng.normal(size=(100, 2))
    w = rng.uniform(0.5, 3.0, size=100)
    plan = pw.p_center(pts, 1, w)
    single = pw.minimax_point(pts, w)
    np.testing.assert_array_equal(plan.sites[0], single.location)
    assert plan.weighted_radius == pytest.approx(single.weighted_radius, rel=1e-12)
    assert plan.optimal


@pytest.mark.parametrize("seed", range(4))
@pytest.mark.parametrize("p", [2, 3])
def test_p_center_tiny_instances_match_exhaustive_search(seed: int, p: int) -> None:
    pts = np.random.default_rng(100 + seed).uniform(0, 10, size=(7, 2))
    plan = pw.p_center(pts, p)
    assert plan.optimal
    assert plan.weighted_radius == pytest.approx(p_center_brute_force(pts, p), rel=1e-9)
    # the radius is the objective of the sites (scipy cdist)
    dmin, _ = nearest(pts, plan.sites)
    assert plan.weighted_radius == pytest.approx(float(dmin.max()), rel=1e-12)


def test_p_center_closed_form_two_squares() -> None:
    # Each 2 x 2 square's smallest circle has radius sqrt(2) (half the diagonal).
    sq = np.array([[0, 0], [2, 0], [0, 2], [2, 2]], dtype=float)
    plan = pw.p_center(np.vstack([sq, sq + [20, 0]]), 2)
    assert plan.weighted_radius == pytest.approx(np.sqrt(2.0), rel=1e-12)


def test_p_center_weighted_radius_and_nearest_assignment() -> None:
    pts = clustered(500, 5, 9)
    w = np.random.default_rng(9).uniform(1, 4, size=500)
    plan = pw.p_center(pts, 5, w)
    dmin, d = nearest(pts, plan.sites)
    assert plan.weighted_radius == pytest.approx(float(np.max(w * dmin)), rel=1e-12)
    np.testing.assert_allclose(d[np.arange(500), plan.assignment], dmin, rtol=1e-12)
    # Gonzalez (1985): farthest-first is within a factor 2 of the optimum; our answer is at
    # least as good as a plain farthest-first start from the heaviest point.
    sites = [pts[np.argmax(w)]]
    for _ in range(4):
        sites.append(pts[np.argmax(w * nearest(pts, np.array(sites))[0])])
    assert plan.weighted_radius <= float(np.max(w * nearest(pts, np.array(sites))[0]))


def test_p_center_radius_never_rises_with_p() -> None:
    pts = clustered(200, 4, 10)
    radii = [pw.p_center(pts, p).weighted_radius for p in range(1, 7)]
    assert all(b <= a * (1 + 1e-12) for a, b in zip(radii, radii[1:])), radii


def test_p_center_same_seed_same_answer() -> None:
    pts = clustered(300, 6, 11)
    a, b = pw.p_center(pts, 4, seed=5), pw.p_center(pts, 4, seed=5)
    np.testing.assert_array_equal(a.sites, b.sites)
    assert a.weighted_radius == b.weighted_radius


@given(seed=st.integers(0, 2**32), p=st.integers(2, 6), clusters=st.integers(1, 8))
@settings(max_examples=12, deadline=None)
def test_property_more_effort_never_worsens_the_plan(seed: int, p: int, clusters: int) -> None:
    # Costs and radii recomputed with scipy cdist from the returned sites: a higher effort
    # starts from / keeps the lower effort's answer, so its objective is never larger.
    pts = clustered(240, clusters, seed % 1000) + np.random.default_rng(seed).normal(scale=0.01, size=(240, 2))
    w = np.random.default_rng(seed + 1).uniform(0.5, 3.0, size=len(pts))
    costs = []
    radii = []
    for effort in ("fast", "normal", "thorough"):
        median = pw.p_median(pts, p, w, seed=seed, effort=effort)
        center = pw.p_center(pts, p, w, seed=seed, effort=effort)
        assert median.cost == pytest.approx(median_cost(pts, median.sites, w), rel=1e-12)
        assert center.weighted_radius == pytest.approx(float(np.max(w * nearest(pts, center.sites)[0])), rel=1e-12)
        costs.append(median.cost)
        radii.append(center.weighted_radius)
    assert costs[1] <= costs[0] * (1 + 1e-12) and costs[2] <= costs[1] * (1 + 1e-12), costs
    assert radii[1] <= radii[0] * (1 + 1e-12) and radii[2] <= radii[1] * (1 + 1e-12), radii


@pytest.mark.parametrize("seed", [0, 1])
def test_more_effort_never_worsens_the_plan_on_sampled_inputs(seed: int) -> None:
    # Past 20,000 points the p-median searches a sample and the p-center a working set; the
    # objectives are recomputed with scipy's cKDTree from the returned sites.
    rng = np.random.default_rng(40 + seed)
    pts = rng.uniform(0, 1000, size=(30_000, 2))
    w = rng.uniform(0.5, 2.0, size=len(pts))
    tree_cost = lambda sites: scipy.spatial.cKDTree(sites).query(pts)[0]  # noqa: E731
    fast, normal = (pw.p_median(pts, 6, w, seed=seed, effort=e) for e in ("fast", "normal"))
    assert fast.cost == pytest.approx(float(w @ tree_cost(fast.sites)), rel=1e-9)
    assert normal.cost <= fast.cost * (1 + 1e-12)
    fast_c, normal_c = (pw.p_center(pts, 6, w, seed=seed, effort=e) for e in ("fast", "normal"))
    assert fast_c.weighted_radius == pytest.approx(float(np.max(w * tree_cost(fast_c.sites))), rel=1e-12)
    assert normal_c.weighted_radius <= fast_c.weighted_radius * (1 + 1e-12)
    # Gonzalez (1985): a farthest-first start is within a factor 2 of the optimum, and
    # half the smallest gap between p + 1 farthest-first points is a lower bound on it.
    chosen = [int(np.argmax(w))]
    reach = w * np.hypot(*(pts - pts[chosen[0]]).T)
    for _ in range(6):
        chosen.append(int(np.argmax(reach)))
        reach = np.minimum(reach, w * np.hypot(*(pts - pts[chosen[-1]]).T))
    assert fast_c.weighted_radius <= float(np.max(w * tree_cost(pts[chosen[:6]])))


def test_p_center_refuses_an_unknown_effort() -> None:
    with pytest.raises(pw.InputError, match=r'^effort must be "fast", "normal" or "thorough"; got .most.$') as bad:
        pw.p_center(clustered(20, 2, 13), 2, effort="most")  # type: ignore[arg-type]
    assert bad.value.argument == "effort"


# --- bad and hostile input -----------------------------------------------------------------

SOLVERS = {"p_median": pw.p_median, "p_center": pw.p_center}


@pytest.mark.parametrize("solver", SOLVERS)
@pytest.mark.parametrize("name, points", BAD_POINTS, ids=[n for n, _ in BAD_POINTS])
def test_bad_points_raise_input_error(solver: str, name: str, points: object) -> None:
    with pytest.raises(pw.InputError):
        SOLVERS[solver](points, 1)


@pytest.mark.parametrize("solver", SOLVERS)
@pytest.mark.parametrize("name, make", BAD_WEIGHTS, ids=[n for n, _ in BAD_WEIGHTS])
def test_bad_weights_raise_input_error(solver: str, name: str, make) -> None:
    pts = clustered(20, 2, 12)
    with pytest.raises(pw.InputError):
        SOLVERS[solver](pts, 2, make(len(pts)))


@pytest.mark.parametrize("solver", SOLVERS)
def test_bad_p_raises_input_error(solver: str) -> None:
    pts = np.array([[0.0, 0.0], [1.0, 0.0], [1.0, 0.0]])
    for p in (0, -3):
        with pytest.raises(pw.InputError, match=rf"^p must be an integer >= 1; got {p}$"):
            SOLVERS[solver](pts, p)
    with pytest.raises(pw.DegenerateInputError, match="at least 3 distinct points"):
        SOLVERS[solver](pts, 3)
    # zero-weight points do not count as places needing a site
    with pytest.raises(pw.DegenerateInputError):
        SOLVERS[solver](pts, 2, [1.0, 0.0, 0.0])


def test_bad_fixed_and_effort() -> None:
    pts = clustered(20, 2, 13)
    with pytest.raises(pw.InputError, match=r"fixed\[1\]") as bad_row:
        pw.p_median(pts, 1, fixed=[[0.0, 0.0], [np.nan, 1.0]])
    assert (bad_row.value.argument, bad_row.value.row) == ("fixed", 1)
    with pytest.raises(pw.InputError, match="fixed must have shape"):
        pw.p_median(pts, 1, fixed=[[0.0, 0.0, 1.0]])
    with pytest.raises(pw.InputError, match=r'^effort must be "fast", "normal" or "thorough"; got .extreme.$') as bad:
        pw.p_median(pts, 1, effort="extreme")  # type: ignore[arg-type]
    assert bad.value.argument == "effort"


@pytest.mark.parametrize("solver", SOLVERS)
@pytest.mark.parametrize(
    "p, message",
    [
        # Regression: 2**70 raised OverflowError and 2.0 a bare TypeError; numpy scalars
        # printed as np.int64(...) / np.float64(...).
        (2**70, "p must be an integer >= 1; got 1180591620717411303424"),
        (2.0, "p must be an integer; got 2.0 (float)"),
        (np.float64(2.0), "p must be an integer; got 2.0 (float64)"),
        (np.int64(0), "p must be an integer >= 1; got 0"),
        (True, "p must be an integer; got True (bool)"),
        ("2", "p must be an integer; got '2' (str)"),
    ],
)
def test_p_argument_errors_name_p_with_plain_numbers(solver: str, p: object, message: str) -> None:
    pts = clustered(20, 2, 15)
    for groups in (None, np.zeros(20, dtype=int)):
        extra = {} if groups is None else {"groups": groups}
        with pytest.raises(pw.InputError) as caught:
            SOLVERS[solver](pts, p, **extra)
        assert str(caught.value) == message
        assert caught.value.argument == "p"


@pytest.mark.parametrize("solver", SOLVERS)
@pytest.mark.parametrize(
    "seed, message",
    [
        (-1, "seed must be an integer from 0 to 2**64 - 1; got -1"),
        (2**64, "seed must be an integer from 0 to 2**64 - 1; got 18446744073709551616"),
        (1.5, "seed must be an integer from 0 to 2**64 - 1; got 1.5"),
        (np.float64(3.0), "seed must be an integer from 0 to 2**64 - 1; got 3.0"),
    ],
)
def test_seed_argument_errors(solver: str, seed: object, message: str) -> None:
    with pytest.raises(pw.InputError) as caught:
        SOLVERS[solver](clustered(20, 2, 16), 2, seed=seed)
    assert str(caught.value) == message
    assert caught.value.argument == "seed"


def test_largest_seed_and_numpy_integers_are_accepted() -> None:
    pts = clustered(60, 3, 17)
    a = pw.p_median(pts, 3, seed=np.uint64(2**64 - 1))
    b = pw.p_median(pts, 3, seed=2**64 - 1)
    np.testing.assert_array_equal(a.sites, b.sites)
    assert pw.p_center(pts, np.int32(2)).sites.shape == (2, 2)


def test_errors_keyword_is_validated() -> None:
    with pytest.raises(pw.InputError, match='errors must be "raise" or "skip"') as caught:
        pw.p_median(clustered(20, 2, 18), 1, groups=np.zeros(20, dtype=int), errors="ignore")  # type: ignore[arg-type]
    assert caught.value.argument == "errors"


@pytest.mark.parametrize("solver", SOLVERS)
@pytest.mark.parametrize("name, points", AWKWARD_POINTS, ids=[n for n, _ in AWKWARD_POINTS])
def test_awkward_points_give_consistent_plans(solver: str, name: str, points: object) -> None:
    pts = np.asarray(points, dtype=float)
    distinct = len(np.unique(pts, axis=0))
    p = min(3, distinct)
    plan = SOLVERS[solver](points, p)
    assert plan.sites.shape == (p, 2) and np.all(np.isfinite(plan.sites))
    dmin, d = nearest(pts, plan.sites)
    np.testing.assert_allclose(d[np.arange(len(pts)), plan.assignment], dmin, rtol=1e-9, atol=0)
    scale = max(float(np.abs(pts).max()), 1e-300)
    if solver == "p_median":
        assert plan.cost == pytest.approx(float(dmin.sum()), rel=1e-9, abs=1e-12 * scale)
        if p == distinct:
            assert plan.cost == 0.0
    else:
        assert plan.weighted_radius == pytest.approx(float(dmin.max()), rel=1e-9, abs=1e-12 * scale)
    with pytest.raises(pw.DegenerateInputError):
        SOLVERS[solver](points, distinct + 1)


def test_results_are_frozen_read_only_and_readable() -> None:
    plan = pw.p_median(clustered(30, 3, 14), 3)
    with pytest.raises(ValueError):
        plan.sites[0, 0] = 1.0
    with pytest.raises(AttributeError):
        plan.cost = 0.0  # type: ignore[misc]
    assert repr(plan).startswith("MedianPlan(sites=[[") and "points" not in repr(plan)
    assert repr(pw.p_center(clustered(30, 3, 14), 2)).startswith("CenterPlan(")


# --- tables -------------------------------------------------------------------------------------

def test_median_tables_match_attributes_and_numpy_distances() -> None:
    # Reference distances: numpy on the plan's own sites (new then fixed).
    rng = np.random.default_rng(40)
    pts = clustered(120, 4, 40)
    w = rng.uniform(0.0, 3.0, size=len(pts))
    fixed = np.array([[0.0, 0.0], [100.0, 0.0]])
    plan = pw.p_median(pts, 3, w, fixed=fixed)
    every = np.vstack([plan.sites, fixed])
    by_numpy = np.hypot(*(pts - every[plan.assignment]).T)
    np.testing.assert_allclose(plan.distance, by_numpy, rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(plan.distance, nearest(pts, every)[0], rtol=1e-12, atol=1e-12)

    frame = plan.to_frame()
    assert list(frame.columns) == ["assignment", "distance_u"]
    np.testing.assert_array_equal(frame["assignment"], plan.assignment)
    np.testing.assert_allclose(frame["distance_u"], by_numpy, rtol=1e-12, atol=1e-12)

    sites = plan.sites_frame()
    assert list(sites.columns) == ["x", "y", "load", "points", "fixed"]
    np.testing.assert_array_equal(sites[["x", "y"]].to_numpy(), every)
    np.testing.assert_array_equal(sites["fixed"], [False] * 3 + [True] * 2)
    np.testing.assert_allclose(sites["load"], np.bincount(plan.assignment, weights=w, minlength=5), rtol=1e-12)
    np.testing.assert_array_equal(sites["points"], np.bincount(plan.assignment, minlength=5))

    summary = plan.summary()
    assert list(summary.columns) == ["cost_u", "sites", "load", "points", "iterations"]
    row = summary.iloc[0]
    assert row["cost_u"] == plan.cost == pytest.approx(float(np.sum(w * by_numpy)), rel=1e-12)
    assert (row["sites"], row["points"], row["iterations"]) == (5, 120, plan.iterations)
    assert row["load"] == plan.total_load == pytest.approx(float(w.sum()), rel=1e-12)


def test_center_tables_match_attributes_and_numpy_distances() -> None:
    rng = np.random.default_rng(41)
    pts = clustered(150, 5, 41)
    w = rng.uniform(0.5, 4.0, size=len(pts))
    plan = pw.p_center(pts, 4, w)
    by_numpy = np.hypot(*(pts - plan.sites[plan.assignment]).T)
    np.testing.assert_allclose(plan.distance, by_numpy, rtol=1e-12, atol=1e-12)
    assert plan.weighted_radius == pytest.approx(float(np.max(w * by_numpy)), rel=1e-12)
    assert plan.radius == pytest.approx(float(np.max(by_numpy)), rel=1e-12)

    frame = plan.to_frame()
    np.testing.assert_array_equal(frame["assignment"], plan.assignment)
    np.testing.assert_allclose(frame["distance_u"], by_numpy, rtol=1e-12, atol=1e-12)
    sites = plan.sites_frame()
    np.testing.assert_array_equal(sites[["x", "y"]].to_numpy(), plan.sites)
    assert not sites["fixed"].any()
    np.testing.assert_allclose(sites["load"], np.bincount(plan.assignment, weights=w, minlength=4), rtol=1e-12)
    np.testing.assert_array_equal(sites["points"], np.bincount(plan.assignment, minlength=4))
    summary = plan.summary()
    assert list(summary.columns) == [
        "weighted_radius_u", "radius_u", "optimal", "sites", "load", "points", "iterations",
    ]
    assert summary["weighted_radius_u"].iloc[0] == plan.weighted_radius
    assert summary["radius_u"].iloc[0] == plan.radius
    assert summary["load"].iloc[0] == pytest.approx(float(w.sum()), rel=1e-12)


def test_geodataframes_hold_demand_points_and_sites() -> None:
    import shapely

    pts = clustered(40, 2, 42)
    plan = pw.p_median(pts, 2, fixed=[[50.0, 50.0]])
    demand = plan.to_geodataframe(crs="EPSG:3857")
    assert demand.crs == "EPSG:3857"
    np.testing.assert_array_equal(shapely.get_coordinates(demand.geometry.values), pts)
    sites = plan.sites_geodataframe()
    np.testing.assert_array_equal(shapely.get_coordinates(sites.geometry.values), np.vstack([plan.sites, plan.fixed]))
    # Columns never shadow GeoDataFrame members; a unit of our own is carried into names.
    import dataclasses

    assert "distance_m" in dataclasses.replace(plan, unit="m").to_frame().columns
    for frame in (demand, sites, plan.summary()):
        assert not {"distance", "area", "length", "index", "crs"} & set(frame.columns)


def test_degenerate_one_point_plans() -> None:
    # One point: the site is the point itself (closed form), nothing to travel.
    for solver in SOLVERS.values():
        plan = solver([[3.0, -1.0]], 1)
        np.testing.assert_array_equal(plan.sites, [[3.0, -1.0]])
        np.testing.assert_array_equal(plan.to_frame()["distance_u"], [0.0])
        assert plan.sites_frame()["points"].tolist() == [1]


# --- grouped -------------------------------------------------------------------------------------

def _groups_of(n: int, seed: int) -> np.ndarray:
    return np.random.default_rng(seed).choice([-4, 2, 9], size=n)


@pytest.mark.parametrize("solver", SOLVERS)
def test_grouped_plans_equal_separate_calls(solver: str) -> None:
    pts = clustered(150, 6, 50)
    w = np.random.default_rng(50).uniform(0.5, 2.0, size=len(pts))
    groups = _groups_of(len(pts), 50)
    plans = SOLVERS[solver](pts, 3, w, groups=groups, seed=4)
    assert isinstance(plans, MedianPlans if solver == "p_median" else CenterPlans)
    assert plans.labels.tolist() == [-4, 2, 9] and len(plans) == 3
    for label, plan in zip(plans.labels, plans):
        members = np.flatnonzero(groups == label)
        alone = SOLVERS[solver](pts[members], 3, w[members], seed=4)
        np.testing.assert_array_equal(plan.sites, alone.sites)
        np.testing.assert_array_equal(plan.assignment, alone.assignment)
        np.testing.assert_array_equal(plan.distance, alone.distance)
        np.testing.assert_array_equal(plan.load, alone.load)
        np.testing.assert_array_equal(plan.count, alone.count)
        np.testing.assert_array_equal(plan.points, pts[members])
        if solver == "p_median":
            assert plan.cost == alone.cost
        else:
            for name in ("weighted_radius", "radius", "optimal"):
                assert getattr(plan, name) == getattr(alone, name)


def test_grouped_tables_follow_input_rows_and_sites_frame_rows() -> None:
    pts = clustered(90, 4, 51)
    groups = _groups_of(len(pts), 51)
    plans = pw.p_median(pts, 2, groups=groups)
    frame = plans.to_frame()
    sites = plans.sites_frame()
    # One row per input point, in input order; `assignment` is the serving row of sites_frame.
    np.testing.assert_array_equal(frame["group"], groups)
    xy = sites[["x", "y"]].to_numpy()[frame["assignment"].to_numpy()]
    np.testing.assert_allclose(frame["distance_u"], np.hypot(*(pts - xy).T), rtol=1e-12, atol=1e-12)
    np.testing.assert_array_equal(sites["group"].to_numpy()[frame["assignment"].to_numpy()], groups)
    summary = plans.summary()
    assert summary["group"].tolist() == [-4, 2, 9]
    np.testing.assert_array_equal(summary["points"], [np.sum(groups == g) for g in (-4, 2, 9)])
    np.testing.assert_array_equal(summary["sites"], [2, 2, 2])
    np.testing.assert_allclose(
        summary["cost_u"], [float(frame["distance_u"][groups == g].sum()) for g in (-4, 2, 9)], rtol=1e-12
    )


def test_grouped_fixed_sites_serve_only_their_group() -> None:
    a = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [1.0, 1.0]])
    pts = np.vstack([a, a + 50.0])
    groups = np.array([1] * 4 + [2] * 4)
    # The fixed site at group 2's square centre belongs to group 1: group 2 may not use it.
    plans = pw.p_median(pts, 1, groups=groups, fixed=[[50.5, 50.5], [0.5, 0.5]], fixed_groups=[1, 2])
    one, two = plans[1], plans[2]
    np.testing.assert_array_equal(one.fixed, [[50.5, 50.5]])
    np.testing.assert_array_equal(two.fixed, [[0.5, 0.5]])
    # Closed form: each square's own new site at its centre; corners sqrt(2)/2 away.
    assert one.cost == pytest.approx(4 * np.sqrt(0.5), rel=1e-9)
    np.testing.assert_allclose(one.sites, [[0.5, 0.5]], atol=1e-6)
    assert one.count.tolist() == [4, 0] and two.count.tolist() == [4, 0]
    sites = plans.sites_frame()
    assert sites["fixed"].tolist() == [False, True, False, True]
    alone = pw.p_median(pts[4:], 1, fixed=[[0.5, 0.5]])
    np.testing.assert_array_equal(two.sites, alone.sites)


def test_grouped_fixed_sites_need_their_groups() -> None:
    pts = clustered(20, 2, 52)
    groups = np.repeat([0, 1], 10)
    with pytest.raises(pw.InputError, match="fixed_groups must be given") as caught:
        pw.p_median(pts, 1, groups=groups, fixed=[[0.0, 0.0]])
    assert caught.value.argument == "fixed_groups"
    message = r"fixed_groups: must hold the group label of every fixed site \(1\); got 2"
    with pytest.raises(pw.InputError, match=message):
        pw.p_median(pts, 1, groups=groups, fixed=[[0.0, 0.0]], fixed_groups=[0, 1])
    with pytest.raises(pw.InputError, match="fixed_groups is given without groups") as caught:
        pw.p_median(pts, 1, fixed=[[0.0, 0.0]], fixed_groups=[0])
    assert caught.value.argument == "fixed_groups"
    # A fixed site of a group without points serves nobody.
    plans = pw.p_median(pts, 1, groups=groups, fixed=[[0.0, 0.0]], fixed_groups=[7])
    assert not plans.fixed.any()


@pytest.mark.parametrize("solver", SOLVERS)
def test_errors_skip_keeps_failing_groups_with_their_problem(solver: str) -> None:
    pts = clustered(30, 3, 53)
    groups = np.repeat([1, 3, 5], 10)
    w = np.ones(30)
    w[10:19] = 0.0  # group 3: one point of positive weight, too few for p = 2
    pts[25] = [np.nan, 0.0]  # group 5: a NaN in input row 25
    with pytest.raises(pw.DegenerateInputError) as first:
        SOLVERS[solver](pts, 2, w, groups=groups)
    assert (first.value.group, str(first.value)) == (
        3, "group 3: points must hold at least 2 distinct points with positive weight (one per site); got 1"
    )
    plans = SOLVERS[solver](pts, 2, w, groups=groups, errors="skip")
    assert plans.skipped.tolist() == [False, True, True]
    assert plans.problem[2] == "group 5: points[25] has a NaN coordinate; every coordinate must be finite"
    assert 1 in plans and len(plans) == 3
    with pytest.raises(pw.InputError, match="group 3 was skipped"):
        plans[3]
    # Skipped groups' points stay in the point table, without a site.
    frame = plans.to_frame()
    assert len(frame) == 30
    assert (frame["assignment"][10:] == -1).all() and frame["distance_u"][10:].isna().all()
    alone = SOLVERS[solver](pts[:10], 2, w[:10])
    np.testing.assert_array_equal(frame["distance_u"][:10], alone.distance)
    # Each skipped group keeps one row in the sites and summary tables.
    sites = plans.sites_frame()
    assert sites["group"].tolist() == [1, 1, 3, 5]
    assert sites["problem"].isna().tolist() == [True, True, False, False]
    summary = plans.summary()
    assert summary["problem"].isna().tolist() == [True, False, False]
    assert summary["sites"].tolist() == [2, 0, 0]


def test_skipped_group_before_solved_ones_shifts_site_rows() -> None:
    # Regression guard for the sites-frame row numbering with a skipped group in the middle.
    pts = clustered(30, 3, 54)
    groups = np.repeat([1, 3, 5], 10)
    pts[12] = [np.inf, 0.0]
    plans = pw.p_center(pts, 2, groups=groups, errors="skip")
    frame, sites = plans.to_frame(), plans.sites_frame()
    rows = frame["assignment"].to_numpy()
    served = rows >= 0
    np.testing.assert_array_equal(sites["group"].to_numpy()[rows[served]], groups[served])
    xy = sites[["x", "y"]].to_numpy()[rows[served]]
    np.testing.assert_allclose(frame["distance_u"][served], np.hypot(*(pts[served] - xy).T), rtol=1e-12)


# --- properties ------------------------------------------------------------------------------

coords = st.floats(-1e3, 1e3, allow_nan=False, allow_infinity=False)
clouds = st.integers(1, 30).flatmap(lambda n: arrays(np.float64, (n, 2), elements=coords))


def draw_weights(data: st.DataObject, n: int) -> np.ndarray:
    """Non-negative weights with at least one positive."""
    w = data.draw(arrays(np.float64, (n,), elements=st.floats(0.0, 10.0)))
    if not np.any(w > 0):
        w[0] = 1.0
    return w


@given(clouds, st.integers(1, 4), st.data())
def test_property_median_plan_is_consistent_and_beats_one_site(pts: np.ndarray, p: int, data: st.DataObject) -> None:
    w = draw_weights(data, len(pts))
    distinct = len(np.unique(pts[w > 0], axis=0))
    if p > distinct:
        with pytest.raises(pw.DegenerateInputError):
            pw.p_median(pts, p, w)
        return
    plan = pw.p_median(pts, p, w, effort="fast")
    dmin, d = nearest(pts, plan.sites)
    scale = max(1.0, float(np.abs(pts).max())) * float(w.sum())
    assert plan.cost == pytest.approx(float(np.sum(w * dmin)), rel=1e-9, abs=1e-12 * scale)
    np.testing.assert_allclose(d[np.arange(len(pts)), plan.assignment], dmin, rtol=1e-9, atol=1e-12 * scale)
    assert np.sum(plan.load) == pytest.approx(float(w.sum()), rel=1e-12)
    # more sites never cost more than the single Fermat–Weber site
    assert plan.cost <= pw.weber_point(pts, w).cost * (1 + 1e-9) + 1e-12 * scale


@given(clouds, st.integers(1, 4), st.data())
def test_property_center_plan_is_consistent(pts: np.ndarray, p: int, data: st.DataObject) -> None:
    w = draw_weights(data, len(pts))
    distinct = len(np.unique(pts[w > 0], axis=0))
    if p > distinct:
        with pytest.raises(pw.DegenerateInputError):
            pw.p_center(pts, p, w)
        return
    plan = pw.p_center(pts, p, w)
    dmin, _ = nearest(pts, plan.sites)
    scale = max(1.0, float(np.abs(pts).max())) * float(w.max())
    assert plan.weighted_radius == pytest.approx(float(np.max(w * dmin)), rel=1e-9, abs=1e-12 * scale)
    assert plan.weighted_radius <= pw.minimax_point(pts, w).weighted_radius * (1 + 1e-9) + 1e-12 * scale
    if distinct <= 10:
        assert plan.optimal


@given(clouds, st.randoms(use_true_random=False))
def test_property_p_center_exact_is_order_independent(pts: np.ndarray, rnd) -> None:
    # Tiny instances are solved exactly, so any order of the same points gives the same radius.
    pts = pts[:8]
    p = min(2, len(np.unique(pts, axis=0)))
    order = list(range(len(pts)))
    rnd.shuffle(order)
    a, b = pw.p_center(pts, p), pw.p_center(pts[order], p)
    scale = max(1.0, float(np.abs(pts).max()))
    assert b.weighted_radius == pytest.approx(a.weighted_radius, rel=1e-9, abs=1e-12 * scale)


# --- the package's public names ------------------------------------------------------------

@pytest.mark.parametrize("name", pw.multi.__all__)
def test_public_name_belongs_to_the_package(name: str) -> None:
    # Defined in the package's private modules, named by the package (as when it was one
    # module): reprs, pickles and the reference keep "placewise.multi".
    obj = getattr(pw.multi, name)
    assert obj.__module__ == "placewise.multi"
    assert pickle.loads(pickle.dumps(obj)) is obj
    if isinstance(obj, type):
        # Field annotations resolve in the module the class names (typing.get_type_hints).
        assert np.ndarray in typing.get_type_hints(obj).values()


def test_package_exports_every_public_object_it_defines() -> None:
    defined = {name for name, obj in vars(pw.multi).items()
               if not name.startswith("_") and str(getattr(obj, "__module__", "")).startswith("placewise.multi")}
    assert defined == set(pw.multi.__all__)


def test_pickled_result_names_the_package() -> None:
    result = pw.p_median([[0, 0], [1, 0], [10, 0], [11, 0]], 2)
    data = pickle.dumps(result)
    assert b"placewise.multi" in data and b"placewise.multi._" not in data
    back = pickle.loads(data)
    assert type(back) is pw.MedianPlan and np.array_equal(back.sites, result.sites)


def test_points_whose_extent_passes_the_float_range_are_answered():
    # Finite points at -f64::MAX and 1e300: their extent overflows to infinity, the working
    # frame stayed unscaled, and the p-median stopped with "placewise internal error: index
    # out of bounds" (a point with no nearest site). Closed forms on a line of three points
    # (unit weights): p = 2 leaves the two nearest (0 and 1e300) to one site, cost 1e300;
    # the p-center puts a site midway between them (radius 5e299) or serves them from one
    # end at the other's distance, whichever is smaller: 5e299.
    top = np.finfo(np.float64).max
    pts = np.array([[1e300, 0.0], [-top, 0.0], [0.0, 0.0]])
    median = pw.p_median(pts, 2)
    assert median.cost == pytest.approx(1e300, rel=1e-12)
    assert -top in median.sites[:, 0]
    center = pw.p_center(pts, 2)
    assert center.weighted_radius == pytest.approx(5e299, rel=1e-9)
    # Both ends near ±1.7e308 (their difference 3.4e308 is beyond the range): cost 1.7e308.
    wide = np.array([[1.7e308, 0.0], [-1.7e308, 0.0], [0.0, 0.0]])
    assert pw.p_median(wide, 2).cost == pytest.approx(1.7e308, rel=1e-12)
    assert pw.p_center(wide, 2).weighted_radius == pytest.approx(8.5e307, rel=1e-9)
