//! The Fermat–Weber point restricted to a feasible region (a closed polygon with holes).
//!
//! The objective `f(x) = Σ wᵢ d(x, aᵢ)` is convex, so (Hamacher and Nickel 1995,
//! "Restricted planar location problems and applications"): when the free optimum lies in
//! the region it is the restricted optimum; otherwise the restricted optimum lies on the
//! region's boundary, found by minimising `f` along every boundary edge that its lower bound
//! does not rule out ([`minimise_on_boundary`]).
//!
//! Edge bound: with `c` the free optimum and `rᵢ = ‖c − aᵢ‖`, the triangle inequality gives
//! `‖x − aᵢ‖ ≥ |‖x − c‖ − rᵢ|`, so `f(x) ≥ φ(‖x − c‖)` with `φ(ρ) = Σ wᵢ |ρ − rᵢ|`, convex and
//! piecewise linear; over an edge, `‖x − c‖` ranges over `[dist(c, edge), max end distance]`
//! and the bound is φ's minimum there (O(log n) from prefix sums over the sorted `rᵢ`). It
//! holds for the Manhattan distance too (never shorter than the straight line). A second
//! bound sums each grid cell's weight times the edge's distance to the cell's points'
//! bounding box ([`DemandCells`]); the larger of the two is used.
//!
//! Certificate: if every boundary point costs more than `f(c)` (the boundary's proven lower
//! bound exceeds `f(c)`), the free minimiser cannot lie in the region — the segment from `c`
//! (outside) to it would cross the boundary at a point no costlier than `f(c)` — so the
//! boundary's lower bound bounds the restricted problem; otherwise the free problem's lower
//! bound does.

use rayon::prelude::*;

use super::{weber_point, Metric, WeberOptions, WeberPoint};
use crate::batch::{run_grouped, Grouped, OnGroupError};
use crate::error::Result;
use crate::geometry::region::search::{minimise_on_boundary, ConvexObjective, DemandCells, Slope};
use crate::geometry::region::{segment_distance, FeasibleRegion};
use crate::geometry::{distance, dot, norm, sub, CompensatedSum, Point, Weights};

/// Below this many points a pass runs on one thread; above, fixed chunks merged in order,
/// so the result does not depend on the number of threads.
const PARALLEL_MIN_POINTS: usize = 32_768;
const CHUNK: usize = 8_192;
/// Allowance for rounding in the certificate, in units of the unit roundoff.
const ROUNDING_ALLOWANCE: f64 = 16.0 * f64::EPSILON;

/// A Fermat–Weber point restricted to a region, with its certificate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RegionWeberPoint {
    /// The restricted optimum: `location` lies in the region (exact test), `cost` is the
    /// objective there, `gap` a proven bound on `cost −` the restricted optimum.
    pub point: WeberPoint,
    /// The free (unrestricted) optimum.
    pub free: WeberPoint,
    /// True when the free optimum lies outside the region, so the region moved the site
    /// (onto its boundary).
    pub active: bool,
    /// True when some demand point of positive weight lies in the region.
    pub holds_demand: bool,
    /// Boundary edges minimised exactly (the others were ruled out by their bound).
    pub edges_searched: usize,
}

/// The objective `Σ wᵢ d(x, aᵢ)` as seen along a direction.
struct WeberObjective<'a> {
    points: &'a [Point],
    weights: Weights<'a>,
    metric: Metric,
    /// Free optimum, and the sorted `(rᵢ, wᵢ)` with prefix sums `Σ w`, `Σ w r` for the bound.
    centre: Point,
    radii: Vec<f64>,
    prefix_w: Vec<f64>,
    prefix_wr: Vec<f64>,
    /// A proven lower bound of the free problem.
    free_lower: f64,
    /// The demand on a grid, for the second edge bound.
    cells: DemandCells,
}

impl<'a> WeberObjective<'a> {
    fn new(points: &'a [Point], weights: Weights<'a>, metric: Metric, free: &WeberPoint) -> Self {
        let centre = free.location;
        let mut pairs: Vec<(f64, f64)> = (0..points.len())
            .filter(|&i| weights.get(i) > 0.0)
            .map(|i| (distance(points[i], centre), weights.get(i)))
            .collect();
        if pairs.len() > 50_000 {
            pairs.par_sort_unstable_by(|a, b| a.0.total_cmp(&b.0));
        } else {
            pairs.sort_unstable_by(|a, b| a.0.total_cmp(&b.0));
        }
        let mut prefix_w = Vec::with_capacity(pairs.len() + 1);
        let mut prefix_wr = Vec::with_capacity(pairs.len() + 1);
        let (mut sw, mut swr) = (CompensatedSum::default(), CompensatedSum::default());
        prefix_w.push(0.0);
        prefix_wr.push(0.0);
        for &(r, w) in &pairs {
            sw.add(w);
            swr.add(w * r);
            prefix_w.push(sw.total());
            prefix_wr.push(swr.total());
        }
        WeberObjective {
            points,
            weights,
            metric,
            centre,
            radii: pairs.into_iter().map(|(r, _)| r).collect(),
            prefix_w,
            prefix_wr,
            free_lower: (free.cost - free.gap).max(0.0),
            cells: DemandCells::new(points, |i| weights.get(i)),
        }
    }

    /// `φ(ρ) = Σ wᵢ |ρ − rᵢ|`.
    fn phi(&self, rho: f64) -> f64 {
        let k = self.radii.partition_point(|&r| r < rho);
        let (w_below, wr_below) = (self.prefix_w[k], self.prefix_wr[k]);
        let (w_all, wr_all) = (*self.prefix_w.last().unwrap_or(&0.0), *self.prefix_wr.last().unwrap_or(&0.0));
        (rho * w_below - wr_below) + ((wr_all - wr_below) - rho * (w_all - w_below))
    }

    /// The ρ minimising φ: a weighted median of the radii.
    fn phi_minimiser(&self) -> f64 {
        let half = 0.5 * self.prefix_w.last().copied().unwrap_or(0.0);
        let k = self.prefix_w.partition_point(|&w| w < half);
        self.radii.get(k.saturating_sub(1)).copied().unwrap_or(0.0)
    }

    /// Value and one-sided derivatives over `points[start..]`.
    fn pass(&self, x: Point, u: Point, start: usize, chunk: &[Point]) -> (CompensatedSum, CompensatedSum, f64) {
        let (mut value, mut slope, mut kink) = (CompensatedSum::default(), CompensatedSum::default(), 0.0);
        for (offset, &p) in chunk.iter().enumerate() {
            let w = self.weights.get(start + offset);
            if w <= 0.0 {
                continue;
            }
            let delta = sub(x, p);
            match self.metric {
                Metric::Euclidean => {
                    let d = norm(delta);
                    if d == 0.0 {
                        kink += w * norm(u);
                    } else {
                        value.add(w * d);
                        slope.add(w * dot(delta, u) / d);
                    }
                }
                Metric::Manhattan => {
                    value.add(w * (delta[0].abs() + delta[1].abs()));
                    for axis in 0..2 {
                        if delta[axis] == 0.0 {
                            kink += w * u[axis].abs();
                        } else {
                            slope.add(w * delta[axis].signum() * u[axis]);
                        }
                    }
                }
            }
        }
        (value, slope, kink)
    }
}

impl ConvexObjective for WeberObjective<'_> {
    fn slope(&self, x: Point, u: Point) -> Slope {
        let (value, slope, kink) = if self.points.len() < PARALLEL_MIN_POINTS {
            self.pass(x, u, 0, self.points)
        } else {
            let parts: Vec<_> =
                self.points.par_chunks(CHUNK).enumerate().map(|(c, chunk)| self.pass(x, u, c * CHUNK, chunk)).collect();
            let (mut value, mut slope, mut kink) = (CompensatedSum::default(), CompensatedSum::default(), 0.0);
            for (v, s, k) in parts {
                value.merge(v);
                slope.merge(s);
                kink += k;
            }
            (value, slope, kink)
        };
        let (value, slope) = (value.total(), slope.total());
        Slope { value, left: slope - kink, right: slope + kink }
    }

    fn subgradient(&self, x: Point) -> (f64, Point) {
        // The smooth part's gradient is a subgradient (a data point at x adds a ball of
        // radius its weight; its centre, zero, is one choice).
        let along_x = self.slope(x, [1.0, 0.0]);
        let along_y = self.slope(x, [0.0, 1.0]);
        (along_x.value, [0.5 * (along_x.left + along_x.right), 0.5 * (along_y.left + along_y.right)])
    }

    fn segment_bound(&self, s: [Point; 2]) -> f64 {
        let near = segment_distance(s, self.centre);
        let far = distance(s[0], self.centre).max(distance(s[1], self.centre));
        // max then min rather than clamp: with overflowing coordinates the ends may be NaN.
        let rho = self.phi_minimiser().max(near).min(far);
        // Shaved by a rounding allowance so that rounding never rules out the best edge.
        (self.phi(rho).max(self.cells.sum_bound(s)) * (1.0 - 1e-9)).max(self.free_lower)
    }
}

/// The Fermat–Weber point of `points` restricted to `region` (boundary included).
///
/// A region holding none of the demand is allowed: the site then lies on its boundary, and
/// `holds_demand` says so.
///
/// # Errors
/// Those of [`weber_point`] (points, weights, options).
///
/// # Runtime
/// The free problem; when the region does not hold its optimum, one O(log n) bound per
/// boundary edge and O(n) per evaluation on the edges not ruled out (typically a handful,
/// 5–40 evaluations each), plus O(n log n) once for the bound's sort.
pub fn weber_point_in_region(
    points: &[Point],
    weights: Weights<'_>,
    region: &FeasibleRegion,
    options: &WeberOptions,
) -> Result<RegionWeberPoint> {
    let free = weber_point(points, weights, options)?;
    let holds_demand = (0..points.len()).into_par_iter().any(|i| weights.get(i) > 0.0 && region.contains(points[i]));
    if region.contains(free.location) {
        return Ok(RegionWeberPoint { point: free, free, active: false, holds_demand, edges_searched: 0 });
    }
    let objective = WeberObjective::new(points, weights, options.metric, &free);
    let found = minimise_on_boundary(region, &objective, options.tol);
    // The settled location may differ from the edge point by a few units in the last place:
    // price it again.
    let at = objective.slope(found.location, [0.0, 0.0]);
    let cost = at.value;
    let lower = if found.lower > free.cost { found.lower } else { objective.free_lower };
    let gap = (cost - lower).max(0.0) + ROUNDING_ALLOWANCE * cost;
    let converged = free.converged && gap <= options.tol * cost + 2.0 * ROUNDING_ALLOWANCE * cost;
    let point = WeberPoint {
        location: found.location,
        cost,
        gap,
        iterations: free.iterations + found.evaluations + 1,
        converged,
    };
    Ok(RegionWeberPoint { point, free, active: true, holds_demand, edges_searched: found.edges_solved })
}

/// [`weber_point_in_region`] for every group of a labelled cloud, all in the one region, in
/// parallel (see [`crate::batch`]).
///
/// # Errors
/// As [`crate::weber_points`].
pub fn weber_points_in_region(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    region: &FeasibleRegion,
    options: &WeberOptions,
    on_error: OnGroupError,
) -> Result<Grouped<RegionWeberPoint>> {
    run_grouped(points, weights, labels, on_error, |group| {
        weber_point_in_region(group.points, group.weights, region, options)
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::random::SplitMix64;

    fn region(rings: &[Vec<Point>]) -> FeasibleRegion {
        let mut offsets = vec![0];
        let vertices: Vec<Point> = rings.iter().flatten().copied().collect();
        for r in rings {
            offsets.push(offsets.last().unwrap() + r.len());
        }
        FeasibleRegion::new(&vertices, &offsets).unwrap()
    }

    fn cost(points: &[Point], x: Point) -> f64 {
        points.iter().map(|&p| distance(p, x)).sum()
    }

    fn cloud(n: usize, seed: u64) -> Vec<Point> {
        let mut rng = SplitMix64::new(seed);
        (0..n).map(|_| [rng.next_f64() * 10.0, rng.next_f64() * 10.0]).collect()
    }

    #[test]
    fn a_region_holding_the_free_optimum_changes_nothing() {
        let pts = cloud(200, 1);
        let free = weber_point(&pts, Weights::Unit, &WeberOptions::default()).unwrap();
        let r = region(&[vec![[-1.0, -1.0], [11.0, -1.0], [11.0, 11.0], [-1.0, 11.0]]]);
        let got = weber_point_in_region(&pts, Weights::Unit, &r, &WeberOptions::default()).unwrap();
        assert!(!got.active && got.holds_demand);
        assert_eq!(got.point, free);
    }

    #[test]
    fn a_box_beside_the_demand_puts_the_site_on_its_nearest_edge() {
        // Closed form: demand symmetric about y = 5 and wholly left of x = 20; in the box
        // [20, 30] × [0, 10] the cost grows with x and, on x = 20, is least at y = 5.
        let pts: Vec<Point> = (0..50)
            .flat_map(|i| [[i as f64 * 0.1, 5.0 + i as f64 * 0.05], [i as f64 * 0.1, 5.0 - i as f64 * 0.05]])
            .collect();
        let r = region(&[vec![[20.0, 0.0], [30.0, 0.0], [30.0, 10.0], [20.0, 10.0]]]);
        let got = weber_point_in_region(&pts, Weights::Unit, &r, &WeberOptions::default()).unwrap();
        assert!(got.active && !got.holds_demand);
        assert!((got.point.location[0] - 20.0).abs() < 1e-12 && (got.point.location[1] - 5.0).abs() < 1e-6, "{got:?}");
        assert!(r.contains(got.point.location));
        let exact = cost(&pts, [20.0, 5.0]);
        assert!(got.point.cost - exact <= 1e-9 * exact && exact - (got.point.cost - got.point.gap) >= -1e-9 * exact);
    }

    #[test]
    fn a_hole_over_the_free_optimum_is_beaten_by_no_grid_point() {
        // Brute force: every point of a fine grid over the region costs at least the answer's
        // lower bound.
        let pts = cloud(300, 7);
        let mut hole = vec![[3.0, 3.0], [7.0, 3.2], [6.5, 7.0], [3.5, 6.0]];
        hole.reverse();
        let r = region(&[vec![[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]], hole]);
        let got = weber_point_in_region(&pts, Weights::Unit, &r, &WeberOptions::default()).unwrap();
        assert!(got.active && got.holds_demand && r.contains(got.point.location));
        assert!(got.point.gap <= 1e-9 * got.point.cost, "{got:?}");
        let lower = got.point.cost - got.point.gap;
        for i in 0..=200 {
            for j in 0..=200 {
                let x = [i as f64 * 0.05, j as f64 * 0.05];
                if r.contains(x) {
                    assert!(cost(&pts, x) >= lower * (1.0 - 1e-12), "{x:?}");
                }
            }
        }
        // The outer square lies far from the demand's middle: its edges are ruled out by the bound.
        assert!(got.edges_searched <= 4, "{got:?}");
    }

    #[test]
    fn overflowing_coordinates_do_not_panic() {
        // Found by the hostile-input property test: distances overflow to infinity.
        let r = region(&[vec![[1.0, 1.0], [4.0, 1.0], [4.0, 2.0], [2.0, 2.0], [2.0, 4.0], [1.0, 4.0]]]);
        let pts = [[8.98846567e307, 8.98846567e307]];
        let got = weber_point_in_region(&pts, Weights::Unit, &r, &WeberOptions::default()).unwrap();
        assert!(r.contains(got.point.location));
    }
}
