//! Euclidean Fermat–Weber point: Weiszfeld's iteration, made safe and fast.
//!
//! - Weiszfeld (1937): `T(x) = Σ (wᵢ/dᵢ) aᵢ / Σ (wᵢ/dᵢ)`, a descent step for the convex
//!   objective `f(x) = Σ wᵢ‖x − aᵢ‖` (Kuhn 1973 proved `f(T(x)) ≤ f(x)`).
//! - Vardi and Zhang (2001), "A comparison of the Weiszfeld algorithm and the modified
//!   Weiszfeld algorithm": at an iterate that coincides with data point(s) of total weight
//!   `η`, `T(x) = (1 − η/r) T̃(x) + (η/r) x` with `r = ‖R̃(x)‖` the resultant of the other
//!   points, so the iteration neither divides by zero nor stalls there.
//! - Kuhn (1973): a data point `aₖ` is optimal iff `‖R̃(aₖ)‖ ≤ wₖ`; iterates that approach a
//!   data point test it directly rather than creep towards it.
//! - Safeguarded Newton steps on the smooth part (Hessian `Σ wᵢ/dᵢ (I − uᵢuᵢᵀ)`) give
//!   quadratic convergence away from data points; a step is kept only if it makes progress.
//!
//! # Certificate
//! With `g` the minimal-norm subgradient at `x` and `y*` an optimum,
//! convexity gives `f(y*) ≥ f(x) − ‖g‖·‖y* − x‖`. The optimum lies in the convex hull of the
//! points, so `‖y* − x‖ ≤ maxᵢ‖x − aᵢ‖`; and `f(y) ≥ W‖y − x‖ − f(x)` with `f(y*) ≤ f(x)`
//! gives `‖y* − x‖ ≤ 2f(x)/W`. Hence `gap = ‖g‖·min(maxᵢ dᵢ, 2f/W)`, plus an allowance for
//! rounding in the (compensated) sums.
//!
//! All arithmetic is relative to the centre of the points' bounding box, so projected
//! coordinates such as (500 000, 6 000 000) keep full precision.

use rayon::prelude::*;

use super::sums::WeberSums;
use super::WeberPoint;
use crate::geometry::{add, norm, sub, BoundingBox, CompensatedSum, Point, Weights};

/// Below this many points a pass runs on one thread.
const PARALLEL_MIN_POINTS: usize = 32_768;
/// Fixed chunk size of a parallel pass; partial sums are merged in chunk order, so the
/// result does not depend on the number of threads.
const CHUNK: usize = 8_192;
/// Allowance for rounding in the certificate, in units of the unit roundoff.
const ROUNDING_ALLOWANCE: f64 = 8.0 * f64::EPSILON;

/// Everything one pass over the points yields at a trial location `x` (local frame): the
/// shared sums, with the planar gradient Σ_{aᵢ≠x} wᵢ (x − aᵢ)/dᵢ and Hessian
/// Σ wᵢ/dᵢ (I − uᵢuᵢᵀ), and the Weiszfeld sum Σ wᵢ aᵢ/dᵢ over aᵢ ≠ x.
#[derive(Debug, Clone, Copy)]
struct Pass {
    sums: WeberSums,
    inv_a: Point,
}

impl Pass {
    fn empty() -> Pass {
        Pass { sums: WeberSums::empty(), inv_a: [0.0, 0.0] }
    }

    fn merge(&mut self, other: &Pass) {
        self.sums.merge(&other.sums);
        self.inv_a = add(self.inv_a, other.inv_a);
    }
}

/// The problem in the local frame.
struct Problem<'a> {
    points: &'a [Point],
    weights: Weights<'a>,
    origin: Point,
    total_weight: f64,
    /// True when the points' extent is small enough that `dx² + dy²` cannot overflow, so
    /// the plain square root can replace the slower `hypot`.
    squares_are_safe: bool,
}

impl Problem<'_> {
    fn local(&self, i: usize) -> Point {
        sub(self.points[i], self.origin)
    }

    fn pass_over(&self, x: Point, start: usize, points: &[Point]) -> Pass {
        let mut pass = Pass::empty();
        for (offset, &p) in points.iter().enumerate() {
            let i = start + offset;
            let w = self.weights.get(i);
            if w <= 0.0 {
                continue;
            }
            let a = sub(p, self.origin);
            let delta = sub(x, a);
            let d =
                if self.squares_are_safe { (delta[0] * delta[0] + delta[1] * delta[1]).sqrt() } else { norm(delta) };
            if d == 0.0 {
                pass.sums.eta += w;
                continue;
            }
            let inv_d = 1.0 / d;
            let wd = w * inv_d;
            let u = [delta[0] * inv_d, delta[1] * inv_d];
            pass.sums.add_point(i, w, d, u, wd, wd);
            pass.inv_a[0] += wd * a[0];
            pass.inv_a[1] += wd * a[1];
        }
        pass
    }

    fn evaluate(&self, x: Point) -> Pass {
        if self.points.len() < PARALLEL_MIN_POINTS {
            return self.pass_over(x, 0, self.points);
        }
        let partials: Vec<Pass> =
            self.points.par_chunks(CHUNK).enumerate().map(|(c, chunk)| self.pass_over(x, c * CHUNK, chunk)).collect();
        let mut total = Pass::empty();
        for partial in &partials {
            total.merge(partial);
        }
        total
    }

    /// Proven bound on `cost − optimum` at the pass's location.
    fn gap(&self, pass: &Pass) -> f64 {
        let cost = pass.sums.cost();
        let radius = pass.sums.max_dist.min(2.0 * cost / self.total_weight);
        pass.sums.subgradient_norm() * radius + ROUNDING_ALLOWANCE * (cost + self.total_weight * radius)
    }
}

/// True when `new` makes progress over `old`: a lower cost, or — once cost differences
/// are below rounding, near the optimum — a cost no higher than rounding allows and a
/// smaller subgradient.
fn progresses(new: &Pass, old: &Pass) -> bool {
    let (c_new, c_old) = (new.sums.cost(), old.sums.cost());
    c_new < c_old
        || (c_new <= c_old * (1.0 + ROUNDING_ALLOWANCE) && new.sums.subgradient_norm() < old.sums.subgradient_norm())
}

/// Newton step on the smooth part, when the Hessian is safely positive definite and the
/// step stays within the points' extent.
fn newton_step(x: Point, pass: &Pass) -> Option<Point> {
    let [hxx, hxy, hyy] = pass.sums.hess;
    let det = hxx * hyy - hxy * hxy;
    let trace = hxx + hyy;
    if !(det > 1e-12 * trace * trace) {
        return None;
    }
    let g = pass.sums.gradient();
    let step = [-(hyy * g[0] - hxy * g[1]) / det, -(hxx * g[1] - hxy * g[0]) / det];
    (norm(step) <= pass.sums.max_dist && step[0].is_finite() && step[1].is_finite()).then(|| add(x, step))
}

/// Weiszfeld's map, with the Vardi–Zhang correction when `x` is a data point.
fn weiszfeld_step(x: Point, pass: &Pass) -> Point {
    let t = [pass.inv_a[0] / pass.sums.inv, pass.inv_a[1] / pass.sums.inv];
    if pass.sums.eta == 0.0 {
        return t;
    }
    let r = norm(pass.sums.gradient());
    let keep = (pass.sums.eta / r).min(1.0);
    [(1.0 - keep) * t[0] + keep * x[0], (1.0 - keep) * t[1] + keep * x[1]]
}

/// Kuhn's test, estimated from a pass near data point `k`: removing `k`'s own term from the
/// gradient approximates the resultant of the others at `aₖ`.
fn data_point_looks_optimal(problem: &Problem<'_>, x: Point, pass: &Pass) -> bool {
    let k = pass.sums.nearest;
    if k == usize::MAX {
        return false;
    }
    let wk = problem.weights.get(k);
    let delta = sub(x, problem.local(k));
    let d = norm(delta);
    let g = pass.sums.gradient();
    let others = [g[0] - wk * delta[0] / d, g[1] - wk * delta[1] / d];
    norm(others) <= 1.01 * wk || d <= 1e-9 * pass.sums.max_dist
}

/// Solve. Inputs are validated; at least one weight is positive.
pub(crate) fn solve(points: &[Point], weights: Weights<'_>, tol: f64, max_iter: usize) -> WeberPoint {
    solve_from(points, weights, tol, max_iter, None)
}

/// [`solve`] from `start` (world coordinates) instead of the weighted mean. Every step is
/// a descent step and the certificate holds at any iterate, so the answer meets the same
/// tolerance; from a start near the optimum (a site in Cooper's alternation whose cluster
/// changed a little) it takes far fewer passes.
pub(crate) fn solve_from(
    points: &[Point],
    weights: Weights<'_>,
    tol: f64,
    max_iter: usize,
    start: Option<Point>,
) -> WeberPoint {
    let bbox = BoundingBox::of(points).expect("validated: at least one point");
    let origin = bbox.center();
    let mut total = CompensatedSum::default();
    let mut heaviest = 0;
    for i in 0..points.len() {
        total.add(weights.get(i));
        if weights.get(i) > weights.get(heaviest) {
            heaviest = i;
        }
    }
    let problem =
        Problem { points, weights, origin, total_weight: total.total(), squares_are_safe: bbox.diagonal() < 1e150 };
    let finish = |x: Point, pass: &Pass, iterations: usize, converged: bool| WeberPoint {
        location: add(x, origin),
        cost: pass.sums.cost(),
        gap: problem.gap(pass),
        iterations,
        converged,
    };

    // Majority theorem (Witzgall 1964): a point with at least half the total weight is optimal.
    let w_max = weights.get(heaviest);
    if w_max >= problem.total_weight - w_max {
        let x = problem.local(heaviest);
        return finish(x, &problem.evaluate(x), 1, true);
    }

    let mut x = match start.map(|s| sub(s, origin)) {
        Some(s) if s[0].is_finite() && s[1].is_finite() => s,
        _ => {
            // Start at the weighted mean (inside the convex hull).
            let mut mean = [CompensatedSum::default(), CompensatedSum::default()];
            for i in 0..points.len() {
                let a = problem.local(i);
                mean[0].add(weights.get(i) * a[0]);
                mean[1].add(weights.get(i) * a[1]);
            }
            [mean[0].total() / problem.total_weight, mean[1].total() / problem.total_weight]
        }
    };
    let mut current = problem.evaluate(x);
    let mut evaluations = 1;
    // Data point last tested with Kuhn's test, and how far the iterate was from it then.
    let mut last_tested: Option<(usize, f64)> = None;

    loop {
        if problem.gap(&current) <= tol * current.sums.cost() || current.sums.cost() == 0.0 {
            return finish(x, &current, evaluations, true);
        }
        if evaluations >= max_iter {
            return finish(x, &current, evaluations, false);
        }
        // Near a data point that may be optimal: test it exactly (Kuhn 1973).
        if current.sums.eta == 0.0 && data_point_looks_optimal(&problem, x, &current) {
            let k = current.sums.nearest;
            let retry = match last_tested {
                Some((j, d)) => j != k || current.sums.nearest_dist < 0.1 * d,
                None => true,
            };
            if retry {
                last_tested = Some((k, current.sums.nearest_dist));
                let at = problem.local(k);
                let trial = problem.evaluate(at);
                evaluations += 1;
                if progresses(&trial, &current) {
                    x = at;
                    current = trial;
                    continue;
                }
                if evaluations >= max_iter {
                    return finish(x, &current, evaluations, false);
                }
            }
        }
        if current.sums.eta == 0.0 {
            if let Some(xn) = newton_step(x, &current) {
                let trial = problem.evaluate(xn);
                evaluations += 1;
                if progresses(&trial, &current) {
                    x = xn;
                    current = trial;
                    continue;
                }
                if evaluations >= max_iter {
                    return finish(x, &current, evaluations, false);
                }
            }
        }
        let xw = weiszfeld_step(x, &current);
        let trial = problem.evaluate(xw);
        evaluations += 1;
        if !progresses(&trial, &current) {
            // No step makes progress at this precision: report what the certificate says.
            let converged = problem.gap(&current) <= tol * current.sums.cost();
            return finish(x, &current, evaluations, converged);
        }
        x = xw;
        current = trial;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::distance;

    fn cost(points: &[Point], x: Point) -> f64 {
        points.iter().map(|&p| distance(p, x)).sum()
    }

    #[test]
    fn acute_triangle_torricelli_point() {
        // Closed form: for (0,0), (4,0), (2,4) the Torricelli point costs 4 + 2√3
        // (each side subtends 120° there; derived by hand from the 120° condition).
        let pts = [[0.0, 0.0], [4.0, 0.0], [2.0, 4.0]];
        let r = solve(&pts, Weights::Unit, 1e-12, 1000);
        assert!(r.converged);
        assert!((r.cost - (4.0 + 2.0 * 3f64.sqrt())).abs() < 1e-10);
        let t = [2.0, 2.0 / 3f64.sqrt()];
        assert!(distance(r.location, t) < 1e-8);
    }

    #[test]
    fn obtuse_vertex_is_optimal() {
        // Textbook fact: a triangle with an angle ≥ 120° has its Fermat point at that vertex.
        let pts = [[0.0, 0.0], [10.0, 0.0], [5.0, 1.0]];
        let r = solve(&pts, Weights::Unit, 1e-12, 1000);
        assert!(r.converged);
        assert_eq!(r.location, [5.0, 1.0]);
    }

    #[test]
    fn equilateral_centroid_cost_is_root3_side() {
        // Closed form: the equilateral triangle's Fermat point is its centroid, cost √3·side.
        let s = 3.0;
        let pts = [[0.0, 0.0], [s, 0.0], [s / 2.0, s * 3f64.sqrt() / 2.0]];
        let r = solve(&pts, Weights::Unit, 1e-12, 1000);
        assert!((r.cost - 3f64.sqrt() * s).abs() < 1e-12 * s);
    }

    #[test]
    fn majority_point_is_optimal() {
        // Witzgall (1964): a point with at least half the total weight is optimal.
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [5.0, 5.0]];
        let w = [1.0, 1.0, 1.0, 3.0];
        let r = solve(&pts, Weights::Given(&w), 1e-10, 100);
        assert_eq!(r.location, [5.0, 5.0]);
        assert!(r.converged);
    }

    #[test]
    fn far_offset_keeps_precision() {
        let base = [[0.0, 0.0], [4.0, 0.0], [2.0, 4.0], [1.0, 1.0], [3.0, 0.5]];
        let near = solve(&base, Weights::Unit, 1e-12, 1000);
        let far: Vec<Point> = base.iter().map(|p| [p[0] + 500_000.0, p[1] + 6_000_000.0]).collect();
        let r = solve(&far, Weights::Unit, 1e-12, 1000);
        assert!((r.cost - near.cost).abs() < 1e-9 * near.cost);
        assert!((r.location[0] - 500_000.0 - near.location[0]).abs() < 1e-8);
    }

    #[test]
    fn gap_bounds_error_on_a_cloud() {
        let pts: Vec<Point> = (0..200)
            .map(|i| {
                let t = i as f64 * 0.7;
                [t.sin() * (1.0 + (i % 7) as f64), t.cos() * (2.0 + (i % 3) as f64)]
            })
            .collect();
        let rough = solve(&pts, Weights::Unit, 1e-3, 10_000);
        let fine = solve(&pts, Weights::Unit, 1e-14, 10_000);
        assert!(rough.cost - fine.cost <= rough.gap + 1e-12);
        assert!((cost(&pts, fine.location) - fine.cost).abs() < 1e-9);
    }

    #[test]
    fn collinear_points_reach_the_median() {
        // On a line the Fermat–Weber point is the (1-D) median: here the middle point.
        let pts = [[0.0, 0.0], [1.0, 1.0], [2.0, 2.0], [7.0, 7.0], [9.0, 9.0]];
        let r = solve(&pts, Weights::Unit, 1e-12, 1000);
        assert!(r.converged, "{r:?}");
        assert!(distance(r.location, [2.0, 2.0]) < 1e-9);
    }

    #[test]
    fn parallel_pass_is_deterministic_and_matches_sequential() {
        let n: u64 = 100_000;
        let pts: Vec<Point> = (0..n).map(|i| [((i * 7919) % 10007) as f64, ((i * 104729) % 9973) as f64]).collect();
        let bbox = BoundingBox::of(&pts).unwrap();
        let problem = Problem {
            points: &pts,
            weights: Weights::Unit,
            origin: bbox.center(),
            total_weight: n as f64,
            squares_are_safe: true,
        };
        let x = [123.25, -456.5];
        // The chunked parallel pass against one sequential pass over all points: the same
        // compensated cost to rounding, and the same nearest point.
        let parallel = problem.evaluate(x);
        let sequential = problem.pass_over(x, 0, &pts);
        assert!(pts.len() >= PARALLEL_MIN_POINTS, "the parallel path must run");
        assert!((parallel.sums.cost() - sequential.sums.cost()).abs() <= 1e-12 * sequential.sums.cost());
        assert_eq!(parallel.sums.nearest, sequential.sums.nearest);
        // Deterministic: the same bits on one thread and on three.
        let on = |threads: usize| {
            let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
            pool.install(|| solve(&pts, Weights::Unit, 1e-10, 1000))
        };
        let (a, b) = (on(1), on(3));
        assert_eq!(a, b);
        assert!(a.converged);
    }
}
