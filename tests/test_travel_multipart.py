"""Street layers stored as MultiLineStrings: every part a line of its own, a row's cost shared
among its parts by true length, and every output naming the caller's row.

References: the same network built from ``GeoDataFrame.explode(index_parts=False)``;
shapely for planar lengths and ``shapely.line_merge`` for parts touching end to end;
pyproj.Geod (WGS84) for geodesic lengths; scipy.sparse.csgraph.dijkstra on a graph built
here from the parts (nodes at equal places)."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import placewise as pw

shapely = pytest.importorskip("shapely")
gpd = pytest.importorskip("geopandas")
pyproj = pytest.importorskip("pyproj")
csgraph = pytest.importorskip("scipy.sparse.csgraph")

GEOD = pyproj.Geod(ellps="WGS84")
PROJECTED, LONLAT = "EPSG:32631", "EPSG:4326"


def _length(part, geodesic):
    """A part's true length: pyproj.Geod (WGS84) in lon/lat, else shapely's planar length."""
    if geodesic:
        xy = shapely.get_coordinates(part)
        return GEOD.line_length(xy[:, 0], xy[:, 1])
    return float(shapely.length(part))


def _shares(frame, cost, geodesic):
    """Each part's share of its row's cost (rows in order, parts as explode gives them), by
    the references' lengths; equal shares where the row's parts all have length zero."""
    out = []
    for row, geom in enumerate(frame.geometry):
        parts = list(getattr(geom, "geoms", [geom]))
        lengths = np.array([_length(p, geodesic) for p in parts])
        total = lengths.sum()
        out.extend(cost[row] * (lengths / total if total > 0 else np.full(len(parts), 1 / len(parts))))
    return np.array(out)


def _place(p, geodesic):
    """Where a line end lies (180 and -180 one meridian in lon/lat), for the reference's nodes."""
    x, y = float(p[0]), float(p[1])
    if geodesic:
        x = ((x + 180.0) % 360.0) - 180.0
    return (x, y)


def _dijkstra(parts, costs, geodesic):
    """Node-to-node travel costs on a graph built here: nodes at the parts' ends (equal
    places), each part an edge of its cost both ways; scipy.sparse.csgraph.dijkstra.
    Returns the costs and the node of every place."""
    node_of: dict[tuple[float, float], int] = {}
    ends = []
    for part in parts:
        xy = shapely.get_coordinates(part)
        ends.append([node_of.setdefault(_place(xy[i], geodesic), len(node_of)) for i in (0, -1)])
    n = len(node_of)
    dense = np.full((n, n), np.inf)
    for (a, b), c in zip(ends, costs):
        dense[a, b] = dense[b, a] = min(dense[a, b], c)
    np.fill_diagonal(dense, np.inf)
    # Zero costs are stored explicitly (csgraph_from_dense drops only the null value).
    graph = csgraph.csgraph_from_dense(dense, null_value=np.inf)
    return csgraph.dijkstra(graph, directed=False), node_of


def _quiet(call, *args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)  # separate components, with tolerance 0
        return call(*args, **kwargs)


def _check_against_references(frame, cost, geodesic):
    """The MultiLineString frame against its exploded twin (costs shared by the references'
    lengths), the sum of each row's shares, the edges' rows, and scipy's dijkstra."""
    multi = _quiet(pw.TravelGraph.from_lines, frame, cost="minutes")
    exploded = frame.explode(index_parts=False)
    rows = np.repeat(np.arange(len(frame)), [len(getattr(g, "geoms", [g])) for g in frame.geometry])
    shares = _shares(frame, cost, geodesic)
    twin = exploded.assign(minutes=shares)
    single = _quiet(pw.TravelGraph.from_lines, twin, cost="minutes")
    edges = multi.edges_frame()
    # Every edge names its row (not its part); the parts' costs add up to the row's.
    # (The column is there when some row has several parts; else edge e is row e.)
    np.testing.assert_array_equal(edges["line"] if "line" in edges else np.arange(len(edges)), rows)
    np.testing.assert_allclose(edges["cost_forward_u"], shares, rtol=1e-12, atol=1e-300)
    totals = np.bincount(rows, weights=edges["cost_forward_u"].to_numpy(), minlength=len(frame))
    np.testing.assert_allclose(totals, cost, rtol=1e-14, atol=1e-300)  # (subnormal costs lose digits)
    # Travel costs between all nodes: the exploded frame's graph (same part order, so the
    # same nodes) to 1e-12, and scipy's dijkstra on the parts.
    nodes = np.arange(multi.nodes)
    got = multi.costs(nodes, nodes)
    np.testing.assert_allclose(got, single.costs(nodes, nodes), rtol=1e-12, atol=0)
    reference, node_of = _dijkstra(list(exploded.geometry), shares, geodesic)
    xy = multi._info["node_xy"]
    at = [node_of[_place(p, geodesic)] for p in xy]
    expected = reference[np.ix_(at, at)]
    expected[np.isinf(expected)] = np.nan
    np.testing.assert_allclose(got, expected, rtol=1e-12, atol=1e-9)
    return multi


# ------------------------------------------------------------------ a projected layer


def test_multipart_rows_answer_as_their_exploded_parts_with_lengths_and_a_merged_street():
    # Row "high st" is three blocks stored as one MultiLineString touching end to end
    # (shapely.line_merge makes them one 30 m street); row "ring" is two parts apart.
    high = shapely.MultiLineString([[(0, 0), (10, 0)], [(10, 0), (20, 0), (20, 5)], [(20, 5), (20, 10)]])
    ring = shapely.MultiLineString([[(0, 0), (0, 10)], [(20, 10), (10, 10), (0, 10)]])
    spur = shapely.LineString([(10, 0), (10, 10)])
    frame = gpd.GeoDataFrame(geometry=[high, spur, ring], index=["high st", "spur", "ring"], crs=PROJECTED)
    g = pw.TravelGraph.from_lines(frame)
    parts = frame.explode(index_parts=False)
    edges = g.edges_frame()
    # Default costs: each part's shapely length; the edges name their rows by position.
    np.testing.assert_allclose(edges["cost_forward_m"], shapely.length(parts.geometry), rtol=1e-12)
    np.testing.assert_array_equal(edges["line"], [0, 0, 0, 1, 2, 2])
    merged = shapely.line_merge(high)
    assert merged.geom_type == "LineString"
    assert g.costs([[0, 0]], [[20, 10]])[0, 0] == pytest.approx(min(merged.length, 20.0 + 10.0), rel=1e-12)
    points = np.array([[3.0, 1.0], [20.0, 7.0], [12.0, 9.0], [0.0, 4.0], [10.0, 5.0]])
    np.testing.assert_allclose(g.costs(points, points), pw.TravelGraph.from_lines(parts).costs(points, points),
                               rtol=1e-12, atol=0)


@pytest.mark.parametrize("geodesic", [False, True])
def test_a_cost_column_is_shared_by_true_length_and_adds_up(geodesic):
    # At 60 degrees north a degree of longitude is half a degree of latitude on the ground:
    # pyproj.Geod's lengths share the row's minutes, not lengths in degrees.
    base = np.array([5.0, 60.0]) if geodesic else np.array([500_000.0, 6_600_000.0])
    step = 0.01 if geodesic else 1000.0
    a = base + step * np.array([[0, 0], [3, 0]])
    b = base + step * np.array([[3, 0], [3, 1]])
    c = base + step * np.array([[0, 0], [0, 2], [1, 3]])
    multi = shapely.MultiLineString([a, b])
    frame = gpd.GeoDataFrame({"minutes": [7.0, 2.5]}, geometry=[multi, shapely.LineString(c)],
                             crs=LONLAT if geodesic else PROJECTED)
    g = _check_against_references(frame, np.array([7.0, 2.5]), geodesic)
    if geodesic:
        # Not shared in degrees (3 : 1): the part along the parallel is shorter on the ground.
        assert abs(g.edges_frame()["cost_forward_u"][0] - 7.0 * 3 / 4) > 0.1


def test_a_multipart_row_across_the_antimeridian_joins_at_180_and_shares_by_geodesic_length():
    # A ferry stored as two parts split at the antimeridian (RFC 7946 asks GeoJSON to do so),
    # ending at 180 and starting at -180, and a road on each side.
    ferry = shapely.MultiLineString([[(179.6, -16.8), (179.8, -16.75), (180.0, -16.7)],
                                     [(-180.0, -16.7), (-179.7, -16.9)]])
    west = shapely.LineString([(179.5, -16.9), (179.6, -16.8)])
    east = shapely.LineString([(-179.7, -16.9), (-179.6, -17.0)])
    frame = gpd.GeoDataFrame({"minutes": [90.0, 4.0, 5.0]}, geometry=[ferry, west, east], crs=LONLAT)
    g = _check_against_references(frame, np.array([90.0, 4.0, 5.0]), True)
    assert g.components == 1
    # Default costs: metres end to end, the sum of pyproj.Geod's lengths of every part.
    lengths = sum(_length(p, True) for p in [west, *ferry.geoms, east])
    metres = pw.TravelGraph.from_lines(frame)
    assert metres.costs([[179.5, -16.9]], [[-179.6, -17.0]])[0, 0] == pytest.approx(lengths, rel=1e-9)


# ------------------------------------------------------------------ hostile rows

_GRID = st.tuples(st.integers(0, 3), st.integers(0, 3))


@st.composite
def _rows(draw):
    """Rows of one to four parts on a small grid (so ends coincide): parts of one repeated
    vertex (length zero), a part repeated, parts touching end to end."""
    rows = []
    for _ in range(draw(st.integers(1, 4))):
        parts = []
        for _ in range(draw(st.integers(1, 4))):
            kind = draw(st.sampled_from(["free", "point", "repeat", "touch"]))
            if kind == "point":
                p = draw(_GRID)
                parts.append([p, p])
            elif kind == "repeat" and parts:
                parts.append(list(parts[-1]))
            elif kind == "touch" and parts:
                parts.append([parts[-1][-1], *draw(st.lists(_GRID, min_size=1, max_size=3))])
            else:
                parts.append(draw(st.lists(_GRID, min_size=2, max_size=4)))
        rows.append(parts)
    costs = draw(st.lists(st.floats(0.0, 100.0), min_size=len(rows), max_size=len(rows)))
    return rows, np.array(costs)


@settings(max_examples=60, deadline=None)
@given(drawn=_rows(), lonlat=st.booleans())
def test_hostile_multipart_rows_keep_their_cost_and_travel_as_exploded(drawn, lonlat):
    rows, cost = drawn
    if lonlat:
        # Near 60 degrees north, across the antimeridian (180 and -180 are one meridian).
        def at(p):
            return ((179.98, 179.99, 180.0, -179.99)[p[0]], (60.0, 60.01, 60.02, 60.03)[p[1]])
    else:
        def at(p):
            return (500_000.0 + 100.0 * p[0], 6_600_000.0 + 100.0 * p[1])
    geoms = [shapely.MultiLineString([[at(p) for p in part] for part in parts]) if len(parts) > 1
             else shapely.LineString([at(p) for p in parts[0]]) for parts in rows]
    frame = gpd.GeoDataFrame({"minutes": cost}, geometry=geoms, crs=LONLAT if lonlat else PROJECTED)
    _check_against_references(frame, cost, lonlat)


# ------------------------------------------------------------------ rows named


def test_errors_and_edges_name_the_callers_row_not_the_part():
    good = shapely.LineString([(0, 0), (1, 0)])
    with_empty_part = shapely.from_wkt("MULTILINESTRING ((1 0, 2 0), EMPTY)")
    frame = gpd.GeoDataFrame(geometry=[good, with_empty_part], index=["a", "b"], crs=PROJECTED)
    # Empty parts and empty geometries are refused by row, as an empty LineString is.
    with pytest.raises(pw.InputError, match=r"lines\['b'\]: part 1: a line needs at least 2 points; got 0") as e:
        pw.TravelGraph.from_lines(frame)
    assert (e.value.argument, e.value.row) == ("lines", "b")
    for nothing in (shapely.from_wkt("MULTILINESTRING EMPTY"), shapely.LineString()):
        empty = gpd.GeoDataFrame(geometry=[good, nothing], index=["a", "b"], crs=PROJECTED)
        with pytest.raises(pw.InputError, match=r"lines\['b'\]: a line needs at least 2 points; got 0"):
            pw.TravelGraph.from_lines(empty)
    # A bad cost or direction of a multi-part row is named by the row, with its own value.
    two = shapely.MultiLineString([[(1, 0), (2, 0)], [(2, 0), (2, 1)]])
    frame = gpd.GeoDataFrame({"minutes": [1.0, -3.0], "way": ["both", "sideways"]}, geometry=[good, two],
                             index=["a", "b"], crs=PROJECTED)
    with pytest.raises(pw.InputError, match=r"cost\['b'\]: cost -3(\.0)? is not allowed"):
        pw.TravelGraph.from_lines(frame, cost="minutes")
    with pytest.raises(pw.InputError, match=r"one_way\['b'\]: unknown direction 'sideways'"):
        pw.TravelGraph.from_lines(frame, one_way="way")
    # A part over the pole in lon/lat is named by row and part.
    polar = shapely.MultiLineString([[(0, 80), (1, 80)], [(0, 89.5), (180, 89.5)]])
    lonlat = gpd.GeoDataFrame(geometry=[good, polar], index=["a", "b"], crs=LONLAT)
    with pytest.raises(pw.InputError, match=r"lines\['b'\]: part 1: segment 0"):
        pw.TravelGraph.from_lines(lonlat)
    # Split where they cross, every piece still names its row: the vertical row "x" crosses
    # both parts of the multi-part row 0 (shapely: the crossings at (0.5, 0) and (1.5, 0)).
    multi = shapely.MultiLineString([[(0, 0), (1, 0)], [(1, 0), (2, 0)]])
    cross = shapely.MultiLineString([[(0.5, -1), (0.5, 1)], [(1.5, -1), (1.5, 1)]])
    assert shapely.intersection(multi, cross).equals(shapely.MultiPoint([(0.5, 0), (1.5, 0)]))
    split = pw.TravelGraph.from_lines([multi, cross], split_crossings=True)
    np.testing.assert_array_equal(split.edges_frame()["line"], [0, 0, 0, 0, 1, 1, 1, 1])
    np.testing.assert_allclose(split.edges_frame()["cost_forward_u"], [0.5] * 4 + [1.0] * 4, rtol=1e-15)



def test_edges_of_a_frame_carry_the_index_label_of_their_row():
    # Labelled rows (road ids), one of them in two parts: each edge's ``line_label`` is its
    # row's label. Reference: the caller's own cost column — the edges under each label must
    # add up to that row's minutes, which differ row by row, so a misaligned label cannot.
    frame = gpd.GeoDataFrame(
        {"minutes": [4.0, 9.0, 2.0]},
        geometry=[shapely.LineString([(0, 0), (1, 0)]),
                  shapely.MultiLineString([[(1, 0), (2, 0)], [(2, 0), (2, 2)]]),
                  shapely.LineString([(2, 2), (3, 2)])],
        index=["r-17", "r-4", "r-9"], crs=PROJECTED)
    edges = pw.TravelGraph.from_lines(frame, cost="minutes").edges_frame()
    assert list(edges["line_label"]) == [frame.index[k] for k in edges["line"]]
    totals = edges.groupby("line_label")["cost_forward_u"].sum()
    for label, minutes in frame["minutes"].items():
        assert totals[label] == pytest.approx(minutes, rel=1e-14)
    # Lines given as plain geometries have no labels: positions only.
    assert "line_label" not in pw.TravelGraph.from_lines(list(frame.geometry)).edges_frame()


# ------------------------------------------------------------------ split_crossings in lon/lat


@pytest.mark.parametrize("crossing", [
    # A meridian and a slanting line through (1, 60): equal pieces in degrees, not on the ground.
    ([(1.0, 59.9), (1.0, 60.1)], [(0.5, 59.9), (1.5, 60.1)]),
    # Across the antimeridian: a parallel and a slanting line meeting at 180 degrees.
    ([(179.5, 60.0), (-179.5, 60.0)], [(179.8, 59.8), (-179.6, 60.4)]),
])
def test_split_crossings_share_a_lonlat_cost_by_geodesic_length(crossing):
    first, second = crossing
    g = pw.TravelGraph.from_lines([first, second], cost=[10.0, 20.0], geodesic=True, split_crossings=True)
    edges = g.edges_frame()
    assert list(edges["line"]) == [0, 0, 1, 1]

    def unwrapped(line):
        xy = np.array(line)
        xy[:, 0] = np.where(xy[:, 0] < 0, xy[:, 0] + 360.0, xy[:, 0])
        return xy

    # Reference: shapely's crossing of the lines drawn in one turn of longitude, and
    # pyproj.Geod's lengths of the pieces either side of it.
    a, b = unwrapped(first), unwrapped(second)
    x = shapely.intersection(shapely.LineString(a), shapely.LineString(b))
    assert x.geom_type == "Point"
    for row, (line, cost) in enumerate([(a, 10.0), (b, 20.0)]):
        pieces = [np.vstack([line[0], [x.x, x.y]]), np.vstack([[x.x, x.y], line[1]])]
        lengths = np.array([GEOD.line_length(p[:, 0], p[:, 1]) for p in pieces])
        np.testing.assert_allclose(edges["cost_forward_u"][edges["line"] == row], cost * lengths / lengths.sum(),
                                   rtol=1e-9)


# ------------------------------------------------------------------ the network's fault


def test_a_network_circling_the_pole_is_named_as_the_lines_fault():
    # A ring of 1-degree segments along the parallel 89.9 goes all the way round: attaching
    # points is refused, naming the lines (the network), not the points.
    ring = [[(x, 89.9), (x + 1.0, 89.9)] for x in np.arange(-180.0, 180.0, 1.0)]
    g = pw.TravelGraph.from_lines(ring, geodesic=True)
    for call in (lambda: g.snap([[0.3, 89.9]]), lambda: g.costs([[0.3, 89.9]], [0, 1])):
        with pytest.raises(pw.InputError, match=r"^lines: the network the lines make circles the globe") as e:
            call()
        assert e.value.argument == "lines"
