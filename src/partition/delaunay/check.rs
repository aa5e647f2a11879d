//! An independent check of a triangulation's invariants, for tests (here and in the families
//! that build on the triangulation) and for debugging.

use super::Triangulation;
use crate::geometry::predicates::{incircle, orient2d};
use crate::geometry::Point;

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
