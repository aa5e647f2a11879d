//! Edges cut into pieces by who reaches them cheapest: along an edge the travel cost from a
//! site is linear (entering from the tail, from the head, or from a site on the edge
//! itself), so the cheapest cost is the lower envelope of a few linear functions, cut where
//! two meet and where the cost passes the limit.

use rayon::prelude::*;

use super::graph::TravelGraph;
use super::search::{check_limit, label_nodes, Workspace};
use super::snap::Spot;
use crate::error::Result;
use crate::geometry::Point;

/// A part of an edge reached from one site: from `start` to `end` (shares of the edge's
/// length from its tail, `start < end`), with the travel cost at each end.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EdgePiece {
    /// The site (row) that reaches this piece cheapest.
    pub site: u32,
    /// The edge (input row).
    pub edge: u32,
    /// Where the piece starts, as a share of the edge's length from its tail.
    pub start: f64,
    /// Where it ends.
    pub end: f64,
    /// Travel cost from the site to the piece's start.
    pub cost_start: f64,
    /// Travel cost from the site to the piece's end.
    pub cost_end: f64,
}

/// Pieces and their shapes: piece `i`'s line is `coords[offsets[i]..offsets[i + 1]]` (empty
/// when the graph has no geometry).
#[derive(Debug, Clone, Default)]
pub struct Pieces {
    /// The pieces, by site then edge (reach) or by edge (catchments).
    pub pieces: Vec<EdgePiece>,
    /// Shape offsets, `pieces + 1` entries.
    pub offsets: Vec<usize>,
    /// Shape coordinates.
    pub coords: Vec<Point>,
}

/// Cost along an edge from one site: `c0 + slope · t` for `t` in `[lo, hi]`.
#[derive(Debug, Clone, Copy)]
struct Linear {
    site: u32,
    lo: f64,
    hi: f64,
    c0: f64,
    slope: f64,
}

impl Linear {
    fn at(&self, t: f64) -> f64 {
        self.c0 + self.slope * t
    }
}

/// The linear costs along edge `e` given node costs and labels and the sites on the edge.
fn linears(graph: &TravelGraph, e: usize, tail: (f64, u32), head: (f64, u32), on_edge: &[(u32, f64)]) -> Vec<Linear> {
    // A place on the edge is reached along any edge drawn along its shape ([`super::twins`]).
    let (cf, cb) = graph.along_costs(e);
    let mut out = Vec::with_capacity(2 + 2 * on_edge.len());
    if cf.is_finite() && tail.0.is_finite() {
        out.push(Linear { site: tail.1, lo: 0.0, hi: 1.0, c0: tail.0, slope: cf });
    }
    if cb.is_finite() && head.0.is_finite() {
        out.push(Linear { site: head.1, lo: 0.0, hi: 1.0, c0: head.0 + cb, slope: -cb });
    }
    for &(s, f) in on_edge {
        if cf.is_finite() {
            out.push(Linear { site: s, lo: f, hi: 1.0, c0: -f * cf, slope: cf });
        }
        if cb.is_finite() {
            out.push(Linear { site: s, lo: 0.0, hi: f, c0: f * cb, slope: -cb });
        }
    }
    out
}

/// The lower envelope of `fs` on [0, 1], where it is at most `limit`, as pieces of edge `e`.
fn envelope(e: u32, fs: &[Linear], limit: f64, out: &mut Vec<EdgePiece>) {
    if fs.is_empty() {
        return;
    }
    let mut cuts = vec![0.0, 1.0];
    for (i, f) in fs.iter().enumerate() {
        cuts.push(f.lo);
        cuts.push(f.hi);
        if f.slope != 0.0 && limit.is_finite() {
            cuts.push((limit - f.c0) / f.slope);
        }
        for g in &fs[i + 1..] {
            if f.slope != g.slope {
                cuts.push((g.c0 - f.c0) / (f.slope - g.slope));
            }
        }
    }
    cuts.retain(|t| (0.0..=1.0).contains(t));
    cuts.sort_by(f64::total_cmp);
    cuts.dedup();
    let first = out.len();
    // The function behind the last piece pushed: only pieces of one function merge.
    let mut last_function = usize::MAX;
    for w in cuts.windows(2) {
        let (a, b) = (w[0], w[1]);
        let mid = 0.5 * (a + b);
        let best = fs
            .iter()
            .enumerate()
            .filter(|(_, f)| f.lo <= mid && mid <= f.hi)
            .min_by(|(_, f), (_, g)| f.at(mid).total_cmp(&g.at(mid)).then(f.site.cmp(&g.site)));
        let Some((index, f)) = best else { continue };
        if f.at(mid) > limit {
            continue;
        }
        let (ca, cb) = (f.at(a).max(0.0), f.at(b).max(0.0));
        if let Some(last) = out[first..].last_mut() {
            if last_function == index && last.end == a {
                last.end = b;
                last.cost_end = cb;
                continue;
            }
        }
        out.push(EdgePiece { site: f.site, edge: e, start: a, end: b, cost_start: ca, cost_end: cb });
        last_function = index;
    }
}

/// The part of `line` (an edge of `graph`) between shares `a < b` of its length, measured as
/// the graph measures its edges: planar, or WGS84 geodesic metres for a geodesic graph (the
/// shares are shares of that length, as the costs and attachments are).
fn substring(graph: &TravelGraph, line: &[Point], a: f64, b: f64, out: &mut Vec<Point>) {
    let lengths: Vec<f64> = line.windows(2).map(|w| graph.path_length(w)).collect();
    let total: f64 = lengths.iter().sum();
    let (from, to) = (a * total, b * total);
    let mut walked = 0.0;
    let start = out.len();
    for (w, &len) in line.windows(2).zip(&lengths) {
        let (s0, s1) = (walked, walked + len);
        if s1 >= from && s0 <= to {
            let u0 =
                if len > 0.0 { share_of_segment(graph, w[0], w[1], (from - s0).clamp(0.0, len), len) } else { 0.0 };
            let u1 = if len > 0.0 { share_of_segment(graph, w[0], w[1], (to - s0).clamp(0.0, len), len) } else { 1.0 };
            let p = graph.point_on_segment(w[0], w[1], u0);
            if out.len() == start {
                out.push(p);
            }
            let q = graph.point_on_segment(w[0], w[1], u1);
            if out.last() != Some(&q) {
                out.push(q);
            }
        }
        walked = s1;
    }
    if out.len() - start == 1 {
        let p = out[start];
        out.push(p);
    }
}

/// The share `u` of the segment `p q` (drawn straight in the coordinates) whose point lies
/// `target` from `p`, of `len` in all: `target / len` on the plane; on the ellipsoid the
/// geodesic length from `p` is not linear in `u` (a degree of longitude shrinks with the
/// latitude), so Newton steps on it from that guess (its slope is about `len`).
fn share_of_segment(graph: &TravelGraph, p: Point, q: Point, target: f64, len: f64) -> f64 {
    let mut u = (target / len).clamp(0.0, 1.0);
    if graph.is_geodesic() && u > 0.0 && u < 1.0 {
        for _ in 0..8 {
            let step = (target - graph.path_length(&[p, graph.point_on_segment(p, q, u)])) / len;
            u = (u + step).clamp(0.0, 1.0);
            if !(step.abs() > 1e-15) {
                break;
            }
        }
    }
    u
}

fn with_shapes(graph: &TravelGraph, pieces: Vec<EdgePiece>) -> Pieces {
    let mut offsets = Vec::with_capacity(pieces.len() + 1);
    let mut coords = Vec::new();
    offsets.push(0);
    for p in &pieces {
        if let Some(line) = graph.line(p.edge as usize) {
            substring(graph, line.points(), p.start, p.end, &mut coords);
        }
        offsets.push(coords.len());
    }
    Pieces { pieces, offsets, coords }
}

/// Sites on each edge, as (edge, site, fraction), sorted.
fn sites_by_edge(sites: &[Spot]) -> Vec<(u32, u32, f64)> {
    let mut out: Vec<(u32, u32, f64)> = sites
        .iter()
        .enumerate()
        .filter_map(|(s, spot)| match *spot {
            Spot::OnEdge { edge, fraction } => Some((edge, s as u32, fraction)),
            Spot::Node(_) => None,
        })
        .collect();
    out.sort_by_key(|a| (a.0, a.1));
    out
}

/// The sites on edge `e` with their fractions along it: those on its shape's representative
/// edge ([`super::twins`]), read backwards when `e` is drawn the other way.
fn on(graph: &TravelGraph, by_edge: &[(u32, u32, f64)], e: u32) -> Vec<(u32, f64)> {
    let (r, reversed) = graph.shape_edge(e);
    let lo = by_edge.partition_point(|x| x.0 < r);
    let hi = by_edge.partition_point(|x| x.0 <= r);
    by_edge[lo..hi].iter().map(|x| (x.1, if reversed { 1.0 - x.2 } else { x.2 })).collect()
}

/// Every edge cut where the catchments of two sites meet: each piece is reached cheapest
/// from its site (one multi-source search), with the cost at both ends. Parts no site reaches
/// within `limit` are left out.
pub fn catchment_pieces(graph: &TravelGraph, sites: &[Spot], limit: Option<f64>) -> Result<Pieces> {
    let limit = check_limit(limit)?;
    let (dist, site) = label_nodes(graph, sites, limit);
    let by_edge = sites_by_edge(sites);
    let pieces: Vec<EdgePiece> = (0..graph.edge_count())
        .into_par_iter()
        .with_min_len(4096)
        .flat_map_iter(|e| {
            let (a, b) = (graph.tail[e] as usize, graph.head[e] as usize);
            let fs = linears(graph, e, (dist[a], site[a]), (dist[b], site[b]), &on(graph, &by_edge, e as u32));
            let mut out = Vec::new();
            envelope(e as u32, &fs, limit, &mut out);
            out
        })
        .collect();
    Ok(with_shapes(graph, pieces))
}

/// For every site, the parts of the network within `limit` of it, each piece with its cost
/// at both ends (one limited search per site, in parallel).
pub fn reach(graph: &TravelGraph, sites: &[Spot], limit: f64) -> Result<Pieces> {
    let limit = check_limit(Some(limit))?;
    // Edges at each node (transient): where a search that reached the node may continue.
    let n = graph.node_count();
    let mut first = vec![0u32; n + 1];
    for e in 0..graph.edge_count() {
        first[graph.tail[e] as usize + 1] += 1;
        first[graph.head[e] as usize + 1] += 1;
    }
    for u in 0..n {
        first[u + 1] += first[u];
    }
    let mut fill = first.clone();
    let mut incident = vec![0u32; first[n] as usize];
    for e in 0..graph.edge_count() {
        for u in [graph.tail[e] as usize, graph.head[e] as usize] {
            incident[fill[u] as usize] = e as u32;
            fill[u] += 1;
        }
    }
    let per_site: Vec<Vec<EdgePiece>> = sites
        .par_iter()
        .enumerate()
        .map_init(
            || Workspace::new(n, 0),
            |ws, (s, &spot)| {
                let touched = ws.single_source(graph, spot, limit);
                let mut edges: Vec<u32> = touched
                    .iter()
                    .flat_map(|&u| &incident[first[u as usize] as usize..first[u as usize + 1] as usize])
                    .copied()
                    .collect();
                let own = match spot {
                    Spot::OnEdge { edge, fraction } => {
                        // The site lies on every edge drawn along its edge's shape.
                        let t = graph.tail[edge as usize] as usize;
                        edges.extend(
                            incident[first[t] as usize..first[t + 1] as usize]
                                .iter()
                                .filter(|&&x| graph.shape_edge(x).0 == edge),
                        );
                        edges.push(edge);
                        Some((edge, fraction))
                    }
                    Spot::Node(_) => None,
                };
                edges.sort_unstable();
                edges.dedup();
                let mut out = Vec::new();
                for e in edges {
                    let (a, b) = (graph.tail[e as usize] as usize, graph.head[e as usize] as usize);
                    let here: Vec<(u32, f64)> = own
                        .and_then(|(edge, fraction)| match graph.shape_edge(e) {
                            (r, reversed) if r == edge => {
                                Some((s as u32, if reversed { 1.0 - fraction } else { fraction }))
                            }
                            _ => None,
                        })
                        .into_iter()
                        .collect();
                    let fs = linears(graph, e as usize, (ws.dist[a], s as u32), (ws.dist[b], s as u32), &here);
                    envelope(e, &fs, limit, &mut out);
                }
                out
            },
        )
        .collect();
    Ok(with_shapes(graph, per_site.into_iter().flatten().collect()))
}
