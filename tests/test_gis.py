"""The GeoPandas layer: CRS handling, geometry checks, grouped runs and every kernel."""

from __future__ import annotations

import numpy as np
import pytest

gpd = pytest.importorskip("geopandas")
pyproj = pytest.importorskip("pyproj")
import shapely  # noqa: E402
from scipy.optimize import minimize  # noqa: E402
from scipy.spatial import cKDTree  # noqa: E402

import placewise as pw  # noqa: E402
from placewise import gis  # noqa: E402

from hostile import BAD_WEIGHTS  # noqa: E402


def needs(*names: str):
    """Skip while a kernel has not landed in this build (every present kernel is tested)."""
    missing = [n for n in names if not hasattr(pw, n)]
    return pytest.mark.skipif(bool(missing), reason=f"placewise.{', '.join(missing)} not in this build")


RNG = np.random.default_rng(20261202)


def lonlat_frame(n: int = 300, lon: float = 10.75, lat: float = 59.9, spread: float = 0.08, seed: int = 1):
    """Random points near (lon, lat) in EPSG:4326 with a weight and a string group column."""
    rng = np.random.default_rng(seed)
    x = lon + spread * rng.normal(size=n)
    y = lat + 0.5 * spread * rng.normal(size=n)
    return gpd.GeoDataFrame(
        {"people": rng.integers(1, 6, size=n).astype(float), "zone": rng.choice(["north", "east", "south"], size=n)},
        geometry=gpd.points_from_xy(x, y), crs="EPSG:4326",
    )


def utm_of(frame):
    """The UTM zone pyproj's own database gives for the frame's extent (outside check)."""
    from pyproj.aoi import AreaOfInterest
    from pyproj.database import query_utm_crs_info

    w, s, e, n = frame.total_bounds
    info = query_utm_crs_info(datum_name="WGS 84", area_of_interest=AreaOfInterest(w, s, e, n))
    return pyproj.CRS.from_epsg(info[0].code)


def weber_cost_scipy(xy: np.ndarray, w: np.ndarray) -> float:
    """Weighted Fermat–Weber cost minimised by scipy.optimize (Nelder–Mead from the centroid)."""
    c = (xy * w[:, None]).sum(0) / w.sum()
    f = lambda p: float(w @ np.hypot(*(xy - p).T))  # noqa: E731
    return float(minimize(f, c, method="Nelder-Mead", options={"xatol": 1e-6, "fatol": 1e-9, "maxiter": 20000}).fun)


# ---------------------------------------------------------------- CRS handling


def test_geographic_input_runs_in_utm_metres_and_returns_degrees():
    frame = lonlat_frame()
    out = gis.weber_point(frame, "people")
    assert out.crs == frame.crs
    # Outside check: project with pyproj's own UTM zone choice and minimise with scipy.
    xy = shapely.get_coordinates(frame.to_crs(utm_of(frame)).geometry.values)
    assert out["cost"].iloc[0] == pytest.approx(weber_cost_scipy(xy, frame["people"].to_numpy()), rel=1e-6)
    loc = out.to_crs(utm_of(frame)).geometry.iloc[0]
    assert 0 < loc.x < 1e6 and 6e6 < loc.y < 7e6  # metres in UTM zone 32N, not degrees


def test_one_degree_of_latitude_is_about_111_km():
    # Two points one degree apart on a meridian: pyproj.Geod (WGS 84 geodesic) gives the
    # distance; UTM's scale error near the central meridian is below 0.1 %.
    pts = gpd.GeoSeries(gpd.points_from_xy([9.0, 9.0], [60.0, 61.0]), crs="EPSG:4326")
    geodesic = pyproj.Geod(ellps="WGS84").inv(9.0, 60.0, 9.0, 61.0)[2]
    r = gis.enclosing_circle(pts) if hasattr(pw, "enclosing_circle") else None
    out = gis.weber_point(pts)
    assert out["cost"].iloc[0] == pytest.approx(geodesic, rel=1e-3)
    if r is not None:
        assert 2 * r["radius"].iloc[0] == pytest.approx(geodesic, rel=1e-3)


def test_projected_input_is_used_as_is():
    frame = lonlat_frame().to_crs("EPSG:3035")
    out = gis.weber_point(frame, "people")
    assert out.crs == frame.crs
    xy = shapely.get_coordinates(frame.geometry.values)
    assert out["cost"].iloc[0] == pytest.approx(weber_cost_scipy(xy, frame["people"].to_numpy()), rel=1e-6)


def test_no_crs_needs_planar():
    frame = gpd.GeoDataFrame(geometry=gpd.points_from_xy([0, 4, 2], [0, 0, 4]))
    with pytest.raises(pw.InputError, match="no CRS.*planar=True"):
        gis.weber_point(frame)
    # Closed form: the Torricelli point of (0,0),(4,0),(2,4) costs 4 + 2*sqrt(3) (all angles < 120°).
    assert gis.weber_point(frame, planar=True)["cost"].iloc[0] == pytest.approx(4 + 2 * np.sqrt(3), rel=1e-9)
    assert gis.weber_point(frame, planar=True).crs is None


def test_geoseries_is_accepted():
    series = lonlat_frame().geometry
    assert len(gis.weber_point(series)) == 1


@pytest.mark.parametrize("bad", [np.zeros((3, 2)), [1, 2, 3], "frame", None])
def test_not_a_frame_is_an_input_error(bad):
    with pytest.raises(pw.InputError, match="GeoDataFrame or GeoSeries"):
        gis.weber_point(bad)


def test_empty_frame_is_an_input_error():
    with pytest.raises(pw.InputError, match="empty"):
        gis.weber_point(gpd.GeoDataFrame(geometry=[], crs="EPSG:4326"))


def test_mixed_crs_presence_is_an_input_error():
    sites = gpd.GeoSeries(gpd.points_from_xy([0, 1], [0, 1]), crs="EPSG:3857")
    demand = gpd.GeoSeries(gpd.points_from_xy([0, 1], [0, 1]))
    if hasattr(pw, "nearest_site"):
        with pytest.raises(pw.InputError, match="CRS"):
            gis.nearest_site(demand, sites)


# ---------------------------------------------------------------- geometry checks


def test_non_points_raise_unless_centroids():
    polys = gpd.GeoDataFrame(geometry=[shapely.box(0, 0, 2, 2), shapely.box(10, 0, 12, 2)], crs="EPSG:3857")
    with pytest.raises(pw.InputError, match=r"row 0 is a Polygon.*centroids=True"):
        gis.weber_point(polys)
    out = gis.weber_point(polys, centroids=True)
    # Any point of the segment between the two centroids (1,1)-(11,1) is optimal; cost 10.
    assert out["cost"].iloc[0] == pytest.approx(10.0, rel=1e-9)


def test_centroids_are_taken_in_the_metric_crs():
    # A large polygon in degrees: its centroid in UTM differs from the degree centroid;
    # the layer must use the metric one (shapely.centroid after pyproj projection).
    poly = shapely.Polygon([(10, 59), (12, 59), (12, 62), (10, 62.5)])
    frame = gpd.GeoDataFrame(geometry=[poly], crs="EPSG:4326")
    out = gis.weber_point(frame, centroids=True)
    expected = frame.to_crs(frame.estimate_utm_crs()).geometry.centroid.to_crs("EPSG:4326").iloc[0]
    assert out.geometry.iloc[0].distance(expected) < 1e-9


@pytest.mark.parametrize("geom", [None, shapely.Point(), shapely.LineString()])
def test_missing_or_empty_geometry_is_an_input_error(geom):
    frame = gpd.GeoDataFrame(geometry=[shapely.Point(0, 0), geom, shapely.Point(1, 1)], crs="EPSG:3857")
    with pytest.raises(pw.InputError, match="row 1 has a missing or empty geometry"):
        gis.weber_point(frame)


def test_nan_coordinates_reach_the_kernel_check():
    frame = gpd.GeoDataFrame(geometry=gpd.points_from_xy([0.0, np.nan, 1.0], [0.0, 1.0, 2.0]), crs="EPSG:3857")
    with pytest.raises(pw.InputError):
        gis.weber_point(frame)


# ---------------------------------------------------------------- weights and groups


def test_missing_weight_column_names_it():
    with pytest.raises(pw.InputError, match=r"no weight column 'visits'"):
        gis.weber_point(lonlat_frame(), "visits")


def test_non_numeric_weight_column():
    frame = lonlat_frame()
    frame["label"] = "x"
    with pytest.raises(pw.InputError, match="not numeric"):
        gis.weber_point(frame, "label")


@pytest.mark.parametrize("name,make", BAD_WEIGHTS, ids=[b[0] for b in BAD_WEIGHTS])
def test_bad_weights_are_input_errors(name, make):
    frame = lonlat_frame(n=20)
    with pytest.raises(pw.InputError):
        gis.weber_point(frame, make(len(frame)))


def test_weights_as_array_equal_weights_as_column():
    frame = lonlat_frame()
    a = gis.weber_point(frame, "people")
    b = gis.weber_point(frame, frame["people"].to_numpy())
    assert a["cost"].iloc[0] == b["cost"].iloc[0]


def test_groups_match_separate_runs_sorted_by_value():
    frame = lonlat_frame(n=400)
    out = gis.weber_point(frame, "people", by="zone")
    assert out["zone"].tolist() == ["east", "north", "south"]
    assert out["count"].sum() == len(frame)
    for zone, row in zip(out["zone"], out.itertuples()):
        part = frame[frame["zone"] == zone]
        alone = gis.weber_point(part, "people")
        # Same working CRS for the part? Compare the cost with scipy on the whole frame's UTM zone.
        xy = shapely.get_coordinates(part.to_crs(frame.estimate_utm_crs()).geometry.values)
        assert row.cost == pytest.approx(weber_cost_scipy(xy, part["people"].to_numpy()), rel=1e-6)
        assert alone.geometry.iloc[0].distance(row.geometry) < 1e-3  # degrees; same zone here


def test_chunked_grouped_run_equals_one_grouped_call():
    # 400 groups of 100 points: more than one chunk of about 20,000 points.
    n, groups = 40_000, 400
    xy = RNG.normal(size=(n, 2)) * 1000
    labels = RNG.integers(0, groups, size=n)
    w = RNG.uniform(0.5, 2.0, size=n)
    frame = gpd.GeoDataFrame({"g": labels, "w": w}, geometry=gpd.points_from_xy(*xy.T))
    out = gis.weber_point(frame, "w", by="g", planar=True)
    whole = pw.weber_point(xy, w, groups=labels)
    np.testing.assert_array_equal(out["g"].to_numpy(), whole.labels)
    np.testing.assert_allclose(out["cost"].to_numpy(), whole.cost, rtol=1e-12)
    np.testing.assert_allclose(shapely.get_coordinates(out.geometry.values), whole.location, rtol=1e-12)


def test_missing_group_column_and_missing_group_values():
    frame = lonlat_frame()
    with pytest.raises(pw.InputError, match="no group column 'district'"):
        gis.weber_point(frame, by="district")
    frame.loc[frame.index[5], "zone"] = None
    with pytest.raises(pw.InputError, match="missing value at row 5"):
        gis.weber_point(frame, by="zone")


def test_group_errors_name_the_group():
    frame = lonlat_frame(n=30)
    w = np.ones(len(frame))
    w[(frame["zone"] == "south").to_numpy()] = 0.0  # all-zero weights in one group
    with pytest.raises(pw.InputError, match="south"):
        gis.weber_point(frame, w, by="zone")


# ---------------------------------------------------------------- enclosing shapes


@needs("enclosing_circle")
def test_enclosing_circle_matches_shapely_and_covers_points():
    frame = lonlat_frame()
    out = gis.enclosing_circle(frame)
    metric = frame.to_crs(frame.estimate_utm_crs())
    # Outside check: shapely.minimum_bounding_radius (GEOS) in the metric CRS.
    expected = shapely.minimum_bounding_radius(shapely.multipoints(shapely.get_coordinates(metric.geometry.values)))
    assert out["radius"].iloc[0] == pytest.approx(expected, rel=1e-9)
    polygon = out.to_crs(metric.crs).geometry.iloc[0]
    assert bool(shapely.covers(polygon, metric.geometry.values).all())
    assert out.crs == frame.crs


@needs("enclosing_circle")
def test_enclosing_circle_by_group():
    frame = lonlat_frame(n=200)
    out = gis.enclosing_circle(frame, by="zone")
    metric = frame.to_crs(frame.estimate_utm_crs())
    for zone, r in zip(out["zone"], out["radius"]):
        pts = shapely.get_coordinates(metric[metric["zone"] == zone].geometry.values)
        assert r == pytest.approx(shapely.minimum_bounding_radius(shapely.multipoints(pts)), rel=1e-9)  # GEOS


@needs("minimax_point")
def test_minimax_point_unit_weights_is_the_circle_centre():
    frame = lonlat_frame()
    out = gis.minimax_point(frame)
    metric = frame.to_crs(frame.estimate_utm_crs())
    pts = shapely.multipoints(shapely.get_coordinates(metric.geometry.values))
    # Outside check: GEOS minimum bounding radius equals the unweighted 1-center's radius.
    assert out["radius"].iloc[0] == pytest.approx(shapely.minimum_bounding_radius(pts), rel=1e-9)


@needs("enclosing_ellipse")
def test_enclosing_ellipse_of_a_rectangle():
    # Closed form (issue 3): the minimum-area ellipse of an a x b rectangle has semi-axes a/sqrt2, b/sqrt2.
    box = gpd.GeoSeries(gpd.points_from_xy([0, 6, 6, 0], [0, 0, 2, 2]), crs="EPSG:3857")
    out = gis.enclosing_ellipse(box, tol=1e-10)
    assert out["semi_major"].iloc[0] == pytest.approx(6 / np.sqrt(2), rel=1e-6)
    assert out["semi_minor"].iloc[0] == pytest.approx(2 / np.sqrt(2), rel=1e-6)
    assert out["area"].iloc[0] == pytest.approx(np.pi * 6 * 2 / 2, rel=1e-6)
    assert bool(shapely.covers(out.geometry.iloc[0], box.values).all())


# ---------------------------------------------------------------- service areas


@needs("voronoi_cells", "nearest_site")
def test_voronoi_cells_clip_to_a_region_with_a_hole_and_carry_loads():
    region = shapely.Polygon([(0, 0), (10_000, 0), (10_000, 6_000), (5_000, 3_000), (0, 6_000)],
                             holes=[[(4_000, 1_000), (6_000, 1_000), (6_000, 2_000), (4_000, 2_000)]])
    sites = gpd.GeoDataFrame({"name": list("abcd")},
                             geometry=gpd.points_from_xy([1500, 8500, 3000, 7000], [1500, 1500, 4000, 4000]),
                             crs="EPSG:32632")
    demand = gpd.GeoDataFrame({"w": RNG.uniform(1, 3, 500)},
                              geometry=gpd.points_from_xy(RNG.uniform(0, 10_000, 500), RNG.uniform(0, 3_000, 500)),
                              crs="EPSG:32632")
    cells = gis.voronoi_cells(sites, gpd.GeoSeries([region], crs="EPSG:32632"), demand=demand, weight="w")
    assert cells["name"].tolist() == list("abcd")
    # Outside checks: shapely areas; the union of the cells is the region; loads equal
    # numpy.bincount over scipy cKDTree's nearest sites.
    assert cells["area"].sum() == pytest.approx(region.area, rel=1e-9)
    assert shapely.union_all(cells.geometry.values).symmetric_difference(region).area < 1e-6 * region.area
    nearest = cKDTree(shapely.get_coordinates(sites.geometry.values)).query(
        shapely.get_coordinates(demand.geometry.values))[1]
    np.testing.assert_allclose(cells["load"], np.bincount(nearest, weights=demand["w"], minlength=4), rtol=1e-12)


@needs("voronoi_cells")
def test_voronoi_region_in_another_crs_is_projected():
    sites = lonlat_frame(n=12)
    region = gpd.GeoSeries([sites.union_all().convex_hull.buffer(0.05)], crs="EPSG:4326").to_crs("EPSG:3035")
    cells = gis.voronoi_cells(sites, region)
    assert cells.crs == sites.crs
    utm = sites.estimate_utm_crs()
    assert cells["area"].sum() == pytest.approx(region.to_crs(utm).area.iloc[0], rel=1e-6)


@needs("nearest_site")
def test_nearest_site_matches_ckdtree():
    demand = lonlat_frame(n=500)
    sites = lonlat_frame(n=7, seed=3).set_index(np.array(list("ABCDEFG")))
    out = gis.nearest_site(demand, sites, "people")
    utm = demand.estimate_utm_crs()
    d, i = cKDTree(shapely.get_coordinates(sites.to_crs(utm).geometry.values)).query(
        shapely.get_coordinates(demand.to_crs(utm).geometry.values))  # scipy reference
    assert out["site"].tolist() == [sites.index[k] for k in i]
    np.testing.assert_allclose(out["distance"], d, rtol=1e-9)
    assert out.attrs["cost"] == pytest.approx(float(demand["people"] @ d), rel=1e-9)
    assert sum(out.attrs["load"].values()) == pytest.approx(demand["people"].sum())


# ---------------------------------------------------------------- networks


@needs("spanning_tree")
def test_spanning_tree_edges_and_total():
    from scipy.sparse.csgraph import minimum_spanning_tree
    from scipy.spatial.distance import cdist

    frame = lonlat_frame(n=60)
    out = gis.spanning_tree(frame)
    xy = shapely.get_coordinates(frame.to_crs(frame.estimate_utm_crs()).geometry.values)
    expected = minimum_spanning_tree(cdist(xy, xy)).sum()  # scipy reference
    assert out.attrs["length"] == pytest.approx(expected, rel=1e-9)
    assert out["length"].sum() == pytest.approx(expected, rel=1e-9)
    assert len(out) == len(frame) - 1
    assert set(out["from_node"]) | set(out["to_node"]) == set(frame.index)


@needs("steiner_tree")
def test_steiner_tree_of_the_unit_square():
    # Closed form: the Steiner tree of a unit square is 1 + sqrt(3) long with two junctions.
    sq = gpd.GeoSeries(gpd.points_from_xy([0, 1, 1, 0], [0, 0, 1, 1]))
    out = gis.steiner_tree(sq, planar=True)
    assert out.attrs["length"] == pytest.approx(1 + np.sqrt(3), rel=1e-9)
    assert out.attrs["mst_length"] == pytest.approx(3.0, rel=1e-12)
    assert out.attrs["saving"] == pytest.approx(1 - (1 + np.sqrt(3)) / 3, rel=1e-9)
    assert out.attrs["junctions"] == 2
    assert out["length"].sum() == pytest.approx(1 + np.sqrt(3), rel=1e-9)
    assert out["junction"].sum() == 5  # every edge of the full Steiner topology touches a junction


@needs("steiner_tree", "spanning_tree")
def test_networks_by_group():
    frame = lonlat_frame(n=45)
    st = gis.steiner_tree(frame, by="zone", exact=False)
    mst = gis.spanning_tree(frame, by="zone")
    assert set(st["zone"]) == set(frame["zone"])
    assert st.attrs["length"] <= st.attrs["mst_length"] * (1 + 1e-12)
    assert st.attrs["mst_length"] == pytest.approx(mst.attrs["length"], rel=1e-9)


# ---------------------------------------------------------------- many sites


@needs("p_median")
def test_p_median_one_site_is_the_weber_point():
    frame = lonlat_frame()
    plan = gis.p_median(frame, 1, "people")
    assert plan.sites.attrs["cost"] == pytest.approx(gis.weber_point(frame, "people")["cost"].iloc[0], rel=1e-6)


@needs("p_median")
def test_p_median_assignment_is_nearest_site():
    frame = lonlat_frame(n=500)
    plan = gis.p_median(frame, 4, "people")
    assert plan.sites.crs == frame.crs and plan.demand.crs == frame.crs
    utm = frame.estimate_utm_crs()
    sites = shapely.get_coordinates(plan.sites.to_crs(utm).geometry.values)
    d, i = cKDTree(sites).query(shapely.get_coordinates(frame.to_crs(utm).geometry.values))  # scipy reference
    np.testing.assert_array_equal(plan.demand["site"].to_numpy(), plan.sites["site"].to_numpy()[i])
    np.testing.assert_allclose(plan.demand["distance"], d, rtol=1e-6, atol=1e-6)
    assert plan.sites["load"].sum() == pytest.approx(frame["people"].sum())
    assert plan.sites.attrs["cost"] == pytest.approx(float(frame["people"] @ d), rel=1e-6)


@needs("p_median")
def test_p_median_by_group_and_group_errors():
    frame = lonlat_frame(n=300)
    plan = gis.p_median(frame, 2, "people", by="zone")
    assert len(plan.sites) == 6
    assert plan.sites.groupby("zone").size().tolist() == [2, 2, 2]
    tiny = frame.iloc[:3].copy()
    tiny["zone"] = ["a", "b", "b"]
    with pytest.raises(pw.InputError, match="group 'a'"):
        gis.p_median(tiny, 2, by="zone")


@needs("p_center")
def test_p_center_one_site_is_the_enclosing_circle():
    frame = lonlat_frame()
    plan = gis.p_center(frame, 1)
    metric = frame.to_crs(frame.estimate_utm_crs())
    pts = shapely.multipoints(shapely.get_coordinates(metric.geometry.values))
    assert plan.sites.attrs["radius"] == pytest.approx(shapely.minimum_bounding_radius(pts), rel=1e-7)  # GEOS
    assert plan.demand["distance"].max() == pytest.approx(plan.sites.attrs["radius"], rel=1e-7)


@needs("p_median")
def test_p_median_with_fixed_sites():
    homes = gpd.GeoSeries(gpd.points_from_xy([0, 1, 10, 11, 20, 21], [0, 0, 0, 0, 0, 0]))
    existing = gpd.GeoSeries(gpd.points_from_xy([20.5], [0]))
    plan = gis.p_median(homes, 2, fixed=existing, planar=True)
    assert len(plan.sites) == 3
    assert plan.sites["fixed"].tolist() == [False, False, True]
    assert plan.sites.geometry.iloc[2].equals(existing.iloc[0])
    # Closed form on a line: the best new sites lie within the two left pairs, each pair costs 1;
    # the fixed site at 20.5 serves the right pair at cost 1.
    assert plan.sites.attrs["cost"] == pytest.approx(3.0, rel=1e-9)
    assert plan.demand["site"].tolist()[-2:] == [2, 2]


@needs("steiner_tree", "spanning_tree")
def test_grouped_networks_equal_one_network_per_group():
    # 300 groups of about 100 points: several chunks of the grouped kernel call.
    n = 30_000
    xy = RNG.random((n, 2)) * 1000
    frame = gpd.GeoDataFrame({"g": RNG.integers(0, 300, n)}, geometry=gpd.points_from_xy(*xy.T))
    frame.index = frame.index + 1000  # row labels are not positions
    mst = gis.spanning_tree(frame, by="g", planar=True)
    st = gis.steiner_tree(frame, by="g", planar=True, exact=False)
    for g in (0, 151, 299):
        part = frame[frame["g"] == g]
        alone = gis.spanning_tree(part, planar=True)
        mine = mst[mst["g"] == g]
        assert mine["length"].sum() == pytest.approx(alone.attrs["length"], rel=1e-12)
        assert set(mine["from_node"]) | set(mine["to_node"]) == set(part.index)
        s_alone = gis.steiner_tree(part, planar=True, exact=False)
        s_mine = st[st["g"] == g]
        assert s_mine["length"].sum() == pytest.approx(s_alone.attrs["length"], rel=1e-9)
        # Terminal ends carry the caller's labels and lie on the caller's points.
        ends = s_mine[~s_mine["from_node"].isna()]
        pts = part.geometry.loc[ends["from_node"].to_list()].values
        starts = shapely.points(shapely.get_coordinates(ends.geometry.values).reshape(-1, 2, 2)[:, 0])
        assert float(shapely.distance(pts, starts).max()) < 1e-9
    assert len(mst) == n - 300
    assert st.attrs["length"] <= st.attrs["mst_length"]
    assert st.attrs["mst_length"] == pytest.approx(mst.attrs["length"], rel=1e-9)
