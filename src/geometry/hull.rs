//! Convex hull of a planar point set.
//!
//! Andrew's monotone chain (Andrew 1979, "Another efficient algorithm for convex hulls in
//! two dimensions"): sort by (x, y), then build the lower and upper chains, popping every
//! vertex that does not make a strict left turn. Every turn is decided by the exact
//! [`orient2d`], so the hull is exact for any finite input. Large inputs are first thinned
//! with the Akl–Toussaint (1978) heuristic: points strictly inside the polygon of the
//! extreme points in eight directions cannot be hull vertices and skip the sort.

use super::predicates::orient2d;
use super::{distance, distance_squared, Point};

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
/// O(n) for the thinning, then O(m log m) for the sort of the m points that survive it
/// (typically a small fraction of n for clouds filling an area).
pub fn hull_vertices(points: &[Point]) -> Vec<usize> {
    monotone_chain(points, hull_candidates(points))
}

/// Indices of a subset of `points` that contains every vertex of their convex hull, in
/// increasing order: all of them for small sets; for larger ones, those that survive the
/// Akl–Toussaint thinning (points strictly inside the polygon of the extremes in eight
/// directions are dropped, with a cheap disk inside that polygon tested first).
///
/// Anything determined by the hull's vertices alone — the smallest enclosing circle or
/// ellipse, the diameter — can be computed on these.
///
/// # Runtime
/// O(n), one pass for the extremes and one for the test.
pub fn hull_candidates(points: &[Point]) -> Vec<usize> {
    if points.len() < THINNING_MIN_POINTS {
        return (0..points.len()).collect();
    }
    let octagon = extreme_octagon(points);
    let disk = disk_inside(&octagon);
    (0..points.len())
        .filter(|&i| {
            let p = points[i];
            let in_disk = disk.is_some_and(|(c, r2)| distance_squared(p, c) < r2);
            !in_disk && !strictly_inside(&octagon, p)
        })
        .collect()
}

/// Andrew's monotone chain over the candidate indices `order`.
fn monotone_chain(points: &[Point], mut order: Vec<usize>) -> Vec<usize> {
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
        while hull.len() >= 2 && orient2d(points[hull[hull.len() - 2]], points[hull[hull.len() - 1]], points[i]) <= 0.0
        {
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

/// Below this many points the thinning costs more than the sort it saves.
const THINNING_MIN_POINTS: usize = 64;

/// The input points extreme in the directions +x, +x+y, +y, −x+y, −x, −x−y, −y, +x−y
/// (counter-clockwise), consecutive repeats removed.
fn extreme_octagon(points: &[Point]) -> Vec<Point> {
    let keys: [fn(Point) -> f64; 8] =
        [|p| p[0], |p| p[0] + p[1], |p| p[1], |p| p[1] - p[0], |p| -p[0], |p| -p[0] - p[1], |p| -p[1], |p| p[0] - p[1]];
    let mut best = [0usize; 8];
    let mut value = [f64::NEG_INFINITY; 8];
    for (i, &p) in points.iter().enumerate() {
        for k in 0..8 {
            let v = keys[k](p);
            if v > value[k] {
                value[k] = v;
                best[k] = i;
            }
        }
    }
    let mut octagon: Vec<Point> = Vec::with_capacity(8);
    for &i in &best {
        if octagon.last() != Some(&points[i]) {
            octagon.push(points[i]);
        }
    }
    while octagon.len() > 1 && octagon.first() == octagon.last() {
        octagon.pop();
    }
    octagon
}

/// A disk (centre, squared radius) strictly inside the closed chain `polygon`, in the sense
/// of [`strictly_inside`]: centred at the vertices' mean, with radius the least distance to
/// an edge's line shrunk by a relative 1e-6, far more than the rounding of the distances
/// (a point in the disk passes [`strictly_inside`] exactly, so the disk only saves work).
fn disk_inside(polygon: &[Point]) -> Option<(Point, f64)> {
    if polygon.len() < 3 {
        return None;
    }
    let k = polygon.len() as f64;
    let c = [polygon.iter().map(|p| p[0]).sum::<f64>() / k, polygon.iter().map(|p| p[1]).sum::<f64>() / k];
    let mut radius = f64::INFINITY;
    for e in 0..polygon.len() {
        let (a, b) = (polygon[e], polygon[(e + 1) % polygon.len()]);
        let twice_area = orient2d(a, b, c);
        if !(twice_area > 0.0) {
            return None;
        }
        radius = radius.min(twice_area / distance(a, b));
    }
    let radius = radius * (1.0 - 1e-6);
    (radius.is_finite() && radius > 0.0).then_some((c, radius * radius))
}

/// True when `p` is strictly to the left of every edge of the closed chain `polygon`.
/// Such a point is strictly inside the convex hull of the chain's vertices (the chain winds
/// around it), so it is not a hull vertex of any set containing them; this holds whatever
/// rounding did to the choice of extremes.
fn strictly_inside(polygon: &[Point], p: Point) -> bool {
    polygon.len() >= 3 && (0..polygon.len()).all(|k| orient2d(polygon[k], polygon[(k + 1) % polygon.len()], p) > 0.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn square_with_interior_edge_and_repeated_points_gives_its_four_corners() {
        // Closed form: the hull of a square's corners, centre and edge midpoints is the square.
        let pts = [
            [0.5, 0.5],
            [0.0, 0.0],
            [1.0, 0.0],
            [1.0, 1.0],
            [0.0, 1.0],
            [0.5, 0.0],
            [1.0, 0.5],
            [0.0, 0.0],
            [0.0, 0.5],
            [0.5, 1.0],
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
    fn thinning_keeps_the_hull() {
        // Same hull with and without the Akl–Toussaint thinning, on a disc of points with
        // repeated extremes exactly on its rim.
        let mut rng = crate::geometry::random::SplitMix64::new(9);
        let mut pts: Vec<Point> = (0..3000)
            .map(|_| {
                let (r, t) = (rng.next_f64().sqrt(), rng.next_f64() * std::f64::consts::TAU);
                [r * t.cos(), r * t.sin()]
            })
            .collect();
        pts.extend([[1.0, 0.0], [0.0, 1.0], [-1.0, 0.0], [0.0, -1.0], [1.0, 0.0]]);
        assert_eq!(hull_vertices(&pts), monotone_chain(&pts, (0..pts.len()).collect()));
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
