//! Plans over candidate sets for the capacitated p-median: the cost of a set of `p`
//! candidates (its exact transportation plan, [`crate::capacity::transport`]), the repair of a
//! set whose capacities cannot hold the demand (shared with the start), and the swap interchange (Teitz & Bart 1968,
//! with the allocation made capacitated): close one open site, open one closed candidate,
//! keep the first change that lowers the cost, and repeat while a pass finds one. A site is
//! tried against the [`NEAR`] closed candidates nearest to it, and every solve starts from
//! the capacity prices of the plan it changes (exact from any start, see
//! [`crate::capacity::transport`]), which leaves only the points near the changed site to move.

use std::collections::HashSet;

use crate::cancel::Clock;
use crate::capacity::allocation::served_cost;
use crate::capacity::transport::{solve_from_watched, Reach};
use crate::capacity::{plain_distance, serve_all};
use crate::geometry::{Point, Weights};

/// Closed candidates, nearest first, each open site is tried against in a pass.
pub(super) const NEAR: usize = 6;

/// `set` made to hold `demand`: while its capacity is short, its smallest site (the first
/// of equals) gives way to the largest closed candidate (`by_size`: candidates by capacity,
/// largest first), as long as that one is larger.
pub(super) fn hold_demand(set: &mut [usize], by_size: &[usize], capacities: &[f64], demand: f64) {
    let mut held: f64 = set.iter().map(|&j| capacities[j]).sum();
    for &big in by_size {
        if serve_all(demand, held).is_ok() {
            break;
        }
        if set.contains(&big) {
            continue;
        }
        let (k, &small) = set
            .iter()
            .enumerate()
            .min_by(|a, b| capacities[*a.1].total_cmp(&capacities[*b.1]).then(a.0.cmp(&b.0)))
            .expect("p ≥ 1");
        if capacities[small] >= capacities[big] {
            break;
        }
        held += capacities[big] - capacities[small];
        set[k] = big;
    }
}

/// A strict improvement: below the best cost by more than rounding.
pub(super) fn lower(cost: f64, best: f64) -> bool {
    cost < best * (1.0 - 1e-12)
}

/// The candidate sets of one run and their costs.
pub(super) struct Sets<'a> {
    pub(super) points: &'a [Point],
    pub(super) candidates: &'a [Point],
    pub(super) capacities: &'a [f64],
    pub(super) demand: f64,
    pub(super) clock: &'a Clock,
    /// Per point, its demand.
    amounts: Vec<f64>,
    /// Sets already costed (sorted).
    seen: HashSet<Vec<usize>>,
}

impl<'a> Sets<'a> {
    pub(super) fn new(
        points: &'a [Point],
        weights: Weights<'a>,
        candidates: &'a [Point],
        capacities: &'a [f64],
        demand: f64,
        clock: &'a Clock,
    ) -> Sets<'a> {
        let amounts = (0..points.len()).map(|i| weights.get(i)).collect();
        Sets { points, candidates, capacities, demand, clock, amounts, seen: HashSet::new() }
    }

    /// Mark `set` as costed (its plan is known); false when it was already.
    pub(super) fn seen(&mut self, set: &[usize]) -> bool {
        let mut key = set.to_vec();
        key.sort_unstable();
        self.seen.insert(key)
    }

    /// The cost of the transportation plan of `set` and its capacity prices (per site of
    /// `set`), its solve started from `prices` (zero when `None`); `None` when `set` was
    /// costed before, its capacities cannot hold the demand, or the clock stopped the solve.
    pub(super) fn cost(&mut self, set: &[usize], prices: Option<&[f64]>) -> Option<(f64, Vec<f64>)> {
        if !self.seen(set) {
            return None;
        }
        let caps: Vec<f64> = set.iter().map(|&j| self.capacities[j]).collect();
        let held: f64 = caps.iter().sum();
        serve_all(self.demand, held).ok()?;
        let sites: Vec<Point> = set.iter().map(|&j| self.candidates[j]).collect();
        let zero = vec![0.0; set.len()];
        let cost = |i: usize, j: usize| plain_distance(self.points[i], sites[j]);
        let plan =
            solve_from_watched(&self.amounts, &caps, &cost, prices.unwrap_or(&zero), Reach::All, &self.clock.quiet())
                .ok()?;
        Some((served_cost(self.points, &sites, &plan.flows, sites.len()), plan.price))
    }

    /// Swap interchange from `set` of cost `cost` (its plan's capacity prices `prices`): in
    /// each pass, every open site (in order) against its [`NEAR`] nearest closed candidates
    /// (nearest first, then by index); the first swap lowering the cost is kept and the pass
    /// goes on. Stops after a pass without a change, after `max_passes` (none at 0), or when
    /// the clock stops. Returns the passes run and whether the last found nothing (a local
    /// optimum of the interchange).
    pub(super) fn interchange(
        &mut self,
        set: &mut [usize],
        cost: &mut f64,
        prices: &mut Vec<f64>,
        max_passes: usize,
    ) -> (usize, bool) {
        let m = self.candidates.len();
        let mut passes = 0;
        while passes < max_passes && !self.clock.stop() {
            passes += 1;
            let mut changed = false;
            for k in 0..set.len() {
                let here = self.candidates[set[k]];
                let mut near: Vec<usize> = (0..m).filter(|c| !set.contains(c)).collect();
                near.sort_by(|&a, &b| {
                    plain_distance(here, self.candidates[a])
                        .total_cmp(&plain_distance(here, self.candidates[b]))
                        .then(a.cmp(&b))
                });
                near.truncate(NEAR);
                for c in near {
                    if self.clock.stop() {
                        return (passes, false);
                    }
                    let mut next = set.to_vec();
                    next[k] = c;
                    let mut start = prices.clone();
                    start[k] = 0.0;
                    if let Some((v, y)) = self.cost(&next, Some(&start)) {
                        if lower(v, *cost) {
                            set[k] = c;
                            *cost = v;
                            *prices = y;
                            changed = true;
                            break;
                        }
                    }
                }
            }
            if !changed {
                return (passes, true);
            }
        }
        (passes, false)
    }
}
