//! Exact weighted Fermat–Weber point under the Manhattan (L1) distance.
//!
//! The L1 objective separates by axis, `Σ wᵢ|x − aᵢₓ| + Σ wᵢ|y − aᵢᵧ|`, and each term is
//! minimised exactly by a weighted median of that coordinate (a classical fact; see
//! Francis, McGinnis and White, "Facility Layout and Location", 1992, ch. 4). When the
//! set of weighted medians is an interval, its midpoint is returned, so the answer does not
//! depend on input order.

use rayon::prelude::*;

use super::WeberPoint;
use crate::geometry::{CompensatedSum, Point, Weights};

/// Solve exactly. Inputs are already validated.
pub(crate) fn solve(points: &[Point], weights: Weights<'_>) -> WeberPoint {
    let x = weighted_median(points, weights, 0);
    let y = weighted_median(points, weights, 1);
    let mut cost = CompensatedSum::default();
    for (i, p) in points.iter().enumerate() {
        cost.add(weights.get(i) * ((p[0] - x).abs() + (p[1] - y).abs()));
    }
    WeberPoint { location: [x, y], cost: cost.total(), gap: 0.0, iterations: 1, converged: true }
}

/// Midpoint of the interval of weighted medians of coordinate `axis`.
pub fn weighted_median(points: &[Point], weights: Weights<'_>, axis: usize) -> f64 {
    let mut items: Vec<(f64, f64)> =
        (0..points.len()).map(|i| (points[i][axis], weights.get(i))).filter(|&(_, w)| w > 0.0).collect();
    if items.len() > 50_000 {
        items.par_sort_unstable_by(|a, b| a.0.total_cmp(&b.0));
    } else {
        items.sort_unstable_by(|a, b| a.0.total_cmp(&b.0));
    }
    let mut total = CompensatedSum::default();
    for &(_, w) in &items {
        total.add(w);
    }
    let half = 0.5 * total.total();
    let mut below = CompensatedSum::default();
    for (k, &(value, w)) in items.iter().enumerate() {
        below.add(w);
        let cumulative = below.total();
        if cumulative > half {
            return value;
        }
        if cumulative == half {
            // Exactly half the weight lies at or below `value`: every point up to the next
            // distinct value is optimal.
            let next = items[k + 1..].iter().map(|&(v, _)| v).find(|&v| v > value).unwrap_or(value);
            return 0.5 * (value + next);
        }
    }
    items.last().map_or(0.0, |&(v, _)| v)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn brute_force_axis(values: &[f64], weights: &[f64]) -> f64 {
        // The optimum of a piecewise-linear convex function lies at a breakpoint.
        values
            .iter()
            .map(|&c| values.iter().zip(weights).map(|(&v, &w)| w * (v - c).abs()).sum::<f64>())
            .fold(f64::INFINITY, f64::min)
    }

    #[test]
    fn equals_brute_force_over_breakpoints() {
        let pts: Vec<Point> = (0..37).map(|i| [((i * 7919) % 101) as f64, ((i * 104729) % 97) as f64]).collect();
        let w: Vec<f64> = (0..37).map(|i| 1.0 + (i % 5) as f64).collect();
        let r = solve(&pts, Weights::Given(&w));
        let xs: Vec<f64> = pts.iter().map(|p| p[0]).collect();
        let ys: Vec<f64> = pts.iter().map(|p| p[1]).collect();
        let expected = brute_force_axis(&xs, &w) + brute_force_axis(&ys, &w);
        assert!((r.cost - expected).abs() <= 1e-12 * expected);
    }

    #[test]
    fn even_split_gives_midpoint() {
        let pts = [[0.0, 0.0], [10.0, 4.0]];
        let r = solve(&pts, Weights::Unit);
        assert_eq!(r.location, [5.0, 2.0]);
        assert_eq!(r.cost, 14.0);
    }
}
