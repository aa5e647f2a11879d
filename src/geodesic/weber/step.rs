//! The first exact Newton step of a large cloud, taken from a sample instead of a full pass.
//!
//! # Why
//! The conformal-sphere model leaves its optimum `x₀` millimetres from the exact one. An
//! exact pass at `x₀` costs one inverse problem per point and serves only to step from `x₀`
//! to within micrometres of the optimum, where a second exact pass certifies the answer. The
//! step needs the exact gradient at `x₀` to a few parts in a thousand of its (small) size,
//! and the Hessian to the same relative accuracy; both are within reach of the model plus a
//! correction estimated from a sample, which saves nearly half of the exact work.
//!
//! # Method
//! The exact gradient is `g = −Σ wᵢ uᵢ` (`uᵢ` the unit tangent at `x₀` towards point `i`);
//! the model's is `g_model = −Σ wᵢ ûᵢ` from the great circles of the conformal sphere, whose
//! tangent basis at the image of `x₀` is (east, north) there too, since the map is conformal.
//! So `g = g_model − Σ wᵢ cᵢ` with `cᵢ = uᵢ − ûᵢ`, a small vector varying smoothly over the
//! cloud. Its weighted sum over all points is estimated by regression with the model as
//! auxiliary information (the generalised regression estimator; Särndal, Swensson & Wretman
//! 1992, "Model Assisted Survey Sampling", §6.4): a polynomial of total degree 5 in the model's
//! azimuthal coordinates `θ·û` is fitted to `c` on a systematic sample of the points by
//! weighted least squares; the fitted polynomial is summed exactly over all points (its
//! moments come from one cheap model pass) and the sample's residuals, scaled to the total
//! weight, correct what the polynomial misses. The Hessian is the model's, converted from
//! radians to metres by the sample's ratio of model angles to geodesic distances (the two
//! agree to parts per million).
//!
//! # Invariant
//! The sample only chooses where the exact iteration starts: every reported number comes
//! from the exact passes, and a step that an exact pass finds worse is corrected by the exact
//! Newton and Weiszfeld steps that follow, as from any other start.

use nalgebra::{SMatrix, SVector};
use rayon::prelude::*;

use super::model::{model_seen, tangent_basis, ModelOptimum};
use super::{newton_2x2, Problem, CHUNK};
use crate::geometry::Point;

/// Clouds from this size on take their first exact step from a sample (at most a quarter
/// of the points' inverse problems).
pub(super) const SAMPLED_STEP_MIN_POINTS: usize = 4 * SAMPLE_POINTS;
/// Points in the sample (a systematic sample: every `n / SAMPLE_POINTS`-th point).
const SAMPLE_POINTS: usize = 65_536;
/// Monomials of total degree at most 5 in two variables (1 + 2 + ... + 6).
const FEATURES: usize = 21;

type Features = SVector<f64, FEATURES>;

/// `1, x, y, x², xy, y², …, y⁵` of the scaled model coordinates `v`, by degree.
fn features(v: Point) -> Features {
    let [x, y] = v;
    let mut f = Features::zeros();
    let mut k = 0;
    for degree in 0..=5 {
        for i in 0..=degree {
            f[k] = x.powi(degree - i) * y.powi(i);
            k += 1;
        }
    }
    f
}

/// One sampled point: its weight, features, and the exact-minus-model direction.
struct Observation {
    weight: f64,
    features: Features,
    correction: Point,
    angle: f64,
    distance: f64,
}

/// Where the exact iteration should start: `model.location` moved by a Newton step whose
/// gradient is the model's plus the estimated correction. `None` when the estimate cannot
/// be formed (a point at the start, a degenerate fit or Hessian); the caller then starts
/// at the model's optimum.
pub(super) fn sampled_newton_target(problem: &Problem<'_>, model: &ModelOptimum) -> Option<Point> {
    let (x0, y) = (model.location, model.image);
    let (e1, e2) = tangent_basis(y);
    let n = problem.points.len();
    // Coordinates scaled by the cloud's largest angle, so the normal equations stay well
    // conditioned whatever the extent.
    let scale = model.pass.max_angle;
    if model.pass.at_point || !(scale > 0.0) || n < SAMPLE_POINTS {
        return None;
    }
    let scaled = |theta: f64, u: Point| [theta * u[0] / scale, theta * u[1] / scale];

    // Moments Σ wᵢ φ(vᵢ) over all points (chunked, merged in order: deterministic).
    let moments: Vec<Option<Features>> = model
        .images
        .par_chunks(CHUNK)
        .enumerate()
        .map(|(c, chunk)| {
            // A stop (asked per chunk) gives up the estimate; the caller's exact pass then
            // sees the stop too and ends the run.
            if problem.clock.stop() {
                return None;
            }
            let mut sum = Features::zeros();
            for (offset, &p) in chunk.iter().enumerate() {
                let w = problem.weights.get(c * CHUNK + offset);
                if w > 0.0 {
                    let sight = model_seen(y, e1, e2, p).ok()?;
                    sum += w * features(scaled(sight.angle, sight.toward));
                }
            }
            Some(sum)
        })
        .collect();
    let mut total_moments = Features::zeros();
    for m in moments {
        total_moments += m?;
    }

    let stride = n / SAMPLE_POINTS;
    let observations: Vec<Option<Observation>> = (0..SAMPLE_POINTS)
        .into_par_iter()
        .map(|j| {
            // One inverse problem per sample point: asked every CHUNK of them.
            if j % CHUNK == 0 && problem.clock.stop() {
                return None;
            }
            let i = j * stride;
            let weight = problem.weights.get(i);
            if weight <= 0.0 {
                return Some(Observation {
                    weight: 0.0,
                    features: Features::zeros(),
                    correction: [0.0; 2],
                    angle: 0.0,
                    distance: 0.0,
                });
            }
            let seen = problem.earth.seen_from_quickly(x0, problem.points[i]);
            let sight = model_seen(y, e1, e2, model.images[i]).ok()?;
            let (angle, u) = (sight.angle, sight.toward);
            if seen.distance == 0.0 {
                return None;
            }
            let correction = [seen.direction[0] - u[0], seen.direction[1] - u[1]];
            Some(Observation {
                weight,
                features: features(scaled(angle, u)),
                correction,
                angle,
                distance: seen.distance,
            })
        })
        .collect();
    let observations: Vec<Observation> = observations.into_iter().collect::<Option<_>>()?;

    let mut normal = SMatrix::<f64, FEATURES, FEATURES>::zeros();
    let mut rhs = [Features::zeros(), Features::zeros()];
    let (mut sample_weight, mut angles, mut distances) = (0.0, 0.0, 0.0);
    for o in &observations {
        normal += o.weight * o.features * o.features.transpose();
        for (side, c) in rhs.iter_mut().zip(o.correction) {
            *side += o.weight * c * o.features;
        }
        sample_weight += o.weight;
        angles += o.weight * o.angle;
        distances += o.weight * o.distance;
    }
    if !(sample_weight > 0.0 && distances > 0.0) {
        return None;
    }
    let cholesky = normal.cholesky()?;
    let mut correction = [0.0; 2];
    for k in 0..2 {
        let beta = cholesky.solve(&rhs[k]);
        let residual: f64 = observations.iter().map(|o| o.weight * (o.correction[k] - o.features.dot(&beta))).sum();
        correction[k] = total_moments.dot(&beta) + residual * problem.total_weight / sample_weight;
    }
    // Radians of the model per metre on the ellipsoid, near the cloud.
    let per_metre = angles / distances;
    let gradient = [model.pass.grad[0] - correction[0], model.pass.grad[1] - correction[1]];
    let hess = model.pass.hess.map(|h| h * per_metre);
    let step = newton_2x2(hess, gradient, scale / per_metre)?;
    let x1 = problem.earth.exp(x0, step);
    (x1[0].is_finite() && x1[1].is_finite()).then_some(x1)
}

#[cfg(test)]
mod tests {
    use super::super::{solve, Earth};
    use super::SAMPLED_STEP_MIN_POINTS;
    use crate::cancel::Clock;
    use crate::geometry::random::SplitMix64;
    use crate::geometry::{Point, Weights};

    /// A national-scale cloud (about 1,200 km by 900 km) with uneven weights.
    fn national(n: usize, seed: u64) -> (Vec<Point>, Vec<f64>) {
        let mut rng = SplitMix64::new(seed);
        let mut normal = || (0..12).map(|_| rng.next_f64()).sum::<f64>() - 6.0;
        let points: Vec<Point> = (0..n).map(|_| [10.0 + 3.5 * normal(), 51.0 + 2.0 * normal()]).collect();
        let weights: Vec<f64> = (0..n).map(|i| 1.0 + (i % 7) as f64).collect();
        (points, weights)
    }

    /// No point 1 m away in eight directions does better, by GeographicLib's distance.
    fn no_better_neighbour(points: &[Point], weights: &[f64], at: Point, cost: f64) {
        let earth = Earth::wgs84();
        let total = |x: Point| -> f64 { points.iter().zip(weights).map(|(&p, &w)| w * earth.distance(x, p)).sum() };
        for k in 0..8 {
            let a = k as f64 * std::f64::consts::FRAC_PI_4;
            assert!(total(earth.exp(at, [a.sin(), a.cos()])) >= cost * (1.0 - 1e-13));
        }
    }

    #[test]
    fn a_large_cloud_is_certified_from_the_sampled_step() {
        // The sampled step lands close enough that the first exact pass certifies the
        // answer at the default tolerance (a second pass, with the Hessian, is allowed).
        let (points, weights) = national(SAMPLED_STEP_MIN_POINTS + 1_000, 5);
        let r = solve(&points, Weights::Given(&weights), 1e-10, 100, &Clock::unlimited()).unwrap();
        assert!(r.converged && r.iterations <= 2, "{r:?}");
        assert!(r.gap <= 1e-10 * r.cost);
        no_better_neighbour(&points, &weights, r.location, r.cost);
    }

    #[test]
    fn a_sample_of_zero_weights_falls_back_to_exact_passes() {
        // Every sampled row has weight zero: no estimate can be formed, and the exact
        // iteration starts from the model's optimum as for a small cloud.
        let n = SAMPLED_STEP_MIN_POINTS + 4_096;
        let (points, mut weights) = national(n, 6);
        let stride = n / super::SAMPLE_POINTS;
        for j in 0..super::SAMPLE_POINTS {
            weights[j * stride] = 0.0;
        }
        let r = solve(&points, Weights::Given(&weights), 1e-10, 100, &Clock::unlimited()).unwrap();
        assert!(r.converged && r.iterations >= 2, "{r:?}");
        no_better_neighbour(&points, &weights, r.location, r.cost);
    }
}
