//! Bottleneck Steiner distances (Winter and Zachariasen 1997) and the minimum spanning
//! trees under them that the pruning tests of the full Steiner tree generation compare with.

use std::collections::HashMap;

use super::super::terminal_sets::members;
use crate::geometry::{distance, Point};

/// Bottleneck Steiner distances: `bsd(u, v)` is the longest edge on the path between `u`
/// and `v` in a minimum spanning tree of the terminals.
#[derive(Debug, Clone)]
pub(crate) struct Bottleneck {
    n: usize,
    table: Vec<f64>,
    /// MST edges of the terminals.
    pub mst: Vec<[usize; 2]>,
}

impl Bottleneck {
    /// From the terminals, by Prim's algorithm on the complete graph and one traversal per
    /// terminal. O(n²) time and space.
    pub fn new(points: &[Point]) -> Bottleneck {
        let n = points.len();
        let mut best = vec![f64::INFINITY; n];
        let mut from = vec![usize::MAX; n];
        let mut done = vec![false; n];
        let mut adjacency = vec![Vec::new(); n];
        let mut mst = Vec::with_capacity(n.saturating_sub(1));
        if n > 0 {
            best[0] = 0.0;
        }
        for _ in 0..n {
            let u =
                (0..n).filter(|&i| !done[i]).min_by(|&a, &b| best[a].total_cmp(&best[b])).expect("a vertex is left");
            done[u] = true;
            if from[u] != usize::MAX {
                let w = from[u];
                mst.push([w.min(u), w.max(u)]);
                adjacency[u].push(w);
                adjacency[w].push(u);
            }
            for v in 0..n {
                let d = distance(points[u], points[v]);
                if !done[v] && d < best[v] {
                    best[v] = d;
                    from[v] = u;
                }
            }
        }
        let mut table = vec![0.0; n * n];
        let mut stack = Vec::new();
        for root in 0..n {
            stack.clear();
            stack.push((root, usize::MAX, 0.0f64));
            while let Some((u, parent, worst)) = stack.pop() {
                table[root * n + u] = worst;
                for &v in &adjacency[u] {
                    if v != parent {
                        stack.push((v, u, worst.max(distance(points[u], points[v]))));
                    }
                }
            }
        }
        Bottleneck { n, table, mst }
    }

    /// The bottleneck Steiner distance between terminals `u` and `v`.
    #[inline]
    pub fn get(&self, u: usize, v: usize) -> f64 {
        self.table[u * self.n + v]
    }

    /// Length of the MST of `terminals` under the bottleneck distances.
    pub(crate) fn mst_length(&self, terminals: &[usize]) -> f64 {
        prim_length(terminals.len(), |a, b| self.get(terminals[a], terminals[b]))
    }
}

/// Length of the minimum spanning tree of the complete graph on `0..k` with edge weights
/// `weight(a, b)`: Prim's algorithm (Prim 1957) with an array, O(k²).
pub(in super::super) fn prim_length(k: usize, weight: impl Fn(usize, usize) -> f64) -> f64 {
    let mut best = vec![f64::INFINITY; k];
    let mut done = vec![false; k];
    if k == 0 {
        return 0.0;
    }
    best[0] = 0.0;
    let mut total = 0.0;
    for _ in 0..k {
        let u = (0..k).filter(|&i| !done[i]).min_by(|&a, &b| best[a].total_cmp(&best[b])).expect("a vertex is left");
        done[u] = true;
        total += best[u];
        for v in 0..k {
            if !done[v] {
                best[v] = best[v].min(weight(u, v));
            }
        }
    }
    total
}

/// Memo of [`Bottleneck::mst_length`] over the union of two disjoint terminal sets, keyed by
/// the union's words (one memo per worker thread).
#[derive(Debug, Default)]
pub(super) struct BsdTrees {
    lengths: HashMap<Box<[u64]>, f64>,
    key: Vec<u64>,
    terminals: Vec<usize>,
}

impl BsdTrees {
    pub(super) fn length(&mut self, a: &[u64], b: &[u64], bottleneck: &Bottleneck) -> f64 {
        self.key.clear();
        self.key.extend(a.iter().zip(b).map(|(x, y)| x | y));
        if let Some(&length) = self.lengths.get(self.key.as_slice()) {
            return length;
        }
        self.terminals.clear();
        self.terminals.extend(members(&self.key));
        let length = bottleneck.mst_length(&self.terminals);
        self.lengths.insert(self.key.as_slice().into(), length);
        length
    }
}

/// Append the smallest bottleneck distance from the terminals of `set` to each terminal.
pub(super) fn push_nearest(table: &mut Vec<f64>, set: &[u64], bottleneck: &Bottleneck, n: usize) {
    for v in 0..n {
        let mut best = f64::INFINITY;
        for u in members(set) {
            best = best.min(bottleneck.get(u, v));
        }
        table.push(best);
    }
}
