//! The minimum of a convex objective over the boundary of a [`FeasibleRegion`].
//!
//! Why the boundary: a convex function restricted to a closed set has no local minimum in
//! the set's interior other than a global (free) one, so when the free minimiser lies outside
//! the region the constrained minimiser lies on the region's boundary — the basis of the
//! restricted location problems of Hamacher and Nickel (1995, "Restricted planar location
//! problems and applications", Naval Research Logistics 42) and of Drezner and Wesolowsky's
//! earlier restricted-region work. The boundary is a union of edges; on each edge the
//! objective is a convex function of one variable, minimised here to a relative tolerance
//! with a proven lower bound (tangent lines at both ends of a shrinking bracket: Kelley's
//! cutting planes in one dimension, with regula-falsi steps on the derivative and bisection
//! as the safeguard). Edges are visited in order of a cheap lower bound supplied by the
//! objective, and the visit stops once that bound reaches the best value found, so distant
//! edges cost one bound each; an edge is also skipped when a supporting plane of the
//! objective at a best point found so far (Kelley's cutting planes, 1960) bounds it above
//! the best value — for a convex region one plane at the optimum rules out every edge.

use rayon::prelude::*;

use super::FeasibleRegion;
use crate::geometry::{add, scale, sub, Point};

/// Value and one-sided derivatives of a convex objective along a direction.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Slope {
    /// The objective at the point.
    pub value: f64,
    /// Derivative from the left (towards `-direction`), as a rate along `direction`.
    pub left: f64,
    /// Derivative from the right (towards `+direction`).
    pub right: f64,
}

/// A convex objective of a planar location.
pub trait ConvexObjective: Sync {
    /// The value at `x` and the one-sided derivatives of `t ↦ f(x + t·direction)` at 0.
    fn slope(&self, x: Point, direction: Point) -> Slope;
    /// A lower bound of the objective over the segment `s` (cheap; used to skip edges).
    fn segment_bound(&self, s: [Point; 2]) -> f64;
    /// The value at `x` and a subgradient `g` there: `f(y) ≥ f(x) + g·(y − x)` for every `y`.
    fn subgradient(&self, x: Point) -> (f64, Point);
}

/// The minimum found on one segment.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SegmentMinimum {
    /// Parameter of the best point, `from + t · (to − from)`.
    pub t: f64,
    /// The objective there.
    pub value: f64,
    /// A proven lower bound of the objective over the segment (up to rounding).
    pub lower: f64,
    /// Objective evaluations used.
    pub evaluations: usize,
}

/// Largest number of evaluations per segment; the bracket shrinks by at least a quarter
/// every two steps, so this is far beyond what the tolerance needs.
const MAX_SEGMENT_STEPS: usize = 200;

/// Minimise the convex `objective` over segment `s` to `value − lower ≤ tol · value`.
pub fn minimise_on_segment(objective: &dyn ConvexObjective, s: [Point; 2], tol: f64) -> SegmentMinimum {
    let u = sub(s[1], s[0]);
    let at = |t: f64| if t >= 1.0 { s[1] } else { add(s[0], scale(u, t)) };
    let start = objective.slope(s[0], u);
    if !(start.right < 0.0) {
        return SegmentMinimum { t: 0.0, value: start.value, lower: start.value, evaluations: 1 };
    }
    let end = objective.slope(s[1], u);
    if !(end.left > 0.0) {
        return SegmentMinimum { t: 1.0, value: end.value, lower: end.value, evaluations: 2 };
    }
    // Bracket [lo, hi] with f'(lo+) < 0 < f'(hi-): the minimiser lies inside.
    let (mut lo, mut f_lo, mut s_lo) = (0.0, start.value, start.right);
    let (mut hi, mut f_hi, mut s_hi) = (1.0, end.value, end.left);
    let mut best = if f_lo <= f_hi { (0.0, f_lo) } else { (1.0, f_hi) };
    let mut evaluations = 2;
    let mut secant = true;
    let mut width_before = 1.0;
    let lower = loop {
        // The tangents at lo and hi meet at the lowest point their maximum allows.
        let cross = ((f_hi - f_lo) + s_lo * lo - s_hi * hi) / (s_lo - s_hi);
        let lower = (f_lo + s_lo * (cross - lo)).min(best.1);
        if best.1 - lower <= tol * best.1.abs() || evaluations >= MAX_SEGMENT_STEPS || !(hi - lo > f64::EPSILON * hi) {
            break lower;
        }
        // Regula falsi on the derivative, bisection when the bracket did not halve.
        let width = hi - lo;
        let mut t = if secant { lo - s_lo * width / (s_hi - s_lo) } else { 0.5 * (lo + hi) };
        if !(t > lo && t < hi) {
            t = 0.5 * (lo + hi);
        }
        let e = objective.slope(at(t), u);
        evaluations += 1;
        if e.value < best.1 {
            best = (t, e.value);
        }
        if e.left <= 0.0 && e.right >= 0.0 {
            break e.value;
        }
        if e.right < 0.0 {
            (lo, f_lo, s_lo) = (t, e.value, e.right);
        } else {
            (hi, f_hi, s_hi) = (t, e.value, e.left);
        }
        secant = hi - lo <= 0.5 * width_before;
        if secant {
            width_before = hi - lo;
        }
    };
    SegmentMinimum { t: best.0, value: best.1, lower, evaluations }
}

/// The minimum of a convex objective over a region's boundary.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoundaryMinimum {
    /// The best boundary point found, inside the region by the exact test.
    pub location: Point,
    /// The objective there (as computed on the edge, before settling inside).
    pub value: f64,
    /// A proven lower bound of the objective over the whole boundary (up to rounding).
    pub lower: f64,
    /// Edges minimised (the others were skipped by their bound).
    pub edges_solved: usize,
    /// Objective evaluations used.
    pub evaluations: usize,
}

/// Minimise `objective` over the boundary of `region` to a relative tolerance `tol`.
///
/// Invariant: `lower ≤ min over the boundary ≤ value`, and `value − lower ≤ tol · value`
/// unless an edge ran out of steps.
///
/// # Runtime
/// One `segment_bound` per edge (in parallel), then a sort; each edge not skipped costs its
/// evaluations (typically 5–40).
pub fn minimise_on_boundary(region: &FeasibleRegion, objective: &dyn ConvexObjective, tol: f64) -> BoundaryMinimum {
    let segments = region.segments();
    let mut order: Vec<(f64, usize)> =
        segments.par_iter().enumerate().map(|(k, &s)| (objective.segment_bound(s), k)).collect();
    order.sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    let mut best: Option<(usize, SegmentMinimum)> = None;
    let mut lower = f64::INFINITY;
    let (mut edges_solved, mut evaluations) = (0, 0);
    // Supporting planes f(y) ≥ c + g·y (Kelley 1960) at each new best point: by convexity
    // they bound the objective everywhere, and a linear bound is least at an edge's end.
    let mut cuts: Vec<(f64, Point)> = Vec::new();
    for &(bound, k) in &order {
        let s = segments[k];
        if let Some((_, b)) = &best {
            if bound >= b.value {
                // Every later edge has a bound at least this large.
                lower = lower.min(bound);
                break;
            }
            let cut = cuts
                .iter()
                .map(|&(c, g)| (c + g[0] * s[0][0] + g[1] * s[0][1]).min(c + g[0] * s[1][0] + g[1] * s[1][1]))
                .fold(f64::NEG_INFINITY, f64::max);
            // Shaved by a rounding allowance, so rounding never rules out the best edge.
            let cut = cut - 1e-9 * cut.abs();
            if cut >= b.value {
                lower = lower.min(cut);
                continue;
            }
        }
        let m = minimise_on_segment(objective, s, tol);
        edges_solved += 1;
        evaluations += m.evaluations;
        lower = lower.min(m.lower.max(bound));
        if best.as_ref().is_none_or(|(_, b)| m.value < b.value) {
            let at = if m.t >= 1.0 { s[1] } else { add(s[0], scale(sub(s[1], s[0]), m.t)) };
            let (value, g) = objective.subgradient(at);
            evaluations += 1;
            cuts.push((value - (g[0] * at[0] + g[1] * at[1]), g));
            best = Some((k, m));
        }
    }
    let (k, m) = best.expect("a region has edges");
    let s = segments[k];
    let on_edge = if m.t >= 1.0 { s[1] } else { add(s[0], scale(sub(s[1], s[0]), m.t)) };
    BoundaryMinimum {
        location: region.settle(on_edge, k),
        value: m.value,
        lower: lower.min(m.value),
        edges_solved,
        evaluations,
    }
}

/// Side of the grid of [`DemandCells`]: at most `SIDE²` cells.
const SIDE: usize = 16;

/// The demand summarised on a grid for cheap edge bounds: per non-empty cell, the tight
/// bounding box of its points of positive weight, their total and their least weight.
///
/// Every point of a cell lies in its box, so `‖x − aᵢ‖ ≥ dist(x, box)`; summing (or taking the
/// largest) over cells and minimising each term over an edge on its own bounds the objective's
/// minimum over the edge from below. Far edges get bounds near the true values; edges
/// through the demand get weak ones and are searched.
#[derive(Debug, Clone)]
pub struct DemandCells {
    /// `(min, max, total weight, least positive weight)` per cell.
    cells: Vec<(Point, Point, f64, f64)>,
}

impl DemandCells {
    /// Summarise the points of positive weight (`weight(i)` for point `i`).
    pub fn new(points: &[Point], weight: impl Fn(usize) -> f64) -> DemandCells {
        let mut lo = [f64::INFINITY; 2];
        let mut hi = [f64::NEG_INFINITY; 2];
        for (i, p) in points.iter().enumerate() {
            if weight(i) > 0.0 {
                lo = [lo[0].min(p[0]), lo[1].min(p[1])];
                hi = [hi[0].max(p[0]), hi[1].max(p[1])];
            }
        }
        let mut cells = vec![([f64::INFINITY; 2], [f64::NEG_INFINITY; 2], 0.0, f64::INFINITY); SIDE * SIDE];
        let span = [(hi[0] - lo[0]).max(f64::MIN_POSITIVE), (hi[1] - lo[1]).max(f64::MIN_POSITIVE)];
        for (i, p) in points.iter().enumerate() {
            let w = weight(i);
            if !(w > 0.0) {
                continue;
            }
            let index = |k: usize| (((p[k] - lo[k]) / span[k] * SIDE as f64) as usize).min(SIDE - 1);
            let c = &mut cells[index(0) * SIDE + index(1)];
            c.0 = [c.0[0].min(p[0]), c.0[1].min(p[1])];
            c.1 = [c.1[0].max(p[0]), c.1[1].max(p[1])];
            c.2 += w;
            c.3 = c.3.min(w);
        }
        cells.retain(|c| c.2 > 0.0);
        DemandCells { cells }
    }

    /// A lower bound of `Σ wᵢ‖x − aᵢ‖` over the segment.
    pub fn sum_bound(&self, s: [Point; 2]) -> f64 {
        self.cells.iter().map(|c| c.2 * segment_box_distance(s, c.0, c.1)).sum()
    }

    /// A lower bound of `maxᵢ wᵢ‖x − aᵢ‖` over the segment.
    pub fn max_bound(&self, s: [Point; 2]) -> f64 {
        self.cells.iter().map(|c| c.3 * segment_box_distance(s, c.0, c.1)).fold(0.0, f64::max)
    }
}

/// Distance from a point to an axis-aligned box.
fn point_box_distance(p: Point, lo: Point, hi: Point) -> f64 {
    let dx = (lo[0] - p[0]).max(p[0] - hi[0]).max(0.0);
    let dy = (lo[1] - p[1]).max(p[1] - hi[1]).max(0.0);
    dx.hypot(dy)
}

/// Distance between a segment and an axis-aligned box: 0 when they meet (Liang and Barsky
/// 1984 clipping), else the least of the end-to-box and corner-to-segment distances (two
/// disjoint convex sets are closest at a vertex of one of them).
fn segment_box_distance(s: [Point; 2], lo: Point, hi: Point) -> f64 {
    let [a, b] = s;
    let d = sub(b, a);
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    let mut meets = true;
    for k in 0..2 {
        for (p, q) in [(-d[k], a[k] - lo[k]), (d[k], hi[k] - a[k])] {
            if p == 0.0 {
                if q < 0.0 {
                    meets = false;
                }
            } else {
                let r = q / p;
                if p < 0.0 {
                    t0 = t0.max(r);
                } else {
                    t1 = t1.min(r);
                }
            }
        }
    }
    if meets && t0 <= t1 {
        return 0.0;
    }
    let corners = [lo, [hi[0], lo[1]], hi, [lo[0], hi[1]]];
    let from_corners = corners.iter().map(|&c| super::segment_distance(s, c)).fold(f64::INFINITY, f64::min);
    point_box_distance(a, lo, hi).min(point_box_distance(b, lo, hi)).min(from_corners)
}
