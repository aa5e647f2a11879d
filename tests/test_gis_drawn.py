"""Result shapes of placewise.gis solved in a working frame and drawn in the caller's
geographic CRS: edges kept on their working-frame course, cut at the antimeridian, closed
through a pole.

Outside references, named beside each check:
- shapely.voronoi_polygons of the sites projected with pyproj, in the working CRS (the true
  cells there), and shapely for validity, coverage and Hausdorff distances;
- pyproj (Transformer) for every change of CRS made by the test, and brute-force nearest
  sites by Euclidean distance in the working CRS;
- geopandas.sjoin for the demand points lying in each returned polygon;
- pyproj.Geod for lengths on the ellipsoid.
"""

from __future__ import annotations

import warnings

import geopandas as gpd
import numpy as np
import pytest
import shapely
from pyproj import Geod, Transformer

from placewise import gis

GEOD = Geod(ellps="WGS84")


def lonlat(lon, lat, **columns):
    return gpd.GeoDataFrame(columns, geometry=gpd.points_from_xy(lon, lat), crs=4326)


def nearest_in(crs, points, sites):
    """Brute force: each point's nearest site by Euclidean distance in ``crs`` (pyproj)."""
    t = Transformer.from_crs(4326, crs, always_xy=True)
    p = np.column_stack(t.transform(points.geometry.x.to_numpy(), points.geometry.y.to_numpy()))
    s = np.column_stack(t.transform(sites.geometry.x.to_numpy(), sites.geometry.y.to_numpy()))
    return np.argmin(np.hypot(p[:, None, 0] - s[None, :, 0], p[:, None, 1] - s[None, :, 1]), axis=1)


def cell_of_each(points, cells):
    """geopandas.sjoin: the cell (row position) of each point; -1 in none, -2 in several."""
    joined = gpd.sjoin(points, cells[["geometry"]].reset_index(drop=True), predicate="within")
    hits = joined.groupby(level=0)["index_right"]
    out = np.full(len(points), -1)
    out[hits.first().index.to_numpy()] = hits.first().to_numpy()
    out[hits.size()[hits.size() > 1].index.to_numpy()] = -2
    return out


def test_cells_in_lonlat_keep_the_edges_of_the_working_frame():
    # Five sites in southern Norway, the region a box drawn in UTM 32N, so that the cells'
    # edges are straight there. Drawn vertex by vertex in lon/lat they strayed up to 774 m and
    # a spatial join put 0.4 % of the demand in another cell than the one counting it.
    rng = np.random.default_rng(21)
    lon0, lat0 = 9.5, 60.0
    sites = lonlat(lon0 + rng.random(5) * 2.5, lat0 + rng.random(5) * 1.2, name=[f"s{i}" for i in range(5)])
    to_utm = Transformer.from_crs(4326, 32632, always_xy=True)
    x0, y0 = to_utm.transform(lon0, lat0)
    box = shapely.box(x0 - 10_000, y0 - 5_000, x0 + 150_000, y0 + 140_000)
    demand = lonlat(lon0 + rng.random(20_000) * 2.6, lat0 + rng.random(20_000) * 1.2)
    cells = gis.voronoi_cells(sites, gpd.GeoSeries([box], crs=32632), demand=demand)
    assert cells.work_crs.iloc[0] == "WGS 84 / UTM zone 32N"
    # shapely.voronoi_polygons in UTM 32N of the sites projected by pyproj: the true cells.
    xy = shapely.points(np.column_stack(to_utm.transform(sites.geometry.x, sites.geometry.y)))
    true = shapely.intersection(shapely.voronoi_polygons(shapely.multipoints(xy), extend_to=box).geoms, box)
    true = [next(t for t in true if t.contains(p)) for p in xy]
    # The returned cells back in UTM 32N: edges cut into pieces of 1e-5 degree (about a metre,
    # whose lon/lat chord leaves its curve by well under a micrometre) before pyproj moves them.
    fine = gpd.GeoSeries(shapely.segmentize(cells.geometry.values, 1e-5), crs=4326).to_crs(32632)
    stray = [shapely.hausdorff_distance(a, b) for a, b in zip(fine.values, true, strict=True)]
    assert max(stray) <= 0.012, stray  # the drawing tolerance, 1 cm
    # geopandas.sjoin puts every demand point in the returned polygon of its brute-force
    # nearest site in the working frame (pyproj).
    where = cell_of_each(demand, cells)
    near = nearest_in(32632, demand, sites)
    assert np.array_equal(where, near)
    # The points column counts the demand by geodesic distance (nearest_site on the
    # ellipsoid): it differs from the cells only by the points whose geodesically nearest
    # site (pyproj.Geod, brute force) is another than in the working frame.
    lon, lat = demand.geometry.x.to_numpy(), demand.geometry.y.to_numpy()
    geodesic = np.argmin([GEOD.inv(lon, lat, np.full(lon.size, p.x), np.full(lon.size, p.y))[2]
                          for p in sites.geometry], axis=0)
    moved = int((geodesic != near).sum())
    assert np.abs(np.bincount(where, minlength=5) - cells.points.to_numpy()).sum() <= 2 * moved


def fiji():
    rng = np.random.default_rng(9)
    lon = rng.uniform(179, 181, 25)
    return lonlat(np.where(lon > 180, lon - 360, lon), rng.uniform(-18, -16, 25)), rng


def parts(geom):
    return list(getattr(geom, "geoms", [geom]))


@pytest.mark.parametrize("solve", ["voronoi_cells", "delaunay", "spanning_tree", "steiner_tree",
                                   "enclosing_ellipse"])
def test_shapes_across_the_antimeridian_are_cut_there_not_wrapped_round_the_globe(solve):
    # Fiji: sites on both sides of 180 degrees, solved in a transverse Mercator frame on
    # them. Drawn vertex by vertex, a cell or edge crossing 180 ran 360 degrees the other way.
    sites, _ = fiji()
    out = getattr(gis, solve)(sites)
    shapes = out.edges.geometry if solve in ("spanning_tree", "steiner_tree") else out.geometry
    assert shapes.is_valid.all()  # shapely
    widths = [p.bounds[2] - p.bounds[0] for g in shapes for p in parts(g)]
    assert max(widths) < 3.0  # degrees: every piece stays on its side of 180
    assert shapes.crs.equals(4326)
    if solve == "enclosing_ellipse":
        assert shapely.covers(shapes.iloc[0], sites.geometry.values).all()  # shapely
    if solve in ("spanning_tree", "steiner_tree"):
        # pyproj.Geod: the drawn edges (cut into 0.001 degree pieces) are as long on the
        # ellipsoid as the length column says, within the frame's scale error (0.1 %).
        drawn = sum(GEOD.geometry_length(shapely.segmentize(g, 1e-3)) for g in shapes)
        assert drawn == pytest.approx(out.edges.filter(like="length").sum().iloc[0], rel=1e-3)


def test_cells_across_the_antimeridian_take_each_demand_point_once():
    # In UTM 60S (given, so the test knows the frame), 2000 demand points on both sides of
    # 180: geopandas.sjoin finds each in exactly one cell, that of its brute-force nearest
    # site in EPSG:32760 (pyproj), and each cell holds its own site.
    sites, rng = fiji()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the zone's distortion over the data is said
        cells = gis.voronoi_cells(sites, work_crs="EPSG:32760")
    assert shapely.covers(cells.geometry.values, sites.geometry.values).all()  # shapely
    lon = rng.uniform(179.2, 180.8, 2000)
    demand = lonlat(np.where(lon > 180, lon - 360, lon), rng.uniform(-17.8, -16.2, 2000))
    where = cell_of_each(demand, cells)
    assert (where >= 0).all()
    assert np.array_equal(where, nearest_in(32760, demand, sites))


def test_cells_and_ellipse_near_the_pole_hold_their_points():
    # Twelve sites at 89-89.95 N solved in UTM 10N: cells holding the pole are closed through
    # it, and every cell holds its site and the demand nearest to it in EPSG:32610.
    rng = np.random.default_rng(2)
    sites = lonlat(rng.uniform(-180, 180, 12), rng.uniform(89.0, 89.95, 12))
    cells = gis.voronoi_cells(sites)
    assert cells.work_crs.iloc[0] == "WGS 84 / UTM zone 10N"
    assert cells.is_valid.all() and shapely.covers(cells.geometry.values, sites.geometry.values).all()  # shapely
    assert sum(shapely.covers(g, shapely.Point(0, 90)) for g in cells.geometry) >= 1
    demand = lonlat(rng.uniform(-180, 180, 1500), rng.uniform(89.2, 89.9, 1500))
    where = cell_of_each(demand, cells)
    # The default region is the sites' box in UTM 10N grown by 10 %: points beyond it are in
    # no cell; every other one lies in the cell of its nearest site there (pyproj).
    assert (where != -2).all() and (where >= 0).mean() > 0.5
    assert np.array_equal(where[where >= 0], nearest_in(32610, demand, sites)[where >= 0])
    ellipse = gis.enclosing_ellipse(sites).geometry.iloc[0]
    assert ellipse.is_valid and shapely.covers(ellipse, sites.geometry.values).all()  # shapely


def test_a_polar_working_frame_draws_cells_and_edges_round_the_pole():
    # Sites around the north pole solved in the caller's polar stereographic frame
    # (EPSG:3413): cells and tree edges cross the antimeridian and pass the pole. Each
    # drawn tree edge, cut into 1e-4 degree pieces and moved by pyproj into EPSG:3413, lies
    # within 1 cm of the straight segment between its ends there (shapely Hausdorff), and
    # geopandas.sjoin puts demand in the cell of its brute-force nearest site in EPSG:3413.
    rng = np.random.default_rng(5)
    sites = lonlat(rng.uniform(-180, 180, 15), rng.uniform(80, 89.5, 15))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # the frame's distortion over the data is said
        edges = gis.spanning_tree(sites, work_crs="EPSG:3413").edges
        cells = gis.voronoi_cells(sites, work_crs="EPSG:3413")
    assert edges.is_valid.all() and cells.is_valid.all()  # shapely
    to_polar = Transformer.from_crs(4326, 3413, always_xy=True)
    ends = np.column_stack(to_polar.transform(sites.geometry.x, sites.geometry.y))
    fine = gpd.GeoSeries(shapely.segmentize(edges.geometry.values, 1e-4), crs=4326).to_crs(3413)
    for a, b, line in zip(edges.end_a, edges.end_b, fine.values, strict=True):
        straight = shapely.LineString([ends[a], ends[b]])
        assert shapely.hausdorff_distance(line, straight) <= 0.012, (a, b)
    assert shapely.covers(cells.geometry.values, sites.geometry.values).all()  # shapely
    demand = lonlat(rng.uniform(-180, 180, 1500), rng.uniform(82, 89.9, 1500))
    where = cell_of_each(demand, cells)
    assert (where != -2).all() and (where >= 0).mean() > 0.5
    assert np.array_equal(where[where >= 0], nearest_in(3413, demand, sites)[where >= 0])


def test_areas_of_lonlat_cells_and_triangles_are_their_wgs84_areas():
    # Thirty sites across UTM zone 32 at the equator, cut by a 6 x 2.4 degree box: the
    # frame's scale error is near 0.1 %, and a planar area there errs by about twice that
    # (area scale is the square of the length scale): area_m2 was up to 0.178 % off.
    # Reference: shapely.voronoi_polygons of the sites projected by pyproj (UTM 32N),
    # clipped to the box drawn there densified every 50 m, segmentized every 50 m and
    # brought back by pyproj; pyproj.Geod.geometry_area_perimeter of those.
    rng = np.random.default_rng(4)
    sites = lonlat(rng.uniform(6.05, 11.95, 30), rng.uniform(-1, 1, 30))
    box = shapely.box(6, -1.2, 12, 1.2)
    cells = gis.voronoi_cells(sites, box)
    assert cells["work_crs"].iloc[0] == "WGS 84 / UTM zone 32N"
    utm = sites.to_crs(32632)
    region = gpd.GeoSeries([shapely.segmentize(box, 0.0005)], crs=4326).to_crs(32632).iloc[0]
    true_cells = shapely.voronoi_polygons(shapely.MultiPoint(utm.geometry.values), extend_to=region)
    by_site = {}
    for cell in true_cells.geoms:
        k = int(np.flatnonzero(shapely.contains(cell, utm.geometry.values))[0])
        by_site[k] = shapely.segmentize(shapely.intersection(cell, region), 50.0)
    drawn = gpd.GeoSeries([by_site[k] for k in range(30)], crs=32632).to_crs(4326)
    expected = np.array([abs(GEOD.geometry_area_perimeter(g)[0]) for g in drawn])
    # (1e-5: two neighbours trade 3e-6 of area where GEOS and the kernel place their shared
    # edge 0.16 m apart; the planar areas were 1.8e-3 off.)
    np.testing.assert_allclose(cells["area_m2"].to_numpy(), expected, rtol=1e-5)
    # Delaunay triangles alike (each triangle's edges straight in the working frame).
    mesh = gis.delaunay(sites)
    tris = gpd.GeoSeries(mesh.geometry.values, crs=4326).to_crs(32632)
    tris = gpd.GeoSeries(shapely.segmentize(tris.values, 50.0), crs=32632).to_crs(4326)
    expected = np.array([abs(GEOD.geometry_area_perimeter(g)[0]) for g in tris])
    np.testing.assert_allclose(mesh["area_m2"].to_numpy(), expected, rtol=1e-5)
