//! Exact re-concatenation of a tree's parts inside windows of terminals.
//!
//! A tree made of elements (straight edges and full Steiner trees) is a spanning tree of the
//! hypergraph of their terminal sets. Take a window `W` of terminals and remove the chosen
//! elements whose terminals all lie in `W`: the rest of the tree falls into components, each
//! holding a terminal of `W`. Any spanning tree, over those components, of the candidate
//! elements inside `W` restores a spanning tree of all the terminals, so the shortest one —
//! found by the exact concatenation of [`super::super::concatenate`] on the contracted
//! hypergraph — replaces the removed elements when it is shorter. The removed elements are
//! candidates themselves, so a spanning tree exists and the tree never lengthens.
//!
//! Windows are runs of consecutive terminals along a Hilbert curve (Hilbert 1891), which
//! keeps them compact on any spread of terminals; a second pass with runs shifted by half a
//! window lets elements across the first pass's seams be exchanged. A limit on the branch
//! and cut nodes of each window bounds the work of an unlucky one (its best tree so far is
//! used): a count, not a deadline, so the tree does not depend on the machine's speed or
//! load.

use super::super::concatenate::branch_and_cut;
use super::super::fst::FullTree;
use crate::cancel::Watch;
use crate::geometry::Point;
use crate::network::union_find::UnionFind;
use crate::partition::{hilbert_index, HILBERT_SIDE};

/// How many windows on either side along the curve are searched for the components first.
const HALO: usize = 2;
/// Most branch and cut nodes of one window's concatenation (a 40-terminal window typically
/// needs a handful).
const WINDOW_NODES: usize = 400;

/// The order of `points` along a Hilbert curve over their bounding box.
pub(super) fn hilbert_order(points: &[Point]) -> Vec<usize> {
    let (mut low, mut high) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    for p in points {
        for k in 0..2 {
            low[k] = low[k].min(p[k]);
            high[k] = high[k].max(p[k]);
        }
    }
    let side = (high[0] - low[0]).max(high[1] - low[1]).max(f64::MIN_POSITIVE);
    let scale = f64::from(HILBERT_SIDE - 1) / side;
    let cell = |c: f64, k: usize| (((c - low[k]) * scale) as u32).min(HILBERT_SIDE - 1);
    let mut keyed: Vec<(u64, usize)> =
        points.iter().enumerate().map(|(i, p)| (hilbert_index(cell(p[0], 0), cell(p[1], 1)), i)).collect();
    keyed.sort_unstable();
    keyed.into_iter().map(|(_, i)| i).collect()
}

/// The elements a tree is made of and how windows find them.
pub(super) struct Elements<'a> {
    /// Straight edges and full Steiner trees (terminals ascending).
    pub elements: &'a [FullTree],
    /// `by_first[t]`: the elements whose smallest terminal is `t`.
    pub by_first: &'a [Vec<usize>],
    /// The terminals along the Hilbert curve ([`hilbert_order`]).
    pub order: &'a [usize],
}

/// Improve `chosen` (flags over the elements, a spanning tree of the hypergraph on `0..n`)
/// by exact re-concatenation in each window: runs of `window` terminals of the order, the
/// first one `offset` long when `offset > 0`. Returns false when `watch` was cancelled (the
/// tree is still a spanning tree).
pub(super) fn improve(parts_of: &Elements, chosen: &mut [bool], window: usize, offset: usize, watch: &Watch) -> bool {
    let Elements { elements, by_first, order } = *parts_of;
    let n = order.len();
    let mut place = vec![0usize; n];
    order.iter().enumerate().for_each(|(k, &t)| place[t] = k);
    let mut inside = vec![false; n];
    let mut local = vec![usize::MAX; n];
    let mut start = 0;
    while start < n {
        let end = if start == 0 && offset > 0 { offset.min(n) } else { (start + window).min(n) };
        let first = start;
        let members = &order[start..end];
        start = end;
        if members.len() < 3 {
            continue;
        }
        if watch.is_cancelled() {
            return false;
        }
        members.iter().for_each(|&t| inside[t] = true);
        let within = |e: usize| elements[e].terminals.iter().all(|&t| inside[t]);
        // Removing chosen elements of total rank r (terminals less one) from a spanning tree
        // leaves r + 1 components.
        let rank: usize = members
            .iter()
            .flat_map(|&t| &by_first[t])
            .filter(|&&e| chosen[e] && within(e))
            .map(|&e| elements[e].terminals.len() - 1)
            .sum();
        // The components, first from the chosen elements near the window along the curve
        // (a refinement of the true ones: connections through farther elements are
        // missed), and from every element only when that finds too many.
        let (low, high) = (first.saturating_sub(HALO * window), (end + HALO * window).min(n));
        // Union-find over places along the curve, less `shift`.
        let mut parts = UnionFind::new(high - low);
        let mut shift = low;
        for &t in &order[low..high] {
            for &e in &by_first[t] {
                let terminals = &elements[e].terminals;
                let near = terminals.iter().all(|&u| (low..high).contains(&place[u]));
                if chosen[e] && near && !within(e) {
                    terminals[1..].iter().for_each(|&u| {
                        parts.union(place[terminals[0]] - low, place[u] - low);
                    });
                }
            }
        }
        let mut count = number_components(members, &mut parts, &place, shift, &mut local);
        if count != rank + 1 {
            members.iter().for_each(|&t| local[parts.find(place[t] - shift)] = usize::MAX);
            (parts, shift) = (UnionFind::new(n), 0);
            for (e, element) in elements.iter().enumerate() {
                if chosen[e] && !within(e) {
                    let t = &element.terminals;
                    t[1..].iter().for_each(|&u| {
                        parts.union(place[t[0]], place[u]);
                    });
                }
            }
            count = number_components(members, &mut parts, &place, shift, &mut local);
        }
        let node = |parts: &mut UnionFind, t: usize| local[parts.find(place[t] - shift)];
        // Candidates inside the window, on the components; a candidate with two terminals
        // in one component would close a cycle.
        let mut candidates: Vec<usize> = Vec::new();
        let mut contracted: Vec<FullTree> = Vec::new();
        let mut removed = 0.0;
        for &t in members {
            for &e in &by_first[t] {
                if !within(e) {
                    continue;
                }
                if chosen[e] {
                    removed += elements[e].length;
                }
                let mut ends: Vec<usize> = elements[e].terminals.iter().map(|&u| node(&mut parts, u)).collect();
                ends.sort_unstable();
                if ends.windows(2).any(|w| w[0] == w[1]) {
                    continue;
                }
                candidates.push(e);
                contracted.push(FullTree {
                    terminals: ends,
                    steiner: Vec::new(),
                    edges: Vec::new(),
                    length: elements[e].length,
                });
            }
        }
        if count >= 2 {
            let clock = watch.clock(None);
            if let Some(found) = branch_and_cut(count, &contracted, &clock, WINDOW_NODES) {
                if found.length < removed - 1e-12 * removed.max(1.0) {
                    for &t in members {
                        for &e in &by_first[t] {
                            if within(e) {
                                chosen[e] = false;
                            }
                        }
                    }
                    found.chosen.iter().for_each(|&k| chosen[candidates[k]] = true);
                }
            }
        }
        for &t in members {
            inside[t] = false;
            local[parts.find(place[t] - shift)] = usize::MAX;
        }
    }
    !watch.is_cancelled()
}

/// Number the components of `members` (`local[root] = 0, 1, …` in order of first member),
/// the union-find indexed by place along the curve less `shift`; returns how many.
fn number_components(
    members: &[usize],
    parts: &mut UnionFind,
    place: &[usize],
    shift: usize,
    local: &mut [usize],
) -> usize {
    let mut count = 0;
    for &t in members {
        let root = parts.find(place[t] - shift);
        if local[root] == usize::MAX {
            local[root] = count;
            count += 1;
        }
    }
    count
}
