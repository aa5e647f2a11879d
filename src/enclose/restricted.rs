//! The weighted minimax point restricted to a feasible region (a closed polygon with holes).
//!
//! `f(x) = maxᵢ wᵢ‖x − aᵢ‖` is convex, so (Hamacher and Nickel 1995; Drezner and
//! Wesolowsky's restricted minimax location): the free optimum when the region holds it,
//! otherwise the best point of the region's boundary, found edge by edge
//! ([`minimise_on_boundary`]). An edge is ruled out by `max over the free support of
//! wᵢ · dist(aᵢ, edge)` (the maximum over a subset of the points, each minimised on its own,
//! bounds the minimum of the maximum), by each grid cell's least weight times the edge's
//! distance to the cell's points ([`DemandCells`]), and by the free radius.
//!
//! Certificate: as for the restricted Fermat–Weber point — when the boundary's proven lower
//! bound exceeds the free radius, the free optimum cannot lie in the region and that bound
//! bounds the restricted problem; otherwise the free radius (exact up to rounding) does.

use rayon::prelude::*;

use super::{minimax_point, MinimaxPoint};
use crate::batch::{run_grouped, Grouped, OnGroupError};
use crate::error::Result;
use crate::geometry::region::search::{minimise_on_boundary, ConvexObjective, DemandCells, Slope};
use crate::geometry::region::{segment_distance, FeasibleRegion};
use crate::geometry::{distance, dot, norm, sub, Point, Weights};

/// Relative tolerance of the boundary search (the free problem is solved exactly).
const TOL: f64 = 1e-12;
/// Terms within this relative margin of the maximum count as active in a derivative.
const ACTIVE_MARGIN: f64 = 1e-13;
/// Support rows: weighted distance within this relative margin of the radius.
const SUPPORT_MARGIN: f64 = 1e-9;

/// A weighted minimax point restricted to a region, with its certificate.
#[derive(Debug, Clone, PartialEq)]
pub struct RegionMinimaxPoint {
    /// The restricted optimum (in the region by the exact test): `radius` is the largest
    /// weighted distance from it, `support` the rows within a relative 1e-9 of it.
    pub point: MinimaxPoint,
    /// A proven bound on `radius −` the restricted optimum (0 when the free optimum is
    /// feasible).
    pub gap: f64,
    /// The free optimum.
    pub free: MinimaxPoint,
    /// True when the free optimum lies outside the region, so the region moved the site.
    pub active: bool,
    /// True when some demand point of positive weight lies in the region.
    pub holds_demand: bool,
    /// Boundary edges minimised exactly (the others were ruled out by their bound).
    pub edges_searched: usize,
}

/// `maxᵢ wᵢ‖x − aᵢ‖` as seen along a direction.
struct MinimaxObjective<'a> {
    points: &'a [Point],
    weights: Weights<'a>,
    /// `(point, weight)` of the free support, for the edge bound.
    support: Vec<(Point, f64)>,
    free_radius: f64,
    /// The demand on a grid, for the second edge bound.
    cells: DemandCells,
}

impl<'a> MinimaxObjective<'a> {
    fn new(points: &'a [Point], weights: Weights<'a>, free: &MinimaxPoint) -> Self {
        let support = free.support.iter().map(|&i| (points[i], weights.get(i))).collect();
        MinimaxObjective {
            points,
            weights,
            support,
            free_radius: free.radius,
            cells: DemandCells::new(points, |i| weights.get(i)),
        }
    }

    /// The largest weighted distance from `x`.
    fn value(&self, x: Point) -> f64 {
        (0..self.points.len())
            .into_par_iter()
            .with_min_len(4096)
            .map(|i| self.weights.get(i) * distance(self.points[i], x))
            .reduce(|| 0.0, f64::max)
    }
}

impl ConvexObjective for MinimaxObjective<'_> {
    fn slope(&self, x: Point, u: Point) -> Slope {
        let value = self.value(x);
        let floor = value * (1.0 - ACTIVE_MARGIN);
        let (left, right) = (0..self.points.len())
            .into_par_iter()
            .with_min_len(4096)
            .filter_map(|i| {
                let w = self.weights.get(i);
                let delta = sub(x, self.points[i]);
                let d = norm(delta);
                if w <= 0.0 || w * d < floor {
                    return None;
                }
                Some(if d == 0.0 {
                    (-w * norm(u), w * norm(u))
                } else {
                    (w * dot(delta, u) / d, w * dot(delta, u) / d)
                })
            })
            .reduce(|| (f64::INFINITY, f64::NEG_INFINITY), |a, b| (a.0.min(b.0), a.1.max(b.1)));
        if left > right {
            // No positive weight: a constant objective.
            return Slope { value, left: 0.0, right: 0.0 };
        }
        Slope { value, left, right }
    }

    fn subgradient(&self, x: Point) -> (f64, Point) {
        // The gradient of one term attaining the maximum is a subgradient of the maximum.
        let (value, i) = (0..self.points.len())
            .into_par_iter()
            .with_min_len(4096)
            .map(|i| (self.weights.get(i) * distance(self.points[i], x), i))
            .reduce(
                || (f64::NEG_INFINITY, usize::MAX),
                |a, b| if b.0 > a.0 || (b.0 == a.0 && b.1 < a.1) { b } else { a },
            );
        let delta = sub(x, self.points[i]);
        let d = norm(delta);
        if !(d > 0.0) {
            return (value.max(0.0), [0.0, 0.0]);
        }
        let w = self.weights.get(i);
        (value, [w * delta[0] / d, w * delta[1] / d])
    }

    fn segment_bound(&self, s: [Point; 2]) -> f64 {
        let bound = self.support.iter().map(|&(p, w)| w * segment_distance(s, p)).fold(self.free_radius, f64::max);
        bound.max(self.cells.max_bound(s)) * (1.0 - 1e-9)
    }
}

/// The weighted minimax point of `points` restricted to `region` (boundary included).
///
/// # Errors
/// Those of [`minimax_point`].
///
/// # Runtime
/// The free problem; when the region does not hold its optimum, O(1) per boundary edge for
/// the bounds and O(n) per evaluation on the edges not ruled out.
pub fn minimax_point_in_region(
    points: &[Point],
    weights: Weights<'_>,
    region: &FeasibleRegion,
) -> Result<RegionMinimaxPoint> {
    let free = minimax_point(points, weights)?;
    let holds_demand = (0..points.len()).into_par_iter().any(|i| weights.get(i) > 0.0 && region.contains(points[i]));
    if region.contains(free.location) {
        return Ok(RegionMinimaxPoint {
            point: free.clone(),
            gap: 0.0,
            free,
            active: false,
            holds_demand,
            edges_searched: 0,
        });
    }
    let objective = MinimaxObjective::new(points, weights, &free);
    let found = minimise_on_boundary(region, &objective, TOL);
    let radius = objective.value(found.location);
    let lower = if found.lower > free.radius { found.lower } else { free.radius };
    let gap = (radius - lower).max(0.0) + 4.0 * f64::EPSILON * radius;
    let support: Vec<usize> = (0..points.len())
        .filter(|&i| {
            weights.get(i) > 0.0
                && weights.get(i) * distance(points[i], found.location) >= radius * (1.0 - SUPPORT_MARGIN)
        })
        .collect();
    Ok(RegionMinimaxPoint {
        point: MinimaxPoint { location: found.location, radius, support },
        gap,
        free,
        active: true,
        holds_demand,
        edges_searched: found.edges_solved,
    })
}

/// [`minimax_point_in_region`] for every group of a labelled cloud, all in the one region,
/// in parallel; support rows refer to the whole input.
///
/// # Errors
/// As [`crate::minimax_points`].
pub fn minimax_points_in_region(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    region: &FeasibleRegion,
    on_error: OnGroupError,
) -> Result<Grouped<RegionMinimaxPoint>> {
    run_grouped(points, weights, labels, on_error, |group| {
        let mut solved = minimax_point_in_region(group.points, group.weights, region)?;
        for support in [&mut solved.point.support, &mut solved.free.support] {
            for s in support.iter_mut() {
                *s = group.members[*s];
            }
            support.sort_unstable();
        }
        Ok(solved)
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_box_beside_the_demand_puts_the_centre_on_its_nearest_edge() {
        // Closed form: two points at (0, ±1); in the box [3, 5] × [-2, 2] the largest distance
        // is least at (3, 0), where it is √10.
        let pts = [[0.0, 1.0], [0.0, -1.0]];
        let r = FeasibleRegion::new(&[[3.0, -2.0], [5.0, -2.0], [5.0, 2.0], [3.0, 2.0]], &[0, 4]).unwrap();
        let got = minimax_point_in_region(&pts, Weights::Unit, &r).unwrap();
        assert!(got.active && !got.holds_demand);
        assert!((got.point.radius - 10f64.sqrt()).abs() < 1e-9, "{got:?}");
        assert!(got.point.radius - got.gap <= 10f64.sqrt() + 1e-12);
        assert_eq!(got.point.support, vec![0, 1]);
        assert!(r.contains(got.point.location));
    }

    #[test]
    fn weighted_centre_in_a_hole_goes_to_the_hole_edge_no_grid_point_beats() {
        let pts = [[0.0, 0.0], [10.0, 0.0], [5.0, 8.0], [2.0, 6.0]];
        let w = [1.0, 2.0, 1.5, 1.0];
        let free = minimax_point(&pts, Weights::Given(&w)).unwrap();
        let c = free.location;
        let hole =
            [[c[0] - 1.0, c[1] - 1.0], [c[0] - 1.0, c[1] + 1.5], [c[0] + 2.0, c[1] + 1.0], [c[0] + 1.0, c[1] - 1.0]];
        let mut v = vec![[-5.0, -5.0], [15.0, -5.0], [15.0, 15.0], [-5.0, 15.0]];
        v.extend(hole);
        let r = FeasibleRegion::new(&v, &[0, 4, 8]).unwrap();
        let got = minimax_point_in_region(&pts, Weights::Given(&w), &r).unwrap();
        assert!(got.active && r.contains(got.point.location));
        let f = |x: Point| (0..4).map(|i| w[i] * distance(pts[i], x)).fold(0.0, f64::max);
        let lower = got.point.radius - got.gap;
        for i in 0..=400 {
            for j in 0..=400 {
                let x = [-5.0 + i as f64 * 0.05, -5.0 + j as f64 * 0.05];
                if r.contains(x) {
                    assert!(f(x) >= lower * (1.0 - 1e-12), "{x:?}: {} < {lower}", f(x));
                }
            }
        }
    }
}
