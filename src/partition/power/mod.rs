//! Power diagrams: each site's cell under the power distance `|x - s|² - w` (Aurenhammer
//! 1987, "Power diagrams: properties, algorithms and applications"), clipped to a region.
//!
//! - [`power_cells`]: the cells, from the regular triangulation ([`regular`]): a site's cell
//!   is cut from the region's bounding box by the power bisectors of its neighbours in that
//!   triangulation, then clipped to the region exactly as Voronoi cells are.
//! - [`power_nearest`]: for many query points, the site of least power distance.
//!
//! With equal powers the power diagram is the Voronoi diagram and the regular triangulation
//! a Delaunay one.

mod nearest;
mod regular;

use rayon::prelude::*;

use super::delaunay::neighbour_lists;
use super::voronoi::{
    check_distinct, clip_convex, clip_to_half_plane, clipped_cells, region_rings, Region, VoronoiCells,
};
use crate::batch::{run_grouped_placed, Grouped, OnGroupError, RowPlaces};
use crate::cancel::Watch;
use crate::error::{Error, Result};
use crate::geometry::{dot, sub, validate_points, Point, Weights};

pub use nearest::power_nearest;

/// Power cells clipped to a region, with the regular triangulation they come from.
#[derive(Debug, Clone, PartialEq)]
pub struct PowerCells {
    /// The cells as rings, one cell per site (see [`VoronoiCells`] for the layout); a site
    /// whose cell is empty (redundant, or wholly outside the region) has no rings and area 0.
    pub cells: VoronoiCells,
    /// `redundant[i]`: site `i` has an empty cell in the whole plane (its lifted point lies on
    /// or above the lower hull of the others': every point has another site of no greater
    /// power distance).
    pub redundant: Vec<bool>,
    /// The regular triangulation's triangles, counter-clockwise site triples (none when the
    /// non-redundant sites are collinear).
    pub triangles: Vec<[usize; 3]>,
    /// `adjacent[t][k]`: the triangle across the edge of `t` opposite corner `k` (`None` on
    /// the hull).
    pub adjacent: Vec<[Option<usize>; 3]>,
    /// The regular triangulation's edges `[smaller, larger]`: the pairs of sites whose power
    /// cells share an edge in the plane (before clipping), plus any diagonals of cocircular
    /// (coplanar when lifted) sites.
    pub edges: Vec<[usize; 2]>,
}

/// Check that `powers` has one finite value per site.
pub(crate) fn validate_powers(powers: &[f64], site_count: usize) -> Result<()> {
    if powers.len() != site_count {
        return Err(Error::LengthMismatch { argument: "powers", expected: site_count, got: powers.len() });
    }
    match powers.iter().position(|w| !w.is_finite()) {
        Some(index) => Err(Error::NonFiniteValue { argument: "powers", index, value: powers[index] }),
        None => Ok(()),
    }
}

/// Power cells of `sites` with powers `powers` (squared planar units: the cell of site `i`
/// holds the points `x` where `|x - sᵢ|² - wᵢ` is least), clipped to `region` (default: the
/// sites' bounding box grown by 10 % on every side).
///
/// A site's cell may be empty: a redundant site (see [`PowerCells::redundant`]) or one whose
/// cell lies outside the region keeps its row with no rings and area 0. The cells tile the
/// region, as Voronoi cells do (shared vertices welded the same way); with equal powers they
/// are the Voronoi cells. Adding one constant to every power changes nothing.
///
/// # Errors
/// - [`Error::TooFewPoints`] when `sites` is empty;
/// - [`Error::NonFiniteCoordinate`] for a NaN or infinite coordinate (sites or region);
/// - [`Error::LengthMismatch`] / [`Error::NonFiniteValue`] for powers that are not one finite
///   value per site;
/// - [`Error::RepeatedPoint`] for two sites at one location (whatever their powers);
/// - [`Error::Degenerate`] for a region without area or with edges that cross or overlap,
///   powers spanning more than the float range, or (without a region) sites that all
///   coincide;
/// - [`Error::InvalidParameter`] for ring offsets that do not describe the vertices.
///
/// # Runtime
/// O(n log n) expected for the triangulation (Hilbert-ordered insertion), O(n) half-plane
/// cuts, and for a non-rectangular region O(m) more for each cell meeting its m-vertex
/// boundary.
pub fn power_cells(sites: &[Point], powers: &[f64], region: Option<Region<'_>>) -> Result<PowerCells> {
    validate_points("sites", sites, 1)?;
    validate_powers(powers, sites.len())?;
    let rings = region.map(region_rings).transpose()?;
    cells_within(sites, powers, rings.as_deref())
}

/// [`power_cells`] of every group of labelled sites, all clipped to the one `region` (or,
/// without one, each group to its own sites' grown bounding box), in parallel.
///
/// Each group's result is that of a separate call on its sites and powers, with site
/// indices (triangles, edges) naming input rows; errors name input rows.
///
/// # Errors
/// Those of the region and of `powers` for the whole run, [`Error::LengthMismatch`] when
/// `labels` does not have one entry per site; with [`OnGroupError::Raise`], the errors of
/// [`power_cells`] for the failing group with the smallest label (with `Skip`, they are that
/// group's outcome).
///
/// # Runtime
/// That of [`power_cells`] on each group, the groups in parallel.
pub fn power_cells_grouped(
    sites: &[Point],
    powers: &[f64],
    labels: &[i64],
    region: Option<Region<'_>>,
    on_error: OnGroupError,
) -> Result<(Grouped<PowerCells>, RowPlaces)> {
    validate_powers(powers, sites.len())?;
    let rings = region.map(region_rings).transpose()?;
    run_grouped_placed("sites", sites, Weights::Unit, labels, on_error, |group| {
        let own: Vec<f64> = group.members.iter().map(|&i| powers[i]).collect();
        let mut out = cells_within(group.points, &own, rings.as_deref())?;
        let row = |v: &mut usize| *v = group.members[*v];
        out.triangles.iter_mut().flatten().for_each(row);
        out.edges.iter_mut().flatten().for_each(row);
        Ok(out)
    })
}

impl PowerCells {
    /// The cells of a grouped run laid out by input row (see [`VoronoiCells::by_row`]).
    pub fn cells_by_row(grouped: &Grouped<PowerCells>, places: &RowPlaces) -> VoronoiCells {
        VoronoiCells::by_row_of(grouped, places, |p| &p.cells)
    }
}

fn cells_within(sites: &[Point], powers: &[f64], rings: Option<&[Vec<Point>]>) -> Result<PowerCells> {
    check_distinct(sites)?;
    let n = sites.len();
    // Only differences of powers matter: the least becomes zero, so equal powers lift every
    // site exactly as the Delaunay lifting does.
    let least = powers.iter().copied().fold(f64::INFINITY, f64::min);
    let shifted: Vec<f64> = powers.iter().map(|&w| w - least).collect();
    if let Some(index) = shifted.iter().position(|w| !w.is_finite()) {
        return Err(Error::Degenerate {
            argument: "powers",
            reason: format!("powers[{index}] differs from the least power by more than the float range"),
        });
    }
    let mut triangulation = None;
    let mut overflow = None;
    let mut collapsed = None;
    // A power cell need not hold its site (nor be non-empty), so only the tiling is checked.
    let cells = clipped_cells(sites, rings, false, &Watch::new(), |cf| {
        // Powers are squared lengths: they scale by the frame's factor squared, applied once
        // and again: the square itself is subnormal (losing digits) for extents beyond 2^511
        // and zero beyond 2^537, where every power would vanish and the cells be Voronoi cells.
        let factor = cf.frame.factor;
        let local_powers: Vec<f64> = shifted.iter().map(|&w| w * factor * factor).collect();
        let lifted: Vec<[f64; 3]> =
            cf.sites.iter().zip(&local_powers).map(|(p, &w)| [p[0], p[1], dot(*p, *p) - w]).collect();
        if let Some(index) = lifted.iter().position(|l| !l[2].is_finite()) {
            overflow = Some(index);
            return vec![Vec::new(); n];
        }
        // Sites far closer together than the region is wide can round to one location in
        // the working frame; the triangulation needs them distinct.
        if let Err(Error::RepeatedPoint { row, first, .. }) = check_distinct(&cf.sites) {
            collapsed = Some((first, row));
            return vec![Vec::new(); n];
        }
        let t = regular::regular(&cf.sites, &lifted);
        let (offsets, adjacent) = neighbour_lists(n, &t.edges);
        let convex = (0..n)
            .into_par_iter()
            .map_init(
                || (Vec::with_capacity(16), Vec::with_capacity(16)),
                |buffers, i| {
                    if t.redundant[i] {
                        return Vec::new();
                    }
                    power_cell(i, &cf.sites, &local_powers, &adjacent[offsets[i]..offsets[i + 1]], &cf.start, buffers)
                },
            )
            .collect();
        triangulation = Some(t);
        convex
    });
    // Read before the cells' own outcome: a closure that stopped early left every cell empty,
    // which the tiling check would report as a region too thin.
    if let Some(index) = overflow {
        return Err(Error::Degenerate {
            argument: "powers",
            reason: format!(
                "powers[{index}] is too large for the sites' spacing (its square-unit value overflows once the \
                 sites are scaled to a unit frame)"
            ),
        });
    }
    if let Some((first, row)) = collapsed {
        return Err(Error::Degenerate {
            argument: "sites",
            reason: format!(
                "sites[{first}] and sites[{row}] are too close together for the extent of the region: they round to \
                 one location once scaled to it"
            ),
        });
    }
    let cells = cells?;
    let t = triangulation.expect("the cell builder ran");
    Ok(PowerCells { cells, redundant: t.redundant, triangles: t.triangles, adjacent: t.adjacent, edges: t.edges })
}

/// The power cell of `sites[i]` within the convex polygon `start` (all local): cut by the
/// power bisector `|x - sᵢ|² - wᵢ = |x - sⱼ|² - wⱼ` of every neighbour `j`, which runs
/// perpendicular to `sⱼ - sᵢ` through `(sᵢ + sⱼ)/2 + (wᵢ - wⱼ) / (2 |sⱼ - sᵢ|²) · (sⱼ - sᵢ)`.
fn power_cell(
    i: usize,
    sites: &[Point],
    powers: &[f64],
    adjacent: &[usize],
    start: &[Point],
    buffers: &mut (Vec<Point>, Vec<Point>),
) -> Vec<Point> {
    let v = sites[i];
    clip_convex(start, adjacent, buffers, |ring, j, out| {
        let u = sites[j];
        let d = sub(u, v);
        let shift = (powers[i] - powers[j]) / (2.0 * dot(d, d));
        let m = [0.5 * (u[0] + v[0]) + shift * d[0], 0.5 * (u[1] + v[1]) + shift * d[1]];
        clip_to_half_plane(ring, m, d, out);
    })
}

#[cfg(test)]
mod tests;
