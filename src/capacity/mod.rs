//! Capacities: demand served by sites that can each take only so much.
//!
//! - [`capacity_allocation`]: given sites with capacities, serve the demand at least total
//!   distance: exact as a transportation problem when a point's demand may be split, a
//!   single-source assignment with a proven gap from the split plan when it may not.
//! - [`capacity_cells`]: the powers whose power cells hold each site's capacity of demand
//!   (capacity-constrained catchments, squared-distance cost), with the plan they carry.
//! - [`capacitated_p_median`]: choose `p` sites with capacities (location–allocation).
//!
//! The exact solver for the transportation problem (successive shortest paths condensed over
//! the few sites) lives in `transport`; every model here calls it.

mod allocation;
mod cells;
mod median;
mod single_source;
mod transport;

pub use allocation::{capacity_allocation, AllocationOptions, CapacityAllocation};
pub use cells::{capacity_cells, CapacityCells, CellsOptions};
pub use median::{capacitated_p_median, CapacitatedMedian, CapacitatedMedianOptions};

use crate::error::{Error, Result};
use crate::geometry::validate::WEIGHTED_LIMIT;
use crate::geometry::{validate_points, validate_weights, BoundingBox, CompensatedSum, Point, Weights};

/// The error of a run stopped (deadline passed, or cancelled) before it had a plan meeting
/// the capacities: such a plan exists only once the transportation problem is solved, so
/// there is no answer to return.
pub(crate) fn stopped() -> Error {
    Error::InvalidParameter {
        name: "time_limit",
        reason: "the time limit passed before any plan meeting the capacities was found (a plan exists only once \
                 the transportation problem is solved); allow more time, or none"
            .into(),
    }
}

/// Check points, sites, capacities and weights; returns the total demand and capacity.
///
/// # Errors
/// Bad coordinates ([`Error::NonFiniteCoordinate`], [`Error::TooFewPoints`]); bad weights;
/// [`Error::InvalidParameter`] naming `capacities` for a wrong length;
/// [`Error::TwoCapacities`] naming `sites` and the row for a location listed twice with
/// different capacities; [`Error::InvalidWeight`] naming `capacities` for
/// a negative, NaN or infinite capacity; [`Error::WeightedOverflow`] when the demand times
/// the points' and sites' extent overflows.
pub(crate) fn validate(
    points: &[Point],
    sites: &[Point],
    capacities: &[f64],
    weights: Weights<'_>,
) -> Result<(f64, f64)> {
    validate_points("points", points, 1)?;
    validate_points("sites", sites, 1)?;
    validate_weights("weights", weights, points.len())?;
    check_capacities("sites", sites, capacities)?;
    let mut demand = CompensatedSum::default();
    (0..points.len()).for_each(|i| demand.add(weights.get(i)));
    let mut capacity = CompensatedSum::default();
    capacities.iter().for_each(|&c| capacity.add(c));
    check_weighted_distances(points, sites, demand.total())?;
    Ok((demand.total(), capacity.total()))
}

/// Check that the demand times the longest distance between any point and site (at most the
/// diagonal of their common box) stays within [`WEIGHTED_LIMIT`]: beyond it the plan's cost
/// overflows, and a NaN total with a gap of 0 would be returned as an answer. (The cells'
/// squared costs have their own frame; this bounds their plain-distance report.)
///
/// # Errors
/// [`Error::WeightedOverflow`] naming the points and sites and how to rescale.
pub(crate) fn check_weighted_distances(points: &[Point], sites: &[Point], demand: f64) -> Result<()> {
    let both = BoundingBox::of(points).into_iter().chain(BoundingBox::of(sites)).flat_map(|b| [b.min, b.max]);
    let corners: Vec<Point> = both.collect();
    let largest = BoundingBox::of(&corners).map_or(0.0, |b| b.diagonal());
    // Written so that a NaN product (0 × inf) is refused too.
    if !(largest * demand <= WEIGHTED_LIMIT) {
        return Err(Error::WeightedOverflow {
            largest,
            weight: demand,
            summed: true,
            limit: WEIGHTED_LIMIT,
            coordinates: Some("sites"),
        });
    }
    Ok(())
}

/// One finite capacity ≥ 0 per site, and one capacity per location; `argument` names the
/// locations (`"sites"` or `"candidates"`).
pub(crate) fn check_capacities(argument: &'static str, sites: &[Point], capacities: &[f64]) -> Result<()> {
    if capacities.len() != sites.len() {
        return Err(Error::InvalidParameter {
            name: "capacities",
            reason: format!("capacities must have one entry per site ({}); got {}", sites.len(), capacities.len()),
        });
    }
    check_capacity_values(capacities)?;
    let mut order: Vec<usize> = (0..sites.len()).collect();
    order.sort_by(|&a, &b| {
        sites[a][0].total_cmp(&sites[b][0]).then(sites[a][1].total_cmp(&sites[b][1])).then(a.cmp(&b))
    });
    for w in order.windows(2) {
        let (a, b) = (w[0], w[1]);
        if sites[a] == sites[b] && capacities[a] != capacities[b] {
            return Err(Error::TwoCapacities {
                argument,
                row: b,
                first: a,
                capacities: (capacities[a], capacities[b]),
            });
        }
    }
    Ok(())
}

/// Every capacity finite and ≥ 0.
pub(crate) fn check_capacity_values(capacities: &[f64]) -> Result<()> {
    match capacities.iter().position(|c| !c.is_finite() || *c < 0.0) {
        Some(index) => Err(Error::InvalidWeight { argument: "capacities", index, value: capacities[index] }),
        None => Ok(()),
    }
}

/// Refuse a shortfall unless unserved demand is allowed; returns the shortfall (≥ 0).
///
/// Totals that agree to a few ulps count as equal (rounding of the sums): a looser rule
/// (1e-12 relative, say) lets a shortfall of whole units beside a total near 1e15 pass as
/// none, and the plan then overfills the sites.
pub(crate) fn shortfall(demand: f64, capacity: f64, allow_unserved: bool) -> Result<f64> {
    let short = demand - capacity;
    if short <= transport::SITE_ROUNDING * demand {
        return Ok(0.0);
    }
    if allow_unserved {
        Ok(short)
    } else {
        Err(Error::Shortfall { demand, capacity, may_leave_unserved: true })
    }
}

/// Refuse a shortfall in a model that must serve all the demand (it has no option to leave
/// any unserved, so the advice does not offer one).
pub(crate) fn serve_all(demand: f64, capacity: f64) -> Result<()> {
    shortfall(demand, capacity, false).map(|_| ()).map_err(|e| match e {
        Error::Shortfall { demand, capacity, .. } => Error::Shortfall { demand, capacity, may_leave_unserved: false },
        other => other,
    })
}

/// Euclidean distance as `√(dx² + dy²)`, falling back to `hypot` only when the squares
/// overflow or fall below the normal range (coordinates near 1e-160 and smaller, where the
/// squares round to subnormals or 0 and every distance there would read as equal): the
/// solver evaluates it `n·m` times, and `hypot`'s care costs a third of it.
#[inline]
pub(crate) fn plain_distance(a: Point, b: Point) -> f64 {
    let (dx, dy) = (a[0] - b[0], a[1] - b[1]);
    let s = dx * dx + dy * dy;
    if s.is_finite() && (s >= f64::MIN_POSITIVE || s == 0.0 && dx == 0.0 && dy == 0.0) {
        s.sqrt()
    } else {
        dx.hypot(dy)
    }
}

/// `(upper − lower) / upper`, 0 when both are 0.
pub(crate) fn relative_gap(upper: f64, lower: f64) -> f64 {
    if upper > 0.0 {
        ((upper - lower) / upper).max(0.0)
    } else {
        0.0
    }
}
