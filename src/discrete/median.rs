//! Discrete p-median: greedy start, fast swap interchange, Lagrangian lower bound.
//!
//! - Start: greedy addition (Kuehn & Hamburger 1963): repeatedly open the candidate that
//!   lowers the total weighted cost most.
//! - Improvement: the vertex substitution of Teitz & Bart (1968) with Whitaker's (1983) fast
//!   interchange as organised by Resende & Werneck (2004): with every point's cheapest (`d1`)
//!   and second-cheapest (`d2`) open cost, the profit of every swap (insert `u`, remove `r`)
//!   is `gain(u) − loss(r) + extra(u, r)`, accumulated once and then updated for the points
//!   each swap concerns (see `swap.rs`). The best swap is applied while it lowers the cost (ties: smallest `u`, then `r`), so the
//!   result is deterministic and swap-optimal.
//! - Bound: Lagrangian relaxation of the assignment constraints `Σⱼ xᵢⱼ = 1` (Cornuejols,
//!   Fisher & Nemhauser 1977; Beasley 1993) with subgradient optimisation; every value of
//!   the Lagrangian function is a lower bound on the optimum, the best one is reported.
//!
//! The run polls its clock (`crate::cancel`) before every greedy step, swap and bound
//! iteration. Stopped early, it returns the best plan so far (filled up to `p` sites when
//! the greedy start was cut short) with the best bound so far: 0 when no bound iteration ran,
//! so the gap then says the plan is not proven.

use super::cover::serving_cover;
use super::median_bound::{settles, MedianRelaxation};
use super::median_branch::branch_and_bound;
use super::near::NearLists;
use super::neighbourhood::neighbourhood_search;
use super::swap::fast_swap;
use super::{check_choice, check_weighted_range, relative_gap, sum_rows, Costs, SiteService};
use crate::cancel::{RunLimits, Steps};
use crate::error::Result;
use crate::geometry::{validate_weights, Weights};

/// Default rounds of variable neighbourhood search (see `neighbourhood.rs`).
pub const SEARCH_ROUNDS: usize = 300;

/// Tuning of [`discrete_p_median`].
#[derive(Debug, Clone)]
pub struct DiscreteMedianOptions {
    /// Most subgradient iterations for the lower bound (each reads every point's candidates
    /// cheaper than its multiplier).
    pub bound_iterations: usize,
    /// Most swaps applied by one run of the interchange.
    pub max_swaps: usize,
    /// Rounds of variable neighbourhood search after the interchange (0: none).
    pub search_rounds: usize,
    /// Most subgradient iterations, over all nodes, of the branch and bound that follows the
    /// root bound while a gap is left (0: none; `None`: [`auto_branch_iterations`]).
    pub branch_iterations: Option<usize>,
    /// Seed of the search's random jumps (the same seed gives the same plan).
    pub seed: u64,
    /// Deadline and cancel flag; progress counts greedy steps, search rounds and bound
    /// iterations.
    pub limits: RunLimits,
}

impl Default for DiscreteMedianOptions {
    fn default() -> Self {
        DiscreteMedianOptions {
            bound_iterations: 1000,
            max_swaps: 100_000,
            search_rounds: SEARCH_ROUNDS,
            branch_iterations: None,
            seed: 0,
            limits: RunLimits::default(),
        }
    }
}

/// A discrete p-median plan with its proven lower bound.
#[derive(Debug, Clone, PartialEq)]
pub struct DiscreteMedian {
    /// How the open sites (fixed and chosen) serve the demand; the objective is
    /// `service.total_cost`.
    pub service: SiteService,
    /// A proven lower bound on the least total weighted cost (at most the objective).
    pub lower_bound: f64,
    /// `(objective − lower_bound) / objective`; 0 proves the plan optimal.
    pub relative_gap: f64,
    /// Swaps applied by the interchange.
    pub swaps: usize,
    /// Subgradient iterations spent on the bound (the root's and the branch and bound's).
    pub bound_iterations: usize,
    /// Nodes of the branch and bound whose bound was computed (0: none was needed or allowed).
    pub branch_nodes: usize,
}

/// Open `p` more candidates greedily after the `open` ones, each the one lowering
/// `Σ wᵢ · (cheapest open cost of i)` most (the smallest column among equally good ones), a
/// point without an allowed open site costing `unserved`; returns all of them.
///
/// # Runtime
/// O(p · allowed pairs).
pub(super) fn greedy_add(
    costs: &Costs<'_>,
    weights: Weights<'_>,
    open: Vec<usize>,
    p: usize,
    unserved: f64,
) -> Vec<usize> {
    greedy_add_near(costs, None, weights, open, p, unserved, &mut || true)
}

/// Open the smallest closed columns until `open` holds `size` of them: the completion of a
/// greedy start that was stopped early (any `size` distinct columns are a feasible plan).
pub(super) fn fill_open(open: &mut Vec<usize>, size: usize, columns: usize) {
    let mut is_open = vec![false; columns];
    open.iter().for_each(|&j| is_open[j] = true);
    let mut free = (0..columns).filter(|&j| !is_open[j]);
    while open.len() < size {
        let Some(j) = free.next() else { break };
        open.push(j);
    }
}

/// [`greedy_add`] reading the pairs cheaper than a point's open site from `near` where given,
/// asking `go()` before every step (false: stop with the sites opened so far).
fn greedy_add_near(
    costs: &Costs<'_>,
    near: Option<&NearLists>,
    weights: Weights<'_>,
    mut open: Vec<usize>,
    p: usize,
    unserved: f64,
    go: &mut dyn FnMut() -> bool,
) -> Vec<usize> {
    let (n, m) = (costs.rows(), costs.columns());
    let mut nearest: Vec<f64> =
        (0..n).map(|i| open.iter().filter_map(|&j| costs.cost(i, j)).fold(unserved, f64::min)).collect();
    let mut is_open = vec![false; m];
    for &j in &open {
        is_open[j] = true;
    }
    for _ in 0..p {
        if !go() {
            break;
        }
        // gain[j] = Σᵢ wᵢ · max(0, nearestᵢ − costs[i, j]): what opening j saves.
        let gain = sum_rows(n, m, |i, gain| {
            let (w, d) = (weights.get(i), nearest[i]);
            if w > 0.0 {
                let add = |j: usize, c: f64| gain[j] += w * (d - c);
                match near {
                    Some(near) => near.for_each_below(costs, i, d, add),
                    None => costs.for_each_within(i, d, |j, c| {
                        if c < d {
                            gain[j] += w * (d - c);
                        }
                    }),
                }
            }
        });
        let best = (0..m).filter(|&j| !is_open[j]).max_by(|&a, &b| gain[a].total_cmp(&gain[b]).then(b.cmp(&a)));
        let Some(best) = best else { break };
        is_open[best] = true;
        open.push(best);
        for (i, d) in nearest.iter_mut().enumerate() {
            if let Some(c) = costs.cost(i, best) {
                *d = d.min(c);
            }
        }
    }
    open
}

/// Every point's cheapest open cost `d1`, the position in `open` of that site, and the
/// second-cheapest open cost `d2`, a missing one counting `ceiling` (above every cost, so a
/// swap's arithmetic stays finite and exact in its cases).
fn nearest_two(costs: &Costs<'_>, open: &[usize], ceiling: f64) -> (Vec<f64>, Vec<usize>, Vec<f64>) {
    let n = costs.rows();
    let (mut d1, mut c1, mut d2) = (vec![0.0; n], vec![0usize; n], vec![0.0; n]);
    for i in 0..n {
        let (mut a, mut at, mut b) = (ceiling, 0, ceiling);
        for (k, &j) in open.iter().enumerate() {
            let Some(c) = costs.cost(i, j) else { continue };
            if c < a {
                b = a;
                (a, at) = (c, k);
            } else if c < b {
                b = c;
            }
        }
        (d1[i], c1[i], d2[i]) = (a, at, b);
    }
    (d1, c1, d2)
}

/// How many of its cheapest candidates every point keeps in its [`NearLists`]: enough to
/// hold the candidates of several neighbouring open sites (`m / k` candidates per open site
/// on average), at most the whole row, and few enough that the lists stay within about
/// 2²⁴ pairs.
fn near_keep(rows: usize, columns: usize, open: usize) -> usize {
    let per_site = columns.div_ceil(open.max(1));
    let wanted = (16 * per_site).max(64);
    let budget = ((1usize << 24) / rows.max(1)).max(16);
    wanted.min(budget).min(columns)
}

/// The default work of the branch and bound, in listed pairs read: a subgradient iteration
/// reads at most every listed pair once, and 2³³ pair reads take about ten seconds on two
/// cores (measured: 32,050 iterations on 1,000 x 100, p = 10, 100,000 listed pairs, 6.4 s
/// at load average 5).
const AUTO_BRANCH_READS: usize = 1 << 33;
/// The default budget's ceiling, in iterations.
const AUTO_BRANCH_MOST: usize = 200_000;
/// Below this many iterations a search rarely settles anything, so none is made by default.
/// Large instances get none unless asked: on the 10,000 x 1,000 benchmark case (3.2 million
/// listed pairs) the LP optimum spreads 50 sites over 297 candidates, far beyond what a few
/// hundred nodes settle.
const AUTO_BRANCH_LEAST: usize = 8192;

/// The default budget of the branch and bound: [`AUTO_BRANCH_READS`] over the listed pairs,
/// at most [`AUTO_BRANCH_MOST`] iterations, and none below [`AUTO_BRANCH_LEAST`].
fn auto_branch_iterations(near: &NearLists) -> usize {
    let budget = (AUTO_BRANCH_READS / near.pairs().max(1)).min(AUTO_BRANCH_MOST);
    if budget >= AUTO_BRANCH_LEAST {
        budget
    } else {
        0
    }
}

/// `p` new candidates (besides the `fixed` ones) minimising `Σᵢ wᵢ · minⱼ costs[i, j]` over
/// the open ones, with a proven lower bound.
///
/// # Errors
/// Bad weights (see [`crate::geometry::validate_weights`]); [`crate::Error::InvalidParameter`]
/// for `p = 0`, `p` above the candidates that are not fixed, or bad `fixed` columns.
///
/// # Runtime
/// O(n·m) to list every point's cheapest candidates, then O(n·q + m·p) per greedy step, per
/// swap and per bound iteration, `q` the candidates of a point cheaper than its second open
/// site (or than its multiplier), usually a few times `m / p`.
pub fn discrete_p_median(
    costs: &Costs<'_>,
    weights: Weights<'_>,
    p: usize,
    fixed: &[usize],
    options: &DiscreteMedianOptions,
) -> Result<DiscreteMedian> {
    validate_weights("weights", weights, costs.rows())?;
    check_choice(costs, p, fixed)?;
    check_weighted_range(costs, weights, true)?;
    let clock = options.limits.clock();
    let mut steps = Steps::new(&clock.watch, (p + options.search_rounds + options.bound_iterations) as u64);
    let mut go = || {
        steps.step();
        !clock.stop()
    };
    let top = costs.ceiling();
    let near = NearLists::new(costs, near_keep(costs.rows(), costs.columns(), p + fixed.len()));
    // The cost of a point no open site serves (and of a missing second site): above every
    // cost on a complete source; on a sparse one, also above what a whole serving plan costs
    // per unit of the least positive weight, so no swap gives up serving a point.
    let (open, ceiling) = if costs.is_complete() {
        let ceiling = 2.0 * top + 1.0;
        (greedy_add_near(costs, Some(&near), weights, fixed.to_vec(), p, ceiling, &mut go), ceiling)
    } else {
        let cover = serving_cover(costs, weights, p, fixed)?;
        let chosen = cover.len() - fixed.len();
        let open = greedy_add_near(costs, Some(&near), weights, cover, p - chosen, 2.0 * top + 1.0, &mut go);
        let upper = SiteService::of(costs, weights, open.clone(), fixed, None).total_cost;
        let least = (0..costs.rows()).map(|i| weights.get(i)).filter(|&w| w > 0.0).fold(f64::INFINITY, f64::min);
        (open, 2.0 * (upper / least + top) + 1.0)
    };
    let mut open = open;
    // The greedy steps are counted (one per step asked for, the first one included); a stop
    // cut them short: complete the plan.
    fill_open(&mut open, fixed.len() + p, costs.columns());
    let mut swaps = fast_swap(costs, &near, weights, &mut open, fixed.len(), options.max_swaps, ceiling, &clock);
    // Variable neighbourhood search (Hansen & Mladenović 1997) leaves the interchange's local
    // optimum for cheaper ones before the bound is sought, so the bound's steps aim at the
    // better plan.
    let (more, _) = neighbourhood_search(
        costs,
        &near,
        weights,
        &mut open,
        fixed.len(),
        options.search_rounds,
        options.max_swaps,
        ceiling,
        options.seed,
        &clock,
        &mut steps,
    );
    swaps += more;
    let mut service = SiteService::of(costs, weights, open.clone(), fixed, None);
    let (_, _, d2) = nearest_two(costs, &open, ceiling);
    // λ starts at every point's second cheapest open cost, no higher than its dearest pair.
    let start: Vec<f64> = (0..costs.rows())
        .map(|i| {
            let mut dearest = 0.0f64;
            costs.for_each(i, |_, c| dearest = dearest.max(c));
            weights.get(i) * d2[i].min(dearest)
        })
        .collect();
    let heuristic = service.total_cost;
    let (mut bound, mut spent, mut branch_nodes) = (0.0, 0, 0);
    if heuristic > 0.0 {
        // Beasley's (1993) Lagrangian heuristic: the open sets of the relaxation, improved by
        // the same interchange, replace the plan when cheaper (and, on a sparse source,
        // serving every point); the bound's target follows the best plan.
        let mut improve = |relaxed: &[usize]| {
            let mut other = relaxed.to_vec();
            let more = fast_swap(costs, &near, weights, &mut other, fixed.len(), options.max_swaps, ceiling, &clock);
            let candidate = SiteService::of(costs, weights, other, fixed, None);
            swaps += more;
            if candidate.total_cost < service.total_cost {
                service = candidate;
            }
            service.total_cost
        };
        let relaxation = MedianRelaxation { costs, near: &near, weights, fixed, p, closed: &[] };
        let root = relaxation.bound(heuristic, &start, options.bound_iterations, 2.0, &mut improve, &clock, &mut steps);
        (bound, spent) = (root.value, root.spent);
        let budget = options.branch_iterations.unwrap_or_else(|| auto_branch_iterations(&near));
        if budget > 0 && !settles(root.upper, root.value) && !clock.stop() {
            steps.plan(budget as u64);
            let tree = branch_and_bound(
                &relaxation,
                root.lambda,
                root.value,
                root.upper,
                budget,
                &mut improve,
                &clock,
                &mut steps,
            );
            (bound, spent, branch_nodes) = (bound.max(tree.bound), spent + tree.spent, tree.nodes);
        }
    }
    steps.finish();
    let upper = service.total_cost;
    // Costs are non-negative, so 0 is a bound too; a bound above the plan's cost can only be
    // rounding (the plan is feasible), so it is clamped to the plan.
    let lower_bound = bound.max(0.0).min(upper);
    Ok(DiscreteMedian {
        relative_gap: relative_gap(upper, lower_bound),
        service,
        lower_bound,
        swaps,
        bound_iterations: spent,
        branch_nodes,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::discrete::testing::{least_median_total, median_total};
    use crate::discrete::CostMatrix;
    use crate::geometry::random::SplitMix64 as Rng;

    #[test]
    fn swap_optimal_and_bound_below_brute_force() {
        let mut rng = Rng::new(7);
        for _ in 0..30 {
            let (n, m) = (12, 8);
            let values: Vec<f64> = (0..n * m).map(|_| (rng.next_f64() * 100.0).round()).collect();
            let w: Vec<f64> = (0..n).map(|_| 1.0 + (rng.next_f64() * 3.0).round()).collect();
            let costs = Costs::from(CostMatrix::new(&values, n, m).unwrap());
            for p in 1..4 {
                let r = discrete_p_median(&costs, Weights::Given(&w), p, &[], &Default::default()).unwrap();
                let open = &r.service.open;
                let ours = median_total(&values, m, &w, open);
                assert!((ours - r.service.total_cost).abs() <= 1e-9 * ours);
                // Brute-force enumeration of every p-subset (independent): bound <= optimum <= ours.
                let exact = least_median_total(&values, m, &w, p, &[]);
                assert!(r.lower_bound <= exact + 1e-9 * exact, "{} > {exact}", r.lower_bound);
                assert!(r.lower_bound >= 0.8 * exact, "weak bound {} for {exact}", r.lower_bound);
                assert!(ours >= exact - 1e-9);
                // Teitz & Bart: no single swap improves the plan (checked by direct evaluation).
                for k in 0..p {
                    for u in (0..m).filter(|u| !open.contains(u)) {
                        let mut other = open.clone();
                        other[k] = u;
                        assert!(median_total(&values, m, &w, &other) >= ours - 1e-9, "swap {k} -> {u} improves");
                    }
                }
            }
        }
    }

    #[test]
    fn fixed_sites_stay_open() {
        // Points at 0..5 on a line, candidates at the same places; candidate 5 is fixed.
        let values: Vec<f64> = (0..6).flat_map(|i| (0..6).map(move |j| (i as f64 - j as f64).abs())).collect();
        let costs = Costs::from(CostMatrix::new(&values, 6, 6).unwrap());
        let r = discrete_p_median(&costs, Weights::Unit, 1, &[5], &Default::default()).unwrap();
        assert!(r.service.open.contains(&5));
        assert_eq!(r.service.open.len(), 2);
        assert_eq!(r.service.fixed, vec![false, true]);
        // Hand-checked: site at 1 or 2 serves 0..3 for 4, site 5 serves 4 and 5 for 1.
        assert_eq!(r.service.total_cost, 5.0);
    }
}
