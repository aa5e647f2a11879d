"""Tests of the enclose family: enclosing_circle, minimax_point, enclosing_ellipse."""

from __future__ import annotations

import dataclasses
import math
from fractions import Fraction

import geopandas as gpd
import numpy as np
import pandas as pd
import pytest
import scipy.optimize
import scipy.spatial
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


def reference_mvee(points: np.ndarray, eps: float = 1e-9) -> tuple[np.ndarray, np.ndarray]:
    """Reference written here: Khachiyan's (1996) algorithm with the away steps of Todd and
    Yildirim (2007), "On Khachiyan's algorithm for the computation of minimum-volume
    enclosing ellipsoids", in the lifted form (q_i = (a_i, 1), M(u) = sum u_i q_i q_i^T,
    omega_i = q_i^T M^-1 q_i), from the uniform start, on the vertices of
    scipy.spatial.ConvexHull; stops when max omega / 3 - 1 and 1 - min_{u_i > 0} omega / 3
    are both <= eps. Returns (centre, A) with A scaled so that the farthest point has
    (x - c)^T A (x - c) = 1."""
    x = points[scipy.spatial.ConvexHull(points).vertices]
    origin = x.mean(axis=0)
    s = float(np.abs(x - origin).max())
    x = (x - origin) / s
    n, d = x.shape
    q = np.column_stack([x, np.ones(n)])
    u = np.full(n, 1.0 / n)
    for _ in range(1_000_000):
        omega = np.einsum("ij,jk,ik->i", q, np.linalg.inv((q.T * u) @ q), q)
        j = int(np.argmax(omega))
        carrying = np.flatnonzero(u > 0)
        k = int(carrying[np.argmin(omega[carrying])])
        up, down = omega[j] / (d + 1) - 1, 1 - omega[k] / (d + 1)
        if max(up, down) <= eps:
            break
        if up >= down:
            tau = (omega[j] - d - 1) / ((d + 1) * (omega[j] - 1))
            u *= 1 - tau
            u[j] += tau
        else:
            tau = min((d + 1 - omega[k]) / ((d + 1) * (omega[k] - 1)), u[k] / (1 - u[k]))
            u *= 1 + tau
            u[k] = max(u[k] - tau, 0.0)
    c = u @ x
    a = np.linalg.inv((x - c).T @ ((x - c) * u[:, None]))
    a /= np.max(np.einsum("ni,ij,nj->n", x - c, a, x - c))
    return c * s + origin, a / (s * s)


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
    assert m.weighted_radius <= ref * (1 + 1e-12)
    assert m.weighted_radius == pytest.approx(ref, rel=1e-6)
    assert m.weighted_radius == pytest.approx(weighted_radius(pts, w, m.location), rel=1e-13)
    for s in m.support:
        assert w[s] * np.hypot(*(pts[s] - m.location)) == pytest.approx(m.weighted_radius, rel=1e-9)


@pytest.mark.parametrize("seed", [2, 3, 4])
def test_minimax_equal_weights_match_slsqp_and_shapely(seed: int) -> None:
    # References: scipy.optimize.minimize(method="SLSQP") on the epigraph form (slsqp_minimax
    # above), and for equal weights w, w times shapely.minimum_bounding_radius (GEOS).
    rng = np.random.default_rng(seed)
    pts = rng.uniform(size=(60, 2)) * [5.0, 2.0]
    for w in (1.0, 3.0):
        weights = np.full(len(pts), w)
        m = pw.minimax_point(pts, weights)
        geos = w * shapely.minimum_bounding_radius(shapely.multipoints(pts))
        assert m.weighted_radius == pytest.approx(geos, rel=1e-9)
        assert m.weighted_radius == pytest.approx(slsqp_minimax(pts, weights), rel=1e-6)
        assert m.weighted_radius == pytest.approx(weighted_radius(pts, weights, m.location), rel=1e-13)


def test_minimax_two_points_divide_the_segment_in_inverse_weight_ratio() -> None:
    # Closed form: w1|x − a1| = w2|x − a2| on the segment gives x = (w1 a1 + w2 a2)/(w1 + w2).
    m = pw.minimax_point([[0, 0], [6, 0]], [1, 2])
    assert np.allclose(m.location, [4.0, 0.0], atol=1e-15)
    assert m.weighted_radius == pytest.approx(4.0, rel=1e-15)


def test_minimax_zero_weights_are_ignored() -> None:
    # Reference: slsqp_minimax (scipy SLSQP) on the points of positive weight only.
    pts = np.array([[0, 0], [1e6, 1e6], [2, 0], [1, 3]], dtype=float)
    m = pw.minimax_point(pts, [1.0, 0.0, 2.0, 1.5])
    kept, w = pts[[0, 2, 3]], np.array([1.0, 2.0, 1.5])
    assert m.weighted_radius == pytest.approx(slsqp_minimax(kept, w), rel=1e-6)
    assert m.weighted_radius == pytest.approx(weighted_radius(kept, w, m.location), rel=1e-13)
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
    assert [e.semi_major, e.semi_minor] == pytest.approx([a / math.sqrt(2), b / math.sqrt(2)], rel=1e-9)
    assert e.angle == pytest.approx(math.degrees(t), abs=1e-7)   # degrees ccw from +x
    assert sorted(e.support) == [50, 51, 52, 53]


@pytest.mark.parametrize("name, points", clouds(), ids=[n for n, _ in clouds()])
def test_ellipse_covers_certifies_its_gap_and_support_is_on_the_boundary(name: str, points: np.ndarray) -> None:
    tol = 1e-7
    e = pw.enclosing_ellipse(points, tol=tol)
    assert e.converged and 0 <= e.relative_gap <= tol
    assert np.all(ellipse_form(e, points) <= COVER)
    assert np.all(ellipse_form(e, points[e.support]) >= 1 - 4 * tol)
    a, b = e.semi_major, e.semi_minor
    assert a >= b > 0 and e.area == pytest.approx(math.pi * a * b, rel=1e-12)


@pytest.mark.parametrize("name, points", clouds(), ids=[n for n, _ in clouds()])
def test_ellipse_matches_an_independent_todd_yildirim_mvee(name: str, points: np.ndarray) -> None:
    # Reference: reference_mvee above (Khachiyan 1996 with Todd-Yildirim 2007 away steps,
    # lifted 3x3 form, on scipy.spatial.ConvexHull's vertices), run to eps = 1e-9.
    e = pw.enclosing_ellipse(points, tol=1e-10)
    center, shape = reference_mvee(points, eps=1e-9)
    assert e.area == pytest.approx(math.pi / math.sqrt(np.linalg.det(shape)), rel=1e-8)
    np.testing.assert_allclose(e.shape, shape, rtol=0, atol=1e-6 * np.abs(shape).max())
    assert np.hypot(*(e.center - center)) <= 1e-7 * e.semi_major


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
    expected = sorted(set(labels.tolist()))
    assert circles.labels.tolist() == expected
    assert len(circles) == len(minimax) == len(ellipses) == len(expected)
    # Iteration, [label] and the label-keyed support accessor agree with separate calls on
    # each group's points: a group's own result counts its rows from 0, as the separate call
    # does; the label-keyed support accessor names rows of the whole input.
    for label, c_item, m_item, e_item in zip(expected, circles, minimax, ellipses):
        idx = np.flatnonzero(labels == label)
        c = pw.enclosing_circle(pts[idx])
        for got in (c_item, circles[label]):
            assert isinstance(got, pw.Circle)
            assert got.radius == c.radius and got.center.tolist() == c.center.tolist() and got.area == c.area
            assert got.support.tolist() == c.support.tolist()
        assert circles.support(label).tolist() == idx[c.support].tolist()
        m = pw.minimax_point(pts[idx], w[idx])
        for got in (m_item, minimax[label]):
            assert isinstance(got, pw.MinimaxPoint)
            assert got.weighted_radius == m.weighted_radius and got.location.tolist() == m.location.tolist()
            assert got.support.tolist() == m.support.tolist()
        assert minimax.support(label).tolist() == idx[m.support].tolist()
        e = pw.enclosing_ellipse(pts[idx])
        for got in (e_item, ellipses[label]):
            assert isinstance(got, pw.Ellipse)
            assert np.array_equal(got.shape, e.shape) and got.area == e.area and got.angle == e.angle
            assert (got.semi_major, got.semi_minor, got.relative_gap) == (e.semi_major, e.semi_minor, e.relative_gap)
            assert got.support.tolist() == e.support.tolist()
        assert ellipses.support(label).tolist() == idx[e.support].tolist()
    assert circles.support_offsets[-1] == len(circles.support_index)
    assert 99 not in circles
    with pytest.raises(KeyError):
        circles[99]


def test_group_errors_name_the_group() -> None:
    with pytest.raises(pw.DegenerateInputError, match="group 7"):
        pw.enclosing_ellipse([[0, 0], [1, 0], [0, 1], [5, 5], [6, 6]], groups=[1, 1, 1, 7, 7])
    with pytest.raises(pw.InputError, match="group 2: weights are all zero"):
        pw.minimax_point([[0, 0], [1, 0], [3, 3]], [1, 1, 0], groups=[1, 1, 2])


def test_a_degenerate_group_becomes_a_problem_row_under_skip() -> None:
    # Regression (issue 12): one degenerate group (a single point asked for an ellipse)
    # failed the whole grouped run. With errors="skip" it is a problem row; the other group
    # is solved exactly as a separate call on its points would be.
    pts = np.array([[0, 0], [9, 9], [4, 0], [4, 2], [0, 2]], dtype=float)
    groups = [3, 8, 3, 3, 3]
    with pytest.raises(pw.DegenerateInputError, match="group 8: points must hold at least 3 distinct points; got 1"):
        pw.enclosing_ellipse(pts, groups=groups)
    ellipses = pw.enclosing_ellipse(pts, groups=groups, errors="skip", tol=1e-10)
    assert ellipses.labels.tolist() == [3, 8] and ellipses.skipped.tolist() == [False, True]
    assert ellipses.problem[0] is None
    assert ellipses.problem[1] == "group 8: points must hold at least 3 distinct points; got 1"
    # Closed form: the 4 x 2 box's minimum ellipse has semi-axes 4/sqrt2 and 2/sqrt2.
    assert (ellipses[3].semi_major, ellipses[3].semi_minor) == pytest.approx((4 / math.sqrt(2), 2 / math.sqrt(2)))
    assert ellipses.support(3).tolist() == [0, 2, 3, 4] and ellipses.support(8).tolist() == []
    assert np.isnan(ellipses.area[1]) and np.isnan(ellipses.center[1]).all() and not ellipses.converged[1]
    with pytest.raises(pw.InputError, match="group 8 was skipped"):
        ellipses[8]
    frame = ellipses.to_frame()
    assert frame["group"].tolist() == [3, 8]
    assert frame["problem"].isna().tolist() == [True, False] and frame["problem"][1] == ellipses.problem[1]
    assert np.isnan(frame.loc[1, "semi_major_u"]) and not frame.loc[1, "converged"]
    gdf = ellipses.to_geodataframe()
    assert gdf.geometry.iloc[1] is None and gdf.geometry.iloc[0].area > 0

    # The same for the other two kernels: an all-zero-weight group (minimax) and a NaN row
    # (circle, named by its input row).
    sites = pw.minimax_point(pts, [1, 0, 1, 1, 1], groups=groups, errors="skip")
    assert sites.problem.tolist() == [None, "group 8: weights are all zero; at least one weight must be positive"]
    assert np.isnan(sites.to_frame().loc[1, "weighted_radius_u"]) and sites.support(8).size == 0
    bad = pts.copy()
    bad[1, 0] = np.nan
    circles = pw.enclosing_circle(bad, groups=groups, errors="skip")
    assert circles.problem[1] == "group 8: points[1] has a NaN coordinate; every coordinate must be finite"
    assert circles.problem_detail[1].row == 1 and circles.problem_detail[1].group == 8
    assert circles[3].radius == pw.enclosing_circle(pts[[0, 2, 3, 4]]).radius
    with pytest.raises(pw.InputError, match="errors"):
        pw.enclosing_circle(pts, groups=groups, errors="ignore")  # type: ignore[call-overload]


# --- tables: to_frame / to_geodataframe ----------------------------------------------------

def test_circle_frames_hold_the_attributes_and_the_polygon_covers_the_points() -> None:
    pts = np.random.default_rng(12).normal(size=(300, 2)) * [3.0, 1.0] + [1000.0, -50.0]
    c = pw.enclosing_circle(pts)
    frame = c.to_frame()
    assert list(frame.columns) == ["x", "y", "radius_u", "area_u2"]
    assert frame.iloc[0].tolist() == [c.center[0], c.center[1], c.radius, c.area]
    # Closed form: area = pi r^2.
    assert c.area == pytest.approx(math.pi * c.radius**2, rel=1e-15)
    gdf = c.to_geodataframe(crs="EPSG:32632")
    assert gdf.crs.to_epsg() == 32632 and len(gdf) == 1
    polygon = gdf.geometry.iloc[0]
    # Reference: shapely. The 128-gon circumscribes the circle: it covers every point, its
    # area is pi r^2 times tan(pi/128)/(pi/128) (closed form), and it lies within r/cos(pi/128).
    assert shapely.contains_xy(polygon, pts[:, 0], pts[:, 1]).all()
    assert polygon.area == pytest.approx(math.pi * c.radius**2, rel=3e-4)
    assert polygon.area == pytest.approx(128 * c.radius**2 * math.tan(math.pi / 128), rel=1e-12)
    assert shapely.hausdorff_distance(polygon.exterior, shapely.Point(c.center).buffer(c.radius, 64).exterior) \
        <= c.radius * (1 / math.cos(math.pi / 128) - 1) * 1.01
    assert pd.api.types.is_float_dtype(frame["radius_u"])


def test_ellipse_frames_hold_the_attributes_and_the_polygon_covers_the_points() -> None:
    rng = np.random.default_rng(13)
    pts = rng.normal(size=(400, 2)) @ np.array([[4.0, 1.0], [0.0, 0.7]]) + [500_000.0, 6_000_000.0]
    e = pw.enclosing_ellipse(pts, tol=1e-9)
    frame = e.to_frame()
    assert list(frame.columns) == ["x", "y", "semi_major_u", "semi_minor_u", "angle_deg", "area_u2",
                                   "relative_gap", "iterations", "converged"]
    assert frame.iloc[0].tolist() == [e.center[0], e.center[1], e.semi_major, e.semi_minor, e.angle, e.area,
                                      e.relative_gap, e.iterations, e.converged]
    # The angle is in degrees, counter-clockwise from +x: the major axis direction
    # (cos, sin) is the eigenvector of the shape matrix's smaller eigenvalue (numpy.linalg.eigh).
    values, vectors = np.linalg.eigh(e.shape)
    major = vectors[:, 0]
    assert abs(math.sin(math.radians(e.angle) - math.atan2(major[1], major[0]))) <= 1e-9
    assert -90 < e.angle <= 90
    assert (e.semi_major, e.semi_minor) == pytest.approx(tuple(1 / np.sqrt(values)), rel=1e-9)
    polygon = e.to_geodataframe().geometry.iloc[0]
    # Reference: shapely. The polygon circumscribes the ellipse (an affine image of the
    # circumscribing 128-gon), so it covers every point; its area exceeds the ellipse's by
    # the factor tan(pi/128)/(pi/128) (closed form).
    assert shapely.contains_xy(polygon, pts[:, 0], pts[:, 1]).all()
    assert polygon.area == pytest.approx(e.area * math.tan(math.pi / 128) / (math.pi / 128), rel=1e-9)


def test_minimax_frame_and_point_geometry() -> None:
    pts = np.array([[0, 0], [3, 0], [0, 4]], dtype=float)
    m = pw.minimax_point(pts, [1.0, 2.0, 1.0])
    frame = m.to_frame()
    assert list(frame.columns) == ["x", "y", "weighted_radius_u"]
    assert frame.iloc[0].tolist() == [m.location[0], m.location[1], m.weighted_radius]
    point = m.to_geodataframe().geometry.iloc[0]
    assert (point.x, point.y) == (m.location[0], m.location[1])
    # The unit set by the caller (the GeoPandas layer: the CRS's unit) names the column.
    assert list(dataclasses.replace(m, unit="m").to_frame().columns) == ["x", "y", "weighted_radius_m"]


def test_grouped_frames_equal_the_stacked_single_frames() -> None:
    rng = np.random.default_rng(14)
    pts = rng.normal(size=(90, 2))
    labels = np.repeat([4, -2, 11], 30)
    w = rng.uniform(0.5, 2.0, 90)
    for grouped in (pw.enclosing_circle(pts, groups=labels), pw.minimax_point(pts, w, groups=labels),
                    pw.enclosing_ellipse(pts, groups=labels)):
        frame = grouped.to_frame()
        assert frame["group"].tolist() == [-2, 4, 11] and frame["problem"].isna().all()
        singles = pd.concat([item.to_frame() for item in grouped], ignore_index=True)
        pd.testing.assert_frame_equal(frame.drop(columns=["group", "problem"]), singles, check_dtype=False)
        gdf = grouped.to_geodataframe(crs="EPSG:3857")
        assert len(gdf) == 3 and gdf.crs.to_epsg() == 3857
        for label, geom in zip(gdf["group"], gdf.geometry):
            inside = pts[labels == label]
            single = grouped[label].to_geodataframe().geometry.iloc[0]
            assert geom.equals_exact(single, 0.0)
            if geom.geom_type == "Polygon":
                # Reference: shapely; the circumscribing polygon covers the group's points.
                assert shapely.contains_xy(geom, inside[:, 0], inside[:, 1]).all()
        # No column shadows a GeoDataFrame member (gdf.area must stay the geometry's area).
        assert not set(frame.columns) & set(dir(gpd.GeoDataFrame))


# --- number arguments -------------------------------------------------------------------------

TRIANGLE = [[0, 0], [1, 0], [0, 1]]


@pytest.mark.parametrize("call, argument, message", [
    (lambda: pw.enclosing_circle(TRIANGLE, seed=-1), "seed", "seed must be an integer from 0 to 2**64 - 1; got -1"),
    (lambda: pw.enclosing_circle(TRIANGLE, seed=np.int64(-3)), "seed", "got -3"),
    (lambda: pw.enclosing_circle(TRIANGLE, seed=2**64), "seed", "got 18446744073709551616"),
    (lambda: pw.enclosing_circle(TRIANGLE, seed=1.5), "seed", "got 1.5"),
    (lambda: pw.enclosing_circle(TRIANGLE, groups=[0, 0, 0], seed=-1), "seed", "got -1"),
    (lambda: pw.enclosing_ellipse(TRIANGLE, tol=float("nan")), "tol", "tol must be > 0 and < 1; got nan"),
    (lambda: pw.enclosing_ellipse(TRIANGLE, tol=np.float64("nan")), "tol", "got nan"),
    (lambda: pw.enclosing_ellipse(TRIANGLE, tol="a"), "tol", "tol must be a number (> 0 and < 1); got 'a' (str)"),
    (lambda: pw.enclosing_ellipse(TRIANGLE, tol=0), "tol", "got 0"),
    (lambda: pw.enclosing_ellipse(TRIANGLE, groups=[1, 1, 1], tol=1.0), "tol", "got 1.0"),
])
def test_number_arguments_are_input_errors_naming_the_argument(call, argument: str, message: str) -> None:
    with pytest.raises(pw.InputError) as info:
        call()
    assert info.value.argument == argument
    assert message in str(info.value)
    assert "np." not in str(info.value)


def test_seed_accepts_any_integer_type_and_gives_the_same_circle() -> None:
    pts = np.random.default_rng(3).normal(size=(500, 2))
    a = pw.enclosing_circle(pts, seed=7)
    b = pw.enclosing_circle(pts, seed=np.uint64(7))
    assert a.center.tolist() == b.center.tolist() and a.radius == b.radius
    assert pw.enclosing_circle(pts, seed=2**64 - 1).radius == pytest.approx(a.radius, rel=1e-14)


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
    assert m.weighted_radius == pytest.approx(weighted_radius(pts, w, m.location), rel=1e-12, abs=1e-300)
    for s in m.support:
        assert w[s] * np.hypot(*(pts[s] - m.location)) == pytest.approx(m.weighted_radius, rel=1e-8, abs=1e-9)
    # No nearby location does better (first-order optimality, probed in 64 directions).
    h = 1e-6 * max(m.weighted_radius, 1e-9)
    t = np.linspace(0, 2 * np.pi, 64, endpoint=False)
    for x in m.location + h * np.column_stack([np.cos(t), np.sin(t)]):
        assert weighted_radius(pts, w, x) >= m.weighted_radius * (1 - 1e-10) - 1e-12
    perm = data.draw(st.permutations(range(n)))
    assert pw.minimax_point(pts[perm], w[perm]).weighted_radius == pytest.approx(m.weighted_radius, rel=1e-9, abs=1e-9)
    moved = pw.minimax_point(2.5 * pts @ rotation(1.1).T + [300.0, -40.0], w)
    assert moved.weighted_radius == pytest.approx(2.5 * m.weighted_radius, rel=1e-8, abs=1e-8)


@given(general_sets, st.randoms(use_true_random=False))
def test_ellipse_property_cover_boundary_and_equivariance(pts: np.ndarray, rnd) -> None:
    try:
        e = pw.enclosing_ellipse(pts, tol=1e-8)
    except pw.DegenerateInputError as exc:
        # Documented: fewer than three distinct or collinear points, or a set so thin that
        # the ellipse's matrix cannot be represented (its entries' rounding exceeds its
        # smaller eigenvalue). Checked exactly, in rationals: the width across the line
        # through the farthest pair, relative to that pair's length.
        distinct = [tuple(Fraction(float(v)) for v in p) for p in np.unique(pts, axis=0)]
        if len(distinct) < 3:
            return
        (x0, y0) = distinct[0]
        x1, y1 = max(distinct, key=lambda p: (p[0] - x0) ** 2 + (p[1] - y0) ** 2)
        length2 = (x1 - x0) ** 2 + (y1 - y0) ** 2
        thinness = max(abs((x1 - x0) * (y - y0) - (y1 - y0) * (x - x0)) for x, y in distinct) / length2
        assert thinness == 0 or ("not representable" in str(exc) and thinness < 1e-7), (thinness, exc)
        return
    assert np.all(ellipse_form(e, pts) <= COVER)
    assert e.relative_gap <= 1e-8 or not e.converged
    # Equivariance is only a fair test where rounding of the moved coordinates cannot make
    # the cloud degenerate: keep clouds whose ellipse is not extremely thin.
    extent = float(np.ptp(pts, axis=0).max())
    assume(e.semi_minor >= 1e-4 * extent and extent >= 1e-3)
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
    assert np.all(np.hypot(*(pts - m.location).T) <= m.weighted_radius * COVER)
    if len(np.unique(pts, axis=0)) >= 2:
        # Reference: shapely.minimum_bounding_radius (GEOS); unit weights.
        assert m.weighted_radius == pytest.approx(ref, rel=1e-9)
    else:
        assert m.weighted_radius == 0.0
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
