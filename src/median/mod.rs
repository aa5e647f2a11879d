//! The weighted Fermat–Weber point (geometric median): the location `x` minimising
//! `Σ wᵢ · d(x, aᵢ)`.
//!
//! - Euclidean: [`weiszfeld`] — Weiszfeld's iteration (1937) with the Vardi–Zhang (2001)
//!   step at data points, safeguarded Newton steps, Kuhn's (1973) optimality test at data
//!   points and a certified optimality gap.
//! - Manhattan: [`manhattan`] — exact, by weighted medians per axis.
//! - Restricted to a feasible region: [`restricted`] — the free optimum when the region holds
//!   it, else the best boundary point (Hamacher and Nickel 1995).

mod manhattan;
mod restricted;
pub(crate) mod sums;
mod weiszfeld;

pub use restricted::{weber_point_in_region, weber_points_in_region, RegionWeberPoint};

use crate::batch::{run_grouped, Grouped, OnGroupError};
use crate::error::Result;
use crate::geometry::{validate_iteration, validate_points, validate_weights, Point, Weights};

/// Distance used by the Fermat–Weber objective.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Metric {
    /// Straight-line (L2) distance.
    #[default]
    Euclidean,
    /// City-block (L1) distance.
    Manhattan,
}

/// Options of [`weber_point`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WeberOptions {
    /// The distance.
    pub metric: Metric,
    /// Stop when the certified gap is at most `tol · cost` (relative optimality gap).
    pub tol: f64,
    /// Largest number of objective evaluations (passes over the points).
    pub max_iter: usize,
}

impl Default for WeberOptions {
    fn default() -> Self {
        WeberOptions { metric: Metric::Euclidean, tol: 1e-10, max_iter: 10_000 }
    }
}

/// A Fermat–Weber point with its certificate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WeberPoint {
    /// The location found.
    pub location: Point,
    /// `Σ wᵢ · d(location, aᵢ)`.
    pub cost: f64,
    /// A proven upper bound on `cost − optimum` (0 when optimality is proven exactly).
    pub gap: f64,
    /// Objective evaluations (passes over the points) used.
    pub iterations: usize,
    /// True when `gap ≤ tol · cost` was reached within `max_iter` (on the ellipsoid: plus the
    /// gap's allowance for the distances' accuracy, which no step can remove).
    pub converged: bool,
}

/// The weighted Fermat–Weber point of `points`.
///
/// # Errors
/// - [`Error::TooFewPoints`] when `points` is empty;
/// - [`Error::NonFiniteCoordinate`] for a NaN or infinite coordinate;
/// - [`Error::LengthMismatch`], [`Error::InvalidWeight`], [`Error::AllWeightsZero`] for bad weights;
/// - [`Error::InvalidParameter`] when `tol` is negative or not finite.
///
/// # Runtime
/// O(n) per evaluation, parallel for large n; Euclidean typically needs 5–50 evaluations
/// to a relative gap of 1e-10, Manhattan is one O(n log n) pass.
pub fn weber_point(points: &[Point], weights: Weights<'_>, options: &WeberOptions) -> Result<WeberPoint> {
    validate_points("points", points, 1)?;
    validate_weights("weights", weights, points.len())?;
    validate_options(options)?;
    Ok(match options.metric {
        Metric::Euclidean => weiszfeld::solve(points, weights, options.tol, options.max_iter),
        Metric::Manhattan => manhattan::solve(points, weights),
    })
}

/// The Euclidean [`weber_point`] of points already validated (finite, at least one positive
/// weight), found from `start`: the local step of the many-site searches, where each
/// cluster's previous site is a start close to its new optimum.
pub(crate) fn weber_point_from(points: &[Point], weights: Weights<'_>, tol: f64, start: Point) -> WeberPoint {
    weiszfeld::solve_from(points, weights, tol, WeberOptions::default().max_iter, Some(start))
}

/// [`weber_point`] for every group of a labelled cloud, in parallel (see [`crate::batch`]).
///
/// # Errors
/// As [`weber_point`], with [`Error::InGroup`] naming the group; and
/// [`Error::LengthMismatch`] when `labels` does not have one entry per point.
pub fn weber_points(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    options: &WeberOptions,
    on_error: OnGroupError,
) -> Result<Grouped<WeberPoint>> {
    validate_options(options)?;
    run_grouped(points, weights, labels, on_error, |group| weber_point(group.points, group.weights, options))
}

fn validate_options(options: &WeberOptions) -> Result<()> {
    validate_iteration(options.max_iter, options.tol)
}

#[cfg(test)]
mod properties {
    use super::*;
    use crate::geometry::distance;
    use proptest::prelude::*;

    fn cloud() -> impl Strategy<Value = Vec<Point>> {
        prop::collection::vec((-1e3f64..1e3, -1e3f64..1e3).prop_map(|(x, y)| [x, y]), 1..40)
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

        #[test]
        fn gap_bounds_the_error(points in cloud()) {
            let rough = weber_point(&points, Weights::Unit, &WeberOptions { tol: 1e-3, ..Default::default() }).unwrap();
            let fine = weber_point(&points, Weights::Unit, &WeberOptions { tol: 1e-13, ..Default::default() }).unwrap();
            prop_assert!(rough.cost - (fine.cost - fine.gap) <= rough.gap * (1.0 + 1e-9) + 1e-9);
        }

        #[test]
        fn translation_moves_the_location(points in cloud(), dx in -1e5f64..1e5, dy in -1e5f64..1e5) {
            let a = weber_point(&points, Weights::Unit, &WeberOptions { tol: 1e-12, ..Default::default() }).unwrap();
            let moved: Vec<Point> = points.iter().map(|p| [p[0] + dx, p[1] + dy]).collect();
            let b = weber_point(&moved, Weights::Unit, &WeberOptions { tol: 1e-12, ..Default::default() }).unwrap();
            prop_assert!((a.cost - b.cost).abs() <= 1e-7 * a.cost.max(1.0));
        }

        #[test]
        fn location_is_never_worse_than_any_data_point(points in cloud()) {
            let r = weber_point(&points, Weights::Unit, &WeberOptions::default()).unwrap();
            let best_data_point = points
                .iter()
                .map(|&c| points.iter().map(|&p| distance(p, c)).sum::<f64>())
                .fold(f64::INFINITY, f64::min);
            prop_assert!(r.cost <= best_data_point * (1.0 + 1e-12) + 1e-12);
        }

        #[test]
        fn grouped_equals_separate(points in cloud(), seed in 0u64..1000) {
            let labels: Vec<i64> = (0..points.len() as u64).map(|i| ((i * 31 + seed) % 4) as i64).collect();
            let options = WeberOptions::default();
            let grouped = weber_points(&points, Weights::Unit, &labels, &options, OnGroupError::Raise).unwrap();
            let labels_seen = grouped.labels.clone();
            for (label, result) in labels_seen.iter().zip(grouped.into_solved().unwrap()) {
                let members: Vec<Point> = points.iter().zip(&labels).filter(|(_, l)| *l == label).map(|(p, _)| *p).collect();
                let single = weber_point(&members, Weights::Unit, &options).unwrap();
                prop_assert_eq!(single, result);
            }
        }
    }
}
