"""Tests of the enclose family: enclosing_circle, minimax_point, enclosing_ellipse."""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
import pytest
import scipy.optimize
import shapely
from hypothesis import assume, given
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

import placewise as pw
from hostile import AWKWARD_POINTS, BAD_POINTS, BAD_WEIGHTS

SQRT3 = math.sqrt(3.0)
COVER = 1.0 + 1e-12


def clouds() -> list[tuple[str, np.ndarray]]:
    rng = np.random.default_rng(31)
    angle = rng.uniform(0, 2 * np.pi, 3000)
    radius = rng.uniform(9.0, 10.0, 3000)
    return [
        ("uniform", rng.uniform(-1, 1, size=(5000, 2))),
        ("gaussian", rng.normal(size=(5000, 2)) * [3.0, 0.5]),
        ("ring", np.column_stack([radius * np.cos(angle), radius * np.sin(angle)])),
        ("far_offset", rng.normal(size=(5000, 2)) * 40.0 + [500_000.0, 6_000_000.0]),
        ("small_uniform", rng.uniform(0, 1, size=(7, 2))),
    ]


def weighted_radius(points: np.ndarray, weights: np.ndarray, x: np.ndarray) -> float:
    return float(np.max(weights * np.hypot(points[:, 0] - x[0], points[:, 1] - x[1])))


def ellipse_form(e: pw.Ellipse, points: np.ndarray) -> np.ndarray:
    d = np.asarray(points, dtype=float) - e.center
    return np.einsum("ni,ij,nj->n", d, e.shape, d)


def rotation(t: float) -> np.ndarray:
    return np.array([[math.cos(t), -math.sin(t)], [math.sin(t), math.cos(t)]])


# --- enclosing_circle against shapely (GEOS) ---------------------------------------------

@pytest.mark.parametrize("name, points", clouds(), ids=[n for n, _ in clouds()])
def test_circle_radius_equals_shapely_minimum_bounding_radius(name: str, points: np.ndarray) -> None:
    # Reference: shapely.minimum_bounding_radius / minimum_bounding_circle (GEOS
    # MinimumBoundingCircle), 1e-9 relative.
    c = pw.enclosing_circle(points)
    geom = shapely.multipoints(points)
    assert c.radius == pytest.approx(shapely.minimum_bounding_radius(geom), rel=1e-9)
    ref_center = shapely.get_coordinates(shapely.centroid(shapely.minimum_bounding_circle(geom)))[0]
    # The polygonal circle's centroid is the centre up to the polygon's rounding.
    assert np.hypot(*(c.center - ref_center)) <= 1e-6 * c.radius
    assert np.all(np.hypot(*(points - c.center).T) <= c.radius * COVER)


def test_circle_equilateral_triangle_radius_is_side_over_root_three() -> None:
    # Closed form: circumradius s/√3, the equality case of Jung's theorem (Jung 1901).
    s = 7.0
    c = pw.enclosing_circle([[0, 0], [s, 0], [s / 2, s * SQRT3 / 2]])
    assert c.radius == pytest.approx(s / SQRT3, rel=1e-15)
    assert sorted(c.support) == [0, 1, 2]


def test_circle_obtuse_triangle_has_longest_side_as_diameter() -> None:
    # Closed form (Euclid, Elements III.31): the angle opposite the longest side is obtuse,
    # so the circle on that side as diameter contains the third vertex.
    c = pw.enclosing_circle([[0, 0], [10, 0], [3, 2]])
    assert c.center.tolist() == [5.0, 0.0]
    assert c.radius == 5.0
    assert c.support.tolist() == [0, 1]


def test_circle_points_on_a_circle_give_that_circle() -> None:
    # Closed form: points spread all round a circle have that circle as smallest cover.
    t = np.linspace(0, 2 * np.pi, 50, endpoint=False)
    pts = np.column_stack([2.0 + 3.0 * np.cos(t), -1.0 + 3.0 * np.sin(t)])
    c = pw.enclosing_circle(pts)
    assert c.radius == pytest.approx(3.0, rel=1e-12)
    assert np.allclose(c.center, [2.0, -1.0], atol=1e-12)


def test_circle_of_one_point_is_that_point() -> None:
    c = pw.enclosing_circle([[4.0, -1.0]])
    assert c.center.tolist() == [4.0, -1.0] and c.radius == 0.0 and c.support.tolist() == [0]


def test_circle_same_seed_same_answer() -> None:
    pts = np.random.default_rng(8).normal(size=(3000, 2))
    a, b = pw.enclosing_circle(pts), pw.enclosing_circle(pts)
    assert a.center.tolist() == b.center.tolist() and a.radius == b.radius
    c = pw.enclosing_circle(pts, seed=12345)
    assert c.radius == pytest.approx(a.radius, rel=1e-14)


# --- minimax_point ------------------------------------------------------------------------

def slsqp_minimax(points: np.ndarray, weights: np.ndarray, starts: int = 8) -> float:
    """Reference: the epigraph form min t s.t. w_i² |x − a_i|² ≤ t², solved with
    scipy.optimize.minimize(method="SLSQP") from several starts, in a local frame."""
    origin = points.mean(axis=0)
    local = points - origin
    scale = float(np.max(np.abs(local))) or 1.0
    local = local / scale
    rng = np.random.default_rng(0)

    def cons(z: np.ndarray) -> np.ndarray:
        d2 = np.sum((local - z[:2]) ** 2, axis=1)
        return z[2] ** 2 - weights**2 * d2

    best = math.inf
    for _ in range(starts):
        x0 = local[rng.integers(len(local))] * rng.uniform(0, 1)
        t0 = weighted_radius(local, weights, x0)
        r = scipy.optimize.minimize(lambda z: z[2], np.r_[x0, t0], method="SLSQP",
                                    constraints=[{"type": "ineq", "fun": cons}],
                                    options={"ftol": 1e-14, "maxiter": 500})
        # Evaluate honestly at the returned location (SLSQP's t may be slightly infeasible).
        best = min(best, weighted_radius(local, weights, r.x[:2]))
    return best * scale


@pytest.mark.parametrize("n, seed", [(3, 1), (5, 2), (12, 3), (40, 4), (150, 5)])
def test_minimax_matches_slsqp_epigraph_multistart(n: int, seed: int) -> None:
    rng = np.random.default_rng(seed)
    pts = rng.normal(size=(n, 2)) * 10.0
    w = rng.lognormal(size=n)
    m = pw.minimax_point(pts, w)
    ref = slsqp_minimax(pts, w)
    # Ours is exact: never worse than the reference, and the reference gets close to it.
    assert m.radius <= ref * (1 + 1e-12)
    assert m.radius == pytest.approx(ref, rel=1e-6)
    assert m.radius == pytest.approx(weighted_radius(pts, w, m.location), rel=1e-13)
    for s in m.support:
        assert w[s] * np.hypot(*(pts[s] - m.location)) == pytest.approx(m.radius, rel=1e-9)


def test_minimax_unit_weights_give_the_enclosing_circle_centre() -> None:
    pts = np.random.default_rng(2).uniform(size=(500, 2))
    m, c = pw.minimax_point(pts), pw.enclosing_circle(pts)
    assert m.location.tolist() == c.center.tolist() and m.radius == c.radius
    m3 = pw.minimax_point(pts, np.full(500, 3.0))
    assert m3.radius == pytest.approx(3.0 * c.radius, rel=1e-15)


def test_minimax_two_points_divide_the_segment_in_inverse_weight_ratio() -> None:
    # Closed form: w1|x − a1| = w2|x − a2| on the segment gives x = (w1 a1 + w2 a2)/(w1 + w2).
    m = pw.minimax_point([[0, 0], [6, 0]], [1, 2])
    assert np.allclose(m.location, [4.0, 0.0], atol=1e-15)
    assert m.radius == pytest.approx(4.0, rel=1e-15)


def test_minimax_zero_weights_are_ignored() -> None:
    pts = np.array([[0, 0], [1e6, 1e6], [2, 0], [1, 3]], dtype=float)
    m = pw.minimax_point(pts, [1.0, 0.0, 2.0, 1.5])
    n = pw.minimax_point(pts[[0, 2, 3]], [1.0, 2.0, 1.5])
    assert np.allclose(m.location, n.location, atol=1e-12)
    assert 1 not in m.support.tolist()


# --- enclosing_ellipse --------------------------------------------------------------------

def test_ellipse_of_a_triangle_is_its_steiner_circumellipse() -> None:
    # Closed form: the minimum-area ellipse of a triangle is the Steiner circumellipse,
    # centred at the centroid with area 4π/(3√3) times the triangle's; for (0,0),(1,0),(0,1)
    # A = [[3, 1.5], [1.5, 3]].
    e = pw.enclosing_ellipse([[0, 0], [1, 0], [0, 1]], tol=1e-12)
    assert np.allclose(e.center, [1 / 3, 1 / 3], atol=1e-10)
    assert np.allclose(e.shape, [[3.0, 1.5], [1.5, 3.0]], atol=1e-9)
    assert e.area == pytest.approx(4 * math.pi / (3 * SQRT3) * 0.5, rel=1e-10)
    tri = np.array([[2.0, 1.0], [7.0, 2.0], [3.0, 6.0]])
    (ux, uy), (vx, vy) = tri[1] - tri[0], tri[2] - tri[0]
    area = 0.5 * abs(ux * vy - uy * vx)
    e = pw.enclosing_ellipse(tri, tol=1e-12)
    assert np.allclose(e.center, tri.mean(axis=0), atol=1e-9)
    assert e.area == pytest.approx(4 * math.pi / (3 * SQRT3) * area, rel=1e-10)


def test_ellipse_of_a_rectangle_has_semi_axes_a_and_b_over_root_two() -> None:
    # Closed form: the a × b rectangle is the affine image of a square, whose smallest
    # ellipse is its circumcircle; so semi-axes a/√2, b/√2.
    a, b, t = 8.0, 3.0, 0.4
    box = np.array([[-a / 2, -b / 2], [a / 2, -b / 2], [a / 2, b / 2], [-a / 2, b / 2]]) @ rotation(t).T + [10, 20]
    inner = np.random.default_rng(1).uniform(-0.3, 0.3, size=(50, 2)) * [a, b] @ rotation(t).T + [10, 20]
    e = pw.enclosing_ellipse(np.vstack([inner, box]), tol=1e-12)
    assert np.allclose(e.semi_axes, [a / math.sqrt(2), b / math.sqrt(2)], rtol=1e-9)
    assert e.angle == pytest.approx(t, abs=1e-9)
    assert sorted(e.support) == [50, 51, 52, 53]


@pytest.mark.parametrize("name, points", clouds(), ids=[n for n, _ in clouds()])
def test_ellipse_covers_certifies_its_gap_and_support_is_on_the_boundary(name: str, points: np.ndarray) -> None:
    tol = 1e-7
    e = pw.enclosing_ellipse(points, tol=tol)
    assert e.converged and 0 <= e.gap <= tol
    assert np.all(ellipse_form(e, points) <= COVER)
    assert np.all(ellipse_form(e, points[e.support]) >= 1 - 4 * tol)
    a, b = e.semi_axes
    assert a >= b > 0 and e.area == pytest.approx(math.pi * a * b, rel=1e-12)
    # Lower bound from outside: no ellipse covering the points is smaller than the convex
    # hull (shapely.convex_hull area; an ellipse containing a convex set has at least its area).
    assert e.area >= shapely.area(shapely.convex_hull(shapely.multipoints(points)))


def test_ellipse_degenerate_inputs_say_so() -> None:
    with pytest.raises(pw.DegenerateInputError, match="collinear"):
        pw.enclosing_ellipse([[0, 0], [1, 2], [2, 4], [3, 6]])
    with pytest.raises(pw.DegenerateInputError, match="3 distinct points; got 2"):
        pw.enclosing_ellipse([[0, 0], [1, 1], [0, 0]])
    for tol in (0.0, -1.0, 1.0, float("nan")):
        with pytest.raises(pw.InputError, match="tol"):
            pw.enclosing_ellipse([[0, 0], [1, 0], [0, 1]], tol=tol)


# --- groups= ------------------------------------------------------------------------------

def test_groups_match_separate_calls_and_support_indexes_the_input() -> None:
    rng = np.random.default_rng(4)
    pts = rng.normal(size=(600, 2))
    w = rng.uniform(0.5, 2.0, 600)
    labels = rng.integers(-3, 5, 600)
    circles = pw.enclosing_circle(pts, groups=labels)
    minimax = pw.minimax_point(pts, w, groups=labels)
    ellipses = pw.enclosing_ellipse(pts, groups=labels)
    assert circles.labels.tolist() == sorted(set(labels.tolist()))
    for g, label in enumerate(circles.labels):
        idx = np.flatnonzero(labels == label)
        c = pw.enclosing_circle(pts[idx])
        assert circles.radius[g] == c.radius and circles.center[g].tolist() == c.center.tolist()
        assert sorted(circles.support(g)) == sorted(idx[c.support])
        m = pw.minimax_point(pts[idx], w[idx])
        assert minimax.radius[g] == m.radius and sorted(minimax.support(g)) == sorted(idx[m.support])
        e = pw.enclosing_ellipse(pts[idx])
        assert np.array_equal(ellipses.shape[g], e.shape) and ellipses.area[g] == e.area
        assert sorted(ellipses.support(g)) == sorted(idx[e.support])
    assert circles.support_offsets[-1] == len(circles.support_index)


def test_group_errors_name_the_group() -> None:
    with pytest.raises(pw.DegenerateInputError, match="group 7"):
        pw.enclosing_ellipse([[0, 0], [1, 0], [0, 1], [5, 5], [6, 6]], groups=[1, 1, 1, 7, 7])
    with pytest.raises(pw.InputError, match="group 2: weights are all zero"):
        pw.minimax_point([[0, 0], [1, 0], [3, 3]], [1, 1, 0], groups=[1, 1, 2])


# --- properties (hypothesis) --------------------------------------------------------------

coords = st.floats(-1e3, 1e3, allow_nan=False, allow_infinity=False)
point_sets = arrays(np.float64, st.tuples(st.integers(1, 40), st.just(2)), elements=coords)
general_sets = arrays(np.float64, st.tuples(st.integers(3, 40), st.just(2)),
                      elements=st.floats(-1e3, 1e3, allow_nan=False, allow_infinity=False, width=32))
weights_for = st.floats(0.05, 20.0)


@given(point_sets, st.randoms(use_true_random=False))
def test_circle_property_cover_boundary_order_and_equivariance(pts: np.ndarray, rnd) -> None:
    c = pw.enclosing_circle(pts)
    scale = max(c.radius, 1e-300)
    assert np.all(np.hypot(*(pts - c.center).T) <= c.radius * COVER + 1e-300)
    for s in c.support:
        assert abs(np.hypot(*(pts[s] - c.center)) - c.radius) <= 1e-9 * max(scale, 1.0)
    perm = list(range(len(pts)))
    rnd.shuffle(perm)
    assert pw.enclosing_circle(pts[perm]).radius == pytest.approx(c.radius, rel=1e-9, abs=1e-9)
    t, shift, k = rnd.uniform(0, 6.3), np.array([rnd.uniform(-1e4, 1e4), rnd.uniform(-1e4, 1e4)]), rnd.uniform(0.1, 10)
    moved = pw.enclosing_circle(k * pts @ rotation(t).T + shift)
    assert moved.radius == pytest.approx(k * c.radius, rel=1e-9, abs=1e-8)
    assert np.allclose(moved.center, k * rotation(t) @ c.center + shift, atol=1e-8 * (1 + k * c.radius))


@given(point_sets, st.data())
def test_minimax_property_optimal_support_and_equivariance(pts: np.ndarray, data) -> None:
    n = len(pts)
    w = np.array(data.draw(st.lists(weights_for, min_size=n, max_size=n)))
    m = pw.minimax_point(pts, w)
    assert m.radius == pytest.approx(weighted_radius(pts, w, m.location), rel=1e-12, abs=1e-300)
    for s in m.support:
        assert w[s] * np.hypot(*(pts[s] - m.location)) == pytest.approx(m.radius, rel=1e-8, abs=1e-9)
    # No nearby location does better (first-order optimality, probed in 64 directions).
    h = 1e-6 * max(m.radius, 1e-9)
    t = np.linspace(0, 2 * np.pi, 64, endpoint=False)
    for x in m.location + h * np.column_stack([np.cos(t), np.sin(t)]):
        assert weighted_radius(pts, w, x) >= m.radius * (1 - 1e-10) - 1e-12
    perm = data.draw(st.permutations(range(n)))
    assert pw.minimax_point(pts[perm], w[perm]).radius == pytest.approx(m.radius, rel=1e-9, abs=1e-9)
    moved = pw.minimax_point(2.5 * pts @ rotation(1.1).T + [300.0, -40.0], w)
    assert moved.radius == pytest.approx(2.5 * m.radius, rel=1e-8, abs=1e-8)


@given(general_sets, st.randoms(use_true_random=False))
def test_ellipse_property_cover_boundary_and_equivariance(pts: np.ndarray, rnd) -> None:
    try:
        e = pw.enclosing_ellipse(pts, tol=1e-8)
    except pw.DegenerateInputError:
        # Documented: fewer than three distinct or collinear points.
        # Checked exactly, in rationals.
        distinct = [tuple(Fraction(float(v)) for v in p) for p in np.unique(pts, axis=0)]
        (x0, y0), (x1, y1) = distinct[0], distinct[-1]
        assert len(distinct) < 3 or all((x1 - x0) * (y - y0) == (y1 - y0) * (x - x0) for x, y in distinct)
        return
    assert np.all(ellipse_form(e, pts) <= COVER)
    assert e.gap <= 1e-8 or not e.converged
    # Equivariance is only a fair test where rounding of the moved coordinates cannot make
    # the cloud degenerate: keep clouds whose ellipse is not extremely thin.
    extent = float(np.ptp(pts, axis=0).max())
    assume(e.semi_axes[1] >= 1e-4 * extent and extent >= 1e-3)
    t, k = rnd.uniform(0, 6.3), rnd.uniform(0.1, 10)
    moved = pw.enclosing_ellipse(k * pts @ rotation(t).T + [1e4, -2e4], tol=1e-8)
    assert moved.area == pytest.approx(k * k * e.area, rel=1e-6)
    perm = list(range(len(pts)))
    rnd.shuffle(perm)
    assert pw.enclosing_ellipse(pts[perm], tol=1e-8).area == pytest.approx(e.area, rel=1e-6)


# --- hostile input ------------------------------------------------------------------------

KERNELS = {
    "enclosing_circle": lambda p, w=None: pw.enclosing_circle(p),
    "minimax_point": lambda p, w=None: pw.minimax_point(p, w),
    "enclosing_ellipse": lambda p, w=None: pw.enclosing_ellipse(p),
    "enclosing_circle(groups)": lambda p, w=None: pw.enclosing_circle(p, groups=np.zeros(len(p), dtype=int)),
}


@pytest.mark.parametrize("kernel", list(KERNELS))
@pytest.mark.parametrize("case, points", BAD_POINTS, ids=[n for n, _ in BAD_POINTS])
def test_bad_points_raise_input_error(kernel: str, case: str, points) -> None:
    with pytest.raises(pw.InputError):
        KERNELS[kernel](points)


@pytest.mark.parametrize("case, points", AWKWARD_POINTS, ids=[n for n, _ in AWKWARD_POINTS])
def test_awkward_points_give_correct_answers_or_documented_errors(case: str, points) -> None:
    pts = np.asarray(points, dtype=float)
    c = pw.enclosing_circle(points)
    assert np.all(np.hypot(*(pts - c.center).T) <= c.radius * COVER)
    if len(np.unique(pts, axis=0)) >= 2:
        # Reference: shapely.minimum_bounding_radius (GEOS).
        ref = shapely.minimum_bounding_radius(shapely.multipoints(pts))
        assert c.radius == pytest.approx(ref, rel=1e-9)
    m = pw.minimax_point(points)
    assert m.radius == c.radius
    try:
        e = pw.enclosing_ellipse(points)
    except pw.DegenerateInputError as exc:
        assert case in {"collinear", "all_same", "single"}, exc
    else:
        assert np.all(ellipse_form(e, pts) <= COVER)


@pytest.mark.parametrize("case, make", BAD_WEIGHTS, ids=[n for n, _ in BAD_WEIGHTS])
def test_bad_weights_raise_input_error(case: str, make) -> None:
    pts = np.random.default_rng(0).normal(size=(6, 2))
    with pytest.raises(pw.InputError):
        pw.minimax_point(pts, make(len(pts)))
    with pytest.raises(pw.InputError):
        pw.minimax_point(pts, make(len(pts)), groups=[0, 0, 1, 1, 2, 2])


def test_bad_groups_raise_input_error() -> None:
    pts = np.zeros((4, 2))
    for groups in ([0, 1], [0.5, 1, 2, 3], np.zeros((4, 2), dtype=int)):
        with pytest.raises(pw.InputError):
            pw.enclosing_circle(pts, groups=groups)
