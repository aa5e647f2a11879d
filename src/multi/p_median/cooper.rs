//! Cooper's local step: Cooper (1964), "Heuristic methods for location–allocation
//! problems", SIAM Review 6(1). Alternate *allocation* (each point to its nearest site) and
//! *location* (each site to the Fermat–Weber point of its cluster, from its current place) until
//! the allocation no longer changes. With a region, the location step is the restricted
//! Fermat–Weber point ([`weber_point_in_region`]). Only clusters whose membership changed are re-solved,
//! and only the points a moved site could gain or lose are re-allocated
//! ([`Problem::reallocate`]).
//!
//! Invariant: at the end every point is allocated to a nearest site and every new site with
//! a weighted cluster is that cluster's Fermat–Weber point (to the Weber tolerance) — the
//! two conditions of a local optimum.

use super::{Problem, Solution, LARGE_INPUT, LARGE_MAX_ROUNDS, MAX_ROUNDS};
use rayon::prelude::*;

use crate::error::Result;
use crate::geometry::{Point, Weights};
use crate::median::{weber_point_from, weber_point_in_region, WeberOptions};

/// Reusable buffers of one search: clusters in CSR form.
#[derive(Debug, Default)]
pub(super) struct Workspace {
    offsets: Vec<usize>,
    order: Vec<usize>,
}

/// What a round's location step did for one site.
enum Located {
    /// The cluster did not change (or the search stopped): the site stays.
    Kept,
    /// The cluster carries no weight.
    Empty,
    /// The cluster's Fermat–Weber point.
    At(Point),
}

impl Problem<'_> {
    /// Cooper's alternating location–allocation from `sites` until the allocation is stable,
    /// or — when `settle > 0` — until a round lowers the cost by at most `settle · cost`.
    pub(super) fn cooper(
        &self,
        mut sites: Vec<Point>,
        tol: f64,
        settle: f64,
        ws: &mut Workspace,
        rounds: &mut usize,
    ) -> Result<Solution> {
        let options = WeberOptions { tol, ..WeberOptions::default() };
        let mut served = self.served(&sites)?;
        let mut changed = vec![true; self.p];
        // On large inputs Cooper's tail is long (every round moves a few of a million points
        // for a tiny gain) and each round is a pass over all of them: cap the rounds.
        let max_rounds = if self.points.len() > LARGE_INPUT { LARGE_MAX_ROUNDS } else { MAX_ROUNDS };
        for _ in 0..max_rounds {
            // Here `served` is the allocation to the current `sites`, so stopping leaves a
            // consistent plan (one not yet at its local optimum).
            if self.halted() {
                break;
            }
            *rounds += 1;
            self.gather(&served.index, ws);
            // Each cluster's Fermat–Weber point from its current site (a start close to the
            // answer once the clusters settle), the clusters in parallel; the results are
            // applied in site order, so the plan does not depend on thread timing.
            let before = sites.clone();
            let located: Vec<Result<Located>> = (0..self.p)
                .into_par_iter()
                .map(|j| {
                    if !changed[j] || self.halted() {
                        return Ok(Located::Kept);
                    }
                    let members = &ws.order[ws.offsets[j]..ws.offsets[j + 1]];
                    let (mut cluster_points, mut cluster_weights) = (Vec::new(), Vec::new());
                    for &i in members {
                        let w = self.weights.get(i);
                        if w > 0.0 {
                            cluster_points.push(self.points[i]);
                            cluster_weights.push(w);
                        }
                    }
                    if cluster_points.is_empty() {
                        return Ok(Located::Empty);
                    }
                    let cluster = Weights::Given(&cluster_weights);
                    Ok(Located::At(match self.region {
                        None => weber_point_from(&cluster_points, cluster, tol, before[j]).location,
                        Some(region) => {
                            weber_point_in_region(&cluster_points, cluster, region, &options)?.point.location
                        }
                    }))
                })
                .collect();
            // A round over a million points takes a while: on a stop return the sites
            // `served` belongs to.
            if self.halted() {
                return Ok(Solution { sites: before, cost: served.cost });
            }
            let (mut moved, mut empty) = (Vec::new(), Vec::new());
            for (j, outcome) in located.into_iter().enumerate() {
                match outcome? {
                    Located::Kept => {}
                    Located::Empty => empty.push(j),
                    Located::At(location) => {
                        if location != sites[j] {
                            sites[j] = location;
                            moved.push(j);
                        }
                    }
                }
            }
            let refilled = self.refill(&mut sites, &empty, &served.distance);
            moved.extend_from_slice(&refilled);
            if moved.is_empty() {
                break;
            }
            let next = self.reallocate(&before, &sites, &moved, &served)?;
            changed.iter_mut().for_each(|c| *c = false);
            let mut any = !refilled.is_empty();
            for (&a, &b) in served.index.iter().zip(&next.index) {
                if a != b {
                    any = true;
                    for s in [a, b] {
                        if s < self.p {
                            changed[s] = true;
                        }
                    }
                }
            }
            for &j in &refilled {
                changed[j] = true;
            }
            let gain = served.cost - next.cost;
            served = next;
            if !any || (settle > 0.0 && gain <= settle * served.cost) {
                break;
            }
        }
        Ok(Solution { sites, cost: served.cost })
    }

    /// Sites whose cluster carries no weight move to the worst-served distinct locations
    /// (largest `wᵢ · dᵢ`), one each; returns the sites moved.
    fn refill(&self, sites: &mut [Point], empty: &[usize], distance: &[f64]) -> Vec<usize> {
        if empty.is_empty() {
            return Vec::new();
        }
        let mut worst: Vec<(f64, usize)> = self
            .candidates
            .iter()
            .map(|&i| (self.weights.get(i) * distance[i], i))
            .filter(|&(score, _)| score > 0.0)
            .collect();
        // Largest score first; equal scores by index, so the order is deterministic.
        worst.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
        empty
            .iter()
            .zip(&worst)
            .map(|(&j, &(_, i))| {
                sites[j] = self.place(self.points[i]);
                j
            })
            .collect()
    }

    /// Clusters of the sites as CSR (`offsets`, `order`) by counting sort.
    fn gather(&self, index: &[usize], ws: &mut Workspace) {
        let m = self.p + self.fixed.len();
        ws.offsets.clear();
        ws.offsets.resize(m + 1, 0);
        for &j in index {
            ws.offsets[j + 1] += 1;
        }
        for j in 0..m {
            ws.offsets[j + 1] += ws.offsets[j];
        }
        ws.order.clear();
        ws.order.resize(index.len(), 0);
        let mut next = ws.offsets.clone();
        for (i, &j) in index.iter().enumerate() {
            ws.order[next[j]] = i;
            next[j] += 1;
        }
    }
}
