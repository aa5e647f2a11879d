//! Full Steiner trees (FSTs): Steiner trees in which every terminal is a leaf and every
//! Steiner point has degree three at 120°. A Steiner minimum tree is a union of FSTs
//! joined at terminals, so the exact solver generates every FST that can belong to one
//! and leaves the choice to [`super::concatenate`].
//!
//! Generation follows Winter's equilateral-point method (Winter 1985, after Melzak 1961):
//! two terminals, or two earlier equilateral points, `p` and `q` are replaced by the third
//! vertex `e` of the equilateral triangle on them; the Steiner point joining them lies on
//! the circle through `p`, `q` and `e`, on the 120° arc opposite `e`, and a whole FST is
//! the segment from a root terminal to an equilateral point (Simpson's line), its length
//! the FST's. The feasible part of every arc is narrowed by the arcs of the children (the
//! Steiner point must see a child's feasible arc through the child's equilateral point)
//! and every candidate is put to the pruning tests of Winter and Zachariasen (1997,
//! "Euclidean Steiner minimum trees: an improved exact algorithm", Networks 30):
//!
//! - the bottleneck Steiner distance test: an edge on the tree path between terminals
//!   `u` and `v` is no longer than the longest edge on the MST path between them; applied
//!   to the two edges at a new Steiner point it cuts the feasible arc down to an interval;
//! - the upper bound test: an FST, or the subtree below a Steiner point plus a link to it,
//!   is no longer than the MST of its terminals under the bottleneck Steiner distances;
//! - the lune test: the lune of an edge (the points closer to both ends than they are to
//!   each other) holds no terminal;
//! - the wedge property: the rest of the tree hangs from a Steiner point inside a 120°
//!   wedge, and each 60° half of it holds a terminal not yet used.
//!
//! The tests on a new equilateral point are applied before it is combined with others, as
//! the combinations are what grow exponentially, and each narrows the feasible arc rather
//! than only accepting or rejecting it. Every test is a necessary condition for a part of a
//! Steiner minimum tree, evaluated with its tolerance on the side of keeping a candidate.

use crate::cancel::Clock;
use std::collections::HashMap;

use super::terminal_sets::{lowest, members, outside, TerminalSets};
use std::f64::consts::PI;

use rayon::prelude::*;

use super::cross;
use crate::geometry::{add, distance, distance_squared, dot, scale, sub, Point};

/// Tolerance of the tests, in working-frame coordinates (bounding box of size about 1).
const TOL: f64 = 1e-10;
/// Angular tolerance for "on the feasible arc".
const ARC_TOL: f64 = 1e-10;
const ARC: f64 = 2.0 * PI / 3.0;

/// End of an edge of a full Steiner tree.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum End {
    /// Terminal by index.
    Terminal(usize),
    /// Steiner point by its index in [`FullTree::steiner`].
    Steiner(usize),
}

/// One full Steiner tree.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct FullTree {
    /// Its terminals, ascending.
    pub terminals: Vec<usize>,
    /// Its Steiner points (`terminals.len() − 2` of them).
    pub steiner: Vec<Point>,
    /// Its edges.
    pub edges: Vec<[End; 2]>,
    /// Total length.
    pub length: f64,
}

/// Bottleneck Steiner distances: `bsd(u, v)` is the longest edge on the path between `u`
/// and `v` in a minimum spanning tree of the terminals.
#[derive(Debug, Clone)]
pub(crate) struct Bottleneck {
    n: usize,
    table: Vec<f64>,
    /// MST edges of the terminals.
    pub mst: Vec<[usize; 2]>,
}

impl Bottleneck {
    /// From the terminals, by Prim's algorithm on the complete graph and one traversal per
    /// terminal. O(n²) time and space.
    pub fn new(points: &[Point]) -> Bottleneck {
        let n = points.len();
        let mut best = vec![f64::INFINITY; n];
        let mut from = vec![usize::MAX; n];
        let mut done = vec![false; n];
        let mut adjacency = vec![Vec::new(); n];
        let mut mst = Vec::with_capacity(n.saturating_sub(1));
        if n > 0 {
            best[0] = 0.0;
        }
        for _ in 0..n {
            let u =
                (0..n).filter(|&i| !done[i]).min_by(|&a, &b| best[a].total_cmp(&best[b])).expect("a vertex is left");
            done[u] = true;
            if from[u] != usize::MAX {
                let w = from[u];
                mst.push([w.min(u), w.max(u)]);
                adjacency[u].push(w);
                adjacency[w].push(u);
            }
            for v in 0..n {
                let d = distance(points[u], points[v]);
                if !done[v] && d < best[v] {
                    best[v] = d;
                    from[v] = u;
                }
            }
        }
        let mut table = vec![0.0; n * n];
        let mut stack = Vec::new();
        for root in 0..n {
            stack.clear();
            stack.push((root, usize::MAX, 0.0f64));
            while let Some((u, parent, worst)) = stack.pop() {
                table[root * n + u] = worst;
                for &v in &adjacency[u] {
                    if v != parent {
                        stack.push((v, u, worst.max(distance(points[u], points[v]))));
                    }
                }
            }
        }
        Bottleneck { n, table, mst }
    }

    /// The bottleneck Steiner distance between terminals `u` and `v`.
    #[inline]
    pub fn get(&self, u: usize, v: usize) -> f64 {
        self.table[u * self.n + v]
    }

    /// Length of the MST of `terminals` under the bottleneck distances.
    pub(crate) fn mst_length(&self, terminals: &[usize]) -> f64 {
        prim_length(terminals.len(), |a, b| self.get(terminals[a], terminals[b]))
    }
}

/// Length of the minimum spanning tree of the complete graph on `0..k` with edge weights
/// `weight(a, b)`: Prim's algorithm (Prim 1957) with an array, O(k²).
pub(super) fn prim_length(k: usize, weight: impl Fn(usize, usize) -> f64) -> f64 {
    let mut best = vec![f64::INFINITY; k];
    let mut done = vec![false; k];
    if k == 0 {
        return 0.0;
    }
    best[0] = 0.0;
    let mut total = 0.0;
    for _ in 0..k {
        let u = (0..k).filter(|&i| !done[i]).min_by(|&a, &b| best[a].total_cmp(&best[b])).expect("a vertex is left");
        done[u] = true;
        total += best[u];
        for v in 0..k {
            if !done[v] {
                best[v] = best[v].min(weight(u, v));
            }
        }
    }
    total
}

/// Memo of [`Bottleneck::mst_length`] over the union of two disjoint terminal sets, keyed by
/// the union's words (one memo per worker thread).
#[derive(Debug, Default)]
struct BsdTrees {
    lengths: HashMap<Box<[u64]>, f64>,
    key: Vec<u64>,
    terminals: Vec<usize>,
}

impl BsdTrees {
    fn length(&mut self, a: &[u64], b: &[u64], bottleneck: &Bottleneck) -> f64 {
        self.key.clear();
        self.key.extend(a.iter().zip(b).map(|(x, y)| x | y));
        if let Some(&length) = self.lengths.get(self.key.as_slice()) {
            return length;
        }
        self.terminals.clear();
        self.terminals.extend(members(&self.key));
        let length = bottleneck.mst_length(&self.terminals);
        self.lengths.insert(self.key.as_slice().into(), length);
        length
    }
}

/// A terminal or an equilateral point of the generation.
#[derive(Debug, Clone)]
struct Item {
    /// Its location.
    pos: Point,
    kind: Kind,
}

#[derive(Debug, Clone)]
enum Kind {
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
    fn arc_point(centre: Point, radius: f64, theta_q: f64, u: f64) -> Point {
        let a = theta_q + u;
        add(centre, [radius * a.cos(), radius * a.sin()])
    }
}

/// Signed counter-clockwise angle from `a` to `b` in `(−π, π]`.
#[inline]
fn signed_angle(a: Point, b: Point) -> f64 {
    cross(a, b).atan2(dot(a, b))
}

/// Parameter `u` of a point `s` on an equilateral point's circle, in `(−π, π]`.
#[inline]
fn arc_parameter(s: Point, centre: Point, theta_q: f64) -> f64 {
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

/// Every full Steiner tree on at least three of `points` (distinct, in the working frame) that passes
/// the pruning tests, plus the MST edges as two-terminal FSTs; `None` when `clock` stops the
/// generation first (it is polled before each item is paired with its partners).
///
/// # Runtime
/// Exponential in the worst case. On uniformly spread terminals the pruning keeps a few
/// hundred to a few thousand equilateral points for 20 terminals (0.01–2 s) and 2–3 FSTs per
/// terminal, and the growth is much slower than doubling per terminal. The pairings of each
/// subtree size run in parallel on the rayon pool; the output is the same on any number of
/// threads.
pub(crate) fn full_steiner_trees(points: &[Point], bottleneck: &Bottleneck, clock: &Clock) -> Option<Vec<FullTree>> {
    generate(points, bottleneck, clock, true, &mut Vec::new())
}

/// What the generation did for one subtree size `k` (the number of terminals below an
/// equilateral point), for measuring where its time goes.
#[derive(Debug, Clone, Default, PartialEq)]
pub(crate) struct SizeCounts {
    /// Subtree size (terminals below the equilateral points made).
    pub size: usize,
    /// Pairs of items met in the sweep windows.
    pub pairs: u64,
    /// Those with disjoint terminal sets.
    pub disjoint: u64,
    /// Those passing the distance test before the trigonometry.
    pub near: u64,
    /// Orientations whose arc survived the bottleneck test and went to the sampled tests.
    pub sampled: u64,
    /// Equilateral points kept.
    pub kept: u64,
    /// Wall-clock seconds for the size.
    pub seconds: f64,
}

/// [`full_steiner_trees`] with the counts of each subtree size; the last entry (size 0)
/// counts the closing: `pairs` the closings tried, `kept` the full Steiner trees kept.
#[cfg(test)]
pub(crate) fn full_steiner_trees_counted(
    points: &[Point],
    bottleneck: &Bottleneck,
    clock: &Clock,
) -> Option<(Vec<FullTree>, Vec<SizeCounts>)> {
    let mut counts = Vec::new();
    let trees = generate(points, bottleneck, clock, true, &mut counts)?;
    Some((trees, counts))
}

/// [`full_steiner_trees`]; with `prune` false every pruning test is skipped and only the
/// geometry (feasible arcs, Simpson lines) is kept, which enumerates every FST and serves
/// the tests as a reference for the pruning.
fn generate(
    points: &[Point],
    bottleneck: &Bottleneck,
    clock: &Clock,
    prune: bool,
    counts: &mut Vec<SizeCounts>,
) -> Option<Vec<FullTree>> {
    use std::sync::atomic::{AtomicU64, Ordering::Relaxed};
    let n = points.len();
    // A two-terminal FST of a Steiner minimum tree is an MST edge (it is no longer than its
    // bottleneck Steiner distance); the unpruned reference keeps every pair.
    let pairs: Vec<[usize; 2]> =
        if prune { bottleneck.mst.clone() } else { (0..n).flat_map(|u| (u + 1..n).map(move |v| [u, v])).collect() };
    let mut trees: Vec<FullTree> = pairs
        .iter()
        .map(|&[u, v]| FullTree {
            terminals: vec![u, v],
            steiner: Vec::new(),
            edges: vec![[End::Terminal(u), End::Terminal(v)]],
            length: distance(points[u], points[v]),
        })
        .collect();
    if n < 3 {
        return Some(trees);
    }
    // Progress: one step per subtree size, one for closing the trees.
    clock.watch.plan((n - 1) as u64);
    let mut items: Vec<Item> = Vec::new();
    // The terminals below each item, by item index.
    let mut sets = TerminalSets::new(n);
    let mut by_size: Vec<Vec<u32>> = vec![Vec::new(); n];
    // The root of every FST is its smallest terminal, so no equilateral point ever needs
    // terminal 0 below it.
    for (t, &p) in points.iter().enumerate().skip(1) {
        by_size[1].push(items.len() as u32);
        sets.push_single(t);
        items.push(Item { pos: p, kind: Kind::Terminal(t) });
    }
    // Both edges from a Steiner point to its children are at most the longest MST edge
    // (the largest bottleneck distance), and the child's own Steiner point is within its
    // farthest arc distance of its location: two items farther apart than twice that edge
    // plus their two reaches never pair up. Items are kept sorted by x to sweep for partners.
    let longest = bottleneck.mst.iter().map(|&[u, v]| distance(points[u], points[v])).fold(0.0, f64::max);
    let sort_by_x = |list: &mut Vec<u32>, items: &[Item]| {
        list.sort_by(|&a, &b| items[a as usize].pos[0].total_cmp(&items[b as usize].pos[0]))
    };
    sort_by_x(&mut by_size[1], &items);
    // nearest_bsd[item * n + v]: the smallest bottleneck distance from a terminal below the
    // item to terminal v; far[item]: the item's farthest arc distance (`reach`).
    let mut nearest_bsd: Vec<f64> = Vec::with_capacity(items.len() * n);
    let mut far: Vec<f64> = Vec::with_capacity(items.len());
    let mut near: Vec<f64> = Vec::with_capacity(items.len());
    for (index, item) in items.iter().enumerate() {
        push_nearest(&mut nearest_bsd, sets.get(index), bottleneck, n);
        far.push(reach(item).1);
        near.push(reach(item).0);
    }
    for k in 2..n {
        let started = std::time::Instant::now();
        // Per-size tallies, added once per job: pairs, disjoint, near, sampled.
        let tally: [AtomicU64; 4] = Default::default();
        // The pairings of one size are independent: they run in parallel, each item `a` of
        // the smaller side with its partners, and are gathered in the order of `a` so that
        // the output does not depend on the thread count.
        let xs: Vec<Vec<f64>> =
            by_size.iter().map(|list| list.iter().map(|&b| items[b as usize].pos[0]).collect()).collect();
        let widest: Vec<f64> =
            by_size.iter().map(|list| list.iter().map(|&b| far[b as usize]).fold(0.0, f64::max)).collect();
        let jobs: Vec<(usize, usize, u32)> =
            (1..=k / 2).flat_map(|i| by_size[i].iter().enumerate().map(move |(a_pos, &a)| (i, a_pos, a))).collect();
        let pair_with = |mst_of: &mut BsdTrees, &(i, a_pos, a): &(usize, usize, u32)| {
            if clock.stop() {
                return None;
            }
            let j = k - i;
            let mut found = Vec::new();
            let (pa, far_a) = (items[a as usize].pos, far[a as usize]);
            let window = if prune { 2.0 * longest + far_a + widest[j] + TOL } else { f64::INFINITY };
            let first = xs[j].partition_point(|&x| x < pa[0] - window);
            let last = xs[j].partition_point(|&x| x <= pa[0] + window);
            let first = if i == j { first.max(a_pos + 1) } else { first };
            let mut local = [0u64; 4];
            for &b in by_size[j].get(first..last).unwrap_or(&[]) {
                let ib = &items[b as usize];
                local[0] += 1;
                if !sets.disjoint(a as usize, b as usize) {
                    continue;
                }
                local[1] += 1;
                // The same with the smallest bottleneck distance between the two sides.
                let mut closest = f64::INFINITY;
                for v in members(sets.get(b as usize)) {
                    closest = closest.min(nearest_bsd[a as usize * n + v]);
                }
                // Sharper, by the law of cosines at the 120° Steiner point s on the arc over
                // p and q: |p − q|² = |s − p|² + |s − q|² + |s − p|·|s − q|, and the
                // bottleneck test below keeps only arcs where |s − p| ≤ A and |s − q| ≤ B
                // (A, B as below), so |p − q|² ≤ A² + B² + AB is necessary for either
                // orientation; it spares the trigonometry of most hopeless pairs.
                let (reach_a, reach_b) = (closest + far_a + TOL, closest + far[b as usize] + TOL);
                if prune
                    && distance_squared(pa, ib.pos) > reach_a * reach_a + reach_b * reach_b + reach_a * reach_b + TOL
                {
                    continue;
                }
                local[2] += 1;
                // `closest` is the bottleneck limit of the pair; an orientation whose arc the
                // cheap conditions of `arc_bounds` already empty needs no more.
                let radius = distance(pa, ib.pos) / 3f64.sqrt();
                for (p, q) in [(a, b), (b, a)] {
                    let (p_reach, q_reach) = ([near[p as usize], far[p as usize]], [near[q as usize], far[q as usize]]);
                    if prune
                        && (radius <= TOL
                            || !arc_bounds(radius, p_reach, q_reach, Some(closest))
                                .is_some_and(|(lo, hi)| hi - lo > ARC_TOL))
                    {
                        continue;
                    }
                    if let Some(item) =
                        equilateral(&items, &sets, p, q, bottleneck, points, mst_of, prune, closest, &mut local[3])
                    {
                        found.push(item);
                    }
                }
            }
            for (total, add) in tally.iter().zip(local) {
                total.fetch_add(add, Relaxed);
            }
            Some(found)
        };
        let fresh: Vec<Vec<Item>> = jobs.par_iter().map_init(BsdTrees::default, pair_with).collect::<Option<_>>()?;
        for item in fresh.into_iter().flatten() {
            let Kind::Equilateral { kids: [p, q], .. } = item.kind else {
                unreachable!("pairings make equilateral points")
            };
            by_size[k].push(items.len() as u32);
            sets.push_union(p as usize, q as usize);
            push_nearest(&mut nearest_bsd, sets.get(items.len()), bottleneck, n);
            far.push(reach(&item).1);
            near.push(reach(&item).0);
            items.push(item);
        }
        let mut list = std::mem::take(&mut by_size[k]);
        sort_by_x(&mut list, &items);
        let [pairs, disjoint, near, sampled] = tally.map(AtomicU64::into_inner);
        let (kept, seconds) = (list.len() as u64, started.elapsed().as_secs_f64());
        counts.push(SizeCounts { size: k, pairs, disjoint, near, sampled, kept, seconds });
        by_size[k] = list;
        clock.watch.advance(1);
    }
    let started = std::time::Instant::now();
    let mut closings = 0u64;
    // Close every equilateral point with each admissible root.
    for (index, item) in items.iter().enumerate() {
        if matches!(item.kind, Kind::Terminal(_)) {
            continue;
        }
        let lowest = lowest(sets.get(index)).expect("an equilateral point has terminals below it");
        for root in 0..lowest {
            closings += 1;
            if let Some(tree) = close(&items, index, root, points) {
                if !prune || passes_tests(&tree, points, bottleneck) {
                    trees.push(tree);
                }
            }
        }
        if index % 1024 == 0 && clock.stop() {
            return None;
        }
    }
    clock.watch.advance(1);
    let closed = SizeCounts {
        pairs: closings,
        kept: trees.len() as u64,
        seconds: started.elapsed().as_secs_f64(),
        ..SizeCounts::default()
    };
    counts.push(closed);
    Some(trees)
}

/// The equilateral point of `p → q` with its feasible arc, or `None` when no Steiner point
/// can join them (empty arc, or a terminal edge longer than its bottleneck distance).
#[allow(clippy::too_many_arguments)]
fn equilateral(
    items: &[Item],
    sets: &TerminalSets,
    p: u32,
    q: u32,
    bottleneck: &Bottleneck,
    points: &[Point],
    mst_of: &mut BsdTrees,
    prune: bool,
    limit: f64,
    sampled: &mut u64,
) -> Option<Item> {
    let (ip, iq) = (&items[p as usize], &items[q as usize]);
    let (pp, qq) = (ip.pos, iq.pos);
    let e = super::equilateral_point(pp, qq);
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
    const SAMPLES: usize = 16;
    // Rounds of sampling, each on the arc the previous one left, while they still shrink it
    // below REFINE_SHRINK of its length.
    const REFINE_ROUNDS: usize = 8;
    const REFINE_SHRINK: f64 = 0.9;
    let bsd_tree = mst_of.length(set_p, set_q, bottleneck);
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
        let lune_is_empty = |s: Point| {
            [ip, iq].iter().all(|child| {
                let Kind::Terminal(t) = child.kind else {
                    return true;
                };
                let pt = points[t];
                let l = length(sub(s, pt)) - 2.0 * shift - TOL;
                if l <= 0.0 {
                    return true;
                }
                // Compared squared: both sides are non-negative.
                let l2 = l * l;
                !points
                    .iter()
                    .enumerate()
                    .any(|(z, &pz)| z != t && distance_squared(pz, s) < l2 && distance_squared(pz, pt) < l2)
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
        let (cos60, sin60) = (0.5, super::HALF_SQRT3);
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
        // The samples, by rotating the first one step by step.
        let mut samples = [[0.0; 2]; SAMPLES];
        let ((mut sin_u, mut cos_u), (sin_step, cos_step)) = ((theta_q + lo).sin_cos(), step.sin_cos());
        for sample in &mut samples {
            *sample = [centre[0] + radius * cos_u, centre[1] + radius * sin_u];
            (cos_u, sin_u) = (cos_u * cos_step - sin_u * sin_step, sin_u * cos_step + cos_u * sin_step);
        }
        let passing = |k: usize| {
            let s = samples[k];
            child_edges_hold(s) && upper_bound_holds(s) && lune_is_empty(s) && wedge_holds(s)
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

/// Euclidean length by a square root (the hot tests need no overflow guard: working-frame
/// coordinates are of size about 1).
#[inline]
fn length(v: Point) -> f64 {
    dot(v, v).sqrt()
}

/// Append the smallest bottleneck distance from the terminals of `set` to each terminal.
fn push_nearest(table: &mut Vec<f64>, set: &[u64], bottleneck: &Bottleneck, n: usize) {
    for v in 0..n {
        let mut best = f64::INFINITY;
        for u in members(set) {
            best = best.min(bottleneck.get(u, v));
        }
        table.push(best);
    }
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
fn arc_bounds(
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

/// Nearest and farthest distance from an item's location to its feasible arc (both 0 for
/// a terminal).
fn reach(item: &Item) -> (f64, f64) {
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

/// The FST rooted at terminal `root` through equilateral point `top`, when every Steiner
/// point falls on its feasible arc.
fn close(items: &[Item], top: usize, root: usize, points: &[Point]) -> Option<FullTree> {
    let mut tree = FullTree { terminals: vec![root], steiner: Vec::new(), edges: Vec::new(), length: 0.0 };
    let first = hit(&items[top], points[root])?;
    tree.steiner.push(first);
    tree.edges.push([End::Terminal(root), End::Steiner(0)]);
    let mut stack = vec![(top, 0usize)];
    while let Some((index, s)) = stack.pop() {
        let Kind::Equilateral { kids, .. } = items[index].kind else {
            unreachable!("only equilateral points are expanded")
        };
        for kid in kids {
            let child = &items[kid as usize];
            match child.kind {
                Kind::Terminal(t) => {
                    tree.terminals.push(t);
                    tree.edges.push([End::Steiner(s), End::Terminal(t)]);
                }
                Kind::Equilateral { .. } => {
                    let next = hit(child, tree.steiner[s])?;
                    tree.steiner.push(next);
                    let k = tree.steiner.len() - 1;
                    tree.edges.push([End::Steiner(s), End::Steiner(k)]);
                    stack.push((kid as usize, k));
                }
            }
        }
    }
    tree.terminals.sort_unstable();
    let at = |end: End| match end {
        End::Terminal(t) => points[t],
        End::Steiner(k) => tree.steiner[k],
    };
    let mut length = 0.0;
    for &[a, b] in &tree.edges {
        let l = distance(at(a), at(b));
        if l <= TOL {
            return None;
        }
        length += l;
    }
    tree.length = length;
    Some(tree)
}

/// The Steiner point where the line from `from` to the equilateral point `item` meets
/// `item`'s circle, when it lies on the feasible arc.
fn hit(item: &Item, from: Point) -> Option<Point> {
    let Kind::Equilateral { centre, theta_q, lo, hi, .. } = item.kind else {
        return None;
    };
    let s = super::simpson_hit(item.pos, from, centre)?;
    let u = arc_parameter(s, centre, theta_q);
    (u >= lo - ARC_TOL && u <= hi + ARC_TOL).then_some(s)
}

/// Winter and Zachariasen's bottleneck, upper bound and lune tests.
fn passes_tests(tree: &FullTree, points: &[Point], bottleneck: &Bottleneck) -> bool {
    if tree.length >= bottleneck.mst_length(&tree.terminals) - TOL {
        return false;
    }
    let at = |end: End| match end {
        End::Terminal(t) => points[t],
        End::Steiner(k) => tree.steiner[k],
    };
    let node = |end: End| match end {
        End::Terminal(t) => t,
        End::Steiner(k) => points.len() + k,
    };
    // Lune test.
    for &[a, b] in &tree.edges {
        let (pa, pb) = (at(a), at(b));
        let l = distance(pa, pb) - TOL;
        let is_end = |z: usize| matches!(a, End::Terminal(t) if t == z) || matches!(b, End::Terminal(t) if t == z);
        for (z, &pz) in points.iter().enumerate() {
            if !is_end(z) && distance(pz, pa) < l && distance(pz, pb) < l {
                return false;
            }
        }
    }
    // Bottleneck test: the terminals on either side of each edge.
    let total = points.len() + tree.steiner.len();
    let mut adjacency: Vec<Vec<usize>> = vec![Vec::new(); total];
    for &[a, b] in &tree.edges {
        adjacency[node(a)].push(node(b));
        adjacency[node(b)].push(node(a));
    }
    let mut side = Vec::new();
    for &[a, b] in &tree.edges {
        let l = distance(at(a), at(b));
        side.clear();
        let mut stack = vec![(node(a), node(b))];
        while let Some((u, parent)) = stack.pop() {
            if u < points.len() {
                side.push(u);
            }
            for &v in &adjacency[u] {
                if v != parent {
                    stack.push((v, u));
                }
            }
        }
        for &u in &side {
            for &v in &tree.terminals {
                if !side.contains(&v) && l > bottleneck.get(u, v) + TOL {
                    return false;
                }
            }
        }
    }
    true
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::steiner::HALF_SQRT3;

    #[test]
    fn equilateral_triangle_has_one_fst_through_its_centroid() {
        // Closed form: the Steiner tree of an equilateral triangle of side 1 has one Steiner
        // point at the centroid and length √3.
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.5, HALF_SQRT3]];
        let b = Bottleneck::new(&pts);
        let trees = full_steiner_trees(&pts, &b, &Clock::unlimited()).unwrap();
        let full: Vec<&FullTree> = trees.iter().filter(|t| t.terminals.len() == 3).collect();
        assert_eq!(full.len(), 1);
        assert!((full[0].length - 3f64.sqrt()).abs() < 1e-12);
        assert!(distance(full[0].steiner[0], [0.5, HALF_SQRT3 / 3.0]) < 1e-12);
    }

    #[test]
    fn unit_square_has_two_four_terminal_fsts_of_length_one_plus_root_three() {
        // Closed form: the unit square's two full topologies are each 1 + √3 long.
        let pts = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
        let b = Bottleneck::new(&pts);
        let trees = full_steiner_trees(&pts, &b, &Clock::unlimited()).unwrap();
        let four: Vec<&FullTree> = trees.iter().filter(|t| t.terminals.len() == 4).collect();
        assert_eq!(four.len(), 2);
        for t in four {
            assert!((t.length - (1.0 + 3f64.sqrt())).abs() < 1e-12);
            assert_eq!(t.steiner.len(), 2);
        }
    }

    #[test]
    fn obtuse_triangle_has_no_three_terminal_fst() {
        // Closed form: an angle of 120° or more puts the Fermat point at that vertex.
        let pts = [[0.0, 0.0], [-1.0, 0.2], [1.0, 0.2]];
        let b = Bottleneck::new(&pts);
        let trees = full_steiner_trees(&pts, &b, &Clock::unlimited()).unwrap();
        assert!(trees.iter().all(|t| t.terminals.len() == 2));
    }

    #[test]
    fn bottleneck_distances_are_the_longest_mst_edge_on_the_path() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [3.0, 0.0], [3.0, 0.5]];
        let b = Bottleneck::new(&pts);
        assert_eq!(b.get(0, 1), 1.0);
        assert_eq!(b.get(0, 3), 2.0);
        assert_eq!(b.get(2, 3), 0.5);
    }
}

#[cfg(test)]
mod pruning_properties {
    use super::*;
    use proptest::prelude::*;

    /// Length of the concatenation of `trees` on `n` terminals, proven optimal.
    fn concatenated_length(n: usize, trees: &[FullTree]) -> f64 {
        let found = crate::network::steiner::concatenate::concatenate(n, trees, &Clock::unlimited()).unwrap();
        assert!(found.proven);
        found.chosen.iter().map(|&i| trees[i].length).sum()
    }

    /// Compare the tree from the pruned FSTs with the tree from every FST.
    fn pruning_keeps_the_optimum(points: &[Point]) -> Result<(), String> {
        let b = Bottleneck::new(points);
        let pruned = full_steiner_trees(points, &b, &Clock::unlimited()).unwrap();
        let every = generate(points, &b, &Clock::unlimited(), false, &mut Vec::new()).unwrap();
        let (short, reference) =
            (concatenated_length(points.len(), &pruned), concatenated_length(points.len(), &every));
        if pruned.len() > every.len() || (short - reference).abs() > 1e-9 * reference {
            return Err(format!("{} pruned FSTs give {short}, all {} give {reference}", pruned.len(), every.len()));
        }
        Ok(())
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 24, ..ProptestConfig::default() })]

        /// The pruning tests are necessary conditions only: on small sets the Steiner minimum
        /// tree concatenated from the pruned FSTs is as short as the one from every FST
        /// (the unpruned enumeration of Melzak's method, which is exact by construction).
        #[test]
        fn pruning_never_loses_the_steiner_minimum_tree(
            points in prop::collection::vec((0.0f64..1.0, 0.0f64..1.0).prop_map(|(x, y)| [x, y]), 5..=8)
        ) {
            prop_assert!(pruning_keeps_the_optimum(&points).is_ok(), "{:?}", pruning_keeps_the_optimum(&points));
        }

        /// The same on lattice points, where collinear and cocircular terminals put the
        /// tests on their tolerances.
        #[test]
        fn pruning_never_loses_the_steiner_minimum_tree_on_a_lattice(
            raw in prop::collection::vec((0u8..6, 0u8..6).prop_map(|(x, y)| [f64::from(x) / 8.0, f64::from(y) / 8.0]), 5..=9)
        ) {
            let mut points: Vec<Point> = Vec::new();
            for p in raw {
                if !points.contains(&p) {
                    points.push(p);
                }
            }
            prop_assume!(points.len() >= 4);
            prop_assert!(pruning_keeps_the_optimum(&points).is_ok(), "{:?}", pruning_keeps_the_optimum(&points));
        }
    }
}
