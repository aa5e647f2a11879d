//! Steiner trees for large terminal sets by concatenating local full Steiner trees, after
//! Zachariasen and Winter (1999, "Concatenation-based greedy heuristics for the Euclidean
//! Steiner tree problem", Algorithmica 25):
//!
//! 1. [`trees`]: the full Steiner trees of the terminal sets of three to [`MAX_SET`]
//!    terminals that are connected in the Delaunay graph, kept when they pass the upper
//!    bound test of the exact solver;
//! 2. [`greedy`]: starting from the minimum spanning tree, the trees are added greedily by
//!    their saving over the current tree, in rounds;
//! 3. [`windows`]: the parts inside windows of terminals along a Hilbert curve are
//!    re-concatenated exactly, the whole set at once when it is small;
//! 4. the clean-up of [`super::smith::settle`], which splits the angles below 120° where two
//!    chosen trees or straight edges meet at a terminal and re-optimises every Steiner
//!    point, never lengthening the tree.
//!
//! Each terminal roots a bounded number of candidate sets on spread input and windows have
//! a fixed size, so the whole is O(n log n).

mod greedy;
mod trees;
mod windows;

use super::fst::{End, FullTree};
use super::smith::settle;
use super::solve::assemble;
use super::Network;
use crate::cancel::Watch;
use crate::geometry::{distance, Point};

/// Largest number of terminals of a candidate set.
pub(crate) const MAX_SET: usize = 4;
/// Terminals per window of the exact re-concatenation.
pub(crate) const WINDOW: usize = 40;
/// Up to this many terminals the whole set is one window: the candidates are concatenated
/// exactly (within the window's node limit), which on every proven uniform set of 20 to 40
/// terminals measured gave the Steiner minimum tree.
pub(crate) const WHOLE: usize = 150;

/// A Steiner tree of `terminals` (distinct, in the working frame, not all collinear) from
/// their minimum spanning tree `mst`, with candidate sets of up to `max_set` terminals and
/// windows of `window` terminals (one window when there are at most [`WHOLE`]); `seed`
/// orders candidates of equal gain in the greedy
/// start. A cancelled `watch` stops it between stages with the tree so far (at first the
/// spanning tree).
pub(crate) fn local_heuristic(
    terminals: &[Point],
    mst: &[[usize; 2]],
    max_set: usize,
    window: usize,
    seed: u64,
    watch: &Watch,
) -> Network {
    let n = terminals.len();
    let clock = watch.clock(None);
    let spanning = || Network { nodes: terminals.to_vec(), terminal_count: n, edges: mst.to_vec() };
    watch.plan(1);
    let Some(candidates) = trees::local_full_trees(terminals, mst, max_set, &clock) else {
        return spanning();
    };
    let start = greedy::concatenate_greedy(terminals, mst, &candidates, seed, &clock);
    // Elements: the spanning tree's edges as two-terminal trees, then the candidates.
    let mut elements: Vec<FullTree> = mst
        .iter()
        .map(|&[u, v]| FullTree {
            terminals: vec![u.min(v), u.max(v)],
            steiner: Vec::new(),
            edges: vec![[End::Terminal(u), End::Terminal(v)]],
            length: distance(terminals[u], terminals[v]),
        })
        .collect();
    elements.extend(candidates);
    let mut chosen = vec![false; elements.len()];
    start.iter().for_each(|&e| chosen[e] = true);
    let mut by_first = vec![Vec::new(); n];
    for (e, element) in elements.iter().enumerate() {
        by_first[element.terminals[0]].push(e);
    }
    let order = windows::hilbert_order(terminals);
    let window = if n <= WHOLE { n } else { window.max(3) };
    let parts = windows::Elements { elements: &elements, by_first: &by_first, order: &order };
    if windows::improve(&parts, &mut chosen, window, 0, watch) && n > window {
        windows::improve(&parts, &mut chosen, window, window / 2, watch);
    }
    let picked: Vec<usize> = (0..elements.len()).filter(|&e| chosen[e]).collect();
    let mut net = assemble(terminals, &elements, &picked);
    if !watch.is_cancelled() {
        settle(&mut net, 30, 200);
    }
    watch.advance(1);
    net
}

#[cfg(test)]
mod measure {
    use super::*;
    use crate::geometry::random::SplitMix64;
    use crate::network::mst::mst_edges;
    use crate::network::steiner::{concatenate, heuristic, solve_distinct};
    use crate::network::{SteinerMethod, SteinerOptions};

    /// Capture of the optimal saving, `(MST − tree) / (MST − optimum)`, on seeded uniform
    /// sets for benchmarks/RESULTS.md:
    /// `cargo test --release --lib capture_of_uniform_sets -- --ignored --nocapture`, sizes
    /// from `CAPTURE_SIZES` (default `20,30`), seeds `0..CAPTURE_SEEDS` (default 5), each
    /// exact solve stopped after `CAPTURE_LIMIT` seconds (default 120); only proven optima
    /// count.
    #[test]
    #[ignore = "measurement, minutes long"]
    fn capture_of_uniform_sets() {
        let var = |name: &str, default: &str| std::env::var(name).unwrap_or_else(|_| default.to_string());
        let sizes: Vec<usize> = var("CAPTURE_SIZES", "20,30").split(',').map(|s| s.trim().parse().unwrap()).collect();
        let seeds: u64 = var("CAPTURE_SEEDS", "5").parse().unwrap();
        let limit: f64 = var("CAPTURE_LIMIT", "120").parse().unwrap();
        let set_sizes: Vec<usize> = var("CAPTURE_SET", "4").split(',').map(|s| s.trim().parse().unwrap()).collect();
        let window: usize = var("CAPTURE_WINDOW", "120").parse().unwrap();
        for n in sizes {
            for seed in 0..seeds {
                let mut rng = SplitMix64::new(1000 * n as u64 + seed);
                let points: Vec<Point> = (0..n).map(|_| [rng.next_f64() - 0.5, rng.next_f64() - 0.5]).collect();
                let mst = mst_edges(&points).unwrap();
                let spanning = Network { nodes: points.clone(), terminal_count: n, edges: mst.clone() }.length();
                let options = SteinerOptions {
                    method: SteinerMethod::Exact,
                    time_limit: Some(limit),
                    ..SteinerOptions::default()
                };
                let started = std::time::Instant::now();
                let exact = solve_distinct(&points, mst.clone(), &options);
                let exact_seconds = started.elapsed().as_secs_f64();
                let optimum = exact.net.length();
                let capture = |length: f64| (spanning - length) / (spanning - optimum);
                let started = std::time::Instant::now();
                let insertion = heuristic::heuristic(&points, mst.clone(), 0, &Watch::new()).length();
                let insertion_seconds = started.elapsed().as_secs_f64();
                let mut line = format!(
                    "n = {n}, seed = {seed}: proven {} ({exact_seconds:.2} s), insertion {:.4} ({insertion_seconds:.3} s)",
                    exact.proven,
                    capture(insertion)
                );
                for &k in &set_sizes {
                    let started = std::time::Instant::now();
                    let local = local_heuristic(&points, &mst, k, window, 0, &Watch::new()).length();
                    let seconds = started.elapsed().as_secs_f64();
                    // The same candidates concatenated exactly, for how much the greedy loses.
                    let clock = Watch::new().clock(Some(limit));
                    let mut all = trees::local_full_trees(&points, &mst, k, &clock).unwrap();
                    let count = all.len();
                    all.extend(mst.iter().map(|&[u, v]| crate::network::steiner::fst::FullTree {
                        terminals: vec![u, v],
                        steiner: Vec::new(),
                        edges: vec![[
                            crate::network::steiner::fst::End::Terminal(u),
                            crate::network::steiner::fst::End::Terminal(v),
                        ]],
                        length: crate::geometry::distance(points[u], points[v]),
                    }));
                    let best = concatenate::concatenate(n, &all, &clock).unwrap();
                    line += &format!(
                        "; sets <= {k}: {count} trees, local {:.4} ({seconds:.3} s), exact concatenation {:.4}{}",
                        capture(local),
                        capture(best.length),
                        if best.proven { "" } else { " (unproven)" }
                    );
                }
                println!("{line}");
            }
        }
    }

    /// Time and saving over the MST at large sizes: `LARGE_SIZES` (default `1000,10000`).
    #[test]
    #[ignore = "measurement"]
    fn savings_of_large_uniform_sets() {
        let var = |name: &str, default: &str| std::env::var(name).unwrap_or_else(|_| default.to_string());
        let sizes: Vec<usize> =
            var("LARGE_SIZES", "1000,10000").split(',').map(|s| s.trim().parse().unwrap()).collect();
        let set_sizes: Vec<usize> = var("CAPTURE_SET", "4").split(',').map(|s| s.trim().parse().unwrap()).collect();
        let window: usize = var("CAPTURE_WINDOW", "120").parse().unwrap();
        for n in sizes {
            let mut rng = SplitMix64::new(1000 * n as u64);
            let points: Vec<Point> = (0..n).map(|_| [rng.next_f64() - 0.5, rng.next_f64() - 0.5]).collect();
            let mst = mst_edges(&points).unwrap();
            let spanning = Network { nodes: points.clone(), terminal_count: n, edges: mst.clone() }.length();
            let started = std::time::Instant::now();
            let insertion = heuristic::heuristic(&points, mst.clone(), 0, &Watch::new()).length();
            let mut line = format!(
                "n = {n}: insertion saving {:.4} % ({:.2} s)",
                100.0 * (1.0 - insertion / spanning),
                started.elapsed().as_secs_f64()
            );
            for &k in &set_sizes {
                let started = std::time::Instant::now();
                let clock = Watch::new().clock(None);
                let candidates = trees::local_full_trees(&points, &mst, k, &clock).unwrap();
                let generated = started.elapsed().as_secs_f64();
                let started = std::time::Instant::now();
                greedy::concatenate_greedy(&points, &mst, &candidates, 0, &clock);
                let greedy_seconds = started.elapsed().as_secs_f64();
                let started = std::time::Instant::now();
                let local = local_heuristic(&points, &mst, k, window, 0, &Watch::new()).length();
                line += &format!(
                    "; sets <= {k}, windows of {window}: {} trees in {generated:.2} s, greedy {greedy_seconds:.2} s, saving {:.4} % ({:.2} s in all)",
                    candidates.len(),
                    100.0 * (1.0 - local / spanning),
                    started.elapsed().as_secs_f64()
                );
            }
            println!("{line}");
        }
    }
}
