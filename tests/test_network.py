"""Tests of the network family: placewise.spanning_tree and placewise.steiner_tree."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.optimize
import scipy.sparse
import scipy.sparse.csgraph
import scipy.spatial
import scipy.spatial.distance
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st

import placewise as pw
from hostile import AWKWARD_POINTS, BAD_POINTS

SQRT3 = math.sqrt(3.0)
ANGLE_TOL = 1e-6


# --- outside references and independent checks ----------------------------------------------

def scipy_mst_length(points: np.ndarray) -> float:
    """Reference: scipy.sparse.csgraph.minimum_spanning_tree on the complete graph.

    csgraph reads a zero entry as "no edge", so the reference is taken over the distinct
    points (repeated ones add only zero-length links), in a unit frame."""
    points = np.unique(np.asarray(points, dtype=float), axis=0)
    if len(points) < 2:
        return 0.0
    local = points - points.mean(axis=0)
    size = float(np.abs(local).max())
    d = scipy.spatial.distance.squareform(scipy.spatial.distance.pdist(local / size))
    return float(scipy.sparse.csgraph.minimum_spanning_tree(d).sum()) * size


def scipy_delaunay_mst_length(points: np.ndarray) -> float:
    """Reference: scipy.spatial.Delaunay (Qhull) edges as a sparse graph, then
    scipy.sparse.csgraph.minimum_spanning_tree (for sets too large for the complete graph).

    Centred first: Qhull leaves points out of the triangulation at far offsets such as
    (5e5, 6e6), which would cut the graph; a shift does not change the tree."""
    points = points - points.mean(axis=0)
    simplices = scipy.spatial.Delaunay(points).simplices
    edges = np.unique(np.sort(np.vstack([simplices[:, [0, 1]], simplices[:, [1, 2]], simplices[:, [0, 2]]]), axis=1),
                      axis=0)
    weights = np.hypot(*(points[edges[:, 0]] - points[edges[:, 1]]).T)
    graph = scipy.sparse.coo_matrix((weights, (edges[:, 0], edges[:, 1])), shape=(len(points),) * 2).tocsr()
    return float(scipy.sparse.csgraph.minimum_spanning_tree(graph).sum())


def is_tree(node_count: int, edges: np.ndarray) -> bool:
    """Union–find check written here: node_count − 1 edges, none closing a cycle."""
    parent = list(range(node_count))

    def find(x: int) -> int:
        while parent[x] != x:
            parent[x] = parent[parent[x]]
            x = parent[x]
        return x

    if len(edges) != max(node_count - 1, 0):
        return False
    for a, b in edges:
        ra, rb = find(int(a)), find(int(b))
        if ra == rb:
            return False
        parent[ra] = rb
    return True


def steiner_nodes(t: pw.SteinerTree, rows: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Node coordinates (the tree's input rows ``rows``, then its junctions) and edges as
    node pairs."""
    n = len(rows)
    node_of_row = {int(r): k for k, r in enumerate(rows)}
    nodes = np.vstack([t.points[rows], t.junctions.reshape(-1, 2)])
    a = [node_of_row[int(r)] if r >= 0 else n + j for r, j in zip(t.end_a, t.junction_a)]
    b = [node_of_row[int(r)] if r >= 0 else n + j for r, j in zip(t.end_b, t.junction_b)]
    return nodes, np.column_stack([a, b]).astype(np.int64).reshape(-1, 2)


def check_steiner_invariants(t: pw.SteinerTree, points: np.ndarray, rows: np.ndarray | None = None) -> None:
    """A tree on the rows (``rows`` of ``points``; all by default) and junctions; every end
    either a row or a junction, smaller first (rows before junctions); junctions of degree 3
    at 120° (1e-6 rad); no row with more than three edges; edge lengths the Euclidean lengths
    (numpy.hypot); length ≤ MST length; 0 ≤ lower bound ≤ length, equal when optimal."""
    rows = np.arange(len(points)) if rows is None else np.asarray(rows)
    n = len(rows)
    np.testing.assert_array_equal(t.points, points)
    assert np.all((t.end_a >= 0) != (t.junction_a >= 0)) and np.all((t.end_b >= 0) != (t.junction_b >= 0))
    row_a, row_b = t.end_a >= 0, t.end_b >= 0
    assert np.all(row_a | ~row_b)                                       # a row end comes first
    assert np.all(~(row_a & row_b) | (t.end_a < t.end_b))
    assert np.all(row_a | row_b | (t.junction_a < t.junction_b))
    nodes, edges = steiner_nodes(t, rows)
    assert len(t.junctions) <= max(n - 2, 0)                            # Gilbert and Pollak 1968
    assert is_tree(len(nodes), edges)
    degree = np.bincount(edges.ravel(), minlength=len(nodes))
    assert np.all(degree[:n] <= 3)
    for s in range(n, len(nodes)):
        assert degree[s] == 3
        nbrs = [int(b if a == s else a) for a, b in edges if s in (a, b)]
        v = nodes[nbrs] - nodes[s]
        ang = np.sort(np.mod(np.arctan2(v[:, 1], v[:, 0]), 2 * np.pi))
        gaps = np.diff(np.r_[ang, ang[0] + 2 * np.pi])
        assert np.max(np.abs(gaps - 2 * np.pi / 3)) < ANGLE_TOL
    np.testing.assert_allclose(t.edge_length, np.hypot(*(nodes[edges[:, 0]] - nodes[edges[:, 1]]).T), rtol=1e-15)
    assert t.length == pytest.approx(float(t.edge_length.sum()), rel=1e-9, abs=1e-300)
    assert t.length <= t.mst_length * (1 + 1e-12)
    assert t.saving == pytest.approx(1 - t.length / t.mst_length if t.mst_length > 0 else 0.0, abs=1e-15)
    assert 0.0 <= t.lower_bound <= t.length and (not t.optimal or t.lower_bound == t.length)
    assert t.gap == pytest.approx(t.length - t.lower_bound, abs=1e-12 * max(t.length, 1.0))


def fermat_weber_cost(points: np.ndarray) -> float:
    """Reference: the smallest sum of distances to three points, by scipy.optimize.minimize
    (Nelder–Mead from the centroid) and the three vertices (the answer when an angle ≥ 120°)."""
    def cost(x: np.ndarray) -> float:
        return float(np.hypot(*(points - x).T).sum())

    found = scipy.optimize.minimize(cost, points.mean(axis=0), method="Nelder-Mead",
                                    options={"xatol": 1e-13, "fatol": 1e-15, "maxiter": 20_000})
    return min([found.fun, *(cost(p) for p in points)])


# --- minimum spanning tree ------------------------------------------------------------------

@pytest.mark.parametrize("n", [2, 3, 10, 200, 1000])
def test_mst_length_equals_scipy_on_the_complete_graph(n: int) -> None:
    rng = np.random.default_rng(n)
    pts = rng.uniform(size=(n, 2))
    t = pw.spanning_tree(pts)
    assert is_tree(n, np.column_stack([t.end_a, t.end_b]))
    # Reference: scipy.sparse.csgraph.minimum_spanning_tree on the complete graph.
    assert t.length == pytest.approx(scipy_mst_length(pts), rel=1e-12)
    # Reference: numpy.hypot of the end coordinates.
    np.testing.assert_allclose(t.edge_length, np.hypot(*(pts[t.end_a] - pts[t.end_b]).T), rtol=1e-15)
    assert np.all(np.diff(t.edge_length) >= 0)
    assert np.all(t.end_a < t.end_b)


def test_mst_length_equals_scipy_on_the_delaunay_graph() -> None:
    pts = np.random.default_rng(7).normal(size=(20_000, 2)) * [3.0, 1.0] + [5.0e5, 6.0e6]
    # Reference: scipy Delaunay (Qhull) + csgraph.minimum_spanning_tree.
    assert pw.spanning_tree(pts).length == pytest.approx(scipy_delaunay_mst_length(pts), rel=1e-11)


@pytest.mark.parametrize("k", [2, 5, 12])
def test_grid_mst_has_length_k_squared_minus_one(k: int) -> None:
    # Closed form: a k × k unit grid's MST is k² − 1 unit edges.
    pts = np.array([[i, j] for i in range(k) for j in range(k)], dtype=float)
    assert pw.spanning_tree(pts).length == pytest.approx(k * k - 1, rel=1e-14)


@pytest.mark.parametrize("scale", [1e160, 1e250, 1e-170, 1e-200, 1e-300])
def test_mst_and_steiner_saving_are_scale_invariant_at_huge_and_tiny_coordinates(scale: float) -> None:
    # Squared lengths overflowed beyond about 1e154 and underflowed below about 1e-162, so
    # every edge tied and the "tree" took a square's diagonal (3.414 instead of 3).
    square = np.array([[0, 0], [1, 0], [1, 1], [0, 1]], dtype=float) * scale
    # Closed form: the unit square's MST is three sides, its Steiner tree 1 + √3 long.
    assert pw.spanning_tree(square).length / scale == pytest.approx(3.0, rel=1e-14)
    tree = pw.steiner_tree(square)
    assert tree.mst_length / scale == pytest.approx(3.0, rel=1e-14)
    assert tree.saving == pytest.approx(1 - (1 + math.sqrt(3)) / 3, rel=1e-9)
    pts = np.random.default_rng(3).random((20, 2))
    # Reference: scipy.sparse.csgraph.minimum_spanning_tree on the complete graph of the same
    # points at scale 1 (a minimum spanning tree is scale invariant).
    reference = scipy_mst_length(pts)
    assert pw.spanning_tree(pts * scale).length / scale == pytest.approx(reference, rel=1e-12)
    tree = pw.steiner_tree(pts * scale)
    assert tree.mst_length / scale == pytest.approx(reference, rel=1e-12)
    assert tree.saving == pytest.approx(1 - tree.length / scale / reference, rel=1e-9)


def test_mst_degenerate_inputs() -> None:
    one = pw.spanning_tree([[1.0, 2.0]])
    assert len(one.end_a) == 0 and one.length == 0.0
    dup = pw.spanning_tree([[0, 0], [1, 0], [0, 0], [1, 0]])
    assert is_tree(4, np.column_stack([dup.end_a, dup.end_b]))
    assert dup.length == 1.0
    assert sorted(dup.edge_length.tolist()) == [0.0, 0.0, 1.0]
    # Closed form: collinear points are chained along their line (0..9 on y = 3x: 9·√10).
    line = np.column_stack([np.arange(10.0)[::-1], 3 * np.arange(10.0)[::-1]])
    assert pw.spanning_tree(line).length == pytest.approx(9 * math.sqrt(10), rel=1e-14)


@pytest.mark.parametrize("case, points", BAD_POINTS, ids=[n for n, _ in BAD_POINTS])
def test_bad_points_raise_input_error(case: str, points: object) -> None:
    with pytest.raises(pw.InputError):
        pw.spanning_tree(points)
    with pytest.raises(pw.InputError):
        pw.steiner_tree(points)


@pytest.mark.parametrize("case, points", AWKWARD_POINTS, ids=[n for n, _ in AWKWARD_POINTS])
def test_awkward_points_give_correct_trees(case: str, points: object) -> None:
    pts = np.asarray(points, dtype=float).reshape(-1, 2)
    t = pw.spanning_tree(points)
    assert is_tree(len(pts), np.column_stack([t.end_a, t.end_b]))
    # Reference: scipy csgraph on the complete graph (scaled to a unit frame inside).
    assert t.length == pytest.approx(scipy_mst_length(pts), rel=1e-9, abs=1e-300)
    s = pw.steiner_tree(points)
    check_steiner_invariants(s, pts)
    assert s.mst_length == pytest.approx(t.length, rel=1e-12, abs=1e-300)


def test_grouped_spanning_trees_equal_separate_calls() -> None:
    rng = np.random.default_rng(3)
    pts = rng.uniform(size=(90, 2))
    groups = rng.integers(0, 4, size=90)
    g = pw.spanning_tree(pts, groups=groups)
    assert g.labels.tolist() == [0, 1, 2, 3] and len(g) == 4
    for label, tree in zip(g.labels, g):
        rows = np.flatnonzero(groups == label)
        single = pw.spanning_tree(pts[rows])
        assert tree.length == pytest.approx(single.length, rel=1e-14)
        # Reference: scipy csgraph on the group's complete graph.
        assert tree.length == pytest.approx(scipy_mst_length(pts[rows]), rel=1e-12)
        # A group's own tree counts its rows from 0, as the separate call does ...
        assert set(zip(tree.end_a.tolist(), tree.end_b.tolist())) == set(zip(single.end_a.tolist(),
                                                                              single.end_b.tolist()))
        np.testing.assert_array_equal(g[label].end_a, tree.end_a)
        np.testing.assert_array_equal(tree.points, pts[rows])
        # ... while the grouped arrays name rows of the whole input.
        at = slice(g.edge_offsets[g.position(label)], g.edge_offsets[g.position(label) + 1])
        assert set(zip(g.end_a[at].tolist(), g.end_b[at].tolist())) == {
            (int(rows[a]), int(rows[b])) for a, b in zip(single.end_a, single.end_b)}


# --- Steiner tree: closed forms -------------------------------------------------------------

@pytest.mark.parametrize("exact", [True, False])
def test_unit_square_steiner_tree(exact: bool) -> None:
    # Closed form: the unit square's Steiner tree is 1 + √3 long with two junctions.
    pts = np.array([[0, 0], [1, 0], [1, 1], [0, 1]], dtype=float)
    t = pw.steiner_tree(pts, exact=exact)
    check_steiner_invariants(t, pts)
    assert t.length == pytest.approx(1 + SQRT3, rel=1e-12)
    assert len(t.junctions) == 2
    assert t.optimal is exact
    # The four corners each meet one junction; the fifth edge joins the two junctions.
    assert sorted(t.end_a.tolist()) == [-1, 0, 1, 2, 3]
    assert t.junction_a.tolist().count(0) == 1 and t.junction_b.tolist().count(1) == 3


def test_equilateral_triangle_junction_at_centroid() -> None:
    # Closed form: side · √3, one junction at the centroid.
    side = 7.0
    pts = np.array([[0, 0], [side, 0], [side / 2, side * SQRT3 / 2]])
    t = pw.steiner_tree(pts)
    check_steiner_invariants(t, pts)
    assert t.optimal
    assert t.length == pytest.approx(side * SQRT3, rel=1e-13)
    np.testing.assert_allclose(t.junctions, [pts.mean(axis=0)], atol=1e-12)


def test_regular_hexagon_steiner_tree_is_five_sides() -> None:
    # Closed form (Jarník and Kössler 1934): a regular hexagon's Steiner tree is five of its
    # sides, with no junction.
    a = np.arange(6) * np.pi / 3
    pts = np.column_stack([np.cos(a), np.sin(a)])
    for exact in (True, False):
        t = pw.steiner_tree(pts, exact=exact)
        check_steiner_invariants(t, pts)
        assert t.length == pytest.approx(5.0, rel=1e-12)
        assert len(t.junctions) == 0
        np.testing.assert_allclose(t.edge_length, np.ones(5), rtol=1e-14)


@pytest.mark.parametrize("seed", range(8))
def test_three_points_cost_the_fermat_weber_cost(seed: int) -> None:
    # Outside fact: the Steiner tree of three points is the star to their Fermat–Weber point
    # (Torricelli; a vertex when an angle is ≥ 120°); its cost by scipy.optimize.minimize.
    rng = np.random.default_rng(seed)
    pts = rng.normal(size=(3, 2)) * [1.0, 0.2 + seed / 4]
    t = pw.steiner_tree(pts)
    check_steiner_invariants(t, pts)
    assert t.optimal
    assert t.length == pytest.approx(fermat_weber_cost(pts), rel=1e-9)


def test_collinear_duplicate_and_single_inputs() -> None:
    t = pw.steiner_tree([[0, 0], [1, 1], [3, 3]])
    assert t.optimal and t.saving == 0.0 and len(t.junctions) == 0
    one = pw.steiner_tree([[4.0, 5.0]])
    assert len(one.end_a) == 0 and one.length == 0.0 and one.saving == 0.0
    assert one.summary()["edges"].tolist() == [0]
    # Every row of a repeated location is joined, by zero-length edges, and no row gets
    # more than three edges; the closed form 1 + √3 is unchanged.
    sq = np.array([[0, 0], [1, 0], [1, 1], [0, 1]], dtype=float)
    pts = np.vstack([sq, sq, sq[:1]])
    t = pw.steiner_tree(pts)
    check_steiner_invariants(t, pts)
    assert t.length == pytest.approx(1 + SQRT3, rel=1e-12)


# --- Steiner tree: bounds and exact solver --------------------------------------------------

@pytest.mark.parametrize("n", [4, 5, 6])
def test_steiner_ratio_bound_for_small_sets(n: int) -> None:
    # Outside fact: SMT/MST ≥ √3/2 is proven for n ≤ 6 (Pollak 1978 for n = 4; Du, Yao and
    # Hwang 1985 for n = 5; Rubinstein and Weng 1997 for n = 6); SMT ≤ MST always. The MST
    # length is compared with scipy csgraph.
    rng = np.random.default_rng(100 + n)
    for _ in range(10):
        pts = rng.uniform(size=(n, 2))
        t = pw.steiner_tree(pts, exact=True)
        assert t.optimal
        check_steiner_invariants(t, pts)
        assert t.mst_length == pytest.approx(scipy_mst_length(pts), rel=1e-12)
        assert SQRT3 / 2 - 1e-12 <= t.length / t.mst_length <= 1 + 1e-12


@pytest.mark.parametrize("n", [9, 11])
def test_exact_is_optimal_and_no_longer_than_the_heuristic(n: int) -> None:
    rng = np.random.default_rng(n)
    for _ in range(2):
        pts = rng.uniform(size=(n, 2))
        e = pw.steiner_tree(pts, exact=True)
        h = pw.steiner_tree(pts, exact=False)
        assert e.optimal and not h.optimal
        check_steiner_invariants(e, pts)
        check_steiner_invariants(h, pts)
        assert e.length <= h.length * (1 + 1e-12)


def test_heuristic_on_a_thousand_points_keeps_invariants_and_saves() -> None:
    rng = np.random.default_rng(1000)
    pts = rng.uniform(size=(1000, 2))
    t = pw.steiner_tree(pts)
    assert not t.optimal
    check_steiner_invariants(t, pts)
    assert t.mst_length == pytest.approx(scipy_delaunay_mst_length(pts), rel=1e-12)
    # Outside fact (from memory): on uniform sets the Steiner tree saves about 3 % over the
    # MST (Warme, Winter and Zachariasen 2000); the heuristic must reach most of it.
    assert t.saving > 0.025


def test_lower_bound_is_the_length_when_proven_and_below_the_optimum_otherwise() -> None:
    # Reference for an unproven bound: the proven optimum of the same points (no valid lower
    # bound may exceed it), and Chung and Graham's (1985) Steiner ratio bound 0.8241 * MST,
    # with the MST length from scipy csgraph.
    rng = np.random.default_rng(77)
    for _ in range(3):
        pts = rng.uniform(size=(12, 2)) * 250.0
        e = pw.steiner_tree(pts, exact=True)
        assert e.optimal and e.lower_bound == e.length and e.gap == 0.0 and e.relative_gap == 0.0
        for quick in (pw.steiner_tree(pts, exact=False), pw.steiner_tree(pts, exact=True, time_limit=0.0)):
            assert not quick.optimal
            check_steiner_invariants(quick, pts)
            assert quick.lower_bound <= e.length <= quick.length * (1 + 1e-12)
            assert quick.lower_bound >= 0.824 * scipy_mst_length(pts) * (1 - 1e-12)
            assert quick.gap == pytest.approx(quick.length - quick.lower_bound, rel=1e-12)
            assert quick.relative_gap == pytest.approx(quick.gap / quick.length, rel=1e-12)
            assert quick.summary()["lower_bound_u"].tolist() == [quick.lower_bound]


def test_a_tiny_time_limit_on_150_points_returns_a_tree_with_its_gap() -> None:
    pts = np.random.default_rng(150).uniform(size=(150, 2))
    t = pw.steiner_tree(pts, exact=True, time_limit=0.01)
    assert not t.optimal
    check_steiner_invariants(t, pts)
    # Chung and Graham (1985): a Steiner minimum tree is at least 0.8241 of the MST (scipy).
    assert 0.824 * scipy_mst_length(pts) * (1 - 1e-12) <= t.lower_bound <= t.length
    assert 0.0 < t.relative_gap < 1.0


def test_grouped_trees_carry_each_group_bound() -> None:
    pts = np.random.default_rng(8).uniform(size=(20, 2))
    trees = pw.steiner_tree(pts, groups=np.repeat([1, 2], 10), exact=True)
    for position, tree in enumerate(trees):
        single = pw.steiner_tree(pts[10 * position:10 * position + 10], exact=True)
        assert tree.optimal and tree.lower_bound == tree.length
        assert tree.lower_bound == pytest.approx(single.lower_bound, rel=1e-12)
    assert trees.summary()["relative_gap"].tolist() == [0.0, 0.0]


def test_time_limit_zero_falls_back_to_the_heuristic() -> None:
    pts = np.random.default_rng(5).uniform(size=(12, 2))
    t = pw.steiner_tree(pts, exact=True, time_limit=0.0)
    assert not t.optimal
    check_steiner_invariants(t, pts)


# --- arguments ------------------------------------------------------------------------------

def test_exact_method_past_sixty_four_points_on_a_regular_polygon() -> None:
    # Closed form (Du, Hwang and Weng 1987, from memory): for a regular n-gon with n >= 13
    # the Steiner minimum tree is the polygon less one side, here 69 sides of 70.
    angle = 2 * np.pi * np.arange(70) / 70
    pts = np.column_stack([np.cos(angle), np.sin(angle)]) * 3.0
    t = pw.steiner_tree(pts, exact=True)
    assert t.optimal
    check_steiner_invariants(t, pts)
    side = np.hypot(*(pts[1] - pts[0]))
    assert t.length == pytest.approx(69 * side, rel=1e-12)


@pytest.mark.parametrize("kwargs, argument, shown", [
    ({"seed": -1}, "seed", "got -1"),
    ({"seed": 2**70}, "seed", f"got {2**70}"),
    ({"seed": 1.5}, "seed", "got 1.5"),
    ({"seed": np.int64(-3)}, "seed", "got -3"),
    ({"time_limit": -1}, "time_limit", "got -1"),
    ({"time_limit": np.float64(-1.0)}, "time_limit", "got -1.0"),
    ({"time_limit": float("nan")}, "time_limit", "got nan"),
    ({"time_limit": float("inf")}, "time_limit", "got inf"),
    ({"time_limit": "soon"}, "time_limit", "got 'soon'"),
    ({"exact": "yes"}, "exact", "got 'yes'"),
    ({"exact": 1}, "exact", "got 1"),
    ({"exact": np.int64(0)}, "exact", "got 0"),
])
def test_argument_errors_name_the_argument_with_plain_numbers(kwargs: dict, argument: str, shown: str) -> None:
    pts = np.random.default_rng(6).uniform(size=(5, 2))
    for groups in (None, [0, 0, 1, 1, 1]):
        with pytest.raises(pw.InputError) as info:
            pw.steiner_tree(pts, groups=groups, **kwargs)
        assert info.value.argument == argument
        message = str(info.value)
        assert message.startswith(argument) and shown in message
        assert "np." not in message


def test_numpy_scalars_are_accepted_as_arguments() -> None:
    pts = np.array([[0, 0], [1, 0], [1, 1], [0, 1]], dtype=float)
    t = pw.steiner_tree(pts, exact=np.bool_(True), seed=np.uint64(2**64 - 1), time_limit=np.float32(3))
    assert t.optimal and t.length == pytest.approx(1 + SQRT3, rel=1e-12)


def test_errors_argument_is_checked() -> None:
    with pytest.raises(pw.InputError, match="errors") as info:
        pw.spanning_tree([[0, 0], [1, 1]], groups=[0, 0], errors="ignore")
    assert info.value.argument == "errors"
    with pytest.raises(pw.InputError, match="errors"):
        pw.steiner_tree([[0, 0], [1, 1]], groups=[0, 0], errors="ignore")


# --- grouped runs and the table contract ----------------------------------------------------

def test_same_seed_same_tree_and_grouped_equals_separate() -> None:
    rng = np.random.default_rng(9)
    pts = rng.uniform(size=(300, 2))
    a = pw.steiner_tree(pts, seed=4)
    b = pw.steiner_tree(pts, seed=4)
    np.testing.assert_array_equal(a.junctions, b.junctions)
    np.testing.assert_array_equal(a.end_a, b.end_a)
    groups = np.repeat([5, 2, 9], 100)
    g = pw.steiner_tree(pts, groups=groups)
    assert g.labels.tolist() == [2, 5, 9] and len(g) == 3 and 5 in g and 4 not in g
    for label in g.labels:
        rows = np.flatnonzero(groups == label)
        single = pw.steiner_tree(pts[rows])
        tree = g[label]
        check_steiner_invariants(tree, pts[rows])  # a group's own tree counts its rows from 0
        assert tree.length == single.length and tree.optimal == single.optimal
        np.testing.assert_array_equal(tree.junctions, single.junctions)
    with pytest.raises(KeyError):
        g[4]


# Rows 5 and 9 form group 3 (a two-point group) and row 7 alone group 8, so positions inside
# a group (0, 1) differ from the input rows; group 1 is a unit square in rows 0, 2, 4, 6.
_PTS = np.array([[0, 0], [50, 50], [1, 0], [60, 60], [1, 1], [3, 4], [0, 1], [7, 7], [80, 80], [6, 8]],
                dtype=float)
_GROUPS = np.array([1, 4, 1, 4, 1, 3, 1, 8, 4, 3])


@pytest.mark.parametrize("solve", [pw.spanning_tree, pw.steiner_tree], ids=["spanning", "steiner"])
def test_two_point_and_one_point_groups_give_lists_of_input_rows(solve) -> None:
    # Regression: a two-point group once came back with scalar columns and the rows 0 and 1
    # of its partition; a one-point group must have no edges.
    trees = solve(_PTS, groups=_GROUPS)
    frame = trees.to_frame()
    two = frame[frame["group"] == 3]
    assert len(two) == 1
    assert (two["end_a"].item(), two["end_b"].item()) == (5, 9)
    assert two["length_u"].item() == 5.0                     # closed form: (3, 4) to (6, 8)
    assert (frame["group"] == 8).sum() == 0
    assert set(frame["end_a"][frame["end_a"] >= 0]) | set(frame["end_b"][frame["end_b"] >= 0]) <= set(
        range(len(_PTS))) - {7}
    for label in (1, 4):
        rows = set(np.flatnonzero(_GROUPS == label))
        part = frame[frame["group"] == label]
        ends = set(part["end_a"]) | set(part["end_b"])
        assert ends - {-1} == rows
    summary = trees.summary().set_index("group")
    assert summary.loc[3, "edges"] == 1 and summary.loc[8, "edges"] == 0
    assert summary.loc[8, "length_u"] == 0.0
    assert trees[8].length == 0.0 and len(trees[8].end_a) == 0
    # The group's own tree counts its rows from 0 (as a separate call would) ...
    assert trees[3].end_a.tolist() == [0] and trees[3].end_b.tolist() == [1]
    # ... and the grouped arrays and frames name rows of the whole input.
    at = slice(trees.edge_offsets[trees.position(3)], trees.edge_offsets[trees.position(3) + 1])
    assert trees.end_a[at].tolist() == [5] and trees.end_b[at].tolist() == [9]


@pytest.mark.parametrize("solve", [pw.spanning_tree, pw.steiner_tree], ids=["spanning", "steiner"])
def test_frames_equal_the_attributes_and_shapely_lengths(solve) -> None:
    trees = solve(_PTS, groups=_GROUPS)
    frame = trees.to_frame()
    gdf = trees.to_geodataframe()
    np.testing.assert_array_equal(frame["end_a"], trees.end_a)
    np.testing.assert_array_equal(frame["end_b"], trees.end_b)
    np.testing.assert_array_equal(frame["length_u"], trees.edge_length)
    # Reference: shapely LineString.length of each edge's geometry.
    np.testing.assert_allclose(shapely.length(gdf.geometry.values), frame["length_u"], rtol=1e-14)
    assert not {"length", "area", "distance", "from", "to"} & set(frame.columns)
    summary = trees.summary()
    np.testing.assert_array_equal(summary["group"], trees.labels)
    np.testing.assert_array_equal(summary["length_u"], trees.length)
    np.testing.assert_allclose(summary["length_u"], frame.groupby("group")["length_u"].sum().reindex(
        trees.labels, fill_value=0.0), rtol=1e-14)
    for label, tree in zip(trees.labels, trees):
        single = tree.to_geodataframe()
        np.testing.assert_allclose(shapely.length(single.geometry.values), tree.edge_length, rtol=1e-14)
        row = tree.summary().iloc[0]
        assert row["length_u"] == tree.length and row["edges"] == len(tree.end_a)
        if isinstance(tree, pw.SteinerTree):
            assert row["mst_length_u"] == tree.mst_length and row["saving"] == tree.saving
            assert row["junctions"] == len(tree.junctions) and row["optimal"] == tree.optimal
            assert summary.set_index("group").loc[label, "junctions"] == len(tree.junctions)
            # Reference: scipy csgraph MST of the group.
            assert tree.mst_length == pytest.approx(scipy_mst_length(_PTS[_GROUPS == label]), rel=1e-12)


def test_grouped_junction_ends_are_numbered_within_their_group() -> None:
    # Two unit squares (closed form 1 + √3 each) with two junctions apiece.
    sq = np.array([[0, 0], [1, 0], [1, 1], [0, 1]], dtype=float)
    pts = np.vstack([sq, sq + 10])
    trees = pw.steiner_tree(pts, groups=[4, 4, 4, 4, 6, 6, 6, 6])
    assert trees.junction_offsets.tolist() == [0, 2, 4]
    np.testing.assert_allclose(trees.length, 1 + SQRT3, rtol=1e-12)
    frame = trees.to_geodataframe()
    assert set(frame["junction_a"]) | set(frame["junction_b"]) == {-1, 0, 1}
    for label in (4, 6):
        tree = trees[label]
        part = frame[frame["group"] == label]
        # A junction end's LineString ends at that group's junction.
        for (_, edge), line in zip(part.iterrows(), part.geometry):
            if edge["junction_b"] >= 0:
                np.testing.assert_allclose(np.asarray(line.coords)[1], tree.junctions[edge["junction_b"]])
        check_steiner_invariants(tree, pts[np.arange(4) + (4 if label == 6 else 0)])
    np.testing.assert_allclose(shapely.length(frame.geometry.values), frame["length_u"], rtol=1e-14)


@pytest.mark.parametrize("solve", [pw.spanning_tree, pw.steiner_tree], ids=["spanning", "steiner"])
def test_errors_skip_keeps_the_failing_group_with_its_problem(solve) -> None:
    pts = _PTS.copy()
    pts[6] = [np.nan, 1.0]  # row 6, in group 1
    with pytest.raises(pw.InputError) as info:
        solve(pts, groups=_GROUPS)
    assert (info.value.group, info.value.row) == (1, 6)
    assert str(info.value).startswith("group 1: points[6] has a NaN coordinate")
    trees = solve(pts, groups=_GROUPS, errors="skip")
    assert trees.labels.tolist() == [1, 3, 4, 8] and trees.skipped.tolist() == [True, False, False, False]
    assert "points[6]" in trees.problem[0] and trees.problem[1:].tolist() == [None, None, None]
    assert np.isnan(trees.length[0]) and trees.edge_offsets[1] == 0
    frame = trees.to_frame()
    first = frame[frame["group"] == 1]
    assert len(first) == 1 and first["problem"].item() == trees.problem[0]
    summary = trees.summary().set_index("group")
    assert np.isnan(summary.loc[1, "length_u"]) and summary.loc[1, "edges"] == 0
    assert summary.loc[3, "length_u"] == 5.0
    with pytest.raises(pw.InputError, match="group 1 was skipped"):
        trees[1]


def test_repr_and_plot() -> None:
    import matplotlib

    matplotlib.use("Agg")
    t = pw.steiner_tree([[0, 0], [1, 0], [1, 1], [0, 1]])
    assert repr(t).startswith("SteinerTree(junctions=")
    ax = t.plot()
    assert len(ax.collections[0].get_segments()) == 5
    trees = pw.spanning_tree(_PTS, groups=_GROUPS)
    assert len(trees.plot().collections[0].get_segments()) == len(trees.end_a)


# --- properties -----------------------------------------------------------------------------

coordinates = st.integers(-20, 20).map(lambda v: v / 4)
point_sets = st.lists(st.tuples(coordinates, coordinates), min_size=1, max_size=9)


@given(point_sets)
@settings(max_examples=60, deadline=None)
def test_property_spanning_tree_matches_scipy(raw: list[tuple[float, float]]) -> None:
    pts = np.array(raw, dtype=float)
    t = pw.spanning_tree(pts)
    assert is_tree(len(pts), np.column_stack([t.end_a, t.end_b]))
    # Reference: scipy csgraph on the complete graph.
    assert t.length == pytest.approx(scipy_mst_length(pts), rel=1e-12, abs=1e-250)


@given(point_sets)
@settings(max_examples=60, deadline=None)
def test_property_steiner_tree_invariants(raw: list[tuple[float, float]]) -> None:
    # Small integer grids: many duplicates, collinear triples and cocircular quadruples.
    pts = np.array(raw, dtype=float)
    t = pw.steiner_tree(pts)
    check_steiner_invariants(t, pts)
    if len(np.unique(pts, axis=0)) <= 6 and t.mst_length > 0:
        assert t.optimal
        # Outside fact: SMT/MST ≥ √3/2 for n ≤ 6 (see test_steiner_ratio_bound_for_small_sets).
        assert t.length / t.mst_length >= SQRT3 / 2 - 1e-12


@given(st.lists(st.tuples(st.floats(-1e3, 1e3), st.floats(-1e3, 1e3)), min_size=1, max_size=60))
@settings(max_examples=40, deadline=None)
def test_property_heuristic_invariants_on_floats(raw: list[tuple[float, float]]) -> None:
    pts = np.array(raw, dtype=float)
    t = pw.steiner_tree(pts, exact=False)
    check_steiner_invariants(t, pts)
