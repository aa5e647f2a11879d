//! Catchments: Delaunay triangulation, Voronoi cells clipped to a region, nearest-site
//! allocation.
//!
//! - [`delaunay()`]: the Delaunay triangulation, indexed by input row (on `spade`).
//! - [`voronoi_cells`]: Voronoi cells clipped to a region, with holes and several parts
//!   (half-plane cuts, then `i_overlay` for non-rectangular regions).
//! - [`power_cells`]: power diagram cells (weighted by a power per site) from the regular
//!   triangulation, clipped like the Voronoi cells; [`power_nearest`]: least power distance.
//! - [`nearest_site`]: every demand point to its closest site, with loads and cost (on `rstar`).
//!
//! Each has a grouped form (`*_grouped`) that runs it on every group of a labelled input
//! through [`crate::batch`].

mod allocate;
mod delaunay;
mod power;
mod voronoi;

pub(crate) use allocate::grouped_by_kernel;
pub use allocate::{
    allocate, nearest_site, nearest_site_grouped, nearest_site_grouped_watched, nearest_site_watched, Allocation,
    SiteAllocations, SiteIndex,
};
pub use delaunay::{
    check_triangulation, delaunay, delaunay_grouped, delaunay_grouped_watched, delaunay_watched, Triangulation,
    STRIPS_FROM,
};
pub(crate) use delaunay::{hilbert_index, triangulated_positions, HILBERT_SIDE};
pub use power::{power_cells, power_cells_grouped, power_nearest, PowerCells};
pub(crate) use voronoi::default_rings;
pub use voronoi::{
    voronoi_cells, voronoi_cells_grouped, voronoi_cells_grouped_watched, voronoi_cells_watched, Region, VoronoiCells,
};

/// Helpers shared by the tests of this family.
#[cfg(test)]
pub(crate) mod testing {
    use crate::geometry::Point;

    /// `n` points uniform in the square `[offset, offset + size]²`, from a linear
    /// congruential generator (Knuth's MMIX constants) seeded with `seed`.
    pub(crate) fn lcg_cloud(n: usize, seed: u64, offset: Point, size: f64) -> Vec<Point> {
        let mut s = seed;
        let mut next = || {
            s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            (s >> 11) as f64 / (1u64 << 53) as f64
        };
        (0..n).map(|_| [offset[0] + size * next(), offset[1] + size * next()]).collect()
    }
}
