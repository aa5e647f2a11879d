//! Delaunay triangulation, Voronoi cells and minimum spanning tree of longitude/latitude
//! points of any extent, on the sphere.
//!
//! Model: a point `[lon, lat]` is the unit vector of its ellipsoid normal (the sphere whose
//! spherical coordinates are the geodetic ones). Lengths and areas are then measured on the
//! WGS84 ellipsoid: edge lengths are geodesic lengths between the input points, areas those
//! of the polygons with geodesic edges through the computed vertices (Karney 2013). Shared
//! edges are given by the same vertices, so cells tile the ellipsoid exactly.
//!
//! - The spherical Delaunay triangulation is the convex hull of the unit vectors (Brown
//!   1979, "Voronoi diagrams from convex hulls"): a hull face whose plane passes strictly
//!   between its corners and the centre has an empty circumcircle cap, so it is a Delaunay
//!   triangle. When the points lie in an open hemisphere the hull also has faces whose
//!   plane has the centre on their outer side (or on it): their caps are larger than a
//!   hemisphere and their minor-arc triangles would overlap the others, so they are not
//!   triangles of the triangulation; their edges with the true triangles form its
//!   `boundary` (the outline of the points' spherical convex hull).
//! - Voronoi cells: every hull face (both kinds) gives a Voronoi vertex, its outward unit
//!   normal, which is equidistant from its three corners and farther from every other point
//!   (Augenbaum and Peskin 1985; Renka 1997, STRIPACK). Adjacent co-planar faces share one
//!   vertex. Cells are the vertices of the faces round each site, counter-clockwise, each
//!   edge an arc of the bisecting great circle turned about `s_i − s_j` (so edges longer than
//!   a half turn, which arise for few points, are the right arc).
//! - Minimum spanning tree: Kruskal's algorithm (Kruskal 1956) on the hull's edge graph (the
//!   spherical Delaunay graph) with each edge weighted by its WGS84 geodesic length (Karney
//!   2013). The Delaunay graph holds every great-circle MST (it contains the relative
//!   neighbourhood graph); the ellipsoid's MST edges have neighbourhoods empty under a metric
//!   within the flattening (about 0.3 %) of the sphere's, so they are Delaunay edges too
//!   unless four points are that close to co-circular. Weighting by the great circle instead
//!   left trees 3.5e-6 to 5e-6 longer than the ellipsoid's MST on national and global sets.

mod cells;
mod hull;

use rstar::RTree;

use super::earth::{normalised_longitude, unit_normal, validate_lonlat, Earth};
use crate::cancel::{cancelled, each_watched, Watch};
use crate::error::{Error, Result};
use crate::geometry::Point;
use crate::network::union_find::UnionFind;
use hull::{convex_hull, flat_faces, orient, Hull, Span};
/// Three-vector arithmetic, shared with the travel family's lon/lat shapes.
pub(crate) use hull::{cross, dot, sub, Vec3};

pub use cells::{sphere_voronoi_cells, sphere_voronoi_cells_watched, SphereCellOptions, SphereCells};

/// The spherical Delaunay triangulation of longitude/latitude points.
#[derive(Debug, Clone, PartialEq)]
pub struct SphereTriangulation {
    /// Triangles as input rows, counter-clockwise seen from outside the sphere.
    pub triangles: Vec<[usize; 3]>,
    /// `adjacent[t][k]`: the triangle across the edge of `t` opposite its corner `k`
    /// (`None` on the boundary of points within an open hemisphere).
    pub adjacent: Vec<[Option<usize>; 3]>,
    /// Every edge of a triangle once, as `[smaller row, larger row]`.
    pub edges: Vec<[usize; 2]>,
    /// The boundary edges (points within an open hemisphere), as the triangle runs them.
    pub boundary: Vec<[usize; 2]>,
    /// `representative[i]`: the vertex kept for row `i` (`i` itself, or the first row at the
    /// same location, or — for a point so close to another that rounding put it inside the
    /// hull of the rest — the nearest vertex).
    pub representative: Vec<usize>,
    /// Area of every triangle on the WGS84 ellipsoid (geodesic edges), square metres.
    pub area: Vec<f64>,
    /// Hull faces that are not triangles (their plane has the centre on its outer side).
    pub outward_faces: usize,
}

/// A minimum spanning tree of longitude/latitude points for WGS84 geodesic lengths.
#[derive(Debug, Clone, PartialEq)]
pub struct SphereTree {
    /// Edges as `[smaller row, larger row]`, by non-decreasing geodesic length.
    pub edges: Vec<[usize; 2]>,
    /// WGS84 geodesic length of every edge, metres.
    pub length: Vec<f64>,
}

/// The distinct points, their unit vectors and hull.
pub(crate) struct Sphere {
    /// Input row of every distinct point.
    pub rows: Vec<usize>,
    /// Unit vector of every distinct point.
    pub vectors: Vec<Vec3>,
    /// Kept vertex (an input row) for every input row.
    pub representative: Vec<usize>,
    /// The hull over the distinct points (indices into `rows`).
    pub hull: Hull,
}

/// Largest distance of a unit vector from a plane through the centre for the points to
/// count as lying on that great circle (a few hundred rounding errors of a unit vector).
const GREAT_CIRCLE_TOLERANCE: f64 = 1e-13;

/// The unit vector of a point, exact at the poles (where the longitude has no effect).
fn sphere_vector(p: Point) -> Vec3 {
    if p[1].abs() == 90.0 {
        [0.0, 0.0, p[1].signum()]
    } else {
        unit_normal(p)
    }
}

/// The point's location with the longitude reduced and the poles made one point each.
fn location(p: Point) -> (u64, u64) {
    let lon = if p[1].abs() == 90.0 { 0.0 } else { normalised_longitude(p[0]) };
    ((lon + 0.0).to_bits(), (p[1] + 0.0).to_bits())
}

impl Sphere {
    /// The distinct points of `points` and their hull, counting one step of `watch` per
    /// input point (the hull's insertions, then the rest at the end); once `watch` is
    /// cancelled it stops within a block of insertions with [`cancelled`] (the caller drops
    /// that outcome).
    pub(crate) fn build_watched(argument: &'static str, points: &[Point], watch: &Watch) -> Result<Sphere> {
        validate_lonlat(argument, points, 1)?;
        let mut representative: Vec<usize> = (0..points.len()).collect();
        let mut by_place = std::collections::HashMap::with_capacity(points.len());
        let mut by_vector = std::collections::HashMap::with_capacity(points.len());
        let mut rows = Vec::with_capacity(points.len());
        let mut vectors = Vec::with_capacity(points.len());
        for (i, &p) in points.iter().enumerate() {
            let v = sphere_vector(p);
            // The same place written differently (lon ± 360, any lon at a pole), or two
            // places whose unit vectors round to the same one: one vertex.
            let place = *by_place.entry(location(p)).or_insert(i);
            let vector = *by_vector.entry(v.map(|x| (x + 0.0).to_bits())).or_insert(place);
            if place != i || vector != i {
                representative[i] = place.min(vector);
                continue;
            }
            rows.push(i);
            vectors.push(v);
        }
        if rows.len() < 3 {
            return Err(Error::TooFewPoints { argument, needed: 3, got: rows.len(), counted: "distinct points" });
        }
        // Points on one great circle (a meridian, the equator) are rarely exactly co-planar
        // with the centre once rounded to unit vectors; within rounding they span no
        // spherical triangle either.
        if let Some(t) = hull::initial_triangle(&vectors) {
            let [a, b, c] = t.map(|i| vectors[i as usize]);
            let normal = hull::unit(cross(hull::sub(b, a), hull::sub(c, a)));
            if vectors.iter().all(|&v| dot(normal, v).abs() < GREAT_CIRCLE_TOLERANCE) {
                return Err(Error::Degenerate {
                    argument,
                    reason: "all points lie on one great circle, which no spherical triangle spans".into(),
                });
            }
        }
        // A solid hull counted the points it inserted: all but the first simplex's four.
        let (hull, inserted) = match convex_hull(&vectors, watch).ok_or_else(|| cancelled(argument))? {
            Span::Solid(h) => (h, vectors.len() - 4),
            Span::Plane(t) => {
                let [a, b, c] = t.map(|i| vectors[i as usize]);
                if orient(a, b, c, [0.0; 3]) == 0.0 {
                    return Err(Error::Degenerate {
                        argument,
                        reason: "all points lie on one great circle, which no spherical triangle spans".into(),
                    });
                }
                (flat_faces(&vectors, t), 0)
            }
            Span::Line => {
                return Err(Error::Degenerate { argument, reason: "all points lie on one line in space".into() })
            }
        };
        if !hull.interior.is_empty() {
            let mut is_vertex = vec![true; vectors.len()];
            hull.interior.iter().for_each(|&k| is_vertex[k as usize] = false);
            let kept: Vec<(Vec3, usize)> =
                (0..vectors.len()).filter(|&k| is_vertex[k]).map(|k| (vectors[k], rows[k])).collect();
            let tree =
                RTree::bulk_load(kept.iter().map(|&(v, r)| rstar::primitives::GeomWithData::new(v, r)).collect());
            for &k in &hull.interior {
                let nearest = tree.nearest_neighbor(vectors[k as usize]).expect("the hull has vertices");
                representative[rows[k as usize]] = nearest.data;
            }
            let resolved: Vec<usize> = representative.iter().map(|&r| representative[r]).collect();
            representative = resolved;
        }
        watch.advance((points.len() - inserted) as u64);
        Ok(Sphere { rows, vectors, representative, hull })
    }

    /// Whether hull face `f` is a Delaunay triangle (the centre strictly on its inner side).
    pub(crate) fn is_triangle(&self, f: usize) -> bool {
        let [a, b, c] = self.hull.faces[f].map(|k| self.vectors[k as usize]);
        orient(a, b, c, [0.0; 3]) > 0.0
    }

    fn row(&self, k: u32) -> usize {
        self.rows[k as usize]
    }
}

/// `measure(k)` for `k` in `0..count`, in parallel, one step of `watch` each (planned by the
/// caller); a cancelled run has no values (see [`each_watched`]).
pub(crate) fn measured_watched(
    count: usize,
    watch: &Watch,
    argument: &'static str,
    measure: impl Fn(usize) -> f64 + Sync + Send,
) -> Result<Vec<f64>> {
    each_watched(count, watch, argument, || (), |_, k| measure(k))
}

/// The spherical Delaunay triangulation of `points` (`[lon, lat]` degrees).
///
/// # Errors
/// The coordinate errors of [`crate::geodesic_length`]; [`Error::TooFewPoints`] for fewer
/// than three distinct points; [`Error::Degenerate`] when every point lies on one great
/// circle.
///
/// # Runtime
/// Expected O(n log n) (hull), plus one geodesic polygon area per triangle, in parallel.
pub fn sphere_delaunay(points: &[Point]) -> Result<SphereTriangulation> {
    sphere_delaunay_watched(points, &Watch::new())
}

/// [`sphere_delaunay`] watched: progress counts a step per input point (the hull's
/// insertions) and one per triangle's area, and once `watch` is cancelled the run stops
/// within a block of hull insertions or one triangle per worker thread. A triangulation
/// exists only once it is whole, so a cancelled run has no answer: its outcome is an error
/// that the caller drops ([`Watch::finish`]).
///
/// # Errors
/// As [`sphere_delaunay`].
pub fn sphere_delaunay_watched(points: &[Point], watch: &Watch) -> Result<SphereTriangulation> {
    watch.plan(points.len() as u64);
    let s = Sphere::build_watched("points", points, watch)?;
    let faces = &s.hull.faces;
    let mut index = vec![None; faces.len()];
    let mut triangles = Vec::new();
    for (f, face) in faces.iter().enumerate() {
        if s.is_triangle(f) {
            index[f] = Some(triangles.len());
            triangles.push(face.map(|k| s.row(k)));
        }
    }
    let mut adjacent = Vec::with_capacity(triangles.len());
    let mut edges = Vec::with_capacity(triangles.len() * 3 / 2 + 1);
    let mut boundary = Vec::new();
    for f in (0..faces.len()).filter(|&f| index[f].is_some()) {
        let across = s.hull.across[f].map(|g| index[g as usize]);
        for k in 0..3 {
            let (a, b) = (s.row(faces[f][(k + 1) % 3]), s.row(faces[f][(k + 2) % 3]));
            match across[k] {
                None => {
                    boundary.push([a, b]);
                    edges.push([a.min(b), a.max(b)]);
                }
                Some(_) if a < b => edges.push([a, b]),
                Some(_) => {}
            }
        }
        adjacent.push(across);
    }
    edges.sort_unstable();
    let earth = Earth::wgs84();
    watch.plan(triangles.len() as u64);
    let area =
        measured_watched(triangles.len(), watch, "points", |k| earth.ccw_ring_area(&triangles[k].map(|r| points[r])))?;
    Ok(SphereTriangulation {
        outward_faces: faces.len() - triangles.len(),
        triangles,
        adjacent,
        edges,
        boundary,
        representative: s.representative,
        area,
    })
}

/// A minimum spanning tree of `points` for WGS84 geodesic lengths among the spherical
/// Delaunay edges (see the module notes). Repeated points are joined to their
/// representative by zero-length edges.
///
/// # Errors
/// The coordinate errors of [`crate::geodesic_length`]. Fewer than three distinct points
/// and points on one great circle are answered directly (a chain along the circle).
///
/// # Runtime
/// Expected O(n log n).
pub fn sphere_spanning_tree(points: &[Point]) -> Result<SphereTree> {
    sphere_spanning_tree_watched(points, &Watch::new())
}

/// [`sphere_spanning_tree`] watched: progress counts a step per input point (the hull's
/// insertions) and one per candidate edge measured, and once `watch` is cancelled the run
/// stops within a block of hull insertions or one edge per worker thread, with an error the
/// caller drops ([`Watch::finish`]): a part of a spanning tree is no answer.
///
/// # Errors
/// As [`sphere_spanning_tree`].
pub fn sphere_spanning_tree_watched(points: &[Point], watch: &Watch) -> Result<SphereTree> {
    use rayon::prelude::*;
    validate_lonlat("points", points, 1)?;
    watch.plan(points.len() as u64);
    let (candidates, representative) = match Sphere::build_watched("points", points, watch) {
        Ok(s) => {
            let mut candidates = Vec::with_capacity(s.hull.faces.len() * 3 / 2);
            for t in &s.hull.faces {
                for k in 0..3 {
                    let (a, b) = (s.row(t[k]), s.row(t[(k + 1) % 3]));
                    if a < b {
                        candidates.push([a, b]);
                    }
                }
            }
            (candidates, s.representative)
        }
        // Few or great-circle points: every pair is a candidate when few; on one great
        // circle the MST is a path along it, among the edges between neighbours in angle.
        Err(e) if e.is_degenerate() => {
            // Every degenerate outcome of the build comes before its first count.
            watch.advance(points.len() as u64);
            let vectors: Vec<Vec3> = points.iter().map(|&p| sphere_vector(p)).collect();
            (circle_candidates(&vectors), (0..points.len()).collect())
        }
        Err(e) => return Err(e),
    };
    let mut candidates = candidates;
    for (i, &r) in representative.iter().enumerate() {
        if r != i {
            candidates.push([r.min(i), r.max(i)]);
        }
    }
    // Non-negative finite lengths order like their bit patterns; ties go to the lower
    // candidate number, so the tree is the same on every run.
    let earth = Earth::wgs84();
    watch.plan(candidates.len() as u64);
    let lengths = measured_watched(candidates.len(), watch, "points", |k| {
        let [a, b] = candidates[k];
        earth.distance(points[a], points[b])
    })?;
    let mut keyed: Vec<(u64, usize)> = lengths.iter().enumerate().map(|(k, l)| (l.to_bits(), k)).collect();
    keyed.par_sort_unstable();
    let mut sets = UnionFind::new(points.len());
    let mut edges = Vec::with_capacity(points.len().saturating_sub(1));
    let mut length = Vec::with_capacity(points.len().saturating_sub(1));
    for (_, k) in keyed {
        let e = candidates[k];
        if sets.union(e[0], e[1]) {
            edges.push(e);
            length.push(lengths[k]);
            if edges.len() + 1 == points.len() {
                break;
            }
        }
    }
    Ok(SphereTree { edges, length })
}

/// Candidate edges for points on one great circle (or fewer than three distinct points):
/// the pairs of neighbours in angle round the circle, repeated points joined to the first.
fn circle_candidates(vectors: &[Vec3]) -> Vec<[usize; 2]> {
    let n = vectors.len();
    if n <= 3 {
        return (0..n).flat_map(|a| (a + 1..n).map(move |b| [a, b])).collect();
    }
    // The circle's plane: the first pair of vectors with a non-zero cross product.
    let a = vectors[0];
    let normal = vectors.iter().map(|&v| cross(a, v)).find(|c| dot(*c, *c) > 0.0);
    let Some(normal) = normal else {
        return (1..n).map(|b| [0, b]).collect();
    };
    let b = cross(normal, a);
    let mut order: Vec<(f64, usize)> =
        vectors.iter().enumerate().map(|(i, &v)| (dot(v, b).atan2(dot(v, a)), i)).collect();
    order.sort_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)));
    let mut out: Vec<[usize; 2]> = order.windows(2).map(|w| [w[0].1.min(w[1].1), w[0].1.max(w[1].1)]).collect();
    let (l, f) = (order[n - 1].1, order[0].1);
    out.push([l.min(f), l.max(f)]);
    out
}

#[cfg(test)]
mod tests;
