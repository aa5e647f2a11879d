"""Street-network travel on longitude/latitude lines across the antimeridian and near the
poles, checked against references built here from the input alone: pyproj.Geod (WGS84
geodesics, Karney 2013 through PROJ) for lengths and gaps, brute force over places along
every segment refined by scipy.optimize.minimize_scalar for attachments, and
scipy.sparse.csgraph.dijkstra on an independent graph for travel costs.

A segment runs the shorter way round in longitude, as its geodesic length (pyproj.Geod)
measures it: a ferry from 179.9 to -179.9 crosses the antimeridian. Invented networks: an
island group straddling 180 degrees and a research station by the north pole."""

from __future__ import annotations

import warnings

import numpy as np
import pytest

import placewise as pw

pyproj = pytest.importorskip("pyproj")
csgraph = pytest.importorskip("scipy.sparse.csgraph")
optimize = pytest.importorskip("scipy.optimize")

GEOD = pyproj.Geod(ellps="WGS84")


# ------------------------------------------------------------------ the reference


def _drawn(a, b, t):
    """Places at shares ``t`` of the segment ``a b`` drawn straight in longitude/latitude the
    shorter way round (``b``'s longitude moved by whole turns to within 180 degrees of
    ``a``'s), longitudes in [-180, 180)."""
    a, b = np.asarray(a, float), np.asarray(b, float)
    b = np.array([a[0] + (b[0] - a[0] + 180.0) % 360.0 - 180.0, b[1]])
    p = a + np.multiply.outer(np.atleast_1d(t), b - a)
    p[:, 0] = (p[:, 0] + 180.0) % 360.0 - 180.0
    return p


def _inv(p, q):
    q = np.atleast_2d(q)
    return GEOD.inv(np.full(len(q), p[0]), np.full(len(q), p[1]), q[:, 0], q[:, 1])[2]


def _nearest(line, p):
    """Brute force: pyproj.Geod.inv from ``p`` to 2001 places along every segment of
    ``line``, the best refined between its neighbours by scipy.optimize.minimize_scalar.
    Returns the gap, the geodesic length along the line to the attachment, and the place."""
    line = np.asarray(line, float)
    t = np.linspace(0.0, 1.0, 2001)
    best = (np.inf, 0, 0.0)
    for k in range(len(line) - 1):
        d = _inv(p, _drawn(line[k], line[k + 1], t))
        i = int(np.argmin(d))
        if d[i] < best[0]:
            best = (float(d[i]), k, float(t[i]))
    _, k, t0 = best
    found = optimize.minimize_scalar(lambda u: _inv(p, _drawn(line[k], line[k + 1], u))[0],
                                     bounds=(max(0.0, t0 - 1e-3), min(1.0, t0 + 1e-3)), method="bounded",
                                     options={"xatol": 1e-13})
    u = min([0.0, 1.0, float(found.x)], key=lambda s: _inv(p, _drawn(line[k], line[k + 1], s))[0])
    place = _drawn(line[k], line[k + 1], u)[0]
    along = GEOD.line_length(*line[:k + 1].T) if k else 0.0
    along += float(_inv(line[k], place)[0])
    return float(_inv(p, place)[0]), along, place


def _place_key(p):
    """One name per place: longitude in [-180, 180), any longitude at a pole is the pole."""
    return (0.0, float(p[1])) if abs(p[1]) == 90 else (float((p[0] + 180.0) % 360.0 - 180.0), float(p[1]))


def _reference(lines, points):
    """Travel costs between ``points`` on an independent graph: nodes at line ends at one
    place (:func:`_place_key`); each point attached to the line of least brute-force gap
    (lowest row on ties) at its brute-force place; each line cut there, a piece costing its
    geodesic length (pyproj.Geod); all pairs by scipy.sparse.csgraph.dijkstra. Also returns
    each point's line, gap and length along, and the number of components
    (scipy.sparse.csgraph.connected_components)."""
    lengths = [GEOD.line_length(*np.asarray(x, float).T) for x in lines]
    node_of: dict[tuple[float, float], int] = {}
    ends = [[node_of.setdefault(_place_key(np.asarray(x, float)[i]), len(node_of)) for i in (0, -1)] for x in lines]
    attached = [[_nearest(x, p) for x in lines] for p in points]
    line = np.array([int(np.argmin([a[0] for a in row])) for row in attached])
    gap = np.array([attached[i][j][0] for i, j in enumerate(line)])
    along = np.array([attached[i][j][1] for i, j in enumerate(line)])
    first = len(node_of)
    n = first + len(points)
    dense = np.full((n, n), np.inf)
    for row, (tail, head) in enumerate(ends):
        on = sorted((along[i], first + i) for i in np.flatnonzero(line == row))
        stops = [(0.0, tail), *on, (lengths[row], head)]
        for (s0, u), (s1, v) in zip(stops, stops[1:]):
            dense[u, v] = dense[v, u] = min(dense[u, v], s1 - s0)
    np.fill_diagonal(dense, np.inf)
    graph = csgraph.csgraph_from_dense(dense, null_value=np.inf)
    between = csgraph.dijkstra(graph, directed=False, indices=np.arange(first, n))
    links = np.zeros((first, first))
    for tail, head in ends:
        links[tail, head] = links[head, tail] = 1.0
    components = csgraph.connected_components(links, directed=False)[0]
    return between[:, first:], line, gap, along, components


# ------------------------------------------------------------------ an island group on 180 degrees


# Roads on two islands either side of the antimeridian, a ferry between them drawn as one
# segment from 179.9 to -179.9, and a second ferry drawn in two lines split at the
# antimeridian (ending at 180 and starting at -180, as RFC 7946 asks of GeoJSON).
ISLANDS = [
    [(179.9, -17.0), (-179.9, -17.05)],
    [(179.6, -16.9), (179.7, -16.92), (179.75, -16.95)],
    [(179.75, -16.95), (179.9, -17.0)],
    [(179.75, -16.95), (179.8, -16.75)],
    [(-179.9, -17.05), (-179.75, -17.1)],
    [(-179.75, -17.1), (-179.6, -17.0)],
    [(-179.75, -17.1), (-179.7, -17.3)],
    [(179.8, -16.75), (180.0, -16.7)],
    [(-180.0, -16.7), (-179.6, -17.0)],
]


def _island_points(seed, count):
    rng = np.random.default_rng(seed)
    lon = rng.uniform(179.55, 180.45, count)
    points = np.column_stack([np.where(lon > 180.0, lon - 360.0, lon), rng.uniform(-17.35, -16.65, count)])
    # On the antimeridian itself, given as 180 and as -180.
    return np.vstack([points, [[180.0, -17.02], [-180.0, -16.98]]])


def test_island_lines_across_the_antimeridian_have_their_geodesic_lengths_and_join():
    # Reference: pyproj.Geod.line_length of each line (the ferry is 21 km), the distinct
    # places of the line ends (brute force) and scipy's connected_components. Before, the two
    # halves of the split ferry, ending at 180 and starting at -180, stayed apart: 10 nodes
    # for 9 places, and the trip along that ferry went round by the other.
    g = pw.TravelGraph.from_lines(ISLANDS, geodesic=True)
    expected = [GEOD.line_length(*np.asarray(x, float).T) for x in ISLANDS]
    np.testing.assert_allclose(g.edges_frame()["cost_forward_m"], expected, rtol=1e-12)
    places = {_place_key(np.asarray(x, float)[i]) for x in ISLANDS for i in (0, -1)}
    *_, components = _reference(ISLANDS, np.empty((0, 2)))
    assert (g.nodes, g.components) == (len(places), components) == (9, 1)
    split_ferry = sum(GEOD.line_length(*np.asarray(ISLANDS[i], float).T) for i in (7, 8))
    assert g.costs([[179.8, -16.75]], [[-179.6, -17.0]])[0, 0] == pytest.approx(split_ferry, rel=1e-12)
    # Joining within a tolerance (metres) works across the antimeridian too, whatever the
    # turn the longitudes are given in (-180 written as 540, a hair short of it: 1e-7 degree
    # of longitude, 0.011 m by pyproj.Geod).
    moved = [x if i != 8 else [(540.0 - 1e-7, -16.7), (-179.6, -17.0)] for i, x in enumerate(ISLANDS)]
    hair = GEOD.inv(180.0 - 1e-7, -16.7, 180.0, -16.7)[2]
    assert pw.TravelGraph.from_lines(moved, geodesic=True, tolerance=2 * hair).nodes == len(places)
    assert pw.TravelGraph.from_lines(moved, geodesic=True, tolerance=hair / 2).nodes == len(places) + 1


@pytest.mark.parametrize("seed", range(2))
def test_island_points_attach_and_travel_as_brute_force_and_scipy_say(seed):
    # Reference: brute force over places along every segment (pyproj.Geod.inv, refined by
    # scipy.optimize.minimize_scalar) for each point's line, gap and length along it, and
    # scipy.sparse.csgraph.dijkstra on the lines cut there. Before, a point by the ferry took
    # the frame's longitudes literally: (180, -17.01) got a gap of 10,706 m to the ferry's end
    # (1,107 m to the ferry by pyproj), a point at 0 E, a world away, a gap of 0, and the
    # costs across the ferry were twice its length.
    points = _island_points(seed, 12)
    g = pw.TravelGraph.from_lines(ISLANDS, geodesic=True)
    expected, line, gap, along, _ = _reference(ISLANDS, points)
    a = g.snap(points)
    np.testing.assert_array_equal(a.edge, line)
    np.testing.assert_allclose(a.gap, gap, rtol=1e-7, atol=1e-4)
    # (atol 1 cm: the brute-force attachment minimises a distance that is flat at its
    # minimum, with pyproj's distances exact to about 1e-8 m, so its place along the line is
    # known to about sqrt(2 x gap x 1e-8 m), millimetres.)
    np.testing.assert_allclose(a.along, along, rtol=1e-7, atol=1e-2)
    # Attachment places are plain longitudes (in [-180, 180]), on the lines.
    assert (np.abs(a.on_edge[:, 0]) <= 180.0).all()
    np.testing.assert_allclose(GEOD.inv(*points.T, *a.on_edge.T)[2], gap, rtol=1e-7, atol=1e-4)
    ours = g.costs(points, points)
    assert np.isfinite(expected).all()
    np.testing.assert_allclose(ours, expected, rtol=1e-7, atol=2e-2)


def test_a_point_a_world_away_is_not_on_the_ferry():
    # Reference: pyproj.Geod.inv from 0 E to the ferry's ends (every place of the ferry lies
    # within 21 km of them): over 16,000 km. Before, the ferry drawn from 179.9 to -179.9 ran
    # through 0 E in the index's flat view, and the point got a gap of 0.
    g = pw.TravelGraph.from_lines([ISLANDS[0]], geodesic=True)
    a = g.snap([[0.0, -17.0]])
    gap, _, _ = _nearest(ISLANDS[0], (0.0, -17.0))
    assert a.gap[0] == pytest.approx(gap, rel=1e-9)
    assert a.gap[0] > 16e6


def test_reach_and_catchment_pieces_across_the_antimeridian_have_their_geodesic_lengths():
    # Reference: pyproj.Geod.line_length of each piece's shape and pyproj.Geod.inv to its ends.
    # Before, the reach of 5 km from the ferry's west end ran west along the parallel to
    # 95.4 E (8,908 km by pyproj) and the catchments of its two ends met at 0 E.
    ferry = np.asarray(ISLANDS[0], float)
    g = pw.TravelGraph.from_lines([ferry], geodesic=True)
    total = GEOD.line_length(*ferry.T)

    def lengths(pieces):
        return np.array([GEOD.line_length(*pieces.coords[a:b].T) for a, b in zip(pieces.offsets, pieces.offsets[1:])])

    reach = g.reach([ferry[0]], 5000.0)
    np.testing.assert_allclose(lengths(reach), [5000.0], rtol=1e-7)
    assert (np.abs(reach.coords[:, 0]) <= 180.0).all()
    back = g.reach([ferry[1]], 15000.0)
    np.testing.assert_allclose(lengths(back), [15000.0], rtol=1e-7)
    assert GEOD.inv(*ferry[1], *back.coords[-1])[2] == pytest.approx(15000.0, rel=1e-7) or \
        GEOD.inv(*ferry[1], *back.coords[0])[2] == pytest.approx(15000.0, rel=1e-7)
    split = g.catchment_edges([ferry[0], ferry[1]])
    np.testing.assert_allclose(lengths(split), [total / 2, total / 2], rtol=1e-7)
    meet = split.coords[split.offsets[1]]
    assert GEOD.inv(*ferry[0], *meet)[2] == pytest.approx(total / 2, rel=1e-7)
    assert GEOD.inv(*ferry[1], *meet)[2] == pytest.approx(total / 2, rel=1e-7)


def test_lines_split_where_they_cross_on_the_antimeridian_only():
    # Reference: pyproj.Geod.line_length of the pieces add up to each line's; the ferry
    # crosses the north-south road on the antimeridian (shapely, on the lines unwrapped to
    # 0..360 here) and not the road at 0 E. Before, the ferry was cut at 0 E into two pieces of
    # 16,243 km each.
    shapely = pytest.importorskip("shapely")
    lines = [[(179.9, -17.0), (-179.9, -17.0)], [(180.0, -17.1), (180.0, -16.9)], [(0.0, -17.5), (0.0, -16.5)]]
    unwrapped = [shapely.LineString([((x + 360.0) % 360.0, y) for x, y in line]) for line in lines]
    assert unwrapped[0].crosses(unwrapped[1]) and not unwrapped[0].intersects(unwrapped[2])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        g = pw.TravelGraph.from_lines(lines, geodesic=True, split_crossings=True)
    frame = g.edges_frame()
    assert list(frame["line"]) == [0, 0, 1, 1, 2]
    for row, line in enumerate(lines):
        pieces = frame["cost_forward_m"][frame["line"] == row].sum()
        # (rtol 1e-7: places of one straight lon/lat segment are not on one geodesic, so the
        # geodesic lengths of its pieces add up only to about 1e-8 of its length.)
        assert pieces == pytest.approx(GEOD.line_length(*np.asarray(line, float).T), rel=1e-7)
    # The ferry and the road meet: from the road's south end to the ferry's east end is half
    # the road and half the ferry (pyproj.Geod.inv), through the crossing.
    cost = g.costs([[180.0, -17.1]], [[-179.9, -17.0]])[0, 0]
    assert cost == pytest.approx(GEOD.inv(180.0, -17.1, 180.0, -17.0)[2] + GEOD.inv(180.0, -17.0, -179.9, -17.0)[2],
                                 rel=1e-9)


# ------------------------------------------------------------------ a research station by the north pole


# Streets along four meridians out from the pole, and short streets along the parallels at
# 89.8 and 89.7 between them near 0 E (each 0.5 degrees of longitude, about 100 m).
STATION = [
    [(0.0, 90.0), (0.0, 89.8)],
    [(0.0, 89.8), (0.0, 89.7)],
    [(90.0, 90.0), (90.0, 89.7)],
    [(180.0, 90.0), (180.0, 89.7)],
    [(-90.0, 90.0), (-90.0, 89.7)],
    *[[(x, 89.8), (x + 0.5, 89.8)] for x in np.arange(-2.0, 2.0, 0.5)],
    *[[(x, 89.7), (x + 0.5, 89.7)] for x in np.arange(-2.0, 2.0, 0.5)],
]


def test_station_lines_by_the_pole_join_there_and_points_attach_as_brute_force_says():
    # Reference: brute force attachment (pyproj.Geod.inv along every segment, refined by
    # scipy.optimize.minimize_scalar) and scipy.sparse.csgraph.dijkstra. The meridian streets
    # meet at the pole although their longitudes differ. Before, the index's flat view put
    # each point's attachment at its own latitude on the meridian: gaps up to 7 % too long
    # (8,192 m for 7,655 m) and the costs off with them.
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        g = pw.TravelGraph.from_lines(STATION, geodesic=True)
    rng = np.random.default_rng(3)
    points = np.vstack([np.column_stack([rng.uniform(-180, 180, 10), rng.uniform(89.8, 89.99, 10)]),
                        np.column_stack([rng.uniform(-2, 2, 6), rng.uniform(89.69, 89.81, 6)]),
                        [[45.0, 90.0]]])
    expected, line, gap, along, components = _reference(STATION, points)
    assert g.components == components
    a = g.snap(points)
    np.testing.assert_array_equal(a.edge, line)
    np.testing.assert_allclose(a.gap, gap, rtol=1e-7, atol=1e-4)
    np.testing.assert_allclose(a.along, along, rtol=1e-7, atol=1e-2)   # (1 cm: as for the islands)
    ours = g.costs(points, points)
    assert np.array_equal(np.isnan(ours), np.isinf(expected))
    ok = np.isfinite(expected)
    np.testing.assert_allclose(ours[ok], expected[ok], rtol=1e-7, atol=2e-2)
    # Reach and catchment pieces by the pole: each piece as long by pyproj.Geod.line_length
    # as its cost grows along it (costs are lengths here), and within the limit.
    for pieces in (g.reach(points[[2, 16]], 12000.0), g.catchment_edges(points[[2, 16]])):
        lengths = [GEOD.line_length(*pieces.coords[a:b].T) for a, b in zip(pieces.offsets, pieces.offsets[1:])]
        np.testing.assert_allclose(lengths, np.abs(pieces.cost_end - pieces.cost_start), rtol=1e-7, atol=1e-3)
    assert (g.reach(points[[2, 16]], 12000.0).cost_end <= 12000.0 * (1 + 1e-12)).all()


def test_segments_over_or_near_a_pole_are_refused_by_row():
    # Reference: pyproj.Geod.npts, the geodesic between (0, 89.9) and (180, 89.9) passes within
    # metres of the pole, while the segment drawn straight in longitude/latitude stays on the
    # parallel 89.9, 11 km from it (pyproj.Geod.inv). Before, the line's cost was the
    # geodesic's 22.3 km but its reach pieces and attachments lay on the parallel (a reach of
    # 5 km was 5,017 m long by pyproj).
    over = [(0.0, 89.9), (180.0, 89.9)]
    middle = GEOD.npts(*over[0], *over[1], 1)[0]
    assert middle[1] > 89.999 and GEOD.inv(90.0, 89.9, *middle)[2] > 11000
    refused = r"lines\[1\]: segment 0, from \(0, 89.9\) to \(180, 89.9\).*pole"
    with pytest.raises(pw.InputError, match=refused) as caught:
        pw.TravelGraph.from_lines([STATION[0], over], geodesic=True)
    assert caught.value.row == 1 and caught.value.argument == "lines"
    # Ends a half turn apart on the equator: no one geodesic (pyproj.Geod.inv gives the
    # meridian route over a pole, 20,004 km, not the 20,038 km of the equator).
    assert GEOD.inv(0.0, 0.0, 180.0, 0.0)[2] < 2 * np.pi * 6378137.0 / 2
    with pytest.raises(pw.InputError, match=r"lines\[0\].*antipodal"):
        pw.TravelGraph.from_lines([[(0.0, 0.0), (180.0, 0.0)]], geodesic=True)
    # A segment from the pole under another longitude than its other end's (pyproj.Geod.inv:
    # the geodesic reaches (180, 89.9) heading due north, along that end's meridian).
    assert GEOD.inv(0.0, 90.0, 180.0, 89.9)[1] == pytest.approx(0.0, abs=1e-9)
    with pytest.raises(pw.InputError, match=r"lines\[0\].*give the pole the longitude"):
        pw.TravelGraph.from_lines([[(0.0, 90.0), (180.0, 89.9)]], geodesic=True)
    # The same street split along the meridians through the pole is followed.
    g = pw.TravelGraph.from_lines([[(0.0, 89.9), (0.0, 90.0)], [(180.0, 90.0), (180.0, 89.9)]], geodesic=True)
    assert g.costs([[0.0, 89.9]], [[180.0, 89.9]])[0, 0] == pytest.approx(GEOD.line_length([0, 180], [89.9, 89.9]),
                                                                           rel=1e-9)


def test_a_ring_round_the_pole_travels_by_node_and_refuses_points():
    # A ring of 1-degree segments along the parallel 89.9 (each 194 m, followed) goes all the
    # way round in longitude: no flat view in longitude/latitude holds it in one piece, so
    # attaching points is refused, while costs between its nodes are scipy's dijkstra on
    # pyproj.Geod lengths.
    lons = np.arange(-180.0, 180.0, 1.0)
    ring = [[(x, 89.9), (x + 1.0, 89.9)] for x in lons]
    g = pw.TravelGraph.from_lines(ring, geodesic=True)
    assert g.components == 1
    with pytest.raises(pw.InputError, match="circles the globe"):
        g.snap([[0.3, 89.9]])
    expected, *_ = _reference(ring, np.array([[-180.0, 89.9], [-90.0, 89.9], [0.0, 89.9]]))
    nodes = g._info["node_xy"]
    at = [int(np.flatnonzero((np.abs(nodes[:, 0] - x) < 1e-9) | (np.abs(nodes[:, 0] - x - 360) < 1e-9))[0])
          for x in (-180.0, -90.0, 0.0)]
    np.testing.assert_allclose(g.costs(at, at), expected, rtol=1e-9)
    with pytest.raises(pw.InputError, match=r"lines\[\d+\].*round the globe"):
        pw.TravelGraph.from_lines(ring, geodesic=True, split_crossings=True)


def test_lines_on_another_body_are_refused_not_measured_as_the_earth():
    # Input: a 1-degree street along the equator in Mars's geographic CRS (IAU_2015:49900).
    # Wrong answer before: it was measured on WGS84, 111,319 m instead of about 59,275 m
    # (pyproj.Geod with Mars's radius 3,396,190 m, read from the CRS), without a word.
    gpd = pytest.importorskip("geopandas")
    shapely = pytest.importorskip("shapely")
    mars = pyproj.CRS("IAU_2015:49900")
    radius = mars.ellipsoid.semi_major_metre
    true = pyproj.Geod(a=radius, b=mars.ellipsoid.semi_minor_metre).line_length([0, 1], [0, 0])
    assert true == pytest.approx(radius * np.pi / 180, rel=1e-12)
    lines = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (1, 0)])], crs=mars)
    with pytest.raises(pw.InputError, match="not the Earth") as info:
        pw.TravelGraph.from_lines(lines)
    assert info.value.argument == "lines"
    # The GeoDataFrame functions refuse such points too (before: PROJ's own error on the
    # way to WGS84), naming their argument.
    gis = pytest.importorskip("placewise.gis")
    homes = gpd.GeoDataFrame(geometry=shapely.points([(0, 0), (1, 0), (0, 1)]), crs=mars)
    with pytest.raises(pw.InputError, match="not the Earth") as info:
        gis.weber_point(homes)
    assert info.value.argument == "frame"
    # Earth datums other than WGS84 are still accepted: NAD27 (Clarke 1866) differs from its own
    # ellipsoid's length (pyproj.Geod, clrk66) by 1.3e-5 here, far below any projection's error.
    nad27 = gpd.GeoDataFrame(geometry=[shapely.LineString([(-100, 40), (-99.9, 40.05)])], crs="EPSG:4267")
    graph = pw.TravelGraph.from_lines(nad27)
    own = pyproj.Geod(ellps="clrk66").line_length([-100, -99.9], [40, 40.05])
    assert graph.edges_frame()["cost_forward_m"].iloc[0] == pytest.approx(own, rel=2e-5)
