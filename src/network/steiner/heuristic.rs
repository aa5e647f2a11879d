//! Steiner trees for large terminal sets: greedy Steiner insertion on Delaunay triangles,
//! after Smith, Lee and Liebman (1981, "An O(n log n) heuristic for Steiner minimal tree
//! problems on the Euclidean metric", Networks 11) and Beasley (1992, "A heuristic for
//! Euclidean and rectilinear Steiner problems", EJOR 58).
//!
//! One round: triangulate the current nodes (terminals and Steiner points); for every
//! triangle, the Fermat point would join its three corners by a star, and adding the star
//! to the current tree lets the two bottleneck edges of the cycles it closes go (the
//! longest edge on the tree paths between the corners, and the longest on the remaining
//! one); the gain is their length less the star's. The best stars that touch disjoint
//! corners and free distinct edges are added at once, the tree is recomputed as the
//! spanning tree of the old tree plus the stars, Steiner points of degree one or two are
//! dropped and the positions re-optimised ([`super::smith`]). Rounds repeat while they
//! shorten the tree by more than a part in 10⁶.

use super::path_maxima::PathMaxima;
use super::smith::{drop_thin_steiner_points, optimise_positions, settle};
use super::{fermat_point, Network};
use crate::cancel::Watch;
use crate::geometry::random::SplitMix64;
use crate::geometry::{distance, Point};
use crate::network::mst::kruskal;
use crate::partition::delaunay;

/// Largest number of insertion rounds.
const MAX_ROUNDS: usize = 12;
/// Smith iterations between rounds (the last clean-up runs to convergence).
const ROUND_ITERATIONS: usize = 40;

/// A Steiner tree of `terminals` (distinct, in the working frame) starting from their MST `mst`.
///
/// `seed` orders insertions of equal gain (a fixed seed gives a fixed tree).
/// A cancelled `watch` stops it between rounds with the tree so far.
pub(crate) fn heuristic(terminals: &[Point], mst: Vec<[usize; 2]>, seed: u64, watch: &Watch) -> Network {
    let mut net = Network { nodes: terminals.to_vec(), terminal_count: terminals.len(), edges: mst };
    let mut length = net.length();
    watch.plan(1);
    for _ in 0..MAX_ROUNDS {
        if watch.is_cancelled() {
            break;
        }
        let Ok(triangulation) = delaunay(&net.nodes) else {
            break;
        };
        let lifting = PathMaxima::new(&net);
        let mut candidates: Vec<(f64, Point, [usize; 3], [usize; 2])> = Vec::new();
        for &[a, b, c] in &triangulation.triangles {
            let (pa, pb, pc) = (net.nodes[a], net.nodes[b], net.nodes[c]);
            let f = fermat_point(pa, pb, pc);
            if f == pa || f == pb || f == pc {
                continue;
            }
            let star = distance(f, pa) + distance(f, pb) + distance(f, pc);
            let mut paths = [lifting.query(a, b), lifting.query(b, c), lifting.query(c, a)];
            paths.sort_by(|x, y| y.0.total_cmp(&x.0));
            let gain = paths[0].0 + paths[2].0 - star;
            if gain > 1e-12 {
                candidates.push((gain, f, [a, b, c], [paths[0].1, paths[2].1]));
            }
        }
        // A round at 10⁵ terminals takes about a second: poll between its stages too, so
        // Ctrl-C is not held for a whole round (a cancelled tree is discarded by the caller).
        if candidates.is_empty() || watch.is_cancelled() {
            break;
        }
        let tie = |corners: &[usize; 3]| {
            SplitMix64::new(
                seed ^ (corners[0] as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15)
                    ^ (corners[1] as u64) << 21
                    ^ (corners[2] as u64) << 42,
            )
            .next_u64()
        };
        candidates.sort_by(|x, y| y.0.total_cmp(&x.0).then_with(|| tie(&x.2).cmp(&tie(&y.2))));
        let mut corner_used = vec![false; net.nodes.len()];
        let mut edge_freed = vec![false; net.edges.len()];
        let mut graph = net.edges.clone();
        for (_, f, corners, freed) in candidates {
            if corners.iter().any(|&v| corner_used[v]) || freed.iter().any(|&e| edge_freed[e]) || freed[0] == freed[1] {
                continue;
            }
            corners.iter().for_each(|&v| corner_used[v] = true);
            freed.iter().for_each(|&e| edge_freed[e] = true);
            let s = net.nodes.len();
            net.nodes.push(f);
            graph.extend(corners.iter().map(|&v| [v, s]));
        }
        net.edges = kruskal(&net.nodes, graph);
        if watch.is_cancelled() {
            break;
        }
        drop_thin_steiner_points(&mut net);
        optimise_positions(&mut net, ROUND_ITERATIONS);
        let now = net.length();
        let improved = length - now;
        length = now;
        if improved <= 1e-6 * length {
            break;
        }
    }
    if !watch.is_cancelled() {
        settle(&mut net, 30, 200);
    }
    watch.advance(1);
    net
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::mst::mst_edges;

    #[test]
    fn heuristic_finds_the_unit_square_steiner_tree() {
        // Closed form: 1 + √3 with two Steiner points.
        let pts = [[-0.5, -0.5], [0.5, -0.5], [0.5, 0.5], [-0.5, 0.5]];
        let net = heuristic(&pts, mst_edges(&pts).unwrap(), 0, &Watch::new());
        assert!((net.length() - (1.0 + 3f64.sqrt())).abs() < 1e-9, "{}", net.length());
        assert_eq!(net.nodes.len(), 6);
    }
}
