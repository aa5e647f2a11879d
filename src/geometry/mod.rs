//! Shared point and vector helpers, input validation and the exact predicates.
//!
//! Points are `[f64; 2]`: a C-contiguous `(n, 2)` float64 numpy array is reinterpreted as
//! `&[Point]` without a copy by the binding layer.

pub mod hull;
pub mod local_tree;
pub mod predicates;
pub mod random;
pub mod region;
pub mod sum;
pub mod validate;

pub use local_tree::LocalTree;
pub use region::FeasibleRegion;
pub use sum::CompensatedSum;
pub use validate::{validate_iteration, validate_points, validate_weights, Weights};

/// A planar point or vector `[x, y]`.
pub type Point = [f64; 2];

/// `a - b`.
#[inline]
pub fn sub(a: Point, b: Point) -> Point {
    [a[0] - b[0], a[1] - b[1]]
}

/// `a + b`.
#[inline]
pub fn add(a: Point, b: Point) -> Point {
    [a[0] + b[0], a[1] + b[1]]
}

/// `s * a`.
#[inline]
pub fn scale(a: Point, s: f64) -> Point {
    [a[0] * s, a[1] * s]
}

/// Euclidean norm, without intermediate overflow or underflow.
#[inline]
pub fn norm(a: Point) -> f64 {
    a[0].hypot(a[1])
}

/// Euclidean distance between two points.
#[inline]
pub fn distance(a: Point, b: Point) -> f64 {
    norm(sub(a, b))
}

/// Squared Euclidean distance (no square root; for comparisons).
#[inline]
pub fn distance_squared(a: Point, b: Point) -> f64 {
    let d = sub(a, b);
    d[0] * d[0] + d[1] * d[1]
}

/// Dot product.
#[inline]
pub fn dot(a: Point, b: Point) -> f64 {
    a[0] * b[0] + a[1] * b[1]
}

/// Axis-aligned bounding box of a point set.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoundingBox {
    /// Smallest x and y.
    pub min: Point,
    /// Largest x and y.
    pub max: Point,
}

impl BoundingBox {
    /// The box of `points`; `None` when there are none.
    pub fn of(points: &[Point]) -> Option<BoundingBox> {
        let first = *points.first()?;
        let mut b = BoundingBox { min: first, max: first };
        for p in &points[1..] {
            b.min[0] = b.min[0].min(p[0]);
            b.min[1] = b.min[1].min(p[1]);
            b.max[0] = b.max[0].max(p[0]);
            b.max[1] = b.max[1].max(p[1]);
        }
        Some(b)
    }

    /// Centre of the box.
    pub fn center(&self) -> Point {
        [0.5 * (self.min[0] + self.max[0]), 0.5 * (self.min[1] + self.max[1])]
    }

    /// Length of the diagonal.
    pub fn diagonal(&self) -> f64 {
        distance(self.min, self.max)
    }
}

/// A power of two `f` such that `extent · f` lies in (0.5, 1], or 1 when `extent` is zero or
/// not finite.
///
/// Why: multiplying by a power of two is exact (away from the subnormal range), so a kernel
/// can work in a frame of unit size — where squared distances neither overflow (coordinates
/// near 1e300) nor underflow (coordinates near 1e-300) — and map its answer back exactly.
pub fn power_of_two_factor(extent: f64) -> f64 {
    if !(extent > 0.0 && extent.is_finite()) {
        return 1.0;
    }
    let exponent = extent.log2().ceil() as i32;
    2f64.powi(-exponent.clamp(-1020, 1020))
}

/// [`power_of_two_factor`] of `half · 2^halvings` for a `half` whose doubling overflows: the
/// factor of `half · 2^-64`, then `2^-(64 + halvings)`, each step exact (the result may be
/// subnormal, which a power of two still is exactly).
fn beyond_the_range_factor(half: f64, halvings: i32) -> f64 {
    let step = 2f64.powi(-64);
    power_of_two_factor(half * step) * step * 2f64.powi(-halvings)
}

/// The one working frame: points shifted so the centre of their bounding box is the origin,
/// then scaled by a power of two ([`power_of_two_factor`]) so the frame has unit size.
///
/// Why: the shift keeps differences of far-offset projected coordinates (500 000,
/// 6 000 000) accurate once squared; the power-of-two scale is exact, so squares neither
/// overflow nor underflow and answers map back without rounding beyond the shift.
/// Invariant: `to_world(to_local(p))` is `p` up to the rounding of one subtraction and one
/// addition; distances scale by exactly `factor`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WorkingFrame {
    /// The world point that becomes the local origin.
    pub origin: Point,
    /// The exact power-of-two scale from world to local units.
    pub factor: f64,
}

impl WorkingFrame {
    /// The frame of `points` (the identity for an empty set).
    pub fn of(points: &[Point]) -> WorkingFrame {
        let Some(b) = BoundingBox::of(points) else {
            return WorkingFrame { origin: [0.0, 0.0], factor: 1.0 };
        };
        let extent = (b.max[0] - b.min[0]).max(b.max[1] - b.min[1]);
        if extent.is_finite() && b.center().iter().all(|c| c.is_finite()) {
            return WorkingFrame { origin: b.center(), factor: power_of_two_factor(extent) };
        }
        // Finite coordinates whose extent (or sum) passes f64::MAX (points near -1.8e308 and
        // +1e300): halved first, which cannot overflow. The factor of the extent is that of
        // half of it, halved, taken in two exact steps because [`power_of_two_factor`] stops
        // at 2^-1020. Every point then lies within a unit of the origin.
        let half = |k: usize| 0.5 * b.max[k] - 0.5 * b.min[k];
        WorkingFrame {
            origin: [0.5 * b.min[0] + 0.5 * b.max[0], 0.5 * b.min[1] + 0.5 * b.max[1]],
            factor: beyond_the_range_factor(half(0).max(half(1)), 1),
        }
    }

    /// This frame with its scale widened (by a power of two, the origin kept) so that the
    /// points `also` lie within unit size of the origin too.
    ///
    /// Why keep the origin: points of tiny extent next to a far feature (a region a unit
    /// away from points within 1e-160) would all round onto one local point if the origin
    /// moved to the middle of both; kept at their own centre they stay distinct, while the
    /// feature no longer sits so far out that squared distances to it overflow.
    pub fn holding(self, also: &[Point]) -> WorkingFrame {
        // Halved first, so that a distance from the origin beyond f64::MAX stays finite.
        let half_reach = also
            .iter()
            .map(|p| (0.5 * p[0] - 0.5 * self.origin[0]).abs().max((0.5 * p[1] - 0.5 * self.origin[1]).abs()))
            .fold(0.0f64, f64::max);
        if half_reach == 0.0 {
            // Nothing to hold beyond the origin (no points at all): the frame as it is, not
            // one capped at the factor `power_of_two_factor` gives a zero extent.
            return self;
        }
        let reach = 2.0 * half_reach;
        // Half the factor of `reach` is that of `2 · reach`, which overflows past 9e307; for a
        // reach beyond f64::MAX, the same from half the reach.
        let factor =
            if reach.is_finite() { 0.5 * power_of_two_factor(reach) } else { beyond_the_range_factor(half_reach, 2) };
        WorkingFrame { factor: self.factor.min(factor), ..self }
    }

    /// A world point in local coordinates.
    pub fn to_local(self, p: Point) -> Point {
        let d = sub(p, self.origin);
        if d[0].is_finite() && d[1].is_finite() {
            return scale(d, self.factor);
        }
        // A difference beyond f64::MAX (a point held far across the origin): halved first.
        scale(sub(scale(p, 0.5), scale(self.origin, 0.5)), 2.0 * self.factor)
    }

    /// A local point in world coordinates.
    pub fn to_world(self, q: Point) -> Point {
        // Divided, not multiplied by the reciprocal: that overflows for a subnormal factor.
        add([q[0] / self.factor, q[1] / self.factor], self.origin)
    }

    /// Every point in local coordinates.
    pub fn local(self, points: &[Point]) -> Vec<Point> {
        points.iter().map(|&p| self.to_local(p)).collect()
    }

    /// `a − b` in local units: the world difference scaled by the frame's factor, without the
    /// shift (a difference needs none, and shifting first would round far-offset coordinates).
    ///
    /// Why: lengths compared in local units neither overflow (coordinates near 1e160, whose
    /// squared differences pass f64::MAX) nor underflow (near 1e-170), and since the scale is
    /// a power of two they order exactly as the world lengths do.
    pub fn local_difference(self, a: Point, b: Point) -> Point {
        let d = sub(a, b);
        if d[0].is_finite() && d[1].is_finite() {
            return scale(d, self.factor);
        }
        // A difference beyond f64::MAX (points far across the origin): halved first.
        scale(sub(scale(a, 0.5), scale(b, 0.5)), 2.0 * self.factor)
    }

    /// A local length in world units.
    pub fn world_length(self, length: f64) -> f64 {
        length / self.factor
    }
}

/// The one exact location key: two points have the same key exactly when their coordinates
/// are equal as numbers (`-0.0` and `0.0` are one location; adding `0.0` maps `-0.0` to
/// `0.0`). Used to find repeated locations with a hash map.
pub fn location_key(p: Point) -> (u64, u64) {
    ((p[0] + 0.0).to_bits(), (p[1] + 0.0).to_bits())
}

/// Signed area of a closed ring (counter-clockwise positive), by the shoelace formula
/// evaluated relative to the first vertex.
pub fn ring_signed_area(ring: &[Point]) -> f64 {
    if ring.len() < 3 {
        return 0.0;
    }
    let o = ring[0];
    let mut twice = 0.0;
    for i in 1..ring.len() - 1 {
        let a = sub(ring[i], o);
        let b = sub(ring[i + 1], o);
        twice += a[0] * b[1] - a[1] * b[0];
    }
    0.5 * twice
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_frame_holds_finite_points_whose_extent_passes_the_float_range() {
        // Points at -f64::MAX and 1e300: their extent overflows to infinity, which left the
        // frame unscaled and every squared distance infinite (the p-median then met a point
        // with no nearest site). Closed form: halved, the extent is 0.5 · MAX + 5e299, just
        // above 2^1023, so the factor is 2^-1025 (subnormal, still exact) and every local
        // coordinate lies within one unit.
        let points = [[-f64::MAX, 0.0], [1e300, 0.0], [0.0, 0.0]];
        let frame = WorkingFrame::of(&points);
        assert_eq!(frame.factor, 2f64.powi(-1000) * 2f64.powi(-25));
        for p in points {
            let q = frame.to_local(p);
            assert!(q[0].abs() <= 1.0 && q[1].abs() <= 1.0, "{q:?}");
            let back = frame.to_world(q);
            assert!((back[0] - p[0]).abs() <= 1e-15 * f64::MAX, "{back:?} {p:?}");
        }
        // Both near +MAX: their sum overflowed the centre.
        let high = WorkingFrame::of(&[[f64::MAX, 0.0], [0.9 * f64::MAX, 1.0]]);
        assert!(high.origin[0].is_finite() && high.to_local([f64::MAX, 0.0])[0].abs() <= 1.0);
        // A far point to hold beyond f64::MAX from the origin.
        let held = WorkingFrame::of(&[[f64::MAX, 0.0], [f64::MAX, 1.0]]).holding(&[[-f64::MAX, 0.0]]);
        assert!(held.to_local([-f64::MAX, 0.0])[0].abs() <= 1.0, "{held:?}");
        // Ordinary extents keep the exact frame they had.
        let usual = WorkingFrame::of(&[[500_000.0, 6e6], [500_100.0, 6.0001e6]]);
        assert_eq!(usual.origin, [500_050.0, 6_000_050.0]);
        assert_eq!(usual.factor, 2f64.powi(-7));
    }

    #[test]
    fn ring_area_of_unit_square_is_one_ccw_and_minus_one_cw() {
        // Closed form: the unit square has area 1.
        let sq = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
        assert_eq!(ring_signed_area(&sq), 1.0);
        let mut cw = sq;
        cw.reverse();
        assert_eq!(ring_signed_area(&cw), -1.0);
    }

    #[test]
    fn working_frame_is_unit_sized_and_round_trips() {
        let pts = [[500_000.0, 6_000_000.0], [500_010.0, 6_000_020.0]];
        let frame = WorkingFrame::of(&pts);
        assert_eq!(frame.origin, [500_005.0, 6_000_010.0]);
        // Extent 20 → factor 2^-5 (20 / 32 lies in (0.5, 1]).
        assert_eq!(frame.factor, 1.0 / 32.0);
        assert_eq!(frame.local(&pts), vec![[-5.0 / 32.0, -10.0 / 32.0], [5.0 / 32.0, 10.0 / 32.0]]);
        assert_eq!(frame.to_world(frame.to_local(pts[1])), pts[1]);
        assert_eq!(frame.world_length(0.5), 16.0);
    }

    #[test]
    fn location_key_joins_signed_zeros_only() {
        assert_eq!(location_key([-0.0, 1.0]), location_key([0.0, 1.0]));
        assert_ne!(location_key([1.0, 1.0]), location_key([1.0 + f64::EPSILON, 1.0]));
    }
}
