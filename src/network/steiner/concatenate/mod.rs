//! Concatenation of full Steiner trees: choose the shortest set of FSTs that forms a
//! spanning tree of the hypergraph whose hyperedges are the FSTs' terminal sets.
//!
//! Warme's (1998, "Spanning trees in hypergraphs with applications to Steiner trees")
//! integer program: a variable `x_i ∈ {0, 1}` per FST, `Σ (|S_i| − 1) x_i = n − 1`, and
//! the subtour constraints `Σ max(0, |S_i ∩ U| − 1) x_i ≤ |U| − 1` for terminal sets `U`,
//! solved by LP-based branch and cut as in Warme, Winter and Zachariasen (2000, "Exact
//! algorithms for plane Steiner tree problems: a computational study"):
//!
//! - the LP relaxation starts with the rank row, the covering rows and the subtour rows of
//!   shared pairs ([`relaxation`]), and is re-solved warm after each round of cuts;
//! - violated subtour constraints are separated from the fractional LP answer, first by
//!   connected components, then by minimum cuts ([`separate`]);
//! - only when no cut is violated does the search branch, depth first, on a fractional FST
//!   (the branch `x = 1` first), and a node whose LP bound reaches the incumbent is cut off;
//! - the incumbent starts as a greedy spanning tree and is improved by rounding each node's
//!   LP answer (the same greedy, in decreasing order of `x`).
//!
//! The lower bound is the smallest LP bound of a node still open, so a run stopped by its
//! clock reports the best tree found with a proven gap. The LP solver runs in slices of at
//! most 50 ms and the clock is polled between them and between nodes.

mod relaxation;
mod separate;

#[cfg(test)]
pub(crate) mod mip;

use std::collections::BTreeMap;

use relaxation::{Answer, Relaxation};

use super::fst::FullTree;
use crate::cancel::Clock;
use crate::network::union_find::UnionFind;

/// LP values within this distance of 0 or 1 count as integer.
const INTEGRAL: f64 = 1e-6;

/// The outcome of [`concatenate`].
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Concatenation {
    /// The chosen FSTs (indices into the trees).
    pub chosen: Vec<usize>,
    /// Their total length.
    pub length: f64,
    /// A proven lower bound on the length of any concatenation (working units); equal to
    /// `length` up to rounding when `proven`.
    pub lower_bound: f64,
    /// Whether the chosen FSTs are proven the shortest concatenation.
    pub proven: bool,
}

/// A node of the search: the fixes (FST index → 0 or 1) and the LP bound of its parent.
struct Node {
    fixes: BTreeMap<usize, f64>,
    bound: f64,
}

/// The shortest concatenation of `trees` over terminals `0..n` (which must include every
/// MST edge as a two-terminal FST, so that a spanning tree always exists); `None` only when
/// the run is cancelled. When the clock's deadline passes first, the best concatenation
/// found, unproven, with the smallest bound of the open nodes.
pub(crate) fn concatenate(n: usize, trees: &[FullTree], clock: &Clock) -> Option<Concatenation> {
    branch_and_cut(n, trees, clock, usize::MAX)
}

/// [`concatenate`], stopping as at the deadline once `node_limit` nodes have been solved.
pub(crate) fn branch_and_cut(n: usize, trees: &[FullTree], clock: &Clock, node_limit: usize) -> Option<Concatenation> {
    if n < 2 {
        return Some(Concatenation { chosen: Vec::new(), length: 0.0, lower_bound: 0.0, proven: true });
    }
    let (mut best, mut best_length) = greedy(n, trees, &vec![0.0; trees.len()])?;
    let mut lp = Relaxation::new(n, trees);
    let mut stack = vec![Node { fixes: BTreeMap::new(), bound: 0.0 }];
    // The smallest bound of a node given up on (the solver failed on it).
    let mut abandoned = f64::INFINITY;
    let close = |bound: f64, best_length: f64| bound >= best_length - 1e-9 * best_length.max(1.0);
    let mut solved = 0usize;
    while let Some(node) = stack.pop() {
        if close(node.bound, best_length) {
            continue;
        }
        if clock.stop() || solved >= node_limit {
            stack.push(node);
            break;
        }
        lp.set_fixes(&node.fixes, clock);
        // Cutting: re-solve until no subtour constraint is violated. Every LP answer on the
        // way bounds the node's subtree (cuts only raise it).
        let mut node_bound = node.bound;
        let answer = loop {
            match lp.solve(clock) {
                Answer::Solved(bound, x) => {
                    node_bound = node_bound.max(bound);
                    if close(bound, best_length) {
                        break None;
                    }
                    let cuts = separate::violated_subtours(n, trees, &x);
                    if cuts.is_empty() {
                        break Some((bound, x));
                    }
                    for inside in cuts {
                        let size = inside.iter().filter(|&&b| b).count();
                        lp.add_le(separate::subtour_row(trees, &inside), (size - 1) as f64, clock);
                    }
                    if clock.stop() {
                        break Some((f64::NAN, x));
                    }
                }
                Answer::Infeasible => break None,
                Answer::Stopped => break Some((f64::NAN, Vec::new())),
                Answer::Failed => {
                    abandoned = abandoned.min(node.bound);
                    break None;
                }
            }
        };
        solved += 1;
        let Some((bound, x)) = answer else {
            continue;
        };
        if bound.is_nan() {
            // Stopped while solving this node: it stays open with the bound reached.
            stack.push(Node { fixes: node.fixes, bound: node_bound });
            break;
        }
        if let Some((chosen, length)) = greedy(n, trees, &x) {
            if length < best_length {
                (best, best_length) = (chosen, length);
            }
        }
        // Branch on the fractional FST closest to 1/2 (ties: the lower index).
        let split = (0..x.len())
            .filter(|&i| x[i] > INTEGRAL && x[i] < 1.0 - INTEGRAL)
            .min_by(|&a, &b| (x[a] - 0.5).abs().total_cmp(&(x[b] - 0.5).abs()));
        let Some(j) = split else {
            // Integer and no subtour violated: a spanning tree of the hypergraph, which the
            // greedy rounding above has already taken when it is shorter.
            continue;
        };
        for value in [0.0, 1.0] {
            let mut fixes = node.fixes.clone();
            fixes.insert(j, value);
            stack.push(Node { fixes, bound });
        }
    }
    if clock.watch.is_cancelled() {
        return None;
    }
    let open = stack.iter().map(|node| node.bound).fold(abandoned, f64::min);
    let lower_bound = open.min(best_length).max(0.0);
    let proven = close(lower_bound, best_length);
    Some(Concatenation { chosen: best, length: best_length, lower_bound, proven })
}

/// A spanning tree of the hypergraph by Kruskal's rule over the FSTs in decreasing order of
/// `x` (ties: shorter per terminal joined, then lower index), taking an FST when its
/// terminals lie in distinct components. `None` when the FSTs do not span `0..n`.
fn greedy(n: usize, trees: &[FullTree], x: &[f64]) -> Option<(Vec<usize>, f64)> {
    let ratio = |i: usize| trees[i].length / (trees[i].terminals.len() - 1) as f64;
    let mut order: Vec<usize> = (0..trees.len()).collect();
    order.sort_by(|&a, &b| x[b].total_cmp(&x[a]).then(ratio(a).total_cmp(&ratio(b))).then(a.cmp(&b)));
    let mut sets = UnionFind::new(n);
    let mut chosen = Vec::new();
    let mut joined = 0;
    let mut roots = Vec::new();
    for i in order {
        roots.clear();
        roots.extend(trees[i].terminals.iter().map(|&u| sets.find(u)));
        roots.sort_unstable();
        if roots.windows(2).any(|w| w[0] == w[1]) {
            continue;
        }
        for &u in &trees[i].terminals[1..] {
            sets.union(trees[i].terminals[0], u);
        }
        joined += trees[i].terminals.len() - 1;
        chosen.push(i);
        if joined == n - 1 {
            break;
        }
    }
    if joined != n - 1 {
        return None;
    }
    chosen.sort_unstable();
    let length = chosen.iter().map(|&i| trees[i].length).sum();
    Some((chosen, length))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::steiner::fst::End;

    fn tree(terminals: &[usize], length: f64) -> FullTree {
        FullTree {
            terminals: terminals.to_vec(),
            steiner: Vec::new(),
            edges: vec![[End::Terminal(0), End::Terminal(1)]],
            length,
        }
    }

    #[test]
    fn picks_the_cheapest_hyperspanning_tree_and_rejects_cycles() {
        // Four terminals; the cheap triple pair {0,1,2} + {0,1,3} shares two terminals;
        // the triangle 0-1-2 by two 0.1 edges, then 2-3, is the optimum, 0.8 (hand-checked:
        // a cycle of three 0.1 edges would be cheaper per edge but is not a tree).
        let trees = vec![
            tree(&[0, 1, 2], 1.0),
            tree(&[0, 1, 3], 1.0),
            tree(&[2, 3], 0.6),
            tree(&[0, 3], 0.9),
            tree(&[0, 1], 0.1),
            tree(&[1, 2], 0.1),
            tree(&[0, 2], 0.1),
        ];
        let found = concatenate(4, &trees, &Clock::unlimited()).unwrap();
        assert!(found.proven);
        assert!((found.length - 0.8).abs() < 1e-9, "{found:?}");
        assert!(found.lower_bound <= found.length);
        // The whole-MIP reference reaches the same hand-checked optimum, as a tree.
        let (chosen, proven) = mip::concatenate_mip(4, &trees, &Clock::unlimited()).unwrap();
        let total: f64 = chosen.iter().map(|&i| trees[i].length).sum();
        assert!(proven && (total - 0.8).abs() < 1e-9, "{chosen:?}");
        assert!(mip::violated_components(4, &trees, &chosen).is_empty());
    }

    /// Terminals and full Steiner trees of a seeded uniform set.
    fn instance(n: usize, seed: u64) -> Vec<FullTree> {
        let mut rng = crate::geometry::random::SplitMix64::new(seed);
        let pts: Vec<[f64; 2]> = (0..n).map(|_| [rng.next_f64() - 0.5, rng.next_f64() - 0.5]).collect();
        let b = crate::network::steiner::fst::Bottleneck::new(&pts);
        crate::network::steiner::fst::full_steiner_trees(&pts, &b, &Clock::unlimited()).unwrap()
    }

    /// Whether `chosen` is a spanning tree of the hypergraph on `0..n`.
    fn spans(n: usize, trees: &[FullTree], chosen: &[usize]) -> bool {
        let mut sets = UnionFind::new(n);
        let mut joined = 0;
        for &i in chosen {
            let t = &trees[i].terminals;
            for &u in &t[1..] {
                if !sets.union(t[0], u) {
                    return false;
                }
                joined += 1;
            }
        }
        joined + 1 == n
    }

    #[test]
    fn branch_and_cut_agrees_with_the_integer_program_on_seeded_sets() {
        // Reference: the whole integer program solved by microlp's own branch and bound
        // (`mip::concatenate_mip`), on 20 seeded uniform sets of 10 to 24 terminals.
        for k in 0..20u64 {
            let n = 10 + (k as usize % 8) * 2;
            let trees = instance(n, 7000 + k);
            let found = concatenate(n, &trees, &Clock::unlimited()).unwrap();
            let (chosen, proven) = mip::concatenate_mip(n, &trees, &Clock::unlimited()).unwrap();
            let reference: f64 = chosen.iter().map(|&i| trees[i].length).sum();
            assert!(found.proven && proven, "n = {n}, k = {k}");
            assert!(spans(n, &trees, &found.chosen), "n = {n}, k = {k}");
            assert!(
                (found.length - reference).abs() <= 1e-9 * reference,
                "n = {n}, k = {k}: {found:?} against {reference}"
            );
        }
    }

    #[test]
    fn a_stopped_search_returns_a_spanning_tree_above_its_lower_bound() {
        // Stopped after the root (one node) or before any node (an expired deadline), the
        // answer is still a spanning tree, and its lower bound is below the optimum of the
        // reference integer program.
        for k in 0..6u64 {
            let n = 20 + k as usize;
            let trees = instance(n, 9000 + k);
            let (chosen, _) = mip::concatenate_mip(n, &trees, &Clock::unlimited()).unwrap();
            let optimum: f64 = chosen.iter().map(|&i| trees[i].length).sum();
            let expired = crate::cancel::Watch::new().clock(Some(0.0));
            for (clock, limit) in [(Clock::unlimited(), 1), (expired, usize::MAX)] {
                let found = branch_and_cut(n, &trees, &clock, limit).unwrap();
                assert!(spans(n, &trees, &found.chosen), "n = {n}");
                let length: f64 = found.chosen.iter().map(|&i| trees[i].length).sum();
                assert!((length - found.length).abs() < 1e-12);
                assert!(found.lower_bound <= optimum + 1e-9 && optimum <= found.length + 1e-9, "{found:?}, {optimum}");
            }
        }
    }
}
