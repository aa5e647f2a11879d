"""Tests of the weighted Fermat–Weber point (placewise.weber_point)."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.optimize
from hypothesis import given
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

import placewise as pw
from hostile import AWKWARD_POINTS, BAD_POINTS, BAD_WEIGHTS

SQRT3 = math.sqrt(3.0)


def objective(points: np.ndarray, weights: np.ndarray, x: np.ndarray) -> float:
    return float(np.sum(weights * np.hypot(points[:, 0] - x[0], points[:, 1] - x[1])))


def scipy_weber(points: np.ndarray, weights: np.ndarray) -> tuple[np.ndarray, float]:
    """Reference: scipy.optimize.minimize (Nelder–Mead, then Powell) on the same objective,
    in a local frame so large offsets do not cost it precision."""
    origin = points.mean(axis=0)
    local = points - origin
    start = np.average(local, axis=0, weights=weights)
    f = lambda x: objective(local, weights, x)  # noqa: E731
    best = scipy.optimize.minimize(f, start, method="Nelder-Mead",
                                   options={"xatol": 1e-12, "fatol": 1e-14, "maxiter": 20_000})
    polished = scipy.optimize.minimize(f, best.x, method="Powell", options={"xtol": 1e-12, "ftol": 1e-15})
    x = polished.x if polished.fun < best.fun else best.x
    return x + origin, f(x)


# --- against an outside reference ------------------------------------------------------

@pytest.mark.parametrize(
    "name, offset, weight_kind",
    [
        ("uniform", 0.0, "unit"),
        ("gaussian_skewed", 0.0, "lognormal"),
        ("clustered_heavy_tail", 0.0, "pareto"),
        ("far_offset_utm_like", 6_000_000.0, "lognormal"),
    ],
)
def test_cost_not_above_scipy_minimize(name: str, offset: float, weight_kind: str) -> None:
    # Reference: scipy.optimize.minimize on the same objective; ours must be no worse.
    rng = np.random.default_rng(len(name))
    n = 400
    pts = rng.normal(size=(n, 2)) * [300.0, 120.0] + [500_000.0, offset]
    if name == "clustered_heavy_tail":
        pts[: n // 2] += 2_000.0
    w = {"unit": np.ones(n), "lognormal": rng.lognormal(sigma=1.5, size=n),
         "pareto": rng.pareto(1.2, size=n) + 0.01}[weight_kind]
    ours = pw.weber_point(pts, w)
    assert ours.converged
    _, ref_cost = scipy_weber(pts, w)
    assert ours.cost <= ref_cost * (1 + 1e-12)
    # and the certificate holds against the reference optimum estimate
    assert ours.cost - ref_cost <= ours.gap + 1e-9 * ours.cost


# --- closed forms ------------------------------------------------------------------------

def test_acute_triangle_torricelli_point() -> None:
    # Closed form (derived from the 120-degree condition): for (0,0), (4,0), (2,4) the
    # Torricelli point is (2, 2/sqrt(3)) and the cost is 4 + 2*sqrt(3).
    r = pw.weber_point([[0, 0], [4, 0], [2, 4]])
    assert r.converged
    assert r.cost == pytest.approx(4 + 2 * SQRT3, rel=1e-12)
    np.testing.assert_allclose(r.location, [2.0, 2.0 / SQRT3], atol=1e-9)


@pytest.mark.parametrize("apex_height", [1.0, 0.5, 0.01, 10.0 / (2 * SQRT3)])
def test_angle_of_120_degrees_or_more_puts_optimum_at_that_vertex(apex_height: float) -> None:
    # Textbook fact: if a triangle's angle at a vertex is >= 120 degrees, that vertex is the
    # Fermat point. (0,0), (10,0), (5,h) has an apex angle >= 120 degrees iff h <= 5/sqrt(3).
    r = pw.weber_point([[0, 0], [10, 0], [5, apex_height]])
    np.testing.assert_allclose(r.location, [5.0, apex_height], atol=1e-9)


@pytest.mark.parametrize("side", [1.0, 3.0, 1e-6, 1e6])
def test_equilateral_triangle_centroid_cost_root3_side(side: float) -> None:
    # Closed form: the equilateral triangle's Fermat point is its centroid, cost sqrt(3)*side.
    pts = np.array([[0, 0], [side, 0], [side / 2, side * SQRT3 / 2]])
    r = pw.weber_point(pts)
    assert r.cost == pytest.approx(SQRT3 * side, rel=1e-12)
    np.testing.assert_allclose(r.location, pts.mean(axis=0), atol=1e-9 * side)


def test_majority_theorem() -> None:
    # Witzgall (1964): a point whose weight is at least the sum of all others is optimal.
    rng = np.random.default_rng(3)
    pts = rng.uniform(size=(30, 2))
    w = rng.uniform(size=30)
    w[17] = w.sum() - w[17]
    r = pw.weber_point(pts, w)
    np.testing.assert_array_equal(r.location, pts[17])


def test_manhattan_matches_brute_force_weighted_median() -> None:
    # Reference: brute force over all breakpoints (the L1 objective is piecewise linear and
    # separable, so some data coordinate is optimal on each axis).
    rng = np.random.default_rng(5)
    pts = rng.integers(0, 50, size=(61, 2)).astype(float)
    w = rng.integers(1, 9, size=61).astype(float)
    r = pw.weber_point(pts, w, metric="manhattan")
    brute = sum(min(np.sum(w * np.abs(pts[:, k] - c)) for c in pts[:, k]) for k in (0, 1))
    assert r.cost == pytest.approx(brute, rel=1e-14)
    assert r.gap == 0 and r.converged


def test_all_duplicates_cost_zero() -> None:
    r = pw.weber_point(np.full((9, 2), 7.25))
    np.testing.assert_array_equal(r.location, [7.25, 7.25])
    assert r.cost == 0 and r.converged


# --- grouped runs ---------------------------------------------------------------------------

def test_groups_equal_separate_calls_sorted_by_label() -> None:
    rng = np.random.default_rng(11)
    pts = rng.normal(size=(500, 2))
    w = rng.uniform(0.1, 2, size=500)
    labels = rng.choice([40, -3, 7, 1000], size=500)
    grouped = pw.weber_point(pts, w, groups=labels)
    np.testing.assert_array_equal(grouped.labels, [-3, 7, 40, 1000])
    for g, label in enumerate(grouped.labels):
        mask = labels == label
        single = pw.weber_point(pts[mask], w[mask])
        np.testing.assert_array_equal(grouped.location[g], single.location)
        assert grouped.cost[g] == single.cost
        assert grouped.converged[g]


def test_group_error_names_the_group() -> None:
    pts = np.array([[0.0, 0.0], [1.0, 1.0], [2.0, 2.0]])
    with pytest.raises(pw.InputError, match=r"group 5: weights are all zero"):
        pw.weber_point(pts, [0.0, 1.0, 0.0], groups=[5, 6, 5])


def test_groups_wrong_dtype_and_length() -> None:
    pts = np.zeros((3, 2))
    with pytest.raises(pw.InputError, match="integer labels"):
        pw.weber_point(pts, groups=[0.5, 1.0, 2.0])
    with pytest.raises(pw.InputError, match=r"groups must have one entry per point \(3\); got 2"):
        pw.weber_point(pts, groups=[1, 2])


# --- hostile input --------------------------------------------------------------------------

@pytest.mark.parametrize("name, points", BAD_POINTS, ids=[n for n, _ in BAD_POINTS])
def test_bad_points_raise_input_error(name: str, points: object) -> None:
    with pytest.raises(pw.InputError):
        pw.weber_point(points)


def test_nan_message_names_the_row() -> None:
    pts = np.zeros((20, 2))
    pts[17, 1] = np.nan
    with pytest.raises(pw.InputError, match=r"points\[17\] has a NaN coordinate"):
        pw.weber_point(pts)


@pytest.mark.parametrize("name, make", BAD_WEIGHTS, ids=[n for n, _ in BAD_WEIGHTS])
def test_bad_weights_raise_input_error(name: str, make) -> None:
    with pytest.raises(pw.InputError):
        pw.weber_point(np.random.default_rng(0).normal(size=(6, 2)), make(6))


def test_bad_parameters() -> None:
    with pytest.raises(pw.InputError, match="metric"):
        pw.weber_point([[0, 0]], metric="chebyshev")  # type: ignore[arg-type]
    with pytest.raises(pw.InputError, match="tol"):
        pw.weber_point([[0, 0]], tol=float("nan"))


@pytest.mark.parametrize("name, points", AWKWARD_POINTS, ids=[n for n, _ in AWKWARD_POINTS])
@pytest.mark.parametrize("metric", ["euclidean", "manhattan"])
def test_awkward_points_give_certified_answers(name: str, points: object, metric: str) -> None:
    pts = np.asarray(points, dtype=float)
    r = pw.weber_point(points, metric=metric)  # type: ignore[arg-type]
    assert r.converged, r
    dist = (np.hypot if metric == "euclidean" else lambda a, b: np.abs(a) + np.abs(b))
    direct = float(np.sum(dist(pts[:, 0] - r.location[0], pts[:, 1] - r.location[1])))
    assert r.cost == pytest.approx(direct, rel=1e-9, abs=1e-300)
    lo, hi = pts.min(axis=0), pts.max(axis=0)
    span = np.maximum(hi - lo, np.abs(hi) * 1e-15)
    assert np.all(r.location >= lo - 1e-9 * span) and np.all(r.location <= hi + 1e-9 * span)


def test_results_are_frozen_and_read_only() -> None:
    r = pw.weber_point([[0, 0], [1, 0], [0, 1]])
    with pytest.raises(AttributeError):
        r.cost = 0.0  # type: ignore[misc]
    with pytest.raises(ValueError):
        r.location[0] = 1.0
    assert repr(r).startswith("WeberPoint(location=[")


def test_fortran_and_c_layouts_agree_exactly() -> None:
    rng = np.random.default_rng(2)
    pts = rng.normal(size=(300, 2))
    a = pw.weber_point(pts)
    b = pw.weber_point(np.asfortranarray(pts))
    c = pw.weber_point(pts.astype(np.float32).astype(np.float64))
    np.testing.assert_array_equal(a.location, b.location)
    assert c.converged


# --- properties ------------------------------------------------------------------------------

coords = st.floats(-1e3, 1e3, allow_nan=False, allow_infinity=False)
clouds = st.integers(1, 40).flatmap(lambda n: arrays(np.float64, (n, 2), elements=coords))


@given(clouds, st.data())
def test_property_gap_bounds_the_error(pts: np.ndarray, data: st.DataObject) -> None:
    w = data.draw(arrays(np.float64, (len(pts),), elements=st.floats(0.0, 10.0)))
    if not np.any(w > 0):
        w[0] = 1.0
    rough = pw.weber_point(pts, w, tol=1e-3)
    fine = pw.weber_point(pts, w, tol=1e-13)
    # The optimum is at least fine.cost - fine.gap; rough's error is bounded by rough.gap.
    assert rough.cost - (fine.cost - fine.gap) <= rough.gap * (1 + 1e-9) + 1e-9 * max(rough.cost, 1e-300)


@given(clouds, st.floats(0, 2 * math.pi), st.tuples(coords, coords))
def test_property_translation_rotation_invariance(pts: np.ndarray, angle: float, shift: tuple[float, float]) -> None:
    c, s = math.cos(angle), math.sin(angle)
    rot = np.array([[c, -s], [s, c]])
    moved = pts @ rot.T + np.asarray(shift)
    a = pw.weber_point(pts, tol=1e-12)
    b = pw.weber_point(moved, tol=1e-12)
    scale = max(1.0, float(np.abs(pts).max()), float(np.abs(moved).max()))
    assert b.cost == pytest.approx(a.cost, rel=1e-7, abs=1e-9 * scale)


@given(clouds, st.randoms(use_true_random=False))
def test_property_permutation_invariance(pts: np.ndarray, rnd) -> None:
    order = list(range(len(pts)))
    rnd.shuffle(order)
    a = pw.weber_point(pts, tol=1e-12)
    b = pw.weber_point(pts[order], tol=1e-12)
    scale = max(1.0, float(np.abs(pts).max()))
    assert b.cost == pytest.approx(a.cost, rel=1e-9, abs=1e-9 * scale)


@given(clouds, st.data())
def test_property_groups_equal_separate_calls(pts: np.ndarray, data: st.DataObject) -> None:
    labels = np.asarray(data.draw(st.lists(st.integers(-3, 3), min_size=len(pts), max_size=len(pts))))
    grouped = pw.weber_point(pts, groups=labels)
    for g, label in enumerate(grouped.labels):
        single = pw.weber_point(pts[labels == label])
        np.testing.assert_array_equal(grouped.location[g], single.location)


def test_iterating_a_result_with_a_skipped_group_reaches_every_solved_group() -> None:
    # Group 2 has a NaN coordinate and is skipped; iterating stopped there with an
    # InputError, so group 3 (solved) could not be reached by a loop. Now the skipped group
    # yields None in its place and every other group equals a call of its own.
    points = np.array([[0, 0], [4, 0], [0, 3], [np.nan, 1], [2, 2], [10, 10], [12, 10], [10, 13]], float)
    groups = np.array([1, 1, 1, 2, 2, 3, 3, 3])
    result = pw.weber_point(points, groups=groups, errors="skip")
    items = list(result)
    assert len(items) == len(result) == 3 and items[1] is None
    for label, item in zip(result.labels, items):
        if label == 2:
            continue
        alone = pw.weber_point(points[groups == label])
        assert item.cost == alone.cost and np.array_equal(item.location, alone.location)
    with pytest.raises(pw.InputError, match="group 2 was skipped"):
        result[2]


def test_a_geoseries_or_geodataframe_region_is_the_union_of_its_rows() -> None:
    # A region given as a GeoSeries (two lots side by side) or a GeoDataFrame failed inside
    # pandas ("truth value of a Series is ambiguous"). It is the union of its rows: the same
    # answers as the union drawn by shapely (union_all), the reference.
    gpd = pytest.importorskip("geopandas")
    shapely = pytest.importorskip("shapely")
    points = np.random.default_rng(4).uniform(0, 10, (30, 2))
    lots = gpd.GeoSeries([shapely.box(6, 0, 8, 4), shapely.box(8, 0, 9, 4)])
    union = shapely.union_all(lots.values)
    for region in (lots, gpd.GeoDataFrame(geometry=lots)):
        got = pw.weber_point(points, region=region)
        ref = pw.weber_point(points, region=union)
        assert np.array_equal(got.location, ref.location) and got.cost == ref.cost
        assert pw.voronoi_cells(points, region).area.sum() == pytest.approx(union.area, rel=1e-12)
    with pytest.raises(pw.InputError, match="region"):
        pw.weber_point(points, region=gpd.GeoSeries([], dtype="geometry"))
