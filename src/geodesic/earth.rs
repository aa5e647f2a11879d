//! The WGS84 ellipsoid: validation of longitude/latitude input, the geodesic inverse and
//! direct problems (Karney 2013, "Algorithms for geodesics", J. Geodesy 87, through the
//! `geographiclib-rs` crate), the tangent-plane maps built from them, Earth-centred
//! positions for spatial search, and geodesic lengths and areas.
//!
//! Points are `[longitude, latitude]` in degrees (x = longitude, as GIS frames store them).
//! Lengths are metres, areas square metres.

use geographiclib_rs::capability::{AZIMUTH, DISTANCE, GEODESICSCALE, REDUCEDLENGTH};
use geographiclib_rs::{DirectGeodesic, Geodesic, InverseGeodesic, PolygonArea, Winding};

use super::inverse::ordinary_inverse;
use crate::error::{Error, Result};
use crate::geometry::{validate_points, Point};

/// WGS84 semi-major axis, metres (NIMA TR8350.2 defining constant).
pub(crate) const WGS84_A: f64 = 6_378_137.0;
/// WGS84 flattening (NIMA TR8350.2 defining constant).
pub(crate) const WGS84_F: f64 = 1.0 / 298.257_223_563;

/// Validate longitude/latitude points: finite, at least `min_count`, latitude within
/// [-90, 90] and longitude within [-540, 540] (one turn either side of the usual range).
pub(crate) fn validate_lonlat(argument: &'static str, points: &[Point], min_count: usize) -> Result<()> {
    validate_points(argument, points, min_count)?;
    for (index, p) in points.iter().enumerate() {
        if p[1].abs() > 90.0 {
            return Err(Error::OutOfRange { argument, index, axis: "latitude", value: p[1], limit: 90.0 });
        }
        if p[0].abs() > 540.0 {
            return Err(Error::OutOfRange { argument, index, axis: "longitude", value: p[0], limit: 540.0 });
        }
    }
    Ok(())
}

/// The WGS84 ellipsoid and the geodesic problems on it.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Earth {
    g: Geodesic,
}

/// A point seen from a centre: the geodesic distance and the unit tangent vector (east,
/// north) of the geodesic's azimuth at the centre.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Seen {
    /// Geodesic distance, metres.
    pub distance: f64,
    /// Unit tangent at the centre towards the point, `[sin azimuth, cos azimuth]`.
    pub direction: Point,
}

impl Earth {
    pub(crate) fn wgs84() -> Earth {
        Earth { g: Geodesic::new(WGS84_A, WGS84_F) }
    }

    /// Geodesic distance between two points, metres.
    pub(crate) fn distance(&self, a: Point, b: Point) -> f64 {
        let s: f64 = self.g.inverse(a[1], a[0], b[1], b[0]);
        s
    }

    /// Distance and initial direction of the geodesic from `centre` to `a`. The direction
    /// comes as the sine and cosine of the azimuth, without a round trip through degrees,
    /// and without the reduced length and geodesic scale that [`Earth::seen_with_curvature`]
    /// also computes (the inverse problem's final series for them are skipped).
    pub(crate) fn seen_from(&self, centre: Point, a: Point) -> Seen {
        let (_a12, s, sin_azi, cos_azi, _s2, _c2, _m12, _big_m12, _big_m21, _area) =
            self.g._gen_inverse(centre[1], centre[0], a[1], a[0], DISTANCE | AZIMUTH);
        let norm = sin_azi.hypot(cos_azi);
        Seen { distance: s, direction: [sin_azi / norm, cos_azi / norm] }
    }

    /// [`Earth::seen_from`] by the shorter Newton loop of [`super::inverse`] where the pair
    /// is ordinary, GeographicLib in full otherwise: accurate to
    /// [`super::inverse::DISTANCE_RELATIVE_ACCURACY`] of the distance and
    /// [`super::inverse::AZIMUTH_ACCURACY`] in direction beyond GeographicLib's own accuracy.
    pub(crate) fn seen_from_quickly(&self, centre: Point, a: Point) -> Seen {
        match ordinary_inverse(&self.g, centre[1], centre[0], a[1], a[0]) {
            Some((s, sin_azi, cos_azi)) => Seen { distance: s, direction: [sin_azi, cos_azi] },
            None => self.seen_from(centre, a),
        }
    }

    /// [`Earth::seen_from`] with the geodesic curvature `M/m` at `centre` of the geodesic
    /// circle about `a` through `centre` (1/metres; Karney 2013, §3: the reduced length `m`
    /// and geodesic scale `M` of the same inverse problem). The Hessian of `s(·, a)` at
    /// `centre` is `(M/m)(I − uuᵀ)`, `u` the direction: exact second derivatives for Newton
    /// steps at the price of the inverse problem alone (its Newton iteration computes `m`
    /// anyway).
    pub(crate) fn seen_with_curvature(&self, centre: Point, a: Point) -> (Seen, f64) {
        let (_a12, s, sin_azi, cos_azi, _s2, _c2, m12, big_m12, _big_m21, _area) =
            self.g._gen_inverse(centre[1], centre[0], a[1], a[0], DISTANCE | AZIMUTH | REDUCEDLENGTH | GEODESICSCALE);
        let norm = sin_azi.hypot(cos_azi);
        (Seen { distance: s, direction: [sin_azi / norm, cos_azi / norm] }, big_m12 / m12)
    }

    /// The exponential map at `centre` (inverse of the logarithm map
    /// `a ↦ distance · direction` of [`Earth::seen_from`], the azimuthal equidistant frame
    /// centred there): the point reached by the geodesic leaving `centre`
    /// with azimuth `atan2(v.east, v.north)` after `|v|` metres. Longitude in [-180, 180].
    pub(crate) fn exp(&self, centre: Point, v: Point) -> Point {
        let s = v[0].hypot(v[1]);
        if s == 0.0 {
            return [normalised_longitude(centre[0]), centre[1]];
        }
        let azimuth = v[0].atan2(v[1]).to_degrees();
        let (lat, lon): (f64, f64) = self.g.direct(centre[1], centre[0], azimuth, s);
        [normalised_longitude(lon), lat]
    }

    /// Length of the geodesic polyline through `path`, metres.
    pub(crate) fn path_length(&self, path: &[Point]) -> f64 {
        let mut total = crate::geometry::CompensatedSum::default();
        for pair in path.windows(2) {
            total.add(self.distance(pair[0], pair[1]));
        }
        total.total()
    }

    /// Area of the geodesic polygon with vertices `ring` (closing edge implied), square
    /// metres: positive when the vertices run counter-clockwise, negative otherwise
    /// (GeographicLib's polygon area, Karney 2013 §6).
    pub(crate) fn ring_area(&self, ring: &[Point]) -> f64 {
        let mut polygon = PolygonArea::new(&self.g, Winding::CounterClockwise);
        let n = if ring.len() > 1 && ring[0] == ring[ring.len() - 1] { ring.len() - 1 } else { ring.len() };
        for p in &ring[..n] {
            polygon.add_point(p[1], p[0]);
        }
        if n < 3 {
            return 0.0;
        }
        let (_perimeter, area, _count) = polygon.compute(true);
        area
    }

    /// Area of the geodesic polygon `ring` taken as counter-clockwise, whatever its size
    /// (GeographicLib's unsigned area, in [0, area of the ellipsoid)): for polygons known
    /// to run counter-clockwise, which may hold more than half the Earth.
    pub(crate) fn ccw_ring_area(&self, ring: &[Point]) -> f64 {
        let mut polygon = PolygonArea::new(&self.g, Winding::CounterClockwise);
        for p in ring {
            polygon.add_point(p[1], p[0]);
        }
        if ring.len() < 3 {
            return 0.0;
        }
        polygon.compute(false).1
    }
}

/// A longitude reduced to [-180, 180].
pub(crate) fn normalised_longitude(lon: f64) -> f64 {
    let r = lon.rem_euclid(360.0);
    if r > 180.0 {
        r - 360.0
    } else {
        r
    }
}

/// Unit vector of the ellipsoid's normal at a point (geodetic latitude), Earth-centred axes.
pub(crate) fn unit_normal(p: Point) -> [f64; 3] {
    let (sin_lat, cos_lat) = p[1].to_radians().sin_cos();
    let (sin_lon, cos_lon) = p[0].to_radians().sin_cos();
    [cos_lat * cos_lon, cos_lat * sin_lon, sin_lat]
}

/// Earth-centred, Earth-fixed position of a point on the ellipsoid's surface, metres.
pub(crate) fn ecef(p: Point) -> [f64; 3] {
    let e2 = WGS84_F * (2.0 - WGS84_F);
    let (sin_lat, cos_lat) = p[1].to_radians().sin_cos();
    let (sin_lon, cos_lon) = p[0].to_radians().sin_cos();
    let n = WGS84_A / (1.0 - e2 * sin_lat * sin_lat).sqrt();
    [n * cos_lat * cos_lon, n * cos_lat * sin_lon, n * (1.0 - e2) * sin_lat]
}

/// The point (geodetic longitude, latitude) whose ellipsoid normal is along `v` (non-zero).
pub(crate) fn from_normal(v: [f64; 3]) -> Point {
    let lon = v[1].atan2(v[0]).to_degrees();
    let lat = v[2].atan2(v[0].hypot(v[1])).to_degrees();
    [lon, lat]
}

/// Gauss's conformal sphere about a latitude (Gauss 1844; the constants as in the oblique
/// stereographic projection, IOGP Guidance Note 7-2, §3.1.2): the conformal map of the
/// ellipsoid onto a sphere `ψ' = n ψ + κ`, `Λ = n (λ − λ₀)` (`ψ` the isometric latitude) whose
/// scale is stationary to second order at the chosen latitude, so that geodesic distances
/// near it are great-circle distances to a few parts in a million over several degrees.
#[derive(Debug, Clone, Copy)]
pub(crate) struct ConformalSphere {
    lon0: f64,
    n: f64,
    kappa: f64,
}

impl ConformalSphere {
    /// The sphere fitted at `centre` (longitude `λ₀`, latitude `φ₀`): `n² = 1 + e² cos⁴φ₀ /
    /// (1 − e²)` and `sin χ₀ = sin φ₀ / n` for the image `χ₀` of `φ₀`.
    pub(crate) fn at(centre: Point) -> ConformalSphere {
        let e2 = WGS84_F * (2.0 - WGS84_F);
        let (sin0, cos0) = centre[1].to_radians().sin_cos();
        let n = (1.0 + e2 * cos0.powi(4) / (1.0 - e2)).sqrt();
        let kappa = (sin0 / n).atanh() - n * isometric_latitude(sin0);
        ConformalSphere { lon0: centre[0], n, kappa }
    }

    /// Unit vector of the image of `p` on the sphere (one-to-one for longitudes within
    /// `180°/n` of `λ₀`, `n − 1` being about 0.3 %: points beyond are not needed, as the
    /// sphere serves points within a hemisphere of the centre).
    pub(crate) fn image(&self, p: Point) -> [f64; 3] {
        let psi = self.n * isometric_latitude(p[1].to_radians().sin()) + self.kappa;
        // sin χ = tanh ψ', cos χ = sech ψ' (exact at the poles, where ψ' is infinite).
        let (sin_chi, cos_chi) = (psi.tanh(), 1.0 / psi.cosh());
        let (sin_l, cos_l) = (self.n * normalised_longitude(p[0] - self.lon0).to_radians()).sin_cos();
        [cos_chi * cos_l, cos_chi * sin_l, sin_chi]
    }

    /// The point of the ellipsoid whose image is along the unit vector `v` (the isometric
    /// latitude inverted by Newton's method; a handful of steps reach the rounding level).
    pub(crate) fn preimage(&self, v: [f64; 3]) -> Point {
        let chi = v[2].atan2(v[0].hypot(v[1]));
        let lon = normalised_longitude(self.lon0 + v[1].atan2(v[0]).to_degrees() / self.n);
        if chi.abs() >= std::f64::consts::FRAC_PI_2 * (1.0 - 1e-15) {
            return [lon, 90f64.copysign(chi)];
        }
        let target = (chi.sin().atanh() - self.kappa) / self.n;
        let e2 = WGS84_F * (2.0 - WGS84_F);
        let mut phi = chi;
        for _ in 0..8 {
            let (sin, cos) = phi.sin_cos();
            // dψ/dφ = (1 − e²) / ((1 − e² sin²φ) cos φ).
            let step = (isometric_latitude(sin) - target) * cos * (1.0 - e2 * sin * sin) / (1.0 - e2);
            phi = (phi - step).clamp(-std::f64::consts::FRAC_PI_2, std::f64::consts::FRAC_PI_2);
            if step.abs() < 1e-15 {
                break;
            }
        }
        [lon, phi.to_degrees()]
    }
}

/// Isometric latitude `ψ = atanh(sin φ) − e atanh(e sin φ)` from `sin φ`.
fn isometric_latitude(sin_phi: f64) -> f64 {
    let e = (WGS84_F * (2.0 - WGS84_F)).sqrt();
    sin_phi.atanh() - e * (e * sin_phi).atanh()
}

/// Angle between two unit vectors, radians (robust for small and near-π angles).
pub(crate) fn angle_between(a: [f64; 3], b: [f64; 3]) -> f64 {
    let cross = [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
    let sin = (cross[0] * cross[0] + cross[1] * cross[1] + cross[2] * cross[2]).sqrt();
    let cos = a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
    sin.atan2(cos)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_and_exp_are_inverse() {
        let earth = Earth::wgs84();
        for &(c, a) in &[
            ([10.0, 50.0], [12.0, 51.0]),
            ([179.5, -10.0], [-179.0, -12.0]),
            ([0.0, 89.9], [180.0, 89.8]),
            ([-70.0, -30.0], [100.0, 25.0]),
        ] {
            let seen = earth.seen_from(c, a);
            let v = [seen.distance * seen.direction[0], seen.distance * seen.direction[1]];
            let back = earth.exp(c, v);
            assert!(earth.distance(back, a) < 1e-6, "{c:?} {a:?} {back:?}");
        }
    }

    #[test]
    fn curvature_matches_second_differences_of_distance() {
        // Central second difference of the exact distance across the direction to `a`
        // against M/m; on the sphere this is cot(s/R)/R, and both factors come from
        // GeographicLib's own inverse problem.
        let earth = Earth::wgs84();
        for &(c, a) in &[([10.0, 50.0], [14.0, 53.0]), ([-70.0, -30.0], [-60.0, -5.0]), ([0.0, 80.0], [120.0, 70.0])] {
            let (seen, curvature) = earth.seen_with_curvature(c, a);
            let across = [seen.direction[1], -seen.direction[0]];
            let h = 200.0;
            let plus = earth.distance(earth.exp(c, [h * across[0], h * across[1]]), a);
            let minus = earth.distance(earth.exp(c, [-h * across[0], -h * across[1]]), a);
            let second = (plus + minus - 2.0 * seen.distance) / (h * h);
            assert!((second - curvature).abs() < 1e-4 * curvature, "{c:?} {a:?} {second} {curvature}");
            let old = earth.seen_from(c, a);
            assert!((old.direction[0] - seen.direction[0]).abs() < 1e-15 && old.distance == seen.distance);
        }
    }

    #[test]
    fn conformal_sphere_round_trips_and_keeps_distance_ratios() {
        let earth = Earth::wgs84();
        let centre = [10.0, 51.0];
        let sphere = ConformalSphere::at(centre);
        for p in [[10.0, 51.0], [14.0, 54.0], [3.0, 47.0], [10.0, 90.0], [-150.0, -89.5]] {
            let back = sphere.preimage(sphere.image(p));
            assert!(earth.distance(back, p) < 1e-6, "{p:?} {back:?}");
        }
        // Near the centre, great-circle angles on the sphere are proportional to geodesic
        // distances (pyproj.Geod gives the same geodesics; here GeographicLib itself): the
        // ratio varies by a few parts in a million over ±4°.
        let o = sphere.image(centre);
        let ratios: Vec<f64> = [[14.0, 51.0], [10.0, 55.0], [6.0, 47.0], [13.0, 48.0]]
            .iter()
            .map(|&p| angle_between(o, sphere.image(p)) / earth.distance(centre, p))
            .collect();
        let (lo, hi) = ratios.iter().fold((f64::INFINITY, 0.0f64), |(l, h), &r| (l.min(r), h.max(r)));
        assert!(hi / lo - 1.0 < 2e-5, "{ratios:?}");
    }

    #[test]
    fn quarter_meridian_matches_the_closed_form_series() {
        // The meridian quadrant of WGS84 is 10 001 965.729 m (from memory; Karney 2013 quotes
        // the meridian distance series it follows from).
        let earth = Earth::wgs84();
        let q = earth.distance([0.0, 0.0], [0.0, 90.0]);
        assert!((q - 10_001_965.729).abs() < 1e-3, "{q}");
    }

    #[test]
    fn ecef_is_on_the_ellipsoid_and_normals_are_unit() {
        let b = WGS84_A * (1.0 - WGS84_F);
        for p in [[0.0, 0.0], [45.0, 45.0], [-120.0, -89.0], [179.9, 10.0]] {
            let x = ecef(p);
            let level = (x[0] * x[0] + x[1] * x[1]) / (WGS84_A * WGS84_A) + x[2] * x[2] / (b * b);
            assert!((level - 1.0).abs() < 1e-14);
            let u = unit_normal(p);
            assert!(((u[0] * u[0] + u[1] * u[1] + u[2] * u[2]) - 1.0).abs() < 1e-15);
            let q = from_normal(u);
            assert!((q[1] - p[1]).abs() < 1e-12);
        }
    }
}
