"""Tests of the network family: placewise.spanning_tree and placewise.steiner_tree."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.sparse.csgraph
import scipy.spatial.distance
from hypothesis import given, settings
from hypothesis import strategies as st

import placewise as pw
from hostile import AWKWARD_POINTS, BAD_POINTS

SQRT3 = math.sqrt(3.0)
ANGLE_TOL = 1e-6


def scipy_mst_length(points: np.ndarray) -> float:
    """Reference: scipy.sparse.csgraph.minimum_spanning_tree on the full distance matrix.

    csgraph reads a zero entry as "no edge", so the reference is taken over the distinct
    points (repeated ones add only zero-length links), in a unit frame."""
    points = np.unique(np.asarray(points, dtype=float), axis=0)
    if len(points) < 2:
        return 0.0
    local = points - points.mean(axis=0)
    size = float(np.abs(local).max())
    d = scipy.spatial.distance.squareform(scipy.spatial.distance.pdist(local / size))
    return float(scipy.sparse.csgraph.minimum_spanning_tree(d).sum()) * size


def is_tree(node_count: int, edges: np.ndarray) -> bool:
    """Union–find check: node_count − 1 edges, none closing a cycle."""
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


def check_steiner_invariants(t: pw.SteinerTree, points: np.ndarray) -> None:
    """The invariants of issue 5: a tree; Steiner points of degree 3 at 120° (1e-6 rad);
    no terminal with more than three edges; length ≤ MST length; terminals are the input."""
    assert t.terminal_count == len(points)
    np.testing.assert_array_equal(t.nodes[: t.terminal_count], points)
    assert is_tree(len(t.nodes), t.edges)
    degree = np.bincount(t.edges.ravel(), minlength=len(t.nodes)) if len(t.edges) else np.zeros(len(t.nodes), int)
    assert np.all(degree[: t.terminal_count] <= 3)
    for s in range(t.terminal_count, len(t.nodes)):
        assert degree[s] == 3
        nbrs = [int(b if a == s else a) for a, b in t.edges if s in (a, b)]
        v = t.nodes[nbrs] - t.nodes[s]
        ang = np.sort(np.mod(np.arctan2(v[:, 1], v[:, 0]), 2 * np.pi))
        gaps = np.diff(np.r_[ang, ang[0] + 2 * np.pi])
        assert np.max(np.abs(gaps - 2 * np.pi / 3)) < ANGLE_TOL
    lengths = np.hypot(*(t.nodes[t.edges[:, 0]] - t.nodes[t.edges[:, 1]]).T) if len(t.edges) else np.zeros(0)
    assert t.length == pytest.approx(float(lengths.sum()), rel=1e-9, abs=1e-300)
    assert t.length <= t.mst_length * (1 + 1e-12)
    assert t.saving == pytest.approx(1 - t.length / t.mst_length if t.mst_length > 0 else 0.0, abs=1e-15)


# --- minimum spanning tree ----------------------------------------------------------------

@pytest.mark.parametrize("n", [2, 3, 10, 200, 1000])
def test_mst_length_equals_scipy_on_full_distance_matrix(n: int) -> None:
    rng = np.random.default_rng(n)
    pts = rng.uniform(size=(n, 2))
    t = pw.spanning_tree(pts)
    assert is_tree(n, t.edges)
    assert t.length == pytest.approx(scipy_mst_length(pts), rel=1e-12)
    np.testing.assert_allclose(t.edge_length, np.hypot(*(pts[t.edges[:, 0]] - pts[t.edges[:, 1]]).T), rtol=1e-15)
    assert np.all(np.diff(t.edge_length) >= 0)


@pytest.mark.parametrize("k", [2, 5, 12])
def test_grid_mst_has_length_k_squared_minus_one(k: int) -> None:
    # Closed form: a k × k unit grid's MST is k² − 1 unit edges.
    pts = np.array([[i, j] for i in range(k) for j in range(k)], dtype=float)
    assert pw.spanning_tree(pts).length == pytest.approx(k * k - 1, rel=1e-14)


def test_mst_degenerate_inputs() -> None:
    assert pw.spanning_tree([[1.0, 2.0]]).edges.shape == (0, 2)
    dup = pw.spanning_tree([[0, 0], [1, 0], [0, 0], [1, 0]])
    assert is_tree(4, dup.edges)
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
    assert is_tree(len(pts), t.edges)
    # Reference: scipy csgraph on the full matrix (scaled to a unit frame inside).
    ref = scipy_mst_length(pts)
    assert t.length == pytest.approx(ref, rel=1e-9, abs=1e-300)
    s = pw.steiner_tree(points)
    check_steiner_invariants(s, pts)
    assert s.mst_length == pytest.approx(t.length, rel=1e-12, abs=1e-300)


def test_grouped_spanning_trees_equal_separate_calls() -> None:
    rng = np.random.default_rng(3)
    pts = rng.uniform(size=(90, 2))
    groups = rng.integers(0, 4, size=90)
    g = pw.spanning_tree(pts, groups=groups)
    assert g.labels.tolist() == [0, 1, 2, 3]
    for k, label in enumerate(g.labels):
        rows = np.flatnonzero(groups == label)
        single = pw.spanning_tree(pts[rows])
        assert g.length[k] == pytest.approx(single.length, rel=1e-14)
        edges = g.edges[g.edge_offsets[k]: g.edge_offsets[k + 1]]
        assert set(map(tuple, edges.tolist())) == {(rows[a], rows[b]) for a, b in single.edges}


# --- Steiner tree: closed forms -----------------------------------------------------------

@pytest.mark.parametrize("exact", [True, False])
def test_unit_square_steiner_tree(exact: bool) -> None:
    # Closed form: the unit square's Steiner tree is 1 + √3 long with two Steiner points.
    pts = np.array([[0, 0], [1, 0], [1, 1], [0, 1]], dtype=float)
    t = pw.steiner_tree(pts, exact=exact)
    check_steiner_invariants(t, pts)
    assert t.length == pytest.approx(1 + SQRT3, rel=1e-12)
    assert len(t.steiner_points) == 2
    assert t.optimal is exact


def test_equilateral_triangle_steiner_point_at_centroid() -> None:
    # Closed form: side · √3, one Steiner point at the centroid.
    side = 7.0
    pts = np.array([[0, 0], [side, 0], [side / 2, side * SQRT3 / 2]])
    t = pw.steiner_tree(pts)
    check_steiner_invariants(t, pts)
    assert t.optimal
    assert t.length == pytest.approx(side * SQRT3, rel=1e-13)
    np.testing.assert_allclose(t.steiner_points, [pts.mean(axis=0)], atol=1e-12)


def test_regular_hexagon_steiner_tree_is_five_sides() -> None:
    # Closed form (Jarník and Kössler 1934): a regular hexagon's Steiner tree is five of its
    # sides, with no Steiner point.
    a = np.arange(6) * np.pi / 3
    pts = np.column_stack([np.cos(a), np.sin(a)])
    for exact in (True, False):
        t = pw.steiner_tree(pts, exact=exact)
        check_steiner_invariants(t, pts)
        assert t.length == pytest.approx(5.0, rel=1e-12)
        assert len(t.steiner_points) == 0


@pytest.mark.parametrize("seed", range(8))
def test_three_points_cost_the_fermat_weber_cost(seed: int) -> None:
    # Outside fact: the Steiner tree of three points is the star to their Fermat–Weber point
    # (Torricelli; a vertex when an angle is ≥ 120°); compared with placewise.weber_point,
    # whose certified gap bounds its own error.
    rng = np.random.default_rng(seed)
    pts = rng.normal(size=(3, 2)) * [1.0, 0.2 + seed / 4]
    t = pw.steiner_tree(pts)
    w = pw.weber_point(pts)
    check_steiner_invariants(t, pts)
    assert t.optimal
    assert w.cost - w.gap - 1e-12 <= t.length <= w.cost + 1e-12


def test_collinear_duplicate_and_single_inputs() -> None:
    t = pw.steiner_tree([[0, 0], [1, 1], [3, 3]])
    assert t.optimal and t.saving == 0.0 and len(t.steiner_points) == 0
    one = pw.steiner_tree([[4.0, 5.0]])
    assert one.edges.shape == (0, 2) and one.length == 0.0 and one.saving == 0.0
    # Every row of a repeated location is joined, by zero-length edges, and no row gets
    # more than three edges.
    sq = np.array([[0, 0], [1, 0], [1, 1], [0, 1]], dtype=float)
    pts = np.vstack([sq, sq, sq[:1]])
    t = pw.steiner_tree(pts)
    check_steiner_invariants(t, pts)
    assert t.length == pytest.approx(1 + SQRT3, rel=1e-12)


# --- Steiner tree: bounds and exact solver ------------------------------------------------

@pytest.mark.parametrize("n", [4, 5, 6])
def test_steiner_ratio_bound_for_small_sets(n: int) -> None:
    # Outside fact: SMT/MST ≥ √3/2 is proven for n ≤ 6 (Pollak 1978 for n = 4; Du, Yao and
    # Hwang 1985 for n = 5; Rubinstein and Weng 1997 for n = 6); SMT ≤ MST always.
    rng = np.random.default_rng(100 + n)
    for _ in range(10):
        pts = rng.uniform(size=(n, 2))
        t = pw.steiner_tree(pts, exact=True)
        assert t.optimal
        check_steiner_invariants(t, pts)
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
    # Outside fact: on uniform sets the Steiner tree saves about 3 % over the MST
    # (Warme, Winter and Zachariasen 2000); the heuristic must reach most of it.
    assert t.saving > 0.025


def test_time_limit_zero_falls_back_to_the_heuristic() -> None:
    pts = np.random.default_rng(5).uniform(size=(12, 2))
    t = pw.steiner_tree(pts, exact=True, time_limit=0.0)
    assert not t.optimal
    check_steiner_invariants(t, pts)


def test_parameter_errors() -> None:
    pts = np.random.default_rng(6).uniform(size=(70, 2))
    with pytest.raises(pw.InputError, match="exact"):
        pw.steiner_tree(pts, exact=True)
    for bad in (-1.0, float("nan"), float("inf")):
        with pytest.raises(pw.InputError, match="time_limit"):
            pw.steiner_tree(pts[:5], time_limit=bad)


def test_same_seed_same_tree_and_grouped_equals_separate() -> None:
    rng = np.random.default_rng(9)
    pts = rng.uniform(size=(300, 2))
    a = pw.steiner_tree(pts, seed=4)
    b = pw.steiner_tree(pts, seed=4)
    np.testing.assert_array_equal(a.nodes, b.nodes)
    np.testing.assert_array_equal(a.edges, b.edges)
    groups = np.repeat([5, 2, 9], 100)
    g = pw.steiner_tree(pts, groups=groups)
    assert g.labels.tolist() == [2, 5, 9]
    for k, label in enumerate(g.labels):
        single = pw.steiner_tree(pts[groups == label])
        tree = g[k]
        check_steiner_invariants(tree, pts[groups == label])
        assert tree.length == single.length
        assert tree.optimal == single.optimal


# --- properties ---------------------------------------------------------------------------

coordinates = st.integers(-20, 20).map(lambda v: v / 4)
point_sets = st.lists(st.tuples(coordinates, coordinates), min_size=1, max_size=9)


@given(point_sets)
@settings(max_examples=60, deadline=None)
def test_property_spanning_tree_matches_scipy(raw: list[tuple[float, float]]) -> None:
    pts = np.array(raw, dtype=float)
    t = pw.spanning_tree(pts)
    assert is_tree(len(pts), t.edges)
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
        assert t.length / t.mst_length >= SQRT3 / 2 - 1e-12


@given(st.lists(st.tuples(st.floats(-1e3, 1e3), st.floats(-1e3, 1e3)), min_size=1, max_size=60))
@settings(max_examples=40, deadline=None)
def test_property_heuristic_invariants_on_floats(raw: list[tuple[float, float]]) -> None:
    pts = np.array(raw, dtype=float)
    t = pw.steiner_tree(pts, exact=False)
    check_steiner_invariants(t, pts)
