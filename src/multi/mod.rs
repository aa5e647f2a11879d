//! Many sites at once: continuous p-median (multisource Weber) and p-center.
//!
//! - [`p_median`]: `p` sites minimising `Σ wᵢ · minⱼ ‖sⱼ − aᵢ‖` — Cooper's alternating
//!   location–allocation as the local step inside a variable neighbourhood search with
//!   j-means jumps; optional fixed (existing) sites.
//! - [`p_center`]: `p` sites minimising `maxᵢ wᵢ · minⱼ ‖sⱼ − aᵢ‖` — Drezner's alternating
//!   cluster / minimax-point improvement with restarts, exact by branch and bound for tiny
//!   instances; optional fixed (existing) sites, by a threshold search over their service
//!   (the conditional p-center, Drezner 1989).
//! - [`p_medians`], [`p_centers`]: the same for every group of a point cloud at once
//!   ([`crate::batch::run_grouped_placed`], which also says where every input row sits, so
//!   per-point values return in input order); a grouped run gives exactly what separate calls
//!   on each group's points give.
//!
//! Both build on the single-site kernels ([`crate::median::weber_point`],
//! [`crate::enclose::minimax_point`]), on nearest-site allocation
//! ([`crate::partition::allocate`]) and on one D-sampling start (`seeding`). Every plan
//! reports how its sites serve the demand in one [`Service`] (per-point distance, per-site
//! load and count, and the totals), so no caller recomputes them.

mod p_center;
mod p_median;
mod seeding;
mod service;

pub use p_center::{p_center, p_centers, CenterOptions, CenterPlan, EXACT_MAX_POINTS};
pub use p_median::{p_median, p_medians, Effort, MedianOptions, MedianPlan};
pub use service::Service;

use crate::error::{Error, Result};
use rayon::prelude::*;

use crate::batch::{run_grouped_placed, GroupIndex, Grouped, OnGroupError, RowPlaces};
use crate::cancel::Watch;
use crate::geometry::{location_key, validate_points, FeasibleRegion, Point, Weights, WorkingFrame};

/// A distinct location carrying positive weight.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Location {
    /// The first input row at this location.
    first: usize,
    /// The largest weight found at this location (the only one a largest weighted distance
    /// depends on).
    heaviest: f64,
}

/// Check `p ≥ 1` and that there are at least `p` distinct points of positive weight; return
/// those locations (see [`distinct_weighted`]).
///
/// # Errors
/// [`Error::InvalidParameter`] for `p = 0`; [`Error::TooFewPoints`] when fewer than `p`
/// distinct locations carry weight.
fn check_site_count(points: &[Point], weights: Weights<'_>, p: usize) -> Result<Vec<Location>> {
    if p == 0 {
        return Err(Error::InvalidParameter { name: "p", reason: "must be at least 1; got 0".into() });
    }
    let distinct = distinct_weighted(points, weights);
    if distinct.len() < p {
        return Err(Error::TooFewPoints {
            argument: "points",
            needed: p,
            got: distinct.len(),
            counted: "distinct points with positive weight (one per site)",
        });
    }
    Ok(distinct)
}

/// The distinct locations carrying positive weight, in input order of their first row.
/// Locations are compared with the one exact key ([`location_key`]: `-0.0` and `0.0` are
/// the same coordinate).
pub(crate) fn distinct_weighted(points: &[Point], weights: Weights<'_>) -> Vec<Location> {
    let mut order: Vec<usize> = (0..points.len()).filter(|&i| weights.get(i) > 0.0).collect();
    // The key ends in the row, so an unstable (parallel) sort gives the one order.
    order.par_sort_unstable_by_key(|&i| (location_key(points[i]), i));
    let mut distinct: Vec<Location> = Vec::with_capacity(order.len());
    let mut last = None;
    for &i in &order {
        let key = location_key(points[i]);
        if last == Some(key) {
            let at = distinct.last_mut().expect("a previous location");
            at.heaviest = at.heaviest.max(weights.get(i));
        } else {
            distinct.push(Location { first: i, heaviest: weights.get(i) });
            last = Some(key);
        }
    }
    distinct.sort_unstable_by_key(|l| l.first);
    distinct
}

/// The working frame of a plan ([`WorkingFrame`]: unit size, so squared distances neither
/// underflow nor overflow) over `points`, widened to hold `also` and the region's box, and
/// the region mapped into it.
fn plan_frame(
    points: &[Point],
    also: &[Point],
    region: Option<&FeasibleRegion>,
) -> (WorkingFrame, Option<FeasibleRegion>) {
    let mut held = also.to_vec();
    if let Some(r) = region {
        held.extend([r.bounds().min, r.bounds().max]);
    }
    let frame = WorkingFrame::of(points).holding(&held);
    (frame, region.map(|r| r.mapped(|v| frame.to_local(v))))
}

/// Sites found in `frame` back in world coordinates. With a region, each is projected onto
/// it: a site of the mapped region may sit a unit in the last place outside the given one,
/// and the exact test settles it.
fn world_sites(frame: WorkingFrame, region: Option<&FeasibleRegion>, sites: &[Point]) -> Vec<Point> {
    sites.iter().map(|&s| region.map_or(frame.to_world(s), |r| r.project(frame.to_world(s)))).collect()
}

/// Run `plan(group points, group weights, the group's fixed sites)` on every group of
/// `points` (labels `labels`), in parallel: the p-median's and the p-center's grouped form.
/// `fixed_labels[k]` is the group label of `fixed[k]` (both empty for none); a group's fixed
/// sites are those with its label, in their input order. Progress counts the points of
/// finished groups (each group's own run should watch quietly).
///
/// # Errors
/// [`Error::InvalidParameter`] (`fixed_groups`) when `fixed_labels` does not hold one label
/// per fixed site; [`Error::NonFiniteCoordinate`] for a bad fixed site, naming its row in
/// `fixed`; the errors of [`run_grouped_placed`] and of `plan`.
pub(crate) fn run_grouped_beside<T: Send>(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    (fixed, fixed_labels): (&[Point], &[i64]),
    watch: &Watch,
    on_error: OnGroupError,
    plan: impl Fn(&[Point], Weights<'_>, &[Point]) -> Result<T> + Sync,
) -> Result<(Grouped<T>, RowPlaces)> {
    if fixed_labels.len() != fixed.len() {
        return Err(Error::InvalidParameter {
            name: "fixed_groups",
            reason: format!(
                "must hold the group label of every fixed site ({}); got {}",
                fixed.len(),
                fixed_labels.len()
            ),
        });
    }
    // Rows of `fixed` are named before grouping: inside a group they would be renumbered.
    validate_points("fixed", fixed, 0)?;
    let by_group = GroupIndex::new(fixed_labels);
    watch.plan(points.len() as u64);
    run_grouped_placed("points", points, weights, labels, on_error, |group| {
        let own: Vec<Point> = match by_group.labels().binary_search(&group.label) {
            Ok(g) => by_group.members(g).iter().map(|&k| fixed[k]).collect(),
            Err(_) => Vec::new(),
        };
        let answer = plan(group.points, group.weights, &own);
        watch.advance(group.points.len() as u64);
        answer
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn distinct_count_ignores_duplicates_and_zero_weights() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 0.0], [-0.0, 0.0], [2.0, 2.0]];
        let firsts = |d: Vec<Location>| d.iter().map(|l| l.first).collect::<Vec<_>>();
        assert_eq!(firsts(distinct_weighted(&pts, Weights::Unit)), vec![0, 1, 4]);
        let w = [1.0, 0.0, 1.5, 4.0, 3.0];
        let d = distinct_weighted(&pts, Weights::Given(&w));
        assert_eq!(d, vec![Location { first: 0, heaviest: 4.0 }, Location { first: 4, heaviest: 3.0 }]);
        assert!(matches!(check_site_count(&pts, Weights::Given(&w), 3), Err(Error::TooFewPoints { got: 2, .. })));
        assert!(matches!(check_site_count(&pts, Weights::Unit, 0), Err(Error::InvalidParameter { name: "p", .. })));
    }
}

#[cfg(test)]
mod properties {
    use super::*;
    use crate::batch::OnGroupError;
    use crate::enclose::enclosing_circle;
    use crate::geometry::distance;
    use proptest::prelude::*;

    fn cloud() -> impl Strategy<Value = Vec<Point>> {
        prop::collection::vec((-1e3f64..1e3, -1e3f64..1e3).prop_map(|(x, y)| [x, y]), 3..30)
    }

    /// Points with group labels from a small set, in any order.
    fn labelled() -> impl Strategy<Value = (Vec<Point>, Vec<i64>)> {
        prop::collection::vec(((-1e3f64..1e3, -1e3f64..1e3), 0i64..3), 2..40)
            .prop_map(|v| v.into_iter().map(|((x, y), l)| ([x, y], l * 7 - 5)).unzip())
    }

    /// The rows of group `label`, in input order.
    fn members(labels: &[i64], label: i64) -> Vec<usize> {
        (0..labels.len()).filter(|&i| labels[i] == label).collect()
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 24, ..ProptestConfig::default() })]

        /// Every point is assigned to a nearest site; the per-point distances, per-site loads
        /// and counts and the cost agree with a direct evaluation of the sites.
        #[test]
        fn p_median_service_is_nearest_and_consistent(points in cloud(), p in 1usize..4) {
            let options = MedianOptions { effort: Effort::Fast, seed: 3, ..MedianOptions::default() };
            let plan = p_median(&points, Weights::Unit, p, &[], &options).unwrap();
            prop_assert_eq!(plan.sites.len(), p);
            let s = &plan.service;
            let mut cost = 0.0;
            let mut count = vec![0; p];
            for (i, &a) in points.iter().enumerate() {
                let assigned = distance(a, plan.sites[s.assignment[i]]);
                let nearest = plan.sites.iter().map(|&t| distance(a, t)).fold(f64::INFINITY, f64::min);
                prop_assert!(assigned <= nearest * (1.0 + 1e-12) + 1e-12);
                prop_assert_eq!(s.distance[i], assigned);
                cost += assigned;
                count[s.assignment[i]] += 1;
            }
            prop_assert!((cost - s.cost).abs() <= 1e-9 * cost.max(1.0));
            prop_assert_eq!(&s.count, &count);
            prop_assert!((s.load.iter().sum::<f64>() - points.len() as f64).abs() < 1e-9);
            prop_assert_eq!(s.total_load, points.len() as f64);
        }

        /// The same seed gives the same plan.
        #[test]
        fn p_median_is_deterministic(points in cloud()) {
            let options = MedianOptions { effort: Effort::Fast, seed: 11, ..MedianOptions::default() };
            let a = p_median(&points, Weights::Unit, 2, &[], &options).unwrap();
            let b = p_median(&points, Weights::Unit, 2, &[], &options).unwrap();
            prop_assert_eq!(a, b);
        }

        /// The p-center radius covers every point and never exceeds the one-circle radius.
        #[test]
        fn p_center_radius_covers_and_beats_one_circle(points in cloud(), p in 1usize..4) {
            let plan = p_center(&points, Weights::Unit, p, &[], &CenterOptions::default()).unwrap();
            for (i, &a) in points.iter().enumerate() {
                let nearest = plan.sites.iter().map(|&s| distance(a, s)).fold(f64::INFINITY, f64::min);
                prop_assert!(nearest <= plan.service.weighted_radius * (1.0 + 1e-9) + 1e-9);
                prop_assert_eq!(plan.service.distance[i], distance(a, plan.sites[plan.service.assignment[i]]));
            }
            prop_assert_eq!(plan.service.radius, plan.service.weighted_radius);
            let one = enclosing_circle(&points).unwrap();
            prop_assert!(plan.service.weighted_radius <= one.radius * (1.0 + 1e-9) + 1e-9);
        }

        /// A grouped p-median run equals separate runs on each group's points; groups with
        /// too few distinct points are skipped, each with its own error.
        #[test]
        fn p_medians_equal_separate_calls((points, labels) in labelled(), p in 1usize..3) {
            let options = MedianOptions { effort: Effort::Fast, seed: 5, ..MedianOptions::default() };
            let (grouped, _) = p_medians(&points, Weights::Unit, &labels, p, &[], &[], &options, OnGroupError::Skip).unwrap();
            for (g, &label) in grouped.labels.iter().enumerate() {
                let rows = members(&labels, label);
                let own: Vec<Point> = rows.iter().map(|&i| points[i]).collect();
                match (p_median(&own, Weights::Unit, p, &[], &options), &grouped.results[g]) {
                    (Ok(single), Ok(plan)) => prop_assert_eq!(&single, plan),
                    (Err(single), Err(e)) => prop_assert_eq!(&single.in_group(label), e),
                    (single, plan) => prop_assert!(false, "{:?} vs {:?}", single, plan),
                }
            }
        }

        /// The same for p-center, with weights.
        #[test]
        fn p_centers_equal_separate_calls((points, labels) in labelled(), p in 1usize..3) {
            let w: Vec<f64> = (0..points.len()).map(|i| 1.0 + (i % 3) as f64).collect();
            let options = CenterOptions { seed: 2, effort: Effort::Fast, ..CenterOptions::default() };
            let (grouped, _) = p_centers(&points, Weights::Given(&w), &labels, p, &[], &[], &options, OnGroupError::Skip).unwrap();
            for (g, &label) in grouped.labels.iter().enumerate() {
                let rows = members(&labels, label);
                let own: Vec<Point> = rows.iter().map(|&i| points[i]).collect();
                let own_w: Vec<f64> = rows.iter().map(|&i| w[i]).collect();
                match (p_center(&own, Weights::Given(&own_w), p, &[], &options), &grouped.results[g]) {
                    (Ok(single), Ok(plan)) => prop_assert_eq!(&single, plan),
                    (Err(single), Err(e)) => prop_assert_eq!(&single.in_group(label), e),
                    (single, plan) => prop_assert!(false, "{:?} vs {:?}", single, plan),
                }
            }
        }

        /// The same for the p-center beside fixed sites.
        #[test]
        fn p_centers_with_fixed_groups_equal_separate_calls((points, labels) in labelled()) {
            let fixed = [[0.0, 0.0], [500.0, -500.0], [-300.0, 200.0]];
            let fixed_labels = [-5, 9, -5];
            let options = CenterOptions { effort: Effort::Fast, seed: 1, ..CenterOptions::default() };
            let (grouped, _) =
                p_centers(&points, Weights::Unit, &labels, 1, &fixed, &fixed_labels, &options, OnGroupError::Raise)
                    .unwrap();
            for (g, &label) in grouped.labels.iter().enumerate() {
                let own: Vec<Point> = members(&labels, label).iter().map(|&i| points[i]).collect();
                let own_fixed: Vec<Point> = (0..3).filter(|&k| fixed_labels[k] == label).map(|k| fixed[k]).collect();
                let single = p_center(&own, Weights::Unit, 1, &own_fixed, &options).unwrap();
                prop_assert_eq!(&single, grouped.results[g].as_ref().unwrap());
            }
            let wrong = p_centers(&points, Weights::Unit, &labels, 1, &fixed, &[1], &options, OnGroupError::Raise);
            let refused = matches!(wrong, Err(Error::InvalidParameter { name: "fixed_groups", .. }));
            prop_assert!(refused, "{:?}", wrong);
        }

        /// With fixed sites per group, each group's plan equals a separate call given only
        /// that group's fixed sites.
        #[test]
        fn p_medians_with_fixed_groups_equal_separate_calls((points, labels) in labelled()) {
            let fixed = [[0.0, 0.0], [500.0, -500.0], [-300.0, 200.0]];
            let fixed_labels = [-5, 9, -5];
            let options = MedianOptions { effort: Effort::Fast, seed: 1, ..MedianOptions::default() };
            let (grouped, _) =
                p_medians(&points, Weights::Unit, &labels, 1, &fixed, &fixed_labels, &options, OnGroupError::Raise)
                    .unwrap();
            for (g, &label) in grouped.labels.iter().enumerate() {
                let own: Vec<Point> = members(&labels, label).iter().map(|&i| points[i]).collect();
                let own_fixed: Vec<Point> = (0..3).filter(|&k| fixed_labels[k] == label).map(|k| fixed[k]).collect();
                let single = p_median(&own, Weights::Unit, 1, &own_fixed, &options).unwrap();
                prop_assert_eq!(&single, grouped.results[g].as_ref().unwrap());
            }
        }
    }
}
