"""Geodesic kernels (placewise.geodesic) and their use by placewise.gis for lon/lat input.

Outside references, named beside each check:
- pyproj.Geod(ellps="WGS84") (GeographicLib) for every distance, length and area;
- scipy.optimize.minimize (Nelder-Mead, several starts) on the objectives computed with
  pyproj.Geod for the Fermat-Weber and minimax optima;
- closed forms: two points' minimax site is the geodesic midpoint; points symmetric about a
  meridian, the equator or the pole's axis put the Fermat-Weber point on it;
- brute force over all sites with pyproj.Geod for the nearest site;
- shapely for polygon validity and coverage.
"""

from __future__ import annotations

import pathlib

import geopandas as gpd
import numpy as np
import pandas as pd
import pytest
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st
from pyproj import Geod
from scipy.optimize import minimize

import placewise as pw
from placewise import gis

GEOD = Geod(ellps="WGS84")
DATA = pathlib.Path(__file__).parent / "data"


def geod_distance(a, b):
    a, b = np.asarray(a, float).reshape(-1, 2), np.asarray(b, float).reshape(-1, 2)
    a, b = np.broadcast_arrays(a, b)
    return np.asarray(GEOD.inv(a[:, 0], a[:, 1], b[:, 0], b[:, 1])[2])


def geod_cost(x, pts, w=None):
    d = geod_distance(np.broadcast_to(np.asarray(x, float), pts.shape), pts)
    return float(np.sum(d if w is None else w * d))


def nelder_mead_best(objective, starts):
    """scipy.optimize Nelder-Mead from several starts, in (lon, lat); the best value."""
    best = np.inf
    for s in starts:
        r = minimize(lambda v: objective(np.array([v[0], np.clip(v[1], -90, 90)])), s, method="Nelder-Mead",
                     options={"xatol": 1e-10, "fatol": 1e-6, "maxiter": 4000})
        best = min(best, r.fun)
    return best


def country_points():
    """Natural Earth country points (public domain; see tests/data/naturalearth_country_points.md)."""
    return pd.read_csv(DATA / "naturalearth_country_points.csv")


# ------------------------------------------------------------------ distances, lengths, areas


def test_distances_match_pyproj_on_hard_pairs():
    rng = np.random.default_rng(3)
    n = 4000
    a = np.column_stack([rng.uniform(-180, 180, n), np.degrees(np.arcsin(rng.uniform(-1, 1, n)))])
    b = np.column_stack([rng.uniform(-180, 180, n), np.degrees(np.arcsin(rng.uniform(-1, 1, n)))])
    # Nearly antipodal, polar and antimeridian-crossing pairs on top of random ones.
    near_antipode = np.column_stack([a[:500, 0] + 180 + rng.normal(0, 0.5, 500), -a[:500, 1] + rng.normal(0, 0.5, 500)])
    near_antipode[:, 1] = np.clip(near_antipode[:, 1], -90, 90)
    polar = np.column_stack([rng.uniform(-180, 180, 500), rng.uniform(89, 90, 500)])
    across = np.column_stack([rng.uniform(179, 180, 500), rng.uniform(-60, 60, 500)])
    across_b = np.column_stack([rng.uniform(-180, -179, 500), rng.uniform(-60, 60, 500)])
    A = np.vstack([a, a[:500], polar, across, [[0, 0], [0, 0], [10, 90]]])
    B = np.vstack([b, near_antipode, polar[::-1], across_b, [[180, 0], [0, 0], [-170, -90]]])
    ours = pw.geodesic.distance(A, B)
    ref = geod_distance(A, B)  # pyproj.Geod (GeographicLib)
    scale = np.maximum(ref, 1.0)
    assert np.max(np.abs(ours - ref) / scale) < 1e-9


def test_length_and_area_match_pyproj():
    rng = np.random.default_rng(5)
    path = np.column_stack([np.linspace(170, 190, 50) % 360 - 180 * (np.linspace(170, 190, 50) > 180) * 0,
                            rng.uniform(-30, 30, 50)])
    path[:, 0] = np.where(path[:, 0] > 180, path[:, 0] - 360, path[:, 0])
    # pyproj.Geod.line_length
    assert pw.geodesic.path_length(path) == pytest.approx(GEOD.line_length(path[:, 0], path[:, 1]), rel=1e-12)
    t = np.linspace(0, 2 * np.pi, 40, endpoint=False)
    ring = np.column_stack([179 + 3 * np.cos(t), -20 + 2 * np.sin(t)])
    ring[:, 0] = np.where(ring[:, 0] > 180, ring[:, 0] - 360, ring[:, 0])
    area_ref, _ = GEOD.polygon_area_perimeter(ring[:, 0], ring[:, 1])  # pyproj.Geod, signed
    assert pw.geodesic.ring_area(ring) == pytest.approx(area_ref, rel=1e-12)
    assert pw.geodesic.ring_area(ring[::-1]) == pytest.approx(-area_ref, rel=1e-12)


def test_bad_coordinates_name_the_row():
    with pytest.raises(pw.InputError, match=r"points\[1\] has latitude 95") as e:
        pw.geodesic.weber_point([[0, 0], [0, 95]])
    assert e.value.row == 1
    with pytest.raises(pw.InputError, match="longitude"):
        pw.geodesic.nearest_site([[600, 0]], [[0, 0]])


# ------------------------------------------------------------------ Fermat-Weber


@pytest.mark.parametrize("centre", [(10.0, 45.0), (179.5, -20.0), (-60.0, 70.0)])
def test_weber_matches_nelder_mead_on_the_pyproj_objective(centre):
    rng = np.random.default_rng(11)
    pts = np.column_stack([centre[0] + rng.normal(0, 4, 60), np.clip(centre[1] + rng.normal(0, 3, 60), -89, 89)])
    pts[:, 0] = (pts[:, 0] + 180) % 360 - 180
    w = rng.uniform(0.5, 3, 60)
    r = pw.geodesic.weber_point(pts, w, tol=1e-12)
    assert r.converged
    # pyproj.Geod: the reported cost is the cost at the reported location.
    assert r.cost == pytest.approx(geod_cost(r.location, pts, w), rel=1e-12)
    # scipy Nelder-Mead from several starts on the pyproj objective (unwrapped longitudes).
    starts = [pts[k] for k in (0, 1, 2)] + [np.array(centre)]
    best = nelder_mead_best(lambda x: geod_cost(x, pts, w), starts)
    assert r.cost <= best * (1 + 1e-9)
    assert r.cost - r.gap <= best  # the certificate is a true lower bound


def test_weber_symmetric_about_a_meridian_and_around_the_pole():
    # Closed form (symmetry): mirrored about the 180° meridian, the optimum lies on it.
    base = np.array([[1.0, 10.0], [3.0, -5.0], [0.5, 30.0], [7.0, 2.0]])
    pts = np.vstack([[180 - base[:, 0], base[:, 1]], [-180 + base[:, 0], base[:, 1]]]).reshape(2, -1, 2)
    pts = np.vstack([np.column_stack([180 - base[:, 0], base[:, 1]]), np.column_stack([-180 + base[:, 0], base[:, 1]])])
    r = pw.geodesic.weber_point(pts, tol=1e-13)
    assert abs(abs(r.location[0]) - 180) < 1e-8
    # Rotational symmetry about the pole's axis: the optimum is the pole.
    ring = np.column_stack([np.arange(-180, 180, 45.0), np.full(8, 80.0)])
    r = pw.geodesic.weber_point(ring, tol=1e-12)
    assert r.location[1] == pytest.approx(90.0, abs=1e-7)
    assert r.cost == pytest.approx(geod_cost(r.location, ring), rel=1e-12)  # pyproj.Geod


def test_weber_refuses_more_than_a_hemisphere_and_flags_no_certificate_beyond_the_cap():
    with pytest.raises(pw.DegenerateInputError, match="hemisphere"):
        pw.geodesic.weber_point([[0, 0], [120, 0], [-120, 0]])
    # 60° from the mean: answered, but with no certificate (gap infinite, not converged).
    r = pw.geodesic.weber_point([[0, 60], [120, 60], [-120, 60], [0, -5]])
    assert np.isinf(r.gap) and not r.converged


def test_weber_on_real_south_american_points():
    # Natural Earth country points (public domain), South America: a continental set.
    sa = country_points().query("continent == 'South America'")[["lon", "lat"]].to_numpy()
    r = pw.geodesic.weber_point(sa, tol=1e-12)
    assert r.converged
    best = nelder_mead_best(lambda x: geod_cost(x, sa), [sa.mean(axis=0), sa[0], sa[3]])  # scipy + pyproj
    assert r.cost <= best * (1 + 1e-9)


def test_grouped_weber_equals_separate_calls():
    rng = np.random.default_rng(2)
    pts = np.column_stack([rng.uniform(170, 190, 90), rng.uniform(-10, 10, 90)])
    pts[:, 0] = (pts[:, 0] + 180) % 360 - 180
    labels = np.repeat([4, 7, 9], 30)
    g = pw.geodesic.weber_point(pts, groups=labels)
    for label in (4, 7, 9):
        single = pw.geodesic.weber_point(pts[labels == label])
        assert np.array_equal(g[label].location, single.location)


# ------------------------------------------------------------------ minimax and circles


@pytest.mark.parametrize("pair", [((170.0, -40.0), (-170.0, -45.0)), ((0.0, 88.0), (180.0, 85.0)),
                                  ((-75.0, 40.0), (10.0, 50.0))])
def test_two_point_minimax_is_the_pyproj_midpoint(pair):
    a, b = np.array(pair[0]), np.array(pair[1])
    r = pw.geodesic.minimax_point([a, b])
    az, _, d = GEOD.inv(a[0], a[1], b[0], b[1])  # pyproj.Geod: midpoint by the direct problem
    mid_lon, mid_lat, _ = GEOD.fwd(a[0], a[1], az, d / 2)
    # Within 1e-8 of the distance: across the geodesic the radius changes only to second order.
    assert geod_distance(r.location, [mid_lon, mid_lat])[0] < 1e-8 * d
    assert r.weighted_radius == pytest.approx(d / 2, rel=1e-12)
    assert r.converged


@pytest.mark.parametrize("centre", [(25.0, 50.0), (179.0, 0.0), (40.0, 82.0)])
def test_minimax_matches_nelder_mead_on_the_pyproj_objective(centre):
    rng = np.random.default_rng(4)
    pts = np.column_stack([centre[0] + rng.normal(0, 5, 40), np.clip(centre[1] + rng.normal(0, 3, 40), -89, 89)])
    pts[:, 0] = (pts[:, 0] + 180) % 360 - 180
    w = rng.uniform(1, 2, 40)
    r = pw.geodesic.minimax_point(pts, w)

    def worst(x):
        return float(np.max(w * geod_distance(np.broadcast_to(x, pts.shape), pts)))

    assert r.weighted_radius == pytest.approx(worst(r.location), rel=1e-12)  # pyproj.Geod
    best = nelder_mead_best(worst, [np.array(centre), pts[0], pts[5]])  # scipy Nelder-Mead
    assert r.weighted_radius <= best * (1 + 1e-9)
    assert r.weighted_radius - r.gap <= best * (1 + 1e-12)  # honest lower bound


def test_enclosing_circle_across_the_antimeridian_covers_and_measures():
    rng = np.random.default_rng(8)
    pts = np.column_stack([rng.uniform(175, 185, 50), rng.uniform(-15, -5, 50)])
    pts[:, 0] = (pts[:, 0] + 180) % 360 - 180
    c = pw.geodesic.enclosing_circle(pts)
    # pyproj.Geod: every point within the radius, the farthest at it.
    d = geod_distance(np.broadcast_to(c.center, pts.shape), pts)
    assert d.max() == pytest.approx(c.radius, rel=1e-12)
    geom = c.to_geodataframe(crs="EPSG:4326").geometry.iloc[0]
    assert geom.is_valid and geom.geom_type == "MultiPolygon"
    assert shapely.covers(geom, shapely.points(pts)).all()  # shapely
    # pyproj.Geod polygon area of a finely densified circle ring.
    t = np.linspace(0, 360, 20000, endpoint=False)
    lon, lat, _ = GEOD.fwd(np.full_like(t, c.center[0]), np.full_like(t, c.center[1]), t, np.full_like(t, c.radius))
    area_ref = abs(GEOD.polygon_area_perimeter(lon, lat)[0])
    assert c.area == pytest.approx(area_ref, rel=1e-7)


def test_enclosing_circle_around_the_pole_is_closed_through_it():
    pts = np.column_stack([np.arange(-180, 180, 30.0), np.full(12, 84.0)])
    c = pw.geodesic.enclosing_circle(pts)
    assert c.center[1] == pytest.approx(90, abs=1e-6)
    geom = c.to_geodataframe(crs="EPSG:4326").geometry.iloc[0]
    assert geom.is_valid and shapely.covers(geom, shapely.points(pts)).all()  # shapely


def test_circles_holding_a_pole_are_drawn_whole():
    # Points round the north pole off its axis: the smallest circle holds the pole, and the
    # drawn ring's longitudes (unwrapped from the centre's) run a whole turn beyond +-180.
    rng = np.random.default_rng(41)
    pts = np.column_stack([rng.uniform(-180, 180, 20), rng.uniform(75, 85, 20)])
    c = pw.geodesic.enclosing_circle(pts)
    geom = c.to_geodataframe(crs="EPSG:4326").geometry.iloc[0]
    assert geom.is_valid and shapely.covers(geom, shapely.points(pts)).all()  # shapely
    # pyproj.Geod: the geodesic circles just inside and just outside the radius, in 720
    # directions, lie inside and outside the drawn polygon (shapely covers).
    cases = [(c.center, c.radius), ([30.0, 85.0], 1.2e6), ([85.156, 87.287], 3.13e6), ([9.0, 64.3], 6.35e6),
             ([-120.0, -82.0], 2.0e6), ([179.9, 89.5], 5e5)]
    az = np.linspace(0, 360, 720, endpoint=False)
    for centre, radius in cases:
        drawn = pw.geodesic.circle_polygon(centre, radius)
        for factor, inside in ((0.995, True), (1.01, False)):
            lon, lat, _ = GEOD.fwd(np.full(az.size, centre[0]), np.full(az.size, centre[1]), az,
                                   np.full(az.size, factor * radius))
            ring = shapely.points(np.column_stack([(np.asarray(lon) + 180) % 360 - 180, lat]))
            assert (shapely.covers(drawn, ring) == inside).all(), (centre, radius, factor)


def test_circle_polygons_hold_the_whole_disc_and_little_more():
    # The three towns whose smallest circle left (30E, 65N) 75 m outside its polygon, a sweep of
    # random sets at all latitudes, and circles passing within a few km of a pole (where lon/lat
    # edges bend most). pyproj.Geod.fwd draws the true circle in 3600 directions: every point
    # of it must be covered (shapely covers), while the polygon's vertices (away from the
    # antimeridian and the pole, which are cut lines) stay within the documented 0.02 % of the
    # radius, 1 mm aside, for every polygon that did not reach the vertex cap.
    towns = np.array([[0.0, 45.0], [30.0, 65.0], [40.0, 40.0]])
    c = pw.geodesic.enclosing_circle(towns)
    frame = gpd.GeoDataFrame(geometry=gpd.points_from_xy(*towns.T), crs=4326)
    held = gpd.sjoin(frame, gis.enclosing_circle(frame)[["geometry"]], predicate="within")  # geopandas
    assert sorted(held.index) == [0, 1, 2]
    rng = np.random.default_rng(4)
    cases = [(c.center, c.radius), ([0.0, 88.0], 2.22e5), ([30.0, 80.0], 1.111e6), ([179.9, -17.0], 5e4),
             ([0.0, -89.999], 1e6), ([45.0, 0.0], 9e6), ([0.0, 0.0], 1.0), ([0.0, 0.0], 0.0)]
    for _ in range(6):
        pts = np.column_stack([rng.uniform(-180, 180, 1) + rng.normal(0, 8, 12),
                               np.clip(rng.uniform(-80, 80, 1) + rng.normal(0, 8, 12), -89.9, 89.9)])
        found = pw.geodesic.enclosing_circle(pts)
        cases.append((found.center, found.radius))
    az = np.linspace(0, 360, 3600, endpoint=False)
    for centre, radius in cases:
        drawn = pw.geodesic.circle_polygon(centre, radius)
        assert drawn.is_valid, (centre, radius)  # shapely
        lon, lat, _ = GEOD.fwd(np.full(az.size, centre[0]), np.full(az.size, centre[1]), az,
                               np.full(az.size, radius))
        ring = shapely.points(np.column_stack([(np.asarray(lon) + 180) % 360 - 180, lat]))
        assert shapely.covers(drawn, ring).all(), (centre, radius)
        corners = shapely.get_coordinates(drawn)
        corners = corners[(np.abs(corners[:, 0]) < 180) & (np.abs(corners[:, 1]) < 90)]
        reach = geod_distance(np.broadcast_to(centre, corners.shape), corners)
        assert reach.min() >= radius and reach.max() <= radius * 1.0002 + 2e-3, (centre, radius, reach.max())


# ------------------------------------------------------------------ nearest site


def test_nearest_site_equals_pyproj_brute_force_on_real_global_points():
    # Natural Earth country points (public domain): global, across the antimeridian and poles.
    cp = country_points()[["lon", "lat"]].to_numpy()
    rng = np.random.default_rng(1)
    sites = cp[rng.choice(len(cp), 25, replace=False)]
    demand = np.column_stack([rng.uniform(-180, 180, 2000), np.degrees(np.arcsin(rng.uniform(-1, 1, 2000)))])
    demand = np.vstack([demand, cp])
    a = pw.geodesic.nearest_site(demand, sites)
    # brute force with pyproj.Geod
    all_d = np.stack([geod_distance(demand, np.broadcast_to(s, demand.shape)) for s in sites], axis=1)
    assert np.array_equal(a.assignment, np.argmin(all_d, axis=1))
    assert np.allclose(a.distance, all_d.min(axis=1), rtol=1e-9, atol=1e-6)


def test_nearest_site_reports_progress_and_stops_when_the_callable_raises():
    import threading

    rng = np.random.default_rng(2)
    demand = np.column_stack([rng.uniform(-180, 180, 50_000), np.degrees(np.arcsin(rng.uniform(-1, 1, 50_000)))])
    sites = demand[:40].copy()
    seen: list[tuple[int, int, int]] = []
    watched = pw.geodesic.nearest_site(demand, sites, progress=lambda d, t: seen.append((d, t, threading.get_ident())))
    # Watching does not change the answer: pyproj.Geod brute force on a sample of the points.
    sample = rng.choice(len(demand), 500, replace=False)
    all_d = np.stack([geod_distance(demand[sample], np.broadcast_to(s, (500, 2))) for s in sites], axis=1)
    assert np.array_equal(watched.assignment[sample], np.argmin(all_d, axis=1))
    assert seen and {ident for *_, ident in seen} == {threading.get_ident()}
    done = [d for d, _, _ in seen]
    assert done == sorted(done) and seen[-1][:2] == (len(demand), len(demand))

    class Enough(Exception):
        pass

    def stop(done: int, total: int) -> None:
        raise Enough

    with pytest.raises(Enough):
        pw.geodesic.nearest_site(demand, sites, progress=stop)
    # Grouped calls are watched too (tests/test_geodesic_watch.py); a report that is neither a
    # bool nor a callable is refused, naming it.
    with pytest.raises(pw.InputError) as caught:
        pw.geodesic.nearest_site(demand, sites, groups=np.zeros(len(demand)), site_groups=np.zeros(40), progress=3)
    assert caught.value.argument == "progress"


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.floats(-180, 180), st.floats(-90, 90)), min_size=1, max_size=30),
       st.lists(st.tuples(st.floats(-180, 180), st.floats(-90, 90)), min_size=1, max_size=12))
def test_nearest_site_property_brute_force(points, sites):
    p, s = np.array(points), np.array(sites)
    a = pw.geodesic.nearest_site(p, s)
    all_d = np.stack([geod_distance(p, np.broadcast_to(x, p.shape)) for x in s], axis=1)  # pyproj brute force
    assert np.allclose(a.distance, all_d.min(axis=1), rtol=1e-9, atol=1e-6)


# ------------------------------------------------------------------ gis on the ellipsoid


def frame(lonlat, crs="EPSG:4326", **cols):
    lonlat = np.asarray(lonlat, float)
    return gpd.GeoDataFrame(cols, geometry=gpd.points_from_xy(lonlat[:, 0], lonlat[:, 1]), crs=crs)


def test_gis_weber_on_the_ellipsoid_reports_true_metres():
    cp = country_points()
    f = frame(cp[["lon", "lat"]].to_numpy(), continent=cp["continent"].to_numpy())
    sa = f[f["continent"] == "South America"]
    out = gis.weber_point(sa)
    assert out["work_crs"].iloc[0] == "WGS84 ellipsoid"
    loc = out.geometry.iloc[0]
    assert out["cost_m"].iloc[0] == pytest.approx(
        geod_cost([loc.x, loc.y], sa[["geometry"]].get_coordinates().to_numpy()), rel=1e-12)  # pyproj.Geod
    by = gis.weber_point(f[f["continent"].isin(["South America", "Africa", "Europe"])], by="continent")
    assert (by["work_crs"] == "WGS84 ellipsoid").all() and list(by["continent"]) == ["Africa", "Europe",
                                                                                      "South America"]
    # work_crs= keeps the projected frame's model.
    proj = gis.weber_point(sa, work_crs="EPSG:31983", max_scale_error=0.5)
    assert proj["work_crs"].iloc[0] != "WGS84 ellipsoid"


def test_gis_nearest_site_across_the_antimeridian():
    sites = frame([[179.8, -17.0], [150.0, -30.0]])
    homes = frame([[-179.5, -16.5], [151.0, -31.0]])
    plan = gis.nearest_site(homes, sites)
    assert plan.demand["site"].tolist() == [0, 1]
    ref = geod_distance([[-179.5, -16.5], [151.0, -31.0]], [[179.8, -17.0], [150.0, -30.0]])  # pyproj.Geod
    assert np.allclose(plan.demand["distance_m"].to_numpy(), ref, rtol=1e-12)
    assert plan.summary["work_crs"].iloc[0] == "WGS84 ellipsoid"


def test_gis_enclosing_circle_and_minimax_across_the_antimeridian():
    pts = np.array([[178.0, 60.0], [-178.0, 61.0], [179.0, 64.0], [-179.5, 58.0]])
    f = frame(pts)
    circle = gis.enclosing_circle(f)
    geom = circle.geometry.iloc[0]
    assert geom.is_valid and shapely.covers(geom, shapely.points(pts)).all()  # shapely
    c = [circle["x"].iloc[0], circle["y"].iloc[0]]
    assert circle["radius_m"].iloc[0] == pytest.approx(geod_distance(np.broadcast_to(c, pts.shape), pts).max(),
                                                       rel=1e-12)  # pyproj.Geod
    mm = gis.minimax_point(f)
    assert mm["weighted_radius_m"].iloc[0] == pytest.approx(circle["radius_m"].iloc[0], rel=1e-9)
    assert mm["work_crs"].iloc[0] == "WGS84 ellipsoid"


def test_a_skipped_group_has_no_relative_gap_rather_than_a_proven_zero():
    # A group spread over the whole equator has no geodesic median here (refused, skipped):
    # its cost and gap are NaN, so its relative gap is NaN too (NaN / NaN), never the 0.0
    # that reads as proven optimal. The other group answers as a call of its own does.
    points = np.array([[0, 0], [90, 0], [180, 0], [-90, 0], [10, 50], [11, 51], [12, 50]], float)
    groups = [1, 1, 1, 1, 2, 2, 2]
    for solve in (pw.geodesic.weber_point, pw.geodesic.minimax_point):
        table = solve(points, groups=groups, errors="skip").to_frame()
        assert isinstance(table["problem"].iloc[0], str) and np.isnan(table["relative_gap"].iloc[0])
        alone = solve(points[4:]).to_frame()
        assert table["relative_gap"].iloc[1] == alone["relative_gap"].iloc[0]
    planar = pw.weber_point(np.array([[np.nan, 0], [1, 1], [2, 0], [0, 2], [3, 3]]), groups=[1, 1, 2, 2, 2],
                            errors="skip")
    assert np.isnan(planar.relative_gap[0]) and np.isnan(planar.to_frame()["relative_gap"].iloc[0])
    # A group met exactly (every point at one place) keeps its proven 0.
    met = pw.weber_point(np.array([[1.0, 1.0]] * 3 + [[0, 0], [2, 0], [0, 2]]), groups=[1, 1, 1, 2, 2, 2])
    assert met.relative_gap[0] == 0.0
