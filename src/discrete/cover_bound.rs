//! The Lagrangian upper bound of maximal covering.
//!
//! Relaxing `zₐ ≤ Σ_{j covers a} yⱼ` with multipliers `λₐ ∈ [0, wₐ]` (Church & ReVelle 1974;
//! Galvão & ReVelle 1996) leaves
//!
//! `L(λ) = Σₐ (wₐ − λₐ) + (the p largest Λⱼ = Σ_{a ∈ Sⱼ} λₐ over the free columns)`,
//!
//! an upper bound on the weight `p` sites cover for every such `λ`, minimised by projected
//! subgradient steps (Held, Wolfe & Crowder 1974) toward the weight the plan covers.
//!
//! A step moves only the multipliers whose point is uncovered or covered twice or more by the
//! relaxation's open sites (and not held at the end of their box), so `Λ` is updated through
//! the coverage lists of those points, summed afresh every [`RESUM_EVERY`] iterations (in
//! parallel over the columns, each column's sum in list order, so the value does not depend
//! on the number of threads) and for the bound reported. The subgradient
//! `∂L/∂λₐ = (open sites covering a) − 1` is counted from the `p` open columns' lists alone.

use rayon::prelude::*;

use super::cover::Incidence;
use super::StepControl;
use crate::cancel::{Clock, Steps};
use crate::geometry::CompensatedSum;

/// Iterations between two sums of `Λ` from scratch.
const RESUM_EVERY: usize = 50;

/// The least value found of `L` (see the module docs) in at most `iterations` evaluations,
/// stepping toward `lower` (the weight a plan covers), with the `free` columns opened at that
/// value (a start for the Lagrangian heuristic). Every iteration is a step of `steps`; a stop
/// of `clock` ends the search with the least value so far (the coverable weight before any
/// iteration), which is still a bound.
#[allow(clippy::too_many_arguments)]
pub(super) fn maximal_covering_bound(
    inc: &Incidence,
    w: &[f64],
    p: usize,
    lower: f64,
    free: &[bool],
    iterations: usize,
    clock: &Clock,
    steps: &mut Steps<'_>,
) -> (f64, Vec<usize>) {
    let (n, m) = (w.len(), inc.by_site.len());
    let coverable: Vec<bool> = inc.by_point.iter().map(|list| !list.is_empty()).collect();
    // λ = 0 gives the coverable weight: a bound before any step.
    let mut best: f64 = w.iter().zip(&coverable).filter(|(_, &c)| c).map(|(&x, _)| x).sum();
    let mut relaxed = Vec::new();
    let mut lambda: Vec<f64> = w.iter().map(|&x| x / 2.0).collect();
    let mut control = StepControl::new();
    let candidates: Vec<usize> = (0..m).filter(|&j| free[j] && !inc.by_site[j].is_empty()).collect();
    let mut order = candidates.clone();
    let mut big = vec![0.0; m];
    let mut count = vec![0u32; n];
    let mut g = vec![0.0; n];
    let exact = |lambda: &[f64], big: &mut [f64]| {
        big.par_iter_mut().zip(&inc.by_site).for_each(|(b, set)| *b = set.iter().map(|&a| lambda[a]).sum());
    };
    let (mut best_lambda, mut stepped_best) = (lambda.clone(), false);
    for spent in 0..iterations {
        if clock.stop() {
            break;
        }
        steps.step();
        if spent % RESUM_EVERY == 0 {
            exact(&lambda, &mut big);
        }
        // The p largest Λ among the free columns (ties: smallest column); a column covering
        // nothing adds 0, as does leaving a site unused.
        order.clone_from(&candidates);
        let by_value = |a: &usize, b: &usize| big[*b].total_cmp(&big[*a]).then(a.cmp(b));
        if p < order.len() {
            order.select_nth_unstable_by(p, by_value);
            order.truncate(p);
        }
        order.sort_unstable_by(by_value);
        let mut value = CompensatedSum::default();
        order.iter().for_each(|&j| value.add(big[j]));
        for a in (0..n).filter(|&a| coverable[a]) {
            // An uncoverable point's zₐ is 0 in every plan; λ has no effect there.
            value.add(w[a] - lambda[a]);
        }
        let value = value.total();
        let improved = value < best - 1e-12 * best.abs();
        control.record(improved);
        if improved {
            best = value;
            relaxed.clone_from(&order);
            best_lambda.clone_from(&lambda);
            stepped_best = true;
        }
        if control.exhausted() || best - lower <= 1e-9 * best.abs() {
            break;
        }
        count.iter_mut().for_each(|c| *c = 0);
        order.iter().for_each(|&j| inc.by_site[j].iter().for_each(|&a| count[a] += 1));
        // ∂L/∂λₐ = −1 + (open sites covering a), projected on the box [0, wₐ].
        let mut norm = 0.0;
        for a in 0..n {
            let ga = f64::from(count[a]) - 1.0;
            let moves = coverable[a] && (lambda[a] > 0.0 || ga < 0.0) && (lambda[a] < w[a] || ga > 0.0);
            g[a] = if moves { ga } else { 0.0 };
            norm += g[a] * g[a];
        }
        if norm == 0.0 {
            break;
        }
        let step = control.theta * (value - lower).max(1e-9 * value.abs()) / norm;
        for (a, ((l, &ga), &x)) in lambda.iter_mut().zip(&g).zip(w).enumerate() {
            let moved = (*l - step * ga).clamp(0.0, x);
            if moved != *l {
                // Only the columns covering a moved multiplier change their Λ.
                inc.by_point[a].iter().for_each(|&j| big[j] += moved - *l);
                *l = moved;
            }
        }
    }
    // The bound reported is L at the best multipliers with Λ summed afresh, so rounding of
    // the running updates never enters it (the updated values only steer the steps).
    if stepped_best {
        exact(&best_lambda, &mut big);
        let mut free_columns = candidates;
        let by_value = |a: &usize, b: &usize| big[*b].total_cmp(&big[*a]).then(a.cmp(b));
        if p < free_columns.len() {
            free_columns.select_nth_unstable_by(p, by_value);
            free_columns.truncate(p);
        }
        free_columns.sort_unstable_by(by_value);
        let mut value = CompensatedSum::default();
        free_columns.iter().for_each(|&j| value.add(big[j]));
        (0..n).filter(|&a| coverable[a]).for_each(|a| value.add(w[a] - best_lambda[a]));
        best = value.total();
        relaxed = free_columns;
    }
    (best, relaxed)
}
