//! Shortest travel costs: Dijkstra's algorithm (Dijkstra 1959) with a binary heap, from
//! spots part-way along edges, one search per origin in parallel (rayon), each stopped at
//! the cost limit or once its `k` nearest destinations are settled; and one multi-source
//! search that labels every node with its nearest site.

use std::cmp::Reverse;
use std::collections::BinaryHeap;

use rayon::prelude::*;

use super::graph::TravelGraph;
use super::snap::Spot;
use crate::cancel::Watch;
use crate::error::{Error, Result};

/// Heap key of a non-negative cost: the bit pattern of a non-negative `f64` orders as the
/// number does, so the heap compares integers. Not for -0.0, whose sign bit sets the top bit
/// (the graph stores every cost of zero as +0.0).
#[inline]
fn key(cost: f64) -> u64 {
    debug_assert!(cost >= 0.0 && cost.is_sign_positive());
    cost.to_bits()
}

#[inline]
fn unkey(bits: u64) -> f64 {
    f64::from_bits(bits)
}

/// Up to two (node, cost) pairs: where travel from or to a spot enters the node graph.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Links {
    pairs: [(u32, f64); 2],
    len: usize,
}

impl Links {
    fn push(&mut self, node: u32, cost: f64) {
        self.pairs[self.len] = (node, cost);
        self.len += 1;
    }
    pub(crate) fn iter(&self) -> impl Iterator<Item = (u32, f64)> + '_ {
        self.pairs[..self.len].iter().copied()
    }
}

impl TravelGraph {
    /// The nodes travel from `spot` reaches first, with the cost of getting there (along
    /// the edge, only in the directions it allows).
    pub(crate) fn leave(&self, spot: Spot) -> Links {
        self.links(spot, true)
    }

    /// The nodes travel to `spot` comes through last, with the cost from there.
    pub(crate) fn arrive(&self, spot: Spot) -> Links {
        self.links(spot, false)
    }

    /// The ends of `spot`'s edge that travel may use, each with the cost of the part of the
    /// edge between it and the spot (the cheapest of the edges drawn along its shape). On the way out (`outward`) the forward direction leads
    /// to the head and the backward one to the tail; on the way in the forward direction
    /// comes from the tail and the backward one from the head. Forward first, then backward.
    fn links(&self, spot: Spot, outward: bool) -> Links {
        let mut out = Links { pairs: [(0, 0.0); 2], len: 0 };
        match spot {
            Spot::Node(u) => out.push(u, 0.0),
            Spot::OnEdge { edge, fraction } => {
                let e = edge as usize;
                // The share of the edge between the spot and its head, and its tail.
                let (to_head, to_tail) = (1.0 - fraction, fraction);
                let (forward_end, forward_share) =
                    if outward { (self.head[e], to_head) } else { (self.tail[e], to_tail) };
                let (backward_end, backward_share) =
                    if outward { (self.tail[e], to_tail) } else { (self.head[e], to_head) };
                // Over every edge drawn along the spot's shape (a spot lies on the shape's
                // representative edge).
                let (forward, backward) = self.along_costs(e);
                if forward.is_finite() {
                    out.push(forward_end, forward_share * forward);
                }
                if backward.is_finite() {
                    out.push(backward_end, backward_share * backward);
                }
            }
        }
        out
    }

    /// The cost of travelling from `from` to `to` along one edge without passing a node,
    /// when both lie on the same edge and its direction allows it.
    pub(crate) fn direct(&self, from: Spot, to: Spot) -> Option<f64> {
        match (from, to) {
            (Spot::OnEdge { edge: a, fraction: s }, Spot::OnEdge { edge: b, fraction: t }) if a == b => {
                let (forward, backward) = self.along_costs(a as usize);
                if t >= s && forward.is_finite() {
                    Some((t - s) * forward)
                } else if t <= s && backward.is_finite() {
                    Some((s - t) * backward)
                } else {
                    None
                }
            }
            _ => None,
        }
    }
}

/// Options of [`travel_costs`].
#[derive(Debug, Clone, Default)]
pub struct CostOptions {
    /// Report only pairs within this cost (and stop each search there).
    pub limit: Option<f64>,
    /// Report only each origin's `k` cheapest destinations (ties: lower destination row).
    pub k: Option<usize>,
    /// Progress (one step per origin) and cancellation: a cancelled run skips the origins
    /// not yet searched, so it stops within one search per worker thread.
    pub watch: Watch,
}

/// Travel costs from origins to destinations, row by row: `columns[offsets[i]..offsets[i+1]]`
/// are the destinations origin `i` reaches (ascending), `costs` their costs. A pair that is
/// absent is unreachable (or beyond the limit, or not among the `k` nearest).
#[derive(Debug, Clone, PartialEq)]
pub struct CostRows {
    /// Row offsets, `origins + 1` entries.
    pub offsets: Vec<usize>,
    /// Destination of every entry.
    pub columns: Vec<u32>,
    /// Cost of every entry.
    pub costs: Vec<f64>,
}

impl CostRows {
    /// The dense `origins × destinations` matrix, `f64::NAN` for an absent pair.
    pub fn dense(&self, destinations: usize) -> Vec<f64> {
        let rows = self.offsets.len() - 1;
        let mut out = vec![f64::NAN; rows * destinations];
        out.par_chunks_mut(destinations.max(1)).enumerate().for_each(|(i, row)| {
            for k in self.offsets[i]..self.offsets[i + 1] {
                row[self.columns[k] as usize] = self.costs[k];
            }
        });
        out
    }
}

/// The destinations, indexed by the nodes travel reaches them through.
struct Targets {
    first: Vec<u32>,
    entries: Vec<(u32, f64)>,
    /// (edge, destination) of destinations part-way along an edge, sorted.
    on_edge: Vec<(u32, u32)>,
}

impl Targets {
    fn new(graph: &TravelGraph, spots: &[Spot]) -> Targets {
        let mut first = vec![0u32; graph.node_count() + 1];
        for s in spots {
            for (u, _) in graph.arrive(*s).iter() {
                first[u as usize + 1] += 1;
            }
        }
        for u in 0..graph.node_count() {
            first[u + 1] += first[u];
        }
        let mut fill = first.clone();
        let mut entries = vec![(0u32, 0.0); first[graph.node_count()] as usize];
        for (d, s) in spots.iter().enumerate() {
            for (u, c) in graph.arrive(*s).iter() {
                entries[fill[u as usize] as usize] = (d as u32, c);
                fill[u as usize] += 1;
            }
        }
        let mut on_edge: Vec<(u32, u32)> = spots
            .iter()
            .enumerate()
            .filter_map(|(d, s)| match s {
                Spot::OnEdge { edge, .. } => Some((*edge, d as u32)),
                Spot::Node(_) => None,
            })
            .collect();
        on_edge.sort_unstable();
        Targets { first, entries, on_edge }
    }

    fn at(&self, u: u32) -> &[(u32, f64)] {
        &self.entries[self.first[u as usize] as usize..self.first[u as usize + 1] as usize]
    }

    fn on(&self, edge: u32) -> &[(u32, u32)] {
        let lo = self.on_edge.partition_point(|&(e, _)| e < edge);
        let hi = self.on_edge.partition_point(|&(e, _)| e <= edge);
        &self.on_edge[lo..hi]
    }
}

/// One thread's reusable search state: labels are reset only where a search touched them.
pub(crate) struct Workspace {
    pub(crate) dist: Vec<f64>,
    touched: Vec<u32>,
    heap: BinaryHeap<Reverse<(u64, u32)>>,
    best: Vec<f64>,
    reached: Vec<u32>,
    settled: Vec<bool>,
    nearest: BinaryHeap<Reverse<(u64, u32)>>,
}

impl Workspace {
    pub(crate) fn new(nodes: usize, destinations: usize) -> Workspace {
        Workspace {
            dist: vec![f64::INFINITY; nodes],
            touched: Vec::new(),
            heap: BinaryHeap::new(),
            best: vec![f64::INFINITY; destinations],
            reached: Vec::new(),
            settled: vec![false; destinations],
            nearest: BinaryHeap::new(),
        }
    }

    fn reset(&mut self) {
        for &u in &self.touched {
            self.dist[u as usize] = f64::INFINITY;
        }
        for &d in &self.reached {
            self.best[d as usize] = f64::INFINITY;
            self.settled[d as usize] = false;
        }
        self.touched.clear();
        self.reached.clear();
        self.heap.clear();
        self.nearest.clear();
    }

    #[inline]
    fn offer(&mut self, d: u32, cost: f64, k_mode: bool) {
        let b = &mut self.best[d as usize];
        if cost < *b {
            if *b == f64::INFINITY {
                self.reached.push(d);
            }
            *b = cost;
            if k_mode {
                self.nearest.push(Reverse((key(cost), d)));
            }
        }
    }

    /// Settle the destinations whose best cost is below `bound` (at most `bound` when
    /// `inclusive`) in (cost, destination) order, up to `k` in all; returns how many are
    /// settled.
    ///
    /// While nodes of cost `bound` remain to be scanned, a destination of cost `bound` is not
    /// yet settled: a lower destination row may still be offered at the same cost (through a
    /// zero-cost arc or an end on that node), and ties go to the lower row. Once the search
    /// is over, every offer is in and `inclusive` settles up to the limit.
    fn settle_up_to(&mut self, bound: f64, inclusive: bool, k: usize, out: &mut Vec<(u32, f64)>) -> usize {
        while out.len() < k {
            let Some(&Reverse((bits, d))) = self.nearest.peek() else { break };
            let c = unkey(bits);
            if c > bound || (c == bound && !inclusive) {
                break;
            }
            self.nearest.pop();
            if self.settled[d as usize] || self.best[d as usize] != c {
                continue; // a stale entry: the destination was improved later
            }
            self.settled[d as usize] = true;
            out.push((d, c));
        }
        out.len()
    }

    /// Dijkstra's label step: node `u` reached at cost `c` within `limit` and below its
    /// current label takes `c` (and a heap entry); a node reached for the first time is
    /// remembered for the next [`Workspace::reset`].
    #[inline]
    fn lower(&mut self, u: u32, c: f64, limit: f64) {
        if c <= limit && c < self.dist[u as usize] {
            if self.dist[u as usize] == f64::INFINITY {
                self.touched.push(u);
            }
            self.dist[u as usize] = c;
            self.heap.push(Reverse((key(c), u)));
        }
    }

    /// Every arc leaving node `u`, settled at cost `d`, offered to its head ([`Workspace::lower`]).
    #[inline]
    fn relax_from(&mut self, graph: &TravelGraph, u: u32, d: f64, limit: f64) {
        for a in graph.first[u as usize] as usize..graph.first[u as usize + 1] as usize {
            self.lower(graph.arc_head[a], d + graph.arc_cost[a], limit);
        }
    }

    /// A search from `spot` up to `limit`, without destinations: afterwards `dist` holds the
    /// cost of every node reached; returns those nodes.
    pub(crate) fn single_source(&mut self, graph: &TravelGraph, spot: Spot, limit: f64) -> Vec<u32> {
        self.reset();
        for (u, c) in graph.leave(spot).iter() {
            self.lower(u, c, limit);
        }
        while let Some(Reverse((bits, u))) = self.heap.pop() {
            let d = unkey(bits);
            if d > self.dist[u as usize] {
                continue;
            }
            self.relax_from(graph, u, d, limit);
        }
        self.touched.clone()
    }

    /// One search from `origin`: the destinations it reaches within `limit` (all, or the
    /// `k` cheapest), sorted by destination.
    fn search(
        &mut self,
        graph: &TravelGraph,
        targets: &Targets,
        spots: &[Spot],
        origin: Spot,
        limit: f64,
        k: Option<usize>,
    ) -> Vec<(u32, f64)> {
        self.reset();
        let k_mode = k.is_some();
        let k = k.unwrap_or(usize::MAX);
        if let Spot::OnEdge { edge, .. } = origin {
            for &(_, d) in targets.on(edge) {
                if let Some(c) = graph.direct(origin, spots[d as usize]) {
                    self.offer(d, c, k_mode);
                }
            }
        }
        for (u, c) in graph.leave(origin).iter() {
            self.lower(u, c, limit);
        }
        let mut chosen = Vec::new();
        while let Some(Reverse((bits, u))) = self.heap.pop() {
            let d = unkey(bits);
            if d > self.dist[u as usize] {
                continue; // stale heap entry
            }
            if k_mode && self.settle_up_to(d, false, k, &mut chosen) >= k {
                break;
            }
            for &(t, extra) in targets.at(u) {
                self.offer(t, d + extra, k_mode);
            }
            self.relax_from(graph, u, d, limit);
        }
        let mut out = if k_mode {
            self.settle_up_to(limit, true, k, &mut chosen);
            chosen
        } else {
            self.reached.iter().map(|&d| (d, self.best[d as usize])).filter(|&(_, c)| c <= limit).collect()
        };
        out.sort_unstable_by_key(|&(d, _)| d);
        out
    }
}

pub(crate) fn check_limit(limit: Option<f64>) -> Result<f64> {
    match limit {
        None => Ok(f64::INFINITY),
        Some(l) if l >= 0.0 => Ok(l),
        Some(l) => Err(Error::InvalidParameter { name: "limit", reason: format!("limit must be >= 0; got {l}") }),
    }
}

/// Shortest travel costs from every origin to every destination.
///
/// One Dijkstra search (Dijkstra 1959) per origin, in parallel over origins; a search stops
/// at `options.limit` and, with `options.k`, once its `k` cheapest destinations are settled
/// (a destination is settled when no unsettled node is cheaper than it, so no later path can
/// improve it). Travel starts and ends part-way along edges as [`TravelGraph::leave`] and
/// [`TravelGraph::arrive`] describe; two spots on one edge also connect along it.
///
/// # Errors
/// [`Error::InvalidParameter`] for a negative or NaN limit or `k == 0`.
///
/// # Runtime
/// O(A + N log N) per origin for N nodes and A arcs within the limit; parallel over origins.
pub fn travel_costs(
    graph: &TravelGraph,
    origins: &[Spot],
    destinations: &[Spot],
    options: &CostOptions,
) -> Result<CostRows> {
    let limit = check_limit(options.limit)?;
    if options.k == Some(0) {
        return Err(Error::InvalidParameter { name: "k", reason: "k must be at least 1; got 0".into() });
    }
    let targets = Targets::new(graph, destinations);
    let watch = &options.watch;
    watch.plan(origins.len() as u64);
    let rows: Vec<Vec<(u32, f64)>> = origins
        .par_iter()
        .map_init(
            || Workspace::new(graph.node_count(), destinations.len()),
            |ws, &o| {
                if watch.is_cancelled() {
                    // The caller drops a cancelled run's answer (see `Watch::finish`).
                    return Vec::new();
                }
                let row = ws.search(graph, &targets, destinations, o, limit, options.k);
                watch.advance(1);
                row
            },
        )
        .collect();
    let mut offsets = Vec::with_capacity(origins.len() + 1);
    offsets.push(0);
    for r in &rows {
        offsets.push(offsets.last().expect("non-empty") + r.len());
    }
    let total = *offsets.last().expect("non-empty");
    let mut columns = Vec::with_capacity(total);
    let mut costs = Vec::with_capacity(total);
    for r in rows {
        for (d, c) in r {
            columns.push(d);
            costs.push(c);
        }
    }
    Ok(CostRows { offsets, columns, costs })
}

/// Every node's cheapest site and the cost from it (one multi-source Dijkstra search:
/// all sites start at once). Ties go to the lower site row: labels are (cost, site) pairs
/// compared in that order, and an arc adds its cost and keeps the site, so Dijkstra's
/// argument holds for the pairs as for costs and each node ends with the least pair over
/// all sites. Unreached nodes (another component, beyond `limit`, or cut off by one-way
/// edges) keep cost `f64::INFINITY` and site `u32::MAX`.
pub(crate) fn label_nodes(graph: &TravelGraph, sites: &[Spot], limit: f64) -> (Vec<f64>, Vec<u32>) {
    let n = graph.node_count();
    let mut dist = vec![f64::INFINITY; n];
    let mut site = vec![u32::MAX; n];
    let mut heap = BinaryHeap::new();
    let better = |c: f64, s: u32, dist: f64, site: u32| c < dist || (c == dist && s < site);
    for (s, spot) in sites.iter().enumerate() {
        let s = s as u32;
        for (u, c) in graph.leave(*spot).iter() {
            if c <= limit && better(c, s, dist[u as usize], site[u as usize]) {
                dist[u as usize] = c;
                site[u as usize] = s;
                heap.push(Reverse((key(c), s, u)));
            }
        }
    }
    while let Some(Reverse((bits, s, u))) = heap.pop() {
        let d = unkey(bits);
        if d != dist[u as usize] || s != site[u as usize] {
            continue; // stale: the node was labelled with a smaller pair since
        }
        for a in graph.first[u as usize] as usize..graph.first[u as usize + 1] as usize {
            let v = graph.arc_head[a] as usize;
            let nd = d + graph.arc_cost[a];
            if nd <= limit && better(nd, s, dist[v], site[v]) {
                dist[v] = nd;
                site[v] = s;
                heap.push(Reverse((key(nd), s, v as u32)));
            }
        }
    }
    (dist, site)
}
