//! Attaching points to the network: each point goes to the nearest point of the nearest
//! edge, found in an R*-tree over the edges' segments (Beckmann et al. 1990, bulk-loaded by
//! `rstar`).

use rayon::prelude::*;
use rstar::primitives::{GeomWithData, Line};
use rstar::RTree;

use super::graph::TravelGraph;
use crate::error::{Error, Result};
use crate::geometry::{distance, validate_points, Point};

/// Where travel starts or ends: at a node, or part-way along an edge.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Spot {
    /// At node `0`.
    Node(u32),
    /// On edge `edge`, at `fraction` (strictly between 0 and 1) of its length from its
    /// tail. Costs along the edge are in proportion to length (uniform speed).
    OnEdge {
        /// The edge (input row).
        edge: u32,
        /// Share of the edge's length from its tail.
        fraction: f64,
    },
}

/// A point attached to the network.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Snap {
    /// Where travel starts or ends.
    pub spot: Spot,
    /// The edge the point went to.
    pub edge: u32,
    /// Length along the edge's shape from its tail to the attachment point.
    pub along: f64,
    /// Distance from the point to the attachment point (the off-network gap; not a cost).
    pub gap: f64,
    /// The attachment point on the edge.
    pub on_edge: Point,
}

type Segment = GeomWithData<Line<Point>, (u32, u32)>;

/// An R*-tree over every segment of every edge, built once per call.
pub struct SegmentIndex<'g> {
    graph: &'g TravelGraph,
    tree: RTree<Segment>,
}

impl<'g> SegmentIndex<'g> {
    /// The index of `graph`'s edge shapes (zero-length segments left out).
    ///
    /// # Errors
    /// [`Error::InvalidParameter`] when the graph has no geometry (edge arrays without node
    /// coordinates) or no segment of positive length.
    pub fn new(graph: &'g TravelGraph) -> Result<SegmentIndex<'g>> {
        if !graph.has_geometry() {
            return Err(Error::InvalidParameter {
                name: "points",
                reason: "the graph has no coordinates, so points cannot be attached to it; build it with node \
                         coordinates or from lines, or give node numbers"
                    .into(),
            });
        }
        let mut segments = Vec::new();
        for e in 0..graph.edge_count() {
            let line = graph.line(e).expect("graph has geometry");
            for (k, w) in line.points().windows(2).enumerate() {
                if w[0] != w[1] {
                    segments.push(GeomWithData::new(Line::new(w[0], w[1]), (e as u32, k as u32)));
                }
            }
        }
        if segments.is_empty() {
            return Err(Error::InvalidParameter {
                name: "points",
                reason: "every edge of the graph has zero length, so points cannot be attached to it".into(),
            });
        }
        Ok(SegmentIndex { graph, tree: RTree::bulk_load(segments) })
    }

    /// Attach one point.
    pub fn snap(&self, p: Point) -> Snap {
        let nearest = self.tree.nearest_neighbor(p).expect("index is not empty");
        let (edge, k) = nearest.data;
        let on_edge = nearest.geom().nearest_point(&p);
        let line = self.graph.line(edge as usize).expect("graph has geometry");
        let pts = line.points();
        let before: f64 = pts[..=k as usize].windows(2).map(|w| distance(w[0], w[1])).sum();
        let along = before + distance(pts[k as usize], on_edge);
        let length = line.length();
        let spot = if along <= 0.0 || length <= 0.0 {
            Spot::Node(self.graph.tail[edge as usize])
        } else if along >= length {
            Spot::Node(self.graph.head[edge as usize])
        } else {
            Spot::OnEdge { edge, fraction: along / length }
        };
        Snap { spot, edge, along: along.min(length), gap: distance(p, on_edge), on_edge }
    }
}

/// Attach every point of `points` to `graph`; `argument` names them in errors.
///
/// # Errors
/// [`Error::NonFiniteCoordinate`] for a bad point; [`Error::BeyondGap`] naming the first
/// point farther than `max_gap` from every edge; those of [`SegmentIndex::new`].
///
/// # Runtime
/// O(S log S) to index S segments, then O(log S) per point on average, parallel over points.
pub fn snap_points(
    graph: &TravelGraph,
    points: &[Point],
    argument: &'static str,
    max_gap: Option<f64>,
) -> Result<Vec<Snap>> {
    validate_points(argument, points, 0)?;
    if let Some(g) = max_gap {
        if !(g >= 0.0) || g.is_nan() {
            return Err(Error::InvalidParameter { name: "max_gap", reason: format!("max_gap must be >= 0; got {g}") });
        }
    }
    let index = SegmentIndex::new(graph)?;
    let snaps: Vec<Snap> = points.par_iter().with_min_len(1024).map(|&p| index.snap(p)).collect();
    if let Some(max_gap) = max_gap {
        if let Some((row, s)) = snaps.iter().enumerate().find(|(_, s)| s.gap > max_gap) {
            return Err(Error::BeyondGap { argument, row, gap: s.gap, max_gap });
        }
    }
    Ok(snaps)
}

/// Spots at given node numbers; `argument` names them in errors.
///
/// # Errors
/// [`Error::InvalidEdge`] naming the row of a node number out of range.
pub fn node_spots(graph: &TravelGraph, nodes: &[i64], argument: &'static str) -> Result<Vec<Spot>> {
    nodes
        .iter()
        .enumerate()
        .map(|(row, &v)| {
            if v < 0 || v as usize >= graph.node_count() {
                Err(Error::InvalidEdge {
                    argument,
                    row,
                    reason: format!("node {v} is out of range (there are {} nodes)", graph.node_count()),
                })
            } else {
                Ok(Spot::Node(v as u32))
            }
        })
        .collect()
}
