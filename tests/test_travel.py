"""Travel along a street network, checked against references we did not write:
scipy.sparse.csgraph.dijkstra on the same graph, networkx multi-source Dijkstra, the
Manhattan-distance closed form on a complete street grid, and shapely for the shapes of
reach pieces."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import placewise as pw
from hostile import AWKWARD_POINTS, BAD_POINTS, BAD_WEIGHTS
from interrupting import check_counts

scipy_sparse = pytest.importorskip("scipy.sparse")
csgraph = pytest.importorskip("scipy.sparse.csgraph")


def grid_lines(w: int, h: int, step: float = 1.0) -> list[np.ndarray]:
    """A complete street grid of ``w × h`` corners, one line per block side."""
    lines = []
    for y in range(h):
        for x in range(w):
            if x + 1 < w:
                lines.append(np.array([[x, y], [x + 1, y]], dtype=float) * step)
            if y + 1 < h:
                lines.append(np.array([[x, y], [x, y + 1]], dtype=float) * step)
    return lines


def random_edges(seed: int, n: int, m: int, one_way_share: float = 0.3):
    rng = np.random.default_rng(seed)
    tail = rng.integers(0, n, m)
    head = rng.integers(0, n, m)
    cost = rng.uniform(0.0, 10.0, m)
    one_way = rng.random(m) < one_way_share
    return tail, head, cost, one_way


def scipy_matrix(tail, head, cost, one_way, n):
    """The same graph as a scipy sparse matrix (parallel edges: the cheapest kept)."""
    t = np.concatenate([tail, head[~one_way]])
    h = np.concatenate([head, tail[~one_way]])
    c = np.concatenate([cost, cost[~one_way]])
    order = np.lexsort((c, h, t))
    t, h, c = t[order], h[order], c[order]
    keep = np.ones(len(t), dtype=bool)
    keep[1:] = (t[1:] != t[:-1]) | (h[1:] != h[:-1])
    # Zero costs would be read as "no edge" by csgraph; the draws are never exactly zero.
    return scipy_sparse.csr_array((c[keep], (t[keep], h[keep])), shape=(n, n))


# ------------------------------------------------------------------ outside references


def test_costs_match_scipy_dijkstra_on_random_graphs():
    # Reference: scipy.sparse.csgraph.dijkstra on the same directed graph (1e-9 relative).
    for seed in range(5):
        n, m = 300, 900
        tail, head, cost, one_way = random_edges(seed, n, m)
        g = pw.TravelGraph.from_edges(tail, head, cost, one_way=one_way, nodes=n)
        origins = np.arange(0, n, 7)
        ours = g.costs(origins, np.arange(n))
        ref = csgraph.dijkstra(scipy_matrix(tail, head, cost, one_way, n), indices=origins)
        assert np.array_equal(np.isnan(ours), np.isinf(ref))
        finite = np.isfinite(ref)
        np.testing.assert_allclose(ours[finite], ref[finite], rtol=1e-9, atol=0)


def test_limit_matches_scipy_dijkstra_limit():
    # Reference: scipy.sparse.csgraph.dijkstra(limit=...) marks pairs beyond the limit inf.
    n, m = 400, 1400
    tail, head, cost, one_way = random_edges(11, n, m)
    g = pw.TravelGraph.from_edges(tail, head, cost, one_way=one_way, nodes=n)
    origins = np.arange(0, n, 13)
    ours = g.costs(origins, np.arange(n), limit=12.0)
    ref = csgraph.dijkstra(scipy_matrix(tail, head, cost, one_way, n), indices=origins, limit=12.0)
    dense = np.full(ref.shape, np.inf)
    coo = ours.tocoo()
    dense[coo.row, coo.col] = coo.data
    np.testing.assert_allclose(dense, ref, rtol=1e-9, atol=0)


def test_costs_report_progress_per_origin_and_stop_when_the_callable_raises():
    import threading

    n, m = 2_000, 8_000
    tail, head, cost, one_way = random_edges(21, n, m)
    g = pw.TravelGraph.from_edges(tail, head, cost, one_way=one_way, nodes=n)
    origins = np.arange(0, n, 3)
    seen: list[tuple[int, int, int]] = []
    ours = g.costs(origins, np.arange(n), progress=lambda d, t: seen.append((d, t, threading.get_ident())))
    # The answer is unchanged by watching it (reference: scipy.sparse.csgraph.dijkstra).
    ref = csgraph.dijkstra(scipy_matrix(tail, head, cost, one_way, n), indices=origins)
    finite = np.isfinite(ref)
    np.testing.assert_allclose(ours[finite], ref[finite], rtol=1e-9, atol=0)
    # Counts come from the calling thread, only grow, and end at every origin searched.
    assert seen and {ident for *_, ident in seen} == {threading.get_ident()}
    done = [d for d, _, _ in seen]
    assert done == sorted(done) and seen[-1][:2] == (len(origins), len(origins))

    class Enough(Exception):
        pass

    def stop(done: int, total: int) -> None:
        raise Enough

    with pytest.raises(Enough):
        g.costs(origins, np.arange(n), progress=stop)
    with pytest.raises(pw.InputError) as caught:
        g.costs(origins, np.arange(n), progress="yes")
    assert caught.value.argument == "progress"


def test_nearest_site_matches_networkx_multi_source_dijkstra():
    # Reference: networkx.multi_source_dijkstra_path_length from every site at once.
    nx = pytest.importorskip("networkx")
    n, m = 120, 300
    tail, head, cost, one_way = random_edges(3, n, m)
    g = pw.TravelGraph.from_edges(tail, head, cost, one_way=one_way, nodes=n)
    d = nx.DiGraph()
    d.add_nodes_from(range(n))
    for a, b, c, o in zip(tail, head, cost, one_way):
        for u, v in [(a, b)] + ([] if o else [(b, a)]):
            if not d.has_edge(u, v) or d[u][v]["weight"] > c:
                d.add_edge(int(u), int(v), weight=float(c))
    sites = np.array([0, 17, 55, 90])
    ref = nx.multi_source_dijkstra_path_length(d, set(sites.tolist()))
    c = g.nearest_site(np.arange(n), sites)
    for node in range(n):
        if node in ref:
            assert c.site[node] >= 0
            assert c.cost[node] == pytest.approx(ref[node], rel=1e-9, abs=0)
        else:
            assert c.site[node] == -1 and np.isnan(c.cost[node])
    assert c.unreachable == n - len(ref)
    # The labels agree with the cost matrix (each node's site is a cheapest one).
    full = g.costs(sites, np.arange(n))
    reached = c.site >= 0
    np.testing.assert_allclose(np.nanmin(full[:, reached], axis=0), c.cost[reached], rtol=1e-12)


def test_grid_costs_are_manhattan_distances_from_lines():
    # Closed form: on a complete grid of streets with block size s, the cost between two
    # points on streets is the Manhattan distance when they lie on crossing streets.
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        g = pw.TravelGraph.from_lines(grid_lines(11, 9, step=50.0))
    assert (g.nodes, g.components) == (99, 1)
    rng = np.random.default_rng(5)
    corners = rng.integers(0, [11, 9], size=(60, 2)) * 50.0
    costs = g.costs(corners, corners)
    manhattan = np.abs(corners[:, None, :] - corners[None, :, :]).sum(axis=2)
    np.testing.assert_allclose(costs, manhattan, rtol=1e-12)
    # Part-way points on horizontal streets: Manhattan distance whenever the two lie on
    # different streets (same-street pairs go straight along).
    ys = rng.integers(0, 9, 40) * 50.0
    pts = np.column_stack([rng.uniform(0, 500, 40), ys])
    c = g.costs(pts, pts)
    dx, dy = np.abs(pts[:, None, 0] - pts[None, :, 0]), np.abs(pts[:, None, 1] - pts[None, :, 1])
    # Leaving a street costs the detour to the nearest crossing on the way: the closed form
    # for two points on different horizontal streets is dy + min over crossings x of
    # |x1 - x| + |x - x2|, which is dx when a crossing lies between them, else the detour.
    crossings = np.arange(0, 501, 50.0)
    detour = np.min(np.abs(pts[:, None, None, 0] - crossings) + np.abs(crossings - pts[None, :, None, 0]), axis=2)
    expected = np.where(dy == 0, dx, dy + detour)
    np.testing.assert_allclose(c, expected, rtol=1e-9, atol=1e-9)


def test_k_nearest_agrees_with_dense_costs():
    g = pw.TravelGraph.from_lines(grid_lines(8, 8))
    rng = np.random.default_rng(2)
    pts = rng.uniform(0, 7, size=(50, 2))
    full = g.costs(pts, pts)
    near = g.costs(pts, pts, k=4)
    assert np.all(np.diff(near.indptr) == 4)
    for i in range(50):
        kept = near.indices[near.indptr[i] : near.indptr[i + 1]]
        # The kept destinations are the 4 cheapest (up to ties at the 4th cost).
        fourth = np.sort(full[i])[3]
        assert np.all(full[i, kept] <= fourth + 1e-12)
        np.testing.assert_allclose(near.data[near.indptr[i] : near.indptr[i + 1]], full[i, kept], rtol=1e-12)


def tied_graph(seed: int, n: int = 40, m: int = 90):
    """A graph whose costs are small integers, zeros included (exact sums, so many ties),
    and its scipy matrix built densely: csgraph reads a dense entry of 0 as an arc only
    through ``csgraph_from_dense`` with another null value."""
    rng = np.random.default_rng(seed)
    tail, head = rng.integers(0, n, m), rng.integers(0, n, m)
    cost = rng.integers(0, 3, m).astype(float)
    one_way = rng.random(m) < 0.3
    dense = np.full((n, n), np.inf)
    for a, b, c, o in zip(tail, head, cost, one_way):
        for u, v in [(a, b)] + ([] if o else [(b, a)]):
            if u != v:
                dense[u, v] = min(dense[u, v], c)
    graph = pw.TravelGraph.from_edges(tail, head, cost, one_way=one_way, nodes=n)
    return graph, csgraph.csgraph_from_dense(dense, null_value=np.inf)


@pytest.mark.parametrize("seed", range(4))
def test_k_nearest_ties_go_to_the_lower_row_by_scipy(seed):
    # A destination tied with a lower row was kept when it was offered first (k = 1 from a
    # node kept the node itself over a lower node across a zero-cost edge). Reference: the
    # k least (cost, row) pairs of scipy.sparse.csgraph.dijkstra's costs.
    g, matrix = tied_graph(seed)
    n = g.nodes
    ref = csgraph.dijkstra(matrix, indices=np.arange(n))
    for k in (1, 2, 5):
        near = g.costs(np.arange(n), np.arange(n), k=k)
        for i in range(n):
            reached = np.flatnonzero(np.isfinite(ref[i]))
            expected = reached[np.lexsort((reached, ref[i, reached]))][:k]
            kept = near.indices[near.indptr[i] : near.indptr[i + 1]]
            assert kept.tolist() == sorted(expected.tolist()), (seed, k, i)
            np.testing.assert_array_equal(near.data[near.indptr[i] : near.indptr[i + 1]], ref[i, kept])


@pytest.mark.parametrize("seed", range(4))
def test_nearest_site_ties_go_to_the_lower_site_row_by_scipy(seed):
    # A node tied between sites went to the site whose search reached it first (the site
    # at the lower node number), not the lower site row. Reference: the first row of the
    # least cost (numpy.argmin) over scipy.sparse.csgraph.dijkstra from every site.
    g, matrix = tied_graph(seed)
    n = g.nodes
    sites = np.random.default_rng(seed).permutation(n)[:6]
    ref = csgraph.dijkstra(matrix, indices=sites)
    c = g.nearest_site(np.arange(n), sites)
    reached = np.isfinite(ref).any(axis=0)
    np.testing.assert_array_equal(c.site, np.where(reached, np.argmin(ref, axis=0), -1))
    np.testing.assert_array_equal(c.node_site, c.site)
    np.testing.assert_array_equal(c.cost[reached], ref.min(axis=0)[reached])
    # Loads by numpy.bincount of the reference sites.
    np.testing.assert_array_equal(c.load, np.bincount(np.argmin(ref, axis=0)[reached], minlength=len(sites)))


# ------------------------------------------------------------------ one-way, part-way


def test_one_way_street_is_travelled_one_way_only():
    # A square block of 100 m sides, the bottom side one-way eastwards.
    lines = [[(0, 0), (100, 0)], [(100, 0), (100, 100)], [(100, 100), (0, 100)], [(0, 100), (0, 0)]]
    g = pw.TravelGraph.from_lines(lines, one_way=["forward", "both", "both", "both"])
    a, b = [[20, 0]], [[60, 0]]
    assert g.costs(a, b)[0, 0] == pytest.approx(40.0)
    # Westwards the car must go round the block: 40 to the corner, 300 round, 20 back... by
    # the closed form 400 - 40 = 360.
    assert g.costs(b, a)[0, 0] == pytest.approx(360.0)
    with pytest.raises(pw.InputError, match=r"one_way\[1\]"):
        pw.TravelGraph.from_lines(lines, one_way=["forward", "sideways", "both", "both"])


def test_reach_pieces_have_the_stated_costs_and_lengths():
    # Closed form: from a corner of a complete grid, the street length within cost L < s of
    # an inner corner is 4 L; shapely measures the pieces.
    shapely = pytest.importorskip("shapely")
    g = pw.TravelGraph.from_lines(grid_lines(5, 5, step=100.0))
    r = g.reach([[200, 200]], 70.0)
    lengths = shapely.length(r._geometry())
    assert lengths.sum() == pytest.approx(280.0)
    np.testing.assert_allclose(np.maximum(r.cost_start, r.cost_end), 70.0)


def test_catchment_edges_split_where_two_sites_meet():
    g = pw.TravelGraph.from_lines([[(0, 0), (100, 0)]])
    pieces = g.catchment_edges([[10, 0], [70, 0]])
    # Closed form: the sites meet half-way, at 40; each part's cost is its distance.
    frame = pieces.to_frame()
    assert list(frame["site"]) == [0, 0, 1, 1]
    np.testing.assert_allclose(frame["end"][:3], [0.1, 0.4, 0.7])
    np.testing.assert_allclose(frame["cost_start_u"], [10, 0, 30, 0])


# ------------------------------------------------------------------ connectivity


def test_components_are_reported_and_unreachable_is_explicit():
    with pytest.warns(UserWarning, match="2 separate components"):
        g = pw.TravelGraph.from_lines([[(0, 0), (10, 0)], [(50, 0), (60, 0)]])
    assert g.components == 2
    assert list(g.components_frame()["edges"]) == [1, 1]
    c = g.costs([[1, 0]], [[2, 0], [55, 0]])
    assert c[0, 0] == pytest.approx(1.0) and np.isnan(c[0, 1])
    s = g.costs([[1, 0]], [[2, 0], [55, 0]], limit=100)
    assert s.nnz == 1
    catch = g.nearest_site([[1, 0], [55, 0]], [[0, 0]], weights=[1.0, 3.0])
    assert list(catch.site) == [0, -1]
    assert catch.unreachable == 1 and catch.unreachable_weight == 3.0
    assert catch.summary()["unreachable_load"][0] == 3.0


# ------------------------------------------------------------------ siting


def test_choose_sites_matches_discrete_on_scipy_costs():
    # Reference: the same discrete model on costs from scipy.sparse.csgraph.dijkstra.
    n = 100
    tail, head, cost, _ = random_edges(8, n, 400, one_way_share=0.0)
    tail = np.concatenate([tail, np.arange(n - 1)])  # a path through every node: connected
    head = np.concatenate([head, np.arange(1, n)])
    cost = np.concatenate([cost, np.full(n - 1, 5.0)])
    g = pw.TravelGraph.from_edges(tail, head, cost)
    demand, candidates = np.arange(n), np.arange(0, n, 5)
    ref = csgraph.dijkstra(scipy_matrix(tail, head, cost, np.zeros(len(tail), bool), n), indices=candidates).T
    plan = g.choose_sites("p_median", demand, candidates, p=3)
    expected = pw.discrete.p_median(ref, 3)
    assert plan.total_cost == pytest.approx(expected.total_cost, rel=1e-9)
    np.testing.assert_array_equal(plan.open, expected.open)


def test_choose_sites_with_limit_matches_discrete_on_scipy_costs():
    # Reference: scipy.sparse.csgraph.dijkstra with the same limit; only pairs within it are
    # offered, so the sparse path (no dense mask of every pair) must give the same cover.
    n, radius = 100, 12.0
    tail, head, cost, _ = random_edges(9, n, 400, one_way_share=0.0)
    tail = np.concatenate([tail, np.arange(n - 1)])
    head = np.concatenate([head, np.arange(1, n)])
    cost = np.concatenate([cost, np.full(n - 1, 5.0)])
    g = pw.TravelGraph.from_edges(tail, head, cost)
    demand, candidates = np.arange(n), np.arange(0, n, 3)
    full = csgraph.dijkstra(scipy_matrix(tail, head, cost, np.zeros(len(tail), bool), n), indices=candidates).T
    within = full <= radius
    assert within.any(axis=1).all() and not within.all()  # the case under test: some pairs absent
    rows, cols = np.nonzero(within)
    ref = scipy_sparse.csr_array((full[rows, cols], (rows, cols)), shape=full.shape)
    plan = g.choose_sites("cover_all", demand, candidates, limit=radius, radius=radius)
    expected = pw.discrete.cover_all(ref, radius)
    np.testing.assert_array_equal(plan.open, expected.open)
    assert (full[:, plan.open] <= radius).any(axis=1).all()  # every point covered, by scipy's costs


def test_choose_sites_progress_is_one_count_of_the_searches_then_the_model():
    # One count: the candidates searched (one Dijkstra search each), then the model's own
    # steps added on. The model's steps are the ones it reports when called alone on the same
    # matrix; the plan is the one of the unwatched call.
    n = 60
    tail, head, cost, _ = random_edges(10, n, 240, one_way_share=0.0)
    tail = np.concatenate([tail, np.arange(n - 1)])
    head = np.concatenate([head, np.arange(1, n)])
    cost = np.concatenate([cost, np.full(n - 1, 5.0)])
    g = pw.TravelGraph.from_edges(tail, head, cost)
    demand, candidates = np.arange(n), np.arange(0, n, 4)
    seen = []
    plan = g.choose_sites("p_median", demand, candidates, p=3, progress=lambda done, total: seen.append((done, total)))
    plain = g.choose_sites("p_median", demand, candidates, p=3)
    np.testing.assert_array_equal(plan.open, plain.open)
    assert plan.total_cost == plain.total_cost
    alone = []
    pw.discrete.p_median(g.site_costs(demand, candidates), 3, progress=lambda done, total: alone.append((done, total)))
    check_counts(seen)
    totals = [t for _, t in seen]
    assert totals == sorted(totals)
    # While the searches run, the total holds them and one step for the model to come; the
    # count reaches its total only at the end.
    assert (len(candidates), len(candidates) + 1) in seen
    assert all(d < t for d, t in seen[:-1])
    assert seen[-1] == (len(candidates) + alone[-1][1],) * 2
    # evaluate_sites reports no steps of its own: the searches are the whole count.
    counted = []
    evaluated = g.choose_sites("evaluate_sites", demand, candidates, sites=plan.open,
                               progress=lambda done, total: counted.append((done, total)))
    check_counts(counted)
    assert counted[-1] == (len(candidates), len(candidates))
    assert evaluated.total_cost == pytest.approx(plain.total_cost, rel=1e-12)
    shown = g.choose_sites("evaluate_sites", demand, candidates, sites=plan.open, progress=True)
    assert shown.total_cost == evaluated.total_cost


def test_choose_sites_refuses_unreachable_demand_naming_rows():
    g = pw.TravelGraph.from_edges([0, 2], [1, 3], [1.0, 1.0])
    with pytest.raises(pw.InputError, match=r"points\[2, 3\].*2 point"):
        g.choose_sites("p_median", [0, 1, 2, 3], [0], p=1)
    with pytest.raises(pw.InputError, match="model must be one of"):
        g.choose_sites("nearest", [0], [0])


# ------------------------------------------------------------------ bad input


@pytest.mark.parametrize(
    "kwargs, argument, row",
    [
        ({"cost": [1.0, np.nan]}, "cost", 1),
        ({"cost": [1.0, -2.0]}, "cost", 1),
        ({"cost": [1.0, 1.0], "one_way": [0, 5]}, "one_way", 1),
        ({"cost": [1.0, 1.0], "reverse_cost": [np.inf, 1.0]}, "reverse_cost", 0),
    ],
)
def test_bad_edges_are_named(kwargs, argument, row):
    with pytest.raises(pw.InputError) as info:
        pw.TravelGraph.from_edges([0, 1], [1, 2], **kwargs)
    assert (info.value.argument, info.value.row) == (argument, row)


def test_bad_lines_are_named():
    shapely = pytest.importorskip("shapely")
    with pytest.raises(pw.InputError, match=r"lines\[1\]: expected a LineString or MultiLineString; got Point"):
        pw.TravelGraph.from_lines([shapely.LineString([(0, 0), (1, 0)]), shapely.Point(0, 0)])
    with pytest.raises(pw.InputError, match=r"lines\[1\]: a line needs at least 2 points; got 0"):
        pw.TravelGraph.from_lines([shapely.LineString([(0, 0), (1, 0)]), shapely.LineString()])
    with pytest.raises(pw.InputError, match=r"lines\[0\].*not finite"):
        pw.TravelGraph.from_lines([[(0, np.nan), (1, 0)]])


def test_points_beyond_max_gap_are_named():
    g = pw.TravelGraph.from_lines([[(0, 0), (10, 0)]])
    with pytest.raises(pw.InputError, match=r"sites\[1\] lies 5 from the nearest edge") as info:
        g.nearest_site([[1, 0]], [[0, 1], [3, 5]], max_gap=2)
    assert info.value.row == 1
    with pytest.raises(pw.InputError, match="no coordinates"):
        pw.TravelGraph.from_edges([0], [1], [1.0]).costs([[0, 0]], [[1, 0]])


def test_geodataframe_lines_name_rows_by_index():
    gpd = pytest.importorskip("geopandas")
    shapely = pytest.importorskip("shapely")
    frame = gpd.GeoDataFrame(
        {"minutes": [1.0, -1.0]},
        geometry=[shapely.LineString([(0, 0), (100, 0)]), shapely.LineString([(100, 0), (100, 80)])],
        index=["main-st", "mill-rd"], crs="EPSG:32631",
    )
    with pytest.raises(pw.InputError, match=r"cost\['mill-rd'\]") as info:
        pw.TravelGraph.from_lines(frame, cost="minutes")
    assert info.value.row == "mill-rd"
    g = pw.TravelGraph.from_lines(frame)
    assert g.unit == "m" and g.costs([[0, 0]], [[100, 80]])[0, 0] == pytest.approx(180.0)


def test_lon_lat_lines_have_geodesic_lengths_and_gaps_in_metres():
    # Reference: pyproj.Geod(ellps="WGS84") line lengths and inverse distances (Karney 2013
    # through PROJ), an implementation we did not write.
    gpd = pytest.importorskip("geopandas")
    pyproj = pytest.importorskip("pyproj")
    shapely = pytest.importorskip("shapely")
    geod = pyproj.Geod(ellps="WGS84")
    rng = np.random.default_rng(5)
    lines = [np.column_stack([np.sort(rng.uniform(9.0, 9.2, 4)), rng.uniform(59.0, 59.1, 4)]) for _ in range(6)]
    # Chain them so the network is connected: each line starts where the previous ended.
    for a, b in zip(lines, lines[1:]):
        b[0] = a[-1]
    frame = gpd.GeoDataFrame(geometry=[shapely.LineString(x) for x in lines], crs="EPSG:4326")
    g = pw.TravelGraph.from_lines(frame)
    assert g.unit == "m" and g.length_unit == "m"
    expected = [geod.line_length(x[:, 0], x[:, 1]) for x in lines]
    assert np.allclose(g.edges_frame()["cost_forward_m"], expected, rtol=1e-9)
    # The whole chain end to end.
    assert g.costs([lines[0][0]], [lines[-1][-1]])[0, 0] == pytest.approx(sum(expected), rel=1e-9)
    # A point off a line: its gap is the geodesic distance to the attachment point, and its
    # position along the line the geodesic length up to it.
    vertex = lines[2][1]
    p = vertex + [0.0, 0.001]
    a = g.snap([p])
    q = a.on_edge[0]
    assert a.gap[0] == pytest.approx(geod.inv(p[0], p[1], q[0], q[1])[2], rel=1e-9)
    line = lines[int(a.edge[0])]
    # The segment holding q (shapely's planar distance in degrees; q lies on it).
    k = int(np.argmin(shapely.distance(shapely.linestrings(np.stack([line[:-1], line[1:]], axis=1)),
                                       shapely.points(q))))
    partial = geod.line_length(np.r_[line[: k + 1, 0], q[0]], np.r_[line[: k + 1, 1], q[1]])
    assert a.along[0] == pytest.approx(partial, rel=1e-9)


def test_dangling_ends_with_zero_tolerance_warn_and_tolerance_joins():
    lines = [[(0, 0), (10, 0)], [(10.001, 0), (20, 0)]]
    with pytest.warns(UserWarning, match="4 line ends meet no other"):
        pw.TravelGraph.from_lines(lines)
    g = pw.TravelGraph.from_lines(lines, tolerance=0.01)
    assert g.components == 1 and g.costs([[0, 0]], [[20, 0]])[0, 0] == pytest.approx(19.999)


@settings(max_examples=40, deadline=None)
@given(
    st.lists(st.tuples(st.integers(0, 9), st.integers(0, 9), st.floats(0, 1e6, allow_nan=False),
                       st.sampled_from([-1, 0, 1])), min_size=1, max_size=30),
)
def test_random_graphs_agree_with_scipy(edges):
    # Property: any small graph, one-way edges and zero costs included, agrees with scipy
    # (zero costs are stored as explicit entries scipy reads as edges of cost 0).
    tail = np.array([e[0] for e in edges])
    head = np.array([e[1] for e in edges])
    cost = np.array([e[2] for e in edges])
    way = np.array([e[3] for e in edges])
    g = pw.TravelGraph.from_edges(tail, head, cost, one_way=way, nodes=10)
    fwd = way >= 0
    bwd = way <= 0
    t = np.concatenate([tail[fwd], head[bwd]])
    h = np.concatenate([head[fwd], tail[bwd]])
    c = np.concatenate([cost[fwd], cost[bwd]])
    dense = np.full((10, 10), np.inf)
    for a, b, w in zip(t, h, c):
        dense[a, b] = min(dense[a, b], w)
    ref = csgraph.dijkstra(csgraph.csgraph_from_dense(dense, null_value=np.inf))
    ours = g.costs(np.arange(10), np.arange(10))
    assert np.array_equal(np.isnan(ours), np.isinf(ref))
    ok = np.isfinite(ref)
    np.testing.assert_allclose(ours[ok], ref[ok], rtol=1e-9, atol=0)


# ------------------------------------------------------------------ GeoPandas form


def test_gis_forms_use_row_labels_and_the_lines_crs():
    gpd = pytest.importorskip("geopandas")
    shapely = pytest.importorskip("shapely")
    from placewise.gis import travel as gt

    streets = gpd.GeoDataFrame(geometry=[shapely.LineString(line) for line in grid_lines(4, 4, step=100.0)],
                               crs="EPSG:32631")
    g = gt.travel_graph(streets)
    homes_xy = np.array([[10.0, 3.0], [250.0, 100.0], [300.0, 290.0]])
    homes = gpd.GeoDataFrame({"people": [2.0, 1.0, 4.0]}, geometry=gpd.points_from_xy(*homes_xy.T),
                             index=["h1", "h2", "h3"], crs="EPSG:32631")
    depots = gpd.GeoDataFrame(geometry=gpd.points_from_xy([0, 300], [0, 300]), index=["d-west", "d-east"],
                              crs="EPSG:32631").to_crs("EPSG:4326")     # projected back to the lines' CRS
    out = gt.network_catchments(g, homes, depots, weight="people")
    plain = g.nearest_site(homes_xy, [[0, 0], [300, 300]], [2.0, 1.0, 4.0])
    np.testing.assert_allclose(out["cost_m"], plain.cost, rtol=1e-9)
    assert list(out["site"]) == [["d-west", "d-east"][s] for s in plain.site]
    table = gt.travel_costs(g, homes, homes)
    np.testing.assert_allclose(table["cost_m"].to_numpy().reshape(3, 3), g.costs(homes_xy, homes_xy), rtol=1e-12)
    assert list(table["origin"][:3]) == ["h1"] * 3
    reach = gt.network_reach(g, depots, 150.0)
    # Closed form: within 150 m of the outer corner (0, 0) of a 100 m grid lie its two block
    # sides and the first 50 m of the two further sides at each neighbouring corner:
    # 2 × 100 + 4 × 50 = 400 m of street.
    lengths = reach.groupby("site").geometry.apply(lambda s: s.length.sum())
    assert lengths["d-west"] == pytest.approx(400.0, rel=1e-6)
    far = gpd.GeoDataFrame(geometry=gpd.points_from_xy([10, 5000], [0, 0]), index=["near", "far-away"],
                           crs="EPSG:32631")
    with pytest.raises(pw.InputError, match=r"points\['far-away'\]") as info:
        gt.network_catchments(g, far, depots, max_gap=50)
    assert info.value.row == "far-away"


# ------------------------------------------------------------------ a real street network


def test_real_street_network_matches_scipy_with_shapely_attachment():
    # Data: the geodanet streets, schools and crimes shipped in libpysal 4.14.1 (BSD 3-Clause;
    # tests/data/geodanet/README.md). Reference: an independent graph built here (exact end
    # joins, shapely lengths), all-pairs scipy.sparse.csgraph.dijkstra, and shapely's nearest
    # line and projection for the attachment of each point.
    gpd = pytest.importorskip("geopandas")
    shapely = pytest.importorskip("shapely")
    from pathlib import Path

    data = Path(__file__).resolve().parent / "data" / "geodanet"
    streets = gpd.read_file(data / "streets.shp")
    schools = gpd.read_file(data / "schools.shp")
    crimes = gpd.read_file(data / "crimes.shp")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        g = pw.TravelGraph.from_lines(streets)
    assert g.unit == "usft" and g.edges == len(streets)

    lines = streets.geometry.values
    node_of: dict[tuple[float, float], int] = {}
    ends = []
    for line in lines:
        xy = shapely.get_coordinates(line)
        ends.append([node_of.setdefault(tuple(p), len(node_of)) for p in (xy[0], xy[-1])])
    ends = np.array(ends)
    length = shapely.length(lines)
    n = len(node_of)
    dense = np.full((n, n), np.inf)
    for (a, b), c in zip(ends, length):
        dense[a, b] = dense[b, a] = min(dense[a, b], c)
    np.fill_diagonal(dense, np.inf)
    between = csgraph.dijkstra(csgraph.csgraph_from_dense(dense, null_value=np.inf))
    assert g.nodes == n and g.components == csgraph.connected_components(dense < np.inf)[0]

    tree = shapely.STRtree(lines)

    def attach(points):
        nearest = tree.nearest(points)
        return nearest, shapely.line_locate_point(lines[nearest], points)

    s_line, s_at = attach(schools.geometry.values)
    c_line, c_at = attach(crimes.geometry.values)
    expected = np.full((len(schools), len(crimes)), np.inf)
    for i in range(len(schools)):
        a, b = ends[s_line[i]]
        leave = {a: s_at[i], b: length[s_line[i]] - s_at[i]}
        for j in range(len(crimes)):
            x, y = ends[c_line[j]]
            arrive = {x: c_at[j], y: length[c_line[j]] - c_at[j]}
            best = min(u_cost + between[u, v] + v_cost for u, u_cost in leave.items() for v, v_cost in arrive.items())
            if s_line[i] == c_line[j]:
                best = min(best, abs(s_at[i] - c_at[j]))
            expected[i, j] = best
    ours = g.costs(np.column_stack([schools.geometry.x, schools.geometry.y]),
                   np.column_stack([crimes.geometry.x, crimes.geometry.y]))
    assert np.array_equal(np.isnan(ours), np.isinf(expected))
    ok = np.isfinite(expected)
    np.testing.assert_allclose(ours[ok], expected[ok], rtol=1e-9, atol=1e-6)


# ------------------------------------------------------------------ hostile input (tests/hostile.py)

_HOSTILE_GRAPH = pw.TravelGraph.from_lines(grid_lines(5, 5))
_CALLS = {
    "costs(origins)": lambda p: _HOSTILE_GRAPH.costs(p, [[1, 1]]),
    "costs(destinations)": lambda p: _HOSTILE_GRAPH.costs([[1, 1]], p, k=2),
    "nearest_site(points)": lambda p: _HOSTILE_GRAPH.nearest_site(p, [[0, 0]]),
    "nearest_site(sites)": lambda p: _HOSTILE_GRAPH.nearest_site([[1, 1]], p),
    "reach": lambda p: _HOSTILE_GRAPH.reach(p, 2.0),
    "snap": lambda p: _HOSTILE_GRAPH.snap(p),
}


@pytest.mark.parametrize("call", list(_CALLS))
@pytest.mark.parametrize("case, points", BAD_POINTS, ids=[n for n, _ in BAD_POINTS])
def test_bad_points_raise_input_error(call, case, points):
    with pytest.raises(pw.InputError):
        _CALLS[call](points)


@pytest.mark.parametrize("call", list(_CALLS))
@pytest.mark.parametrize("case, points", AWKWARD_POINTS, ids=[n for n, _ in AWKWARD_POINTS])
def test_awkward_points_answer_or_raise_input_error(call, case, points):
    try:
        _CALLS[call](points)
    except pw.InputError:
        pass


@pytest.mark.parametrize("case, make", BAD_WEIGHTS, ids=[n for n, _ in BAD_WEIGHTS])
def test_bad_weights_are_named(case, make):
    with pytest.raises(pw.InputError):
        _HOSTILE_GRAPH.nearest_site([[1, 1], [2, 2], [3, 3]], [[0, 0]], make(3))


def _random_lines(seed: int, n: int) -> list[np.ndarray]:
    """Random polylines of 2-4 vertices in a 100 x 100 square (crossings in general position)."""
    rng = np.random.default_rng(seed)
    return [rng.uniform(0, 100, (int(rng.integers(2, 5)), 2)) for _ in range(n)]


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_split_crossings_matches_shapely_noding(seed):
    # Reference: shapely.unary_union nodes the lines at every crossing; its pieces have the
    # same total length, and every node of degree >= 3 or a crossing of degree 4 is a node of
    # both. We compare the number of pieces, the total length, and the crossing points.
    shapely = pytest.importorskip("shapely")
    lines = _random_lines(seed, 40)
    noded = shapely.get_parts(shapely.unary_union([shapely.LineString(x) for x in lines]))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        g = pw.TravelGraph.from_lines(lines, split_crossings=True)
    edges = g.edges_frame()
    assert g.edges == len(noded)
    assert np.isclose(edges["cost_forward_u"].sum(), shapely.length(noded).sum(), rtol=1e-12)
    ours = np.sort(np.round(g._info["node_xy"], 6).view(complex).ravel())
    ends = np.unique(np.round(np.concatenate([shapely.get_coordinates(shapely.boundary(p)) for p in noded]), 6),
                     axis=0)
    assert np.array_equal(ours, np.sort(ends.view(complex).ravel()))
    # Each piece's cost is its length (shapely measures the unsplit line).
    assert np.allclose(edges.groupby("line")["cost_forward_u"].sum().to_numpy(),
                       shapely.length([shapely.LineString(x) for x in lines]), rtol=1e-12)


def test_split_crossings_off_keeps_crossing_lines_apart_and_one_way_carries_over():
    cross = [[(0, 0), (10, 0)], [(5, -5), (5, 5)]]
    apart = pw.TravelGraph.from_lines(cross, one_way=[1, 0])
    assert (apart.edges, apart.components) == (2, 2)
    joined = pw.TravelGraph.from_lines(cross, one_way=[1, 0], split_crossings=True)
    assert (joined.edges, joined.components) == (4, 1)
    # From the vertical street's top to the horizontal street's east end: 5 down, 5 east (a
    # closed form); the west end cannot be reached against the one-way street.
    c = joined.costs([[5, 5]], [[10, 0], [0, 0]])
    assert c[0, 0] == 10.0 and np.isnan(c[0, 1])
    # A street ending part-way along another (a T junction) is joined there too.
    tee = pw.TravelGraph.from_lines([[(0, 0), (10, 0)], [(4, 0), (4, 6)]], split_crossings=True)
    assert (tee.edges, tee.components) == (3, 1)
    with pytest.raises(pw.InputError, match=r"row 1|\[1\]"):
        pw.TravelGraph.from_lines(cross, cost=[1.0, -1.0], split_crossings=True)


def test_a_node_count_that_disagrees_with_the_coordinates_is_refused() -> None:
    # One coordinate per node: nodes=5 beside three points was dropped without a word
    # (the graph had 3 nodes). Reference: the caller's own three coordinates.
    three = [[0.0, 0.0], [1.0, 0.0], [2.0, 0.0]]
    with pytest.raises(pw.InputError, match=r"nodes: 5 given, but coordinates hold 3 points") as caught:
        pw.TravelGraph.from_edges([0, 1], [1, 2], [1.0, 1.0], nodes=5, coordinates=three)
    assert caught.value.argument == "nodes"
    graph = pw.TravelGraph.from_edges([0, 1], [1, 2], [1.0, 1.0], nodes=3, coordinates=three)
    assert "nodes=3" in repr(graph)


def test_network_catchments_of_a_geoseries_is_a_frame_and_names_a_replaced_column():
    # A GeoSeries of homes came back as the series with four more "rows" holding the result
    # arrays. Closed form on one straight street from (0, 0) to (300, 0) with depots at both
    # ends: the home at (10, 5) meets the street at x = 10, 10 m from the west depot, 5 m
    # off the street; the home at (250, -5) is 50 m from the east depot.
    gpd = pytest.importorskip("geopandas")
    shapely = pytest.importorskip("shapely")
    from placewise.gis.travel import network_catchments, travel_graph

    graph = travel_graph(gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (300, 0)])], crs="EPSG:32630"))
    homes = gpd.GeoSeries(gpd.points_from_xy([10, 250], [5, -5]), index=["a", "b"], crs="EPSG:32630")
    depots = gpd.GeoDataFrame(geometry=gpd.points_from_xy([0, 300], [0, 0]), index=["west", "east"], crs="EPSG:32630")
    out = network_catchments(graph, homes, depots)
    assert isinstance(out, gpd.GeoDataFrame) and out.index.tolist() == ["a", "b"]
    assert out["site"].tolist() == ["west", "east"]
    np.testing.assert_allclose(out["cost_m"], [10.0, 50.0], rtol=1e-12)
    np.testing.assert_allclose(out["gap_m"], [5.0, 5.0], rtol=1e-12)
    # A column of the caller's called "site" is replaced, and said so.
    frame = gpd.GeoDataFrame({"site": ["home 1", "home 2"]}, geometry=homes.values, index=homes.index)
    with pytest.warns(UserWarning, match="points: the result replaces your column 'site'"):
        again = network_catchments(graph, frame, depots)
    assert again["site"].tolist() == ["west", "east"]


def test_a_one_way_streets_missing_reverse_cost_is_accepted_and_never_used():
    # A reverse-cost column left empty (NaN) on one-way streets, as street data often is:
    # it was refused by row. Closed form: (0, 0) east to (10, 0) costs 10 on the one-way
    # street, then 5 north; the way back is not allowed (NaN, unreachable). The second row
    # is a MultiLineString (each part a line of its own, sharing the row's costs by length).
    gpd = pytest.importorskip("geopandas")
    shapely = pytest.importorskip("shapely")
    from placewise.gis.travel import travel_graph

    streets = gpd.GeoDataFrame(
        {"minutes": [10.0, 5.0, 4.0], "back": [np.nan, 6.0, np.nan], "oneway": [1, 0, -1]},
        geometry=[shapely.LineString([(0, 0), (10, 0)]),
                  shapely.MultiLineString([[(10, 0), (10, 2)], [(10, 2), (10, 5)]]),
                  shapely.LineString([(0, 5), (10, 5)])], crs="EPSG:32632")
    streets.loc[2, "back"] = 4.0          # backward only: its reverse cost is travelled ...
    streets.loc[2, "minutes"] = np.nan    # ... and its forward one is not
    g = travel_graph(streets, cost="minutes", reverse_cost="back", one_way="oneway", unit="min")
    ends = np.array([[0.0, 0.0], [10.0, 5.0], [0.0, 5.0]])
    got = g.costs(ends, ends)
    np.testing.assert_allclose(got[0, 1], 15.0, rtol=1e-12)     # 10 + 5
    np.testing.assert_allclose(got[1, 2], 4.0, rtol=1e-12)      # back along the third row
    assert np.isnan(got[1, 0]) and np.isnan(got[2, 1])           # against the one-way streets
    # Where the direction is travelled a cost must be given: refused naming the row.
    streets.loc[1, "back"] = np.nan
    with pytest.raises(pw.InputError, match="reverse_cost"):
        travel_graph(streets, cost="minutes", reverse_cost="back", one_way="oneway")


def test_edge_arrays_of_different_lengths_name_the_row_count():
    # The cost column holds one entry per edge row, not per point as the message said.
    with pytest.raises(pw.InputError, match=r"cost must have one entry per row \(2\); got 1"):
        pw.TravelGraph.from_edges([0, 1], [1, 2], [1.0])
