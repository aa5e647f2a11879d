"""Spherical Delaunay triangulation, Voronoi cells and spanning tree (placewise.geodesic)."""

from __future__ import annotations

import math
import pathlib

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import placewise as pw
from placewise import DegenerateInputError

scipy_spatial = pytest.importorskip("scipy.spatial")
pyproj = pytest.importorskip("pyproj")

GEOD = pyproj.Geod(ellps="WGS84")
DATA = pathlib.Path(__file__).parent / "data"


def _globe_area() -> float:
    """Surface area of the WGS84 ellipsoid, closed form for an oblate spheroid:
    2πa² (1 + (1 − e²)/e · atanh e)."""
    a, f = 6378137.0, 1 / 298.257223563
    e = math.sqrt(f * (2 - f))
    return 2 * math.pi * a * a * (1 + (1 - e * e) / e * math.atanh(e))


def _global(n: int, seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    return np.column_stack([rng.uniform(-180, 180, n), np.degrees(np.arcsin(rng.uniform(-1, 1, n)))])


def _unit(lonlat: np.ndarray) -> np.ndarray:
    lon, lat = np.radians(lonlat[:, 0]), np.radians(lonlat[:, 1])
    return np.column_stack([np.cos(lat) * np.cos(lon), np.cos(lat) * np.sin(lon), np.sin(lat)])


def test_triangles_are_those_of_scipy_convex_hull():
    pts = _global(800, 1)
    mesh = pw.geodesic.delaunay(pts)
    # Reference: scipy.spatial.ConvexHull (Qhull) of the unit vectors.
    hull = scipy_spatial.ConvexHull(_unit(pts))
    assert {tuple(sorted(t)) for t in hull.simplices} == {tuple(sorted(t)) for t in mesh.corners}
    assert mesh.outward_faces == 0 and len(mesh.boundary) == 0
    # Triangle areas: pyproj.Geod on the same geodesic triangles; they tile the ellipsoid.
    for t, area in zip(mesh.corners[:50], mesh.area[:50], strict=True):
        ref, _ = GEOD.polygon_area_perimeter(pts[t, 0], pts[t, 1])
        assert area == pytest.approx(abs(ref), rel=1e-9)
    assert mesh.area.sum() == pytest.approx(_globe_area(), rel=1e-9)


def test_cells_match_scipy_spherical_voronoi_and_pyproj_areas():
    pts = _global(400, 2)
    cells = pw.geodesic.voronoi_cells(pts)
    # Reference: scipy.spatial.SphericalVoronoi on the unit sphere.
    sv = scipy_spatial.SphericalVoronoi(_unit(pts), radius=1.0)
    sv.sort_vertices_of_regions()
    ours_xyz = _unit(cells.vertices)
    np.testing.assert_allclose(cells.solid_angle, sv.calculate_areas(), rtol=1e-9, atol=1e-12)
    for i in range(len(pts)):
        theirs = sv.vertices[sv.regions[i]]
        mine = ours_xyz[cells.cell_vertices[cells.vertex_offsets[i]:cells.vertex_offsets[i + 1]]]
        assert len(mine) == len(theirs)
        # Same vertices in the same cyclic order, up to the starting one and the direction
        # (scipy sorts them the other way round).
        shift = int(np.argmin(np.linalg.norm(theirs - mine[0], axis=1)))
        theirs = np.roll(theirs, -shift, axis=0)
        if not np.allclose(theirs, mine, atol=1e-9):
            theirs = np.roll(theirs[::-1], 1, axis=0)
        np.testing.assert_allclose(theirs, mine, atol=1e-9)
    # Ellipsoidal areas: pyproj.Geod on every ring; they add up to the ellipsoid's area.
    for i in range(0, len(pts), 7):
        ring = cells.ring(i)
        ref, _ = GEOD.polygon_area_perimeter(ring[:, 0], ring[:, 1])
        assert cells.area[i] == pytest.approx(abs(ref), rel=1e-9)
    assert cells.area.sum() == pytest.approx(_globe_area(), rel=1e-9)
    assert cells.solid_angle.sum() == pytest.approx(4 * math.pi, rel=1e-12)
    shapes = cells.to_geodataframe(crs=4326)
    assert shapes.is_valid.all()


def _great_circle_matrix(pts: np.ndarray) -> np.ndarray:
    u = _unit(pts)
    return np.arctan2(np.linalg.norm(np.cross(u[:, None], u[None]), axis=2), u @ u.T)


def _geodesic_matrix(pts: np.ndarray) -> np.ndarray:
    n = len(pts)
    i, j = np.triu_indices(n, 1)
    _, _, d = GEOD.inv(pts[i, 0], pts[i, 1], pts[j, 0], pts[j, 1])
    matrix = np.zeros((n, n))
    matrix[i, j] = d
    return matrix


def test_spanning_tree_is_scipy_mst_of_pyproj_geodesic_lengths():
    from scipy.sparse.csgraph import minimum_spanning_tree

    for seed, n in [(3, 120), (4, 80), (6, 300)]:
        pts = _global(n, seed)
        tree = pw.geodesic.spanning_tree(pts)
        # Reference: scipy minimum_spanning_tree on pyproj.Geod's full WGS84 distance matrix
        # (no triangulation in it): the same edges and the same total.
        ref = minimum_spanning_tree(_geodesic_matrix(pts)).tocoo()
        assert {tuple(sorted(e)) for e in zip(ref.row, ref.col, strict=True)} == set(
            zip(tree.end_a.tolist(), tree.end_b.tolist(), strict=True))
        assert tree.length == pytest.approx(float(ref.data.sum()), rel=1e-12)
        # Lengths: pyproj.Geod.inv on every edge.
        _, _, ref_len = GEOD.inv(pts[tree.end_a, 0], pts[tree.end_a, 1], pts[tree.end_b, 0], pts[tree.end_b, 1])
        np.testing.assert_allclose(tree.edge_length, ref_len, rtol=1e-9)


def test_spanning_tree_of_real_points_is_the_ellipsoid_minimum():
    from scipy.sparse.csgraph import minimum_spanning_tree

    # Natural Earth country points (public domain, tests/data): both poles' regions and the
    # antimeridian. Reference: scipy's MST of pyproj.Geod's distance matrix.
    pts = pd.read_csv(DATA / "naturalearth_country_points.csv")[["lon", "lat"]].to_numpy()
    best = minimum_spanning_tree(_geodesic_matrix(pts)).sum()
    assert pw.geodesic.spanning_tree(pts).length == pytest.approx(best, rel=1e-12)


def test_points_in_a_hemisphere_have_a_boundary():
    rng = np.random.default_rng(5)
    pts = np.column_stack([rng.uniform(-40, 40, 300), rng.uniform(10, 80, 300)])
    mesh = pw.geodesic.delaunay(pts)
    assert mesh.outward_faces > 0
    # Reference: the hull's faces (scipy.spatial.ConvexHull) whose plane separates the
    # points from the centre are exactly the triangles.
    hull = scipy_spatial.ConvexHull(_unit(pts))
    facing = hull.equations[:, 3] < 0
    assert {tuple(sorted(t)) for t in hull.simplices[facing]} == {tuple(sorted(t)) for t in mesh.corners}
    # Boundary: the planar outline count (Euler for a triangulated disc).
    assert len(mesh.corners) == 2 * len(pts) - len(mesh.boundary) - 2
    cells = pw.geodesic.voronoi_cells(pts)
    assert cells.area.sum() == pytest.approx(_globe_area(), rel=1e-9)


def test_co_circular_sites_on_a_parallel_split_the_globe_into_lunes():
    pts = np.column_stack([np.arange(-180, 180, 20.0), np.full(18, 30.0)])
    cells = pw.geodesic.voronoi_cells(pts)
    # Closed form: 18 equal lunes of 4π/18 sr.
    np.testing.assert_allclose(cells.solid_angle, 4 * math.pi / 18, rtol=1e-9)
    assert cells.area.sum() == pytest.approx(_globe_area(), rel=1e-9)
    assert len(pw.geodesic.delaunay(pts).corners) == 16
    assert cells.to_geodataframe(crs=4326).is_valid.all()


def test_degenerate_input():
    with pytest.raises(DegenerateInputError, match="great circle"):
        pw.geodesic.delaunay([[0, 0], [90, 0], [180, 0], [-45, 0]])
    with pytest.raises(DegenerateInputError):
        pw.geodesic.delaunay([[0, 0], [360, 0], [0, 0]])
    pts = np.vstack([_global(30, 6), [[10, 90], [-50, 90], [180, -10], [-180, -10]]])
    mesh = pw.geodesic.delaunay(pts)
    assert mesh.representative[31] == 30 and mesh.representative[33] == 32
    assert mesh.summary()["merged"].iloc[0] == 2
    with pytest.raises(DegenerateInputError, match=r"sites\[31\] repeats sites\[30\]"):
        pw.geodesic.voronoi_cells(pts)
    tree = pw.geodesic.spanning_tree(pts)
    assert len(tree.end_a) == len(pts) - 1
    with pytest.raises(pw.InputError, match="max_edge_degrees"):
        pw.geodesic.voronoi_cells(_global(10, 1), max_edge_degrees=0)


lonlat = st.tuples(st.sampled_from([-180.0, 180.0, 0.0, 179.999, -179.999]) | st.floats(-180, 180),
                   st.sampled_from([90.0, -90.0, 0.0]) | st.floats(-90, 90))


@settings(max_examples=40, deadline=None)
@given(st.lists(lonlat, min_size=3, max_size=40))
def test_cells_always_tile_the_globe(points):
    pts = np.array(points, dtype=np.float64)
    try:
        cells = pw.geodesic.voronoi_cells(pts)
    except DegenerateInputError as err:
        # Refused only for repeated sites, too few distinct ones or one great circle (the
        # triangulation then merges a row or is refused too), or for two sites so close that
        # their bisector is lost to rounding (the message names them).
        if "lie so close together" in str(err):
            return
        try:
            mesh = pw.geodesic.delaunay(pts)
        except DegenerateInputError:
            return
        assert (mesh.representative != np.arange(len(pts))).any()
        return
    assert cells.solid_angle.sum() == pytest.approx(4 * math.pi, rel=1e-9)
    assert cells.area.sum() == pytest.approx(_globe_area(), rel=1e-9)
    tree = pw.geodesic.spanning_tree(pts)
    assert len(tree.end_a) == len(pts) - 1


def test_gis_answers_global_input_on_the_sphere():
    gpd = pytest.importorskip("geopandas")
    shapely = pytest.importorskip("shapely")
    from placewise import gis

    pts = _global(200, 7)
    frame = gpd.GeoDataFrame({"name": [f"s{i}" for i in range(200)]},
                             geometry=gpd.points_from_xy(pts[:, 0], pts[:, 1]), crs=4326)
    cells = gis.voronoi_cells(frame)
    assert cells.is_valid.all() and (cells["work_crs"] == pw.geodesic.SPHERE_MODEL).all()
    assert cells["area_m2"].sum() == pytest.approx(_globe_area(), rel=1e-9)
    # The columns the docstring promises for geographic input, as delaunay gives them on
    # the same path (no projection, so no scale error).
    assert (cells["scale_error"] == 0.0).all()
    assert (gis.delaunay(frame)["scale_error"] == 0.0).all()
    # A region: its densified edges (0.01°) bound the cells; pyproj.Geod on the same ring.
    region = shapely.box(-100, -60, 120, 70)
    clipped = gis.voronoi_cells(frame, region)
    ring = np.asarray(shapely.segmentize(region, 0.01).exterior.coords)
    ref, _ = GEOD.polygon_area_perimeter(ring[:, 0], ring[:, 1])
    ref = ref + _globe_area() if ref < 0 else ref   # pyproj: signed, within half the globe
    assert clipped["area_m2"].sum() == pytest.approx(ref, rel=1e-9)
    net = gis.spanning_tree(frame)
    assert len(net.edges) == 199 and (net.summary["work_crs"] == pw.geodesic.SPHERE_MODEL).all()
    a = pts[[frame.index.get_loc(r) for r in net.edges["end_a"]]]
    b = pts[[frame.index.get_loc(r) for r in net.edges["end_b"]]]
    _, _, ref_len = GEOD.inv(a[:, 0], a[:, 1], b[:, 0], b[:, 1])
    np.testing.assert_allclose(net.edges["length_m"], ref_len, rtol=1e-9)
    assert net.edges.is_valid.all()
