//! The weighted minimax point (1-center) and the smallest enclosing circle on the WGS84
//! ellipsoid: the site `x` minimising `F(x) = maxᵢ wᵢ · s(x, aᵢ)`, `s` the geodesic distance.
//!
//! # Method
//! The planar problem solved in a frame recentred at each iterate: the points go into the
//! azimuthal equidistant frame at the current centre `c` (the logarithm map from the inverse
//! problem, exact for distances and directions from `c`), the crate's planar weighted
//! minimax kernel solves the problem there, and the centre moves along the geodesic to the
//! planar optimum (the direct problem), with the step shortened until the exact geodesic
//! objective falls. At a fixed point the planar optimum is the origin: zero lies in the
//! convex hull of the active points' weighted directions, which is the first-order optimality
//! condition of `F` on the ellipsoid (the frame's directions and distances from `c` are exact).
//!
//! # Certificate
//! `radius − gap` is a proven lower bound on the optimum, the larger of:
//! - the pair bound, valid on any metric space: for any two points, a site within `r/wᵢ` of
//!   `aᵢ` and `r/wⱼ` of `aⱼ` exists only if `s(aᵢ, aⱼ) ≤ r/wᵢ + r/wⱼ`, so
//!   `F* ≥ s(aᵢ, aⱼ)·wᵢwⱼ/(wᵢ + wⱼ)` (exact when two points fix the optimum);
//! - where the points and the centre lie in the cap on which geodesic distance is convex
//!   (see [`super::weber`]), the convexity bound: for weights `λ` on the active points,
//!   `F* ≥ Σλᵢ(wᵢsᵢ) − ‖Σλᵢwᵢuᵢ‖·D`, `uᵢ` the unit tangents at `c` and `D = 2F(c)/w_max` a
//!   bound on the distance to the optimum (triangle inequality); `λ` is the minimal-norm
//!   point of the convex hull of the active directions.
//!
//! # Stopping early
//! The run polls its clock ([`CenterOptions::limits`]) before every iteration and per chunk
//! of [`CHUNK`] points inside every pass over the points, so Ctrl-C lands within a fraction
//! of a pass. The first pass (at the start centre) is stopped by a cancel only, never by
//! the deadline: after it every centre held has a measured radius and a valid certificate,
//! and a run cut short returns the best centre reached with `converged` false unless its
//! certificate already holds. A pass cut short is never used.

use rayon::prelude::*;

use super::earth::{Earth, Seen};
use super::weber::{spread, within_hemisphere, CHUNK, CONVEX_CAP_DEGREES, DISTANCE_ACCURACY_M, PARALLEL_MIN_POINTS};
use crate::cancel::{Clock, RunLimits, Steps};
use crate::enclose::minimax_point;
use crate::error::Result;
use crate::geometry::{Point, Weights};

/// Options of the geodesic minimax point and enclosing circle.
#[derive(Debug, Clone, PartialEq)]
pub struct CenterOptions {
    /// Stop when the certified gap is at most `tol · radius` plus its allowance for the
    /// distances' accuracy (see `converged`).
    pub tol: f64,
    /// Largest number of recentred planar solves.
    pub max_iter: usize,
    /// Deadline and cancel flag (see the module's "Stopping early"); progress counts
    /// iterations, each planned as it begins, so a converged run's count ends at its total
    /// (the iterations made, at most `max_iter`) and a stopped run's is closed there.
    pub limits: RunLimits,
}

impl Default for CenterOptions {
    fn default() -> Self {
        CenterOptions { tol: 1e-9, max_iter: 200, limits: RunLimits::default() }
    }
}

/// A geodesic minimax point (or enclosing circle centre) with its certificate.
#[derive(Debug, Clone, PartialEq)]
pub struct GeodesicCenter {
    /// The site, `[longitude, latitude]` in degrees (longitude within [-180, 180]).
    pub location: Point,
    /// `maxᵢ wᵢ · s(location, aᵢ)`: weight × metres (metres for the enclosing circle).
    pub radius: f64,
    /// A proven upper bound on `radius − optimum` (see the module's certificate).
    pub gap: f64,
    /// The input points that fix the answer (the active set of the last planar solve), in
    /// increasing order.
    pub support: Vec<usize>,
    /// Recentred planar solves used.
    pub iterations: usize,
    /// True when `gap ≤ tol · radius` plus the allowance for the distances' accuracy (about
    /// `w_max · 3e-8` m; a run stopped early may still be converged when its certificate
    /// holds).
    pub converged: bool,
}

struct Frame {
    /// The positive-weight points' positions in the input.
    rows: Vec<usize>,
    /// Their weights.
    weights: Vec<f64>,
    /// The largest of them.
    w_max: f64,
}

impl Frame {
    /// Every positive-weight point seen from `c`; `None` when `clock` said stop (asked per
    /// chunk of [`CHUNK`] points, about a millisecond of work each).
    fn look(&self, earth: &Earth, points: &[Point], c: Point, clock: &Clock) -> Option<Vec<Seen>> {
        let blank = Seen { distance: 0.0, direction: [0.0, 0.0] };
        let mut seen = vec![blank; self.rows.len()];
        let fill = |out: &mut [Seen], rows: &[usize]| {
            if clock.stop() {
                return false;
            }
            out.iter_mut().zip(rows).for_each(|(o, &i)| *o = earth.seen_from(c, points[i]));
            true
        };
        let complete = if self.rows.len() < PARALLEL_MIN_POINTS {
            fill(&mut seen, &self.rows)
        } else {
            seen.par_chunks_mut(CHUNK).zip(self.rows.par_chunks(CHUNK)).all(|(out, rows)| fill(out, rows))
        };
        complete.then_some(seen)
    }

    fn objective(&self, seen: &[Seen]) -> f64 {
        seen.iter().zip(&self.weights).map(|(s, w)| w * s.distance).fold(0.0, f64::max)
    }
}

/// The minimal-norm point of the convex hull of up to three 2-D vectors: its barycentric
/// weights.
fn min_norm_weights(g: &[Point]) -> Vec<f64> {
    let n = g.len();
    let norm2 = |p: Point| p[0] * p[0] + p[1] * p[1];
    let mut best = (f64::INFINITY, vec![0.0; n]);
    for i in 0..n {
        let mut l = vec![0.0; n];
        l[i] = 1.0;
        let v = norm2(g[i]);
        if v < best.0 {
            best = (v, l);
        }
        for j in i + 1..n {
            let e = [g[j][0] - g[i][0], g[j][1] - g[i][1]];
            let ee = norm2(e);
            if ee > 0.0 {
                let t = (-(g[i][0] * e[0] + g[i][1] * e[1]) / ee).clamp(0.0, 1.0);
                let p = [g[i][0] + t * e[0], g[i][1] + t * e[1]];
                let v = norm2(p);
                if v < best.0 {
                    let mut l = vec![0.0; n];
                    l[i] = 1.0 - t;
                    l[j] = t;
                    best = (v, l);
                }
            }
        }
    }
    if n == 3 {
        // Barycentric coordinates of the origin in the triangle.
        let (a, b, c) = (g[0], g[1], g[2]);
        let det = (b[0] - a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (b[1] - a[1]);
        if det != 0.0 {
            let l1 = ((-a[0]) * (c[1] - a[1]) - (c[0] - a[0]) * (-a[1])) / det;
            let l2 = ((b[0] - a[0]) * (-a[1]) - (-a[0]) * (b[1] - a[1])) / det;
            let l0 = 1.0 - l1 - l2;
            if l0 >= 0.0 && l1 >= 0.0 && l2 >= 0.0 {
                best = (0.0, vec![l0, l1, l2]);
            }
        }
    }
    best.1
}

/// Proven lower bound on the optimum from the active set `support` (positions in `frame`).
fn lower_bound(
    earth: &Earth,
    points: &[Point],
    frame: &Frame,
    seen: &[Seen],
    support: &[usize],
    radius: f64,
    convex: bool,
) -> f64 {
    let mut lower = 0.0f64;
    for (k, &i) in support.iter().enumerate() {
        for &j in &support[k + 1..] {
            let (wi, wj) = (frame.weights[i], frame.weights[j]);
            let d = earth.distance(points[frame.rows[i]], points[frame.rows[j]]);
            lower = lower.max(d * wi * wj / (wi + wj));
        }
    }
    if convex && !support.is_empty() {
        let g: Vec<Point> = support
            .iter()
            .map(|&i| [-frame.weights[i] * seen[i].direction[0], -frame.weights[i] * seen[i].direction[1]])
            .collect();
        let lambda = min_norm_weights(&g);
        let mut value = 0.0;
        let mut resultant = [0.0f64; 2];
        for (l, (&i, gi)) in lambda.iter().zip(support.iter().zip(&g)) {
            value += l * frame.weights[i] * seen[i].distance;
            resultant[0] += l * gi[0];
            resultant[1] += l * gi[1];
        }
        let reach = 2.0 * radius / frame.w_max;
        lower = lower.max(value - resultant[0].hypot(resultant[1]) * reach);
    }
    (lower - allowance(frame.w_max, radius)).max(0.0)
}

/// The part of the gap that the inverse problem's accuracy and rounding leave whatever the
/// centre: about `w_max · 3e-8` m, which outweighs `tol · radius` for a radius of a few
/// metres at the default tolerance.
fn allowance(w_max: f64, radius: f64) -> f64 {
    w_max * DISTANCE_ACCURACY_M + 8.0 * f64::EPSILON * radius
}

/// Solve. Inputs validated (longitude/latitude, weights); at least one weight positive.
/// Stops early when `options.limits` say so (see the module's "Stopping early"); every
/// iteration is a step of the watch, planned as it begins (the first from the start), so
/// the count is the iterations made and the one under way: how many a run needs is known
/// only once it has converged, and a converged run's count ends at its total (at most
/// `max_iter`) instead of jumping there from a small share of it; a stopped run's is
/// closed there.
pub(crate) fn solve(points: &[Point], weights: Weights<'_>, options: &CenterOptions) -> Result<GeodesicCenter> {
    let clock = options.limits.clock();
    let mut steps = Steps::new(&clock.watch, 1);
    let result = descend(points, weights, options, &clock, &mut steps);
    steps.finish();
    result
}

fn descend(
    points: &[Point],
    weights: Weights<'_>,
    options: &CenterOptions,
    clock: &Clock,
    steps: &mut Steps<'_>,
) -> Result<GeodesicCenter> {
    let spread = spread(points, weights);
    within_hemisphere(&spread, "minimax objective")?;
    let convex = spread.radius_degrees <= CONVEX_CAP_DEGREES;
    let earth = Earth::wgs84();
    let rows: Vec<usize> = (0..points.len()).filter(|&i| weights.get(i) > 0.0).collect();
    let frame_weights: Vec<f64> = rows.iter().map(|&i| weights.get(i)).collect();
    let w_max = frame_weights.iter().cloned().fold(0.0, f64::max);
    let frame = Frame { weights: frame_weights, rows, w_max };
    let mut c = spread.centre;
    // The first pass gives the start its radius: only a cancel stops it (the caller then
    // drops the answer), so a run out of time still has a measured centre to return.
    let Some(mut seen) = frame.look(&earth, points, c, &clock.watch.clock(None)) else {
        return Ok(GeodesicCenter {
            location: [super::earth::normalised_longitude(c[0]), c[1]],
            radius: f64::NAN,
            gap: f64::INFINITY,
            support: Vec::new(),
            iterations: 0,
            converged: false,
        });
    };
    let mut radius = frame.objective(&seen);
    let mut iterations = 0;
    let mut support: Vec<usize> = Vec::new();
    // Lower bounds hold for the optimum whatever the centre they were computed at: keep the best.
    let mut lower = 0.0f64;
    'descent: while iterations < options.max_iter && !clock.stop() {
        if iterations > 0 {
            steps.plan(1);
        }
        iterations += 1;
        steps.step();
        let local: Vec<Point> =
            seen.iter().map(|s| [s.distance * s.direction[0], s.distance * s.direction[1]]).collect();
        let planar = minimax_point(&local, Weights::Given(&frame.weights))?;
        support = planar.support.clone();
        let convex_here = convex && spread.holds(c);
        lower = lower.max(lower_bound(&earth, points, &frame, &seen, &support, radius, convex_here));
        let mut step = planar.location;
        // Done when certified and the planar optimum is (to the tolerance) the centre itself: a
        // certified radius alone leaves the centre free to drift across a flat valley (two
        // support points fix the radius to first order only along their geodesic).
        let settled = step[0].hypot(step[1]) * w_max <= options.tol * radius;
        // The gap within `tol · radius` of what the distances' accuracy allows.
        let certified = radius - lower <= options.tol * radius + allowance(w_max, radius);
        if (certified && settled) || radius == 0.0 {
            break;
        }
        let mut moved = false;
        for _ in 0..30 {
            if step[0].hypot(step[1]) <= 1e-12 * radius / w_max {
                break;
            }
            let trial = earth.exp(c, step);
            // A trial pass cut short is dropped: the centre held keeps its radius and support.
            let Some(trial_seen) = frame.look(&earth, points, trial, clock) else {
                break 'descent;
            };
            let trial_radius = frame.objective(&trial_seen);
            if trial_radius < radius {
                c = trial;
                seen = trial_seen;
                radius = trial_radius;
                moved = true;
                break;
            }
            step = [step[0] / 2.0, step[1] / 2.0];
        }
        if !moved {
            break;
        }
    }
    let mut rows_support: Vec<usize> = support.iter().map(|&k| frame.rows[k]).collect();
    rows_support.sort_unstable();
    let gap = (radius - lower).max(0.0);
    Ok(GeodesicCenter {
        location: [super::earth::normalised_longitude(c[0]), c[1]],
        radius,
        gap,
        support: rows_support,
        iterations,
        converged: gap <= options.tol * radius + allowance(w_max, radius) || radius == 0.0,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn min_norm_of_a_triangle_around_the_origin_is_zero() {
        let l = min_norm_weights(&[[1.0, 0.0], [-1.0, 1.0], [-1.0, -1.0]]);
        let p = [l[0] - l[1] - l[2], l[1] - l[2]];
        assert!(p[0].abs() < 1e-15 && p[1].abs() < 1e-15, "{l:?}");
        let l = min_norm_weights(&[[1.0, 1.0], [-1.0, 1.0]]);
        assert!((l[0] - 0.5).abs() < 1e-15);
    }
}
