//! Longest edges on the paths of a tree (the bottleneck of the cycle an added edge would
//! close), by binary lifting over a rooted copy of the tree.

use super::Network;
use crate::geometry::distance;

/// Longest edge on tree paths, by binary lifting: O(n log n) to build, O(log n) per query.
pub(crate) struct PathMaxima {
    depth: Vec<u32>,
    /// `up[k][v]`: the 2^k-th ancestor of `v` (the root is its own).
    up: Vec<Vec<u32>>,
    /// `worst[k][v]`: the longest edge (length, edge index) on the way up `2^k` steps.
    worst: Vec<Vec<(f64, u32)>>,
}

impl PathMaxima {
    /// Over the edges of `net`, weighted by their lengths.
    pub fn new(net: &Network) -> PathMaxima {
        let lengths: Vec<f64> = net.edges.iter().map(|e| distance(net.nodes[e[0]], net.nodes[e[1]])).collect();
        PathMaxima::weighted(net.nodes.len(), &net.edges, &lengths)
    }

    /// Over a forest on `0..n` with edges `edges` of weights `weights` (one per edge).
    pub fn weighted(n: usize, edges: &[[usize; 2]], weights: &[f64]) -> PathMaxima {
        let mut adjacency: Vec<Vec<(usize, usize)>> = vec![Vec::new(); n];
        for (k, e) in edges.iter().enumerate() {
            adjacency[e[0]].push((e[1], k));
            adjacency[e[1]].push((e[0], k));
        }
        let mut depth = vec![0u32; n];
        let mut parent = vec![0u32; n];
        let mut up_edge = vec![(0.0f64, 0u32); n];
        let mut seen = vec![false; n];
        for root in 0..n {
            if seen[root] {
                continue;
            }
            seen[root] = true;
            parent[root] = root as u32;
            let mut stack = vec![root];
            while let Some(u) = stack.pop() {
                for &(v, k) in &adjacency[u] {
                    if !seen[v] {
                        seen[v] = true;
                        parent[v] = u as u32;
                        depth[v] = depth[u] + 1;
                        up_edge[v] = (weights[k], k as u32);
                        stack.push(v);
                    }
                }
            }
        }
        let levels = (usize::BITS - n.max(2).leading_zeros()) as usize;
        let mut up = vec![parent];
        let mut worst = vec![up_edge];
        for k in 1..levels {
            let (prev_up, prev_worst) = (&up[k - 1], &worst[k - 1]);
            let next_up: Vec<u32> = (0..n).map(|v| prev_up[prev_up[v] as usize]).collect();
            let next_worst: Vec<(f64, u32)> = (0..n)
                .map(|v| {
                    let a = prev_worst[v];
                    let b = prev_worst[prev_up[v] as usize];
                    if b.0 > a.0 {
                        b
                    } else {
                        a
                    }
                })
                .collect();
            up.push(next_up);
            worst.push(next_worst);
        }
        PathMaxima { depth, up, worst }
    }

    /// The longest edge (weight, index) on the tree path between `a` and `b` (`(0, 0)` when
    /// `a == b` or every edge on the path weighs 0; meaningless when they are in different
    /// trees of the forest).
    pub fn query(&self, mut a: usize, mut b: usize) -> (f64, usize) {
        let mut best = (0.0f64, 0u32);
        let mut take = |w: (f64, u32)| {
            if w.0 > best.0 {
                best = w;
            }
        };
        if self.depth[a] < self.depth[b] {
            std::mem::swap(&mut a, &mut b);
        }
        let mut diff = self.depth[a] - self.depth[b];
        let mut k = 0;
        while diff > 0 {
            if diff & 1 == 1 {
                take(self.worst[k][a]);
                a = self.up[k][a] as usize;
            }
            diff >>= 1;
            k += 1;
        }
        if a != b {
            for k in (0..self.up.len()).rev() {
                if self.up[k][a] != self.up[k][b] {
                    take(self.worst[k][a]);
                    take(self.worst[k][b]);
                    a = self.up[k][a] as usize;
                    b = self.up[k][b] as usize;
                }
            }
            take(self.worst[0][a]);
            take(self.worst[0][b]);
        }
        (best.0, best.1 as usize)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn path_maxima_match_a_walk_along_the_path() {
        // A path 0-1-2-3-4 with lengths 1, 3, 2, 0.5.
        let nodes = vec![[0.0, 0.0], [1.0, 0.0], [1.0, 3.0], [3.0, 3.0], [3.0, 3.5]];
        let net = Network { nodes, terminal_count: 5, edges: vec![[0, 1], [1, 2], [2, 3], [3, 4]] };
        let pm = PathMaxima::new(&net);
        assert_eq!(pm.query(0, 4), (3.0, 1));
        assert_eq!(pm.query(3, 4), (0.5, 3));
        assert_eq!(pm.query(4, 2), (2.0, 2));
    }
}
