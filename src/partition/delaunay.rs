//! Delaunay triangulation of a point set, on `spade`'s circle-sweep bulk load
//! (Biniaz & Dastghaibyfard 2012, "A faster circle-sweep Delaunay triangulation
//! algorithm"), whose every sign decision is Shewchuk's exact `orient2d`/`incircle`.
//!
//! The triangulation is built on the input coordinates themselves (scaled by a power of two
//! only when they fall outside the exponent range the exact predicates accept), so far-offset
//! clouds are triangulated exactly as they are given: no rounding by a change of origin.

use std::collections::HashMap;

use spade::handles::VertexHandle;
use spade::{DelaunayTriangulation, HasPosition, Point2, Triangulation as _};

use crate::error::{Error, Result};
use crate::geometry::{validate_points, Point};

/// A Delaunay triangulation, indexed by input point.
///
/// Every index refers to a row of the input. When the input repeats a location, only one
/// row of each repeated location (the smallest index) is a vertex; [`Triangulation::representative`]
/// maps every row to it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Triangulation {
    /// Triangles as counter-clockwise vertex triples.
    pub triangles: Vec<[usize; 3]>,
    /// `adjacent[t][k]` is the triangle across the edge of `t` opposite its vertex `k`
    /// (`None` on the hull).
    pub adjacent: Vec<[Option<usize>; 3]>,
    /// The hull's vertices, counter-clockwise, each once (vertices lying on a hull edge included).
    pub hull: Vec<usize>,
    /// Every edge once, as `[smaller index, larger index]`.
    pub edges: Vec<[usize; 2]>,
    /// `representative[i]` is the vertex kept for input row `i` (`i` itself unless row `i`
    /// repeats an earlier location).
    pub representative: Vec<usize>,
}

/// A vertex handed to spade: its position and the input row it came from.
#[derive(Debug, Clone, Copy)]
struct Vertex {
    position: Point2<f64>,
    row: usize,
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
#[derive(Debug, Clone, Copy)]
struct Scale(f64);

impl Scale {
    fn of(points: &[Point]) -> Scale {
        Scale(exact_scale(points))
    }

    /// The scaled position, with magnitudes below spade's smallest accepted one made zero.
    #[inline]
    fn apply(self, p: Point) -> Point2<f64> {
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

fn exact_scale(points: &[Point]) -> f64 {
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
        return 1.0;
    }
    // Bring the largest magnitude into [1, 2).
    let exponent = largest.log2().floor() as i32;
    2f64.powi(-exponent.clamp(-1000, 1000))
}

/// Bit pattern of a vertex position, with `-0.0` and `0.0` made equal (spade compares with `==`).
#[inline]
fn position_key(p: Point2<f64>) -> (u64, u64) {
    ((p.x + 0.0).to_bits(), (p.y + 0.0).to_bits())
}

/// The Delaunay triangulation of `points`.
///
/// Cocircular input (grids, regular polygons) is legal: the triangulation then is one of the
/// Delaunay triangulations, the one spade's deterministic construction chooses.
///
/// # Errors
/// - [`Error::TooFewPoints`] with fewer than three points, or fewer than three distinct ones;
/// - [`Error::NonFiniteCoordinate`] for a NaN or infinite coordinate;
/// - [`Error::Degenerate`] when all points are collinear (no triangle exists).
///
/// # Runtime
/// O(n log n) (the sweep's distance sort), near linear in practice; duplicates add one
/// hash pass.
pub fn delaunay(points: &[Point]) -> Result<Triangulation> {
    validate_points("points", points, 3)?;
    let scale = Scale::of(points);
    let vertices: Vec<Vertex> =
        points.iter().enumerate().map(|(row, &p)| Vertex { position: scale.apply(p), row }).collect();
    let dt: DelaunayTriangulation<Vertex> = DelaunayTriangulation::bulk_load(vertices).map_err(|e| {
        // Unreachable after validation and scaling; reported rather than unwrapped.
        Error::Degenerate { argument: "points", reason: format!("coordinates rejected by the triangulator ({e})") }
    })?;
    let kept = dt.num_vertices();
    if kept < 3 {
        return Err(Error::TooFewPoints { argument: "points", needed: 3, got: kept, counted: "distinct points" });
    }
    if dt.num_inner_faces() == 0 {
        return Err(Error::Degenerate {
            argument: "points",
            reason: "all points are collinear, so no triangle exists".into(),
        });
    }

    let representative = representatives(points, scale, kept);
    let row = |v: VertexHandle<'_, Vertex>| representative[v.data().row];

    let mut triangles = Vec::with_capacity(dt.num_inner_faces());
    let mut adjacent = Vec::with_capacity(dt.num_inner_faces());
    for face in dt.inner_faces() {
        // Inner faces are numbered 1.., the outer face is 0.
        debug_assert_eq!(face.fix().index(), triangles.len() + 1);
        let e = face.adjacent_edges();
        triangles.push([row(e[0].from()), row(e[1].from()), row(e[2].from())]);
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

    let edges = dt
        .undirected_edges()
        .map(|e| {
            let [a, b] = e.vertices();
            let (a, b) = (row(a), row(b));
            if a < b {
                [a, b]
            } else {
                [b, a]
            }
        })
        .collect();

    // spade walks the hull clockwise; reversed, its edges' origins are the hull counter-clockwise.
    let mut hull: Vec<usize> = dt.convex_hull().map(|e| row(e.from())).collect();
    hull.reverse();

    Ok(Triangulation { triangles, adjacent, hull, edges, representative })
}

/// `representative[i]`: the smallest input row at the location of row `i`.
///
/// Locations are compared as spade compares them (after the same exact scaling, `==` on
/// coordinates), so the groups found here are exactly the vertices spade merged.
fn representatives(points: &[Point], scale: Scale, kept: usize) -> Vec<usize> {
    if kept == points.len() {
        return (0..points.len()).collect();
    }
    let mut first_row: HashMap<(u64, u64), usize> = HashMap::with_capacity(kept);
    points
        .iter()
        .enumerate()
        .map(|(row, &p)| *first_row.entry(position_key(scale.apply(p))).or_insert(row))
        .collect()
}

impl Triangulation {
    /// Every vertex's neighbours (the other ends of its edges) as CSR: the neighbours of row
    /// `i` are `adjacent[offsets[i]..offsets[i + 1]]`; rows that repeat an earlier location
    /// have none.
    pub fn neighbours(&self) -> (Vec<usize>, Vec<usize>) {
        neighbour_lists(self.representative.len(), &self.edges)
    }
}

/// CSR neighbour lists `(offsets, adjacent)` of `n` vertices from undirected edges.
pub(crate) fn neighbour_lists(n: usize, edges: &[[usize; 2]]) -> (Vec<usize>, Vec<usize>) {
    let mut offsets = vec![0usize; n + 1];
    for &[a, b] in edges {
        offsets[a + 1] += 1;
        offsets[b + 1] += 1;
    }
    for i in 0..n {
        offsets[i + 1] += offsets[i];
    }
    let mut fill = offsets.clone();
    let mut adjacent = vec![0usize; offsets[n]];
    for &[a, b] in edges {
        adjacent[fill[a]] = b;
        fill[a] += 1;
        adjacent[fill[b]] = a;
        fill[b] += 1;
    }
    (offsets, adjacent)
}

/// Check the structural invariants of a triangulation of `points`: counter-clockwise
/// triangles, symmetric adjacency, the empty-circumcircle property (exact `incircle`),
/// Euler's counts `t = 2n − 2 − h` and `e = 3n − 3 − h`, a counter-clockwise convex hull and
/// representatives that keep their location. Returns a description of the first violation.
///
/// # Runtime
/// O(t) for the local checks; the empty-circumcircle check is the local Delaunay condition
/// across every interior edge, which for a triangulation is equivalent to the global one
/// (Delaunay 1934).
pub fn check_triangulation(points: &[Point], t: &Triangulation) -> std::result::Result<(), String> {
    use crate::geometry::predicates::{incircle, orient2d};
    let n_vertices = t.representative.iter().enumerate().filter(|&(i, &r)| i == r).count();
    for (i, &r) in t.representative.iter().enumerate() {
        if !(points[r][0] == points[i][0] && points[r][1] == points[i][1]) {
            return Err(format!("representative of row {i} is at another location"));
        }
        if t.representative[r] != r {
            return Err(format!("representative of row {i} is not itself a vertex"));
        }
    }
    let h = t.hull.len();
    if t.triangles.len() != 2 * n_vertices - 2 - h {
        return Err(format!("{} triangles, Euler's formula wants {}", t.triangles.len(), 2 * n_vertices - 2 - h));
    }
    if t.edges.len() != 3 * n_vertices - 3 - h {
        return Err(format!("{} edges, Euler's formula wants {}", t.edges.len(), 3 * n_vertices - 3 - h));
    }
    for (ti, tri) in t.triangles.iter().enumerate() {
        let [a, b, c] = tri.map(|v| points[v]);
        if orient2d(a, b, c) <= 0.0 {
            return Err(format!("triangle {ti} is not counter-clockwise"));
        }
        for k in 0..3 {
            let Some(other) = t.adjacent[ti][k] else { continue };
            let (u, v) = (tri[(k + 1) % 3], tri[(k + 2) % 3]);
            let o = t.triangles[other];
            let Some(j) = (0..3).find(|&j| o[(j + 1) % 3] == v && o[(j + 2) % 3] == u) else {
                return Err(format!("triangles {ti} and {other} do not share edge {u}-{v}"));
            };
            if t.adjacent[other][j] != Some(ti) {
                return Err(format!("adjacency of {ti} and {other} is not symmetric"));
            }
            if incircle(a, b, c, points[o[j]]) > 0.0 {
                return Err(format!("vertex {} lies inside the circumcircle of triangle {ti}", o[j]));
            }
        }
    }
    for i in 0..h {
        let (a, b, c) = (points[t.hull[i]], points[t.hull[(i + 1) % h]], points[t.hull[(i + 2) % h]]);
        if orient2d(a, b, c) < 0.0 {
            return Err(format!("hull turns clockwise at position {}", (i + 1) % h));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn lcg_cloud(n: usize, seed: u64, offset: Point) -> Vec<Point> {
        let mut s = seed;
        let mut next = || {
            s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            (s >> 11) as f64 / (1u64 << 53) as f64
        };
        (0..n).map(|_| [offset[0] + next(), offset[1] + next()]).collect()
    }

    #[test]
    fn grid_has_two_triangles_per_cell() {
        // Closed form: a k × k grid of unit cells is split into 2 (k − 1)² triangles.
        for k in [2usize, 3, 7, 20] {
            let pts: Vec<Point> = (0..k * k).map(|i| [(i % k) as f64, (i / k) as f64]).collect();
            let t = delaunay(&pts).unwrap();
            assert_eq!(t.triangles.len(), 2 * (k - 1) * (k - 1));
            check_triangulation(&pts, &t).unwrap();
        }
    }

    #[test]
    fn random_and_far_offset_clouds_satisfy_invariants() {
        // Euler's formula and the empty-circumcircle property (exact predicate).
        for (seed, offset) in [(1, [0.0, 0.0]), (2, [500_000.0, 6_000_000.0]), (3, [-1e9, 3e8])] {
            let pts = lcg_cloud(2000, seed, offset);
            let t = delaunay(&pts).unwrap();
            check_triangulation(&pts, &t).unwrap();
        }
    }

    #[test]
    fn duplicates_map_to_smallest_row() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [1.0, 0.0], [-0.0, 0.0], [0.0, 1.0], [2.0, 2.0]];
        let t = delaunay(&pts).unwrap();
        assert_eq!(t.representative, vec![0, 1, 2, 1, 0, 2, 6]);
        check_triangulation(&pts, &t).unwrap();
        assert_eq!(t.triangles.len(), 2);
    }

    #[test]
    fn degenerate_inputs_are_refused() {
        let collinear: Vec<Point> = (0..10).map(|i| [i as f64, 2.0 * i as f64]).collect();
        assert!(matches!(delaunay(&collinear), Err(Error::Degenerate { .. })));
        let two = [[0.0, 0.0], [1.0, 1.0], [0.0, 0.0], [1.0, 1.0]];
        assert!(matches!(delaunay(&two), Err(Error::TooFewPoints { needed: 3, got: 2, .. })));
        assert!(matches!(delaunay(&[[0.0, 0.0]]), Err(Error::TooFewPoints { got: 1, .. })));
        let nan = [[0.0, 0.0], [1.0, f64::NAN], [1.0, 1.0]];
        assert!(matches!(delaunay(&nan), Err(Error::NonFiniteCoordinate { index: 1, .. })));
    }

    #[test]
    fn extreme_magnitudes_are_triangulated() {
        // Outside spade's accepted exponent range the input is scaled exactly by a power of
        // two, so the triangulation equals that of the same cloud at unit scale (the exact
        // predicates of the checker would overflow or underflow at the original scale).
        let unit = lcg_cloud(200, 9, [-0.5, -0.5]);
        let reference = delaunay(&unit).unwrap();
        check_triangulation(&unit, &reference).unwrap();
        for factor in [2f64.powi(990), 2f64.powi(-990)] {
            let scaled: Vec<Point> = unit.iter().map(|p| [p[0] * factor, p[1] * factor]).collect();
            assert_eq!(delaunay(&scaled).unwrap(), reference);
        }
    }

    #[test]
    fn cocircular_points_are_triangulated() {
        // Closed form: 16 points on a circle (a convex polygon) give 16 − 2 triangles.
        let pts: Vec<Point> = (0..16)
            .map(|i| {
                let a = i as f64 * std::f64::consts::PI / 8.0;
                [a.cos(), a.sin()]
            })
            .collect();
        let t = delaunay(&pts).unwrap();
        assert_eq!(t.triangles.len(), 14);
        check_triangulation(&pts, &t).unwrap();
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]
        #[test]
        fn integer_clouds_with_repeats_satisfy_invariants(
            raw in proptest::collection::vec((-6i32..6, -6i32..6), 3..60)
        ) {
            // Small integer coordinates: many duplicates, collinear runs and cocircular quads.
            let pts: Vec<Point> = raw.iter().map(|&(x, y)| [x as f64, y as f64]).collect();
            match delaunay(&pts) {
                Ok(t) => prop_assert_eq!(check_triangulation(&pts, &t), Ok(())),
                Err(e) => prop_assert!(e.is_degenerate()),
            }
        }
    }
}
