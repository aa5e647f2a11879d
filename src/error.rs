//! The crate's one error type.
//!
//! Every kernel validates its input first and answers bad input with an [`Error`] whose
//! message names the argument, the offending index and what was expected. The binding layer
//! converts each variant once (`src/py/errors.rs`) into `placewise.InputError` or its child
//! `placewise.DegenerateInputError`.

use std::fmt;

/// Result alias used by every kernel.
pub type Result<T> = std::result::Result<T, Error>;

/// Everything a kernel can refuse.
#[derive(Debug, Clone, PartialEq)]
pub enum Error {
    /// A coordinate is NaN or infinite: `points[17] has a NaN coordinate`.
    NonFiniteCoordinate {
        /// Argument name, e.g. `"points"`.
        argument: &'static str,
        /// Row of the offending point.
        index: usize,
        /// The offending value (NaN, +inf or -inf).
        value: f64,
    },
    /// A weight is negative, NaN or infinite.
    InvalidWeight {
        /// Argument name, e.g. `"weights"`.
        argument: &'static str,
        /// Index of the offending weight.
        index: usize,
        /// The offending value.
        value: f64,
    },
    /// Every weight is zero, so no location is better than another.
    AllWeightsZero {
        /// Argument name.
        argument: &'static str,
    },
    /// Two arguments that must have one entry per point disagree in length.
    LengthMismatch {
        /// Argument whose length is wrong.
        argument: &'static str,
        /// Length it must have.
        expected: usize,
        /// Length it has.
        got: usize,
    },
    /// Fewer points than the kernel needs.
    TooFewPoints {
        /// Argument name.
        argument: &'static str,
        /// How many are needed (distinct where the kernel says so).
        needed: usize,
        /// How many there are.
        got: usize,
        /// What kind of points are counted, e.g. `"points"` or `"distinct points"`.
        counted: &'static str,
    },
    /// The input has the right shape but no answer of the requested kind exists
    /// (all points collinear, a region without area, duplicate sites, ...).
    Degenerate {
        /// Argument name.
        argument: &'static str,
        /// What is wrong, as a sentence fragment.
        reason: String,
    },
    /// A tuning parameter is out of range.
    InvalidParameter {
        /// Parameter name, e.g. `"tol"`.
        name: &'static str,
        /// What was expected and what was given.
        reason: String,
    },
    /// An error inside one group of a grouped run.
    InGroup {
        /// The group's label.
        label: i64,
        /// What went wrong in that group.
        source: Box<Error>,
    },
}

impl Error {
    /// True when the input is well-formed but geometrically degenerate for the kernel.
    pub fn is_degenerate(&self) -> bool {
        match self {
            Error::Degenerate { .. } | Error::TooFewPoints { .. } => true,
            Error::InGroup { source, .. } => source.is_degenerate(),
            _ => false,
        }
    }

    /// Wrap this error with the label of the group it happened in.
    pub fn in_group(self, label: i64) -> Error {
        Error::InGroup { label, source: Box::new(self) }
    }
}

fn describe_non_finite(value: f64) -> &'static str {
    if value.is_nan() {
        "a NaN"
    } else if value > 0.0 {
        "an infinite (+inf)"
    } else {
        "an infinite (-inf)"
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::NonFiniteCoordinate { argument, index, value } => write!(
                f,
                "{argument}[{index}] has {} coordinate; every coordinate must be finite",
                describe_non_finite(*value)
            ),
            Error::InvalidWeight { argument, index, value } => write!(
                f,
                "{argument} must be finite and >= 0; {argument}[{index}] = {value:?}"
            ),
            Error::AllWeightsZero { argument } => {
                write!(f, "{argument} are all zero; at least one weight must be positive")
            }
            Error::LengthMismatch { argument, expected, got } => write!(
                f,
                "{argument} must have one entry per point ({expected}); got {got}"
            ),
            Error::TooFewPoints { argument, needed, got, counted } => write!(
                f,
                "{argument} must hold at least {needed} {counted}; got {got}"
            ),
            Error::Degenerate { argument, reason } => write!(f, "{argument}: {reason}"),
            Error::InvalidParameter { name, reason } => write!(f, "{name}: {reason}"),
            Error::InGroup { label, source } => write!(f, "group {label}: {source}"),
        }
    }
}

impl std::error::Error for Error {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self {
            Error::InGroup { source, .. } => Some(source.as_ref()),
            _ => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn messages_name_argument_index_and_expectation() {
        let e = Error::NonFiniteCoordinate { argument: "points", index: 17, value: f64::NAN };
        assert_eq!(e.to_string(), "points[17] has a NaN coordinate; every coordinate must be finite");
        let e = Error::InvalidWeight { argument: "weights", index: 3, value: -1.0 };
        assert_eq!(e.to_string(), "weights must be finite and >= 0; weights[3] = -1.0");
        let e = Error::Degenerate { argument: "points", reason: "all points are collinear".into() }
            .in_group(4);
        assert_eq!(e.to_string(), "group 4: points: all points are collinear");
        assert!(e.is_degenerate());
    }
}
