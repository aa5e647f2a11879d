//! Discrete p-center: binary search over the sorted distinct weighted costs with a covering
//! subproblem (Minieka 1970; Daskin 1995, ch. 5).
//!
//! The optimum is one of the values `wᵢ · costs[i, j]`. At a trial value `r`, the plan exists
//! iff `p` candidates cover every point that the fixed sites leave with `wᵢ · cost > r`
//! (candidate `j` covers `i` when `wᵢ · costs[i, j] ≤ r`). Each trial is settled by, in turn:
//! a point no candidate covers (infeasible), a packing larger than `p` (infeasible, proven
//! by the LP dual), a greedy cover of at most `p` sites (feasible), and an exact branching
//! search within a work budget. A trial the budget leaves open is treated as infeasible for
//! the search but proves nothing, so the reported lower bound is the value above the largest
//! trial proven infeasible: the plan is exact exactly when the bound meets its objective.

use super::cover::{Incidence, EXACT_BUDGET};
use super::median::greedy_add;
use super::{check_choice, relative_gap, CostMatrix, SiteService};
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
    Infeasible { proven: bool },
}

/// Can `p` candidates (besides `fixed`) bring every weighted cost to at most `r`?
fn trial(
    costs: &CostMatrix<'_>,
    weights: Weights<'_>,
    p: usize,
    fixed: &[usize],
    usable: &[bool],
    r: f64,
    budget: &mut usize,
) -> Trial {
    let demand: Vec<usize> = (0..costs.rows())
        .filter(|&i| {
            let w = weights.get(i);
            w > 0.0 && fixed.iter().all(|&j| w * costs.row(i)[j] > r)
        })
        .collect();
    let incidence = Incidence::build(costs, &demand, usable, |i, c| weights.get(i) * c <= r);
    if incidence.uncoverable().is_some() {
        return Trial::Infeasible { proven: true };
    }
    let greedy = incidence.greedy();
    if greedy.len() <= p {
        return Trial::Feasible(greedy);
    }
    if incidence.lower_bound(greedy.len(), 50) > p {
        return Trial::Infeasible { proven: true };
    }
    match incidence.exact(p, budget) {
        Some(Some(cover)) => Trial::Feasible(cover),
        Some(None) => Trial::Infeasible { proven: true },
        None => Trial::Infeasible { proven: false },
    }
}

/// `p` new candidates (besides the `fixed` ones) minimising `maxᵢ wᵢ · minⱼ costs[i, j]` over
/// the open ones, with a proven lower bound. Sites the covering leaves over (it may need
/// fewer than `p`) are added greedily for the least total weighted cost.
///
/// # Errors
/// Bad weights, `p` or `fixed` (see [`discrete_p_median`](super::discrete_p_median)).
///
/// # Runtime
/// O(n·m·log(n·m)) for the sorted values and the trials, plus the budgeted exact search.
pub fn discrete_p_center(
    costs: &CostMatrix<'_>,
    weights: Weights<'_>,
    p: usize,
    fixed: &[usize],
) -> Result<DiscreteCenter> {
    validate_weights("weights", weights, costs.rows())?;
    check_choice(costs, p, fixed)?;
    let (n, m) = (costs.rows(), costs.columns());
    // Every point needs some site: the largest cheapest weighted cost bounds the optimum.
    let floor =
        (0..n).map(|i| weights.get(i) * costs.row(i).iter().copied().fold(f64::INFINITY, f64::min)).fold(0.0, f64::max);
    let mut values: Vec<f64> = (0..n)
        .filter(|&i| weights.get(i) > 0.0)
        .flat_map(|i| costs.row(i).iter().map(move |&c| weights.get(i) * c))
        .filter(|&v| v >= floor)
        .collect();
    values.push(floor);
    values.sort_unstable_by(f64::total_cmp);
    values.dedup();
    let mut usable = vec![true; m];
    fixed.iter().for_each(|&j| usable[j] = false);

    let mut budget = EXACT_BUDGET;
    let (mut lo, mut hi) = (0, values.len() - 1);
    // At the largest value one site covers everything.
    let Trial::Feasible(mut best) = trial(costs, weights, p, fixed, &usable, values[hi], &mut budget) else {
        unreachable!("one site covers every point at the largest weighted cost")
    };
    let mut proven = 0;
    while lo < hi {
        let mid = lo + (hi - lo) / 2;
        match trial(costs, weights, p, fixed, &usable, values[mid], &mut budget) {
            Trial::Feasible(cover) => (hi, best) = (mid, cover),
            Trial::Infeasible { proven: sure } => {
                lo = mid + 1;
                if sure {
                    proven = proven.max(mid + 1);
                }
            }
        }
    }
    let chosen = best.len();
    let open = greedy_add(costs, weights, fixed.iter().chain(&best).copied().collect(), p - chosen);
    let service = SiteService::of(costs, weights, open, fixed, None);
    let objective = service.weighted_worst;
    let lower_bound = values[proven].min(objective);
    Ok(DiscreteCenter { relative_gap: relative_gap(objective, lower_bound), lower_bound, service })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::random::SplitMix64;

    #[test]
    fn matches_brute_force() {
        let mut rng = SplitMix64::new(11);
        for _ in 0..30 {
            let (n, m) = (12, 7);
            let values: Vec<f64> = (0..n * m).map(|_| (rng.next_f64() * 50.0).round()).collect();
            let w: Vec<f64> = (0..n).map(|_| 1.0 + (rng.next_f64() * 2.0).round()).collect();
            let costs = CostMatrix::new(&values, n, m).unwrap();
            for p in 1..4 {
                let r = discrete_p_center(&costs, Weights::Given(&w), p, &[]).unwrap();
                // Brute-force enumeration of every p-subset (independent).
                let mut exact = f64::INFINITY;
                for mask in 0u32..(1 << m) {
                    if mask.count_ones() as usize == p {
                        let worst = (0..n)
                            .map(|i| {
                                w[i] * (0..m)
                                    .filter(|j| mask >> j & 1 == 1)
                                    .map(|j| values[i * m + j])
                                    .fold(f64::INFINITY, f64::min)
                            })
                            .fold(0.0, f64::max);
                        exact = exact.min(worst);
                    }
                }
                // Small instances: the exact search settles every trial.
                assert_eq!(r.service.weighted_worst, exact);
                assert_eq!((r.lower_bound, r.relative_gap), (exact, 0.0));
                assert_eq!(r.service.open.len(), p);
            }
        }
    }
}
