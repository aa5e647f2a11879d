//! Convex hull of a planar point set.
//!
//! Andrew's monotone chain (Andrew 1979, "Another efficient algorithm for convex hulls in
//! two dimensions"): sort by (x, y), then build the lower and upper chains, popping every
//! vertex that does not make a strict left turn. Every turn is decided by the exact
//! [`orient2d`], so the hull is exact for any finite input.

use super::predicates::orient2d;
use super::Point;

/// Indices of the vertices of the convex hull of `points`, counter-clockwise, starting at
/// the lexicographically smallest point (smallest x, then smallest y).
///
/// Only strictly convex corners are returned: points lying on a hull edge and repeated
/// points are left out (of equal points, the one with the smallest index is kept).
/// Degenerate sets: no points give `[]`, points that all coincide give one index, and
/// collinear points give the two extreme ones.
///
/// Coordinates must be finite.
///
/// # Runtime
/// O(n log n) for the sort, then O(n).
pub fn hull_vertices(points: &[Point]) -> Vec<usize> {
    let mut order: Vec<usize> = (0..points.len()).collect();
    // Numeric order, so that -0.0 and 0.0 compare equal (total_cmp would separate them and
    // break both the lexicographic sweep and the removal of repeated points).
    let numeric = |a: f64, b: f64| a.partial_cmp(&b).unwrap_or_else(|| a.total_cmp(&b));
    order.sort_by(|&i, &j| {
        let (a, b) = (points[i], points[j]);
        numeric(a[0], b[0]).then(numeric(a[1], b[1])).then(i.cmp(&j))
    });
    order.dedup_by(|&mut j, &mut i| points[i] == points[j]);
    if order.len() < 3 {
        return order;
    }
    let mut hull: Vec<usize> = Vec::with_capacity(2 * order.len().min(64));
    // Lower chain, left to right.
    for &i in &order {
        while hull.len() >= 2 && orient2d(points[hull[hull.len() - 2]], points[hull[hull.len() - 1]], points[i]) <= 0.0 {
            hull.pop();
        }
        hull.push(i);
    }
    // Upper chain, right to left; the lower chain's vertices stay.
    let lower_len = hull.len() + 1;
    for &i in order.iter().rev().skip(1) {
        while hull.len() >= lower_len
            && orient2d(points[hull[hull.len() - 2]], points[hull[hull.len() - 1]], points[i]) <= 0.0
        {
            hull.pop();
        }
        hull.push(i);
    }
    // The last vertex pushed is the first one again.
    hull.pop();
    hull
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn square_with_interior_edge_and_repeated_points_gives_its_four_corners() {
        // Closed form: the hull of a square's corners, centre and edge midpoints is the square.
        let pts = [
            [0.5, 0.5], [0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0],
            [0.5, 0.0], [1.0, 0.5], [0.0, 0.0], [0.0, 0.5], [0.5, 1.0],
        ];
        assert_eq!(hull_vertices(&pts), vec![1, 2, 3, 4]);
    }

    #[test]
    fn negative_zero_equals_zero() {
        // Found by hypothesis: (-0, 0) sorted apart from (0, 0) broke the sweep.
        let pts = [[1.0, 0.0], [0.0, -1.0], [-0.0, 0.0], [0.0, 0.0]];
        assert_eq!(hull_vertices(&pts), vec![1, 0, 2]);
    }

    #[test]
    fn degenerate_sets() {
        assert!(hull_vertices(&[]).is_empty());
        assert_eq!(hull_vertices(&[[2.0, 2.0], [2.0, 2.0]]), vec![0]);
        assert_eq!(hull_vertices(&[[1.0, 1.0], [0.0, 0.0], [3.0, 3.0], [2.0, 2.0]]), vec![1, 2]);
    }

    #[test]
    fn hull_is_counter_clockwise_and_contains_every_point() {
        let mut rng = crate::geometry::random::SplitMix64::new(3);
        let pts: Vec<Point> = (0..500).map(|_| [rng.next_f64(), rng.next_f64()]).collect();
        let h = hull_vertices(&pts);
        for k in 0..h.len() {
            let (a, b) = (pts[h[k]], pts[h[(k + 1) % h.len()]]);
            assert!(orient2d(a, b, pts[h[(k + 2) % h.len()]]) > 0.0);
            assert!(pts.iter().all(|&p| orient2d(a, b, p) >= 0.0));
        }
    }
}
