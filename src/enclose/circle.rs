//! Smallest enclosing circle: Welzl's move-to-front algorithm on a seeded shuffle.
//!
//! Welzl (1991), "Smallest enclosing disks (balls and ellipsoids)": the circle of a set is
//! fixed by at most three of its points, and a point outside the circle of the others lies
//! on the boundary of the circle of all. Processing the points in random order makes the
//! expected work linear; moving each point found outside to the front of the list (the
//! paper's `mtf_mb`) lets the points that matter be tested first in later passes. Only
//! points that may be hull vertices take part (see [`hull_candidates`]); the others cannot
//! be on the circle.
//!
//! All arithmetic is in the points' [`WorkingFrame`] (shifted to the bounding box's centre,
//! so projected coordinates such as (500 000, 6 000 000) keep full precision, and scaled by
//! a power of two to unit size, so squared distances neither overflow nor underflow); the
//! reported radius is the largest distance from the reported centre to any input point, so
//! every point is covered up to the rounding of one square root.

use super::{run_supported, Supported};
use crate::batch::{Grouped, OnGroupError};
use crate::error::Result;
use crate::geometry::hull::hull_candidates;
use crate::geometry::predicates::orient2d;
use crate::geometry::random::SplitMix64;
use crate::geometry::{add, distance_squared, scale, sub, validate_points, Point, Weights, WorkingFrame};

/// The seed of the shuffle when none is given: the same input always gives the same answer.
pub(super) const DEFAULT_SEED: u64 = 0x5EED_C1C1_E000_0001;

/// A point counts as outside a trial circle only when its squared distance exceeds the
/// squared radius by this relative margin; points inside the margin are covered by the
/// final radius, which is recomputed exactly over all points.
const OUTSIDE_MARGIN: f64 = 1e-13;

/// Options of [`enclosing_circle_with`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct CircleOptions {
    /// Seed of the shuffle (the circle is unique; the seed can only change which of several
    /// cocircular points are reported as `support`, and the last bits of the result).
    pub seed: u64,
}

impl Default for CircleOptions {
    fn default() -> Self {
        CircleOptions { seed: DEFAULT_SEED }
    }
}

/// The smallest circle containing a point set.
#[derive(Debug, Clone, PartialEq)]
pub struct Circle {
    /// Centre.
    pub center: Point,
    /// Radius: the largest distance from `center` to an input point.
    pub radius: f64,
    /// `π · radius²`, the area of the disk.
    pub area: f64,
    /// Indices of the input points that define the circle: one (all points coincide), two
    /// (a diameter) or three (on the boundary, not collinear), in increasing order.
    pub support: Vec<usize>,
}

/// The smallest enclosing circle of `points`, with the default seed.
///
/// # Errors
/// - [`crate::Error::TooFewPoints`] when `points` is empty;
/// - [`crate::Error::NonFiniteCoordinate`] for a NaN or infinite coordinate.
///
/// # Runtime
/// O(n): a linear thinning pass, Welzl's expected-linear method on the points that survive
/// it, and one pass for the final radius.
pub fn enclosing_circle(points: &[Point]) -> Result<Circle> {
    enclosing_circle_with(points, &CircleOptions::default())
}

/// [`enclosing_circle`] with an explicit seed.
///
/// # Errors
/// As [`enclosing_circle`].
pub fn enclosing_circle_with(points: &[Point], options: &CircleOptions) -> Result<Circle> {
    validate_points("points", points, 1)?;
    Ok(solve(points, options.seed))
}

/// [`enclosing_circle_with`] for every group of a labelled cloud, in parallel (see
/// [`crate::batch`]); support indices refer to the whole input.
///
/// # Errors
/// As [`enclosing_circle`], and [`crate::Error::LengthMismatch`] when `labels` does not
/// have one entry per point.
pub fn enclosing_circles(
    points: &[Point],
    labels: &[i64],
    options: &CircleOptions,
    on_error: OnGroupError,
) -> Result<Grouped<Circle>> {
    run_supported(points, Weights::Unit, labels, on_error, |group| Ok(solve(group.points, options.seed)))
}

impl Supported for Circle {
    fn support_mut(&mut self) -> &mut Vec<usize> {
        &mut self.support
    }
}

/// A trial circle in the local frame, as centre and squared radius, with its defining points.
#[derive(Debug, Clone, Copy)]
struct Trial {
    center: Point,
    radius_squared: f64,
    support: [usize; 3],
    support_len: usize,
}

impl Trial {
    #[inline]
    fn excludes(&self, p: Point) -> bool {
        distance_squared(p, self.center) > self.radius_squared * (1.0 + OUTSIDE_MARGIN)
    }

    fn one(p: (Point, usize)) -> Trial {
        Trial { center: p.0, radius_squared: 0.0, support: [p.1, 0, 0], support_len: 1 }
    }

    fn two(p: (Point, usize), q: (Point, usize)) -> Trial {
        let center = [0.5 * (p.0[0] + q.0[0]), 0.5 * (p.0[1] + q.0[1])];
        let radius_squared = distance_squared(p.0, center).max(distance_squared(q.0, center));
        Trial { center, radius_squared, support: [p.1, q.1, 0], support_len: 2 }
    }

    /// The circle through three points; when they are collinear (exactly, by [`orient2d`]),
    /// the circle on the farthest pair as diameter.
    fn three(p: (Point, usize), q: (Point, usize), r: (Point, usize)) -> Trial {
        let twice_area = orient2d(p.0, q.0, r.0);
        if twice_area == 0.0 {
            let candidates = [Trial::two(p, q), Trial::two(p, r), Trial::two(q, r)];
            return candidates
                .into_iter()
                .max_by(|a, b| a.radius_squared.total_cmp(&b.radius_squared))
                .unwrap_or(Trial::two(p, q));
        }
        let b = sub(q.0, p.0);
        let c = sub(r.0, p.0);
        let (bb, cc) = (b[0] * b[0] + b[1] * b[1], c[0] * c[0] + c[1] * c[1]);
        let d = 2.0 * twice_area;
        let offset = [(c[1] * bb - b[1] * cc) / d, (b[0] * cc - c[0] * bb) / d];
        let center = add(p.0, offset);
        let radius_squared =
            distance_squared(p.0, center).max(distance_squared(q.0, center)).max(distance_squared(r.0, center));
        Trial { center, radius_squared, support: [p.1, q.1, r.1], support_len: 3 }
    }
}

/// Welzl's `mtf_mb` unrolled into its three levels (at most three boundary points in the
/// plane). `list` holds (local point, input index) in shuffled order.
fn move_to_front(list: &mut [(Point, usize)]) -> Trial {
    let mut circle = Trial::one(list[0]);
    for i in 1..list.len() {
        let pi = list[i];
        if !circle.excludes(pi.0) {
            continue;
        }
        // Circle of list[..i] with pi on the boundary.
        circle = Trial::one(pi);
        for j in 0..i {
            let pj = list[j];
            if !circle.excludes(pj.0) {
                continue;
            }
            // Circle of list[..j] with pi and pj on the boundary.
            circle = Trial::two(pi, pj);
            for k in 0..j {
                let pk = list[k];
                if circle.excludes(pk.0) {
                    circle = Trial::three(pi, pj, pk);
                    list[..=k].rotate_right(1);
                }
            }
            list[..=j].rotate_right(1);
        }
        list[..=i].rotate_right(1);
    }
    circle
}

/// Solve. `points` is validated and not empty.
pub(super) fn solve(points: &[Point], seed: u64) -> Circle {
    let frame = WorkingFrame::of(points);
    // The circle depends only on the hull's vertices: shuffle just the points that may be one.
    let mut list: Vec<(Point, usize)> =
        hull_candidates(points).into_iter().map(|i| (frame.to_local(points[i]), i)).collect();
    SplitMix64::new(seed).shuffle(&mut list);
    let trial = move_to_front(&mut list);
    drop(list);
    let center = frame.to_world(trial.center);
    let radius = scaled_max_distance(points, center, frame, |_| 1.0);
    let mut support = trial.support[..trial.support_len].to_vec();
    support.sort_unstable();
    Circle { center, radius, area: std::f64::consts::PI * radius * radius, support }
}

/// `maxᵢ wᵢ‖pᵢ − center‖` over points of positive weight, in the caller's coordinates.
///
/// Why not in the shifted frame: the reported radius must cover the points as given, so it
/// is measured without the shift's rounding; only the frame's power-of-two scale is applied
/// (exact), so the squares neither overflow nor underflow.
pub(super) fn scaled_max_distance(
    points: &[Point],
    center: Point,
    frame: WorkingFrame,
    weight: impl Fn(usize) -> f64,
) -> f64 {
    let factor = frame.factor;
    let c = scale(center, factor);
    let mut largest = 0.0f64;
    for (i, &p) in points.iter().enumerate() {
        let w = weight(i);
        if w > 0.0 {
            largest = largest.max(w * w * distance_squared(scale(p, factor), c));
        }
    }
    frame.world_length(largest.sqrt())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::distance;

    fn covers(points: &[Point], c: &Circle) -> bool {
        points.iter().all(|&p| distance(p, c.center) <= c.radius * (1.0 + 1e-12))
    }

    #[test]
    fn equilateral_triangle_radius_is_side_over_root_three() {
        // Closed form: the circumradius of an equilateral triangle of side s is s/√3, the
        // equality case of Jung's theorem (Jung 1901).
        let s = 2.0;
        let pts = [[0.0, 0.0], [s, 0.0], [0.5 * s, 0.5 * s * 3f64.sqrt()]];
        let c = enclosing_circle(&pts).unwrap();
        assert!((c.radius - s / 3f64.sqrt()).abs() <= 1e-15 * s);
        assert_eq!(c.support, vec![0, 1, 2]);
    }

    #[test]
    fn obtuse_triangle_circle_has_longest_side_as_diameter() {
        // Closed form (Euclid): an obtuse triangle's smallest circle is on its longest side.
        let pts = [[0.0, 0.0], [10.0, 0.0], [4.0, 1.0]];
        let c = enclosing_circle(&pts).unwrap();
        assert_eq!(c.center, [5.0, 0.0]);
        assert_eq!(c.radius, 5.0);
        assert_eq!(c.support, vec![0, 1]);
    }

    #[test]
    fn points_on_a_circle_give_that_circle_far_from_the_origin() {
        let (cx, cy, r) = (500_000.0, 6_000_000.0, 3.0);
        let pts: Vec<Point> = (0..37)
            .map(|k| {
                let t = k as f64 * 0.17;
                [cx + r * t.cos(), cy + r * t.sin()]
            })
            .collect();
        let c = enclosing_circle(&pts).unwrap();
        assert!((c.radius - r).abs() <= 1e-9 * r, "{}", c.radius);
        assert!(distance(c.center, [cx, cy]) <= 1e-9 * r);
        assert!(covers(&pts, &c));
    }

    #[test]
    fn degenerate_sets_one_point_duplicates_collinear() {
        let c = enclosing_circle(&[[1.5, -2.5]]).unwrap();
        assert_eq!((c.center, c.radius, c.support), ([1.5, -2.5], 0.0, vec![0]));
        let c = enclosing_circle(&[[2.0, 2.0]; 5]).unwrap();
        assert_eq!((c.radius, c.support.len()), (0.0, 1));
        let line: Vec<Point> = (0..20).map(|i| [i as f64, 2.0 * i as f64 + 1.0]).collect();
        let c = enclosing_circle(&line).unwrap();
        assert_eq!(c.support, vec![0, 19]);
        assert!(covers(&line, &c));
    }

    #[test]
    fn large_degenerate_sets_thin_safely() {
        // Collinear, repeated and cocircular sets above the thinning threshold.
        let line: Vec<Point> = (0..5000).map(|i| [3.0 * (i % 997) as f64, -2.0 * (i % 997) as f64]).collect();
        let c = enclosing_circle(&line).unwrap();
        assert!((c.radius - 0.5 * distance(line[0], line[996])).abs() <= 1e-12 * c.radius);
        assert!(covers(&line, &c));
        let rim: Vec<Point> =
            (0..4000).map(|k| [(k as f64 * 0.01).cos() * 7.0, (k as f64 * 0.01).sin() * 7.0]).collect();
        let c = enclosing_circle(&rim).unwrap();
        assert!((c.radius - 7.0).abs() <= 1e-12 * 7.0 && covers(&rim, &c));
    }

    #[test]
    fn same_seed_same_answer_and_other_seeds_same_circle() {
        let mut g = SplitMix64::new(11);
        let pts: Vec<Point> = (0..2000).map(|_| [g.next_f64(), g.next_f64()]).collect();
        let a = enclosing_circle(&pts).unwrap();
        assert_eq!(a, enclosing_circle(&pts).unwrap());
        let b = enclosing_circle_with(&pts, &CircleOptions { seed: 99 }).unwrap();
        assert!((a.radius - b.radius).abs() <= 1e-14);
        assert!(covers(&pts, &a));
        for &s in &a.support {
            assert!((distance(pts[s], a.center) - a.radius).abs() <= 1e-12);
        }
    }

    #[test]
    fn tiny_and_huge_coordinates_neither_underflow_nor_overflow() {
        // Found by hypothesis: a squared distance of 1.6e-232 underflowed to zero.
        let c = enclosing_circle(&[[1.65051432e-232, 0.0], [0.0, 0.0]]).unwrap();
        assert_eq!(c.radius, 0.5 * 1.65051432e-232);
        let c = enclosing_circle(&[[1e300, 0.0], [-1e300, 0.0], [0.0, 5e299]]).unwrap();
        assert_eq!((c.center, c.radius), ([0.0, 0.0], 1e300));
    }

    #[test]
    fn grouped_support_refers_to_input_rows() {
        let pts = [[0.0, 0.0], [9.0, 9.0], [2.0, 0.0], [9.0, 11.0]];
        let g = enclosing_circles(&pts, &[4, 8, 4, 8], &CircleOptions::default(), OnGroupError::Raise).unwrap();
        let group_labels = g.labels.clone();
        let results = g.into_solved().unwrap();
        assert_eq!(group_labels, vec![4, 8]);
        assert_eq!(results[0].support, vec![0, 2]);
        assert_eq!(results[1].center, [9.0, 10.0]);
        assert_eq!(results[1].support, vec![1, 3]);
    }

    proptest::proptest! {
        #[test]
        fn circle_covers_all_and_support_is_on_boundary(
            raw in proptest::collection::vec((-1e3f64..1e3, -1e3f64..1e3), 1..60)
        ) {
            let pts: Vec<Point> = raw.iter().map(|&(x, y)| [x, y]).collect();
            let c = enclosing_circle(&pts).unwrap();
            proptest::prop_assert!(covers(&pts, &c));
            for &s in &c.support {
                proptest::prop_assert!((distance(pts[s], c.center) - c.radius).abs() <= 1e-9 * c.radius.max(1.0));
            }
        }
    }
}
