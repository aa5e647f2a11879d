//! Edges drawn along one shape. Street data often draws a two-way street as two one-way
//! records, one each way, over the same line, and sometimes repeats a line with another cost.
//! A point on such a shape lies on every edge drawn along it: travel from it may leave by any
//! of them. So every point attached to a shape is placed on the shape's lowest-numbered edge
//! (its *representative*), and travel part-way along the shape costs the cheapest of its
//! edges in each direction.
//!
//! Invariant: `of[e] = (r, reversed)` with `r <= e`, `of[r] = (r, false)`; edges `e` and `r`
//! join the same two nodes and their shapes are equal point for point (`reversed`: equal
//! read backwards). `along[r]` is the least cost over the shape's edges in `r`'s drawn
//! direction, then against it.

use super::graph::{Shapes, TravelGraph};

/// The edges that share a shape, and the cheapest costs along each shape.
#[derive(Debug, Clone, Default)]
pub(crate) struct Twins {
    /// Per edge: its shape's representative and whether the edge is drawn the other way.
    /// Empty when no two edges share a shape.
    of: Vec<(u32, bool)>,
    /// Per edge: the least cost forward and backward (in the edge's own direction) over the
    /// edges of its shape. Empty with `of`.
    along: Vec<(f64, f64)>,
}

impl Twins {
    /// The shapes shared by more than one edge of `graph` (edges joining the same two nodes
    /// with equal shapes). Loops are left alone: a loop drawn twice is rare, and which of
    /// its two readings another loop repeats is not decided by its ends.
    pub(crate) fn find(graph: &TravelGraph) -> Twins {
        let m = graph.edge_count();
        if matches!(graph.shapes, Shapes::None) || m < 2 {
            return Twins::default();
        }
        // Edges by their pair of end nodes, then number: candidates sit next to each other.
        let pair = |e: usize| {
            let (a, b) = (graph.tail[e], graph.head[e]);
            (a.min(b), a.max(b))
        };
        let mut order: Vec<u32> = (0..m as u32).filter(|&e| graph.tail[e as usize] != graph.head[e as usize]).collect();
        order.sort_unstable_by_key(|&e| (pair(e as usize), e));
        let mut of: Vec<(u32, bool)> = (0..m as u32).map(|e| (e, false)).collect();
        let mut shared = false;
        let mut start = 0;
        while start < order.len() {
            let mut end = start + 1;
            while end < order.len() && pair(order[end] as usize) == pair(order[start] as usize) {
                end += 1;
            }
            // Within one pair of nodes: each edge joins the first earlier edge of equal shape.
            for k in start + 1..end {
                let e = order[k] as usize;
                let line = graph.line(e).expect("graph has shapes");
                let line = line.points();
                for &r in &order[start..k] {
                    let r = r as usize;
                    if of[r].0 as usize != r {
                        continue;
                    }
                    let other = graph.line(r).expect("graph has shapes");
                    let other = other.points();
                    let reversed = graph.tail[e] != graph.tail[r];
                    let equal = line.len() == other.len()
                        && if reversed { line.iter().eq(other.iter().rev()) } else { line == other };
                    if equal {
                        of[e] = (r as u32, reversed);
                        shared = true;
                        break;
                    }
                }
            }
            start = end;
        }
        if !shared {
            return Twins::default();
        }
        let mut along: Vec<(f64, f64)> = (0..m).map(|e| (graph.forward[e], graph.backward[e])).collect();
        for (e, &(r, reversed)) in of.iter().enumerate() {
            let r = r as usize;
            if r != e {
                let (f, b) = if reversed {
                    (graph.backward[e], graph.forward[e])
                } else {
                    (graph.forward[e], graph.backward[e])
                };
                along[r] = (along[r].0.min(f), along[r].1.min(b));
            }
        }
        for (e, &(r, reversed)) in of.iter().enumerate() {
            let (f, b) = along[r as usize];
            along[e] = if reversed { (b, f) } else { (f, b) };
        }
        Twins { of, along }
    }

    /// Bytes held: 24 per edge when some shape is shared, else none.
    pub(crate) fn memory_bytes(&self) -> usize {
        self.of.len() * 8 + self.along.len() * 16
    }
}

impl TravelGraph {
    /// The representative edge of `e`'s shape and whether `e` is drawn the other way
    /// (`(e, false)` for an edge whose shape no other edge shares).
    pub(crate) fn shape_edge(&self, e: u32) -> (u32, bool) {
        self.twins.of.get(e as usize).copied().unwrap_or((e, false))
    }

    /// The cost of the whole of edge `e`'s shape forward and backward (in `e`'s drawn
    /// direction) over the edges drawn along it; `f64::INFINITY` where none may be
    /// travelled that way. Travel part-way along an edge costs a share of these.
    pub(crate) fn along_costs(&self, e: usize) -> (f64, f64) {
        match self.twins.along.get(e) {
            Some(&c) => c,
            None => (self.forward[e], self.backward[e]),
        }
    }
}
