//! Discrete p-center: binary search over the sorted distinct weighted costs with a covering
//! subproblem (Minieka 1970; Daskin 1995, ch. 5).
//!
//! The optimum is one of the values `wᵢ · costs[i, j]` (and at least the largest cheapest
//! one). Values are sorted once few enough remain in the search range; before that, the
//! range is halved on the values themselves, so no `n × m` list is held. At a trial value
//! `r`, the plan exists iff `p` candidates cover every point that the fixed sites leave with `wᵢ · cost > r`
//! (candidate `j` covers `i` when `wᵢ · costs[i, j] ≤ r`). Each trial is settled by, in turn:
//! a point no candidate covers (infeasible), a packing larger than `p` (infeasible, proven
//! by the LP dual), a greedy cover of at most `p` sites (feasible), and an exact branching
//! search within a work budget. A trial the budget leaves open is treated as infeasible for
//! the search but proves nothing, so the reported lower bound is the value above the largest
//! trial proven infeasible: the plan is exact exactly when the bound meets its objective.
//!
//! The run polls its clock (`crate::cancel`) before every trial after the first (the first,
//! at the largest value, gives the feasible plan every later trial improves on). Stopped
//! early, it returns the best plan found with the bound of the trials settled so far.

use super::cover::{serving_cover, Incidence, EXACT_BUDGET};
use super::median::{fill_open, greedy_add};
use super::{check_choice, check_weighted_range, relative_gap, Costs, SiteService};
use crate::cancel::{Clock, RunLimits, Steps};
use crate::error::Result;
use crate::geometry::{validate_weights, Weights};

/// A discrete p-center plan with its proven lower bound.
#[derive(Debug, Clone, PartialEq)]
pub struct DiscreteCenter {
    /// How the open sites (fixed and chosen) serve the demand; the objective is
    /// `service.weighted_worst`.
    pub service: SiteService,
    /// A proven lower bound on the least largest weighted cost.
    pub lower_bound: f64,
    /// `(objective − lower_bound) / objective`; 0 proves the plan optimal.
    pub relative_gap: f64,
}

/// Outcome of one trial value.
enum Trial {
    Feasible(Vec<usize>),
    Infeasible {
        proven: bool,
    },
    /// The clock stopped the trial: it settled nothing.
    Stopped,
}

/// Can `p` candidates (besides `fixed`) bring every weighted cost to at most `r`? Polls
/// `clock` while it lists the coverage, bounds the cover size and searches for a cover.
#[allow(clippy::too_many_arguments)]
fn trial(
    costs: &Costs<'_>,
    weights: Weights<'_>,
    p: usize,
    fixed: &[usize],
    usable: &[bool],
    r: f64,
    budget: &mut usize,
    clock: &Clock,
) -> Trial {
    let demand: Vec<usize> = (0..costs.rows())
        .filter(|&i| {
            let w = weights.get(i);
            w > 0.0 && fixed.iter().all(|&j| costs.cost(i, j).is_none_or(|c| w * c > r))
        })
        .collect();
    // w·c <= r needs c <= r / w; the exact test is the product.
    let Some(incidence) = Incidence::build_watched(
        costs,
        &demand,
        usable,
        |i| r / weights.get(i) * (1.0 + 1e-12),
        |i, c| weights.get(i) * c <= r,
        &|| clock.stop(),
    ) else {
        return Trial::Stopped;
    };
    if clock.stop() {
        return Trial::Stopped;
    }
    if incidence.uncoverable().is_some() {
        return Trial::Infeasible { proven: true };
    }
    let greedy = incidence.greedy();
    if greedy.len() <= p {
        return Trial::Feasible(greedy);
    }
    // A bound cut short by the clock is still a bound.
    if incidence.lower_bound(greedy.len(), 50, &mut || !clock.stop()) > p {
        return Trial::Infeasible { proven: true };
    }
    let stop = || clock.stop();
    match incidence.exact(p, budget, &stop) {
        Some(Some(cover)) => Trial::Feasible(cover),
        Some(None) => Trial::Infeasible { proven: true },
        // Stopped inside, the search settled nothing; out of budget, it proved nothing.
        None if clock.stop() => Trial::Stopped,
        None => Trial::Infeasible { proven: false },
    }
}

/// Most weighted costs sorted in memory at once; a wider range is first narrowed by
/// bisection on the values themselves.
const SORTED_VALUES: usize = 4_000_000;

/// Rows between two polls of the clock in [`each_value`].
const POLL_ROWS: usize = 1024;

/// The weighted costs `wᵢ · costs[i, j]` (positive weights, allowed pairs) in `(above, below)`,
/// visited without holding them all. `stop()` is asked every [`POLL_ROWS`] rows; once it is
/// true the pass ends early and what it saw is not all there is (the caller stops too).
fn each_value(
    costs: &Costs<'_>,
    weights: Weights<'_>,
    (above, below): (f64, f64),
    stop: &dyn Fn() -> bool,
    mut f: impl FnMut(f64),
) {
    for i in 0..costs.rows() {
        if i.is_multiple_of(POLL_ROWS) && stop() {
            return;
        }
        let w = weights.get(i);
        if w > 0.0 {
            costs.for_each_within(i, below / w * (1.0 + 1e-12), |_, c| {
                let v = w * c;
                if v > above && v < below {
                    f(v);
                }
            });
        }
    }
}

/// `p` new candidates (besides the `fixed` ones) minimising `maxᵢ wᵢ · minⱼ costs[i, j]` over
/// the open ones, with a proven lower bound. Sites the covering leaves over (it may need
/// fewer than `p`) are added greedily for the least total weighted cost.
///
/// # Errors
/// Bad weights, `p` or `fixed` (see [`discrete_p_median`](super::discrete_p_median)); on a
/// sparse source, [`crate::Error::InvalidParameter`] naming `p` when no `p` sites serve every
/// point through the allowed pairs.
///
/// # Runtime
/// O(allowed pairs) per trial, O(log) trials; the values are sorted only once at most
/// `SORTED_VALUES` remain in the search range. Progress counts trials (their number is
/// planned as the search learns how many values remain).
pub fn discrete_p_center(
    costs: &Costs<'_>,
    weights: Weights<'_>,
    p: usize,
    fixed: &[usize],
    limits: &RunLimits,
) -> Result<DiscreteCenter> {
    validate_weights("weights", weights, costs.rows())?;
    check_choice(costs, p, fixed)?;
    check_weighted_range(costs, weights, false)?;
    let clock = limits.clock();
    // The trials at the largest value and at the floor.
    let mut steps = Steps::new(&clock.watch, 2);
    // The plan of a run whose first trial is stopped or settles nothing: p sites serving every point
    // (any p on a complete source; on a sparse one, the cover proving that some p serve every
    // point, which also refuses p when none do).
    let fallback = if costs.is_complete() {
        Vec::new()
    } else {
        // The cover lists the fixed sites first.
        serving_cover(costs, weights, p, fixed)?.split_off(fixed.len())
    };
    let stop = || clock.stop();
    let m = costs.columns();
    // Every point needs some site: the largest cheapest weighted cost bounds the optimum.
    let floor = (0..costs.rows())
        .filter(|&i| weights.get(i) > 0.0)
        .map(|i| weights.get(i) * costs.cheapest(i).1)
        .fold(0.0, f64::max);
    let mut top = floor;
    each_value(costs, weights, (floor, f64::INFINITY), &stop, |v| top = top.max(v));
    let mut usable = vec![true; m];
    fixed.iter().for_each(|&j| usable[j] = false);

    let mut budget = EXACT_BUDGET;
    // At the largest value every point has each of its allowed sites within reach, so the
    // serving cover (proven above) is feasible.
    let mut best = match trial(costs, weights, p, fixed, &usable, top, &mut budget, &clock) {
        Trial::Feasible(cover) => cover,
        // The greedy cover can need more than p sites and the exact search can run out of
        // budget (sparse costs): the serving cover is feasible at this value all the same.
        Trial::Stopped | Trial::Infeasible { proven: false } => fallback,
        Trial::Infeasible { proven: true } => {
            unreachable!("the sites serving every point meet the largest weighted cost")
        }
    };
    steps.step();
    // Search the values in (low, high): `high` is feasible, everything at or below `low` is
    // infeasible or below the floor; `proven` is the largest value proven infeasible.
    let (mut low, mut high, mut proven) = (f64::NEG_INFINITY, top, f64::NEG_INFINITY);
    let mut record = |v: f64, outcome: Trial, low: &mut f64, high: &mut f64, best: &mut Vec<usize>| match outcome {
        Trial::Feasible(cover) => (*high, *best) = (v, cover),
        Trial::Infeasible { proven: sure } => {
            *low = v;
            if sure {
                proven = proven.max(v);
            }
        }
        Trial::Stopped => {}
    };
    // The floor itself is a value; try it first (often the answer when p is large).
    if floor < high && !clock.stop() {
        let outcome = trial(costs, weights, p, fixed, &usable, floor, &mut budget, &clock);
        record(floor, outcome, &mut low, &mut high, &mut best);
    }
    steps.step();
    while !clock.stop() {
        let mut count = 0usize;
        each_value(costs, weights, (low.max(floor), high), &stop, |_| count += 1);
        if count == 0 || clock.stop() {
            break;
        }
        if count <= SORTED_VALUES {
            let mut values = Vec::with_capacity(count);
            each_value(costs, weights, (low.max(floor), high), &stop, |v| values.push(v));
            if clock.stop() {
                break;
            }
            values.sort_unstable_by(f64::total_cmp);
            values.dedup();
            let (mut a, mut b) = (0, values.len());
            // A binary search over `len` values takes at most ⌊log₂ len⌋ + 1 trials.
            steps.plan(u64::from(values.len().ilog2()) + 1);
            while a < b && !clock.stop() {
                let mid = a + (b - a) / 2;
                let outcome = trial(costs, weights, p, fixed, &usable, values[mid], &mut budget, &clock);
                let feasible = matches!(outcome, Trial::Feasible(_));
                record(values[mid], outcome, &mut low, &mut high, &mut best);
                steps.step();
                if feasible {
                    b = mid;
                } else {
                    a = mid + 1;
                }
            }
            break;
        }
        // Bisection on the value: the least value at or above the middle of the range.
        let middle = low.max(floor) + (high - low.max(floor)) / 2.0;
        let mut v = f64::INFINITY;
        each_value(costs, weights, (middle, high), &stop, |x| v = v.min(x));
        if !v.is_finite() {
            // None at or above the middle: the greatest below it.
            v = f64::NEG_INFINITY;
            let below = middle + f64::EPSILON * middle.abs();
            each_value(costs, weights, (low.max(floor), below), &stop, |x| v = v.max(x));
        }
        if clock.stop() {
            break;
        }
        steps.plan(1);
        let outcome = trial(costs, weights, p, fixed, &usable, v, &mut budget, &clock);
        record(v, outcome, &mut low, &mut high, &mut best);
        steps.step();
    }
    steps.finish();
    let chosen = best.len();
    let mut open: Vec<usize> = fixed.iter().chain(&best).copied().collect();
    if clock.stop() {
        // The greedy completion reads every allowed pair p − chosen times: too long for a
        // stopped run, which completes its plan with the smallest free columns instead.
        fill_open(&mut open, fixed.len() + p, m);
    } else {
        open = greedy_add(costs, weights, open, p - chosen, 2.0 * top + 1.0);
    }
    let service = SiteService::of(costs, weights, open, fixed, None);
    let objective = service.weighted_worst;
    // The optimum is a value above every value proven infeasible, and at least the floor.
    let mut lower_bound = floor;
    if proven >= floor {
        lower_bound = objective;
        // A full pass (never cut short): the least value above the proven one.
        each_value(costs, weights, (proven, objective), &|| false, |v| lower_bound = lower_bound.min(v));
    }
    let lower_bound = lower_bound.min(objective);
    Ok(DiscreteCenter { relative_gap: relative_gap(objective, lower_bound), lower_bound, service })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::discrete::{testing::p_subsets, CostMatrix};
    use crate::geometry::random::SplitMix64;

    #[test]
    fn matches_brute_force() {
        let mut rng = SplitMix64::new(11);
        for _ in 0..30 {
            let (n, m) = (12, 7);
            let values: Vec<f64> = (0..n * m).map(|_| (rng.next_f64() * 50.0).round()).collect();
            let w: Vec<f64> = (0..n).map(|_| 1.0 + (rng.next_f64() * 2.0).round()).collect();
            let costs = Costs::from(CostMatrix::new(&values, n, m).unwrap());
            for p in 1..4 {
                let r = discrete_p_center(&costs, Weights::Given(&w), p, &[], &RunLimits::default()).unwrap();
                // Brute-force enumeration of every p-subset (independent).
                let exact = p_subsets(m, p)
                    .map(|open| {
                        (0..n)
                            .map(|i| w[i] * open.iter().map(|&j| values[i * m + j]).fold(f64::INFINITY, f64::min))
                            .fold(0.0, f64::max)
                    })
                    .fold(f64::INFINITY, f64::min);
                // Small instances: the exact search settles every trial.
                assert_eq!(r.service.weighted_worst, exact);
                assert_eq!((r.lower_bound, r.relative_gap), (exact, 0.0));
                assert_eq!(r.service.open.len(), p);
            }
        }
    }
}
