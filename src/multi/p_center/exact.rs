//! Exact p-center for tiny instances. Every optimal plan induces a split of the demand into
//! at most `p` clusters, each served by its own minimax point, so the optimum is the least,
//! over all splits, of the largest cluster radius. The splits are enumerated by branch and
//! bound: locations placed in farthest-first order (Gonzalez 1985), each into an existing
//! cluster or a new one, pruning as soon as a cluster's radius reaches the best plan so far,
//! which the heuristic supplies. A cluster's radius never shrinks as points join it, so the
//! pruning is safe.

use super::{Demand, Plan};
use crate::error::Result;
use crate::geometry::Point;

impl Demand {
    /// The optimum over all splits into at most `p` clusters, by branch and bound from the
    /// heuristic's plan.
    pub(super) fn exact(&self, p: usize, heuristic: Plan) -> Result<Plan> {
        // Far-apart locations first, so clusters grow large radii (and get pruned) soon.
        let order = self.farthest_first(self.heaviest(), self.len());
        let mut search = Splits {
            demand: self,
            order,
            p,
            clusters: Vec::new(),
            radii: Vec::new(),
            best: heuristic,
            buffer: (Vec::new(), Vec::new()),
        };
        search.place(0)?;
        Ok(search.best)
    }
}

/// The branch-and-bound state of [`Demand::exact`].
struct Splits<'a> {
    demand: &'a Demand,
    order: Vec<usize>,
    p: usize,
    clusters: Vec<Vec<usize>>,
    radii: Vec<f64>,
    best: Plan,
    buffer: (Vec<Point>, Vec<f64>),
}

impl Splits<'_> {
    /// Place the `k`-th location (in `order`) into each existing cluster, or a new one.
    fn place(&mut self, k: usize) -> Result<()> {
        if k == self.order.len() {
            let radius = self.radii.iter().copied().fold(0.0, f64::max);
            if radius < self.best.radius {
                let mut sites = Vec::with_capacity(self.p);
                for members in &self.clusters {
                    sites.push(self.demand.minimax(members, &mut self.buffer)?.location);
                }
                // Unused sites (fewer clusters than p) sit on (or as near as the region allows
                // to) demand points; they only help.
                let extra: Vec<Point> = self
                    .demand
                    .points
                    .iter()
                    .map(|&a| self.demand.place(a))
                    .filter(|a| !sites.contains(a))
                    .take(self.p - sites.len())
                    .collect();
                sites.extend(extra);
                self.best = Plan { sites, radius };
            }
            return Ok(());
        }
        let i = self.order[k];
        for c in 0..self.clusters.len() {
            self.clusters[c].push(i);
            let r = self.demand.minimax(&self.clusters[c], &mut self.buffer)?.radius;
            if r < self.best.radius {
                let before = std::mem::replace(&mut self.radii[c], r);
                self.place(k + 1)?;
                self.radii[c] = before;
            }
            self.clusters[c].pop();
        }
        if self.clusters.len() < self.p {
            let alone = self.demand.alone(i);
            if alone < self.best.radius {
                self.clusters.push(vec![i]);
                self.radii.push(alone);
                self.place(k + 1)?;
                self.clusters.pop();
                self.radii.pop();
            }
        }
        Ok(())
    }
}
