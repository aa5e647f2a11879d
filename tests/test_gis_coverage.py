"""Candidates, regions and coverage in the GeoPandas layer: what the user receives, checked
against outside references.

References named beside each check: scipy.optimize.milp on the textbook integer programs
(set covering: Toregas et al. 1971; maximal covering: Church & ReVelle 1974; p-median with
candidates: ReVelle & Swain 1970) for small instances, scipy's cdist for planar distances,
pyproj.Geod for geodesic distances of lon/lat input, and shapely/GEOS for region containment.
Frames carry index labels that are not row positions, so every row name checked also checks
that positions never leak.
"""

from __future__ import annotations

import numpy as np
import pytest

gpd = pytest.importorskip("geopandas")
pyproj = pytest.importorskip("pyproj")
import shapely  # noqa: E402
from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402
from hypothesis.extra.numpy import arrays  # noqa: E402
from scipy.optimize import Bounds, LinearConstraint, milp  # noqa: E402
from scipy.spatial.distance import cdist  # noqa: E402

from placewise import InputError, gis  # noqa: E402

GEOD = pyproj.Geod(ellps="WGS84")


def planar_case(seed: int, n: int = 24, m: int = 12):
    """Demand and candidate frames without a CRS, labelled by strings that are not positions."""
    rng = np.random.default_rng(seed)
    xy = rng.uniform(0, 100, size=(n, 2))
    cxy = rng.uniform(0, 100, size=(m, 2))
    demand = gpd.GeoDataFrame({"people": rng.integers(1, 9, size=n).astype(float)},
                              geometry=gpd.points_from_xy(xy[:, 0], xy[:, 1]), index=[f"h{i}" for i in range(n)])
    candidates = gpd.GeoDataFrame({"owner": [f"o{j}" for j in range(m)]},
                                  geometry=gpd.points_from_xy(cxy[:, 0], cxy[:, 1]),
                                  index=[f"parcel-{j}" for j in range(m)])
    return demand, candidates, xy, cxy


def milp_set_cover(within: np.ndarray) -> int:
    """Least number of candidates covering every row (scipy.optimize.milp; Toregas et al. 1971)."""
    m = within.shape[1]
    res = milp(np.ones(m), constraints=LinearConstraint(within.astype(float), lb=1, ub=np.inf),
               integrality=np.ones(m), bounds=Bounds(0, 1))
    assert res.status == 0
    return int(round(res.fun))


def milp_max_cover(within: np.ndarray, w: np.ndarray, p: int, fixed: np.ndarray | None = None) -> float:
    """Most weight ``p`` new candidates (plus ``fixed``) cover (scipy.optimize.milp; Church &
    ReVelle 1974): variables x_j (open) then y_i (covered), y_i <= sum_{j covers i} x_j."""
    n, m = within.shape
    c = np.concatenate([np.zeros(m), -w])
    cover = np.hstack([-within.astype(float), np.eye(n)])
    count = np.concatenate([np.ones(m), np.zeros(n)])[None, :]
    lower = np.zeros(m + n)
    total = p
    if fixed is not None:
        lower[fixed] = 1
        total += len(fixed)
    res = milp(c, constraints=[LinearConstraint(cover, -np.inf, 0), LinearConstraint(count, total, total)],
               integrality=np.ones(m + n), bounds=Bounds(lower, 1))
    assert res.status == 0
    return float(-res.fun)


def milp_p_median(d: np.ndarray, w: np.ndarray, p: int) -> float:
    """Least total weighted distance of ``p`` candidates (scipy.optimize.milp; ReVelle & Swain
    1970): x_j open, y_ij assigned, sum_j y_ij = 1, y_ij <= x_j, sum x_j = p."""
    n, m = d.shape
    c = np.concatenate([np.zeros(m), (w[:, None] * d).ravel()])
    assign = np.hstack([np.zeros((n, m)), np.kron(np.eye(n), np.ones(m))])
    link = np.hstack([-np.tile(np.eye(m), (n, 1)), np.eye(n * m)])
    count = np.concatenate([np.ones(m), np.zeros(n * m)])[None, :]
    res = milp(c, constraints=[LinearConstraint(assign, 1, 1), LinearConstraint(link, -np.inf, 0),
                               LinearConstraint(count, p, p)],
               integrality=np.concatenate([np.ones(m), np.zeros(n * m)]), bounds=Bounds(0, 1))
    assert res.status == 0
    return float(res.fun)


@pytest.mark.parametrize(("seed", "radius"), [(1, 30.0), (2, 25.0), (4, 35.0)])
def test_cover_all_candidates_match_the_set_covering_program(seed, radius):
    demand, candidates, xy, cxy = planar_case(seed)
    within = cdist(xy, cxy) <= radius  # scipy distances
    assert within.any(axis=1).all()  # every row coverable (the instance is chosen so)
    plan = gis.cover_all(demand, radius, "people", candidates, planar=True)
    assert len(plan.sites) == milp_set_cover(within)  # scipy.optimize.milp optimum
    chosen = [candidates.index.get_loc(label) for label in plan.sites["source_row"]]
    assert set(plan.sites["source"]) == {"candidates"}
    # Every row within the radius of a chosen parcel (scipy cdist), as the columns say.
    d = cdist(xy, cxy[chosen])
    assert (d.min(axis=1) <= radius).all()
    assert plan.demand["covering"].tolist() == (d <= radius).sum(axis=1).tolist()
    assert plan.demand["covered"].all() and int(plan.summary["uncovered_points"].iloc[0]) == 0
    np.testing.assert_allclose(plan.demand["distance_u"], d.min(axis=1), rtol=1e-12)
    # The demand's site points at the sites row of the nearest chosen parcel.
    nearest = np.asarray(chosen)[d.argmin(axis=1)]
    served = plan.sites.loc[plan.demand["site"].to_numpy(dtype=int), "source_row"].tolist()
    np.testing.assert_allclose(cdist(xy, cxy)[np.arange(len(xy)), [candidates.index.get_loc(s) for s in served]],
                               cdist(xy, cxy)[np.arange(len(xy)), nearest], rtol=1e-12)
    assert int(plan.summary["lower_bound"].iloc[0]) <= len(plan.sites)
    assert "radius_u" in plan.summary.columns and float(plan.summary["radius_u"].iloc[0]) == radius


def test_cover_all_anywhere_needs_no_more_sites_than_the_candidates_program():
    demand, candidates, xy, cxy = planar_case(5)
    radius = 30.0
    plan = gis.cover_all(demand, radius, planar=True)
    sites = np.column_stack([shapely.get_x(plan.sites.geometry.values), shapely.get_y(plan.sites.geometry.values)])
    assert (cdist(xy, sites).min(axis=1) <= radius * (1 + 1e-9)).all()  # scipy cdist
    assert set(plan.sites["source"]) == {"anywhere"} and plan.sites["source_row"].isna().all()
    # Sites anywhere include every demand point: never more than covering from the points.
    assert len(plan.sites) <= milp_set_cover(cdist(xy, xy) <= radius)


def test_cover_all_anywhere_on_a_circle_of_the_radius_in_utm():
    # Closed form: three homes exactly 5 m from (500000, 5000000) in UTM zone 33N (offsets
    # (3, 4), (-3, 4), (0, -5)), an acute triangle, so one site at that centre covers them
    # within 5 m and no other location does. Two sites were proven optimal.
    xy = np.array([[500_003.0, 5_000_004.0], [499_997.0, 5_000_004.0], [500_000.0, 4_999_995.0]])
    homes = gpd.GeoDataFrame({"people": [1.0, 2.0, 3.0]}, geometry=gpd.points_from_xy(xy[:, 0], xy[:, 1]),
                             crs="EPSG:32633", index=["a", "b", "c"])
    plan = gis.cover_all(homes, 5.0)
    assert len(plan.sites) == 1 and int(plan.summary["lower_bound"].iloc[0]) == 1
    site = np.column_stack([shapely.get_x(plan.sites.geometry.values), shapely.get_y(plan.sites.geometry.values)])
    assert (cdist(xy, site) <= 5.0).all()  # scipy cdist
    best = gis.cover_most(homes, 1, 5.0, "people")
    assert float(best.summary["covered_share"].iloc[0]) == 1.0


@pytest.mark.parametrize("seed", [4, 5, 6])
def test_cover_most_matches_the_maximal_covering_program(seed):
    demand, candidates, xy, cxy = planar_case(seed, n=30, m=14)
    w = demand["people"].to_numpy()
    radius, p = 25.0, 3
    within = cdist(xy, cxy) <= radius
    plan = gis.cover_most(demand, p, radius, "people", candidates, planar=True)
    best = milp_max_cover(within, w, p)  # scipy.optimize.milp optimum
    s = plan.summary
    np.testing.assert_allclose(float(s["covered_load"].iloc[0]), best, rtol=1e-12)
    np.testing.assert_allclose(float(s["covered_share"].iloc[0]), best / w.sum(), rtol=1e-12)
    assert float(s["upper_bound"].iloc[0]) >= best - 1e-9
    chosen = [candidates.index.get_loc(label) for label in plan.sites["source_row"]]
    covered = (cdist(xy, cxy[chosen]) <= radius)
    assert plan.demand["covering"].tolist() == covered.sum(axis=1).tolist()
    assert int(s["uncovered_points"].iloc[0]) == int((~covered.any(axis=1)).sum())
    assert list(plan.demand.index) == list(demand.index)


def test_cover_most_with_existing_sites():
    demand, candidates, xy, cxy = planar_case(8, n=30, m=14)
    w = demand["people"].to_numpy()
    radius, p = 22.0, 2
    existing = gpd.GeoDataFrame({"name": ["old A", "old B"]}, geometry=gpd.points_from_xy([20, 80], [20, 80]),
                                index=[501, 502])
    plan = gis.cover_most(demand, p, radius, "people", candidates, fixed=existing, planar=True)
    every = np.vstack([cxy, [[20, 20], [80, 80]]])
    best = milp_max_cover(cdist(xy, every) <= radius, w, p, fixed=np.array([len(cxy), len(cxy) + 1]))
    np.testing.assert_allclose(float(plan.summary["covered_load"].iloc[0]), best, rtol=1e-12)
    old = plan.sites[plan.sites["fixed"]]
    assert old["source"].tolist() == ["fixed", "fixed"] and sorted(old["source_row"]) == [501, 502]
    assert (plan.sites["source"] == "candidates").sum() == p


@pytest.mark.parametrize("seed", [1, 2])
def test_cover_all_with_existing_sites_matches_the_set_covering_program(seed):
    demand, candidates, xy, cxy = planar_case(seed)
    radius = 30.0
    existing = gpd.GeoDataFrame({"name": ["old A", "old B"]}, geometry=gpd.points_from_xy([25, 75], [25, 75]),
                                index=["A", "B"])
    plan = gis.cover_all(demand, radius, "people", candidates, fixed=existing, planar=True)
    # scipy.optimize.milp: the fewest parcels covering the rows the two old sites leave.
    left = (cdist(xy, [[25, 25], [75, 75]]) > radius).all(axis=1)
    assert 0 < left.sum() < len(xy)
    need = milp_set_cover(cdist(xy[left], cxy) <= radius)
    s = plan.summary
    assert int(s["chosen"].iloc[0]) == need and int(s["lower_bound"].iloc[0]) <= need
    old = plan.sites[plan.sites["fixed"]]
    assert old["source"].tolist() == ["fixed", "fixed"] and old["source_row"].tolist() == ["A", "B"]
    assert (plan.sites["source"] == "candidates").sum() == need
    # Every row within the radius of a site (scipy cdist), as the covering column counts.
    sites = np.column_stack([plan.sites["x"], plan.sites["y"]])
    d = cdist(xy, sites)
    assert (d.min(axis=1) <= radius).all() and plan.demand["covered"].all()
    assert plan.demand["covering"].tolist() == (d <= radius).sum(axis=1).tolist()
    # Anywhere beside the same old sites: never more new sites than from the parcels.
    free = gis.cover_all(demand, radius, "people", fixed=existing, planar=True)
    assert set(free.sites["source"]) == {"anywhere", "fixed"} and free.sites["fixed"].sum() == 2
    d = cdist(xy, np.column_stack([free.sites["x"], free.sites["y"]]))
    assert (d.min(axis=1) <= radius * (1 + 1e-9)).all()  # scipy cdist
    assert int(free.summary["chosen"].iloc[0]) <= need


def test_cover_all_lonlat_with_an_existing_site_checked_with_geodesics():
    # Homes in two towns 30 km apart near Oslo; a clinic stands in the first. Radius 3 km:
    # pyproj.Geod says which homes the clinic reaches, and every home ends within 3 km
    # (up to the frame's stated scale error) of a site.
    rng = np.random.default_rng(31)
    lon = np.concatenate([10.70 + 0.03 * rng.random(30), 11.20 + 0.03 * rng.random(30)])
    lat = 59.90 + 0.02 * rng.random(60)
    demand = gpd.GeoDataFrame(geometry=gpd.points_from_xy(lon, lat), crs="EPSG:4326")
    clinic = gpd.GeoSeries(gpd.points_from_xy([10.715], [59.91]), crs="EPSG:4326", index=["clinic"])
    radius = 3000.0
    plan = gis.cover_all(demand, radius, fixed=clinic)
    error = float(plan.summary["scale_error"].iloc[0])
    sites = plan.sites.to_crs("EPSG:4326")
    slon, slat = shapely.get_x(sites.geometry.values), shapely.get_y(sites.geometry.values)
    assert plan.sites["source_row"].tolist()[-1] == "clinic" and plan.sites["fixed"].tolist()[-1]
    np.testing.assert_allclose([slon[-1], slat[-1]], [10.715, 59.91], atol=1e-9)  # the clinic did not move
    _, _, d = GEOD.inv(np.repeat(lon, len(slon)), np.repeat(lat, len(slon)), np.tile(slon, 60), np.tile(slat, 60))
    near = d.reshape(60, len(slon)).min(axis=1)
    assert (near <= radius * (1 + 2 * error)).all()  # pyproj.Geod
    # The first town lies within the clinic's reach (Geod), so the new sites serve the second.
    _, _, to_clinic = GEOD.inv(lon, lat, np.full(60, 10.715), np.full(60, 59.91))
    assert (to_clinic[:30] < radius * (1 - 2 * error)).all()
    new = ~plan.sites["fixed"].to_numpy()
    assert (slon[new] > 11.0).all() and int(plan.summary["chosen"].iloc[0]) == new.sum() >= 1


@pytest.mark.parametrize("work_crs", [None, "EPSG:32618", "EPSG:2263"])
def test_a_lonlat_radius_is_metres_whatever_the_working_unit(work_crs):
    # Five homes along a street in New York, 0.0071 degrees of longitude apart: 599.6 m by
    # pyproj.Geod. Closed form: with spacing s <= r < 2 s a disk holds at most three
    # consecutive homes, so two sites cover five; with r < s / 2 each home needs its own.
    # EPSG:2263 (New York State Plane) measures in US survey feet, where 700 was read as
    # 700 ft (213 m): five sites instead of two.
    lon = -73.98 + 0.0071 * np.arange(5)
    homes = gpd.GeoDataFrame(geometry=gpd.points_from_xy(lon, np.full(5, 40.75)), crs="EPSG:4326")
    _, _, spacing = GEOD.inv(lon[:-1], np.full(4, 40.75), lon[1:], np.full(4, 40.75))
    assert 599 < spacing.min() <= spacing.max() < 600  # pyproj.Geod
    for radius, sites in ((700.0, 2), (290.0, 5)):
        plan = gis.cover_all(homes, radius, candidates=homes, work_crs=work_crs)
        assert int(plan.summary["sites"].iloc[0]) == sites
        most = gis.cover_most(homes, 1, radius, candidates=homes, work_crs=work_crs)
        assert float(most.summary["covered_share"].iloc[0]) == pytest.approx(3 / 5 if sites == 2 else 1 / 5)
        now = gis.evaluate_sites(homes, homes.iloc[[2]], radius=radius, work_crs=work_crs)
        assert float(now.summary["covered_share"].iloc[0]) == pytest.approx(3 / 5 if sites == 2 else 1 / 5)
    # The radius column states the standard in the working unit: 700 m in feet there.
    unit = "usft" if work_crs == "EPSG:2263" else "m"
    stated = float(plan.summary[f"radius_{unit}"].iloc[0])
    assert stated == pytest.approx(290.0 / (1200 / 3937) if unit == "usft" else 290.0, rel=1e-9)


def test_cover_most_anywhere_with_more_sites_than_needed():
    # Two houses 1 apart and an old clinic far off; 4 new sites anywhere within 1.5: one covers
    # both houses (closed form), and the rest could cover nothing more, so none is placed.
    homes = gpd.GeoDataFrame({"people": [3, 2]}, geometry=gpd.points_from_xy([0, 1], [0, 0]))
    clinic = gpd.GeoSeries(gpd.points_from_xy([50], [50]), index=["old"])
    plan = gis.cover_most(homes, 4, 1.5, "people", fixed=clinic, planar=True)
    assert float(plan.summary["covered_share"].iloc[0]) == 1.0
    assert plan.sites["source"].tolist() == ["anywhere", "fixed"]
    new = plan.sites[~plan.sites["fixed"]]
    xy = np.column_stack([homes.geometry.x, homes.geometry.y])
    assert (cdist(xy, np.column_stack([new["x"], new["y"]])) <= 1.5).all()  # scipy cdist


@pytest.mark.parametrize("seed", [11, 12])
def test_p_median_with_candidates_matches_the_integer_program(seed):
    demand, candidates, xy, cxy = planar_case(seed, n=15, m=8)
    w = demand["people"].to_numpy()
    plan = gis.p_median(demand, 3, "people", candidates=candidates, planar=True)
    best = milp_p_median(cdist(xy, cxy), w, 3)  # scipy.optimize.milp optimum
    np.testing.assert_allclose(float(plan.summary["cost_u"].iloc[0]), best, rtol=1e-9)
    chosen = [candidates.index.get_loc(label) for label in plan.sites["source_row"]]
    np.testing.assert_allclose(plan.demand["distance_u"], cdist(xy, cxy[chosen]).min(axis=1), rtol=1e-12)
    assert "lower_bound_u" in plan.summary.columns and "relative_gap" in plan.summary.columns


def test_region_keeps_candidates_and_sites_inside():
    demand, candidates, xy, cxy = planar_case(13, n=20, m=16)
    zone = shapely.box(0, 0, 60, 100)
    inside = shapely.covers(zone, candidates.geometry.values)  # shapely containment
    plan = gis.p_median(demand, 2, candidates=candidates, region=gpd.GeoSeries([zone]), planar=True)
    assert shapely.covers(zone, plan.sites.geometry.values).all()
    held = candidates.index[inside]
    assert set(plan.sites["source_row"]) <= set(held)
    best = milp_p_median(cdist(xy, cxy[inside]), np.ones(len(xy)), 2)
    np.testing.assert_allclose(float(plan.summary["cost_u"].iloc[0]), best, rtol=1e-9)
    centre = gis.p_center(demand, 2, candidates=candidates, region=zone, planar=True)
    assert shapely.covers(zone, centre.sites.geometry.values).all()


def test_region_on_continuous_sites():
    demand, _, xy, _ = planar_case(14, n=40)
    zone = shapely.Polygon([(70, 70), (100, 70), (100, 100), (70, 100)], [[(80, 80), (90, 80), (90, 90), (80, 90)]])
    for out in (gis.weber_point(demand, "people", region=zone, planar=True),
                gis.minimax_point(demand, "people", region=zone, planar=True)):
        site = out.geometry.iloc[0]
        assert zone.distance(site) <= 1e-7  # shapely: in the region, boundary included
        assert bool(out["region_active"].iloc[0])
    plan = gis.p_median(demand, 2, "people", region=gpd.GeoDataFrame(geometry=[zone]), planar=True)
    assert max(zone.distance(g) for g in plan.sites.geometry) <= 1e-7
    weber = gis.weber_point(demand, "people", region=zone, planar=True)
    d = cdist(xy, [[weber["x"].iloc[0], weber["y"].iloc[0]]])[:, 0]
    np.testing.assert_allclose(float(weber["cost_u"].iloc[0]), float(demand["people"].to_numpy() @ d), rtol=1e-9)
    assert float(weber["cost_u"].iloc[0]) >= float(weber["free_cost_u"].iloc[0])


def test_lonlat_radius_is_metres_checked_with_geodesics():
    rng = np.random.default_rng(21)
    lon = 10.7 + 0.15 * rng.random(60)
    lat = 59.85 + 0.08 * rng.random(60)
    demand = gpd.GeoDataFrame(geometry=gpd.points_from_xy(lon, lat), crs="EPSG:4326",
                              index=[f"h{i}" for i in range(60)])
    # Candidates in a projected CRS of their own: brought into the demand's working frame.
    clon, clat = 10.7 + 0.15 * rng.random(15), 59.85 + 0.08 * rng.random(15)
    candidates = gpd.GeoDataFrame(geometry=gpd.points_from_xy(clon, clat), crs="EPSG:4326").to_crs("EPSG:3035")
    radius = 2500.0
    plan = gis.cover_most(demand, 4, radius, candidates=candidates)
    s = plan.summary
    assert "radius_m" in s.columns and s["work_crs"].iloc[0].startswith("WGS 84 / UTM zone 32N")
    error = float(s["scale_error"].iloc[0])
    assert 0 < error <= 1e-3
    sites = plan.sites.to_crs("EPSG:4326")
    slon, slat = shapely.get_x(sites.geometry.values), shapely.get_y(sites.geometry.values)
    # pyproj.Geod: geodesic distance from every row to every site.
    _, _, d = GEOD.inv(np.repeat(lon, len(slon)), np.repeat(lat, len(slon)), np.tile(slon, 60), np.tile(slat, 60))
    d = d.reshape(60, len(slon))
    near = d.min(axis=1)
    clear = np.abs(near - radius) > 2 * error * radius  # rows beyond the frame's stated error margin
    assert clear.sum() > 40
    assert (plan.demand["covered"].to_numpy()[clear] == (near[clear] <= radius)).all()
    np.testing.assert_allclose(plan.demand["distance_m"], near, rtol=2 * error)
    assert plan.demand.crs == demand.crs and plan.sites.crs == demand.crs


def test_lonlat_region_on_weber_point():
    rng = np.random.default_rng(3)
    demand = gpd.GeoDataFrame(geometry=gpd.points_from_xy(2.3 + 0.1 * rng.random(50), 48.8 + 0.1 * rng.random(50)),
                              crs="EPSG:4326")
    zone = shapely.box(2.45, 48.95, 2.6, 49.1)  # north-east of every point: the region must move the site
    out = gis.weber_point(demand, region=gpd.GeoSeries([zone], crs="EPSG:4326"))
    assert bool(out["region_active"].iloc[0]) and "UTM" in out["work_crs"].iloc[0]
    site = out.geometry.iloc[0]
    # shapely in lon/lat: on the region's boundary up to the densified edges (1e-7 degrees).
    assert zone.buffer(1e-7).covers(site)


def test_evaluate_sites_against_geodesics():
    rng = np.random.default_rng(9)
    lon, lat = -3.2 + 0.2 * rng.random(40), 55.9 + 0.1 * rng.random(40)
    demand = gpd.GeoDataFrame({"w": rng.integers(1, 4, 40).astype(float)},
                              geometry=gpd.points_from_xy(lon, lat), crs="EPSG:4326")
    today = gpd.GeoDataFrame(geometry=gpd.points_from_xy([-3.15, -3.05], [55.93, 55.97]), crs="EPSG:4326",
                             index=["east depot", "west depot"])
    plan = gis.evaluate_sites(demand, today, "w", radius=5000)
    _, _, d = GEOD.inv(np.repeat(lon, 2), np.repeat(lat, 2), np.tile([-3.15, -3.05], 40), np.tile([55.93, 55.97], 40))
    near = d.reshape(40, 2).min(axis=1)
    error = float(plan.summary["scale_error"].iloc[0])
    np.testing.assert_allclose(plan.demand["distance_m"], near, rtol=2 * error)
    np.testing.assert_allclose(float(plan.summary["cost_m"].iloc[0]), demand["w"].to_numpy() @ near, rtol=2 * error)
    assert plan.sites["source_row"].tolist() == ["east depot", "west depot"]
    assert plan.sites["load"].sum() == demand["w"].sum()


@pytest.mark.parametrize("radius", [0, -5.0, float("nan"), float("inf"), "10"])
def test_bad_radius_is_an_input_error(radius):
    demand, candidates, _, _ = planar_case(1)
    with pytest.raises(InputError, match="radius"):
        gis.cover_all(demand, radius, candidates=candidates, planar=True)
    with pytest.raises(InputError, match="radius"):
        gis.cover_most(demand, 1, radius, planar=True)


def test_region_without_candidates_is_an_input_error():
    demand, candidates, _, _ = planar_case(1)
    with pytest.raises(InputError, match="region holds none"):
        gis.p_median(demand, 1, candidates=candidates, region=shapely.box(200, 200, 300, 300), planar=True)


# Toy coordinates at UTM zone 32N's false origin (0.27 % scale error, said by a warning
# tested in test_gis.py).
@pytest.mark.filterwarnings("ignore:.*distorts distances by up to:UserWarning")
def test_candidates_without_coordinates_are_an_input_error():
    demand, candidates, _, _ = planar_case(1)
    broken = candidates.copy()
    broken.loc["parcel-3", "geometry"] = None
    with pytest.raises(InputError, match="parcel-3"):
        gis.cover_all(demand, 40.0, candidates=broken, planar=True)
    with pytest.raises(InputError, match="either every frame has a CRS"):
        gis.cover_all(demand.set_crs("EPSG:32632"), 40.0, candidates=candidates)


def test_by_with_candidates_is_refused():
    demand, candidates, _, _ = planar_case(1)
    demand["zone"] = "a"
    with pytest.raises(InputError, match="by="):
        gis.p_median(demand, 1, by="zone", candidates=candidates, planar=True)


def test_evaluate_sites_names_a_bad_site_by_its_row_label():
    # A site at infinity in a frame labelled 'a', 'b': named by its label, as a bad demand
    # row is (it was named by its position, sites[1]). Reference: the frame's own index.
    homes = gpd.GeoSeries(gpd.points_from_xy([0, 3, 10], [0, 4, 0]), index=["x", "y", "z"])
    sites = gpd.GeoSeries(gpd.points_from_xy([0, np.inf], [0, 0]), index=["a", "b"])
    with pytest.raises(InputError, match=r"^sites\['b'\] has an infinite") as caught:
        gis.evaluate_sites(homes, sites, planar=True)
    assert (caught.value.argument, caught.value.row) == ("sites", "b")
    homes = gpd.GeoSeries(gpd.points_from_xy([0, np.nan, 10], [0, 4, 0]), index=["x", "y", "z"])
    with pytest.raises(InputError, match=r"^points\['y'\] has a NaN") as caught:
        gis.evaluate_sites(homes, sites.iloc[:1], planar=True)
    assert caught.value.row == "y"


def test_uncoverable_row_names_its_label_and_its_nearest_candidate():
    demand, candidates, xy, cxy = planar_case(2)
    d = cdist(xy, cxy)  # scipy: the first row beyond 0.5 of every candidate, and its nearest one
    first = int(np.argmax(d.min(axis=1) > 0.5))
    with pytest.raises(InputError) as info:
        gis.cover_all(demand, 0.5, candidates=candidates, planar=True)
    text = str(info.value)
    # In the coordinates' words: the candidate's row label and its distance (not a column of
    # a cost matrix and its cost).
    head = (f"radius: points['h{first}'] has no candidate within radius 0.5; its nearest candidate, "
            f"candidates['parcel-{int(d[first].argmin())}'], lies at distance ")
    assert text.startswith(head) and float(text[len(head):]) == pytest.approx(d[first].min(), rel=1e-12), text
    assert info.value.row == f"h{first}"

    # Beside existing sites, which follow the candidates in the model: a far row nearest to
    # an existing one names it in the frame it came from. Reference: cdist again; every
    # other row lies within 200 of every candidate (both in the 100 x 100 square).
    far = gpd.GeoDataFrame({"people": [1.0]}, geometry=gpd.points_from_xy([500.0], [0.0]), index=["far"])
    demand = gpd.GeoDataFrame(np.concatenate([demand.geometry.values, far.geometry.values]),
                              columns=["geometry"], geometry="geometry", index=[*demand.index, "far"])
    fixed = gpd.GeoSeries(gpd.points_from_xy([280.0, 50.0], [0.0, 50.0]), index=["depot-a", "depot-b"])
    reach = cdist([[500.0, 0.0]], np.vstack([cxy, shapely.get_coordinates(fixed.values)]))[0]
    assert int(reach.argmin()) == len(cxy) and reach.min() == 220 > 200
    with pytest.raises(InputError) as info:
        gis.cover_all(demand, 200, candidates=candidates, fixed=fixed, planar=True)
    assert str(info.value) == ("radius: points['far'] has no candidate within radius 200; its nearest existing "
                               "site, fixed['depot-a'], lies at distance 220")


@settings(max_examples=25)
@given(
    xy=arrays(np.float64, st.tuples(st.integers(1, 12), st.just(2)), elements=st.integers(-5, 5).map(float)),
    cxy=arrays(np.float64, st.tuples(st.integers(1, 6), st.just(2)), elements=st.integers(-5, 5).map(float)),
    radius=st.sampled_from([0.5, 1.0, 2.0, 3.5]),
    p=st.integers(1, 3),
)
def test_cover_most_columns_agree_with_distances_on_awkward_grids(xy, cxy, radius, p):
    """Repeated points, repeated candidates and points exactly at the radius (integer grids):
    whatever the plan, its columns agree with scipy's distances to the sites it names."""
    demand = gpd.GeoSeries(gpd.points_from_xy(xy[:, 0], xy[:, 1]), index=[f"d{i}" for i in range(len(xy))])
    candidates = gpd.GeoSeries(gpd.points_from_xy(cxy[:, 0], cxy[:, 1]), index=[f"c{j}" for j in range(len(cxy))])
    if p > len(cxy):
        with pytest.raises(InputError):
            gis.cover_most(demand, p, radius, candidates=candidates, planar=True)
        return
    plan = gis.cover_most(demand, p, radius, candidates=candidates, planar=True)
    chosen = [candidates.index.get_loc(label) for label in plan.sites["source_row"]]
    assert len(chosen) == p
    d = cdist(xy, cxy[chosen])  # scipy
    assert plan.demand["covering"].tolist() == (d <= radius).sum(axis=1).tolist()
    np.testing.assert_allclose(plan.demand["distance_u"], d.min(axis=1), rtol=1e-12, atol=0)
    covered = (d <= radius).any(axis=1)
    assert int(plan.summary["uncovered_points"].iloc[0]) == int((~covered).sum())
    best = milp_max_cover(cdist(xy, cxy) <= radius, np.ones(len(xy)), p)  # scipy.optimize.milp
    assert float(plan.summary["covered_load"].iloc[0]) == pytest.approx(best)


def test_region_with_groups_on_lonlat_shares_one_frame():
    rng = np.random.default_rng(31)
    lon, lat = 5.3 + 0.2 * rng.random(60), 60.3 + 0.1 * rng.random(60)
    demand = gpd.GeoDataFrame({"ward": np.repeat(["east", "west"], 30)}, geometry=gpd.points_from_xy(lon, lat),
                              crs="EPSG:4326")
    zone = gpd.GeoSeries([shapely.box(5.30, 60.30, 5.36, 60.33)], crs="EPSG:4326")
    out = gis.minimax_point(demand, by="ward", region=zone)
    assert out["ward"].tolist() == ["east", "west"] and out["work_crs"].nunique() == 1
    # shapely in lon/lat: every group's site in the region (up to its densified edges).
    assert zone.iloc[0].buffer(1e-7).covers(out.geometry).all()
    # pyproj.Geod: the reported radius is the largest distance from the site, to the frame's error.
    for ward, row in zip(out["ward"], out.itertuples()):
        mine = (demand["ward"] == ward).to_numpy()
        site = row.geometry
        _, _, d = GEOD.inv(lon[mine], lat[mine], np.full(mine.sum(), site.x), np.full(mine.sum(), site.y))
        np.testing.assert_allclose(row.weighted_radius_m, d.max(), rtol=2 * row.scale_error)
