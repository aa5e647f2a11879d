"""Tests of the discrete family (placewise.discrete): models on a demand × candidate cost matrix.

Outside references: scipy.optimize.milp (HiGHS) on the textbook integer programs of each
model, brute-force enumeration of every choice on tiny instances, scipy.spatial.distance.cdist
for the Euclidean costs, numpy for the allocation of a given plan, and closed forms.
"""

from __future__ import annotations

import itertools
import math
from fractions import Fraction
from typing import Any

import numpy as np
import pytest
import scipy.optimize
import scipy.sparse
import scipy.spatial

import placewise as pw
from placewise import discrete


def instance(seed: int, n: int, m: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Random demand points, candidates, weights, and their straight-line costs (cdist)."""
    rng = np.random.default_rng(seed)
    points = rng.uniform(0, 100, (n, 2))
    candidates = rng.uniform(0, 100, (m, 2))
    weights = rng.integers(1, 10, n).astype(float)
    return points, candidates, weights, scipy.spatial.distance.cdist(points, candidates)


def solve(c: np.ndarray, constraints: list, integrality: np.ndarray, bounds: scipy.optimize.Bounds) -> float:
    res = scipy.optimize.milp(c, constraints=constraints, integrality=integrality, bounds=bounds,
                              options={"time_limit": 120})
    assert res.status == 0, res.message
    return float(res.fun)


def milp_p_median(costs: np.ndarray, w: np.ndarray, p: int, fixed: tuple[int, ...] = (),
                  allowed: np.ndarray | None = None, relaxed: bool = False) -> float:
    """The textbook p-median integer program (ReVelle & Swain 1970), solved by HiGHS:
    min Σ wᵢcᵢⱼxᵢⱼ, Σⱼ xᵢⱼ = 1, xᵢⱼ <= yⱼ, Σ yⱼ = p + |fixed|, y binary; xᵢⱼ = 0 where the
    pair is not ``allowed``. ``relaxed``: its linear relaxation (0 <= y <= 1) instead, whose value
    the Lagrangian relaxation of the assignment constraints reaches at best (Geoffrion 1974)."""
    n, m = costs.shape
    nx = n * m
    c = np.concatenate([(w[:, None] * costs).ravel(), np.zeros(m)])
    assign = scipy.sparse.hstack([scipy.sparse.kron(scipy.sparse.eye(n), np.ones((1, m))),
                                  scipy.sparse.csr_matrix((n, m))])
    link = scipy.sparse.hstack([scipy.sparse.eye(nx), -scipy.sparse.kron(np.ones((n, 1)), scipy.sparse.eye(m))])
    count = np.concatenate([np.zeros(nx), np.ones(m)])[None, :]
    lower = np.zeros(nx + m)
    lower[nx + np.asarray(fixed, dtype=int)] = 1
    upper = np.ones(nx + m)
    if allowed is not None:
        upper[:nx] = allowed.ravel()
    cons = [scipy.optimize.LinearConstraint(assign, 1, 1), scipy.optimize.LinearConstraint(link, -np.inf, 0),
            scipy.optimize.LinearConstraint(count, p + len(fixed), p + len(fixed))]
    integrality = np.concatenate([np.zeros(nx), np.zeros(m) if relaxed else np.ones(m)])
    return solve(c, cons, integrality, scipy.optimize.Bounds(lower, upper))


def milp_p_center(costs: np.ndarray, w: np.ndarray, p: int, allowed: np.ndarray | None = None,
                  fixed: tuple[int, ...] = ()) -> float:
    """The textbook p-center integer program (Daskin 1995): min z, Σⱼ xᵢⱼ = 1, xᵢⱼ <= yⱼ,
    Σ yⱼ = p + |fixed|, yⱼ = 1 for j fixed, wᵢ Σⱼ cᵢⱼxᵢⱼ <= z."""
    n, m = costs.shape
    nx = n * m
    c = np.zeros(nx + m + 1)
    c[-1] = 1
    z = scipy.sparse.csr_matrix((n, 1))
    assign = scipy.sparse.hstack([scipy.sparse.kron(scipy.sparse.eye(n), np.ones((1, m))),
                                  scipy.sparse.csr_matrix((n, m)), z])
    link = scipy.sparse.hstack([scipy.sparse.eye(nx), -scipy.sparse.kron(np.ones((n, 1)), scipy.sparse.eye(m)),
                                scipy.sparse.csr_matrix((nx, 1))])
    rows = np.repeat(np.arange(n), m)
    worst = scipy.sparse.hstack([scipy.sparse.csr_matrix(((w[:, None] * costs).ravel(), (rows, np.arange(nx))),
                                                         shape=(n, nx)),
                                 scipy.sparse.csr_matrix((n, m)), -np.ones((n, 1))])
    count = np.concatenate([np.zeros(nx), np.ones(m), [0]])[None, :]
    cons = [scipy.optimize.LinearConstraint(assign, 1, 1), scipy.optimize.LinearConstraint(link, -np.inf, 0),
            scipy.optimize.LinearConstraint(worst, -np.inf, 0),
            scipy.optimize.LinearConstraint(count, p + len(fixed), p + len(fixed))]
    integrality = np.concatenate([np.zeros(nx), np.ones(m), [0]])
    upper = np.concatenate([np.ones(nx) if allowed is None else allowed.ravel().astype(float), np.ones(m), [np.inf]])
    lower = np.zeros(nx + m + 1)
    lower[nx + np.asarray(fixed, dtype=int)] = 1
    return solve(c, cons, integrality, scipy.optimize.Bounds(lower, upper))


def milp_cover_all(costs: np.ndarray, radius: float, allowed: np.ndarray | None = None) -> float:
    """Location set covering (Toregas et al. 1971): min Σ yⱼ, Σ_{cᵢⱼ <= r} yⱼ >= 1."""
    m = costs.shape[1]
    a = ((costs <= radius) & (True if allowed is None else allowed)).astype(float)
    return solve(np.ones(m), [scipy.optimize.LinearConstraint(a, 1, np.inf)], np.ones(m),
                 scipy.optimize.Bounds(0, 1))


def milp_cover_most(costs: np.ndarray, w: np.ndarray, p: int, radius: float,
                    allowed: np.ndarray | None = None) -> float:
    """Maximal covering (Church & ReVelle 1974): max Σ wᵢzᵢ, zᵢ <= Σ_{cᵢⱼ <= r} yⱼ, Σ yⱼ = p."""
    n, m = costs.shape
    c = np.concatenate([np.zeros(m), -w])
    reach = (costs <= radius) & (True if allowed is None else allowed)
    cover = np.hstack([-reach.astype(float), np.eye(n)])
    count = np.concatenate([np.ones(m), np.zeros(n)])[None, :]
    cons = [scipy.optimize.LinearConstraint(cover, -np.inf, 0), scipy.optimize.LinearConstraint(count, p, p)]
    integrality = np.concatenate([np.ones(m), np.zeros(n)])
    return -solve(c, cons, integrality, scipy.optimize.Bounds(0, 1))


# ------------------------------------------------------------------ against scipy milp


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_p_median_against_milp(seed):
    _, _, w, costs = instance(seed, 100, 30)
    for p in (3, 8):
        plan = discrete.p_median(costs, p, w)
        best = milp_p_median(costs, w, p)  # scipy.optimize.milp (HiGHS)
        assert plan.lower_bound <= best * (1 + 1e-7)
        assert plan.total_cost >= best * (1 - 1e-9)
        # Small instances are solved to proven optimality (the branch and bound closes what the
        # root bound leaves): milp's optimum, with a gap of at most the proof's tolerance.
        assert plan.total_cost == pytest.approx(best, rel=1e-9)
        assert plan.relative_gap <= 1e-9
        assert plan.relative_gap == pytest.approx((plan.total_cost - plan.lower_bound) / plan.total_cost)


@pytest.mark.parametrize("seed", [15, 17])
def test_p_median_branch_and_bound_proves_what_the_root_leaves_open(seed):
    # Seeds whose root Lagrangian bound stays 0.24 % (15) and 0.66 % (17) below the optimum
    # (measured): the relaxation's own gap, which only the tree search closes.
    _, _, w, costs = instance(seed, 150, 40)
    best = milp_p_median(costs, w, 6)  # scipy.optimize.milp (HiGHS)
    root = discrete.p_median(costs, 6, w, branch_iterations=0)
    assert root.branch_nodes == 0 and root.relative_gap > 1e-3
    assert root.lower_bound <= best * (1 + 1e-7)
    plan = discrete.p_median(costs, 6, w)
    assert plan.branch_nodes > 0
    assert plan.total_cost == pytest.approx(best, rel=1e-9)
    assert best * (1 - 1e-9) <= plan.lower_bound <= best * (1 + 1e-7)
    assert plan.relative_gap <= 1e-9
    # A budget too small to finish still returns a proven bound, between the root's and the optimum.
    short = discrete.p_median(costs, 6, w, branch_iterations=200)
    assert root.lower_bound <= short.lower_bound <= best * (1 + 1e-7)
    with pytest.raises(pw.InputError, match="branch_iterations"):
        discrete.p_median(costs, 6, w, branch_iterations=-1)


def test_p_median_seed_repeats_its_plan_and_other_seeds_explore():
    # Five short searches (5 rounds) from the same greedy start: the seed alone decides the
    # random jumps. The same seed gives the same plan; on this instance other seeds end in
    # other local optima (measured: three distinct costs among four seeds). Every plan is
    # checked against the matrix itself: its cost is Σ w · (cheapest open cost).
    _, _, w, costs = instance(1, 600, 120)
    plans = [discrete.p_median(costs, 20, w, seed=k, search_rounds=5, branch_iterations=0, bound_iterations=0)
             for k in range(4)]
    again = discrete.p_median(costs, 20, w, seed=3, search_rounds=5, branch_iterations=0, bound_iterations=0)
    np.testing.assert_array_equal(again.open, plans[3].open)
    for plan in plans:
        assert plan.total_cost == pytest.approx((w * costs[:, plan.open].min(axis=1)).sum(), rel=1e-12)
    assert len({round(float(plan.total_cost), 6) for plan in plans}) >= 2
    for bad in (-1, 2**64, 1.5):
        with pytest.raises(pw.InputError, match="seed"):
            discrete.p_median(costs, 20, w, seed=bad)
    # The coordinate front-end with candidates hands its seed on (it was ignored before).
    points, candidates, w2, _ = instance(1, 600, 120)
    for k in (0, 1):
        ours = pw.p_median(points, 20, w2, candidates=candidates, seed=k)
        direct = discrete.p_median_planar(points, candidates, 20, w2, seed=k)
        np.testing.assert_array_equal(ours.open, direct.open)


@pytest.mark.parametrize("seed", [4, 6])
def test_p_median_lagrangian_bound_is_close_to_milp(seed):
    # The bound of the Lagrangian relaxation (Beasley 1993) against the optimum HiGHS proves:
    # bound <= optimum <= objective always; on instances of this size the relaxation is close
    # (common practice: Lagrangian gaps of a few tenths of a percent on Euclidean p-median).
    _, _, w, costs = instance(seed, 150, 40)
    plan = discrete.p_median(costs, 6, w, branch_iterations=0)  # the root bound alone
    best = milp_p_median(costs, w, 6)  # scipy.optimize.milp (HiGHS)
    assert plan.lower_bound <= best * (1 + 1e-7) <= plan.total_cost * (1 + 2e-7)
    assert plan.lower_bound >= 0.99 * best
    assert plan.bound_iterations <= 1000



@pytest.mark.parametrize(("seed", "n", "m", "p"), [(21, 150, 40, 5), (22, 200, 40, 8), (23, 250, 50, 10)])
def test_p_median_bound_below_the_linear_relaxation_and_close_to_it(seed, n, m, p):
    # Every value of the Lagrangian function is at most the linear relaxation's optimum
    # (Geoffrion 1974: the subproblem has the integrality property), itself at most the integer
    # optimum: both from HiGHS through scipy.optimize.milp. The deflected subgradient (Camerini,
    # Fratta & Maffioli 1975) must come close to the relaxation's value, not only below it.
    _, _, w, costs = instance(seed, n, m)
    plan = discrete.p_median(costs, p, w)
    relaxation = milp_p_median(costs, w, p, relaxed=True)  # scipy.optimize.milp (HiGHS), no integers
    best = milp_p_median(costs, w, p)  # scipy.optimize.milp (HiGHS)
    assert plan.lower_bound <= relaxation * (1 + 1e-7) <= best * (1 + 2e-7)
    assert plan.lower_bound >= relaxation * (1 - 1e-3)
    assert plan.total_cost >= best * (1 - 1e-9)


@pytest.mark.parametrize("seed", [7, 8])
def test_p_median_search_reaches_milp_optimum_on_a_few_hundred_points(seed):
    # With the neighbourhood search (Hansen & Mladenović 1997) after the interchange, the plan
    # on 250 points x 40 candidates is the optimum HiGHS proves (measured on these seeds), and
    # the Lagrangian bound never exceeds it.
    _, _, w, costs = instance(seed, 250, 40)
    plan = discrete.p_median(costs, 6, w)
    best = milp_p_median(costs, w, 6)  # scipy.optimize.milp (HiGHS)
    assert plan.total_cost == pytest.approx(best, rel=1e-9)
    assert plan.lower_bound <= best * (1 + 1e-7)
    # Without it, the plan is the interchange's local optimum: never better than the optimum.
    assert discrete.p_median(costs, 6, w, search_rounds=0).total_cost >= best * (1 - 1e-9)


def test_p_median_degenerate_inputs_against_brute_force():
    # Brute force over every choice of sites (itertools.combinations) is the reference.
    rng = np.random.default_rng(12)
    costs = rng.integers(0, 4, (14, 7)).astype(float)  # few values: many ties
    w = rng.integers(0, 3, 14).astype(float)  # zero weights among them
    w[0] = 1.0
    for p in range(1, 8):  # up to p = number of candidates
        exact = min((w * costs[:, list(s)].min(axis=1)).sum() for s in itertools.combinations(range(7), p))
        plan = discrete.p_median(costs, p, w)
        assert plan.total_cost == pytest.approx(exact, abs=1e-12)
        assert plan.lower_bound <= exact + 1e-9
        assert len(set(plan.open.tolist())) == p
    # Every cost equal: every plan is optimal and the bound proves it.
    flat = discrete.p_median(np.full((5, 4), 2.0), 2, [1.0, 0.0, 3.0, 0.0, 1.0])
    assert (float(flat.total_cost), float(flat.relative_gap)) == (10.0, 0.0)

def test_p_median_with_fixed_against_milp():
    _, _, w, costs = instance(5, 80, 25)
    plan = discrete.p_median(costs, 3, w, fixed=[4, 17])
    best = milp_p_median(costs, w, 3, fixed=(4, 17))  # scipy.optimize.milp (HiGHS)
    assert {4, 17} <= set(plan.open.tolist()) and len(plan.open) == 5
    assert plan.fixed.sum() == 2
    assert plan.lower_bound <= best * (1 + 1e-7) <= plan.total_cost * (1 + 2e-7)
    assert plan.total_cost <= best * 1.01


@pytest.mark.parametrize("seed", [0, 3])
def test_p_center_against_milp(seed):
    _, _, w, costs = instance(seed, 40, 15)
    for p in (2, 4):
        plan = discrete.p_center(costs, p, w)
        best = milp_p_center(costs, w, p)  # scipy.optimize.milp (HiGHS)
        assert plan.lower_bound <= best * (1 + 1e-7)
        # Small covering trials are settled exactly: equal optimum, zero gap.
        assert plan.weighted_worst == pytest.approx(best, rel=1e-7)
        assert plan.relative_gap == 0.0


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_cover_all_against_milp(seed):
    _, _, w, costs = instance(seed, 100, 30)
    radius = 30.0
    plan = discrete.cover_all(costs, radius, w)
    best = milp_cover_all(costs, radius)  # scipy.optimize.milp (HiGHS)
    assert plan.lower_bound <= best <= plan.chosen
    assert plan.chosen == best  # exact branching closes the gap at this size
    assert plan.covered.all() and plan.covered_share == 1.0
    assert (costs[:, plan.open] <= radius).any(axis=1).all()  # checked with numpy directly


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_cover_all_sites_anywhere_against_milp(seed):
    # 250 uniform points at 2 per unit area, r = 1: the plan of the Lagrangian heuristic
    # against the integer optimum over the same candidates (the finite dominating set of
    # Church 1984, which the result holds).
    n, radius = 250, 1.0
    pts = np.random.default_rng(seed).uniform(0, np.sqrt(n / 2), (n, 2))
    plan = pw.cover_all(pts, radius)
    # Within the radius up to rounding of the distance (the candidates sit 1e-9 inside).
    costs = scipy.spatial.distance.cdist(pts, plan.candidates)
    reach = radius * (1 + 1e-12)
    best = milp_cover_all(costs, reach)  # scipy.optimize.milp (HiGHS)
    assert plan.lower_bound <= best <= plan.chosen
    assert plan.chosen <= best + 1  # stated margin: at most one site above the optimum
    within = costs[:, plan.open] <= reach
    assert within.any(axis=1).all()  # every point covered, checked with numpy directly
    # No open site is redundant: each is the only one within reach of some point.
    alone = within.sum(axis=1) == 1
    assert (within & alone[:, None]).any(axis=0).all()


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_cover_most_against_milp(seed):
    _, _, w, costs = instance(seed, 100, 30)
    for p, radius in ((3, 20.0), (6, 15.0)):
        plan = discrete.cover_most(costs, p, radius, w)
        best = milp_cover_most(costs, w, p, radius)  # scipy.optimize.milp (HiGHS)
        assert plan.upper_bound >= best * (1 - 1e-9)
        assert plan.covered_weight <= best * (1 + 1e-9)
        assert plan.covered_weight >= best * 0.98
        # numpy directly: the weight of points with an open site within the radius.
        assert plan.covered_weight == pytest.approx(w[(costs[:, plan.open] <= radius).any(axis=1)].sum())


# ------------------------------------------------------------------ brute force, closed forms


def test_tiny_instances_against_brute_force():
    # Enumeration of every p-subset with itertools (independent of the kernels).
    for seed in range(5):
        _, _, w, costs = instance(seed, 9, 6)
        for p in (1, 2, 3):
            subsets = [list(s) for s in itertools.combinations(range(6), p)]
            median = min(float((w * costs[:, s].min(axis=1)).sum()) for s in subsets)
            center = min(float((w * costs[:, s].min(axis=1)).max()) for s in subsets)
            most = max(float(w[(costs[:, s] <= 40).any(axis=1)].sum()) for s in subsets)
            assert discrete.p_median(costs, p, w).lower_bound <= median * (1 + 1e-9)
            assert discrete.p_median(costs, p, w).total_cost <= median * 1.02
            assert discrete.p_center(costs, p, w).weighted_worst == pytest.approx(center)
            plan = discrete.cover_most(costs, p, 40, w)
            assert plan.covered_weight <= most + 1e-9 and plan.upper_bound >= most - 1e-9


def test_closed_form_one_site_covers_all():
    # All points within the radius of candidate 2 (it sits at their centre): one site.
    rng = np.random.default_rng(4)
    angle = rng.uniform(0, 2 * np.pi, 50)
    points = np.column_stack([np.cos(angle), np.sin(angle)]) * rng.uniform(0, 1, (50, 1))
    candidates = np.array([[5.0, 5.0], [-3.0, 0.0], [0.0, 0.0]])
    plan = discrete.cover_all_planar(points, candidates, 1.0)
    assert (plan.chosen, plan.lower_bound, plan.open.tolist()) == (1, 1, [2])


@pytest.mark.parametrize("n", [5, 12])
def test_closed_form_line_at_half_spacing(n):
    # Points on a line at spacing s = 3, candidates on the points: radius s/2 needs n sites,
    # radius s needs ceil(n / 3) (each site covers itself and both neighbours).
    points = np.column_stack([3.0 * np.arange(n), np.zeros(n)])
    assert discrete.cover_all_planar(points, points, 1.5).chosen == n
    plan = discrete.cover_all_planar(points, points, 3.0)
    assert plan.chosen == plan.lower_bound == -(-n // 3)


def test_euclidean_costs_match_cdist():
    points, candidates, _, costs = instance(9, 30, 7)
    np.testing.assert_allclose(discrete.euclidean_costs(points, candidates), costs, rtol=1e-15)  # scipy cdist


def test_evaluate_sites_against_numpy():
    _, _, w, costs = instance(2, 60, 12)
    sites = [7, 1, 4]
    got = discrete.evaluate_sites(costs, sites, w, radius=25.0)
    cols = np.sort(sites)
    sub = costs[:, cols]
    # numpy: the cheapest open column (first on ties), its cost, loads and coverage.
    assert got.open.tolist() == cols.tolist()
    np.testing.assert_array_equal(got.assignment, sub.argmin(axis=1))
    np.testing.assert_array_equal(got.cost, sub.min(axis=1))
    np.testing.assert_allclose(got.load, np.bincount(sub.argmin(axis=1), weights=w, minlength=3))
    assert got.total_cost == pytest.approx((w * sub.min(axis=1)).sum())
    assert got.worst_cost == sub.min(axis=1).max()
    np.testing.assert_array_equal(got.covering, (sub <= 25).sum(axis=1))
    assert got.covered_share == pytest.approx(w[(sub <= 25).any(axis=1)].sum() / w.sum())


def test_tables_and_units():
    _, _, w, costs = instance(1, 20, 6)
    plan = discrete.cover_most(costs, 2, 30.0, w, unit="min")
    frame = plan.to_frame()
    assert list(frame.columns) == ["assignment", "candidate", "cost_min", "covered", "covering"]
    np.testing.assert_array_equal(frame["candidate"], plan.open[plan.assignment])
    assert list(plan.sites_frame().columns) == ["candidate", "load", "points", "fixed"]
    summary = discrete.p_median(costs, 2, w, unit="min").summary()
    assert {"cost_min", "lower_bound_min", "relative_gap", "sites"} <= set(summary.columns)
    assert "radius_min" in plan.summary().columns
    assert list(discrete.p_median(costs, 2).to_frame().columns) == ["assignment", "candidate", "cost_u"]
    assert pw.discrete is discrete


def sparse_instance(seed: int, n: int, m: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, Any]:
    """A random instance where each point may use only its 8 nearest candidates: the weights,
    the full costs (cdist), the allowed pairs and the sparse matrix of those pairs only."""
    _, _, w, costs = instance(seed, n, m)
    near = np.argsort(costs, axis=1, kind="stable")[:, :8]
    allowed = np.zeros_like(costs, dtype=bool)
    np.put_along_axis(allowed, near, True, axis=1)
    rows, cols = np.nonzero(allowed)
    return w, costs, allowed, scipy.sparse.coo_array((costs[rows, cols], (rows, cols)), shape=costs.shape)


@pytest.mark.parametrize("seed", [0, 1])
def test_sparse_costs_against_milp(seed):
    w, costs, allowed, sparse = sparse_instance(seed, 80, 25)
    for p in (4, 8):
        plan = discrete.p_median(sparse, p, w)
        best = milp_p_median(costs, w, p, allowed=allowed)  # scipy.optimize.milp (HiGHS), forbidden pairs at 0
        assert plan.lower_bound <= best * (1 + 1e-7) and plan.total_cost >= best * (1 - 1e-9)
        assert plan.total_cost <= best * 1.01
        # Every point is served through an allowed pair (numpy directly).
        assert allowed[np.arange(80), plan.open[plan.assignment]].all()
        most = discrete.cover_most(sparse, p, 15.0, w)
        best = milp_cover_most(costs, w, p, 15.0, allowed=allowed)  # scipy.optimize.milp (HiGHS)
        assert most.upper_bound >= best * (1 - 1e-9) and best * 0.98 <= most.covered_weight <= best * (1 + 1e-9)
    center = discrete.p_center(sparse.tocsr()[:40], 6, w[:40])
    best = milp_p_center(costs[:40], w[:40], 6, allowed=allowed[:40])  # scipy.optimize.milp (HiGHS)
    assert center.lower_bound <= best * (1 + 1e-7)
    assert center.weighted_worst == pytest.approx(best, rel=1e-7)
    radius = float(costs.min(axis=1).max()) + 5.0  # every point has an allowed candidate within it
    cover = discrete.cover_all(sparse, radius, w)
    assert cover.chosen == milp_cover_all(costs, radius, allowed=allowed)  # scipy.optimize.milp (HiGHS)


def test_sparse_and_dense_agree_when_every_pair_is_stored():
    _, _, w, costs = instance(3, 60, 12)
    rows, cols = np.nonzero(np.ones_like(costs, dtype=bool))
    sparse = scipy.sparse.csr_array((costs[rows, cols], (rows, cols)), shape=costs.shape)
    for model in (lambda c: discrete.p_median(c, 3, w), lambda c: discrete.p_center(c, 3, w),
                  lambda c: discrete.cover_most(c, 3, 20.0, w), lambda c: discrete.cover_all(c, 50.0, w)):
        np.testing.assert_array_equal(model(costs).open, model(sparse).open)


def test_sparse_errors_are_named():
    costs = scipy.sparse.coo_array(([1.0, 2.0, 3.0], ([0, 0, 2], [0, 1, 1])), shape=(3, 2))
    with pytest.raises(pw.InputError, match=r"points\[1\] has no allowed candidate") as caught:
        discrete.p_median(costs, 1)
    assert caught.value.row == 1
    twice = scipy.sparse.coo_array(([1.0, 2.0], ([0, 0], [1, 1])), shape=(1, 2))
    with pytest.raises(pw.InputError, match="stores some pair twice"):
        discrete.p_median(twice, 1)
    # Point 0 may use only candidate 0, point 1 only candidate 1: one site cannot serve both.
    apart = scipy.sparse.coo_array(([1.0, 1.0], ([0, 1], [0, 1])), shape=(2, 2))
    with pytest.raises(pw.InputError, match=r"p: 1 new sites cannot serve every point .* at least 2"):
        discrete.p_median(apart, 1)
    with pytest.raises(pw.InputError, match=r"weights must have one entry per point \(2\); got 3"):
        discrete.cover_most(apart, 1, 1.0, [1, 1, 1])
    with pytest.raises(pw.InputError, match=r"costs\[1, 1\] = -1"):
        discrete.p_median(scipy.sparse.coo_array(([1.0, -1.0], ([0, 1], [0, 1])), shape=(2, 2)), 2)
    # Evaluation: a point no given site may serve is reported, not refused.
    now = discrete.evaluate_sites(apart, [0])
    assert now.assignment.tolist() == [0, -1] and np.isinf(now.cost[1])
    assert now.to_frame()["candidate"].tolist() == [0, -1]


def test_totals_with_an_unserved_point_are_infinite_not_nan():
    # A sparse plan leaving a weighted point without an allowed site: its total and mean cost
    # are the sums of the reported per-point terms, +inf (numpy's sum is the reference), not
    # NaN; a zero-weight unserved point adds nothing.
    apart = scipy.sparse.coo_array(([1.0, 2.0], ([0, 1], [0, 1])), shape=(2, 2))
    for weights in ([1.0, 1.0], [3.0, 0.0]):
        now = discrete.evaluate_sites(apart, [0], weights)
        terms = np.array([w * c if w > 0 else 0.0 for w, c in zip(weights, now.cost)])
        assert now.total_cost == np.sum(terms) and now.mean_cost == np.sum(terms) / np.sum(weights)
        summary = now.summary()
        assert summary["cost_u"].iloc[0] == np.sum(terms) and not summary.isna().any(axis=None)
    # cover_most may leave a point unserved too: its totals are the evaluation's, line by line.
    most = discrete.cover_most(apart, 1, 1.5, [1.0, 1.0])
    again = discrete.evaluate_sites(apart, most.open, [1.0, 1.0], radius=1.5)
    assert most.total_cost == again.total_cost == np.inf
    # A finite weight times a finite cost that overflows: numpy's sum of the terms is +inf.
    with np.errstate(over="ignore"):
        terms = np.array([1e300 * 1e300, 1.0 * 1.0])
    now = discrete.evaluate_sites(np.array([[1e300], [1.0]]), [0], [1e300, 1.0])
    assert now.total_cost == np.sum(terms) == np.inf and now.mean_cost == np.inf


# ------------------------------------------------------------------ coordinates


def test_coordinate_forms_against_cdist_matrix():
    points, candidates, w, costs = instance(6, 120, 20)
    # The same plans from coordinates as from the scipy cdist matrix.
    assert (pw.p_median(points, 4, w, candidates=candidates).open == discrete.p_median(costs, 4, w).open).all()
    assert (pw.p_center(points, 3, w, candidates=candidates).open == discrete.p_center(costs, 3, w).open).all()
    got = pw.cover_most(points, 3, 20.0, w, candidates=candidates, fixed=[5])
    want = discrete.cover_most(costs, 3, 20.0, w, fixed=[5])
    assert got.open.tolist() == want.open.tolist() and got.covered_weight == want.covered_weight
    np.testing.assert_array_equal(got.covering, (costs[:, got.open] <= 20.0).sum(axis=1))  # numpy directly
    assert pw.cover_all(points, 30.0, candidates=candidates).chosen == milp_cover_all(costs, 30.0)  # milp
    np.testing.assert_allclose(got.sites, candidates[got.open])
    now = pw.evaluate_sites(points, candidates[[2, 7]], w, radius=25.0)
    sub = costs[:, [2, 7]]
    assert now.total_cost == pytest.approx((w * sub.min(axis=1)).sum())  # cdist directly
    assert now.covered.tolist() == (sub <= 25.0).any(axis=1).tolist()


def test_coordinate_forms_refuse_what_they_cannot_do():
    points = [[0.0, 0.0], [1.0, 0.0], [50.0, 0.0]]
    with pytest.raises(pw.InputError, match=r"points\[2\] has no candidate within radius 5; its nearest "
                       r"candidate, candidates\[0\], lies at distance 49$"):
        pw.cover_all(points, 5.0, candidates=[[1.0, 0.0]])
    with pytest.raises(pw.InputError, match="meet in more than"):
        pw.cover_all(np.column_stack([np.linspace(0, 1, 3000), np.zeros(3000)]), 5.0)
    with pytest.raises(pw.InputError, match="radius must be finite and > 0"):
        pw.cover_all(points, -1.0, candidates=points)
    with pytest.raises(pw.InputError, match="p: must be at most"):
        pw.p_median(points, 3, candidates=[[0.0, 0.0], [1.0, 1.0]])
    with pytest.raises(pw.InputError, match="groups is not supported with candidates"):
        pw.p_median(points, 1, candidates=points, groups=[0, 0, 1])


@pytest.mark.parametrize("n", [6, 9])
def test_continuous_cover_closed_forms(n):
    # Points on a line at spacing s = 2 with radius s/2: a site midway covers two neighbours
    # and no site covers three, so ceil(n / 2) sites (closed form).
    line = np.column_stack([2.0 * np.arange(n), np.zeros(n)])
    plan = pw.cover_all(line, 1.0)
    assert plan.chosen == plan.lower_bound == -(-n // 2)
    assert (scipy.spatial.distance.cdist(line, plan.sites) <= 1.0).any(axis=1).all()  # scipy cdist
    # All points within the radius of one point: one site covers all (closed form).
    rng = np.random.default_rng(n)
    disk = rng.uniform(-0.6, 0.6, (40, 2))
    assert pw.cover_all(disk, 1.0).chosen == 1


def test_continuous_cover_against_milp():
    rng = np.random.default_rng(8)
    points = rng.uniform(0, 40, (70, 2))
    w = rng.integers(1, 10, 70).astype(float)
    plan = pw.cover_all(points, 6.0)
    costs = scipy.spatial.distance.cdist(points, plan.candidates)
    assert plan.chosen == milp_cover_all(costs, 6.0)  # scipy.optimize.milp (HiGHS) on the same candidates
    # The candidates dominate: sites on the points alone never need fewer (milp on the points).
    assert plan.chosen <= milp_cover_all(scipy.spatial.distance.cdist(points, points), 6.0)
    most = pw.cover_most(points, 4, 6.0, w)
    best = milp_cover_most(costs, w, 4, 6.0)  # scipy.optimize.milp (HiGHS)
    assert most.upper_bound >= best * (1 - 1e-9) and most.covered_weight >= best * 0.98


def test_cover_most_anywhere_with_more_sites_than_coverage_sets():
    # Three villages, two clusters within 1.5: sites anywhere, p = 3 (or more) covers every
    # village (closed form: a site on each village covers it). The dominating set holds two
    # distinct coverage sets; p above that used to be refused as "more than the candidates".
    villages = np.array([[0.0, 0.0], [1.0, 0.0], [9.0, 0.0]])
    w = np.array([2.0, 1.0, 4.0])
    for p in (2, 3, 10):
        most = pw.cover_most(villages, p, 1.5, w)
        assert most.covered_weight == w.sum() and most.covered.all()
        assert len(most.open) == 2  # every candidate of the dominating set; a third site adds nothing
        assert (scipy.spatial.distance.cdist(villages, most.sites) <= 1.5).any(axis=1).all()  # scipy cdist
    # An existing site anywhere: p is counted beside it.
    assert pw.cover_most(villages, 5, 1.5, w, fixed=[[0, 0]]).covered_weight == w.sum()
    # Beside an existing site at the third village, p = 3 placed a second site on top of it
    # (the dominating set's candidate there added nothing). Now every new site covers a
    # village the existing one does not (scipy cdist), and one suffices.
    beside = pw.cover_most(villages, 3, 1.5, w, fixed=[[9, 0]])
    new = beside.sites[~beside.fixed]
    reach = scipy.spatial.distance.cdist(villages, new) <= 1.5
    fixed_reach = scipy.spatial.distance.cdist(villages, [[9, 0]]).ravel() <= 1.5
    assert len(new) == 1 and (reach & ~fixed_reach[:, None]).any(axis=0).all()
    assert beside.covered_weight == w.sum()
    # Existing sites covering every village leave nothing for a new site to do: said.
    with pytest.raises(pw.InputError, match="the existing sites already cover every point within radius 1.5") as caught:
        pw.cover_most(villages, 1, 1.5, w, fixed=[[0.5, 0], [9, 0]])
    assert caught.value.argument == "p"
    assert pw.cover_all(villages, 1.5, fixed=[[0.5, 0], [9, 0]]).chosen == 0
    # Given candidates keep the refusal: p more than the parcels offered.
    with pytest.raises(pw.InputError, match="p: must be at most"):
        pw.cover_most(villages, 3, 1.5, w, candidates=villages[:2])


@pytest.mark.parametrize("exponent", [0, 540, -540])
def test_coverage_anywhere_is_the_same_at_every_scale(exponent):
    # Closed form: an equilateral triangle of side 1.7 has circumradius 1.7/√3 ≈ 0.981 < 1,
    # so one site anywhere covers it within radius 1. Scaled by 2^±540 (an exact change of
    # scale), the squares in the dominating set overflowed or underflowed and it took two.
    s = 2.0**exponent
    pts = np.array([[0.0, 0.0], [1.7, 0.0], [0.85, 1.7 * np.sqrt(0.75)]]) * s
    cover = pw.cover_all(pts, s)
    assert cover.chosen == 1
    site = cover.sites[0]
    assert (np.hypot(pts[:, 0] - site[0], pts[:, 1] - site[1]) <= s).all()  # numpy hypot (cdist squares overflow)
    assert pw.cover_most(pts, 1, s).covered_weight == 3.0


def test_points_exactly_on_a_circle_of_the_radius_take_one_site():
    # Closed form: (3, 4), (-3, 4) and (0, -5) lie exactly 5 from their circumcentre (0, 0),
    # so one site there covers all three within radius 5; the triangle is acute, so no other
    # location does. The dominating set held (0, 4e-9) instead and two sites were "proven".
    pts = [[3, 4], [-3, 4], [0, -5]]
    assert pw.evaluate_sites(pts, [[0, 0]], radius=5).covered.all()
    a = pw.cover_all(pts, 5)
    assert (a.chosen, a.lower_bound, a.relative_gap) == (1, 1, 0.0)
    assert a.sites.tolist() == [[0.0, 0.0]]
    b = pw.cover_most(pts, 1, 5)
    assert b.covered_weight == 3.0 and b.upper_bound >= 3.0 and b.covered.all()


# Pythagorean triples (closed form: x² + y² = r²) for co-circular lattice points.
TRIPLES = {5: [(3, 4)], 10: [(6, 8)], 13: [(5, 12)], 25: [(7, 24), (15, 20)],
           65: [(16, 63), (25, 60), (33, 56), (39, 52)]}


def lattice_circle(radius: int) -> list[tuple[int, int]]:
    """The integer points exactly ``radius`` from the origin listed by the triples above."""
    out = {(radius, 0), (-radius, 0), (0, radius), (0, -radius)}
    for x, y in TRIPLES[radius]:
        out |= {(sx * u, sy * v) for u, v in ((x, y), (y, x)) for sx in (1, -1) for sy in (1, -1)}
    return sorted(out)


def exact_coverage_sets(points: list[tuple[int, int]], radius: int) -> tuple[list[frozenset[int]], bool]:
    """Covered sets of the finite dominating set of Church (1984) — every point and both
    meeting points of every pair of circles of ``radius`` around them — decided in exact
    integer arithmetic (no rounding anywhere), and whether one of them is out of reach of
    floating point: a meeting point that is rational but not a binary fraction (so no float
    lies there) with three or more points exactly on its circle.

    A meeting point of a, b is x = m + σ·t·u (m the midpoint, u = (b − a) turned a quarter,
    D = |u|², E = 4r² − D, 2t = √(E/D)); q is within r of x exactly when
    2(a−q)·(b−q) + σ·((a+b−2q)·u)·√(E/D) <= 0, whose sign integers decide.
    """
    r2 = radius * radius
    sets = [frozenset(k for k, q in enumerate(points) if (p[0] - q[0]) ** 2 + (p[1] - q[1]) ** 2 <= r2)
            for p in points]
    gray = False
    for a, b in itertools.combinations(points, 2):
        u = (a[1] - b[1], b[0] - a[0])
        dd = u[0] ** 2 + u[1] ** 2
        e = 4 * r2 - dd
        if dd == 0 or e < 0:
            continue
        root = math.isqrt(e * dd)
        rational = root * root == e * dd
        for sigma in (1, -1):
            within, on = set(), 0
            for k, q in enumerate(points):
                lhs = 2 * ((a[0] - q[0]) * (b[0] - q[0]) + (a[1] - q[1]) * (b[1] - q[1]))
                s = sigma * ((a[0] + b[0] - 2 * q[0]) * u[0] + (a[1] + b[1] - 2 * q[1]) * u[1])
                # sign(lhs + s·√(E/D)), compared by squares where the terms differ in sign.
                if e == 0 or s == 0:
                    sign = (lhs > 0) - (lhs < 0)
                elif (lhs >= 0) == (s > 0):
                    sign = 1 if s > 0 else -1
                else:
                    big = (s * s * e > lhs * lhs * dd) - (s * s * e < lhs * lhs * dd)
                    sign = -big if s < 0 else big
                if sign <= 0:
                    within.add(k)
                on += sign == 0
            sets.append(frozenset(within))
            if rational and on >= 3:
                x = [Fraction(a[i] + b[i], 2) + Fraction(sigma * u[i] * root, 2 * dd) for i in (0, 1)]
                gray |= any(v.denominator & (v.denominator - 1) for v in x)
    return sets, gray


def integer_instance(rng: np.random.Generator) -> tuple[list[tuple[int, int]], int]:
    """Integer points and an integer radius as planners' grids give them: co-circular groups
    on Pythagorean circles around random integer centres among random integer points, or a
    grid with a whole-number radius; some points duplicated."""
    if rng.random() < 0.6:
        radius = int(rng.choice(list(TRIPLES)))
        pts = []
        for _ in range(rng.integers(1, 4)):
            centre = rng.integers(-2 * radius, 2 * radius + 1, 2)
            ring = lattice_circle(radius)
            for k in rng.choice(len(ring), int(rng.integers(3, 7)), replace=False):
                pts.append((int(centre[0] + ring[k][0]), int(centre[1] + ring[k][1])))
        pts += [tuple(int(v) for v in rng.integers(-3 * radius, 3 * radius + 1, 2)) for _ in range(rng.integers(0, 6))]
    else:
        radius, step = int(rng.integers(1, 5)), int(rng.integers(1, 4))
        cells = [(step * i, step * j) for i in range(6) for j in range(6)]
        pts = [cells[k] for k in rng.choice(len(cells), int(rng.integers(4, 16)), replace=False)]
    pts += [pts[k] for k in rng.integers(0, len(pts), rng.integers(0, 3))]
    return pts, radius


def exactly_within(points: list[tuple[int, int]], sites: np.ndarray, radius: int) -> np.ndarray:
    """Which points lie within ``radius`` of a site, in exact rational arithmetic
    (fractions.Fraction of the sites' floats)."""
    exact = [(Fraction(float(x)), Fraction(float(y))) for x, y in sites]
    return np.array([any((x - p) ** 2 + (y - q) ** 2 <= radius**2 for x, y in exact) for p, q in points])


def test_coverage_anywhere_on_integer_points_against_exact_milp():
    # Integer coordinates with whole radii (co-circular Pythagorean groups, grids, duplicates):
    # the fewest sites and the most weight one or two sites cover, against scipy.optimize.milp
    # (HiGHS) on the finite dominating set's covered sets decided in exact integer arithmetic
    # (above). Reported bounds must hold and the optimum match; every plan is checked in exact
    # rational arithmetic (fractions). Instances needing a site no float can hold are skipped.
    rng = np.random.default_rng(20261205)
    checked = matched = 0
    for _ in range(60):
        pts, radius = integer_instance(rng)
        sets, gray = exact_coverage_sets(pts, radius)
        if gray:
            continue
        checked += 1
        within = np.array([[k in s for s in sets] for k in range(len(pts))])
        xy = np.array(pts, dtype=float)
        best = milp_cover_all(np.where(within, 0.0, 1.0), 0.5)  # scipy.optimize.milp (HiGHS)
        a = pw.cover_all(xy, radius)
        assert a.lower_bound <= best <= a.chosen, (pts, radius)
        assert a.chosen == best, (pts, radius)
        assert exactly_within(pts, a.sites, radius).all()  # fractions: every point covered
        # Every covered set of the exact dominating set is within one candidate's (fractions).
        reach = np.array([exactly_within(pts, [c], radius) for c in a.candidates]).T
        assert all(reach[sorted(s)].all(axis=0).any() for s in sets if s), (pts, radius)
        w = rng.integers(1, 6, len(pts)).astype(float)
        for p in (1, 2):
            top = milp_cover_most(np.where(within, 0.0, 1.0), w, p, 0.5)  # scipy.optimize.milp (HiGHS)
            b = pw.cover_most(xy, p, radius, w)
            assert b.upper_bound >= top - 1e-9 and b.covered_weight <= top, (pts, radius, p)
            # The heuristic may stop short of the optimum, but not of what it proves.
            assert b.covered_weight == top or b.relative_gap > 0, (pts, radius, p)
            matched += b.covered_weight == top
            assert b.covered_weight == w[exactly_within(pts, b.sites, radius)].sum()  # fractions
    assert checked >= 50 and matched >= 1.8 * checked  # stated margin: nearly every plan optimal


def dominating_set(points: np.ndarray, radius: float) -> np.ndarray:
    """The finite dominating set of Church (1984), built here with numpy alone: the points and
    both intersection points of every pair of circles of ``radius`` around them that meet,
    pulled a relative 1e-9 toward the pair's midpoint so that rounding never leaves one of
    the pair outside."""
    out = [points]
    for i, j in itertools.combinations(range(len(points)), 2):
        a, b = points[i], points[j]
        half = np.linalg.norm(b - a) / 2
        if half == 0 or half > radius:
            continue
        mid, along = (a + b) / 2, (b - a) / (2 * half)
        across = np.array([-along[1], along[0]]) * np.sqrt(max(radius**2 - half**2, 0.0)) * (1 - 1e-9)
        out.append(np.array([mid + across, mid - across]))
    return np.vstack(out)


@pytest.mark.parametrize("seed", [3, 4, 5])
def test_coverage_anywhere_beside_existing_sites_against_milp(seed):
    # Sites anywhere beside two existing clinics (coordinates): the fewest new sites and the
    # most weight p new sites cover, against scipy.optimize.milp (HiGHS) on a dominating set
    # built independently (above), the points the clinics reach already covered.
    rng = np.random.default_rng(seed)
    points = rng.uniform(0, 30, (60, 2))
    w = rng.integers(1, 10, 60).astype(float)
    clinics = rng.uniform(0, 30, (2, 2))
    radius = 5.0
    reach = radius * (1 + 1e-12)
    served = (scipy.spatial.distance.cdist(points, clinics) <= radius).any(axis=1)
    assert 0 < served.sum() < len(points)  # the clinics cover some points, not all
    rest = points[~served]
    costs = scipy.spatial.distance.cdist(rest, dominating_set(points, radius))

    cover = pw.cover_all(points, radius, fixed=clinics)
    assert cover.chosen == milp_cover_all(costs, reach)  # scipy.optimize.milp (HiGHS)
    assert cover.lower_bound <= cover.chosen
    assert np.array_equal(cover.sites[cover.fixed], clinics)  # the clinics, where they stand
    assert (scipy.spatial.distance.cdist(points, cover.sites) <= reach).any(axis=1).all()  # every point, by cdist
    assert len(cover.open) == cover.chosen + 2

    for p in (1, 3):
        most = pw.cover_most(points, p, radius, w, fixed=clinics)
        best = w[served].sum() + milp_cover_most(costs, w[~served], p, reach)  # scipy.optimize.milp (HiGHS)
        assert most.upper_bound >= best * (1 - 1e-9)
        assert best * 0.98 <= most.covered_weight <= best * (1 + 1e-9)
        within = (scipy.spatial.distance.cdist(points, most.sites) <= reach).any(axis=1)
        assert most.covered_weight == pytest.approx(w[within].sum())  # numpy directly
        assert len(most.open) == p + 2 and np.array_equal(most.sites[most.fixed], clinics)
        # No new site merely repeats what the clinics cover (numpy, cdist).
        adds = (scipy.spatial.distance.cdist(points[~served], most.sites[~most.fixed]) <= reach).any(axis=0)
        assert adds.all()


def test_coverage_with_given_candidates_and_existing_sites_against_milp():
    # Candidates given: fixed indexes them. milp (HiGHS) with the existing columns forced open.
    pts, cands = np.random.default_rng(6).uniform(0, 100, (80, 2)), np.random.default_rng(7).uniform(0, 100, (25, 2))
    costs = scipy.spatial.distance.cdist(pts, cands)
    fixed = [2, 11]
    radius = 30.0
    rest = ~(costs[:, fixed] <= radius).any(axis=1)
    others = np.setdiff1d(np.arange(25), fixed)
    cover = pw.cover_all(pts, radius, candidates=cands, fixed=fixed)
    need = costs[np.ix_(rest, others)]
    assert (need <= radius).any(axis=1).all() and rest.sum() < len(pts)  # a new site is needed, and can serve
    assert cover.chosen == milp_cover_all(need, radius)  # scipy.optimize.milp (HiGHS)
    assert set(fixed) <= set(cover.open.tolist())


def test_coverage_refuses_bad_existing_sites_anywhere():
    points = [[0.0, 0.0], [3.0, 0.0]]
    with pytest.raises(pw.InputError, match=r"fixed\[1\] has a NaN") as caught:
        pw.cover_all(points, 1.0, fixed=[[0, 0], [np.nan, 1]])
    assert caught.value.argument == "fixed" and caught.value.row == 1
    with pytest.raises(pw.InputError, match="shape \\(f, 2\\)") as caught:
        pw.cover_most(points, 1, 1.0, fixed=[0])   # an index, where coordinates are needed
    assert caught.value.argument == "fixed"
    # Not real numbers: refused as the binding refuses them for every other array (complex
    # values lost their imaginary part, digits were parsed).
    for bad in ([["a", "b"]], [["1", "0"]], np.array([[1 + 5j, 0]])):
        with pytest.raises(pw.InputError, match="as real numbers") as caught:
            pw.cover_all(points, 1.0, fixed=bad)
        assert caught.value.argument == "fixed"
    # No existing sites: the same plan as without the argument.
    assert np.array_equal(pw.cover_all(points, 1.0, fixed=np.empty((0, 2))).sites, pw.cover_all(points, 1.0).sites)


def test_coverage_plot_draws_disks():
    import matplotlib

    matplotlib.use("Agg")
    points, candidates, w, _ = instance(2, 50, 10)
    plan = pw.cover_most(points, 2, 20.0, w, candidates=candidates)
    ax = plan.plot()
    assert len(ax.patches) == 2 and "within" in ax.get_title()
    with pytest.raises(pw.InputError, match="no coordinates"):
        discrete.p_median(np.ones((2, 2)), 1).plot()


# ------------------------------------------------------------------ hostile input


@pytest.mark.parametrize(
    ("call", "message"),
    [
        (lambda c: discrete.p_median(np.where(np.eye(4, 3) > 0, np.nan, c), 1), r"costs\[0, 0\] = NaN"),
        (lambda c: discrete.p_center(c - 2.5, 1), r"costs\[\d, \d\] = -"),
        (lambda c: discrete.p_median(c, 1, [1, 1, 1]), r"weights must have one entry per point \(4\); got 3"),
        (lambda c: discrete.p_median(c, 4), r"p: must be at most the number of candidates that are not fixed \(3\)"),
        (lambda c: discrete.cover_most(c, 3, 1.0, fixed=[0]), r"at most .* \(2\); got 3"),
        (lambda c: discrete.p_median(c, 0), r"p must be an integer >= 1; got 0"),
        (lambda c: discrete.p_median(c, 1.0), r"p must be an integer"),
        (lambda c: discrete.cover_all(c, 0), r"radius must be finite and > 0; got 0"),
        (lambda c: discrete.cover_most(c, 1, -1.0), r"radius must be finite and > 0; got -1.0"),
        (lambda c: discrete.evaluate_sites(c, [3]), r"sites\[0\] = 3 is not a candidate column"),
        (lambda c: discrete.evaluate_sites(c, [1, 1]), r"sites\[1\] = 1 repeats"),
        (lambda c: discrete.p_median(c, 1, fixed=[-1]), r"fixed\[0\] = -1 is not a candidate column"),
        (lambda c: discrete.p_median(c.ravel(), 1), r"costs must have shape \(n, m\)"),
        (lambda c: discrete.p_median(c, 1, [1, -1, 1, 1]), r"weights\[1\] = -1"),
    ],
)
def test_hostile_input(call, message):
    costs = np.arange(12.0).reshape(4, 3)
    with pytest.raises(pw.InputError, match=message):
        call(costs)


def test_uncoverable_point_names_point_and_nearest_cost():
    costs = np.array([[1.0, 2.0], [9.0, 7.5], [0.5, 3.0]])
    with pytest.raises(pw.InputError, match=r"points\[1\] has no candidate within radius 5; .* column 1, costs 7.5"):
        discrete.cover_all(costs, 5)


def test_structured_errors_carry_the_row() -> None:
    # A bad cell and an uncoverable point are named by field, so the GeoPandas and Dask
    # layers can restate the row with the user's own label.
    with pytest.raises(pw.InputError) as caught:
        discrete.evaluate_sites(np.array([[1.0, 2.0], [np.nan, 0.0]]), [0])
    assert (caught.value.argument, caught.value.row) == ("costs", 1)
    assert str(caught.value) == "costs[1, 0] = NaN; every cost must be finite and >= 0"
    costs = np.array([[1.0, 2.0], [9.0, 7.0], [0.5, 3.0]])
    with pytest.raises(pw.InputError) as caught:
        discrete.cover_all(costs, 5.0)
    assert caught.value.row == 1
    assert "points[1] has no candidate within radius 5; its cheapest candidate, column 1, costs 7" in str(caught.value)


def test_coordinate_refusals_name_rows_and_distances_not_columns_and_costs() -> None:
    # On coordinates the caller wrote no cost matrix: an uncoverable point was refused as
    # "its cheapest candidate, column j, costs c" and an overflow as "costs: ...". They now
    # name the candidate's row and its distance in the coordinates' unit, and the
    # coordinates. Reference: scipy.spatial.distance.cdist for the distances.
    import re

    from scipy.spatial.distance import cdist

    rng = np.random.default_rng(41)
    points = np.vstack([rng.uniform(0, 10, (30, 2)), [[40.0, 3.0]]])  # the last one far off
    candidates = rng.uniform(0, 10, (12, 2))
    d = cdist(points, candidates)
    radius = 6.0
    assert (d.min(axis=1) > radius).tolist() == [False] * 30 + [True]  # exactly one uncoverable: row 30
    with pytest.raises(pw.InputError) as caught:
        pw.cover_all(points, radius, candidates=candidates)
    said = str(caught.value)
    got = re.fullmatch(r"radius: points\[30\] has no candidate within radius 6; its nearest candidate, "
                       r"candidates\[(\d+)\], lies at distance (\S+)", said)
    assert got, said
    assert int(got[1]) == int(np.argmin(d[30])) and float(got[2]) == pytest.approx(d[30].min(), rel=1e-12)
    assert (caught.value.argument, caught.value.row) == ("points", 30)
    assert "column" not in said and "cost" not in said
    # The cost-matrix form keeps its own words (its columns and costs are the caller's).
    with pytest.raises(pw.InputError, match=rf"^radius: points\[30\] has no candidate within radius 6; its cheapest "
                       rf"candidate, column {int(np.argmin(d[30]))}, costs "):
        discrete.cover_all(d, radius)

    # Weighted distances beyond float64: the p-median (total weight) and the p-center (largest
    # weight) on coordinates near 1e150 (cdist's squares still finite) and a weight of 1e157.
    points = np.array([[0.0, 0.0], [1e150, 0.0], [0.0, 1e150]])
    candidates = np.array([[0.0, 0.0], [1e150, 1e150]])
    w = np.array([1e157, 1.0, 1.0])
    top = cdist(points, candidates).max()
    for model, weight, what in ((pw.p_median, w.sum(), "total"), (pw.p_center, w.max(), "largest")):
        with pytest.raises(pw.InputError) as caught:
            model(points, 1, w, candidates=candidates)
        said = str(caught.value)
        got = re.match(r"points, candidates: distances between points and candidates of at most (\S+) times the "
                       rf"{what} weight \((\S+)\) exceed (\S+), beyond which weighted totals overflow float64; "
                       r"rescale the coordinates of points and candidates \(e\.g\. kilometres instead of metres\) "
                       r"or the weights", said)
        assert got, said
        assert float(got[1]) == pytest.approx(top, rel=1e-12) and float(got[2]) == pytest.approx(weight, rel=1e-15)
        assert float(got[1]) * float(got[2]) > float(got[3])
        assert caught.value.argument == "points" and "costs" not in said


def test_weighted_costs_that_overflow_are_refused() -> None:
    # 1e10 x 3e300 overflows float64 (numpy: inf): every plan's total would be infinite and
    # alike, so the model cannot honour its objective and says so instead of a gap of 0.
    costs = np.array([[1e300, 2e300], [3e300, 1e300], [1.0, 2.0]])
    w = np.array([1e10, 1.0, 1.0])
    with np.errstate(over="ignore"):
        assert np.isinf((w[:, None] * costs).sum(axis=0)).all()
    for call in (lambda: discrete.p_median(costs, 1, w), lambda: discrete.p_center(costs, 1, w)):
        with pytest.raises(pw.InputError, match=r"^costs: the largest cost \(3e300\) times the (total|largest) "
                           r"weight .* rescale the costs \(or the coordinates they are distances between\) or the "
                           r"weights") as caught:
            call()
        assert caught.value.argument == "costs"
    # The same instance in units 1e10 times larger: site 0, by numpy's own totals.
    scaled = costs * 1e-10
    plan = discrete.p_median(scaled, 1, w)
    assert plan.open.tolist() == [int(np.argmin((w[:, None] * scaled).sum(axis=0)))] == [0]


def test_shape_and_dtype_errors_name_their_argument() -> None:
    # Every InputError names its argument in ``argument``, as the kernel's own ones do
    # (``costs`` for a NaN cell above); the binding's shape and dtype checks set it too.
    for call, argument in [
        (lambda: discrete.p_median([1.0, 2.0, 3.0], 1), "costs"),
        (lambda: discrete.cover_all(np.ones((2, 2, 2)), 1.0), "costs"),
        (lambda: discrete.p_center([["a", "b"]], 1), "costs"),
        (lambda: discrete.p_median(np.ones((2, 2)), 1, np.ones((2, 2))), "weights"),
        (lambda: pw.p_median([[0.0, 0.0]], 1, candidates=[[0.0, 0.0, 0.0]]), "candidates"),
        (lambda: pw.cover_most([[0.0, 0.0, 1.0]], 1, 1.0, candidates=[[0.0, 0.0]]), "points"),
    ]:
        with pytest.raises(pw.InputError, match=f"^{argument} must") as caught:
            call()
        assert caught.value.argument == argument


def test_candidates_outside_a_region_never_open_and_keep_their_numbers() -> None:
    import itertools

    rng = np.random.default_rng(31)
    points = rng.uniform(0, 10, (60, 2))
    candidates = rng.uniform(0, 10, (25, 2))
    region = [[0, 0], [10, 0], [10, 5], [0, 5]]  # the lower half only
    inside = np.flatnonzero(candidates[:, 1] <= 5)
    plan = pw.p_median(points, 3, candidates=candidates, region=region)
    assert set(plan.open.tolist()) <= set(inside.tolist())
    np.testing.assert_array_equal(plan.sites, candidates[plan.open])
    # Outside reference: brute force over every 3 of the candidates inside the region.
    d = np.hypot(*(points[:, None, :] - candidates[None, :, :]).transpose(2, 0, 1))
    best = min(d[:, list(trio)].min(axis=1).sum() for trio in itertools.combinations(inside, 3))
    assert plan.total_cost == pytest.approx(best, rel=1e-9)
    with pytest.raises(pw.InputError, match="region holds none of the 25 candidates"):
        pw.p_median(points, 3, candidates=candidates, region=[[20, 20], [30, 20], [30, 30]])
    # An existing site outside the region stays open where it stands (as p_center documents
    # and the GIS layer does); brute force over the new site among those inside.
    outside = int(np.flatnonzero(candidates[:, 1] > 5)[0])
    kept = pw.p_median(points, 1, candidates=candidates, fixed=[outside], region=region)
    assert outside in kept.open.tolist() and set(kept.open.tolist()) - {outside} <= set(inside.tolist())
    best = min(np.minimum(d[:, outside], d[:, j]).sum() for j in inside)
    assert kept.total_cost == pytest.approx(best, rel=1e-9)


def test_evaluate_sites_names_bad_sites_by_the_callers_argument() -> None:
    # pw.evaluate_sites(points, sites): the planar kernel takes the sites as its
    # candidates, and its errors used to name "candidates", an argument the caller never
    # gave. Reference: the function's own signature.
    import inspect

    assert "sites" in inspect.signature(pw.evaluate_sites).parameters
    with pytest.raises(pw.InputError, match=r"^sites\[1\] has a NaN coordinate") as caught:
        pw.evaluate_sites([[0.0, 0.0], [1.0, 1.0]], [[0.0, 0.0], [1.0, np.nan]])
    assert (caught.value.argument, caught.value.row) == ("sites", 1)
    with pytest.raises(pw.DegenerateInputError, match=r"^sites must hold at least 1 point") as caught:
        pw.evaluate_sites([[0.0, 0.0]], np.empty((0, 2)))
    assert caught.value.argument == "sites"
    # Errors about other arguments pass through as they were.
    with pytest.raises(pw.InputError, match=r"^points\[1\]") as caught:
        pw.evaluate_sites([[0.0, 0.0], [np.nan, 1.0]], [[0.0, 0.0]])
    assert caught.value.argument == "points"
