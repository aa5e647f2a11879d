//! Service areas: Delaunay triangulation, Voronoi cells clipped to a region, nearest-site
//! allocation.
//!
//! - [`delaunay()`]: the Delaunay triangulation, indexed by input row (on `spade`).
//! - [`nearest_site`]: every demand point to its closest site, with loads and cost (on `rstar`).

pub mod allocate;
pub mod delaunay;

pub use allocate::{allocate, nearest_site, Allocation, SiteIndex};
pub use delaunay::{check_triangulation, delaunay, Triangulation};
