//! Delaunay triangulation of a point set, on `spade`'s circle-sweep bulk load
//! (Biniaz & Dastghaibyfard 2012, "A faster circle-sweep Delaunay triangulation
//! algorithm"), whose every sign decision is Shewchuk's exact `orient2d`/`incircle`.
//!
//! The triangulation is built on the input coordinates themselves (scaled by a power of two
//! only when they fall outside the exponent range the exact predicates accept), so far-offset
//! clouds are triangulated exactly as they are given: no rounding by a change of origin.
//!
//! One file per algorithm:
//! - here: the public entry, validation, repeated locations and the grouped form;
//! - [`adapter`]: vertices handed to spade, the exact scaling, faces and hull read back;
//! - [`whole`]: the whole set at once (circle sweep, or [`brio`] for points on few lines);
//! - [`brio`]: biased randomised incremental insertion (Amenta, Choi & Rote 2003);
//! - [`strips`]: parallel strips stitched along their seams;
//! - [`check`]: an independent check of the invariants.

mod adapter;
mod brio;
pub(crate) use brio::{hilbert_index, HILBERT_SIDE};
mod check;
mod strips;
mod whole;

use std::collections::HashMap;

use rayon::prelude::*;
use spade::Point2;

use crate::batch::{run_grouped_placed, GroupWatch, Grouped, OnGroupError, RowPlaces};
use crate::cancel::{cancelled, Watch};
use crate::error::Result;
use crate::geometry::{ring_signed_area, validate_points, Point, Weights};
use adapter::{position_key, Scale};

pub use check::check_triangulation;

/// A Delaunay triangulation, indexed by input point.
///
/// Every index refers to a row of the input. When the input repeats a location, only one
/// row of each repeated location (the smallest index) is a vertex; [`Triangulation::representative`]
/// maps every row to it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Triangulation {
    /// Triangles as counter-clockwise vertex triples.
    pub triangles: Vec<[usize; 3]>,
    /// `adjacent[t][k]` is the triangle across the edge of `t` opposite its vertex `k`
    /// (`None` on the hull).
    pub adjacent: Vec<[Option<usize>; 3]>,
    /// The hull's vertices, counter-clockwise from the smallest row, each once (vertices lying
    /// on a hull edge included).
    pub hull: Vec<usize>,
    /// Every edge once, as `[smaller index, larger index]`.
    pub edges: Vec<[usize; 2]>,
    /// `representative[i]` is the vertex kept for input row `i` (`i` itself unless row `i`
    /// repeats an earlier location).
    pub representative: Vec<usize>,
}

/// The Delaunay triangulation of `points`.
///
/// Cocircular input (grids, regular polygons) is legal: the triangulation then is one of the
/// Delaunay triangulations, the same one on every call for the same input.
///
/// From [`STRIPS_FROM`] points on, the plane is cut into vertical strips that are
/// triangulated in parallel and stitched together (see `strips::by_strips`); the stitched result is
/// verified, and any input it does not fit is triangulated whole.
///
/// # Errors
/// - [`crate::Error::TooFewPoints`] with fewer than three points, or fewer than three distinct ones;
/// - [`crate::Error::NonFiniteCoordinate`] for a NaN or infinite coordinate;
/// - [`crate::Error::Degenerate`] when all points are collinear (no triangle exists).
///
/// # Runtime
/// O(n log n) (the sweep's distance sort), near linear in practice, spread over the strips;
/// duplicates add one hash pass.
pub fn delaunay(points: &[Point]) -> Result<Triangulation> {
    delaunay_watched(points, &Watch::new())
}

/// [`delaunay`] watched: progress counts a step per input point, those of a strip as its
/// triangulation ends (all at once when the set is triangulated whole), and once `watch` is
/// cancelled the run stops when the strips under way end (a strip's triangulation, under
/// 500,000 points, is not interrupted). A triangulation exists only once it is whole, so a
/// cancelled run has no answer: its outcome is an error that the caller drops
/// ([`Watch::finish`]). Watching changes nothing in the triangulation.
///
/// # Errors
/// As [`delaunay`].
pub fn delaunay_watched(points: &[Point], watch: &Watch) -> Result<Triangulation> {
    delaunay_in_strips(points, strip_count(points.len()), watch)
}

/// [`delaunay`] of every group of a labelled cloud, in parallel (by the crate's grouped runner).
///
/// Each group is triangulated on its own points, exactly as a separate call would, and every
/// vertex index (triangle corners, hull, edges, representatives) is then an input row;
/// `adjacent` keeps numbering the group's own triangles, and `representative[k]` belongs to
/// the group's `k`-th row in input order (the returned `RowPlaces` say which row that is).
///
/// # Errors
/// [`crate::Error::LengthMismatch`] when `labels` does not have one entry per point,
/// [`crate::Error::TooFewPoints`] for an empty input; with [`OnGroupError::Raise`], the
/// errors of [`delaunay`] for the failing group with the smallest label (with `Skip`, they are
/// that group's outcome).
///
/// # Runtime
/// That of [`delaunay`] on each group, the groups in parallel, plus an O(n log n) sort.
pub fn delaunay_grouped(
    points: &[Point],
    labels: &[i64],
    on_error: OnGroupError,
) -> Result<(Grouped<Triangulation>, RowPlaces)> {
    delaunay_grouped_watched(points, labels, on_error, &Watch::new())
}

/// [`delaunay_grouped`] watched: progress counts the points of finished groups, and once
/// `watch` is cancelled the groups not yet begun are skipped and a running group stops as
/// [`delaunay_watched`] does (when its strips under way end), with an outcome the caller
/// drops ([`Watch::finish`]). Watching changes nothing in the triangulations.
///
/// # Errors
/// As [`delaunay_grouped`].
pub fn delaunay_grouped_watched(
    points: &[Point],
    labels: &[i64],
    on_error: OnGroupError,
    watch: &Watch,
) -> Result<(Grouped<Triangulation>, RowPlaces)> {
    let groups = GroupWatch::new(watch, points.len());
    run_grouped_placed("points", points, Weights::Unit, labels, on_error, |group| {
        let t = groups.finished(group.points.len(), |quiet| delaunay_watched(group.points, quiet))?;
        Ok(t.in_rows(group.members))
    })
}

/// The positions the triangulation is built on: `points` scaled by a power of two (exact)
/// with coordinates below spade's smallest accepted magnitude made zero. Points whose
/// positions coincide are one vertex of [`delaunay`]; a caller that falls back to its own
/// construction when the triangulation is degenerate must decide on these positions, or its
/// answer can disagree with the triangulation's view of the input.
pub(crate) fn triangulated_positions(points: &[Point]) -> Vec<Point> {
    let scale = Scale::of(points);
    points.iter().map(|&p| scale.apply(p)).map(|q| [q.x, q.y]).collect()
}

/// Inputs with at least this many points are triangulated by strips in parallel.
pub const STRIPS_FROM: usize = 100_000;

/// Number of strips for `n` points: one below [`STRIPS_FROM`], then one per 250,000 points
/// (at least 2). It depends on `n` alone, never on the thread count, so that cocircular
/// input gets the same triangulation on every machine. No upper limit: a strip's
/// triangulation cannot be interrupted, so strips of at most about 250,000 points keep a
/// Ctrl-C prompt at any size.
fn strip_count(n: usize) -> usize {
    if n < STRIPS_FROM {
        1
    } else {
        (n / 250_000).max(2)
    }
}

/// [`delaunay_watched`] with a given number of strips (tests force the stitched path on
/// small input).
fn delaunay_in_strips(points: &[Point], strips: usize, watch: &Watch) -> Result<Triangulation> {
    validate_points("points", points, 3)?;
    watch.plan(points.len() as u64);
    let scale = Scale::of(points);
    let positions: Vec<Point2<f64>> = points.par_iter().map(|&p| scale.apply(p)).collect();
    let mut counted = 0;
    let mesh = match (strips > 1).then(|| strips::by_strips(&positions, strips, watch, &mut counted)).flatten() {
        Some(mesh) => Ok(mesh),
        // A cancel also ends the strips without a mesh: it must not start the whole set.
        None if watch.is_cancelled() => return Err(cancelled("points")),
        // Refused strips (one on a single line, a seam the check rejects): the whole set,
        // watched when it is inserted along its lines (the circle sweep is not).
        None => whole::whole(&positions, watch),
    };
    // Every point is counted once whatever the path: here, those of a set triangulated whole
    // or refused (strips whose stitch was not accepted were counted as they ended).
    watch.advance((points.len() - counted) as u64);
    if watch.is_cancelled() {
        return Err(cancelled("points"));
    }
    let Mesh { mut triangles, adjacent, mut hull, kept } = mesh?;
    let representative = representatives(points, scale, kept);
    if kept < points.len() {
        // spade keeps one row of each repeated location, not necessarily the smallest.
        triangles.par_iter_mut().flatten().for_each(|v| *v = representative[*v]);
        hull.iter_mut().for_each(|v| *v = representative[*v]);
    }
    // Start the hull at its smallest row, whichever construction found it.
    if let Some(first) = hull.iter().enumerate().min_by_key(|&(_, &v)| v).map(|(i, _)| i) {
        hull.rotate_left(first);
    }
    let edges = edges_of(&triangles, &adjacent);
    Ok(Triangulation { triangles, adjacent, hull, edges, representative })
}

/// Triangles, adjacency and hull of a triangulation, by the input rows spade kept.
struct Mesh {
    triangles: Vec<[usize; 3]>,
    adjacent: Vec<[Option<usize>; 3]>,
    hull: Vec<usize>,
    /// Number of distinct locations (vertices).
    kept: usize,
}

/// Every edge once, as `[smaller, larger]`: the edge opposite vertex `k` of triangle `t` is
/// emitted by `t` when it is on the hull or the triangle across it comes later.
fn edges_of(triangles: &[[usize; 3]], adjacent: &[[Option<usize>; 3]]) -> Vec<[usize; 2]> {
    triangles
        .par_iter()
        .zip(adjacent)
        .enumerate()
        .flat_map_iter(|(t, (tri, across))| {
            (0..3).filter(move |&k| across[k].is_none_or(|o| o > t)).map(move |k| {
                let (a, b) = (tri[(k + 1) % 3], tri[(k + 2) % 3]);
                [a.min(b), a.max(b)]
            })
        })
        .collect()
}

/// `representative[i]`: the smallest input row at the location of row `i`.
///
/// Locations are compared as spade compares them (after the same exact scaling, `==` on
/// coordinates), so the groups found here are exactly the vertices spade merged.
fn representatives(points: &[Point], scale: Scale, kept: usize) -> Vec<usize> {
    if kept == points.len() {
        return (0..points.len()).collect();
    }
    let mut first_row: HashMap<(u64, u64), usize> = HashMap::with_capacity(kept);
    points.iter().enumerate().map(|(row, &p)| *first_row.entry(position_key(scale.apply(p))).or_insert(row)).collect()
}

impl Triangulation {
    /// Every vertex's neighbours (the other ends of its edges) as CSR: the neighbours of row
    /// `i` are `adjacent[offsets[i]..offsets[i + 1]]`; rows that repeat an earlier location
    /// have none.
    pub fn neighbours(&self) -> (Vec<usize>, Vec<usize>) {
        neighbour_lists(self.representative.len(), &self.edges)
    }

    /// The signed area of every triangle (positive: its corners run counter-clockwise), by
    /// the shoelace formula relative to its first corner.
    ///
    /// `points` are the points the indices refer to: the input of [`delaunay`], or the whole
    /// input of [`delaunay_grouped`].
    pub fn areas(&self, points: &[Point]) -> Vec<f64> {
        self.triangles.par_iter().map(|t| ring_signed_area(&t.map(|v| points[v]))).collect()
    }

    /// The triangulation of a subset with its vertex indices mapped to rows of a larger set:
    /// `rows[k]` is the row of the subset's `k`-th point. `rows` ascends (a group's rows in
    /// input order), so the hull still starts at its smallest row and every edge keeps its
    /// smaller end first.
    fn in_rows(mut self, rows: &[usize]) -> Triangulation {
        self.triangles.par_iter_mut().flatten().for_each(|v| *v = rows[*v]);
        self.hull
            .iter_mut()
            .chain(self.edges.iter_mut().flatten())
            .chain(&mut self.representative)
            .for_each(|v| *v = rows[*v]);
        self
    }
}

/// CSR neighbour lists `(offsets, adjacent)` of `n` vertices from undirected edges.
pub(crate) fn neighbour_lists(n: usize, edges: &[[usize; 2]]) -> (Vec<usize>, Vec<usize>) {
    let mut offsets = vec![0usize; n + 1];
    for &[a, b] in edges {
        offsets[a + 1] += 1;
        offsets[b + 1] += 1;
    }
    for i in 0..n {
        offsets[i + 1] += offsets[i];
    }
    let mut fill = offsets.clone();
    let mut adjacent = vec![0usize; offsets[n]];
    for &[a, b] in edges {
        adjacent[fill[a]] = b;
        fill[a] += 1;
        adjacent[fill[b]] = a;
        fill[b] += 1;
    }
    (offsets, adjacent)
}

/// Helpers shared by the tests of this folder.
#[cfg(test)]
pub(super) mod testing {
    use spade::Point2;

    use super::adapter::Scale;
    use super::Triangulation;
    use crate::geometry::Point;

    /// The triangles as a set of sorted vertex triples.
    pub(in crate::partition) fn triangle_set(t: &Triangulation) -> std::collections::BTreeSet<[usize; 3]> {
        t.triangles
            .iter()
            .map(|tri| {
                let mut s = *tri;
                s.sort_unstable();
                s
            })
            .collect()
    }

    /// The positions spade is handed for `points`.
    pub(in crate::partition) fn positions(points: &[Point]) -> Vec<Point2<f64>> {
        let scale = Scale::of(points);
        points.iter().map(|&p| scale.apply(p)).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::Error;
    use crate::partition::testing::lcg_cloud;
    use proptest::prelude::*;
    use testing::triangle_set;

    #[test]
    fn watched_runs_count_a_step_per_point_and_a_cancel_leaves_no_answer() {
        // 300,000 points: three strips (counted as each ends). Watching changes nothing in
        // the triangulation; a cancel before the start or after the first strip ends the run
        // with no answer.
        let pts = lcg_cloud(300_000, 17, [0.0, 0.0], 1.0);
        let watch = Watch::new();
        let watched = delaunay_watched(&pts, &watch).unwrap();
        assert_eq!(watch.progress(), (300_000, 300_000));
        assert_eq!(watched, delaunay_in_strips(&pts, strip_count(pts.len()), &Watch::new()).unwrap());
        let cancelled = Watch::new();
        cancelled.cancel();
        assert!(delaunay_watched(&pts, &cancelled).is_err());
        // Cancelled before the start: no strip was triangulated.
        assert_eq!(cancelled.progress(), (0, 300_000));
        let (done, total) = crate::cancel::testing::cancelled_after(1, |watch| delaunay_watched(&pts, watch));
        assert!(done <= total && total == 300_000);
    }

    #[test]
    fn a_watched_grouped_run_counts_every_point_and_a_cancel_leaves_no_answer() {
        // Three groups of 100,000 points (one strip each) and a small one. Watching changes
        // nothing in the triangulations: each group's is the ungrouped call's on its points.
        let pts = lcg_cloud(300_400, 19, [0.0, 0.0], 1.0);
        let labels: Vec<i64> = (0..pts.len()).map(|i| if i < 400 { 9 } else { (i % 3) as i64 }).collect();
        let watch = Watch::new();
        let (watched, _) = delaunay_grouped_watched(&pts, &labels, OnGroupError::Raise, &watch).unwrap();
        assert_eq!(watch.progress(), (300_400, 300_400));
        let (plain, _) = delaunay_grouped(&pts, &labels, OnGroupError::Raise).unwrap();
        assert_eq!(watched.results, plain.results);
        let (done, total) = crate::cancel::testing::cancelled_after(1, |watch| {
            delaunay_grouped_watched(&pts, &labels, OnGroupError::Raise, watch).map(drop)
        });
        assert!(done <= total && total == 300_400);
    }

    #[test]
    fn the_whole_set_on_lines_stops_on_a_cancel_and_watching_changes_nothing() {
        // Points on four vertical lines: each of four strips is one line, so the strips are
        // refused and the set is triangulated whole, by insertion along its lines, which
        // looks at the watch. Closed form: a strip of two lines of m points each has
        // 2 (m - 1) triangles, so three strips between four lines of 10,000 have 59,994.
        let pts: Vec<Point> = (0..40_000).map(|i| [(i % 4) as f64, (i / 4) as f64]).collect();
        let watch = Watch::new();
        let watched = delaunay_in_strips(&pts, 4, &watch).unwrap();
        assert_eq!(watch.progress(), (40_000, 40_000));
        assert_eq!(watched, delaunay(&pts).unwrap());
        assert_eq!(watched.triangles.len(), 3 * 2 * (10_000 - 1));
        let cancelled = Watch::new();
        cancelled.cancel();
        assert!(whole::whole(&testing::positions(&pts), &cancelled).is_err());
    }

    #[test]
    fn grid_has_two_triangles_per_cell() {
        // Closed form: a k × k grid of unit cells is split into 2 (k − 1)² triangles.
        for k in [2usize, 3, 7, 20] {
            let pts: Vec<Point> = (0..k * k).map(|i| [(i % k) as f64, (i / k) as f64]).collect();
            let t = delaunay(&pts).unwrap();
            assert_eq!(t.triangles.len(), 2 * (k - 1) * (k - 1));
            check_triangulation(&pts, &t).unwrap();
        }
    }

    #[test]
    fn random_and_far_offset_clouds_satisfy_invariants() {
        // Euler's formula and the empty-circumcircle property (exact predicate).
        for (seed, offset) in [(1, [0.0, 0.0]), (2, [500_000.0, 6_000_000.0]), (3, [-1e9, 3e8])] {
            let pts = lcg_cloud(2000, seed, offset, 1.0);
            let t = delaunay(&pts).unwrap();
            check_triangulation(&pts, &t).unwrap();
        }
    }

    #[test]
    fn duplicates_map_to_smallest_row() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [1.0, 0.0], [-0.0, 0.0], [0.0, 1.0], [2.0, 2.0]];
        let t = delaunay(&pts).unwrap();
        assert_eq!(t.representative, vec![0, 1, 2, 1, 0, 2, 6]);
        check_triangulation(&pts, &t).unwrap();
        assert_eq!(t.triangles.len(), 2);
    }

    #[test]
    fn degenerate_inputs_are_refused() {
        let collinear: Vec<Point> = (0..10).map(|i| [i as f64, 2.0 * i as f64]).collect();
        assert!(matches!(delaunay(&collinear), Err(Error::Degenerate { .. })));
        let two = [[0.0, 0.0], [1.0, 1.0], [0.0, 0.0], [1.0, 1.0]];
        assert!(matches!(delaunay(&two), Err(Error::TooFewPoints { needed: 3, got: 2, .. })));
        assert!(matches!(delaunay(&[[0.0, 0.0]]), Err(Error::TooFewPoints { got: 1, .. })));
        let nan = [[0.0, 0.0], [1.0, f64::NAN], [1.0, 1.0]];
        assert!(matches!(delaunay(&nan), Err(Error::NonFiniteCoordinate { index: 1, .. })));
    }

    #[test]
    fn extreme_magnitudes_are_triangulated() {
        // Outside spade's accepted exponent range the input is scaled exactly by a power of
        // two, so the triangulation equals that of the same cloud at unit scale (the exact
        // predicates of the checker would overflow or underflow at the original scale).
        let unit = lcg_cloud(200, 9, [-0.5, -0.5], 1.0);
        let reference = delaunay(&unit).unwrap();
        check_triangulation(&unit, &reference).unwrap();
        for factor in [2f64.powi(990), 2f64.powi(-990)] {
            let scaled: Vec<Point> = unit.iter().map(|p| [p[0] * factor, p[1] * factor]).collect();
            assert_eq!(delaunay(&scaled).unwrap(), reference);
        }
    }

    #[test]
    fn cocircular_points_are_triangulated() {
        // Closed form: 16 points on a circle (a convex polygon) give 16 − 2 triangles.
        let pts: Vec<Point> = (0..16)
            .map(|i| {
                let a = i as f64 * std::f64::consts::PI / 8.0;
                [a.cos(), a.sin()]
            })
            .collect();
        let t = delaunay(&pts).unwrap();
        assert_eq!(t.triangles.len(), 14);
        check_triangulation(&pts, &t).unwrap();
    }

    #[test]
    fn areas_are_half_unit_cells_on_a_grid() {
        // Closed form: every triangle of a unit grid is half a unit cell.
        let pts: Vec<Point> = (0..25).map(|i| [(i % 5) as f64 + 1e6, (i / 5) as f64]).collect();
        let t = delaunay(&pts).unwrap();
        assert!(t.areas(&pts).iter().all(|&a| a == 0.5));
    }

    #[test]
    fn grouped_rows_and_errors_are_those_of_the_input() {
        // Group 4 repeats row 0's location at row 5; group 2 is collinear.
        let pts = [[0.0, 0.0], [5.0, 5.0], [1.0, 0.0], [6.0, 6.0], [0.0, 1.0], [0.0, 0.0], [7.0, 7.0]];
        let labels = [4, 2, 4, 2, 4, 4, 2];
        let (g, places) = delaunay_grouped(&pts, &labels, OnGroupError::Skip).unwrap();
        assert_eq!(g.labels, vec![2, 4]);
        let e = g.results[0].as_ref().unwrap_err();
        assert_eq!(e.to_string(), "group 2: points: all points are collinear, so no triangle exists");
        let t = g.results[1].as_ref().unwrap();
        assert_eq!(triangle_set(t), [[0, 2, 4]].into_iter().collect());
        assert_eq!(t.representative, vec![0, 2, 4, 0]);
        assert_eq!(
            places.by_row(&g, usize::MAX, |t, k| t.representative[k]),
            vec![0, usize::MAX, 2, usize::MAX, 4, 0, usize::MAX]
        );
        assert!(delaunay_grouped(&pts, &labels, OnGroupError::Raise).is_err());
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]
        #[test]
        fn integer_clouds_with_repeats_satisfy_invariants(
            raw in proptest::collection::vec((-6i32..6, -6i32..6), 3..60)
        ) {
            // Small integer coordinates: many duplicates, collinear runs and cocircular quads.
            let pts: Vec<Point> = raw.iter().map(|&(x, y)| [x as f64, y as f64]).collect();
            match delaunay(&pts) {
                Ok(t) => prop_assert_eq!(check_triangulation(&pts, &t), Ok(())),
                Err(e) => prop_assert!(e.is_degenerate()),
            }
        }

        #[test]
        fn grouped_equals_separate_calls(raw in proptest::collection::vec((-6i32..6, -6i32..6, 0i64..4), 1..120)) {
            // Each group triangulated by a separate call on its own points, with the indices
            // mapped to input rows here (row = rows[k]); errors likewise.
            let pts: Vec<Point> = raw.iter().map(|&(x, y, _)| [x as f64, y as f64]).collect();
            let labels: Vec<i64> = raw.iter().map(|&(_, _, g)| g).collect();
            let (grouped, places) = delaunay_grouped(&pts, &labels, OnGroupError::Skip).unwrap();
            for (g, (&label, outcome)) in grouped.labels.iter().zip(&grouped.results).enumerate() {
                let rows: Vec<usize> = (0..pts.len()).filter(|&i| labels[i] == label).collect();
                prop_assert!(rows.iter().enumerate().all(|(k, &i)| places.group[i] == g && places.within[i] == k));
                let own: Vec<Point> = rows.iter().map(|&i| pts[i]).collect();
                match (delaunay(&own), outcome) {
                    (Ok(t), Ok(ours)) => {
                        let triangles: Vec<[usize; 3]> = t.triangles.iter().map(|c| c.map(|v| rows[v])).collect();
                        let edges: Vec<[usize; 2]> = t.edges.iter().map(|e| e.map(|v| rows[v])).collect();
                        prop_assert_eq!(&ours.triangles, &triangles);
                        prop_assert_eq!(&ours.adjacent, &t.adjacent);
                        prop_assert_eq!(&ours.edges, &edges);
                        prop_assert_eq!(&ours.hull, &t.hull.iter().map(|&v| rows[v]).collect::<Vec<_>>());
                        prop_assert_eq!(&ours.representative, &t.representative.iter().map(|&v| rows[v]).collect::<Vec<_>>());
                    }
                    (Err(e), Err(ours)) => prop_assert_eq!(ours, &e.rows_from(&rows).in_group(label)),
                    (single, grouped) => prop_assert!(false, "separate {:?}, grouped {:?}", single.is_ok(), grouped.is_ok()),
                }
            }
        }
    }
}
