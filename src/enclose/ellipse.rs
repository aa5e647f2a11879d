//! Minimum-area enclosing ellipse (the Löwner–John ellipse of a planar point set).
//!
//! Khachiyan's (1996) barycentric coordinate ascent on the dual, with the away steps of Todd
//! and Yildirim (2007), "On Khachiyan's algorithm for the computation of minimum-volume
//! enclosing ellipsoids", and the initial core set of Kumar and Yildirim (2005),
//! "Minimum-volume enclosing ellipsoids and core sets": the extreme points along one
//! direction and along a direction orthogonal to the first pair.
//!
//! The dual variables `u` (a probability vector over the points) give the mean
//! `c = Σ uᵢ aᵢ`, the covariance `Σ(u) = Σ uᵢ (aᵢ − c)(aᵢ − c)ᵀ` and the Mahalanobis
//! distances `mᵢ = (aᵢ − c)ᵀ Σ⁻¹ (aᵢ − c)`. The ellipse `(x − c)ᵀ Σ⁻¹ (x − c) ≤ max mᵢ`
//! covers every point, and weak duality bounds every covering ellipse's area from below by
//! `2π √det Σ` (from `1 ≥ Σ uᵢ (aᵢ − z)ᵀ A (aᵢ − z) ≥ tr(AΣ) ≥ 2 √det(AΣ)`), so
//! `max mᵢ / 2 − 1` is a certified bound on the relative area gap. Iterations stop when it
//! is at most `tol` and no point carrying weight lies far inside (Todd and Yildirim's
//! approximate complementarity), so the points that carry weight are on the boundary.
//!
//! The ellipse depends only on the convex hull's vertices, so the iteration runs on those
//! (see [`crate::geometry::hull`]), in their [`WorkingFrame`] (centred on the bounding box
//! and scaled by a power of two to unit size). The 2×2 algebra (the covariance's inverse,
//! the eigen-decomposition of the final form) is nalgebra's.

use nalgebra::{Matrix2, SymmetricEigen, Vector2};

use super::{run_supported, Supported};
use crate::batch::{Grouped, OnGroupError};
use crate::error::{Error, Result};
use crate::geometry::hull::hull_vertices;
use crate::geometry::{scale, sub, validate_points, Point, Weights, WorkingFrame};

/// Iteration limit; the certified `relative_gap` is reported whether or not it was reached.
const MAX_ITERATIONS: usize = 200_000;

/// The minimum-area ellipse enclosing a point set.
#[derive(Debug, Clone, PartialEq)]
pub struct Ellipse {
    /// Centre `c`.
    pub center: Point,
    /// Symmetric positive definite `A` with `(x − c)ᵀ A (x − c) ≤ 1` for every input point.
    pub shape: [[f64; 2]; 2],
    /// Length of the semi-major axis.
    pub semi_major: f64,
    /// Length of the semi-minor axis (`≤ semi_major`).
    pub semi_minor: f64,
    /// Direction of the major axis in degrees counter-clockwise from the +x axis, in
    /// `(−90, 90]`; 0 for a circle (semi-axes equal to within the gap or [`ROUND_WITHIN`]).
    pub angle: f64,
    /// `π · semi_major · semi_minor`.
    pub area: f64,
    /// Indices of the input points (hull vertices) that carry the dual weight, in
    /// increasing order; they lie on the boundary up to `tol`.
    pub support: Vec<usize>,
    /// Certified bound on `area / (minimum area) − 1`.
    pub relative_gap: f64,
    /// Iterations (coordinate steps) taken.
    pub iterations: usize,
    /// True when `relative_gap ≤ tol` was reached within the iteration limit.
    pub converged: bool,
}

/// The minimum-area enclosing ellipse of `points`, to a relative area gap of `tol`.
///
/// # Errors
/// - [`Error::TooFewPoints`] when `points` is empty or holds fewer than three distinct points;
/// - [`Error::Degenerate`] when all points are collinear (no ellipse of positive area);
/// - [`Error::NonFiniteCoordinate`] for a NaN or infinite coordinate;
/// - [`Error::InvalidParameter`] unless `0 < tol < 1`.
///
/// # Runtime
/// O(n log n) for the hull, then O(h) per iteration on its h vertices; the away steps give
/// linear convergence, so the iteration count grows like `log(1/tol)` times a factor of the
/// hull's size.
pub fn enclosing_ellipse(points: &[Point], tol: f64) -> Result<Ellipse> {
    validate_tol(tol)?;
    validate_points("points", points, 1)?;
    solve(points, tol)
}

/// [`enclosing_ellipse`] for every group of a labelled cloud, in parallel (see
/// [`crate::batch`]); support indices refer to the whole input.
///
/// # Errors
/// As [`enclosing_ellipse`], with [`Error::InGroup`] naming the group; and
/// [`Error::LengthMismatch`] when `labels` does not have one entry per point.
pub fn enclosing_ellipses(
    points: &[Point],
    labels: &[i64],
    tol: f64,
    on_error: OnGroupError,
) -> Result<Grouped<Ellipse>> {
    validate_tol(tol)?;
    run_supported(points, Weights::Unit, labels, on_error, |group| solve(group.points, tol))
}

impl Supported for Ellipse {
    fn support_mut(&mut self) -> &mut Vec<usize> {
        &mut self.support
    }
}

fn validate_tol(tol: f64) -> Result<()> {
    if !(tol > 0.0 && tol < 1.0) {
        return Err(Error::InvalidParameter { name: "tol", reason: format!("must satisfy 0 < tol < 1; got {tol:?}") });
    }
    Ok(())
}

/// Mean, covariance `Σ(u)` and its inverse of the points under weights `u`.
struct Moments {
    mean: Vector2<f64>,
    /// `Σ⁻¹`; NaN when `Σ` is singular (then no distance is finite and the iteration stops).
    inverse: Matrix2<f64>,
    det: f64,
}

fn moments(q: &[Point], u: &[f64]) -> Moments {
    let mean: Vector2<f64> = q.iter().zip(u).map(|(p, &w)| Vector2::new(p[0], p[1]) * w).sum();
    let covariance: Matrix2<f64> = q
        .iter()
        .zip(u)
        .map(|(p, &w)| {
            let d = Vector2::new(p[0], p[1]) - mean;
            d * d.transpose() * w
        })
        .sum();
    let inverse = covariance.try_inverse().unwrap_or_else(|| Matrix2::from_element(f64::NAN));
    Moments { mean, inverse, det: covariance.determinant() }
}

/// The squared Mahalanobis distance `(p − c)ᵀ Σ⁻¹ (p − c)`.
#[inline]
fn mahalanobis(m: &Moments, p: Point) -> f64 {
    let d = Vector2::new(p[0], p[1]) - m.mean;
    d.dot(&(m.inverse * d))
}

fn degenerate_input(points: &[Point], hull: &[usize]) -> Error {
    let distinct = match hull.len() {
        0 | 1 => hull.len(),
        _ => {
            let (a, b) = (points[hull[0]], points[hull[1]]);
            if points.iter().any(|&p| p != a && p != b) {
                3
            } else {
                2
            }
        }
    };
    if distinct < 3 {
        Error::TooFewPoints { argument: "points", needed: 3, got: distinct, counted: "distinct points" }
    } else {
        Error::Degenerate {
            argument: "points",
            reason: "all points are collinear; no ellipse of positive area encloses them".into(),
        }
    }
}

/// Solve; points are validated and `tol` is in range.
fn solve(points: &[Point], tol: f64) -> Result<Ellipse> {
    let hull = hull_vertices(points);
    if hull.len() < 3 {
        return Err(degenerate_input(points, &hull));
    }
    let hull_points: Vec<Point> = hull.iter().map(|&i| points[i]).collect();
    // The hull's bounding box is the set's, so this is the points' own working frame.
    let frame = WorkingFrame::of(&hull_points);
    let factor = frame.factor;
    let q = frame.local(&hull_points);
    let h = q.len();

    // Kumar–Yildirim start: extremes along x, then along the normal of that pair.
    let arg = |key: &dyn Fn(Point) -> f64, largest: bool| -> usize {
        let mut best = 0;
        for k in 1..h {
            let (a, b) = (key(q[k]), key(q[best]));
            if (largest && a > b) || (!largest && a < b) {
                best = k;
            }
        }
        best
    };
    let (i_hi, i_lo) = (arg(&|p| p[0], true), arg(&|p| p[0], false));
    let dir = sub(q[i_hi], q[i_lo]);
    let normal = [-dir[1], dir[0]];
    let along = move |p: Point| normal[0] * p[0] + normal[1] * p[1];
    let (j_hi, j_lo) = (arg(&along, true), arg(&along, false));
    let mut u = vec![0.0; h];
    for k in [i_hi, i_lo, j_hi, j_lo] {
        u[k] += 0.25;
    }

    // Optimality targets: gap = 1.5 ε₊ in the plane (lifted dimension 3), so ε = tol / 1.5.
    let eps = tol / 1.5;
    let mut omega = vec![0.0; h];
    let mut iterations = 0;
    let mut converged = false;
    loop {
        let m = moments(&q, &u);
        let (mut hi, mut lo) = (0usize, usize::MAX);
        for k in 0..h {
            // Lifted ω = 1 + Mahalanobis distance.
            omega[k] = 1.0 + mahalanobis(&m, q[k]);
            if omega[k] > omega[hi] {
                hi = k;
            }
            if u[k] > 0.0 && (lo == usize::MAX || omega[k] < omega[lo]) {
                lo = k;
            }
        }
        let (kappa_hi, kappa_lo) = (omega[hi], omega[lo]);
        let eps_plus = kappa_hi / 3.0 - 1.0;
        let eps_minus = 1.0 - kappa_lo / 3.0;
        if eps_plus <= eps && eps_minus <= eps {
            converged = true;
            break;
        }
        if iterations >= MAX_ITERATIONS || !kappa_hi.is_finite() {
            break;
        }
        iterations += 1;
        if eps_plus > eps_minus {
            // Khachiyan's step towards the farthest point.
            let tau = (kappa_hi - 3.0) / (3.0 * (kappa_hi - 1.0));
            for w in &mut u {
                *w *= 1.0 - tau;
            }
            u[hi] += tau;
        } else {
            // Todd–Yildirim away step from the nearest weighted point (a drop step when
            // its weight runs out).
            let full = (3.0 - kappa_lo) / (3.0 * (kappa_lo - 1.0));
            let limit = u[lo] / (1.0 - u[lo]);
            let tau = full.min(limit);
            for w in &mut u {
                *w *= 1.0 + tau;
            }
            if tau >= limit {
                u[lo] = 0.0;
            } else {
                u[lo] -= tau;
            }
        }
    }

    let m = moments(&q, &u);
    let reach = (0..h).map(|k| mahalanobis(&m, q[k])).fold(0.0f64, f64::max);
    let center = frame.to_world([m.mean.x, m.mean.y]);
    // The form in the unit frame; cover exactly in the caller's coordinates (the frame
    // change rounds), evaluating there with only the frame's exact power-of-two scaling.
    let mut local = m.inverse / reach;
    let c_scaled = scale(center, factor);
    let worst = points.iter().map(|&p| form(&local, sub(scale(p, factor), c_scaled))).fold(0.0f64, f64::max);
    if worst > 1.0 {
        local /= worst;
    }
    let shape = local * (factor * factor);
    let local_det = local.determinant();
    let det = shape.determinant();
    if !(shape.iter().all(|v| v.is_finite()) && local_det > 0.0 && det > 0.0) {
        return Err(Error::Degenerate {
            argument: "points",
            reason: "the ellipse's matrix is not representable in floating point at this coordinate scale".into(),
        });
    }
    let area = std::f64::consts::PI / det.sqrt();
    // Relative gap in the unit frame (the ratio is scale-free): π/√det(local) over 2π√det Σ.
    let relative_gap = (0.5 / (local_det.sqrt() * m.det.sqrt()) - 1.0).max(0.0);
    let (semi_major, semi_minor, mut angle) = axes(shape, det);
    // So round an ellipse (semi-axes equal to within the certified gap, or a part in 10⁹)
    // has no axis direction the data fix: what the solve reports is rounding and iteration
    // noise (tens of degrees on a regular polygon). A circle's angle is 0.
    if semi_major / semi_minor - 1.0 <= relative_gap.max(ROUND_WITHIN) {
        angle = 0.0;
    }
    let mut support: Vec<usize> = (0..h).filter(|&k| u[k] > 0.0).map(|k| hull[k]).collect();
    support.sort_unstable();
    Ok(Ellipse {
        center,
        shape: [[shape[(0, 0)], shape[(0, 1)]], [shape[(1, 0)], shape[(1, 1)]]],
        semi_major,
        semi_minor,
        angle,
        area,
        support,
        relative_gap,
        iterations,
        converged: converged && relative_gap <= tol,
    })
}

/// Relative difference of the semi-axes below which (with the certified gap) an ellipse is
/// reported as a circle, angle 0: coordinates offset from their origin by 10⁴ times the
/// ellipse's size carry rounding of about 10⁻¹² into its axes.
const ROUND_WITHIN: f64 = 1e-9;

/// Semi-major axis, semi-minor axis and the major axis's direction (degrees
/// counter-clockwise from +x, in `(−90, 90]`) of `{d : dᵀ A d ≤ 1}`, from the
/// eigen-decomposition of the positive definite `A` (determinant `det`): a semi-axis is
/// `1/√λ` along its eigenvector, so the major axis belongs to the smaller eigenvalue.
fn axes(shape: Matrix2<f64>, det: f64) -> (f64, f64, f64) {
    let eigen = SymmetricEigen::new(shape);
    let (minor, major) = if eigen.eigenvalues[0] <= eigen.eigenvalues[1] { (1, 0) } else { (0, 1) };
    let large = eigen.eigenvalues[minor];
    // The smaller eigenvalue from the determinant: relatively accurate however elongated the
    // ellipse (the difference of the quadratic formula cancels).
    let small = det / large;
    let direction = eigen.eigenvectors.column(major);
    let mut angle = direction.y.atan2(direction.x).to_degrees();
    if angle > 90.0 {
        angle -= 180.0;
    } else if angle <= -90.0 {
        angle += 180.0;
    }
    if eigen.eigenvalues[0] == eigen.eigenvalues[1] {
        // A circle: every direction is an axis; report the +x axis.
        angle = 0.0;
    }
    (1.0 / small.sqrt(), 1.0 / large.sqrt(), angle)
}

/// `dᵀ A d`, expanded as `a dx² + 2b dx dy + c dy²`.
///
/// Why expanded rather than `d · (A d)`: for a thin ellipse the terms cancel, so the last
/// bits depend on the order of evaluation; the cover is certified in this, the textbook
/// order of the quadratic form (the one the documentation states and callers write).
#[inline]
fn form(shape: &Matrix2<f64>, d: Point) -> f64 {
    shape[(0, 0)] * d[0] * d[0] + 2.0 * shape[(0, 1)] * d[0] * d[1] + shape[(1, 1)] * d[1] * d[1]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::random::SplitMix64;

    fn value(e: &Ellipse, p: Point) -> f64 {
        let d = sub(p, e.center);
        e.shape[0][0] * d[0] * d[0] + 2.0 * e.shape[0][1] * d[0] * d[1] + e.shape[1][1] * d[1] * d[1]
    }

    #[test]
    fn triangle_gives_its_steiner_circumellipse() {
        // Closed form: the minimum-area ellipse of a triangle is its Steiner circumellipse,
        // centred at the centroid, of area 4π/(3√3) times the triangle's; for (0,0), (1,0),
        // (0,1) its matrix is A = [[3, 1.5], [1.5, 3]] (from (x−c)ᵀA(x−c) = 1 through the
        // vertices with c = (1/3, 1/3)).
        let e = enclosing_ellipse(&[[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]], 1e-10).unwrap();
        assert!((e.center[0] - 1.0 / 3.0).abs() < 1e-9 && (e.center[1] - 1.0 / 3.0).abs() < 1e-9);
        for (got, want) in [(e.shape[0][0], 3.0), (e.shape[0][1], 1.5), (e.shape[1][1], 3.0)] {
            assert!((got - want).abs() < 1e-8, "{:?}", e.shape);
        }
        let want_area = 4.0 * std::f64::consts::PI / (3.0 * 3f64.sqrt()) * 0.5;
        assert!((e.area - want_area).abs() < 1e-9 * want_area);
        assert_eq!(e.support, vec![0, 1, 2]);
        assert!(e.converged && e.relative_gap <= 1e-10);
    }

    #[test]
    fn regular_polygons_give_their_circumcircle_at_angle_zero() {
        // Closed form: the minimum-area ellipse of a regular polygon is its circumcircle
        // (radius 5 here, far from the origin); its angle was iteration noise (36.6° for
        // the triangle, 53.6° for the square). A cloud 1 % longer along 30° keeps its axis.
        for n in [3usize, 4, 5, 6, 12] {
            for tol in [1e-7, 1e-10] {
                let pts: Vec<Point> = (0..n)
                    .map(|k| {
                        let t = 0.3 + k as f64 * std::f64::consts::TAU / n as f64;
                        [1e5 + 5.0 * t.cos(), 2e5 + 5.0 * t.sin()]
                    })
                    .collect();
                let e = enclosing_ellipse(&pts, tol).unwrap();
                assert!((e.semi_major - 5.0).abs() < 1e-6 && (e.semi_minor - 5.0).abs() < 1e-6, "{n}: {e:?}");
                assert_eq!(e.angle, 0.0, "{n} sides, tol {tol}");
            }
        }
        let th = 30f64.to_radians();
        let pts: Vec<Point> = (0..40)
            .map(|k| {
                let t = k as f64 * std::f64::consts::TAU / 40.0;
                let (x, y) = (1.01 * t.cos(), t.sin());
                [x * th.cos() - y * th.sin(), x * th.sin() + y * th.cos()]
            })
            .collect();
        let e = enclosing_ellipse(&pts, 1e-10).unwrap();
        assert!((e.angle - 30.0).abs() < 1e-3, "{}", e.angle);
    }

    #[test]
    fn rectangle_gives_semi_axes_a_over_root_two() {
        // Closed form: the minimum-area ellipse of an a × b rectangle is the affine image of
        // the square's circumcircle, with semi-axes a/√2 and b/√2.
        let (a, b) = (6.0, 2.0);
        let pts = [[0.0, 0.0], [a, 0.0], [a, b], [0.0, b], [1.0, 1.0], [3.0, 0.0]];
        let e = enclosing_ellipse(&pts, 1e-10).unwrap();
        assert!((e.semi_major - a / 2f64.sqrt()).abs() < 1e-8 * a);
        assert!((e.semi_minor - b / 2f64.sqrt()).abs() < 1e-8 * b);
        assert!(e.angle.abs() < 1e-6);
        assert_eq!(e.support, vec![0, 1, 2, 3]);
    }

    #[test]
    fn covers_every_point_and_support_is_on_the_boundary_far_from_origin() {
        let mut g = SplitMix64::new(23);
        let pts: Vec<Point> =
            (0..5000).map(|_| [500_000.0 + 30.0 * g.next_f64(), 6_000_000.0 + 10.0 * g.next_f64()]).collect();
        let tol = 1e-7;
        let e = enclosing_ellipse(&pts, tol).unwrap();
        assert!(e.converged && e.relative_gap <= tol);
        assert!(pts.iter().all(|&p| value(&e, p) <= 1.0 + 1e-12));
        for &s in &e.support {
            assert!(value(&e, pts[s]) >= 1.0 - 4.0 * tol, "{}", value(&e, pts[s]));
        }
    }

    #[test]
    fn degenerate_inputs_say_why() {
        let e = enclosing_ellipse(&[[0.0, 0.0], [1.0, 1.0], [1.0, 1.0]], 1e-7).unwrap_err();
        assert_eq!(e.to_string(), "points must hold at least 3 distinct points; got 2");
        let line: Vec<Point> = (0..9).map(|i| [i as f64, 3.0]).collect();
        let e = enclosing_ellipse(&line, 1e-7).unwrap_err();
        assert!(e.to_string().contains("collinear"));
        assert!(enclosing_ellipse(&line, 0.0).is_err());
        assert!(enclosing_ellipse(&line, f64::NAN).is_err());
    }

    #[test]
    fn a_degenerate_group_is_skipped_and_the_others_solved() {
        // A one-point group has no ellipse: with Skip it becomes that group's outcome
        // (labelled with the group), and the triangle group is still solved.
        let pts = [[0.0, 0.0], [5.0, 5.0], [1.0, 0.0], [0.0, 1.0]];
        let g = enclosing_ellipses(&pts, &[1, 2, 1, 1], 1e-9, OnGroupError::Skip).unwrap();
        assert_eq!(g.labels, vec![1, 2]);
        assert_eq!(g.results[0].as_ref().unwrap().support, vec![0, 2, 3]);
        let e = g.results[1].as_ref().unwrap_err();
        assert_eq!(e.to_string(), "group 2: points must hold at least 3 distinct points; got 1");
        assert!(enclosing_ellipses(&pts, &[1, 2, 1, 1], 1e-9, OnGroupError::Raise).is_err());
    }

    #[test]
    fn rotated_ellipse_points_give_that_ellipse() {
        // Points on an ellipse (semi-axes 5 and 2, major axis at 0.6 rad) spread all round it:
        // the ellipse itself is the smallest one containing them (it is the MVEE of its own
        // boundary, by affine equivariance of the circle case).
        let (ra, rb, th) = (5.0, 2.0, 0.6f64);
        let pts: Vec<Point> = (0..40)
            .map(|k| {
                let t = k as f64 * std::f64::consts::TAU / 40.0;
                let (x, y) = (ra * t.cos(), rb * t.sin());
                [x * th.cos() - y * th.sin(), x * th.sin() + y * th.cos()]
            })
            .collect();
        let e = enclosing_ellipse(&pts, 1e-12).unwrap();
        assert!((e.semi_major - ra).abs() < 1e-8 && (e.semi_minor - rb).abs() < 1e-8, "{e:?}");
        assert!((e.angle - th.to_degrees()).abs() < 1e-6);
    }

    proptest::proptest! {
        #[test]
        fn ellipse_covers_certifies_and_support_is_on_the_boundary(
            raw in proptest::collection::vec((-1e3f64..1e3, -1e3f64..1e3), 3..60)
        ) {
            let pts: Vec<Point> = raw.iter().map(|&(x, y)| [x, y]).collect();
            let tol = 1e-8;
            match enclosing_ellipse(&pts, tol) {
                Ok(e) => {
                    proptest::prop_assert!(pts.iter().all(|&p| value(&e, p) <= 1.0 + 1e-12));
                    proptest::prop_assert!(e.converged && e.relative_gap <= tol);
                    for &s in &e.support {
                        proptest::prop_assert!(value(&e, pts[s]) >= 1.0 - 4.0 * tol);
                    }
                }
                Err(err) => proptest::prop_assert!(err.is_degenerate()),
            }
        }
    }
}
