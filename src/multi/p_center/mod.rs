//! Continuous p-center: `p` sites minimising the largest weighted distance
//! `maxᵢ wᵢ · minⱼ ‖sⱼ − aᵢ‖` from a demand point to its nearest site.
//!
//! - `drezner` — the heuristic: Drezner's (1984) alternation of nearest-site clusters and
//!   their minimax points, with hand-overs of the points fixing the largest circle, from
//!   restarts alternating farthest-first (Gonzalez 1985) and D-sampling starts. On many
//!   locations each descent first runs on a growing working set of them (the relaxation of
//!   Chen and Chen 2009) until the plan serves all of them within the working set's radius;
//!   the starts, too, are drawn from the working set.
//! - `exact` — tiny instances (at most [`EXACT_MAX_POINTS`] distinct points of positive
//!   weight) by branch and bound over all splits into at most `p` clusters.
//! - `conditional` — beside fixed existing sites (the conditional p-center): a search over
//!   thresholds of the fixed sites' service, each step an unconditional p-center of the
//!   points the fixed sites serve worse than the threshold (Drezner 1989).
//!
//! Only the distinct locations of positive weight matter, each with the largest weight found
//! there (a largest weighted distance depends on nothing else): the search runs on those.

mod conditional;
mod drezner;
mod exact;

use std::sync::Arc;

use super::{check_site_count, plan_frame, run_grouped_beside, world_sites, Effort, Location, Service};
use crate::batch::{Grouped, OnGroupError, RowPlaces};
use crate::cancel::Watch;
use crate::enclose::{minimax_point, minimax_point_in_region, MinimaxPoint};
use crate::error::Result;
use crate::geometry::{distance, validate_points, validate_weights, FeasibleRegion, Point, Weights};
use crate::partition::{allocate, SiteIndex};

/// Instances with at most this many distinct points of positive weight are solved exactly.
pub const EXACT_MAX_POINTS: usize = 10;

/// Options of [`p_center`].
#[derive(Debug, Clone, PartialEq)]
pub struct CenterOptions {
    /// Seed of the restarts: the same seed gives the same answer (when the search is not cut
    /// short by `time_limit`).
    pub seed: u64,
    /// Time against quality: 2, 16 or 64 restarts (fast, normal, thorough). A higher effort
    /// runs the lower effort's restarts first, in the same order, and keeps the best plan, so
    /// it never returns a larger radius on the same input and seed.
    pub effort: Effort,
    /// Wall-clock budget of one plan in seconds (`None`: none). When it passes, the best plan
    /// found so far is returned with `converged` false.
    pub time_limit: Option<f64>,
    /// Cancel flag and progress count shared with the caller ([`crate::cancel`]).
    pub watch: Watch,
    /// Where the new sites may go (`None`: anywhere); every new site lies in the region
    /// (boundary included); fixed sites are not moved.
    pub region: Option<Arc<FeasibleRegion>>,
}

impl Default for CenterOptions {
    fn default() -> Self {
        CenterOptions { seed: 0, effort: Effort::Normal, time_limit: None, watch: Watch::default(), region: None }
    }
}

/// A p-center plan.
#[derive(Debug, Clone, PartialEq)]
pub struct CenterPlan {
    /// The `p` new sites.
    pub sites: Vec<Point>,
    /// The fixed (existing) sites that served the demand beside the new ones.
    pub fixed: Vec<Point>,
    /// How the sites serve the demand. Site indices (`assignment`, `load`, `count`) run over
    /// the new sites followed by the fixed ones (`0..p` new, `p..p + f` fixed); the plan's
    /// objective is `service.weighted_radius`.
    pub service: Service,
    /// True when the plan is proven optimal (tiny instances, solved exactly; beside fixed
    /// sites, when every inner p-center of the threshold search was).
    pub optimal: bool,
    /// False when the heuristic was cut short (time limit or cancellation): the plan is the
    /// best found so far.
    pub converged: bool,
    /// Alternation rounds (allocation + minimax-point steps) performed.
    pub iterations: usize,
}

/// Cap on alternation rounds per descent.
const MAX_ROUNDS: usize = 200;
/// A plan replaces the incumbent only when its radius is smaller by this relative margin.
const IMPROVEMENT: f64 = 1e-12;

/// `p` new sites minimising the largest weighted distance from a point to its nearest site,
/// new or `fixed`.
///
/// `p = 1` without fixed sites is the weighted minimax point itself ([`minimax_point`], or
/// [`minimax_point_in_region`] with `options.region`). With a region, every cluster's site is
/// its restricted minimax point and every start is moved to the nearest point of the region;
/// the exact search stays exact (a cluster's restricted radius, too, never shrinks as points
/// join it). Points of weight zero
/// are served (they get an assignment) but do not influence the sites.
///
/// Beside fixed sites (the conditional p-center) the plan comes from a search over
/// thresholds `t` of the fixed sites' service `cᵢ = wᵢ · d(aᵢ, fixed)`, each step an
/// unconditional p-center of the points with `cᵢ > t` (Drezner 1989; see `conditional`).
/// An empty `fixed` is the same as none.
///
/// # Errors
/// - [`crate::Error::TooFewPoints`] when `points` is empty, or when fewer than `p` distinct
///   points carry positive weight;
/// - [`crate::Error::InvalidParameter`] when `p = 0`;
/// - [`crate::Error::NonFiniteCoordinate`] for a NaN or infinite coordinate in `points` or
///   `fixed`;
/// - [`crate::Error::LengthMismatch`], [`crate::Error::InvalidWeight`],
///   [`crate::Error::AllWeightsZero`] for bad weights.
///
/// # Runtime
/// Each alternation round costs O(n log p) for the allocation and O(n) (expected) for the
/// minimax points; a descent takes a few to a few dozen rounds, times the restarts of the
/// effort (2, 16 or 64). Beyond 20 000 distinct locations a descent's rounds run on a
/// working set of them (starts included) that grows only by the locations its plans leave
/// worst served, each growth step costing one allocation of all of them. The exact
/// search on at most [`EXACT_MAX_POINTS`] points visits at most the Bell number
/// B₁₀ = 115 975 splits, usually far fewer. Beside fixed sites, about log₂ n such
/// p-centers, each on the points the fixed sites serve worse than its threshold.
pub fn p_center(
    points: &[Point],
    weights: Weights<'_>,
    p: usize,
    fixed: &[Point],
    options: &CenterOptions,
) -> Result<CenterPlan> {
    validate_points("points", points, 1)?;
    validate_weights("weights", weights, points.len())?;
    validate_points("fixed", fixed, 0)?;
    let distinct = check_site_count(points, weights, p)?;
    if p == 1 && fixed.is_empty() {
        // The minimax point, which keeps its own scale.
        return unconditional(points, weights, p, &distinct, options);
    }
    // The search runs in the instance's working frame, of unit size and holding the fixed
    // sites and the region too, so that squared distances (the nearest-site searches) neither
    // underflow nor overflow: on points near 1e-300 they all rounded to 0 and the plan was
    // worse than the same points' at unit scale. The frame scales by a power of two, so
    // nothing is lost but the rounding of the shift; the plan is measured on the given points.
    let region = options.region.as_deref();
    let (frame, local_region) = plan_frame(points, fixed, region);
    let local = frame.local(points);
    let fixed_local = frame.local(fixed);
    let local_options = CenterOptions { region: local_region.map(Arc::new), ..options.clone() };
    let plan = if fixed.is_empty() {
        unconditional(&local, weights, p, &distinct, &local_options)?
    } else {
        conditional::p_center_beside(&local, weights, p, &distinct, &fixed_local, &local_options)?
    };
    let sites = world_sites(frame, region, &plan.sites);
    let all_sites: Vec<Point> = sites.iter().chain(fixed).copied().collect();
    let service = Service::of(points, weights, &all_sites)?;
    Ok(CenterPlan { sites, fixed: fixed.to_vec(), service, ..plan })
}

/// [`p_center`] without fixed sites, on validated input whose distinct locations of positive
/// weight are `distinct` (at least `p`).
fn unconditional(
    points: &[Point],
    weights: Weights<'_>,
    p: usize,
    distinct: &[Location],
    options: &CenterOptions,
) -> Result<CenterPlan> {
    let mut iterations = 0;
    let mut stopped = false;
    let region = options.region.clone();
    let (sites, optimal) = if p == 1 {
        let single = match &region {
            None => minimax_point(points, weights)?.location,
            Some(region) => minimax_point_in_region(points, weights, region)?.point.location,
        };
        (vec![single], true)
    } else {
        let demand = Demand::of(points, distinct, region);
        if demand.len() == p {
            // Each location its own site, as near as the region allows: every point pays its
            // least possible weighted distance, so the plan is optimal.
            (demand.points.iter().map(|&a| demand.place(a)).collect(), true)
        } else {
            let clock = options.watch.clock(options.time_limit);
            let heuristic = demand.restarts(p, options, &clock, &mut stopped, &mut iterations)?;
            if demand.len() <= EXACT_MAX_POINTS {
                // At most B₁₀ splits: fast enough not to be watched, and it proves the plan.
                stopped = false;
                (demand.exact(p, heuristic)?.sites, true)
            } else {
                (heuristic.sites, false)
            }
        }
    };
    let service = Service::of(points, weights, &sites)?;
    Ok(CenterPlan { sites, fixed: Vec::new(), service, optimal, converged: !stopped, iterations })
}

/// [`p_center`] on every group of `points` (labels `labels`), in parallel, with the same `p`
/// for every group.
///
/// Fixed sites serve only their own group: `fixed_labels[k]` is the group label of
/// `fixed[k]` (one label per fixed site; both empty for none). A group's fixed sites are the
/// fixed sites with its label, in their input order; a fixed site whose label has no points
/// serves nobody. Every group's plan equals a separate [`p_center`] call on that group's
/// points and fixed sites; the [`RowPlaces`] say where every input row sits.
///
/// # Errors
/// [`crate::Error::InvalidParameter`] (`fixed_groups`) when `fixed_labels` does not have one
/// label per fixed site; [`crate::Error::NonFiniteCoordinate`] for a bad fixed site (naming
/// its row in `fixed`); the errors of [`crate::batch::run_grouped_placed`]; with [`OnGroupError::Raise`]
/// the first group's error of [`p_center`].
#[allow(clippy::too_many_arguments)]
pub fn p_centers(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    p: usize,
    fixed: &[Point],
    fixed_labels: &[i64],
    options: &CenterOptions,
    on_error: OnGroupError,
) -> Result<(Grouped<CenterPlan>, RowPlaces)> {
    // Each group's own restarts are quiet; progress counts the points of finished groups.
    let inner = CenterOptions { watch: options.watch.quiet(), ..options.clone() };
    run_grouped_beside(points, weights, labels, (fixed, fixed_labels), &options.watch, on_error, |at, w, own| {
        p_center(at, w, p, own, &inner)
    })
}

/// The distinct locations of positive weight, each with the largest weight found there.
struct Demand {
    points: Vec<Point>,
    weights: Vec<f64>,
    /// `0..len()`: every location is a candidate site of D-sampling.
    all: Vec<usize>,
    /// Where the sites may go.
    region: Option<Arc<FeasibleRegion>>,
}

/// Sites with the radius they achieve on the demand.
#[derive(Debug, Clone)]
struct Plan {
    sites: Vec<Point>,
    radius: f64,
}

impl Demand {
    fn of(points: &[Point], distinct: &[Location], region: Option<Arc<FeasibleRegion>>) -> Demand {
        Demand {
            points: distinct.iter().map(|l| points[l.first]).collect(),
            weights: distinct.iter().map(|l| l.heaviest).collect(),
            all: (0..distinct.len()).collect(),
            region,
        }
    }

    /// `a` when sites may go there, else the nearest point of the region.
    fn place(&self, a: Point) -> Point {
        self.region.as_ref().map_or(a, |r| r.project(a))
    }

    /// The radius of a cluster of location `i` alone: 0, or with a region its weighted
    /// distance to the region.
    fn alone(&self, i: usize) -> f64 {
        self.weights[i] * distance(self.points[i], self.place(self.points[i]))
    }

    fn len(&self) -> usize {
        self.points.len()
    }

    /// The locations `members` (demand indices) alone, as a demand of their own.
    fn subset(&self, members: &[usize]) -> Demand {
        Demand {
            points: members.iter().map(|&i| self.points[i]).collect(),
            weights: members.iter().map(|&i| self.weights[i]).collect(),
            all: (0..members.len()).collect(),
            region: self.region.clone(),
        }
    }

    /// Largest weighted distance to the nearest of `sites`.
    fn radius(&self, sites: &[Point]) -> Result<f64> {
        let allocation = allocate(&self.points, &SiteIndex::new(sites)?, Weights::Given(&self.weights));
        Ok(self.weights.iter().zip(&allocation.distance).map(|(w, d)| w * d).fold(0.0, f64::max))
    }

    /// The minimax point of the demand points `members`, its support named by demand index.
    fn minimax(&self, members: &[usize], buffer: &mut (Vec<Point>, Vec<f64>)) -> Result<MinimaxPoint> {
        buffer.0.clear();
        buffer.1.clear();
        for &i in members {
            buffer.0.push(self.points[i]);
            buffer.1.push(self.weights[i]);
        }
        let mut m = match &self.region {
            None => minimax_point(&buffer.0, Weights::Given(&buffer.1))?,
            Some(region) => minimax_point_in_region(&buffer.0, Weights::Given(&buffer.1), region)?.point,
        };
        for s in &mut m.support {
            *s = members[*s];
        }
        Ok(m)
    }

    /// Weighted farthest-first traversal (Gonzalez 1985, "Clustering to minimize the maximum
    /// intercluster distance", Theoretical Computer Science 38): from `first`, each next
    /// location is the one of largest weighted distance to those taken so far (the first
    /// such in demand order); `count` locations in all, by demand index.
    fn farthest_first(&self, first: usize, count: usize) -> Vec<usize> {
        let mut order = vec![first];
        let mut taken = vec![false; self.len()];
        taken[first] = true;
        let mut reach: Vec<f64> =
            (0..self.len()).map(|i| self.weights[i] * distance(self.points[i], self.points[first])).collect();
        while order.len() < count {
            let far = (0..self.len())
                .filter(|&i| !taken[i])
                .fold(None, |b: Option<usize>, i| match b {
                    Some(b) if reach[b] >= reach[i] => Some(b),
                    _ => Some(i),
                })
                .expect("count never exceeds the number of locations");
            taken[far] = true;
            order.push(far);
            for (r, (&a, &w)) in reach.iter_mut().zip(self.points.iter().zip(&self.weights)) {
                *r = r.min(w * distance(a, self.points[far]));
            }
        }
        order
    }

    /// The heaviest location (the first such in demand order).
    fn heaviest(&self) -> usize {
        (0..self.len()).fold(0, |b, i| if self.weights[i] > self.weights[b] { i } else { b })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::enclose::enclosing_circle;
    use crate::error::Error;
    use crate::geometry::random::SplitMix64;

    /// Exhaustive reference: every assignment of points to p labels, the largest enclosing
    /// circle radius of the parts (Welzl's circle per part), minimised.
    fn brute_force(points: &[Point], p: usize) -> f64 {
        let n = points.len();
        let mut best = f64::INFINITY;
        let mut labels = vec![0usize; n];
        loop {
            let mut worst: f64 = 0.0;
            for part in 0..p {
                let members: Vec<Point> = (0..n).filter(|&i| labels[i] == part).map(|i| points[i]).collect();
                if !members.is_empty() {
                    worst = worst.max(enclosing_circle(&members).unwrap().radius);
                }
            }
            best = best.min(worst);
            let mut k = 0;
            while k < n {
                labels[k] += 1;
                if labels[k] < p {
                    break;
                }
                labels[k] = 0;
                k += 1;
            }
            if k == n {
                return best;
            }
        }
    }

    fn cloud(n: usize, seed: u64) -> Vec<Point> {
        let mut rng = SplitMix64::new(seed);
        (0..n).map(|_| [rng.next_f64() * 10.0, rng.next_f64() * 6.0]).collect()
    }

    #[test]
    fn the_plan_does_not_depend_on_the_scale() {
        // The same cloud at unit scale, near 1e-300 (squared distances underflow there) and
        // near 1e150 (they overflow): the working frame scales by powers of two, so the
        // weighted radius scales with the points (it was 23 % worse near 1e-300).
        let unit = cloud(60, 11);
        let w: Vec<f64> = (0..60).map(|i| 1.0 + (i % 3) as f64).collect();
        let base = p_center(&unit, Weights::Given(&w), 3, &[], &CenterOptions::default()).unwrap();
        for scale in [1e-300, 2f64.powi(-1000), 1e150] {
            let scaled: Vec<Point> = unit.iter().map(|&[x, y]| [x * scale, y * scale]).collect();
            let fixed = [[unit[0][0] * scale, unit[0][1] * scale]];
            let plan = p_center(&scaled, Weights::Given(&w), 3, &[], &CenterOptions::default()).unwrap();
            let ratio = plan.service.weighted_radius / scale / base.service.weighted_radius;
            assert!((ratio - 1.0).abs() < 1e-9, "scale {scale:e}: ratio {ratio}");
            let beside = p_center(&scaled, Weights::Given(&w), 2, &fixed, &CenterOptions::default()).unwrap();
            let unit_beside = p_center(&unit, Weights::Given(&w), 2, &unit[..1], &CenterOptions::default()).unwrap();
            let ratio = beside.service.weighted_radius / scale / unit_beside.service.weighted_radius;
            assert!((ratio - 1.0).abs() < 1e-9, "scale {scale:e}, fixed: ratio {ratio}");
        }
    }

    #[test]
    fn one_site_is_the_minimax_point() {
        // p = 1 is the weighted 1-center by definition.
        let pts = cloud(30, 1);
        let w: Vec<f64> = (0..30).map(|i| 1.0 + (i % 4) as f64).collect();
        let plan = p_center(&pts, Weights::Given(&w), 1, &[], &CenterOptions::default()).unwrap();
        let single = minimax_point(&pts, Weights::Given(&w)).unwrap();
        assert_eq!(plan.sites, vec![single.location]);
        assert!((plan.service.weighted_radius - single.radius).abs() <= 1e-12 * single.radius);
    }

    #[test]
    fn tiny_instances_match_exhaustive_search_over_all_splits() {
        for seed in 0..6 {
            let pts = cloud(7, seed);
            for p in 2..=3 {
                let plan = p_center(&pts, Weights::Unit, p, &[], &CenterOptions::default()).unwrap();
                let reference = brute_force(&pts, p);
                let r = plan.service.weighted_radius;
                assert!(plan.optimal);
                assert!((r - reference).abs() <= 1e-9 * reference, "seed {seed} p {p}: {r} vs {reference}");
            }
        }
    }

    #[test]
    fn heuristic_is_never_worse_than_its_farthest_first_start() {
        // Gonzalez (1985): farthest-first is a 2-approximation; our descent only improves on it.
        let pts = cloud(400, 3);
        let plan = p_center(&pts, Weights::Unit, 6, &[], &CenterOptions::default()).unwrap();
        let demand = Demand::of(&pts, &check_site_count(&pts, Weights::Unit, 6).unwrap(), None);
        let start: Vec<Point> = demand.farthest_first(demand.heaviest(), 6).iter().map(|&i| demand.points[i]).collect();
        assert!(plan.service.weighted_radius <= demand.radius(&start).unwrap());
        assert!(!plan.optimal);
    }

    #[test]
    fn two_far_groups_get_one_site_each() {
        // Closed form: two unit squares' corner sets far apart; each square's circle has
        // radius √2 / 2.
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [1.0, 1.0], [50.0, 0.0], [51.0, 0.0], [50.0, 1.0], [51.0, 1.0]];
        let plan = p_center(&pts, Weights::Unit, 2, &[], &CenterOptions::default()).unwrap();
        assert!((plan.service.weighted_radius - 0.5f64.sqrt()).abs() < 1e-12);
        assert_eq!(plan.service.count, vec![4, 4]);
    }

    #[test]
    fn weighted_radius_and_plain_radius_differ_with_weights() {
        // Closed form: sites at the two points; the zero-weight point at distance 3 from its
        // site sets the plain radius, no weighted one.
        let pts = [[0.0, 0.0], [10.0, 0.0], [3.0, 0.0]];
        let w = [2.0, 1.0, 0.0];
        let plan = p_center(&pts, Weights::Given(&w), 2, &[], &CenterOptions::default()).unwrap();
        assert_eq!((plan.service.weighted_radius, plan.service.radius), (0.0, 3.0));
        assert_eq!(plan.service.load, vec![2.0, 1.0]);
    }

    #[test]
    fn a_time_limit_returns_a_covering_plan_not_converged() {
        let pts = cloud(3_000, 4);
        let options = CenterOptions { time_limit: Some(1e-9), ..CenterOptions::default() };
        let plan = p_center(&pts, Weights::Unit, 5, &[], &options).unwrap();
        assert!(!plan.converged && !plan.optimal);
        // Every point is within the reported radius of its nearest site.
        for (i, &a) in pts.iter().enumerate() {
            let nearest = plan.sites.iter().map(|&s| distance(a, s)).fold(f64::INFINITY, f64::min);
            assert_eq!(plan.service.distance[i], nearest);
            assert!(nearest <= plan.service.radius);
        }
        assert!(p_center(&pts, Weights::Unit, 5, &[], &CenterOptions::default()).unwrap().converged);
    }

    #[test]
    fn bad_p_is_refused() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [1.0, 0.0]];
        assert!(matches!(
            p_center(&pts, Weights::Unit, 0, &[], &CenterOptions::default()),
            Err(Error::InvalidParameter { .. })
        ));
        assert!(matches!(
            p_center(&pts, Weights::Unit, 3, &[], &CenterOptions::default()),
            Err(Error::TooFewPoints { .. })
        ));
        let plan = p_center(&pts, Weights::Unit, 2, &[], &CenterOptions::default()).unwrap();
        assert_eq!(plan.service.weighted_radius, 0.0);
    }
}
