//! Networks linking sites: Euclidean minimum spanning tree and Euclidean Steiner trees.
//!
//! - [`spanning_tree`]: the Euclidean MST, Kruskal on the Delaunay edges (`mst`).
//! - [`steiner_tree`]: the Euclidean Steiner tree, exact for small sets (full Steiner trees
//!   and their concatenation) and by Steiner insertion with position re-optimisation for
//!   large ones (`steiner`), on the distinct locations of the input (`distinct`) in the
//!   one working frame ([`crate::geometry::WorkingFrame`]).
//! - [`check_steiner_tree`]: the invariant checker the tests call.
//!
//! This file holds the public API and the validation; each algorithm has its own file.

mod check;
mod distinct;
mod mst;
mod steiner;
pub(crate) mod union_find;

pub use check::check_steiner_tree;

use crate::batch::{run_grouped, GroupWatch, Grouped, OnGroupError};
use crate::cancel::Watch;
use crate::error::{Error, Result};
use crate::geometry::{distance, validate_points, CompensatedSum, Point, Weights, WorkingFrame};
use distinct::Distinct;

/// A Euclidean minimum spanning tree.
#[derive(Debug, Clone, PartialEq)]
pub struct SpanningTree {
    /// `n − 1` edges as `[smaller row, larger row]` of the input, by non-decreasing length.
    pub edges: Vec<[usize; 2]>,
    /// Length of each edge.
    pub edge_length: Vec<f64>,
    /// Total length.
    pub length: f64,
}

/// The Euclidean minimum spanning tree of `points`.
///
/// Repeated locations are joined by zero-length edges; collinear points give the chain
/// along their line; one point gives no edges.
///
/// # Errors
/// [`Error::TooFewPoints`] when `points` is empty; [`Error::NonFiniteCoordinate`] for a NaN
/// or infinite coordinate.
///
/// # Runtime
/// O(n log n): a Delaunay triangulation and Kruskal's algorithm on its edges.
pub fn spanning_tree(points: &[Point]) -> Result<SpanningTree> {
    spanning_tree_watched(points, &Watch::new())
}

/// [`spanning_tree`] watched: progress counts a step per input point as the Delaunay
/// triangulation's strips end (see [`crate::delaunay_watched`]), then one per candidate edge
/// Kruskal's algorithm looks at (the rest at once when the tree is whole), and once `watch`
/// is cancelled the run stops when the strips under way end or within a block of edges, with
/// an error the caller drops ([`Watch::finish`]): a part of a spanning tree is no answer.
/// Watching changes nothing in the tree.
///
/// # Errors
/// As [`spanning_tree`].
pub fn spanning_tree_watched(points: &[Point], watch: &Watch) -> Result<SpanningTree> {
    validate_points("points", points, 1)?;
    let edges = mst::mst_edges_watched(points, watch)?;
    let edge_length: Vec<f64> = edges.iter().map(|e| distance(points[e[0]], points[e[1]])).collect();
    let length = total_length(&edge_length);
    Ok(SpanningTree { edges, edge_length, length })
}

/// [`spanning_tree`] of every group of a labelled cloud, in parallel (see [`crate::batch`]).
/// Edges are given as input rows (of the whole cloud), smaller row first.
///
/// # Errors
/// As [`spanning_tree`], and [`Error::LengthMismatch`] when `labels` does not have one
/// entry per point; with [`OnGroupError::Skip`] a group's error is its outcome.
pub fn spanning_trees(points: &[Point], labels: &[i64], on_error: OnGroupError) -> Result<Grouped<SpanningTree>> {
    spanning_trees_watched(points, labels, on_error, &Watch::new())
}

/// [`spanning_trees`] watched: progress counts the points of finished groups, and once
/// `watch` is cancelled the groups not yet begun are skipped and a running group stops as
/// [`spanning_tree_watched`] does, with an outcome the caller drops ([`Watch::finish`]).
/// Watching changes nothing in the trees.
///
/// # Errors
/// As [`spanning_trees`].
pub fn spanning_trees_watched(
    points: &[Point],
    labels: &[i64],
    on_error: OnGroupError,
    watch: &Watch,
) -> Result<Grouped<SpanningTree>> {
    let groups = GroupWatch::new(watch, points.len());
    run_grouped(points, Weights::Unit, labels, on_error, |group| {
        let mut tree = groups.finished(group.points.len(), |quiet| spanning_tree_watched(group.points, quiet))?;
        for e in &mut tree.edges {
            // Members ascend (the grouping is stable), so the smaller row stays first.
            *e = [group.members[e[0]], group.members[e[1]]];
        }
        Ok(tree)
    })
}

/// How [`steiner_tree`] solves.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SteinerMethod {
    /// Exact when the terminal count allows an answer within a few seconds, otherwise the
    /// heuristic; an exact attempt that runs out of time falls back to the heuristic.
    #[default]
    Auto,
    /// Exact: full Steiner trees and their concatenation (any number of terminals; the time
    /// grows exponentially in the worst case, see [`steiner_tree`]).
    Exact,
    /// Up to 20,000 distinct terminals, full Steiner trees of Delaunay-local sets of three
    /// or four terminals, concatenated greedily, then exactly within windows of terminals;
    /// beyond, Steiner insertion on Delaunay triangles; then position re-optimisation.
    Heuristic,
}

/// Options of [`steiner_tree`].
#[derive(Debug, Clone, PartialEq)]
pub struct SteinerOptions {
    /// Exact, heuristic or automatic choice.
    pub method: SteinerMethod,
    /// Orders the heuristic's greedy choices of equal gain; the same seed gives the same tree.
    pub seed: u64,
    /// Wall-clock budget of an exact attempt, in seconds (`None`: unlimited for
    /// [`SteinerMethod::Exact`], [`AUTO_BUDGET`] seconds for [`SteinerMethod::Auto`]).
    /// When it runs out, the best tree found is returned (at worst the heuristic's), not
    /// proven optimal, with a proven lower bound ([`SteinerTree::lower_bound`]).
    pub time_limit: Option<f64>,
    /// Cancel flag and progress count shared with the caller ([`crate::cancel`]). A
    /// cancelled run returns at once with the spanning tree or the heuristic's tree so far.
    pub watch: Watch,
}

impl Default for SteinerOptions {
    fn default() -> Self {
        SteinerOptions { method: SteinerMethod::Auto, seed: 0, time_limit: None, watch: Watch::default() }
    }
}

/// Largest distinct terminal count that [`SteinerMethod::Auto`] tries exactly: uniformly
/// spread sets of this size are proven optimal well under a second (0.01–0.25 s for 20 and
/// 0.06–0.63 s for 30 terminals in benchmarks/RESULTS.md), inside [`AUTO_BUDGET`];
/// clustered or unlucky ones that are not fall back to the heuristic. Kept low because a
/// grouped call makes one attempt per group.
pub const AUTO_EXACT_TERMINALS: usize = 24;
/// Default time budget (seconds) of an automatic exact attempt.
pub const AUTO_BUDGET: f64 = 5.0;

/// One end of an edge of a [`SteinerTree`].
///
/// The order (every row before every junction, each kind by number) is the order in which
/// an edge names its ends: the smaller end first.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum EdgeEnd {
    /// An input point, by its row.
    Row(usize),
    /// A junction (Steiner point), by its position in [`SteinerTree::junctions`].
    Junction(usize),
}

/// A Euclidean Steiner tree.
#[derive(Debug, Clone, PartialEq)]
pub struct SteinerTree {
    /// The junctions (Steiner points) added, in input coordinates; each joins three edges
    /// at 120°.
    pub junctions: Vec<Point>,
    /// Edges, smaller end first ([`EdgeEnd`]'s order), sorted.
    pub edges: Vec<[EdgeEnd; 2]>,
    /// Length of each edge.
    pub edge_length: Vec<f64>,
    /// Total length.
    pub length: f64,
    /// Length of the minimum spanning tree of the input points.
    pub mst_length: f64,
    /// True only when the tree is proven to be a Steiner minimum tree.
    pub optimal: bool,
    /// A proven lower bound on the length of a Steiner minimum tree, at most `length`
    /// (equal to it when `optimal`). It is the branch and cut's LP bound when the exact
    /// method generated every full Steiner tree, otherwise `mst_length` times 0.824, the
    /// Steiner ratio bound of Chung and Graham (1985).
    pub lower_bound: f64,
}

impl SteinerTree {
    /// `1 − length / mst_length` (0 when the MST has no length).
    pub fn saving(&self) -> f64 {
        if self.mst_length > 0.0 {
            1.0 - self.length / self.mst_length
        } else {
            0.0
        }
    }

    /// `length − lower_bound`: how much longer the tree may be than a Steiner minimum tree.
    pub fn gap(&self) -> f64 {
        self.length - self.lower_bound
    }

    /// [`SteinerTree::gap`] relative to `length` (0 when the tree has no length).
    pub fn relative_gap(&self) -> f64 {
        if self.length > 0.0 {
            self.gap() / self.length
        } else {
            0.0
        }
    }
}

/// The Euclidean Steiner tree of `points`: the shortest network joining them when
/// junctions may be added; every junction joins three edges at 120°.
///
/// Repeated locations are joined by zero-length edges (spread so that no row has more than
/// three edges); collinear points give the chain along their line (optimal); one point
/// gives no edges.
///
/// # Errors
/// - [`Error::TooFewPoints`] when `points` is empty;
/// - [`Error::NonFiniteCoordinate`] for a NaN or infinite coordinate;
/// - [`Error::InvalidParameter`] for a negative or non-finite `time_limit`.
///
/// # Runtime
/// Heuristic: up to 20,000 terminals, a bounded number of candidate sets per terminal,
/// greedy rounds of O(n log n) and windows of a fixed size (10,000 uniform terminals in
/// about 8 s); beyond, O(n log n) per insertion round, a handful of rounds; then position
/// re-optimisation (O(n) per iteration). Exact: exponential in the worst case; uniformly
/// spread terminals take about 1–10 ms for 10–14, 0.01–0.15 s for 16, 0.01–2 s for 20,
/// 0.1–1.5 s for 25 and 0.5–10 s for 30 (full Steiner tree generation dominates).
pub fn steiner_tree(points: &[Point], options: &SteinerOptions) -> Result<SteinerTree> {
    validate_points("points", points, 1)?;
    validate_options(options)?;
    let mut distinct = Distinct::of(points);
    // The solvers' tolerances are absolute: they work in the frame of unit size.
    let mut frame = WorkingFrame::of(&distinct.points);
    let mut local = frame.local(&distinct.points);
    let mut mst_edges = mst::mst_edges(&local)?;
    if distinct.merge_nearly_coincident(&local, &mst_edges) {
        frame = WorkingFrame::of(&distinct.points);
        local = frame.local(&distinct.points);
        mst_edges = mst::mst_edges(&local)?;
    }
    let solved = steiner::solve_distinct(&local, mst_edges, options);
    let mst_length = spanning_tree(points)?.length;
    Ok(distinct.expand(points, &frame, &solved, mst_length))
}

/// [`steiner_tree`] of every group of a labelled cloud, in parallel (see [`crate::batch`]).
/// Row ends name input rows of the whole cloud; junctions are numbered within each group's
/// tree.
///
/// # Errors
/// As [`steiner_tree`], and [`Error::LengthMismatch`] when `labels` does not have one entry
/// per point; with [`OnGroupError::Skip`] a group's error is its outcome.
pub fn steiner_trees(
    points: &[Point],
    labels: &[i64],
    options: &SteinerOptions,
    on_error: OnGroupError,
) -> Result<Grouped<SteinerTree>> {
    validate_options(options)?;
    // Progress counts the points of finished groups; each group's own solve is quiet.
    let groups = GroupWatch::new(&options.watch, points.len());
    run_grouped(points, Weights::Unit, labels, on_error, |group| {
        let mut tree = groups.finished(group.points.len(), |quiet| {
            steiner_tree(group.points, &SteinerOptions { watch: quiet.clone(), ..options.clone() })
        })?;
        for end in tree.edges.iter_mut().flatten() {
            // Members ascend (the grouping is stable), so every edge keeps its smaller end
            // first and the edges stay sorted.
            if let EdgeEnd::Row(r) = end {
                *r = group.members[*r];
            }
        }
        Ok(tree)
    })
}

fn validate_options(options: &SteinerOptions) -> Result<()> {
    if let Some(t) = options.time_limit {
        if !(t.is_finite() && t >= 0.0) {
            return Err(Error::InvalidParameter {
                name: "time_limit",
                reason: format!("must be finite and >= 0 seconds; got {t}"),
            });
        }
    }
    Ok(())
}

/// The total of edge lengths, summed with compensation.
fn total_length(edge_length: &[f64]) -> f64 {
    let mut sum = CompensatedSum::default();
    edge_length.iter().for_each(|&l| sum.add(l));
    sum.total()
}

#[cfg(test)]
mod tests;
