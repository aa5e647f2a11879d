//! Maximal covering (Church & ReVelle 1974): `p` candidates covering the most weight within
//! a radius, by greedy addition, best-swap interchange and a Lagrangian upper bound.

use super::{not_fixed, outside, Incidence};
use crate::cancel::{Clock, RunLimits, Steps};
use crate::discrete::cover_bound::maximal_covering_bound;
use crate::discrete::{check_choice, check_radius, relative_gap, Costs, SiteService};
use crate::error::Result;
use crate::geometry::{validate_weights, Weights};

/// Most subgradient iterations of the maximal-covering bound.
const COVER_BOUND_ITERATIONS: usize = 1000;

/// A maximal-covering plan: `p` new sites covering the most weight within the radius.
#[derive(Debug, Clone, PartialEq)]
pub struct CoverMost {
    /// How the open sites (fixed and chosen) serve the demand, with coverage at the radius;
    /// the objective is `service.coverage.covered_weight`.
    pub service: SiteService,
    /// A proven upper bound on the weight any `p` new sites can cover (with the fixed ones).
    pub upper_bound: f64,
    /// `(upper_bound − covered weight) / upper_bound`; 0 proves the plan optimal.
    pub relative_gap: f64,
    /// Swaps applied by the interchange.
    pub swaps: usize,
}

/// `p` candidates (besides the `fixed` ones) covering the most weight within `radius`.
///
/// # Errors
/// Bad weights, `p` or `fixed` (see [`discrete_p_median`](super::discrete_p_median));
/// [`Error::InvalidParameter`] for a radius that is not finite and positive, and naming
/// `time_limit` when the deadline passes before the coverage lists are complete (no plan
/// exists yet).
///
/// # Runtime
/// O(n·m) to find the coverage, then O(Σ coverage lists + m·p) per swap and bound iteration.
/// Progress counts greedy additions and bound iterations.
pub fn cover_most(
    costs: &Costs<'_>,
    weights: Weights<'_>,
    p: usize,
    radius: f64,
    fixed: &[usize],
    limits: &RunLimits,
) -> Result<CoverMost> {
    validate_weights("weights", weights, costs.rows())?;
    check_choice(costs, p, fixed)?;
    check_radius(radius)?;
    let clock = limits.clock();
    let mut steps = Steps::new(&clock.watch, (p + COVER_BOUND_ITERATIONS) as u64);
    let m = costs.columns();
    // Points the fixed sites already cover count in full; only the others are contested.
    let demand = outside(costs, fixed, radius, |i| weights.get(i) > 0.0);
    let w: Vec<f64> = demand.iter().map(|&i| weights.get(i)).collect();
    let stop = || clock.stop();
    let Some(inc) =
        Incidence::build_watched(costs, &demand, &not_fixed(m, fixed), |_| radius, |_, c| c <= radius, &stop)
    else {
        steps.finish();
        return Err(super::stopped_listing(&clock, "the coverage of the points", "plan"));
    };
    let inc = inc.freed_aside();

    // Greedy addition.
    let mut gain: Vec<f64> = inc.by_site.iter().map(|s| s.iter().map(|&a| w[a]).sum()).collect();
    let mut count = vec![0u32; demand.len()];
    let mut position: Vec<Option<usize>> = vec![None; m];
    let mut chosen: Vec<usize> = Vec::with_capacity(p);
    for _ in 0..p {
        steps.step();
        if clock.stop() {
            // Stopped: complete the plan with the smallest free columns (any p are feasible).
            let mut free = (0..m).filter(|&j| position[j].is_none() && !fixed.contains(&j));
            while chosen.len() < p {
                let j = free.next().expect("p fits among the free candidates");
                chosen.push(j);
            }
            break;
        }
        let j = (0..m)
            .filter(|&j| position[j].is_none() && !fixed.contains(&j))
            .max_by(|&a, &b| gain[a].total_cmp(&gain[b]).then(b.cmp(&a)))
            .expect("p fits among the free candidates");
        position[j] = Some(chosen.len());
        chosen.push(j);
        for &a in &inc.by_site[j] {
            count[a] += 1;
            if count[a] == 1 {
                inc.by_point[a].iter().for_each(|&k| gain[k] -= w[a]);
            }
        }
    }

    let free = not_fixed(m, fixed);
    let mut swaps = improve_cover(&inc, &w, &free, &mut chosen, &clock);
    let contested = covered_by(&inc, &w, &chosen);
    let (bound, relaxed) =
        maximal_covering_bound(&inc, &w, p, contested, &free, COVER_BOUND_ITERATIONS, &clock, &mut steps);
    steps.finish();
    // The Lagrangian heuristic (as for the p-median): the relaxation's sites, improved by
    // the same interchange, replace the plan when they cover more.
    if relaxed.len() == p && !clock.stop() {
        let mut other = relaxed;
        let more = improve_cover(&inc, &w, &free, &mut other, &clock);
        if covered_by(&inc, &w, &other) > contested + 1e-12 * contested {
            (chosen, swaps) = (other, swaps + more);
        }
    }

    let open: Vec<usize> = fixed.iter().chain(&chosen).copied().collect();
    let service = SiteService::of(costs, weights, open, fixed, Some(radius));
    let covered = service.coverage.as_ref().map_or(0.0, |c| c.covered_weight);
    // What the fixed sites (and zero weights) contribute whatever the choice.
    let base = covered - covered_by(&inc, &w, &chosen);
    let upper_bound = (base + bound).max(covered);
    Ok(CoverMost { relative_gap: relative_gap(upper_bound, covered), upper_bound, service, swaps })
}

/// Weight of the contested points that some column of `chosen` covers.
fn covered_by(inc: &Incidence, w: &[f64], chosen: &[usize]) -> f64 {
    let mut hit = vec![false; w.len()];
    chosen.iter().for_each(|&j| inc.by_site[j].iter().for_each(|&a| hit[a] = true));
    hit.iter().zip(w).filter(|(&h, _)| h).map(|(_, &x)| x).sum()
}

/// Best-swap interchange of the `chosen` columns (insert a `free` one, remove a chosen one)
/// while a swap covers more weight: `gain(u) − loss(r) + extra(u, r)`, with `gain` the
/// uncovered weight `u` covers, `loss` the weight only `r` covers and `extra` the part of
/// that `u` covers too. Returns the number of swaps; stops with the plan so far when `clock`
/// says so (polled before every swap).
fn improve_cover(inc: &Incidence, w: &[f64], free: &[bool], chosen: &mut [usize], clock: &Clock) -> usize {
    let (m, p) = (inc.by_site.len(), chosen.len());
    let mut count = vec![0u32; w.len()];
    let mut position: Vec<Option<usize>> = vec![None; m];
    for (r, &j) in chosen.iter().enumerate() {
        position[j] = Some(r);
        inc.by_site[j].iter().for_each(|&a| count[a] += 1);
    }
    let tolerance = 1e-12 * w.iter().sum::<f64>().max(f64::MIN_POSITIVE);
    let mut swaps = 0;
    let (mut gain, mut loss, mut extra) = (vec![0.0; m], vec![0.0; p], vec![0.0; m * p]);
    while swaps < 100_000 && !clock.stop() {
        gain.iter_mut().for_each(|g| *g = 0.0);
        loss.iter_mut().for_each(|l| *l = 0.0);
        extra.iter_mut().for_each(|e| *e = 0.0);
        for (a, list) in inc.by_point.iter().enumerate() {
            match count[a] {
                0 => list.iter().for_each(|&u| gain[u] += w[a]),
                1 => {
                    let r = list.iter().find_map(|&j| position[j]).expect("the covering site");
                    loss[r] += w[a];
                    list.iter().filter(|&&u| position[u].is_none()).for_each(|&u| extra[u * p + r] += w[a]);
                }
                _ => {}
            }
        }
        let mut best = (tolerance, usize::MAX, usize::MAX);
        for u in (0..m).filter(|&u| free[u] && position[u].is_none()) {
            for r in 0..p {
                let profit = gain[u] - loss[r] + extra[u * p + r];
                if profit > best.0 {
                    best = (profit, u, r);
                }
            }
        }
        let (_, u, r) = best;
        if u == usize::MAX {
            break;
        }
        let out = chosen[r];
        inc.by_site[out].iter().for_each(|&a| count[a] -= 1);
        inc.by_site[u].iter().for_each(|&a| count[a] += 1);
        (position[out], position[u], chosen[r]) = (None, Some(r), u);
        swaps += 1;
    }
    swaps
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::discrete::{testing::p_subsets, CostMatrix};
    use crate::geometry::random::SplitMix64;

    #[test]
    fn maximal_covering_matches_brute_force() {
        let mut rng = SplitMix64::new(3);
        for _ in 0..20 {
            let (n, m) = (15, 8);
            let values: Vec<f64> = (0..n * m).map(|_| rng.next_f64() * 10.0).collect();
            let w: Vec<f64> = (0..n).map(|_| 1.0 + (rng.next_f64() * 4.0).floor()).collect();
            let costs = Costs::from(CostMatrix::new(&values, n, m).unwrap());
            for p in 1..4 {
                let r = cover_most(&costs, Weights::Given(&w), p, 3.0, &[], &RunLimits::default()).unwrap();
                // Brute-force enumeration of every p-subset (independent).
                let exact = p_subsets(m, p)
                    .map(|open| {
                        (0..n).filter(|&i| open.iter().any(|&j| values[i * m + j] <= 3.0)).map(|i| w[i]).sum::<f64>()
                    })
                    .fold(0.0, f64::max);
                let covered = r.service.coverage.unwrap().covered_weight;
                assert!(covered <= exact + 1e-9 && covered >= 0.9 * exact, "{covered} vs {exact}");
                assert!(r.upper_bound >= exact - 1e-9, "{} < {exact}", r.upper_bound);
            }
        }
    }
}
