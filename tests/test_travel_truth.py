"""Travel results checked against references built here from the input alone, on awkward
networks: an independent graph cut at shapely's attachment of every point and searched with
scipy.sparse.csgraph.dijkstra, brute force over every choice of sites, shapely and
pyproj.Geod lengths, and the axis unit pyproj names for each CRS."""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest

import placewise as pw

shapely = pytest.importorskip("shapely")


# ------------------------------------------------------------------ costs of zero


def test_negative_zero_costs_are_zero_and_the_k_nearest_are_the_cheapest():
    # A street of cost -0.0 (equal to 0 by IEEE 754): the destination on it costs 0 and is
    # the cheapest (brute force over the dense row). Its sign bit made its heap key the
    # largest of all, so k=1 gave the destination on the next street (cost 0.5).
    g = pw.TravelGraph.from_lines([[(0, 0), (10, 0)], [(10, 0), (20, 0)]], cost=[-0.0, 1.0])
    dense = g.costs([[5, 0]], [[15, 0], [2, 0]])
    assert np.array_equal(dense, [[0.5, 0.0]]) and not np.signbit(dense).any()
    near = g.costs([[5, 0]], [[15, 0], [2, 0]], k=1)
    assert list(near.indices) == [int(np.argmin(dense[0]))] and list(near.data) == [0.0]
    # Many sites: the one on the zero-cost street labels it (multi-source search).
    c = g.nearest_site([[3, 0], [18, 0]], [[15, 0], [6, 0]])
    assert list(c.site) == [1, 0] and c.cost[0] == 0.0
    assert c.cost[1] == pytest.approx(0.3, rel=1e-12)
    edges = pw.TravelGraph.from_edges([0, 1], [1, 2], [-0.0, 2.0], reverse_cost=[1.0, -0.0])
    assert not np.signbit(edges.edges_frame().filter(like="cost").to_numpy()).any()


# ------------------------------------------------------------------ geographic coordinates


def test_geodesic_pieces_have_the_geodesic_length_of_their_costs():
    # Reference: pyproj.Geod(ellps="WGS84").line_length of each piece's shape (Karney 2013
    # through PROJ). A street at 60 degrees north, 0.02 degrees east then 0.01 north: both legs
    # are about 1.1 km, so shares of length in degrees (2:1) are not shares in metres (1:1).
    pyproj = pytest.importorskip("pyproj")
    geod = pyproj.Geod(ellps="WGS84")
    line = np.array([[10.0, 60.0], [10.02, 60.0], [10.02, 60.01]])
    g = pw.TravelGraph.from_lines([line], geodesic=True)
    total = geod.line_length(line[:, 0], line[:, 1])
    assert g.edges_frame()["cost_forward_m"][0] == pytest.approx(total, rel=1e-12)

    def lengths(pieces):
        return np.array([geod.line_length(*pieces.coords[a:b].T) for a, b in zip(pieces.offsets, pieces.offsets[1:])])

    reach = g.reach([line[0]], 1500.0)
    np.testing.assert_allclose(lengths(reach), [1500.0], rtol=1e-9)
    np.testing.assert_allclose(lengths(reach), (reach.end - reach.start) * total, rtol=1e-9)
    split = g.catchment_edges([line[0], line[-1]])
    np.testing.assert_allclose(lengths(split), [total / 2, total / 2], rtol=1e-9)
    # The meeting point: as far from either end by pyproj.Geod.inv (shares in degrees put it
    # 0.005 degrees east of that, 278 m nearer the east end).
    meet = split.coords[split.offsets[1]]
    assert geod.inv(*line[0], *meet)[2] == pytest.approx(total / 2, rel=1e-9)
    # A site part-way: its piece starts at its attachment point.
    site = np.array([[10.01, 60.0001]])
    a = g.snap(site)
    around = g.reach(site, 300.0)
    # (rtol 1e-7: three points of one straight lon/lat segment are not on one geodesic, so
    # the geodesic lengths of its parts add up only to about 1e-9 of their length.)
    np.testing.assert_allclose(lengths(around), [300.0, 300.0], rtol=1e-7)
    assert np.allclose(around.coords[around.offsets[1]], a.on_edge[0], rtol=0, atol=1e-12)


# ------------------------------------------------------------------ units of length


_KM = "+proj=utm +zone=31 +datum=WGS84 +units=km +no_defs"


@pytest.mark.parametrize(
    "crs, pyproj_name, short",
    [("EPSG:32631", "metre", "m"), (_KM, "kilometre", "km"), ("EPSG:2868", "foot", "ft"),
     ("EPSG:2263", "US survey foot", "usft")],
)
def test_travel_and_gis_name_a_crs_length_unit_alike(crs, pyproj_name, short):
    # Reference: the axis unit pyproj gives the CRS (checked here, not recalled); the travel
    # graph (GeoDataFrame or GeoSeries of lines) and the gis functions name it the same way.
    gpd = pytest.importorskip("geopandas")
    pyproj = pytest.importorskip("pyproj")
    from placewise.gis._frames import unit_of

    assert pyproj.CRS(crs).axis_info[0].unit_name == pyproj_name
    frame = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (3, 4)])], crs=crs)
    by_frame = pw.TravelGraph.from_lines(frame)
    by_series = pw.TravelGraph.from_lines(frame.geometry)
    assert unit_of(pyproj.CRS(crs)) == short
    assert (by_frame.unit, by_frame.length_unit, by_series.unit, by_series.length_unit) == (short,) * 4
    assert by_series.crs == pyproj.CRS(crs)
    assert f"cost_forward_{short}" in by_frame.edges_frame()


def test_lengths_in_a_kilometre_crs_are_kilometres():
    # Reference: shapely's lengths of the lines in the kilometre CRS, and the same lines in
    # the same projection in metres (pyproj through GeoPandas), divided by 1000.
    gpd = pytest.importorskip("geopandas")
    from placewise.gis import travel as gt

    rng = np.random.default_rng(4)
    xy = np.cumsum(rng.uniform(0.1, 0.5, (8, 2)), axis=0) + [500.0, 5000.0]
    lines = [shapely.LineString(xy[i:i + 3]) for i in range(0, 6, 2)]
    km = gpd.GeoDataFrame(geometry=lines, crs=_KM)
    metres = km.to_crs("EPSG:32631")
    g = pw.TravelGraph.from_lines(km)
    np.testing.assert_allclose(g.edges_frame()["cost_forward_km"], shapely.length(lines), rtol=1e-12)
    np.testing.assert_allclose(g.edges_frame()["cost_forward_km"], metres.length / 1000, rtol=1e-9)
    homes = gpd.GeoDataFrame(geometry=gpd.points_from_xy(xy[[1, 5], 0] + 0.01, xy[[1, 5], 1]), crs=_KM)
    out = gt.network_catchments(g, homes, km.iloc[:1].boundary.explode(index_parts=False).iloc[:1].to_frame("geometry"))
    assert {"cost_km", "gap_km"} <= set(out.columns)
    table = gt.travel_costs(g, homes, homes)
    g_m = pw.TravelGraph.from_lines(metres)
    np.testing.assert_allclose(table["cost_km"], gt.travel_costs(g_m, homes, homes)["cost_m"] / 1000, rtol=1e-6)


def test_travel_imports_and_answers_without_geopandas_or_pyproj():
    code = (
        "import sys\n"
        "sys.modules.update({'geopandas': None, 'pyproj': None})\n"
        "import placewise.travel as t\n"
        "g = t.TravelGraph.from_lines([[(0, 0), (3, 4)]])\n"
        "assert (g.unit, g.length_unit) == ('u', 'u') and g.costs([[0, 0]], [[3, 4]])[0, 0] == 5.0\n"
    )
    subprocess.run([sys.executable, "-c", code], check=True)
