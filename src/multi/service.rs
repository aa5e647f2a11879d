//! How a plan's sites serve the demand: the nearest-site allocation with its per-point
//! distances, per-site totals and the objectives of both problems.
//!
//! Computed once, by the kernel, for every plan: the binding and the Python layers read it
//! and never recompute a distance or a load.

use crate::error::Result;
use crate::geometry::{CompensatedSum, Point, Weights};
use crate::partition::{allocate, SiteIndex};

/// Every point's nearest site and what each site serves.
#[derive(Debug, Clone, PartialEq)]
pub struct Service {
    /// `assignment[i]`: the site nearest to point `i` (the smallest site index among equally
    /// near ones).
    pub assignment: Vec<usize>,
    /// `distance[i]`: Euclidean distance from point `i` to its site.
    pub distance: Vec<f64>,
    /// `load[j]`: summed weight of the points assigned to site `j`.
    pub load: Vec<f64>,
    /// `count[j]`: number of points assigned to site `j` (weight zero included).
    pub count: Vec<usize>,
    /// The p-median objective `Σ wᵢ · distance[i]` (compensated sum in point order).
    pub cost: f64,
    /// The p-center objective `maxᵢ wᵢ · distance[i]`.
    pub weighted_radius: f64,
    /// `maxᵢ distance[i]`: every point lies within this distance of its site.
    pub radius: f64,
    /// `Σ wᵢ`, the demand served (compensated sum in point order).
    pub total_load: f64,
}

impl Service {
    /// The service of `points` (validated, with validated `weights`) by `sites`.
    ///
    /// # Errors
    /// [`crate::Error::NonFiniteCoordinate`] or [`crate::Error::TooFewPoints`] for bad `sites`.
    ///
    /// # Runtime
    /// O(n log m) for n points and m sites (see [`crate::partition::allocate`]).
    pub(crate) fn of(points: &[Point], weights: Weights<'_>, sites: &[Point]) -> Result<Service> {
        let allocation = allocate(points, &SiteIndex::new(sites)?, weights);
        let mut count = vec![0usize; sites.len()];
        let (mut weighted_radius, mut radius) = (0.0f64, 0.0f64);
        let mut total_load = CompensatedSum::default();
        for (i, (&j, &d)) in allocation.index.iter().zip(&allocation.distance).enumerate() {
            let w = weights.get(i);
            count[j] += 1;
            weighted_radius = weighted_radius.max(w * d);
            radius = radius.max(d);
            total_load.add(w);
        }
        Ok(Service {
            assignment: allocation.index,
            distance: allocation.distance,
            load: allocation.load,
            count,
            cost: allocation.cost,
            weighted_radius,
            radius,
            total_load: total_load.total(),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn totals_of_a_hand_checked_plan() {
        // Sites at 0 and 10 on a line; points at 1, 2 (to site 0) and 7 (to site 1).
        let pts = [[1.0, 0.0], [2.0, 0.0], [7.0, 0.0]];
        let w = [2.0, 1.0, 0.5];
        let s = Service::of(&pts, Weights::Given(&w), &[[0.0, 0.0], [10.0, 0.0]]).unwrap();
        assert_eq!(s.assignment, vec![0, 0, 1]);
        assert_eq!(s.distance, vec![1.0, 2.0, 3.0]);
        assert_eq!((s.load, s.count), (vec![3.0, 0.5], vec![2, 1]));
        assert_eq!((s.cost, s.weighted_radius, s.radius, s.total_load), (5.5, 2.0, 3.0, 3.5));
    }
}
