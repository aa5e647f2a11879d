//! The cheap model that chooses where the exact iteration starts: Gauss's conformal sphere
//! fitted at the points' mean direction (see [`ConformalSphere`]), on which geodesic
//! distances near the centre are great-circle angles up to a few parts in a million.

use rayon::prelude::*;

use super::{newton_2x2, CHUNK, PARALLEL_MIN_POINTS};
use crate::cancel::Clock;
use crate::geodesic::earth::ConformalSphere;
use crate::geometry::{Point, Weights};

/// Most passes of the pre-solve on the conformal sphere (Newton's method converges in a
/// handful; the cap bounds the cost when the model's optimum sits at a data point).
const MODEL_PASSES: usize = 40;
/// The pre-solve stops when a step is shorter than this angle (radians; about 0.6 mm on the
/// Earth), far below the model's own error.
const MODEL_STEP_RADIANS: f64 = 1e-10;

/// One pass of the model: the objective `Σ wᵢ θᵢ` (angles on the unit sphere), its gradient
/// and Hessian in the tangent basis `(e₁, e₂)` at `y`.
#[derive(Debug, Clone, Copy, Default)]
pub(super) struct ModelPass {
    pub cost: f64,
    pub grad: Point,
    pub inv: f64,
    pub hess: [f64; 3],
    pub max_angle: f64,
    pub at_point: bool,
}

impl ModelPass {
    fn merge(&mut self, other: &ModelPass) {
        self.cost += other.cost;
        self.grad = [self.grad[0] + other.grad[0], self.grad[1] + other.grad[1]];
        self.inv += other.inv;
        for k in 0..3 {
            self.hess[k] += other.hess[k];
        }
        self.max_angle = self.max_angle.max(other.max_angle);
        self.at_point |= other.at_point;
    }
}

/// A tangent basis at the unit vector `y`.
pub(super) fn tangent_basis(y: [f64; 3]) -> ([f64; 3], [f64; 3]) {
    let across = y[0].hypot(y[1]);
    let e1 = if across > 1e-9 { [-y[1] / across, y[0] / across, 0.0] } else { [1.0, 0.0, 0.0] };
    let e2 = [y[1] * e1[2] - y[2] * e1[1], y[2] * e1[0] - y[0] * e1[2], y[0] * e1[1] - y[1] * e1[0]];
    (e1, e2)
}

/// The model's view of image `p` from `y` (unit vectors), `(e₁, e₂)` the tangent basis at
/// `y`: the cosine and sine of the angle between them, the angle (radians) and the unit
/// tangent at `y` towards `p`. `Err(cos)` when `p` is `y` (cos 1) or antipodal (cos −1),
/// where no direction is defined.
#[inline]
pub(super) fn model_seen(y: [f64; 3], e1: [f64; 3], e2: [f64; 3], p: [f64; 3]) -> Result<ModelSight, f64> {
    let cos = y[0] * p[0] + y[1] * p[1] + y[2] * p[2];
    let cross = [y[1] * p[2] - y[2] * p[1], y[2] * p[0] - y[0] * p[2], y[0] * p[1] - y[1] * p[0]];
    let sin = (cross[0] * cross[0] + cross[1] * cross[1] + cross[2] * cross[2]).sqrt();
    if sin == 0.0 {
        return Err(cos);
    }
    // Unit tangent at y towards p: (p − cos·y)/sin, whose components are p·eₖ/sin.
    let toward =
        [(p[0] * e1[0] + p[1] * e1[1] + p[2] * e1[2]) / sin, (p[0] * e2[0] + p[1] * e2[1] + p[2] * e2[2]) / sin];
    Ok(ModelSight { cos, sin, angle: sin.atan2(cos), toward })
}

/// See [`model_seen`].
pub(super) struct ModelSight {
    pub cos: f64,
    pub sin: f64,
    pub angle: f64,
    pub toward: Point,
}

fn model_pass_over(y: [f64; 3], start: usize, images: &[[f64; 3]], weights: Weights<'_>) -> ModelPass {
    let (e1, e2) = tangent_basis(y);
    let mut pass = ModelPass::default();
    for (offset, &p) in images.iter().enumerate() {
        let w = weights.get(start + offset);
        if w <= 0.0 {
            continue;
        }
        let ModelSight { cos, sin, angle: theta, toward: u } = match model_seen(y, e1, e2, p) {
            Ok(sight) => sight,
            Err(cos) => {
                pass.at_point |= cos > 0.0;
                continue;
            }
        };
        pass.cost += w * theta;
        pass.grad = [pass.grad[0] - w * u[0], pass.grad[1] - w * u[1]];
        pass.inv += w / theta;
        let curvature = w * cos / sin;
        pass.hess[0] += curvature * (1.0 - u[0] * u[0]);
        pass.hess[1] -= curvature * u[0] * u[1];
        pass.hess[2] += curvature * (1.0 - u[1] * u[1]);
        pass.max_angle = pass.max_angle.max(theta);
    }
    pass
}

fn model_evaluate(y: [f64; 3], images: &[[f64; 3]], weights: Weights<'_>) -> ModelPass {
    if images.len() < PARALLEL_MIN_POINTS {
        return model_pass_over(y, 0, images, weights);
    }
    let partials: Vec<ModelPass> =
        images.par_chunks(CHUNK).enumerate().map(|(c, chunk)| model_pass_over(y, c * CHUNK, chunk, weights)).collect();
    let mut total = ModelPass::default();
    for partial in &partials {
        total.merge(partial);
    }
    total
}

/// The exponential map of the unit sphere at `y` for the tangent vector `v` in the basis of
/// [`tangent_basis`].
fn sphere_exp(y: [f64; 3], v: Point) -> [f64; 3] {
    let angle = v[0].hypot(v[1]);
    if angle == 0.0 {
        return y;
    }
    let (e1, e2) = tangent_basis(y);
    let (sin, cos) = angle.sin_cos();
    let mut z = [0.0; 3];
    for k in 0..3 {
        z[k] = cos * y[k] + sin * (v[0] * e1[k] + v[1] * e2[k]) / angle;
    }
    let norm = (z[0] * z[0] + z[1] * z[1] + z[2] * z[2]).sqrt();
    [z[0] / norm, z[1] / norm, z[2] / norm]
}

/// Where the pre-solve ended: the optimum on the model and what a step from it needs.
pub(super) struct ModelOptimum {
    /// The model's optimum mapped back to the ellipsoid (`[longitude, latitude]`), or the
    /// mean direction itself when the model got nowhere.
    pub location: Point,
    /// Its image on the conformal sphere (unit vector).
    pub image: [f64; 3],
    /// The points' images on the conformal sphere.
    pub images: Vec<[f64; 3]>,
    /// The model's pass at `image`.
    pub pass: ModelPass,
}

/// The Fermat–Weber point of the points' images on Gauss's conformal sphere fitted at
/// `centre`, mapped back to the ellipsoid: Newton's method on the sphere (Hessian of the
/// great-circle angle, `cot θ (I − uuᵀ)`), Weiszfeld's step when Newton's does not lower the
/// model's cost, stopping at a data point or when steps vanish. Only a starting point for
/// the exact iteration, so it returns `centre` itself if it gets nowhere.
/// Stops at the point reached when `clock` says so (asked before every model pass); `None`
/// when it is cancelled while the images are made (asked per chunk of [`CHUNK`] points from
/// [`PARALLEL_MIN_POINTS`] on: set-up that the deadline does not cut).
pub(super) fn model_optimum(
    points: &[Point],
    weights: Weights<'_>,
    centre: Point,
    clock: &Clock,
) -> Option<ModelOptimum> {
    let sphere = ConformalSphere::at(centre);
    let images: Vec<[f64; 3]> = if points.len() < PARALLEL_MIN_POINTS {
        points.iter().map(|&p| sphere.image(p)).collect()
    } else {
        let chunks: Vec<Option<Vec<[f64; 3]>>> = points
            .par_chunks(CHUNK)
            .map(|chunk| (!clock.watch.is_cancelled()).then(|| chunk.iter().map(|&p| sphere.image(p)).collect()))
            .collect();
        let mut images = Vec::with_capacity(points.len());
        for chunk in chunks {
            images.extend(chunk?);
        }
        images
    };
    let mut y = sphere.image(centre);
    let mut current = model_evaluate(y, &images, weights);
    let mut passes = 1;
    while passes < MODEL_PASSES && !current.at_point && !clock.stop() {
        let weiszfeld = [-current.grad[0] / current.inv, -current.grad[1] / current.inv];
        let candidates = newton_2x2(current.hess, current.grad, current.max_angle)
            .into_iter()
            .chain([weiszfeld, [weiszfeld[0] / 4.0, weiszfeld[1] / 4.0]]);
        let mut moved = None;
        for step in candidates {
            if clock.stop() {
                break;
            }
            let z = sphere_exp(y, step);
            let trial = model_evaluate(z, &images, weights);
            passes += 1;
            if trial.cost < current.cost {
                moved = Some((z, trial, step[0].hypot(step[1])));
                break;
            }
        }
        let Some((z, trial, length)) = moved else { break };
        y = z;
        current = trial;
        if length < MODEL_STEP_RADIANS {
            break;
        }
    }
    let found = sphere.preimage(y);
    Some(if found[0].is_finite() && found[1].is_finite() {
        ModelOptimum { location: found, image: y, images, pass: current }
    } else {
        let image = sphere.image(centre);
        let pass = model_evaluate(image, &images, weights);
        ModelOptimum { location: centre, image, images, pass }
    })
}

#[cfg(test)]
mod tests {
    use super::{model_seen, tangent_basis};

    /// Against spherical trigonometry on unit vectors, seen from (1, 0, 0) (latitude 0,
    /// longitude 0; east (0, 1, 0), north (0, 0, 1)).
    #[test]
    fn model_seen_gives_the_great_circle_angle_and_direction() {
        let y = [1.0, 0.0, 0.0];
        let (e1, e2) = tangent_basis(y);
        let (s30, c30) = 30f64.to_radians().sin_cos();
        let close = |a: f64, b: f64| (a - b).abs() < 1e-12;
        let east = model_seen(y, e1, e2, [0.0, 1.0, 0.0]).unwrap();
        assert!(
            close(east.angle, std::f64::consts::FRAC_PI_2) && close(east.toward[0], 1.0) && close(east.toward[1], 0.0)
        );
        let north = model_seen(y, e1, e2, [c30, 0.0, s30]).unwrap();
        assert!(close(north.angle, std::f64::consts::PI / 6.0));
        assert!(close(north.toward[0], 0.0) && close(north.toward[1], 1.0));
        assert!(close(north.cos, c30) && close(north.sin, s30));
        // Azimuth A from the spherical law of cosines for the side opposite the pole:
        // cos A = (sin φ₂ − sin φ₁ cos θ) / (cos φ₁ sin θ) = sin 30° = 1/2, so A = 60°
        // east of north: the unit tangent is (sin A, cos A) = (√3/2, 1/2) in (east, north).
        let far = model_seen(y, e1, e2, [0.0, c30, s30]).unwrap();
        assert!(close(far.angle, std::f64::consts::FRAC_PI_2));
        assert!(close(far.toward[0], 3f64.sqrt() / 2.0) && close(far.toward[1], 0.5));
        // No direction at the point itself (cos 1) or its antipode (cos −1).
        assert_eq!(model_seen(y, e1, e2, y).err(), Some(1.0));
        assert_eq!(model_seen(y, e1, e2, [-1.0, 0.0, 0.0]).err(), Some(-1.0));
    }
}
