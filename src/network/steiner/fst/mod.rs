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
//!   to the two edges at a new Steiner point it cuts the feasible arc down to an interval,
//!   and every edge below a new Steiner point is tested again against the terminals of the
//!   other side, which its own subtree did not have;
//! - the upper bound test: an FST, or the subtree below a Steiner point plus a link to it,
//!   is no longer than the MST of its terminals under the bottleneck Steiner distances;
//! - the lune test: the lune of an edge (the points closer to both ends than they are to
//!   each other) holds no terminal; applied to the edges from a new Steiner point to its
//!   children, terminals and Steiner points alike;
//! - the wedge property: the rest of the tree hangs from a Steiner point inside a 120°
//!   wedge, and each 60° half of it holds a terminal not yet used.
//!
//! The tests on a new equilateral point are applied before it is combined with others, as
//! the combinations are what grow exponentially, and each narrows the feasible arc rather
//! than only accepting or rejecting it. Every test is a necessary condition for a part of a
//! Steiner minimum tree, evaluated with its tolerance on the side of keeping a candidate.

mod arcs;
mod bottleneck;

use crate::cancel::Clock;
use std::f64::consts::PI;

use rayon::prelude::*;

use super::terminal_sets::{contains, disjoint, lowest, members, TerminalSets};
use crate::geometry::{distance, distance_squared, Point};

use arcs::{arc_bounds, arc_parameter, arc_span, equilateral, reach, Item, Kind};
pub(super) use bottleneck::prim_length;
pub(crate) use bottleneck::Bottleneck;
use bottleneck::{push_nearest, BsdTrees};

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

/// Every full Steiner tree on at least three of `points` (distinct, in the working frame) that passes
/// the pruning tests, plus the MST edges as two-terminal FSTs; `None` when `clock` stops the
/// generation first (it is polled before each item is paired with its partners).
///
/// # Runtime
/// Exponential in the worst case. On uniformly spread terminals the pruning keeps
/// 10,500–61,500 equilateral points for sets of 100 (0.4–8.6 s on two threads) and 2–3
/// FSTs per terminal; sets of 250 take 24–37 s. The pairings examined grow with the square
/// of the points kept. The pairings of each subtree size run in parallel on the rayon pool; the
/// output is the same on any number of threads.
pub(crate) fn full_steiner_trees(points: &[Point], bottleneck: &Bottleneck, clock: &Clock) -> Option<Vec<FullTree>> {
    generate(points, bottleneck, clock, true, &mut Vec::new())
}

/// What the generation did for one subtree size `k` (the number of terminals below an
/// equilateral point), for measuring where its time goes.
#[derive(Debug, Clone, Default, PartialEq)]
pub(crate) struct SizeCounts {
    /// Subtree size (terminals below the equilateral points made).
    pub size: usize,
    /// Pairs of items met in the sweep windows (the square around each item's arc middle).
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
    // The new Steiner point s is joined to each child's own Steiner point (the child itself
    // for a terminal) by an edge on the tree paths between the two sides, so by the
    // bottleneck test each edge is at most the smallest bottleneck distance between the
    // sides, `closest`: the two children's Steiner points are within 2·closest of each
    // other. Each lies on its child's feasible arc, within the arc's `spread` of the arc's
    // middle (`arc_span`), so two items whose middles are farther apart than 2·closest plus
    // their spreads never pair up. `closest` is at most the bottleneck distance from the
    // first side to any one terminal of the other, in particular to its lowest terminal v:
    // partners are looked up on `shelves[size][v]` (sorted by the x of their middles) in a
    // square of half-side 2·nearest_bsd[a, v] plus the spreads around the middle of `a`.
    let sort_by_x = |list: &mut Vec<u32>, mids: &[Point]| {
        list.sort_by(|&a, &b| mids[a as usize][0].total_cmp(&mids[b as usize][0]))
    };
    let mut ledger = Ledger::with_capacity(items.len(), n);
    for (index, item) in items.iter().enumerate() {
        ledger.record(item, sets.get(index), bottleneck, n);
    }
    sort_by_x(&mut by_size[1], &ledger.mids);
    let mut shelves: Vec<Vec<Shelf>> = vec![Vec::new(); n];
    shelves[1] = shelve(&by_size[1], &items, &sets, ledger.measures(), n);
    for k in 2..n {
        let started = std::time::Instant::now();
        let Ledger { nearest_bsd, far, near, mids, spread } = &ledger;
        // Per-size tallies, added once per job: pairs, disjoint, near, sampled.
        let tally: [AtomicU64; 4] = Default::default();
        // The pairings of one size are independent: they run in parallel, each item `a` of
        // the smaller side with its partners, and are gathered in the order of `a` so that
        // the output does not depend on the thread count.
        // A size with no items has no partners: its items' jobs are skipped whole (beyond
        // twice the largest size kept, every job).
        let jobs: Vec<(usize, u32)> = (1..=k / 2)
            .filter(|&i| !by_size[k - i].is_empty())
            .flat_map(|i| by_size[i].iter().map(move |&a| (i, a)))
            .collect();
        let pair_with = |mst_of: &mut BsdTrees, &(i, a): &(usize, u32)| {
            if clock.stop() {
                return None;
            }
            let j = k - i;
            let mut found = Vec::new();
            let (pa, far_a) = (items[a as usize].pos, far[a as usize]);
            let (mid_a, spread_a) = (mids[a as usize], spread[a as usize]);
            let nearest_a = &nearest_bsd[a as usize * n..(a as usize + 1) * n];
            let set_a = sets.get(a as usize);
            let words = set_a.len();
            // Every item on shelf v has terminal v below it: when `a` has too, the whole
            // shelf shares a terminal with `a` and is skipped unread.
            let partners =
                shelves[j].iter().enumerate().filter(|&(v, _)| !contains(set_a, v)).flat_map(|(v, shelf)| {
                    let window = if prune { 2.0 * nearest_a[v] + spread_a + shelf.widest + TOL } else { f64::INFINITY };
                    let first = shelf.xs.partition_point(|&x| x < mid_a[0] - window);
                    let last = shelf.xs.partition_point(|&x| x <= mid_a[0] + window);
                    // The sweep bounds x; the same window bounds y. The shelf's own copies of the
                    // ys and terminal sets are read in order.
                    (first..last)
                        .filter(move |&at| (shelf.ys[at] - mid_a[1]).abs() <= window)
                        .map(move |at| (shelf, at))
                });
            let mut local = [0u64; 4];
            for (shelf, at) in partners {
                let b = shelf.items[at];
                // Each unordered pair of one size once.
                if i == j && b <= a {
                    continue;
                }
                local[0] += 1;
                let set_b = &shelf.sets[at * words..(at + 1) * words];
                if !disjoint(set_a, set_b) {
                    continue;
                }
                local[1] += 1;
                let (pos_b, spread_b, far_b) = (shelf.pos[at], shelf.spread[at], shelf.far[at]);
                let (mid_gap, gap) =
                    (distance_squared(mid_a, [shelf.xs[at], shelf.ys[at]]), distance_squared(pa, pos_b));
                // Two tests with the smallest bottleneck distance `closest` between the two
                // sides, both necessary for any pairing:
                // - the children's Steiner points are within 2·closest of each other (see
                //   above);
                // - sharper, by the law of cosines at the 120° Steiner point s on the arc over
                //   p and q: |p − q|² = |s − p|² + |s − q|² + |s − p|·|s − q|, and the
                //   bottleneck test below keeps only arcs where |s − p| ≤ A and |s − q| ≤ B
                //   (A, B as below), so |p − q|² ≤ A² + B² + AB is necessary for either
                //   orientation; it spares the trigonometry of most hopeless pairs.
                // Each right side grows with `closest` (in floating point too: sums and
                // products of non-negative numbers round monotonically), and `closest` is the
                // smallest of nearest_a[v] over the terminals v below `b`, so the pair fails
                // at `closest` exactly when it fails at some nearest_a[v]: the first such v
                // rejects it without reading the rest.
                let fails = |closest: f64| {
                    let apart = 2.0 * closest + spread_a + spread_b + TOL;
                    let (reach_a, reach_b) = (closest + far_a + TOL, closest + far_b + TOL);
                    mid_gap > apart * apart || gap > reach_a * reach_a + reach_b * reach_b + reach_a * reach_b + TOL
                };
                let mut closest = f64::INFINITY;
                let mut rejected = false;
                for v in members(set_b) {
                    if prune && fails(nearest_a[v]) {
                        rejected = true;
                        break;
                    }
                    closest = closest.min(nearest_a[v]);
                }
                if rejected {
                    continue;
                }
                local[2] += 1;
                // `closest` is the bottleneck limit of the pair; an orientation whose arc the
                // cheap conditions of `arc_bounds` already empty needs no more.
                let radius = distance(pa, pos_b) / 3f64.sqrt();
                for (p, q) in [(a, b), (b, a)] {
                    let (p_reach, q_reach) = ([near[p as usize], far[p as usize]], [near[q as usize], far[q as usize]]);
                    if prune
                        && (radius <= TOL
                            || !arc_bounds(radius, p_reach, q_reach, Some(closest))
                                .is_some_and(|(lo, hi)| hi - lo > ARC_TOL))
                    {
                        continue;
                    }
                    if let Some(item) = equilateral(
                        &items,
                        &sets,
                        p,
                        q,
                        bottleneck,
                        points,
                        mst_of,
                        nearest_bsd,
                        prune,
                        closest,
                        &mut local[3],
                    ) {
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
            ledger.record(&item, sets.get(items.len()), bottleneck, n);
            items.push(item);
        }
        let mut list = std::mem::take(&mut by_size[k]);
        sort_by_x(&mut list, &ledger.mids);
        let [pairs, disjoint, near, sampled] = tally.map(AtomicU64::into_inner);
        let (kept, seconds) = (list.len() as u64, started.elapsed().as_secs_f64());
        counts.push(SizeCounts { size: k, pairs, disjoint, near, sampled, kept, seconds });
        shelves[k] = shelve(&list, &items, &sets, ledger.measures(), n);
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

/// The items of one size whose lowest terminal is one `v`, sorted by the x of their arc
/// middles, with the xs and ys of those middles, their terminal sets (side by side, as in
/// [`TerminalSets`]) and the widest spread among them. The copies let the sweep read in
/// order what it would otherwise fetch item by item from the whole store.
#[derive(Debug, Clone, Default)]
struct Shelf {
    items: Vec<u32>,
    xs: Vec<f64>,
    ys: Vec<f64>,
    sets: Vec<u64>,
    /// The items' locations, spreads and farthest arc distances.
    pos: Vec<Point>,
    spread: Vec<f64>,
    far: Vec<f64>,
    widest: f64,
}

/// `list` (sorted by the x of the middles) on shelves by lowest terminal, keeping the order.
fn shelve(list: &[u32], items: &[Item], sets: &TerminalSets, measures: Measures, n: usize) -> Vec<Shelf> {
    let Measures { mids, spread, far } = measures;
    let mut shelves = vec![Shelf::default(); n];
    for &b in list {
        let set = sets.get(b as usize);
        let v = lowest(set).expect("every item has a terminal below it");
        let shelf = &mut shelves[v];
        shelf.items.push(b);
        shelf.xs.push(mids[b as usize][0]);
        shelf.ys.push(mids[b as usize][1]);
        shelf.sets.extend_from_slice(set);
        shelf.pos.push(items[b as usize].pos);
        shelf.spread.push(spread[b as usize]);
        shelf.far.push(far[b as usize]);
        shelf.widest = shelf.widest.max(spread[b as usize]);
    }
    shelves
}

/// What the pairing reads of every item, by item index, recorded once when the item is
/// made (terminals and equilateral points alike).
struct Ledger {
    /// `nearest_bsd[item * n + v]`: the smallest bottleneck distance from a terminal below
    /// the item to terminal `v`.
    nearest_bsd: Vec<f64>,
    /// The item's farthest and nearest arc distance ([`reach`]).
    far: Vec<f64>,
    near: Vec<f64>,
    /// The middle of the item's arc and how far the arc strays from it ([`arc_span`]).
    mids: Vec<Point>,
    spread: Vec<f64>,
}

impl Ledger {
    fn with_capacity(items: usize, n: usize) -> Ledger {
        Ledger {
            nearest_bsd: Vec::with_capacity(items * n),
            far: Vec::with_capacity(items),
            near: Vec::with_capacity(items),
            mids: Vec::with_capacity(items),
            spread: Vec::with_capacity(items),
        }
    }

    /// Record `item`, whose terminals are `terminals`, as the next item.
    fn record(&mut self, item: &Item, terminals: &[u64], bottleneck: &Bottleneck, n: usize) {
        push_nearest(&mut self.nearest_bsd, terminals, bottleneck, n);
        let (near, far) = reach(item);
        self.far.push(far);
        self.near.push(near);
        let (mid, stray) = arc_span(item);
        self.mids.push(mid);
        self.spread.push(stray);
    }

    fn measures(&self) -> Measures<'_> {
        Measures { mids: &self.mids, spread: &self.spread, far: &self.far }
    }
}

/// Per item: the middle of its arc, its spread and its farthest arc distance.
#[derive(Clone, Copy)]
struct Measures<'a> {
    mids: &'a [Point],
    spread: &'a [f64],
    far: &'a [f64],
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
