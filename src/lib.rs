//! placewise: geometric optimisation of where things go.
//!
//! Pure Rust kernels, one family a module (see DESIGN.md):
//!
//! - [`median`]: the weighted Fermat–Weber point (Weiszfeld with the Vardi–Zhang step).
//! - [`enclose`]: smallest enclosing circle, weighted minimax point, minimum-volume enclosing ellipse.
//! - [`partition`]: Delaunay triangulation, clipped Voronoi cells, nearest-site allocation.
//! - [`network`]: Euclidean minimum spanning tree and Steiner trees.
//! - [`multi`]: continuous p-median and p-center.
//! - [`batch`]: the grouped runner every kernel uses for many groups at once.
//! - [`geometry`]: shared point helpers and the exact predicates.
//! - [`error`]: the crate's one error type.
//!
//! The Python binding layer lives in `py` behind the `python` feature; nothing else in the
//! crate knows about Python.
// Kernels are safe Rust; only the PyO3 macro expansions in `py` need `unsafe`.
#![deny(unsafe_code)]
#![warn(missing_docs)]

pub mod batch;
pub mod enclose;
pub mod error;
pub mod geometry;
pub mod median;
pub mod multi;
pub mod network;
pub mod partition;

#[cfg(feature = "python")]
#[allow(unsafe_code)]
mod py;

pub use error::{Error, Result};
pub use geometry::Point;
