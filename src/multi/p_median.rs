//! Continuous p-median (the multisource Weber problem): `p` sites minimising
//! `Σ wᵢ · minⱼ ‖sⱼ − aᵢ‖`, optionally beside fixed existing sites.
//!
//! The objective is not convex and has very many local minima, so a local step runs inside
//! a global search:
//!
//! - **Local step** — Cooper (1964), "Heuristic methods for location–allocation problems",
//!   SIAM Review 6(1): alternate *allocation* (each point to its nearest site) and *location*
//!   (each site to the Fermat–Weber point of its cluster, by [`weber_point`]) until the
//!   allocation no longer changes. Only clusters whose membership changed are re-solved.
//! - **Jumps** — j-means (Hansen and Mladenović 2001, "J-Means: a new local search heuristic
//!   for minimum sum of squares clustering", Pattern Recognition 34): move one site to an
//!   unoccupied demand point, choosing the best such move by its exact change in cost, which
//!   the nearest and second-nearest distances give in O(n) per candidate point (Whitaker
//!   1983, "A fast algorithm for the greedy interchange for large-scale clustering and median
//!   location problems", INFOR 21); then Cooper again. Repeated while it improves.
//! - **Global search** — variable neighbourhood search as applied to this problem by
//!   Brimberg, Hansen, Mladenović and Taillard (2000), "Improvements and comparison of
//!   heuristics for solving the uncapacitated multisource Weber problem", Operations
//!   Research 48(3): shake the incumbent by `k` random jumps, descend, move on improvement
//!   (and return to `k = 1`), otherwise try `k + 1`; stop after a number of consecutive
//!   failures set by [`Effort`]. Several such searches start from seeded D-sampling (each
//!   new site drawn with probability ∝ `wᵢ · dᵢ`, the k-means++ seeding of Arthur and
//!   Vassilvitskii 2007 with distances for squared distances) and run in parallel; the best
//!   is polished with a tight Weber tolerance.
//! - **Large inputs** (more than 20 000 points) are searched on a seeded uniform sample of
//!   20 000 points; the full data then refines the sample's best plan by one descent
//!   (Cooper and jumps) and the polish.
//!
//! The same seed gives the same answer: every random draw comes from a seeded
//! [`SplitMix64`] per start, and the starts are combined in start order.

use rayon::prelude::*;

use super::{check_site_count, distinct_weighted};
use crate::error::Result;
use crate::geometry::random::SplitMix64;
use crate::geometry::{
    add, distance_squared, scale, sub, validate_points, validate_weights, BoundingBox, CompensatedSum, Point,
    Weights,
};
use crate::median::{weber_point, WeberOptions};
use crate::partition::{allocate, Allocation, SiteIndex};

/// How much search [`p_median`] spends for quality.
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
}

impl Effort {
    fn budget(self, p: usize) -> Budget {
        let k_max = p.clamp(1, 10);
        match self {
            Effort::Fast => Budget { starts: 1, patience: k_max, k_max, candidates: 64 },
            Effort::Normal => Budget { starts: 2, patience: 2 * k_max + 10, k_max, candidates: 128 },
            Effort::Thorough => Budget { starts: 8, patience: 10 * k_max + 40, k_max, candidates: 512 },
        }
    }
}

/// Inputs with more points than this are searched on a seeded sample of this size; the
/// full data only refines the sample's best plan.
const LARGE_INPUT: usize = 20_000;

/// A seeded uniform sample of the points (without replacement, in input order), weights kept.
struct Sample {
    points: Vec<Point>,
    weights: Vec<f64>,
    candidates: Vec<usize>,
}

impl Sample {
    fn draw(points: &[Point], weights: Weights<'_>, seed: u64) -> Sample {
        let mut rng = SplitMix64::new(seed ^ 0x5A3B_1E00_D15C_0001);
        let mut order: Vec<usize> = (0..points.len()).collect();
        // Partial Fisher–Yates: the first LARGE_INPUT entries are a uniform sample.
        for k in 0..LARGE_INPUT {
            let pick = k + rng.below(points.len() - k);
            order.swap(k, pick);
        }
        let mut chosen = order[..LARGE_INPUT].to_vec();
        chosen.sort_unstable();
        let sample_points: Vec<Point> = chosen.iter().map(|&i| points[i]).collect();
        let sample_weights: Vec<f64> = chosen.iter().map(|&i| weights.get(i)).collect();
        let candidates = if sample_weights.iter().any(|&w| w > 0.0) {
            distinct_weighted(&sample_points, Weights::Given(&sample_weights))
        } else {
            Vec::new()
        };
        Sample { points: sample_points, weights: sample_weights, candidates }
    }
}

/// Options of [`p_median`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct MedianOptions {
    /// Time against quality.
    pub effort: Effort,
    /// Seed of every random choice: the same seed gives the same answer.
    pub seed: u64,
}

/// A p-median plan.
#[derive(Debug, Clone, PartialEq)]
pub struct MedianPlan {
    /// The `p` new sites.
    pub sites: Vec<Point>,
    /// `assignment[i]`: the site nearest to point `i`, indexing the new sites followed by
    /// the fixed ones (`0..p` new, `p..p + f` fixed).
    pub assignment: Vec<usize>,
    /// `Σ wᵢ · distance from point i to its nearest site` (new or fixed).
    pub cost: f64,
    /// Summed weight served by each site, new sites then fixed ones (`p + f` entries).
    pub load: Vec<f64>,
    /// Alternations of Cooper's local step (allocation + location rounds) over the whole search.
    pub iterations: usize,
}

/// Weber tolerance during the search, and for the final polish.
const SEARCH_TOL: f64 = 1e-7;
const FINAL_TOL: f64 = 1e-10;
/// During the search a descent stops once a Cooper round gains less than this fraction of
/// the cost; the final polish runs until the allocation is stable.
const SEARCH_SETTLE: f64 = 1e-5;
/// Cap on Cooper rounds per descent (it converges in finitely many; this guards against
/// cycling caused by inexact location steps).
const MAX_ROUNDS: usize = 500;
/// A new solution replaces the incumbent only when better by this relative margin.
const IMPROVEMENT: f64 = 1e-10;

/// `p` new sites minimising the total weighted distance from every point to its nearest
/// site, new or `fixed`.
///
/// `p = 1` without fixed sites is the convex single-site problem, answered by
/// [`weber_point`] itself.
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
/// One Cooper round costs O(n · (p + f)) for the allocation (only moved sites are
/// compared once a descent settles) plus O(n) per Weber evaluation; one jump scan costs
/// O(n · c) for c candidate points (every distinct point up to 2 000, else a sample of 64
/// to 512 by effort). The global search runs on at most 20 000 points (a seeded sample
/// beyond), so its cost is bounded; the full data sees one descent and the polish.
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

    if p == 1 && fixed.is_empty() {
        let single = weber_point(points, weights, &WeberOptions::default())?;
        let mut total = CompensatedSum::default();
        (0..points.len()).for_each(|i| total.add(weights.get(i)));
        return Ok(MedianPlan {
            sites: vec![single.location],
            assignment: vec![0; points.len()],
            cost: single.cost,
            load: vec![total.total()],
            iterations: single.iterations,
        });
    }

    // The unit frame: centred on the points' bounding box and scaled to unit half-extent.
    let frame = BoundingBox::of(points).expect("points is not empty");
    let origin = frame.center();
    let half = 0.5 * (frame.max[0] - frame.min[0]).max(frame.max[1] - frame.min[1]);
    let unit = if half > 0.0 { half } else { 1.0 };
    let to_unit = |a: Point| scale(sub(a, origin), 1.0 / unit);
    let local: Vec<Point> = points.iter().map(|&a| to_unit(a)).collect();
    let fixed_local: Vec<Point> = fixed.iter().map(|&f| to_unit(f)).collect();
    let problem = Problem { points: &local, weights, fixed: &fixed_local, p, candidates: &distinct };

    let mut iterations = 0;
    let sites: Vec<Point> = if distinct.len() == p {
        // One site on every distinct location of positive weight: cost zero.
        distinct.iter().map(|&i| points[i]).collect()
    } else {
        let budget = options.effort.budget(p);
        // Large inputs: the global search runs on a seeded sample, the full data only
        // refines its best plan (descent with jumps, then the polish).
        let sample = (local.len() > LARGE_INPUT).then(|| Sample::draw(&local, weights, options.seed));
        let searched = match &sample {
            Some(sample) if sample.candidates.len() > p => {
                let on_sample = Problem {
                    points: &sample.points,
                    weights: Weights::Given(&sample.weights),
                    fixed: &fixed_local,
                    p,
                    candidates: &sample.candidates,
                };
                on_sample.best_of_starts(options.seed, &budget, &mut iterations)?
            }
            _ => problem.best_of_starts(options.seed, &budget, &mut iterations)?,
        };
        let mut workspace = Workspace::default();
        let refined = if sample.is_some() {
            let mut rng = SplitMix64::new(start_seed(options.seed, budget.starts));
            problem.descend(searched.sites, &mut rng, &budget, &mut workspace, &mut iterations)?
        } else {
            searched
        };
        let polished = problem.cooper(refined.sites.clone(), FINAL_TOL, 0.0, &mut workspace, &mut iterations)?;
        let chosen = if polished.cost <= refined.cost { polished } else { refined };
        chosen.sites.iter().map(|&s| add(scale(s, unit), origin)).collect()
    };

    let all_sites = with_fixed(&sites, fixed);
    let allocation = allocate(points, &SiteIndex::new(&all_sites)?, weights);
    // Cost and loads summed in point order, so a run gives the same bits on any thread count.
    let mut cost = CompensatedSum::default();
    let mut load = vec![0.0; all_sites.len()];
    for (i, (&j, &d)) in allocation.index.iter().zip(&allocation.distance).enumerate() {
        cost.add(weights.get(i) * d);
        load[j] += weights.get(i);
    }
    Ok(MedianPlan { sites, assignment: allocation.index, cost: cost.total(), load, iterations })
}

/// An independent seed for start `start` (SplitMix64's mixer applied to the pair).
fn start_seed(seed: u64, start: usize) -> u64 {
    SplitMix64::new(seed ^ (start as u64).wrapping_mul(0xD1B5_4A32_D192_ED03)).next_u64()
}

/// `sites` followed by `fixed`.
fn with_fixed(sites: &[Point], fixed: &[Point]) -> Vec<Point> {
    sites.iter().chain(fixed).copied().collect()
}

/// The instance in the unit frame.
struct Problem<'a> {
    points: &'a [Point],
    weights: Weights<'a>,
    fixed: &'a [Point],
    p: usize,
    /// One index per distinct location of positive weight (jump and shake targets).
    candidates: &'a [usize],
}

/// New sites and their cost.
#[derive(Debug, Clone)]
struct Solution {
    sites: Vec<Point>,
    cost: f64,
}

/// Nearest site and its distance for every point, with the total weighted distance.
#[derive(Debug, Clone)]
struct Served {
    index: Vec<usize>,
    distance: Vec<f64>,
    cost: f64,
}

/// Reusable buffers of one search: clusters in CSR form and one cluster's points.
#[derive(Debug, Default)]
struct Workspace {
    offsets: Vec<usize>,
    order: Vec<usize>,
    cluster_points: Vec<Point>,
    cluster_weights: Vec<f64>,
}

/// Nearest and second-nearest sites of every point.
struct TwoNearest {
    site: Vec<usize>,
    first: Vec<f64>,
    second: Vec<f64>,
}

impl Problem<'_> {
    fn improves(new: f64, old: f64) -> bool {
        new < old - IMPROVEMENT * old.abs()
    }

    /// The best of `budget.starts` seeded searches, run in parallel and combined in start
    /// order (strictly better replaces, so ties go to the earlier start whatever the timing).
    fn best_of_starts(&self, seed: u64, budget: &Budget, iterations: &mut usize) -> Result<Solution> {
        let runs: Vec<Result<(Solution, usize)>> =
            (0..budget.starts).into_par_iter().map(|start| self.search(start_seed(seed, start), budget)).collect();
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

    /// One seeded search: D-sampling start, descent, then variable neighbourhood search.
    fn search(&self, seed: u64, budget: &Budget) -> Result<(Solution, usize)> {
        let mut rng = SplitMix64::new(seed);
        let mut workspace = Workspace::default();
        let mut rounds = 0;
        let start = self.seed_sites(&mut rng);
        let mut best = self.descend(start, &mut rng, budget, &mut workspace, &mut rounds)?;
        let (mut k, mut failures) = (1, 0);
        while failures < budget.patience && best.cost > 0.0 {
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

    /// D-sampling: each new site at a demand point drawn with probability ∝ `wᵢ · dᵢ`, where
    /// `dᵢ` is the distance to the nearest site chosen so far (fixed sites included).
    fn seed_sites(&self, rng: &mut SplitMix64) -> Vec<Point> {
        let n = self.points.len();
        let mut nearest = vec![f64::INFINITY; n];
        for &f in self.fixed {
            for (d, &a) in nearest.iter_mut().zip(self.points) {
                *d = d.min(unit_distance(a, f));
            }
        }
        let mut sites: Vec<Point> = Vec::with_capacity(self.p);
        let mut scores = vec![0.0; self.candidates.len()];
        while sites.len() < self.p {
            // Score each distinct location; an infinite distance (no site yet) counts as 1.
            for (score, &i) in scores.iter_mut().zip(self.candidates) {
                let d = nearest[i];
                *score = self.weights.get(i) * if d.is_finite() { d } else { 1.0 };
            }
            let chosen = match draw_weighted(&scores, rng) {
                Some(c) => self.points[self.candidates[c]],
                // Every location already has a site (fixed ones cover the demand): put the
                // remaining sites on distinct locations not yet used by a new site.
                None => *self
                    .candidates
                    .iter()
                    .map(|&i| &self.points[i])
                    .find(|a| !sites.contains(a))
                    .expect("p never exceeds the number of distinct locations"),
            };
            for (d, &a) in nearest.iter_mut().zip(self.points) {
                *d = d.min(unit_distance(a, chosen));
            }
            sites.push(chosen);
        }
        sites
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
                let a = self.points[self.candidates[rng.below(self.candidates.len())]];
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
        while current.cost > 0.0 {
            let Some((target, site, delta)) = self.best_jump(&current, rng, budget) else { break };
            if delta >= -IMPROVEMENT * current.cost {
                break;
            }
            let mut sites = current.sites.clone();
            sites[site] = self.points[target];
            let trial = self.cooper(sites, SEARCH_TOL, SEARCH_SETTLE, workspace, rounds)?;
            if !Self::improves(trial.cost, current.cost) {
                break;
            }
            current = trial;
        }
        Ok(current)
    }

    /// Cooper's alternating location–allocation from `sites` until the allocation is stable,
    /// or — when `settle > 0` — until a round lowers the cost by at most `settle · cost`.
    fn cooper(
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
        for _ in 0..MAX_ROUNDS {
            *rounds += 1;
            self.gather(&served.index, ws);
            let (mut moved, mut empty) = (Vec::new(), Vec::new());
            for j in 0..self.p {
                if !changed[j] {
                    continue;
                }
                let members = &ws.order[ws.offsets[j]..ws.offsets[j + 1]];
                ws.cluster_points.clear();
                ws.cluster_weights.clear();
                for &i in members {
                    let w = self.weights.get(i);
                    if w > 0.0 {
                        ws.cluster_points.push(self.points[i]);
                        ws.cluster_weights.push(w);
                    }
                }
                if ws.cluster_points.is_empty() {
                    empty.push(j);
                    continue;
                }
                let location =
                    weber_point(&ws.cluster_points, Weights::Given(&ws.cluster_weights), &options)?.location;
                if location != sites[j] {
                    sites[j] = location;
                    moved.push(j);
                }
            }
            let refilled = self.refill(&mut sites, &empty, &served.distance);
            moved.extend_from_slice(&refilled);
            if moved.is_empty() {
                break;
            }
            let next = self.reallocate(&sites, &moved, &served)?;
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
                sites[j] = self.points[i];
                j
            })
            .collect()
    }

    /// Every point's nearest site (new or fixed) and the cost, from scratch.
    fn served(&self, sites: &[Point]) -> Result<Served> {
        let all = with_fixed(sites, self.fixed);
        let Allocation { index, distance, .. } = allocate(self.points, &SiteIndex::new(&all)?, self.weights);
        Ok(self.with_cost(index, distance))
    }

    /// [`Problem::served`] after the new sites in `moved` changed place, updating `before`:
    /// a point whose site stayed keeps it unless a moved site is now nearer (every other
    /// site is exactly as far as before); a point whose site moved is looked up afresh — by
    /// a scan of the sites when they are few, else in the sites' R*-tree.
    fn reallocate(&self, sites: &[Point], moved: &[usize], before: &Served) -> Result<Served> {
        const SCAN_MAX_SITES: usize = 48;
        let all = with_fixed(sites, self.fixed);
        let tree = if all.len() > SCAN_MAX_SITES { Some(SiteIndex::new(&all)?) } else { None };
        let mut is_moved = vec![false; all.len()];
        for &j in moved {
            is_moved[j] = true;
        }
        // Equally near: the smaller index wins, as in the full allocation.
        let nearer = |best: &mut (usize, f64), j: usize, d: f64| {
            if d < best.1 || (d == best.1 && j < best.0) {
                *best = (j, d);
            }
        };
        let updated: Vec<(usize, f64)> = (0..self.points.len())
            .into_par_iter()
            .with_min_len(4096)
            .map(|i| {
                let a = self.points[i];
                let old = before.index[i];
                if is_moved[old] {
                    if let Some(tree) = &tree {
                        return tree.nearest(a);
                    }
                    let mut best = (usize::MAX, f64::INFINITY);
                    for (j, &s) in all.iter().enumerate() {
                        nearer(&mut best, j, unit_distance(a, s));
                    }
                    return best;
                }
                let mut best = (old, before.distance[i]);
                for &j in moved {
                    nearer(&mut best, j, unit_distance(a, all[j]));
                }
                best
            })
            .collect();
        let (index, distance) = updated.into_iter().unzip();
        Ok(self.with_cost(index, distance))
    }

    /// The cost of an allocation, summed in point order (the same bits on every run).
    fn with_cost(&self, index: Vec<usize>, distance: Vec<f64>) -> Served {
        let mut cost = CompensatedSum::default();
        for (i, &d) in distance.iter().enumerate() {
            cost.add(self.weights.get(i) * d);
        }
        Served { index, distance, cost: cost.total() }
    }

    /// Clusters of the new sites as CSR (`offsets`, `order`) by counting sort.
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

    /// Nearest site (new or fixed), its distance and the second-nearest distance of every point.
    fn two_nearest(&self, sites: &[Point]) -> TwoNearest {
        let all = with_fixed(sites, self.fixed);
        let per_point: Vec<(usize, f64, f64)> = self
            .points
            .par_iter()
            .with_min_len(4096)
            .map(|&a| {
                let (mut site, mut first, mut second) = (0, f64::INFINITY, f64::INFINITY);
                for (j, &s) in all.iter().enumerate() {
                    let d = unit_distance(a, s);
                    if d < first {
                        (second, first, site) = (first, d, j);
                    } else if d < second {
                        second = d;
                    }
                }
                (site, first, second)
            })
            .collect();
        TwoNearest {
            site: per_point.iter().map(|t| t.0).collect(),
            first: per_point.iter().map(|t| t.1).collect(),
            second: per_point.iter().map(|t| t.2).collect(),
        }
    }

    /// The best jump: a demand location `target` not at a site and a new site to move there,
    /// with the exact change in cost. Every distinct location is examined up to 2 000 of
    /// them; beyond, `budget.candidates` are drawn with probability ∝ `wᵢ · dᵢ`.
    fn best_jump(&self, current: &Solution, rng: &mut SplitMix64, budget: &Budget) -> Option<(usize, usize, f64)> {
        const EXAMINE_ALL: usize = 2_000;
        let near = self.two_nearest(&current.sites);
        let mut targets: Vec<usize> = if self.candidates.len() <= EXAMINE_ALL {
            self.candidates.to_vec()
        } else {
            let scores: Vec<f64> = self.candidates.iter().map(|&i| self.weights.get(i) * near.first[i]).collect();
            let mut drawn: Vec<usize> =
                (0..budget.candidates).filter_map(|_| draw_weighted(&scores, rng).map(|c| self.candidates[c])).collect();
            drawn.sort_unstable();
            drawn.dedup();
            drawn
        };
        targets.retain(|&i| near.first[i] > 0.0);
        // The positive-weight points as flat columns, so the distance pass vectorises.
        let served: Vec<usize> = (0..self.points.len()).filter(|&i| self.weights.get(i) > 0.0).collect();
        let xs: Vec<f64> = served.iter().map(|&i| self.points[i][0]).collect();
        let ys: Vec<f64> = served.iter().map(|&i| self.points[i][1]).collect();
        let ws: Vec<f64> = served.iter().map(|&i| self.weights.get(i)).collect();
        let first: Vec<f64> = served.iter().map(|&i| near.first[i]).collect();
        let second: Vec<f64> = served.iter().map(|&i| near.second[i]).collect();
        let site: Vec<usize> = served.iter().map(|&i| near.site[i]).collect();
        let p = self.p;
        let evaluated: Vec<(usize, usize, f64)> = targets
            .par_iter()
            .map_init(
                || (vec![0.0; xs.len()], vec![0.0; p]),
                |(dc, loss), &c| {
                    let [tx, ty] = self.points[c];
                    for ((d, &x), &y) in dc.iter_mut().zip(&xs).zip(&ys) {
                        let (dx, dy) = (x - tx, y - ty);
                        *d = (dx * dx + dy * dy).sqrt();
                    }
                    // Gain where the target is nearer than every site; loss per removed site.
                    let mut gain = 0.0;
                    loss.iter_mut().for_each(|l| *l = 0.0);
                    for k in 0..dc.len() {
                        if dc[k] < first[k] {
                            gain += ws[k] * (first[k] - dc[k]);
                        } else if site[k] < p {
                            loss[site[k]] += ws[k] * (dc[k].min(second[k]) - first[k]);
                        }
                    }
                    let (removed, &least) =
                        loss.iter().enumerate().min_by(|a, b| a.1.total_cmp(b.1)).expect("p >= 1");
                    (c, removed, least - gain)
                },
            )
            .collect();
        // First best in target order: deterministic whatever the thread timing.
        evaluated.into_iter().fold(None, |best: Option<(usize, usize, f64)>, e| match best {
            Some(b) if b.2 <= e.2 => Some(b),
            _ => Some(e),
        })
    }
}

/// Distance in the unit frame, where no square can overflow or underflow (so the plain
/// square root of the sum of squares is as accurate as `hypot` and much faster).
#[inline]
fn unit_distance(a: Point, b: Point) -> f64 {
    distance_squared(a, b).sqrt()
}

/// Index drawn with probability ∝ `scores[i]` (non-negative); `None` when all are zero.
fn draw_weighted(scores: &[f64], rng: &mut SplitMix64) -> Option<usize> {
    let total: f64 = scores.iter().sum();
    if total <= 0.0 || total.is_nan() {
        return None;
    }
    let mut target = rng.next_f64() * total;
    let mut last_positive = None;
    for (i, &s) in scores.iter().enumerate() {
        if s > 0.0 {
            last_positive = Some(i);
            if target < s {
                return Some(i);
            }
            target -= s;
        }
    }
    // Rounding left a remainder: the last positive score takes it.
    last_positive
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
        assert_eq!(plan.cost, single.cost);
    }

    #[test]
    fn two_sites_split_two_far_clusters() {
        // By symmetry each ring's Weber point is its centre region; both rings get a site.
        let pts = two_clusters();
        let plan = p_median(&pts, Weights::Unit, 2, &[], &MedianOptions::default()).unwrap();
        assert!((plan.load[0] - 20.0).abs() < 1e-12 && (plan.load[1] - 20.0).abs() < 1e-12);
        assert!((cost(&pts, &plan.sites) - plan.cost).abs() < 1e-9 * plan.cost);
        assert!(plan.cost < 2.0 * 20.0 * 1.0 + 1e-9);
    }

    #[test]
    fn sites_are_weber_points_of_their_clusters_and_points_go_to_nearest() {
        // Cooper's two conditions for a local optimum of the p-median.
        let pts: Vec<Point> =
            (0..300).map(|i| [((i * 7919) % 1013) as f64, ((i * 104_729) % 997) as f64 + (i % 3) as f64 * 500.0]).collect();
        let plan = p_median(&pts, Weights::Unit, 5, &[], &MedianOptions::default()).unwrap();
        for (i, &a) in pts.iter().enumerate() {
            let d = distance(a, plan.sites[plan.assignment[i]]);
            assert!(plan.sites.iter().all(|&s| d <= distance(a, s) + 1e-9));
        }
        for j in 0..5 {
            let cluster: Vec<Point> = (0..pts.len()).filter(|&i| plan.assignment[i] == j).map(|i| pts[i]).collect();
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
        assert!(distance(plan.sites[0], [100.0, 50.0]) < 1.0);
        assert_eq!(plan.load.len(), 2);
        assert!((plan.load[1] - 20.0).abs() < 1e-12);
        assert!(plan.assignment.iter().all(|&j| j < 2));
        assert!((cost(&pts, &[plan.sites[0], [0.0, 0.0]]) - plan.cost).abs() < 1e-9 * plan.cost);
    }

    #[test]
    fn as_many_sites_as_distinct_points_costs_zero() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 0.0], [5.0, 5.0]];
        let plan = p_median(&pts, Weights::Unit, 3, &[], &MedianOptions::default()).unwrap();
        assert_eq!(plan.cost, 0.0);
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
        let plan = p_median(&pts, Weights::Unit, 4, &[], &MedianOptions { effort: Effort::Fast, seed: 1 }).unwrap();
        for (i, &a) in pts.iter().enumerate() {
            assert!(distance(a, plan.sites[plan.assignment[i]]) < 20.0);
        }
        assert!((cost(&pts, &plan.sites) - plan.cost).abs() < 1e-9 * plan.cost);
    }

    #[test]
    fn zero_weight_points_do_not_pull_sites() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [10.0, 0.0], [11.0, 0.0], [1000.0, 1000.0]];
        let w = [1.0, 1.0, 1.0, 1.0, 0.0];
        let plan = p_median(&pts, Weights::Given(&w), 2, &[], &MedianOptions::default()).unwrap();
        // Closed form: each pair's median segment; total cost 1 + 1.
        assert!((plan.cost - 2.0).abs() < 1e-9, "{plan:?}");
    }
}

#[cfg(test)]
mod p654 {
    use super::*;

    /// TSPLIB p654 (Reinelt 1991) and the best-known objectives of Brimberg, Hansen,
    /// Mladenović and Taillard (2000); see tests/data/p654/README.md.
    fn instance() -> (Vec<Point>, Vec<(usize, f64)>) {
        let numbers = |line: &str| -> Vec<f64> { line.split_whitespace().map(|x| x.parse().unwrap()).collect() };
        let points = include_str!("../../tests/data/p654/points.txt").lines().map(|l| {
            let v = numbers(l);
            [v[0], v[1]]
        });
        let best = include_str!("../../tests/data/p654/best_known.txt").lines().map(|l| {
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
            let options = MedianOptions { effort: Effort::Fast, seed: 0 };
            let plan = p_median(&points, Weights::Unit, p, &[], &options).unwrap();
            assert!(plan.cost <= known * 1.001, "p = {p}: {} vs best known {known}", plan.cost);
        }
    }
}
