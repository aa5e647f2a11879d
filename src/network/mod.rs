//! Networks linking sites: Euclidean minimum spanning tree and Euclidean Steiner trees.
//!
//! - [`spanning_tree`]: the Euclidean MST, Kruskal on the Delaunay edges ([`mst`]).
//! - [`steiner_tree`]: the Euclidean Steiner tree, exact for small sets (full Steiner trees
//!   and their concatenation) and by Steiner insertion with position re-optimisation for
//!   large ones ([`steiner`]).
//! - [`check_steiner_tree`]: the invariant checker the tests call.

pub mod mst;
pub mod steiner;
pub mod union_find;

use std::collections::HashMap;
use std::f64::consts::PI;
use std::time::{Duration, Instant};

use crate::batch::{run_grouped, Grouped, OnGroupError};
use crate::error::{Error, Result};
use crate::geometry::predicates::all_collinear;
use crate::geometry::{distance, scale, to_local_frame, validate_points, BoundingBox, CompensatedSum, Point, Weights};
use steiner::Network;
use union_find::UnionFind;

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
    validate_points("points", points, 1)?;
    let edges = mst::mst_edges(points)?;
    let edge_length: Vec<f64> = edges.iter().map(|e| distance(points[e[0]], points[e[1]])).collect();
    let mut sum = CompensatedSum::default();
    edge_length.iter().for_each(|&l| sum.add(l));
    Ok(SpanningTree { edges, edge_length, length: sum.total() })
}

/// [`spanning_tree`] of every group of a labelled cloud, in parallel (see [`crate::batch`]).
/// Edges are given as input rows (of the whole cloud).
///
/// # Errors
/// As [`spanning_tree`], and [`Error::LengthMismatch`] when `labels` does not have one
/// entry per point.
pub fn spanning_trees(points: &[Point], labels: &[i64], on_error: OnGroupError) -> Result<Grouped<SpanningTree>> {
    run_grouped(points, Weights::Unit, labels, on_error, |group| {
        let mut tree = spanning_tree(group.points)?;
        for e in &mut tree.edges {
            let (a, b) = (group.members[e[0]], group.members[e[1]]);
            *e = [a.min(b), a.max(b)];
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
    /// Exact: full Steiner trees and their concatenation (at most 64 distinct terminals).
    Exact,
    /// Steiner insertion on Delaunay triangles with position re-optimisation.
    Heuristic,
}

/// Options of [`steiner_tree`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SteinerOptions {
    /// Exact, heuristic or automatic choice.
    pub method: SteinerMethod,
    /// Orders equal-gain Steiner insertions of the heuristic; the same seed gives the same tree.
    pub seed: u64,
    /// Wall-clock budget of an exact attempt, in seconds (`None`: unlimited for
    /// [`SteinerMethod::Exact`], [`AUTO_BUDGET`] seconds for [`SteinerMethod::Auto`]).
    /// When it runs out the heuristic's tree is returned, not proven optimal.
    pub time_limit: Option<f64>,
}

impl Default for SteinerOptions {
    fn default() -> Self {
        SteinerOptions { method: SteinerMethod::Auto, seed: 0, time_limit: None }
    }
}

/// Largest distinct terminal count that [`SteinerMethod::Auto`] tries exactly: uniformly
/// spread sets of this size are proven optimal in about 0.1–2 s, inside
/// [`AUTO_BUDGET`]; clustered or unlucky ones that are not fall back to the heuristic.
pub const AUTO_EXACT_TERMINALS: usize = 24;
/// Default time budget (seconds) of an automatic exact attempt.
pub const AUTO_BUDGET: f64 = 5.0;
/// Largest distinct terminal count the exact method accepts.
pub const EXACT_TERMINALS: usize = 64;

/// A Euclidean Steiner tree.
#[derive(Debug, Clone, PartialEq)]
pub struct SteinerTree {
    /// The input points in input order, then the Steiner points.
    pub nodes: Vec<Point>,
    /// How many of `nodes` are input points.
    pub terminal_count: usize,
    /// Edges as node indices.
    pub edges: Vec<[usize; 2]>,
    /// Total length.
    pub length: f64,
    /// Length of the minimum spanning tree of the input points.
    pub mst_length: f64,
    /// True only when the tree is proven to be a Steiner minimum tree.
    pub optimal: bool,
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
/// - [`Error::InvalidParameter`] for a negative or non-finite `time_limit`, or
///   [`SteinerMethod::Exact`] with more than [`EXACT_TERMINALS`] distinct points.
///
/// # Runtime
/// Heuristic: O(n log n) per insertion round, a handful of rounds, then position
/// re-optimisation (O(n) per iteration). Exact: exponential in the worst case; uniformly
/// spread terminals take about 1–10 ms for 10–14, 0.01–0.15 s for 16, 0.01–2 s for 20,
/// 0.1–1.5 s for 25 and 0.5–10 s for 30 (full Steiner tree generation dominates).
pub fn steiner_tree(points: &[Point], options: &SteinerOptions) -> Result<SteinerTree> {
    validate_points("points", points, 1)?;
    validate_options(options)?;
    let mut distinct = Distinct::of(points);
    if options.method == SteinerMethod::Exact && distinct.points.len() > EXACT_TERMINALS {
        return Err(Error::InvalidParameter {
            name: "exact",
            reason: format!(
                "the exact method handles at most {EXACT_TERMINALS} distinct points; got {}",
                distinct.points.len()
            ),
        });
    }
    let (mut frame, mut local) = Frame::of(&distinct.points);
    let mut mst_edges = mst::mst_edges(&local)?;
    if distinct.merge_nearly_coincident(&local, &mst_edges) {
        (frame, local) = Frame::of(&distinct.points);
        mst_edges = mst::mst_edges(&local)?;
    }
    let (net, optimal) = solve_distinct(&local, mst_edges, options)?;
    Ok(distinct.expand(points, &frame, &net, optimal))
}

/// Locations closer than this (in the normalised frame, diagonal about 1) are joined
/// directly rather than through the solvers, whose tolerances cannot tell them apart.
const NEARLY_COINCIDENT: f64 = 1e-12;

/// [`steiner_tree`] of every group of a labelled cloud, in parallel (see [`crate::batch`]).
/// Each group's tree has the group's points (in input order) as its first nodes.
///
/// # Errors
/// As [`steiner_tree`], and [`Error::LengthMismatch`] when `labels` does not have one entry
/// per point.
pub fn steiner_trees(
    points: &[Point],
    labels: &[i64],
    options: &SteinerOptions,
    on_error: OnGroupError,
) -> Result<Grouped<SteinerTree>> {
    validate_options(options)?;
    run_grouped(points, Weights::Unit, labels, on_error, |group| steiner_tree(group.points, options))
}

fn validate_options(options: &SteinerOptions) -> Result<()> {
    if let Some(t) = options.time_limit {
        if !(t.is_finite() && t >= 0.0) {
            return Err(Error::InvalidParameter {
                name: "time_limit",
                reason: format!("must be finite and >= 0 seconds; got {t:?}"),
            });
        }
    }
    Ok(())
}

/// Solve on distinct, normalised terminals, given their minimum spanning tree: the tree and
/// whether it is proven optimal.
fn solve_distinct(local: &[Point], mst_edges: Vec<[usize; 2]>, options: &SteinerOptions) -> Result<(Network, bool)> {
    let n = local.len();
    let chain = |edges: Vec<[usize; 2]>| Network { nodes: local.to_vec(), terminal_count: n, edges };
    if n < 3 || all_collinear(local) {
        // A Steiner point would need an angle below 120° between terminals; on a line there is none.
        return Ok((chain(mst_edges), true));
    }
    let exact = match options.method {
        SteinerMethod::Exact => true,
        SteinerMethod::Heuristic => false,
        SteinerMethod::Auto => n <= AUTO_EXACT_TERMINALS,
    };
    if exact {
        let budget = options.time_limit.or((options.method == SteinerMethod::Auto).then_some(AUTO_BUDGET));
        let deadline = budget.map(|s| Instant::now() + Duration::from_secs_f64(s.min(1e9)));
        let bottleneck = steiner::fst::Bottleneck::new(local);
        if let Some(trees) = steiner::fst::full_steiner_trees(local, &bottleneck, deadline) {
            if let Some((chosen, proven)) = steiner::concatenate::concatenate(n, &trees, deadline) {
                let net = assemble(local, &trees, &chosen);
                if net.edges.len() + 1 == net.nodes.len() {
                    return Ok((net, proven));
                }
            }
        }
    }
    let mst_length = chain(mst_edges.clone()).length();
    let net = steiner::heuristic::heuristic(local, mst_edges.clone(), options.seed);
    if net.length() <= mst_length {
        Ok((net, false))
    } else {
        Ok((chain(mst_edges), false))
    }
}

/// The tree made of the chosen full Steiner trees.
fn assemble(local: &[Point], trees: &[steiner::fst::FullTree], chosen: &[usize]) -> Network {
    use steiner::fst::End;
    let mut net = Network { nodes: local.to_vec(), terminal_count: local.len(), edges: Vec::new() };
    for &i in chosen {
        let base = net.nodes.len();
        net.nodes.extend_from_slice(&trees[i].steiner);
        let node = |end: End| match end {
            End::Terminal(t) => t,
            End::Steiner(k) => base + k,
        };
        net.edges.extend(trees[i].edges.iter().map(|&[a, b]| [node(a), node(b)]));
    }
    net
}

/// Distinct locations of the input, in order of first occurrence.
struct Distinct {
    points: Vec<Point>,
    /// Input rows of each distinct location, ascending.
    rows: Vec<Vec<usize>>,
}

impl Distinct {
    fn of(points: &[Point]) -> Distinct {
        let mut index: HashMap<(u64, u64), usize> = HashMap::with_capacity(points.len());
        let mut distinct = Distinct { points: Vec::new(), rows: Vec::new() };
        for (row, &p) in points.iter().enumerate() {
            // `+ 0.0` makes -0.0 and 0.0 one location.
            let key = ((p[0] + 0.0).to_bits(), (p[1] + 0.0).to_bits());
            let k = *index.entry(key).or_insert_with(|| {
                distinct.points.push(p);
                distinct.rows.push(Vec::new());
                distinct.points.len() - 1
            });
            distinct.rows[k].push(row);
        }
        distinct
    }

    /// Merge locations closer than [`NEARLY_COINCIDENT`] (`local`: the locations in the
    /// normalised frame, `mst_edges` their minimum spanning tree) into the earliest of them,
    /// as if repeated: their rows are then chained by direct edges of that tiny length. Such
    /// pairs are edges of the minimum spanning tree, so only its edges are examined.
    /// Returns whether any were merged.
    ///
    /// The tree is longer than the optimum by at most the merged distances (1e-12 of the
    /// extent), which is below the solvers' own tolerances; without the merge a Steiner point
    /// could be left on top of two such terminals with four edges.
    fn merge_nearly_coincident(&mut self, local: &[Point], mst_edges: &[[usize; 2]]) -> bool {
        let close: Vec<[usize; 2]> =
            mst_edges.iter().copied().filter(|&[a, b]| distance(local[a], local[b]) <= NEARLY_COINCIDENT).collect();
        if close.is_empty() {
            return false;
        }
        let mut sets = UnionFind::new(local.len());
        for &[a, b] in &close {
            sets.union(a, b);
        }
        // The earliest location of each set keeps its place; the others' rows join it.
        let mut keeper: HashMap<usize, usize> = HashMap::new();
        for k in 0..local.len() {
            keeper.entry(sets.find(k)).or_insert(k);
        }
        let mut points = Vec::with_capacity(keeper.len());
        let mut rows: Vec<Vec<usize>> = Vec::with_capacity(keeper.len());
        let mut slot = vec![usize::MAX; local.len()];
        for k in 0..local.len() {
            let first = keeper[&sets.find(k)];
            if first == k {
                slot[k] = points.len();
                points.push(self.points[k]);
                rows.push(std::mem::take(&mut self.rows[k]));
            } else {
                let moved = std::mem::take(&mut self.rows[k]);
                rows[slot[first]].extend(moved);
            }
        }
        for r in &mut rows {
            r.sort_unstable();
        }
        self.points = points;
        self.rows = rows;
        true
    }

    /// The tree on the input rows: Steiner points back in input coordinates, each repeated
    /// location a chain of zero-length edges carrying the location's edges at its two ends.
    fn expand(&self, points: &[Point], frame: &Frame, net: &Network, optimal: bool) -> SteinerTree {
        let n = points.len();
        let d = self.points.len();
        let mut nodes = points.to_vec();
        nodes.extend(net.nodes[d..].iter().map(|&p| frame.to_input(p)));
        let mut degree = vec![0usize; d];
        let mut edges = Vec::with_capacity(n + net.nodes.len() - d);
        // Node of the distinct location `k` for its next real edge: the first row takes two,
        // the last row of a repeated location the rest.
        let mut place = |k: usize| {
            let rows = &self.rows[k];
            degree[k] += 1;
            if degree[k] <= 2 || rows.len() == 1 {
                rows[0]
            } else {
                rows[rows.len() - 1]
            }
        };
        for &[a, b] in &net.edges {
            let map = |v: usize, place: &mut dyn FnMut(usize) -> usize| if v < d { place(v) } else { n + v - d };
            let ea = map(a, &mut place);
            let eb = map(b, &mut place);
            edges.push([ea, eb]);
        }
        for rows in &self.rows {
            edges.extend(rows.windows(2).map(|w| [w[0], w[1]]));
        }
        let length = total_length(&nodes, &edges);
        let mst_length = spanning_tree(points).map(|t| t.length).unwrap_or(0.0);
        SteinerTree { nodes, terminal_count: n, edges, length, mst_length, optimal }
    }
}

fn total_length(nodes: &[Point], edges: &[[usize; 2]]) -> f64 {
    let mut sum = CompensatedSum::default();
    for e in edges {
        sum.add(distance(nodes[e[0]], nodes[e[1]]));
    }
    sum.total()
}

/// The normalised frame: centred on the bounding box, scaled by a power of two (exact) so
/// that the diagonal lies in (0.5, 1].
struct Frame {
    origin: Point,
    factor: f64,
}

impl Frame {
    fn of(points: &[Point]) -> (Frame, Vec<Point>) {
        let (origin, local) = to_local_frame(points);
        let diagonal = BoundingBox::of(&local).map_or(0.0, |b| b.diagonal());
        let factor = if diagonal > 0.0 && diagonal.is_finite() { 2f64.powi(-(diagonal.log2().ceil() as i32)) } else { 1.0 };
        let local = local.into_iter().map(|p| scale(p, factor)).collect();
        (Frame { origin, factor }, local)
    }

    fn to_input(&self, p: Point) -> Point {
        let q = scale(p, 1.0 / self.factor);
        [q[0] + self.origin[0], q[1] + self.origin[1]]
    }
}

/// Check that `tree` is a Steiner tree as [`steiner_tree`] promises: a tree on all its
/// nodes; every Steiner point of degree three with its edges at 120° to within
/// `angle_tol` radians; no input point with more than three edges; `length` the sum of the
/// edges and at most `mst_length` (to within a relative 1e-12).
///
/// # Errors
/// A sentence naming the first broken invariant.
pub fn check_steiner_tree(tree: &SteinerTree, angle_tol: f64) -> std::result::Result<(), String> {
    let m = tree.nodes.len();
    if tree.edges.len() + 1 != m.max(1) {
        return Err(format!("{} edges on {} nodes is not a tree", tree.edges.len(), m));
    }
    let mut sets = UnionFind::new(m);
    let mut adjacency = vec![Vec::new(); m];
    for &[a, b] in &tree.edges {
        if a >= m || b >= m {
            return Err(format!("edge [{a}, {b}] names a node beyond {m}"));
        }
        if !sets.union(a, b) {
            return Err(format!("edge [{a}, {b}] closes a cycle"));
        }
        adjacency[a].push(b);
        adjacency[b].push(a);
    }
    for (v, list) in adjacency.iter().enumerate() {
        if v < tree.terminal_count {
            if list.len() > 3 {
                return Err(format!("input point {v} has {} edges", list.len()));
            }
            continue;
        }
        let [i, j, k] = list[..] else { return Err(format!("Steiner point {v} has degree {}", list.len())) };
        let p = tree.nodes[v];
        for (a, b) in [(i, j), (j, k), (k, i)] {
            let angle = steiner::angle_at(p, tree.nodes[a], tree.nodes[b]);
            if (angle - 2.0 * PI / 3.0).abs() > angle_tol {
                return Err(format!("Steiner point {v} has an angle of {angle} rad between nodes {a} and {b}"));
            }
        }
        let shortest = [i, j, k].iter().map(|&a| distance(p, tree.nodes[a])).fold(f64::INFINITY, f64::min);
        if shortest == 0.0 {
            return Err(format!("Steiner point {v} coincides with a neighbour"));
        }
    }
    let length = total_length(&tree.nodes, &tree.edges);
    if (length - tree.length).abs() > 1e-9 * length.max(f64::MIN_POSITIVE) {
        return Err(format!("length {} differs from the edges' total {length}", tree.length));
    }
    if tree.length > tree.mst_length * (1.0 + 1e-12) {
        return Err(format!("length {} exceeds the MST length {}", tree.length, tree.mst_length));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::random::SplitMix64;

    fn uniform(n: usize, seed: u64) -> Vec<Point> {
        let mut rng = SplitMix64::new(seed);
        let mut unit = || (rng.next_u64() >> 11) as f64 / (1u64 << 53) as f64;
        (0..n).map(|_| [unit(), unit()]).collect()
    }

    #[test]
    fn nearly_coincident_terminals_keep_the_invariants() {
        // Two terminals one unit in the last place apart (a case found by property testing)
        // once left a Steiner point of degree four on top of them; the invariants of a
        // Steiner tree (degree three at 120°, at most three edges per terminal) must hold.
        for far in [1.0, 6.0, 58.0] {
            let pts = [[0.0, 0.0], [0.0, far], [0.0, f64::EPSILON], [1.0, 0.0], [-4.0, 0.0]];
            for method in [SteinerMethod::Heuristic, SteinerMethod::Exact] {
                let t = steiner_tree(&pts, &SteinerOptions { method, ..exact() }).unwrap();
                check_steiner_tree(&t, 1e-6).unwrap();
                assert!(t.length <= t.mst_length * (1.0 + 1e-12));
            }
        }
    }

    fn exact() -> SteinerOptions {
        SteinerOptions { method: SteinerMethod::Exact, ..SteinerOptions::default() }
    }

    #[test]
    fn closed_forms_square_triangle_hexagon() {
        // Closed forms: unit square 1 + √3 with two Steiner points; equilateral triangle of
        // side 1: √3 with its Steiner point at the centroid; regular hexagon: five sides and
        // no Steiner point (Jarník and Kössler 1934).
        let square = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
        let triangle = [[0.0, 0.0], [1.0, 0.0], [0.5, steiner::HALF_SQRT3]];
        let hexagon: Vec<Point> = (0..6).map(|k| [(k as f64 * PI / 3.0).cos(), (k as f64 * PI / 3.0).sin()]).collect();
        for method in [SteinerMethod::Exact, SteinerMethod::Heuristic] {
            let o = SteinerOptions { method, ..SteinerOptions::default() };
            let t = steiner_tree(&square, &o).unwrap();
            check_steiner_tree(&t, 1e-8).unwrap();
            assert!((t.length - (1.0 + 3f64.sqrt())).abs() < 1e-12);
            assert_eq!(t.nodes.len(), 6);
            let t = steiner_tree(&triangle, &o).unwrap();
            check_steiner_tree(&t, 1e-8).unwrap();
            assert!((t.length - 3f64.sqrt()).abs() < 1e-12);
            assert!(distance(t.nodes[3], [0.5, steiner::HALF_SQRT3 / 3.0]) < 1e-12);
            let t = steiner_tree(&hexagon, &o).unwrap();
            check_steiner_tree(&t, 1e-8).unwrap();
            assert!((t.length - 5.0).abs() < 1e-12);
            assert_eq!(t.nodes.len(), 6);
            assert_eq!(t.optimal, method == SteinerMethod::Exact);
        }
    }

    #[test]
    fn exact_is_never_longer_than_the_heuristic_and_both_keep_the_invariants() {
        for seed in 0..4 {
            let pts = uniform(9, seed);
            let e = steiner_tree(&pts, &exact()).unwrap();
            let h = steiner_tree(&pts, &SteinerOptions { method: SteinerMethod::Heuristic, ..exact() }).unwrap();
            check_steiner_tree(&e, 1e-6).unwrap();
            check_steiner_tree(&h, 1e-6).unwrap();
            assert!(e.optimal);
            assert!(e.length <= h.length * (1.0 + 1e-12));
        }
        let big = uniform(400, 11);
        let h = steiner_tree(&big, &SteinerOptions::default()).unwrap();
        check_steiner_tree(&h, 1e-6).unwrap();
        assert!(h.saving() > 0.02);
    }

    #[test]
    fn twenty_uniform_terminals_are_solved_exactly() {
        // The exact method must prove optimality on 20 uniform terminals; the heuristic's
        // tree is a feasible Steiner tree, so the proven optimum is never longer.
        let pts = uniform(20, 2026);
        let e = steiner_tree(&pts, &exact()).unwrap();
        let h = steiner_tree(&pts, &SteinerOptions { method: SteinerMethod::Heuristic, ..exact() }).unwrap();
        check_steiner_tree(&e, 1e-6).unwrap();
        assert!(e.optimal);
        assert!(e.length <= h.length * (1.0 + 1e-12));
        // At most n − 2 Steiner points (Gilbert and Pollak 1968).
        assert!(e.nodes.len() - e.terminal_count <= 18);
        // Automatic choice is exact at this size.
        assert!(steiner_tree(&pts, &SteinerOptions::default()).unwrap().optimal);
    }

    #[test]
    fn repeated_locations_never_give_a_row_more_than_three_edges() {
        let mut pts = vec![[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0], [0.5, 0.5]];
        pts.extend_from_slice(&[[0.5, 0.5], [0.5, 0.5], [1.0, 0.0]]);
        for method in [SteinerMethod::Exact, SteinerMethod::Heuristic] {
            let t = steiner_tree(&pts, &SteinerOptions { method, ..SteinerOptions::default() }).unwrap();
            check_steiner_tree(&t, 1e-6).unwrap();
            assert_eq!(t.terminal_count, 8);
        }
        let same = [[2.0, 2.0]; 5];
        let t = steiner_tree(&same, &SteinerOptions::default()).unwrap();
        check_steiner_tree(&t, 1e-6).unwrap();
        assert_eq!((t.length, t.saving()), (0.0, 0.0));
    }

    #[test]
    fn parameters_and_groups() {
        let pts = uniform(70, 3);
        assert!(matches!(steiner_tree(&pts, &exact()), Err(Error::InvalidParameter { name: "exact", .. })));
        let bad = SteinerOptions { time_limit: Some(-1.0), ..SteinerOptions::default() };
        assert!(matches!(steiner_tree(&pts, &bad), Err(Error::InvalidParameter { name: "time_limit", .. })));
        let rushed = SteinerOptions { time_limit: Some(0.0), ..exact() };
        let t = steiner_tree(&pts[..10], &rushed).unwrap();
        assert!(!t.optimal);
        check_steiner_tree(&t, 1e-6).unwrap();
        let labels: Vec<i64> = (0..70).map(|i| (i % 3) as i64).collect();
        let g = steiner_trees(&pts, &labels, &SteinerOptions::default(), OnGroupError::Raise).unwrap();
        for (k, tree) in g.into_solved().unwrap().iter().enumerate() {
            let members: Vec<Point> = (0..70).filter(|i| i % 3 == k).map(|i| pts[i]).collect();
            assert_eq!(tree, &steiner_tree(&members, &SteinerOptions::default()).unwrap());
        }
        let s = spanning_trees(&pts, &labels, OnGroupError::Raise).unwrap();
        assert!(s.into_solved().unwrap().iter().all(|t| t.edges.iter().all(|e| labels[e[0]] == labels[e[1]])));
    }
}

#[cfg(test)]
mod steiner_properties {
    use super::*;
    use proptest::prelude::*;

    fn terminals() -> impl Strategy<Value = Vec<Point>> {
        prop::collection::vec((-1e3f64..1e3, -1e3f64..1e3).prop_map(|(x, y)| [x, y]), 2..40)
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]

        /// A tree; Steiner points of degree 3 at 120 degrees; no terminal above degree 3;
        /// never longer than the minimum spanning tree (`check_steiner_tree` states them).
        #[test]
        fn heuristic_tree_keeps_the_invariants(points in terminals(), seed in 0u64..100) {
            let options = SteinerOptions { method: SteinerMethod::Heuristic, seed, time_limit: None };
            let tree = steiner_tree(&points, &options).unwrap();
            prop_assert!(check_steiner_tree(&tree, 1e-6).is_ok(), "{:?}", check_steiner_tree(&tree, 1e-6));
            prop_assert!(tree.length <= tree.mst_length * (1.0 + 1e-12) + 1e-9);
        }

        /// Exact trees are never longer than heuristic ones on small sets.
        #[test]
        fn exact_is_never_longer_than_heuristic(points in prop::collection::vec((-1e3f64..1e3, -1e3f64..1e3).prop_map(|(x, y)| [x, y]), 3..7)) {
            let exact = steiner_tree(&points, &SteinerOptions { method: SteinerMethod::Exact, seed: 0, time_limit: None }).unwrap();
            let heuristic = steiner_tree(&points, &SteinerOptions { method: SteinerMethod::Heuristic, seed: 0, time_limit: None }).unwrap();
            prop_assert!(exact.optimal);
            prop_assert!(check_steiner_tree(&exact, 1e-6).is_ok());
            prop_assert!(exact.length <= heuristic.length * (1.0 + 1e-9) + 1e-9);
        }
    }
}
