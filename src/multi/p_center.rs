//! Continuous p-center: `p` sites minimising the largest weighted distance
//! `maxᵢ wᵢ · minⱼ ‖sⱼ − aᵢ‖` from a demand point to its nearest site.
//!
//! - **Heuristic** — the alternating method of Drezner (1984), "The p-centre problem —
//!   heuristic and optimal algorithms", J. Operational Research Society 35(8): allocate
//!   every point to its nearest site, move every site to the weighted minimax point of its
//!   cluster ([`minimax_point`]), repeat while the radius falls. A local optimum is then
//!   improved by handing a point that fixes the largest circle (a support point of the
//!   critical cluster) to a neighbouring cluster and re-solving both, again while the
//!   radius falls. Restarts alternate weighted farthest-first starts (Gonzalez 1985,
//!   "Clustering to minimize the maximum intercluster distance", from a random first site)
//!   with D-sampling starts; the best plan wins.
//! - **Exact for tiny instances** (at most [`EXACT_MAX_POINTS`] distinct points of positive
//!   weight): every optimal plan induces a split of the points into at most `p` clusters,
//!   each served by its own minimax point, so the optimum is the least, over all splits, of
//!   the largest cluster radius. The splits are enumerated by branch and bound (points
//!   placed in farthest-first order, each into an existing cluster or a new one, pruning
//!   as soon as a cluster's radius reaches the best plan so far, which the heuristic
//!   supplies); a cluster's radius never shrinks as points join it, so the pruning is safe.

use super::check_site_count;
use crate::enclose::{minimax_point, MinimaxPoint};
use crate::error::Result;
use crate::geometry::random::SplitMix64;
use crate::geometry::{distance, validate_points, validate_weights, Point, Weights};
use crate::partition::{allocate, SiteIndex};

/// Instances with at most this many distinct points of positive weight are solved exactly.
pub const EXACT_MAX_POINTS: usize = 10;

/// Options of [`p_center`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct CenterOptions {
    /// Seed of the restarts: the same seed gives the same answer.
    pub seed: u64,
    /// Number of restarts of the heuristic.
    pub restarts: usize,
}

impl Default for CenterOptions {
    fn default() -> Self {
        CenterOptions { seed: 0, restarts: 16 }
    }
}

/// A p-center plan.
#[derive(Debug, Clone, PartialEq)]
pub struct CenterPlan {
    /// The `p` sites.
    pub sites: Vec<Point>,
    /// `assignment[i]`: the site nearest to point `i`.
    pub assignment: Vec<usize>,
    /// `maxᵢ wᵢ · distance from point i to its nearest site`.
    pub radius: f64,
    /// True when the plan is proven optimal (tiny instances, solved exactly).
    pub optimal: bool,
    /// Alternation rounds (allocation + minimax-point steps) performed.
    pub iterations: usize,
}

/// Cap on alternation rounds per descent.
const MAX_ROUNDS: usize = 200;
/// A plan replaces the incumbent only when its radius is smaller by this relative margin.
const IMPROVEMENT: f64 = 1e-12;

/// `p` sites minimising the largest weighted distance from a point to its nearest site.
///
/// `p = 1` is the weighted minimax point itself ([`minimax_point`]). Points of weight zero
/// are served (they get an assignment) but do not influence the sites.
///
/// # Errors
/// - [`crate::Error::TooFewPoints`] when `points` is empty, or when fewer than `p` distinct
///   points carry positive weight;
/// - [`crate::Error::InvalidParameter`] when `p = 0`;
/// - [`crate::Error::NonFiniteCoordinate`] for a NaN or infinite coordinate;
/// - [`crate::Error::LengthMismatch`], [`crate::Error::InvalidWeight`],
///   [`crate::Error::AllWeightsZero`] for bad weights.
///
/// # Runtime
/// Each alternation round costs O(n log p) for the allocation and O(n) (expected) for the
/// minimax points; a descent takes a few to a few dozen rounds, times `restarts`. The exact
/// search on at most [`EXACT_MAX_POINTS`] points visits at most the Bell number
/// B₁₀ = 115 975 splits, usually far fewer.
pub fn p_center(points: &[Point], weights: Weights<'_>, p: usize, options: &CenterOptions) -> Result<CenterPlan> {
    validate_points("points", points, 1)?;
    validate_weights("weights", weights, points.len())?;
    check_site_count(points, weights, p)?;

    let mut iterations = 0;
    let (sites, optimal) = if p == 1 {
        (vec![minimax_point(points, weights)?.location], true)
    } else {
        let demand = Demand::of(points, weights);
        if demand.points.len() == p {
            (demand.points.clone(), true)
        } else {
            let heuristic = demand.restarts(p, options, &mut iterations)?;
            if demand.points.len() <= EXACT_MAX_POINTS {
                (demand.exact(p, heuristic)?.sites, true)
            } else {
                (heuristic.sites, false)
            }
        }
    };

    let allocation = allocate(points, &SiteIndex::new(&sites)?, weights);
    let radius = (0..points.len()).map(|i| weights.get(i) * allocation.distance[i]).fold(0.0, f64::max);
    Ok(CenterPlan { sites, assignment: allocation.index, radius, optimal, iterations })
}

/// The distinct locations of positive weight, each with the largest weight found there (the
/// only one that matters for a largest weighted distance).
struct Demand {
    points: Vec<Point>,
    weights: Vec<f64>,
}

/// Sites with the radius they achieve on the demand.
#[derive(Debug, Clone)]
struct Plan {
    sites: Vec<Point>,
    radius: f64,
}

impl Demand {
    fn of(points: &[Point], weights: Weights<'_>) -> Demand {
        let key = |p: Point| [(p[0] + 0.0).to_bits(), (p[1] + 0.0).to_bits()];
        let mut order: Vec<usize> = (0..points.len()).filter(|&i| weights.get(i) > 0.0).collect();
        order.sort_by_key(|&i| (key(points[i]), i));
        let mut demand = Demand { points: Vec::new(), weights: Vec::new() };
        let mut last = None;
        for &i in &order {
            let k = key(points[i]);
            if last == Some(k) {
                let w = demand.weights.last_mut().expect("a previous location");
                *w = w.max(weights.get(i));
            } else {
                demand.points.push(points[i]);
                demand.weights.push(weights.get(i));
                last = Some(k);
            }
        }
        demand
    }

    fn len(&self) -> usize {
        self.points.len()
    }

    /// Largest weighted distance to the nearest of `sites`.
    fn radius(&self, sites: &[Point]) -> Result<f64> {
        let allocation = allocate(&self.points, &SiteIndex::new(sites)?, Weights::Given(&self.weights));
        Ok(self.weights.iter().zip(&allocation.distance).map(|(w, d)| w * d).fold(0.0, f64::max))
    }

    /// The minimax point of the demand points `members`.
    fn minimax(&self, members: &[usize], buffer: &mut (Vec<Point>, Vec<f64>)) -> Result<MinimaxPoint> {
        buffer.0.clear();
        buffer.1.clear();
        for &i in members {
            buffer.0.push(self.points[i]);
            buffer.1.push(self.weights[i]);
        }
        let mut m = minimax_point(&buffer.0, Weights::Given(&buffer.1))?;
        for s in &mut m.support {
            *s = members[*s];
        }
        Ok(m)
    }

    /// The best of `options.restarts` descents from seeded starts.
    fn restarts(&self, p: usize, options: &CenterOptions, iterations: &mut usize) -> Result<Plan> {
        let mut rng = SplitMix64::new(options.seed);
        let mut best: Option<Plan> = None;
        for restart in 0..options.restarts.max(1) {
            let start = if restart % 2 == 0 { self.farthest_first(p, restart, &mut rng) } else { self.d_sampling(p, &mut rng) };
            let plan = self.descend(start, iterations)?;
            if best.as_ref().is_none_or(|b| plan.radius < b.radius * (1.0 - IMPROVEMENT)) {
                best = Some(plan);
            }
        }
        Ok(best.expect("at least one restart"))
    }

    /// Weighted farthest-first: the first site at the heaviest point (first restart) or a
    /// random one, then each next site at the point of largest weighted distance.
    fn farthest_first(&self, p: usize, restart: usize, rng: &mut SplitMix64) -> Vec<Point> {
        let first = if restart == 0 {
            (0..self.len()).fold(0, |b, i| if self.weights[i] > self.weights[b] { i } else { b })
        } else {
            rng.below(self.len())
        };
        let mut sites = vec![self.points[first]];
        let mut reach: Vec<f64> = (0..self.len()).map(|i| self.weights[i] * distance(self.points[i], sites[0])).collect();
        while sites.len() < p {
            let far = (0..self.len()).fold(0, |b, i| if reach[i] > reach[b] { i } else { b });
            let s = self.points[far];
            sites.push(s);
            for (r, (&a, &w)) in reach.iter_mut().zip(self.points.iter().zip(&self.weights)) {
                *r = r.min(w * distance(a, s));
            }
        }
        sites
    }

    /// D-sampling: each next site at a point drawn with probability ∝ its weighted distance
    /// to the sites so far (the first uniformly).
    fn d_sampling(&self, p: usize, rng: &mut SplitMix64) -> Vec<Point> {
        let mut sites = vec![self.points[rng.below(self.len())]];
        let mut reach: Vec<f64> = (0..self.len()).map(|i| self.weights[i] * distance(self.points[i], sites[0])).collect();
        while sites.len() < p {
            let total: f64 = reach.iter().sum();
            let mut target = rng.next_f64() * total;
            let mut pick = (0..self.len()).rev().find(|&i| reach[i] > 0.0).expect("p < distinct points");
            for (i, &r) in reach.iter().enumerate() {
                if r > 0.0 && target < r {
                    pick = i;
                    break;
                }
                target -= r;
            }
            let s = self.points[pick];
            sites.push(s);
            for (r, (&a, &w)) in reach.iter_mut().zip(self.points.iter().zip(&self.weights)) {
                *r = r.min(w * distance(a, s));
            }
        }
        sites
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
    fn descend(&self, mut sites: Vec<Point>, iterations: &mut usize) -> Result<Plan> {
        let mut buffer = (Vec::new(), Vec::new());
        let mut radius = self.radius(&sites)?;
        loop {
            // Alternation: minimax point of every cluster, while the radius falls.
            for _ in 0..MAX_ROUNDS {
                *iterations += 1;
                let clusters = self.clusters(&sites)?;
                let mut moved = sites.clone();
                for (j, members) in clusters.iter().enumerate() {
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

    /// The optimum over all splits into at most `p` clusters, by branch and bound from the
    /// heuristic's plan.
    fn exact(&self, p: usize, heuristic: Plan) -> Result<Plan> {
        let order = self.farthest_first_order();
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

    /// All demand points in farthest-first order (heaviest first), so that far-apart points
    /// are placed early and clusters grow large radii (and get pruned) soon.
    fn farthest_first_order(&self) -> Vec<usize> {
        let n = self.len();
        let first = (0..n).fold(0, |b, i| if self.weights[i] > self.weights[b] { i } else { b });
        let mut order = vec![first];
        let mut placed = vec![false; n];
        placed[first] = true;
        let mut reach: Vec<f64> = (0..n).map(|i| self.weights[i] * distance(self.points[i], self.points[first])).collect();
        while order.len() < n {
            let far = (0..n).filter(|&i| !placed[i]).fold(None, |b: Option<usize>, i| match b {
                Some(b) if reach[b] >= reach[i] => Some(b),
                _ => Some(i),
            });
            let far = far.expect("an unplaced point");
            placed[far] = true;
            order.push(far);
            for (r, (&a, &w)) in reach.iter_mut().zip(self.points.iter().zip(&self.weights)) {
                *r = r.min(w * distance(a, self.points[far]));
            }
        }
        order
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
    /// Place the `k`-th point (in `order`) into each existing cluster, or a new one.
    fn place(&mut self, k: usize) -> Result<()> {
        if k == self.order.len() {
            let radius = self.radii.iter().copied().fold(0.0, f64::max);
            if radius < self.best.radius {
                let mut sites = Vec::with_capacity(self.p);
                for members in &self.clusters {
                    sites.push(self.demand.minimax(members, &mut self.buffer)?.location);
                }
                // Unused sites (fewer clusters than p) sit on demand points; they only help.
                let extra: Vec<Point> =
                    self.demand.points.iter().copied().filter(|a| !sites.contains(a)).take(self.p - sites.len()).collect();
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
            self.clusters.push(vec![i]);
            self.radii.push(0.0);
            self.place(k + 1)?;
            self.clusters.pop();
            self.radii.pop();
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::enclose::enclosing_circle;
    use crate::error::Error;

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
    fn one_site_is_the_minimax_point() {
        // p = 1 is the weighted 1-center by definition.
        let pts = cloud(30, 1);
        let w: Vec<f64> = (0..30).map(|i| 1.0 + (i % 4) as f64).collect();
        let plan = p_center(&pts, Weights::Given(&w), 1, &CenterOptions::default()).unwrap();
        let single = minimax_point(&pts, Weights::Given(&w)).unwrap();
        assert_eq!(plan.sites, vec![single.location]);
        assert!((plan.radius - single.radius).abs() <= 1e-12 * single.radius);
    }

    #[test]
    fn tiny_instances_match_exhaustive_search_over_all_splits() {
        for seed in 0..6 {
            let pts = cloud(7, seed);
            for p in 2..=3 {
                let plan = p_center(&pts, Weights::Unit, p, &CenterOptions::default()).unwrap();
                let reference = brute_force(&pts, p);
                assert!(plan.optimal);
                assert!((plan.radius - reference).abs() <= 1e-9 * reference, "seed {seed} p {p}: {} vs {reference}", plan.radius);
            }
        }
    }

    #[test]
    fn heuristic_is_never_worse_than_its_farthest_first_start() {
        // Gonzalez (1985): farthest-first is a 2-approximation; our descent only improves on it.
        let pts = cloud(400, 3);
        let plan = p_center(&pts, Weights::Unit, 6, &CenterOptions::default()).unwrap();
        let demand = Demand::of(&pts, Weights::Unit);
        let start = demand.farthest_first(6, 0, &mut SplitMix64::new(0));
        assert!(plan.radius <= demand.radius(&start).unwrap());
        assert!(!plan.optimal);
    }

    #[test]
    fn two_far_groups_get_one_site_each() {
        // Closed form: two unit squares' corner sets far apart; each square's circle has
        // radius √2 / 2.
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [1.0, 1.0], [50.0, 0.0], [51.0, 0.0], [50.0, 1.0], [51.0, 1.0]];
        let plan = p_center(&pts, Weights::Unit, 2, &CenterOptions::default()).unwrap();
        assert!((plan.radius - 0.5f64.sqrt()).abs() < 1e-12);
    }

    #[test]
    fn bad_p_is_refused() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [1.0, 0.0]];
        assert!(matches!(p_center(&pts, Weights::Unit, 0, &CenterOptions::default()), Err(Error::InvalidParameter { .. })));
        assert!(matches!(p_center(&pts, Weights::Unit, 3, &CenterOptions::default()), Err(Error::TooFewPoints { .. })));
        let plan = p_center(&pts, Weights::Unit, 2, &CenterOptions::default()).unwrap();
        assert_eq!(plan.radius, 0.0);
    }
}
