//! Exact orientation and in-circle tests.
//!
//! Every sign decision in the crate goes through here. Both use Shewchuk's adaptive
//! exact arithmetic (Shewchuk 1997, "Adaptive Precision Floating-Point Arithmetic and Fast
//! Robust Geometric Predicates") via the `robust` crate: the sign is exact for every pair of
//! finite f64 inputs whose products neither overflow (|coordinate| below about 1e150) nor
//! underflow; [`orientation`] gives the exact sign at any scale.

use super::Point;
use robust::Coord;

#[inline]
fn coord(p: Point) -> Coord<f64> {
    Coord { x: p[0], y: p[1] }
}

/// Turn of `a → b → c`: positive when counter-clockwise, negative when clockwise,
/// exactly zero when collinear. The magnitude is twice the triangle's signed area
/// (approximately, when it is tiny).
#[inline]
pub fn orient2d(a: Point, b: Point, c: Point) -> f64 {
    robust::orient2d(coord(a), coord(b), coord(c))
}

/// Positive when `d` lies strictly inside the circle through `a, b, c` (given
/// counter-clockwise), negative outside, exactly zero on it.
#[inline]
pub fn incircle(a: Point, b: Point, c: Point, d: Point) -> f64 {
    robust::incircle(coord(a), coord(b), coord(c), coord(d))
}

/// Positive when `d` lies below the plane through `a, b, c` (which run counter-clockwise
/// seen from above, +z), negative above, exactly zero on it. On points lifted to
/// `(x, y, x² + y² - w)` this is the power test of regular triangulations (Edelsbrunner &
/// Shah 1996): positive when `d` conflicts with the triangle `a b c`.
#[inline]
pub fn orient3d(a: [f64; 3], b: [f64; 3], c: [f64; 3], d: [f64; 3]) -> f64 {
    let c3 = |p: [f64; 3]| robust::Coord3D { x: p[0], y: p[1], z: p[2] };
    robust::orient3d(c3(a), c3(b), c3(c), c3(d))
}

/// Coordinate differences from which [`orientation`] scales first: squares below about 1e-260
/// leave rounding tails in the subnormal range (below 1e-308 they vanish), squares above
/// about 1e300 overflow; either way the exact arithmetic loses its guarantee.
const SAFE_DIFFERENCES: std::ops::Range<f64> = 1e-130..1e150;

/// The sign of [`orient2d`] (1, −1 or 0), exact at any scale of finite coordinates.
///
/// Why: the determinant's products underflow for points within about 1e-162 of each other
/// (three points 1e-170 apart all read as collinear) and overflow beyond about 1e154.
/// There the points are first multiplied by a power of two ([`super::power_of_two_factor`]
/// of their largest magnitude), which is exact (short of flushing coordinates below 2^-1074
/// of the largest), so the sign is that of the points as given.
pub fn orientation(a: Point, b: Point, c: Point) -> f64 {
    let span = [a[0] - c[0], a[1] - c[1], b[0] - c[0], b[1] - c[1]].iter().fold(0.0f64, |m, d| m.max(d.abs()));
    let o = if span == 0.0 || SAFE_DIFFERENCES.contains(&span) {
        orient2d(a, b, c)
    } else {
        let largest = [a, b, c].iter().flatten().fold(0.0f64, |m, x| m.max(x.abs()));
        let f = super::power_of_two_factor(largest);
        orient2d([a[0] * f, a[1] * f], [b[0] * f, b[1] * f], [c[0] * f, c[1] * f])
    };
    if o > 0.0 {
        1.0
    } else if o < 0.0 {
        -1.0
    } else {
        0.0
    }
}

/// True when every point lies on one line (fewer than three points count as collinear);
/// exact at any scale ([`orientation`]).
pub fn all_collinear(points: &[Point]) -> bool {
    all_collinear_in(points.iter().copied())
}

/// [`all_collinear`] over points yielded by an iterator (for callers that hold them in
/// another layout); the iterator is walked at most twice.
pub fn all_collinear_in(mut points: impl Iterator<Item = Point> + Clone) -> bool {
    let mut probe = points.clone();
    let Some(a) = probe.next() else { return true };
    let Some(b) = probe.find(|&p| p != a) else { return true };
    points.all(|c| orientation(a, b, c) == 0.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn orientation_sign_is_exact_for_nearly_collinear_points() {
        // Classic failure case of naive evaluation: points on y = x with tiny offsets
        // (Kettner et al. 2008, "Classroom examples of robustness problems").
        let a = [0.5, 0.5];
        let b = [12.0, 12.0];
        let c = [24.0, 24.0];
        assert_eq!(orient2d(a, b, c), 0.0);
        let c2 = [24.0, 24.0 + 24.0 * f64::EPSILON];
        assert!(orient2d(a, b, c2) > 0.0);
    }

    #[test]
    fn orientation_is_exact_at_tiny_and_huge_scales() {
        // Closed form: the corners (0, 0), (1, 0), (0, 1) turn counter-clockwise at every
        // scale, and points on y = x are collinear at every scale. The plain determinant
        // underflows to zero below about 1e-162 and overflows beyond about 1e154.
        for s in [1.0, 1e-170, 1e-200, 1e-300, 1e-320, 1e160, 1e300, f64::MAX] {
            assert_eq!(orientation([0.0, 0.0], [s, 0.0], [0.0, s]), 1.0, "scale {s}");
            assert_eq!(orientation([0.0, 0.0], [0.0, s], [s, 0.0]), -1.0, "scale {s}");
            assert_eq!(orientation([0.0, 0.0], [0.5 * s, 0.5 * s], [s, s]), 0.0, "scale {s}");
            assert!(!all_collinear(&[[0.0, 0.0], [s, 0.0], [s, s], [0.0, s]]), "scale {s}");
        }
        assert_eq!(orientation([-f64::MAX, 0.0], [f64::MAX, 0.0], [0.0, 1e300]), 1.0);
    }

    #[test]
    fn incircle_of_unit_square_corner_is_zero() {
        // Closed form: the four corners of a square are cocircular.
        let sq = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
        assert_eq!(incircle(sq[0], sq[1], sq[2], sq[3]), 0.0);
        assert!(incircle(sq[0], sq[1], sq[2], [0.5, 0.5]) > 0.0);
    }

    #[test]
    fn orient3d_is_the_lifted_incircle_test() {
        // Closed form: lifted to the paraboloid z = x² + y², a point inside the circle through
        // three others lies below their plane (Guibas & Stolfi 1985).
        let lift = |p: Point| [p[0], p[1], p[0] * p[0] + p[1] * p[1]];
        let sq = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0]];
        assert!(orient3d(lift(sq[0]), lift(sq[1]), lift(sq[2]), lift([0.5, 0.5])) > 0.0);
        assert_eq!(orient3d(lift(sq[0]), lift(sq[1]), lift(sq[2]), lift([0.0, 1.0])), 0.0);
        assert!(orient3d(lift(sq[0]), lift(sq[1]), lift(sq[2]), lift([3.0, 3.0])) < 0.0);
    }

    #[test]
    fn collinear_detection() {
        assert!(all_collinear(&[[0.0, 0.0], [1.0, 1.0], [2.0, 2.0], [1.0, 1.0]]));
        assert!(!all_collinear(&[[0.0, 0.0], [1.0, 1.0], [2.0, 2.0], [1.0, 0.0]]));
        assert!(all_collinear(&[[3.0, 3.0], [3.0, 3.0]]));
    }
}
