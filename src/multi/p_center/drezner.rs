//! The p-center heuristic: the alternating method of Drezner (1984), "The p-centre problem
//! — heuristic and optimal algorithms", J. Operational Research Society 35(8). Allocate
//! every point to its nearest site, move every site to the weighted minimax point of its
//! cluster ([`minimax_point`](crate::enclose::minimax_point)), repeat while the radius
//! falls. A local optimum is then improved by handing a point that fixes the largest circle
//! (a support point of the critical cluster) to a neighbouring cluster and re-solving both,
//! again while the radius falls. Restarts alternate weighted farthest-first starts (Gonzalez
//! 1985; the first from the heaviest location, later ones from a random one) with
//! D-sampling starts; the best plan wins.
//!
//! Many locations: the radius of a plan is fixed by a few of them, so each descent first runs
//! on a working set — a seeded sample — and after every descent adds the locations that its
//! plan serves worse than the working set's radius, until none is left (the relaxation of
//! Chen and Chen 2009, "New relaxation-based algorithms for the optimal solution of the
//! continuous and discrete p-center problems", Computers & Operations Research 36(5)). The
//! plan then serves every location within the working set's radius, so it is a local
//! optimum of the whole demand.

use super::{CenterOptions, Demand, Plan, IMPROVEMENT, MAX_ROUNDS};
use crate::cancel::Clock;
use crate::error::Result;
use crate::geometry::random::SplitMix64;
use crate::geometry::{distance, Point, Weights};

use crate::multi::seeding::d_sampling;
use crate::partition::{allocate, SiteIndex};

/// Demands with more distinct locations than this run each descent on a working set first.
const WORKING_SET_FROM: usize = 20_000;

impl Demand {
    /// The best of `options.restarts` descents from seeded starts; when `clock` stops the
    /// search, the best plan so far, with `stopped` set.
    pub(super) fn restarts(
        &self,
        p: usize,
        options: &CenterOptions,
        clock: &Clock,
        stopped: &mut bool,
        iterations: &mut usize,
    ) -> Result<Plan> {
        let mut rng = SplitMix64::new(options.seed);
        let mut best: Option<Plan> = None;
        let restarts = options.effort.restarts();
        let working_set = self.first_working_set(options.seed);
        let sampled = working_set.as_ref().map(|set| self.subset(set));
        let seeds = sampled.as_ref().unwrap_or(self);
        clock.watch.plan(restarts as u64);
        for restart in 0..restarts {
            if restart > 0 && clock.stop() {
                *stopped = true;
                break;
            }
            // Many locations: the start, too, is drawn from the working set (a start costs
            // O(n · p) distances, as much as several descents on the working set).
            let start: Vec<Point> = if restart % 2 == 0 {
                let first = if restart == 0 { seeds.heaviest() } else { rng.below(seeds.len()) };
                seeds.farthest_first(first, p).iter().map(|&i| seeds.points[i]).collect()
            } else {
                d_sampling(&seeds.points, Weights::Given(&seeds.weights), &seeds.all, &[], p, &mut rng)
            };
            let start = start.into_iter().map(|s| self.place(s)).collect();
            let plan = match &working_set {
                Some(set) => self.descend_relaxed(start, set, clock, stopped, iterations)?,
                None => self.descend(start, clock, stopped, iterations)?,
            };
            clock.watch.advance(1);
            if best.as_ref().is_none_or(|b| plan.radius < b.radius * (1.0 - IMPROVEMENT)) {
                best = Some(plan);
            }
        }
        Ok(best.expect("at least one restart"))
    }

    /// The first working set of every relaxed descent: a seeded uniform sample of a quarter of
    /// [`WORKING_SET_FROM`] locations, in demand order; `None` when there are no more than
    /// [`WORKING_SET_FROM`] locations (every descent then runs on all of them).
    fn first_working_set(&self, seed: u64) -> Option<Vec<usize>> {
        if self.len() <= WORKING_SET_FROM {
            return None;
        }
        let mut rng = SplitMix64::new(seed ^ 0x2C3B_7E11_9D40_A5F3);
        let mut order: Vec<usize> = (0..self.len()).collect();
        let size = WORKING_SET_FROM / 4;
        // Partial Fisher–Yates: the first `size` entries are a uniform sample.
        for k in 0..size {
            let pick = k + rng.below(self.len() - k);
            order.swap(k, pick);
        }
        order.truncate(size);
        order.sort_unstable();
        Some(order)
    }

    /// [`Demand::descend`] on a working set that starts as `first` and grows by the locations
    /// the working set's plan serves worse than its own radius (at most [`ADDED_PER_ROUND`]
    /// worst ones per round, largest weighted distance first), until there are none: the
    /// plan's radius on the working set is then its radius on every location.
    fn descend_relaxed(
        &self,
        start: Vec<Point>,
        first: &[usize],
        clock: &Clock,
        stopped: &mut bool,
        iterations: &mut usize,
    ) -> Result<Plan> {
        /// Locations added to the working set after one of its descents.
        const ADDED_PER_ROUND: usize = 2_048;
        let mut active = first.to_vec();
        let mut in_set = vec![false; self.len()];
        active.iter().for_each(|&i| in_set[i] = true);
        let mut sites = start;
        loop {
            let plan = self.subset(&active).descend(sites, clock, stopped, iterations)?;
            sites = plan.sites;
            if *stopped {
                // A cancelled run's plan is dropped by its caller (`Watch::finish`): skip the
                // pass over every location that would only measure it. Ctrl-C then takes
                // effect one such pass sooner.
                let radius = if clock.watch.is_cancelled() { f64::INFINITY } else { self.radius(&sites)? };
                return Ok(Plan { sites, radius });
            }
            let allocation = allocate(&self.points, &SiteIndex::new(&sites)?, Weights::Given(&self.weights));
            let mut worse: Vec<(f64, usize)> = (0..self.len())
                .filter(|&i| !in_set[i])
                .map(|i| (self.weights[i] * allocation.distance[i], i))
                .filter(|&(r, _)| r > plan.radius)
                .collect();
            if worse.is_empty() {
                // Every location outside the working set is served within the working set's
                // radius, so that radius is the plan's radius on all of them. A descent on all
                // of them would not improve it: each cluster's minimax radius, and the radius of
                // every hand-over trial, can only be larger on a superset of the points, so no
                // step that failed on the working set succeeds on all of them.
                return Ok(Plan { sites, radius: plan.radius });
            }
            // Largest weighted distance first; equal ones by index, so the set is deterministic.
            worse.sort_unstable_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
            for &(_, i) in worse.iter().take(ADDED_PER_ROUND) {
                in_set[i] = true;
                active.push(i);
            }
            active.sort_unstable();
        }
    }

    /// Clusters of the nearest-site allocation (members per site, in point order).
    fn clusters(&self, sites: &[Point]) -> Result<Vec<Vec<usize>>> {
        let allocation = allocate(&self.points, &SiteIndex::new(sites)?, Weights::Given(&self.weights));
        let mut clusters = vec![Vec::new(); sites.len()];
        for (i, &j) in allocation.index.iter().enumerate() {
            clusters[j].push(i);
        }
        Ok(clusters)
    }

    /// Drezner's alternation to a local optimum, then support-point hand-overs while they help.
    /// Stops with the plan so far when `clock` says so (setting `stopped`).
    fn descend(
        &self,
        mut sites: Vec<Point>,
        clock: &Clock,
        stopped: &mut bool,
        iterations: &mut usize,
    ) -> Result<Plan> {
        let mut buffer = (Vec::new(), Vec::new());
        let mut radius = self.radius(&sites)?;
        loop {
            // Alternation: minimax point of every cluster, while the radius falls.
            for _ in 0..MAX_ROUNDS {
                if clock.stop() {
                    *stopped = true;
                    return Ok(Plan { sites, radius });
                }
                *iterations += 1;
                let clusters = self.clusters(&sites)?;
                let mut moved = sites.clone();
                for (j, members) in clusters.iter().enumerate() {
                    // A round over a million points takes a while: poll per cluster too.
                    if clock.stop() {
                        *stopped = true;
                        return Ok(Plan { sites, radius });
                    }
                    if !members.is_empty() {
                        moved[j] = self.minimax(members, &mut buffer)?.location;
                    }
                }
                let r = self.radius(&moved)?;
                if r >= radius * (1.0 - IMPROVEMENT) {
                    break;
                }
                (sites, radius) = (moved, r);
            }
            match self.hand_over(&sites, radius, &mut buffer)? {
                Some((better, r)) => (sites, radius) = (better, r),
                None => return Ok(Plan { sites, radius }),
            }
        }
    }

    /// Try handing each support point of the critical cluster to one of the three nearest
    /// other sites; return the first resulting plan with a smaller radius.
    fn hand_over(
        &self,
        sites: &[Point],
        radius: f64,
        buffer: &mut (Vec<Point>, Vec<f64>),
    ) -> Result<Option<(Vec<Point>, f64)>> {
        let clusters = self.clusters(sites)?;
        let mut critical = None;
        let mut worst = -1.0;
        let mut solved = Vec::with_capacity(clusters.len());
        for (j, members) in clusters.iter().enumerate() {
            if members.is_empty() {
                solved.push(None);
                continue;
            }
            let m = self.minimax(members, buffer)?;
            if m.radius > worst {
                (worst, critical) = (m.radius, Some(j));
            }
            solved.push(Some(m));
        }
        let Some(c) = critical else { return Ok(None) };
        let support = solved[c].as_ref().expect("critical cluster is solved").support.clone();
        for &s in &support {
            let mut others: Vec<usize> = (0..sites.len()).filter(|&j| j != c).collect();
            others.sort_by(|&a, &b| {
                distance(self.points[s], sites[a]).total_cmp(&distance(self.points[s], sites[b])).then(a.cmp(&b))
            });
            let rest: Vec<usize> = clusters[c].iter().copied().filter(|&i| i != s).collect();
            if rest.is_empty() {
                continue;
            }
            let shrunk = self.minimax(&rest, buffer)?;
            for &j in others.iter().take(3) {
                let mut grown_members = clusters[j].clone();
                grown_members.push(s);
                let grown = self.minimax(&grown_members, buffer)?;
                if grown.radius.max(shrunk.radius) >= radius {
                    continue;
                }
                let mut trial = sites.to_vec();
                trial[c] = shrunk.location;
                trial[j] = grown.location;
                let r = self.radius(&trial)?;
                if r < radius * (1.0 - IMPROVEMENT) {
                    return Ok(Some((trial, r)));
                }
            }
        }
        Ok(None)
    }
}
