//! What spade sees and what comes back: vertices that remember their input row, the exact
//! power-of-two scaling into the range spade's predicates accept, and the faces and hull of a
//! spade triangulation read back as input rows.

use spade::{HasPosition, Point2, Triangulation as SpadeTriangulation};

use crate::geometry::predicates::all_collinear_in;
use crate::geometry::{location_key, power_of_two_factor, Point};

/// A vertex handed to spade: its position and the input row it came from.
#[derive(Debug, Clone, Copy)]
pub(super) struct Vertex {
    pub(super) position: Point2<f64>,
    pub(super) row: usize,
}

impl HasPosition for Vertex {
    type Scalar = f64;

    #[inline]
    fn position(&self) -> Point2<f64> {
        self.position
    }
}

/// Power-of-two factor bringing coordinates into the range spade's exact predicates accept
/// (nonzero magnitudes in [2^-142, 2^201]); `1.0` when they already are.
///
/// Scaling by a power of two is exact, so the triangulation is that of the input. Only when
/// the magnitudes span more than the accepted range (about 1e103) do the smallest nonzero
/// coordinates, below 2^-142 of the largest, become zero.
///
/// Why not [`crate::geometry::WorkingFrame`]: its shift to the box centre rounds far-offset
/// coordinates, and the triangulation must be that of the input as given. Only the scale is
/// shared: [`power_of_two_factor`] of the largest magnitude (not of the extent, since spade's
/// range bounds magnitudes), applied only when some magnitude lies outside that range.
#[derive(Debug, Clone, Copy)]
pub(super) struct Scale(f64);

impl Scale {
    pub(super) fn of(points: &[Point]) -> Scale {
        let mut largest = 0.0f64;
        let mut smallest = f64::INFINITY;
        for &c in points.iter().flatten() {
            let a = c.abs();
            largest = largest.max(a);
            if a != 0.0 {
                smallest = smallest.min(a);
            }
        }
        if largest <= spade::MAX_ALLOWED_VALUE && smallest >= spade::MIN_ALLOWED_VALUE {
            return Scale(1.0);
        }
        Scale(power_of_two_factor(largest))
    }

    /// The scaled position, with magnitudes below spade's smallest accepted one made zero.
    #[inline]
    pub(super) fn apply(self, p: Point) -> Point2<f64> {
        let flush = |c: f64| {
            let s = c * self.0;
            if s.abs() < spade::MIN_ALLOWED_VALUE {
                0.0
            } else {
                s
            }
        };
        Point2::new(flush(p[0]), flush(p[1]))
    }
}

/// The location key of a vertex position (spade compares positions with `==`, which joins
/// `-0.0` and `0.0` as [`location_key`] does).
#[inline]
pub(super) fn position_key(p: Point2<f64>) -> (u64, u64) {
    location_key([p.x, p.y])
}

/// Triangles as row triples, the triangle across each corner's edge, and a verdict per triangle.
pub(super) type Faces = (Vec<[usize; 3]>, Vec<[Option<usize>; 3]>, Vec<bool>);

/// The inner faces of a spade triangulation as counter-clockwise row triples, the face
/// across the edge opposite each corner (by face number, `None` outside), and `judge` of
/// each face's corner positions (read here, where they are stored in sweep order, rather
/// than later through the rows, which would miss the cache).
pub(super) fn faces_of<T: SpadeTriangulation<Vertex = Vertex>>(
    dt: &T,
    judge: impl Fn(Point2<f64>, Point2<f64>, Point2<f64>) -> bool,
) -> Faces {
    let mut triangles = Vec::with_capacity(dt.num_inner_faces());
    let mut adjacent = Vec::with_capacity(dt.num_inner_faces());
    let mut verdict = Vec::with_capacity(dt.num_inner_faces());
    for face in dt.inner_faces() {
        // Inner faces are numbered 1.., the outer face is 0.
        debug_assert_eq!(face.fix().index(), triangles.len() + 1);
        let e = face.adjacent_edges();
        let corners = [*e[0].from().data(), *e[1].from().data(), *e[2].from().data()];
        triangles.push(corners.map(|v| v.row));
        verdict.push(judge(corners[0].position, corners[1].position, corners[2].position));
        // Edge e[k] runs from vertex k to vertex k+1, so the edge opposite vertex k is e[k+1].
        let across = |k: usize| {
            let f = e[(k + 1) % 3].rev().face();
            if f.is_outer() {
                None
            } else {
                Some(f.fix().index() - 1)
            }
        };
        adjacent.push([across(0), across(1), across(2)]);
    }
    (triangles, adjacent, verdict)
}

/// The hull of a spade triangulation, counter-clockwise, by row.
pub(super) fn hull_of<T: SpadeTriangulation<Vertex = Vertex>>(dt: &T) -> Vec<usize> {
    // spade walks the hull clockwise; reversed, its edges' origins are the hull counter-clockwise.
    let mut hull: Vec<usize> = dt.convex_hull().map(|e| e.from().data().row).collect();
    hull.reverse();
    hull
}

/// Whether all positions lie on one line (or one point), by the exact orientation test.
pub(super) fn collinear(positions: impl Iterator<Item = Point2<f64>> + Clone) -> bool {
    all_collinear_in(positions.map(|p| [p.x, p.y]))
}
