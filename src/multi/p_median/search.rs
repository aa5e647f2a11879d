//! The global search around Cooper's local step.
//!
//! - **Descent**: Cooper's alternation, then the best j-means jump (Hansen and Mladenović
//!   2001, "J-Means: a new local search heuristic for minimum sum of squares clustering",
//!   Pattern Recognition 34) followed by Cooper again, while that improves.
//! - **Variable neighbourhood search** as applied to this problem by Brimberg, Hansen,
//!   Mladenović and Taillard (2000), "Improvements and comparison of heuristics for solving
//!   the uncapacitated multisource Weber problem", Operations Research 48(3): shake the
//!   incumbent by `k` random jumps, descend, move on improvement (and return to `k = 1`),
//!   otherwise try `k + 1`; stop after a number of consecutive failures set by the effort.
//! - **Multi-start**: several such searches from seeded D-sampling starts
//!   ([`d_sampling`]) run in parallel; the best wins.

use rayon::prelude::*;

use super::cooper::Workspace;
use super::{start_seed, Budget, Problem, Solution, IMPROVEMENT, SEARCH_SETTLE, SEARCH_TOL};
use crate::error::Result;
use crate::geometry::random::SplitMix64;
use crate::geometry::Point;
use crate::multi::seeding::d_sampling;

impl Problem<'_> {
    /// The best of `budget.starts` seeded searches, run in parallel and combined in start
    /// order (strictly better replaces, so ties go to the earlier start whatever the timing).
    /// The first search starts from `from` when given (a lower effort's plan), the others
    /// from D-sampling.
    pub(super) fn best_of_starts(
        &self,
        seed: u64,
        budget: &Budget,
        from: Option<&[Point]>,
        iterations: &mut usize,
    ) -> Result<Solution> {
        let runs: Vec<Result<(Solution, usize)>> = (0..budget.starts)
            .into_par_iter()
            .map(|start| {
                let run = self.search(start_seed(seed, start), budget, from.filter(|_| start == 0));
                self.clock.watch.advance(1);
                run
            })
            .collect();
        let mut best: Option<Solution> = None;
        for run in runs {
            let (solution, rounds) = run?;
            *iterations += rounds;
            if best.as_ref().is_none_or(|b| solution.cost < b.cost) {
                best = Some(solution);
            }
        }
        Ok(best.expect("at least one start"))
    }

    /// One seeded search: descent from `from` or a D-sampling start, then variable
    /// neighbourhood search.
    fn search(&self, seed: u64, budget: &Budget, from: Option<&[Point]>) -> Result<(Solution, usize)> {
        let mut rng = SplitMix64::new(seed);
        let mut workspace = Workspace::default();
        let mut rounds = 0;
        let start = match from {
            Some(sites) => sites.to_vec(),
            None => {
                let mut start = d_sampling(self.points, self.weights, self.candidates, self.fixed, self.p, &mut rng);
                start.iter_mut().for_each(|s| *s = self.place(*s));
                start
            }
        };
        let mut best = self.descend(start, &mut rng, budget, &mut workspace, &mut rounds)?;
        let (mut k, mut failures) = (1, 0);
        while failures < budget.patience && best.cost > 0.0 && !self.halted() {
            let shaken = self.shake(&best.sites, k, &mut rng);
            let trial = self.descend(shaken, &mut rng, budget, &mut workspace, &mut rounds)?;
            if Self::improves(trial.cost, best.cost) {
                best = trial;
                (k, failures) = (1, 0);
            } else {
                k = if k >= budget.k_max { 1 } else { k + 1 };
                failures += 1;
            }
        }
        Ok((best, rounds))
    }

    /// `k` random jumps: `k` distinct new sites each moved to a random unoccupied location.
    fn shake(&self, sites: &[Point], k: usize, rng: &mut SplitMix64) -> Vec<Point> {
        let mut shaken = sites.to_vec();
        let mut which: Vec<usize> = (0..self.p).collect();
        for step in 0..k.min(self.p) {
            let pick = step + rng.below(self.p - step);
            which.swap(step, pick);
            // A few tries at an unoccupied location; on failure the site stays.
            for _ in 0..16 {
                let a = self.place(self.points[self.candidates[rng.below(self.candidates.len())]]);
                if !shaken.contains(&a) && !self.fixed.contains(&a) {
                    shaken[which[step]] = a;
                    break;
                }
            }
        }
        shaken
    }

    /// Cooper descent, then best-improving jumps (each followed by Cooper) while they improve.
    fn descend(
        &self,
        sites: Vec<Point>,
        rng: &mut SplitMix64,
        budget: &Budget,
        workspace: &mut Workspace,
        rounds: &mut usize,
    ) -> Result<Solution> {
        let mut current = self.cooper(sites, SEARCH_TOL, SEARCH_SETTLE, workspace, rounds)?;
        while current.cost > 0.0 && !self.halted() {
            let Some((target, site, delta)) = self.best_jump(&current, rng, budget) else {
                break;
            };
            if delta >= -IMPROVEMENT * current.cost {
                break;
            }
            let mut sites = current.sites.clone();
            sites[site] = self.place(self.points[target]);
            let trial = self.cooper(sites, SEARCH_TOL, SEARCH_SETTLE, workspace, rounds)?;
            if !Self::improves(trial.cost, current.cost) {
                break;
            }
            current = trial;
        }
        Ok(current)
    }
}
