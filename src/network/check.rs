//! The invariant checker of Steiner trees, which the tests call on every tree they build.

use std::f64::consts::PI;

use super::steiner::angle_at;
use super::union_find::UnionFind;
use super::{total_length, EdgeEnd, SteinerTree};
use crate::geometry::{distance, scale, sub, Point};

/// Check that `tree` is a Steiner tree of `points` as [`super::steiner_tree`] promises: a
/// tree on all rows and junctions, each edge with its smaller end first and its length as
/// given; every junction of degree three with its edges at 120° to within `angle_tol`
/// radians; no input row with more than three edges; `length` the sum of the edges and at
/// most `mst_length` (to within a relative 1e-12); `lower_bound` in `[0, length]`, and equal
/// to `length` when `optimal`.
///
/// # Errors
/// A sentence naming the first broken invariant.
pub fn check_steiner_tree(points: &[Point], tree: &SteinerTree, angle_tol: f64) -> std::result::Result<(), String> {
    let n = points.len();
    let m = n + tree.junctions.len();
    let node = |e: EdgeEnd| match e {
        EdgeEnd::Row(r) => r,
        EdgeEnd::Junction(j) => n + j,
    };
    let at = |v: usize| {
        if v < n {
            points[v]
        } else {
            tree.junctions[v - n]
        }
    };
    if tree.edges.len() + 1 != m.max(1) || tree.edge_length.len() != tree.edges.len() {
        return Err(format!("{} edges on {m} nodes is not a tree", tree.edges.len()));
    }
    let mut sets = UnionFind::new(m);
    let mut adjacency = vec![Vec::new(); m];
    for (k, &[ea, eb]) in tree.edges.iter().enumerate() {
        let (a, b) = (node(ea), node(eb));
        if a >= m || b >= m {
            return Err(format!("edge {ea:?}-{eb:?} names a node beyond {m}"));
        }
        if ea > eb {
            return Err(format!("edge {ea:?}-{eb:?} does not have its smaller end first"));
        }
        if tree.edge_length[k] != distance(at(a), at(b)) {
            return Err(format!(
                "edge {ea:?}-{eb:?} has length {} for {}",
                tree.edge_length[k],
                distance(at(a), at(b))
            ));
        }
        if !sets.union(a, b) {
            return Err(format!("edge {ea:?}-{eb:?} closes a cycle"));
        }
        adjacency[a].push(b);
        adjacency[b].push(a);
    }
    for (v, list) in adjacency.iter().enumerate() {
        if v < n {
            if list.len() > 3 {
                return Err(format!("input row {v} has {} edges", list.len()));
            }
            continue;
        }
        let j = v - n;
        let [a, b, c] = list[..] else {
            return Err(format!("junction {j} has degree {}", list.len()));
        };
        let p = at(v);
        // Directions as unit vectors: the angle is then free of underflow for tiny trees.
        let towards = |u: usize| scale(sub(at(u), p), 1.0 / distance(at(u), p));
        for (u, w) in [(a, b), (b, c), (c, a)] {
            let angle = angle_at([0.0, 0.0], towards(u), towards(w));
            if (angle - 2.0 * PI / 3.0).abs() > angle_tol {
                return Err(format!("junction {j} has an angle of {angle} rad between nodes {u} and {w}"));
            }
        }
        let shortest = [a, b, c].iter().map(|&u| distance(p, at(u))).fold(f64::INFINITY, f64::min);
        if shortest == 0.0 {
            return Err(format!("junction {j} coincides with a neighbour"));
        }
    }
    let length = total_length(&tree.edge_length);
    if (length - tree.length).abs() > 1e-9 * length.max(f64::MIN_POSITIVE) {
        return Err(format!("length {} differs from the edges' total {length}", tree.length));
    }
    if tree.length > tree.mst_length * (1.0 + 1e-12) {
        return Err(format!("length {} exceeds the MST length {}", tree.length, tree.mst_length));
    }
    if !(tree.lower_bound >= 0.0 && tree.lower_bound <= tree.length)
        || (tree.optimal && tree.lower_bound != tree.length)
    {
        return Err(format!(
            "lower bound {} does not fit length {} (optimal: {})",
            tree.lower_bound, tree.length, tree.optimal
        ));
    }
    Ok(())
}
