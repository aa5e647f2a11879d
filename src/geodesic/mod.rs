//! Longitude/latitude input solved on the WGS84 ellipsoid (geodesics after Karney 2013,
//! "Algorithms for geodesics", J. Geodesy 87: the `geographiclib-rs` crate).
//!
//! - [`geodesic_distances`], [`geodesic_length`], [`geodesic_area`]: distances, polyline
//!   lengths and polygon areas on the ellipsoid.
//! - [`geodesic_weber_point`]: the weighted Fermat–Weber point, Weiszfeld's iteration in the
//!   tangent plane of each iterate (see `weber`).
//! - [`geodesic_minimax_point`], [`geodesic_enclosing_circle`]: the weighted minimax point
//!   and the smallest geodesic circle, the planar kernel in a frame recentred at each iterate
//!   (see `minimax`).
//! - [`geodesic_nearest_site`]: the geodesically nearest site of every point (see `nearest`).
//! - [`sphere_delaunay`], [`sphere_voronoi_cells`], [`sphere_spanning_tree`]: the spherical
//!   Delaunay triangulation, Voronoi cells and minimum spanning tree of points of any
//!   extent, from the 3-D convex hull of their unit vectors (see `sphere`).
//!
//! Points are `[longitude, latitude]` in degrees; lengths are metres, areas square metres.

mod earth;
mod inverse;
mod minimax;
mod nearest;
mod sphere;
mod weber;

use crate::batch::{run_grouped, GroupWatch, Grouped, OnGroupError};
use crate::cancel::{RunLimits, Watch};
use crate::error::{Error, Result};
use crate::geometry::{validate_iteration, validate_weights, Point, Weights};
use crate::median::{Metric, WeberOptions, WeberPoint};
use crate::partition::{grouped_by_kernel, Allocation, SiteAllocations};

/// Longitude/latitude checks, shared with the families that take lon/lat input (travel).
pub(crate) use earth::validate_lonlat;
/// Longitude reduction and unit vectors, shared with the travel family's lon/lat shapes.
pub(crate) use earth::{angle_between, normalised_longitude, unit_normal, Earth, WGS84_A, WGS84_F};
pub use minimax::{CenterOptions, GeodesicCenter};
pub(crate) use sphere::{cross, dot, sub};
pub use sphere::{
    sphere_delaunay, sphere_delaunay_watched, sphere_spanning_tree, sphere_spanning_tree_watched, sphere_voronoi_cells,
    sphere_voronoi_cells_watched, SphereCellOptions, SphereCells, SphereTree, SphereTriangulation,
};
pub use weber::{CONVEX_CAP_DEGREES, HEMISPHERE_DEGREES};

/// Vertices of the polygons whose areas give a geodesic circle's area (with Richardson
/// extrapolation from half as many).
const AREA_VERTICES: usize = 4096;

/// Geodesic distance from `a[i]` to `b[i]` for every row, metres.
///
/// # Errors
/// [`Error::LengthMismatch`] when the lengths differ; [`Error::TooFewPoints`] when empty;
/// [`Error::NonFiniteCoordinate`] or [`Error::OutOfRange`] for a bad coordinate.
///
/// # Runtime
/// O(n), one inverse problem per row, in parallel.
pub fn geodesic_distances(a: &[Point], b: &[Point]) -> Result<Vec<f64>> {
    if a.len() != b.len() {
        return Err(Error::LengthMismatch { argument: "b", expected: a.len(), got: b.len() });
    }
    validate_lonlat("a", a, 1)?;
    validate_lonlat("b", b, 1)?;
    use rayon::prelude::*;
    let earth = Earth::wgs84();
    Ok(a.par_iter().zip(b.par_iter()).map(|(&p, &q)| earth.distance(p, q)).collect())
}

/// Length of the geodesic polyline through `path`, metres (0 for a single vertex).
///
/// # Errors
/// [`Error::TooFewPoints`] for an empty path; [`Error::NonFiniteCoordinate`] or
/// [`Error::OutOfRange`] for a bad vertex.
///
/// # Runtime
/// O(n).
pub fn geodesic_length(path: &[Point]) -> Result<f64> {
    validate_lonlat("path", path, 1)?;
    Ok(Earth::wgs84().path_length(path))
}

/// Area of the polygon whose edges are geodesics between consecutive vertices of `ring`
/// (closed implicitly; a repeated first vertex at the end is ignored), square metres:
/// positive for counter-clockwise vertices, negative for clockwise ones.
///
/// # Errors
/// [`Error::TooFewPoints`] for fewer than 3 vertices; [`Error::NonFiniteCoordinate`] or
/// [`Error::OutOfRange`] for a bad vertex.
///
/// # Runtime
/// O(n).
pub fn geodesic_area(ring: &[Point]) -> Result<f64> {
    validate_lonlat("ring", ring, 3)?;
    Ok(Earth::wgs84().ring_area(ring))
}

fn check_weber(options: &WeberOptions) -> Result<()> {
    if options.metric != Metric::Euclidean {
        return Err(Error::InvalidParameter {
            name: "metric",
            reason: "the geodesic Fermat–Weber point measures geodesic distance only".into(),
        });
    }
    validate_iteration(options.max_iter, options.tol)
}

/// The weighted Fermat–Weber point of longitude/latitude points on the WGS84 ellipsoid.
///
/// `location` is `[longitude, latitude]`, `cost` is weight × metres, and `gap` a proven
/// bound on `cost − optimum` when the points lie within [`CONVEX_CAP_DEGREES`] of their mean
/// direction (infinite beyond, where no certificate is claimed; `converged` is then false).
///
/// # Errors
/// - the errors of [`crate::weber_point`] for bad points, weights or options, and
///   [`Error::OutOfRange`] for a latitude beyond ±90 or a longitude beyond ±540;
/// - [`Error::InvalidParameter`] for a metric other than Euclidean (geodesic);
/// - [`Error::Degenerate`] when the points reach [`HEMISPHERE_DEGREES`] or more from their
///   mean direction.
///
/// # Runtime
/// O(n) inverse problems per exact pass, in parallel; typically two or three exact passes
/// (one from 262,144 points on, whose first step is estimated from 65,536 of them), after a
/// handful of O(n) passes on Gauss's conformal sphere that choose where to start.
pub fn geodesic_weber_point(points: &[Point], weights: Weights<'_>, options: &WeberOptions) -> Result<WeberPoint> {
    geodesic_weber_point_watched(points, weights, options, &RunLimits::default())
}

/// [`geodesic_weber_point`] stopping early when `limits` say so: Ctrl-C (a cancelled watch)
/// within a chunk of points of any pass or set-up step; the deadline between passes once
/// the first exact pass has measured a site (before it, the conformal-sphere start is cut
/// short instead). The point reached is returned with `converged` false unless its
/// certificate already holds; `cost` is its exact cost. Progress counts exact passes, each
/// planned as it begins (the count is the passes made and the one under way, at most
/// `options.max_iter`): a converged run ends at its total, a stopped one is closed there.
///
/// # Errors
/// As [`geodesic_weber_point`].
pub fn geodesic_weber_point_watched(
    points: &[Point],
    weights: Weights<'_>,
    options: &WeberOptions,
    limits: &RunLimits,
) -> Result<WeberPoint> {
    check_weber(options)?;
    validate_lonlat("points", points, 1)?;
    validate_weights("weights", weights, points.len())?;
    weber::solve(points, weights, options.tol, options.max_iter, &limits.clock())
}

/// [`geodesic_weber_point`] for every group of a labelled cloud, in parallel.
///
/// # Errors
/// As [`geodesic_weber_point`], with [`Error::InGroup`] naming the group.
pub fn geodesic_weber_points(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    options: &WeberOptions,
    on_error: OnGroupError,
) -> Result<Grouped<WeberPoint>> {
    geodesic_weber_points_watched(points, weights, labels, options, on_error, &RunLimits::default())
}

/// [`geodesic_weber_points`] watched: every group's descent stops early as
/// [`geodesic_weber_point_watched`] (each group's deadline counted from its own start);
/// progress counts the points of finished groups.
///
/// # Errors
/// As [`geodesic_weber_points`].
pub fn geodesic_weber_points_watched(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    options: &WeberOptions,
    on_error: OnGroupError,
    limits: &RunLimits,
) -> Result<Grouped<WeberPoint>> {
    check_weber(options)?;
    let groups = GroupWatch::new(&limits.watch, points.len());
    run_grouped(points, weights, labels, on_error, |g| {
        groups.finished(g.points.len(), |quiet| {
            let inner = RunLimits::new(limits.time_limit, quiet.clone());
            geodesic_weber_point_watched(g.points, g.weights, options, &inner)
        })
    })
}

fn check_center(options: &CenterOptions) -> Result<()> {
    validate_iteration(options.max_iter, options.tol)
}

/// The options of one group's run inside a grouped run: the same tolerance, iterations and
/// time limit (each group's own, from its start), the caller's cancel flag, and no progress
/// of its own (the grouped run counts the points of finished groups).
fn group_options(options: &CenterOptions) -> CenterOptions {
    let limits = RunLimits::new(options.limits.time_limit, options.limits.watch.quiet());
    CenterOptions { limits, ..options.clone() }
}

/// The weighted minimax point (1-center) of longitude/latitude points on the WGS84
/// ellipsoid: the site whose largest weight × geodesic distance is least.
///
/// `options.limits` stop the run early (Ctrl-C, or `time_limit` seconds): the best centre
/// reached is returned with `converged` false unless its certificate already holds. The
/// first pass over the points always ends (unless cancelled), so the answer has a measured
/// radius; with no iteration run its gap is the radius itself.
///
/// # Errors
/// As [`geodesic_weber_point`] (without the metric).
///
/// # Runtime
/// Per iteration O(n) inverse problems and one planar minimax solve; typically a few to a
/// few tens of iterations.
pub fn geodesic_minimax_point(
    points: &[Point],
    weights: Weights<'_>,
    options: &CenterOptions,
) -> Result<GeodesicCenter> {
    check_center(options)?;
    validate_lonlat("points", points, 1)?;
    validate_weights("weights", weights, points.len())?;
    minimax::solve(points, weights, options)
}

/// [`geodesic_minimax_point`] for every group, in parallel; `support` names input rows.
/// `options.limits`: the time limit applies to each group's run from its start; progress
/// counts the points of finished groups.
///
/// # Errors
/// As [`geodesic_minimax_point`], with [`Error::InGroup`] naming the group.
pub fn geodesic_minimax_points(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    options: &CenterOptions,
    on_error: OnGroupError,
) -> Result<Grouped<GeodesicCenter>> {
    check_center(options)?;
    let inner = group_options(options);
    let groups = GroupWatch::new(&options.limits.watch, points.len());
    run_grouped(points, weights, labels, on_error, |g| {
        // `inner` holds the quiet watch already, with the group's own deadline.
        let mut r = groups.finished(g.points.len(), |_| geodesic_minimax_point(g.points, g.weights, &inner))?;
        r.support.iter_mut().for_each(|s| *s = g.members[*s]);
        Ok(r)
    })
}

/// The smallest geodesic circle covering longitude/latitude points on the WGS84 ellipsoid.
#[derive(Debug, Clone, PartialEq)]
pub struct GeodesicCircle {
    /// Centre, radius (metres), gap, support, iterations and convergence of the unweighted
    /// minimax point.
    pub center: GeodesicCenter,
    /// Area of the geodesic disc on the ellipsoid, square metres (polygons of 2048 and 4096
    /// geodesic edges, Richardson-extrapolated).
    pub area: f64,
}

/// The smallest geodesic circle covering `points`; stopped early as
/// [`geodesic_minimax_point`] (the circle about the best centre reached still covers every
/// point: its radius is that centre's largest distance).
///
/// # Errors
/// As [`geodesic_minimax_point`].
///
/// # Runtime
/// That of [`geodesic_minimax_point`] plus 6144 direct and inverse problems for the area.
pub fn geodesic_enclosing_circle(points: &[Point], options: &CenterOptions) -> Result<GeodesicCircle> {
    let center = geodesic_minimax_point(points, Weights::Unit, options)?;
    // NaN only for a run cancelled in its first pass, whose answer the caller drops.
    let area = if center.radius.is_nan() { f64::NAN } else { disc_area(center.location, center.radius) };
    Ok(GeodesicCircle { center, area })
}

/// [`geodesic_enclosing_circle`] for every group, in parallel; `support` names input rows.
/// `options.limits` as in [`geodesic_minimax_points`].
///
/// # Errors
/// As [`geodesic_enclosing_circle`], with [`Error::InGroup`] naming the group.
pub fn geodesic_enclosing_circles(
    points: &[Point],
    labels: &[i64],
    options: &CenterOptions,
    on_error: OnGroupError,
) -> Result<Grouped<GeodesicCircle>> {
    check_center(options)?;
    let inner = group_options(options);
    let groups = GroupWatch::new(&options.limits.watch, points.len());
    run_grouped(points, Weights::Unit, labels, on_error, |g| {
        let mut r = groups.finished(g.points.len(), |_| geodesic_enclosing_circle(g.points, &inner))?;
        r.center.support.iter_mut().for_each(|s| *s = g.members[*s]);
        Ok(r)
    })
}

/// Vertices of the geodesic circle of `radius` metres about `center`: `vertices` points at
/// equal azimuth steps (clockwise from north), each `radius / cos(π / vertices)` from the
/// centre so that the polygon's edges pass outside the circle (exact in the tangent plane).
/// Longitudes are unwrapped continuously from the centre's, so a ring crossing the
/// antimeridian has longitudes beyond ±180 for the caller to split.
///
/// # Errors
/// [`Error::InvalidParameter`] for a negative or non-finite radius or fewer than 8 vertices;
/// the coordinate errors of [`geodesic_length`] for the centre.
///
/// # Runtime
/// O(vertices).
pub fn geodesic_circle(center: Point, radius: f64, vertices: usize) -> Result<Vec<Point>> {
    validate_lonlat("center", &[center], 1)?;
    if !(radius.is_finite() && radius >= 0.0) {
        return Err(Error::InvalidParameter {
            name: "radius",
            reason: format!("must be finite and >= 0; got {radius}"),
        });
    }
    if vertices < 8 {
        return Err(Error::InvalidParameter {
            name: "vertices",
            reason: format!("must be at least 8; got {vertices}"),
        });
    }
    let reach = radius / (std::f64::consts::PI / vertices as f64).cos();
    Ok(ring(center, reach, vertices, true))
}

fn ring(center: Point, reach: f64, vertices: usize, unwrap: bool) -> Vec<Point> {
    let earth = Earth::wgs84();
    let mut out = Vec::with_capacity(vertices);
    let mut previous = center[0];
    for k in 0..vertices {
        // Clockwise seen from above: azimuth increases; the ring is returned counter-clockwise.
        let azimuth = -(k as f64) * std::f64::consts::TAU / vertices as f64;
        let (sin, cos) = azimuth.sin_cos();
        let mut p = earth.exp(center, [reach * sin, reach * cos]);
        if unwrap {
            p[0] += 360.0 * ((previous - p[0]) / 360.0).round();
            previous = p[0];
        }
        out.push(p);
    }
    out
}

fn disc_area(center: Point, radius: f64) -> f64 {
    if radius == 0.0 {
        return 0.0;
    }
    let earth = Earth::wgs84();
    let fine = earth.ring_area(&ring(center, radius, AREA_VERTICES, false)).abs();
    let coarse = earth.ring_area(&ring(center, radius, AREA_VERTICES / 2, false)).abs();
    // Inscribed polygons fall short by about c/N²: extrapolate.
    fine + (fine - coarse) / 3.0
}

/// Allocate every longitude/latitude point to its geodesically nearest site; distances and
/// cost are metres (weight × metres).
///
/// # Errors
/// [`Error::TooFewPoints`] for empty points or sites, the coordinate errors of
/// [`geodesic_weber_point`] for either, and the weight errors.
///
/// # Runtime
/// O(k log k) to build the tree, then per point a tree search and one inverse problem per
/// site whose chord is within the best geodesic distance (usually one or two), in parallel.
pub fn geodesic_nearest_site(points: &[Point], sites: &[Point], weights: Weights<'_>) -> Result<Allocation> {
    geodesic_nearest_site_watched(points, sites, weights, &Watch::new())
}

/// [`geodesic_nearest_site`] counting points done on `watch` (progress), and stopping early
/// once it is cancelled: within one chunk of points per worker thread. A cancelled run's
/// answer is incomplete; [`Watch::finish`] tells the caller to drop it.
///
/// # Errors
/// As [`geodesic_nearest_site`].
pub fn geodesic_nearest_site_watched(
    points: &[Point],
    sites: &[Point],
    weights: Weights<'_>,
    watch: &Watch,
) -> Result<Allocation> {
    validate_lonlat("points", points, 1)?;
    validate_lonlat("sites", sites, 1)?;
    validate_weights("weights", weights, points.len())?;
    nearest::allocate(points, sites, weights, watch)
}

/// [`geodesic_nearest_site`] for every group of points, each served by the sites of its own
/// label (as [`crate::nearest_site_grouped`]).
///
/// # Errors
/// As [`crate::nearest_site_grouped`], with the coordinate errors of
/// [`geodesic_nearest_site`].
pub fn geodesic_nearest_site_grouped(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    sites: &[Point],
    site_labels: &[i64],
    on_error: OnGroupError,
) -> Result<SiteAllocations> {
    geodesic_nearest_site_grouped_watched(points, weights, labels, sites, site_labels, on_error, &Watch::new())
}

/// [`geodesic_nearest_site_grouped`] watched: progress counts points (all planned at the
/// start, each group's counted chunk by chunk as in [`geodesic_nearest_site_watched`], and
/// the points of groups without an answer at the end). Once `watch` is cancelled, groups
/// not yet begun are skipped and a running group stops within one chunk of points per
/// worker thread; the caller drops a cancelled run's answer ([`Watch::finish`]).
///
/// # Errors
/// As [`geodesic_nearest_site_grouped`].
#[allow(clippy::too_many_arguments)]
pub fn geodesic_nearest_site_grouped_watched(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    sites: &[Point],
    site_labels: &[i64],
    on_error: OnGroupError,
    watch: &Watch,
) -> Result<SiteAllocations> {
    grouped_by_kernel(points, weights, labels, sites, site_labels, on_error, watch, |p, s, w, watch| {
        validate_lonlat("points", p, 1)?;
        validate_lonlat("sites", s, 1)?;
        Ok(nearest::assign(p, s, w, watch))
    })
}

#[cfg(test)]
mod tests;
