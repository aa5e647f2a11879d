"""Tests of the partition family: placewise.delaunay, placewise.voronoi_cells, placewise.nearest_site.

Every check names the outside reference it compares with (scipy.spatial, shapely, a closed
form, exact rational arithmetic written here).
"""

from __future__ import annotations

import json
import pickle
import typing
from fractions import Fraction

import numpy as np
import pytest
import scipy.spatial
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st

import placewise as pw
from hostile import AWKWARD_POINTS, BAD_POINTS, BAD_WEIGHTS
from placewise.partition import (
    Allocation,
    Allocations,
    DelaunayMesh,
    DelaunayMeshes,
    VoronoiCells,
    VoronoiCellSets,
)

# --- exact predicates for the checks (rational arithmetic on the float inputs) -----------

def exact_orient(a, b, c) -> int:
    """Sign of the orientation determinant, exactly (fractions.Fraction holds any float)."""
    ax, ay, bx, by, cx, cy = (Fraction(float(v)) for v in (*a, *b, *c))
    d = (bx - ax) * (cy - ay) - (by - ay) * (cx - ax)
    return (d > 0) - (d < 0)


def exact_incircle(a, b, c, d) -> int:
    """Sign of the in-circle determinant (positive: d inside the circle of ccw a, b, c), exactly."""
    rows = []
    for p in (a, b, c):
        x, y = Fraction(float(p[0])) - Fraction(float(d[0])), Fraction(float(p[1])) - Fraction(float(d[1]))
        rows.append((x, y, x * x + y * y))
    (a1, a2, a3), (b1, b2, b3), (c1, c2, c3) = rows
    det = a1 * (b2 * c3 - b3 * c2) - a2 * (b1 * c3 - b3 * c1) + a3 * (b1 * c2 - b2 * c1)
    return (det > 0) - (det < 0)


def check_triangulation(points: np.ndarray, t: DelaunayMesh) -> None:
    """Invariants, each with its source: Euler's formula for a triangulated point set
    (t = 2n − 2 − h, e = 3n − 3 − h), counter-clockwise triangles, symmetric adjacency, and
    the empty-circumcircle property across every interior edge, which for a triangulation is
    equivalent to the global property (Delaunay 1934)."""
    pts = np.asarray(points, dtype=np.float64)
    kept = np.flatnonzero(t.representative == np.arange(len(pts)))
    n, h = len(kept), len(t.outline)
    assert len(t.corners) == 2 * n - 2 - h
    assert len(t.edges) == 3 * n - 3 - h
    assert np.all(pts[t.representative] == pts)
    assert set(np.unique(t.corners)) == set(kept.tolist())
    assert len({tuple(e) for e in t.edges.tolist()}) == len(t.edges)
    assert np.all(t.edges[:, 0] < t.edges[:, 1])
    for ti, tri in enumerate(t.corners):
        a, b, c = pts[tri]
        assert exact_orient(a, b, c) > 0
        for k in range(3):
            other = t.across[ti, k]
            if other < 0:
                continue
            u, v = tri[(k + 1) % 3], tri[(k + 2) % 3]
            o = t.corners[other].tolist()
            j = [m for m in range(3) if o[(m + 1) % 3] == v and o[(m + 2) % 3] == u]
            assert len(j) == 1 and t.across[other, j[0]] == ti
            assert exact_incircle(a, b, c, pts[o[j[0]]]) <= 0
    for i in range(h):
        assert exact_orient(*pts[t.outline[[i, (i + 1) % h, (i + 2) % h]]]) >= 0


def triangle_set(triangles: np.ndarray) -> set[tuple[int, ...]]:
    return {tuple(sorted(t)) for t in np.asarray(triangles).tolist()}


# --- Delaunay ------------------------------------------------------------------------------

CLOUDS = {
    "uniform": lambda rng: rng.uniform(0, 1, size=(1500, 2)),
    "gaussian": lambda rng: rng.normal(size=(1500, 2)),
    "clustered": lambda rng: np.vstack([rng.normal(size=(700, 2)) * 0.01, rng.normal(size=(800, 2)) * 5.0]),
    "far_offset_utm_like": lambda rng: rng.uniform(0, 2000, size=(1500, 2)) + [500_000.0, 6_000_000.0],
}


@pytest.mark.parametrize("name", list(CLOUDS))
def test_triangles_equal_scipy_delaunay(name: str) -> None:
    # Reference: scipy.spatial.Delaunay (Qhull) on general-position clouds, as sets of triangles.
    pts = CLOUDS[name](np.random.default_rng(len(name)))
    ours = pw.delaunay(pts)
    ref = scipy.spatial.Delaunay(pts)
    assert triangle_set(ours.corners) == triangle_set(ref.simplices)
    check_triangulation(pts, ours)


def test_far_offset_beyond_qhull_precision_equals_scipy_on_the_exactly_shifted_cloud() -> None:
    # At offset 1e9 the spread of 50 keeps only ~8 digits, where Qhull's floating-point
    # tests can disagree with exact ones. Shifting by the offset is exact here (Sterbenz's
    # lemma: x − y is exact when y/2 <= x <= 2y), so scipy.spatial.Delaunay on the shifted
    # cloud is the reference for the same point set; ours is built on the unshifted input.
    rng = np.random.default_rng(99)
    offset = np.array([1e9, -3e8])
    pts = rng.normal(size=(1500, 2)) * 50.0 + offset
    shifted = pts - offset
    assert np.all(shifted + offset == pts)
    ours = pw.delaunay(pts)
    assert triangle_set(ours.corners) == triangle_set(scipy.spatial.Delaunay(shifted).simplices)
    check_triangulation(pts, ours)


def test_outline_equals_scipy_convex_hull() -> None:
    # Reference: scipy.spatial.ConvexHull, whose 2-D vertices are counter-clockwise.
    pts = np.random.default_rng(3).normal(size=(800, 2))
    ours = pw.delaunay(pts).outline.tolist()
    ref = scipy.spatial.ConvexHull(pts).vertices.tolist()
    start = ours.index(ref[0])
    assert ours[start:] + ours[:start] == ref


LARGE_CLOUDS = {
    "uniform": lambda rng: rng.uniform(0, 1, size=(150_000, 2)),
    "gaussian": lambda rng: rng.normal(size=(150_000, 2)),
}
# (Tightly clustered or far-offset clouds of this size are left out: on them Qhull returns a
# few triangles that fail the exact in-circle test, so it cannot serve as the reference; the
# Rust tests compare those clouds' stitched triangulation with the one built whole.)


@pytest.mark.parametrize("name", list(LARGE_CLOUDS))
def test_large_clouds_built_in_strips_equal_scipy_delaunay(name: str) -> None:
    # From 100,000 points the triangulation is built in parallel strips and stitched.
    # Reference: scipy.spatial.Delaunay (Qhull) on the same cloud, as sets of triangles.
    pts = LARGE_CLOUDS[name](np.random.default_rng(7))
    ours = pw.delaunay(pts)
    assert triangle_set(ours.corners) == triangle_set(scipy.spatial.Delaunay(pts).simplices)
    # Adjacency is symmetric: t's neighbour across an edge has t as a neighbour.
    t_idx, k_idx = np.nonzero(ours.across >= 0)
    assert np.all((ours.across[ours.across[t_idx, k_idx]] == t_idx[:, None]).any(axis=1))
    n, h = len(pts), len(ours.outline)
    assert len(ours.edges) == 3 * n - 3 - h  # Euler's formula


def test_large_grid_built_in_strips_gives_two_triangles_per_cell() -> None:
    # Closed form: a k × k grid is split into 2 (k − 1)² triangles; 160,000 points take the
    # stitched path, whose seams cross cocircular cells.
    k = 400
    grid = np.stack(np.meshgrid(np.arange(k, dtype=float), np.arange(k, dtype=float)), axis=-1).reshape(-1, 2)
    t = pw.delaunay(grid)
    assert len(t.corners) == 2 * (k - 1) ** 2
    assert len(t.edges) == 3 * k * k - 3 - len(t.outline) == 3 * k * k - 3 - 4 * (k - 1)
    a, b, c = (grid[t.corners[:, i]] for i in range(3))
    cross = (b[:, 0] - a[:, 0]) * (c[:, 1] - a[:, 1]) - (b[:, 1] - a[:, 1]) * (c[:, 0] - a[:, 0])
    assert np.all(cross == 1.0)  # every triangle is half a unit cell, counter-clockwise


@pytest.mark.parametrize("k", [2, 3, 8, 25])
def test_grid_gives_two_triangles_per_cell(k: int) -> None:
    # Closed form: a k × k grid (all cells cocircular) is split into 2 (k − 1)² triangles.
    grid = np.array([[i, j] for i in range(k) for j in range(k)], dtype=float)
    t = pw.delaunay(grid)
    assert len(t.corners) == 2 * (k - 1) ** 2
    check_triangulation(grid, t)


def test_points_on_a_circle_give_n_minus_two_triangles() -> None:
    # Closed form: a convex polygon with n vertices is split into n − 2 triangles.
    angles = np.arange(24) * 2 * np.pi / 24
    pts = np.column_stack([np.cos(angles), np.sin(angles)]) * 1e3 + [5e5, 5e6]
    t = pw.delaunay(pts)
    assert len(t.corners) == 22
    check_triangulation(pts, t)


def test_duplicates_map_to_first_row_and_triangulate_the_distinct_points() -> None:
    # Reference: scipy.spatial.Delaunay on the distinct points (numpy.unique gives them).
    rng = np.random.default_rng(7)
    base = rng.normal(size=(300, 2))
    pts = np.vstack([base, base[::3], base[:5]])
    t = pw.delaunay(pts)
    assert t.representative[:300].tolist() == list(range(300))
    assert t.representative[300:400].tolist() == list(range(0, 300, 3))
    assert t.representative[400:].tolist() == list(range(5))
    assert triangle_set(t.corners) == triangle_set(scipy.spatial.Delaunay(base).simplices)
    check_triangulation(pts, t)


def test_negative_zero_is_a_duplicate_of_zero() -> None:
    t = pw.delaunay([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [-0.0, -0.0]])
    assert t.representative.tolist() == [0, 1, 2, 0]


@pytest.mark.parametrize(
    "points, words",
    [
        ([[0, 0], [1, 1], [2, 2], [3, 3]], "collinear"),
        ([[0, 0], [1, 1], [0, 0], [1, 1]], "3 distinct points; got 2"),
        ([[4, 4]] * 9, "3 distinct points; got 1"),
        ([[0, 0], [1, 1]], "at least 3 points; got 2"),
    ],
)
def test_degenerate_sets_raise_degenerate_input_error(points, words: str) -> None:
    with pytest.raises(pw.DegenerateInputError, match=words):
        pw.delaunay(points)


@pytest.mark.parametrize("case, points", BAD_POINTS, ids=[n for n, _ in BAD_POINTS])
def test_delaunay_bad_points_raise_input_error(case, points) -> None:
    with pytest.raises(pw.InputError):
        pw.delaunay(points)


@pytest.mark.parametrize("case, points", AWKWARD_POINTS, ids=[n for n, _ in AWKWARD_POINTS])
def test_delaunay_awkward_points_are_triangulated_or_refused_as_degenerate(case, points) -> None:
    try:
        t = pw.delaunay(points)
    except pw.DegenerateInputError:
        assert case in {"collinear", "all_same", "single"}
        return
    pts = np.asarray(points, dtype=np.float64)
    if case not in {"huge_scale", "tiny_scale"}:  # the checker's rationals are exact anyway; keep it quick
        check_triangulation(pts, t)
    if case in {"huge_scale", "tiny_scale", "float32", "far_offset", "fortran_order"}:
        # Reference: scipy.spatial.Delaunay. The far-offset cloud is shifted back first, an
        # exact subtraction (Sterbenz's lemma), since Qhull's floating-point tests lose the
        # cloud's few remaining digits at that offset.
        shift = np.array([500_000.0, 6_000_000.0]) if case == "far_offset" else np.zeros(2)
        assert np.all((pts - shift) + shift == pts)
        assert triangle_set(t.corners) == triangle_set(scipy.spatial.Delaunay(pts - shift).simplices)


def test_input_array_stays_writeable() -> None:
    pts = np.random.default_rng(0).normal(size=(20, 2))
    t = pw.delaunay(pts)
    assert pts.flags.writeable and not t.points.flags.writeable
    with pytest.raises(ValueError):
        t.corners[0, 0] = 5


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.integers(-5, 5), st.integers(-5, 5)), min_size=3, max_size=50))
def test_integer_clouds_with_repeats_and_cocircular_quads_satisfy_invariants(raw) -> None:
    pts = np.array(raw, dtype=float)
    try:
        t = pw.delaunay(pts)
    except pw.DegenerateInputError:
        # Only when the distinct points are fewer than three or all collinear (numpy rank).
        distinct = np.unique(pts, axis=0)
        assert len(distinct) < 3 or np.linalg.matrix_rank(distinct[1:] - distinct[0]) < 2
        return
    check_triangulation(pts, t)


@settings(max_examples=30, deadline=None)
@given(st.integers(0, 2**32 - 1), st.sampled_from([0.0, 6e6, -1e10]))
def test_same_triangles_whatever_the_input_order(seed: int, offset: float) -> None:
    # The Delaunay triangulation of points in general position is unique (Delaunay 1934).
    rng = np.random.default_rng(seed)
    pts = rng.normal(size=(60, 2)) + offset
    perm = rng.permutation(60)
    a = pw.delaunay(pts)
    b = pw.delaunay(pts[perm])
    assert triangle_set(a.corners) == {tuple(sorted(perm[list(t)])) for t in b.corners.tolist()}


# --- Voronoi cells -----------------------------------------------------------------------

def reference_cells(sites: np.ndarray, region) -> list:
    """Reference: shapely.voronoi_polygons (GEOS) extended to the region's box and intersected
    with the region (shapely.intersection), matched to sites by ordered=True."""
    extent = shapely.box(*region.bounds).union(shapely.MultiPoint(sites).envelope)
    polys = shapely.get_parts(shapely.voronoi_polygons(shapely.MultiPoint(sites), extend_to=extent, ordered=True))
    return list(shapely.intersection(polys, region))


BOX = shapely.box(0.0, 0.0, 100.0, 60.0)
# An L-shaped, non-convex region with a square hole (invented shapes).
L_WITH_HOLE = shapely.Polygon(
    [(0, 0), (100, 0), (100, 40), (45, 40), (45, 100), (0, 100)], [[(10, 10), (30, 10), (30, 25), (10, 25)]]
)
TWO_ISLANDS = shapely.MultiPolygon([shapely.box(0, 0, 40, 40), shapely.Polygon([(50, 0), (90, 0), (70, 40)])])


@pytest.mark.parametrize("region_name", ["box", "l_with_hole", "two_islands"])
@pytest.mark.parametrize("offset", [0.0, 6_000_000.0])
def test_cell_areas_equal_shapely_voronoi_intersected_with_region(region_name: str, offset: float) -> None:
    region = {"box": BOX, "l_with_hole": L_WITH_HOLE, "two_islands": TWO_ISLANDS}[region_name]
    region = shapely.affinity.translate(region, offset, offset)
    rng = np.random.default_rng(11)
    sites = rng.uniform(-5, 105, size=(300, 2)) + offset
    cells = pw.voronoi_cells(sites, region)
    ours = cells.to_shapely()
    ref = reference_cells(sites, region)
    scale = region.area
    for i in range(len(sites)):
        assert abs(cells.area[i] - ref[i].area) <= 1e-9 * scale, i
        assert abs(ours[i].area - cells.area[i]) <= 1e-9 * scale
        assert ours[i].is_valid
        assert ours[i].symmetric_difference(ref[i]).area <= 1e-9 * scale
    # The cells tile the region: areas sum to its area, their union is the region, and they
    # form a valid coverage (shapely.coverage_is_valid: shared edges match vertex for vertex).
    assert abs(cells.area.sum() - region.area) <= 1e-9 * scale
    assert shapely.coverage_is_valid(ours)
    assert shapely.union_all(ours).symmetric_difference(region).area <= 1e-9 * scale
    # Every site inside the region lies in its own cell (shapely.covers).
    for i, s in enumerate(sites):
        if region.contains(shapely.Point(s)):
            assert ours[i].covers(shapely.Point(s))


@pytest.mark.parametrize("scale", [1e-170, 1e-250, 1e150])
def test_cells_at_tiny_and_huge_scales_are_the_scaled_cells(scale: float) -> None:
    # Points within 1e-170 read as collinear (the orientation determinant underflowed), so
    # every cell was a strip and the cells covered 676 % of the region ("too thin").
    # Reference: shapely's Voronoi cells of the unit-scale sites in the unit-scale region
    # (the diagram is scale invariant); ours are scaled back by shapely (their areas in world
    # units would underflow below 1e-154).
    sites = np.random.default_rng(3).random((20, 2))
    region = shapely.box(-0.5, -0.5, 1.5, 1.5)
    ref = reference_cells(sites, region)
    cells = pw.voronoi_cells(sites * scale, shapely.affinity.scale(region, scale, scale, origin=(0, 0)))
    for ours, theirs in zip(cells.to_shapely(), ref):
        back = shapely.affinity.scale(ours, 1 / scale, 1 / scale, origin=(0, 0))
        assert back.symmetric_difference(theirs).area <= 1e-9 * region.area


def test_cells_cut_into_pieces_are_multipolygons_with_exterior_first() -> None:
    # One site between two islands: its cell meets both, so it is stored in two pieces.
    sites = np.array([[20.0, 20.0], [70.0, 10.0], [45.0, 20.0]])
    cells = pw.voronoi_cells(sites, TWO_ISLANDS)
    shapes = cells.to_shapely()
    assert shapes[2].geom_type == "MultiPolygon" and len(shapes[2].geoms) == 2
    assert len(cells.pieces(2)) == 2
    # Reference: shapely on the same construction.
    ref = reference_cells(sites, TWO_ISLANDS)
    for ours, theirs in zip(shapes, ref):
        assert abs(ours.area - theirs.area) < 1e-9


def test_cell_holding_a_hole_has_an_interior_ring() -> None:
    # A single site's cell is the region itself, hole included (closed form: 100² − 20²).
    region = shapely.box(0, 0, 100, 100).difference(shapely.box(40, 40, 60, 60))
    cells = pw.voronoi_cells([[10.0, 10.0]], region)
    assert cells.area.tolist() == pytest.approx([9600.0], rel=1e-12)
    (cell,) = cells.to_shapely()
    assert len(cell.interiors) == 1 and cell.is_valid
    assert len(cells.parts) == 3  # two rings


def test_region_as_ring_array_and_default_region() -> None:
    sites = np.random.default_rng(5).normal(size=(50, 2))
    lo, hi = sites.min(axis=0), sites.max(axis=0)
    pad = 0.1 * (hi - lo)
    # None: the bounding box grown by 10 % on every side (closed form of its area).
    default = pw.voronoi_cells(sites)
    assert default.area.sum() == pytest.approx(np.prod(hi - lo + 2 * pad), rel=1e-12)
    ring = [[lo[0] - pad[0], lo[1] - pad[1]], [hi[0] + pad[0], lo[1] - pad[1]],
            [hi[0] + pad[0], hi[1] + pad[1]], [lo[0] - pad[0], hi[1] + pad[1]]]
    explicit = pw.voronoi_cells(sites, ring)
    np.testing.assert_allclose(explicit.area, default.area, rtol=1e-12)
    # A clockwise ring describes the same region.
    clockwise = pw.voronoi_cells(sites, ring[::-1])
    np.testing.assert_allclose(clockwise.area, default.area, rtol=1e-9, atol=1e-12)


def test_sites_outside_the_region_keep_empty_or_clipped_cells() -> None:
    sites = np.array([[50.0, 30.0], [500.0, 500.0], [-20.0, 30.0], [60.0, 35.0]])
    cells = pw.voronoi_cells(sites, BOX)
    assert cells.area[1] == 0.0 and cells.offsets[1] == cells.offsets[2]
    assert cells.to_shapely()[1].is_empty
    assert cells.area.sum() == pytest.approx(BOX.area, rel=1e-12)
    ref = reference_cells(sites, BOX)
    np.testing.assert_allclose(cells.area, [r.area for r in ref], rtol=1e-9, atol=1e-9)


@pytest.mark.parametrize(
    "sites, areas",
    [
        # Closed forms on the 4 × 2 box [0, 4] × [0, 2].
        ([[1.0, 1.0]], [8.0]),
        ([[1.0, 1.0], [3.0, 1.0]], [4.0, 4.0]),
        ([[0.5, 1.0], [1.5, 1.0], [2.5, 1.0], [3.5, 1.0]], [2.0, 2.0, 2.0, 2.0]),
        ([[2.0, 0.5], [2.0, 1.5]], [4.0, 4.0]),
    ],
)
def test_one_two_and_collinear_sites(sites, areas) -> None:
    cells = pw.voronoi_cells(sites, shapely.box(0, 0, 4, 2))
    np.testing.assert_allclose(cells.area, areas, rtol=1e-12)


def test_grid_sites_give_unit_square_cells() -> None:
    # Closed form: a unit grid in a box offset by half a unit gives unit-square cells.
    sites = np.array([[i, j] for i in range(7) for j in range(5)], dtype=float)
    cells = pw.voronoi_cells(sites, shapely.box(-0.5, -0.5, 6.5, 4.5))
    np.testing.assert_allclose(cells.area, 1.0, rtol=1e-12)
    assert all(s.is_valid for s in cells.to_shapely())
    assert shapely.coverage_is_valid(cells.to_shapely())


def test_to_geojson_round_trips_through_shapely() -> None:
    sites = np.random.default_rng(2).uniform(0, 100, size=(40, 2))
    cells = pw.voronoi_cells(sites, L_WITH_HOLE)
    doc = json.loads(json.dumps(cells.to_geojson()))
    assert doc["type"] == "FeatureCollection" and len(doc["features"]) == 40
    for i, feature in enumerate(doc["features"]):
        assert feature["properties"]["site"] == i
        assert feature["properties"]["area_u2"] == cells.area[i]
        if feature["geometry"] is None:
            assert cells.area[i] == 0.0
            continue
        geom = shapely.geometry.shape(feature["geometry"])
        assert geom.is_valid
        assert geom.area == pytest.approx(cells.area[i], rel=1e-12, abs=1e-12)
        # RFC 7946: exteriors counter-clockwise.
        for polygon in getattr(geom, "geoms", [geom]):
            assert polygon.exterior.is_ccw


@pytest.mark.parametrize(
    "sites, region, error, words",
    [
        ([[0, 0], [1, 1], [0, 0]], None, pw.DegenerateInputError, r"sites\[2\] repeats sites\[0\]"),
        ([[3, 3]], None, pw.DegenerateInputError, "pass a region"),
        ([[0, 0], [1, 0]], [[0, 0], [1, 1], [2, 2]], pw.DegenerateInputError, "no area"),
        ([[0, 0], [1, 0]], shapely.Polygon(), pw.DegenerateInputError, "no area"),
        ([[0, 0], [1, 0]], shapely.LineString([(0, 0), (1, 1)]), pw.InputError, "LineString"),
        ([[0, 0], [1, 0]], [[0, 0], [1, np.nan], [2, 2]], pw.InputError, "region"),
        ([[0, 0], [1, 0]], np.zeros((3, 3)), pw.InputError, r"shape \(m, 2\)"),
    ],
)
def test_voronoi_refusals_name_the_problem(sites, region, error, words: str) -> None:
    with pytest.raises(error, match=words):
        pw.voronoi_cells(sites, region)


CROSSING_SITES = np.array([[1, 1], [9, 9], [5, 5], [3, 7]], dtype=float)
CROSSING_REGIONS = {
    # Parts overlapping on [4, 6]²: the even-odd rule made the overlap a hole (area 64, not
    # the union's 68) and the site at (5, 5) got a cell excluding its own location.
    "overlapping parts": shapely.MultiPolygon([shapely.box(0, 0, 6, 6), shapely.box(4, 4, 10, 10)]),
    # A bow-tie ring, as an array and as a shapely Polygon.
    "bow tie": [[0, 0], [10, 10], [10, 0], [0, 10]],
    "bow tie polygon": shapely.Polygon([(0, 0), (10, 10), (10, 0), (0, 10)]),
}


@pytest.mark.parametrize("name", CROSSING_REGIONS)
@pytest.mark.parametrize("solve", ["voronoi", "voronoi grouped", "power", "capacity"])
def test_regions_whose_rings_cross_are_refused_alike(name: str, solve: str) -> None:
    region = CROSSING_REGIONS[name]
    # Reference: shapely finds each region invalid (its rings cross), so no tiling of it
    # has the polygon's area.
    assert not shapely.is_valid(shapely.Polygon(region) if isinstance(region, list) else region)
    call = {
        "voronoi": lambda: pw.voronoi_cells(CROSSING_SITES, region),
        "voronoi grouped": lambda: pw.voronoi_cells(CROSSING_SITES, region, groups=[0, 0, 1, 1]),
        "power": lambda: pw.power_cells(CROSSING_SITES, np.zeros(4), region),
        "capacity": lambda: pw.capacity_cells(CROSSING_SITES, CROSSING_SITES, [1, 1, 1, 1], region=region),
    }[solve]
    with pytest.raises(pw.DegenerateInputError, match="boundary edges .* cross .* must not intersect") as e:
        call()
    assert e.value.argument == "region"


HOLE_OUTSIDE = shapely.Polygon([(0, 0), (10, 0), (10, 10), (0, 10)], [[(20, 20), (30, 20), (30, 30)]])


@pytest.mark.parametrize("solve", ["voronoi", "power", "capacity", "weber"])
def test_a_hole_outside_its_shell_is_refused_not_tiled_as_a_piece(solve: str) -> None:
    # The even-odd layout read the hole as one more piece: cells of area 150, not 50.
    # Reference: shapely.is_valid_reason ("Hole lies outside shell") and area 50.
    assert shapely.is_valid_reason(HOLE_OUTSIDE).startswith("Hole lies outside shell")
    call = {
        "voronoi": lambda: pw.voronoi_cells(CROSSING_SITES, HOLE_OUTSIDE),
        "power": lambda: pw.power_cells(CROSSING_SITES, np.zeros(4), HOLE_OUTSIDE),
        "capacity": lambda: pw.capacity_cells(CROSSING_SITES, CROSSING_SITES, [1, 1, 1, 1], region=HOLE_OUTSIDE),
        "weber": lambda: pw.weber_point(CROSSING_SITES, region=HOLE_OUTSIDE),
    }[solve]
    with pytest.raises(pw.DegenerateInputError, match=r"hole 0 of polygon 0 is not inside its exterior ring") as e:
        call()
    assert e.value.argument == "region"


@pytest.mark.parametrize(
    "region",
    [
        shapely.MultiPolygon([shapely.box(0, 0, 5, 5), shapely.box(5, 5, 10, 10)]),  # parts touch at a corner
        shapely.Polygon([(0, 0), (10, 0), (10, 10), (0, 10)], [[(0, 5), (4, 3), (4, 7)]]),  # hole touches shell
    ],
)
def test_valid_regions_whose_rings_touch_are_still_tiled(region) -> None:
    # Reference: shapely's validity and area.
    assert shapely.is_valid(region)
    for cells in (pw.voronoi_cells(CROSSING_SITES, region), pw.power_cells(CROSSING_SITES, np.zeros(4), region)):
        assert cells.area.sum() == pytest.approx(region.area, rel=1e-12)


@pytest.mark.parametrize("case, points", BAD_POINTS, ids=[n for n, _ in BAD_POINTS])
def test_voronoi_bad_sites_raise_input_error(case, points) -> None:
    with pytest.raises(pw.InputError):
        pw.voronoi_cells(points, BOX)


@pytest.mark.parametrize("case, points", AWKWARD_POINTS, ids=[n for n, _ in AWKWARD_POINTS])
def test_voronoi_awkward_sites_tile_their_default_region(case, points) -> None:
    try:
        cells = pw.voronoi_cells(points)
    except pw.DegenerateInputError:
        assert case in {"duplicates", "all_same", "single"}
        return
    pts = np.asarray(points, dtype=np.float64)
    lo, hi = pts.min(axis=0), pts.max(axis=0)
    span = hi - lo
    pad = np.where(span > 0, 0.1 * span, 0.1 * span.max())
    box_area = np.prod(span + 2 * pad)  # closed form of the grown box's area
    assert cells.area.sum() == pytest.approx(box_area, rel=1e-9)
    assert np.all(cells.area > 0)


@settings(max_examples=40, deadline=None)
@given(st.sets(st.tuples(st.integers(-8, 8), st.integers(-8, 8)), min_size=1, max_size=40))
def test_integer_sites_tile_a_non_convex_region(raw) -> None:
    # Integer sites: many cocircular and collinear configurations. Reference: the region's
    # area (shapely) and shapely validity.
    sites = np.array(sorted(raw), dtype=float)
    region = shapely.affinity.scale(L_WITH_HOLE, 0.2, 0.2, origin=(0, 0)).buffer(0)
    region = shapely.affinity.translate(region, -9, -9)
    cells = pw.voronoi_cells(sites, region)
    assert cells.area.sum() == pytest.approx(region.area, rel=1e-9)
    shapes = cells.to_shapely()
    assert all(s.is_valid for s in shapes)
    assert shapely.coverage_is_valid(shapes)
    assert shapely.union_all(shapes).symmetric_difference(region).area <= 1e-9 * region.area


def test_cells_plot_and_repr() -> None:
    matplotlib = pytest.importorskip("matplotlib")
    matplotlib.use("Agg")
    cells = pw.voronoi_cells([[1, 1], [3, 1], [2, 3]], L_WITH_HOLE)
    ax = cells.plot()
    assert len(ax.collections) == 1 and len(ax.collections[0].get_paths()) == 3
    assert "VoronoiCells(vertices=<float64 array" in repr(cells) and "sites" not in repr(cells)


# --- nearest-site allocation ---------------------------------------------------------------

@pytest.mark.parametrize("offset", [0.0, 6_000_000.0])
def test_allocation_equals_ckdtree_query(offset: float) -> None:
    # Reference: scipy.spatial.cKDTree.query (continuous random data: no exact ties).
    rng = np.random.default_rng(13)
    sites = rng.uniform(0, 1000, size=(200, 2)) + offset
    pts = rng.normal(500, 300, size=(20_000, 2)) + offset
    w = rng.lognormal(size=len(pts))
    a = pw.nearest_site(pts, sites, w)
    dist, index = scipy.spatial.cKDTree(sites).query(pts)
    np.testing.assert_array_equal(a.assignment, index)
    np.testing.assert_allclose(a.distance, dist, rtol=1e-12, atol=1e-9)
    # Loads: numpy.bincount of the weights by site; cost: the weighted sum of distances.
    np.testing.assert_allclose(a.load, np.bincount(index, weights=w, minlength=len(sites)), rtol=1e-12)
    np.testing.assert_array_equal(a.count, np.bincount(index, minlength=len(sites)))
    assert a.cost == pytest.approx(float(np.sum(w * dist)), rel=1e-12)
    assert a.total_load == pytest.approx(float(np.sum(w)), rel=1e-12)


def test_unit_weights_give_counts() -> None:
    # Reference: numpy.bincount of cKDTree's nearest sites.
    rng = np.random.default_rng(4)
    sites, pts = rng.normal(size=(30, 2)), rng.normal(size=(5000, 2))
    a = pw.nearest_site(pts, sites)
    _, index = scipy.spatial.cKDTree(sites).query(pts)
    np.testing.assert_array_equal(a.load, np.bincount(index, minlength=30))
    np.testing.assert_array_equal(a.count, np.bincount(index, minlength=30))


def test_ties_go_to_the_smaller_site_index() -> None:
    # Closed form: the centre of a square is equally far from its four corners; a point on
    # a bisector is equally far from its two sites; repeated sites serve with the first copy.
    sites = np.array([[1.0, 1.0], [-1.0, 1.0], [-1.0, -1.0], [1.0, -1.0], [1.0, 1.0]])
    a = pw.nearest_site([[0.0, 0.0], [0.0, 2.0], [-3.0, 0.0], [2.0, 2.0]], sites)
    assert a.assignment.tolist() == [0, 0, 1, 0]
    assert a.load.tolist() == [3.0, 1.0, 0.0, 0.0, 0.0]
    assert a.count.tolist() == [3, 1, 0, 0, 0]


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.tuples(st.integers(-20, 20), st.integers(-20, 20)), min_size=1, max_size=30),
    st.lists(st.tuples(st.integers(-40, 40), st.integers(-40, 40)), min_size=1, max_size=100),
)
def test_allocation_equals_brute_force_first_minimum(sites, pts) -> None:
    # Reference: numpy.argmin over exact squared distances (small integers are exact in
    # float64), which returns the first minimum: the smaller site index on ties.
    s, p = np.array(sites, dtype=float), np.array(pts, dtype=float) / 2
    d2 = ((p[:, None, :] - s[None, :, :]) ** 2).sum(axis=2)
    a = pw.nearest_site(p, s)
    np.testing.assert_array_equal(a.assignment, np.argmin(d2, axis=1))
    np.testing.assert_allclose(a.distance, np.sqrt(d2.min(axis=1)), rtol=1e-15)


@pytest.mark.parametrize("case, points", BAD_POINTS, ids=[n for n, _ in BAD_POINTS])
def test_allocation_bad_points_or_sites_raise_input_error(case, points) -> None:
    with pytest.raises(pw.InputError):
        pw.nearest_site(points, [[0.0, 0.0]])
    with pytest.raises(pw.InputError):
        pw.nearest_site([[0.0, 0.0]], points)


@pytest.mark.parametrize("case, points", AWKWARD_POINTS, ids=[n for n, _ in AWKWARD_POINTS])
def test_allocation_of_awkward_points_equals_ckdtree(case, points) -> None:
    # Reference: scipy.spatial.cKDTree.query distances (ties may pick another site).
    pts = np.asarray(points, dtype=np.float64)
    sites = pts[:: max(1, len(pts) // 5)]
    a = pw.nearest_site(points, sites)
    dist, _ = scipy.spatial.cKDTree(sites).query(pts)
    np.testing.assert_allclose(a.distance, dist, rtol=1e-12, atol=0)
    assert a.load.sum() == len(pts) == a.count.sum()


@pytest.mark.parametrize("case, make", BAD_WEIGHTS, ids=[n for n, _ in BAD_WEIGHTS])
def test_allocation_bad_weights_raise_input_error(case, make) -> None:
    with pytest.raises(pw.InputError):
        pw.nearest_site(np.zeros((8, 2)), [[1.0, 1.0]], make(8))


def test_allocation_plot_and_repr() -> None:
    matplotlib = pytest.importorskip("matplotlib")
    matplotlib.use("Agg")
    a = pw.nearest_site([[0, 0], [5, 5], [1, 0]], [[0, 1], [5, 4]])
    ax = a.plot()
    assert len(ax.collections) == 1
    assert repr(a).startswith("Allocation(assignment=[0, 1, 0], distance=")
    t = pw.delaunay([[0, 0], [1, 0], [0, 1], [1, 1]])
    assert len(t.plot().lines) >= 1


# --- names and tables ------------------------------------------------------------------------

def _field_names(cls: type) -> set[str]:
    import dataclasses

    return {f.name for f in dataclasses.fields(cls)}


def test_renamed_fields_regression() -> None:
    # Our own names (not Qhull's or scipy's): corners / across / outline, and assignment.
    assert {"corners", "across", "outline", "edges", "representative"} <= _field_names(DelaunayMesh)
    assert not {"triangles", "adjacent", "hull", "simplices", "neighbors"} & _field_names(DelaunayMesh)
    assert {"assignment", "distance", "load", "count", "cost", "total_load"} <= _field_names(Allocation)
    assert "index" not in _field_names(Allocation)
    assert pw.delaunay is pw.partition.delaunay and isinstance(pw.delaunay([[0, 0], [1, 0], [0, 1]]), DelaunayMesh)


def _all_frames() -> list:
    """Every frame the partition results give, single and grouped."""
    pts = np.random.default_rng(1).uniform(0, 10, size=(40, 2))
    groups = np.arange(40) % 3
    mesh, meshes = pw.delaunay(pts), pw.delaunay(pts, groups=groups)
    cells, cell_sets = pw.voronoi_cells(pts[:9]), pw.voronoi_cells(pts[:9], groups=groups[:9])
    a = pw.nearest_site(pts, pts[:5])
    grouped = pw.nearest_site(pts, pts[:6], groups=groups, site_groups=groups[:6])
    return [
        mesh.to_frame(), mesh.to_geodataframe(), meshes.to_frame(), meshes.to_geodataframe(),
        cells.to_frame(), cells.to_geodataframe(), cell_sets.to_frame(), cell_sets.to_geodataframe(),
        a.to_frame(), a.to_geodataframe(), a.sites_frame(), a.summary(),
        grouped.to_frame(), grouped.to_geodataframe(), grouped.sites_frame(), grouped.summary(),
    ]


def test_no_column_shadows_a_geodataframe_member() -> None:
    # Reference: the members geopandas.GeoDataFrame adds to pandas.DataFrame (area, length,
    # distance, crs, ...) and the index.
    import geopandas
    import pandas

    spatial = (set(dir(geopandas.GeoDataFrame)) - set(dir(pandas.DataFrame))) | {"index", "geometry"}
    assert {"area", "length", "distance", "crs"} <= spatial
    for frame in _all_frames():
        geometry = frame.geometry.name if isinstance(frame, geopandas.GeoDataFrame) else None
        columns = [c for c in frame.columns if c != geometry]
        assert not spatial & set(columns), columns


def test_mesh_frame_matches_attributes_and_shapely_areas() -> None:
    # Reference: shapely.area of the triangles built here from the input rows.
    pts = np.random.default_rng(8).normal(size=(200, 2)) * 1e3 + [5e5, 6e6]
    mesh = pw.delaunay(pts)
    frame = mesh.to_frame()
    assert list(frame.columns) == ["corner_a", "corner_b", "corner_c", "area_u2"]
    np.testing.assert_array_equal(frame[["corner_a", "corner_b", "corner_c"]].to_numpy(), mesh.corners)
    reference = shapely.area(shapely.polygons(pts[mesh.corners]))
    np.testing.assert_allclose(frame["area_u2"], reference, rtol=1e-9)
    np.testing.assert_array_equal(frame["area_u2"], mesh.area)
    # The triangles tile the convex hull (shapely.convex_hull): their areas sum to its area.
    assert mesh.area.sum() == pytest.approx(shapely.MultiPoint(pts).convex_hull.area, rel=1e-12)
    gdf = mesh.to_geodataframe(crs="EPSG:32633")
    assert gdf.crs.to_epsg() == 32633 and gdf.geom_type.eq("Polygon").all()
    np.testing.assert_allclose(gdf.area, reference, rtol=1e-9)
    assert shapely.equals(gdf.geometry.values, shapely.polygons(pts[mesh.corners])).all()


def test_cells_frame_matches_attributes_and_shapely_areas() -> None:
    # Reference: shapely.voronoi_polygons intersected with the region, and shapely.area.
    sites = np.random.default_rng(9).uniform(0, 100, size=(60, 2))
    cells = pw.voronoi_cells(sites, L_WITH_HOLE)
    assert isinstance(cells, VoronoiCells) and len(cells) == 60
    frame = cells.to_frame()
    assert list(frame.columns) == ["x", "y", "area_u2"]
    np.testing.assert_array_equal(frame[["x", "y"]].to_numpy(), sites)
    np.testing.assert_array_equal(frame["area_u2"], cells.area)
    reference = [r.area for r in reference_cells(sites, L_WITH_HOLE)]
    np.testing.assert_allclose(frame["area_u2"], reference, rtol=1e-9, atol=1e-9 * L_WITH_HOLE.area)
    gdf = cells.to_geodataframe()
    np.testing.assert_allclose(gdf.area, reference, rtol=1e-9, atol=1e-9 * L_WITH_HOLE.area)
    assert set(gdf.geom_type) <= {"Polygon", "MultiPolygon"}


def test_allocation_frames_match_attributes_and_ckdtree() -> None:
    # Reference: scipy.spatial.cKDTree.query; loads and counts by numpy.bincount of its sites.
    rng = np.random.default_rng(10)
    pts, sites, w = rng.uniform(0, 50, size=(3000, 2)), rng.uniform(0, 50, size=(12, 2)), rng.uniform(0, 3, 3000)
    a = pw.nearest_site(pts, sites, w)
    dist, index = scipy.spatial.cKDTree(sites).query(pts)
    frame = a.to_frame()
    assert list(frame.columns) == ["assignment", "distance_u"]
    np.testing.assert_array_equal(frame["assignment"], index)
    np.testing.assert_allclose(frame["distance_u"], dist, rtol=1e-12)
    gdf = a.to_geodataframe()
    np.testing.assert_array_equal(shapely.get_coordinates(gdf.geometry.values), pts)
    site_frame = a.sites_frame()
    assert list(site_frame.columns) == ["x", "y", "load", "points"]
    np.testing.assert_allclose(site_frame["load"], np.bincount(index, weights=w, minlength=12), rtol=1e-12)
    np.testing.assert_array_equal(site_frame["points"], np.bincount(index, minlength=12))
    summary = a.summary()
    assert list(summary.columns) == ["cost_u", "load", "points", "sites"] and len(summary) == 1
    assert summary["cost_u"][0] == pytest.approx(float(np.sum(w * dist)), rel=1e-12)
    assert summary["load"][0] == pytest.approx(float(w.sum()), rel=1e-12)
    assert (summary["points"][0], summary["sites"][0]) == (3000, 12)


# --- grouped forms -----------------------------------------------------------------------------

@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.integers(-5, 5), st.integers(-5, 5), st.sampled_from([-2, 0, 9])),
                min_size=1, max_size=80))
def test_grouped_delaunay_equals_separate_calls(raw) -> None:
    # Reference: separate calls on each group's rows; indices mapped to input rows here.
    data = np.array(raw, dtype=float)
    pts, groups = data[:, :2], data[:, 2].astype(int)
    meshes = pw.delaunay(pts, groups=groups, errors="skip")
    assert isinstance(meshes, DelaunayMeshes) and meshes.labels.tolist() == sorted(set(groups.tolist()))
    frame = meshes.to_frame()
    for g, label in enumerate(meshes.labels):
        rows = np.flatnonzero(groups == label)
        try:
            single = pw.delaunay(pts[rows])
        except pw.DegenerateInputError as e:
            assert meshes.problem[g] == f"group {label}: {e}"
            assert np.all(meshes.representative[rows] == -1)
            with pytest.raises(pw.InputError):
                meshes[label]
            continue
        assert meshes.problem[g] is None
        triangles = slice(meshes.triangle_offsets[g], meshes.triangle_offsets[g + 1])
        np.testing.assert_array_equal(meshes.corners[triangles], rows[single.corners])
        np.testing.assert_array_equal(meshes.outline[meshes.outline_offsets[g]:meshes.outline_offsets[g + 1]],
                                      rows[single.outline])
        np.testing.assert_array_equal(meshes.edges[meshes.edge_offsets[g]:meshes.edge_offsets[g + 1]],
                                      rows[single.edges])
        np.testing.assert_array_equal(meshes.representative[rows], rows[single.representative])
        across = meshes.across[triangles]
        np.testing.assert_array_equal(np.where(across >= 0, across - triangles.start, -1), single.across)
        item = meshes[label]
        for name in ("corners", "across", "outline", "edges", "representative", "area", "points"):
            np.testing.assert_array_equal(getattr(item, name), getattr(single, name))
        part = frame[frame["group"] == label]
        np.testing.assert_array_equal(part["area_u2"], single.area)


def test_grouped_delaunay_is_sized_iterable_and_indexed_by_label() -> None:
    pts = np.array([[0, 0], [1, 0], [0, 1], [5, 5], [6, 5], [5, 6], [6, 6]], dtype=float)
    meshes = pw.delaunay(pts, groups=[30, 30, 30, -4, -4, -4, -4])
    assert len(meshes) == 2 and meshes.labels.tolist() == [-4, 30]
    assert [len(m.corners) for m in meshes] == [2, 1]
    assert 30 in meshes and 7 not in meshes
    # Closed forms: a unit square is two triangles of area 1/2; the unit right triangle 1/2.
    assert meshes[-4].area.tolist() == [0.5, 0.5] and meshes[30].area.tolist() == [0.5]
    with pytest.raises(KeyError):
        meshes[7]


def test_grouped_delaunay_errors_name_group_and_input_row() -> None:
    pts = np.array([[0, 0], [1, 0], [0, 1], [5, 5], [np.nan, 5], [5, 6]])
    with pytest.raises(pw.InputError, match=r"group 2: points\[4\] has a NaN coordinate") as info:
        pw.delaunay(pts, groups=[1, 1, 1, 2, 2, 2])
    assert (info.value.group, info.value.row) == (2, 4)
    skipped = pw.delaunay(pts, groups=[1, 1, 1, 2, 2, 2], errors="skip")
    assert skipped.skipped.tolist() == [False, True]
    assert skipped.representative.tolist() == [0, 1, 2, -1, -1, -1]
    with pytest.raises(pw.InputError, match="errors must be"):
        pw.delaunay(pts, groups=[1, 1, 1, 2, 2, 2], errors="ignore")


@settings(max_examples=30, deadline=None)
@given(st.sets(st.tuples(st.integers(-8, 8), st.integers(-8, 8)), min_size=1, max_size=40),
       st.randoms(use_true_random=False))
def test_grouped_voronoi_equals_separate_calls(raw, rnd) -> None:
    # Reference: separate calls on each group's sites; and shapely: every group's cells tile
    # the one region (shapely.area, shapely.coverage_is_valid).
    sites = np.array(sorted(raw), dtype=float)
    groups = np.array([rnd.choice([3, 5, 8]) for _ in range(len(sites))])
    region = shapely.affinity.translate(shapely.affinity.scale(L_WITH_HOLE, 0.2, 0.2, origin=(0, 0)).buffer(0), -9, -9)
    sets = pw.voronoi_cells(sites, region, groups=groups)
    assert isinstance(sets, VoronoiCellSets)
    shapes = sets.to_shapely()
    frame = sets.to_frame()
    np.testing.assert_array_equal(frame["group"], groups)
    for label in sets.labels:
        rows = np.flatnonzero(groups == label)
        single = pw.voronoi_cells(sites[rows], region)
        item = sets[label]
        for name in ("vertices", "offsets", "parts", "area", "exterior", "sites"):
            np.testing.assert_array_equal(getattr(item, name), getattr(single, name))
        np.testing.assert_array_equal(sets.area[rows], single.area)
        assert sets.area[rows].sum() == pytest.approx(region.area, rel=1e-9)
        assert shapely.coverage_is_valid(shapes[rows])
        assert all(a.equals(b) or (a.is_empty and b.is_empty) for a, b in zip(shapes[rows], single.to_shapely()))


def test_grouped_voronoi_repeated_site_names_input_rows() -> None:
    # Rows 1 and 4 of the input are the same location inside group 7.
    sites = np.array([[1.0, 1.0], [2.0, 2.0], [3.0, 1.0], [5.0, 5.0], [2.0, 2.0]])
    groups = [6, 7, 6, 7, 7]
    with pytest.raises(pw.DegenerateInputError, match=r"^group 7: sites: sites\[4\] repeats sites\[1\]") as info:
        pw.voronoi_cells(sites, BOX, groups=groups)
    assert (info.value.group, info.value.row) == (7, 4)
    skipped = pw.voronoi_cells(sites, BOX, groups=groups, errors="skip")
    message = "group 7: sites: sites[4] repeats sites[1]; every site needs its own location"
    assert skipped.problem.tolist() == [None, message]
    assert np.isnan(skipped.area[[1, 3, 4]]).all()
    # Closed form: group 6's two cells split the 100 x 60 box.
    assert skipped.area[[0, 2]].sum() == pytest.approx(BOX.area, rel=1e-12)
    assert len(skipped) == 2 and len(skipped[6]) == 2
    doc = skipped.to_geojson()
    assert [f["properties"]["group"] for f in doc["features"]] == groups


@settings(max_examples=40, deadline=None)
@given(
    st.lists(st.tuples(st.integers(-20, 20), st.integers(-20, 20), st.integers(0, 2)), min_size=1, max_size=20),
    st.lists(st.tuples(st.integers(-40, 40), st.integers(-40, 40), st.integers(0, 2)), min_size=1, max_size=80),
)
def test_grouped_nearest_site_equals_separate_calls_and_brute_force(sites, pts) -> None:
    # Reference: separate calls per label, and numpy.argmin over exact squared distances
    # (small integers are exact in float64) for the site rows.
    s, p = np.array(sites, dtype=float), np.array(pts, dtype=float)
    site_groups, groups = s[:, 2].astype(int), p[:, 2].astype(int)
    s, p = s[:, :2], p[:, :2] / 2
    w = np.arange(len(p)) % 3 + 0.5
    out = pw.nearest_site(p, s, w, groups=groups, site_groups=site_groups, errors="skip")
    assert isinstance(out, Allocations)
    assert out.labels.tolist() == sorted(set(groups.tolist()) | set(site_groups.tolist()))
    for g, label in enumerate(out.labels):
        rows, site_rows = np.flatnonzero(groups == label), np.flatnonzero(site_groups == label)
        if len(site_rows) == 0:
            assert out.problem[g] == f"group {label}: sites must hold at least 1 point; got 0"
            assert np.isnan(out.cost[g]) and np.all(out.assignment[rows] == -1)
            continue
        if len(rows) == 0:
            # Sites without demand serve nobody.
            assert out.problem[g] is None and (out.cost[g], out.total_load[g]) == (0.0, 0.0)
            assert np.all(out.load[site_rows] == 0) and np.all(out.count[site_rows] == 0)
            continue
        single = pw.nearest_site(p[rows], s[site_rows], w[rows])
        d2 = ((p[rows][:, None, :] - s[site_rows][None, :, :]) ** 2).sum(axis=2)
        np.testing.assert_array_equal(out.assignment[rows], site_rows[np.argmin(d2, axis=1)])
        np.testing.assert_array_equal(out.assignment[rows], site_rows[single.assignment])
        np.testing.assert_array_equal(out.distance[rows], single.distance)
        np.testing.assert_array_equal(out.load[site_rows], single.load)
        np.testing.assert_array_equal(out.count[site_rows], single.count)
        assert (out.cost[g], out.total_load[g]) == (single.cost, single.total_load)
        item = out[label]
        for name in ("assignment", "distance", "load", "count", "points", "sites"):
            np.testing.assert_array_equal(getattr(item, name), getattr(single, name))
        assert (item.cost, item.total_load) == (single.cost, single.total_load)


def test_grouped_nearest_site_frames_and_problems() -> None:
    # Label 4 has a point but no site (a problem); label 9 a site but no point (it serves
    # nobody). Closed-form distances.
    pts = np.array([[0.0, 0.0], [3.0, 0.0], [10.0, 0.0], [50.0, 0.0]])
    sites = np.array([[1.0, 0.0], [11.0, 0.0], [0.0, 0.0], [7.0, 7.0]])
    out = pw.nearest_site(pts, sites, groups=[1, 1, 2, 4], site_groups=[1, 2, 1, 9], errors="skip")
    assert out.labels.tolist() == [1, 2, 4, 9]
    assert out.problem.tolist() == [None, None, "group 4: sites must hold at least 1 point; got 0", None]
    frame = out.to_frame()
    # One row per input point, in input order.
    assert frame["group"].tolist() == [1, 1, 2, 4]
    assert frame["assignment"].tolist() == [2, 0, 1, -1]
    np.testing.assert_array_equal(frame["distance_u"], [0.0, 2.0, 1.0, np.nan])
    assert frame["problem"].isna().tolist() == [True, True, True, False]
    sites_frame = out.sites_frame()
    assert sites_frame["group"].tolist() == [1, 2, 1, 9]
    np.testing.assert_array_equal(sites_frame["load"], [1.0, 1.0, 1.0, 0.0])
    assert sites_frame["points"].tolist() == [1, 1, 1, 0]
    summary = out.summary()
    assert summary["points"].tolist() == [2, 1, 1, 0] and summary["sites"].tolist() == [2, 1, 0, 1]
    np.testing.assert_array_equal(summary["cost_u"], [2.0, 1.0, np.nan, 0.0])
    assert out[9].assignment.tolist() == [] and out[9].load.tolist() == [0.0]
    with pytest.raises(pw.InputError, match="group 4: sites must hold"):
        pw.nearest_site(pts, sites, groups=[1, 1, 2, 4], site_groups=[1, 2, 1, 9])
    with pytest.raises(pw.InputError, match="given together"):
        pw.nearest_site(pts, sites, groups=[1, 1, 2, 4])
    with pytest.raises(pw.InputError, match=r"group 1: weights must be finite and >= 0; weights\[1\] = -1"):
        pw.nearest_site(pts, sites, [1, -1, 1, 1], groups=[1, 1, 2, 2], site_groups=[1, 1, 2, 2])


# --- the package's public names ------------------------------------------------------------

@pytest.mark.parametrize("name", pw.partition.__all__)
def test_public_name_belongs_to_the_package(name: str) -> None:
    # Defined in the package's private modules, named by the package (as when it was one
    # module): reprs, pickles and the reference keep "placewise.partition".
    obj = getattr(pw.partition, name)
    assert obj.__module__ == "placewise.partition"
    assert pickle.loads(pickle.dumps(obj)) is obj
    if isinstance(obj, type):
        # Field annotations resolve in the module the class names (typing.get_type_hints).
        assert np.ndarray in typing.get_type_hints(obj).values()


def test_package_exports_every_public_object_it_defines() -> None:
    defined = {name for name, obj in vars(pw.partition).items()
               if not name.startswith("_") and str(getattr(obj, "__module__", "")).startswith("placewise.partition")}
    assert defined == set(pw.partition.__all__)


def test_pickled_result_names_the_package() -> None:
    result = pw.delaunay([[0, 0], [1, 0], [0, 1], [1, 1.5]])
    data = pickle.dumps(result)
    assert b"placewise.partition" in data and b"placewise.partition._" not in data
    back = pickle.loads(data)
    assert type(back) is DelaunayMesh and np.array_equal(back.corners, result.corners)


@pytest.mark.parametrize("scale", [1e-300, 1e-160, 1e200])
def test_nearest_site_at_extreme_scales_matches_cdist_at_unit_scale(scale) -> None:
    # Squared distances underflow near 1e-300 and overflow near 1e200: 953 of 1,000 points
    # went to the wrong site. Reference: scipy's cdist on the same points at unit scale
    # (scaling by a constant keeps every nearest site), and the distances scaled back.
    rng = np.random.default_rng(0)
    pts, sites = rng.random((1000, 2)), rng.random((20, 2))
    out = pw.nearest_site(pts * scale, sites * scale)
    d = scipy.spatial.distance.cdist(pts, sites)
    assert np.array_equal(out.assignment, d.argmin(axis=1))
    np.testing.assert_allclose(out.distance / scale, d.min(axis=1), rtol=1e-12)
    # The p-center, whose allocations go through the same index: the same plan's radius.
    unit = pw.p_center(pts[:200], 2).weighted_radius
    assert pw.p_center(pts[:200] * scale, 2).weighted_radius / scale == pytest.approx(unit, rel=1e-9)



def test_a_length_mismatch_names_what_each_entry_belongs_to() -> None:
    # site_groups and powers hold one entry per site, not per point as the message said.
    points = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]])
    sites = np.array([[0.0, 0.0], [1.0, 1.0]])
    with pytest.raises(pw.InputError, match=r"site_groups must have one entry per site \(2\); got 1"):
        pw.nearest_site(points, sites, groups=[1, 1, 1], site_groups=[1])
    with pytest.raises(pw.InputError, match=r"powers must have one entry per site \(2\); got 3"):
        pw.power_cells(sites, [0.0, 0.0, 0.0])
    with pytest.raises(pw.InputError, match=r"groups must have one entry per point \(3\); got 2"):
        pw.nearest_site(points, sites, groups=[1, 1], site_groups=[1, 1])
