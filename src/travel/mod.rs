//! Travel along a street network: the graph, attaching points to it, shortest travel costs,
//! network catchments and reach.
//!
//! - [`TravelGraph`] (`graph`): edges with a cost each way (one-way edges have one), stored
//!   as CSR arcs with 32-bit indices, with their weakly connected components; built from
//!   edge arrays ([`TravelGraph::from_edges`]) or line shapes ([`TravelGraph::from_lines`],
//!   `build`).
//! - [`snap_points`] (`snap`): each point to the nearest point of the nearest edge, with the
//!   position along the edge and the off-network gap.
//! - [`travel_costs`] (`search`): Dijkstra (1959) from every origin in parallel, with a cost
//!   limit or the `k` nearest destinations.
//! - [`network_catchments`] (`catchment`): every point's cheapest site from one multi-source
//!   search.
//! - [`catchment_pieces`], [`reach`] (`pieces`): edges cut where catchments meet, and the
//!   parts of the network within a cost of each site.
//!
//! A point on a shape drawn by several edges (a two-way street as two one-way records) lies
//! on all of them (`twins`). Costs along an edge are in proportion to length (uniform speed along each edge). Costs
//! are never summed with the off-network gap: the gap is reported for the caller to judge.

mod build;
mod catchment;
mod crossings;
mod graph;
mod lonlat;
mod pieces;
mod search;
mod snap;
mod twins;

#[cfg(test)]
mod tests;

pub use build::LineOptions;
pub use catchment::{network_catchments, NetworkCatchments};
pub use graph::{OneWay, TravelGraph, MAX_GRAPH_INDEX};
pub use pieces::{catchment_pieces, reach, EdgePiece, Pieces};
pub use search::{travel_costs, CostOptions, CostRows};
pub use snap::{node_spots, snap_points, Snap, Spot};
