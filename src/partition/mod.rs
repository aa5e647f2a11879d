//! Service areas: Delaunay triangulation, Voronoi cells clipped to a region, nearest-site
//! allocation.
//!
//! - [`delaunay()`]: the Delaunay triangulation, indexed by input row (on `spade`).
//! - [`voronoi_cells`]: Voronoi cells clipped to a region, with holes and several parts
//!   (half-plane cuts, then `i_overlay` for non-rectangular regions).
//! - [`nearest_site`]: every demand point to its closest site, with loads and cost (on `rstar`).

pub mod allocate;
pub mod delaunay;
pub mod voronoi;

pub use allocate::{allocate, nearest_site, Allocation, SiteIndex};
pub use delaunay::{check_triangulation, delaunay, Triangulation};
pub use voronoi::{voronoi_cells, Region, VoronoiCells};
