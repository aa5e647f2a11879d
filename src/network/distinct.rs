//! Distinct locations: the Steiner solvers work on distinct terminals in the working frame;
//! this module reduces the input to them and expands the solved tree back onto every input
//! row.
//!
//! Invariant: every input row belongs to exactly one distinct location, and the rows of a
//! location are kept ascending, so the expanded tree names each row once and in a fixed
//! order.

use std::collections::HashMap;

use super::steiner::Solved;
use super::union_find::UnionFind;
use super::{total_length, EdgeEnd, SteinerTree};
use crate::geometry::{distance, location_key, Point, WorkingFrame};

/// Locations closer than this in the working frame (whose longer side is about 1) are joined
/// directly rather than through the solvers, whose tolerances cannot tell them apart.
pub(super) const NEARLY_COINCIDENT: f64 = 1e-12;

/// Distinct locations of the input, in order of first occurrence.
pub(super) struct Distinct {
    /// One point per location.
    pub(super) points: Vec<Point>,
    /// Input rows of each distinct location, ascending.
    rows: Vec<Vec<usize>>,
}

impl Distinct {
    /// The distinct locations of `points` (equal coordinates, `-0.0` and `0.0` alike, are one
    /// location: [`location_key`]).
    pub(super) fn of(points: &[Point]) -> Distinct {
        let mut index: HashMap<(u64, u64), usize> = HashMap::with_capacity(points.len());
        let mut distinct = Distinct { points: Vec::new(), rows: Vec::new() };
        for (row, &p) in points.iter().enumerate() {
            let k = *index.entry(location_key(p)).or_insert_with(|| {
                distinct.points.push(p);
                distinct.rows.push(Vec::new());
                distinct.points.len() - 1
            });
            distinct.rows[k].push(row);
        }
        distinct
    }

    /// Merge locations closer than [`NEARLY_COINCIDENT`] (`local`: the locations in the
    /// working frame, `mst_edges` their minimum spanning tree) into the earliest of them,
    /// as if repeated: their rows are then chained by direct edges of that tiny length. Such
    /// pairs are edges of the minimum spanning tree, so only its edges are examined.
    /// Returns whether any were merged.
    ///
    /// The tree is longer than the optimum by at most the merged distances (1e-12 of the
    /// extent), which is below the solvers' own tolerances; without the merge a Steiner point
    /// could be left on top of two such terminals with four edges.
    pub(super) fn merge_nearly_coincident(&mut self, local: &[Point], mst_edges: &[[usize; 2]]) -> bool {
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

    /// The tree on the input rows: junctions back in input coordinates, each repeated
    /// location a chain of zero-length edges carrying the location's edges at its two ends
    /// (so no row has more than three edges). Edges come out with the smaller end first,
    /// sorted.
    pub(super) fn expand(
        &self,
        points: &[Point],
        frame: &WorkingFrame,
        solved: &Solved,
        mst_length: f64,
    ) -> SteinerTree {
        let net = &solved.net;
        let d = self.points.len();
        let junctions: Vec<Point> = net.nodes[d..].iter().map(|&p| frame.to_world(p)).collect();
        let mut degree = vec![0usize; d];
        // Row of the distinct location `k` for its next real edge: the first row takes two,
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
        let mut end = |v: usize| {
            if v < d {
                EdgeEnd::Row(place(v))
            } else {
                EdgeEnd::Junction(v - d)
            }
        };
        let mut edges: Vec<[EdgeEnd; 2]> = Vec::with_capacity(points.len() + junctions.len());
        for &[a, b] in &net.edges {
            let (ea, eb) = (end(a), end(b));
            edges.push([ea.min(eb), ea.max(eb)]);
        }
        for rows in &self.rows {
            edges.extend(rows.windows(2).map(|w| [EdgeEnd::Row(w[0]), EdgeEnd::Row(w[1])]));
        }
        edges.sort_unstable();
        let at = |e: EdgeEnd| match e {
            EdgeEnd::Row(r) => points[r],
            EdgeEnd::Junction(j) => junctions[j],
        };
        let edge_length: Vec<f64> = edges.iter().map(|&[a, b]| distance(at(a), at(b))).collect();
        let length = total_length(&edge_length);
        // The bound maps to world units exactly (a power-of-two scale); a proven tree is its
        // own bound, and rounding of the lengths never lifts the bound above the length.
        let lower_bound = if solved.proven { length } else { frame.world_length(solved.lower_bound).min(length) };
        SteinerTree { junctions, edges, edge_length, length, mst_length, optimal: solved.proven, lower_bound }
    }
}
