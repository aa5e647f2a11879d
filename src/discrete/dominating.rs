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

use super::source::planar_cost;
use super::{check_radius, stopped_listing};
use crate::cancel::{RunLimits, Steps};
use crate::error::{Error, Result};
use crate::geometry::sum::{two_product, two_sum};
use crate::geometry::{distance, power_of_two_factor, validate_points, LocalTree, Point, WorkingFrame};

/// Points between two polls of the clock in [`circle_intersections`]: a few milliseconds of
/// neighbour queries even where the circles overlap densely.
const POLL_POINTS: usize = 256;

/// Meeting places whose coverage is tested between two polls of the clock (tens of
/// milliseconds on two cores).
const POLL_MEETS: usize = 65_536;

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
/// Each intersection point is offered twice, and a candidate's covered points are always
/// those of [`planar_cost`] `<= radius`, the test of the covering models and of evaluating
/// sites:
///
/// - where it lies, by [`meeting_points`]: exactly, for integer or grid coordinates with a
///   whole radius, whenever that point is representable, so points lying exactly on its
///   circle stay covered — three or more such points around it not within a half-circle
///   (the circumcentre of an acute triangle whose circumradius is the radius) are covered
///   by no other location at all;
/// - moved toward the midpoint of its two points by a relative `1e-9` of its distance to it,
///   so rounding never leaves either point outside the radius (the midpoint is within the
///   radius of both, and both disks are convex). Moving toward that midpoint also keeps
///   every other point on the arc between the two (in exact arithmetic).
///
/// Of the two, one is kept when its covered points hold the other's, both otherwise.
///
/// # Errors
/// Bad `points` or `fixed`; [`Error::InvalidParameter`] naming `radius` when it is not finite and
/// positive, or when more than `limit` candidates arise (dense points for the radius), and
/// naming `time_limit` when the clock stops the listing.
///
/// # Runtime
/// O(n log n + K log n) for K pairs within `2 · radius`. The clock of `limits` is polled
/// every [`POLL_POINTS`] points and every [`POLL_MEETS`] meeting places of the coverage
/// tests; stopped, the listing is refused (`time_limit`), as a partial set would not
/// dominate. Progress counts points.
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
    // the covering models' own test (`planar_cost(..) <= radius`).
    let tree = LocalTree::new(points, WorkingFrame::of(points));
    let reach = 2.0 * radius;
    // Per place where two circles meet: the point as computed, and moved toward the midpoint.
    let mut meets: Vec<[Point; 2]> = Vec::new();
    for (i, &a) in points.iter().enumerate() {
        if i.is_multiple_of(POLL_POINTS) && clock.stop() {
            return Err(stopped_listing(&clock, "the places where the circles meet", "plan"));
        }
        steps.step();
        for j in tree.within(a, reach) {
            let b = points[j];
            let d = distance(a, b);
            if j <= i || d == 0.0 || d > reach {
                continue;
            }
            let mid = [0.5 * a[0] + 0.5 * b[0], 0.5 * a[1] + 0.5 * b[1]];
            for c in meeting_points(a, b, d, radius) {
                meets.push([c, [c[0] + (mid[0] - c[0]) * 1e-9, c[1] + (mid[1] - c[1]) * 1e-9]]);
            }
            if points.len() + meets.len() > limit {
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
    // Coverage by the covering models' test, on the caller's coordinates.
    let covers = |site: Point, i: usize| planar_cost(points[i], site) <= radius;
    // The points an existing site covers, by the same test as every candidate's.
    let mut served = vec![false; points.len()];
    for &f in fixed {
        for i in tree.within(f, radius) {
            served[i] |= covers(f, i);
        }
    }
    // The points a site adds to the existing sites', ascending, among the rows `near` it.
    let adds = |site: Point, near: &[usize]| -> Vec<usize> {
        let mut set: Vec<usize> = near.iter().copied().filter(|&i| !served[i] && covers(site, i)).collect();
        set.sort_unstable();
        set
    };
    let at_points = points.par_iter().map(|&c| [Some((c, adds(c, &tree.within(c, radius).collect::<Vec<_>>()))), None]);
    let offer = |&[exact, nudged]: &[Point; 2]| {
        // One query serves both: what the nudged point covers lies within their distance more.
        let near: Vec<usize> = tree.within(exact, radius + distance(exact, nudged)).collect();
        let (on, inside) = (adds(exact, &near), adds(nudged, &near));
        if is_subset(&on, &inside) {
            [Some((nudged, inside)), None]
        } else if is_subset(&inside, &on) {
            [Some((exact, on)), None]
        } else {
            [Some((nudged, inside)), Some((exact, on))]
        }
    };
    // Collected in slices between polls of the clock: at a million meeting places the
    // coverage tests take tens of seconds, which a time limit must be able to cut.
    let mut found: Vec<Offered> = at_points.collect();
    for slice in meets.chunks(POLL_MEETS) {
        if clock.stop() {
            return Err(stopped_listing(&clock, "the places where the circles meet", "plan"));
        }
        found.par_extend(slice.par_iter().map(&offer));
    }
    // Dominance: one candidate per distinct set of points it adds to the existing sites'
    // (the first, so demand points come before intersection points); none adding nothing.
    let mut seen = HashSet::with_capacity(found.len());
    Ok(found
        .into_iter()
        .flatten()
        .flatten()
        .filter(|(_, set)| !set.is_empty() && seen.insert(set.clone()))
        .map(|(c, _)| c)
        .collect())
}

/// Up to two candidate sites for one place, each with the points it adds (ascending).
type Offered = [Option<(Point, Vec<usize>)>; 2];

/// Whether every element of the ascending `small` is in the ascending `large`.
fn is_subset(small: &[usize], large: &[usize]) -> bool {
    let mut rest = large.iter();
    small.iter().all(|x| rest.any(|y| y == x))
}

/// The two points where the circles of radius `radius` around `a` and `b` (`d > 0` apart,
/// `d <= 2 · radius`) meet: `m ± u · √(E·D) / (2D)` for the midpoint `m`, `u` the difference
/// `b − a` turned a quarter, `D = |b − a|²` and `E = 4r² − D`.
///
/// Why this form: where the meeting point is representable — integer or grid coordinates
/// with a whole radius, pairs closer than about 2^26 grid steps, the centre of three points
/// on a circle of the radius — it comes out exactly, so points exactly on its circle stay
/// within the radius by the covering models' test. The squares are taken after scaling by a power of two near `1 / radius` (exact),
/// so they neither overflow nor underflow at extreme scales; the product `E·D`, its square
/// root and the quotient are carried with their rounding errors (error-free products by
/// fused multiply–add; Dekker 1971, Ogita, Rump & Oishi 2005), so only the last rounding of
/// each coordinate remains. A pair far closer than the radius (`D` below `2^-600` in the
/// scaled units, where the squares of its difference would lose digits) uses the form
/// without squares: the midpoint plus `√((r − d/2)(r + d/2))` along the quarter-turned unit
/// difference.
fn meeting_points(a: Point, b: Point, d: f64, radius: f64) -> [Point; 2] {
    let mid = [0.5 * a[0] + 0.5 * b[0], 0.5 * a[1] + 0.5 * b[1]];
    let f = power_of_two_factor(radius);
    let delta = [(b[0] - a[0]) * f, (b[1] - a[1]) * f];
    let rho = radius * f;
    let dd = delta[0] * delta[0] + delta[1] * delta[1];
    let across = [-delta[1], delta[0]];
    if !(dd >= 2f64.powi(-600)) {
        let share = 0.5 * d / radius;
        let h = radius * ((1.0 - share) * (1.0 + share)).max(0.0).sqrt();
        let normal = [-(b[1] - a[1]) / d, (b[0] - a[0]) / d];
        return [1.0, -1.0].map(|sign| [mid[0] + sign * h * normal[0], mid[1] + sign * h * normal[1]]);
    }
    // D and E to about twice the working precision, as unevaluated sums (exact for integer
    // coordinates and radii below 2^26 times a power of two).
    let (dd_hi, dd_lo) = {
        let (x, ex) = two_product(delta[0], delta[0]);
        let (y, ey) = two_product(delta[1], delta[1]);
        let (s, es) = two_sum(x, y);
        (s, es + ex + ey)
    };
    let (rr, err) = two_product(2.0 * rho, 2.0 * rho);
    let (e_hi, e_err) = two_sum(rr, -dd_hi);
    let e_lo = e_err + err - dd_lo;
    if !(e_hi + e_lo > 0.0) {
        // Tangent circles (or rounding past them): the midpoint, both ways.
        return [mid, mid];
    }
    // √(E·D) as root + root_lo.
    let (p, p_err) = two_product(e_hi, dd_hi);
    let p_lo = p_err + e_lo * dd_hi + e_hi * dd_lo;
    let root = p.sqrt();
    let root_lo = ((-root).mul_add(root, p) + p_lo) / (2.0 * root);
    let two_d = 2.0 * dd_hi;
    let offset = across.map(|u| {
        let (n, n_err) = two_product(u, root);
        let n_lo = n_err + u * root_lo;
        let q = n / two_d;
        // The quotient corrected by its remainder, so that only its last rounding is left.
        let q = q + (((-q).mul_add(two_d, n) + n_lo) - q * 2.0 * dd_lo) / two_d;
        q / f
    });
    [[mid[0] + offset[0], mid[1] + offset[1]], [mid[0] - offset[0], mid[1] - offset[1]]]
}

#[cfg(test)]
mod tests {
    use proptest::prelude::*;

    use super::*;
    use crate::cancel::Watch;
    use crate::discrete::{cover_all, cover_most, with_planar_costs};
    use crate::geometry::Weights;

    /// Whether some candidate covers every one of `group` by the covering models' test.
    fn one_covers(candidates: &[Point], group: &[Point], radius: f64) -> bool {
        candidates.iter().any(|&c| group.iter().all(|&p| planar_cost(p, c) <= radius))
    }

    #[test]
    fn a_listing_the_clock_stops_is_refused_not_returned_in_part() {
        // A set short of some meeting places is not dominating (a plan and bound chosen from
        // it would not hold for sites anywhere), so a stopped listing names `time_limit`;
        // the same call without a limit lists them all.
        let points: Vec<Point> = (0..2_000).map(|i| [(i % 50) as f64, (i / 50) as f64]).collect();
        let stopped = circle_intersections(&points, &[], 1.5, usize::MAX, &RunLimits::new(Some(0.0), Watch::new()));
        match stopped {
            Err(Error::InvalidParameter { name, reason }) => {
                assert_eq!(name, "time_limit");
                assert!(reason.contains("before any plan existed"), "{reason}");
            }
            other => panic!("{other:?}"),
        }
        let whole = circle_intersections(&points, &[], 1.5, usize::MAX, &RunLimits::default()).unwrap();
        assert!(whole.len() > points.len());
    }

    #[test]
    fn three_points_exactly_on_a_circle_of_the_radius_take_one_site() {
        // Closed form: (3, 4), (-3, 4) and (0, -5) all lie exactly 5 from (0, 0), their
        // circumcentre, so one site covers them within radius 5 — and no site covers them
        // with room to spare (the triangle is acute: its smallest enclosing circle is that
        // circumcircle). The intersection points were moved 1e-9 toward their pair's
        // midpoint, (0, 4e-9) took the place of (0, 0), and two sites were proven optimal.
        let points = [[3.0, 4.0], [-3.0, 4.0], [0.0, -5.0]];
        let c = circle_intersections(&points, &[], 5.0, 100, &RunLimits::default()).unwrap();
        assert!(c.contains(&[0.0, 0.0]), "{c:?}");
        with_planar_costs(&points, &c, |costs| {
            let all = cover_all(costs, Weights::Unit, 5.0, &[], &RunLimits::default())?;
            assert_eq!((all.chosen, all.lower_bound), (1, 1));
            let most = cover_most(costs, Weights::Unit, 1, 5.0, &[], &RunLimits::default())?;
            assert_eq!(most.service.coverage.as_ref().map(|v| v.covered_weight), Some(3.0));
            assert!(most.upper_bound >= 3.0, "{most:?}");
            Ok(())
        })
        .unwrap();
    }

    /// The lattice points exactly `radius` from the origin for Pythagorean radii (closed
    /// form: the triples (3, 4, 5), (6, 8, 10), (5, 12, 13), (7, 24, 25), (15, 20, 25),
    /// (16, 63, 65), (25, 60, 65), (33, 56, 65), (39, 52, 65) with their signs and swaps, and
    /// the axis points).
    fn on_circle(radius: i32) -> Vec<[i32; 2]> {
        let triples: &[(i32, i32, i32)] = &[
            (3, 4, 5),
            (6, 8, 10),
            (5, 12, 13),
            (7, 24, 25),
            (15, 20, 25),
            (16, 63, 65),
            (25, 60, 65),
            (33, 56, 65),
            (39, 52, 65),
        ];
        let mut out = vec![[radius, 0], [-radius, 0], [0, radius], [0, -radius]];
        for &(x, y, _) in triples.iter().filter(|t| t.2 == radius) {
            for [u, v] in [[x, y], [y, x]] {
                for [su, sv] in [[1, 1], [1, -1], [-1, 1], [-1, -1]] {
                    out.push([su * u, sv * v]);
                }
            }
        }
        out
    }

    proptest! {
        #[test]
        fn co_circular_integer_points_are_covered_by_one_candidate(
            radius in prop::sample::select(vec![5, 10, 13, 25, 65]),
            centre in (-1000i32..1000, -1000i32..1000),
            offset in prop::sample::select(vec![0.0, 500_000.0, 6_000_000.0]),
            picks in prop::collection::vec(any::<prop::sample::Index>(), 3..7),
            extra in prop::collection::vec((-150i32..150, -150i32..150), 0..12),
            twice in any::<bool>(),
        ) {
            // Closed form: every point of `group` lies exactly `radius` from `centre`, so
            // the site there covers the group; the dominating set must hold a candidate
            // covering it too (Church 1984), whatever other points lie around (random
            // integer points, duplicates), and at projected-coordinate offsets.
            let lattice = on_circle(radius);
            let at = |x: i32, y: i32| [f64::from(centre.0 + x) + offset, f64::from(centre.1 + y) + offset];
            let group: Vec<Point> = picks.iter().map(|k| { let [x, y] = lattice[k.index(lattice.len())]; at(x, y) }).collect();
            let mut points = group.clone();
            points.extend(extra.iter().map(|&(x, y)| at(x, y)));
            if twice {
                points.extend(group.iter().copied());
            }
            let r = f64::from(radius);
            let c = circle_intersections(&points, &[], r, 1_000_000, &RunLimits::default()).unwrap();
            prop_assert!(group.iter().all(|&p| planar_cost(p, at(0, 0)) <= r));
            prop_assert!(one_covers(&c, &group, r), "{group:?} {c:?}");
        }
    }

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
