//! placewise: geometric optimisation of where things go.
//!
//! Pure Rust kernels, one family a module (see DESIGN.md):
//!
//! - `median`: the weighted Fermat–Weber point (Weiszfeld with the Vardi–Zhang step).
//! - `enclose`: smallest enclosing circle, weighted minimax point, minimum-volume enclosing ellipse.
//! - `partition`: Delaunay triangulation, clipped Voronoi cells, nearest-site allocation (catchments).
//! - `network`: Euclidean minimum spanning tree and Steiner trees.
//! - `multi`: continuous p-median and p-center.
//! - `geodesic`: longitude/latitude input on the WGS84 ellipsoid (Karney 2013 geodesics):
//!   distances, lengths and areas, Fermat–Weber and minimax points, enclosing circles and
//!   nearest-site allocation at any extent.
//! - `capacity`: capacitated allocation (transportation problem) and capacitated p-median.
//! - `travel`: street-network graph (CSR), snapping to edges, shortest travel costs, network catchments.
//! - `batch`: the grouped runner every kernel uses for many groups at once.
//! - `geometry`: shared point helpers, the one working frame and location key, exact predicates,
//!   the feasible region of sites (membership, projection, convex minimisation over its boundary).
//! - `error`: the crate's one error type.
//!
//! The modules are private; the kernels, their options and results are re-exported below.
//!
//! The Python binding layer lives in `py` behind the `python` feature; nothing else in the
//! crate knows about Python.
// Kernels are safe Rust; only the PyO3 macro expansions in `py` need `unsafe`.
#![deny(unsafe_code)]
#![warn(missing_docs)]
// `!(x > 0.0)` is written on purpose throughout: it is true for NaN, which `x <= 0.0` is not,
// so a NaN from degenerate arithmetic takes the safe branch.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

mod batch;
pub mod cancel;
mod capacity;
mod discrete;
mod enclose;
mod error;
mod geodesic;
mod geometry;
mod median;
mod multi;
mod network;
mod partition;
mod travel;

#[cfg(feature = "python")]
#[allow(unsafe_code)]
mod py;

// The public Rust interface: the kernels, their options and results, and the types they
// share. Everything else (helpers, frames, predicates) is private to the crate.
pub use batch::{Grouped, OnGroupError, RowPlaces};
pub use capacity::{
    capacitated_p_median, capacity_allocation, AllocationOptions, CapacitatedMedian, CapacitatedMedianOptions,
    CapacityAllocation,
};
pub use capacity::{capacity_cells, CapacityCells, CellsOptions};
pub use discrete::{
    circle_intersections, cover_all, cover_most, discrete_p_center, discrete_p_median, euclidean_costs, evaluate_sites,
    with_planar_costs, CostMatrix, Costs, CoverAll, CoverMost, Coverage, DiscreteCenter, DiscreteMedian,
    DiscreteMedianOptions, PlanarCosts, SiteService, SparseCosts, MAX_COST_CELLS, MAX_DOMINATING_CANDIDATES,
    PLANAR_DENSE_CELLS, UNSERVED,
};
pub use enclose::{
    enclosing_circle, enclosing_circle_with, enclosing_circles, enclosing_ellipse, enclosing_ellipses, minimax_point,
    minimax_point_in_region, minimax_points, minimax_points_in_region, Circle, CircleOptions, Ellipse, MinimaxPoint,
    RegionMinimaxPoint,
};
pub use error::{Error, Namer, Positions, Result};
pub use geodesic::{
    geodesic_area, geodesic_circle, geodesic_distances, geodesic_enclosing_circle, geodesic_enclosing_circles,
    geodesic_length, geodesic_minimax_point, geodesic_minimax_points, geodesic_nearest_site,
    geodesic_nearest_site_grouped, geodesic_nearest_site_grouped_watched, geodesic_nearest_site_watched,
    geodesic_weber_point, geodesic_weber_point_watched, geodesic_weber_points, geodesic_weber_points_watched,
    CenterOptions as GeodesicCenterOptions, GeodesicCenter, GeodesicCircle, CONVEX_CAP_DEGREES, HEMISPHERE_DEGREES,
};
pub use geodesic::{
    sphere_delaunay, sphere_delaunay_watched, sphere_spanning_tree, sphere_spanning_tree_watched, sphere_voronoi_cells,
    sphere_voronoi_cells_watched, SphereCellOptions, SphereCells, SphereTree, SphereTriangulation,
};
pub use geometry::{FeasibleRegion, Point, Weights};
pub use median::{
    weber_point, weber_point_in_region, weber_points, weber_points_in_region, Metric, RegionWeberPoint, WeberOptions,
    WeberPoint,
};
pub use multi::{
    p_center, p_centers, p_median, p_medians, CenterOptions, CenterPlan, Effort, MedianOptions, MedianPlan, Service,
    EXACT_MAX_POINTS,
};
pub use network::{
    check_steiner_tree, spanning_tree, spanning_tree_watched, spanning_trees, spanning_trees_watched, steiner_tree,
    steiner_trees, EdgeEnd, SpanningTree, SteinerMethod, SteinerOptions, SteinerTree, AUTO_BUDGET,
    AUTO_EXACT_TERMINALS,
};
pub use partition::{
    allocate, check_triangulation, delaunay, delaunay_grouped, delaunay_grouped_watched, delaunay_watched,
    nearest_site, nearest_site_grouped, nearest_site_grouped_watched, nearest_site_watched, voronoi_cells,
    voronoi_cells_grouped, voronoi_cells_grouped_watched, voronoi_cells_watched, Allocation, Region, SiteAllocations,
    SiteIndex, Triangulation, VoronoiCells, STRIPS_FROM,
};
pub use partition::{power_cells, power_cells_grouped, power_nearest, PowerCells};
pub use travel::{
    catchment_pieces, network_catchments, node_spots, reach, snap_points, travel_costs, CostOptions, CostRows,
    EdgePiece, LineOptions, NetworkCatchments, OneWay, Pieces, Snap, Spot, TravelGraph, MAX_GRAPH_INDEX,
};
