//! Many sites at once: continuous p-median (multisource Weber) and p-center.
//!
//! - [`p_median`]: `p` sites minimising `Σ wᵢ · minⱼ ‖sⱼ − aᵢ‖` — Cooper's alternating
//!   location–allocation as the local step inside a variable neighbourhood search with
//!   j-means jumps; optional fixed (existing) sites.
//! - [`p_center`]: `p` sites minimising `maxᵢ wᵢ · minⱼ ‖sⱼ − aᵢ‖` — Drezner's alternating
//!   cluster / minimax-point improvement with restarts, exact by branch and bound for tiny
//!   instances.
//!
//! Both build on the single-site kernels ([`crate::median::weber_point`],
//! [`crate::enclose::minimax_point`]) and on nearest-site allocation
//! ([`crate::partition::nearest_site`]).

pub mod p_center;
pub mod p_median;

pub use p_center::{p_center, CenterOptions, CenterPlan};
pub use p_median::{p_median, Effort, MedianOptions, MedianPlan};

use crate::error::{Error, Result};
use crate::geometry::{Point, Weights};

/// Check `p ≥ 1` and that there are at least `p` distinct points of positive weight; return
/// the indices of one representative per distinct positive-weight location (first occurrence,
/// in input order).
///
/// # Errors
/// [`Error::InvalidParameter`] for `p = 0`; [`Error::TooFewPoints`] when fewer than `p`
/// distinct locations carry weight.
fn check_site_count(points: &[Point], weights: Weights<'_>, p: usize) -> Result<Vec<usize>> {
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

/// One index per distinct location carrying positive weight (its first occurrence), in input
/// order. `-0.0` and `0.0` count as the same coordinate.
fn distinct_weighted(points: &[Point], weights: Weights<'_>) -> Vec<usize> {
    let key = |p: Point| [(p[0] + 0.0).to_bits(), (p[1] + 0.0).to_bits()];
    let mut order: Vec<usize> = (0..points.len()).filter(|&i| weights.get(i) > 0.0).collect();
    order.sort_by_key(|&i| (key(points[i]), i));
    let mut firsts: Vec<usize> = Vec::with_capacity(order.len());
    let mut last: Option<[u64; 2]> = None;
    for &i in &order {
        let k = key(points[i]);
        if last != Some(k) {
            firsts.push(i);
            last = Some(k);
        }
    }
    firsts.sort_unstable();
    firsts
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn distinct_count_ignores_duplicates_and_zero_weights() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 0.0], [-0.0, 0.0], [2.0, 2.0]];
        assert_eq!(distinct_weighted(&pts, Weights::Unit), vec![0, 1, 4]);
        let w = [1.0, 0.0, 1.0, 1.0, 3.0];
        assert_eq!(distinct_weighted(&pts, Weights::Given(&w)), vec![0, 4]);
        assert!(matches!(check_site_count(&pts, Weights::Given(&w), 3), Err(Error::TooFewPoints { got: 2, .. })));
        assert!(matches!(check_site_count(&pts, Weights::Unit, 0), Err(Error::InvalidParameter { name: "p", .. })));
    }
}

#[cfg(test)]
mod properties {
    use super::*;
    use crate::enclose::enclosing_circle;
    use crate::geometry::{distance, Point, Weights};
    use proptest::prelude::*;

    fn cloud() -> impl Strategy<Value = Vec<Point>> {
        prop::collection::vec((-1e3f64..1e3, -1e3f64..1e3).prop_map(|(x, y)| [x, y]), 3..30)
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]

        /// Every point is assigned to a nearest site, the cost is that assignment's cost,
        /// and loads add up to the total weight.
        #[test]
        fn p_median_assignment_is_nearest_and_cost_consistent(points in cloud(), p in 1usize..4) {
            let options = MedianOptions { effort: Effort::Fast, seed: 3 };
            let plan = p_median(&points, Weights::Unit, p, &[], &options).unwrap();
            prop_assert_eq!(plan.sites.len(), p);
            let mut cost = 0.0;
            for (i, &a) in points.iter().enumerate() {
                let assigned = distance(a, plan.sites[plan.assignment[i]]);
                let nearest = plan.sites.iter().map(|&s| distance(a, s)).fold(f64::INFINITY, f64::min);
                prop_assert!(assigned <= nearest * (1.0 + 1e-12) + 1e-12);
                cost += assigned;
            }
            prop_assert!((cost - plan.cost).abs() <= 1e-9 * cost.max(1.0));
            prop_assert!((plan.load.iter().sum::<f64>() - points.len() as f64).abs() < 1e-9);
        }

        /// The same seed gives the same plan.
        #[test]
        fn p_median_is_deterministic(points in cloud()) {
            let options = MedianOptions { effort: Effort::Fast, seed: 11 };
            let a = p_median(&points, Weights::Unit, 2, &[], &options).unwrap();
            let b = p_median(&points, Weights::Unit, 2, &[], &options).unwrap();
            prop_assert_eq!(a, b);
        }

        /// The p-center radius covers every point and never exceeds the one-circle radius.
        #[test]
        fn p_center_radius_covers_and_beats_one_circle(points in cloud(), p in 1usize..4) {
            let plan = p_center(&points, Weights::Unit, p, &CenterOptions::default()).unwrap();
            for &a in &points {
                let nearest = plan.sites.iter().map(|&s| distance(a, s)).fold(f64::INFINITY, f64::min);
                prop_assert!(nearest <= plan.radius * (1.0 + 1e-9) + 1e-9);
            }
            let one = enclosing_circle(&points).unwrap();
            prop_assert!(plan.radius <= one.radius * (1.0 + 1e-9) + 1e-9);
        }
    }
}
