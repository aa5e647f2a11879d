//! The Euclidean minimum spanning tree: Kruskal's algorithm (Kruskal 1956) on the edges of
//! the Delaunay triangulation, which contains every Euclidean MST (Shamos and Hoey 1975).
//!
//! Collinear input has no triangulation; its MST is the chain of the points in order along
//! their line. Repeated locations are joined to their representative by zero-length edges.

use rayon::prelude::*;

use super::union_find::UnionFind;
use crate::cancel::{cancelled, Steps, Watch};
use crate::error::Result;
use crate::geometry::predicates::all_collinear;
use crate::geometry::{distance, dot, Point, WorkingFrame};
use crate::partition::{delaunay_watched, triangulated_positions};

/// Above this many candidate edges the sort runs on all cores.
const PARALLEL_SORT: usize = 1 << 15;

/// The edges of a Euclidean MST of `points` (validated, at least one point), in order of
/// non-decreasing length, each as `[smaller index, larger index]`.
///
/// # Errors
/// Only what the triangulation reports for finite input that is neither collinear nor
/// short of three distinct points, which does not happen.
///
/// # Runtime
/// O(n log n): the triangulation and the sort of its at most 3n − 3 edges.
pub(crate) fn mst_edges(points: &[Point]) -> Result<Vec<[usize; 2]>> {
    mst_edges_watched(points, &Watch::new())
}

/// [`mst_edges`] watched (see [`crate::spanning_tree_watched`]): `points.len()` steps for the
/// triangulation, then one per candidate edge; once `watch` is cancelled the outcome is
/// [`cancelled`], never a part of the tree.
pub(crate) fn mst_edges_watched(points: &[Point], watch: &Watch) -> Result<Vec<[usize; 2]>> {
    let n = points.len();
    if n < 2 {
        return Ok(Vec::new());
    }
    if n < 3 || all_collinear(points) {
        return Ok(collinear_chain(points));
    }
    let triangulation = match delaunay_watched(points, watch) {
        Ok(t) => t,
        // The input is not collinear, but the positions the triangulation sees are: they
        // flush coordinates below about 1e-43 of the largest to zero, which can make distinct
        // points coincide or line up. The chain is then taken in the order of those positions
        // (ordering by the input itself could join the ends of a bent chain, twice as long);
        // it is longer than the MST by at most the flushed amounts.
        Err(e) if e.is_degenerate() => {
            let seen = triangulated_positions(points);
            let mut chain = collinear_chain(&seen);
            chain.sort_by(|a, b| {
                distance(points[a[0]], points[a[1]]).total_cmp(&distance(points[b[0]], points[b[1]])).then(a.cmp(b))
            });
            return Ok(chain);
        }
        Err(e) => return Err(e),
    };
    let mut candidates: Vec<[usize; 2]> = triangulation.edges;
    for (i, &r) in triangulation.representative.iter().enumerate() {
        if r != i {
            candidates.push([r.min(i), r.max(i)]);
        }
    }
    kruskal_watched(points, candidates, watch)
}

/// Kruskal on the given candidate edges: the lightest spanning forest of the graph they
/// form, in order of non-decreasing length (ties broken by the candidates' order).
pub(crate) fn kruskal(points: &[Point], candidates: Vec<[usize; 2]>) -> Vec<[usize; 2]> {
    kruskal_watched(points, candidates, &Watch::new()).expect("a watch nobody holds is never cancelled")
}

/// Candidate edges Kruskal's loop takes between two looks at the watch.
const EDGE_BLOCK: usize = 1 << 16;

/// [`kruskal`] watched: a step per candidate edge (planned here), counted in blocks of
/// [`EDGE_BLOCK`] as the loop takes them, the rest once the forest is whole; once `watch` is
/// cancelled the outcome is [`cancelled`] within a block.
fn kruskal_watched(points: &[Point], candidates: Vec<[usize; 2]>, watch: &Watch) -> Result<Vec<[usize; 2]>> {
    let n = points.len();
    let mut steps = Steps::new(watch, candidates.len() as u64);
    // Lengths in the points' working frame (unit size, power-of-two scale): squared world
    // lengths overflow to infinity beyond about 1e154 and underflow to zero below about
    // 1e-162, which tied every edge. In the frame, lengths are at most about 1.5 and edges
    // of the triangulation no shorter than about 2^-142 of the extent (positions closer to
    // the origin are flushed, see `triangulated_positions`), so their squares stay normal.
    // Squared lengths are non-negative, so their bit patterns sort as the numbers do; the
    // candidate's position breaks ties, which makes the order total and the result
    // independent of the sort's (parallel) schedule.
    let frame = WorkingFrame::of(points);
    let key = |k: usize, e: &[usize; 2]| -> u128 {
        let d = frame.local_difference(points[e[0]], points[e[1]]);
        ((dot(d, d).to_bits() as u128) << 64) | k as u128
    };
    let mut keyed: Vec<u128> = if candidates.len() > PARALLEL_SORT {
        candidates.par_iter().enumerate().map(|(k, e)| key(k, e)).collect()
    } else {
        candidates.iter().enumerate().map(|(k, e)| key(k, e)).collect()
    };
    if keyed.len() > PARALLEL_SORT {
        keyed.par_sort_unstable();
    } else {
        keyed.sort_unstable();
    }
    let mut sets = UnionFind::new(n);
    let mut tree = Vec::with_capacity(n.saturating_sub(1));
    'blocks: for block in keyed.chunks(EDGE_BLOCK) {
        if watch.is_cancelled() {
            return Err(cancelled("points"));
        }
        for &k in block {
            let e = candidates[(k & u64::MAX as u128) as usize];
            if sets.union(e[0], e[1]) {
                tree.push(e);
                if tree.len() + 1 == n {
                    break 'blocks;
                }
            }
        }
        steps.advance(block.len() as u64);
    }
    steps.finish();
    Ok(tree)
}

/// The MST of collinear points: consecutive points in lexicographic order (which is the
/// order along their common line), each edge as `[smaller index, larger index]`, sorted by
/// length.
fn collinear_chain(points: &[Point]) -> Vec<[usize; 2]> {
    let mut order: Vec<usize> = (0..points.len()).collect();
    order.sort_by(|&a, &b| points[a].partial_cmp(&points[b]).expect("coordinates are finite").then(a.cmp(&b)));
    let mut edges: Vec<[usize; 2]> = order.windows(2).map(|w| [w[0].min(w[1]), w[0].max(w[1])]).collect();
    edges.sort_by(|a, b| {
        distance(points[a[0]], points[a[1]]).total_cmp(&distance(points[b[0]], points[b[1]])).then(a.cmp(b))
    });
    edges
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::union_find::UnionFind;

    fn total(points: &[Point], edges: &[[usize; 2]]) -> f64 {
        edges.iter().map(|e| distance(points[e[0]], points[e[1]])).sum()
    }

    fn is_spanning_tree(n: usize, edges: &[[usize; 2]]) -> bool {
        let mut uf = UnionFind::new(n);
        edges.len() + 1 == n && edges.iter().all(|e| uf.union(e[0], e[1]))
    }

    #[test]
    fn watched_trees_count_points_then_edges_and_a_cancel_leaves_no_tree() {
        // 200,000 points with 1,000 repeats: two strips, then every candidate edge (the
        // Delaunay edges and a zero-length edge per repeat). Watching changes nothing.
        let mut pts = crate::partition::testing::lcg_cloud(200_000, 23, [5e5, 6e6], 1e3);
        pts.extend_from_within(..1_000);
        let watch = Watch::new();
        let tree = mst_edges_watched(&pts, &watch).unwrap();
        let candidates = delaunay_watched(&pts, &Watch::new()).unwrap().edges.len() + 1_000;
        assert_eq!(watch.progress(), ((pts.len() + candidates) as u64, (pts.len() + candidates) as u64));
        assert_eq!(tree, mst_edges(&pts).unwrap());
        assert!(is_spanning_tree(pts.len(), &tree));
        let cancelled = Watch::new();
        cancelled.cancel();
        assert!(mst_edges_watched(&pts, &cancelled).is_err());
        // Cancelled once the triangulation is done: Kruskal's loop stops within a block.
        crate::cancel::testing::cancelled_after(pts.len() as u64, |watch| mst_edges_watched(&pts, watch));
    }

    #[test]
    fn points_the_triangulation_sees_as_collinear_or_repeated_get_their_true_mst() {
        // Coordinates below spade's smallest accepted magnitude are flushed to zero, so these
        // are degenerate to the triangulation but not to the exact orientation test. Reference:
        // Prim's algorithm on the complete graph.
        let cases: [&[Point]; 3] = [
            &[[0.0, 0.0], [3.1e-182, -1.0], [-8.4e-68, 0.0]],
            &[[1e-50, 0.0], [0.0, 1.0], [0.0, 2.0]],
            &[[0.0, 2.0], [1e-60, 0.0], [-1e-70, 1.0], [0.0, -3.0]],
        ];
        for pts in cases {
            let edges = mst_edges(pts).unwrap();
            assert!(is_spanning_tree(pts.len(), &edges), "{pts:?}");
            assert!((total(pts, &edges) - prim_length(pts)).abs() <= 1e-12, "{pts:?}: {edges:?}");
        }
    }

    /// Prim's algorithm on the complete graph (Prim 1957): the O(n²) textbook reference.
    fn prim_length(points: &[Point]) -> f64 {
        let n = points.len();
        let mut best = vec![f64::INFINITY; n];
        let mut done = vec![false; n];
        best[0] = 0.0;
        let mut length = 0.0;
        for _ in 0..n {
            let u = (0..n).filter(|&i| !done[i]).min_by(|&a, &b| best[a].total_cmp(&best[b])).unwrap();
            done[u] = true;
            length += best[u];
            for v in 0..n {
                if !done[v] {
                    best[v] = best[v].min(distance(points[u], points[v]));
                }
            }
        }
        length
    }

    #[test]
    fn huge_and_tiny_coordinates_keep_the_minimum_tree() {
        // Squared lengths overflowed (beyond about 1e154) or underflowed (below about 1e-162),
        // tying every edge: a square scaled by 1e-200 got a diagonal into its tree. Reference:
        // the MST is scale invariant, so its length is the scale times that of the unit-scale
        // points; closed form for the unit square (3 sides), Prim on the complete graph
        // (hypot does not overflow or underflow at these scales) for a random cloud.
        let square = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
        let cloud = crate::partition::testing::lcg_cloud(40, 7, [0.0, 0.0], 1.0);
        let unit = prim_length(&cloud);
        for s in [1e160, 1e250, 1e300, 1e-170, 1e-200, 1e-300] {
            let sq: Vec<Point> = square.iter().map(|p| [p[0] * s, p[1] * s]).collect();
            let edges = mst_edges(&sq).unwrap();
            assert!(is_spanning_tree(4, &edges));
            assert!((total(&sq, &edges) / s - 3.0).abs() <= 1e-12, "scale {s}: {edges:?}");
            let pts: Vec<Point> = cloud.iter().map(|p| [p[0] * s, p[1] * s]).collect();
            let edges = mst_edges(&pts).unwrap();
            assert!(is_spanning_tree(pts.len(), &edges));
            assert!((total(&pts, &edges) / s - unit).abs() <= 1e-12 * unit, "scale {s}");
            assert!((total(&pts, &edges) - prim_length(&pts)).abs() <= 1e-12 * prim_length(&pts), "scale {s}");
        }
    }

    #[test]
    fn grid_mst_has_length_k_squared_minus_one() {
        // Closed form: a k × k unit grid's MST is k² − 1 unit edges (every spanning tree of
        // the grid graph is one, and no two grid points are closer than 1).
        for k in [2usize, 3, 7] {
            let pts: Vec<Point> = (0..k * k).map(|i| [(i % k) as f64, (i / k) as f64]).collect();
            let edges = mst_edges(&pts).unwrap();
            assert!(is_spanning_tree(pts.len(), &edges));
            assert!((total(&pts, &edges) - (k * k - 1) as f64).abs() < 1e-12);
        }
    }

    #[test]
    fn collinear_duplicate_and_single_point_inputs() {
        let line: Vec<Point> = [3.0, 0.0, 7.0, 1.0, 3.0].iter().map(|&x| [x, 2.0 * x]).collect();
        let edges = mst_edges(&line).unwrap();
        assert!(is_spanning_tree(5, &edges));
        // Closed form: a chain from x = 0 to x = 7 on y = 2x is 7·√5 long.
        assert!((total(&line, &edges) - 7.0 * 5f64.sqrt()).abs() < 1e-12);
        assert!(mst_edges(&[[1.0, 1.0]]).unwrap().is_empty());
        let dup = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [1.0, 0.0]];
        let edges = mst_edges(&dup).unwrap();
        assert!(is_spanning_tree(4, &edges));
        assert!(edges.contains(&[1, 3]));
        assert!((total(&dup, &edges) - 2.0).abs() < 1e-12);
        let same = [[2.0, 2.0]; 4];
        assert_eq!(total(&same, &mst_edges(&same).unwrap()), 0.0);
    }

    proptest::proptest! {
        #[test]
        fn mst_length_matches_prim_on_the_complete_graph(
            raw in proptest::collection::vec((-100i32..100, -100i32..100), 1..60)
        ) {
            // Integer coordinates make duplicates and collinear triples common.
            let pts: Vec<Point> = raw.iter().map(|&(x, y)| [x as f64 * 0.5, y as f64 * 0.25]).collect();
            let edges = mst_edges(&pts).unwrap();
            proptest::prop_assert!(is_spanning_tree(pts.len(), &edges));
            proptest::prop_assert!((total(&pts, &edges) - prim_length(&pts)).abs() < 1e-9);
        }
    }
}
