use super::search::{minimise_on_segment, ConvexObjective, Slope};
use super::*;

fn square(lo: f64, hi: f64) -> Vec<Point> {
    vec![[lo, lo], [hi, lo], [hi, hi], [lo, hi]]
}

/// A 10 × 10 square with a 2 × 2 square hole in the middle.
fn square_with_hole() -> FeasibleRegion {
    let mut v = square(0.0, 10.0);
    let mut hole = square(4.0, 6.0);
    hole.reverse();
    v.extend(hole);
    FeasibleRegion::new(&v, &[0, 4, 8]).unwrap()
}

#[test]
fn membership_is_closed_and_respects_holes() {
    let r = square_with_hole();
    // Closed form: area 100 − 4.
    assert_eq!(r.area(), 96.0);
    assert!(r.contains([1.0, 1.0]));
    assert!(!r.contains([5.0, 5.0]), "inside the hole");
    assert!(r.contains([4.0, 5.0]), "on the hole's edge");
    assert!(r.contains([0.0, 0.0]) && r.contains([10.0, 3.0]), "on the outer boundary");
    assert!(!r.contains([10.0 + 1e-12, 3.0]));
    assert!(!r.contains([-1.0, 5.0]) && !r.contains([f64::NAN, 1.0]));
}

#[test]
fn projection_lands_inside_by_the_exact_test() {
    let r = square_with_hole();
    // A point in the hole goes to the nearest edge of the hole.
    let q = r.project([5.2, 5.0]);
    assert!(r.contains(q));
    assert!((q[0] - 6.0).abs() < 1e-12 && (q[1] - 5.0).abs() < 1e-12);
    // A slanted edge: the foot of the perpendicular is rarely representable exactly.
    let tri = FeasibleRegion::new(&[[0.0, 0.0], [3.0, 1.0], [0.1, 7.0]], &[0, 3]).unwrap();
    for k in 0..200 {
        let p = [3.0 + (k as f64) * 0.037, 2.0 + (k as f64) * 0.053];
        let q = tri.project(p);
        assert!(tri.contains(q), "{p:?} -> {q:?}");
        let (foot, d, _) = tri.nearest_on_boundary(p);
        assert!(distance(q, foot) <= 1e-12 * (1.0 + d));
    }
}

#[test]
fn bad_regions_are_refused_by_name() {
    let e = FeasibleRegion::new(&[[0.0, 0.0], [1.0, 1.0], [2.0, 2.0]], &[0, 3]).unwrap_err();
    assert_eq!(e.argument(), "region");
    assert!(e.to_string().contains("no area"), "{e}");
    // A bow tie crosses itself.
    let e = FeasibleRegion::new(&[[0.0, 0.0], [4.0, 4.0], [4.0, 0.0], [0.0, 1.0]], &[0, 4]).unwrap_err();
    assert!(e.to_string().contains("cross"), "{e}");
    // A symmetric bow tie's lobes cancel (signed area 0), yet it has area: the reason is the
    // crossing of its diagonals at (5, 5) (closed form), not a lack of area.
    let e = FeasibleRegion::new(&[[0.0, 0.0], [10.0, 10.0], [10.0, 0.0], [0.0, 10.0]], &[0, 4]).unwrap_err();
    assert!(e.to_string().contains("boundary edges 0 and 2 cross"), "{e}");
    // Two squares sharing part of an edge overlap along it.
    let mut v = square(0.0, 2.0);
    v.extend([[2.0, 1.0], [3.0, 1.0], [3.0, 3.0], [2.0, 3.0]]);
    let e = FeasibleRegion::new(&v, &[0, 4, 8]).unwrap_err();
    assert!(e.to_string().contains("overlap"), "{e}");
    let e = FeasibleRegion::new(&[[0.0, 0.0], [f64::NAN, 1.0], [1.0, 0.0]], &[0, 3]).unwrap_err();
    assert_eq!((e.argument(), e.row()), ("region", Some(1)));
    assert!(matches!(FeasibleRegion::new(&square(0.0, 1.0), &[0, 5]), Err(Error::InvalidParameter { .. })));
    // Rings touching at one vertex are fine (a valid polygon with holes may do this).
    let mut v = square(0.0, 4.0);
    v.extend([[0.0, 0.0], [1.0, 2.0], [2.0, 1.0]]);
    assert!(FeasibleRegion::new(&v, &[0, 4, 7]).is_ok());
}

/// A convex parabola `(t − m)²` along x, to test the one-dimensional search.
struct Parabola(f64);

impl ConvexObjective for Parabola {
    fn slope(&self, x: Point, u: Point) -> Slope {
        let d = 2.0 * (x[0] - self.0) * u[0];
        Slope { value: (x[0] - self.0).powi(2), left: d, right: d }
    }
    fn segment_bound(&self, _: [Point; 2]) -> f64 {
        0.0
    }
    fn subgradient(&self, x: Point) -> (f64, Point) {
        let s = self.slope(x, [1.0, 0.0]);
        (s.value, [s.right, 0.0])
    }
}

/// `|x − m|`, a kink at the minimiser.
struct Kink(f64);

impl ConvexObjective for Kink {
    fn slope(&self, x: Point, u: Point) -> Slope {
        let d = x[0] - self.0;
        let s = d.signum() * u[0];
        if d == 0.0 {
            Slope { value: 1.0, left: -u[0].abs(), right: u[0].abs() }
        } else {
            Slope { value: d.abs() + 1.0, left: s, right: s }
        }
    }
    fn segment_bound(&self, _: [Point; 2]) -> f64 {
        0.0
    }
    fn subgradient(&self, x: Point) -> (f64, Point) {
        let s = self.slope(x, [1.0, 0.0]);
        (s.value, [s.right, 0.0])
    }
}

#[test]
fn segment_search_brackets_the_minimum() {
    // Closed form: the parabola's minimum on [0, 10] is at m (inside) or the nearer end.
    for m in [-3.0, 0.0, 2.5, 7.25, 10.0, 12.0] {
        let found = minimise_on_segment(&Parabola(m), [[0.0, 0.0], [10.0, 0.0]], 1e-12);
        let exact = (m.clamp(0.0, 10.0) - m).powi(2);
        assert!(found.lower <= exact + 1e-12 && found.value >= exact - 1e-12, "{m}: {found:?}");
        assert!((found.t * 10.0 - m.clamp(0.0, 10.0)).abs() < 1e-5, "{m}: {found:?}");
    }
    let found = minimise_on_segment(&Kink(3.3), [[0.0, 0.0], [10.0, 0.0]], 1e-12);
    assert!((found.value - 1.0).abs() < 1e-9 && found.lower <= 1.0 + 1e-12, "{found:?}");
}
