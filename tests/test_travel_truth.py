"""Travel results checked against references built here from the input alone, on awkward
networks: an independent graph cut at shapely's attachment of every point and searched with
scipy.sparse.csgraph.dijkstra, brute force over every choice of sites, shapely and
pyproj.Geod lengths, and the axis unit pyproj names for each CRS."""

from __future__ import annotations

import itertools
import subprocess
import sys
import warnings

import numpy as np
import pytest

import placewise as pw

shapely = pytest.importorskip("shapely")
csgraph = pytest.importorskip("scipy.sparse.csgraph")
sparse = pytest.importorskip("scipy.sparse")


# ------------------------------------------------------------------ the reference


def _reference(lines, points, one_way=None, cost=None):
    """Travel costs between ``points`` (rows) and ``points`` (columns) on an independent
    graph: nodes at exactly equal line ends; every point attached to its nearest line by
    shapely (distance to every line of positive length, lowest row on ties) at shapely.line_locate_point; each
    line cut at the points on it, a piece costing its share of the line's cost by length;
    all pairs by scipy.sparse.csgraph.dijkstra. Also returns each point's line and gap."""
    geoms = [shapely.LineString(x) for x in lines]
    length = shapely.length(geoms)
    cost = length if cost is None else np.asarray(cost, dtype=float)
    one_way = np.zeros(len(lines), dtype=int) if one_way is None else np.asarray(one_way)
    node_of: dict[tuple[float, float], int] = {}
    ends = [[node_of.setdefault(tuple(np.asarray(x, float)[i]), len(node_of)) for i in (0, -1)] for x in lines]
    pts = shapely.points(points)
    # Lines of zero length are never attached to (they lead nowhere but their own end).
    dist = np.stack([shapely.distance(pts, g) if n > 0 else np.full(len(points), np.inf)
                     for g, n in zip(geoms, length)], axis=1)
    line = np.argmin(dist, axis=1)
    gap = dist[np.arange(len(points)), line]
    # Lines drawn along one shape (equal point for point, either way: a two-way street as two
    # one-way records) all carry a point attached to that shape; it is named by the lowest
    # row of them.
    coords = [np.asarray(x, float) for x in lines]
    same = np.array([[a.shape == b.shape and (np.array_equal(a, b) or np.array_equal(a, b[::-1]))
                      and e[0] != e[1] for b in coords] for a, e in zip(coords, ends)]) | np.eye(len(lines), dtype=bool)
    line = np.array([np.flatnonzero(same[r])[0] if same[r].any() else r for r in line], dtype=int)
    at = shapely.line_locate_point(np.array(geoms, dtype=object)[line], pts)
    first_point_node = len(node_of)
    n = first_point_node + len(points)
    dense = np.full((n, n), np.inf)

    def link(a, b, c_fwd, c_bwd, way):
        if way >= 0:
            dense[a, b] = min(dense[a, b], c_fwd)
        if way <= 0:
            dense[b, a] = min(dense[b, a], c_bwd)

    for row, (tail, head) in enumerate(ends):
        # Positions along this row: along its shape's lowest row, read backwards when drawn
        # the other way.
        on = sorted((at[i] if np.array_equal(coords[row], coords[line[i]]) else length[row] - at[i],
                     first_point_node + i) for i in np.flatnonzero(same[row, line]))
        stops = [(0.0, tail), *on, (length[row], head)]
        for (s0, u), (s1, v) in zip(stops, stops[1:]):
            share = (s1 - s0) / length[row] if length[row] > 0 else 0.0
            # A point attached at a line's end (or where another point is) is at that place:
            # no length between them, whichever way the line runs.
            link(u, v, share * cost[row], share * cost[row], one_way[row] if s1 > s0 else 0)
    np.fill_diagonal(dense, np.inf)
    between = csgraph.dijkstra(csgraph.csgraph_from_dense(dense, null_value=np.inf),
                               indices=np.arange(first_point_node, n))
    return between[:, first_point_node:], line, gap


def _awkward_network(seed):
    """Random streets on a 10 x 10 lattice of corners, with duplicates, a zero-length line, a
    ring (a self-loop), a separate component and one-way streets."""
    rng = np.random.default_rng(seed)
    lines, one_way = [], []
    for _ in range(40):
        a = rng.integers(0, 10, 2)
        b = np.clip(a + rng.integers(-2, 3, 2), 0, 9)
        if (a == b).all():
            b = (a + [1, 0]) % 10
        bend = (a + b) / 2 + rng.uniform(-0.3, 0.3, 2)
        lines.append(np.array([a, bend, b], dtype=float) * 10)
        one_way.append(int(rng.choice([-1, 0, 0, 0, 1])))
    lines.append(lines[3].copy())                                    # a duplicate street
    one_way.append(0)
    lines.append(np.array([[50.0, 50.0], [50.0, 50.0]]))             # zero length
    one_way.append(0)
    lines.append(np.array([[20.0, 20.0], [25, 20], [25, 25], [20.0, 20.0]]))  # a ring
    one_way.append(0)
    street = np.array([[30.0, 70.0], [45.0, 72.0], [60.0, 70.0]])    # a two-way street as two
    lines += [street, street[::-1].copy()]                           # one-way records, one
    one_way += [1, 1]                                                # each way
    lines.append(np.array([[200.0, 200.0], [230.0, 200.0]]))         # far away, alone
    one_way.append(0)
    return lines, np.array(one_way)


def _demand(seed, count):
    rng = np.random.default_rng(seed + 100)
    points = rng.uniform(-5, 95, (count, 2))
    # One point by the lone street, one far from every street (its gap is no cost).
    return np.vstack([points, [[600.0, -400.0], [215.0, 203.0]]])


# ------------------------------------------------------------------ costs, catchments, siting


@pytest.mark.parametrize("seed", range(4))
def test_costs_on_awkward_networks_match_scipy_on_a_graph_built_from_the_lines(seed):
    lines, one_way = _awkward_network(seed)
    points = _demand(seed, 30)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        g = pw.TravelGraph.from_lines(lines, one_way=one_way)
    expected, line, gap = _reference(lines, points, one_way)
    a = g.snap(points)
    # Attachment: shapely's nearest line and distance (ties between lines would be ambiguous;
    # random points have none).
    np.testing.assert_array_equal(a.edge, line)
    np.testing.assert_allclose(a.gap, gap, rtol=1e-9, atol=1e-9)
    ours = g.costs(points, points)
    assert np.array_equal(np.isnan(ours), np.isinf(expected))  # unreachable pairs flagged, never guessed
    ok = np.isfinite(expected)
    np.testing.assert_allclose(ours[ok], expected[ok], rtol=1e-9, atol=1e-9)
    # The k cheapest destinations: the same costs as the k smallest of scipy's row.
    for k in (1, 3):
        near = g.costs(points, points, k=k)
        for i in range(len(points)):
            row = np.sort(expected[i][np.isfinite(expected[i])])[:k]
            got = near.data[near.indptr[i]:near.indptr[i + 1]]
            np.testing.assert_allclose(np.sort(got), row, rtol=1e-9, atol=1e-9)
    # Within a limit: the pairs scipy finds within it, with its costs.
    limit = 40.0
    within = g.costs(points, points, limit=limit).toarray()
    kept = g.costs(points, points, limit=limit)
    mask = np.zeros(ours.shape, dtype=bool)
    mask[np.repeat(np.arange(len(points)), np.diff(kept.indptr)), kept.indices] = True
    near_enough = expected <= limit
    boundary = np.isclose(expected, limit, rtol=1e-9)
    assert np.array_equal(mask[~boundary], near_enough[~boundary])
    np.testing.assert_allclose(within[mask], expected[mask], rtol=1e-9, atol=1e-9)


@pytest.mark.parametrize("seed", range(4))
def test_nearest_site_on_awkward_networks_matches_scipy(seed):
    # Reference: the cheapest of scipy's costs from every site; no site at all: flagged.
    lines, one_way = _awkward_network(seed)
    places = _demand(seed, 36)
    sites, points = places[:5], places[5:]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        g = pw.TravelGraph.from_lines(lines, one_way=one_way)
    expected, _, _ = _reference(lines, np.vstack([sites, points]), one_way)
    from_sites = expected[:5, 5:]
    best = from_sites.min(axis=0)
    weights = np.arange(1.0, len(points) + 1)
    c = g.nearest_site(points, sites, weights)
    reached = np.isfinite(best)
    np.testing.assert_array_equal(c.reachable, reached)
    assert np.all(c.site[~reached] == -1) and np.isnan(c.cost[~reached]).all()
    np.testing.assert_allclose(c.cost[reached], best[reached], rtol=1e-9, atol=1e-9)
    # The site given is one that costs that much (by scipy), the lowest row among equals.
    chosen = from_sites[c.site[reached], np.flatnonzero(reached)]
    np.testing.assert_allclose(chosen, best[reached], rtol=1e-9, atol=1e-9)
    assert c.unreachable == int((~reached).sum())
    assert c.unreachable_weight == pytest.approx(weights[~reached].sum())
    assert c.total_cost == pytest.approx(float((weights * np.where(reached, best, 0)).sum()), rel=1e-9)
    np.testing.assert_allclose(c.load, [weights[reached][c.site[reached] == s].sum() for s in range(5)])
    # Every node's catchment: scipy's cost from the cheapest site to a point at the node.
    nodes = g._info["node_xy"]
    at_nodes, _, _ = _reference(lines, np.vstack([sites, nodes]), one_way)
    node_best = at_nodes[:5, 5:].min(axis=0)
    assert np.array_equal(np.isnan(c.node_cost), np.isinf(node_best))
    ok = np.isfinite(node_best)
    np.testing.assert_allclose(c.node_cost[ok], node_best[ok], rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(at_nodes[c.node_site[ok], 5 + np.flatnonzero(ok)], node_best[ok], rtol=1e-9,
                               atol=1e-9)
    # Within a limit: scipy's costs above it count as unreached.
    costs = np.unique(best[reached])
    limit = float(costs[len(costs) // 2] + costs[len(costs) // 2 + 1]) / 2   # between two costs
    within = g.nearest_site(points, sites, limit=limit)
    np.testing.assert_array_equal(within.reachable, best <= limit)


@pytest.mark.parametrize("seed", range(3))
def test_p_median_on_network_costs_is_the_brute_force_optimum(seed):
    # Reference: every choice of p candidates on scipy's costs (brute force).
    lines, _ = _awkward_network(seed)
    # One component is needed here: the lone street goes, a grid of streets joins the rest.
    grid = [np.array([[x, y], [x + 10, y]], float) for x in range(0, 90, 10) for y in range(0, 100, 10)]
    grid += [np.array([[x, y], [x, y + 10]], float) for x in range(0, 100, 10) for y in range(0, 90, 10)]
    lines = lines[:-1] + grid
    places = _demand(seed, 24)[:-2]
    candidates, points = places[:7], places[7:]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        g = pw.TravelGraph.from_lines(lines, tolerance=0.0)
    expected, _, _ = _reference(lines, np.vstack([candidates, points]))
    matrix = expected[:7, 7:].T
    assert np.isfinite(matrix).all()
    weights = np.linspace(1.0, 2.0, len(points))
    for p in (1, 2, 3):
        plan = g.choose_sites("p_median", points, candidates, weights, p=p)
        best = min((weights * matrix[:, list(s)].min(axis=1)).sum() for s in itertools.combinations(range(7), p))
        assert float(plan.total_cost) == pytest.approx(best, rel=1e-9)
        # The same sites evaluated: scipy's cheapest open site for every point.
        given = g.choose_sites("evaluate_sites", points, candidates, weights, sites=plan.open)
        np.testing.assert_allclose(given.cost, matrix[:, plan.open].min(axis=1), rtol=1e-9)
    worst = min(matrix[:, list(s)].min(axis=1).max() for s in itertools.combinations(range(7), 2))
    center = g.choose_sites("p_center", points, candidates, p=2)
    assert float(center.worst_cost) == pytest.approx(worst, rel=1e-9)
    radius = float(np.sort(matrix.min(axis=1))[-1]) + 1e-6
    cover = g.choose_sites("cover_all", points, candidates, radius=radius)
    fewest = next(p for p in range(1, 8) for s in itertools.combinations(range(7), p)
                  if (matrix[:, list(s)] <= radius).any(axis=1).all())
    assert len(cover.open) == fewest
    assert (matrix[:, cover.open] <= radius).any(axis=1).all()


@pytest.mark.parametrize("seed", range(3))
def test_catchment_and_reach_pieces_cost_what_scipy_says_at_their_midpoints(seed):
    # Reference: scipy's costs (the graph built from the lines) from the sites to the middle
    # of every piece (shapely.line_interpolate_point), where the cost is the mean of the
    # piece's end costs (costs are linear along an edge).
    lines, one_way = _awkward_network(seed)
    sites = _demand(seed, 4)[:4]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        g = pw.TravelGraph.from_lines(lines, one_way=one_way)
    for pieces, limit in ((g.catchment_edges(sites), np.inf), (g.reach(sites, 25.0), 25.0)):
        shapes = pieces._geometry()
        keep = shapely.length(shapes) > 1e-6
        middles = shapely.get_coordinates(shapely.line_interpolate_point(shapes[keep], 0.5, normalized=True))
        expected, _, _ = _reference(lines, np.vstack([sites, middles]), one_way)
        ours = ((pieces.cost_start + pieces.cost_end) / 2)[keep]
        if np.isinf(limit):
            # Catchments: the cheapest site, and the piece's own site costs that much.
            np.testing.assert_allclose(ours, expected[:4, 4:].min(axis=0), rtol=1e-9, atol=1e-9)
            np.testing.assert_allclose(expected[pieces.site[keep], 4 + np.arange(keep.sum())], ours, rtol=1e-9,
                                       atol=1e-9)
        else:
            # Reach: the piece's site, within the limit.
            np.testing.assert_allclose(expected[pieces.site[keep], 4 + np.arange(keep.sum())], ours, rtol=1e-9,
                                       atol=1e-9)
            assert (ours <= limit * (1 + 1e-12)).all()


@pytest.mark.parametrize("seed", range(3))
def test_reach_covers_every_place_scipy_finds_within_the_limit(seed):
    # Reference: places along the streets (shapely.line_interpolate_point) whose cost from a
    # site by scipy (the graph built from the lines) is within the limit lie on that site's
    # reach pieces; the pieces' lengths add up to at most the street length (shapely).
    lines, one_way = _awkward_network(seed)
    sites = _demand(seed, 3)[:3]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        g = pw.TravelGraph.from_lines(lines, one_way=one_way)
    limit = 30.0
    pieces = g.reach(sites, limit)
    rng = np.random.default_rng(seed)
    rows = rng.integers(0, len(lines), 1000)
    places = shapely.get_coordinates(shapely.line_interpolate_point(
        [shapely.LineString(lines[r]) for r in rows], rng.uniform(0, 1, 1000), normalized=True))
    expected, _, _ = _reference(lines, np.vstack([sites, places]), one_way)
    shapes = pieces._geometry()
    for s in range(3):
        within = expected[s, 3:] < limit - 1e-6
        assert within.any()
        covered = shapely.distance(shapely.points(places[within]), shapely.union_all(shapes[pieces.site == s]))
        assert (covered < 1e-7).all()
        assert shapely.length(shapes[pieces.site == s]).sum() <= sum(shapely.length(shapely.linestrings(x))
                                                                     for x in lines) + 1e-9


@pytest.mark.parametrize("scale", [1e300, 1e-300, 1e12])
def test_networks_at_extreme_scales_answer_as_at_unit_scale(scale):
    # Reference: scipy on the graph built from the unit-scale lines, its costs times the
    # scale (lengths scale with the coordinates). Near 1e300 squared distances overflow and
    # near 1e-300 they underflow: every attachment then failed with an internal error (an
    # index out of bounds in the compiled core) instead of an answer.
    lines, one_way = _awkward_network(0)
    points = _demand(0, 20)
    expected, line, _ = _reference(lines, points, one_way)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        g = pw.TravelGraph.from_lines([x * scale for x in lines], one_way=one_way)
    a = g.snap(points * scale)
    np.testing.assert_array_equal(a.edge, line)
    ours = g.costs(points * scale, points * scale)
    assert np.array_equal(np.isnan(ours), np.isinf(expected))
    ok = np.isfinite(expected)
    np.testing.assert_allclose(ours[ok], expected[ok] * scale, rtol=1e-9, atol=1e-9 * scale)


def test_costs_whose_sum_could_overflow_are_refused_and_large_ones_are_exact():
    # Two edges of 1e308 in a chain: the path costs 2e308, beyond the largest float, and the
    # pair was reported unreachable (NaN) although the graph is connected
    # (scipy.sparse.csgraph.connected_components: one component).
    tail, head = np.array([0, 1]), np.array([1, 2])
    links = sparse.csr_array((np.ones(2), (tail, head)), shape=(3, 3))
    assert csgraph.connected_components(links, directed=False)[0] == 1
    with pytest.raises(pw.InputError, match="add up to") as caught:
        pw.TravelGraph.from_edges(tail, head, [1e308, 1e308])
    assert caught.value.argument == "cost"
    # Below a quarter of the largest float in all: the sum, exactly (closed form).
    g = pw.TravelGraph.from_edges(tail, head, [1e307, 1e307])
    assert g.costs([0], [2])[0, 0] == 2e307


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


def test_a_street_drawn_as_two_one_way_records_is_travelled_both_ways_from_a_point_on_it():
    # A two-way street drawn as two one-way records over the same line, one each way, and a
    # side street at its west end. Closed form (lengths along the axes): from (7, 1) to the
    # side street's end (0, 5) is 7 west then 5 north, 12; to (2, 0.5) on the street, 5. The
    # point lay on the eastbound record only and was routed east and back (18 and 15).
    street = np.array([[0.0, 0.0], [10.0, 0.0]])
    lines = [street, street[::-1].copy(), np.array([[0.0, 0.0], [0.0, 5.0]])]
    g = pw.TravelGraph.from_lines(lines, one_way=[1, 1, 0])
    points = np.array([[7.0, 1.0], [3.0, -1.0]])
    targets = np.array([[0.0, 5.0], [10.0, 0.0], [2.0, 0.5]])
    np.testing.assert_allclose(g.costs(points, targets), [[12.0, 3.0, 5.0], [8.0, 7.0, 1.0]], rtol=1e-12)
    np.testing.assert_allclose(g.costs(targets, points), [[12.0, 8.0], [3.0, 7.0], [5.0, 1.0]], rtol=1e-12)
    # Both points lie on the street's shape: named by its lowest row, measured along it.
    a = g.snap(points)
    np.testing.assert_array_equal(a.edge, [0, 0])
    np.testing.assert_allclose(a.along, [7.0, 3.0], rtol=1e-12)
    # The independent graph built from the lines (scipy.sparse.csgraph.dijkstra) agrees.
    expected, line, _ = _reference(lines, np.vstack([points, targets]), one_way=[1, 1, 0])
    np.testing.assert_allclose(g.costs(points, targets), expected[:2, 2:], rtol=1e-12)
    # A site on the street serves both ways: (3, -1) serves (7, 1) at 4 and (0, 5) at 8.
    c = g.nearest_site(np.array([[7.0, 1.0], [0.0, 5.0]]), np.array([[3.0, -1.0]]))
    np.testing.assert_allclose(c.cost, [4.0, 8.0], rtol=1e-12)
    # Reach 4 from (3, -1): 4 east and 3 west on each record (both drawn along the street),
    # 1 up the side street. Each piece's cost is its distance from the site, both ends.
    r = g.reach(np.array([[3.0, -1.0]]), 4.0)
    shapes = r._geometry()
    length = shapely.length(shapes)
    assert length.sum() == pytest.approx(2 * 7.0 + 1.0, rel=1e-12)
    for shape, start, end in zip(shapes, r.cost_start, r.cost_end):
        first, last = shapely.get_coordinates(shape)[[0, -1]]
        for place, cost in ((first, start), (last, end)):
            assert cost == pytest.approx(abs(place[0] - 3.0) + place[1], abs=1e-12)


def test_lon_lat_points_attach_to_the_geodesically_nearest_street():
    # Reference: pyproj.Geod.inv from each point to 401 places along every street (the
    # straight lon/lat segment), brute force. The network spans 59-61 N, where the local frame
    # the index searches in (longitudes scaled by the cosine of 60 N) is off by up to 3 %.
    pyproj = pytest.importorskip("pyproj")
    geod = pyproj.Geod(ellps="WGS84")
    rng = np.random.default_rng(1)
    starts = np.column_stack([rng.uniform(9, 11, 60), rng.uniform(59, 61, 60)])
    lines = [np.array([a, a + rng.uniform(-0.02, 0.02, 2)]) for a in starts]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        g = pw.TravelGraph.from_lines(lines, geodesic=True)
    points = np.column_stack([rng.uniform(9, 11, 60), rng.uniform(59, 61, 60)])
    a = g.snap(points)
    t = np.linspace(0, 1, 401)[:, None]
    for i, p in enumerate(points):
        sampled = [geod.inv(np.full(401, p[0]), np.full(401, p[1]), *(x[0] + t * (x[1] - x[0])).T)[2].min()
                   for x in lines]
        assert a.edge[i] == int(np.argmin(sampled))
        assert a.gap[i] <= min(sampled) * (1 + 1e-3)


def test_lines_in_a_geographic_crs_in_grads_have_their_geodesic_length():
    # Reference: pyproj.Geod(ellps="WGS84").line_length of the same street in WGS84 degrees
    # (pyproj.Transformer from EPSG:4326). In NTF (Paris), EPSG:4807, angles are grads from
    # the Paris meridian: read as degrees they gave 9,523 m for a street of 9,211 m.
    gpd = pytest.importorskip("geopandas")
    pyproj = pytest.importorskip("pyproj")
    lonlat = np.array([[2.30, 48.80], [2.40, 48.85], [2.42, 48.90]])
    assert pyproj.CRS("EPSG:4807").axis_info[0].unit_name == "grad"
    to_grads = pyproj.Transformer.from_crs("EPSG:4326", "EPSG:4807", always_xy=True)
    grads = np.column_stack(to_grads.transform(*lonlat.T))
    frame = gpd.GeoDataFrame(geometry=[shapely.LineString(grads)], crs="EPSG:4807")
    expected = pyproj.Geod(ellps="WGS84").line_length(*lonlat.T)
    for lines in (frame, frame.geometry):
        g = pw.TravelGraph.from_lines(lines)
        assert g.edges_frame()["cost_forward_m"][0] == pytest.approx(expected, rel=1e-6)
        assert g.crs == pyproj.CRS("EPSG:4326") and g.unit == "m"
    # Points in the lines' CRS are brought to the graph's by the frame functions.
    from placewise.gis import travel as gt

    ends = gpd.GeoDataFrame(geometry=gpd.points_from_xy(*grads[[0, -1]].T), crs="EPSG:4807")
    table = gt.travel_costs(gt.travel_graph(frame), ends.iloc[:1], ends.iloc[1:])
    assert table["cost_m"][0] == pytest.approx(expected, rel=1e-6)


def test_lon_lat_points_beyond_the_poles_are_refused_by_row():
    # Reference: pyproj.Geod.inv has no distance from a latitude of 95 degrees (NaN); the
    # attachment gave that NaN as the point's gap without a word, where every other lon/lat
    # input of the package refuses it naming the row.
    pyproj = pytest.importorskip("pyproj")
    assert np.isnan(pyproj.Geod(ellps="WGS84").inv(10.0, 95.0, 10.0, 60.0)[2])
    g = pw.TravelGraph.from_lines([[(10, 60), (10.01, 60)]], geodesic=True)
    with pytest.raises(pw.InputError, match=r"points\[1\].*latitude") as caught:
        g.snap([[10.005, 60.001], [10.0, 95.0]])
    assert caught.value.row == 1
    with pytest.raises(pw.InputError, match="latitude"):
        g.nearest_site([[10.005, 60.001]], [[10.0, -91.0]])


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


# ------------------------------------------------------------------ shapes refused


def test_missing_and_short_lines_are_refused_by_row_and_multi_part_rows_answer_as_their_parts():
    # Reference: shapely's lengths of the parts (GeoDataFrame.explode splits them); the
    # multi-part row travels as its parts do (more in test_travel_multipart).
    gpd = pytest.importorskip("geopandas")
    multi = shapely.MultiLineString([[(0, 0), (3, 4)], [(3, 4), (3, 10)]])
    frame = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (-5, 0)]), multi], index=["a", "b"],
                             crs="EPSG:32631")
    with pytest.raises(pw.InputError, match=r"lines\[1\]: a line needs at least 2 points; got 1"):
        pw.TravelGraph.from_lines([[(0, 0), (1, 0)], [(5, 5)]])
    gone = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (1, 0)]), None], index=["a", "gone"])
    with pytest.raises(pw.InputError, match=r"lines\['gone'\]: expected a LineString or MultiLineString; got missing"
                       ) as caught:
        pw.TravelGraph.from_lines(gone)
    assert caught.value.row == "gone"
    parts = frame.explode(index_parts=False)
    for lines in (parts, frame):
        g = pw.TravelGraph.from_lines(lines)
        np.testing.assert_allclose(g.edges_frame()["cost_forward_m"], shapely.length(parts.geometry), rtol=1e-12)
        assert g.costs([[-5, 0]], [[3, 10]])[0, 0] == pytest.approx(5 + 5 + 6, rel=1e-12)
