"""Tests of the partition family: placewise.delaunay, placewise.voronoi_cells, placewise.nearest_site."""

from __future__ import annotations

import json
from fractions import Fraction

import numpy as np
import pytest
import scipy.spatial
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st

import placewise as pw
from hostile import AWKWARD_POINTS, BAD_POINTS, BAD_WEIGHTS


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


def check_triangulation(points: np.ndarray, t: pw.Triangulation) -> None:
    """Invariants, each with its source: Euler's formula for a triangulated point set
    (t = 2n − 2 − h, e = 3n − 3 − h), counter-clockwise triangles, symmetric adjacency, and
    the empty-circumcircle property across every interior edge, which for a triangulation is
    equivalent to the global property (Delaunay 1934)."""
    pts = np.asarray(points, dtype=np.float64)
    kept = np.flatnonzero(t.representative == np.arange(len(pts)))
    n, h = len(kept), len(t.hull)
    assert len(t.triangles) == 2 * n - 2 - h
    assert len(t.edges) == 3 * n - 3 - h
    assert np.all(pts[t.representative] == pts)
    assert set(np.unique(t.triangles)) == set(kept.tolist())
    assert len({tuple(e) for e in t.edges.tolist()}) == len(t.edges)
    assert np.all(t.edges[:, 0] < t.edges[:, 1])
    for ti, tri in enumerate(t.triangles):
        a, b, c = pts[tri]
        assert exact_orient(a, b, c) > 0
        for k in range(3):
            other = t.adjacent[ti, k]
            if other < 0:
                continue
            u, v = tri[(k + 1) % 3], tri[(k + 2) % 3]
            o = t.triangles[other].tolist()
            j = [m for m in range(3) if o[(m + 1) % 3] == v and o[(m + 2) % 3] == u]
            assert len(j) == 1 and t.adjacent[other, j[0]] == ti
            assert exact_incircle(a, b, c, pts[o[j[0]]]) <= 0
    for i in range(h):
        assert exact_orient(*pts[t.hull[[i, (i + 1) % h, (i + 2) % h]]]) >= 0


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
    assert triangle_set(ours.triangles) == triangle_set(ref.simplices)
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
    assert triangle_set(ours.triangles) == triangle_set(scipy.spatial.Delaunay(shifted).simplices)
    check_triangulation(pts, ours)


def test_hull_equals_scipy_convex_hull() -> None:
    # Reference: scipy.spatial.ConvexHull, whose 2-D vertices are counter-clockwise.
    pts = np.random.default_rng(3).normal(size=(800, 2))
    ours = pw.delaunay(pts).hull.tolist()
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
    assert triangle_set(ours.triangles) == triangle_set(scipy.spatial.Delaunay(pts).simplices)
    # Adjacency is symmetric: t's neighbour across an edge has t as a neighbour.
    t_idx, k_idx = np.nonzero(ours.adjacent >= 0)
    assert np.all((ours.adjacent[ours.adjacent[t_idx, k_idx]] == t_idx[:, None]).any(axis=1))
    n, h = len(pts), len(ours.hull)
    assert len(ours.edges) == 3 * n - 3 - h  # Euler's formula


def test_large_grid_built_in_strips_gives_two_triangles_per_cell() -> None:
    # Closed form: a k × k grid is split into 2 (k − 1)² triangles; 160,000 points take the
    # stitched path, whose seams cross cocircular cells.
    k = 400
    grid = np.stack(np.meshgrid(np.arange(k, dtype=float), np.arange(k, dtype=float)), axis=-1).reshape(-1, 2)
    t = pw.delaunay(grid)
    assert len(t.triangles) == 2 * (k - 1) ** 2
    assert len(t.edges) == 3 * k * k - 3 - len(t.hull) == 3 * k * k - 3 - 4 * (k - 1)
    a, b, c = (grid[t.triangles[:, i]] for i in range(3))
    cross = (b[:, 0] - a[:, 0]) * (c[:, 1] - a[:, 1]) - (b[:, 1] - a[:, 1]) * (c[:, 0] - a[:, 0])
    assert np.all(cross == 1.0)  # every triangle is half a unit cell, counter-clockwise


@pytest.mark.parametrize("k", [2, 3, 8, 25])
def test_grid_gives_two_triangles_per_cell(k: int) -> None:
    # Closed form: a k × k grid (all cells cocircular) is split into 2 (k − 1)² triangles.
    grid = np.array([[i, j] for i in range(k) for j in range(k)], dtype=float)
    t = pw.delaunay(grid)
    assert len(t.triangles) == 2 * (k - 1) ** 2
    check_triangulation(grid, t)


def test_points_on_a_circle_give_n_minus_two_triangles() -> None:
    # Closed form: a convex polygon with n vertices is split into n − 2 triangles.
    angles = np.arange(24) * 2 * np.pi / 24
    pts = np.column_stack([np.cos(angles), np.sin(angles)]) * 1e3 + [5e5, 5e6]
    t = pw.delaunay(pts)
    assert len(t.triangles) == 22
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
    assert triangle_set(t.triangles) == triangle_set(scipy.spatial.Delaunay(base).simplices)
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
        assert triangle_set(t.triangles) == triangle_set(scipy.spatial.Delaunay(pts - shift).simplices)


def test_input_array_stays_writeable() -> None:
    pts = np.random.default_rng(0).normal(size=(20, 2))
    t = pw.delaunay(pts)
    assert pts.flags.writeable and not t.points.flags.writeable
    with pytest.raises(ValueError):
        t.triangles[0, 0] = 5


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
    assert triangle_set(a.triangles) == {tuple(sorted(perm[list(t)])) for t in b.triangles.tolist()}


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
    np.testing.assert_array_equal(a.index, index)
    np.testing.assert_allclose(a.distance, dist, rtol=1e-12, atol=1e-9)
    # Loads: numpy.bincount of the weights by site; cost: the weighted sum of distances.
    np.testing.assert_allclose(a.load, np.bincount(index, weights=w, minlength=len(sites)), rtol=1e-12)
    assert a.cost == pytest.approx(float(np.sum(w * dist)), rel=1e-12)


def test_unit_weights_give_counts() -> None:
    rng = np.random.default_rng(4)
    sites, pts = rng.normal(size=(30, 2)), rng.normal(size=(5000, 2))
    a = pw.nearest_site(pts, sites)
    np.testing.assert_array_equal(a.load, np.bincount(a.index, minlength=30))


def test_ties_go_to_the_smaller_site_index() -> None:
    # Closed form: the centre of a square is equally far from its four corners; a point on
    # a bisector is equally far from its two sites; repeated sites serve with the first copy.
    sites = np.array([[1.0, 1.0], [-1.0, 1.0], [-1.0, -1.0], [1.0, -1.0], [1.0, 1.0]])
    a = pw.nearest_site([[0.0, 0.0], [0.0, 2.0], [-3.0, 0.0], [2.0, 2.0]], sites)
    assert a.index.tolist() == [0, 0, 1, 0]
    assert a.load.tolist() == [3.0, 1.0, 0.0, 0.0, 0.0]


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
    np.testing.assert_array_equal(a.index, np.argmin(d2, axis=1))
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
    assert a.load.sum() == len(pts)


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
    assert repr(a).startswith("Allocation(index=[0, 1, 0], distance=")
    t = pw.delaunay([[0, 0], [1, 0], [0, 1], [1, 1]])
    assert len(t.plot().lines) >= 1
