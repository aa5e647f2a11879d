//! The choice between the exact solver and the heuristic, on distinct terminals in the
//! working frame.
//!
//! Invariants: the tree returned is never longer than the terminals' minimum spanning tree
//! (the heuristic's tree is replaced by the spanning tree when it is not shorter); it is
//! reported optimal only when the exact solver proved it so (or the terminals are collinear
//! or fewer than three, where the spanning tree is the Steiner minimum tree); and its lower
//! bound is a proven bound on the Steiner minimum tree, never above the tree's length.
//!
//! The lower bound is the branch and cut's (the smallest LP bound of an open node) when every
//! full Steiner tree was generated, since only then does the integer program describe every
//! Steiner minimum tree; otherwise it is the spanning tree's length times [`RATIO_BOUND`].

use super::{concatenate, fst, heuristic, local, Network};
use crate::geometry::predicates::all_collinear;
use crate::geometry::Point;
use crate::network::{SteinerMethod, SteinerOptions, AUTO_BUDGET, AUTO_EXACT_TERMINALS};

/// A proven lower bound on the ratio of the Steiner minimum tree's length to the minimum
/// spanning tree's: Chung and Graham (1985, "A new bound for Euclidean Steiner minimal
/// trees") proved the ratio at least 0.8241. The conjectured √3/2 ≈ 0.866 (Gilbert and
/// Pollak 1968) is not used: the published proof of it (Du and Hwang 1992) has a gap
/// (Ivanov and Tuzhilin 2012), so a bound built on it would not be proven.
pub(crate) const RATIO_BOUND: f64 = 0.824;

/// Up to this many terminals the heuristic is the concatenation of local full Steiner trees
/// ([`local`]), beyond it Steiner insertion ([`heuristic`]): on 10,000 uniform terminals
/// the first took about 3 times as long as the second (8.2 s against 2.5 s, loaded machine)
/// for a saving over the spanning tree of 3.257 % against 3.203 %, and on 100,000 it took
/// 150.6 s against 59.9 s (3.2225 % against 3.1837 %), its windows and clean-up dominating.
pub(crate) const LOCAL_TERMINALS: usize = 20_000;

/// The answer of [`solve_distinct`], in working units.
#[derive(Debug, Clone)]
pub(crate) struct Solved {
    /// The tree.
    pub net: Network,
    /// Whether it is proven a Steiner minimum tree.
    pub proven: bool,
    /// A proven lower bound on the Steiner minimum tree's length, at most `net.length()`.
    pub lower_bound: f64,
}

/// Solve on distinct terminals `local` in the working frame, given their minimum spanning
/// tree: the tree, whether it is proven optimal, and a proven lower bound.
pub(crate) fn solve_distinct(local: &[Point], mst_edges: Vec<[usize; 2]>, options: &SteinerOptions) -> Solved {
    let n = local.len();
    let chain = |edges: Vec<[usize; 2]>| Network { nodes: local.to_vec(), terminal_count: n, edges };
    let answer = |net: Network, proven: bool, bound: f64| {
        let length = net.length();
        // A proven tree is its own bound; rounding never lifts the bound above the length.
        let lower_bound = if proven { length } else { bound.min(length) };
        Solved { net, proven, lower_bound }
    };
    if n < 3 || all_collinear(local) {
        // A Steiner point would need an angle below 120° between terminals; on a line there is none.
        return answer(chain(mst_edges), true, 0.0);
    }
    let mst_length = chain(mst_edges.clone()).length();
    let ratio_bound = RATIO_BOUND * mst_length;
    let exact = match options.method {
        SteinerMethod::Exact => true,
        SteinerMethod::Heuristic => false,
        SteinerMethod::Auto => n <= AUTO_EXACT_TERMINALS,
    };
    let watch = &options.watch;
    // The best unproven tree of an exact attempt stopped in its branch and cut, with the
    // LP bound (valid: every full Steiner tree was generated).
    let mut stopped: Option<(Network, f64)> = None;
    if exact {
        let budget = options.time_limit.or((options.method == SteinerMethod::Auto).then_some(AUTO_BUDGET));
        let clock = watch.clock(budget);
        let bottleneck = fst::Bottleneck::new(local);
        if let Some(trees) = fst::full_steiner_trees(local, &bottleneck, &clock) {
            if let Some(found) = concatenate::concatenate(n, &trees, &clock) {
                let net = assemble(local, &trees, &found.chosen);
                if net.edges.len() + 1 == net.nodes.len() {
                    if found.proven {
                        return answer(net, true, found.lower_bound);
                    }
                    stopped = Some((net, found.lower_bound.max(ratio_bound)));
                }
            }
        }
    }
    if watch.is_cancelled() {
        // The caller discards a cancelled answer: the spanning tree is the quickest valid one.
        return answer(chain(mst_edges), false, ratio_bound);
    }
    let net = if n <= LOCAL_TERMINALS {
        // Insertion costs a fraction of the local method here, and on some sets it is the
        // shorter (one 100-terminal set in five, where the whole-set exact step ran out of
        // its time limit): the shorter of the two, so the local method never makes it worse.
        let concatenated =
            local::local_heuristic(local, &mst_edges, local::MAX_SET, local::WINDOW, options.seed, watch);
        let inserted = heuristic::heuristic(local, mst_edges.clone(), options.seed, watch);
        if inserted.length() < concatenated.length() {
            inserted
        } else {
            concatenated
        }
    } else {
        heuristic::heuristic(local, mst_edges.clone(), options.seed, watch)
    };
    let (mut best, mut bound) = (if net.length() <= mst_length { net } else { chain(mst_edges) }, ratio_bound);
    if let Some((net, lp_bound)) = stopped {
        bound = lp_bound;
        if net.length() < best.length() {
            best = net;
        }
    }
    answer(best, false, bound)
}

/// The tree made of the chosen full Steiner trees.
pub(super) fn assemble(local: &[Point], trees: &[fst::FullTree], chosen: &[usize]) -> Network {
    use fst::End;
    let mut net = Network { nodes: local.to_vec(), terminal_count: local.len(), edges: Vec::new() };
    for &i in chosen {
        let base = net.nodes.len();
        net.nodes.extend_from_slice(&trees[i].steiner);
        let node = |end: End| match end {
            End::Terminal(t) => t,
            End::Steiner(k) => base + k,
        };
        net.edges.extend(trees[i].edges.iter().map(|&[a, b]| [node(a), node(b)]));
    }
    net
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cancel::Watch;
    use crate::geometry::random::SplitMix64;
    use crate::network::mst::mst_edges;

    #[test]
    fn a_cancelled_run_returns_the_spanning_tree_unproven() {
        let mut rng = SplitMix64::new(2);
        let pts: Vec<Point> = (0..12).map(|_| [rng.next_f64(), rng.next_f64()]).collect();
        let mst = mst_edges(&pts).unwrap();
        let watch = Watch::new();
        let options =
            SteinerOptions { method: SteinerMethod::Exact, watch: watch.clone(), ..SteinerOptions::default() };
        let Solved { net, proven, .. } = solve_distinct(&pts, mst.clone(), &options);
        assert!(proven);
        let (done, total) = watch.progress();
        assert!(done == total && total > 0, "{done} of {total}");
        watch.cancel();
        let Solved { net: net_cancelled, proven, lower_bound } = solve_distinct(&pts, mst.clone(), &options);
        assert!(!proven);
        // Chung and Graham's (1985) ratio bound of the spanning tree's length.
        assert!((lower_bound - RATIO_BOUND * net_cancelled.length()).abs() < 1e-12);
        assert_eq!(net_cancelled.edges, mst);
        // The spanning tree is itself a Steiner tree, so the proven optimum is no longer.
        assert!(net.length() <= net_cancelled.length());
    }
}

#[cfg(test)]
mod past_one_word {
    use super::*;
    use crate::geometry::random::SplitMix64;
    use crate::network::mst::mst_edges;
    use crate::network::steiner::heuristic;

    fn exact(points: &[Point]) -> (Network, bool) {
        let options = SteinerOptions { method: SteinerMethod::Exact, ..SteinerOptions::default() };
        let solved = solve_distinct(points, mst_edges(points).unwrap(), &options);
        (solved.net, solved.proven)
    }

    #[test]
    fn a_regular_seventy_gon_is_spanned_by_sixty_nine_sides() {
        // Closed form (Du, Hwang and Weng 1987, from memory: for a regular n-gon with
        // n >= 13 the Steiner minimum tree is the polygon less one side).
        let n = 70;
        let points: Vec<Point> = (0..n)
            .map(|k| {
                let a = 2.0 * std::f64::consts::PI * k as f64 / n as f64;
                [0.5 * a.cos(), 0.5 * a.sin()]
            })
            .collect();
        let side = crate::geometry::distance(points[0], points[1]);
        let (net, proven) = exact(&points);
        assert!(proven);
        assert!((net.length() - 69.0 * side).abs() < 1e-12, "{} against {}", net.length(), 69.0 * side);
    }

    #[test]
    fn seventy_terminals_in_a_strip_are_solved_no_longer_than_the_heuristic_and_the_mst() {
        // Seeded uniform terminals in a 14 : 1 strip: the full Steiner trees stay local, and
        // many join terminals on both sides of the 64th. References: the spanning tree of
        // `mst_edges` (Delaunay + Kruskal) and the Steiner insertion heuristic, neither of
        // which may be shorter than a proven optimum.
        for seed in 0..2 {
            let mut rng = SplitMix64::new(70 + seed);
            let points: Vec<Point> = (0..70).map(|_| [rng.next_f64(), rng.next_f64() / 14.0]).collect();
            let mst = mst_edges(&points).unwrap();
            let mst_length = Network { nodes: points.clone(), terminal_count: 70, edges: mst.clone() }.length();
            let heuristic = heuristic::heuristic(&points, mst, 0, &crate::cancel::Watch::new());
            let (net, proven) = exact(&points);
            assert!(proven, "seed {seed}");
            assert_eq!(net.edges.len() + 1, net.nodes.len());
            assert!(net.length() <= heuristic.length() * (1.0 + 1e-12), "seed {seed}");
            assert!(net.length() < mst_length, "seed {seed}");
        }
    }
}

#[cfg(test)]
mod bounds {
    use super::*;
    use crate::geometry::random::SplitMix64;
    use crate::network::mst::mst_edges;

    fn uniform(n: usize, seed: u64) -> Vec<Point> {
        let mut rng = SplitMix64::new(seed);
        (0..n).map(|_| [rng.next_f64() - 0.5, rng.next_f64() - 0.5]).collect()
    }

    #[test]
    fn a_proven_tree_is_its_own_bound_and_an_unproven_one_is_above_its_bound() {
        // Reference for the unproven bound: the proven optimum of the same terminals, which
        // no valid lower bound may exceed.
        for seed in 0..4 {
            let points = uniform(14, 300 + seed);
            let mst = mst_edges(&points).unwrap();
            let exact = SteinerOptions { method: SteinerMethod::Exact, ..SteinerOptions::default() };
            let solved = solve_distinct(&points, mst.clone(), &exact);
            assert!(solved.proven);
            assert_eq!(solved.lower_bound, solved.net.length());
            for options in [
                SteinerOptions { method: SteinerMethod::Heuristic, ..SteinerOptions::default() },
                SteinerOptions { time_limit: Some(0.0), ..exact.clone() },
            ] {
                let quick = solve_distinct(&points, mst.clone(), &options);
                assert!(!quick.proven);
                assert!(quick.lower_bound <= solved.net.length(), "seed {seed}");
                assert!(solved.net.length() <= quick.net.length() * (1.0 + 1e-12), "seed {seed}");
            }
        }
    }

    #[test]
    fn a_tiny_time_limit_on_150_terminals_returns_a_tree_with_a_bound() {
        let points = uniform(150, 150);
        let mst = mst_edges(&points).unwrap();
        let mst_length = Network { nodes: points.clone(), terminal_count: 150, edges: mst.clone() }.length();
        let options =
            SteinerOptions { method: SteinerMethod::Exact, time_limit: Some(0.01), ..SteinerOptions::default() };
        let solved = solve_distinct(&points, mst, &options);
        assert!(!solved.proven);
        assert_eq!(solved.net.edges.len() + 1, solved.net.nodes.len());
        assert!(solved.net.length() <= mst_length);
        // Chung and Graham (1985): the Steiner minimum tree is at least 0.8241 of the MST.
        assert!(solved.lower_bound >= RATIO_BOUND * mst_length - 1e-12);
        assert!(solved.lower_bound <= solved.net.length());
    }
}

#[cfg(test)]
mod agreement {
    use super::*;
    use crate::cancel::Clock;
    use crate::geometry::random::SplitMix64;

    /// Steiner minimum tree lengths (working units) of uniform sets in the unit square, as
    /// found by this crate's exact solver before the generation of full Steiner trees ran in
    /// parallel with cheaper feasibility tests (at 10–16 terminals, four seeds each; printed
    /// to 12 decimals by a release build of that solver, every one proven optimal). The
    /// tests changed only how fast a candidate is rejected, never which one is, so the
    /// optimum, and the number of full trees kept, must agree.
    const RECORDED: [(usize, u64, usize, f64); 16] = [
        (10, 0, 29, 1.815984207711),
        (10, 1, 15, 2.056634094489),
        (10, 2, 14, 2.322150318044),
        (10, 3, 23, 2.172635774254),
        (12, 0, 22, 2.249887937294),
        (12, 1, 25, 1.961024913192),
        (12, 2, 20, 2.228478190729),
        (12, 3, 18, 2.151143758423),
        (14, 0, 37, 2.622373131818),
        (14, 1, 26, 2.905865549054),
        (14, 2, 20, 2.571118692918),
        (14, 3, 35, 2.221221328637),
        (16, 0, 24, 2.304653337769),
        (16, 1, 34, 2.417198347337),
        (16, 2, 29, 2.670680659831),
        (16, 3, 51, 2.836283619680),
    ];

    #[test]
    fn exact_lengths_agree_with_the_recorded_optima() {
        for (n, seed, fsts, recorded) in RECORDED {
            let mut rng = SplitMix64::new(seed + 100 * n as u64);
            let pts: Vec<Point> = (0..n).map(|_| [rng.next_f64() - 0.5, rng.next_f64() - 0.5]).collect();
            let b = fst::Bottleneck::new(&pts);
            let trees = fst::full_steiner_trees(&pts, &b, &Clock::unlimited()).unwrap();
            let found = concatenate::concatenate(n, &trees, &Clock::unlimited()).unwrap();
            let length: f64 = found.chosen.iter().map(|&i| trees[i].length).sum();
            assert!(found.proven, "n = {n}, seed = {seed}");
            assert_eq!(trees.len(), fsts, "n = {n}, seed = {seed}");
            // Recorded to 12 decimals.
            assert!((length - recorded).abs() < 1e-11, "n = {n}, seed = {seed}: {length} against {recorded}");
        }
    }
}

#[cfg(test)]
mod measure {
    use super::*;
    use crate::geometry::random::SplitMix64;

    /// Phase times and generation counts on seeded uniform sets, for benchmarks/RESULTS.md:
    /// `cargo test --release --lib phases_of_uniform_sets -- --ignored --nocapture`, sizes
    /// from `PHASE_SIZES` (default `30,40`), seeds `0..PHASE_SEEDS` (default 3), each set
    /// stopped after `PHASE_LIMIT` seconds (default 600), or the sets in the files named by
    /// `PHASE_FILES` (e.g. the numpy sets of benchmarks/bench_network.py written with
    /// `numpy.savetxt`). A set that finishes must be proven. Each line gives a fingerprint of
    /// the FSTs generated, which a change meant to keep the generation's output must keep.
    #[test]
    #[ignore = "measurement, minutes long"]
    fn phases_of_uniform_sets() {
        let var = |name: &str, default: &str| std::env::var(name).unwrap_or_else(|_| default.to_string());
        let sizes: Vec<usize> = var("PHASE_SIZES", "30,40").split(',').map(|s| s.trim().parse().unwrap()).collect();
        let seeds: u64 = var("PHASE_SEEDS", "3").parse().unwrap();
        let limit: f64 = var("PHASE_LIMIT", "600").parse().unwrap();
        // `PHASE_FILES`: comma-separated files of terminals (one `x y` a line, centred here on
        // their bounding box) measured instead of the seeded sets.
        let mut sets: Vec<(String, Vec<Point>)> = Vec::new();
        for file in var("PHASE_FILES", "").split(',').filter(|f| !f.is_empty()) {
            let text = std::fs::read_to_string(file).unwrap();
            let mut points: Vec<Point> = text
                .lines()
                .filter(|line| !line.trim().is_empty())
                .map(|line| {
                    let xy: Vec<f64> = line.split_whitespace().map(|v| v.parse().unwrap()).collect();
                    [xy[0], xy[1]]
                })
                .collect();
            let (lo, hi) = points.iter().fold(([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]), |(lo, hi), p| {
                ([lo[0].min(p[0]), lo[1].min(p[1])], [hi[0].max(p[0]), hi[1].max(p[1])])
            });
            for p in &mut points {
                *p = [p[0] - 0.5 * (lo[0] + hi[0]), p[1] - 0.5 * (lo[1] + hi[1])];
            }
            sets.push((file.to_string(), points));
        }
        if sets.is_empty() {
            for n in &sizes {
                for seed in 0..seeds {
                    let mut rng = SplitMix64::new(1000 * *n as u64 + seed);
                    let points: Vec<Point> = (0..*n).map(|_| [rng.next_f64() - 0.5, rng.next_f64() - 0.5]).collect();
                    sets.push((format!("seed = {seed}"), points));
                }
            }
        }
        {
            for (seed, points) in sets {
                let n = points.len();
                let clock = crate::cancel::Watch::new().clock(Some(limit));
                let started = std::time::Instant::now();
                let bottleneck = fst::Bottleneck::new(&points);
                let Some((trees, counts)) = fst::full_steiner_trees_counted(&points, &bottleneck, &clock) else {
                    println!(
                        "n = {n}, seed = {seed}: generation stopped after {:.1} s",
                        started.elapsed().as_secs_f64()
                    );
                    continue;
                };
                let generated = started.elapsed().as_secs_f64();
                // A fingerprint of the FSTs (terminals and length bits, in order), to check
                // that a change to the generation leaves its output as it was.
                let fingerprint = trees.iter().fold(0xcbf2_9ce4_8422_2325u64, |hash, tree| {
                    tree.terminals
                        .iter()
                        .map(|&t| t as u64)
                        .chain([tree.length.to_bits()])
                        .fold(hash, |h, word| (h ^ word).wrapping_mul(0x0100_0000_01b3))
                });
                let found = concatenate::concatenate(n, &trees, &clock).unwrap();
                let total = started.elapsed().as_secs_f64();
                println!(
                    "n = {n}, seed = {seed}: generation {generated:.3} s, concatenation {:.4} s, {} FSTs (fingerprint {fingerprint:016x}), length {:.12}, proven {}",
                    total - generated,
                    trees.len(),
                    found.length,
                    found.proven
                );
                for c in &counts {
                    println!(
                        "  size {:>2}: {:>10} pairs {:>10} disjoint {:>9} near {:>9} sampled {:>7} kept {:>8.3} s",
                        c.size, c.pairs, c.disjoint, c.near, c.sampled, c.kept, c.seconds
                    );
                }
                assert!(found.proven || clock.stop(), "n = {n}, seed = {seed}");
            }
        }
    }
}
