"""Result shapes of placewise.gis solved in a working frame and drawn in the caller's
geographic CRS: edges kept on their working-frame course.

Outside references, named beside each check:
- shapely.voronoi_polygons of the sites projected with pyproj, in the working CRS (the true
  cells there), and shapely for validity, coverage and Hausdorff distances;
- pyproj (Transformer) for every change of CRS made by the test, and brute-force nearest
  sites by Euclidean distance in the working CRS;
- geopandas.sjoin for the demand points lying in each returned polygon;
- pyproj.Geod for the geodesically nearest sites.
"""

from __future__ import annotations

import geopandas as gpd
import numpy as np
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
