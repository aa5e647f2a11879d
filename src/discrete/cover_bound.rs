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
//! The steps stop early once a window of iterations closes less than a small share of what
//! separates the bound from the plan (see [`STALL_SHARE`]).

use rayon::prelude::*;

use super::cover::{FlatLists, Incidence};
use super::StepControl;
use crate::cancel::{Clock, Steps};
use crate::geometry::CompensatedSum;

/// Iterations between two sums of `Λ` from scratch.
const RESUM_EVERY: usize = 50;
/// Iterations between two checks that the bound still moves (see [`STALL_SHARE`]).
const STALL_WINDOW: usize = 100;
/// The subgradient stops once [`STALL_WINDOW`] iterations lowered the bound by less than
/// this share of what still separates it from the plan: the steps have become too short to
/// close a noticeable part of the gap (a stall test on the best bound, as subgradient
/// procedures stop on small progress; Beasley 1993).
const STALL_SHARE: f64 = 0.01;

/// `L(λ)` with `Λ = big`: the sum of the `p` largest `Λⱼ` over the `candidates` (ties: the
/// smallest column; a column covering nothing adds 0, as does leaving a site unused) plus
/// `Σₐ (wₐ − λₐ)` over the coverable points (an uncoverable point's `zₐ` is 0 in every plan,
/// so its `λₐ` has no effect). `open` receives the `p` columns, largest `Λ` first.
fn lagrangian_value(
    big: &[f64],
    candidates: &[usize],
    p: usize,
    lambda: &[f64],
    w: &[f64],
    coverable: &[bool],
    open: &mut Vec<usize>,
) -> f64 {
    open.clear();
    open.extend_from_slice(candidates);
    let by_value = |a: &usize, b: &usize| big[*b].total_cmp(&big[*a]).then(a.cmp(b));
    if p < open.len() {
        open.select_nth_unstable_by(p, by_value);
        open.truncate(p);
    }
    open.sort_unstable_by(by_value);
    let mut value = CompensatedSum::default();
    open.iter().for_each(|&j| value.add(big[j]));
    (0..w.len()).filter(|&a| coverable[a]).for_each(|a| value.add(w[a] - lambda[a]));
    value.total()
}

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
    let mut order = Vec::with_capacity(candidates.len());
    let mut big = vec![0.0; m];
    let mut count = vec![0u32; n];
    let flat = FlatLists::of_lists(inc.by_point.iter().map(Vec::as_slice), |j| u32::try_from(j).ok());
    let exact = |lambda: &[f64], big: &mut [f64]| {
        big.par_iter_mut().zip(&inc.by_site).for_each(|(b, set)| *b = set.iter().map(|&a| lambda[a]).sum());
    };
    let (mut best_lambda, mut stepped_best) = (lambda.clone(), false);
    let mut window_start = f64::INFINITY;
    for spent in 0..iterations {
        if clock.stop() {
            break;
        }
        steps.step();
        if spent % RESUM_EVERY == 0 {
            exact(&lambda, &mut big);
        }
        let value = lagrangian_value(&big, &candidates, p, &lambda, w, &coverable, &mut order);
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
        if spent % STALL_WINDOW == 0 {
            // Invariant: `window_start` is the best bound STALL_WINDOW iterations ago.
            if window_start - best < STALL_SHARE * (best - lower) {
                break;
            }
            window_start = best;
        }
        count.iter_mut().for_each(|c| *c = 0);
        order.iter().for_each(|&j| inc.by_site[j].iter().for_each(|&a| count[a] += 1));
        // ∂L/∂λₐ = −1 + (open sites covering a), projected on the box [0, wₐ]: only the
        // multipliers that move enter the norm.
        let mut norm = 0.0;
        for a in 0..n {
            let ga = f64::from(count[a]) - 1.0;
            if coverable[a] && (lambda[a] > 0.0 || ga < 0.0) && (lambda[a] < w[a] || ga > 0.0) {
                norm += ga * ga;
            }
        }
        if norm == 0.0 {
            break;
        }
        let step = control.theta * (value - lower).max(1e-9 * value.abs()) / norm;
        for a in (0..n).filter(|&a| coverable[a]) {
            let ga = f64::from(count[a]) - 1.0;
            let shifted = (lambda[a] - step * ga).clamp(0.0, w[a]);
            if shifted != lambda[a] {
                // Only the columns covering a moved multiplier change their Λ.
                let delta = shifted - lambda[a];
                match &flat {
                    Some(lists) => lists.of(a).iter().for_each(|&j| big[j as usize] += delta),
                    None => inc.by_point[a].iter().for_each(|&j| big[j] += delta),
                }
                lambda[a] = shifted;
            }
        }
    }
    // The bound reported is L at the best multipliers with Λ summed afresh, so rounding of
    // the running updates never enters it (the updated values only steer the steps).
    if stepped_best {
        exact(&best_lambda, &mut big);
        best = lagrangian_value(&big, &candidates, p, &best_lambda, w, &coverable, &mut relaxed);
    }
    (best, relaxed)
}
