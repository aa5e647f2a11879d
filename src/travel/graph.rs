//! The travel graph: edges with a cost per direction, stored as a compressed sparse row
//! (CSR) list of directed arcs with 32-bit indices, and the weakly connected components.
//!
//! Memory (invariant, see [`TravelGraph::memory_bytes`]): 12 bytes per directed arc (head
//! `u32`, cost `f64`), 24 bytes per edge (tail, head `u32`; cost forward and backward
//! `f64`), 8 bytes per node (arc offset and component `u32`), plus the edge shapes (a copy of
//! the input coordinates) when the graph has geometry, and 24 more bytes per edge when some
//! shape is drawn by more than one edge ([`Twins`]).

use super::twins::Twins;
use crate::error::{Error, Result};
use crate::geometry::{distance, Point};
use crate::network::union_find::UnionFind;

/// Largest number of nodes, edges, arcs or shape vertices: indices are 32-bit.
pub const MAX_GRAPH_INDEX: usize = u32::MAX as usize - 1;

/// Which way an edge may be travelled.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OneWay {
    /// Both ways.
    Both,
    /// From tail to head only (the direction the line is drawn in).
    Forward,
    /// From head to tail only.
    Backward,
}

impl OneWay {
    /// The direction code used across the boundary: 0 both ways, 1 forward only, -1
    /// backward only; anything else is `None`.
    pub fn from_code(code: i64) -> Option<OneWay> {
        match code {
            0 => Some(OneWay::Both),
            1 => Some(OneWay::Forward),
            -1 => Some(OneWay::Backward),
            _ => None,
        }
    }
}

/// The shape of every edge: none (a graph of edge arrays without node coordinates), the
/// straight segment between its nodes' coordinates, or a polyline of its own.
#[derive(Debug, Clone)]
pub(crate) enum Shapes {
    None,
    Straight(Vec<Point>),
    Lines { offsets: Vec<u32>, coords: Vec<Point> },
}

/// One edge's shape, borrowed or built from its two node coordinates.
pub(crate) enum EdgeLine<'a> {
    Slice(&'a [Point]),
    Pair([Point; 2]),
}

impl EdgeLine<'_> {
    pub(crate) fn points(&self) -> &[Point] {
        match self {
            EdgeLine::Slice(s) => s,
            EdgeLine::Pair(p) => p,
        }
    }
}

impl AsRef<[Point]> for EdgeLine<'_> {
    fn as_ref(&self) -> &[Point] {
        self.points()
    }
}

/// Planar length of a polyline: the sum of its segment lengths, in order.
pub(crate) fn polyline_length(line: &[Point]) -> f64 {
    line.windows(2).map(|w| distance(w[0], w[1])).sum()
}

/// Length of a piece of a line as a graph measures it: planar, or (`geodesic`) metres on
/// the WGS84 ellipsoid (Karney 2013, through the geodesic family; NaN for coordinates that
/// are not longitude/latitude).
pub(crate) fn shape_length(path: &[Point], geodesic: bool) -> f64 {
    if geodesic {
        crate::geodesic::geodesic_length(path).unwrap_or(f64::NAN)
    } else {
        polyline_length(path)
    }
}

/// A street network ready for shortest-path searches.
///
/// Edges keep their input order and row numbers; an edge runs from `tail` to `head` (for a
/// line, in the direction it is drawn) and has a cost each way, `f64::INFINITY` where the
/// edge may not be travelled that way (one-way). Arcs out of node `u` are
/// `arc_head[first[u]..first[u + 1]]`, in edge order (deterministic searches).
#[derive(Debug, Clone)]
pub struct TravelGraph {
    pub(crate) nodes: usize,
    pub(crate) tail: Vec<u32>,
    pub(crate) head: Vec<u32>,
    pub(crate) forward: Vec<f64>,
    pub(crate) backward: Vec<f64>,
    pub(crate) first: Vec<u32>,
    pub(crate) arc_head: Vec<u32>,
    pub(crate) arc_cost: Vec<f64>,
    pub(crate) component: Vec<u32>,
    pub(crate) components: usize,
    pub(crate) shapes: Shapes,
    /// Per node, whether it is the end of exactly one edge (a dangling end).
    pub(crate) dangling: usize,
    /// The input row of every edge when lines were split where they cross or rows held
    /// several parts (empty: edge `e` is input row `e`).
    pub(crate) source_line: Vec<u32>,
    /// Whether coordinates are longitude/latitude (degrees) and lengths geodesic metres on
    /// the WGS84 ellipsoid.
    pub(crate) geodesic: bool,
    /// Edges drawn along one shape, and the cheapest costs along each shape.
    pub(crate) twins: Twins,
}

pub(crate) fn check_cost(argument: &'static str, row: usize, value: f64) -> Result<()> {
    if value.is_nan() || value < 0.0 || value == f64::INFINITY {
        return Err(Error::InvalidEdge {
            argument,
            row,
            reason: format!("cost {value} is not allowed; every cost must be finite and >= 0"),
        });
    }
    Ok(())
}

impl TravelGraph {
    /// A graph from edge arrays: edge `i` runs from node `tail[i]` to node `head[i]` with
    /// cost `cost[i]` forward and `reverse_cost[i]` (default: `cost[i]`) backward, restricted
    /// by `one_way[i]`. `nodes` is the number of nodes (at least one more than the largest
    /// index); `coordinates`, when given, holds one point per node and makes each edge the
    /// straight segment between its nodes (so points can be snapped to it).
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] when the arrays disagree in length; [`Error::InvalidEdge`]
    /// naming the row of a node index out of range, a NaN, infinite or negative cost, or an
    /// unknown one-way code; [`Error::NonFiniteCoordinate`] for a bad node coordinate;
    /// [`Error::InvalidParameter`] naming `nodes` when it disagrees with the coordinates'
    /// count, and beyond 32-bit indices.
    pub fn from_edges(
        tail: &[i64],
        head: &[i64],
        cost: &[f64],
        reverse_cost: Option<&[f64]>,
        one_way: Option<&[i64]>,
        nodes: Option<usize>,
        coordinates: Option<&[Point]>,
    ) -> Result<TravelGraph> {
        let m = tail.len();
        for (argument, len) in [("head", head.len()), ("cost", cost.len())]
            .into_iter()
            .chain(reverse_cost.map(|r| ("reverse_cost", r.len())))
            .chain(one_way.map(|o| ("one_way", o.len())))
        {
            if len != m {
                return Err(Error::LengthMismatch { argument, expected: m, got: len });
            }
        }
        let largest = tail.iter().chain(head).copied().max().unwrap_or(-1);
        let n = match (nodes, coordinates) {
            // Both given, they must agree: one coordinate per node (a count that differs
            // was dropped without a word before).
            (Some(n), Some(c)) if n != c.len() => {
                return Err(Error::InvalidParameter {
                    name: "nodes",
                    reason: format!("{n} given, but coordinates hold {} points (one per node)", c.len()),
                })
            }
            (_, Some(c)) => c.len(),
            (Some(n), None) => n,
            (None, None) => (largest + 1).max(0) as usize,
        };
        if n > MAX_GRAPH_INDEX || 2 * m > MAX_GRAPH_INDEX {
            return Err(Error::InvalidParameter {
                name: "tail",
                reason: format!("{n} nodes and {m} edges exceed the 32-bit indices of the graph"),
            });
        }
        if let Some(c) = coordinates {
            crate::geometry::validate_points("nodes", c, 0)?;
        }
        let mut t32 = Vec::with_capacity(m);
        let mut h32 = Vec::with_capacity(m);
        for (row, (&a, &b)) in tail.iter().zip(head).enumerate() {
            for (argument, v) in [("tail", a), ("head", b)] {
                if v < 0 || v as usize >= n {
                    return Err(Error::InvalidEdge {
                        argument,
                        row,
                        reason: format!("node {v} is out of range (there are {n} nodes, numbered from 0)"),
                    });
                }
            }
            t32.push(a as u32);
            h32.push(b as u32);
        }
        let shapes = match coordinates {
            Some(c) => Shapes::Straight(c.to_vec()),
            None => Shapes::None,
        };
        Self::assemble(n, t32, h32, cost, reverse_cost, one_way, shapes)
    }

    /// Check costs and directions, then lay out the arcs (CSR) and the components.
    pub(crate) fn assemble(
        nodes: usize,
        tail: Vec<u32>,
        head: Vec<u32>,
        cost: &[f64],
        reverse_cost: Option<&[f64]>,
        one_way: Option<&[i64]>,
        shapes: Shapes,
    ) -> Result<TravelGraph> {
        let m = tail.len();
        let mut forward = Vec::with_capacity(m);
        let mut backward = Vec::with_capacity(m);
        for row in 0..m {
            let way = match one_way {
                Some(o) => OneWay::from_code(o[row]).ok_or_else(|| Error::InvalidEdge {
                    argument: "one_way",
                    row,
                    reason: format!(
                        "unknown direction {}; expected 0 (both ways), 1 (forward only) or -1 (backward only)",
                        o[row]
                    ),
                })?,
                None => OneWay::Both,
            };
            // A cost is checked only where the edge may be travelled that way: a one-way
            // street's column for the other way is often left empty (NaN) in data.
            if way != OneWay::Backward {
                check_cost("cost", row, cost[row])?;
            }
            let back = match reverse_cost {
                Some(r) => {
                    if way != OneWay::Forward {
                        check_cost("reverse_cost", row, r[row])?;
                    }
                    r[row]
                }
                None => cost[row],
            };
            if way == OneWay::Backward && reverse_cost.is_none() {
                // Backward only, priced by `cost` (no reverse column): that cost is travelled.
                check_cost("cost", row, cost[row])?;
            }
            // `+ 0.0` turns a cost of -0.0 (allowed: it equals 0) into +0.0: searches order
            // costs by their bits, where the sign bit put -0.0 after every positive cost.
            forward.push(if way == OneWay::Backward { f64::INFINITY } else { cost[row] + 0.0 });
            backward.push(if way == OneWay::Forward { f64::INFINITY } else { back + 0.0 });
        }
        // No path may cost more than a float holds: a cheapest path passes each edge at most
        // once, plus parts of the edges it starts and ends on, so a quarter of the largest
        // float over all edges bounds every cost (beyond it sums overflowed to infinity and the
        // pair read as unreachable).
        let allowed = |c: f64| if c.is_finite() { c } else { 0.0 };
        let total: f64 = forward.iter().zip(&backward).map(|(&f, &b)| allowed(f).max(allowed(b))).sum();
        if !(total <= f64::MAX / 4.0) {
            return Err(Error::InvalidParameter {
                name: "cost",
                reason: format!(
                    "the edge costs add up to {total:e}, beyond a quarter of the largest float (about 4.5e307), \
                     so a path's cost could overflow; give them in a larger unit"
                ),
            });
        }
        // CSR by counting: arcs out of each node, in edge order.
        let mut first = vec![0u32; nodes + 1];
        let mut degree = vec![0u32; nodes];
        for e in 0..m {
            if forward[e].is_finite() {
                first[tail[e] as usize + 1] += 1;
            }
            if backward[e].is_finite() {
                first[head[e] as usize + 1] += 1;
            }
            degree[tail[e] as usize] += 1;
            degree[head[e] as usize] += 1;
        }
        for u in 0..nodes {
            first[u + 1] += first[u];
        }
        let arcs = first[nodes] as usize;
        let mut arc_head = vec![0u32; arcs];
        let mut arc_cost = vec![0.0f64; arcs];
        let mut fill: Vec<u32> = first[..nodes].to_vec();
        for e in 0..m {
            let (a, b) = (tail[e] as usize, head[e] as usize);
            if forward[e].is_finite() {
                let k = fill[a] as usize;
                arc_head[k] = b as u32;
                arc_cost[k] = forward[e];
                fill[a] += 1;
            }
            if backward[e].is_finite() {
                let k = fill[b] as usize;
                arc_head[k] = a as u32;
                arc_cost[k] = backward[e];
                fill[b] += 1;
            }
        }
        // Weakly connected components (union–find, Tarjan 1975), numbered by first node.
        let mut sets = UnionFind::new(nodes);
        for e in 0..m {
            sets.union(tail[e] as usize, head[e] as usize);
        }
        let mut component = vec![u32::MAX; nodes];
        let mut number = vec![u32::MAX; nodes];
        let mut components = 0u32;
        for (u, c) in component.iter_mut().enumerate() {
            let root = sets.find(u);
            if number[root] == u32::MAX {
                number[root] = components;
                components += 1;
            }
            *c = number[root];
        }
        let dangling = degree.iter().filter(|&&d| d == 1).count();
        let mut graph = TravelGraph {
            nodes,
            tail,
            head,
            forward,
            backward,
            first,
            arc_head,
            arc_cost,
            component,
            components: components as usize,
            shapes,
            dangling,
            source_line: Vec::new(),
            geodesic: false,
            twins: Twins::default(),
        };
        graph.twins = Twins::find(&graph);
        Ok(graph)
    }

    /// The input row of every edge when the lines were split where they cross
    /// ([`LineOptions::split_crossings`](super::LineOptions)) or rows held several parts
    /// ([`LineOptions::parts`](super::LineOptions)); `None` when edge `e` is input row `e`.
    pub fn edge_lines(&self) -> Option<&[u32]> {
        (!self.source_line.is_empty()).then_some(&self.source_line[..])
    }

    /// Number of nodes.
    pub fn node_count(&self) -> usize {
        self.nodes
    }

    /// Number of edges (input rows).
    pub fn edge_count(&self) -> usize {
        self.tail.len()
    }

    /// Number of directed arcs (two per two-way edge, one per one-way edge).
    pub fn arc_count(&self) -> usize {
        self.arc_head.len()
    }

    /// Number of weakly connected components (isolated nodes count as one each).
    pub fn component_count(&self) -> usize {
        self.components
    }

    /// Component of every node.
    pub fn node_components(&self) -> &[u32] {
        &self.component
    }

    /// Component of every edge (that of its tail).
    pub fn edge_components(&self) -> Vec<u32> {
        self.tail.iter().map(|&t| self.component[t as usize]).collect()
    }

    /// Nodes that end exactly one edge (dead ends, or line ends that joined nothing).
    pub fn dangling_ends(&self) -> usize {
        self.dangling
    }

    /// Tail and head node of every edge.
    pub fn ends(&self) -> (&[u32], &[u32]) {
        (&self.tail, &self.head)
    }

    /// Cost of every edge forward and backward (`f64::INFINITY` where not allowed).
    pub fn edge_costs(&self) -> (&[f64], &[f64]) {
        (&self.forward, &self.backward)
    }

    /// Coordinates of every node, when the graph has geometry.
    pub fn node_coordinates(&self) -> Option<Vec<Point>> {
        match &self.shapes {
            Shapes::None => None,
            Shapes::Straight(c) => Some(c.clone()),
            Shapes::Lines { .. } => {
                let mut out = vec![[f64::NAN, f64::NAN]; self.nodes];
                for e in 0..self.edge_count() {
                    let line = self.line(e).expect("graph has shapes");
                    let p = line.points();
                    out[self.tail[e] as usize] = p[0];
                    out[self.head[e] as usize] = p[p.len() - 1];
                }
                Some(out)
            }
        }
    }

    /// Whether coordinates are longitude/latitude and lengths WGS84 geodesic metres.
    pub fn is_geodesic(&self) -> bool {
        self.geodesic
    }

    /// Length of a piece of an edge's shape: planar, or geodesic metres on the WGS84
    /// ellipsoid (Karney 2013, through the geodesic family) for a geodesic graph.
    pub(crate) fn path_length(&self, path: &[Point]) -> f64 {
        shape_length(path, self.geodesic)
    }

    /// The point at share `t` of the segment `a b` of an edge's shape, as the graph draws
    /// it: straight in the coordinates, and for a geodesic graph the shorter way round in
    /// longitude (across the antimeridian where that is shorter), its longitude in
    /// [-180, 180]. The ends at shares 0 and 1 exactly.
    pub(crate) fn point_on_segment(&self, a: Point, b: Point, t: f64) -> Point {
        if self.geodesic {
            return super::lonlat::on_segment(a, b, t);
        }
        if t <= 0.0 {
            a
        } else if t >= 1.0 {
            b
        } else {
            [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])]
        }
    }

    /// Whether the edges have shapes (points can be snapped).
    pub fn has_geometry(&self) -> bool {
        !matches!(self.shapes, Shapes::None)
    }

    /// The shape of edge `e`, when the graph has geometry.
    pub(crate) fn line(&self, e: usize) -> Option<EdgeLine<'_>> {
        match &self.shapes {
            Shapes::None => None,
            Shapes::Straight(c) => Some(EdgeLine::Pair([c[self.tail[e] as usize], c[self.head[e] as usize]])),
            Shapes::Lines { offsets, coords } => {
                Some(EdgeLine::Slice(&coords[offsets[e] as usize..offsets[e + 1] as usize]))
            }
        }
    }

    /// Bytes held by the graph: arcs, edges, node offsets and components, and the shapes
    /// (returned separately: they copy the input coordinates).
    pub fn memory_bytes(&self) -> (usize, usize) {
        let graph = self.arc_head.len() * 4
            + self.arc_cost.len() * 8
            + (self.tail.len() + self.head.len()) * 4
            + (self.forward.len() + self.backward.len()) * 8
            + (self.first.len() + self.component.len()) * 4
            + self.twins.memory_bytes();
        let shapes = match &self.shapes {
            Shapes::None => 0,
            Shapes::Straight(c) => c.len() * 16,
            Shapes::Lines { offsets, coords } => offsets.len() * 4 + coords.len() * 16,
        };
        (graph, shapes)
    }

    /// The invariant checker: CSR offsets non-decreasing and complete, every arc matches an
    /// edge direction of the same cost, components agree across every edge.
    pub fn check(&self) -> std::result::Result<(), String> {
        if self.first.len() != self.nodes + 1 || self.first[self.nodes] as usize != self.arc_head.len() {
            return Err("arc offsets do not cover the arcs".into());
        }
        if self.first.windows(2).any(|w| w[0] > w[1]) {
            return Err("arc offsets decrease".into());
        }
        let expected: usize = self.forward.iter().chain(&self.backward).filter(|c| c.is_finite()).count();
        if expected != self.arc_head.len() {
            return Err(format!("{} arcs for {expected} travellable edge directions", self.arc_head.len()));
        }
        for u in 0..self.nodes {
            for k in self.first[u] as usize..self.first[u + 1] as usize {
                let v = self.arc_head[k] as usize;
                let c = self.arc_cost[k];
                let found = (0..self.edge_count()).any(|e| {
                    (self.tail[e] as usize == u && self.head[e] as usize == v && self.forward[e] == c)
                        || (self.head[e] as usize == u && self.tail[e] as usize == v && self.backward[e] == c)
                });
                if !found {
                    return Err(format!("arc {u} -> {v} of cost {c} matches no edge"));
                }
            }
        }
        for e in 0..self.edge_count() {
            if self.component[self.tail[e] as usize] != self.component[self.head[e] as usize] {
                return Err(format!("edge {e} joins two components"));
            }
        }
        Ok(())
    }
}
