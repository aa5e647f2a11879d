//! A feasible region for sites: a closed polygon with holes, possibly in several parts.
//!
//! The region is given as rings (exteriors and holes alike; a point is inside when an odd
//! number of rings enclose it, the same layout as the study region of the partition family)
//! and is *closed*: its boundary belongs to it. Rings may touch at vertices but must not
//! cross or overlap along an edge, so the even-odd rule gives the usual polygon with holes.
//!
//! - [`FeasibleRegion::contains`]: membership by ray-crossing parity (Shimrat 1962) with
//!   every sign decision by the exact orientation test, so a point exactly on an edge is
//!   inside and the answer agrees with any other exact point-in-polygon test.
//! - [`FeasibleRegion::nearest_on_boundary`], [`FeasibleRegion::project`]: the closest
//!   boundary point (an R-tree of edges, `rstar`), moved by at most a few units in the last
//!   place towards the region until the exact test admits it.
//! - [`search::minimise_on_boundary`]: the minimum of a convex objective over the boundary.

pub mod search;

use rstar::primitives::{GeomWithData, Line};
use rstar::{RTree, AABB};

use super::predicates::{all_collinear, orient2d, orientation};
use super::{add, distance, dot, ring_signed_area, scale, sub, validate_points, BoundingBox, Point};
use crate::error::{Error, Result};

type Edge = GeomWithData<Line<Point>, usize>;

/// A validated, indexed feasible region (see the module documentation).
#[derive(Debug, Clone)]
pub struct FeasibleRegion {
    /// The boundary edges `[from, to]`, ring after ring.
    segments: Vec<[Point; 2]>,
    edges: RTree<Edge>,
    bounds: BoundingBox,
    area: f64,
}

/// Two regions are equal when their boundary edges are (the index is derived from them).
impl PartialEq for FeasibleRegion {
    fn eq(&self, other: &FeasibleRegion) -> bool {
        self.segments == other.segments
    }
}

/// The rings of a region given as `vertices` split at `ring_offsets` (exteriors and holes
/// alike, inside by the even-odd rule), checked: finite vertices, offsets that describe
/// them, every ring with area, at least one ring, and no two edges that cross or overlap
/// (rings may touch at vertices). Closing repeats and consecutive repeated vertices are
/// removed.
///
/// Why here: the even-odd rule reads rings that cross (a bow-tie ring, overlapping parts of
/// a multi-part region) as a different set than the polygon they draw, so every family that
/// takes a region checks it with this one test (each edge against those whose boxes meet
/// its own, found in an R-tree of edges, `rstar`).
///
/// # Errors
/// - [`Error::NonFiniteCoordinate`] (`region`) for a NaN or infinite vertex;
/// - [`Error::InvalidParameter`] (`region`) for ring offsets that do not describe the
///   vertices;
/// - [`Error::Degenerate`] (`region`) for a ring without area, no rings at all, or two
///   edges that cross or overlap, naming the edges.
///
/// # Runtime
/// O(m log m) for m vertices, plus the edge pairs whose boxes overlap.
pub fn checked_rings(vertices: &[Point], ring_offsets: &[usize]) -> Result<Vec<Vec<Point>>> {
    let rings = rings_of(vertices, ring_offsets)?;
    let segments = segments_of(&rings);
    if let Some((k, j, how)) = first_conflict(&segments, &index_of(&segments)) {
        let at = segments[k][0];
        return Err(Error::Degenerate {
            argument: "region",
            reason: format!(
                "boundary edges {k} and {j} {how} (edge {k} starts at ({}, {})); a region's rings must not \
                 intersect themselves or each other",
                at[0], at[1]
            ),
        });
    }
    Ok(rings)
}

/// The rings of `vertices` split at `ring_offsets`, with closing repeats and consecutive
/// repeated vertices removed, after checking the vertices and offsets and that no ring lies
/// on one line.
///
/// Why "on one line" (exact at any scale) rather than "signed area zero": a bow-tie ring's
/// lobes cancel, and its fault is the crossing; and the shoelace sum underflows to zero for
/// rings within about 1e-162.
fn rings_of(vertices: &[Point], ring_offsets: &[usize]) -> Result<Vec<Vec<Point>>> {
    validate_points("region", vertices, 0)?;
    let bad = |reason: String| Error::InvalidParameter { name: "region", reason };
    if ring_offsets.first() != Some(&0) || ring_offsets.last() != Some(&vertices.len()) {
        return Err(bad(format!("ring offsets must run from 0 to the number of vertices ({})", vertices.len())));
    }
    if let Some(r) = ring_offsets.windows(2).position(|w| w[0] > w[1]) {
        return Err(bad(format!("ring offsets must be ascending; offset {} > offset {}", r, r + 1)));
    }
    let mut rings = Vec::new();
    for (r, w) in ring_offsets.windows(2).enumerate() {
        let mut ring = vertices[w[0]..w[1]].to_vec();
        ring.dedup();
        while ring.len() > 1 && ring.first() == ring.last() {
            ring.pop();
        }
        if ring.is_empty() {
            continue;
        }
        if ring.len() < 3 || all_collinear(&ring) {
            return Err(Error::Degenerate {
                argument: "region",
                reason: format!("ring {r} has no area (fewer than three distinct vertices, or all on one line)"),
            });
        }
        rings.push(ring);
    }
    if rings.is_empty() {
        return Err(Error::Degenerate { argument: "region", reason: "the region has no area (no rings)".into() });
    }
    Ok(rings)
}

/// The boundary edges `[from, to]` of `rings`, ring after ring.
fn segments_of(rings: &[Vec<Point>]) -> Vec<[Point; 2]> {
    rings.iter().flat_map(|ring| (0..ring.len()).map(move |k| [ring[k], ring[(k + 1) % ring.len()]])).collect()
}

/// An R-tree of `segments`, each carrying its position.
fn index_of(segments: &[[Point; 2]]) -> RTree<Edge> {
    RTree::bulk_load(segments.iter().enumerate().map(|(k, s)| GeomWithData::new(Line::new(s[0], s[1]), k)).collect())
}

/// The first pair of edges `k < j` that cross or overlap ([`conflict`]), and how.
fn first_conflict(segments: &[[Point; 2]], edges: &RTree<Edge>) -> Option<(usize, usize, &'static str)> {
    segments.iter().enumerate().find_map(|(k, s)| {
        let envelope = AABB::from_corners(s[0], s[1]);
        edges
            .locate_in_envelope_intersecting(envelope)
            .filter(|other| other.data > k)
            .find_map(|other| conflict(*s, segments[other.data]).map(|how| (k, other.data, how)))
    })
}

/// True when the ray from `p` towards +x crosses segment `a b` (half-open in y, so a ray
/// through a vertex counts once; the side by the exact orientation test).
fn ray_crosses(a: Point, b: Point, p: Point) -> bool {
    if (a[1] > p[1]) == (b[1] > p[1]) {
        return false;
    }
    let (lo, hi) = if a[1] < b[1] { (a, b) } else { (b, a) };
    orient2d(lo, hi, p) > 0.0
}

/// True when `p` lies on the closed segment `a b` (exact).
fn on_segment(a: Point, b: Point, p: Point) -> bool {
    orient2d(a, b, p) == 0.0
        && p[0] >= a[0].min(b[0])
        && p[0] <= a[0].max(b[0])
        && p[1] >= a[1].min(b[1])
        && p[1] <= a[1].max(b[1])
}

/// How two edges meet: `None` when they are apart or only touch, else a description of a
/// crossing or an overlap along a stretch (both make the even-odd region ill-defined).
fn conflict(e: [Point; 2], f: [Point; 2]) -> Option<&'static str> {
    let (a, b, c, d) = (e[0], e[1], f[0], f[1]);
    // Signs (exact at any scale): a product of two tiny determinants would underflow to 0.
    let (o1, o2) = (orientation(a, b, c), orientation(a, b, d));
    let (o3, o4) = (orientation(c, d, a), orientation(c, d, b));
    if o1 * o2 < 0.0 && o3 * o4 < 0.0 {
        return Some("cross");
    }
    if o1 == 0.0 && o2 == 0.0 {
        // Collinear: an overlap when the shared stretch has length.
        let u = sub(b, a);
        let (s, t) = (dot(sub(c, a), u), dot(sub(d, a), u));
        let (lo, hi) = (s.min(t).max(0.0), s.max(t).min(dot(u, u)));
        if lo < hi {
            return Some("overlap along a stretch");
        }
    }
    None
}

impl FeasibleRegion {
    /// The region of rings `vertices[ring_offsets[r]..ring_offsets[r + 1]]` (a ring may
    /// repeat its first vertex at its end).
    ///
    /// # Errors
    /// - [`Error::NonFiniteCoordinate`] (`region`) for a NaN or infinite vertex;
    /// - [`Error::InvalidParameter`] (`region`) for ring offsets that do not describe the
    ///   vertices;
    /// - [`Error::Degenerate`] (`region`) for a ring without area, no rings at all, or two
    ///   edges that cross or overlap (a self-intersecting region), naming the edges.
    ///
    /// # Runtime
    /// O(m log m) for m vertices, plus the edge pairs whose boxes overlap.
    pub fn new(vertices: &[Point], ring_offsets: &[usize]) -> Result<FeasibleRegion> {
        let rings = checked_rings(vertices, ring_offsets)?;
        let region = FeasibleRegion::of_rings(&rings);
        if !(region.area > 0.0) {
            return Err(Error::Degenerate { argument: "region", reason: "the region has no area".into() });
        }
        Ok(region)
    }

    /// The region of checked rings (no validation).
    fn of_rings(rings: &[Vec<Point>]) -> FeasibleRegion {
        let segments = segments_of(rings);
        let edges = index_of(&segments);
        let all: Vec<Point> = rings.iter().flatten().copied().collect();
        let bounds = BoundingBox::of(&all).expect("at least one ring");
        let mut region = FeasibleRegion { segments, edges, bounds, area: 0.0 };
        // Even-odd area: a ring adds its area when an even number of other rings enclose it
        // (an exterior or an island) and removes it otherwise (a hole). Rings do not cross, so
        // one vertex (or edge midpoint) of a ring off another ring's boundary tells whether
        // that ring encloses it.
        for (r, ring) in rings.iter().enumerate() {
            let depth = rings.iter().enumerate().filter(|&(s, other)| s != r && ring_inside(ring, other)).count();
            let a = ring_signed_area(ring).abs();
            region.area += if depth % 2 == 0 { a } else { -a };
        }
        region
    }

    /// The same region with every vertex mapped by `f` (an exact or nearly exact similarity,
    /// such as a working frame's shift and power-of-two scale); not validated again.
    pub fn mapped(&self, f: impl Fn(Point) -> Point) -> FeasibleRegion {
        let segments: Vec<[Point; 2]> = self.segments.iter().map(|s| [f(s[0]), f(s[1])]).collect();
        let edges = RTree::bulk_load(
            segments.iter().enumerate().map(|(k, s)| GeomWithData::new(Line::new(s[0], s[1]), k)).collect(),
        );
        let all: Vec<Point> = segments.iter().map(|s| s[0]).collect();
        let bounds = BoundingBox::of(&all).expect("at least one edge");
        let scale_factor = distance(f([0.0, 0.0]), f([1.0, 0.0]));
        FeasibleRegion { segments, edges, bounds, area: self.area * scale_factor * scale_factor }
    }

    /// The boundary edges `[from, to]`.
    pub fn segments(&self) -> &[[Point; 2]] {
        &self.segments
    }

    /// Area (exteriors minus holes).
    pub fn area(&self) -> f64 {
        self.area
    }

    /// Bounding box of the boundary.
    pub fn bounds(&self) -> BoundingBox {
        self.bounds
    }

    /// True when `p` lies in the closed region (on the boundary counts as inside); exact.
    pub fn contains(&self, p: Point) -> bool {
        if !(p[0].is_finite() && p[1].is_finite()) {
            return false;
        }
        let here = AABB::from_point(p);
        if self.edges.locate_in_envelope_intersecting(here).any(|e| on_segment(e.geom().from, e.geom().to, p)) {
            return true;
        }
        if p[0] > self.bounds.max[0] {
            return false;
        }
        let ray = AABB::from_corners(p, [self.bounds.max[0], p[1]]);
        let crossings =
            self.edges.locate_in_envelope_intersecting(ray).filter(|e| ray_crosses(e.geom().from, e.geom().to, p));
        crossings.count() % 2 == 1
    }

    /// The boundary point closest to `p`, its distance, and the edge it lies on.
    pub fn nearest_on_boundary(&self, p: Point) -> (Point, f64, usize) {
        let edge = self.edges.nearest_neighbor(p).expect("a region has edges");
        let k = edge.data;
        let q = closest_on_segment(self.segments[k], p);
        (q, distance(p, q), k)
    }

    /// `p` when the region holds it, else the nearest boundary point (inside by the exact
    /// test; see [`FeasibleRegion::settle`]).
    pub fn project(&self, p: Point) -> Point {
        if self.contains(p) {
            return p;
        }
        let (q, _, k) = self.nearest_on_boundary(p);
        self.settle(q, k)
    }

    /// A point of the region within a few units in the last place of `q`, a point computed
    /// on edge `k` (rounding may leave it just outside): `q` itself when the exact test
    /// admits it, else `q` moved across the edge by the smallest power-of-two step that
    /// lands inside, else the nearer end of the edge (a vertex, always inside).
    pub fn settle(&self, q: Point, k: usize) -> Point {
        if self.contains(q) {
            return q;
        }
        let [a, b] = self.segments[k];
        let u = sub(b, a);
        let length = u[0].hypot(u[1]);
        if length > 0.0 {
            let normal = [-u[1] / length, u[0] / length];
            let mut step = (q[0].abs().max(q[1].abs()).max(f64::MIN_POSITIVE)) * f64::EPSILON;
            for _ in 0..64 {
                for side in [1.0, -1.0] {
                    let c = add(q, scale(normal, side * step));
                    if self.contains(c) {
                        return c;
                    }
                }
                step *= 2.0;
            }
        }
        if distance(q, a) <= distance(q, b) {
            a
        } else {
            b
        }
    }
}

/// The point of segment `s` closest to `p`.
pub fn closest_on_segment(s: [Point; 2], p: Point) -> Point {
    let [a, b] = s;
    let u = sub(b, a);
    let uu = dot(u, u);
    if !(uu > 0.0) {
        return a;
    }
    let t = (dot(sub(p, a), u) / uu).clamp(0.0, 1.0);
    if t == 1.0 {
        return b;
    }
    add(a, scale(u, t))
}

/// Distance from `p` to segment `s`.
pub fn segment_distance(s: [Point; 2], p: Point) -> f64 {
    distance(p, closest_on_segment(s, p))
}

/// Even-odd point-in-ring test (exact signs).
fn ring_encloses(ring: &[Point], p: Point) -> bool {
    (0..ring.len()).filter(|&k| ray_crosses(ring[k], ring[(k + 1) % ring.len()], p)).count() % 2 == 1
}

/// True when ring `inner` lies inside ring `outer` (the rings do not cross): decided by the
/// first vertex or edge midpoint of `inner` off `outer`'s boundary.
fn ring_inside(inner: &[Point], outer: &[Point]) -> bool {
    let on_outer = |p: Point| (0..outer.len()).any(|k| on_segment(outer[k], outer[(k + 1) % outer.len()], p));
    let midpoints = (0..inner.len()).map(|k| {
        let (a, b) = (inner[k], inner[(k + 1) % inner.len()]);
        [0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])]
    });
    inner.iter().copied().chain(midpoints).find(|&p| !on_outer(p)).is_some_and(|p| ring_encloses(outer, p))
}

#[cfg(test)]
mod tests;
