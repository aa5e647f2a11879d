//! Candidate sites for coverage anywhere in the plane: a finite dominating set.
//!
//! For Euclidean coverage within a radius `r`, some optimal set of sites lies among the
//! demand points and the intersection points of the circles of radius `r` around them
//! (Church 1984): any site can slide, keeping every point it covers, until two circles (or a
//! point) pin it. Circles meet only for points at most `2r` apart, found in an R*-tree.
//! Candidates covering exactly the same points are kept once (the first), a reduction by
//! dominance; the covering models then choose among them.

use std::collections::HashSet;

use rayon::prelude::*;

use super::check_radius;
use crate::cancel::{RunLimits, Steps};
use crate::error::{Error, Result};
use crate::geometry::{distance, validate_points, LocalTree, Point, WorkingFrame};

/// Points between two polls of the clock in [`circle_intersections`]: a few milliseconds of
/// neighbour queries even where the circles overlap densely.
const POLL_POINTS: usize = 256;

/// Most candidate sites [`circle_intersections`] generates before refusing.
pub const MAX_DOMINATING_CANDIDATES: usize = 4_000_000;

/// The demand points and the pairwise intersection points of the circles of radius `radius`
/// around them, one per distinct set of covered points (see the module docs).
///
/// Beside existing sites at `fixed` (always open), a candidate counts only the points no
/// existing site covers: one that adds nothing to them is left out, and of candidates that
/// add the same points one is kept. Whatever the existing sites cover is covered in every
/// plan, so the set still holds an optimal choice of new sites.
///
/// Each intersection point is moved toward the midpoint of its two points by a relative
/// `1e-9` of its distance to it, so rounding never leaves either point outside the radius
/// (the midpoint is within the radius of both, and both disks are convex).
///
/// # Errors
/// Bad `points` or `fixed`; [`Error::InvalidParameter`] naming `radius` when it is not finite and
/// positive, or when more than `limit` candidates arise (dense points for the radius).
///
/// # Runtime
/// O(n log n + K log n) for K pairs within `2 · radius`. The clock of `limits` is polled
/// every [`POLL_POINTS`] points; stopped, the candidates found so far are returned (every
/// demand point is among them, so every point can still be covered). Progress counts points.
pub fn circle_intersections(
    points: &[Point],
    fixed: &[Point],
    radius: f64,
    limit: usize,
    limits: &RunLimits,
) -> Result<Vec<Point>> {
    validate_points("points", points, 1)?;
    validate_points("fixed", fixed, 0)?;
    check_radius(radius)?;
    let clock = limits.clock();
    let mut steps = Steps::new(&clock.watch, points.len() as u64);
    // The tree holds the points in their working frame (unit size), where the squared
    // search distances neither overflow nor underflow at coordinates near 1e±160 and
    // beyond; every test that decides coverage is made on the caller's coordinates, by
    // the same `distance(..) <= radius` as the covering models'.
    let tree = LocalTree::new(points, WorkingFrame::of(points));
    let reach = 2.0 * radius;
    let mut candidates: Vec<Point> = points.to_vec();
    for (i, &a) in points.iter().enumerate() {
        if i.is_multiple_of(POLL_POINTS) && clock.stop() {
            break;
        }
        steps.step();
        for j in tree.within(a, reach) {
            let b = points[j];
            let d = distance(a, b);
            if j <= i || d == 0.0 || d > reach {
                continue;
            }
            // Halves and a product of factors near 1: no square of a coordinate or of the
            // radius, which overflow or underflow at extreme scales.
            let mid = [0.5 * a[0] + 0.5 * b[0], 0.5 * a[1] + 0.5 * b[1]];
            let share = 0.5 * d / radius;
            let h = radius * ((1.0 - share) * (1.0 + share)).max(0.0).sqrt();
            let normal = [-(b[1] - a[1]) / d, (b[0] - a[0]) / d];
            for sign in [1.0, -1.0] {
                let c = [mid[0] + sign * h * normal[0], mid[1] + sign * h * normal[1]];
                candidates.push([c[0] + (mid[0] - c[0]) * 1e-9, c[1] + (mid[1] - c[1]) * 1e-9]);
            }
            if candidates.len() > limit {
                return Err(Error::InvalidParameter {
                    name: "radius",
                    reason: format!(
                        "the circles of radius {radius} around the points meet in more than {limit} places; pass \
                         candidate sites or use fewer points"
                    ),
                });
            }
        }
    }
    steps.finish();
    let covered_before =
        |c: Point| -> Vec<usize> { tree.within(c, radius).filter(|&i| distance(c, points[i]) <= radius).collect() };
    // The points an existing site covers, by the same test as every candidate's.
    let mut served = vec![false; points.len()];
    for &f in fixed {
        for i in covered_before(f) {
            served[i] = true;
        }
    }
    // Dominance: one candidate per distinct set of points it adds to the existing sites'
    // (the first, so demand points come before intersection points); none adding nothing.
    let sets: Vec<Vec<usize>> = candidates
        .par_iter()
        .map(|&c| {
            let mut set = covered_before(c);
            set.retain(|&i| !served[i]);
            set.sort_unstable();
            set
        })
        .collect();
    let mut seen = HashSet::with_capacity(sets.len());
    Ok(candidates
        .into_iter()
        .zip(sets)
        .filter(|(_, set)| !set.is_empty() && seen.insert(set.clone()))
        .map(|(c, _)| c)
        .collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn two_points_closer_than_the_diameter_meet_twice() {
        // Closed form: points (0, 0) and (2, 0), radius √2: circles meet at (1, ±1), each
        // covering both points; the two points cover only themselves.
        let c = circle_intersections(&[[0.0, 0.0], [2.0, 0.0]], &[], 2f64.sqrt(), 100, &RunLimits::default()).unwrap();
        // (1, 1) and (1, -1) cover the same pair: one is kept.
        assert_eq!(c.len(), 3);
        assert!((c[2][0] - 1.0).abs() < 1e-8 && (c[2][1].abs() - 1.0).abs() < 1e-8, "{c:?}");
        for p in [[0.0, 0.0], [2.0, 0.0]] {
            assert!(distance(c[2], p) <= 2f64.sqrt());
        }
    }

    #[test]
    fn too_many_intersections_are_refused() {
        let points: Vec<Point> = (0..30).map(|i| [f64::from(i) * 0.01, 0.0]).collect();
        let e = circle_intersections(&points, &[], 1.0, 50, &RunLimits::default()).unwrap_err();
        assert!(e.to_string().starts_with("radius: the circles of radius 1 around the points meet in more than 50"));
        assert!(circle_intersections(&points, &[], 0.0, 50, &RunLimits::default()).is_err());
    }

    #[test]
    fn one_disk_covers_a_small_triangle_at_every_scale() {
        // Closed form: an equilateral triangle of side 1.7 has circumradius 1.7/√3 ≈ 0.981,
        // so one disk of radius 1 covers it, pinned by two of its circles' intersections.
        // Scaled by 2^±540 (exact) the squares of the radius and of the distances overflow
        // or underflow, and every intersection fell onto its pair's midpoint.
        for exponent in [0, 540, -540] {
            let s = 2f64.powi(exponent);
            let points = [[0.0, 0.0], [1.7 * s, 0.0], [0.85 * s, 1.7 * 0.75f64.sqrt() * s]];
            let c = circle_intersections(&points, &[], s, 100, &RunLimits::default()).unwrap();
            let all = c.iter().any(|&x| points.iter().all(|&p| distance(x, p) <= s));
            assert!(all, "2^{exponent}: {c:?}");
        }
    }

    #[test]
    fn a_pair_whose_squares_are_subnormal_in_the_frame_still_meets() {
        // Closed form: (0, 0) and (c, c) with c = √0.6 · 2^-536 lie √1.2 · 2^-536 apart, within
        // 2r for r = √1.3 · 2^-537, so their circles meet at points covering both. Far points
        // at (±1, ±1) put the frame's origin at 0 and its factor at 1/2. The tree's squared
        // reach, taken with a slack of the least normal number (whose square is 0), rounded
        // to one least subnormal against two for the pair's squared local distance, and the
        // pair was never met.
        let c = 0.6f64.sqrt() * 2f64.powi(-536);
        let points = [[0.0, 0.0], [c, c], [-1.0, -1.0], [1.0, 1.0]];
        let r = 1.3f64.sqrt() * 2f64.powi(-537);
        let found = circle_intersections(&points, &[], r, 100, &RunLimits::default()).unwrap();
        let both = found.iter().any(|&x| distance(x, points[0]) <= r && distance(x, points[1]) <= r);
        assert!(both, "{found:?}");
    }

    #[test]
    fn existing_sites_leave_out_the_candidates_that_add_nothing() {
        // Closed form: points (0, 0), (2, 0) and (9, 0), radius √2, an existing site at
        // (9, 0). Without it: the three points and one of (1, ±1). With it: (9, 0) adds
        // nothing; (0, 0) and (2, 0) add one point each and (1, 1) adds both.
        let points = [[0.0, 0.0], [2.0, 0.0], [9.0, 0.0]];
        let all = circle_intersections(&points, &[], 2f64.sqrt(), 100, &RunLimits::default()).unwrap();
        assert_eq!(all.len(), 4);
        let beside = circle_intersections(&points, &[[9.0, 0.0]], 2f64.sqrt(), 100, &RunLimits::default()).unwrap();
        assert_eq!(beside.len(), 3);
        assert!(beside.iter().all(|c| distance(*c, [9.0, 0.0]) > 2.0), "{beside:?}");
        // An existing site covering both (0, 0) and (2, 0) leaves (9, 0) alone; a bad one
        // is refused by name.
        let beside = circle_intersections(&points, &[[1.0, 0.5]], 2f64.sqrt(), 100, &RunLimits::default()).unwrap();
        assert_eq!(beside, vec![[9.0, 0.0]]);
        let e = circle_intersections(&points, &[[f64::NAN, 0.0]], 1.0, 100, &RunLimits::default()).unwrap_err();
        assert!(e.to_string().starts_with("fixed[0]"), "{e}");
    }
}
