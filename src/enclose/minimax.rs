//! The weighted minimax point (weighted Euclidean 1-center): the location `x` minimising
//! `maxᵢ wᵢ‖x − aᵢ‖`.
//!
//! The problem is LP-type of combinatorial dimension 3: the optimum is unique (the level
//! sets are intersections of disks) and fixed by at most three points, its *basis*. The
//! solver is the pivoting scheme of Elzinga and Hearn (1972), "Geometrical solutions for
//! some minimax location problems": keep the optimum of a basis, find the point of largest
//! weighted distance from it, and if that point is not covered replace the basis by the
//! optimal basis of the (at most four) points, computed exactly by enumeration. The optimal
//! radius of the basis grows strictly at every pivot, so no basis repeats and the method
//! ends; when nothing is uncovered, the basis optimum is the optimum of all points.
//!
//! Bases of one point are that point (radius 0); of two points, the point on their segment
//! where the weighted distances are equal; of three, a point where all three weighted
//! distances are equal — an intersection of two Apollonius circles, found as a root of a
//! quadratic in the squared radius.
//!
//! When all positive weights are equal, the answer is the smallest enclosing circle's centre
//! (see [`super::circle`]), computed by Welzl's expected-linear method instead.

use super::{circle, run_supported, Supported};
use crate::batch::{Grouped, OnGroupError};
use crate::error::Result;
use crate::geometry::predicates::orient2d;
use crate::geometry::{
    add, distance_squared, scale, sub, validate_points, validate_weights, Point, Weights, WorkingFrame,
};

/// A point counts as uncovered only when its weighted squared distance exceeds the squared
/// radius by this relative margin (the reported radius is recomputed over all points).
const UNCOVERED_MARGIN: f64 = 1e-13;
/// Pivot limit; far above what the strictly growing radius allows in practice, it only stops
/// a run whose radius has ceased to grow through rounding.
const MAX_PIVOTS: usize = 10_000;

/// The weighted minimax point of a set.
#[derive(Debug, Clone, PartialEq)]
pub struct MinimaxPoint {
    /// The location minimising the largest weighted distance.
    pub location: Point,
    /// `maxᵢ wᵢ‖location − aᵢ‖` over the input points.
    pub radius: f64,
    /// Indices of the (one to three) input points of the optimal basis, in increasing
    /// order; their weighted distances all equal `radius`.
    pub support: Vec<usize>,
}

/// The weighted minimax point of `points`; points of weight zero are ignored.
///
/// # Errors
/// - [`crate::Error::TooFewPoints`] when `points` is empty;
/// - [`crate::Error::NonFiniteCoordinate`] for a NaN or infinite coordinate;
/// - [`crate::Error::LengthMismatch`], [`crate::Error::InvalidWeight`] or
///   [`crate::Error::AllWeightsZero`] for bad weights.
///
/// # Runtime
/// O(n) per pivot; the number of pivots is small in practice (typically below 30, not
/// bounded polynomially in theory). Equal weights take Welzl's expected O(n).
pub fn minimax_point(points: &[Point], weights: Weights<'_>) -> Result<MinimaxPoint> {
    validate_points("points", points, 1)?;
    validate_weights("weights", weights, points.len())?;
    Ok(solve(points, weights))
}

/// [`minimax_point`] for every group of a labelled cloud, in parallel (see
/// [`crate::batch`]); support indices refer to the whole input.
///
/// # Errors
/// As [`minimax_point`], with [`crate::Error::InGroup`] naming a group whose weights are
/// all zero; and [`crate::Error::LengthMismatch`] when `labels` does not have one entry per
/// point.
pub fn minimax_points(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    on_error: OnGroupError,
) -> Result<Grouped<MinimaxPoint>> {
    run_supported(points, weights, labels, on_error, |group| Ok(solve(group.points, group.weights)))
}

impl Supported for MinimaxPoint {
    fn support_mut(&mut self) -> &mut Vec<usize> {
        &mut self.support
    }
}

/// Solve; inputs are validated.
fn solve(points: &[Point], weights: Weights<'_>) -> MinimaxPoint {
    let active: Vec<usize> = (0..points.len()).filter(|&i| weights.get(i) > 0.0).collect();
    let first_weight = weights.get(active[0]);
    if active.iter().all(|&i| weights.get(i) == first_weight) {
        return equal_weights(points, &active, first_weight);
    }
    let frame = WorkingFrame::of(&active.iter().map(|&i| points[i]).collect::<Vec<_>>());
    let w_max = active.iter().map(|&i| weights.get(i)).fold(0.0f64, f64::max);
    // Local frame of unit size, weights scaled to at most 1: (point, weight, input index).
    let sites: Vec<Site> =
        active.iter().map(|&i| Site { at: frame.to_local(points[i]), w: weights.get(i) / w_max, index: i }).collect();

    // Start from the heaviest site alone.
    let start = (0..sites.len()).max_by(|&a, &b| sites[a].w.total_cmp(&sites[b].w)).unwrap_or(0);
    let mut basis = Basis { members: vec![start], location: sites[start].at, radius_squared: 0.0 };
    for _ in 0..MAX_PIVOTS {
        let (worst, worst_value) = farthest(&sites, basis.location);
        if worst_value <= basis.radius_squared * (1.0 + UNCOVERED_MARGIN) {
            break;
        }
        let Some(next) = pivot(&sites, &basis.members, worst) else {
            break;
        };
        if next.radius_squared <= basis.radius_squared {
            break;
        }
        basis = next;
    }
    let location = frame.to_world(basis.location);
    let radius = circle::scaled_max_distance(points, location, frame, |i| weights.get(i));
    let mut support: Vec<usize> = basis.members.iter().map(|&m| sites[m].index).collect();
    support.sort_unstable();
    MinimaxPoint { location, radius, support }
}

/// Equal positive weights: the smallest enclosing circle of the weighted points.
fn equal_weights(points: &[Point], active: &[usize], weight: f64) -> MinimaxPoint {
    let c = if active.len() == points.len() {
        circle::solve(points, circle::DEFAULT_SEED)
    } else {
        let gathered: Vec<Point> = active.iter().map(|&i| points[i]).collect();
        let mut c = circle::solve(&gathered, circle::DEFAULT_SEED);
        for s in &mut c.support {
            *s = active[*s];
        }
        c
    };
    MinimaxPoint { location: c.center, radius: weight * c.radius, support: c.support }
}

#[derive(Debug, Clone, Copy)]
struct Site {
    at: Point,
    w: f64,
    index: usize,
}

#[derive(Debug, Clone)]
struct Basis {
    /// Positions in the site list.
    members: Vec<usize>,
    location: Point,
    /// Largest weighted squared distance from `location` to the members.
    radius_squared: f64,
}

/// The site of largest weighted squared distance from `x`, and that value.
fn farthest(sites: &[Site], x: Point) -> (usize, f64) {
    let mut best = (0, -1.0);
    for (k, s) in sites.iter().enumerate() {
        let v = s.w * s.w * distance_squared(s.at, x);
        if v > best.1 {
            best = (k, v);
        }
    }
    best
}

/// Largest weighted squared distance from `x` to the given sites.
fn objective(sites: &[Site], members: &[usize], x: Point) -> f64 {
    members.iter().map(|&m| sites[m].w * sites[m].w * distance_squared(sites[m].at, x)).fold(0.0, f64::max)
}

/// The optimal basis of `basis ∪ {entering}`. The entering site lies on the boundary of the
/// new optimum (it was uncovered by the optimum of the others), so only subsets containing
/// it are candidates; of the candidate locations, the optimum is the one with the smallest
/// objective over all the sites involved (every candidate's objective is at least the
/// optimum, and the optimum is a candidate), preferring smaller subsets on ties.
fn pivot(sites: &[Site], basis: &[usize], entering: usize) -> Option<Basis> {
    let mut all: Vec<usize> = basis.to_vec();
    all.push(entering);
    let mut best: Option<Basis> = None;
    let mut consider = |members: Vec<usize>, x: Point| {
        if !(x[0].is_finite() && x[1].is_finite()) {
            return;
        }
        let value = objective(sites, &all, x);
        if best.as_ref().is_none_or(|b| value < b.radius_squared) {
            best = Some(Basis { members, location: x, radius_squared: value });
        }
    };
    consider(vec![entering], sites[entering].at);
    for &b in basis {
        consider(vec![b, entering], pair_location(sites[b], sites[entering]));
    }
    for (p, &b) in basis.iter().enumerate() {
        for &c in &basis[p + 1..] {
            for x in triple_locations(sites[b], sites[c], sites[entering]).into_iter().flatten() {
                consider(vec![b, c, entering], x);
            }
        }
    }
    best
}

/// The point of segment `pq` where `w_p‖x − p‖ = w_q‖x − q‖`.
fn pair_location(p: Site, q: Site) -> Point {
    let t = q.w / (p.w + q.w);
    add(p.at, scale(sub(q.at, p.at), t))
}

/// The (up to two) points where the three weighted distances are equal.
///
/// With `uₘ = 1/wₘ²`, `s = r²` and `y = x − a₁`: `‖y‖² = s u₁` and, subtracting it from the
/// other two, `2(aₘ − a₁)·y = ‖aₘ − a₁‖² + s(u₁ − uₘ)`, a linear system giving
/// `y = y₀ + s y₁`; substituting back leaves `‖y₁‖² s² + (2 y₀·y₁ − u₁) s + ‖y₀‖² = 0`.
/// Collinear triples have no such point worth keeping (the optimum of collinear sites lies
/// on their line and is fixed by two of them) and give none.
fn triple_locations(a: Site, b: Site, c: Site) -> [Option<Point>; 2] {
    let twice_area = orient2d(a.at, b.at, c.at);
    if twice_area == 0.0 {
        return [None, None];
    }
    let (ba, ca) = (sub(b.at, a.at), sub(c.at, a.at));
    let (ua, ub, uc) = (1.0 / (a.w * a.w), 1.0 / (b.w * b.w), 1.0 / (c.w * c.w));
    // Solve [ba; ca] y = rhs by Cramer's rule, det = twice_area.
    let solve = |r0: f64, r1: f64| [(r0 * ca[1] - r1 * ba[1]) / twice_area, (ba[0] * r1 - ca[0] * r0) / twice_area];
    let y0 = solve(0.5 * (ba[0] * ba[0] + ba[1] * ba[1]), 0.5 * (ca[0] * ca[0] + ca[1] * ca[1]));
    let y1 = solve(0.5 * (ua - ub), 0.5 * (ua - uc));
    let qa = y1[0] * y1[0] + y1[1] * y1[1];
    let qb = 2.0 * (y0[0] * y1[0] + y0[1] * y1[1]) - ua;
    let qc = y0[0] * y0[0] + y0[1] * y0[1];
    let at = |s: f64| (s >= 0.0 && s.is_finite()).then(|| add(a.at, add(y0, scale(y1, s))));
    if qa == 0.0 {
        return [if qb != 0.0 { at(-qc / qb) } else { None }, None];
    }
    let mut disc = qb * qb - 4.0 * qa * qc;
    if disc < 0.0 {
        // A double root lost to rounding.
        if disc < -1e-12 * qb * qb {
            return [None, None];
        }
        disc = 0.0;
    }
    // Numerically stable roots of the quadratic.
    let q = -0.5 * (qb + qb.signum() * disc.sqrt());
    let s1 = q / qa;
    let s2 = if q != 0.0 { qc / q } else { s1 };
    [at(s1), at(s2)]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::distance;
    use crate::geometry::random::SplitMix64;

    fn weighted_radius(pts: &[Point], w: &[f64], x: Point) -> f64 {
        pts.iter().zip(w).map(|(&p, &wi)| wi * distance(p, x)).fold(0.0, f64::max)
    }

    #[test]
    fn two_points_meet_where_weighted_distances_are_equal() {
        // Closed form: for two points the optimum divides the segment in the ratio w₂ : w₁.
        let pts = [[0.0, 0.0], [3.0, 0.0]];
        let m = minimax_point(&pts, Weights::Given(&[2.0, 1.0])).unwrap();
        assert!(distance(m.location, [1.0, 0.0]) <= 1e-15);
        assert!((m.radius - 2.0).abs() <= 1e-15);
        assert_eq!(m.support, vec![0, 1]);
    }

    #[test]
    fn equal_weights_give_the_circumcentre_of_an_acute_triangle() {
        // Closed form: with equal weights w the optimum of an acute triangle is its
        // circumcentre and the radius w times the circumradius; for (0,0), (4,0), (1,3) the
        // circumcentre is (2, 1) and the circumradius √5.
        let pts = [[0.0, 0.0], [4.0, 0.0], [1.0, 3.0], [2.0, 1.5]];
        let m = minimax_point(&pts, Weights::Given(&[3.0, 3.0, 3.0, 3.0])).unwrap();
        assert!(distance(m.location, [2.0, 1.0]) <= 1e-14);
        assert!((m.radius - 3.0 * 5f64.sqrt()).abs() <= 1e-14);
        assert_eq!(m.support, vec![0, 1, 2]);
    }

    #[test]
    fn zero_weights_are_ignored() {
        let pts = [[0.0, 0.0], [100.0, 100.0], [2.0, 0.0], [1.0, 5.0]];
        let m = minimax_point(&pts, Weights::Given(&[1.0, 0.0, 3.0, 2.0])).unwrap();
        let n = minimax_point(&[pts[0], pts[2], pts[3]], Weights::Given(&[1.0, 3.0, 2.0])).unwrap();
        assert!(distance(m.location, n.location) <= 1e-14);
        assert!(!m.support.contains(&1));
    }

    /// Optimality check by the first-order condition: at the optimum, no direction lowers
    /// every supporting weighted distance at once, i.e. 0 lies in the convex hull of the
    /// supports' gradients wᵢ(x − aᵢ)/‖x − aᵢ‖ (Clarke's condition for a max of convex
    /// functions). Checked here by probing many directions.
    fn no_descent_direction(pts: &[Point], w: &[f64], x: Point, r: f64) -> bool {
        let h = 1e-7 * r.max(1e-300);
        (0..360).all(|k| {
            let t = k as f64 * std::f64::consts::PI / 180.0;
            let y = [x[0] + h * t.cos(), x[1] + h * t.sin()];
            weighted_radius(pts, w, y) >= r * (1.0 - 1e-12)
        })
    }

    #[test]
    fn random_weighted_sets_are_optimal_and_support_is_tight() {
        let mut g = SplitMix64::new(17);
        for n in [3, 4, 7, 20, 200] {
            for _ in 0..20 {
                let pts: Vec<Point> = (0..n).map(|_| [g.next_f64() * 10.0, g.next_f64() * 10.0]).collect();
                let w: Vec<f64> = (0..n).map(|_| 0.2 + g.next_f64() * 5.0).collect();
                let m = minimax_point(&pts, Weights::Given(&w)).unwrap();
                assert!((weighted_radius(&pts, &w, m.location) - m.radius).abs() <= 1e-12 * m.radius);
                for &s in &m.support {
                    assert!((w[s] * distance(pts[s], m.location) - m.radius).abs() <= 1e-9 * m.radius);
                }
                assert!(no_descent_direction(&pts, &w, m.location, m.radius));
            }
        }
    }

    #[test]
    fn collinear_weighted_points() {
        let pts: Vec<Point> = (0..10).map(|i| [i as f64, 2.0 * i as f64]).collect();
        let w: Vec<f64> = (0..10).map(|i| 1.0 + i as f64).collect();
        let m = minimax_point(&pts, Weights::Given(&w)).unwrap();
        assert!(no_descent_direction(&pts, &w, m.location, m.radius));
        assert_eq!(m.support.len(), 2);
    }

    proptest::proptest! {
        #[test]
        fn minimax_is_optimal_covers_and_is_order_invariant(
            raw in proptest::collection::vec((-1e3f64..1e3, -1e3f64..1e3, 0.05f64..20.0), 1..40)
        ) {
            let pts: Vec<Point> = raw.iter().map(|&(x, y, _)| [x, y]).collect();
            let w: Vec<f64> = raw.iter().map(|&(_, _, w)| w).collect();
            let m = minimax_point(&pts, Weights::Given(&w)).unwrap();
            proptest::prop_assert!((weighted_radius(&pts, &w, m.location) - m.radius).abs() <= 1e-12 * m.radius.max(1e-300));
            proptest::prop_assert!(no_descent_direction(&pts, &w, m.location, m.radius));
            let (rp, rw): (Vec<Point>, Vec<f64>) = (pts.iter().rev().copied().collect(), w.iter().rev().copied().collect());
            let r = minimax_point(&rp, Weights::Given(&rw)).unwrap();
            proptest::prop_assert!((r.radius - m.radius).abs() <= 1e-9 * m.radius.max(1.0));
        }
    }
}
