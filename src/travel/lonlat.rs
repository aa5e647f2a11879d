//! Longitude/latitude shapes of a geodesic travel graph.
//!
//! - Each segment is drawn the shorter way round in longitude ([`short_way`]): a street from
//!   179.9° to -179.9° crosses the antimeridian, 22 km long at the equator as its geodesic
//!   length says, not 359.8° of longitude the other way round.
//! - Line ends at the same place join whatever the turn their longitudes are given in
//!   ([`place_of`]: 180° and -180° are one meridian, every longitude at a pole one point).
//! - The flat views that search and split the network ([`Unwrapped`]) take every longitude
//!   in one turn that starts opposite the network, in the middle of the widest band of
//!   longitudes without a vertex, so a network across the antimeridian is in one piece.
//! - A segment drawn straight in longitude and latitude is the geodesic between its ends
//!   (which its length measures) only while it is short beside its distance from a pole; one
//!   that strays from that geodesic by more than [`MAX_DEPARTURE`] of its length — over or
//!   near a pole, or with (nearly) antipodal ends — is refused ([`departure`]).

use crate::geodesic::{angle_between, cross, dot, normalised_longitude, sub, unit_normal};
use crate::geometry::Point;

/// Largest distance, as a share of its length, by which a segment drawn straight in
/// longitude and latitude may stray from the geodesic between its ends (the sagitta of a
/// parallel is about `length · tan(latitude) / 8` earth radii: at 60° a segment of about
/// 290 km, at 89.5° one of 4.4 km reaches it). Lengths then differ from the drawn line's by under 3e-4.
pub(crate) const MAX_DEPARTURE: f64 = 1e-2;

/// `b` with its longitude moved by whole turns to within 180° of `a`'s (the segment `a b`
/// the shorter way round).
pub(crate) fn short_way(a: Point, b: Point) -> Point {
    [a[0] + normalised_longitude(b[0] - a[0]), b[1]]
}

/// The point at share `t` of the segment `a b` drawn straight in longitude and latitude the
/// shorter way round, its longitude in [-180, 180] (the ends themselves as given).
pub(crate) fn on_segment(a: Point, b: Point, t: f64) -> Point {
    if t <= 0.0 {
        return a;
    }
    if t >= 1.0 {
        return b;
    }
    let c = short_way(a, b);
    let lon = a[0] + t * (c[0] - a[0]);
    [if lon.abs() <= 180.0 { lon } else { normalised_longitude(lon) }, a[1] + t * (c[1] - a[1])]
}

/// Where a line end lies, for joining ends: its longitude in [-180, 180) and 0 at a pole.
pub(crate) fn place_of(p: Point) -> Point {
    if p[1].abs() == 90.0 {
        return [0.0, p[1]];
    }
    let lon = normalised_longitude(p[0]);
    [if lon == 180.0 { -180.0 } else { lon }, p[1]]
}

/// How far the segment `a b` drawn straight in longitude and latitude (the shorter way
/// round) strays from the great circle through its ends, as a share of the arc between them,
/// measured at its midpoint on the unit sphere (the ellipsoid changes it by a fraction of
/// itself, of no weight for [`MAX_DEPARTURE`]). Infinite for antipodal ends, whose geodesic is
/// not unique; 0 for coincident ends.
pub(crate) fn departure(a: Point, b: Point) -> f64 {
    let b = short_way(a, b);
    let (u, v) = (unit_normal(a), unit_normal(b));
    let arc = angle_between(u, v);
    if arc == 0.0 {
        return 0.0;
    }
    // The normal of the great circle as u × (v − u), and the midpoint's offset from it as
    // measured from u: both work on the chord v − u, so a street of centimetres keeps its
    // digits (u × v and the midpoint's own direction cancel to rounding noise of about
    // 1e-16 / arc², which called a 9 cm street 33 % off its geodesic).
    let n = cross(u, sub(v, u));
    let sine = dot(n, n).sqrt();
    if dot(u, v) < 0.0 && sine < 1e-9 {
        // (Nearly) antipodal ends: no one geodesic joins them.
        return f64::INFINITY;
    }
    if sine == 0.0 {
        return 0.0;
    }
    let m = unit_normal([0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])]);
    let off = (dot(sub(m, u), n) / sine).clamp(-1.0, 1.0).asin().abs();
    // The midpoint must also lie between the ends (not on the far side of the great circle).
    let beyond = (angle_between(m, u).max(angle_between(m, v)) - arc).max(0.0);
    off.max(beyond) / arc
}

/// Longitudes taken in the one turn `[west, west + 360)`, `west` in the middle of the widest
/// band of longitudes holding no part of the network (found on 4096 bands of 360/4096°),
/// so that a network not circling the globe lies in one piece.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Unwrapped {
    west: f64,
    /// Every band holds some of the network: no meridian is free of it (it circles the
    /// globe in longitude), so no segment lies in one flat view.
    whole: bool,
}

impl Unwrapped {
    const BANDS: usize = 4096;

    /// The turn for the lines `lines` (longitudes in degrees, any turn): every band a vertex
    /// lies in or a segment crosses (the shorter way round) is taken, so the free band chosen
    /// is free of the whole network, not only of its vertices.
    pub(crate) fn around<L: AsRef<[Point]>>(lines: impl Iterator<Item = L>) -> Unwrapped {
        let width = 360.0 / Self::BANDS as f64;
        let band_of = |lon: f64| (((normalised_longitude(lon) + 180.0) / width) as usize).min(Self::BANDS - 1);
        let mut used = vec![false; Self::BANDS];
        for line in lines {
            let line = line.as_ref();
            for p in line {
                used[band_of(p[0])] = true;
            }
            for w in line.windows(2) {
                // From a's band towards b's, the shorter way round (at most half the bands).
                let (from, to) = (band_of(w[0][0]), band_of(w[0][0] + normalised_longitude(w[1][0] - w[0][0])));
                let east = normalised_longitude(w[1][0] - w[0][0]) >= 0.0;
                let mut band = from;
                while band != to {
                    band = if east { (band + 1) % Self::BANDS } else { (band + Self::BANDS - 1) % Self::BANDS };
                    used[band] = true;
                }
            }
        }
        let Some(first) = used.iter().position(|&u| u) else {
            return Unwrapped { west: -180.0, whole: false };
        };
        // The widest run of empty bands, going round once from a used one.
        let (mut best, mut best_len, mut run) = (0usize, 0usize, 0usize);
        for step in 1..=Self::BANDS {
            let band = (first + step) % Self::BANDS;
            if used[band] {
                run = 0;
            } else {
                run += 1;
                if run > best_len {
                    (best, best_len) = (first + step + 1 - run, run);
                }
            }
        }
        let west = -180.0 + (best as f64 + 0.5 * best_len as f64) * width;
        Unwrapped { west: normalised_longitude(west), whole: best_len == 0 }
    }

    /// A point with its longitude in the turn.
    pub(crate) fn point(&self, p: Point) -> Point {
        [self.west + (p[0] - self.west).rem_euclid(360.0), p[1]]
    }

    /// The segment `a b` in the turn, drawn the shorter way round; `None` when it leaves the
    /// turn (the network circles the globe, so no meridian is free of it).
    pub(crate) fn segment(&self, a: Point, b: Point) -> Option<(Point, Point)> {
        let a = self.point(a);
        let b = short_way(a, b);
        self.holds(b[0]).then_some((a, b))
    }

    /// Whether a longitude lies in the turn (its far end included); never, for a network
    /// that circles the globe.
    pub(crate) fn holds(&self, lon: f64) -> bool {
        !self.whole && lon >= self.west && lon <= self.west + 360.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn segments_across_the_antimeridian_run_the_shorter_way() {
        assert_eq!(short_way([179.9, -17.0], [-179.9, -17.0]), [180.1, -17.0]);
        assert_eq!(short_way([-179.9, 0.0], [179.9, 0.0]), [-180.1, 0.0]);
        // Half-way along the ferry is the antimeridian, not 0 E; places come back in [-180, 180].
        let mid = on_segment([179.9, -17.0], [-179.9, -17.0], 0.5);
        assert!((mid[0].abs() - 180.0).abs() < 1e-9 && mid[1] == -17.0);
        let q = on_segment([179.9, -17.0], [-179.9, -17.0], 0.75);
        assert!((q[0] - -179.95).abs() < 1e-9);
        assert_eq!(on_segment([179.9, 0.0], [-179.9, 0.0], 1.0), [-179.9, 0.0]);
    }

    #[test]
    fn one_place_has_one_name() {
        assert_eq!(place_of([180.0, 5.0]), place_of([-180.0, 5.0]));
        assert_eq!(place_of([540.0, 5.0]), place_of([-180.0, 5.0]));
        assert_eq!(place_of([190.0, 5.0]), [-170.0, 5.0]);
        assert_eq!(place_of([45.0, 90.0]), place_of([-120.0, 90.0]));
        assert_ne!(place_of([45.0, 90.0]), place_of([45.0, -90.0]));
    }

    #[test]
    fn departure_is_large_over_a_pole_and_small_for_streets() {
        // The parallel 89.9 from 0 to 180 E is 0.1 degree from the great circle over the pole,
        // which is 0.2 degree long between the ends: a half.
        let over = departure([0.0, 89.9], [180.0, 89.9]);
        assert!((over - 0.5).abs() < 1e-3, "{over}");
        assert!(departure([0.0, 0.0], [180.0, 0.0]).is_infinite());
        // Meridians and the equator are great circles.
        assert!(departure([45.0, 90.0], [45.0, 89.5]) < 1e-12);
        assert!(departure([179.0, 0.0], [-179.0, 0.0]) < 1e-12);
        // A 1 km street at 60 N: the sagitta over the length, about 1e6 m · tan 60° / (8 R) / 1e3 m.
        let street = departure([10.0, 60.0], [10.018, 60.0]);
        assert!(street > 1e-5 && street < 1e-4, "{street}");
        assert_eq!(departure([3.0, 4.0], [3.0, 4.0]), 0.0);
    }

    #[test]
    fn short_streets_do_not_stray_and_only_antipodal_ends_are_infinite() {
        // Closed form: a segment of length L at latitude φ strays about L · tan φ / (8 R) of
        // its length, under 1e-8 for these (R = 6,371 km). Before, rounding of the unit
        // vectors called a 9 cm street 33 % off and a 0.7 mm one "antipodal".
        for (a, b) in [
            ([-122.4194, 37.7749], [-122.419401, 37.7749]),
            ([10.0, 50.0], [10.0000001, 50.0]),
            ([-122.4194, 37.7749], [-122.4194, 37.774901]),
            ([2.3522, 48.8566], [2.35220001, 48.8566]),
        ] {
            let off = departure(a, b);
            assert!(off < 1e-6, "{a:?} {b:?}: {off}");
        }
        // 2,000 segments of about 0.1 m at latitudes within 70 degrees (deterministic).
        let mut state = 7u64;
        let mut next = || {
            state = state.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            (state >> 11) as f64 / (1u64 << 53) as f64
        };
        for _ in 0..2000 {
            let a = [360.0 * next() - 180.0, 140.0 * next() - 70.0];
            let heading = std::f64::consts::TAU * next();
            let step = 0.1 / 111_320.0;
            let b = [a[0] + step * heading.cos() / a[1].to_radians().cos(), a[1] + step * heading.sin()];
            let off = departure(a, b);
            assert!(off < 1e-3, "{a:?} {b:?}: {off}");
        }
        assert!(departure([0.0, 0.0], [180.0, 0.0]).is_infinite());
        assert!(departure([10.0, 20.0], [-170.0, -20.0]).is_infinite());
    }

    #[test]
    fn a_segment_over_an_empty_band_of_vertices_keeps_it_taken() {
        // The widest band without a vertex is 0 to 170 E, but the first line's one segment
        // runs across it, so the turn began at 85 E and that segment left it (attaching a
        // point was refused as if the network circled the globe). Free of segments are 170 E
        // to 120 W and, widest, 110 W to 0: the turn must begin there (at 55 W).
        let lines: [&[Point]; 2] = [&[[0.0, 0.0], [170.0, 0.0]], &[[-120.0, 0.0], [-110.0, 0.0]]];
        let turn = Unwrapped::around(lines.into_iter());
        for line in lines {
            for w in line.windows(2) {
                assert!(turn.segment(w[0], w[1]).is_some(), "{w:?} leaves the turn from {}", turn.west);
            }
        }
        assert!((turn.west + 55.0).abs() < 0.1, "{}", turn.west);
    }

    #[test]
    fn a_network_across_the_antimeridian_unwraps_in_one_piece_and_a_ring_round_a_pole_does_not() {
        let ferry = [[179.9, -17.0], [-179.9, -17.05], [-179.6, -17.0]];
        let turn = Unwrapped::around([&ferry[..]].into_iter());
        let (a, b) = turn.segment(ferry[0], ferry[1]).expect("in one piece");
        let (c, _) = turn.segment(ferry[1], ferry[2]).expect("in one piece");
        assert!((b[0] - a[0] - 0.2).abs() < 1e-9 && b == c);
        let ring: Vec<Point> = (0..=360).map(|i| [-180.0 + i as f64, 89.9]).collect();
        let turn = Unwrapped::around([&ring[..]].into_iter());
        assert!(ring.windows(2).any(|w| turn.segment(w[0], w[1]).is_none()));
    }
}
