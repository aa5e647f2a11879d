//! The weighted Fermat–Weber point on the WGS84 ellipsoid: the site `x` minimising
//! `f(x) = Σ wᵢ · s(x, aᵢ)`, with `s` the geodesic distance.
//!
//! # Method
//! Weiszfeld's iteration in the tangent plane at the current iterate (Fletcher,
//! Venkatasubramanian & Joshi 2009, "The geometric median on Riemannian manifolds with
//! application to robust atlas estimation", NeuroImage 45): each pass maps the points into
//! the azimuthal equidistant frame centred at the iterate `x` with the logarithm map
//! `log_x(a) = s(x, a)·(sin α, cos α)` (α the geodesic's azimuth at `x`, from the inverse
//! problem; exact for distances and directions from `x`), takes the Weiszfeld step
//! `v = Σ (wᵢ/sᵢ) log_x(aᵢ) / Σ (wᵢ/sᵢ)` there and moves along the geodesic with the direct
//! problem, `x ← exp_x(v)`. At a data point the Vardi–Zhang (2001) step is used, near one
//! Kuhn's (1973) test; safeguarded Newton steps with the exact Hessian of geodesic distance,
//! `Σ wᵢ (Mᵢ/mᵢ)(I − uᵢuᵢᵀ)` (reduced length `m` and geodesic scale `M` from the same inverse
//! problem, Karney 2013 §3), converge quadratically. Every step is kept only if it lowers
//! the exact geodesic objective.
//!
//! # Where the iteration starts
//! One exact pass costs an inverse problem per point (about a microsecond), so the iterate is
//! first brought close to the optimum on a cheap model: Gauss's conformal sphere fitted at
//! the points' mean direction (see [`ConformalSphere`]), on which geodesic distances near the
//! centre are great-circle angles up to a few parts in a million. Newton's method with
//! Weiszfeld's step as fallback runs there on unit vectors (tens of nanoseconds per point and
//! pass), and its optimum, mapped back to the ellipsoid, starts the exact iteration above.
//! The model only chooses where to look: every reported number comes from the exact passes,
//! and `iterations` counts exact passes alone (typically two: one whose Newton step lands
//! within the tolerance, one that certifies it). From [`step::SAMPLED_STEP_MIN_POINTS`]
//! points on, the first of these is replaced by a step estimated from a sample
//! ([`step`]), so a large cloud is typically certified by one exact pass.
//!
//! # Certificate
//! The gradient of `s(·, a)` at `x` is exactly `−u` (`u` the unit tangent towards `a`), so
//! the minimal-norm subgradient `g` of `f` at `x` is exact. When `f` is geodesically convex
//! along the geodesic from `x` to an optimum `y*`, `f(y*) ≥ f(x) − ‖g‖·s(x, y*)`, and
//! `s(x, y*) ≤ 2f(x)/W` by the triangle inequality; so `gap = ‖g‖·min(maxᵢ sᵢ, 2f/W)` bounds
//! `cost − optimum` (plus an allowance for rounding and the inverse problem's accuracy).
//!
//! Convexity holds when every point, and the iterate, lie within [`CONVEX_CAP_DEGREES`] of
//! the points' mean direction (angles between ellipsoid normals): any two points of that cap are less than
//! 88° of arc apart, where the Hessian of geodesic distance `(M/m)(I − uuᵀ)` is still
//! positive semi-definite (the geodesic scale `M` first vanishes near 90° of arc; the
//! flattening moves that by well under a degree). Outside that cap no certificate is claimed:
//! `gap` is infinite and `converged` false, the location a stationary point found from the
//! mean direction. Beyond a hemisphere ([`HEMISPHERE_DEGREES`]) the objective has several
//! local optima in general and the kernel refuses.

mod model;
mod step;

use rayon::prelude::*;

use model::model_optimum;
use step::{sampled_newton_target, SAMPLED_STEP_MIN_POINTS};

use super::earth::{angle_between, from_normal, unit_normal, Earth};
use super::inverse::{AZIMUTH_ACCURACY, DISTANCE_RELATIVE_ACCURACY};
use crate::cancel::{Clock, Steps, Watch};
use crate::error::{Error, Result};
use crate::geometry::{CompensatedSum, Point, Weights};
use crate::median::sums::WeberSums;
use crate::median::WeberPoint;

/// Largest angle (degrees) between the points' mean direction and any point for which the
/// geodesic objective is certified convex on the cap holding them.
pub const CONVEX_CAP_DEGREES: f64 = 44.0;
/// Points farther than this (degrees) from their mean direction span more than a hemisphere.
pub const HEMISPHERE_DEGREES: f64 = 90.0;
/// Below this many points a pass runs on one thread.
pub(super) const PARALLEL_MIN_POINTS: usize = 4_096;
/// Fixed chunk of a parallel pass; partial sums merged in chunk order (deterministic).
pub(super) const CHUNK: usize = 2_048;
/// Relative rounding allowance, in units of the unit roundoff.
const ROUNDING: f64 = 8.0 * f64::EPSILON;
/// Absolute accuracy of one geodesic distance, metres: GeographicLib's inverse problem is
/// accurate to about 15 nm on WGS84 (Karney 2013, §1); this allows twice that.
pub(crate) const DISTANCE_ACCURACY_M: f64 = 3e-8;
/// Smallest relative tolerance for which exact passes take the quicker inverse problem: its
/// allowance in the gap is at most `DISTANCE_RELATIVE_ACCURACY + 2·AZIMUTH_ACCURACY` of the
/// cost (the radius in the gap is at most `2f/W`), 4e-13, a twenty-fifth of this.
pub(crate) const QUICK_INVERSE_MIN_TOL: f64 = 1e-11;

/// Where the points lie on the globe: their mean direction and the largest angle from it.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Spread {
    /// The point whose ellipsoid normal is the mean of the points' normals.
    pub centre: Point,
    /// Largest angle from the mean direction to a point, degrees (180 when the normals
    /// cancel out).
    pub radius_degrees: f64,
}

impl Spread {
    /// True when `x` lies in the certified convex cap about the mean direction (so the
    /// geodesic from `x` to an optimum stays where the objective is convex).
    pub(crate) fn holds(&self, x: Point) -> bool {
        self.radius_degrees <= CONVEX_CAP_DEGREES
            && angle_between(unit_normal(self.centre), unit_normal(x)).to_degrees() <= CONVEX_CAP_DEGREES
    }
}

/// The spread of the points of positive weight.
pub(crate) fn spread(points: &[Point], weights: Weights<'_>) -> Spread {
    spread_watched(points, weights, &Watch::new()).expect("an unshared watch is never cancelled")
}

/// [`spread`], looking at `watch`'s cancel flag per chunk of [`CHUNK`] points from
/// [`PARALLEL_MIN_POINTS`] points on (the normals and the largest angle are computed in
/// parallel there): `None` once cancelled. The sum of normals stays sequential, in input
/// order, so the mean direction has the same bits whatever the threads.
pub(crate) fn spread_watched(points: &[Point], weights: Weights<'_>, watch: &Watch) -> Option<Spread> {
    let mut sum = [0.0f64; 3];
    let normals: Vec<[f64; 3]> = if points.len() < PARALLEL_MIN_POINTS {
        points.iter().map(|&p| unit_normal(p)).collect()
    } else {
        let chunks: Vec<Option<Vec<[f64; 3]>>> = points
            .par_chunks(CHUNK)
            .map(|chunk| (!watch.is_cancelled()).then(|| chunk.iter().map(|&p| unit_normal(p)).collect()))
            .collect();
        let mut normals = Vec::with_capacity(points.len());
        for chunk in chunks {
            normals.extend(chunk?);
        }
        normals
    };
    for (i, u) in normals.iter().enumerate() {
        if weights.get(i) > 0.0 {
            for k in 0..3 {
                sum[k] += u[k];
            }
        }
    }
    let length = (sum[0] * sum[0] + sum[1] * sum[1] + sum[2] * sum[2]).sqrt();
    let count = (0..points.len()).filter(|&i| weights.get(i) > 0.0).count() as f64;
    if !(length > 1e-9 * count) {
        return Some(Spread { centre: points[0], radius_degrees: 180.0 });
    }
    let mean = [sum[0] / length, sum[1] / length, sum[2] / length];
    // The largest angle (a maximum: the same whatever the order it is taken in).
    let farthest = |start: usize, chunk: &[[f64; 3]]| {
        let mut radius = 0.0f64;
        for (offset, u) in chunk.iter().enumerate() {
            if weights.get(start + offset) > 0.0 {
                radius = radius.max(angle_between(mean, *u));
            }
        }
        radius
    };
    let radius = if normals.len() < PARALLEL_MIN_POINTS {
        farthest(0, &normals)
    } else {
        let chunks: Vec<Option<f64>> = normals
            .par_chunks(CHUNK)
            .enumerate()
            .map(|(c, chunk)| (!watch.is_cancelled()).then(|| farthest(c * CHUNK, chunk)))
            .collect();
        chunks.into_iter().try_fold(0.0f64, |r, c| c.map(|c| r.max(c)))?
    };
    Some(Spread { centre: from_normal(mean), radius_degrees: radius.to_degrees() })
}

/// Refuse points that span more than a hemisphere around their mean direction.
pub(crate) fn within_hemisphere(spread: &Spread, what: &str) -> Result<()> {
    if spread.radius_degrees >= HEMISPHERE_DEGREES {
        return Err(Error::Degenerate {
            argument: "points",
            reason: format!(
                "the points reach {:.1}° from their mean direction, more than a hemisphere; the geodesic {what} \
                 has several local optima there in general. Solve regions of the globe separately (groups)",
                spread.radius_degrees
            ),
        });
    }
    Ok(())
}

/// One exact pass at `x`: the shared sums in the tangent plane at `x` (east, north; metres
/// and weight units), with the direction towards the nearest point.
#[derive(Debug, Clone, Copy)]
struct Pass {
    sums: WeberSums,
    nearest_dir: Point,
    /// False when the clock stopped the pass before every point was seen: its sums are
    /// partial and must not be used.
    complete: bool,
}

impl Pass {
    fn empty() -> Pass {
        Pass { sums: WeberSums::empty(), nearest_dir: [0.0, 0.0], complete: true }
    }

    fn merge(&mut self, other: &Pass) {
        self.complete &= other.complete;
        if self.sums.merge(&other.sums) {
            self.nearest_dir = other.nearest_dir;
        }
    }
}

struct Problem<'a> {
    earth: Earth,
    points: &'a [Point],
    weights: Weights<'a>,
    total_weight: f64,
    certified: bool,
    spread: Spread,
    clock: &'a Clock,
    /// Passes without curvature take the quicker inverse problem ([`super::inverse`]): when
    /// the tolerance is at least [`QUICK_INVERSE_MIN_TOL`], whose allowance its accuracy
    /// leaves room for (the gap adds that accuracy).
    quick: bool,
}

impl Problem<'_> {
    fn pass_over(&self, x: Point, start: usize, points: &[Point], curvature: bool) -> Pass {
        let mut pass = Pass::empty();
        for (offset, &a) in points.iter().enumerate() {
            let i = start + offset;
            let w = self.weights.get(i);
            if w <= 0.0 {
                continue;
            }
            let (seen, curvature) = if curvature {
                self.earth.seen_with_curvature(x, a)
            } else if self.quick {
                (self.earth.seen_from_quickly(x, a), 0.0)
            } else {
                (self.earth.seen_from(x, a), 0.0)
            };
            let d = seen.distance;
            if d == 0.0 {
                pass.sums.eta += w;
                continue;
            }
            let u = seen.direction;
            // The direction from the point towards x is −u (negation is exact).
            if pass.sums.add_point(i, w, d, [-u[0], -u[1]], w / d, w * curvature) {
                pass.nearest_dir = u;
            }
        }
        pass
    }

    /// The exact pass at `x`, with the Hessian.
    fn evaluate(&self, x: Point) -> Pass {
        self.evaluate_with(x, true)
    }

    /// The exact pass at `x`; without `curvature` the Hessian is left at zero (the inverse
    /// problems skip their reduced length and geodesic scale): for a pass expected to
    /// certify the answer, which needs no further step.
    fn evaluate_with(&self, x: Point, curvature: bool) -> Pass {
        self.evaluate_until(x, curvature, self.clock)
    }

    /// The first exact pass, which gives the answer its measured cost: stopped by a cancel
    /// (whose answer the caller drops), never by the deadline, so that a run out of time
    /// still returns a site with its true cost.
    fn evaluate_first(&self, x: Point, curvature: bool) -> Pass {
        self.evaluate_until(x, curvature, &self.clock.watch.clock(None))
    }

    /// The exact pass at `x`, asking `clock` per chunk of points whether to stop.
    fn evaluate_until(&self, x: Point, curvature: bool, clock: &Clock) -> Pass {
        if self.points.len() < PARALLEL_MIN_POINTS {
            return self.pass_over(x, 0, self.points, curvature);
        }
        let partials: Vec<Pass> = self
            .points
            .par_chunks(CHUNK)
            .enumerate()
            .map(|(c, chunk)| {
                // Asked per chunk (about a millisecond of work) so that Ctrl-C lands within
                // a fraction of a pass.
                if clock.stop() {
                    return Pass { complete: false, ..Pass::empty() };
                }
                self.pass_over(x, c * CHUNK, chunk, curvature)
            })
            .collect();
        let mut total = Pass::empty();
        for partial in &partials {
            total.merge(partial);
        }
        total
    }

    /// The certified gap at `x` (infinite where no certificate holds).
    fn gap(&self, x: Point, pass: &Pass) -> f64 {
        if !(self.certified && self.spread.holds(x)) {
            return f64::INFINITY;
        }
        pass.sums.subgradient_norm() * self.reach(pass) + self.allowance(pass)
    }

    /// The distance from `x` to an optimum the certificate allows: `min(maxᵢ sᵢ, 2f/W)`.
    fn reach(&self, pass: &Pass) -> f64 {
        pass.sums.max_dist.min(2.0 * pass.sums.cost() / self.total_weight)
    }

    /// The part of the gap that rounding and the inverse problem's accuracy leave whatever
    /// the location: about `W · 3e-8` m, which outweighs `tol · cost` for points within a
    /// few hundred metres at the default tolerance.
    fn allowance(&self, pass: &Pass) -> f64 {
        let (cost, radius) = (pass.sums.cost(), self.reach(pass));
        ROUNDING * (cost + self.total_weight * radius)
            + self.total_weight * DISTANCE_ACCURACY_M
            + if self.quick {
                DISTANCE_RELATIVE_ACCURACY * cost + AZIMUTH_ACCURACY * self.total_weight * radius
            } else {
                0.0
            }
    }

    /// Converged: the gap is within `tol · cost` of what the distances' accuracy allows (no
    /// step can take it below [`Problem::allowance`]).
    fn settles(&self, gap: f64, pass: &Pass, tol: f64) -> bool {
        gap <= tol * pass.sums.cost() + self.allowance(pass)
    }

    /// Stationary to the precision a step can still show.
    fn stationary(&self, pass: &Pass, tol: f64) -> bool {
        pass.sums.subgradient_norm() <= tol * self.total_weight
    }
}

fn progresses(new: &Pass, old: &Pass) -> bool {
    let (c_new, c_old) = (new.sums.cost(), old.sums.cost());
    c_new < c_old || (c_new <= c_old * (1.0 + ROUNDING) && new.sums.subgradient_norm() < old.sums.subgradient_norm())
}

/// Newton step in the tangent plane with the exact Hessian, when positive definite and no
/// longer than the points' extent.
fn newton_step(pass: &Pass) -> Option<Point> {
    newton_2x2(pass.sums.hess, pass.sums.gradient(), pass.sums.max_dist)
}

/// `−H⁻¹g` for the symmetric `H = [[hxx, hxy], [hxy, hyy]]`, when `H` is positive definite
/// and the step no longer than `longest`.
pub(super) fn newton_2x2(hess: [f64; 3], g: Point, longest: f64) -> Option<Point> {
    let [hxx, hxy, hyy] = hess;
    let det = hxx * hyy - hxy * hxy;
    let trace = hxx + hyy;
    if !(det > 1e-12 * trace * trace && trace > 0.0) {
        return None;
    }
    let step = [-(hyy * g[0] - hxy * g[1]) / det, -(hxx * g[1] - hxy * g[0]) / det];
    (step[0].hypot(step[1]) <= longest && step[0].is_finite() && step[1].is_finite()).then_some(step)
}

/// Weiszfeld's step in the tangent plane at x, with the Vardi–Zhang correction at a data
/// point: `v = Σ wᵢ uᵢ / Σ (wᵢ/sᵢ) = −g / Σ (wᵢ/sᵢ)`.
fn weiszfeld_step(pass: &Pass) -> Point {
    let g = pass.sums.gradient();
    let t = [-g[0] / pass.sums.inv, -g[1] / pass.sums.inv];
    if pass.sums.eta == 0.0 {
        return t;
    }
    let r = g[0].hypot(g[1]);
    let keep = (pass.sums.eta / r).min(1.0);
    [(1.0 - keep) * t[0], (1.0 - keep) * t[1]]
}

/// Kuhn's test, estimated near data point k: the resultant of the others at aₖ, to first
/// order the gradient without k's own term (`−wₖ uₖ`) moved to aₖ by the Hessian,
/// `g + wₖuₖ + dₖ H uₖ` (k's own Hessian term is across `uₖ` and drops out). Without the
/// Hessian term the estimate is about `wₖ` whenever the gradient is small, and a dense cloud
/// would spend an exact pass on its nearest point at every optimum.
fn data_point_looks_optimal(problem: &Problem<'_>, pass: &Pass) -> bool {
    let k = pass.sums.nearest;
    if k == usize::MAX {
        return false;
    }
    let wk = problem.weights.get(k);
    let g = pass.sums.gradient();
    let [hxx, hxy, hyy] = pass.sums.hess;
    let (u, d) = (pass.nearest_dir, pass.sums.nearest_dist);
    let others = [g[0] + wk * u[0] + d * (hxx * u[0] + hxy * u[1]), g[1] + wk * u[1] + d * (hxy * u[0] + hyy * u[1])];
    others[0].hypot(others[1]) <= 1.01 * wk || d <= 1e-9 * pass.sums.max_dist
}

/// Solve. Inputs validated (longitude/latitude, weights); at least one weight positive.
/// Stops at the point reached when `clock` says so (polled before every pass over the
/// points); every exact pass is a step of the clock's watch, planned when the pass begins
/// (the first from the start: the run always makes it), so the count is the passes made and
/// the one under way. How many passes a run needs is known only once it has converged;
/// planned one at a time, a converged run's count ends at its total (at most `max_iter`),
/// and a stopped run's is closed there.
pub(crate) fn solve(
    points: &[Point],
    weights: Weights<'_>,
    tol: f64,
    max_iter: usize,
    clock: &Clock,
) -> Result<WeberPoint> {
    let mut steps = Steps::new(&clock.watch, 1);
    let result = descend(points, weights, tol, max_iter, clock, &mut steps);
    steps.finish();
    result
}

fn descend(
    points: &[Point],
    weights: Weights<'_>,
    tol: f64,
    max_iter: usize,
    clock: &Clock,
    steps: &mut Steps<'_>,
) -> Result<WeberPoint> {
    // The deadline never cuts the set-up (spread, conformal images) nor the first exact pass:
    // the answer needs a measured cost. It does cut the model's passes in between, which then
    // end at the point reached. A cancel stops any of them per chunk of points (the caller
    // drops the answer then; `not_begun` is that answer before any pass).
    let location = |x: Point| [super::earth::normalised_longitude(x[0]), x[1]];
    let not_begun = |x: Point| WeberPoint {
        location: location(x),
        cost: f64::NAN,
        gap: f64::INFINITY,
        iterations: 0,
        converged: false,
    };
    let Some(spread) = spread_watched(points, weights, &clock.watch) else {
        return Ok(not_begun(points[0]));
    };
    within_hemisphere(&spread, "Fermat–Weber objective")?;
    let mut total = CompensatedSum::default();
    let mut heaviest = 0;
    for i in 0..points.len() {
        total.add(weights.get(i));
        if weights.get(i) > weights.get(heaviest) {
            heaviest = i;
        }
    }
    let problem = Problem {
        earth: Earth::wgs84(),
        points,
        weights,
        total_weight: total.total(),
        certified: spread.radius_degrees <= CONVEX_CAP_DEGREES,
        spread,
        clock,
        quick: tol >= QUICK_INVERSE_MIN_TOL,
    };
    // The answer of a run stopped during its first exact pass: no cost is known yet.
    let unfinished = |x: Point, iterations: usize| WeberPoint {
        location: [super::earth::normalised_longitude(x[0]), x[1]],
        cost: f64::NAN,
        gap: f64::INFINITY,
        iterations,
        converged: false,
    };
    let finish = |x: Point, pass: &Pass, iterations: usize| {
        let gap = problem.gap(x, pass);
        WeberPoint {
            location: [super::earth::normalised_longitude(x[0]), x[1]],
            cost: pass.sums.cost(),
            gap,
            iterations,
            converged: problem.settles(gap, pass, tol) || pass.sums.cost() == 0.0,
        }
    };
    // Majority theorem (Witzgall 1964; its proof uses only the triangle inequality, so it
    // holds for geodesic distance): a point with at least half the total weight is optimal.
    let w_max = weights.get(heaviest);
    if w_max >= problem.total_weight - w_max {
        let x = points[heaviest];
        let mut pass = problem.evaluate_first(x, true);
        if !pass.complete {
            return Ok(unfinished(x, 1));
        }
        // Optimal exactly: the subgradient ball contains zero.
        pass.sums.eta = pass.sums.eta.max(pass.sums.gradient()[0].hypot(pass.sums.gradient()[1]));
        let mut r = finish(x, &pass, 1);
        r.gap = 0.0;
        r.converged = true;
        return Ok(r);
    }

    let Some(model) = model_optimum(points, weights, spread.centre, clock) else {
        return Ok(not_begun(spread.centre));
    };
    let mut x = model.location;
    // From a sampled step the first exact pass is expected to certify the answer, so it
    // skips the Hessian; when it does not certify, the pass is made again with it.
    let mut sampled = false;
    if points.len() >= SAMPLED_STEP_MIN_POINTS {
        if let Some(target) = sampled_newton_target(&problem, &model) {
            x = target;
            sampled = true;
        }
    }
    drop(model);
    let mut current = problem.evaluate_first(x, !sampled);
    if !current.complete {
        return Ok(unfinished(x, 1));
    }
    let mut evaluations = 1;
    steps.step();
    let mut last_tested: Option<(usize, f64)> = None;
    loop {
        let done = if problem.certified {
            problem.settles(problem.gap(x, &current), &current, tol)
        } else {
            problem.stationary(&current, tol)
        };
        // A stop ends the descent at the point reached; it is asked before every pass over
        // the points (the only long work), so it takes effect within one pass.
        if done || current.sums.cost() == 0.0 || evaluations >= max_iter || clock.stop() {
            return Ok(finish(x, &current, evaluations));
        }
        if sampled {
            sampled = false;
            steps.plan(1);
            let full = problem.evaluate(x);
            evaluations += 1;
            if !full.complete {
                return Ok(finish(x, &current, evaluations));
            }
            current = full;
            steps.step();
            continue;
        }
        if current.sums.eta == 0.0 && data_point_looks_optimal(&problem, &current) {
            let k = current.sums.nearest;
            let retry = match last_tested {
                Some((j, d)) => j != k || current.sums.nearest_dist < 0.1 * d,
                None => true,
            };
            if retry {
                last_tested = Some((k, current.sums.nearest_dist));
                let at = points[k];
                if clock.stop() {
                    return Ok(finish(x, &current, evaluations));
                }
                steps.plan(1);
                let trial = problem.evaluate(at);
                if !trial.complete {
                    return Ok(finish(x, &current, evaluations));
                }
                evaluations += 1;
                steps.step();
                if progresses(&trial, &current) {
                    x = at;
                    current = trial;
                    continue;
                }
                if evaluations >= max_iter {
                    return Ok(finish(x, &current, evaluations));
                }
            }
        }
        if current.sums.eta == 0.0 {
            if let Some(step) = newton_step(&current) {
                let xn = problem.earth.exp(x, step);
                if clock.stop() {
                    return Ok(finish(x, &current, evaluations));
                }
                steps.plan(1);
                let trial = problem.evaluate(xn);
                if !trial.complete {
                    return Ok(finish(x, &current, evaluations));
                }
                evaluations += 1;
                steps.step();
                if progresses(&trial, &current) {
                    x = xn;
                    current = trial;
                    continue;
                }
                if evaluations >= max_iter {
                    return Ok(finish(x, &current, evaluations));
                }
            }
        }
        // Weiszfeld's step; on the curved surface it is a descent direction, and a shorter
        // step is tried when the full one overshoots.
        let mut step = weiszfeld_step(&current);
        let mut moved = false;
        for _ in 0..4 {
            let xw = problem.earth.exp(x, step);
            if clock.stop() {
                return Ok(finish(x, &current, evaluations));
            }
            steps.plan(1);
            let trial = problem.evaluate(xw);
            if !trial.complete {
                return Ok(finish(x, &current, evaluations));
            }
            evaluations += 1;
            steps.step();
            if progresses(&trial, &current) {
                x = xw;
                current = trial;
                moved = true;
                break;
            }
            if evaluations >= max_iter {
                break;
            }
            step = [step[0] / 4.0, step[1] / 4.0];
        }
        if !moved {
            return Ok(finish(x, &current, evaluations));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::random::SplitMix64;

    #[test]
    fn a_dense_regional_cloud_is_certified_in_few_exact_passes() {
        // 20,000 points over about 1,000 km with uneven weights: the conformal-sphere start
        // leaves the exact iteration one Newton step and one certifying pass (a third is
        // allowed), and no exact pass is spent on a nearby data point.
        let mut rng = SplitMix64::new(11);
        let mut normal = || (0..12).map(|_| rng.next_f64()).sum::<f64>() - 6.0;
        let points: Vec<Point> = (0..20_000).map(|_| [10.0 + 3.5 * normal(), 51.0 + 2.0 * normal()]).collect();
        let weights: Vec<f64> = (0..points.len()).map(|i| 1.0 + (i % 7) as f64).collect();
        let r = solve(&points, Weights::Given(&weights), 1e-10, 100, &Clock::unlimited()).unwrap();
        assert!(r.converged && r.iterations <= 3, "{r:?}");
        // Brute force with GeographicLib's distance: no point 1 m away does better.
        let earth = Earth::wgs84();
        let cost = |x: Point| -> f64 { points.iter().zip(&weights).map(|(&p, &w)| w * earth.distance(x, p)).sum() };
        for k in 0..8 {
            let a = k as f64 * std::f64::consts::FRAC_PI_4;
            assert!(cost(earth.exp(r.location, [a.sin(), a.cos()])) >= r.cost * (1.0 - 1e-13));
        }
    }
}
