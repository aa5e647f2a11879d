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
    /// A longitude or latitude outside its range: `points[4] has latitude 91; ...`.
    OutOfRange {
        /// Argument name, e.g. `"points"`.
        argument: &'static str,
        /// Row of the offending point.
        index: usize,
        /// `"latitude"` or `"longitude"`.
        axis: &'static str,
        /// The offending value, degrees.
        value: f64,
        /// The largest magnitude allowed, degrees.
        limit: f64,
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
    /// A per-row value that may have any sign (a power) is NaN or infinite:
    /// `powers[2] = NaN`.
    NonFiniteValue {
        /// Argument name, e.g. `"powers"`.
        argument: &'static str,
        /// Row of the offending value.
        index: usize,
        /// The offending value.
        value: f64,
    },
    /// Every weight is zero, so no location is better than another.
    AllWeightsZero {
        /// Argument name.
        argument: &'static str,
    },
    /// Two arguments that must have one entry per point (or site, or row) disagree in length.
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
    /// A point repeats the location of an earlier one where every point needs its own
    /// location (Voronoi sites): `sites[1] repeats sites[0]`.
    RepeatedPoint {
        /// Argument name, e.g. `"sites"`.
        argument: &'static str,
        /// Row of the repeat.
        row: usize,
        /// Row of the earlier point at the same location.
        first: usize,
    },
    /// A site repeats the location of an earlier one with another capacity (capacitated
    /// models): `candidates[1] repeats the location of candidates[0]`.
    TwoCapacities {
        /// Argument name of the locations (`"sites"` or `"candidates"`).
        argument: &'static str,
        /// Row of the repeat.
        row: usize,
        /// Row of the earlier site at the same location.
        first: usize,
        /// The capacity of the earlier site and of the repeat.
        capacities: (f64, f64),
    },
    /// A site's Voronoi cell is narrower than the precision at which a region this large is
    /// cut (its nearest site closer than about the weld's reach), so it would come out empty.
    LostCell {
        /// Argument name, e.g. `"sites"`.
        argument: &'static str,
        /// Row of the site.
        row: usize,
        /// Distance to its nearest site (caller's units).
        nearest: f64,
        /// The weld's reach, 2^-40 of the region's size (caller's units).
        reach: f64,
    },
    /// A cost matrix holds a NaN, infinite or negative cost: `costs[3, 7] = NaN`.
    InvalidCost {
        /// Argument name, e.g. `"costs"`.
        argument: &'static str,
        /// Demand row of the cell.
        row: usize,
        /// Candidate column of the cell.
        column: usize,
        /// The offending value.
        value: f64,
    },
    /// A demand point that no candidate reaches within the covering radius.
    Uncoverable {
        /// Row of the point.
        row: usize,
        /// The covering radius.
        radius: f64,
        /// The point's cheapest candidate column.
        column: usize,
        /// That candidate's cost.
        cost: f64,
        /// The argument holding the candidates' coordinates (`"candidates"`, `"sites"`) when
        /// the costs are straight-line distances from coordinates; `None` for a cost matrix.
        /// With coordinates the message names the candidate's row and its distance, not a
        /// column and a cost.
        coordinates: Option<&'static str>,
    },
    /// Weighted costs beyond the range in which totals stay finite: the largest cost times
    /// the total (or the largest) weight exceeds `limit`.
    WeightedOverflow {
        /// The largest cost (a value at or above every cost).
        largest: f64,
        /// The total weight, or the largest weight when `summed` is false.
        weight: f64,
        /// True when the weight is a total (a p-median's objective), false when it is the
        /// largest one (a p-center's).
        summed: bool,
        /// The largest weighted cost allowed.
        limit: f64,
        /// As in [`Error::Uncoverable`]: the candidates' argument when the costs are distances
        /// from coordinates (the message then names the coordinates), `None` for a matrix.
        coordinates: Option<&'static str>,
    },
    /// A row of a network's input that cannot be an edge: an empty or one-point line, a
    /// negative or NaN cost, an unknown one-way code, a node index out of range.
    InvalidEdge {
        /// Argument name, e.g. `"lines"`, `"cost"`, `"one_way"`.
        argument: &'static str,
        /// Row of the offending edge or line.
        row: usize,
        /// What is wrong, as a sentence fragment.
        reason: String,
    },
    /// A point farther from every edge of a network than the allowed gap.
    BeyondGap {
        /// Argument name, e.g. `"points"`, `"sites"`.
        argument: &'static str,
        /// Row of the point.
        row: usize,
        /// Its distance to the nearest edge.
        gap: f64,
        /// The largest allowed distance.
        max_gap: f64,
    },
    /// A point outside the region it must lie in: `points[4] at (3, 9) lies outside the region`.
    OutsideRegion {
        /// Argument name, e.g. `"points"`.
        argument: &'static str,
        /// Row of the point.
        row: usize,
        /// The point.
        point: [f64; 2],
    },
    /// A demand row of a sparse cost matrix that allows no candidate.
    NoCandidate {
        /// Argument name, e.g. `"costs"`.
        argument: &'static str,
        /// Row of the point.
        row: usize,
    },
    /// A tuning parameter is out of range.
    InvalidParameter {
        /// Parameter name, e.g. `"tol"`.
        name: &'static str,
        /// What was expected and what was given.
        reason: String,
    },
    /// Total capacity is below total demand (and unserved demand is not allowed).
    Shortfall {
        /// Total demand (sum of the weights).
        demand: f64,
        /// Total capacity.
        capacity: f64,
        /// Whether the model can leave demand unserved (and so the advice offers it).
        may_leave_unserved: bool,
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
            Error::Degenerate { .. }
            | Error::TooFewPoints { .. }
            | Error::RepeatedPoint { .. }
            | Error::LostCell { .. } => true,
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

/// How an error names rows and groups in its message.
///
/// The kernels know rows by position and groups by their integer label; a caller that knows
/// the user's own names (a DataFrame's index labels, the values of a group column) supplies
/// a namer so that the message speaks of those instead. One message layout serves both.
pub trait Namer {
    /// The name of row `row` of `argument`, as written inside brackets: `17` or `'clinic-17'`.
    fn row(&self, argument: &str, row: usize) -> String;
    /// The name of the group with integer label `label`: `7` or `'north'`.
    fn group(&self, label: i64) -> String;
    /// A length (a distance, a gap to a network) written as `number`, with its unit when the
    /// caller knows it (`12.5 m`). The kernels know no units, so by default the number stands
    /// alone.
    fn length(&self, number: String) -> String {
        number
    }
    /// A cost of a cost matrix (a travel time, a price) written as `number`, with its unit
    /// when the caller knows it (`7 min`); on coordinates the costs are lengths.
    fn cost(&self, number: String) -> String {
        number
    }
}

/// Rows and groups named by their positions and integer labels.
pub struct Positions;

impl Namer for Positions {
    fn row(&self, _argument: &str, row: usize) -> String {
        row.to_string()
    }
    fn group(&self, label: i64) -> String {
        label.to_string()
    }
}

/// A number for a message: integral values without a fraction, others in full precision.
fn plain(value: f64) -> String {
    if value.is_finite() && value == value.trunc() && value.abs() < 1e15 {
        format!("{}", value as i64)
    } else {
        format!("{value}")
    }
}

impl Error {
    /// The message, with rows and groups named by `namer`.
    pub fn describe(&self, namer: &dyn Namer) -> String {
        match self {
            Error::NonFiniteCoordinate { argument, index, value } => format!(
                "{argument}[{}] has {} coordinate; every coordinate must be finite",
                namer.row(argument, *index),
                describe_non_finite(*value)
            ),
            Error::OutOfRange { argument, index, axis, value, limit } => format!(
                "{argument}[{}] has {axis} {}; {axis} must lie within -{} and {} degrees",
                namer.row(argument, *index),
                plain(*value),
                plain(*limit),
                plain(*limit)
            ),
            Error::InvalidWeight { argument, index, value } => format!(
                "{argument} must be finite and >= 0; {argument}[{}] = {}",
                namer.row(argument, *index),
                plain(*value)
            ),
            Error::NonFiniteValue { argument, index, value } => {
                format!("{argument} must be finite; {argument}[{}] = {}", namer.row(argument, *index), plain(*value))
            }
            Error::AllWeightsZero { argument } => {
                format!("{argument} are all zero; at least one weight must be positive")
            }
            Error::LengthMismatch { argument, expected, got } => {
                // What each entry belongs to: a site, a row of a network's edge arrays or
                // lines, a point of the first set, or a point.
                let per = match *argument {
                    "powers" | "site_groups" => "site",
                    "cost" | "reverse_cost" | "one_way" | "head" => "row",
                    "b" => "point of a",
                    _ => "point",
                };
                format!("{argument} must have one entry per {per} ({expected}); got {got}")
            }
            Error::TooFewPoints { argument, needed, got, counted } => {
                // "at least 1 point", "at least 3 distinct points".
                let noun = if *needed == 1 { counted.strip_suffix('s').unwrap_or(counted) } else { counted };
                format!("{argument} must hold at least {needed} {noun}; got {got}")
            }
            Error::Degenerate { argument, reason } => format!("{argument}: {reason}"),
            Error::RepeatedPoint { argument, row, first } => format!(
                "{argument}: {argument}[{}] repeats {argument}[{}]; every site needs its own location",
                namer.row(argument, *row),
                namer.row(argument, *first)
            ),
            Error::TwoCapacities { argument, row, first, capacities } => format!(
                "{argument}: {argument}[{}] repeats the location of {argument}[{}] with another capacity ({} there, {} \
                 here); give each location one capacity",
                namer.row(argument, *row),
                namer.row(argument, *first),
                plain(capacities.0),
                plain(capacities.1)
            ),
            Error::LostCell { argument, row, nearest, reach } => format!(
                "{argument}: the cell of {argument}[{}] is lost: its nearest site lies {} away, about the {} to \
                 which a region this large is cut at double precision (2^-40 of its size); pass a smaller region \
                 around these sites",
                namer.row(argument, *row),
                namer.length(format!("{nearest:.3e}")),
                namer.length(format!("{reach:.3e}"))
            ),
            Error::InvalidCost { argument, row, column, value } => format!(
                "{argument}[{}, {column}] = {}; every cost must be finite and >= 0",
                namer.row(argument, *row),
                plain(*value)
            ),
            Error::Uncoverable { row, radius, column, cost, coordinates: None } => format!(
                "radius: points[{}] has no candidate within radius {}; its cheapest candidate, column {column}, \
                 costs {}",
                namer.row("points", *row),
                namer.cost(plain(*radius)),
                namer.cost(plain(*cost))
            ),
            Error::Uncoverable { row, radius, column, cost, coordinates: Some(name) } => format!(
                "radius: points[{}] has no candidate within radius {}; its nearest candidate, {name}[{}], lies at \
                 distance {}",
                namer.row("points", *row),
                namer.length(plain(*radius)),
                namer.row(name, *column),
                namer.length(plain(*cost))
            ),
            Error::WeightedOverflow { largest, weight, summed, limit, coordinates } => {
                let what = if *summed { "the total weight" } else { "the largest weight" };
                match coordinates {
                    None => format!(
                        "costs: the largest cost ({}) times {what} ({weight:e}) exceeds {limit:.3e}, beyond which \
                         weighted totals overflow float64; rescale the costs (or the coordinates they are distances \
                         between) or the weights (e.g. kilometres instead of metres, thousands of people instead of \
                         people)",
                        namer.cost(format!("{largest:e}"))
                    ),
                    Some(name) => format!(
                        "points, {name}: distances between points and {name} of at most {} times {what} \
                         ({weight:e}) exceed {limit:.3e}, beyond which weighted totals overflow float64; rescale the \
                         coordinates of points and {name} (e.g. kilometres instead of metres) or the weights (e.g. \
                         thousands of people instead of people)",
                        namer.length(format!("{largest:e}"))
                    ),
                }
            }
            Error::InvalidEdge { argument, row, reason } => {
                format!("{argument}[{}]: {reason}", namer.row(argument, *row))
            }
            Error::BeyondGap { argument, row, gap, max_gap } => format!(
                "{argument}[{}] lies {} from the nearest edge, farther than max_gap = {}",
                namer.row(argument, *row),
                namer.length(plain(*gap)),
                namer.length(plain(*max_gap))
            ),
            Error::OutsideRegion { argument, row, point } => format!(
                "{argument}[{}] at ({}, {}) lies outside the region; every point must lie in the region or on \
                 its boundary",
                namer.row(argument, *row),
                plain(point[0]),
                plain(point[1])
            ),
            Error::NoCandidate { argument, row } => format!(
                "{argument}: points[{}] has no allowed candidate (its row stores no cost)",
                namer.row("points", *row)
            ),
            Error::InvalidParameter { name, reason } => format!("{name}: {reason}"),
            Error::Shortfall { demand, capacity, may_leave_unserved } => format!(
                "capacities: total capacity {} is below total demand {}, {} short; {}",
                plain(*capacity),
                plain(*demand),
                plain(*demand - *capacity),
                if *may_leave_unserved {
                    "raise capacities or allow unserved demand"
                } else {
                    "raise capacities (this model serves all the demand)"
                }
            ),
            Error::InGroup { label, source } => format!("group {}: {}", namer.group(*label), source.describe(namer)),
        }
    }

    /// The argument the error concerns (`"points"`, `"weights"`, `"p"`, ...).
    pub fn argument(&self) -> &'static str {
        match self {
            Error::NonFiniteCoordinate { argument, .. }
            | Error::OutOfRange { argument, .. }
            | Error::InvalidWeight { argument, .. }
            | Error::NonFiniteValue { argument, .. }
            | Error::AllWeightsZero { argument }
            | Error::LengthMismatch { argument, .. }
            | Error::TooFewPoints { argument, .. }
            | Error::Degenerate { argument, .. }
            | Error::RepeatedPoint { argument, .. }
            | Error::TwoCapacities { argument, .. }
            | Error::LostCell { argument, .. }
            | Error::InvalidCost { argument, .. }
            | Error::InvalidEdge { argument, .. }
            | Error::BeyondGap { argument, .. }
            | Error::OutsideRegion { argument, .. }
            | Error::NoCandidate { argument, .. } => argument,
            Error::Uncoverable { .. } => "points",
            Error::WeightedOverflow { coordinates: None, .. } => "costs",
            Error::WeightedOverflow { coordinates: Some(_), .. } => "points",
            Error::Shortfall { .. } => "capacities",
            Error::InvalidParameter { name, .. } => name,
            Error::InGroup { source, .. } => source.argument(),
        }
    }

    /// The input row the error concerns, when it concerns one.
    pub fn row(&self) -> Option<usize> {
        match self {
            Error::NonFiniteCoordinate { index, .. }
            | Error::OutOfRange { index, .. }
            | Error::InvalidWeight { index, .. }
            | Error::NonFiniteValue { index, .. } => Some(*index),
            Error::RepeatedPoint { row, .. }
            | Error::TwoCapacities { row, .. }
            | Error::LostCell { row, .. }
            | Error::InvalidCost { row, .. }
            | Error::Uncoverable { row, .. }
            | Error::InvalidEdge { row, .. }
            | Error::BeyondGap { row, .. }
            | Error::OutsideRegion { row, .. }
            | Error::NoCandidate { row, .. } => Some(*row),
            Error::InGroup { source, .. } => source.row(),
            _ => None,
        }
    }

    /// The label of the group the error happened in, when it happened in one.
    pub fn group(&self) -> Option<i64> {
        match self {
            Error::InGroup { label, .. } => Some(*label),
            _ => None,
        }
    }

    /// This error as raised on straight-line costs from coordinates, the candidates given as
    /// the argument `candidates` (`"candidates"`, `"sites"`): an uncoverable point names
    /// its nearest candidate's row and distance, and the overflow refusal names the
    /// coordinates, instead of a cost matrix's column and cost. Other errors come back
    /// unchanged.
    pub fn on_coordinates(self, candidates: &'static str) -> Error {
        match self {
            Error::Uncoverable { row, radius, column, cost, .. } => {
                Error::Uncoverable { row, radius, column, cost, coordinates: Some(candidates) }
            }
            Error::WeightedOverflow { largest, weight, summed, limit, .. } => {
                Error::WeightedOverflow { largest, weight, summed, limit, coordinates: Some(candidates) }
            }
            Error::InGroup { label, source } => {
                Error::InGroup { label, source: Box::new(source.on_coordinates(candidates)) }
            }
            other => other,
        }
    }

    /// Map row positions within a group's own points to rows of the whole input:
    /// `members[k]` is the input row of the group's `k`-th point.
    pub fn rows_from(self, members: &[usize]) -> Error {
        let map = |k: usize| members.get(k).copied().unwrap_or(k);
        match self {
            Error::NonFiniteCoordinate { argument, index, value } => {
                Error::NonFiniteCoordinate { argument, index: map(index), value }
            }
            Error::InvalidWeight { argument, index, value } => {
                Error::InvalidWeight { argument, index: map(index), value }
            }
            Error::NonFiniteValue { argument, index, value } => {
                Error::NonFiniteValue { argument, index: map(index), value }
            }
            Error::OutOfRange { argument, index, axis, value, limit } => {
                Error::OutOfRange { argument, index: map(index), axis, value, limit }
            }
            Error::RepeatedPoint { argument, row, first } => {
                Error::RepeatedPoint { argument, row: map(row), first: map(first) }
            }
            Error::LostCell { argument, row, nearest, reach } => {
                Error::LostCell { argument, row: map(row), nearest, reach }
            }
            Error::InGroup { label, source } => Error::InGroup { label, source: Box::new(source.rows_from(members)) },
            other => other,
        }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.describe(&Positions))
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
        assert_eq!(e.to_string(), "weights must be finite and >= 0; weights[3] = -1");
        let e = Error::RepeatedPoint { argument: "sites", row: 1, first: 0 }.in_group(2).rows_from(&[4, 9]);
        assert_eq!(e.to_string(), "group 2: sites: sites[9] repeats sites[4]; every site needs its own location");
        assert_eq!((e.group(), e.row(), e.argument()), (Some(2), Some(9), "sites"));
        let e = Error::Degenerate { argument: "points", reason: "all points are collinear".into() }.in_group(4);
        assert_eq!(e.to_string(), "group 4: points: all points are collinear");
        assert!(e.is_degenerate());
    }

    #[test]
    fn refusals_on_coordinates_name_rows_and_distances_not_columns_and_costs() {
        let e = Error::Uncoverable { row: 2, radius: 1.0, column: 1, cost: 6.5, coordinates: None };
        assert_eq!(
            e.to_string(),
            "radius: points[2] has no candidate within radius 1; its cheapest candidate, column 1, costs 6.5"
        );
        let e = e.on_coordinates("candidates");
        assert_eq!(
            e.to_string(),
            "radius: points[2] has no candidate within radius 1; its nearest candidate, candidates[1], lies at \
             distance 6.5"
        );
        assert_eq!((e.argument(), e.row()), ("points", Some(2)));
        let e =
            Error::WeightedOverflow { largest: 1e306, weight: 3.0, summed: true, limit: 2.5e306, coordinates: None };
        assert!(e.to_string().starts_with("costs: the largest cost (1e306) times the total weight (3e0) exceeds"));
        assert_eq!(e.argument(), "costs");
        let e = e.on_coordinates("candidates").in_group(3);
        assert!(
            e.to_string().starts_with(
                "group 3: points, candidates: distances between points and candidates of at most 1e306 times the \
                 total weight (3e0) exceed 2.500e306"
            ),
            "{e}"
        );
        assert!(e.to_string().contains("rescale the coordinates of points and candidates"), "{e}");
        assert_eq!(e.argument(), "points");
    }

    /// A caller that knows the units of lengths (km) and costs (min).
    struct InKilometres;
    impl Namer for InKilometres {
        fn row(&self, _argument: &str, row: usize) -> String {
            row.to_string()
        }
        fn group(&self, label: i64) -> String {
            label.to_string()
        }
        fn length(&self, number: String) -> String {
            format!("{number} km")
        }
        fn cost(&self, number: String) -> String {
            format!("{number} min")
        }
    }

    #[test]
    fn lengths_and_costs_carry_the_callers_units_and_nothing_else_does() {
        let e = Error::Uncoverable { row: 2, radius: 1.0, column: 1, cost: 6.5, coordinates: None };
        assert_eq!(
            e.describe(&InKilometres),
            "radius: points[2] has no candidate within radius 1 min; its cheapest candidate, column 1, costs 6.5 min"
        );
        let e = e.on_coordinates("candidates").in_group(3);
        assert_eq!(
            e.describe(&InKilometres),
            "group 3: radius: points[2] has no candidate within radius 1 km; its nearest candidate, candidates[1], \
             lies at distance 6.5 km"
        );
        let e = Error::BeyondGap { argument: "sites", row: 4, gap: 120.5, max_gap: 50.0 };
        assert_eq!(
            e.describe(&InKilometres),
            "sites[4] lies 120.5 km from the nearest edge, farther than max_gap = 50 km"
        );
        let e = Error::LostCell { argument: "sites", row: 0, nearest: 2e-9, reach: 3e-9 };
        assert!(e.describe(&InKilometres).contains("lies 2.000e-9 km away, about the 3.000e-9 km to which"), "{e}");
        let e =
            Error::WeightedOverflow { largest: 1e306, weight: 3.0, summed: true, limit: 2.5e306, coordinates: None };
        assert!(e
            .describe(&InKilometres)
            .starts_with("costs: the largest cost (1e306 min) times the total weight (3e0)"));
        let e = e.on_coordinates("candidates");
        assert!(e.describe(&InKilometres).contains("candidates of at most 1e306 km times the total weight"), "{e}");
        // Weights, counts and positions are not lengths: they stay bare.
        let e = Error::InvalidWeight { argument: "weights", index: 3, value: -1.0 };
        assert_eq!(e.describe(&InKilometres), e.to_string());
    }
}
