//! Greedy concatenation of full Steiner trees by their saving over the current tree, after
//! Zachariasen and Winter (1999, Algorithmica 25), in rounds.
//!
//! The current tree is a spanning tree of the terminals whose edges are either straight
//! (weighted by their length) or links inside a chosen full Steiner tree (weight 0, never
//! removed). Adding a candidate tree `F` on terminals `S` closes cycles; the edges it frees
//! are the bottleneck edges of the minimum spanning tree of `S` under the tree's path
//! maxima, and its gain is their weight less `F`'s length (a tree with two terminals already
//! joined by chosen trees would close a cycle of chosen trees and is dropped for good).
//!
//! A round evaluates every live candidate against the tree of the round's start, takes them
//! in order of decreasing gain when their terminals lie in distinct chosen-tree components
//! and their freed edges are still free this round, and rebuilds the tree as the minimum
//! spanning tree (Kruskal 1956) of the old edges plus the new links. The rebuild never keeps
//! a freed edge that another candidate's links do not need, but candidates of one round can
//! overlap in their cycles, so their joint gain may fall short of the sum: a round that does
//! not shorten the tree is replaced by the single best candidate, whose gain is exact.
//!
//! Invariants: the tree spans the terminals; the chosen trees' terminal sets form a forest
//! in the hypergraph sense (each chosen tree joins distinct components); the total length
//! (straight edges plus chosen trees) strictly decreases every round.

use super::super::fst::FullTree;
use super::super::path_maxima::PathMaxima;
use crate::cancel::Clock;
use crate::geometry::random::SplitMix64;
use crate::geometry::{distance, Point};
use crate::network::union_find::UnionFind;

/// Gains at or below this (working-frame length) are not taken.
const GAIN_TOL: f64 = 1e-12;

/// A tree of `points` (distinct, in the working frame) made of straight edges of the minimum
/// spanning tree `mst` and a greedy selection of `trees` (full Steiner trees of at least
/// three terminals), starting from `mst`: the elements chosen, numbered `0..mst.len()` for
/// the edges of `mst` and `mst.len() + i` for `trees[i]`, ascending. Stops between rounds
/// when `clock` says so, with the tree so far. `seed` orders candidates of equal gain.
pub(crate) fn concatenate_greedy(
    points: &[Point],
    mst: &[[usize; 2]],
    trees: &[FullTree],
    seed: u64,
    clock: &Clock,
) -> Vec<usize> {
    let n = points.len();
    let mut edges: Vec<[usize; 2]> = mst.to_vec();
    let mut weights: Vec<f64> = edges.iter().map(|e| distance(points[e[0]], points[e[1]])).collect();
    let mut chosen: Vec<usize> = Vec::new();
    let mut joined = UnionFind::new(n);
    let mut alive: Vec<usize> = (0..trees.len()).collect();
    let mut total: f64 = weights.iter().sum();
    let mut candidates: Vec<(f64, usize, Vec<usize>)> = Vec::new();
    while !clock.stop() {
        let maxima = PathMaxima::weighted(n, &edges, &weights);
        candidates.clear();
        alive.retain(|&i| match saving(&trees[i], &maxima) {
            Saving::Closed => false,
            Saving::Gain(gain, freed) => {
                if gain > GAIN_TOL {
                    candidates.push((gain, i, freed));
                }
                true
            }
        });
        if candidates.is_empty() {
            break;
        }
        let tie = |i: usize| SplitMix64::new(seed ^ (i as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15)).next_u64();
        candidates.sort_by(|x, y| y.0.total_cmp(&x.0).then_with(|| tie(x.1).cmp(&tie(y.1))).then(x.1.cmp(&y.1)));
        let mut freed_now = vec![false; edges.len()];
        let mut round_joined = joined.clone();
        let mut taken: Vec<usize> = Vec::new();
        for (_, i, freed) in &candidates {
            let terminals = &trees[*i].terminals;
            let mut roots: Vec<usize> = terminals.iter().map(|&t| round_joined.find(t)).collect();
            roots.sort_unstable();
            if roots.windows(2).any(|w| w[0] == w[1]) || freed.iter().any(|&e| freed_now[e]) {
                continue;
            }
            freed.iter().for_each(|&e| freed_now[e] = true);
            for &t in &terminals[1..] {
                round_joined.union(terminals[0], t);
            }
            taken.push(*i);
        }
        let rebuilt = rebuild(n, &edges, &weights, trees, &taken, &chosen);
        let gained = total - rebuilt.2;
        let (next_edges, next_weights, next_total) = if gained > GAIN_TOL {
            rebuilt
        } else {
            // The round's candidates undid each other's gains: take the best alone (exact).
            taken = vec![candidates[0].1];
            rebuild(n, &edges, &weights, trees, &taken, &chosen)
        };
        for &i in &taken {
            let terminals = &trees[i].terminals;
            for &t in &terminals[1..] {
                joined.union(terminals[0], t);
            }
        }
        chosen.extend_from_slice(&taken);
        let mut is_taken = vec![false; trees.len()];
        taken.iter().for_each(|&i| is_taken[i] = true);
        alive.retain(|&i| !is_taken[i]);
        (edges, weights, total) = (next_edges, next_weights, next_total);
    }
    // Straight edges are always MST edges (the rebuild only drops old ones): number them
    // as the elements `0..mst.len()`, the trees after them.
    let index: std::collections::HashMap<[usize; 2], usize> =
        mst.iter().enumerate().map(|(k, e)| ([e[0].min(e[1]), e[0].max(e[1])], k)).collect();
    let mut elements: Vec<usize> = edges
        .iter()
        .zip(&weights)
        .filter(|(_, &w)| w > 0.0)
        .map(|(e, _)| index[&[e[0].min(e[1]), e[0].max(e[1])]])
        .collect();
    elements.extend(chosen.iter().map(|&i| mst.len() + i));
    elements.sort_unstable();
    elements
}

/// What adding a candidate to the current tree would do.
enum Saving {
    /// Two of its terminals are already joined by chosen trees.
    Closed,
    /// The weight it frees less its length, and the edges freed.
    Gain(f64, Vec<usize>),
}

/// Prim's algorithm (Prim 1957) on the candidate's terminals under the path maxima: the
/// spanning tree's edges are the tree edges the candidate frees (distinct when weights are;
/// a tie that would free one edge twice gives no gain).
fn saving(tree: &FullTree, maxima: &PathMaxima) -> Saving {
    let t = &tree.terminals;
    let k = t.len();
    let mut best = vec![(f64::INFINITY, usize::MAX); k];
    let mut done = vec![false; k];
    best[0] = (0.0, usize::MAX);
    let mut freed = Vec::with_capacity(k - 1);
    let mut total = 0.0;
    for step in 0..k {
        let u = (0..k).filter(|&i| !done[i]).min_by(|&a, &b| best[a].0.total_cmp(&best[b].0)).expect("one is left");
        done[u] = true;
        if step > 0 {
            freed.push(best[u].1);
            total += best[u].0;
        }
        for v in 0..k {
            if !done[v] {
                let (w, e) = maxima.query(t[u], t[v]);
                if w <= 0.0 {
                    return Saving::Closed;
                }
                if w < best[v].0 {
                    best[v] = (w, e);
                }
            }
        }
    }
    let mut distinct = freed.clone();
    distinct.sort_unstable();
    distinct.dedup();
    if distinct.len() != freed.len() {
        return Saving::Gain(0.0, freed);
    }
    Saving::Gain(total - tree.length, freed)
}

/// The minimum spanning tree of `edges` (with `weights`) plus weight-0 links joining the
/// terminals of each of `taken`, and its total length counting every chosen tree (`chosen`
/// and `taken`) at its own length.
fn rebuild(
    n: usize,
    edges: &[[usize; 2]],
    weights: &[f64],
    trees: &[FullTree],
    taken: &[usize],
    chosen: &[usize],
) -> (Vec<[usize; 2]>, Vec<f64>, f64) {
    let mut all: Vec<([usize; 2], f64)> = edges.iter().copied().zip(weights.iter().copied()).collect();
    for &i in taken {
        let t = &trees[i].terminals;
        all.extend(t[1..].iter().map(|&u| ([t[0], u], 0.0)));
    }
    // Stable: ties keep the old edges' order, so the rebuild is deterministic.
    all.sort_by(|a, b| a.1.total_cmp(&b.1));
    let mut sets = UnionFind::new(n);
    let (mut kept, mut kept_weights) = (Vec::with_capacity(n - 1), Vec::with_capacity(n - 1));
    let mut total = 0.0;
    for (e, w) in all {
        if sets.union(e[0], e[1]) {
            kept.push(e);
            kept_weights.push(w);
            total += w;
        }
    }
    total += chosen.iter().chain(taken).map(|&i| trees[i].length).sum::<f64>();
    (kept, kept_weights, total)
}
