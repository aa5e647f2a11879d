# Type stubs of the compiled module placewise._core (src/py/). Each family's section is
# kept beside the others in the order of src/py/mod.rs.
from typing import Any, TypeAlias, final

from numpy.typing import ArrayLike

__version__: str

@final
class ErrorDetail:
    def describe(self, name_group: Any, name_row: Any, length_unit: str | None = None,
                 cost_unit: str | None = None) -> str: ...
    @property
    def argument(self) -> str: ...
    @property
    def group(self) -> int | None: ...
    @property
    def row(self) -> int | None: ...
    @property
    def degenerate(self) -> bool: ...

class InputError(ValueError):
    argument: str | None
    group: Any
    row: Any
    detail: ErrorDetail | None

class DegenerateInputError(InputError): ...

# Every kernel binding returns a dict of named values (numpy arrays and Python scalars);
# grouped forms add "labels" (G,) and "problem" (G,: None or ErrorDetail).
_Fields: TypeAlias = dict[str, Any]

def set_threads(threads: Any) -> None: ...
def thread_count() -> int: ...

# --- median (src/py/median.rs) ---
# A feasible region (region_vertices (m, 2), ring_offsets (R + 1,), both None for none)
# adds region_active, region_holds_demand, free_location, free_cost / free_weighted_radius
# and edges_searched (minimax also gap).
def weber_point_single(
    points: ArrayLike,
    weights: ArrayLike | None,
    metric: str,
    tol: Any,
    max_iter: Any,
    region_vertices: ArrayLike | None = None,
    ring_offsets: ArrayLike | None = None,
) -> _Fields: ...
def weber_point_grouped(
    points: ArrayLike,
    weights: ArrayLike | None,
    groups: ArrayLike,
    metric: str,
    tol: Any,
    max_iter: Any,
    errors: str,
    region_vertices: ArrayLike | None = None,
    ring_offsets: ArrayLike | None = None,
) -> _Fields: ...

# --- enclose (src/py/enclose.rs) ---
# Single forms: center/location (2,), support (k,) input rows. Grouped forms: labels,
# problem, (G,)-shaped values (NaN for skipped groups), support_offsets (G + 1,) and
# support_index (CSR). Ellipse angle: degrees counter-clockwise from +x.
def enclosing_circle_single(points: ArrayLike, seed: Any) -> _Fields: ...
def enclosing_circle_grouped(points: ArrayLike, groups: ArrayLike, seed: Any, errors: str) -> _Fields: ...
def minimax_point_single(
    points: ArrayLike,
    weights: ArrayLike | None,
    region_vertices: ArrayLike | None = None,
    ring_offsets: ArrayLike | None = None,
) -> _Fields: ...
def minimax_point_grouped(
    points: ArrayLike,
    weights: ArrayLike | None,
    groups: ArrayLike,
    errors: str,
    region_vertices: ArrayLike | None = None,
    ring_offsets: ArrayLike | None = None,
) -> _Fields: ...
def enclosing_ellipse_single(points: ArrayLike, tol: Any) -> _Fields: ...
def enclosing_ellipse_grouped(points: ArrayLike, groups: ArrayLike, tol: Any, errors: str) -> _Fields: ...

# --- partition (src/py/partition.rs) ---
def delaunay_single(points: ArrayLike, progress: Any = None) -> _Fields: ...
def delaunay_grouped(points: ArrayLike, groups: ArrayLike, errors: str, progress: Any = None) -> _Fields: ...
def voronoi_cells_single(
    sites: ArrayLike, region_vertices: ArrayLike | None, ring_offsets: ArrayLike | None, progress: Any = None
) -> _Fields: ...
def voronoi_cells_grouped(
    sites: ArrayLike, groups: ArrayLike, region_vertices: ArrayLike | None, ring_offsets: ArrayLike | None,
    errors: str, progress: Any = None,
) -> _Fields: ...
def power_cells_single(
    sites: ArrayLike, powers: ArrayLike, region_vertices: ArrayLike | None, ring_offsets: ArrayLike | None
) -> _Fields: ...
def power_cells_grouped(
    sites: ArrayLike, powers: ArrayLike, groups: ArrayLike, region_vertices: ArrayLike | None,
    ring_offsets: ArrayLike | None, errors: str,
) -> _Fields: ...
def nearest_site_single(
    points: ArrayLike, sites: ArrayLike, weights: ArrayLike | None, progress: Any = None
) -> _Fields: ...
def nearest_site_grouped(
    points: ArrayLike, sites: ArrayLike, weights: ArrayLike | None, groups: ArrayLike, site_groups: ArrayLike,
    errors: str, progress: Any = None,
) -> _Fields: ...

# --- network (src/py/network.rs) ---
# Tree edges are undirected, smaller end first: end_a/end_b are input rows (-1 for a
# junction end in Steiner trees), junction_a/junction_b junction numbers (-1 for a row end).
def spanning_tree_single(points: ArrayLike, progress: Any = None) -> _Fields: ...  # end_a, end_b, edge_length, length
def spanning_tree_grouped(
    points: ArrayLike, groups: ArrayLike, errors: str, progress: Any = None
) -> _Fields: ...  # labels, problem, edge_offsets, end_a, end_b, edge_length, length
def steiner_tree_single(
    points: ArrayLike, exact: Any, seed: Any, time_limit: Any, progress: Any
) -> _Fields: ...  # junctions, the edge columns, edge_length, length, mst_length, saving, optimal,
# lower_bound, gap, relative_gap
def steiner_tree_grouped(
    points: ArrayLike, groups: ArrayLike, exact: Any, seed: Any, time_limit: Any, errors: str, progress: Any
) -> _Fields: ...  # labels, problem, junction_offsets, junctions, edge_offsets, the edge columns, per-group totals
# (length, mst_length, saving, optimal, lower_bound, gap, relative_gap)

# --- multi (src/py/multi.rs) ---
# Single plans: sites (p, 2), assignment (n,), distance (n,), load, count (sites,), total_load,
# iterations, converged; p-median adds fixed (f, 2) and cost, p-center weighted_radius, radius,
# optimal. time_limit is None or seconds > 0; progress is a bool or a callable (done, total).
# Grouped plans: labels, problem, sites (S, 2), load, count (S,), site_offsets (G + 1,),
# point_group, assignment (row in sites; -1 when skipped), distance (n,), per-group totals;
# p-median adds fixed (S,) bool.
def p_median_single(
    points: ArrayLike,
    p: Any,
    weights: ArrayLike | None,
    fixed: ArrayLike | None,
    seed: Any,
    effort: str,
    time_limit: Any,
    progress: Any,
    region_vertices: ArrayLike | None = None,
    ring_offsets: ArrayLike | None = None,
) -> _Fields: ...
def p_median_grouped(
    points: ArrayLike,
    p: Any,
    weights: ArrayLike | None,
    groups: ArrayLike,
    fixed: ArrayLike | None,
    fixed_groups: ArrayLike | None,
    seed: Any,
    effort: str,
    errors: str,
    time_limit: Any,
    progress: Any,
    region_vertices: ArrayLike | None = None,
    ring_offsets: ArrayLike | None = None,
) -> _Fields: ...
def p_center_single(
    points: ArrayLike,
    p: Any,
    weights: ArrayLike | None,
    fixed: ArrayLike | None,
    seed: Any,
    effort: str,
    time_limit: Any,
    progress: Any,
    region_vertices: ArrayLike | None = None,
    ring_offsets: ArrayLike | None = None,
) -> _Fields: ...
def region_covers(points: ArrayLike, region_vertices: ArrayLike, ring_offsets: ArrayLike) -> Any: ...
def p_center_grouped(
    points: ArrayLike,
    p: Any,
    weights: ArrayLike | None,
    groups: ArrayLike,
    fixed: ArrayLike | None,
    fixed_groups: ArrayLike | None,
    seed: Any,
    effort: str,
    errors: str,
    time_limit: Any,
    progress: Any,
    region_vertices: ArrayLike | None = None,
    ring_offsets: ArrayLike | None = None,
) -> _Fields: ...

# --- discrete (src/py/discrete.rs) ---
# costs: a dense (n, m) array, ("csr", offsets, columns, values, n, m) for the allowed pairs of
# a sparse matrix, or ("planar", points, candidates) for straight-line costs.
# Every form returns the service: open (k,) candidate columns, fixed (k,), assignment (n,)
# rows of open, cost (n,), load (k,), count (k,), total_cost, mean_cost, worst_cost,
# weighted_worst, total_weight, and radius / covered (n,) / covering (n,) / covered_weight /
# covered_share (None without a radius); plus each model's bound fields.
def discrete_euclidean_costs(points: ArrayLike, candidates: ArrayLike) -> Any: ...
def discrete_circle_candidates(
    points: ArrayLike, radius: Any, time_limit: Any = None, fixed: ArrayLike | None = None
) -> Any: ...
def discrete_evaluate(costs: Any, weights: ArrayLike | None, sites: ArrayLike, radius: Any) -> _Fields: ...
def discrete_columns(values: ArrayLike | None, argument: str, columns: int) -> Any: ...
# The models take time_limit (None or seconds > 0) and progress (a bool or a callable
# (done, total)), as the continuous ones do.
def discrete_p_median_single(
    costs: Any,
    p: Any,
    weights: ArrayLike | None,
    fixed: ArrayLike | None,
    bound_iterations: Any,
    search_rounds: Any,
    time_limit: Any = None,
    progress: Any = None,
    branch_iterations: Any = None,
    seed: Any = None,
) -> _Fields: ...
def discrete_p_center_single(
    costs: Any, p: Any, weights: ArrayLike | None, fixed: ArrayLike | None, time_limit: Any = None, progress: Any = None
) -> _Fields: ...
def discrete_cover_all(
    costs: Any,
    radius: Any,
    weights: ArrayLike | None,
    fixed: ArrayLike | None,
    time_limit: Any = None,
    progress: Any = None,
) -> _Fields: ...
def discrete_cover_most(
    costs: Any,
    p: Any,
    radius: Any,
    weights: ArrayLike | None,
    fixed: ArrayLike | None,
    time_limit: Any = None,
    progress: Any = None,
) -> _Fields: ...

# --- geodesic (src/py/geodesic.rs) ---
# Longitude/latitude points on the WGS84 ellipsoid: lengths in metres, areas in square metres.
def geodesic_distance(a: ArrayLike, b: ArrayLike) -> _Fields: ...
def geodesic_path_length(path: ArrayLike) -> _Fields: ...
def geodesic_ring_area(ring: ArrayLike) -> _Fields: ...
def geodesic_circle_ring(center: ArrayLike, radius: Any, vertices: Any) -> _Fields: ...
def sphere_delaunay_single(points: ArrayLike, progress: Any = None) -> _Fields: ...
def sphere_voronoi_single(sites: ArrayLike, max_edge_degrees: Any, progress: Any = None) -> _Fields: ...
def sphere_spanning_single(points: ArrayLike, progress: Any = None) -> _Fields: ...
def geodesic_weber_single(
    points: ArrayLike, weights: ArrayLike | None, tol: Any, max_iter: Any, time_limit: Any = None,
    progress: Any = None
) -> _Fields: ...
def geodesic_weber_grouped(
    points: ArrayLike, weights: ArrayLike | None, groups: ArrayLike, tol: Any, max_iter: Any, errors: str,
    time_limit: Any = None, progress: Any = None
) -> _Fields: ...
def geodesic_minimax_single(
    points: ArrayLike, weights: ArrayLike | None, tol: Any, max_iter: Any, time_limit: Any = None,
    progress: Any = None
) -> _Fields: ...
def geodesic_minimax_grouped(
    points: ArrayLike, weights: ArrayLike | None, groups: ArrayLike, tol: Any, max_iter: Any, errors: str,
    time_limit: Any = None, progress: Any = None
) -> _Fields: ...
def geodesic_circle_single(
    points: ArrayLike, tol: Any, max_iter: Any, time_limit: Any = None, progress: Any = None
) -> _Fields: ...
def geodesic_circle_grouped(
    points: ArrayLike, groups: ArrayLike, tol: Any, max_iter: Any, errors: str, time_limit: Any = None,
    progress: Any = None
) -> _Fields: ...
def geodesic_nearest_single(
    points: ArrayLike, sites: ArrayLike, weights: ArrayLike | None, progress: Any = None
) -> _Fields: ...
def geodesic_nearest_grouped(
    points: ArrayLike, sites: ArrayLike, weights: ArrayLike | None, groups: ArrayLike, site_groups: ArrayLike,
    errors: str, progress: Any = None
) -> _Fields: ...

# --- capacity (src/py/capacity.rs) ---

def capacity_allocate(
    points: ArrayLike, sites: ArrayLike, capacities: ArrayLike, weights: ArrayLike | None, split: bool,
    allow_unserved: bool, time_limit: Any = None, progress: Any = None,
) -> _Fields: ...
def capacity_p_median(
    points: ArrayLike, p: Any, capacities: ArrayLike, weights: ArrayLike | None, candidates: ArrayLike | None,
    seed: Any, max_rounds: Any, time_limit: Any = None, progress: Any = None,
) -> _Fields: ...
# Fields: power, assignment, share, cost, part_point, part_site, part_amount, load, slack,
# total_cost, total_distance_cost, total_demand, newton_steps, exact_points, augmentations,
# cell_site (-1: no cell), and the cells: vertices, offsets, parts, area, exterior.
def capacity_power_cells(
    points: ArrayLike, sites: ArrayLike, capacities: ArrayLike, weights: ArrayLike | None, tol: Any,
    region_vertices: ArrayLike | None, ring_offsets: ArrayLike | None, time_limit: Any = None, progress: Any = None,
) -> _Fields: ...

# --- travel (src/py/travel.rs) ---
# Origins, destinations, points and sites are (n, 2) points (attached to the nearest edge)
# or (n,) integer node numbers.
@final
class TravelNetwork:
    # Fields: nodes, edges, arcs, components, dangling, graph_bytes, shape_bytes, tail,
    # head, forward, backward (NaN: direction not allowed), node_component, edge_component,
    # node_xy (or None).
    def info(self) -> _Fields: ...
    # Fields: edge, along, gap, on_edge, node (-1 part-way along).
    def snap(self, points: ArrayLike, max_gap: Any) -> _Fields: ...
    # Fields: offsets, columns, costs (pairs kept, row by row), destinations.
    def costs(
        self, origins: ArrayLike, destinations: ArrayLike, limit: Any, k: Any, max_gap: Any, progress: Any = None
    ) -> _Fields: ...
    # Fields: site (-1 unreachable), cost (NaN), load, count, node_site, node_cost,
    # unreachable, unreachable_weight, total_cost, worst_cost, point_* and site_* attachments.
    def catchments(
        self, points: ArrayLike, sites: ArrayLike, weights: ArrayLike | None, limit: Any, max_gap: Any
    ) -> _Fields: ...
    # Fields: site, edge, start, end, cost_start, cost_end, offsets, coords.
    def catchment_edges(self, sites: ArrayLike, limit: Any, max_gap: Any) -> _Fields: ...
    def reach(self, sites: ArrayLike, limit: Any, max_gap: Any) -> _Fields: ...

def travel_from_edges(
    tail: ArrayLike,
    head: ArrayLike,
    cost: ArrayLike,
    reverse_cost: ArrayLike | None,
    one_way: ArrayLike | None,
    nodes: Any,
    coordinates: ArrayLike | None,
) -> TravelNetwork: ...
def travel_from_lines(
    coords: ArrayLike,
    offsets: ArrayLike,
    cost: ArrayLike | None,
    reverse_cost: ArrayLike | None,
    one_way: ArrayLike | None,
    tolerance: Any,
    split_crossings: bool = ...,
    geodesic: bool = ...,
    parts: ArrayLike | None = ...,
) -> TravelNetwork: ...
