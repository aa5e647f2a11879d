//! The conditional p-center: `p` new sites beside fixed existing ones `F` that are not
//! moved, minimising `maxᵢ wᵢ · min(d(aᵢ, F), d(aᵢ, S))` over the new sites `S`.
//!
//! Method of Drezner (1989), "Conditional p-center problems", Transportation Science 23(1)
//! (recalled from memory). Let `cᵢ = wᵢ · d(aᵢ, F)`, what the fixed sites already give point
//! `i`, and for a threshold `t` let `P_t = {i : cᵢ > t}`. New sites that serve `P_t` within
//! `g` serve everyone within `max(t, g)`, and an optimal plan serves its own `P_t*` (with
//! `t*` the largest `cᵢ` not above its value) within that value, so the optimum is the
//! least `max(t, g(P_t))` over `t ∈ {0} ∪ {cᵢ}`, `g` being the unconditional p-center value.
//! As `t` grows `P_t` shrinks, so `g(P_t)` never grows while `t` does: a binary search over
//! the sorted thresholds finds the first `t_k` with `g(P_{t_k}) ≤ t_k`, and the optimum is
//! `min(t_k, g(P_{t_{k−1}}))`.
//!
//! Each `g` is the unconditional kernel ([`super::unconditional`]): exact on tiny sets,
//! Drezner's heuristic otherwise. The plan is proven optimal only when every `g` the search
//! used was exact and the search ran to its end. Every plan the search meets is measured on
//! the whole demand and the best one kept, so a heuristic `g` that breaks the monotonicity
//! costs quality, never validity. A plan of fewer than `p` sites (a `P_t` of at most `p`
//! locations) gets its spare sites on the worst-served locations, one after another.

use std::collections::HashSet;
use std::time::Instant;

use super::{unconditional, CenterOptions, CenterPlan};
use crate::cancel::{Clock, Steps};
use crate::error::Result;
use crate::geometry::{distance, location_key, Point, Weights};
use crate::multi::{Location, Service};
use crate::partition::{allocate, SiteIndex};

/// [`super::p_center`] beside the non-empty `fixed` sites, on validated input whose distinct
/// locations of positive weight are `distinct` (at least `p`).
pub(super) fn p_center_beside(
    points: &[Point],
    weights: Weights<'_>,
    p: usize,
    distinct: &[Location],
    fixed: &[Point],
    options: &CenterOptions,
) -> Result<CenterPlan> {
    let clock = options.watch.clock(options.time_limit);
    let search = Search::new(points, distinct, fixed, p, options, &clock)?;
    let (best, stopped, exact, iterations) = search.run()?;
    let all_sites: Vec<Point> = best.sites.iter().chain(fixed).copied().collect();
    let service = Service::of(points, weights, &all_sites)?;
    Ok(CenterPlan {
        sites: best.sites,
        fixed: fixed.to_vec(),
        service,
        optimal: exact && !stopped,
        converged: !stopped,
        iterations,
    })
}

/// The threshold search on the distinct locations of positive weight.
struct Search<'a> {
    /// The locations and their heaviest weights.
    at: Vec<Point>,
    weights: Vec<f64>,
    /// `served[j]`: weighted distance of location `j` to its nearest fixed site.
    served: Vec<f64>,
    /// True for a location holding a fixed site.
    on_fixed: Vec<bool>,
    p: usize,
    options: &'a CenterOptions,
    clock: &'a Clock,
}

/// `p` new sites and the largest weighted distance they leave, beside the fixed sites.
#[derive(Debug, Clone)]
struct Candidate {
    sites: Vec<Point>,
    value: f64,
}

impl<'a> Search<'a> {
    fn new(
        points: &[Point],
        distinct: &[Location],
        fixed: &[Point],
        p: usize,
        options: &'a CenterOptions,
        clock: &'a Clock,
    ) -> Result<Search<'a>> {
        let at: Vec<Point> = distinct.iter().map(|l| points[l.first]).collect();
        let weights: Vec<f64> = distinct.iter().map(|l| l.heaviest).collect();
        let to_fixed = allocate(&at, &SiteIndex::new(fixed)?, Weights::Given(&weights));
        let served = weights.iter().zip(&to_fixed.distance).map(|(w, d)| w * d).collect();
        let on_fixed = to_fixed.distance.iter().map(|&d| d == 0.0).collect();
        Ok(Search { at, weights, served, on_fixed, p, options, clock })
    }

    /// The best plan met, whether the search was stopped, whether every `g` it used was
    /// exact, and the inner alternation rounds.
    fn run(&self) -> Result<(Candidate, bool, bool, usize)> {
        // Thresholds 0 and every cᵢ, ascending; the last one leaves P_t empty (g = 0 ≤ t).
        let mut thresholds: Vec<f64> = self.served.clone();
        thresholds.push(0.0);
        thresholds.sort_unstable_by(f64::total_cmp);
        thresholds.dedup();
        let mut steps = Steps::new(&self.clock.watch, usize::BITS as u64 - thresholds.len().leading_zeros() as u64);
        let mut best = self.complete(Vec::new())?;
        let (mut stopped, mut exact, mut iterations) = (false, true, 0);
        // Undecided thresholds: below `low` g > t was seen (or none); from `high` on g ≤ t.
        let (mut low, mut high) = (0, thresholds.len() - 1);
        while low < high {
            if self.clock.stop() {
                stopped = true;
                break;
            }
            let mid = low + (high - low) / 2;
            let t = thresholds[mid];
            let Some(inner) = self.unconditional_beyond(t)? else {
                // Never below the largest threshold; no locations left: g = 0 ≤ t.
                high = mid;
                continue;
            };
            steps.step();
            iterations += inner.iterations;
            exact &= inner.optimal;
            let g = inner.service.weighted_radius;
            let candidate = self.complete(inner.sites)?;
            if candidate.value < best.value {
                best = candidate;
            }
            if !inner.converged {
                // Cut by the clock: its g proves nothing.
                stopped = true;
                break;
            }
            if g <= t {
                high = mid;
            } else {
                low = mid + 1;
            }
        }
        steps.finish();
        Ok((best, stopped, exact, iterations))
    }

    /// The unconditional p-center of the locations that the fixed sites serve worse than `t`
    /// (with `min(p, their number)` sites), on what is left of the time budget; `None` when
    /// there are none.
    fn unconditional_beyond(&self, t: f64) -> Result<Option<CenterPlan>> {
        let members: Vec<usize> = (0..self.at.len()).filter(|&j| self.served[j] > t).collect();
        if members.is_empty() {
            return Ok(None);
        }
        let at: Vec<Point> = members.iter().map(|&j| self.at[j]).collect();
        let weights: Vec<f64> = members.iter().map(|&j| self.weights[j]).collect();
        // Already distinct, each with its heaviest weight.
        let distinct: Vec<Location> =
            weights.iter().enumerate().map(|(first, &heaviest)| Location { first, heaviest }).collect();
        let left = self.clock.deadline().map(|d| d.saturating_duration_since(Instant::now()).as_secs_f64());
        let inner = CenterOptions { watch: self.clock.watch.quiet(), time_limit: left, ..self.options.clone() };
        unconditional(&at, Weights::Given(&weights), self.p.min(at.len()), &distinct, &inner).map(Some)
    }

    /// `sites` (at most `p`) made `p` by spare sites, one at a time on the worst-served
    /// location (largest weighted distance to every site so far, fixed ones included; a
    /// location off the fixed sites first, then the first in demand order), as near as the
    /// region allows; measured on every location.
    fn complete(&self, mut sites: Vec<Point>) -> Result<Candidate> {
        let mut worst = self.served.clone();
        if !sites.is_empty() {
            let to_new = allocate(&self.at, &SiteIndex::new(&sites)?, Weights::Given(&self.weights));
            for (r, (w, d)) in worst.iter_mut().zip(self.weights.iter().zip(&to_new.distance)) {
                *r = r.min(w * d);
            }
        }
        let place = |a: Point| self.options.region.as_ref().map_or(a, |r| r.project(a));
        let mut taken: HashSet<_> = sites.iter().map(|&s| location_key(s)).collect();
        let mut picked = vec![false; self.at.len()];
        while sites.len() < self.p {
            let next = (0..self.at.len()).filter(|&j| !picked[j]).fold(None, |b: Option<usize>, j| match b {
                Some(b) if (worst[b], !self.on_fixed[b]) >= (worst[j], !self.on_fixed[j]) => Some(b),
                _ => Some(j),
            });
            let Some(j) = next else {
                // Every location tried and their sites repeat ones taken (a region folding
                // several onto one point): the plan cannot gain, a repeat keeps p sites.
                sites.push(sites[0]);
                continue;
            };
            picked[j] = true;
            let site = place(self.at[j]);
            if !taken.insert(location_key(site)) {
                continue;
            }
            sites.push(site);
            for (r, (&a, &w)) in worst.iter_mut().zip(self.at.iter().zip(&self.weights)) {
                *r = r.min(w * distance(a, site));
            }
        }
        Ok(Candidate { value: worst.iter().copied().fold(0.0, f64::max), sites })
    }
}

#[cfg(test)]
mod tests {
    use super::super::p_center;
    use super::*;
    use crate::error::Error;
    use crate::geometry::random::SplitMix64;
    use crate::geometry::FeasibleRegion;
    use proptest::prelude::*;
    use std::sync::Arc;

    /// Smallest enclosing circle radius by the textbook characterisation (independent of the
    /// kernels): the circle is fixed by two points (a diameter) or three (the circumcircle),
    /// so the least radius among such circles holding every point is the answer.
    fn circle_by_pairs_and_triples(pts: &[Point]) -> f64 {
        let holds = |c: Point, r: f64| pts.iter().all(|&a| distance(a, c) <= r * (1.0 + 1e-9) + 1e-12);
        let mut best = if pts.len() == 1 { 0.0 } else { f64::INFINITY };
        for i in 0..pts.len() {
            for j in i + 1..pts.len() {
                let c = [(pts[i][0] + pts[j][0]) / 2.0, (pts[i][1] + pts[j][1]) / 2.0];
                let r = distance(pts[i], c);
                if r < best && holds(c, r) {
                    best = r;
                }
                for k in j + 1..pts.len() {
                    let (a, b, e) = (pts[i], pts[j], pts[k]);
                    let d = 2.0 * (a[0] * (b[1] - e[1]) + b[0] * (e[1] - a[1]) + e[0] * (a[1] - b[1]));
                    if d.abs() < 1e-12 {
                        continue;
                    }
                    let sq = |p: Point| p[0] * p[0] + p[1] * p[1];
                    let c = [
                        (sq(a) * (b[1] - e[1]) + sq(b) * (e[1] - a[1]) + sq(e) * (a[1] - b[1])) / d,
                        (sq(a) * (e[0] - b[0]) + sq(b) * (a[0] - e[0]) + sq(e) * (b[0] - a[0])) / d,
                    ];
                    let r = distance(a, c);
                    if r < best && holds(c, r) {
                        best = r;
                    }
                }
            }
        }
        best
    }

    /// Exhaustive reference of the conditional p-center (unit weights): every assignment of
    /// the points to one of `p` new sites or to the fixed sites; a new cluster costs its
    /// smallest enclosing circle, a point left to the fixed sites its distance to the
    /// nearest of them; the least largest cost.
    fn brute_force(points: &[Point], fixed: &[Point], p: usize) -> f64 {
        let n = points.len();
        let to_fixed: Vec<f64> =
            points.iter().map(|&a| fixed.iter().map(|&f| distance(a, f)).fold(f64::INFINITY, f64::min)).collect();
        let mut best = f64::INFINITY;
        let mut labels = vec![0usize; n];
        loop {
            let mut worst: f64 = (0..n).filter(|&i| labels[i] == p).map(|i| to_fixed[i]).fold(0.0, f64::max);
            for part in 0..p {
                let members: Vec<Point> = (0..n).filter(|&i| labels[i] == part).map(|i| points[i]).collect();
                if !members.is_empty() {
                    worst = worst.max(circle_by_pairs_and_triples(&members));
                }
            }
            best = best.min(worst);
            let mut k = 0;
            while k < n {
                labels[k] += 1;
                if labels[k] <= p {
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

    fn plain() -> CenterOptions {
        CenterOptions::default()
    }

    /// The weighted distance of every point to its nearest site, new or fixed, computed
    /// directly: the objective, as the plan must report it.
    fn objective(points: &[Point], w: &[f64], plan: &CenterPlan) -> f64 {
        points
            .iter()
            .zip(w)
            .map(|(&a, &wi)| {
                wi * plan.sites.iter().chain(&plan.fixed).map(|&s| distance(a, s)).fold(f64::INFINITY, f64::min)
            })
            .fold(0.0, f64::max)
    }

    #[test]
    fn tiny_instances_match_exhaustive_search_over_assignments() {
        for seed in 0..8 {
            let pts = cloud(6, seed);
            let fixed = cloud(1 + (seed as usize % 2), seed + 100);
            for p in 1..=2 {
                let plan = p_center(&pts, Weights::Unit, p, &fixed, &plain()).unwrap();
                let reference = brute_force(&pts, &fixed, p);
                let r = plan.service.weighted_radius;
                assert!(plan.optimal && plan.converged, "seed {seed} p {p}");
                assert!((r - reference).abs() <= 1e-9 * reference.max(1.0), "seed {seed} p {p}: {r} vs {reference}");
                assert_eq!(plan.fixed, fixed);
                assert_eq!(plan.sites.len(), p);
            }
        }
    }

    #[test]
    fn a_fixed_site_at_one_cluster_sends_the_new_sites_to_the_others() {
        // Closed form: three unit squares' corner sets far apart, an existing site at the
        // centre of the first; the two new sites go to the centres of the other two, every
        // point lies √2/2 from its site.
        let square = |x: f64| [[x, 0.0], [x + 1.0, 0.0], [x, 1.0], [x + 1.0, 1.0]];
        let pts: Vec<Point> = [0.0, 40.0, 80.0].iter().flat_map(|&x| square(x)).collect();
        let fixed = [[0.5, 0.5]];
        let plan = p_center(&pts, Weights::Unit, 2, &fixed, &plain()).unwrap();
        assert!((plan.service.weighted_radius - 0.5f64.sqrt()).abs() < 1e-12);
        let mut sites = plan.sites.clone();
        sites.sort_by(|a, b| a[0].total_cmp(&b[0]));
        for (s, x) in sites.iter().zip([40.5, 80.5]) {
            assert!(distance(*s, [x, 0.5]) < 1e-9, "{s:?}");
        }
        assert_eq!(plan.service.count, vec![4, 4, 4]);
        assert_eq!(plan.service.assignment[..4], [2, 2, 2, 2]);
    }

    #[test]
    fn points_all_on_fixed_sites_need_no_new_site_but_get_one_each() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [2.0, 0.0], [2.0, 0.0]];
        let fixed = pts;
        let plan = p_center(&pts, Weights::Unit, 2, &fixed, &plain()).unwrap();
        assert_eq!(plan.service.weighted_radius, 0.0);
        assert_eq!(plan.sites.len(), 2);
        assert!(plan.sites.iter().all(|s| s[0].is_finite() && s[1].is_finite()));
        assert!(plan.optimal && plan.converged);
    }

    #[test]
    fn spare_sites_go_to_the_worst_served_points() {
        // Two points far from the fixed site, p = 3: a site on each, the third on the worst
        // served of the rest (the point at 5, 5 away from the fixed site at 0).
        let pts = [[0.0, 0.0], [1.0, 0.0], [5.0, 0.0], [100.0, 0.0], [200.0, 0.0]];
        let plan = p_center(&pts, Weights::Unit, 3, &[[0.0, 0.0]], &plain()).unwrap();
        let mut sites = plan.sites.clone();
        sites.sort_by(|a, b| a[0].total_cmp(&b[0]));
        assert_eq!(sites, vec![[5.0, 0.0], [100.0, 0.0], [200.0, 0.0]]);
        assert_eq!(plan.service.weighted_radius, 1.0);
    }

    #[test]
    fn hostile_fixed_sites() {
        let pts = cloud(8, 3);
        let nan = [[f64::NAN, 0.0]];
        assert!(matches!(
            p_center(&pts, Weights::Unit, 2, &nan, &plain()),
            Err(Error::NonFiniteCoordinate { argument: "fixed", .. })
        ));
        // Duplicate fixed sites serve as one.
        let once = p_center(&pts, Weights::Unit, 2, &[[1.0, 1.0]], &plain()).unwrap();
        let twice = p_center(&pts, Weights::Unit, 2, &[[1.0, 1.0], [1.0, 1.0]], &plain()).unwrap();
        assert_eq!(once.sites, twice.sites);
        assert_eq!(once.service.weighted_radius, twice.service.weighted_radius);
        // No fixed sites: the plain p-center.
        let none = p_center(&pts, Weights::Unit, 2, &[], &plain()).unwrap();
        assert!(none.fixed.is_empty() && none.service.load.len() == 2);
    }

    #[test]
    fn a_time_limit_cuts_the_search_with_a_complete_plan() {
        let pts = cloud(3_000, 4);
        let fixed = [[0.0, 0.0], [10.0, 6.0]];
        let options = CenterOptions { time_limit: Some(1e-9), ..plain() };
        let plan = p_center(&pts, Weights::Unit, 4, &fixed, &options).unwrap();
        assert!(!plan.converged && !plan.optimal);
        assert_eq!(plan.sites.len(), 4);
        assert_eq!(plan.service.weighted_radius, objective(&pts, &[1.0; 3_000], &plan));
        let full = p_center(&pts, Weights::Unit, 4, &fixed, &plain()).unwrap();
        assert!(full.converged && full.service.weighted_radius <= plan.service.weighted_radius);
    }

    #[test]
    fn a_cancelled_run_still_returns_p_sites_unconverged() {
        let pts = cloud(2_000, 6);
        let options = plain();
        options.watch.cancel();
        let plan = p_center(&pts, Weights::Unit, 3, &[[5.0, 3.0]], &options).unwrap();
        assert!(!plan.converged && !plan.optimal);
        assert_eq!(plan.sites.len(), 3);
        // Counted progress closes at its total whatever the path.
        let (done, total) = options.watch.progress();
        assert!(total > 0 && done == total);
    }

    #[test]
    fn new_sites_stay_in_the_region() {
        let pts = cloud(40, 9);
        let region = FeasibleRegion::new(&[[2.0, 1.0], [8.0, 1.0], [8.0, 2.0], [2.0, 2.0]], &[0, 4]).unwrap();
        let options = CenterOptions { region: Some(Arc::new(region.clone())), ..plain() };
        let plan = p_center(&pts, Weights::Unit, 3, &[[0.0, 6.0]], &options).unwrap();
        assert!(plan.sites.iter().all(|&s| region.contains(s)));
        assert_eq!(plan.fixed, vec![[0.0, 6.0]]);
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]

        /// Tiny (exact) instances: the fixed sites are kept; the value is the objective of
        /// the reported sites, at most the plain p-center's and at most the fixed sites' own
        /// worst service; with the fixed sites far beyond every point (serving nobody better
        /// than any new site could) it is the plain p-center's value.
        #[test]
        fn conditional_is_bounded_by_its_two_relaxations(
            pts in prop::collection::vec((-1e2f64..1e2, -1e2f64..1e2).prop_map(|(x, y)| [x, y]), 3..9),
            fixed in prop::collection::vec((-1e2f64..1e2, -1e2f64..1e2).prop_map(|(x, y)| [x, y]), 1..3),
            w in prop::collection::vec(0.5f64..3.0, 9),
            p in 1usize..3,
        ) {
            let w = &w[..pts.len()];
            let plan = p_center(&pts, Weights::Given(w), p, &fixed, &plain()).unwrap();
            prop_assert_eq!(&plan.fixed, &fixed);
            prop_assert_eq!(plan.sites.len(), p);
            prop_assert_eq!(plan.service.load.len(), p + fixed.len());
            let value = plan.service.weighted_radius;
            prop_assert!((value - objective(&pts, w, &plan)).abs() <= 1e-12 * value.max(1.0));
            let alone = p_center(&pts, Weights::Given(w), p, &[], &plain()).unwrap().service.weighted_radius;
            prop_assert!(value <= alone * (1.0 + 1e-9) + 1e-12);
            let by_fixed = pts.iter().zip(w)
                .map(|(&a, &wi)| wi * fixed.iter().map(|&f| distance(a, f)).fold(f64::INFINITY, f64::min))
                .fold(0.0, f64::max);
            prop_assert!(value <= by_fixed);
            let far: Vec<Point> = fixed.iter().map(|f| [f[0] + 1e6, f[1] + 1e6]).collect();
            let beside_far = p_center(&pts, Weights::Given(w), p, &far, &plain()).unwrap();
            prop_assert!((beside_far.service.weighted_radius - alone).abs() <= 1e-9 * alone.max(1.0));
            prop_assert!(plan.optimal && beside_far.optimal);
        }

        /// The same input gives the same plan.
        #[test]
        fn conditional_is_deterministic(seed in 0u64..1_000) {
            let pts = cloud(60, seed);
            let fixed = cloud(2, seed + 1);
            let options = CenterOptions { effort: crate::multi::Effort::Fast, ..plain() };
            let a = p_center(&pts, Weights::Unit, 3, &fixed, &options).unwrap();
            let b = p_center(&pts, Weights::Unit, 3, &fixed, &options).unwrap();
            prop_assert_eq!(a, b);
        }
    }
}
