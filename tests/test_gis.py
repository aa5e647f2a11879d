"""The GeoPandas layer (placewise.gis): what the user receives, checked against outside references.

References named beside each check: pyproj (UTM zone choice, projections, WGS 84 geodesics),
shapely/GEOS (areas, coverage, minimum bounding radius), scipy (cKDTree nearest sites,
csgraph minimum spanning tree, optimize for the Fermat–Weber and minimax objectives) and
closed forms. Frames carry index labels that are not row positions, so every check of a row
name also checks that positions never leak.
"""

from __future__ import annotations

import re
import subprocess
import sys
import warnings

import numpy as np
import pytest

gpd = pytest.importorskip("geopandas")
pyproj = pytest.importorskip("pyproj")

# Many frames below hold toy coordinates (0 to 50 m) in UTM zone 32N, 500 km west of its
# central meridian, where the zone errs by 0.27 %: the warning that says so is checked in
# test_a_projected_crs_that_distorts_the_data_is_named_with_its_figure, not on every toy.
pytestmark = pytest.mark.filterwarnings("ignore:.*distorts distances by up to:UserWarning")
import pandas as pd  # noqa: E402
import shapely  # noqa: E402
from scipy.optimize import minimize  # noqa: E402
from scipy.sparse.csgraph import minimum_spanning_tree  # noqa: E402
from scipy.spatial import cKDTree  # noqa: E402
from scipy.spatial.distance import cdist  # noqa: E402

import placewise as pw  # noqa: E402
from hostile import BAD_WEIGHTS  # noqa: E402
from placewise import _core, gis  # noqa: E402

RNG = np.random.default_rng(20261202)


def lonlat_frame(n: int = 300, lon: float = 10.75, lat: float = 59.9, spread: float = 0.08, seed: int = 1):
    """Random points near (lon, lat) in EPSG:4326 with a weight, a string group column and
    string index labels ``h0, h1, ...`` (labels that are not positions)."""
    rng = np.random.default_rng(seed)
    x = lon + spread * rng.normal(size=n)
    y = lat + 0.5 * spread * rng.normal(size=n)
    return gpd.GeoDataFrame(
        {"people": rng.integers(1, 6, size=n).astype(float), "zone": rng.choice(["north", "east", "south"], size=n)},
        geometry=gpd.points_from_xy(x, y), crs="EPSG:4326", index=[f"h{i}" for i in range(n)],
    )


def utm_of(frame):
    """The UTM zone pyproj's own database gives for the frame's extent (outside check)."""
    from pyproj.aoi import AreaOfInterest
    from pyproj.database import query_utm_crs_info

    w, s, e, n = frame.to_crs("EPSG:4326").total_bounds
    info = query_utm_crs_info(datum_name="WGS 84", area_of_interest=AreaOfInterest(w, s, e, n))
    return pyproj.CRS.from_epsg(info[0].code)


def metric_xy(frame) -> np.ndarray:
    """The frame's points in pyproj's UTM zone, projected by pyproj (outside the layer)."""
    utm = utm_of(frame)
    lon, lat = shapely.get_x(frame.geometry.values), shapely.get_y(frame.geometry.values)
    x, y = pyproj.Transformer.from_crs(frame.crs, utm, always_xy=True).transform(lon, lat)
    return np.column_stack([x, y])


def weber_cost_scipy(xy: np.ndarray, w: np.ndarray) -> float:
    """Weighted Fermat–Weber cost minimised by scipy.optimize (Nelder–Mead from the centroid)."""
    c = (xy * w[:, None]).sum(0) / w.sum()
    scale = max(float(np.ptp(xy)), 1.0)
    f = lambda p: float(w @ np.hypot(*(xy - c - p * scale).T))  # noqa: E731
    res = minimize(f, np.zeros(2), method="Nelder-Mead", options={"xatol": 1e-10, "fatol": 1e-12, "maxiter": 40000})
    return float(res.fun)


def minimax_scipy(xy: np.ndarray, w: np.ndarray) -> float:
    """Weighted minimax radius by scipy.optimize SLSQP: min r s.t. w_i |p - x_i| <= r."""
    c = xy.mean(0)
    scale = float(np.ptp(xy))
    z = (xy - c) / scale
    cons = {"type": "ineq", "fun": lambda v: v[2] - w * np.hypot(*(z - v[:2]).T)}
    start = np.array([0.0, 0.0, float((w * np.hypot(*z.T)).max())])
    res = minimize(lambda v: v[2], start, constraints=[cons], method="SLSQP", options={"ftol": 1e-14, "maxiter": 500})
    return float(res.x[2]) * scale


def mst_length_scipy(xy: np.ndarray) -> float:
    """Euclidean MST length by scipy.sparse.csgraph on the full distance matrix."""
    return float(minimum_spanning_tree(cdist(xy, xy)).sum())


def no_shadowing(frame) -> None:
    """No column shadows a GeoDataFrame member and no total hides in ``attrs``.

    ``count`` is the one exception the table contract names on purpose (rows used or
    served); every other column must read back as a column with ``frame.<name>``.
    """
    geometry = frame.geometry.name if isinstance(frame, gpd.GeoDataFrame) else None
    shadowing = {c for c in frame.columns if c != geometry and hasattr(gpd.GeoDataFrame, str(c))}
    assert shadowing == set(), shadowing
    assert not {"area", "length", "distance", "index", "crs"} & set(frame.columns)
    assert frame.attrs == {}


@pytest.fixture()
def crossings(monkeypatch):
    """Names of the compiled kernel entry points called (every ``*_single``/``*_grouped``)."""
    calls: list[str] = []
    for name in dir(_core):
        if name.endswith(("_single", "_grouped")):
            def counted(*args, _fn=getattr(_core, name), _name=name, **kwargs):
                calls.append(_name)
                return _fn(*args, **kwargs)

            monkeypatch.setattr(_core, name, counted)
    return calls


# ---------------------------------------------------------------- packaging


def test_import_placewise_then_gis_and_cluster_as_attributes():
    # The README's usage: no explicit `import placewise.gis`; a fresh interpreter proves it.
    code = "import placewise; placewise.gis.weber_point; placewise.cluster.grouped; print('ok')"
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "ok"


# ---------------------------------------------------------------- CRS handling and units


def geodesic_weber_cost_scipy(lonlat: np.ndarray, w: np.ndarray) -> float:
    """Weighted Fermat–Weber cost on the WGS84 ellipsoid: scipy.optimize Nelder–Mead on the
    objective measured with pyproj.Geod (GeographicLib), from the mean point."""
    geod = pyproj.Geod(ellps="WGS84")

    def f(p):
        n = len(lonlat)
        return float(w @ geod.inv(np.full(n, p[0]), np.full(n, p[1]), lonlat[:, 0], lonlat[:, 1])[2])

    res = minimize(f, lonlat.mean(0), method="Nelder-Mead", options={"xatol": 1e-11, "fatol": 1e-9, "maxiter": 40000})
    return float(res.fun)


def test_geographic_input_is_solved_in_metres_and_returned_in_its_crs():
    frame = lonlat_frame()
    out = gis.weber_point(frame, "people")
    assert out.crs == frame.crs
    assert {"cost_m", "gap_m"} <= set(out.columns)
    assert out["work_crs"].iloc[0] == "WGS84 ellipsoid" and out["scale_error"].iloc[0] == 0
    # Outside check: scipy.optimize on the geodesic objective measured by pyproj.Geod.
    lonlat = shapely.get_coordinates(frame.geometry.values)
    assert out["cost_m"].iloc[0] == pytest.approx(geodesic_weber_cost_scipy(lonlat, frame["people"].to_numpy()),
                                                  rel=1e-9)
    assert out["points"].iloc[0] == len(frame)
    # The site comes back in degrees; x, y are its longitude and latitude.
    site = out.geometry.iloc[0]
    assert (site.x, site.y) == pytest.approx((out["x"].iloc[0], out["y"].iloc[0]), abs=1e-12)
    no_shadowing(out)


def test_one_degree_of_latitude_is_the_geodesic_length():
    # Two points one degree apart on a meridian: pyproj.Geod (WGS 84 geodesic) gives the
    # distance; UTM's scale error near the central meridian (9°E, zone 32) is 4e-4.
    pts = gpd.GeoSeries(gpd.points_from_xy([9.0, 9.0], [60.0, 61.0]), crs="EPSG:4326")
    geodesic = pyproj.Geod(ellps="WGS84").inv(9.0, 60.0, 9.0, 61.0)[2]
    assert gis.weber_point(pts)["cost_m"].iloc[0] == pytest.approx(geodesic, rel=1e-3)
    assert 2 * gis.enclosing_circle(pts)["radius_m"].iloc[0] == pytest.approx(geodesic, rel=1e-3)


def test_projected_input_is_used_as_is():
    frame = lonlat_frame().to_crs("EPSG:3035")
    # Oslo lies 8° from LAEA Europe's centre (10°E, 52°N), where its scale errs by about
    # 0.25 %: used as it is, and said.
    with pytest.warns(UserWarning, match="LAEA Europe' distorts distances by up to 0.2"):
        out = gis.weber_point(frame, "people")
    assert out.crs == frame.crs
    xy = shapely.get_coordinates(frame.geometry.values)
    assert out["cost_m"].iloc[0] == pytest.approx(weber_cost_scipy(xy, frame["people"].to_numpy()), rel=1e-7)


def test_degrees_in_a_projected_crs_warning_points_at_the_callers_line():
    # Longitude/latitude values labelled UTM 32N: the warning must name this file and line,
    # whichever path (a single-site model, a site plan) reaches the check.
    frame = gpd.GeoDataFrame(geometry=gpd.points_from_xy([10.7, 10.8, 10.75], [59.9, 59.95, 59.92]),
                             crs="EPSG:32632")
    for call in (lambda: gis.weber_point(frame), lambda: gis.p_median(frame, 1), lambda: gis.enclosing_circle(frame)):
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            call()
        said = [w for w in caught if "if these are degrees" in str(w.message)]
        assert len(said) == 1 and said[0].filename == __file__, [(w.filename, w.lineno) for w in said]


@pytest.mark.parametrize("crs", ["EPSG:3857", "EPSG:3035"])
def test_degrees_spanning_a_continent_in_a_projected_crs_are_said(crs):
    # Lisbon, Paris, Berlin, Warsaw and Madrid in lon/lat labelled as metres: 1,100 to
    # 2,900 km apart by pyproj.Geod, read as 56 "m" of cost. The warning was given only for
    # data spanning under 10 units; the same cities projected to the CRS by pyproj are not
    # questioned.
    lon, lat = [-9.1, 2.35, 13.4, 21.0, -3.7], [38.7, 48.85, 52.5, 52.2, 40.4]
    frame = gpd.GeoDataFrame(geometry=gpd.points_from_xy(lon, lat), crs=crs)
    with pytest.warns(UserWarning, match="if these are degrees"):
        gis.enclosing_circle(frame)
    _, _, far = pyproj.Geod(ellps="WGS84").inv(lon[0], lat[0], lon[3], lat[3])
    assert far > 2.5e6  # pyproj.Geod: Lisbon to Warsaw, so "56 m" cannot be metres
    true = gpd.GeoDataFrame(geometry=gpd.points_from_xy(lon, lat), crs="EPSG:4326").to_crs(crs)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        gis.enclosing_circle(true)
    assert not [w for w in caught if "if these are degrees" in str(w.message)]


def test_a_chosen_work_crs_that_distorts_lonlat_data_is_said():
    # Longitude/latitude input at 60-61° N with work_crs Web Mercator: its scale factor is
    # sec(latitude), so distances there are up to sec(61°) - 1 = 106 % long (closed form).
    # It was only in the scale_error column; now also a warning, as for projected input.
    rng = np.random.default_rng(1)
    lat = 60 + rng.random(30)
    frame = gpd.GeoSeries(gpd.points_from_xy(10 + 3 * rng.random(30), lat), crs="EPSG:4326")
    expected = 1 / np.cos(np.radians(lat.max())) - 1
    with pytest.warns(UserWarning, match=r"'WGS 84 / Pseudo-Mercator' distorts distances by up to 10[56] %") as said:
        out = gis.weber_point(frame, work_crs="EPSG:3857")
    assert out["scale_error"].iloc[0] == pytest.approx(expected, rel=0.01)
    assert said[0].filename == __file__
    # A suitable zone stays silent (UTM 33N over 10-13° E: at most about 5e-4).
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert gis.weber_point(frame, work_crs="EPSG:32633")["scale_error"].iloc[0] < 1e-3


def test_a_feet_crs_names_its_unit():
    # EPSG:2263 (New York Long Island) is in US survey feet: columns say so, values are feet.
    frame = lonlat_frame(n=40, lon=-73.9, lat=40.75, spread=0.02).to_crs("EPSG:2263")
    out = gis.enclosing_circle(frame)
    assert {"radius_usft", "area_usft2"} <= set(out.columns)
    xy = shapely.get_coordinates(frame.geometry.values)
    r = shapely.minimum_bounding_radius(shapely.multipoints(xy))  # GEOS, in the frame's feet
    assert out["radius_usft"].iloc[0] == pytest.approx(r, rel=1e-9)
    assert out["area_usft2"].iloc[0] == pytest.approx(np.pi * r * r, rel=1e-9)  # closed form


def test_no_crs_needs_planar_and_names_coordinate_units():
    frame = gpd.GeoDataFrame(geometry=gpd.points_from_xy([0, 4, 2], [0, 0, 4]))
    with pytest.raises(pw.InputError, match="no CRS.*planar=True"):
        gis.weber_point(frame)
    out = gis.weber_point(frame, planar=True)
    # Closed form: the Torricelli point of (0,0),(4,0),(2,4) costs 4 + 2*sqrt(3) (all angles < 120°).
    assert out["cost_u"].iloc[0] == pytest.approx(4 + 2 * np.sqrt(3), rel=1e-9)
    assert out.crs is None
    with pytest.raises(pw.InputError, match="planar=True is only for frames without one"):
        gis.weber_point(frame.set_crs("EPSG:3857"), planar=True)


def test_geoseries_is_accepted():
    series = lonlat_frame().geometry
    assert len(gis.weber_point(series)) == 1


@pytest.mark.parametrize("bad", [np.zeros((3, 2)), [1, 2, 3], "frame", None])
def test_not_a_frame_is_an_input_error(bad):
    with pytest.raises(pw.InputError, match="GeoDataFrame or GeoSeries"):
        gis.weber_point(bad)


def test_empty_frame_is_an_input_error():
    with pytest.raises(pw.InputError, match="no rows"):
        gis.weber_point(gpd.GeoDataFrame(geometry=[], crs="EPSG:4326"))


def test_mixed_crs_presence_is_an_input_error():
    sites = gpd.GeoSeries(gpd.points_from_xy([0, 1], [0, 1]), crs="EPSG:3857")
    demand = gpd.GeoSeries(gpd.points_from_xy([0, 1], [0, 1]))
    with pytest.raises(pw.InputError, match="CRS"):
        gis.nearest_site(demand, sites)


# ---------------------------------------------------------------- geometry checks, in the frame's labels


def test_non_points_raise_unless_centroids():
    polys = gpd.GeoDataFrame(geometry=[shapely.box(0, 0, 2, 2), shapely.box(10, 0, 12, 2)], crs="EPSG:3857",
                             index=["plot-a", "plot-b"])
    with pytest.raises(pw.InputError, match=r"row 'plot-a' is a Polygon.*centroids=True"):
        gis.weber_point(polys)
    out = gis.weber_point(polys, centroids=True)
    # Closed form: any point between the two centroids (1,1)-(11,1) is optimal; cost 10.
    assert out["cost_m"].iloc[0] == pytest.approx(10.0, rel=1e-9)


def test_centroids_are_taken_in_the_metric_crs():
    # A large polygon in degrees: its centroid in UTM differs from the degree centroid;
    # the layer must use the metric one (pyproj projection, then GEOS centroid).
    poly = shapely.Polygon([(10, 59), (12, 59), (12, 62), (10, 62.5)])
    frame = gpd.GeoDataFrame(geometry=[poly], crs="EPSG:4326")
    out = gis.weber_point(frame, centroids=True)
    expected = frame.to_crs(utm_of(frame)).geometry.centroid.to_crs("EPSG:4326").iloc[0]
    assert out.geometry.iloc[0].distance(expected) < 1e-9


@pytest.mark.parametrize("geom", [None, shapely.Point(), shapely.LineString()])
def test_missing_or_empty_geometry_names_the_row_label(geom):
    frame = gpd.GeoDataFrame(geometry=[shapely.Point(0, 0), geom, shapely.Point(1, 1)], crs="EPSG:3857",
                             index=[7, 70, 700])
    with pytest.raises(pw.InputError, match="row 70 has a missing or empty geometry"):
        gis.weber_point(frame)


def test_nan_coordinate_is_named_by_the_row_label():
    frame = gpd.GeoDataFrame(geometry=gpd.points_from_xy([0.0, np.nan, 1.0], [0.0, 1.0, 2.0]), crs="EPSG:3857",
                             index=["a", "b", "c"])
    with pytest.raises(pw.InputError) as info:
        gis.weber_point(frame)
    assert info.value.row == "b" and info.value.argument == "points"
    assert "points['b']" in str(info.value) and "points[1]" not in str(info.value)


# ---------------------------------------------------------------- weights and groups


def test_missing_weight_column_names_it():
    with pytest.raises(pw.InputError, match=r"no weight column 'visits'"):
        gis.weber_point(lonlat_frame(), "visits")


def test_non_numeric_weight_column():
    frame = lonlat_frame()
    frame["label"] = "x"
    with pytest.raises(pw.InputError, match="not numeric"):
        gis.weber_point(frame, "label")


def test_a_value_that_is_not_a_number_is_named_by_its_row_label():
    # The frame's own label of the row (as the user's frame prints it), not pandas' count of
    # positions from 0 (which named position 2 here: a row the frame has no label for).
    frame = lonlat_frame().iloc[:4].set_axis(["a", "b", "c", "d"])
    frame["visits"] = pd.Series([1, 2, "three", 4], index=frame.index, dtype=object)
    with pytest.raises(pw.InputError, match=r"weight column 'visits' is not numeric: 'three' at row 'c'") as info:
        gis.weber_point(frame, "visits")
    assert info.value.row == "c" and frame.loc["c", "visits"] == "three"


@pytest.mark.parametrize("name,make", BAD_WEIGHTS, ids=[b[0] for b in BAD_WEIGHTS])
def test_bad_weights_are_input_errors_with_plain_numbers(name, make):
    frame = lonlat_frame(n=20)
    with pytest.raises(pw.InputError) as info:
        gis.weber_point(frame, make(len(frame)))
    assert "np." not in str(info.value)


def test_negative_weight_is_named_by_group_value_and_row_label():
    frame = lonlat_frame(n=30)
    w = np.ones(len(frame))
    at = int(np.flatnonzero((frame["zone"] == "south").to_numpy())[1])
    w[at] = -1.0
    with pytest.raises(pw.InputError) as info:
        gis.weber_point(frame, w, by="zone")
    label = frame.index[at]
    assert info.value.group == "south" and info.value.row == label
    text = str(info.value)
    assert text.startswith("group 'south': ") and f"weights[{label!r}] = -1" in text
    assert "np." not in text and "group 0" not in text and "group 2" not in text


def test_number_arguments_print_plain_numbers():
    frame = lonlat_frame(n=20)
    with pytest.raises(pw.InputError, match=r"p must be an integer >= 1; got 0$"):
        gis.p_median(frame, np.int64(0))
    with pytest.raises(pw.InputError, match=r"got nan$"):
        gis.enclosing_ellipse(frame, tol=np.float64(np.nan))
    with pytest.raises(pw.InputError, match=r"seed .* got -1$") as info:
        gis.steiner_tree(frame, seed=np.int64(-1))
    assert info.value.argument == "seed"


def test_weights_as_array_equal_weights_as_column():
    frame = lonlat_frame()
    a = gis.weber_point(frame, "people")
    b = gis.weber_point(frame, frame["people"].to_numpy())
    assert a["cost_m"].iloc[0] == b["cost_m"].iloc[0]


def test_groups_are_sorted_by_value_and_each_matches_scipy():
    frame = lonlat_frame(n=400)
    out = gis.weber_point(frame, "people", by="zone")
    assert out["zone"].tolist() == ["east", "north", "south"]
    assert out["points"].tolist() == [int((frame["zone"] == z).sum()) for z in ["east", "north", "south"]]
    assert out["problem"].isna().all()
    assert (out["work_crs"] == "WGS84 ellipsoid").all()
    lonlat = shapely.get_coordinates(frame.geometry.values)
    for zone, cost in zip(out["zone"], out["cost_m"]):
        m = (frame["zone"] == zone).to_numpy()
        # scipy.optimize on the geodesic objective measured by pyproj.Geod
        assert cost == pytest.approx(geodesic_weber_cost_scipy(lonlat[m], frame["people"].to_numpy()[m]), rel=1e-9)


def test_missing_group_column_and_missing_group_values():
    frame = lonlat_frame()
    with pytest.raises(pw.InputError, match="no group column 'district'"):
        gis.weber_point(frame, by="district")
    frame.loc["h5", "zone"] = None
    with pytest.raises(pw.InputError, match="missing value at row 'h5'"):
        gis.weber_point(frame, by="zone")


# ---------------------------------------------------------------- one grouped path


def three_hundred_groups(per_group: int = 8, seed: int = 3):
    """300 groups of ``per_group`` planar points; integer index labels from 10_000."""
    rng = np.random.default_rng(seed)
    n = 300 * per_group
    xy = rng.random((n, 2)) * 1000
    g = np.repeat(np.arange(300), per_group)
    rng.shuffle(g)
    return gpd.GeoDataFrame({"g": g, "w": rng.uniform(1, 2, n)}, geometry=gpd.points_from_xy(*xy.T),
                            index=np.arange(n) + 10_000)


ONE_CALL = {
    "weber_point": lambda f: gis.weber_point(f, "w", by="g", planar=True),
    "minimax_point": lambda f: gis.minimax_point(f, "w", by="g", planar=True),
    "enclosing_circle": lambda f: gis.enclosing_circle(f, by="g", planar=True),
    "enclosing_ellipse": lambda f: gis.enclosing_ellipse(f, by="g", planar=True),
    "spanning_tree": lambda f: gis.spanning_tree(f, by="g", planar=True),
    "steiner_tree": lambda f: gis.steiner_tree(f, by="g", planar=True, exact=False),
    "p_median": lambda f: gis.p_median(f, 2, "w", by="g", planar=True),
    "p_center": lambda f: gis.p_center(f, 2, "w", by="g", planar=True),
    "voronoi_cells": lambda f: gis.voronoi_cells(f, by="g", planar=True),
}


@pytest.mark.parametrize("kernel", list(ONE_CALL))
def test_a_grouped_call_crosses_into_rust_once(kernel, crossings):
    frame = three_hundred_groups()
    out = ONE_CALL[kernel](frame)
    assert crossings == [f"{kernel}_grouped"]
    # Every table the user receives: groups by the user's values, totals as columns.
    tables = list(out) if isinstance(out, tuple) else [out]
    for table in tables:
        no_shadowing(table)
        assert set(table["g"]) == set(range(300))


def test_grouped_nearest_site_crosses_into_rust_once(crossings):
    demand = three_hundred_groups(seed=4)
    sites = three_hundred_groups(per_group=2, seed=5)
    plan = gis.nearest_site(demand, sites, "w", by="g", planar=True)
    assert crossings == ["nearest_site_grouped"]
    assert len(plan.summary) == 300


def test_grouped_catchments_with_demand_cross_once_per_kernel(crossings):
    demand = three_hundred_groups(seed=4)
    sites = three_hundred_groups(per_group=3, seed=5)
    gis.voronoi_cells(sites, by="g", demand=demand, weight="w", planar=True)
    assert sorted(crossings) == ["nearest_site_grouped", "voronoi_cells_grouped"]


# ---------------------------------------------------------------- errors="skip" and degenerate groups


def ellipse_frame():
    """Group 'box' is a 6 x 2 rectangle's corners; group 'lonely' one point (no ellipse)."""
    return gpd.GeoDataFrame({"site": ["box"] * 4 + ["lonely"]},
                            geometry=gpd.points_from_xy([0, 6, 6, 0, 50], [0, 0, 2, 2, 50]), crs="EPSG:32632",
                            index=["c1", "c2", "c3", "c4", "solo"])


def test_a_degenerate_group_fails_the_run_by_default_naming_it():
    with pytest.raises(pw.DegenerateInputError) as info:
        gis.enclosing_ellipse(ellipse_frame(), by="site", tol=1e-10)
    assert info.value.group == "lonely"
    assert str(info.value).startswith("group 'lonely': ")


def test_skip_keeps_a_degenerate_group_as_a_row_with_its_problem(tmp_path):
    out = gis.enclosing_ellipse(ellipse_frame(), by="site", tol=1e-10, errors="skip")
    assert out["site"].tolist() == ["box", "lonely"]
    assert out["points"].tolist() == [4, 1]
    assert pd.isna(out["problem"].iloc[0])
    assert out["problem"].iloc[1].startswith("group 'lonely': ")
    # Closed form: the minimum-area ellipse of an a x b rectangle has semi-axes a/sqrt2, b/sqrt2.
    assert out["semi_major_m"].iloc[0] == pytest.approx(6 / np.sqrt(2), rel=1e-6)
    assert out["semi_minor_m"].iloc[0] == pytest.approx(2 / np.sqrt(2), rel=1e-6)
    assert np.isnan(out["semi_major_m"].iloc[1])
    # The skipped group has no shape: a missing geometry, kept as null by GeoJSON.
    assert out.geometry.iloc[1] is None
    out.to_file(tmp_path / "e.geojson", driver="GeoJSON")
    back = gpd.read_file(tmp_path / "e.geojson")
    assert back.geometry.iloc[1] is None and back["problem"].iloc[1].startswith("group 'lonely'")


def test_skip_in_a_plan_keeps_the_group_in_every_table():
    frame = gpd.GeoDataFrame({"town": ["a", "a", "a", "a", "z"]},
                             geometry=gpd.points_from_xy([0, 1, 10, 11, 5], [0, 0, 0, 0, 5]), crs="EPSG:32632",
                             index=[11, 12, 13, 14, 15])
    plan = gis.p_median(frame, 2, by="town", errors="skip")
    assert plan.summary["town"].tolist() == ["a", "z"]
    assert plan.summary["problem"].iloc[1].startswith("group 'z': ")
    # Closed form on a line: pairs {0, 1} and {10, 11}, one site each, cost 1 + 1.
    assert plan.summary["cost_m"].iloc[0] == pytest.approx(2.0, rel=1e-9)
    skipped = plan.sites[plan.sites["town"] == "z"]
    assert len(skipped) == 1 and skipped.geometry.iloc[0] is None
    assert pd.isna(plan.demand.loc[15, "site"])
    assert np.isnan(plan.demand.loc[15, "distance_m"])


def test_one_point_groups_are_answers_not_problems():
    # A one-point group has a circle (radius 0) and a spanning tree without edges.
    frame = gpd.GeoDataFrame({"g": [1, 1, 2]}, geometry=gpd.points_from_xy([0, 3, 7], [0, 4, 7]), crs="EPSG:32632",
                             index=["p", "q", "r"])
    circles = gis.enclosing_circle(frame, by="g")
    assert circles["radius_m"].tolist() == pytest.approx([2.5, 0.0])  # closed form: half of the 3-4-5 side
    net = gis.spanning_tree(frame, by="g")
    assert net.edges[["g", "end_a", "end_b"]].values.tolist() == [[1, "p", "q"]]
    assert net.summary["length_m"].tolist() == pytest.approx([5.0, 0.0])
    assert net.summary["points"].tolist() == [2, 1]


# ---------------------------------------------------------------- enclosing shapes


def test_enclosing_circle_matches_geos_and_covers_points():
    frame = lonlat_frame()
    out = gis.enclosing_circle(frame, work_crs=utm_of(frame))  # the projected-frame model
    xy = metric_xy(frame)
    expected = shapely.minimum_bounding_radius(shapely.multipoints(xy))  # GEOS in pyproj's UTM
    assert out["radius_m"].iloc[0] == pytest.approx(expected, rel=1e-9)
    assert out["area_m2"].iloc[0] == pytest.approx(np.pi * expected**2, rel=1e-9)
    polygon = out.to_crs(utm_of(frame)).geometry.iloc[0]
    assert bool(shapely.covers(polygon.buffer(1e-6), shapely.points(xy)).all())
    assert out.crs == frame.crs
    no_shadowing(out)


def test_enclosing_circle_by_group():
    frame = lonlat_frame(n=200)
    out = gis.enclosing_circle(frame, by="zone", work_crs=utm_of(frame))  # the projected-frame model
    xy = metric_xy(frame)
    for zone, r in zip(out["zone"], out["radius_m"]):
        m = (frame["zone"] == zone).to_numpy()
        assert r == pytest.approx(shapely.minimum_bounding_radius(shapely.multipoints(xy[m])), rel=1e-9)  # GEOS


def test_weighted_minimax_point_matches_scipy():
    frame = lonlat_frame(n=30)
    out = gis.minimax_point(frame, "people", work_crs=utm_of(frame))  # the projected-frame model
    xy = metric_xy(frame)
    # scipy.optimize SLSQP on min r s.t. w_i |p - x_i| <= r.
    assert out["weighted_radius_m"].iloc[0] == pytest.approx(minimax_scipy(xy, frame["people"].to_numpy()), rel=1e-6)
    no_shadowing(out)


def test_enclosing_ellipse_of_a_rectangle():
    # Closed form: the minimum-area ellipse of an a x b rectangle has semi-axes a/sqrt2,
    # b/sqrt2, area pi*a*b/2, major axis along x (angle 0 or 180 degrees).
    box = gpd.GeoSeries(gpd.points_from_xy([0, 6, 6, 0], [0, 0, 2, 2]), crs="EPSG:3857")
    out = gis.enclosing_ellipse(box, tol=1e-10)
    assert out["semi_major_m"].iloc[0] == pytest.approx(6 / np.sqrt(2), rel=1e-6)
    assert out["semi_minor_m"].iloc[0] == pytest.approx(2 / np.sqrt(2), rel=1e-6)
    assert out["area_m2"].iloc[0] == pytest.approx(np.pi * 6 * 2 / 2, rel=1e-6)
    assert min(abs(out["angle_deg"].iloc[0]) % 180, 180 - abs(out["angle_deg"].iloc[0]) % 180) < 1e-4
    assert bool(shapely.covers(out.geometry.iloc[0].buffer(1e-9), box.values).all())  # GEOS
    no_shadowing(out)


# ---------------------------------------------------------------- catchments


def region_with_hole():
    return shapely.Polygon([(0, 0), (10_000, 0), (10_000, 6_000), (5_000, 3_000), (0, 6_000)],
                           holes=[[(4_000, 1_000), (6_000, 1_000), (6_000, 2_000), (4_000, 2_000)]])


def test_voronoi_cells_tile_a_region_with_a_hole_and_carry_loads():
    region = region_with_hole()
    sites = gpd.GeoDataFrame({"name": list("abcd")},
                             geometry=gpd.points_from_xy([1500, 8500, 3000, 7000], [1500, 1500, 4000, 4000]),
                             crs="EPSG:32632", index=["S1", "S2", "S3", "S4"])
    demand = gpd.GeoDataFrame({"w": RNG.uniform(1, 3, 500)},
                              geometry=gpd.points_from_xy(RNG.uniform(0, 10_000, 500), RNG.uniform(0, 3_000, 500)),
                              crs="EPSG:32632")
    cells = gis.voronoi_cells(sites, gpd.GeoSeries([region], crs="EPSG:32632"), demand=demand, weight="w")
    assert cells["name"].tolist() == list("abcd") and cells.index.tolist() == ["S1", "S2", "S3", "S4"]
    no_shadowing(cells)
    # shapely: the cells' areas sum to the region's, their union is the region, and each
    # reported area is its polygon's.
    assert cells["area_m2"].sum() == pytest.approx(region.area, rel=1e-9)
    np.testing.assert_allclose(cells["area_m2"], shapely.area(cells.geometry.values), rtol=1e-9)
    assert shapely.union_all(cells.geometry.values).symmetric_difference(region).area < 1e-6 * region.area
    # Loads: numpy.bincount over scipy cKDTree's nearest sites.
    nearest = cKDTree(shapely.get_coordinates(sites.geometry.values)).query(
        shapely.get_coordinates(demand.geometry.values))[1]
    np.testing.assert_allclose(cells["load"], np.bincount(nearest, weights=demand["w"], minlength=4), rtol=1e-12)
    assert cells["points"].tolist() == np.bincount(nearest, minlength=4).tolist()


def test_a_group_column_named_like_a_result_column_is_refused():
    # by="problem" overwrote the group values with the problem text (None), and by="load" on
    # a plan failed with pandas' "cannot insert load, already exists". Reference: the
    # result's own column names, listed in the message.
    rng = np.random.default_rng(1)
    frame = gpd.GeoDataFrame({"problem": [0] * 10 + [1] * 10, "load": [0] * 10 + [1] * 10,
                              "zone": [0] * 10 + [1] * 10},
                             geometry=gpd.points_from_xy(rng.random(20), rng.random(20)))
    for call in (lambda: gis.enclosing_circle(frame, by="problem", planar=True),
                 lambda: gis.p_median(frame, 1, by="load", planar=True)):
        with pytest.raises(pw.InputError, match="by: the group column .* has the name of a column of the result"):
            call()
    out = gis.enclosing_circle(frame, by="zone", planar=True)
    assert out["zone"].tolist() == [0, 1] and out["problem"].isna().all()


def test_a_weight_column_of_dates_or_durations_is_refused():
    # pandas counts them in nanoseconds: a load of 6.3e15 came back for a column of dates.
    # Reference: the core's own refusal of the same values as weights.
    frame = gpd.GeoDataFrame({"when": pd.to_datetime(["2026-01-01", "2026-01-02", "2026-01-03"]),
                              "hours": pd.to_timedelta([1, 2, 4], unit="h")},
                             geometry=gpd.points_from_xy([0, 4, 2], [0, 0, 3]))
    with pytest.raises(pw.InputError, match="got dates or durations"):
        pw.weber_point(np.array([[0, 0], [4, 0], [2, 3]]), frame["when"].to_numpy())
    for column in ("when", "hours"):
        with pytest.raises(pw.InputError, match="holds dates or durations"):
            gis.p_median(frame, 1, weight=column, planar=True)


def test_voronoi_weight_without_demand_is_refused():
    # Weights weigh demand rows; without demand= they used to be dropped without a word.
    sites = gpd.GeoDataFrame({"people": [3.0, 4.0]}, geometry=gpd.points_from_xy([1, 3], [1, 1]))
    with pytest.raises(pw.InputError, match="weight applies to the demand rows") as caught:
        gis.voronoi_cells(sites, shapely.box(0, 0, 4, 2), weight="people", planar=True)
    assert caught.value.argument == "weight"


def test_voronoi_region_in_another_crs_is_projected():
    sites = lonlat_frame(n=12)
    region = gpd.GeoSeries([sites.union_all().convex_hull.buffer(0.05)], crs="EPSG:4326").to_crs("EPSG:3035")
    cells = gis.voronoi_cells(sites, region)
    assert cells.crs == sites.crs
    # pyproj: the region in the working UTM zone, edges kept there (segmentized every 10 m)
    # and brought to lon/lat, measured on the ellipsoid by pyproj.Geod (the cells' areas
    # are WGS84 areas for geographic input).
    there = region.to_crs(utm_of(sites))
    drawn = gpd.GeoSeries(shapely.segmentize(there.values, 10.0), crs=there.crs).to_crs(4326).iloc[0]
    on_earth = abs(pyproj.Geod(ellps="WGS84").geometry_area_perimeter(drawn)[0])
    assert cells["area_m2"].sum() == pytest.approx(on_earth, rel=1e-6)


def test_voronoi_cells_by_group_each_tile_the_region():
    region = shapely.box(0, 0, 1000, 600)
    rng = np.random.default_rng(8)
    sites = gpd.GeoDataFrame({"firm": np.repeat(["blue", "red", "green"], 5)},
                             geometry=gpd.points_from_xy(rng.uniform(0, 1000, 15), rng.uniform(0, 600, 15)),
                             crs="EPSG:32632")
    cells = gis.voronoi_cells(sites, region, by="firm")
    assert cells["firm"].tolist() == sites["firm"].tolist()  # the sites' own rows and order
    for firm in ("blue", "red", "green"):
        mine = cells[cells["firm"] == firm]
        assert mine["area_m2"].sum() == pytest.approx(region.area, rel=1e-9)  # shapely area
        # Each cell holds its own site (GEOS covers).
        assert bool(shapely.covers(mine.geometry.values, sites[sites["firm"] == firm].geometry.values).all())


def test_geographic_groups_in_two_utm_zones_each_tile_the_region_where_it_lies():
    from pyproj import Geod

    # Two firms' sites in UTM zones 32 and 33, one lon/lat study region across both: every
    # firm's cells must cover that region (not one moved into the other firm's frame).
    rng = np.random.default_rng(15)
    lon = np.r_[rng.uniform(10.0, 10.3, 4), rng.uniform(15.0, 15.3, 4)]
    lat = rng.uniform(50.0, 50.2, 8)
    sites = gpd.GeoDataFrame({"firm": np.repeat(["blue", "red"], 4)}, geometry=gpd.points_from_xy(lon, lat),
                             crs="EPSG:4326")
    box = shapely.box(9.5, 49.5, 16.0, 50.7)
    cells = gis.voronoi_cells(sites, gpd.GeoSeries([box], crs="EPSG:4326"), by="firm")
    # Outside reference: the region's area on the WGS84 ellipsoid (pyproj.Geod, densified).
    truth = abs(Geod(ellps="WGS84").geometry_area_perimeter(shapely.segmentize(box, 0.001))[0])
    for firm in ("blue", "red"):
        mine = cells[cells["firm"] == firm]
        assert np.allclose(shapely.union_all(mine.geometry.values).bounds, box.bounds, atol=1e-6)  # shapely
    assert cells["work_crs"].nunique() == 1  # one frame, chosen over the sites and the region
    error = float(cells["scale_error"].iloc[0])
    assert 0 < error <= 1e-3
    for firm in ("blue", "red"):
        # Areas true within the stated scale error (squared, for an area).
        assert abs(cells.loc[cells["firm"] == firm, "area_m2"].sum() / truth - 1) <= 2.0 * error
    # Sites in one town and a region across half a continent: the frame distorts the region
    # by far more than 0.1 %, so the region counts in the refusal (power cells have no sphere).
    town = sites[sites["firm"] == "blue"].assign(power=0.0)
    with pytest.raises(pw.InputError, match="sites with region: .* distorts distances"):
        gis.power_cells(town, "power", gpd.GeoSeries([shapely.box(3.0, 45.0, 17.0, 55.0)], crs="EPSG:4326"))


def test_nearest_site_matches_ckdtree_in_metres():
    demand = lonlat_frame(n=500)
    sites = lonlat_frame(n=7, seed=3).set_index(np.array(list("ABCDEFG")))
    utm = utm_of(demand)
    plan = gis.nearest_site(demand, sites, "people", work_crs=utm)  # the projected-frame model
    d, i = cKDTree(shapely.get_coordinates(sites.to_crs(utm).geometry.values)).query(
        shapely.get_coordinates(demand.to_crs(utm).geometry.values))  # scipy reference in pyproj's UTM
    assert plan.demand["site"].tolist() == [sites.index[k] for k in i]
    assert plan.demand.index.equals(demand.index)
    np.testing.assert_allclose(plan.demand["distance_m"], d, rtol=1e-9)
    assert plan.summary["cost_m"].iloc[0] == pytest.approx(float(demand["people"] @ d), rel=1e-9)
    np.testing.assert_allclose(plan.sites["load"], np.bincount(i, weights=demand["people"], minlength=7), rtol=1e-12)
    assert plan.sites.index.tolist() == list("ABCDEFG")
    for table in plan:
        no_shadowing(table)


def test_nearest_site_by_group_serves_each_group_from_its_own_sites():
    rng = np.random.default_rng(9)
    demand = gpd.GeoDataFrame({"firm": rng.choice(["blue", "red"], 300), "w": rng.uniform(1, 3, 300)},
                              geometry=gpd.points_from_xy(rng.uniform(0, 1e4, 300), rng.uniform(0, 1e4, 300)),
                              crs="EPSG:32632")
    sites = gpd.GeoDataFrame({"firm": ["blue", "blue", "red", "red", "red", "grey"]},
                             geometry=gpd.points_from_xy(rng.uniform(0, 1e4, 6), rng.uniform(0, 1e4, 6)),
                             crs="EPSG:32632", index=["b1", "b2", "r1", "r2", "r3", "g1"])
    plan = gis.nearest_site(demand, sites, "w", by="firm")
    assert plan.summary["firm"].tolist() == ["blue", "grey", "red"]
    for firm in ("blue", "red"):
        mine, own = demand[demand["firm"] == firm], sites[sites["firm"] == firm]
        d, i = cKDTree(shapely.get_coordinates(own.geometry.values)).query(
            shapely.get_coordinates(mine.geometry.values))  # scipy per group
        assert plan.demand.loc[mine.index, "site"].tolist() == own.index[i].tolist()
        np.testing.assert_allclose(plan.demand.loc[mine.index, "distance_m"], d, rtol=1e-12)
        np.testing.assert_allclose(plan.sites.loc[own.index, "load"],
                                   np.bincount(i, weights=mine["w"], minlength=len(own)), rtol=1e-12)
        row = plan.summary[plan.summary["firm"] == firm].iloc[0]
        assert row["cost_m"] == pytest.approx(float(mine["w"] @ d), rel=1e-12)
    # A site whose group has no demand keeps its row and serves nobody.
    assert plan.sites.index.tolist() == sites.index.tolist()
    assert plan.sites.loc["g1", "load"] == 0 and plan.sites.loc["g1", "points"] == 0


def test_nearest_site_demand_group_without_sites_is_a_problem_in_user_terms():
    demand = gpd.GeoDataFrame({"firm": ["blue", "pink"]}, geometry=gpd.points_from_xy([0, 5], [0, 5]),
                              crs="EPSG:32632")
    sites = gpd.GeoDataFrame({"firm": ["blue"]}, geometry=gpd.points_from_xy([1], [0]), crs="EPSG:32632")
    with pytest.raises(pw.InputError) as info:
        gis.nearest_site(demand, sites, by="firm")
    assert info.value.group == "pink" and str(info.value).startswith("group 'pink': ")
    plan = gis.nearest_site(demand, sites, by="firm", errors="skip")
    assert plan.summary["problem"].notna().tolist() == [False, True]
    assert plan.demand["site"].iloc[0] == sites.index[0] and pd.isna(plan.demand["site"].iloc[1])


# ---------------------------------------------------------------- networks


def test_spanning_tree_edges_name_rows_and_total_matches_csgraph():
    frame = lonlat_frame(n=60)
    net = gis.spanning_tree(frame)
    xy = metric_xy(frame)
    expected = mst_length_scipy(xy)  # scipy csgraph
    assert net.summary["length_m"].iloc[0] == pytest.approx(expected, rel=1e-9)
    assert net.edges["length_m"].sum() == pytest.approx(expected, rel=1e-9)
    assert len(net.edges) == len(frame) - 1
    assert set(net.edges["end_a"]) | set(net.edges["end_b"]) == set(frame.index)
    # Each edge's length is the distance between the rows it names (numpy on pyproj's points).
    at = {label: k for k, label in enumerate(frame.index)}
    a = xy[[at[v] for v in net.edges["end_a"]]]
    b = xy[[at[v] for v in net.edges["end_b"]]]
    np.testing.assert_allclose(net.edges["length_m"], np.hypot(*(a - b).T), rtol=1e-9)
    assert "from_node" not in net.edges.columns and "to_node" not in net.edges.columns
    no_shadowing(net.edges)
    no_shadowing(net.summary)


def test_steiner_tree_of_the_unit_square():
    # Closed form: the Steiner tree of a unit square is 1 + sqrt(3) long with two junctions.
    sq = gpd.GeoSeries(gpd.points_from_xy([0, 1, 1, 0], [0, 0, 1, 1]), index=["sw", "se", "ne", "nw"])
    net = gis.steiner_tree(sq, planar=True)
    s = net.summary.iloc[0]
    assert s["length_u"] == pytest.approx(1 + np.sqrt(3), rel=1e-9)
    assert s["mst_length_u"] == pytest.approx(3.0, rel=1e-12)
    assert s["saving"] == pytest.approx(1 - (1 + np.sqrt(3)) / 3, rel=1e-9)
    assert s["junctions"] == 2 and bool(s["optimal"])
    assert net.edges["length_u"].sum() == pytest.approx(1 + np.sqrt(3), rel=1e-9)
    # Every terminal is an end of exactly one edge; the junction-junction edge names none.
    ends = [e for e in [*net.edges["end_a"], *net.edges["end_b"]] if e is not None and not pd.isna(e)]
    assert sorted(ends) == sorted(sq.index)


def test_networks_by_group_match_csgraph():
    frame = lonlat_frame(n=45)
    st = gis.steiner_tree(frame, by="zone", exact=False)
    mst = gis.spanning_tree(frame, by="zone")
    xy = metric_xy(frame)
    for zone in ("east", "north", "south"):
        m = (frame["zone"] == zone).to_numpy()
        ref = mst_length_scipy(xy[m])  # scipy csgraph per group
        assert mst.summary.set_index("zone").loc[zone, "length_m"] == pytest.approx(ref, rel=1e-9)
        row = st.summary.set_index("zone").loc[zone]
        assert row["mst_length_m"] == pytest.approx(ref, rel=1e-9)
        assert row["length_m"] <= ref * (1 + 1e-12)
        assert st.edges[st.edges["zone"] == zone]["length_m"].sum() == pytest.approx(row["length_m"], rel=1e-9)


def test_grouped_tree_ends_are_the_frames_labels_on_its_points():
    frame = three_hundred_groups(per_group=10)
    net = gis.spanning_tree(frame, by="g", planar=True)
    assert len(net.edges) == len(frame) - 300
    xy = shapely.get_coordinates(frame.geometry.values)
    for g in (0, 151, 299):
        part = frame[frame["g"] == g]
        mine = net.edges[net.edges["g"] == g]
        assert set(mine["end_a"]) | set(mine["end_b"]) == set(part.index)
        assert mine["length_u"].sum() == pytest.approx(mst_length_scipy(xy[(frame["g"] == g).to_numpy()]), rel=1e-12)
        starts = shapely.get_coordinates(mine.geometry.values).reshape(-1, 2, 2)[:, 0]
        np.testing.assert_allclose(starts, shapely.get_coordinates(part.geometry.loc[mine["end_a"]].values))


def test_network_files_keep_totals_and_units(tmp_path):
    frame = lonlat_frame(n=40)
    net = gis.steiner_tree(frame, by="zone", exact=False)
    net.edges.to_file(tmp_path / "edges.geojson", driver="GeoJSON")
    net.summary.to_csv(tmp_path / "summary.csv", index=False)
    edges = gpd.read_file(tmp_path / "edges.geojson")
    summary = pd.read_csv(tmp_path / "summary.csv")
    assert {"length_m", "end_a", "end_b"} <= set(edges.columns)
    assert {"zone", "length_m", "mst_length_m", "saving", "junctions"} <= set(summary.columns)
    xy = metric_xy(frame)
    for zone, row in summary.set_index("zone").iterrows():
        m = (frame["zone"] == zone).to_numpy()
        assert row["mst_length_m"] == pytest.approx(mst_length_scipy(xy[m]), rel=1e-9)  # scipy csgraph
        assert edges[edges["zone"] == zone]["length_m"].sum() == pytest.approx(row["length_m"], rel=1e-9)
        assert row["saving"] == pytest.approx(1 - row["length_m"] / row["mst_length_m"], rel=1e-9, abs=1e-12)


# ---------------------------------------------------------------- plans


def test_p_median_one_site_is_the_fermat_weber_point():
    frame = lonlat_frame()
    plan = gis.p_median(frame, 1, "people")
    ref = weber_cost_scipy(metric_xy(frame), frame["people"].to_numpy())  # scipy.optimize
    assert plan.summary["cost_m"].iloc[0] == pytest.approx(ref, rel=1e-6)


def test_p_median_serves_each_row_from_its_nearest_site():
    frame = lonlat_frame(n=500)
    plan = gis.p_median(frame, 4, "people")
    assert plan.sites.crs == frame.crs and plan.demand.crs == frame.crs
    utm = utm_of(frame)
    sites = shapely.get_coordinates(plan.sites.to_crs(utm).geometry.values)
    d, i = cKDTree(sites).query(metric_xy(frame))  # scipy reference
    np.testing.assert_array_equal(plan.demand["site"].to_numpy(), plan.sites.index.to_numpy()[i])
    np.testing.assert_allclose(plan.demand["distance_m"], d, rtol=1e-6, atol=1e-3)
    np.testing.assert_allclose(plan.sites["load"], np.bincount(i, weights=frame["people"], minlength=4), rtol=1e-12)
    assert plan.summary["cost_m"].iloc[0] == pytest.approx(float(frame["people"] @ d), rel=1e-6)
    assert plan.summary["load"].iloc[0] == pytest.approx(frame["people"].sum())
    for table in plan:
        no_shadowing(table)


def test_p_median_by_group_and_group_errors():
    frame = lonlat_frame(n=300)
    plan = gis.p_median(frame, 2, "people", by="zone")
    assert plan.sites.groupby("zone").size().tolist() == [2, 2, 2]
    assert plan.summary["zone"].tolist() == ["east", "north", "south"]
    # Each row's site is one of its own group's sites (by the sites table's labels).
    site_zone = plan.sites["zone"]
    assert (site_zone.loc[plan.demand["site"]].to_numpy() == frame["zone"].to_numpy()).all()
    tiny = frame.iloc[:3].copy()
    tiny["zone"] = ["a", "b", "b"]
    with pytest.raises(pw.InputError, match="^group 'a': ") as info:
        gis.p_median(tiny, 2, by="zone")
    assert info.value.group == "a"


def test_p_center_one_site_is_the_enclosing_circle():
    frame = lonlat_frame()
    plan = gis.p_center(frame, 1)
    r = shapely.minimum_bounding_radius(shapely.multipoints(metric_xy(frame)))  # GEOS
    assert plan.summary["weighted_radius_m"].iloc[0] == pytest.approx(r, rel=1e-7)
    assert plan.demand["distance_m"].max() == pytest.approx(r, rel=1e-7)


def test_p_median_with_fixed_sites():
    homes = gpd.GeoSeries(gpd.points_from_xy([0, 1, 10, 11, 20, 21], [0, 0, 0, 0, 0, 0]))
    existing = gpd.GeoSeries(gpd.points_from_xy([20.5], [0]))
    plan = gis.p_median(homes, 2, fixed=existing, planar=True)
    assert plan.sites["fixed"].tolist() == [False, False, True]
    assert plan.sites.geometry.iloc[2].equals(existing.iloc[0])
    # Closed form on a line: one new site within each left pair (cost 1 each); the fixed
    # site at 20.5 serves the right pair at cost 1.
    assert plan.summary["cost_u"].iloc[0] == pytest.approx(3.0, rel=1e-9)
    assert plan.demand["site"].tolist()[-2:] == [plan.sites.index[2]] * 2


def test_plan_files_keep_totals_and_units(tmp_path):
    frame = lonlat_frame(n=200)
    plan = gis.p_median(frame, 3, "people", by="zone")
    plan.sites.to_parquet(tmp_path / "sites.parquet")
    plan.demand.to_file(tmp_path / "demand.geojson", driver="GeoJSON")
    plan.summary.to_csv(tmp_path / "summary.csv", index=False)
    sites = gpd.read_parquet(tmp_path / "sites.parquet")
    demand = gpd.read_file(tmp_path / "demand.geojson")
    summary = pd.read_csv(tmp_path / "summary.csv")
    assert sites.crs == frame.crs and demand.crs == frame.crs
    assert {"cost_m", "load", "points", "sites"} <= set(summary.columns)
    xy = metric_xy(frame)
    site_xy = shapely.get_coordinates(sites.to_crs(utm_of(frame)).geometry.values)
    for zone, row in summary.set_index("zone").iterrows():
        m = (frame["zone"] == zone).to_numpy()
        own = (sites["zone"] == zone).to_numpy()
        d = cKDTree(site_xy[own]).query(xy[m])[0]  # scipy on the file's own sites
        assert row["cost_m"] == pytest.approx(float(frame["people"].to_numpy()[m] @ d), rel=1e-6)
        assert row["load"] == pytest.approx(sites.loc[own, "load"].sum())
        assert demand.loc[m, "distance_m"].to_numpy() == pytest.approx(d, rel=1e-6, abs=1e-3)


# --- geographic input: checked coordinates, an honest working frame -------------------------


def _lonlat_frame(lon, lat, **columns):
    return gpd.GeoDataFrame(columns, geometry=gpd.points_from_xy(lon, lat), crs="EPSG:4326")


def test_latitudes_beyond_the_poles_are_refused_naming_rows() -> None:
    frame = _lonlat_frame([10.0, 10.5, 11.0], [50.0, 95.0, 50.5])
    frame.index = ["a", "b", "c"]
    with pytest.raises(pw.InputError, match=r"latitude \(y\) outside -90..90 at rows 'b'"):
        gis.weber_point(frame)


def test_swapped_longitude_and_latitude_are_named_as_such() -> None:
    # Points in southern Norway written as (lat, lon): latitude 59-60 ends up as x and
    # longitude 10-11 as y — legal — so take a place east of 90 degrees, where y > 90.
    frame = _lonlat_frame([55.7, 55.8, 55.9], [137.0, 137.2, 137.4])
    with pytest.raises(pw.InputError, match="look swapped"):
        gis.enclosing_circle(frame)


def test_longitudes_far_outside_the_globe_are_refused() -> None:
    frame = _lonlat_frame([500_000.0, 500_100.0], [50.0, 50.1])
    with pytest.raises(pw.InputError, match="longitude"):
        gis.spanning_tree(frame)


def test_a_national_extent_is_refused_instead_of_distorted() -> None:
    # 20 degrees of longitude at 50 N: one UTM zone distorts distances by about 1 % at its
    # edges (from memory: UTM's scale error grows as x^2 / 2R^2), far beyond 0.1 %.
    rng = np.random.default_rng(8)
    frame = _lonlat_frame(rng.uniform(0, 20, 400), rng.uniform(45, 55, 400))
    with pytest.raises(pw.InputError, match=r"distorts distances by up to .* % .*by=.*work_crs="):
        gis.steiner_tree(frame)  # a frame-model function (the single-site ones solve on the ellipsoid)
    # The spanning tree answers such data on the sphere instead, and says so.
    assert (gis.spanning_tree(frame).summary["work_crs"] == pw.geodesic.SPHERE_MODEL).all()


def test_a_forced_working_crs_states_its_scale_error() -> None:
    from pyproj import Proj

    rng = np.random.default_rng(9)
    lon, lat = rng.uniform(0, 20, 400), rng.uniform(45, 55, 400)
    out = gis.weber_point(_lonlat_frame(lon, lat), work_crs="EPSG:3035")
    # Outside reference: PROJ's scale factors of the forced frame (ETRS89 / LAEA Europe)
    # at every point; the reported figure is their largest departure from 1.
    factors = Proj("EPSG:3035").get_factors(lon, lat)
    expected = max(np.abs(np.asarray(factors.meridional_scale) - 1).max(),
                   np.abs(np.asarray(factors.parallel_scale) - 1).max())
    assert out["work_crs"].iloc[0] == "ETRS89-extended / LAEA Europe"
    assert out["scale_error"].iloc[0] == pytest.approx(expected, rel=1e-9)


def test_reported_metres_are_true_within_the_stated_scale_error() -> None:
    from pyproj import Geod

    rng = np.random.default_rng(10)
    lon, lat = rng.uniform(10.0, 11.5, 300), rng.uniform(59.5, 60.5, 300)
    plan = gis.p_median(_lonlat_frame(lon, lat), 1)  # a frame-model function
    error = float(plan.summary["scale_error"].iloc[0])
    assert 0 < error <= 1e-3
    site = plan.sites.geometry.iloc[0]
    # Outside reference: GeographicLib geodesics (pyproj.Geod) from the returned site.
    _, _, metres = Geod(ellps="WGS84").inv(np.full(300, site.x), np.full(300, site.y), lon, lat)
    true_cost = float(np.sum(metres))
    assert abs(float(plan.summary["cost_m"].iloc[0]) - true_cost) <= error * true_cost * (1 + 1e-9)
    # On the ellipsoid the Fermat–Weber cost is the geodesic cost itself (scale error 0).
    out = gis.weber_point(_lonlat_frame(lon, lat))
    site = out.geometry.iloc[0]
    _, _, metres = Geod(ellps="WGS84").inv(np.full(300, site.x), np.full(300, site.y), lon, lat)
    assert float(out["scale_error"].iloc[0]) == 0
    assert float(out["cost_m"].iloc[0]) == pytest.approx(float(np.sum(metres)), rel=1e-12)


def test_a_group_on_the_date_line_gets_a_frame_on_its_own_side_of_the_earth() -> None:
    from pyproj import Geod

    # Longitudes of 179.6 +- 1 degree written in [-180, 180): the middle of their bounding box
    # is near 0 degrees, and a frame chosen there distorts them by far more than 0.1 %.
    rng = np.random.default_rng(12)
    lon = (179.6 + rng.normal(0, 0.35, 300) + 180) % 360 - 180
    lat = -17.1 + rng.normal(0, 0.25, 300)
    frame = _lonlat_frame(lon, lat).assign(g=0)
    for plan in (gis.p_median(frame, 1), gis.p_median(frame, 1, by="g")):
        error = float(plan.sites["scale_error"].iloc[0])
        assert error <= 1e-3
        site = plan.sites.geometry.iloc[0]
        assert abs(site.x) > 178  # on the date line, not at the other side of the Earth
        # Outside reference: GeographicLib geodesics (pyproj.Geod) from the returned site.
        _, _, metres = Geod(ellps="WGS84").inv(np.full(300, site.x), np.full(300, site.y), lon, lat)
        cost = float(plan.summary["cost_m"].iloc[0]) if "cost_m" in plan.summary else float(
            plan.sites["cost_m"].iloc[0])
        assert abs(cost - metres.sum()) <= error * metres.sum() * (1 + 1e-9)


# S-JTSK counts longitude from Ferro (17°40' west of Greenwich); NTF from Paris, in grads.
@pytest.mark.parametrize("crs", ["EPSG:4818", "EPSG:4807"])
def test_a_geographic_crs_on_another_meridian_or_unit_is_solved_where_its_points_are(crs) -> None:
    from pyproj import Geod, Proj

    rng = np.random.default_rng(14)
    lon = np.r_[rng.uniform(14.2, 14.7, 40), rng.uniform(16.2, 16.7, 40)]
    lat = np.r_[rng.uniform(49.9, 50.2, 40), rng.uniform(49.1, 49.3, 40)]
    town = np.repeat(["west", "east"], 40)
    frame = _lonlat_frame(lon, lat, town=town).to_crs(crs)
    # The points' WGS84 places as pyproj reads the frame back (its datum shift included).
    back = frame.to_crs("EPSG:4326")
    lon, lat = back.geometry.x.to_numpy(), back.geometry.y.to_numpy()
    geod = Geod(ellps="WGS84")  # outside reference: GeographicLib geodesics
    for by in (None, "town"):
        plan = gis.p_median(frame, 1, by=by)  # a frame-model function
        sites = plan.sites.to_crs("EPSG:4326")
        for k in range(len(sites)):
            mine = np.ones(len(lon), bool) if by is None else town == sites[by].iloc[k]
            site = sites.geometry.iloc[k]
            _, _, metres = geod.inv(np.full(mine.sum(), site.x), np.full(mine.sum(), site.y), lon[mine], lat[mine])
            # The stated scale error is PROJ's, of the working frame at the points' true places...
            factors = Proj("EPSG:32633").get_factors(lon[mine], lat[mine])
            assert plan.sites["work_crs"].iloc[k] == "WGS 84 / UTM zone 33N"
            expected = np.abs(np.asarray(factors.parallel_scale) - 1).max()
            error = float(plan.sites["scale_error"].iloc[k])
            assert error == pytest.approx(expected, rel=1e-6)
            # ...and the reported cost is the geodesic cost within it (the site where the data are).
            cost = float(plan.summary["cost_m"].iloc[k])
            assert abs(cost - metres.sum()) <= error * metres.sum() * (1 + 1e-9)
    if crs == "EPSG:4807":
        # 85.4 and 85.5 degrees are about 94.9 grads: inside the globe, in the frame's unit.
        north = _lonlat_frame([10.0, 10.5], [85.4, 85.5]).to_crs(crs)
        assert north.geometry.y.min() > 90
        out = gis.weber_point(north)
        # Closed form: two points' Fermat–Weber cost is the distance between them.
        places = north.to_crs("EPSG:4326").geometry
        _, _, metres = geod.inv(places.x.iloc[0], places.y.iloc[0], places.x.iloc[1], places.y.iloc[1])
        assert float(out["cost_m"].iloc[0]) == pytest.approx(metres, rel=1e-9)


def test_a_geographic_region_is_densified_before_it_is_projected() -> None:
    # A lon/lat box projected by its four corners alone loses the curved bands along its
    # edges; densified, the cells tile the box: their areas sum to the box's own area on
    # the ellipsoid (pyproj.Geod on the same box densified finely, as the outside reference).
    sites = _lonlat_frame([10.2, 10.8, 10.5], [59.7, 59.8, 60.2])
    box = shapely.box(10.0, 59.5, 11.0, 60.5)
    cells = gis.voronoi_cells(sites, gpd.GeoSeries([box], crs="EPSG:4326"))
    fine = shapely.segmentize(box, 0.001)
    on_earth = abs(pyproj.Geod(ellps="WGS84").geometry_area_perimeter(fine)[0])
    assert cells["area_m2"].sum() == pytest.approx(on_earth, rel=1e-6)


def test_max_scale_error_must_be_a_fraction() -> None:
    frame = _lonlat_frame([10.0, 10.1], [60.0, 60.1])
    with pytest.raises(pw.InputError, match="max_scale_error"):
        gis.weber_point(frame, max_scale_error=2)


def test_each_group_is_solved_in_a_frame_of_its_own() -> None:
    from pyproj import Geod

    # Two towns on opposite sides of the globe: one shared projection would distort one of
    # them beyond use; each gets the UTM zone of its own centre.
    rng = np.random.default_rng(11)
    lon = np.r_[rng.uniform(10.6, 10.9, 50), rng.uniform(151.0, 151.3, 50)]
    lat = np.r_[rng.uniform(59.8, 60.0, 50), rng.uniform(-33.9, -33.7, 50)]
    town = np.repeat(["oslo-like", "sydney-like"], 50)
    plan = gis.p_median(_lonlat_frame(lon, lat, town=town), 1, by="town")  # a frame-model function
    out = plan.summary.set_index("town")
    sites = plan.sites.set_index("town")
    assert out.loc["oslo-like", "work_crs"] == "WGS 84 / UTM zone 32N"
    assert out.loc["sydney-like", "work_crs"] == "WGS 84 / UTM zone 56S"
    geod = Geod(ellps="WGS84")  # outside reference: GeographicLib geodesics
    for name in ("oslo-like", "sydney-like"):
        mine = town == name
        site = sites.loc[name, "geometry"]
        _, _, metres = geod.inv(np.full(mine.sum(), site.x), np.full(mine.sum(), site.y), lon[mine], lat[mine])
        error = float(out.loc[name, "scale_error"])
        assert error <= 1e-3
        assert abs(float(out.loc[name, "cost_m"]) - metres.sum()) <= error * metres.sum() * (1 + 1e-9)


def test_a_group_too_wide_for_its_frame_is_named() -> None:
    lon = np.r_[np.linspace(10.0, 10.2, 5), np.linspace(-5.0, 25.0, 5)]
    lat = np.r_[np.full(5, 60.0), np.full(5, 50.0)]
    frame = _lonlat_frame(lon, lat, zone=np.repeat(["small", "wide"], 5))
    with pytest.raises(pw.InputError, match="group 'wide' spans too much"):
        gis.spanning_tree(frame, by="zone")


def test_points_a_forced_frame_cannot_project_are_named_not_passed_on_as_infinite() -> None:
    from pyproj import Transformer

    # Regression: a point a quarter of the globe from a UTM zone's meridian, near the equator,
    # used to reach the kernels as "points[1] has an infinite (+inf) coordinate", an error
    # about input the user never gave.
    frame = _lonlat_frame([10.0, 99.0, 11.0], [0.0, 0.5, 1.0], label=["near", "far east", "also near"])
    frame = frame.set_index("label")
    # Outside reference: PROJ itself cannot put that point into UTM zone 32N (meridian 9° E).
    x, _ = Transformer.from_crs(4326, 32632, always_xy=True).transform(99.0, 0.5)
    assert not np.isfinite(x)
    with pytest.raises(pw.InputError, match=r"1 point\(s\) \(rows 'far east'\) lie where the working frame "
                                            r"'WGS 84 / UTM zone 32N' cannot project them"):
        gis.p_median(frame, 1, work_crs="EPSG:32632")
    # Without a forced frame the family that needs a planar frame refuses the extent as a
    # whole (no single frame holds it), naming the points its best frame cannot reach.
    with pytest.raises(pw.InputError, match="cannot project them|distorts distances"):
        gis.p_median(frame, 1)


def test_an_existing_site_without_demand_in_its_group_is_refused() -> None:
    # Regression: such a site served nobody and vanished from the plan's sites table.
    homes = gpd.GeoDataFrame({"g": ["a", "a", "b", "b"]}, geometry=gpd.points_from_xy([0, 1, 10, 11], [0, 0, 0, 0]))
    fixed = gpd.GeoDataFrame({"g": ["a", "zz"]}, geometry=gpd.points_from_xy([0.5, 50], [0, 0]), index=["old", "far"])
    with pytest.raises(pw.InputError, match="fixed: rows 'far' have a 'g' value that no demand row has"):
        gis.p_median(homes, 1, by="g", fixed=fixed, planar=True)


# ------------------------------------------------------------------ Delaunay triangulation


def _triangle_set(table, labels=None) -> set:
    """Triangles as frozensets of corner labels (the order of a triangle's corners and of
    the rows is the kernel's own)."""
    corners = table[["corner_a", "corner_b", "corner_c"]].to_numpy()
    if labels is not None:
        corners = np.asarray(labels)[corners]
    return {frozenset(map(str, row)) for row in corners}


def test_delaunay_of_a_regional_frame_matches_scipy_in_the_utm_zone():
    from scipy.spatial import Delaunay

    frame = lonlat_frame(200, seed=21)
    mesh = gis.delaunay(frame)
    # Outside references: scipy (Qhull) on the points projected by pyproj to its own UTM
    # zone; the triangles' areas by the shoelace formula there, and on the ellipsoid by
    # pyproj.Geod (agreeing within the stated scale error).
    xy = metric_xy(frame)
    ref = Delaunay(xy)
    assert _triangle_set(mesh) == _triangle_set(pd.DataFrame(ref.simplices, columns=["corner_a", "corner_b",
                                                                                       "corner_c"]), frame.index)
    position = {label: k for k, label in enumerate(frame.index)}
    corners = np.vectorize(position.get)(mesh[["corner_a", "corner_b", "corner_c"]].to_numpy())
    a, b, c = xy[corners[:, 0]], xy[corners[:, 1]], xy[corners[:, 2]]
    shoelace = 0.5 * ((b[:, 0] - a[:, 0]) * (c[:, 1] - a[:, 1]) - (c[:, 0] - a[:, 0]) * (b[:, 1] - a[:, 1]))
    assert (shoelace > 0).all()  # counter-clockwise, as documented
    # The areas are those of the triangles as drawn (edges straight in the zone) on the
    # ellipsoid: pyproj.Geod on scipy's triangles segmentized every 10 m in the zone and
    # brought to lon/lat by pyproj; the planar shoelace areas differ by the frame's scale.
    utm = utm_of(frame)
    drawn = gpd.GeoSeries(shapely.segmentize(shapely.polygons(np.stack([a, b, c], axis=1)), 10.0),
                          crs=utm).to_crs(4326)
    geod_drawn = np.array([pyproj.Geod(ellps="WGS84").geometry_area_perimeter(g) for g in drawn])
    # Within the drawing's stated 1 cm of each edge: 1 cm times the perimeter, in m².
    assert (np.abs(mesh["area_m2"].to_numpy() - np.abs(geod_drawn[:, 0])) <= 0.01 * geod_drawn[:, 1]).all()
    geod = pyproj.Geod(ellps="WGS84")
    lon, lat = shapely.get_x(frame.geometry.values), shapely.get_y(frame.geometry.values)
    on_earth = np.array([abs(geod.polygon_area_perimeter(lon[t], lat[t])[0]) for t in corners])
    scale = float(mesh["scale_error"].iloc[0])
    assert 0 < scale < 1e-3
    # Areas scale by at most (1 + scale error)^2 in the frame. Compared in total: a sliver's
    # own area also moves by the bow of its long geodesic edges in the frame (0.27 % on one
    # triangle 15 m wide and 11 km long here), which the sum over a tiling cancels.
    assert mesh["area_m2"].sum() == pytest.approx(on_earth.sum(), rel=2.5 * scale)
    assert np.median(np.abs(mesh["area_m2"].to_numpy() / on_earth - 1)) < 2.5 * scale
    assert mesh.crs == frame.crs


def test_delaunay_of_global_points_is_spherical_and_says_so():
    from scipy.spatial import ConvexHull

    rng = np.random.default_rng(22)
    lon, lat = rng.uniform(-180, 180, 300), np.degrees(np.arcsin(rng.uniform(-1, 1, 300)))
    frame = _lonlat_frame(lon, lat)
    mesh = gis.delaunay(frame)
    # Outside reference: the spherical Delaunay triangles are the faces of the 3-D convex hull
    # of the points' unit vectors (Brown 1979), here by scipy (Qhull).
    la, ph = np.radians(lon), np.radians(lat)
    hull = ConvexHull(np.column_stack([np.cos(ph) * np.cos(la), np.cos(ph) * np.sin(la), np.sin(ph)]))
    assert _triangle_set(mesh) == _triangle_set(pd.DataFrame(hull.simplices, columns=["corner_a", "corner_b",
                                                                                        "corner_c"]), frame.index)
    assert (mesh["work_crs"] == pw.geodesic.SPHERE_MODEL).all()
    # The triangles cover the globe: their WGS84 areas add up to the ellipsoid's, 4 pi times
    # the authalic radius squared (pyproj.Geod's authalic radius is not exposed; the figure
    # 510,065,621.7 km^2 for WGS84 is recalled from memory, so the check is to 1e-6).
    assert mesh["area_m2"].sum() == pytest.approx(5.100656217e14, rel=1e-6)
    geod = pyproj.Geod(ellps="WGS84")
    position = {label: k for k, label in enumerate(frame.index)}
    for row in mesh.head(20).itertuples():
        t = [position[row.corner_a], position[row.corner_b], position[row.corner_c]]
        assert row.area_m2 == pytest.approx(abs(geod.polygon_area_perimeter(lon[t], lat[t])[0]), rel=1e-9)


def test_delaunay_by_group_triangulates_each_group_alone():
    from scipy.spatial import Delaunay

    frame = lonlat_frame(240, seed=23)
    mesh = gis.delaunay(frame, by="zone")
    xy = metric_xy(frame)
    for zone, part in mesh.groupby("zone"):
        members = frame.index[frame["zone"] == zone]
        rows = np.flatnonzero(frame["zone"].to_numpy() == zone)
        ref = Delaunay(xy[rows]).simplices
        assert _triangle_set(part) == _triangle_set(pd.DataFrame(ref, columns=["corner_a", "corner_b", "corner_c"]),
                                                    members)
    # Watched (a progress callable) the grouped run gives the same table.
    watched = gis.delaunay(frame, by="zone", progress=lambda done, total: None)
    pd.testing.assert_frame_equal(pd.DataFrame(watched.drop(columns="geometry")),
                                  pd.DataFrame(mesh.drop(columns="geometry")))


@pytest.mark.parametrize("solve", ["weber_point", "minimax_point", "enclosing_circle", "spanning_tree", "delaunay"])
def test_planar_true_on_a_geographic_frame_is_refused_by_every_model(solve):
    # The functions with an ellipsoid form once solved such a frame on the ellipsoid while
    # the others refused it: planar=True says the coordinates are not longitude/latitude.
    frame = lonlat_frame(20, seed=24)
    with pytest.raises(pw.InputError, match="planar=True is only for frames without one"):
        getattr(gis, solve)(frame, planar=True)


def test_a_projected_crs_that_distorts_the_data_is_named_with_its_figure() -> None:
    # Web Mercator around New York: distances in its metres are sec(latitude) times true
    # ones (the Mercator scale factor, a closed form; Snyder 1987, Map Projections: A Working
    # Manual, eq. 7-8 on the sphere), about 32 % too long there. Solved as it is, but said.
    rng = np.random.default_rng(12)
    lon, lat = -74.0 + 0.05 * rng.normal(size=200), 40.7 + 0.05 * rng.normal(size=200)
    mercator = _lonlat_frame(lon, lat).to_crs("EPSG:3857")
    with pytest.warns(UserWarning, match=r"Pseudo-Mercator' distorts distances by up to ([\d.]+) %") as caught:
        gis.weber_point(mercator)
    stated = float(re.search(r"up to ([\d.]+) %", str(caught[0].message)).group(1)) / 100
    # PROJ evaluates Web Mercator's factors on the ellipsoid: within 0.3 % of the sphere's.
    assert stated == pytest.approx(1 / np.cos(np.radians(lat.max())) - 1, rel=3e-3)
    # The same points in their UTM zone (scale error below 0.1 % inside the zone, the
    # design of UTM: k0 = 0.9996) and in a state plane grid in US survey feet: no warning.
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        gis.weber_point(mercator.to_crs("EPSG:32618"))
        gis.weber_point(mercator.to_crs("EPSG:2263"))
    # work_crs= moves the work into a frame that holds: no warning either.
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        out = gis.weber_point(mercator, work_crs="EPSG:32618")
    assert out.crs.to_epsg() == 3857


def test_a_column_of_the_callers_replaced_by_a_result_column_is_named():
    # A demand frame with a column of its own called "site" (its survey site) and a sites
    # frame with one called "load" lost them in the result without a word: the result wrote
    # its own columns over them. Reference for the values written: scipy cKDTree's nearest
    # site and distance; numpy.bincount for the loads.
    rng = np.random.default_rng(7)
    demand = gpd.GeoDataFrame({"site": [f"survey-{i}" for i in range(40)], "w": rng.uniform(1, 2, 40)},
                              geometry=gpd.points_from_xy(rng.uniform(5e5, 501e3, 40), rng.uniform(5e6, 5.001e6, 40)),
                              crs="EPSG:32632")
    sites = gpd.GeoDataFrame({"load": ["heavy", "light", "none"]},
                             geometry=gpd.points_from_xy([500_100, 500_500, 500_900],
                                                         [5_000_100, 5_000_800, 5_000_300]),
                             crs="EPSG:32632", index=["A", "B", "C"])
    before = demand.copy()
    with pytest.warns(UserWarning) as caught:
        plan = gis.nearest_site(demand, sites, "w")
    said = [str(w.message) for w in caught]
    tail = "whose values differ; rename it to keep both"
    assert f"sites: the result replaces your column 'load', {tail}" in said
    assert f"demand: the result replaces your column 'site', {tail}" in said
    distance, nearest = cKDTree(shapely.get_coordinates(sites.geometry.values)).query(
        shapely.get_coordinates(demand.geometry.values))
    assert plan.demand["site"].tolist() == list(np.array(["A", "B", "C"])[nearest])
    np.testing.assert_allclose(plan.demand["distance_m"], distance, rtol=1e-12)
    np.testing.assert_allclose(plan.sites["load"], np.bincount(nearest, weights=demand["w"], minlength=3),
                               rtol=1e-12)
    pd.testing.assert_frame_equal(demand, before)  # the caller's frame is untouched

    # The plan's own output fed back in: the same values, so nothing of the caller's is lost
    # and nothing is said.
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        again = gis.nearest_site(plan.demand, plan.sites, "w")
    pd.testing.assert_frame_equal(again.demand, plan.demand)

    # Coverage and capacities write through the same path: "covered" and "share" of the
    # caller's are named.
    with pytest.warns(UserWarning, match=r"frame: the result replaces your columns 'site', 'covered'"):
        gis.cover_most(demand.assign(covered="yes"), 1, 300, "w", candidates=sites)
    with pytest.warns(UserWarning, match=r"demand: the result replaces your columns 'site', 'share'"):
        gis.capacity_allocation(demand.assign(share=0.5), sites.assign(cap=[30.0, 30.0, 30.0]), "cap", "w")

    # Two columns of the frame named "site": pandas could not compare them with one result
    # column (a bare ValueError); refused by name.
    doubled = gpd.GeoDataFrame(pd.concat([demand[["site"]], demand], axis=1), geometry="geometry", crs=demand.crs)
    with pytest.raises(pw.InputError, match="demand: more than one of your columns is named 'site'"):
        gis.nearest_site(doubled, sites.drop(columns="load"), "w")

    # A geometry column named like a result column cannot be replaced: refused.
    odd = demand.drop(columns="site").rename_geometry("site")
    with pytest.raises(pw.InputError, match="demand: the geometry column is named 'site'"):
        gis.nearest_site(odd, sites.drop(columns="load"), "w")


def test_a_plans_own_output_in_nullable_dtypes_is_not_said_to_differ():
    # The plan's own output fed back in after a round trip through nullable dtypes (as
    # pandas' convert_dtypes or a file reader gives it: Int64 and Float64 holding pd.NA,
    # string holding pd.NA, object holding None for NaN) holds the same values: nothing of
    # the caller's is lost, and nothing is said. Before, the comparison took pd.NA against
    # NaN or None, and Int64 against float, as a difference. Group "east" has demand but no
    # site, so its rows have no site (None) and no distance (NaN): missing in every dtype.
    demand = gpd.GeoDataFrame({"w": [1, 2, 3, 4, 5], "zone": ["west", "west", "west", "east", "east"]},
                              geometry=gpd.points_from_xy([0, 1, 9, 20, 21], [0, 0, 0, 0, 1]))
    sites = gpd.GeoDataFrame({"zone": ["west", "west"]}, geometry=gpd.points_from_xy([0, 10], [0, 0]),
                             index=["A", "B"])
    plan = gis.nearest_site(demand, sites, "w", by="zone", planar=True, errors="skip")
    assert plan.demand[["site", "distance_u"]].isna().to_numpy().tolist() == [[False, False]] * 3 + [[True, True]] * 2
    # The loads are whole numbers (integer weights): Int64 holds them.
    assert plan.sites["load"].tolist() == [3.0, 3.0] and plan.sites["points"].dtype == np.int64

    nullable_demand = plan.demand.astype({"site": "string", "distance_u": "Float64"})
    nullable_sites = plan.sites.astype({"load": "Int64", "points": "Int64"})
    assert nullable_demand["site"].isna().tolist() == [False, False, False, True, True]
    object_none = plan.demand.assign(site=pd.Series([*plan.demand["site"][:3], None, None], dtype=object))
    float_points = plan.sites.astype({"points": float})
    for again_demand, again_sites in ((nullable_demand, nullable_sites), (object_none, float_points)):
        with warnings.catch_warnings():
            warnings.simplefilter("error", UserWarning)
            again = gis.nearest_site(again_demand, again_sites, "w", by="zone", planar=True, errors="skip")
        assert again.demand["site"].tolist() == plan.demand["site"].tolist()

    # One value changed, in each dtype: the column is named.
    for column, frame, value in (("site", nullable_demand, "B"), ("distance_u", nullable_demand, 7.5)):
        changed = frame.copy()
        changed.loc[0, column] = value
        with pytest.warns(UserWarning) as caught:
            gis.nearest_site(changed, nullable_sites, "w", by="zone", planar=True, errors="skip")
        said = [str(w.message) for w in caught]
        assert f"demand: the result replaces your column {column!r}, whose values differ; rename it to keep both" \
            in said, said
    for column in ("load", "points"):
        changed = nullable_sites.copy()
        changed.loc["B", column] = 99
        with pytest.warns(UserWarning) as caught:
            gis.nearest_site(nullable_demand, changed, "w", by="zone", planar=True, errors="skip")
        said = [str(w.message) for w in caught]
        assert f"sites: the result replaces your column {column!r}, whose values differ; rename it to keep both" \
            in said, said
    # A missing value where the result has one (and the reverse) differs too.
    gone = nullable_demand.copy()
    gone.loc[1, "distance_u"] = pd.NA
    with pytest.warns(UserWarning, match="replaces your column 'distance_u', whose values differ"):
        gis.nearest_site(gone, nullable_sites, "w", by="zone", planar=True, errors="skip")


def _geometry_refused_before(monkeypatch, kernel: str, call) -> str:
    """The refusal of ``call`` with ``placewise.<kernel>`` made to fail if it is ever run."""
    def solver_run(*args, **kwargs):
        raise AssertionError(f"{kernel} ran before the refusal")

    monkeypatch.setattr(pw, kernel, solver_run)
    with pytest.raises(pw.InputError) as caught:
        call()
    monkeypatch.undo()
    return str(caught.value)


def _planar_points(x, y, **columns):
    return gpd.GeoDataFrame(columns, geometry=gpd.points_from_xy(x, y))


_HOMES = _planar_points([0, 1, 2, 9, 10], [0, 0, 1, 0, 1], w=[1.0, 2, 1, 1, 3])
_DEPOTS = _planar_points([0, 10, 5], [0, 0, 1], seats=[6.0, 6.0, 6.0]).set_axis(["n", "s", "m"])
_BOX = shapely.box(-1, -1, 11, 2)
# Function, the input it copies (0: the demand, 1: the sites) and the layer holding the
# copy, its name in messages, the kernel that solves it (placewise.<name>, made to fail),
# and how to call it on (demand, sites).
_SOLVED_THEN_COPIED = [
    ("nearest_site", 0, "demand", "demand", "nearest_site", lambda d, s: gis.nearest_site(d, s, "w", planar=True)),
    ("nearest_site", 1, "sites", "sites", "nearest_site", lambda d, s: gis.nearest_site(d, s, "w", planar=True)),
    ("p_median", 0, "demand", "frame", "p_median", lambda d, s: gis.p_median(d, 2, "w", planar=True)),
    ("p_center", 0, "demand", "frame", "p_center", lambda d, s: gis.p_center(d, 2, "w", planar=True)),
    ("p_median-candidates", 0, "demand", "frame", "p_median",
     lambda d, s: gis.p_median(d, 2, "w", candidates=s, planar=True)),
    ("p_median-capacities", 0, "demand", "frame", "p_median",
     lambda d, s: gis.p_median(d, 2, "w", capacities="seats", candidates=s, planar=True)),
    ("cover_all", 0, "demand", "frame", "cover_all", lambda d, s: gis.cover_all(d, 3, "w", candidates=s, planar=True)),
    ("cover_most", 0, "demand", "frame", "cover_most", lambda d, s: gis.cover_most(d, 1, 3, "w", planar=True)),
    ("evaluate_sites", 0, "demand", "frame", "evaluate_sites",
     lambda d, s: gis.evaluate_sites(d, s, "w", planar=True)),
    ("evaluate_sites-radius", 0, "demand", "frame", "evaluate_sites",
     lambda d, s: gis.evaluate_sites(d, s, "w", radius=3, planar=True)),
    ("capacity_allocation", 0, "demand", "demand", "capacity_allocation",
     lambda d, s: gis.capacity_allocation(d, s, "seats", "w", planar=True)),
    ("capacity_allocation", 1, "sites", "sites", "capacity_allocation",
     lambda d, s: gis.capacity_allocation(d, s, "seats", "w", planar=True)),
    ("capacity_cells", 0, "demand", "demand", "capacity_cells",
     lambda d, s: gis.capacity_cells(d, s, "seats", "w", region=_BOX, planar=True)),
    ("capacity_cells", 1, "sites", "sites", "capacity_cells",
     lambda d, s: gis.capacity_cells(d, s, "seats", "w", region=_BOX, planar=True)),
]


@pytest.mark.parametrize(("what", "which", "layer", "name", "kernel", "run"), _SOLVED_THEN_COPIED,
                         ids=[f"{case[0]}-{case[3]}" for case in _SOLVED_THEN_COPIED])
def test_a_geometry_column_named_like_a_result_column_is_refused_before_the_solve(monkeypatch, what, which, layer,
                                                                                 name, kernel, run):
    # A geometry column called like a column the result writes onto a copy of the frame
    # cannot be replaced: it was refused, but only after the solve (which may take long).
    # The refusal now comes first: the solver is made to fail if it runs. The columns the
    # message names are those the unhindered run writes (its output's columns beyond the
    # input's), so the early refusal cannot drift from the result.
    frames = [_HOMES, _DEPOTS]
    copied = getattr(run(*frames), layer)
    written = [c for c in copied.columns if c not in frames[which].columns]
    assert written
    for column in written:
        odd = list(frames)
        odd[which] = frames[which].rename_geometry(column)
        said = _geometry_refused_before(monkeypatch, kernel, lambda: run(*odd))
        assert said == (f"{name}: the geometry column is named {column!r}, the name of a column of the result "
                        f"({', '.join(written)}); rename it")


def test_network_catchments_refuse_a_geometry_named_like_their_columns_before_the_search(monkeypatch):
    # As the plans above: the refusal came after the network search, and now comes first
    # (the search is made to fail if it runs). Its columns: those the unhindered run writes.
    from placewise.gis.travel import network_catchments, travel_graph
    from placewise.travel import TravelGraph

    streets = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (300, 0)])], crs="EPSG:32630")
    homes = gpd.GeoDataFrame({"w": [1.0, 2.0]}, geometry=gpd.points_from_xy([10, 250], [5, -5]), crs="EPSG:32630")
    depots = gpd.GeoDataFrame(geometry=gpd.points_from_xy([0, 300], [0, 0]), crs="EPSG:32630")
    graph = travel_graph(streets)
    written = [c for c in network_catchments(graph, homes, depots).columns if c not in homes.columns]

    def searched(*args, **kwargs):
        raise AssertionError("the search ran before the refusal")

    monkeypatch.setattr(TravelGraph, "nearest_site", searched)
    for column in written:
        with pytest.raises(pw.InputError) as caught:
            network_catchments(graph, homes.rename_geometry(column), depots)
        assert str(caught.value) == (f"points: the geometry column is named {column!r}, the name of a column of the "
                                     f"result ({', '.join(written)}); rename it")


def test_catchment_cells_name_the_columns_of_the_callers_they_replace():
    # A sites frame with its own "area_m2" and "load" columns lost them to the cells' without
    # a word (and the nearest-site plan used for the loads spoke of a demand layer the cells
    # never return). Reference: shapely areas of the cells; numpy.bincount over scipy
    # cKDTree's nearest sites for the loads.
    rng = np.random.default_rng(11)
    at = gpd.points_from_xy([500_100, 500_500, 500_900], [5_000_100, 5_000_800, 5_000_300])
    sites = gpd.GeoDataFrame({"area_m2": [1, 2, 3], "load": ["x", "y", "z"]}, geometry=at, crs="EPSG:32632")
    xy = np.column_stack([rng.uniform(5e5, 501e3, 50), rng.uniform(5e6, 5.001e6, 50)])
    demand = gpd.GeoDataFrame({"site": np.arange(50)}, geometry=gpd.points_from_xy(*xy.T), crs="EPSG:32632")
    region = gpd.GeoSeries([shapely.box(5e5, 5e6, 501e3, 5.001e6)], crs="EPSG:32632")
    with pytest.warns(UserWarning) as caught:
        cells = gis.voronoi_cells(sites, region, demand=demand)
    said = sorted(str(w.message) for w in caught)
    assert said == [f"sites: the result replaces your column '{c}', whose values differ; rename it to "
                    "keep both" for c in ("area_m2", "load")]
    np.testing.assert_allclose(cells["area_m2"], shapely.area(cells.geometry.values), rtol=1e-9)
    nearest = cKDTree(shapely.get_coordinates(sites.geometry.values)).query(xy)[1]
    assert cells["load"].tolist() == np.bincount(nearest, minlength=3).astype(float).tolist()
