"""The GeoPandas layer on longitude/latitude data across the antimeridian, whatever longitude
convention the caller writes it in: a region drawn with longitudes beyond 180, candidate
sites written in [-180, 180].

References named beside each check: brute force over the candidate sites with WGS84
geodesic distances (pyproj.Geod, Karney 2013 through PROJ), and shapely on the region as
drawn. Invented data: an island group straddling 180 degrees.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

gpd = pytest.importorskip("geopandas")
pyproj = pytest.importorskip("pyproj")
import shapely  # noqa: E402

from placewise import gis  # noqa: E402

GEOD = pyproj.Geod(ellps="WGS84")


def _islands(n: int = 40, seed: int = 1) -> gpd.GeoDataFrame:
    """Demand points within 0.8 degree either side of 180 degrees, 17 degrees south,
    longitudes written in [-180, 180)."""
    rng = np.random.default_rng(seed)
    lon = rng.uniform(179.2, 180.8, n)
    lon = np.where(lon > 180, lon - 360, lon)
    return gpd.GeoDataFrame(geometry=gpd.points_from_xy(lon, rng.uniform(-17.5, -16.5, n)), crs=4326)


def _geod_costs(demand: gpd.GeoDataFrame, sites: gpd.GeoDataFrame) -> np.ndarray:
    """Geodesic distance (metres) of every demand point to every site (pyproj.Geod)."""
    dx, dy = demand.geometry.x.to_numpy(), demand.geometry.y.to_numpy()
    sx, sy = sites.geometry.x.to_numpy(), sites.geometry.y.to_numpy()
    out = np.empty((len(dx), len(sx)))
    for j in range(len(sx)):
        out[:, j] = GEOD.inv(dx, dy, np.full_like(dx, sx[j]), np.full_like(dy, sy[j]))[2]
    return out


def _brute_median(costs: np.ndarray, p: int, labels: list) -> tuple[list, float]:
    """The p candidates of least total distance, by trying every set (brute force)."""
    best = min(itertools.combinations(range(costs.shape[1]), p), key=lambda s: costs[:, list(s)].min(axis=1).sum())
    return sorted(labels[j] for j in best), float(costs[:, list(best)].min(axis=1).sum())


# --- 1. candidates held by a lon/lat region drawn across 180 degrees ----------------------

CANDIDATES = gpd.GeoDataFrame(geometry=gpd.points_from_xy([179.5, -179.5, -179.8, 179.9], [-17, -17, -16.8, -17.3]),
                              crs=4326, index=["west", "east", "east2", "west2"])

# One study area, 179 E to 179 W, written four ways: beyond +180, beyond -180, split at
# +-180 (RFC 7946), and in a Pacific-centred projected CRS (PDC Mercator, EPSG:3832).
_PDC = pyproj.Transformer.from_crs(4326, 3832, always_xy=True)
REGIONS = {
    "east of 180": shapely.box(179, -18, 181, -16),
    "west of -180": shapely.box(-181, -18, -179, -16),
    "split": shapely.MultiPolygon([shapely.box(179, -18, 180, -16), shapely.box(-180, -18, -179, -16)]),
    "EPSG:3832": gpd.GeoSeries([shapely.box(*_PDC.transform(179, -18), *_PDC.transform(-179, -16))], crs=3832),
}


@pytest.mark.parametrize("written", sorted(REGIONS))
@pytest.mark.parametrize("p", [1, 2])
def test_a_region_across_180_holds_its_candidates_in_any_longitude_convention(written, p):
    demand = _islands()
    plan = gis.p_median(demand, p, candidates=CANDIDATES, region=REGIONS[written])
    # Every candidate lies in the study area, so the plan is the brute-force optimum over
    # all of them with pyproj.Geod distances (before the fix: 'east'/'east2' were dropped
    # from a region written beyond 180, a 25 % costlier plan for p=1, a refusal for p=2).
    labels = CANDIDATES.index.tolist()
    chosen, cost = _brute_median(_geod_costs(demand, CANDIDATES), p, labels)
    assert sorted(plan.sites["source_row"]) == chosen
    error = float(plan.summary["scale_error"].iloc[0])
    assert plan.summary["cost_m"].iloc[0] == pytest.approx(cost, rel=2 * error)  # pyproj.Geod brute force


def test_candidates_written_beyond_180_are_held_by_a_region_in_minus_180_to_180():
    # The same candidates written with longitudes in [0, 360), the region in [-180, 180]:
    # brute force (pyproj.Geod) over all of them, since the split region holds them all.
    demand = _islands(seed=2)
    shifted = CANDIDATES.copy()
    shifted.geometry = gpd.points_from_xy(shifted.geometry.x % 360, shifted.geometry.y)
    plan = gis.p_center(demand, 1, candidates=shifted, region=REGIONS["split"])
    costs = _geod_costs(demand, CANDIDATES)
    best = CANDIDATES.index[int(np.argmin(costs.max(axis=0)))]  # brute-force 1-center, pyproj.Geod
    assert plan.sites["source_row"].tolist() == [best]


def test_a_region_across_180_still_leaves_out_the_candidates_beyond_it():
    # Hostile case for the turns of longitude: a narrow box 180.3..181 (179.7 W to 179 W)
    # holds 'east' (-179.5) only, as shapely says of the candidates moved by a whole turn.
    box = shapely.box(180.3, -18, 181, -16)
    inside = [c for c, g in CANDIDATES.geometry.items()
              if box.covers(shapely.Point(g.x % 360, g.y))]  # shapely on the region as drawn
    assert inside == ["east"]
    plan = gis.p_median(_islands(), 1, candidates=CANDIDATES, region=box)
    assert plan.sites["source_row"].tolist() == inside


@pytest.mark.parametrize("solve", [gis.weber_point, gis.minimax_point])
def test_the_continuous_solvers_keep_to_a_region_beyond_180(solve):
    # The continuous solvers clip in the working frame, where the region is projected from
    # lon/lat: the answer lies in the region as drawn (shapely, longitudes moved by a turn).
    box = shapely.box(180.3, -18, 181, -16)
    point = solve(_islands(), region=box).geometry.iloc[0]
    assert box.buffer(1e-9).covers(shapely.Point(point.x % 360, point.y))


# --- 2. a study region across 180 degrees clips the cells answered on the sphere ---------


def _pacific_sites() -> gpd.GeoDataFrame:
    """30 sites from 150 E to 120 W and 30 S to 30 N: too wide for one planar frame, so
    their cells are answered on the sphere."""
    rng = np.random.default_rng(3)
    lon = rng.uniform(150, 240, 30)
    return gpd.GeoDataFrame(geometry=gpd.points_from_xy(np.where(lon > 180, lon - 360, lon), rng.uniform(-30, 30, 30)),
                            crs=4326)


def _geod_region_area(region: gpd.GeoSeries, step: float) -> float:
    """The region's WGS84 area (pyproj.Geod.geometry_area_perimeter) with its edges as
    drawn in its own CRS: densified there every ``step`` (its unit), then brought to lon/lat.
    Geod takes a ring by its longitudes' steps, so it neither cares for +-180 nor for 250."""
    to_lonlat = pyproj.Transformer.from_crs(region.crs, 4326, always_xy=True)
    lonlat = shapely.transform(shapely.segmentize(region.union_all(), step), lambda xy: np.column_stack(
        to_lonlat.transform(xy[:, 0], xy[:, 1])))
    return abs(GEOD.geometry_area_perimeter(shapely.geometry.polygon.orient(lonlat))[0])


_PACIFIC = {
    # 140 E to 110 W, 40 S to 40 N, in PDC Mercator (EPSG:3832, Pacific-centred): the
    # region crosses the antimeridian in lon/lat, not in its own CRS.
    "EPSG:3832": (gpd.GeoSeries([shapely.box(*_PDC.transform(140, -40), *_PDC.transform(-110, 40))], crs=3832),
                  1000.0),
    # The same box in lon/lat, drawn to 250 degrees.
    "lon to 250": (gpd.GeoSeries([shapely.box(140, -40, 250, 40)], crs=4326), 0.01),
}


@pytest.mark.parametrize("written", sorted(_PACIFIC))
def test_sphere_cells_clipped_to_a_region_across_180_cover_that_region(written):
    sites = _pacific_sites()
    region, step = _PACIFIC[written]
    cells = gis.voronoi_cells(sites, region)
    assert (cells["work_crs"] == gis.voronoi_cells(sites)["work_crs"]).all()  # the sphere path
    # The cells tile the region: their areas add up to its WGS84 area (pyproj.Geod; before
    # the fix 2.675e14 m2 of the other side of the Earth for EPSG:3832, 3.63e13 for 250).
    assert cells["area_m2"].sum() == pytest.approx(_geod_region_area(region, step), rel=1e-6)
    # Every site lies in the region, so every cell holds its own site (shapely).
    assert all(cell.buffer(1e-9).covers(site) for cell, site in zip(cells.geometry, sites.geometry, strict=True))


@pytest.mark.parametrize("crs", [3413, 3031])
def test_sphere_cells_clipped_to_a_polar_cap_drawn_round_the_pole(crs):
    # A 2000 km disc round the pole in a polar stereographic CRS: in lon/lat its ring winds
    # round the pole (it crashed GEOS before); the cells add up to its pyproj.Geod area.
    rng = np.random.default_rng(13)
    lon, lat = rng.uniform(-180, 180, 40), np.degrees(np.arcsin(rng.uniform(-1, 1, 40)))
    sites = gpd.GeoDataFrame(geometry=gpd.points_from_xy(lon, lat), crs=4326)
    region = gpd.GeoSeries([shapely.Point(0, 0).buffer(2e6, 64)], crs=crs)
    cells = gis.voronoi_cells(sites, region)
    assert cells["area_m2"].sum() == pytest.approx(_geod_region_area(region, 1000.0), rel=1e-6)  # pyproj.Geod


# --- 3. centroids of polygons split at the antimeridian ----------------------------------

# Parcels round 180 degrees, 16 to 17 degrees south, each (west, east, south, north): the
# degrees it reaches west and east of 180, and its latitudes.
_PARCELS = [(0.1, 0.1, -17.1, -17.0), (0.05, 0.15, -16.6, -16.5), (0.2, 0.02, -16.2, -16.1)]


def _box(west: float, south: float, east: float, north: float) -> shapely.Polygon:
    """A lon/lat box with a vertex every 0.001 degree along its edges, so that it keeps its
    shape in any frame it is projected to vertex by vertex."""
    return shapely.segmentize(shapely.box(west, south, east, north), 0.001)


def _whole_parcels() -> gpd.GeoDataFrame:
    """The parcels drawn whole, with longitudes beyond 180."""
    return gpd.GeoDataFrame(geometry=[_box(180 - w, s, 180 + e, n) for w, e, s, n in _PARCELS], crs=4326,
                            index=["a", "b", "c"])


def _split_parcels() -> gpd.GeoDataFrame:
    """The parcels as GeoJSON stores them (RFC 7946 §3.1.9): MultiPolygons split at +-180."""
    return gpd.GeoDataFrame(geometry=[shapely.MultiPolygon([_box(180 - w, s, 180, n), _box(-180, s, -180 + e, n)])
                                      for w, e, s, n in _PARCELS], crs=4326, index=["a", "b", "c"])


def _reference_centroids() -> np.ndarray:
    """The parcels' centroids by shapely in a transverse Mercator frame on 180 degrees
    (pyproj), the parcels drawn whole there, as lon/lat."""
    local = pyproj.CRS("+proj=tmerc +lon_0=180 +datum=WGS84")
    centres = _whole_parcels().to_crs(local).centroid.to_crs(4326)
    return np.column_stack([centres.x, centres.y])


# Centroids taken in two conformal frames differ by the frames' differing scale over the
# parcel: about a metre for these 20 km parcels between a UTM zone and the frame on 180.
_CENTROID_M = 3.0


def test_a_split_parcel_is_no_distance_from_itself_and_true_distances_from_the_others():
    parcels = _split_parcels()
    demand = gis.nearest_site(parcels, parcels.iloc[:1], centroids=True).demand
    ref = _reference_centroids()
    n = len(ref)
    _, _, true = GEOD.inv(np.full(n, ref[0, 0]), np.full(n, ref[0, 1]), ref[:, 0], ref[:, 1])  # pyproj.Geod
    # A parcel is 0 m from itself (before the fix: 19.83 m, its centroid taken in two UTM
    # zones chosen from lon/lat centroids on the other side of the Earth).
    assert demand["distance_m"].iloc[0] == pytest.approx(0.0, abs=1e-6)
    np.testing.assert_allclose(demand["distance_m"], true, atol=_CENTROID_M)


def test_split_parcels_are_planned_where_they_lie_not_refused():
    # Before the fix: TooWide, "the data span 191 km" in UTM zone 19S (69 W), from lon/lat
    # centroids at 0, -89.95 and 147.18 degrees. Now the brute-force plan over the parcels'
    # reference centroids with pyproj.Geod distances.
    parcels = _split_parcels()
    plan = gis.p_median(parcels, 1, candidates=parcels, centroids=True)
    ref = _reference_centroids()
    costs = np.array([GEOD.inv(ref[:, 0], ref[:, 1], np.full(len(ref), x), np.full(len(ref), y))[2].sum()
                      for x, y in ref])
    assert plan.sites["source_row"].tolist() == [parcels.index[int(np.argmin(costs))]]  # brute force, pyproj.Geod
    error = float(plan.summary["scale_error"].iloc[0])
    assert plan.summary["cost_m"].iloc[0] == pytest.approx(costs.min(), rel=2 * error, abs=len(ref) * _CENTROID_M)
    # The continuous plan's site lies among the parcels, not across the globe (shapely).
    site = gis.p_median(parcels, 1, centroids=True).sites.geometry.iloc[0]
    hull = shapely.MultiPoint(np.column_stack([ref[:, 0] % 360, ref[:, 1]])).convex_hull  # lon in [0, 360)
    assert hull.buffer(1e-3).covers(shapely.Point(site.x % 360, site.y))


def test_a_parcel_split_or_whole_has_one_centroid():
    # Property: the same parcels drawn whole (longitudes beyond 180) or split at +-180 are
    # the same places, so every distance agrees, up to the frame a centroid is taken in
    # (parcel 'a', centred on 180 degrees, lies on the boundary of two UTM zones, and
    # rounding may put either form in either zone: 0.14 m apart).
    split, whole = _split_parcels(), _whole_parcels()
    a = gis.nearest_site(split, split.iloc[1:2], centroids=True).demand["distance_m"]
    b = gis.nearest_site(whole, whole.iloc[1:2], centroids=True).demand["distance_m"]
    np.testing.assert_allclose(a, b, atol=_CENTROID_M)
    assert a.iloc[1] == b.iloc[1] == 0.0
