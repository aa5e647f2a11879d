//! Equilateral points and their feasible arcs: the pairing of two items into a new
//! equilateral point, narrowed by the pruning tests (see the family documentation in the
//! parent module).

use std::f64::consts::PI;

use super::super::cross;
use super::super::terminal_sets::{members, outside, TerminalSets};
use super::bottleneck::{Bottleneck, BsdTrees};
use super::{ARC, ARC_TOL, TOL};
use crate::geometry::{add, distance, distance_squared, dot, scale, sub, Point};

/// A terminal or an equilateral point of the generation.
#[derive(Debug, Clone)]
pub(super) struct Item {
    /// Its location.
    pub(super) pos: Point,
    pub(super) kind: Kind,
}

#[derive(Debug, Clone)]
pub(super) enum Kind {
    Terminal(usize),
    /// Equilateral point on `kids[0] = p`, `kids[1] = q`, right of `p → q`. The Steiner
    /// point joining `p` and `q` is `centre + radius·(cos(θ_q + u), sin(θ_q + u))` for `u`
    /// in the feasible interval `[lo, hi] ⊆ [0, 2π/3]` (`u = 0` at `q`, `2π/3` at `p`).
    Equilateral {
        kids: [u32; 2],
        centre: Point,
        radius: f64,
        theta_q: f64,
        lo: f64,
        hi: f64,
    },
}

impl Kind {
    pub(super) fn arc_point(centre: Point, radius: f64, theta_q: f64, u: f64) -> Point {
        let a = theta_q + u;
        add(centre, [radius * a.cos(), radius * a.sin()])
    }
}

/// Signed counter-clockwise angle from `a` to `b` in `(−π, π]`.
#[inline]
pub(super) fn signed_angle(a: Point, b: Point) -> f64 {
    cross(a, b).atan2(dot(a, b))
}

/// Parameter `u` of a point `s` on an equilateral point's circle, in `(−π, π]`.
#[inline]
pub(super) fn arc_parameter(s: Point, centre: Point, theta_q: f64) -> f64 {
    let d = sub(s, centre);
    let mut u = d[1].atan2(d[0]) - theta_q;
    while u > PI {
        u -= 2.0 * PI;
    }
    while u <= -PI {
        u += 2.0 * PI;
    }
    u
}

/// The equilateral point of `p → q` with its feasible arc, or `None` when no Steiner point
/// can join them (empty arc, or a terminal edge longer than its bottleneck distance).
#[allow(clippy::too_many_arguments)]
pub(super) fn equilateral(
    items: &[Item],
    sets: &TerminalSets,
    p: u32,
    q: u32,
    bottleneck: &Bottleneck,
    points: &[Point],
    mst_of: &mut BsdTrees,
    nearest_bsd: &[f64],
    prune: bool,
    limit: f64,
    sampled: &mut u64,
) -> Option<Item> {
    let (ip, iq) = (&items[p as usize], &items[q as usize]);
    let (pp, qq) = (ip.pos, iq.pos);
    let e = super::super::equilateral_point(pp, qq);
    let centre = scale(add(add(pp, qq), e), 1.0 / 3.0);
    let radius = distance(pp, qq) / 3f64.sqrt();
    if radius <= TOL {
        return None;
    }
    let dq = sub(qq, centre);
    let theta_q = dq[1].atan2(dq[0]);
    let (mut lo, mut hi) = (0.0f64, ARC);
    // From p the direction to the Steiner point turns counter-clockwise from p → q by u/2.
    if let Kind::Equilateral { centre: c, radius: r, theta_q: t, lo: l, hi: h, .. } = ip.kind {
        let base = sub(qq, pp);
        let f0 = signed_angle(base, sub(Kind::arc_point(c, r, t, l), pp));
        let f1 = signed_angle(base, sub(Kind::arc_point(c, r, t, h), pp));
        lo = lo.max(2.0 * f0.min(f1));
        hi = hi.min(2.0 * f0.max(f1));
    }
    // From q the direction turns clockwise from q → p by (2π/3 − u)/2.
    if let Kind::Equilateral { centre: c, radius: r, theta_q: t, lo: l, hi: h, .. } = iq.kind {
        let base = sub(pp, qq);
        let g0 = -signed_angle(base, sub(Kind::arc_point(c, r, t, l), qq));
        let g1 = -signed_angle(base, sub(Kind::arc_point(c, r, t, h), qq));
        lo = lo.max(ARC - 2.0 * g0.max(g1));
        hi = hi.min(ARC - 2.0 * g0.min(g1));
    }
    // The children's nearest arc distances and, when pruning, the bottleneck test.
    let (near_p, far_p) = reach(ip);
    let (near_q, far_q) = reach(iq);
    let (l, h) = arc_bounds(radius, [near_p, far_p], [near_q, far_q], prune.then_some(limit))?;
    (lo, hi) = (lo.max(l), hi.min(h));
    let (set_p, set_q) = (sets.get(p as usize), sets.get(q as usize));
    // The terminals below the new point (the two sides are disjoint).
    let below = || members(set_p).chain(members(set_q));
    let item =
        |lo: f64, hi: f64| Item { pos: e, kind: Kind::Equilateral { kids: [p, q], centre, radius, theta_q, lo, hi } };
    if !prune {
        return (hi - lo > ARC_TOL).then(|| item(lo, hi));
    }
    if hi - lo <= ARC_TOL {
        return None;
    }
    *sampled += 1;
    // The remaining tests are conditions on the Steiner point s that a Steiner minimum tree
    // meets at its own s all at once. They are checked at SAMPLES points of the arc, each
    // relaxed by how much its quantity can change within half a sample spacing, so that the
    // true s (within half a spacing of some sample) makes that sample pass; the arc is then
    // narrowed to the passing samples, widened by half a spacing, and the equilateral point
    // dies when none passes.
    // 32 rather than 16: the sampled tests are met by few pairs (a few hundred thousand on
    // 100 terminals) and narrower arcs spare many later pairings (about 1.5x fewer on the
    // slowest sets measured).
    const SAMPLES: usize = 32;
    // Rounds of sampling, each on the arc the previous one left, while they still shrink it
    // below REFINE_SHRINK of its length.
    const REFINE_ROUNDS: usize = 8;
    const REFINE_SHRINK: f64 = 0.9;
    let bsd_tree = mst_of.length(set_p, set_q, bottleneck);
    let below_edges = descendant_edges(items, sets, [p, q], nearest_bsd, points.len());
    // Where the walk below s puts each descendant (see `descendant_edges_hold`).
    let mut placed: Vec<Point> = vec![[0.0; 2]; below_edges.len()];
    let (mut lo, mut hi) = (lo, hi);
    for _ in 0..REFINE_ROUNDS {
        let step = (hi - lo) / (SAMPLES - 1) as f64;
        // Half a spacing moves s along the circle by at most `shift` and turns every direction
        // from s to a fixed point of the circle (e, p, q) by `step / 4` (inscribed angles).
        let shift = radius * step / 2.0;
        let turn = step / 4.0;
        // Upper bound test (Winter and Zachariasen 1997) for the subtree below s, of length
        // |s − e| by Simpson's construction: deleting it leaves each terminal below s in its own
        // component and s with the rest; a link from s to the nearest terminal below it plus
        // the MST of those terminals under bottleneck Steiner distances reconnects everything
        // (each bottleneck edge is realised by an MST edge between two components), so in a
        // Steiner minimum tree |s − e| ≤ bsd-MST + min_z |s − z|. Both sides change by at most
        // `shift` over half a spacing.
        let upper_bound_holds = |s: Point| {
            let link = below().map(|v| distance_squared(points[v], s)).fold(f64::INFINITY, f64::min).sqrt();
            length(sub(s, e)) <= bsd_tree + link + 2.0 * shift + TOL
        };
        // Lune test on the edge from s to a terminal child t: a terminal z with |z − t| and
        // |z − s| both below |s − t| would replace the longest edge of the cycle s–t–z (Gilbert
        // and Pollak 1968), so an empty lune is necessary. Moving s by `shift` changes |s − t|
        // and |z − s| by at most `shift` each.
        //
        // The same on the edge from s to a child's own Steiner point s', which Simpson's line
        // puts where the ray from the child's location towards s leaves the child's circle.
        // Both locations lie on the circle of s and the child's location on the child's
        // circle, so as s turns by an angle δ about its centre the ray turns by δ/2 and s'
        // turns by δ about the child's centre (inscribed angles): over half a spacing s' moves
        // by at most r'·step/2. Every terminal counts (none is an end of that edge).
        let lune_is_empty = |s: Point| {
            [ip, iq].iter().all(|child| {
                let (end, end_shift, own) = match child.kind {
                    Kind::Terminal(t) => (points[t], 0.0, Some(t)),
                    Kind::Equilateral { centre: c, radius: r, .. } => {
                        let Some(end) = super::super::simpson_hit(child.pos, s, c) else {
                            return true;
                        };
                        (end, r * step / 2.0, None)
                    }
                };
                let l = length(sub(s, end)) - 2.0 * (shift + end_shift) - TOL;
                if l <= 0.0 {
                    return true;
                }
                // Compared squared: both sides are non-negative.
                let l2 = l * l;
                !points
                    .iter()
                    .enumerate()
                    .any(|(z, &pz)| Some(z) != own && distance_squared(pz, s) < l2 && distance_squared(pz, end) < l2)
            })
        };
        // Wedge property (Winter and Zachariasen 1997): the rest of the tree hangs from s by the
        // edge along d = s − e (Simpson's line). Walking from s into it and always taking the
        // branch that turns back (every Steiner point turns a path by ±60°), the edge directions
        // stay within d and d + 60° (or within d − 60° and d); the walk ends at a terminal, which
        // therefore lies in each of the two closed 60° cones at s between d and the extensions
        // s − p and s − q of the child edges. Those terminals are not below s. Over half a
        // spacing the cones turn by `turn` and the direction from s to a terminal z by at most
        // asin(shift / |z − s|); terminals within `shift` count as inside.
        // The angle from d to s − p is the same ±60° at every s of the circle (inscribed
        // angles); it is read once at the middle of the whole arc, far from p and q, because
        // s − p has no direction when s is at p.
        let middle = Kind::arc_point(centre, radius, theta_q, ARC / 2.0);
        let side_p = signed_angle(sub(middle, e), sub(middle, pp)).signum() * (PI / 3.0);
        // Evaluated without angles: a terminal strictly inside a cone passes by two cross
        // products; any other is inside the widened cone when its angle from the cone's bisector
        // is at most π/6 + slack, i.e. when the cosine of that angle is at least
        // cos(A + asin x) = cos A·√(1 − x²) − sin A·x with A = π/6 + turn + ARC_TOL and
        // x = shift / gap (A + asin x < π, so the cosine decides).
        let (cos60, sin60) = (0.5, super::super::HALF_SQRT3);
        let (sin_a, cos_a) = (PI / 6.0 + turn + ARC_TOL).sin_cos();
        let wedge_holds = |s: Point| {
            let d = sub(s, e);
            [side_p, -side_p].iter().all(|&alpha| {
                let sign = alpha.signum();
                // The cone's far edge (d turned by alpha) and its bisector (d turned by alpha/2).
                let edge = [d[0] * cos60 - sign * d[1] * sin60, sign * d[0] * sin60 + d[1] * cos60];
                let bisector = [d[0] * sin60 - sign * d[1] * cos60, sign * d[0] * cos60 + d[1] * sin60];
                outside(set_p, set_q, points.len()).any(|z| {
                    let w = sub(points[z], s);
                    if sign * cross(d, w) >= 0.0 && sign * cross(w, edge) >= 0.0 {
                        return true;
                    }
                    let gap = dot(w, w).sqrt();
                    if gap <= shift + TOL {
                        return true;
                    }
                    let x = (shift / gap).min(1.0);
                    let cos_half = cos_a * (1.0 - x * x).sqrt() - sin_a * x;
                    dot(bisector, w) >= length(bisector) * gap * cos_half
                })
            })
        };
        // Bottleneck test on an edge from s to a child's Steiner point s', which Simpson's line
        // puts where the ray from the child's location c towards s leaves the child's circle:
        // |s − s'| = |s − c| − |s' − c|, and |s' − c| is the chord 2r'·cos ψ of the child's
        // circle at angle ψ from the diameter through c. Over half a spacing |s − c| drops by
        // at most `shift` and the ray turns by at most `turn` (c is on the circle of s), so the
        // chord is at most 2r'·cos(max(0, ψ − turn)); the edge is on the paths between the
        // two sides, so it is at most `limit` in a Steiner minimum tree.
        let (sin_turn, cos_turn) = turn.sin_cos();
        let child_edges_hold = |s: Point| {
            [(ip, pp), (iq, qq)].iter().all(|&(child, at)| {
                let Kind::Equilateral { centre: c, radius: r, .. } = child.kind else {
                    return true;
                };
                let (ray, axis) = (sub(s, at), sub(c, at));
                let ray_length = length(ray);
                let lengths = ray_length * length(axis);
                // cos(max(0, ψ − turn)) clamped at 0 beyond a right angle, from cos ψ and sin ψ.
                let chord = if lengths == 0.0 {
                    2.0 * r
                } else {
                    let (cos_psi, sin_psi) = (dot(axis, ray) / lengths, cross(axis, ray).abs() / lengths);
                    if cos_psi >= cos_turn {
                        2.0 * r
                    } else {
                        2.0 * r * (cos_psi * cos_turn + sin_psi * sin_turn).max(0.0)
                    }
                };
                ray_length - shift - chord <= limit + TOL
            })
        };
        // Bottleneck test on the edges inside the children's subtrees: each lies on the tree
        // paths from the terminals below it to those of the other child, so in a Steiner
        // minimum tree it is no longer than the smallest bottleneck distance between the two
        // (`descendant_edges`). Those edges were tested when their subtrees were made, but only
        // against terminals inside them. The subtree below s is fixed by s (Simpson's lines,
        // as `close` builds it), and over half a spacing every Steiner point in it turns by
        // the same angle about its own centre as s does (the argument of the lune test, one
        // level at a time), so a Steiner point on a circle of radius r moves by at most
        // r·step/2.
        let mut descendant_edges_hold = |s: Point| {
            for (k, edge) in below_edges.iter().enumerate() {
                let from = edge.parent.map_or(s, |j| placed[j]);
                let child = &items[edge.item as usize];
                placed[k] = match child.kind {
                    Kind::Terminal(t) => points[t],
                    Kind::Equilateral { centre: c, .. } => match super::super::simpson_hit(child.pos, from, c) {
                        Some(point) => point,
                        // No Steiner point here; the walk cannot judge this sample.
                        None => return true,
                    },
                };
                if let Some(j) = edge.parent {
                    let slack = below_edges[j].move_per_step + edge.move_per_step;
                    if length(sub(placed[k], from)) - slack * step / 2.0 > edge.limit + TOL {
                        return false;
                    }
                }
            }
            true
        };
        // The samples, by rotating the first one step by step.
        let mut samples = [[0.0; 2]; SAMPLES];
        let ((mut sin_u, mut cos_u), (sin_step, cos_step)) = ((theta_q + lo).sin_cos(), step.sin_cos());
        for sample in &mut samples {
            *sample = [centre[0] + radius * cos_u, centre[1] + radius * sin_u];
            (cos_u, sin_u) = (cos_u * cos_step - sin_u * sin_step, sin_u * cos_step + cos_u * sin_step);
        }
        let mut passing = |k: usize| {
            let s = samples[k];
            // Cheapest first: the lune and wedge tests read every terminal.
            child_edges_hold(s)
                && descendant_edges_hold(s)
                && upper_bound_holds(s)
                && lune_is_empty(s)
                && wedge_holds(s)
        };
        let first = (0..SAMPLES).find(|&k| passing(k))?;
        let last = (first..SAMPLES).rev().find(|&k| passing(k)).unwrap_or(first);
        let (narrow_lo, narrow_hi) =
            (lo.max(lo + step * (first as f64 - 0.5)), hi.min(lo + step * (last as f64 + 0.5)));
        // Each round's relaxation is half a spacing of its own arc: sampling the narrowed arc
        // again tests with smaller slack and narrows it further. Narrow arcs matter beyond this
        // point, as they make the point's reach shorter and spare most of its later pairings.
        let shrunk = narrow_hi - narrow_lo < REFINE_SHRINK * (hi - lo);
        (lo, hi) = (narrow_lo, narrow_hi);
        if !shrunk {
            break;
        }
    }
    Some(item(lo, hi))
}

/// One edge of the subtree below a new Steiner point s, from `item`'s own point (the item
/// itself for a terminal) up to its parent's.
struct DescendantEdge {
    item: u32,
    /// The index of the parent's edge in the walk; `None` for a child of s.
    parent: Option<usize>,
    /// The smallest bottleneck Steiner distance from a terminal below `item` to one below
    /// the other child of s (unused for a child of s, tested elsewhere).
    limit: f64,
    /// How far `item`'s own point moves per radian that s turns: its circle's radius
    /// (0 for a terminal).
    move_per_step: f64,
}

/// The edges of the subtrees below the children `kids` of a new Steiner point, parents
/// before children. `nearest_bsd[x·n + v]` is the smallest bottleneck distance from a
/// terminal below item x to terminal v.
fn descendant_edges(
    items: &[Item],
    sets: &TerminalSets,
    kids: [u32; 2],
    nearest_bsd: &[f64],
    n: usize,
) -> Vec<DescendantEdge> {
    let mut edges = Vec::new();
    for (side, &kid) in kids.iter().enumerate() {
        let other = sets.get(kids[1 - side] as usize);
        let start = edges.len();
        edges.push(DescendantEdge { item: kid, parent: None, limit: f64::INFINITY, move_per_step: 0.0 });
        let mut at = start;
        while at < edges.len() {
            let item = &items[edges[at].item as usize];
            if let Kind::Equilateral { kids: below, radius, .. } = item.kind {
                edges[at].move_per_step = radius;
                for x in below {
                    let nearest = &nearest_bsd[x as usize * n..(x as usize + 1) * n];
                    let limit = members(other).map(|v| nearest[v]).fold(f64::INFINITY, f64::min);
                    edges.push(DescendantEdge { item: x, parent: Some(at), limit, move_per_step: 0.0 });
                }
            }
            at += 1;
        }
    }
    edges
}

/// Euclidean length by a square root (the hot tests need no overflow guard: working-frame
/// coordinates are of size about 1).
#[inline]
pub(super) fn length(v: Point) -> f64 {
    dot(v, v).sqrt()
}

/// The interval of the arc parameter `u` (see [`Kind::Equilateral`]) of an equilateral point
/// of circle radius `radius` on children `p` and `q` that two necessary conditions leave,
/// each child given by its `[nearest, farthest]` arc distance ([`reach`]); `None` when the
/// first condition already fails. Needs no angles of the children's arcs, so the pairing
/// loop calls it first to reject most pairs before [`equilateral`] narrows by those too.
///
/// - The Steiner point s lies beyond a child's circle as seen from the child's equilateral
///   point (the child's own Steiner point is between them): at least the child's nearest
///   arc distance away, with |s − q| = 2r·sin(u/2) and |s − p| = 2r·sin((2π/3 − u)/2).
/// - With `limit` (the smallest bottleneck Steiner distance between a terminal below p and
///   one below q), the bottleneck Steiner distance test (Winter and Zachariasen 1997) as a
///   narrowing of the arc: both edges at s, towards p's side and towards q's side, lie on
///   the tree path between every terminal u below p and every terminal v below q, so in a
///   Steiner minimum tree neither is longer than `limit`. The edge towards a child ends at
///   the child's own Steiner point, between s and the child's location on Simpson's line
///   and at most the child's farthest arc distance from that location; so
///   |s − p| ≤ limit + far_p is necessary (far = 0 for a terminal). Each bound is an
///   interval of u; the tolerance is added on the safe side.
#[inline]
pub(super) fn arc_bounds(
    radius: f64,
    [near_p, far_p]: [f64; 2],
    [near_q, far_q]: [f64; 2],
    limit: Option<f64>,
) -> Option<(f64, f64)> {
    let chord_limit = |near: f64| -> Option<f64> {
        let x = near / (2.0 * radius);
        (x < 1.0).then(|| 2.0 * x.asin())
    };
    let (mut lo, mut hi) = (chord_limit(near_q)?, ARC - chord_limit(near_p)?);
    if let Some(limit) = limit {
        let arc_within = |bound: f64| -> f64 {
            let x = bound / (2.0 * radius);
            if x >= 1.0 {
                PI
            } else {
                2.0 * x.asin()
            }
        };
        lo = lo.max(ARC - arc_within(limit + far_p + TOL));
        hi = hi.min(arc_within(limit + far_q + TOL));
    }
    Some((lo, hi))
}

/// Where an item's own Steiner point can lie: the middle of its feasible arc and the largest
/// distance from there to a point of the arc, `2r·sin(Δ/4)` for an arc of angle Δ widened
/// by the tolerance `hit` allows at each end (a terminal: itself, 0).
pub(super) fn arc_span(item: &Item) -> (Point, f64) {
    match item.kind {
        Kind::Terminal(_) => (item.pos, 0.0),
        Kind::Equilateral { centre, radius, theta_q, lo, hi, .. } => (
            Kind::arc_point(centre, radius, theta_q, 0.5 * (lo + hi)),
            2.0 * radius * ((hi - lo) / 4.0 + ARC_TOL).min(PI / 2.0).sin(),
        ),
    }
}

/// Nearest and farthest distance from an item's location to its feasible arc (both 0 for
/// a terminal).
pub(super) fn reach(item: &Item) -> (f64, f64) {
    let Kind::Equilateral { radius, lo, hi, .. } = item.kind else {
        return (0.0, 0.0);
    };
    // The location is at u = 4π/3; the distance to u is 2r·sin(|4π/3 − u| / 2), largest at
    // the antipode u = π/3.
    let at = |u: f64| 2.0 * radius * ((4.0 * PI / 3.0 - u) / 2.0).sin();
    let near = at(lo).min(at(hi));
    let far = if lo <= PI / 3.0 && PI / 3.0 <= hi { 2.0 * radius } else { at(lo).max(at(hi)) };
    (near, far)
}
