//! The weighted Fermat–Weber point (geometric median): the location `x` minimising
//! `Σ wᵢ · d(x, aᵢ)`.
//!
//! - Euclidean: [`weiszfeld`] — Weiszfeld's iteration (1937) with the Vardi–Zhang (2001)
//!   step at data points, safeguarded Newton steps, Kuhn's (1973) optimality test at data
//!   points and a certified optimality gap.
//! - Manhattan: [`manhattan`] — exact, by weighted medians per axis.

pub mod manhattan;
pub mod weiszfeld;

use crate::batch::{run_grouped, Grouped};
use crate::error::{Error, Result};
use crate::geometry::{validate_points, validate_weights, Point, Weights};

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
    /// True when `gap ≤ tol · cost` was reached within `max_iter`.
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
) -> Result<Grouped<WeberPoint>> {
    validate_options(options)?;
    run_grouped(points, weights, labels, |group| weber_point(group.points, group.weights, options))
}

fn validate_options(options: &WeberOptions) -> Result<()> {
    if !(options.tol.is_finite() && options.tol >= 0.0) {
        return Err(Error::InvalidParameter {
            name: "tol",
            reason: format!("must be finite and >= 0; got {:?}", options.tol),
        });
    }
    Ok(())
}
