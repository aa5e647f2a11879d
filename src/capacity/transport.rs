//! The transportation problem with few sinks: exact min-cost flow of point demand into
//! capacitated sites.
//!
//! Method: successive shortest paths with node potentials (Edmonds & Karp 1972; Tomizawa
//! 1971) on the residual network *condensed over the sites*. Every point node of the full
//! network (points → sites → sink) has its in-arcs from the sites that serve it and its
//! out-arcs to every site, so a residual path `j → i → k` is one condensed arc `j → k` of
//! cost `c(i, k) − c(i, j)`, cheapest over the points `i` that `j` serves. The keys of these
//! arcs never change (the potentials live on sites only), so each arc keeps a short sorted
//! list of its cheapest points, refilled from the site's members when it runs dry, and a
//! heap of points that joined the site since. Dijkstra then runs on the `m` sites alone
//! (dense, O(m²)) instead of the `n·m` arcs of the full network.
//!
//! Sparse variant ([`Reach::Listed`]): each point may use only its own list of sites (a
//! sparse transportation problem). The condensed arc `j → k` then exists only when some
//! point lists both, the site graph is kept by site (compressed rows), and Dijkstra runs
//! with a binary heap over those arcs: O(E log m) per augmenting path instead of O(m²).
//!
//! Start: every point at its cheapest site (a min-cost pseudo-flow with all potentials 0);
//! sites loaded past their capacity hold the excess, and each augmentation moves excess
//! along a shortest path to a site with slack.
//!
//! Invariants (reduced cost `c − π_u + π_v` with `π` on sites and the sink `T`):
//! - every condensed arc has reduced cost ≥ 0 (no negative cycle: the pseudo-flow is a
//!   min-cost flow for what it carries);
//! - a site with slack has `π_k ≤ π_T`, a full one `π_k ≥ π_T`; so at the end
//!   `y_k = max(π_k − π_T, 0)` are optimal capacity prices: every point is served only by
//!   sites minimising `c(i, k) + y_k`.
//!
//! Flows are moved by `δ = min(excess, slack, flows on the path)` and the quantity equal to
//! `δ` is set to exactly 0, so integral data give an integral (vertex) solution.

use std::cmp::Reverse;
use std::collections::BinaryHeap;

use rayon::prelude::*;

use crate::cancel::Clock;
use crate::error::{Error, Result};
use crate::geometry::CompensatedSum;

/// Augmenting paths between two polls of the clock: each costs O(m²) (microseconds to a
/// millisecond at a thousand sites).
const POLL_PATHS: usize = 64;

/// Relative rounding allowed in a site's balance: a few ulps of its capacity or load (below one
/// unit at 1e15, where whole units are still exact in float64).
pub(crate) const SITE_ROUNDING: f64 = 4.0 * f64::EPSILON;

/// How many cheapest points each condensed arc keeps sorted before it refills.
const ARC_LIST: usize = 64;

/// A finite f64 ordered totally (the keys are finite by construction).
#[derive(Debug, Clone, Copy, PartialEq)]
struct Key(f64);
impl Eq for Key {}
impl PartialOrd for Key {
    fn partial_cmp(&self, other: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(other))
    }
}
impl Ord for Key {
    fn cmp(&self, other: &Self) -> std::cmp::Ordering {
        self.0.total_cmp(&other.0)
    }
}

/// The cheapest points of one condensed arc `j → k`.
#[derive(Debug, Default, Clone)]
struct Arc {
    /// `(c(i, k) − c(i, j), i)` ascending, from the last refill.
    list: Vec<(f64, u32)>,
    /// Next unread entry of `list`.
    next: usize,
    /// True when `list` held every member of `j` at the refill (nothing beyond it).
    whole: bool,
    /// True once filled at least once.
    built: bool,
    /// Points that joined `j` since the refill.
    joined: BinaryHeap<Reverse<(Key, u32)>>,
}

/// Per point, the sites serving it and the amounts.
pub(crate) type Flows = Vec<Vec<(u32, f64)>>;

/// The sites each point may be served by.
#[derive(Debug, Clone, Copy)]
pub(crate) enum Reach<'a> {
    /// Every site.
    All,
    /// Point `i` only by `sites[start[i]..start[i + 1]]` (distinct sites).
    Listed { start: &'a [usize], sites: &'a [u32] },
}

impl Reach<'_> {
    /// The sites point `i` may use (`None`: every site).
    #[inline]
    fn of(&self, i: u32) -> Option<&[u32]> {
        match self {
            Reach::All => None,
            Reach::Listed { start, sites } => Some(&sites[start[i as usize]..start[i as usize + 1]]),
        }
    }
}

/// An optimal transportation plan.
#[derive(Debug, Clone)]
pub(crate) struct Plan {
    /// Per point, the sites serving it and the amounts (only positive amounts).
    pub flows: Flows,
    /// Optimal capacity prices `y_k ≥ 0` (cost units per unit of demand): every point is
    /// served only by sites minimising `c(i, k) + y_k`; 0 at every site with slack.
    pub price: Vec<f64>,
    /// Augmenting paths used.
    pub augmentations: usize,
}

/// Working state of the solver.
struct Solver<'a, C: Fn(usize, usize) -> f64 + Sync + ?Sized> {
    cost: &'a C,
    reach: Reach<'a>,
    sites: usize,
    /// The condensed arcs by tail site (compressed rows, heads ascending): the arcs of `j`
    /// are `first[j]..first[j + 1]`; with [`Reach::All`], every `k ≠ j`.
    first: Vec<usize>,
    head: Vec<u32>,
    flows: Vec<Vec<(u32, f64)>>,
    members: Vec<Vec<u32>>,
    arcs: Vec<Arc>,
    /// Per arc, the key and point of its cheapest valid entry, kept current eagerly so that
    /// Dijkstra reads plain arrays (`NONE`: the arc has no point).
    key: Vec<f64>,
    who: Vec<u32>,
}

/// No point on an arc.
const NONE: u32 = u32::MAX;

impl<C: Fn(usize, usize) -> f64 + Sync + ?Sized> Solver<'_, C> {
    #[inline]
    fn flow(&self, i: u32, j: usize) -> f64 {
        self.flows[i as usize].iter().find(|&&(s, _)| s as usize == j).map_or(0.0, |&(_, x)| x)
    }

    /// The index of arc `j → k` (it exists: some point lists both).
    #[inline]
    fn arc(&self, j: usize, k: usize) -> usize {
        match self.reach {
            Reach::All => j * (self.sites - 1) + k - usize::from(k > j),
            Reach::Listed { .. } => {
                let row = &self.head[self.first[j]..self.first[j + 1]];
                self.first[j] + row.binary_search(&(k as u32)).expect("an arc between sites some point lists")
            }
        }
    }

    /// Refill arc `j → k` from the current members of `j` (those that may use `k`).
    fn refill(&mut self, a: usize, j: usize, k: usize) {
        let flows = &self.flows;
        self.members[j].retain(|&i| flows[i as usize].iter().any(|&(s, _)| s as usize == j));
        let (cost, reach) = (self.cost, self.reach);
        let mut keys: Vec<(f64, u32)> = self.members[j]
            .iter()
            .filter(|&&i| reach.of(i).is_none_or(|list| list.contains(&(k as u32))))
            .map(|&i| (cost(i as usize, k) - cost(i as usize, j), i))
            .collect();
        let whole = keys.len() <= ARC_LIST;
        if !whole {
            keys.select_nth_unstable_by(ARC_LIST - 1, |a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
            keys.truncate(ARC_LIST);
        }
        keys.sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        self.arcs[a] = Arc { list: keys, next: 0, whole, built: true, joined: BinaryHeap::new() };
    }

    /// The cheapest point of arc `j → k` that `j` still serves: `(key, point)`.
    fn best(&mut self, a: usize, j: usize, k: usize) -> Option<(f64, u32)> {
        if !self.arcs[a].built {
            self.refill(a, j, k);
        }
        loop {
            let arc = &self.arcs[a];
            let listed = arc.list.get(arc.next).copied();
            if listed.is_none() && !arc.whole {
                self.refill(a, j, k);
                continue;
            }
            let joined = arc.joined.peek().map(|Reverse((key, i))| (key.0, *i));
            let (pick, from_list) = match (listed, joined) {
                (None, None) => return None,
                (Some(l), None) => (l, true),
                (None, Some(h)) => (h, false),
                (Some(l), Some(h)) => {
                    if l.0 <= h.0 {
                        (l, true)
                    } else {
                        (h, false)
                    }
                }
            };
            if self.flow(pick.1, j) > 0.0 {
                return Some(pick);
            }
            let arc = &mut self.arcs[a];
            if from_list {
                arc.next += 1;
            } else {
                arc.joined.pop();
            }
        }
    }

    /// Refresh the cached cheapest entry of arc `a`, `j → k`.
    fn refresh(&mut self, a: usize, j: usize, k: usize) {
        match self.best(a, j, k) {
            Some((key, i)) => {
                self.key[a] = key;
                self.who[a] = i;
            }
            None => self.who[a] = NONE,
        }
    }

    /// Point `i` starts being served by site `k`.
    fn join(&mut self, i: u32, k: usize) {
        self.members[k].push(i);
        let others: Vec<usize> = match self.reach.of(i) {
            None => (0..self.sites).filter(|&l| l != k).collect(),
            Some(list) => list.iter().map(|&l| l as usize).filter(|&l| l != k).collect(),
        };
        for l in others {
            let a = self.arc(k, l);
            if !self.arcs[a].built {
                // First member of `k` since the start: build the arc from its members.
                self.refresh(a, k, l);
                continue;
            }
            let key = (self.cost)(i as usize, l) - (self.cost)(i as usize, k);
            self.arcs[a].joined.push(Reverse((Key(key), i)));
            if self.who[a] == NONE || key < self.key[a] {
                self.key[a] = key;
                self.who[a] = i;
            }
        }
    }

    /// Point `i` stopped being served by site `j`: arcs out of `j` that named it refresh.
    fn leave(&mut self, i: u32, j: usize) {
        for a in self.first[j]..self.first[j + 1] {
            if self.who[a] == i {
                self.refresh(a, j, self.head[a] as usize);
            }
        }
    }
}

/// Below this many points (or 16 per site) the plan starts from zero prices; above it, from
/// the prices of the plan for a sample of one point in [`SAMPLE_STRIDE`].
const DIRECT_POINTS: usize = 2048;
const SAMPLE_STRIDE: usize = 8;

/// Solve `min Σ x_ij c(i, j)` subject to `Σ_j x_ij = demand[i]`, `Σ_i x_ij ≤ capacity[j]`,
/// `x ≥ 0`, where `cost(i, j)` is finite and ≥ 0.
///
/// The caller guarantees `Σ demand ≤ Σ capacity` (adding a virtual site for a shortfall);
/// a remainder left by rounding below `1e-12 · Σ demand` is tolerated.
///
/// Large inputs start from the optimal prices of a sample (one point in eight, demand
/// scaled to the same total, recursively): every point starts at its cheapest site under
/// those prices, so only the points near the price-shifted boundaries move. Any start is
/// exact: the prices only seed the potentials (see [`solve_from`]).
///
/// # Errors
/// [`Error::Degenerate`] naming `capacities` when excess demand finds no site with room (the
/// totals disagree beyond rounding).
///
/// # Runtime
/// O(n·m) for the start, then O(m²) per augmentation plus O(n_j) per arc refill; the
/// number of augmentations is about the number of points moved off their start site.
#[cfg(test)]
pub(crate) fn transport(demand: &[f64], capacity: &[f64], cost: &(dyn Fn(usize, usize) -> f64 + Sync)) -> Result<Plan> {
    transport_watched(demand, capacity, cost, &Clock::unlimited())
}

/// [`transport`] polling `clock` every [`POLL_PATHS`] augmenting paths.
///
/// # Errors
/// As [`transport`], and [`super::stopped`] when the clock stops the run (no plan meeting
/// the capacities exists before the last path).
pub(crate) fn transport_watched(
    demand: &[f64],
    capacity: &[f64],
    cost: &(dyn Fn(usize, usize) -> f64 + Sync),
    clock: &Clock,
) -> Result<Plan> {
    let n = demand.len();
    let m = capacity.len();
    let mut prices = vec![0.0; m];
    if n >= DIRECT_POINTS && n >= 16 * m {
        // A deterministic sample: every SAMPLE_STRIDE-th point of a seeded shuffle.
        let mut order: Vec<usize> = (0..n).collect();
        crate::geometry::random::SplitMix64::new(0x5eed_ca9a).shuffle(&mut order);
        let sample: Vec<usize> = order.into_iter().step_by(SAMPLE_STRIDE).collect();
        let total: f64 = demand.iter().sum();
        let part: f64 = sample.iter().map(|&i| demand[i]).sum();
        if part > 0.0 {
            let sub_demand: Vec<f64> = sample.iter().map(|&i| demand[i]).collect();
            let sub_capacity: Vec<f64> = capacity.iter().map(|&c| c * (part / total)).collect();
            let sub = transport_watched(&sub_demand, &sub_capacity, &|i, j| cost(sample[i], j), clock)?;
            prices = sub.price;
        }
    }
    solve_from_watched(demand, capacity, cost, &prices, Reach::All, clock)
}

/// Successive shortest paths from the start "every point at its cheapest site under
/// `prices`", with the potentials `π_k = prices[k]`, `π_T = 0`; each point served only by
/// the sites of its `reach`.
///
/// Reduced-cost optimality of the start (Ahuja, Magnanti & Orlin 1993, §9): point arcs are
/// optimal by the choice of site; a site arc `k → T` with negative reduced cost
/// (`prices[k] > 0`) is saturated, one with zero reduced cost carries `min(load, capacity)`.
/// The imbalances this leaves (sites with more load than outflow, sites sending more than
/// they receive, and the sink) are then removed along shortest paths, each of which keeps
/// every residual arc at reduced cost ≥ 0, so the final flow is optimal.
#[cfg(test)]
pub(crate) fn solve_from(
    demand: &[f64],
    capacity: &[f64],
    cost: &(dyn Fn(usize, usize) -> f64 + Sync),
    prices: &[f64],
    reach: Reach<'_>,
) -> Result<Plan> {
    solve_from_watched(demand, capacity, cost, prices, reach, &Clock::unlimited())
}

/// [`solve_from`] polling `clock` every [`POLL_PATHS`] augmenting paths; stopped, it fails
/// with [`super::stopped`] (the flow is not a plan until the last path).
pub(crate) fn solve_from_watched(
    demand: &[f64],
    capacity: &[f64],
    cost: &(dyn Fn(usize, usize) -> f64 + Sync),
    prices: &[f64],
    reach: Reach<'_>,
    clock: &Clock,
) -> Result<Plan> {
    let n = demand.len();
    let m = capacity.len();
    let start: Vec<u32> = (0..n)
        .into_par_iter()
        .map(|i| {
            let mut best = (f64::INFINITY, 0u32);
            let mut consider = |j: usize| {
                let c = cost(i, j) + prices[j];
                if c < best.0 || (c == best.0 && (j as u32) < best.1) {
                    best = (c, j as u32);
                }
            };
            match reach.of(i as u32) {
                None => (0..m).for_each(&mut consider),
                Some(list) => list.iter().for_each(|&j| consider(j as usize)),
            }
            best.1
        })
        .collect();
    let (first, head) = site_graph(demand, m, reach);
    let arcs = head.len();
    let mut solver = Solver {
        cost,
        reach,
        sites: m,
        first,
        head,
        flows: vec![Vec::new(); n],
        members: vec![Vec::new(); m],
        arcs: vec![Arc::default(); arcs],
        key: vec![0.0; arcs],
        who: vec![NONE; arcs],
    };
    let mut load = vec![0.0; m];
    for i in 0..n {
        if demand[i] > 0.0 {
            let j = start[i] as usize;
            solver.flows[i].push((j as u32, demand[i]));
            solver.members[j].push(i as u32);
            load[j] += demand[i];
        }
    }
    for j in 0..m {
        if !solver.members[j].is_empty() {
            for a in solver.first[j]..solver.first[j + 1] {
                solver.refresh(a, j, solver.head[a] as usize);
            }
        }
    }
    // Dense graphs pick Dijkstra's next node by a scan (O(m) per node, O(m²) per path); sparse
    // ones by a binary heap.
    let dense = matches!(reach, Reach::All);
    let mut heap: BinaryHeap<Reverse<(Key, u32)>> = BinaryHeap::new();
    let t = m; // the sink
               // Flow on each site arc k → T, and the balance (in − out) of every node.
    let out: Vec<f64> = (0..m).map(|k| if prices[k] > 0.0 { capacity[k] } else { load[k].min(capacity[k]) }).collect();
    let mut out = out;
    let total: f64 = demand.iter().sum();
    let mut balance: Vec<f64> = (0..m).map(|k| load[k] - out[k]).collect();
    balance.push(out.iter().sum::<f64>() - total);
    // What counts as balanced: at a site, rounding of its own amounts (a few ulps of its
    // capacity or load), so that no whole point of small demand is left overfilling a large
    // site; the sink takes any excess it lacks, and is itself in excess only beyond the
    // rounding of the totals. Excess left with no path to room is accepted only within that
    // rounding (the caller guarantees the capacity).
    let loose = 1e-12 * total;
    let tolerance: Vec<f64> =
        (0..m).map(|k| SITE_ROUNDING * capacity[k].max(load[k])).chain(std::iter::once(loose)).collect();
    let room_tolerance: Vec<f64> = tolerance[..m].iter().copied().chain(std::iter::once(0.0)).collect();

    let mut pi: Vec<f64> = prices.to_vec();
    pi.push(0.0);
    let nodes = m + 1;
    let mut dist = vec![f64::INFINITY; nodes];
    let mut done = vec![false; nodes];
    // Predecessor node and point (NONE for a site arc).
    let mut via: Vec<(u32, u32)> = vec![(0, NONE); nodes];
    let mut augmentations = 0usize;
    let mut cursor = 0usize;
    while let Some(s) = (0..nodes).map(|v| (cursor + v) % nodes).find(|&v| balance[v] > tolerance[v]) {
        if augmentations.is_multiple_of(POLL_PATHS) && clock.stop() {
            return Err(super::stopped());
        }
        cursor = s;
        dist.fill(f64::INFINITY);
        done.fill(false);
        dist[s] = 0.0;
        heap.clear();
        heap.push(Reverse((Key(0.0), s as u32)));
        let mut target = usize::MAX;
        loop {
            let mut u = usize::MAX;
            let mut du = f64::INFINITY;
            if dense {
                for (v, &d) in dist.iter().enumerate() {
                    if !done[v] && d < du {
                        du = d;
                        u = v;
                    }
                }
            } else {
                // Lazy deletion: an entry is current while its node is open at that distance.
                while let Some(Reverse((Key(d), v))) = heap.pop() {
                    if !done[v as usize] && d == dist[v as usize] {
                        (u, du) = (v as usize, d);
                        break;
                    }
                }
            }
            if u == usize::MAX {
                break;
            }
            done[u] = true;
            if balance[u] < -room_tolerance[u] {
                target = u;
                break;
            }
            let pu = pi[u];
            if u == t {
                // T → k undoes flow on k's site arc.
                for k in 0..m {
                    if !done[k] && out[k] > 0.0 {
                        let d = du + (pi[k] - pu).max(0.0);
                        if d < dist[k] {
                            dist[k] = d;
                            via[k] = (t as u32, NONE);
                            if !dense {
                                heap.push(Reverse((Key(d), k as u32)));
                            }
                        }
                    }
                }
                continue;
            }
            if !done[t] && out[u] < capacity[u] {
                let d = du + (pi[t] - pu).max(0.0);
                if d < dist[t] {
                    dist[t] = d;
                    via[t] = (u as u32, NONE);
                    if !dense {
                        heap.push(Reverse((Key(d), t as u32)));
                    }
                }
            }
            for a in solver.first[u]..solver.first[u + 1] {
                let k = solver.head[a] as usize;
                if done[k] || solver.who[a] == NONE {
                    continue;
                }
                // Reduced costs are ≥ 0 in exact arithmetic; clamp rounding.
                let d = du + (solver.key[a] - pu + pi[k]).max(0.0);
                if d < dist[k] {
                    dist[k] = d;
                    via[k] = (u as u32, solver.who[a]);
                    if !dense {
                        heap.push(Reverse((Key(d), k as u32)));
                    }
                }
            }
        }
        if target == usize::MAX {
            let left: f64 = balance.iter().filter(|&&b| b > 0.0).sum();
            if left <= loose {
                break;
            }
            return Err(Error::Degenerate {
                argument: "capacities",
                reason: format!("{left} units of demand find no site with room (total capacity is short)"),
            });
        }
        let reach = dist[target];
        for v in 0..nodes {
            pi[v] -= if done[v] { dist[v].min(reach) } else { reach };
        }
        // The path target ← … ← s as arcs `(from, to, point)`. Two consecutive arcs
        // `j → k → l` through the same point `i` are one move of `i` from `j` to `l`: its
        // amount at `k` is unchanged, so it is no bottleneck. Read as two arcs, that amount
        // bounded the path although the path itself refills it, and a rounding residue of
        // `i` at `k` then carried the whole excess a few ulps per path (ties make such
        // detours shortest; a site of capacity 0 is one at no extra cost).
        let mut path: Vec<(usize, usize, u32)> = Vec::new();
        let mut k = target;
        while k != s {
            let (j, i) = via[k];
            let j = j as usize;
            match path.last_mut() {
                Some(last) if i != NONE && last.2 == i => last.0 = j,
                _ => path.push((j, k, i)),
            }
            k = j;
        }
        // Bottleneck along the path.
        let mut delta = balance[s].min(-balance[target]);
        for &(j, k, i) in &path {
            delta = delta.min(if i != NONE {
                solver.flow(i, j)
            } else if k == t {
                capacity[j] - out[j]
            } else {
                out[k]
            });
        }
        // Apply.
        for &(j, k, i) in &path {
            if i == NONE {
                if k == t {
                    out[j] = if capacity[j] - out[j] <= delta { capacity[j] } else { out[j] + delta };
                } else {
                    out[k] = if out[k] <= delta { 0.0 } else { out[k] - delta };
                }
                continue;
            }
            let f = &mut solver.flows[i as usize];
            let pos = f.iter().position(|&(s, _)| s as usize == j).expect("path arcs carry flow");
            // A remainder within the rounding of the point's own demand goes along: left
            // behind, it would be a residue at `j` that no balance accounts for.
            let left = f[pos].1 - delta <= SITE_ROUNDING * demand[i as usize];
            let moved = if left { f.swap_remove(pos).1 } else { delta };
            if !left {
                f[pos].1 -= delta;
            }
            if let Some(e) = f.iter_mut().find(|e| e.0 as usize == k) {
                e.1 += moved;
            } else {
                f.push((k as u32, moved));
                solver.join(i, k);
            }
            if left {
                solver.leave(i, j);
            }
        }
        balance[s] = if balance[s] <= delta { 0.0 } else { balance[s] - delta };
        balance[target] = if -balance[target] <= delta { 0.0 } else { balance[target] + delta };
        augmentations += 1;
    }
    let price: Vec<f64> = (0..m).map(|j| (pi[j] - pi[t]).max(0.0)).collect();
    let mut flows = solver.flows;
    settle(&mut flows, capacity, cost, &price, reach);
    Ok(Plan { flows, price, augmentations })
}

/// Per site, the amount the flows send it, summed (compensated) in point order: the loads a
/// plan reports.
pub(crate) fn site_loads(flows: &[Vec<(u32, f64)>], sites: usize) -> Vec<f64> {
    let mut loads = vec![CompensatedSum::default(); sites];
    for f in flows {
        for &(j, x) in f {
            loads[j as usize].add(x);
        }
    }
    loads.iter().map(CompensatedSum::total).collect()
}

/// The load of site `j` from its `members` (ascending points), summed as [`site_loads`] does.
fn load_of(flows: &[Vec<(u32, f64)>], members: &[u32], j: usize) -> f64 {
    let mut sum = CompensatedSum::default();
    for &i in members {
        if let Some(&(_, x)) = flows[i as usize].iter().find(|e| e.0 as usize == j) {
            sum.add(x);
        }
    }
    sum.total()
}

/// Move the rounding residues of an optimal plan off the sites they leave loaded past their
/// capacity: a site's summed load may pass its capacity by a few ulps (of the point amounts
/// moved through it), and a site of capacity 0 may hold such a residue. Each residue goes,
/// smallest amounts first, to another site its point already uses that has room, cheapest
/// at the optimal prices (`cost + price`, which the point's sites minimise), so the plan
/// keeps its parts and stays optimal to rounding.
///
/// A residue with no such site stays where it is (a few ulps past a positive capacity);
/// from a site of capacity 0 it goes to the point's other site, else to the cheapest with
/// room, else to the cheapest of positive capacity: a site of capacity 0 always ends with
/// load 0. So every load ([`site_loads`]) is within its capacity except by rounding where
/// the point amounts at a full site sum past it and its points have no room elsewhere
/// (totals that agree only to rounding, which the caller accepts to [`SITE_ROUNDING`] of
/// the demand).
fn settle(
    flows: &mut [Vec<(u32, f64)>],
    capacity: &[f64],
    cost: &(dyn Fn(usize, usize) -> f64 + Sync),
    price: &[f64],
    reach: Reach<'_>,
) {
    let m = capacity.len();
    let mut loads = site_loads(flows, m);
    if loads.iter().zip(capacity).all(|(l, c)| l <= c) {
        return;
    }
    let mut members: Vec<Vec<u32>> = vec![Vec::new(); m];
    for (i, f) in flows.iter().enumerate() {
        for &(j, _) in f {
            members[j as usize].push(i as u32);
        }
    }
    // Each pass moves at least one ulp of some amount; bounded for safety.
    let mut budget = 8 * (flows.len() + m) + 64;
    let mut again = true;
    while again && budget > 0 {
        again = false;
        for j in 0..m {
            while loads[j] > capacity[j] && budget > 0 {
                budget -= 1;
                let excess = loads[j] - capacity[j];
                // The smallest amount at `j` (ties: lowest point).
                let Some((i, x)) = members[j]
                    .iter()
                    .filter_map(|&i| flows[i as usize].iter().find(|e| e.0 as usize == j).map(|e| (i, e.1)))
                    .min_by(|a, b| a.1.total_cmp(&b.1).then(a.0.cmp(&b.0)))
                else {
                    break;
                };
                // Take the excess (at least one ulp of `x`, so every step changes the sum), or
                // all of `x` when that is less or the rest would be rounding of it.
                let mut keep = x - excess;
                if keep >= x {
                    keep = f64::from_bits(x.to_bits() - 1);
                }
                if keep <= SITE_ROUNDING * x || capacity[j] == 0.0 {
                    keep = 0.0;
                }
                let moved = x - keep;
                let allowed = |k: usize| k != j && reach.of(i).is_none_or(|list| list.contains(&(k as u32)));
                let reduced = |k: usize| cost(i as usize, k) + price.get(k).copied().unwrap_or(0.0);
                let cheapest = |room: &dyn Fn(usize) -> bool, own: bool| {
                    (0..m)
                        .filter(|&k| allowed(k) && room(k))
                        .filter(|&k| !own || flows[i as usize].iter().any(|e| e.0 as usize == k))
                        .min_by(|&a, &b| reduced(a).total_cmp(&reduced(b)).then(a.cmp(&b)))
                };
                // A site the point already uses with room: no new part, and the prices still
                // certify the plan. Otherwise the residue stays (a few ulps past a positive
                // capacity) unless its site has capacity 0: then the point's other site, or
                // the cheapest with room, or the cheapest of positive capacity.
                let has_room = |k: usize| capacity[k] - loads[k] >= moved;
                let mut to = cheapest(&has_room, true);
                if to.is_none() && capacity[j] == 0.0 {
                    to = cheapest(&|k| capacity[k] > 0.0, true)
                        .or_else(|| cheapest(&has_room, false))
                        .or_else(|| cheapest(&|k| capacity[k] > 0.0, false));
                }
                let Some(k) = to else { break };
                let f = &mut flows[i as usize];
                let pos = f.iter().position(|e| e.0 as usize == j).expect("a member's amount");
                if keep > 0.0 {
                    f[pos].1 = keep;
                } else {
                    f.remove(pos);
                    members[j].retain(|&p| p != i);
                }
                if let Some(e) = f.iter_mut().find(|e| e.0 as usize == k) {
                    e.1 += moved;
                } else {
                    f.push((k as u32, moved));
                    let at = members[k].partition_point(|&p| p < i);
                    members[k].insert(at, i);
                }
                loads[j] = load_of(flows, &members[j], j);
                loads[k] = load_of(flows, &members[k], k);
                again |= loads[k] > capacity[k];
            }
        }
    }
}

/// The condensed arcs by tail site (compressed rows, heads ascending): every `k ≠ j` with
/// [`Reach::All`]; otherwise the pairs some point of positive demand lists together.
fn site_graph(demand: &[f64], m: usize, reach: Reach<'_>) -> (Vec<usize>, Vec<u32>) {
    let mut rows: Vec<Vec<u32>> = vec![Vec::new(); m];
    match reach {
        Reach::All => {
            rows.iter_mut().enumerate().for_each(|(j, row)| row.extend((0..m as u32).filter(|&k| k as usize != j)))
        }
        Reach::Listed { .. } => {
            // Compacted whenever a row doubles, so repeats cost amortised O(1) memory.
            let mut compact_at = vec![64usize; m];
            for i in (0..demand.len()).filter(|&i| demand[i] > 0.0) {
                let list = reach.of(i as u32).expect("listed reach");
                for &j in list {
                    let row = &mut rows[j as usize];
                    row.extend(list.iter().filter(|&&k| k != j));
                    if row.len() > compact_at[j as usize] {
                        row.sort_unstable();
                        row.dedup();
                        compact_at[j as usize] = 2 * row.len() + 64;
                    }
                }
            }
            rows.par_iter_mut().for_each(|row| {
                row.sort_unstable();
                row.dedup();
            });
        }
    }
    let mut first = Vec::with_capacity(m + 1);
    first.push(0);
    for row in &rows {
        first.push(first.last().copied().unwrap_or(0) + row.len());
    }
    (first, rows.concat())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Brute force over every integral plan of a tiny instance (unit demands).
    fn brute(costs: &[Vec<f64>], capacity: &[usize]) -> f64 {
        fn go(i: usize, costs: &[Vec<f64>], room: &mut Vec<usize>) -> f64 {
            if i == costs.len() {
                return 0.0;
            }
            let mut best = f64::INFINITY;
            for j in 0..room.len() {
                if room[j] > 0 {
                    room[j] -= 1;
                    best = best.min(costs[i][j] + go(i + 1, costs, room));
                    room[j] += 1;
                }
            }
            best
        }
        go(0, costs, &mut capacity.to_vec())
    }

    #[test]
    fn unit_demand_matches_brute_force_and_prices_certify_it() {
        let mut rng = crate::geometry::random::SplitMix64::new(7);
        for _ in 0..200 {
            let n = 1 + rng.below(7);
            let m = 1 + rng.below(4);
            let costs: Vec<Vec<f64>> = (0..n).map(|_| (0..m).map(|_| rng.below(20) as f64).collect()).collect();
            let mut capacity: Vec<usize> = (0..m).map(|_| rng.below(4)).collect();
            while capacity.iter().sum::<usize>() < n {
                capacity[rng.below(m)] += 1;
            }
            let demand = vec![1.0; n];
            let cap: Vec<f64> = capacity.iter().map(|&c| c as f64).collect();
            let plan = transport(&demand, &cap, &|i, j| costs[i][j]).unwrap();
            let c = &costs;
            let got: f64 = plan
                .flows
                .iter()
                .enumerate()
                .flat_map(|(i, f)| f.iter().map(move |&(j, x)| x * c[i][j as usize]))
                .sum();
            assert_eq!(got, brute(&costs, &capacity));
            for (i, f) in plan.flows.iter().enumerate() {
                let total: f64 = f.iter().map(|e| e.1).sum();
                assert_eq!(total, 1.0);
                let best = (0..m).map(|k| costs[i][k] + plan.price[k]).fold(f64::INFINITY, f64::min);
                for &(j, _) in f {
                    assert!(costs[i][j as usize] + plan.price[j as usize] <= best + 1e-9);
                }
            }
            let mut load = vec![0.0; m];
            plan.flows.iter().flatten().for_each(|&(j, x)| load[j as usize] += x);
            for ((l, c), y) in load.iter().zip(&cap).zip(&plan.price) {
                assert!(l <= c);
                if l < c {
                    assert_eq!(*y, 0.0);
                }
            }
        }
    }

    #[test]
    fn sampled_start_reaches_the_same_optimum_as_zero_prices() {
        let points = crate::partition::testing::lcg_cloud(6000, 11, [0.0, 0.0], 100.0);
        let sites = crate::partition::testing::lcg_cloud(12, 12, [0.0, 0.0], 100.0);
        let demand: Vec<f64> = (0..6000).map(|i| 1.0 + (i % 5) as f64).collect();
        let total: f64 = demand.iter().sum();
        let capacity: Vec<f64> = (0..12).map(|j| total * (0.5 + (j % 3) as f64) / 18.0 * 1.02).collect();
        let cost = |i: usize, j: usize| crate::geometry::distance(points[i], sites[j]);
        let value = |plan: &Plan| -> f64 {
            plan.flows.iter().enumerate().flat_map(|(i, f)| f.iter().map(move |&(j, x)| x * cost(i, j as usize))).sum()
        };
        let sampled = transport(&demand, &capacity, &cost).unwrap();
        let direct = solve_from(&demand, &capacity, &cost, &[0.0; 12], Reach::All).unwrap();
        assert!((value(&sampled) - value(&direct)).abs() <= 1e-9 * value(&direct));
        assert!(sampled.augmentations < direct.augmentations);
    }
}
