//! Continuous p-median (the multisource Weber problem): `p` sites minimising
//! `Σ wᵢ · minⱼ ‖sⱼ − aᵢ‖`, optionally beside fixed existing sites.
//!
//! The objective is not convex and has very many local minima, so a local step runs inside
//! a global search, one file per algorithm:
//!
//! - `cooper` — the local step: Cooper (1964), "Heuristic methods for location–allocation
//!   problems", SIAM Review 6(1): alternate *allocation* (each point to its nearest site)
//!   and *location* (each site to the Fermat–Weber point of its cluster) until the
//!   allocation no longer changes.
//! - `reallocate` — incremental allocation after some sites moved.
//! - `jump` — j-means jumps (Hansen and Mladenović 2001) priced exactly from the nearest and
//!   second-nearest distances (Whitaker 1983).
//! - `search` — the global search: seeded multi-start from D-sampling
//!   ([`super::seeding`]), descent (Cooper and jumps), variable neighbourhood search
//!   (Brimberg, Hansen, Mladenović and Taillard 2000).
//! - `sample` — large inputs are searched on a seeded sample; the full data settles.
//!
//! Everything runs in the instance's [`WorkingFrame`] (unit size, so squared distances
//! neither overflow nor underflow) and maps back at the end. The same seed gives the same
//! answer: every random draw comes from a seeded [`SplitMix64`] per start, and the starts
//! are combined in start order.

mod cooper;
mod jump;
mod reallocate;
mod sample;
mod search;

use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;

use super::{check_site_count, plan_frame, run_grouped_beside, world_sites, Location, Service};
use crate::batch::{Grouped, OnGroupError, RowPlaces};
use crate::cancel::{Clock, Watch};
use crate::error::Result;
use crate::geometry::random::SplitMix64;
use crate::geometry::{validate_points, validate_weights, FeasibleRegion, Point, Weights};
use crate::median::{weber_point, weber_point_in_region, WeberOptions};
use sample::{Sample, LARGE_INPUT};

/// How much search [`p_median`] and [`p_center`](crate::multi::p_center) spend for quality.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Effort {
    /// One start, a short search: a good local optimum quickly.
    Fast,
    /// A few starts and a moderate search (the default).
    #[default]
    Normal,
    /// More starts, a long search and more jump candidates on large inputs.
    Thorough,
}

/// Search budget of one effort level.
#[derive(Debug, Clone, Copy)]
struct Budget {
    /// Independent searches, each from its own seeded start.
    starts: usize,
    /// Consecutive failed shakes after which a search stops.
    patience: usize,
    /// Largest shake (number of random jumps).
    k_max: usize,
    /// Jump candidates examined per scan when there are more distinct demand points.
    candidates: usize,
    /// Large inputs: Cooper's rounds on the full data stop once a round gains less than this
    /// fraction of the cost (each round is a pass over every point; on uniform data the tail
    /// is long, every round moving all sites a little for a small gain).
    full_settle: f64,
}

impl Effort {
    fn budget(self, p: usize) -> Budget {
        let k_max = p.clamp(1, 10);
        match self {
            Effort::Fast => Budget { starts: 1, patience: k_max, k_max, candidates: 64, full_settle: 1e-4 },
            Effort::Normal => Budget { starts: 2, patience: 2 * k_max + 10, k_max, candidates: 128, full_settle: 1e-4 },
            Effort::Thorough => {
                Budget { starts: 8, patience: 10 * k_max + 40, k_max, candidates: 512, full_settle: 3e-5 }
            }
        }
    }
}

impl Effort {
    /// Restarts of the p-center heuristic at this effort. Each level's restarts begin with
    /// the lower level's, so more effort never gives a larger radius.
    pub(crate) fn restarts(self) -> usize {
        match self {
            Effort::Fast => 2,
            Effort::Normal => 16,
            Effort::Thorough => 64,
        }
    }

    /// This level and every lower one, lowest first: a level's search runs after the lower
    /// levels' and the best final plan wins, so more effort never gives a worse plan.
    fn levels(self) -> &'static [Effort] {
        match self {
            Effort::Fast => &[Effort::Fast],
            Effort::Normal => &[Effort::Fast, Effort::Normal],
            Effort::Thorough => &[Effort::Fast, Effort::Normal, Effort::Thorough],
        }
    }
}

/// Options of [`p_median`].
#[derive(Debug, Clone, PartialEq, Default)]
pub struct MedianOptions {
    /// Time against quality.
    pub effort: Effort,
    /// Seed of every random choice: the same seed gives the same answer (when the search is
    /// not cut short by `time_limit`).
    pub seed: u64,
    /// Wall-clock budget of one plan in seconds (`None`: none). When it passes, the best plan
    /// found so far is returned with `converged` false.
    pub time_limit: Option<f64>,
    /// Cancel flag and progress count shared with the caller ([`crate::cancel`]).
    pub watch: Watch,
    /// Where the new sites may go (`None`: anywhere). Every new site lies in the region
    /// (boundary included); fixed sites are not moved.
    pub region: Option<Arc<FeasibleRegion>>,
}

/// A p-median plan.
#[derive(Debug, Clone, PartialEq)]
pub struct MedianPlan {
    /// The `p` new sites.
    pub sites: Vec<Point>,
    /// The fixed (existing) sites that served the demand beside the new ones.
    pub fixed: Vec<Point>,
    /// How the sites serve the demand. Site indices (`assignment`, `load`, `count`) run over
    /// the new sites followed by the fixed ones (`0..p` new, `p..p + f` fixed); the plan's
    /// objective is `service.cost`.
    pub service: Service,
    /// Alternations of Cooper's local step (allocation + location rounds) over the whole search.
    pub iterations: usize,
    /// False when the search was cut short (time limit or cancellation): the plan is the best
    /// found so far.
    pub converged: bool,
}

/// Weber tolerance during the search, and for the final polish.
const SEARCH_TOL: f64 = 1e-7;
const FINAL_TOL: f64 = 1e-10;
/// During the search a descent stops once a Cooper round gains less than this fraction of
/// the cost; the final polish runs until the allocation is stable (on large inputs: see
/// `Budget::full_settle`).
const SEARCH_SETTLE: f64 = 1e-5;
/// Cap on Cooper rounds per descent (it converges in finitely many; this guards against
/// cycling caused by inexact location steps).
const MAX_ROUNDS: usize = 500;
/// Cap on Cooper rounds per descent on the full data of a large input (more than
/// [`LARGE_INPUT`] points), where the search itself ran on a sample.
const LARGE_MAX_ROUNDS: usize = 25;
/// A new solution replaces the incumbent only when better by this relative margin.
const IMPROVEMENT: f64 = 1e-10;

/// `p` new sites minimising the total weighted distance from every point to its nearest
/// site, new or `fixed`.
///
/// `p = 1` without fixed sites is the convex single-site problem, answered by
/// [`weber_point`] itself (or [`weber_point_in_region`] with a region). With a region
/// (`options.region`), Cooper's location step is the restricted Fermat–Weber point and every
/// start, jump and shake target is moved to the nearest point of the region.
///
/// # Errors
/// - [`crate::Error::TooFewPoints`] when `points` is empty, or when fewer than `p` distinct
///   points carry positive weight;
/// - [`crate::Error::InvalidParameter`] when `p = 0`;
/// - [`crate::Error::NonFiniteCoordinate`] for a NaN or infinite coordinate in `points` or `fixed`;
/// - [`crate::Error::LengthMismatch`], [`crate::Error::InvalidWeight`],
///   [`crate::Error::AllWeightsZero`] for bad weights.
///
/// # Runtime
/// One Cooper round costs O(n) for the allocation while the sites move less than the
/// points' bounds allow (else O(n · (p + f)) at most) plus O(n) per Weber evaluation (the
/// clusters in parallel); one jump scan costs O(n · c) for c candidate points (every
/// distinct point up to 2 000, else a sample of 64 to 512 by effort). The global search
/// runs on at most 20 000 points (a seeded sample beyond, one per effort level), so its
/// cost is bounded; the full data sees Cooper's rounds from each level's best plan until
/// a round gains less than 10⁻⁴ of the cost (3·10⁻⁵ at thorough).
pub fn p_median(
    points: &[Point],
    weights: Weights<'_>,
    p: usize,
    fixed: &[Point],
    options: &MedianOptions,
) -> Result<MedianPlan> {
    validate_points("points", points, 1)?;
    validate_weights("weights", weights, points.len())?;
    validate_points("fixed", fixed, 0)?;
    let distinct = check_site_count(points, weights, p)?;

    let mut iterations = 0;
    let stopped = AtomicBool::new(false);
    let region = options.region.as_deref();
    let sites: Vec<Point> = if p == 1 && fixed.is_empty() {
        let single = match region {
            None => weber_point(points, weights, &WeberOptions::default())?,
            Some(region) => weber_point_in_region(points, weights, region, &WeberOptions::default())?.point,
        };
        iterations = single.iterations;
        vec![single.location]
    } else if distinct.len() == p {
        // One site on every distinct location of positive weight (or the nearest point of the
        // region to it): each point pays its least possible distance, so the plan is optimal.
        distinct.iter().map(|l| region.map_or(points[l.first], |r| r.project(points[l.first]))).collect()
    } else {
        // The frame holds the region too: sites live there, and a region far from points of
        // tiny extent would otherwise sit so far out in the points' unit frame that squared
        // distances to its sites overflow (points near 1e-160, a region near 1).
        let (frame, local_region) = plan_frame(points, &[], region);
        let local = frame.local(points);
        let fixed_local = frame.local(fixed);
        let candidates: Vec<usize> = distinct.iter().map(|l: &Location| l.first).collect();
        let clock = options.watch.clock(options.time_limit);
        let problem = Problem {
            points: &local,
            weights,
            fixed: &fixed_local,
            p,
            candidates: &candidates,
            clock: &clock,
            stopped: &stopped,
            region: local_region.as_ref(),
        };
        let best = problem.solve(options, &mut iterations)?;
        world_sites(frame, region, &best.sites)
    };

    let all_sites: Vec<Point> = sites.iter().chain(fixed).copied().collect();
    let service = Service::of(points, weights, &all_sites)?;
    Ok(MedianPlan { sites, fixed: fixed.to_vec(), service, iterations, converged: !stopped.load(Ordering::Relaxed) })
}

/// [`p_median`] on every group of `points` (labels `labels`), in parallel, with the same
/// `p` for every group.
///
/// Fixed sites serve only their own group: `fixed_labels[k]` is the group label of
/// `fixed[k]` (one label per fixed site; both empty for none). A group's fixed sites are the
/// fixed sites with its label, in their input order; a fixed site whose label has no points
/// serves nobody. Every group's plan equals a separate [`p_median`] call on that group's
/// points and fixed sites. The [`RowPlaces`] say where every input row sits, so per-point
/// values can be laid out in input order.
///
/// # Errors
/// [`crate::Error::InvalidParameter`] (`fixed_groups`) when `fixed_labels` does not have one
/// label per fixed site; [`crate::Error::NonFiniteCoordinate`] for a bad fixed site (naming
/// its row in `fixed`); the errors of [`crate::batch::run_grouped_placed`]; with
/// [`OnGroupError::Raise`] the first group's error of [`p_median`].
#[allow(clippy::too_many_arguments)]
pub fn p_medians(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    p: usize,
    fixed: &[Point],
    fixed_labels: &[i64],
    options: &MedianOptions,
    on_error: OnGroupError,
) -> Result<(Grouped<MedianPlan>, RowPlaces)> {
    // Each group's own search is quiet; progress counts the points of finished groups.
    let inner = MedianOptions { watch: options.watch.quiet(), ..options.clone() };
    run_grouped_beside(points, weights, labels, (fixed, fixed_labels), &options.watch, on_error, |at, w, own| {
        p_median(at, w, p, own, &inner)
    })
}

/// An independent seed for start `start` (SplitMix64's mixer applied to the pair).
fn start_seed(seed: u64, start: usize) -> u64 {
    SplitMix64::new(seed ^ (start as u64).wrapping_mul(0xD1B5_4A32_D192_ED03)).next_u64()
}

/// The instance in its working frame.
struct Problem<'a> {
    points: &'a [Point],
    weights: Weights<'a>,
    fixed: &'a [Point],
    p: usize,
    /// One index per distinct location of positive weight (jump and shake targets).
    candidates: &'a [usize],
    /// When to stop early.
    clock: &'a Clock,
    /// Set once the search stopped early (see [`Problem::halted`]).
    stopped: &'a AtomicBool,
    /// Where new sites may go, in the working frame.
    region: Option<&'a FeasibleRegion>,
}

/// New sites and their cost.
#[derive(Debug, Clone)]
struct Solution {
    sites: Vec<Point>,
    cost: f64,
}

impl Problem<'_> {
    fn improves(new: f64, old: f64) -> bool {
        new < old - IMPROVEMENT * old.abs()
    }

    /// True when the search must stop now (time limit or cancellation); remembers that it
    /// stopped early, so the plan is reported as not converged.
    fn halted(&self) -> bool {
        let stop = self.clock.stop();
        if stop {
            self.stopped.store(true, Ordering::Relaxed);
        }
        stop
    }

    /// `a` when new sites may go there, else the nearest point where they may.
    fn place(&self, a: Point) -> Point {
        self.region.map_or(a, |r| r.project(a))
    }

    /// `sites` followed by the fixed sites.
    fn with_fixed(&self, sites: &[Point]) -> Vec<Point> {
        sites.iter().chain(self.fixed).copied().collect()
    }

    /// Every effort level up to `options.effort` in turn (see [`Effort::levels`]), each a
    /// global search and a polish. A level above the first starts its first search from the
    /// best plan of the lower levels (the others from their own seeded starts) and the best
    /// final plan wins, so a higher effort starts from the lower one's plan and never returns
    /// a worse one on the same input and seed. A level cut short by the clock still competes
    /// with its best plan so far; later levels are not started.
    fn solve(&self, options: &MedianOptions, iterations: &mut usize) -> Result<Solution> {
        let levels = options.effort.levels();
        let sampled = self.points.len() > LARGE_INPUT;
        let watch = &self.clock.watch;
        for (level, &effort) in levels.iter().enumerate() {
            watch.plan((self.level_budget(effort, level).starts + 1 + usize::from(sampled)) as u64);
        }
        let mut best: Option<Solution> = None;
        for (level, effort) in levels.iter().enumerate() {
            if level > 0 && self.halted() {
                break;
            }
            let budget = self.level_budget(*effort, level);
            let from = best.as_ref().map(|b| b.sites.as_slice());
            let plan = self.solve_level(&budget, options.seed, level, from, iterations)?;
            if best.as_ref().is_none_or(|b| plan.cost < b.cost) {
                best = Some(plan);
            }
        }
        Ok(best.expect("the first level always runs"))
    }

    /// The budget of effort level `level` ([`Effort::levels`]). Large inputs: the shortest
    /// patience on the sample, and above the first level half the starts (one of them from
    /// the lower level's plan): on a million points a search from scratch costs more
    /// full-data rounds than it tends to win back.
    fn level_budget(&self, effort: Effort, level: usize) -> Budget {
        let budget = effort.budget(self.p);
        if self.points.len() <= LARGE_INPUT {
            return budget;
        }
        let starts = if level == 0 { budget.starts } else { (budget.starts / 2).max(1) };
        Budget { patience: budget.k_max, starts, ..budget }
    }

    /// One level: the global search (its first start from `from` when given), then the
    /// polish. Large inputs: the global search runs on a seeded sample, its own for every
    /// level (a level above the first so sees the lower level's plan on other points); the
    /// full data only settles its best plan (Cooper's alternation until a round gains less
    /// than `budget.full_settle` of the cost, then the polish).
    fn solve_level(
        &self,
        budget: &Budget,
        seed: u64,
        level: usize,
        from: Option<&[Point]>,
        iterations: &mut usize,
    ) -> Result<Solution> {
        let watch = &self.clock.watch;
        let large = self.points.len() > LARGE_INPUT;
        let seed = if level == 0 { seed } else { start_seed(seed, usize::MAX - level) };
        let sample = large.then(|| Sample::draw(self.points, self.weights, seed));
        let searched = match &sample {
            Some(sample) if sample.candidates.len() > self.p => {
                let on_sample = Problem {
                    points: &sample.points,
                    weights: Weights::Given(&sample.weights),
                    fixed: self.fixed,
                    p: self.p,
                    candidates: &sample.candidates,
                    clock: self.clock,
                    stopped: self.stopped,
                    region: self.region,
                };
                on_sample.best_of_starts(seed, budget, from, iterations)?
            }
            _ => self.best_of_starts(seed, budget, from, iterations)?,
        };
        if self.halted() {
            // Stopped: no pass over the full data. A sample's plan has no full-data cost yet
            // (infinite: it wins only when nothing else was found; the caller prices it).
            let cost = if sample.is_some() { f64::INFINITY } else { searched.cost };
            return Ok(Solution { sites: searched.sites, cost });
        }
        let mut workspace = cooper::Workspace::default();
        let settled = if sample.is_some() {
            let settled = self.cooper(searched.sites, SEARCH_TOL, budget.full_settle, &mut workspace, iterations)?;
            watch.advance(1);
            settled
        } else {
            searched
        };
        let polished = self.polish(settled, budget, &mut workspace, iterations)?;
        watch.advance(1);
        Ok(polished)
    }

    /// Cooper's alternation at the final Weber tolerance from `plan`: until the allocation is
    /// stable, or on large inputs until a round gains less than `budget.full_settle` of the
    /// cost (on a million points every round is a pass over all of them, and the tail gains
    /// little). Never worse than `plan`.
    fn polish(
        &self,
        plan: Solution,
        budget: &Budget,
        workspace: &mut cooper::Workspace,
        iterations: &mut usize,
    ) -> Result<Solution> {
        let settle = if self.points.len() > LARGE_INPUT { budget.full_settle } else { 0.0 };
        let polished = self.cooper(plan.sites.clone(), FINAL_TOL, settle, workspace, iterations)?;
        Ok(if polished.cost <= plan.cost { polished } else { plan })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::Error;
    use crate::geometry::distance;

    fn cost(points: &[Point], sites: &[Point]) -> f64 {
        points.iter().map(|&a| sites.iter().map(|&s| distance(a, s)).fold(f64::INFINITY, f64::min)).sum()
    }

    /// Two tight clusters far apart: the two sites must split them.
    fn two_clusters() -> Vec<Point> {
        let mut pts = Vec::new();
        for i in 0..20 {
            let t = i as f64 * 0.9;
            pts.push([t.cos(), t.sin()]);
            pts.push([100.0 + t.cos(), 50.0 + t.sin()]);
        }
        pts
    }

    #[test]
    fn one_site_is_the_weber_point() {
        // p = 1 is the single-site problem by definition.
        let pts = two_clusters();
        let plan = p_median(&pts, Weights::Unit, 1, &[], &MedianOptions::default()).unwrap();
        let single = weber_point(&pts, Weights::Unit, &WeberOptions::default()).unwrap();
        assert_eq!(plan.sites, vec![single.location]);
        assert!((plan.service.cost - single.cost).abs() <= 1e-12 * single.cost);
    }

    #[test]
    fn two_sites_split_two_far_clusters() {
        // By symmetry each ring's Weber point is its centre region; both rings get a site.
        let pts = two_clusters();
        let plan = p_median(&pts, Weights::Unit, 2, &[], &MedianOptions::default()).unwrap();
        let s = &plan.service;
        assert!((s.load[0] - 20.0).abs() < 1e-12 && (s.load[1] - 20.0).abs() < 1e-12);
        assert_eq!(s.count, vec![20, 20]);
        assert!((cost(&pts, &plan.sites) - s.cost).abs() < 1e-9 * s.cost);
        assert!(s.cost < 2.0 * 20.0 * 1.0 + 1e-9);
    }

    #[test]
    fn sites_are_weber_points_of_their_clusters_and_points_go_to_nearest() {
        // Cooper's two conditions for a local optimum of the p-median.
        let pts: Vec<Point> = (0..300)
            .map(|i| [((i * 7919) % 1013) as f64, ((i * 104_729) % 997) as f64 + (i % 3) as f64 * 500.0])
            .collect();
        let plan = p_median(&pts, Weights::Unit, 5, &[], &MedianOptions::default()).unwrap();
        let assignment = &plan.service.assignment;
        for (i, &a) in pts.iter().enumerate() {
            let d = distance(a, plan.sites[assignment[i]]);
            assert!(plan.sites.iter().all(|&s| d <= distance(a, s) + 1e-9));
        }
        for j in 0..5 {
            let cluster: Vec<Point> = (0..pts.len()).filter(|&i| assignment[i] == j).map(|i| pts[i]).collect();
            let w = weber_point(&cluster, Weights::Unit, &WeberOptions::default()).unwrap();
            let here: f64 = cluster.iter().map(|&a| distance(a, plan.sites[j])).sum();
            assert!(here - w.cost <= 1e-8 * w.cost + w.gap, "site {j}: {here} vs {}", w.cost);
        }
    }

    #[test]
    fn fixed_sites_stay_and_count_in_the_cost() {
        let pts = two_clusters();
        // An existing site at the centre of the first ring: the one new site serves the second.
        let plan = p_median(&pts, Weights::Unit, 1, &[[0.0, 0.0]], &MedianOptions::default()).unwrap();
        let s = &plan.service;
        assert!(distance(plan.sites[0], [100.0, 50.0]) < 1.0);
        assert_eq!(plan.fixed, vec![[0.0, 0.0]]);
        assert_eq!(s.load.len(), 2);
        assert!((s.load[1] - 20.0).abs() < 1e-12);
        assert!(s.assignment.iter().all(|&j| j < 2));
        assert!((cost(&pts, &[plan.sites[0], [0.0, 0.0]]) - s.cost).abs() < 1e-9 * s.cost);
    }

    #[test]
    fn as_many_sites_as_distinct_points_costs_zero() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 0.0], [5.0, 5.0]];
        let plan = p_median(&pts, Weights::Unit, 3, &[], &MedianOptions::default()).unwrap();
        assert_eq!(plan.service.cost, 0.0);
        assert_eq!(plan.service.count, vec![2, 1, 1]);
        assert!(matches!(
            p_median(&pts, Weights::Unit, 4, &[], &MedianOptions::default()),
            Err(Error::TooFewPoints { needed: 4, got: 3, .. })
        ));
    }

    #[test]
    fn same_seed_same_plan() {
        let pts: Vec<Point> = (0..500).map(|i| [((i * 37) % 101) as f64, ((i * 53) % 89) as f64]).collect();
        let o = MedianOptions { seed: 9, ..MedianOptions::default() };
        let a = p_median(&pts, Weights::Unit, 6, &[], &o).unwrap();
        let b = p_median(&pts, Weights::Unit, 6, &[], &o).unwrap();
        assert_eq!(a, b);
    }

    #[test]
    fn large_inputs_search_a_sample_and_refine_on_all_points() {
        // Four far-apart discs of 6 250 points each: the optimal four sites are one per disc.
        let mut rng = SplitMix64::new(5);
        let centres = [[0.0, 0.0], [1000.0, 0.0], [0.0, 1000.0], [1000.0, 1000.0]];
        let pts: Vec<Point> = (0..25_000)
            .map(|i| {
                let c = centres[i % 4];
                let (r, t) = (rng.next_f64().sqrt() * 10.0, rng.next_f64() * std::f64::consts::TAU);
                [c[0] + r * t.cos(), c[1] + r * t.sin()]
            })
            .collect();
        let plan = p_median(
            &pts,
            Weights::Unit,
            4,
            &[],
            &MedianOptions { effort: Effort::Fast, seed: 1, ..MedianOptions::default() },
        )
        .unwrap();
        for (i, &a) in pts.iter().enumerate() {
            assert!(distance(a, plan.sites[plan.service.assignment[i]]) < 20.0);
        }
        assert!((cost(&pts, &plan.sites) - plan.service.cost).abs() < 1e-9 * plan.service.cost);
    }

    /// Uniform points (even seeds) or eight Gaussian-ish clusters (odd seeds).
    fn seeded_instance(seed: u64, n: usize) -> Vec<Point> {
        let mut rng = SplitMix64::new(seed);
        let centres: Vec<Point> = (0..8).map(|_| [rng.next_f64() * 100.0, rng.next_f64() * 100.0]).collect();
        (0..n)
            .map(|_| {
                if seed.is_multiple_of(2) {
                    [rng.next_f64() * 100.0, rng.next_f64() * 100.0]
                } else {
                    let c = centres[rng.below(8)];
                    [c[0] + rng.next_f64() * 3.0, c[1] + rng.next_f64() * 3.0]
                }
            })
            .collect()
    }

    #[test]
    fn more_effort_never_gives_a_worse_plan() {
        // Issue 17: the default effort once returned a worse plan than the fast one. Costs
        // are checked against a direct evaluation of the sites.
        for seed in 0..4 {
            let pts = seeded_instance(seed, 400);
            let plan = |effort| {
                let plan =
                    p_median(&pts, Weights::Unit, 5, &[], &MedianOptions { effort, seed, ..MedianOptions::default() })
                        .unwrap();
                assert!((cost(&pts, &plan.sites) - plan.service.cost).abs() <= 1e-9 * plan.service.cost);
                assert!(plan.converged);
                plan.service.cost
            };
            let (fast, normal, thorough) = (plan(Effort::Fast), plan(Effort::Normal), plan(Effort::Thorough));
            assert!(normal <= fast * (1.0 + 1e-12), "seed {seed}: normal {normal} vs fast {fast}");
            assert!(thorough <= normal * (1.0 + 1e-12), "seed {seed}: thorough {thorough} vs normal {normal}");
        }
    }

    #[test]
    fn more_effort_never_gives_a_worse_plan_on_sampled_inputs() {
        // Above LARGE_INPUT points every level searches a sample; a higher level's first
        // search starts from the lower level's plan, and the best settled plan wins.
        for seed in [2, 3] {
            let pts = seeded_instance(seed, LARGE_INPUT + 1_000);
            let w: Vec<f64> = (0..pts.len()).map(|i| 1.0 + (i % 10) as f64).collect();
            let plan = |effort| {
                let options = MedianOptions { effort, seed, ..MedianOptions::default() };
                let plan = p_median(&pts, Weights::Given(&w), 4, &[], &options).unwrap();
                let direct: f64 = pts
                    .iter()
                    .zip(&w)
                    .map(|(&a, &wi)| wi * plan.sites.iter().map(|&s| distance(a, s)).fold(f64::INFINITY, f64::min))
                    .sum();
                assert!((direct - plan.service.cost).abs() <= 1e-9 * direct);
                plan.service.cost
            };
            let (fast, normal) = (plan(Effort::Fast), plan(Effort::Normal));
            assert!(normal <= fast * (1.0 + 1e-12), "seed {seed}: normal {normal} vs fast {fast}");
        }
    }

    #[test]
    fn a_time_limit_returns_a_consistent_plan_not_converged() {
        // Both paths: searched on all points, and on a sample (more than 20 000 points).
        for n in [2_000, 25_000] {
            let pts = seeded_instance(7, n);
            let options =
                MedianOptions { effort: Effort::Thorough, time_limit: Some(1e-9), ..MedianOptions::default() };
            let plan = p_median(&pts, Weights::Unit, 6, &[], &options).unwrap();
            assert!(!plan.converged);
            assert_eq!(plan.sites.len(), 6);
            assert!((cost(&pts, &plan.sites) - plan.service.cost).abs() <= 1e-9 * plan.service.cost);
        }
    }

    #[test]
    fn a_cancelled_run_is_told_apart_and_counts_its_steps() {
        let pts = seeded_instance(3, 3_000);
        let watch = Watch::new();
        let options = MedianOptions { watch: watch.clone(), ..MedianOptions::default() };
        let plan = p_median(&pts, Weights::Unit, 4, &[], &options).unwrap();
        let (done, total) = watch.progress();
        assert!(done == total && total > 0, "{done} of {total}");
        assert_eq!(watch.finish(plan.iterations).ok(), Some(plan.iterations));
        watch.cancel();
        let stopped = p_median(&pts, Weights::Unit, 4, &[], &options).unwrap();
        assert!(!stopped.converged);
        assert_eq!(watch.finish(stopped), Err(crate::cancel::Cancelled));
    }

    #[test]
    fn zero_weight_points_do_not_pull_sites() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [10.0, 0.0], [11.0, 0.0], [1000.0, 1000.0]];
        let w = [1.0, 1.0, 1.0, 1.0, 0.0];
        let plan = p_median(&pts, Weights::Given(&w), 2, &[], &MedianOptions::default()).unwrap();
        // Closed form: each pair's median segment; total cost 1 + 1.
        assert!((plan.service.cost - 2.0).abs() < 1e-9, "{plan:?}");
    }

    #[test]
    fn grouped_fixed_sites_need_one_label_each_and_name_their_rows() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [5.0, 0.0]];
        let o = MedianOptions::default();
        let e = p_medians(&pts, Weights::Unit, &[1, 1, 2], 1, &[[0.0, 0.0]], &[], &o, OnGroupError::Raise).unwrap_err();
        assert_eq!(e.argument(), "fixed_groups");
        let bad = [[0.0, 0.0], [f64::NAN, 0.0]];
        let e = p_medians(&pts, Weights::Unit, &[1, 1, 2], 1, &bad, &[2, 1], &o, OnGroupError::Raise).unwrap_err();
        assert_eq!((e.argument(), e.row(), e.group()), ("fixed", Some(1), None));
    }
}

#[cfg(test)]
mod p654 {
    use super::*;

    /// TSPLIB p654 (Reinelt 1991) and the best-known objectives of Brimberg, Hansen,
    /// Mladenović and Taillard (2000); see tests/data/p654/README.md.
    fn instance() -> (Vec<Point>, Vec<(usize, f64)>) {
        let numbers = |line: &str| -> Vec<f64> { line.split_whitespace().map(|x| x.parse().unwrap()).collect() };
        let points = include_str!("../../../tests/data/p654/points.txt").lines().map(|l| {
            let v = numbers(l);
            [v[0], v[1]]
        });
        let best = include_str!("../../../tests/data/p654/best_known.txt").lines().map(|l| {
            let v = numbers(l);
            (v[0] as usize, v[1])
        });
        (points.collect(), best.collect())
    }

    #[test]
    fn p654_fast_effort_within_a_tenth_of_a_percent_of_best_known() {
        let (points, best) = instance();
        assert_eq!(points.len(), 654);
        for &(p, known) in &best {
            let options = MedianOptions { effort: Effort::Fast, seed: 0, ..MedianOptions::default() };
            let plan = p_median(&points, Weights::Unit, p, &[], &options).unwrap();
            assert!(plan.service.cost <= known * 1.001, "p = {p}: {} vs best known {known}", plan.service.cost);
        }
    }
}

#[cfg(test)]
mod far_region_tests {
    use super::*;
    use crate::geometry::{distance, FeasibleRegion};

    #[test]
    fn a_region_far_from_tiny_points_is_held_by_the_working_frame() {
        // Points within 1e-159 of the origin and an L-shaped lot in [1, 4]²: in the points'
        // own unit frame the lot sat near 1e160, where squared distances overflow and no
        // site was nearest to any point (an index past the sites). Closed form: every point
        // of the lot is at least as far from such a point as the lot's corner (1, 1), so
        // the optimum puts the sites there and costs Σ |a − (1, 1)|.
        let points: Vec<Point> = (0..8)
            .map(|i| {
                let t = i as f64;
                [(t - 3.5) * 3e-161, (t * t - 12.0) * 1e-161]
            })
            .collect();
        let lot = [[1.0, 1.0], [4.0, 1.0], [4.0, 2.0], [2.0, 2.0], [2.0, 4.0], [1.0, 4.0]];
        let region = Arc::new(FeasibleRegion::new(&lot, &[0, lot.len()]).unwrap());
        let options = MedianOptions { region: Some(region.clone()), ..MedianOptions::default() };
        let plan = p_median(&points, Weights::Unit, 2, &[], &options).unwrap();
        let corner_cost: f64 = points.iter().map(|&a| distance(a, [1.0, 1.0])).sum();
        assert!(plan.sites.iter().all(|&s| region.contains(s)), "{:?}", plan.sites);
        assert!(plan.service.cost <= corner_cost * (1.0 + 1e-12), "{} > {corner_cost}", plan.service.cost);
        assert!(plan.service.cost >= corner_cost * (1.0 - 1e-12), "{} < {corner_cost}", plan.service.cost);
        // Subnormal coordinates (multiples of 5e-324): in the frame that holds the lot they
        // round together, and the seeding put two sites on one location instead of failing.
        let subnormal: Vec<Point> = (0..30).map(|i| [(i % 7) as f64 * 5e-324, (i % 5) as f64 * -5e-324]).collect();
        let plan = p_median(&subnormal, Weights::Unit, 2, &[], &options).unwrap();
        let corner_cost: f64 = subnormal.iter().map(|&a| distance(a, [1.0, 1.0])).sum();
        assert!(plan.sites.iter().all(|&s| region.contains(s)), "{:?}", plan.sites);
        assert!(
            (plan.service.cost - corner_cost).abs() <= 1e-12 * corner_cost,
            "{} vs {corner_cost}",
            plan.service.cost
        );
        // A region whose far corner lies beyond 9e307: twice its reach overflows, which left
        // the frame unscaled. Closed form as above, with the box's near corner.
        let points: Vec<Point> = (0..20).map(|i| [(i % 5) as f64 * 1e-3, (i / 5) as f64 * 1e-3]).collect();
        let far = [[6e307, 6e307], [1e308, 6e307], [1e308, 1e308], [6e307, 1e308]];
        let boxed = Arc::new(FeasibleRegion::new(&far, &[0, far.len()]).unwrap());
        let options = MedianOptions { region: Some(boxed.clone()), ..MedianOptions::default() };
        let w = vec![1e-10; points.len()];
        let plan = p_median(&points, Weights::Given(&w), 2, &[], &options).unwrap();
        let corner_cost: f64 = points.iter().map(|&a| 1e-10 * distance(a, [6e307, 6e307])).sum();
        assert!(plan.sites.iter().all(|&s| boxed.contains(s)), "{:?}", plan.sites);
        assert!(
            (plan.service.cost - corner_cost).abs() <= 1e-12 * corner_cost,
            "{} vs {corner_cost}",
            plan.service.cost
        );
    }
}
