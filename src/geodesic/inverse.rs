//! The inverse geodesic problem, distance and initial azimuth only, for the ordinary case
//! that dominates one-to-many passes (a site seen from every point of a national cloud).
//!
//! # Method
//! Karney's (2013, "Algorithms for geodesics", J. Geodesy 87, §4) solution: on the auxiliary
//! sphere, Newton's method on the azimuth `α₁` at the first point until the geodesic
//! through it reaches the second point's longitude, with the distance from the series of
//! the same paper. The series, the starting guess and the length integrals are the
//! `geographiclib-rs` crate's own (`_InverseStart`, `_C3f`, `_A3f`, `_Lengths`); only the
//! Newton loop is written here, and it differs from GeographicLib's in what it stops on:
//!
//! - GeographicLib iterates until the longitude residual `v` is below the unit roundoff,
//!   which costs one more evaluation after the step that made `v ≈ 1e-12`, then evaluates
//!   the length integrals once more. Here each evaluation computes the distance along with
//!   the derivative `λ' = dλ/dα₁ = m₁₂/(cos α₂ cos β₂)` (one call of the length series for
//!   both), and the loop stops as soon as the remaining Newton step `δ = −v/λ'` is below
//!   [`STEP_TOLERANCE`]; from GeographicLib's starting guess a national-scale pair
//!   typically gets there at the first evaluation, where GeographicLib makes three.
//! - That last step is taken to second order (Halley's correction `−½(λ''/λ')δ²`, with `λ''`
//!   the curvature of the auxiliary sphere's `ω(α₁)`; its relative error O(f) leaves
//!   O(f·δ²)). The distance is carried to the far point by Taylor's expansion along the far
//!   point's parallel: slope `a cos β₂ sin α₂` per radian of longitude (the gradient of
//!   distance at an end is the unit tangent there, and `a cos β` is the radius of the parallel
//!   of reduced latitude β), curvature that of the auxiliary sphere,
//!   `(cos β₁ cos β₂ cos ω₁₂ − cos σ₁₂ (cos β₂ sin α₂)²)/sin σ₁₂` times `a`.
//! - Normalisations use `sqrt(x² + y²)`, not `hypot`, whose overflow guard costs as much
//!   as the rest of a normalisation: the arguments here are sines and cosines.
//!
//! Accuracy against GeographicLib (the tests): within [`DISTANCE_RELATIVE_ACCURACY`] of the
//! distance plus 5 nm, and [`AZIMUTH_ACCURACY`] in azimuth (worst over 200,000 random
//! ordinary pairs: 7.8e-14 of the distance, 4.0e-14 radians). Certificates built on it add
//! both to their allowances.
//!
//! Anything out of the ordinary (a point at a pole, both points on the equator, a meridian,
//! longitude differences beyond 90°, lines longer than a quarter of the globe, or a Newton
//! step GeographicLib would have replaced by bisection) returns `None`, and the caller
//! solves the whole problem with `geographiclib-rs`.

use geographiclib_rs::capability::{DISTANCE, REDUCEDLENGTH};
use geographiclib_rs::Geodesic;

/// Newton steps in `α₁` (radians) below this end the iteration (see the module docs).
const STEP_TOLERANCE: f64 = 2e-6;
/// Largest Halley term (radians) the last step may carry: its O(f) error stays below 1e-14.
const HALLEY_TERM_LIMIT: f64 = 3e-12;
/// Largest second-order distance term the last step may carry, relative to the distance:
/// its O(f) error stays below 1e-13 of the distance.
const DISTANCE_TERM_LIMIT: f64 = 3e-11;
/// Relative accuracy of a distance from the ordinary path, beyond GeographicLib's own (about
/// 15 nm absolute): certificates add it to their allowance for the inverse problem.
pub(crate) const DISTANCE_RELATIVE_ACCURACY: f64 = 2e-13;
/// Accuracy of the azimuth from the ordinary path, radians.
pub(crate) const AZIMUTH_ACCURACY: f64 = 1e-13;
/// Largest longitude difference (degrees) taken on this path.
const MAX_LONGITUDE_DIFFERENCE: f64 = 90.0;
/// Largest arc on the auxiliary sphere (radians) taken on this path: a quarter turn keeps
/// the derivative `dλ/dα₁` well away from zero (it vanishes at the conjugate point, near
/// the antipode).
const MAX_ARC: f64 = std::f64::consts::FRAC_PI_2;
/// Evaluations before the ordinary path gives up (GeographicLib typically needs 3–4).
const MAX_EVALUATIONS: usize = 8;

/// The unit-roundoff floor GeographicLib puts under small angles (`AngRound`), so that tiny
/// differences do not produce subnormal sines.
fn rounded_angle(x: f64) -> f64 {
    const Z: f64 = 1.0 / 16.0;
    let y = x.abs();
    let y = if y < Z { Z - (Z - y) } else { y };
    y.copysign(x)
}

/// `(sin, cos)` of an angle in degrees, reduced to within 45° first so that multiples of 90°
/// come out exact (as GeographicLib's `sincosd`).
fn sincos_degrees(x: f64) -> (f64, f64) {
    let quarter = (x / 90.0).round();
    let (s, c) = (x - 90.0 * quarter).to_radians().sin_cos();
    let (s, c) = match (quarter as i64).rem_euclid(4) {
        0 => (s, c),
        1 => (c, -s),
        2 => (-s, -c),
        _ => (-c, s),
    };
    (s + 0.0, c + 0.0)
}

/// Scale `(x, y)` to unit length.
fn normalised(x: f64, y: f64) -> (f64, f64) {
    let r = (x * x + y * y).sqrt();
    (x / r, y / r)
}

/// `atan2(y, x)`, with the first terms of the arctangent series when `y` is a small part of
/// a positive `x` (the longitude residual near convergence): `t⁹/9` is below the unit
/// roundoff of `t` for `|t| ≤ 1/256`.
fn small_angle_atan2(y: f64, x: f64) -> f64 {
    if x > 0.0 && y.abs() <= x * (1.0 / 256.0) {
        let t = y / x;
        let t2 = t * t;
        t * (1.0 - t2 * (1.0 / 3.0 - t2 * (1.0 / 5.0 - t2 * (1.0 / 7.0))))
    } else {
        y.atan2(x)
    }
}

/// Clenshaw summation of `Σ c[l] sin 2lσ` (l = 1..6), the series of Karney (2013, eq. 18).
fn sine_series(sin_sigma: f64, cos_sigma: f64, c: &[f64; 6]) -> f64 {
    // c[0] is unused by a sine series (GeographicLib's C3 coefficients start at index 1).
    let ar = 2.0 * (cos_sigma - sin_sigma) * (cos_sigma + sin_sigma);
    let (mut y0, mut y1) = (c[5], 0.0);
    for k in (1..5).rev() {
        let y2 = y1;
        y1 = y0;
        y0 = ar * y1 - y2 + c[k];
    }
    2.0 * sin_sigma * cos_sigma * y0
}

/// The two latitudes on the auxiliary sphere, as GeographicLib prepares them.
#[derive(Clone, Copy)]
struct Latitudes {
    sbet1: f64,
    cbet1: f64,
    dn1: f64,
    sbet2: f64,
    cbet2: f64,
    dn2: f64,
}

/// One evaluation of the longitude residual and what it needs.
struct Evaluation {
    /// Longitude reached less the target, radians.
    residual: f64,
    /// `dλ/dα₁`.
    slope: f64,
    salp2: f64,
    calp2: f64,
    /// Distance along the geodesic to the far point's latitude, in units of the minor axis.
    s12b: f64,
    /// Sine and cosine of the arc `σ₁₂` on the auxiliary sphere.
    ssig12: f64,
    csig12: f64,
    /// Cosine of the longitude difference `ω₁₂` on the auxiliary sphere.
    comg12: f64,
}

/// `(sin α₂, cos α₂)` (not normalised) at the far latitude of the geodesic leaving with
/// `(salp1, calp1)`, by Clairaut's relation as GeographicLib writes it (exact for equal and
/// for opposite latitudes); `cos α₂` is 0 where the geodesic does not reach the far latitude.
fn far_azimuth(lat: &Latitudes, salp1: f64, calp1: f64) -> (f64, f64) {
    let Latitudes { sbet1, cbet1, sbet2, cbet2, .. } = *lat;
    let salp2 = if cbet2 != cbet1 { salp1 * cbet1 / cbet2 } else { salp1 };
    let calp2 = if cbet2 != cbet1 || sbet2.abs() != -sbet1 {
        let across = if cbet1 < -sbet1 { (cbet2 - cbet1) * (cbet1 + cbet2) } else { (sbet1 - sbet2) * (sbet1 + sbet2) };
        ((calp1 * cbet1) * (calp1 * cbet1) + across).max(0.0).sqrt() / cbet2
    } else {
        calp1.abs()
    };
    (salp2, calp2)
}

/// Karney's `Λ₁₂(α₁)` (2013, §4 eqs. 8, 25) with the distance and `dλ/dα₁` from one call of
/// the length series.
fn evaluate(g: &Geodesic, lat: &Latitudes, salp1: f64, calp1: f64, slam12: f64, clam12: f64) -> Option<Evaluation> {
    let Latitudes { sbet1, cbet1, dn1, sbet2, cbet2, dn2 } = *lat;
    let salp0 = salp1 * cbet1;
    let calp0 = (calp1 * calp1 + (salp1 * sbet1) * (salp1 * sbet1)).sqrt();
    let (ssig1, csig1) = normalised(sbet1, calp1 * cbet1);
    let (somg1, comg1) = (salp0 * sbet1, calp1 * cbet1);
    let (salp2, calp2) = far_azimuth(lat, salp1, calp1);
    if !(calp2 > 0.0) {
        return None;
    }
    let (ssig2, csig2) = normalised(sbet2, calp2 * cbet2);
    let (somg2, comg2) = (salp0 * sbet2, calp2 * cbet2);
    let sig12 = (csig1 * ssig2 - ssig1 * csig2).max(0.0).atan2(csig1 * csig2 + ssig1 * ssig2);
    if !(sig12 <= MAX_ARC) {
        return None;
    }
    let somg12 = (comg1 * somg2 - somg1 * comg2).max(0.0);
    let comg12 = comg1 * comg2 + somg1 * somg2;
    let eta = small_angle_atan2(somg12 * clam12 - comg12 * slam12, comg12 * clam12 + somg12 * slam12);
    let k2 = calp0 * calp0 * g._ep2;
    let eps = k2 / (2.0 * (1.0 + (1.0 + k2).sqrt()) + k2);
    let mut c3 = [0.0; 6];
    g._C3f(eps, &mut c3);
    let b312 = sine_series(ssig2, csig2, &c3) - sine_series(ssig1, csig1, &c3);
    let residual = eta - g.f * g._A3f(eps) * salp0 * (sig12 + b312);
    let (mut c1, mut c2) = ([0.0; 7], [0.0; 7]);
    let (s12b, m12b, _, _, _) = g._Lengths(
        eps,
        sig12,
        ssig1,
        csig1,
        dn1,
        ssig2,
        csig2,
        dn2,
        cbet1,
        cbet2,
        DISTANCE | REDUCEDLENGTH,
        &mut c1,
        &mut c2,
    );
    let slope = m12b * g._f1 / (calp2 * cbet2);
    let ssig12 = (csig1 * ssig2 - ssig1 * csig2).max(0.0);
    let csig12 = csig1 * csig2 + ssig1 * ssig2;
    (residual.is_finite() && slope > 0.0 && ssig12 > 0.0).then_some(Evaluation {
        residual,
        slope,
        salp2,
        calp2,
        s12b,
        ssig12,
        csig12,
        // Scaled like `somg12`: atan2 above did not mind, the curvature does.
        comg12: comg12 / (somg12 * somg12 + comg12 * comg12).sqrt(),
    })
}

/// `d²ω₁₂/dα₁²` at fixed far latitude, on the auxiliary sphere: with `dω/dα₁ = sin σ/(cos α₂ cos β₂)`,
/// `dσ/dα₁ = tan α₂ sin σ` and Clairaut's `dα₂/dα₁ = cos α₁ cos β₁/(cos α₂ cos β₂)`,
/// `ω'' = sin σ sin α₂ (cos σ + cos α₁ cos β₁/(cos α₂ cos β₂)) / (cos² α₂ cos β₂)`.
fn longitude_curvature(lat: &Latitudes, calp1: f64, e: &Evaluation) -> f64 {
    let tilt = lat.cbet1 * calp1 / (e.calp2 * lat.cbet2);
    e.ssig12 * e.salp2 * (e.csig12 + tilt) / (e.calp2 * e.calp2 * lat.cbet2)
}

/// `½ σ''(ω) v²`, the second-order term of the distance (in units of the equatorial radius) from
/// the end reached to the far point along its parallel, on the auxiliary sphere:
/// `σ'' = (cos β₁ cos β₂ cos ω₁₂ − cos σ₁₂ (cos β₂ sin α₂)²)/sin σ₁₂`.
fn distance_curvature_term(lat: &Latitudes, e: &Evaluation) -> f64 {
    let along = lat.cbet2 * e.salp2;
    let curvature = (lat.cbet1 * lat.cbet2 * e.comg12 - e.csig12 * along * along) / e.ssig12;
    0.5 * curvature * e.residual * e.residual
}

/// Distance (metres) and the azimuth's `(sin, cos)` at the first point, of the geodesic from
/// `(lat1, lon1)` to `(lat2, lon2)` (degrees), when the pair is ordinary (see the module
/// docs); `None` otherwise.
pub(crate) fn ordinary_inverse(g: &Geodesic, lat1: f64, lon1: f64, lat2: f64, lon2: f64) -> Option<(f64, f64, f64)> {
    // Longitude difference in [-180, 180): exact for the inputs' range up to one rounding.
    let lon12 = (lon2 - lon1) - 360.0 * ((lon2 - lon1) / 360.0).round();
    if !(lon12.abs() <= MAX_LONGITUDE_DIFFERENCE) || lat1.abs() >= 90.0 || lat2.abs() >= 90.0 {
        return None;
    }
    let mut lonsign = if lon12 >= 0.0 { 1.0 } else { -1.0 };
    let lon12 = lonsign * rounded_angle(lon12);
    let lam12 = lon12.to_radians();
    let (slam12, clam12) = sincos_degrees(lon12);
    if slam12 == 0.0 {
        return None;
    }
    let (mut lat1, mut lat2) = (rounded_angle(lat1), rounded_angle(lat2));
    // Put the point farther from the equator first, in the southern hemisphere (Karney 2013,
    // §4: the canonical configuration the starting guess assumes).
    let swapped = lat1.abs() < lat2.abs();
    if swapped {
        lonsign = -lonsign;
        std::mem::swap(&mut lat1, &mut lat2);
    }
    let latsign = if lat1 < 0.0 { 1.0 } else { -1.0 };
    lat1 *= latsign;
    lat2 *= latsign;
    let reduced = |lat: f64| {
        let (s, c) = sincos_degrees(lat);
        let (s, c) = normalised(s * g._f1, c);
        (s, c.max(g.tiny_))
    };
    let (sbet1, cbet1) = reduced(lat1);
    let (mut sbet2, mut cbet2) = reduced(lat2);
    if sbet1 == 0.0 {
        return None;
    }
    // Equal latitudes, or equal and opposite: make the reduced ones exactly so.
    if cbet1 < -sbet1 {
        if cbet2 == cbet1 {
            sbet2 = if sbet2 < 0.0 { sbet1 } else { -sbet1 };
        }
    } else if sbet2.abs() == -sbet1 {
        cbet2 = cbet1;
    }
    let dn1 = (1.0 + g._ep2 * sbet1 * sbet1).sqrt();
    let dn2 = (1.0 + g._ep2 * sbet2 * sbet2).sqrt();
    let lat = Latitudes { sbet1, cbet1, dn1, sbet2, cbet2, dn2 };
    let (mut c1, mut c2) = ([0.0; 7], [0.0; 7]);
    let (sig12, mut salp1, mut calp1, mut salp2, mut calp2, dnm) =
        g._InverseStart(sbet1, cbet1, dn1, sbet2, cbet2, dn2, lam12, slam12, clam12, &mut c1, &mut c2);
    let s12 = if sig12 >= 0.0 {
        // Short line: the starting guess is already exact (Karney 2013, §4, eq. 48).
        sig12 * g._b * dnm
    } else {
        let mut solved = None;
        for _ in 0..MAX_EVALUATIONS {
            let e = evaluate(g, &lat, salp1, calp1, slam12, clam12)?;
            let mut step = -e.residual / e.slope;
            // The last step is taken to second order (Halley), with the curvature of λ(α₁) on
            // the auxiliary sphere, and the distance carried along the parallel to second
            // order: both curvatures are off by O(f) of themselves, so the step ends the
            // loop only while their terms are small enough for that not to show.
            let halley = 0.5 * longitude_curvature(&lat, calp1, &e) / e.slope * step * step;
            let last = step.abs() <= STEP_TOLERANCE
                && halley.abs() <= HALLEY_TERM_LIMIT
                && distance_curvature_term(&lat, &e).abs() <= DISTANCE_TERM_LIMIT * e.s12b;
            if last {
                step -= halley;
            }
            // A rotation by atan(step): first-order equal to the Newton step, which keeps
            // the convergence quadratic, at the price of no sine or cosine.
            let (s, c) = normalised(salp1 + calp1 * step, calp1 - salp1 * step);
            if !(s > 0.0 && step.abs() < 0.5) {
                return None;
            }
            (salp1, calp1) = (s, c);
            if last {
                solved = Some(e);
                break;
            }
        }
        let e = solved?;
        let v = e.residual;
        // The far end's azimuth after the last step.
        let (s2, c2) = far_azimuth(&lat, salp1, calp1);
        (salp2, calp2) = normalised(s2, c2);
        // Taylor's expansion of the distance to the far latitude's parallel, in longitude,
        // about the end reached (see the module docs): exact slope, spherical curvature.
        g._b * e.s12b - g.a * cbet2 * e.salp2 * v + g.a * distance_curvature_term(&lat, &e)
    };
    if swapped {
        std::mem::swap(&mut salp1, &mut salp2);
        std::mem::swap(&mut calp1, &mut calp2);
    }
    let sign = if swapped { -1.0 } else { 1.0 };
    Some((s12 + 0.0, salp1 * sign * lonsign, calp1 * sign * latsign))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::random::SplitMix64;
    use geographiclib_rs::capability::AZIMUTH;

    /// Reference: GeographicLib's inverse problem (`geographiclib-rs`, Karney 2013), to
    /// which the ordinary path must agree to [`DISTANCE_RELATIVE_ACCURACY`] of the distance
    /// plus 5 nm (GeographicLib's own accuracy is about 15 nm, §1; rounding the reduced
    /// latitudes differently moves a short line by a nanometre or so), and in azimuth to
    /// [`AZIMUTH_ACCURACY`]. Returns both errors in units of those allowances.
    fn compare(g: &Geodesic, a: [f64; 2], b: [f64; 2]) -> Option<(f64, f64)> {
        let (s, sa, ca) = ordinary_inverse(g, a[1], a[0], b[1], b[0])?;
        let (_, s_ref, sa_ref, ca_ref, ..) = g._gen_inverse(a[1], a[0], b[1], b[0], DISTANCE | AZIMUTH);
        let n = sa_ref.hypot(ca_ref);
        let (sa_ref, ca_ref) = (sa_ref / n, ca_ref / n);
        let angle = (sa * ca_ref - ca * sa_ref).atan2(ca * ca_ref + sa * sa_ref).abs();
        Some(((s - s_ref).abs() / (s_ref * DISTANCE_RELATIVE_ACCURACY + 5e-9), angle / AZIMUTH_ACCURACY))
    }

    #[test]
    fn ordinary_pairs_match_geographiclib() {
        let g = Geodesic::wgs84();
        let mut rng = SplitMix64::new(11);
        let (mut worst_distance, mut worst_angle, mut taken) = (0.0f64, 0.0f64, 0usize);
        let trials = 200_000;
        for k in 0..trials {
            // Half national-scale pairs (up to ~2,000 km), half anywhere within the limits.
            let span = if k % 2 == 0 { 15.0 } else { 90.0 };
            let lat1 = -85.0 + 170.0 * rng.next_f64();
            let lon1 = -540.0 + 1080.0 * rng.next_f64();
            let lat2 = (lat1 + span * (2.0 * rng.next_f64() - 1.0)).clamp(-89.9, 89.9);
            let lon2 = lon1 + span * (2.0 * rng.next_f64() - 1.0);
            if let Some((d, a)) = compare(&g, [lon1, lat1], [lon2, lat2]) {
                worst_distance = worst_distance.max(d);
                worst_angle = worst_angle.max(a);
                taken += 1;
            }
        }
        assert!(worst_distance <= 1.0, "distance off by {worst_distance} allowances");
        assert!(worst_angle <= 1.0, "azimuth off by {worst_angle} allowances");
        assert!(taken > trials / 2, "only {taken} of {trials} pairs took the ordinary path");
    }

    #[test]
    fn out_of_the_ordinary_pairs_are_declined() {
        let g = Geodesic::wgs84();
        // A pole, a meridian, the equator, a long line: GeographicLib's special cases.
        assert!(ordinary_inverse(&g, 90.0, 0.0, 10.0, 20.0).is_none());
        assert!(ordinary_inverse(&g, 10.0, 5.0, 40.0, 5.0).is_none());
        assert!(ordinary_inverse(&g, 0.0, 5.0, 0.0, 25.0).is_none());
        assert!(ordinary_inverse(&g, -40.0, 0.0, 50.0, 80.0).is_none());
        assert!(ordinary_inverse(&g, 10.0, 0.0, 10.0, 120.0).is_none());
    }

    #[test]
    fn short_and_tiny_lines_match_geographiclib() {
        let g = Geodesic::wgs84();
        let mut rng = SplitMix64::new(5);
        for _ in 0..20_000 {
            let lat1 = -80.0 + 160.0 * rng.next_f64();
            let lon1 = -180.0 + 360.0 * rng.next_f64();
            let scale = 10f64.powf(-8.0 + 8.0 * rng.next_f64());
            let (lat2, lon2) = (lat1 + scale * (rng.next_f64() - 0.5), lon1 + scale * (rng.next_f64() - 0.5));
            if let Some((d, _)) = compare(&g, [lon1, lat1], [lon2, lat2]) {
                assert!(d <= 1.0, "{lat1} {lon1} {lat2} {lon2}: off by {d} allowances");
            }
        }
    }

    /// Timing against GeographicLib on national-scale pairs (`cargo test --release --lib
    /// inverse_timing -- --ignored --nocapture`); not a check.
    #[test]
    #[ignore]
    fn inverse_timing() {
        let g = Geodesic::wgs84();
        let mut rng = SplitMix64::new(3);
        let centre = [10.0, 51.0];
        let pts: Vec<[f64; 2]> =
            (0..1_000_000).map(|_| [6.0 + 9.0 * rng.next_f64(), 47.5 + 7.5 * rng.next_f64()]).collect();
        for _ in 0..3 {
            let t = std::time::Instant::now();
            let mut total = 0.0;
            for p in &pts {
                total += g._gen_inverse(centre[1], centre[0], p[1], p[0], DISTANCE | AZIMUTH).1;
            }
            let reference = t.elapsed().as_secs_f64();
            let t = std::time::Instant::now();
            let mut ours = 0.0;
            for p in &pts {
                ours += ordinary_inverse(&g, centre[1], centre[0], p[1], p[0]).map_or(0.0, |r| r.0);
            }
            let fast = t.elapsed().as_secs_f64();
            eprintln!(
                "geographiclib {reference:.3} s, ordinary path {fast:.3} s, ratio {:.2}; sums {total} {ours}",
                reference / fast
            );
        }
    }
}
