//! Discrete p-median: greedy start, fast swap interchange, Lagrangian lower bound.
//!
//! - Start: greedy addition (Kuehn & Hamburger 1963): repeatedly open the candidate that
//!   lowers the total weighted cost most.
//! - Improvement: the vertex substitution of Teitz & Bart (1968) with Whitaker's (1983) fast
//!   interchange as organised by Resende & Werneck (2004): with every point's cheapest (`d1`)
//!   and second-cheapest (`d2`) open cost, the profit of every swap (insert `u`, remove `r`)
//!   is `gain(u) − loss(r) + extra(u, r)`, all three accumulated in one pass over the matrix.
//!   The best swap is applied while it lowers the cost (ties: smallest `u`, then `r`), so the
//!   result is deterministic and swap-optimal.
//! - Bound: Lagrangian relaxation of the assignment constraints `Σⱼ xᵢⱼ = 1` (Cornuejols,
//!   Fisher & Nemhauser 1977; Beasley 1993) with subgradient optimisation; every value of
//!   the Lagrangian function is a lower bound on the optimum, the best one is reported.

use super::{check_choice, relative_gap, sum_rows, CostMatrix, SiteService, StepControl};
use crate::error::Result;
use crate::geometry::{validate_weights, CompensatedSum, Weights};

/// Tuning of [`discrete_p_median`].
#[derive(Debug, Clone, Copy)]
pub struct DiscreteMedianOptions {
    /// Most subgradient iterations for the lower bound (each costs one pass over the matrix).
    pub bound_iterations: usize,
    /// Most swaps applied by the interchange.
    pub max_swaps: usize,
}

impl Default for DiscreteMedianOptions {
    fn default() -> Self {
        DiscreteMedianOptions { bound_iterations: 300, max_swaps: 100_000 }
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
    /// Subgradient iterations spent on the bound.
    pub bound_iterations: usize,
}

/// Open `p` more candidates greedily, each lowering `Σ wᵢ · minⱼ costs[i, j]` most (the
/// smallest column among equally good ones), after the `open` ones; returns all of them.
///
/// # Runtime
/// O(p · n · m).
pub(super) fn greedy_add(costs: &CostMatrix<'_>, weights: Weights<'_>, mut open: Vec<usize>, p: usize) -> Vec<usize> {
    let (n, m) = (costs.rows(), costs.columns());
    let mut near: Vec<f64> =
        (0..n).map(|i| open.iter().map(|&j| costs.row(i)[j]).fold(f64::INFINITY, f64::min)).collect();
    let mut is_open = vec![false; m];
    for &j in &open {
        is_open[j] = true;
    }
    for _ in 0..p {
        let total = sum_rows(n, m, |i, total| {
            let (w, d) = (weights.get(i), near[i]);
            if w > 0.0 {
                total.iter_mut().zip(costs.row(i)).for_each(|(t, &c)| *t += w * c.min(d));
            }
        });
        let best = (0..m).filter(|&j| !is_open[j]).min_by(|&a, &b| total[a].total_cmp(&total[b]).then(a.cmp(&b)));
        let Some(best) = best else { break };
        is_open[best] = true;
        open.push(best);
        for (i, d) in near.iter_mut().enumerate() {
            *d = d.min(costs.row(i)[best]);
        }
    }
    open
}

/// Every point's cheapest open cost `d1`, the position in `open` of that site, and the
/// second-cheapest open cost `d2` (`ceiling` when only one site is open: any candidate costs
/// less, so a swap's arithmetic stays finite and exact in its cases).
fn nearest_two(costs: &CostMatrix<'_>, open: &[usize], ceiling: f64) -> (Vec<f64>, Vec<usize>, Vec<f64>) {
    let n = costs.rows();
    let (mut d1, mut c1, mut d2) = (vec![0.0; n], vec![0usize; n], vec![0.0; n]);
    for i in 0..n {
        let row = costs.row(i);
        let (mut a, mut at, mut b) = (f64::INFINITY, 0, ceiling);
        for (k, &j) in open.iter().enumerate() {
            let c = row[j];
            if c < a {
                b = a.min(ceiling);
                (a, at) = (c, k);
            } else if c < b {
                b = c;
            }
        }
        (d1[i], c1[i], d2[i]) = (a, at, b);
    }
    (d1, c1, d2)
}

/// Improve `open` by the best swap (insert a closed candidate, remove a non-fixed open one)
/// while one lowers the cost; returns the number of swaps.
fn fast_swap(
    costs: &CostMatrix<'_>,
    weights: Weights<'_>,
    open: &mut [usize],
    fixed_count: usize,
    max_swaps: usize,
) -> usize {
    let (n, m, k) = (costs.rows(), costs.columns(), open.len());
    // Above every cost, so `min(cost, ceiling)` is the cost (see `nearest_two`).
    let ceiling = 2.0 * costs.max_cost() + 1.0;
    let mut is_open = vec![false; m];
    for &j in open.iter() {
        is_open[j] = true;
    }
    let mut swaps = 0;
    while swaps < max_swaps {
        let (d1, c1, d2) = nearest_two(costs, open, ceiling);
        // One accumulator: gain (m) | loss (k) | extra (m × k) | the current total (1).
        let sums = sum_rows(n, m + k + m * k + 1, |i, acc| {
            let w = weights.get(i);
            if w == 0.0 {
                return;
            }
            let (a, r, b) = (d1[i], c1[i], d2[i]);
            let (gain, rest) = acc.split_at_mut(m);
            let (loss, rest) = rest.split_at_mut(k);
            let (extra, current) = rest.split_at_mut(m * k);
            current[0] += w * a;
            loss[r] += w * (b - a);
            for (u, &c) in costs.row(i).iter().enumerate() {
                if c < b && !is_open[u] {
                    if c < a {
                        gain[u] += w * (a - c);
                    }
                    extra[u * k + r] += w * (b - c.max(a));
                }
            }
        });
        let (gain, rest) = sums.split_at(m);
        let (loss, rest) = rest.split_at(k);
        let (extra, current) = rest.split_at(m * k);
        // A swap must gain more than rounding noise of the current total.
        let tolerance = 1e-12 * current[0].max(f64::MIN_POSITIVE);
        let mut best = (tolerance, usize::MAX, usize::MAX);
        for u in (0..m).filter(|&u| !is_open[u]) {
            for r in fixed_count..k {
                let profit = gain[u] - loss[r] + extra[u * k + r];
                if profit > best.0 {
                    best = (profit, u, r);
                }
            }
        }
        if best.1 == usize::MAX {
            break;
        }
        let (_, u, r) = best;
        is_open[open[r]] = false;
        is_open[u] = true;
        open[r] = u;
        swaps += 1;
    }
    swaps
}

/// The best value of the Lagrangian relaxation of the assignment constraints found by
/// subgradient optimisation, started from multipliers `λᵢ = wᵢ · d2ᵢ` (every point's second
/// cheapest cost in the heuristic plan), the open set of that best value (fixed first: a
/// start for the Lagrangian heuristic of Beasley 1993) and the iterations spent.
///
/// `L(λ) = Σᵢ λᵢ + Σ_{j open} ρⱼ` with `ρⱼ = Σᵢ min(0, wᵢ costs[i, j] − λᵢ)`, the fixed
/// candidates open and the `p` smallest `ρⱼ` of the others: a lower bound for every `λ`.
/// The step is Held–Wolfe–Crowder's `θ (upper − L) / ‖g‖²` with `θ` halved after 20 steps
/// without progress.
fn lagrangian_bound(
    costs: &CostMatrix<'_>,
    weights: Weights<'_>,
    fixed: &[usize],
    p: usize,
    upper: f64,
    start: &[f64],
    iterations: usize,
) -> (f64, Vec<usize>, usize) {
    let (n, m) = (costs.rows(), costs.columns());
    let mut best_open = Vec::new();
    let mut lambda = start.to_vec();
    let mut is_fixed = vec![false; m];
    for &j in fixed {
        is_fixed[j] = true;
    }
    let (mut best, mut control) = (f64::NEG_INFINITY, StepControl::new());
    let mut chosen = vec![false; m];
    let mut order: Vec<usize> = Vec::with_capacity(m);
    let mut g = vec![0.0; n];
    let mut spent = 0;
    for _ in 0..iterations {
        spent += 1;
        let rho = sum_rows(n, m, |i, rho| {
            let (w, l) = (weights.get(i), lambda[i]);
            for (r, &c) in rho.iter_mut().zip(costs.row(i)) {
                let reduced = w * c - l;
                if reduced < 0.0 {
                    *r += reduced;
                }
            }
        });
        order.clear();
        order.extend((0..m).filter(|&j| !is_fixed[j]));
        order.sort_unstable_by(|&a, &b| rho[a].total_cmp(&rho[b]).then(a.cmp(&b)));
        chosen.iter_mut().for_each(|c| *c = false);
        let mut value = CompensatedSum::default();
        for &j in fixed.iter().chain(order.iter().take(p)) {
            chosen[j] = true;
            value.add(rho[j]);
        }
        for &l in &lambda {
            value.add(l);
        }
        let value = value.total();
        let improved = best == f64::NEG_INFINITY || value > best + 1e-12 * best.abs();
        control.record(improved);
        if improved {
            best = value;
            best_open = fixed.iter().chain(order.iter().take(p)).copied().collect();
        }
        // Subgradient: 1 − (number of open sites with negative reduced cost for point i).
        let mut norm = 0.0;
        for (i, gi) in g.iter_mut().enumerate() {
            let (w, l) = (weights.get(i), lambda[i]);
            let served = costs.row(i).iter().enumerate().filter(|&(j, &c)| chosen[j] && w * c - l < 0.0).count();
            *gi = 1.0 - served as f64;
            norm += *gi * *gi;
        }
        if norm == 0.0 || upper - best <= 1e-9 * upper.abs() || control.exhausted() {
            break;
        }
        let step = control.theta * (upper - value).max(1e-9 * upper.abs()) / norm;
        for (l, gi) in lambda.iter_mut().zip(&g) {
            *l += step * gi;
        }
    }
    (best, best_open, spent)
}

/// `p` new candidates (besides the `fixed` ones) minimising `Σᵢ wᵢ · minⱼ costs[i, j]` over
/// the open ones, with a proven lower bound.
///
/// # Errors
/// Bad weights (see [`crate::geometry::validate_weights`]); [`crate::Error::InvalidParameter`]
/// for `p = 0`, `p` above the candidates that are not fixed, or bad `fixed` columns.
///
/// # Runtime
/// O(p·n·m) for the start, O(n·m + m·p) per swap and per bound iteration.
pub fn discrete_p_median(
    costs: &CostMatrix<'_>,
    weights: Weights<'_>,
    p: usize,
    fixed: &[usize],
    options: &DiscreteMedianOptions,
) -> Result<DiscreteMedian> {
    validate_weights("weights", weights, costs.rows())?;
    check_choice(costs, p, fixed)?;
    let mut open = greedy_add(costs, weights, fixed.to_vec(), p);
    let swaps = fast_swap(costs, weights, &mut open, fixed.len(), options.max_swaps);
    let service = SiteService::of(costs, weights, open.clone(), fixed, None);
    let upper = service.total_cost;
    let ceiling = 2.0 * costs.max_cost() + 1.0;
    let (_, _, d2) = nearest_two(costs, &open, ceiling);
    let start: Vec<f64> = d2.iter().enumerate().map(|(i, &b)| weights.get(i) * b.min(ceiling)).collect();
    let (bound, lagrangian_open, spent) = if upper > 0.0 {
        lagrangian_bound(costs, weights, fixed, p, upper, &start, options.bound_iterations)
    } else {
        (0.0, Vec::new(), 0)
    };
    // Beasley's (1993) Lagrangian heuristic: the open set of the best relaxation, improved by
    // the same interchange, replaces the plan when cheaper.
    let (mut service, mut swaps) = (service, swaps);
    if lagrangian_open.len() == open.len() && relative_gap(upper, bound) > 1e-9 {
        let mut other = lagrangian_open;
        let more = fast_swap(costs, weights, &mut other, fixed.len(), options.max_swaps);
        let candidate = SiteService::of(costs, weights, other, fixed, None);
        if candidate.total_cost < service.total_cost {
            (service, swaps) = (candidate, swaps + more);
        }
    }
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
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::random::SplitMix64 as Rng;

    fn total(costs: &CostMatrix<'_>, w: &[f64], open: &[usize]) -> f64 {
        (0..costs.rows()).map(|i| w[i] * open.iter().map(|&j| costs.row(i)[j]).fold(f64::INFINITY, f64::min)).sum()
    }

    #[test]
    fn swap_optimal_and_bound_below_brute_force() {
        let mut rng = Rng::new(7);
        for _ in 0..30 {
            let (n, m) = (12, 8);
            let values: Vec<f64> = (0..n * m).map(|_| (rng.next_f64() * 100.0).round()).collect();
            let w: Vec<f64> = (0..n).map(|_| 1.0 + (rng.next_f64() * 3.0).round()).collect();
            let costs = CostMatrix::new(&values, n, m).unwrap();
            for p in 1..4 {
                let r = discrete_p_median(&costs, Weights::Given(&w), p, &[], &Default::default()).unwrap();
                let open = &r.service.open;
                let ours = total(&costs, &w, open);
                assert!((ours - r.service.total_cost).abs() <= 1e-9 * ours);
                // Brute-force enumeration of every p-subset (independent): bound <= optimum <= ours.
                let mut exact = f64::INFINITY;
                for mask in 0u32..(1 << m) {
                    if mask.count_ones() as usize == p {
                        let set: Vec<usize> = (0..m).filter(|j| mask >> j & 1 == 1).collect();
                        exact = exact.min(total(&costs, &w, &set));
                    }
                }
                assert!(r.lower_bound <= exact + 1e-9 * exact, "{} > {exact}", r.lower_bound);
                assert!(r.lower_bound >= 0.8 * exact, "weak bound {} for {exact}", r.lower_bound);
                assert!(ours >= exact - 1e-9);
                // Teitz & Bart: no single swap improves the plan (checked by direct evaluation).
                for k in 0..p {
                    for u in (0..m).filter(|u| !open.contains(u)) {
                        let mut other = open.clone();
                        other[k] = u;
                        assert!(total(&costs, &w, &other) >= ours - 1e-9, "swap {k} -> {u} improves");
                    }
                }
            }
        }
    }

    #[test]
    fn fixed_sites_stay_open() {
        // Points at 0..5 on a line, candidates at the same places; candidate 5 is fixed.
        let values: Vec<f64> = (0..6).flat_map(|i| (0..6).map(move |j| (i as f64 - j as f64).abs())).collect();
        let costs = CostMatrix::new(&values, 6, 6).unwrap();
        let r = discrete_p_median(&costs, Weights::Unit, 1, &[5], &Default::default()).unwrap();
        assert!(r.service.open.contains(&5));
        assert_eq!(r.service.open.len(), 2);
        assert_eq!(r.service.fixed, vec![false, true]);
        // Hand-checked: site at 1 or 2 serves 0..3 for 4, site 5 serves 4 and 5 for 1.
        assert_eq!(r.service.total_cost, 5.0);
    }
}
