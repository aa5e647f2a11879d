//! Variable neighbourhood search around the p-median interchange (Hansen & Mladenović 1997).
//!
//! The interchange stops at a plan no single swap improves; such local optima of large
//! instances are often a few tenths of a percent above the best plans. Variable neighbourhood
//! search leaves one by a random jump into its `k`-th neighbourhood ("shaking": `k` open sites
//! replaced by random closed candidates), descends again with the interchange, and moves to
//! the new local optimum only when it is cheaper, then back to `k = 1`; otherwise `k` grows
//! up to [`DEEPEST`] and starts over. The random jumps come from a seeded generator, so the
//! result is deterministic.
//!
//! Every other jump is regional instead of uniform: the `k` open sites met first in the
//! candidate list of a random demand point (the sites around it) are replaced by `k` random
//! closed candidates from the same stretch of that list. On spatial instances the local optima
//! left by the interchange differ from better plans by the arrangement of a few neighbouring
//! sites, which no single swap reaches and which `k` uniform replacements, scattered over the
//! whole map, hit only by chance.

use super::near::NearLists;
use super::swap::fast_swap;
use super::Costs;
use crate::cancel::{Clock, Steps};
use crate::geometry::random::SplitMix64;
use crate::geometry::{CompensatedSum, Weights};

/// The largest neighbourhood shaken (sites replaced at once): larger jumps cost longer
/// descents and, on spatial instances, rarely land in a better valley than a few small ones.
const DEEPEST: usize = 10;

/// `Σᵢ wᵢ · (cheapest open cost of i)`, a point without an allowed open site counting
/// `ceiling`, summed in row order (the interchange's objective, exactly).
pub(super) fn plan_cost(
    costs: &Costs<'_>,
    near: &NearLists,
    weights: Weights<'_>,
    open: &[usize],
    ceiling: f64,
) -> f64 {
    let mut is_open = vec![false; costs.columns()];
    open.iter().for_each(|&j| is_open[j] = true);
    let mut total = CompensatedSum::default();
    for i in 0..costs.rows() {
        let w = weights.get(i);
        if w == 0.0 {
            continue;
        }
        let (columns, values) = near.row(i);
        // The list is in ascending cost: its first open entry is the cheapest open site
        // (complete below the list's limit, and every listed pair is below it).
        let listed = columns.iter().zip(values).find(|&(&j, _)| is_open[j as usize]).map(|(_, &c)| c);
        let cheapest = match listed {
            Some(c) => c,
            None => open.iter().filter_map(|&j| costs.cost(i, j)).fold(ceiling, f64::min),
        };
        total.add(w * cheapest);
    }
    total.total()
}

/// Improve `open` (its first `fixed_count` entries stay) by at most `rounds` shakes, each
/// followed by the interchange (at most `max_swaps` swaps each); returns the swaps applied
/// and the rounds spent. `open` ends as the cheapest local optimum found (never dearer than
/// it started, when it started at a local optimum). Every round is a step of `steps`; polls
/// `clock` before every round.
///
/// # Runtime
/// Per round, the interchange from a plan `k` swaps away from a local optimum: usually a
/// rebuild of its sums (O(n · q + m · p)) and a few swaps.
#[allow(clippy::too_many_arguments)]
pub(super) fn neighbourhood_search(
    costs: &Costs<'_>,
    near: &NearLists,
    weights: Weights<'_>,
    open: &mut Vec<usize>,
    fixed_count: usize,
    rounds: usize,
    max_swaps: usize,
    ceiling: f64,
    seed: u64,
    clock: &Clock,
    steps: &mut Steps<'_>,
) -> (usize, usize) {
    let m = costs.columns();
    let free = open.len() - fixed_count;
    // Nothing to exchange: every candidate is open, or every open site is fixed.
    if free == 0 || open.len() >= m {
        return (0, 0);
    }
    let mut rng = SplitMix64::new(seed);
    let mut best_cost = plan_cost(costs, near, weights, open, ceiling);
    let (mut swaps, mut spent, mut k) = (0, 0, 1);
    let mut is_open = vec![false; m];
    while spent < rounds && !clock.stop() {
        spent += 1;
        steps.step();
        let mut trial = open.clone();
        is_open.iter_mut().for_each(|o| *o = false);
        trial.iter().for_each(|&j| is_open[j] = true);
        let regional = spent % 2 == 0 && shake_region(near, &mut trial, &mut is_open, fixed_count, k, &mut rng);
        for _ in 0..if regional { 0 } else { k.min(free) } {
            let at = fixed_count + rng.below(free);
            // A closed candidate, uniformly (at least one exists: open.len() < m).
            let inserted = loop {
                let u = rng.below(m);
                if !is_open[u] {
                    break u;
                }
            };
            is_open[trial[at]] = false;
            is_open[inserted] = true;
            trial[at] = inserted;
        }
        swaps += fast_swap(costs, near, weights, &mut trial, fixed_count, max_swaps, ceiling, clock);
        let cost = plan_cost(costs, near, weights, &trial, ceiling);
        // Better by more than rounding of the total: move there and shake gently again.
        if cost < best_cost - 1e-12 * best_cost.abs() {
            (best_cost, k) = (cost, 1);
            *open = trial;
        } else {
            k = if k < DEEPEST.min(free) { k + 1 } else { 1 };
        }
    }
    (swaps, spent)
}

/// The regional jump: replace the `k` free open sites (positions `fixed_count..` of `trial`)
/// met first in the candidate list of a random demand point by `k` distinct random closed
/// candidates among the first `max(2 · reach, 2k)` entries of that list, `reach` the length of
/// list holding the `k` sites; `is_open` follows `trial`. False (and nothing changed) when the
/// list holds fewer than `k` free open sites or fewer than `k` closed candidates.
fn shake_region(
    near: &NearLists,
    trial: &mut [usize],
    is_open: &mut [bool],
    fixed_count: usize,
    k: usize,
    rng: &mut SplitMix64,
) -> bool {
    let rows = near.rows();
    if rows == 0 {
        return false;
    }
    let (columns, _) = near.row(rng.below(rows));
    let mut removed = Vec::with_capacity(k);
    let mut reach = 0;
    for (at, &j) in columns.iter().enumerate() {
        if removed.len() == k {
            break;
        }
        if let Some(position) = trial[fixed_count..].iter().position(|&o| o == j as usize) {
            removed.push(fixed_count + position);
            reach = at + 1;
        }
    }
    if removed.len() < k {
        return false;
    }
    let reach = (2 * reach).max(2 * k).min(columns.len());
    let mut pool: Vec<usize> = columns[..reach].iter().map(|&j| j as usize).filter(|&j| !is_open[j]).collect();
    if pool.len() < k {
        return false;
    }
    // A partial Fisher–Yates shuffle draws k distinct entries of the pool.
    for (t, &position) in removed.iter().enumerate() {
        let pick = t + rng.below(pool.len() - t);
        pool.swap(t, pick);
        is_open[trial[position]] = false;
        is_open[pool[t]] = true;
        trial[position] = pool[t];
    }
    true
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::discrete::testing::{least_median_total, median_total};
    use crate::discrete::{CostMatrix, PlanarCosts};
    use crate::geometry::Point;

    #[test]
    fn plan_cost_matches_direct_sum_with_short_lists() {
        let mut rng = SplitMix64::new(3);
        let (n, m) = (40, 25);
        // Rounded costs so that ties occur; zero weights are skipped.
        let values: Vec<f64> = (0..n * m).map(|_| (rng.next_f64() * 20.0).round()).collect();
        let w: Vec<f64> = (0..n).map(|i| if i % 7 == 0 { 0.0 } else { 1.0 + (i % 3) as f64 }).collect();
        let costs = Costs::from(CostMatrix::new(&values, n, m).unwrap());
        for keep in [1, 3, 25] {
            let near = NearLists::new(&costs, keep);
            for open in [vec![0], vec![4, 9, 17], (0..m).collect()] {
                let ours = plan_cost(&costs, &near, Weights::Given(&w), &open, 1e9);
                // Direct evaluation of the definition (independent of the lists).
                let reference = median_total(&values, m, &w, &open);
                assert!((ours - reference).abs() <= 1e-9 * reference.max(1.0), "keep {keep}: {ours} vs {reference}");
            }
        }
    }

    #[test]
    fn search_never_worsens_keeps_fixed_and_reaches_brute_force() {
        let mut rng = SplitMix64::new(11);
        for round in 0..10 {
            let (n, m, p) = (30, 10, 3);
            let points: Vec<Point> = (0..n).map(|_| [rng.next_f64() * 10.0, rng.next_f64() * 10.0]).collect();
            let sites: Vec<Point> = (0..m).map(|_| [rng.next_f64() * 10.0, rng.next_f64() * 10.0]).collect();
            let w: Vec<f64> = (0..n).map(|_| (rng.next_f64() * 4.0).floor()).collect();
            let costs = Costs::from(PlanarCosts::new(&points, &sites).unwrap());
            let values: Vec<f64> =
                (0..n).flat_map(|i| (0..m).map(move |j| (i, j))).map(|(i, j)| costs.cost(i, j).unwrap()).collect();
            let near = NearLists::new(&costs, 4);
            let clock = Clock::unlimited();
            let fixed = round % 3; // 0, 1 or 2 fixed sites first in `open`.
            let start: Vec<usize> = (0..fixed + p).collect();
            let run = |seed: u64| {
                let mut open = start.clone();
                let mut steps = Steps::new(&clock.watch, 200);
                let weights = Weights::Given(&w);
                neighbourhood_search(
                    &costs, &near, weights, &mut open, fixed, 200, 1000, 1e9, seed, &clock, &mut steps,
                );
                open
            };
            let open = run(5);
            assert_eq!(open, run(5), "same seed, same plan");
            assert_eq!(&open[..fixed], &start[..fixed], "fixed sites stay first and open");
            let mut sorted = open.clone();
            sorted.sort_unstable();
            sorted.dedup();
            assert_eq!(sorted.len(), fixed + p, "distinct sites");
            // Brute force over every choice of p free sites (independent of the search): on
            // instances this small, 200 rounds of shaking find the optimum.
            let exact = least_median_total(&values, m, &w, p, &start[..fixed]);
            let ours = median_total(&values, m, &w, &open);
            assert!(ours <= median_total(&values, m, &w, &start) + 1e-9, "never dearer than the start");
            assert!((ours - exact).abs() <= 1e-9 * exact.max(1.0), "round {round}: {ours} vs optimum {exact}");
        }
    }

    #[test]
    fn regional_jump_replaces_free_sites_near_one_point() {
        let mut rng = SplitMix64::new(9);
        let (n, m) = (50, 40);
        let points: Vec<Point> = (0..n).map(|_| [rng.next_f64() * 10.0, rng.next_f64() * 10.0]).collect();
        let sites: Vec<Point> = (0..m).map(|_| [rng.next_f64() * 10.0, rng.next_f64() * 10.0]).collect();
        let costs = Costs::from(PlanarCosts::new(&points, &sites).unwrap());
        let near = NearLists::new(&costs, 20);
        for round in 0..200 {
            let (fixed, k) = (round % 3, 1 + round % 4);
            let start: Vec<usize> = (0..12).map(|t| 3 * t + round % 3).collect();
            let mut trial = start.clone();
            let mut is_open = vec![false; m];
            trial.iter().for_each(|&j| is_open[j] = true);
            if !shake_region(&near, &mut trial, &mut is_open, fixed, k, &mut rng) {
                assert_eq!(trial, start, "a refused jump changes nothing");
                continue;
            }
            assert_eq!(&trial[..fixed], &start[..fixed], "fixed sites stay");
            let changed = (0..trial.len()).filter(|&t| trial[t] != start[t]).count();
            assert_eq!(changed, k, "exactly k sites replaced");
            let mut sorted = trial.clone();
            sorted.sort_unstable();
            sorted.dedup();
            assert_eq!(sorted.len(), trial.len(), "distinct sites");
            for (j, &open) in is_open.iter().enumerate() {
                assert_eq!(open, trial.contains(&j), "is_open follows the plan at {j}");
            }
        }
    }

    #[test]
    fn nothing_to_exchange_when_every_candidate_is_open_or_fixed() {
        let values = [1.0, 2.0, 3.0, 0.5];
        let costs = Costs::from(CostMatrix::new(&values, 2, 2).unwrap());
        let near = NearLists::new(&costs, 2);
        let clock = Clock::unlimited();
        let mut steps = Steps::new(&clock.watch, 10);
        for (mut open, fixed) in [(vec![0, 1], 0), (vec![1], 1)] {
            let before = open.clone();
            let r = neighbourhood_search(
                &costs,
                &near,
                Weights::Unit,
                &mut open,
                fixed,
                10,
                10,
                1e9,
                0,
                &clock,
                &mut steps,
            );
            assert_eq!((r, open), ((0, 0), before));
        }
    }
}
