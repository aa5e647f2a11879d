"""Travel costs on a street network against scipy.sparse.csgraph.dijkstra.

The network is an invented street grid of about 1,000,000 edges (two arcs each), with every
block side's cost its length times a random factor (no ties). placewise's costs from 1,000
origins with a cost limit are timed against ``scipy.sparse.csgraph.dijkstra(indices=...,
limit=...)`` on the same graph (in chunks of 100 origins: scipy returns a dense row of every
node per origin), and the values compared on the first chunk. The network catchments of
1,000,000 points (attached to the nearest edge) for 1,000 sites are timed against scipy's
multi-source search (``min_only=True``, nodes only, no attachment). The note states the graph's
memory per directed arc. Attaching the 1,000,000 points alone (nearest point of the nearest
edge) is timed against shapely's ``STRtree.query_nearest`` on the same segments, and the
attachment gaps compared.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse
import scipy.sparse.csgraph as csgraph

from harness import Case
from placewise import TravelGraph

_CHUNK = 100


def _grid(side: int, seed: int):
    """A complete ``side × side`` grid of 100 m blocks with random costs per block side."""
    rng = np.random.default_rng(seed)
    ids = np.arange(side * side).reshape(side, side)
    tail = np.concatenate([ids[:, :-1].ravel(), ids[:-1, :].ravel()])
    head = np.concatenate([ids[:, 1:].ravel(), ids[1:, :].ravel()])
    cost = 100.0 * rng.uniform(0.8, 1.6, len(tail))
    ys, xs = np.divmod(np.arange(side * side), side)
    coords = np.column_stack([xs, ys]).astype(float) * 100.0
    return tail, head, cost, coords


def cases(quick: bool) -> list[Case]:
    side = 300 if quick else 708  # 708² nodes: 1,000,000 edges, 2,000,000 arcs
    n_origins = 200 if quick else 1000
    tail, head, cost, coords = _grid(side, 0)
    n = side * side
    graph = TravelGraph.from_edges(tail, head, cost, coordinates=coords)
    matrix = scipy.sparse.csr_array(
        (np.concatenate([cost, cost]), (np.concatenate([tail, head]), np.concatenate([head, tail]))), shape=(n, n))
    rng = np.random.default_rng(1)
    origins = np.sort(rng.choice(n, n_origins, replace=False))
    everyone = np.arange(n)
    limit = 3000.0  # metres of cost: about 20 blocks

    def scipy_costs() -> np.ndarray:
        first = None
        for start in range(0, n_origins, _CHUNK):
            block = csgraph.dijkstra(matrix, indices=origins[start : start + _CHUNK], limit=limit)
            if first is None:
                first = block
        return first

    def compare_costs(ours, first) -> str:  # noqa: ANN001
        block = ours[: min(_CHUNK, n_origins)].tocoo()
        dense = np.full(first.shape, np.inf)
        dense[block.row, block.col] = block.data
        finite = np.isfinite(first)
        same_pairs = np.array_equal(np.isfinite(dense), finite)
        err = np.max(np.abs(dense[finite] - first[finite]) / np.maximum(first[finite], 1e-300))
        bytes_graph = graph.memory_bytes["graph"]
        return (f"{ours.nnz:,} pairs kept; first {_CHUNK} origins: same pairs {same_pairs}, max rel. diff {err:.1e}; "
                f"graph {bytes_graph / graph.arcs:.1f} bytes per directed arc ({graph.arcs:,} arcs, "
                f"{graph.nodes:,} nodes; node coordinates {graph.memory_bytes['shapes'] / graph.arcs:.1f} more)")

    n_points = 100_000 if quick else 1_000_000
    extent = (side - 1) * 100.0
    points = rng.uniform(0, extent, (n_points, 2))
    sites = rng.uniform(0, extent, (1000, 2))
    site_nodes = np.unique(rng.choice(n, 1000, replace=False))

    def compare_sites(ours, ref) -> str:  # noqa: ANN001
        return (f"{ours.unreachable} unreachable; reference labels nodes only "
                f"(no attachment of points to edges); mean cost {np.nanmean(ours.cost):.1f} m")

    def shapely_snap():
        import shapely

        segments = shapely.linestrings(np.stack([coords[tail], coords[head]], axis=1))
        tree = shapely.STRtree(segments)
        _, gap = tree.query_nearest(shapely.points(points), return_distance=True, all_matches=False)
        return gap

    def compare_snap(ours, gap) -> str:  # noqa: ANN001
        return f"max gap difference {np.max(np.abs(ours.gap - gap)):.1e} (shapely/GEOS distances)"

    return [
        Case("travel snap", f"{n_points:,} points to {len(tail):,} edges", lambda: graph.snap(points), shapely_snap,
             "shapely.STRtree.query_nearest (same segments)", compare=compare_snap, repeat=1),
        Case(f"travel costs {n_origins} origins, limit", f"{len(tail):,} edges, limit {limit:g}",
             lambda: graph.costs(origins, everyone, limit=limit), scipy_costs,
             f"scipy.sparse.csgraph.dijkstra(indices, limit) in chunks of {_CHUNK}", target=3.0,
             compare=compare_costs, repeat=1),
        Case("travel nearest_site", f"{n_points:,} points x 1,000 sites",
             lambda: graph.nearest_site(points, sites),
             lambda: csgraph.dijkstra(matrix, indices=site_nodes, min_only=True, return_predecessors=True),
             "scipy.sparse.csgraph.dijkstra(min_only=True), nodes only", compare=compare_sites, repeat=1),
    ]
