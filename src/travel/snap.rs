//! Attaching points to the network: each point goes to the nearest point of the nearest
//! edge, found in a uniform grid of buckets over the edges' segments (cell-based nearest
//! search, Bentley, Weide & Yao 1980), which answers a street network's short segments
//! several times faster than an R*-tree query.

use rayon::prelude::*;

use super::graph::TravelGraph;
use super::lonlat::Unwrapped;
use crate::error::{Error, Result};
use crate::geodesic::{normalised_longitude, Earth, WGS84_A, WGS84_F};
use crate::geometry::{distance_squared, dot, sub, validate_points, BoundingBox, Point, WorkingFrame};

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
    /// The edge the point went to (of edges drawn along one shape, the lowest-numbered).
    pub edge: u32,
    /// Length along the edge's shape from its tail to the attachment point.
    pub along: f64,
    /// Distance from the point to the attachment point (the off-network gap; not a cost).
    pub gap: f64,
    /// The attachment point on the edge.
    pub on_edge: Point,
}

/// One segment of an edge's shape, in the index's working frame.
#[derive(Clone, Copy)]
struct Segment {
    a: Point,
    b: Point,
    /// `b - a` and `|b - a|²` (segments of zero length are left out).
    d: Point,
    len2: f64,
    edge: u32,
    k: u32,
}

impl Segment {
    /// The nearest point of the segment to `p`, as its share `t` of the way from `a` to `b`,
    /// and its squared distance.
    #[inline]
    fn nearest(&self, p: Point) -> (f64, f64) {
        let d = self.d;
        let t = (dot(sub(p, self.a), d) / self.len2).clamp(0.0, 1.0);
        let q = if t <= 0.0 {
            self.a
        } else if t >= 1.0 {
            self.b
        } else {
            [self.a[0] + t * d[0], self.a[1] + t * d[1]]
        };
        (t, distance_squared(p, q))
    }
}

/// A uniform grid over every segment of every edge (bucketing; a segment is listed in every
/// cell its bounding box meets), built once per call. A query scans rings of cells around
/// the point's cell until the ring's distance exceeds the best distance found.
pub struct SegmentIndex<'g> {
    graph: &'g TravelGraph,
    segments: Vec<Segment>,
    origin: Point,
    cell: f64,
    nx: usize,
    ny: usize,
    first: Vec<u32>,
    items: Vec<u32>,
    /// Factor on x (1 for planar graphs): a geodesic graph's longitudes are scaled by the
    /// cosine of its mean latitude, so that edges are sought in a local frame of roughly
    /// equal units; the candidates that frame's distortion leaves open are then compared by
    /// geodesic distance (gaps and positions are measured on the ellipsoid).
    scale_x: f64,
    /// Least and greatest latitude of a geodesic graph's vertices: where the local frame's
    /// scale departs from the true one, and by how much at most.
    latitudes: (f64, f64),
    /// The working frame of the segments (after `scale_x`): shifted to their centre and
    /// scaled by a power of two to unit size, so that squared distances neither overflow
    /// (coordinates near 1e300) nor underflow (near 1e-300).
    frame: WorkingFrame,
    /// A geodesic graph's turn of longitudes (see `lonlat`): every segment the shorter way
    /// round, the network in one piece across the antimeridian, and points taken in the same
    /// turn.
    turn: Option<Unwrapped>,
    /// The WGS84 ellipsoid, for attaching points to a geodesic graph's candidates.
    earth: Earth,
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
        let mut latitudes = (f64::INFINITY, f64::NEG_INFINITY);
        let scale_x = if graph.is_geodesic() {
            let (mut sum, mut count) = (0.0, 0usize);
            for e in 0..graph.edge_count() {
                for p in graph.line(e).expect("graph has geometry").points() {
                    sum += p[1];
                    count += 1;
                    latitudes = (latitudes.0.min(p[1]), latitudes.1.max(p[1]));
                }
            }
            (sum / count.max(1) as f64).to_radians().cos().max(1e-6)
        } else {
            1.0
        };
        let turn = graph
            .is_geodesic()
            .then(|| Unwrapped::around((0..graph.edge_count()).map(|e| graph.line(e).expect("graph has geometry"))));
        // Every segment's ends in the turn of longitudes (a geodesic graph), scaled.
        let ends = |e: usize, w: &[Point]| -> Result<(Point, Point)> {
            let (a, b) = match turn {
                None => (w[0], w[1]),
                Some(turn) => turn.segment(w[0], w[1]).ok_or_else(|| Error::InvalidParameter {
                    name: "lines",
                    reason: format!(
                        "the network the lines make circles the globe in longitude (edge {e} closes a ring round \
                         a pole, say), so points cannot be attached to it in one longitude/latitude view; give \
                         node numbers, or project the lines (to a polar CRS such as EPSG:3413 or EPSG:3031 near a \
                         pole)"
                    ),
                })?,
            };
            Ok(([a[0] * scale_x, a[1]], [b[0] * scale_x, b[1]]))
        };
        let mut corners = Vec::new();
        for e in 0..graph.edge_count() {
            for w in graph.line(e).expect("graph has geometry").points().windows(2) {
                let (a, b) = ends(e, w)?;
                corners.extend([a, b]);
            }
        }
        let frame = WorkingFrame::of(&corners);
        drop(corners);
        let mut segments = Vec::new();
        for e in 0..graph.edge_count() {
            let line = graph.line(e).expect("graph has geometry");
            for (k, w) in line.points().windows(2).enumerate() {
                let (a, b) = ends(e, w)?;
                let (a, b) = (frame.to_local(a), frame.to_local(b));
                let d = sub(b, a);
                let len2 = dot(d, d);
                // Zero-length segments (and those too short to square in the frame) are left out.
                if len2 > 0.0 && len2.is_finite() {
                    segments.push(Segment { a, b, d, len2, edge: e as u32, k: k as u32 });
                }
            }
        }
        if segments.is_empty() {
            return Err(Error::InvalidParameter {
                name: "points",
                reason: "every edge of the graph has zero length, so points cannot be attached to it".into(),
            });
        }
        let ends: Vec<Point> = segments.iter().flat_map(|s| [s.a, s.b]).collect();
        let bounds = BoundingBox::of(&ends).expect("segments exist");
        let (w, h) = (bounds.max[0] - bounds.min[0], bounds.max[1] - bounds.min[1]);
        // About two cells per segment, at most 2^24 cells.
        let cells = (2 * segments.len()).clamp(1, 1 << 24) as f64;
        let mut cell = ((w.max(f64::MIN_POSITIVE) * h.max(f64::MIN_POSITIVE)) / cells).sqrt();
        cell = cell.max(w.max(h) / 4096.0).max(f64::MIN_POSITIVE);
        if !cell.is_finite() {
            cell = w.max(h).max(1.0);
        }
        let nx = ((w / cell).floor() as usize + 1).min(1 << 13);
        let ny = ((h / cell).floor() as usize + 1).min(1 << 13);
        let mut index = SegmentIndex {
            graph,
            segments,
            origin: bounds.min,
            cell,
            nx,
            ny,
            first: vec![0; nx * ny + 1],
            items: Vec::new(),
            scale_x,
            latitudes,
            frame,
            turn,
            earth: Earth::wgs84(),
        };
        let span = |s: &Segment, index: &SegmentIndex<'_>| {
            let (i0, j0) = index.cell_of([s.a[0].min(s.b[0]), s.a[1].min(s.b[1])]);
            let (i1, j1) = index.cell_of([s.a[0].max(s.b[0]), s.a[1].max(s.b[1])]);
            (i0, j0, i1, j1)
        };
        for s in &index.segments {
            let (i0, j0, i1, j1) = span(s, &index);
            for j in j0..=j1 {
                for i in i0..=i1 {
                    index.first[j * nx + i + 1] += 1;
                }
            }
        }
        for c in 0..nx * ny {
            index.first[c + 1] += index.first[c];
        }
        let mut fill = index.first.clone();
        let mut items = vec![0u32; index.first[nx * ny] as usize];
        for (n, s) in index.segments.iter().enumerate() {
            let (i0, j0, i1, j1) = span(s, &index);
            for j in j0..=j1 {
                for i in i0..=i1 {
                    items[fill[j * nx + i] as usize] = n as u32;
                    fill[j * nx + i] += 1;
                }
            }
        }
        index.items = items;
        Ok(index)
    }

    /// The cell of `p`, clamped to the grid.
    #[inline]
    fn cell_of(&self, p: Point) -> (usize, usize) {
        let fx = ((p[0] - self.origin[0]) / self.cell).floor();
        let fy = ((p[1] - self.origin[1]) / self.cell).floor();
        let i = if fx > 0.0 { (fx as usize).min(self.nx - 1) } else { 0 };
        let j = if fy > 0.0 { (fy as usize).min(self.ny - 1) } else { 0 };
        (i, j)
    }

    /// A point in the working frame of the segments.
    #[inline]
    fn local(&self, p: Point) -> Point {
        let p = match self.turn {
            Some(turn) => turn.point(p),
            None => p,
        };
        self.frame.to_local([p[0] * self.scale_x, p[1]])
    }

    /// How much farther than the nearest segment in the local frame a segment may lie there
    /// and still be the nearest on the ellipsoid, as a factor on squared distances: 1 on the
    /// plane. A length east-west in the frame is its true length times `cos φ / scale_x` at
    /// latitude `φ`, which between the point and any segment lies within the network's span
    /// of latitudes (widened to the point's); a margin of 1e-3 on lengths allows for the rest
    /// of the flat view's error at the distances a street network spans.
    fn widening(&self, latitude: f64) -> f64 {
        if !self.graph.is_geodesic() {
            return 1.0;
        }
        let (lo, hi) = (self.latitudes.0.min(latitude), self.latitudes.1.max(latitude));
        let nearest_equator = if lo <= 0.0 && hi >= 0.0 { 0.0 } else { lo.abs().min(hi.abs()) };
        let farthest = lo.abs().max(hi.abs()).min(90.0);
        let most = (nearest_equator.to_radians().cos() / self.scale_x).max(1.0);
        let least = (farthest.to_radians().cos().max(1e-6) / self.scale_x).min(1.0);
        let ratio = most / least * (1.0 + 1e-3);
        ratio * ratio
    }

    /// The point at share `t` of segment `n`, in the input's coordinates (the segment's own
    /// ends at shares 0 and 1 exactly), with the segment's edge and place in the edge's shape.
    fn place(&self, n: u32, t: f64) -> (u32, u32, Point) {
        let seg = self.segments[n as usize];
        let line = self.graph.line(seg.edge as usize).expect("graph has geometry");
        let pts = line.points();
        let (a, b) = (pts[seg.k as usize], pts[seg.k as usize + 1]);
        (seg.edge, seg.k, self.graph.point_on_segment(a, b, t))
    }

    /// The share of segment `n` (as the graph draws it) geodesically nearest `point`, from the
    /// frame's share `t`, and its geodesic distance: Gauss–Newton steps in the tangent plane at
    /// the current point `q`, where the segment runs along `v = dq/dt` (metres east and north:
    /// its longitude and latitude spans times the parallel's and the meridian's radii of
    /// curvature at `q`) and `point` lies `s` away in the direction `e` of the geodesic from
    /// `q` (Karney 2013's inverse problem, by the geodesic family's quick Newton loop):
    /// `t += s (e · v) / |v|²`, until the step is below a nanometre, `t` held in [0, 1]. At the nearest point inside the segment the geodesic to
    /// `point` meets it at a right angle (`e · v = 0`).
    fn nearest_on_earth(&self, point: Point, n: u32, t: f64) -> (f64, f64) {
        let seg = self.segments[n as usize];
        let line = self.graph.line(seg.edge as usize).expect("graph has geometry");
        let (a, b) = (line.points()[seg.k as usize], line.points()[seg.k as usize + 1]);
        let span = [normalised_longitude(b[0] - a[0]).to_radians(), (b[1] - a[1]).to_radians()];
        let earth = self.earth;
        let e2 = WGS84_F * (2.0 - WGS84_F);
        let mut t = t;
        let mut seen = earth.seen_from_quickly(self.graph.point_on_segment(a, b, t), point);
        for _ in 0..50 {
            if seen.distance == 0.0 {
                break;
            }
            let q = self.graph.point_on_segment(a, b, t);
            let (sin, cos) = q[1].to_radians().sin_cos();
            let w = 1.0 - e2 * sin * sin;
            let (east, north) = (WGS84_A / w.sqrt() * cos, WGS84_A * (1.0 - e2) / (w * w.sqrt()));
            let v = [span[0] * east, span[1] * north];
            let v2 = dot(v, v);
            if !(v2 > 0.0) {
                break;
            }
            let next = (t + seen.distance * dot(seen.direction, v) / v2).clamp(0.0, 1.0);
            if !((next - t).abs() * v2.sqrt() > 1e-9) {
                break;
            }
            t = next;
            seen = earth.seen_from_quickly(self.graph.point_on_segment(a, b, t), point);
        }
        (t, seen.distance)
    }

    /// Attach one point: the nearest segment (ties: the lowest segment number), on the
    /// lowest-numbered edge drawn along that segment's shape. On a
    /// geodesic graph the segments nearest in the local frame, up to its distortion
    /// ([`SegmentIndex::widening`]), are compared by geodesic distance.
    pub fn snap(&self, point: Point) -> Snap {
        let p = self.local(point);
        let (ci, cj) = self.cell_of(p);
        let widen = self.widening(point[1]);
        // (squared distance, segment, share along it); a point so far out of the frame that
        // its squared distances overflow takes the first segment seen rather than none.
        let mut best = (f64::INFINITY, u32::MAX, 0.0);
        // On a geodesic graph: every segment seen that may be the nearest on the ellipsoid.
        let mut near: Vec<(f64, u32, f64)> = Vec::new();
        let rings = self.nx.max(self.ny);
        for r in 0..=rings {
            // Every cell at Chebyshev distance r from (ci, cj), within the grid.
            let (i0, i1) = (ci as isize - r as isize, ci as isize + r as isize);
            let (j0, j1) = (cj as isize - r as isize, cj as isize + r as isize);
            for j in j0.max(0)..=j1.min(self.ny as isize - 1) {
                let edge_row = j == j0 || j == j1;
                let step = if edge_row { 1 } else { (i1 - i0).max(1) as usize };
                let mut i = i0;
                while i <= i1 {
                    if i >= 0 && (i as usize) < self.nx {
                        let c = j as usize * self.nx + i as usize;
                        for &n in &self.items[self.first[c] as usize..self.first[c + 1] as usize] {
                            let (t, d2) = self.segments[n as usize].nearest(p);
                            if best.1 == u32::MAX || d2 < best.0 || (d2 == best.0 && n < best.1) {
                                best = (d2, n, t);
                            }
                            if widen > 1.0 && d2 <= best.0 * widen {
                                near.push((d2, n, t));
                            }
                        }
                    }
                    i += step as isize;
                }
            }
            // Cells beyond ring r lie at least r cells away from the point.
            let reach = r as f64 * self.cell;
            if best.1 != u32::MAX && best.0 * widen <= reach * reach {
                break;
            }
        }
        let (mut n, mut t) = (best.1, best.2);
        if widen > 1.0 {
            near.sort_unstable_by_key(|c| c.1);
            near.dedup_by_key(|c| c.1);
            // A close, cheap measure first: degrees with longitudes scaled by the cosine of the
            // latitude half-way between the point and each candidate's nearest point (off by
            // far less than 1e-3 at street-network distances); then geodesic distances for
            // the candidates within 1e-3 of its least.
            let measured: Vec<(f64, u32, f64)> = near
                .iter()
                .filter(|c| c.0 <= best.0 * widen)
                .map(|&(_, m, u)| {
                    let q = self.place(m, u).2;
                    let east = normalised_longitude(q[0] - point[0]) * (0.5 * (q[1] + point[1])).to_radians().cos();
                    let north = q[1] - point[1];
                    (east * east + north * north, m, u)
                })
                .collect();
            // The frame's nearest point of a segment is off the geodesically nearest one by as
            // much as the frame's distortion at the point (near a pole, by far more than 1e-3),
            // so every candidate within that distortion of the closest is attached on the
            // ellipsoid ([`SegmentIndex::nearest_on_earth`]) and their true gaps compared.
            let closest = measured.iter().map(|c| c.0).fold(f64::INFINITY, f64::min);
            let mut least = f64::INFINITY;
            for &(_, m, u) in measured.iter().filter(|c| c.0 <= closest * widen * (1.0 + 1e-3) * (1.0 + 1e-3)) {
                let (u, gap) = self.nearest_on_earth(point, m, u);
                if gap < least || (gap == least && m < n) {
                    (least, n, t) = (gap, m, u);
                }
            }
        }
        let (edge, k, on_edge) = self.place(n, t);
        let pts = self.graph.line(edge as usize).expect("graph has geometry");
        let pts = pts.points();
        // Planar or geodesic, as the graph measures its edges.
        let g = self.graph;
        let along = g.path_length(&pts[..=k as usize]) + g.path_length(&[pts[k as usize], on_edge]);
        let (length, gap) = (g.path_length(pts), g.path_length(&[point, on_edge]));
        // A point on a shape that several edges draw lies on the shape's representative edge,
        // measured along that edge's direction ([`super::twins`]).
        let (edge, along) = match g.shape_edge(edge) {
            (r, true) => (r, length - along),
            (r, false) => (r, along),
        };
        let spot = if along <= 0.0 || length <= 0.0 {
            Spot::Node(self.graph.tail[edge as usize])
        } else if along >= length {
            Spot::Node(self.graph.head[edge as usize])
        } else {
            Spot::OnEdge { edge, fraction: along / length }
        };
        Snap { spot, edge, along: along.min(length), gap, on_edge }
    }
}

/// Attach every point of `points` to `graph`; `argument` names them in errors.
///
/// # Errors
/// [`Error::NonFiniteCoordinate`] for a bad point, [`Error::OutOfRange`] for a latitude beyond
/// ±90 or a longitude beyond ±540 on a geodesic graph; [`Error::BeyondGap`] naming the first
/// point farther than `max_gap` from every edge; those of [`SegmentIndex::new`].
///
/// # Runtime
/// O(S + cells) to index S segments, then O(1) expected per point for evenly spread
/// segments, parallel over points.
pub fn snap_points(
    graph: &TravelGraph,
    points: &[Point],
    argument: &'static str,
    max_gap: Option<f64>,
) -> Result<Vec<Snap>> {
    if graph.is_geodesic() {
        // Latitudes beyond ±90 have no geodesic to the network (their gap came out NaN).
        crate::geodesic::validate_lonlat(argument, points, 1)?;
    } else {
        validate_points(argument, points, 1)?;
    }
    if let Some(g) = max_gap {
        if !(g >= 0.0) || g.is_nan() {
            return Err(Error::InvalidParameter { name: "max_gap", reason: format!("max_gap must be >= 0; got {g}") });
        }
    }
    let index = SegmentIndex::new(graph)?;
    // Queries in cell order, so that consecutive queries touch the same cells and segments
    // (memory locality); results go back to input order.
    // The cell is computed once per point and packed above the point's number, so the sort
    // compares plain integers (a key function would be re-evaluated at every comparison:
    // measured, that sort took most of the time of a million-point call).
    let mut keyed: Vec<u64> = points
        .par_iter()
        .enumerate()
        .map(|(i, p)| {
            let (ci, cj) = index.cell_of(index.local(*p));
            (((cj * index.nx + ci) as u64) << 32) | i as u64
        })
        .collect();
    keyed.par_sort_unstable();
    let order: Vec<u32> = keyed.into_iter().map(|k| k as u32).collect();
    let found: Vec<Snap> = order.par_iter().with_min_len(1024).map(|&i| index.snap(points[i as usize])).collect();
    // Back to input order: the inverse permutation, gathered in parallel.
    let mut rank = vec![0u32; points.len()];
    for (k, &i) in order.iter().enumerate() {
        rank[i as usize] = k as u32;
    }
    let snaps: Vec<Snap> = rank.par_iter().with_min_len(4096).map(|&k| found[k as usize]).collect();
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
