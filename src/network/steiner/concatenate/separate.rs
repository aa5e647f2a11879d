//! Separation of subtour constraints from fractional solutions (Warme 1998, "Spanning
//! trees in hypergraphs with applications to Steiner trees", ch. 4).
//!
//! The subtour constraint of a terminal set `U` reads
//! `Σ_i x_i · max(0, |S_i ∩ U| − 1) ≤ |U| − 1`. Two passes:
//!
//! 1. Connected components of the support hypergraph (the FSTs with `x_i > 0`): every
//!    support FST lies in one component, and the equality `Σ (|S_i| − 1) x_i = n − 1`
//!    leaves some component with more than `|C| − 1` whenever there are two or more, so
//!    this cheap pass always finds a cut for a disconnected support (and for every cycle
//!    of an integer answer).
//! 2. Most violated constraint by minimum cuts: with `b_v = Σ_{i ∋ v} x_i`,
//!    `max(0, k − 1) = k − [k ≥ 1]` turns the left side minus `|U|` into
//!    `Σ_{v ∈ U} (b_v − 1) − Σ_{i : S_i ∩ U ≠ ∅} x_i`, a selection (maximum closure)
//!    problem: a vertex earns `b_v − 1` and obliges paying `x_i` for every FST it touches.
//!    Picard and Queyranne's reduction (1982) makes it a minimum `s`–`t` cut. The empty set
//!    scores 0, so each terminal `r` in turn is forced into `U` and the terminals before it
//!    are forced out (each set is then found once, and the networks shrink).

use crate::network::steiner::fst::FullTree;
use crate::network::union_find::UnionFind;

/// A constraint counts as violated beyond this margin (LP values are exact to about 1e-9).
pub(super) const VIOLATION: f64 = 1e-6;
/// Support threshold: smaller LP values count as zero.
const SUPPORT: f64 = 1e-9;
/// Largest number of cuts returned by one round of the minimum-cut pass; the LP is
/// re-solved after each round, which often satisfies the others.
const ROUND_CUTS: usize = 32;

/// The left side of the subtour constraint of the terminal set `inside` (membership
/// flags): `(FST index, max(0, |S_i ∩ U| − 1))` for each FST with a positive coefficient.
pub(super) fn subtour_row(trees: &[FullTree], inside: &[bool]) -> Vec<(usize, f64)> {
    trees
        .iter()
        .enumerate()
        .filter_map(|(i, t)| {
            let k = t.terminals.iter().filter(|&&u| inside[u]).count();
            (k >= 2).then_some((i, (k - 1) as f64))
        })
        .collect()
}

/// By how much `x` violates the subtour constraint of `inside`.
fn violation(trees: &[FullTree], x: &[f64], inside: &[bool]) -> f64 {
    let size = inside.iter().filter(|&&b| b).count();
    let lhs: f64 = subtour_row(trees, inside).iter().map(|&(i, c)| c * x[i]).sum();
    lhs - (size as f64 - 1.0)
}

/// Terminal sets (membership flags over `0..n`) whose subtour constraints `x` violates by
/// more than [`VIOLATION`]; empty when there is none.
pub(super) fn violated_subtours(n: usize, trees: &[FullTree], x: &[f64]) -> Vec<Vec<bool>> {
    let support: Vec<usize> = (0..trees.len()).filter(|&i| x[i] > SUPPORT).collect();
    let mut sets = UnionFind::new(n);
    for &i in &support {
        let t = &trees[i].terminals;
        for &u in &t[1..] {
            sets.union(t[0], u);
        }
    }
    let roots: Vec<usize> = (0..n).map(|u| sets.find(u)).collect();
    let mut components: Vec<usize> = roots.clone();
    components.sort_unstable();
    components.dedup();
    let mut cuts = Vec::new();
    if components.len() > 1 {
        for &r in &components {
            let inside: Vec<bool> = roots.iter().map(|&q| q == r).collect();
            if violation(trees, x, &inside) > VIOLATION {
                cuts.push(inside);
            }
        }
        if !cuts.is_empty() {
            return cuts;
        }
    }
    min_cut_pass(n, trees, x, &support)
}

/// The minimum-cut pass over the support FSTs (see the module documentation).
fn min_cut_pass(n: usize, trees: &[FullTree], x: &[f64], support: &[usize]) -> Vec<Vec<bool>> {
    let mut b = vec![0.0; n];
    for &i in support {
        for &v in &trees[i].terminals {
            b[v] += x[i];
        }
    }
    // Nodes: source, sink, terminals 2..2+n, support FSTs after them.
    let (source, sink) = (0usize, 1usize);
    let big = 4.0 * (n as f64 + 1.0);
    let mut found: Vec<Vec<bool>> = Vec::new();
    let mut excluded = vec![false; n];
    for forced in 0..n {
        let mut net = FlowNetwork::new(2 + n + support.len());
        for v in 0..n {
            let node = 2 + v;
            if excluded[v] {
                net.add_edge(node, sink, big);
            } else if v == forced {
                net.add_edge(source, node, big);
            } else if b[v] > 1.0 {
                net.add_edge(source, node, b[v] - 1.0);
            } else if b[v] < 1.0 {
                net.add_edge(node, sink, 1.0 - b[v]);
            }
        }
        for (k, &i) in support.iter().enumerate() {
            let h = 2 + n + k;
            net.add_edge(h, sink, x[i]);
            for &v in &trees[i].terminals {
                net.add_edge(2 + v, h, big);
            }
        }
        net.max_flow(source, sink);
        let reach = net.source_side(source);
        let inside: Vec<bool> = (0..n).map(|v| reach[2 + v]).collect();
        if inside.iter().filter(|&&f| f).count() >= 2
            && violation(trees, x, &inside) > VIOLATION
            && !found.contains(&inside)
        {
            found.push(inside);
            if found.len() >= ROUND_CUTS {
                break;
            }
        }
        excluded[forced] = true;
    }
    found
}

/// A flow network with real capacities, for Dinic's algorithm (Dinic 1970).
struct FlowNetwork {
    /// Per node, indices into `edges`.
    adjacency: Vec<Vec<usize>>,
    /// `(head, residual capacity)`; edge `e ^ 1` is the reverse of edge `e`.
    edges: Vec<(usize, f64)>,
}

/// Residual capacities at or below this count as saturated.
const RESIDUAL: f64 = 1e-12;

impl FlowNetwork {
    fn new(nodes: usize) -> FlowNetwork {
        FlowNetwork { adjacency: vec![Vec::new(); nodes], edges: Vec::new() }
    }

    fn add_edge(&mut self, from: usize, to: usize, capacity: f64) {
        self.adjacency[from].push(self.edges.len());
        self.edges.push((to, capacity));
        self.adjacency[to].push(self.edges.len());
        self.edges.push((from, 0.0));
    }

    /// Breadth-first levels from `source` in the residual network (`usize::MAX`: unreached).
    fn levels(&self, source: usize) -> Vec<usize> {
        let mut level = vec![usize::MAX; self.adjacency.len()];
        level[source] = 0;
        let mut queue = std::collections::VecDeque::from([source]);
        while let Some(u) = queue.pop_front() {
            for &e in &self.adjacency[u] {
                let (v, c) = self.edges[e];
                if c > RESIDUAL && level[v] == usize::MAX {
                    level[v] = level[u] + 1;
                    queue.push_back(v);
                }
            }
        }
        level
    }

    /// Maximum flow from `source` to `sink` (the residual capacities are left in place).
    fn max_flow(&mut self, source: usize, sink: usize) -> f64 {
        let mut total = 0.0;
        loop {
            let level = self.levels(source);
            if level[sink] == usize::MAX {
                return total;
            }
            let mut next = vec![0usize; self.adjacency.len()];
            loop {
                let pushed = self.augment(source, sink, f64::INFINITY, &level, &mut next);
                if pushed <= RESIDUAL {
                    break;
                }
                total += pushed;
            }
        }
    }

    /// One blocking-flow augmentation along level-increasing residual edges, iteratively
    /// (the networks can be deep enough for recursion to matter); returns the amount pushed.
    fn augment(&mut self, source: usize, sink: usize, limit: f64, level: &[usize], next: &mut [usize]) -> f64 {
        let mut path: Vec<usize> = Vec::new();
        let mut u = source;
        loop {
            if u == sink {
                let amount = path.iter().map(|&e| self.edges[e].1).fold(limit, f64::min);
                for &e in &path {
                    self.edges[e].1 -= amount;
                    self.edges[e ^ 1].1 += amount;
                }
                return amount;
            }
            let mut advanced = false;
            while next[u] < self.adjacency[u].len() {
                let e = self.adjacency[u][next[u]];
                let (v, c) = self.edges[e];
                if c > RESIDUAL && level[v] == level[u] + 1 {
                    path.push(e);
                    u = v;
                    advanced = true;
                    break;
                }
                next[u] += 1;
            }
            if !advanced {
                // Dead end: retreat and skip the edge that led here.
                let Some(e) = path.pop() else {
                    return 0.0;
                };
                u = self.edges[e ^ 1].0;
                next[u] += 1;
            }
        }
    }

    /// Nodes reachable from `source` in the residual network: the source side of a minimum cut.
    fn source_side(&self, source: usize) -> Vec<bool> {
        self.levels(source).into_iter().map(|l| l != usize::MAX).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::steiner::fst::End;

    fn tree(terminals: &[usize]) -> FullTree {
        FullTree {
            terminals: terminals.to_vec(),
            steiner: Vec::new(),
            edges: vec![[End::Terminal(0), End::Terminal(1)]],
            length: 1.0,
        }
    }

    #[test]
    fn max_flow_of_a_small_network_matches_the_hand_computed_cut() {
        // Hand-checked: the cut {s→a, b→t} of capacity 2 + 1 is minimum.
        let mut net = FlowNetwork::new(4);
        let (s, t, a, b) = (0, 1, 2, 3);
        net.add_edge(s, a, 2.0);
        net.add_edge(s, b, 5.0);
        net.add_edge(a, t, 4.0);
        net.add_edge(b, t, 1.0);
        net.add_edge(b, a, 0.5);
        assert!((net.max_flow(s, t) - 3.5).abs() < 1e-12);
        let side = net.source_side(s);
        assert!(side[s] && side[b] && !side[a] && !side[t]);
    }

    #[test]
    fn minimum_cuts_find_every_violated_subtour_of_small_fractional_points() {
        // Brute force over every terminal set: the minimum-cut pass finds a violated set
        // exactly when one exists, and what it returns is violated.
        let trees = vec![tree(&[0, 1, 2]), tree(&[1, 2, 3]), tree(&[0, 2]), tree(&[2, 3, 4]), tree(&[0, 4])];
        let mut rng = crate::geometry::random::SplitMix64::new(7);
        let n = 5;
        for _ in 0..200 {
            let x: Vec<f64> = trees.iter().map(|_| (rng.next_f64() * 4.0).floor() / 3.0).collect();
            let any = (1u32..1 << n).any(|mask| {
                let inside: Vec<bool> = (0..n).map(|v| mask >> v & 1 == 1).collect();
                inside.iter().filter(|&&b| b).count() >= 2 && violation(&trees, &x, &inside) > VIOLATION
            });
            let support: Vec<usize> = (0..trees.len()).filter(|&i| x[i] > SUPPORT).collect();
            let found = min_cut_pass(n, &trees, &x, &support);
            assert_eq!(any, !found.is_empty(), "{x:?}");
            assert!(found.iter().all(|inside| violation(&trees, &x, inside) > VIOLATION));
        }
    }
}
