//! The one validation path for points and weights.
//!
//! Shape and dtype are settled by the binding layer (it converts once and hands over
//! `&[Point]`); what remains — finiteness, lengths, signs, counts — is checked here, so
//! `cargo test` users and Python users get the same errors.

use super::Point;
use crate::error::{Error, Result};

/// The largest weighted cost (weight × distance, and totals of them) the models that sum or
/// compare weighted costs work with: far enough below `f64::MAX` that totals of weighted
/// costs, the doubled ceilings standing for an unserved point, and the differences the swaps
/// and gaps take of them all stay finite. Beyond it a plan's objective overflows to
/// infinity, every plan looks alike, and a gap of 0 would be claimed for any of them.
pub(crate) const WEIGHTED_LIMIT: f64 = f64::MAX / 64.0;

/// Check the settings of an iterative solver: at least one iteration, a finite tolerance >= 0.
///
/// # Errors
/// [`Error::InvalidParameter`] naming `max_iter` or `tol`.
pub fn validate_iteration(max_iter: usize, tol: f64) -> Result<()> {
    if max_iter == 0 {
        return Err(Error::InvalidParameter { name: "max_iter", reason: "must be at least 1; got 0".into() });
    }
    if !(tol.is_finite() && tol >= 0.0) {
        return Err(Error::InvalidParameter { name: "tol", reason: format!("must be finite and >= 0; got {tol:?}") });
    }
    Ok(())
}

/// Check that every coordinate is finite and that there are at least `min_count` points.
///
/// # Errors
/// [`Error::TooFewPoints`] or [`Error::NonFiniteCoordinate`] naming the first bad row.
pub fn validate_points(argument: &'static str, points: &[Point], min_count: usize) -> Result<()> {
    if points.len() < min_count {
        return Err(Error::TooFewPoints { argument, needed: min_count, got: points.len(), counted: "points" });
    }
    for (index, p) in points.iter().enumerate() {
        for &value in p {
            if !value.is_finite() {
                return Err(Error::NonFiniteCoordinate { argument, index, value });
            }
        }
    }
    Ok(())
}

/// Optional per-point weights, borrowed; `Unit` means every weight is 1.
#[derive(Debug, Clone, Copy)]
pub enum Weights<'a> {
    /// Every point weighs 1.
    Unit,
    /// One finite, non-negative weight per point, not all zero.
    Given(&'a [f64]),
}

impl<'a> Weights<'a> {
    /// From an optional slice.
    pub fn from_option(weights: Option<&'a [f64]>) -> Weights<'a> {
        weights.map_or(Weights::Unit, Weights::Given)
    }

    /// Weight of point `i`.
    #[inline]
    pub fn get(&self, i: usize) -> f64 {
        match self {
            Weights::Unit => 1.0,
            Weights::Given(w) => w[i],
        }
    }

    /// The slice, if weights were given.
    pub fn as_slice(&self) -> Option<&'a [f64]> {
        match self {
            Weights::Unit => None,
            Weights::Given(w) => Some(w),
        }
    }
}

/// Check that `weights` has one finite, non-negative entry per point and is not all zero.
///
/// # Errors
/// [`Error::LengthMismatch`], [`Error::InvalidWeight`] (first bad index) or
/// [`Error::AllWeightsZero`].
pub fn validate_weights(argument: &'static str, weights: Weights<'_>, point_count: usize) -> Result<()> {
    let Weights::Given(w) = weights else { return Ok(()) };
    if w.len() != point_count {
        return Err(Error::LengthMismatch { argument, expected: point_count, got: w.len() });
    }
    let mut any_positive = false;
    for (index, &value) in w.iter().enumerate() {
        if !value.is_finite() || value < 0.0 {
            return Err(Error::InvalidWeight { argument, index, value });
        }
        any_positive |= value > 0.0;
    }
    if !any_positive && point_count > 0 {
        return Err(Error::AllWeightsZero { argument });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn first_bad_row_is_named() {
        let pts = [[0.0, 0.0], [1.0, f64::NAN], [f64::INFINITY, 0.0]];
        let e = validate_points("points", &pts, 1).unwrap_err();
        // NaN != NaN, so compare the message.
        assert_eq!(e.to_string(), "points[1] has a NaN coordinate; every coordinate must be finite");
    }

    #[test]
    fn weights_checks() {
        assert!(validate_weights("weights", Weights::Given(&[1.0, 0.0]), 2).is_ok());
        assert_eq!(
            validate_weights("weights", Weights::Given(&[1.0, -1.0]), 2).unwrap_err().to_string(),
            "weights must be finite and >= 0; weights[1] = -1"
        );
        assert!(matches!(
            validate_weights("weights", Weights::Given(&[0.0, 0.0]), 2),
            Err(Error::AllWeightsZero { .. })
        ));
        assert!(matches!(
            validate_weights("weights", Weights::Given(&[1.0]), 2),
            Err(Error::LengthMismatch { expected: 2, got: 1, .. })
        ));
    }
}
