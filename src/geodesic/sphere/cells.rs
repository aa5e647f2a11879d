//! Spherical Voronoi cells from the hull: one vertex per set of co-planar adjacent faces
//! (the face's outward unit normal), cells as the vertices of the faces round each site.

use rayon::prelude::*;

use super::hull::{cross, dot, norm2, orient, sub, unit, Vec3, NONE};
use super::{measured_watched, Sphere};
use crate::cancel::{cancelled, Watch};
use crate::error::{Error, Result};
use crate::geodesic::earth::{from_normal, Earth};
use crate::geometry::Point;
use crate::network::union_find::UnionFind;

/// Options of [`sphere_voronoi_cells`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SphereCellOptions {
    /// Longest arc, degrees, of a ring edge: longer Voronoi edges get vertices inserted
    /// along their great circle (in (0, 90]; default 1).
    pub max_edge_degrees: f64,
}

impl Default for SphereCellOptions {
    fn default() -> Self {
        SphereCellOptions { max_edge_degrees: 1.0 }
    }
}

/// Spherical Voronoi cells of longitude/latitude sites.
#[derive(Debug, Clone, PartialEq)]
pub struct SphereCells {
    /// The Voronoi vertices, `[lon, lat]` degrees.
    pub vertices: Vec<Point>,
    /// Unit vectors of the Voronoi vertices (the sphere model).
    pub vertex_vectors: Vec<[f64; 3]>,
    /// `n + 1` offsets into `cell_vertices`, one cell per site.
    pub vertex_offsets: Vec<usize>,
    /// Every cell's vertices (indices into `vertices`), counter-clockwise seen from outside.
    pub cell_vertices: Vec<usize>,
    /// `n + 1` offsets into `rings`.
    pub ring_offsets: Vec<usize>,
    /// Every cell's ring, `[lon, lat]`: its vertices with points inserted along edges longer
    /// than `max_edge_degrees` (on the edge's great circle).
    pub rings: Vec<Point>,
    /// Area of every cell on the WGS84 ellipsoid (the polygon with geodesic edges through
    /// its ring), square metres.
    pub area: Vec<f64>,
    /// Area of every cell on the unit sphere (great-circle edges), steradians.
    pub solid_angle: Vec<f64>,
}

/// The spherical Voronoi cells of `sites` (`[lon, lat]` degrees): every point of the sphere
/// goes to the site at the least great-circle distance, so the cells cover the globe.
///
/// # Errors
/// The errors of [`super::sphere_delaunay`]; [`Error::RepeatedPoint`] when a site repeats
/// another's location (or lies so close that rounding leaves it no cell);
/// [`Error::InvalidParameter`] for `max_edge_degrees` outside (0, 90].
///
/// # Runtime
/// Expected O(n log n) for the hull, then O(n + ring vertices) and one geodesic polygon
/// area per cell, in parallel.
pub fn sphere_voronoi_cells(sites: &[Point], options: &SphereCellOptions) -> Result<SphereCells> {
    sphere_voronoi_cells_watched(sites, options, &Watch::new())
}

/// [`sphere_voronoi_cells`] watched: progress counts `3n` steps (a site inserted into the
/// hull, a cell's ring, a cell's area), and once `watch` is cancelled the run stops within
/// a block of hull insertions or one cell per worker thread. The cells exist only once
/// every one is made, so a cancelled run has no answer: its outcome is an error that the
/// caller drops ([`Watch::finish`]).
///
/// # Errors
/// As [`sphere_voronoi_cells`].
pub fn sphere_voronoi_cells_watched(
    sites: &[Point],
    options: &SphereCellOptions,
    watch: &Watch,
) -> Result<SphereCells> {
    let step = options.max_edge_degrees;
    if !(step > 0.0 && step <= 90.0) {
        return Err(Error::InvalidParameter {
            name: "max_edge_degrees",
            reason: format!("must be in (0, 90]; got {step}"),
        });
    }
    let n = sites.len();
    // Every step is counted once: the build counts n, each ring and each area one.
    watch.plan(3 * n as u64);
    let s = Sphere::build_watched("sites", sites, watch)?;
    let stop = || if watch.is_cancelled() { Err(cancelled("sites")) } else { Ok(()) };
    if let Some(row) = (0..sites.len()).find(|&i| s.representative[i] != i) {
        return Err(Error::RepeatedPoint { argument: "sites", row, first: s.representative[row] });
    }
    let faces = &s.hull.faces;
    let across = &s.hull.across;
    let p = &s.vectors;
    // Adjacent co-planar faces share one vertex (a co-circular set of four or more sites).
    // (Faces of a flat hull facing opposite ways share a plane but not a vertex: the side
    // the centre lies on tells them apart; a face and its reverse share every corner.)
    let corners = |f: usize| faces[f].map(|k| p[k as usize]);
    let side = |f: usize| {
        let [a, b, c] = corners(f);
        orient(a, b, c, [0.0; 3]).signum()
    };
    let mut same = UnionFind::new(faces.len());
    for (f, t) in faces.iter().enumerate() {
        for &g in &across[f] {
            let g = g as usize;
            if g != NONE as usize && g > f {
                let [a, b, c] = corners(f);
                let same_plane = faces[g]
                    .iter()
                    .find(|v| !t.contains(v))
                    .is_some_and(|&apex| orient(a, b, c, p[apex as usize]) == 0.0 && side(f) == side(g));
                if same_plane {
                    same.union(f, g);
                }
            }
        }
    }
    let mut vertex_of = vec![usize::MAX; faces.len()];
    let mut vectors = Vec::new();
    for f in 0..faces.len() {
        let root = same.find(f);
        if vertex_of[root] == usize::MAX {
            let [a, b, c] = faces[root].map(|k| p[k as usize]);
            vertex_of[root] = vectors.len();
            vectors.push(unit(cross(sub(b, a), sub(c, a))));
        }
        vertex_of[f] = vertex_of[root];
    }
    // One face at every vertex, then the faces round it counter-clockwise: from face
    // (v, a, b) the next is across the edge v–b (opposite a).
    let mut at = vec![(u32::MAX, 0usize); p.len()];
    for (f, t) in faces.iter().enumerate() {
        for (k, &v) in t.iter().enumerate() {
            at[v as usize] = (f as u32, k);
        }
    }
    let mut distinct_of = vec![usize::MAX; n];
    s.rows.iter().enumerate().for_each(|(k, &r)| distinct_of[r] = k);
    // Per site: (vertex, neighbour across the edge leaving it) round the cell.
    let cells: Vec<Vec<(usize, usize)>> = (0..n)
        .into_par_iter()
        .map(|row| -> Result<Vec<(usize, usize)>> {
            stop()?;
            let v = distinct_of[row] as u32;
            let (start, _) = at[v as usize];
            let mut out: Vec<(usize, usize)> = Vec::new();
            let mut f = start;
            let mut steps = 0usize;
            loop {
                steps += 1;
                let t = faces[f as usize];
                let k = t.iter().position(|&x| x == v).expect("the face holds the vertex");
                let b = t[(k + 2) % 3];
                let vertex = vertex_of[f as usize];
                match out.last_mut() {
                    Some(last) if last.0 == vertex => last.1 = b as usize,
                    _ => out.push((vertex, b as usize)),
                }
                f = across[f as usize][(k + 1) % 3];
                if f == start {
                    break;
                }
                // Invariant of a closed surface: the faces round a vertex form one cycle
                // through `start`. A walk longer than all the faces breaks it.
                if f == NONE || steps > faces.len() {
                    return Err(Error::Degenerate {
                        argument: "sites",
                        reason: format!("the triangulation round site {row} is not closed (rounding in a near-degenerate configuration)"),
                    });
                }
            }
            if out.len() > 1 && out[0].0 == out[out.len() - 1].0 {
                let last = out.pop().expect("non-empty");
                out[0].0 = last.0;
            }
            Ok(out)
        })
        .collect::<Result<_>>()?;
    let step = step.to_radians();
    let earth = Earth::wgs84();
    // Each cell's ring in lon/lat and its solid angle; `None` once cancelled.
    let rings: Vec<Option<(Vec<Point>, f64)>> = cells
        .par_iter()
        .enumerate()
        .map(|(row, cell)| {
            if watch.is_cancelled() {
                return None;
            }
            let v = distinct_of[row];
            let mut ring = Vec::new();
            for (k, &(u, b)) in cell.iter().enumerate() {
                let w = cell[(k + 1) % cell.len()].0;
                ring.push(vectors[u]);
                ring.extend(edge_points(p, &vectors, (v, u), (b, w), step));
            }
            let site = p[v];
            let solid: f64 = (0..ring.len()).map(|k| solid_angle(site, ring[k], ring[(k + 1) % ring.len()])).sum();
            watch.advance(1);
            Some((ring.iter().map(|&x| from_normal(x)).collect(), solid))
        })
        .collect();
    let Some(rings) = rings.into_iter().collect::<Option<Vec<(Vec<Point>, f64)>>>() else {
        return Err(cancelled("sites"));
    };
    // Sites a hair apart (distinct unit vectors, but so close that the bisector between them
    // is lost to rounding) leave a cell without a measurable area: refused, naming the pair,
    // rather than answered with NaN.
    if rings.iter().any(|r| !r.1.is_finite()) {
        // The culprits: the closest pair of sites, which is an edge of the triangulation.
        let (mut a, mut b, mut best) = (0usize, 0usize, f64::NEG_INFINITY);
        for t in faces {
            for k in 0..3 {
                let (x, y) = (t[k] as usize, t[(k + 1) % 3] as usize);
                let d = dot(p[x], p[y]);
                if d > best {
                    (a, b, best) = (x, y, d);
                }
            }
        }
        let (row, other) = (s.rows[a], s.rows[b]);
        return Err(Error::Degenerate {
            argument: "sites",
            reason: format!(
                "sites[{}] and sites[{}] lie so close together that rounding leaves a cell without area; merge them \
                 or move one",
                row.min(other),
                row.max(other)
            ),
        });
    }
    let vertices: Vec<Point> = vectors.iter().map(|&x| from_normal(x)).collect();
    let mut vertex_offsets = vec![0];
    let mut cell_vertices = Vec::new();
    for cell in &cells {
        cell_vertices.extend(cell.iter().map(|c| c.0));
        vertex_offsets.push(cell_vertices.len());
    }
    let mut ring_offsets = vec![0];
    let mut ring_points = Vec::new();
    for (ring, _) in &rings {
        ring_points.extend_from_slice(ring);
        ring_offsets.push(ring_points.len());
    }
    let area = measured_watched(n, watch, "sites", |i| {
        earth.ccw_ring_area(&ring_points[ring_offsets[i]..ring_offsets[i + 1]])
    })?;
    Ok(SphereCells {
        vertices,
        vertex_vectors: vectors,
        vertex_offsets,
        cell_vertices,
        ring_offsets,
        rings: ring_points,
        area,
        solid_angle: rings.iter().map(|r| r.1).collect(),
    })
}

/// Points inserted along the Voronoi edge of site `v`'s cell from vertex `u` to vertex `w`,
/// shared with site `b`: the arc of the bisecting great circle turned about `s_v − s_b`
/// (which keeps the cell on the left, so an arc of more than a half turn is the right one),
/// cut into pieces of at most `step` radians. The points of a shared edge are computed once
/// from the smaller site's side and reversed for the other, so neighbouring rings agree
/// to the bit.
fn edge_points(p: &[Vec3], vectors: &[Vec3], (v, u): (usize, usize), (b, w): (usize, usize), step: f64) -> Vec<Vec3> {
    if v > b {
        let mut out = edge_points(p, vectors, (b, w), (v, u), step);
        out.reverse();
        return out;
    }
    let axis = unit(sub(p[v], p[b]));
    let (from, to) = (vectors[u], vectors[w]);
    let mut angle = dot(axis, cross(from, to)).atan2(dot(from, to));
    if angle < 0.0 {
        angle += std::f64::consts::TAU;
    }
    let pieces = (angle / step).ceil().max(1.0) as usize;
    // Rodrigues' rotation of `from` about `axis`.
    let turned = cross(axis, from);
    let along = dot(axis, from);
    (1..pieces)
        .map(|k| {
            let (sin, cos) = (angle * k as f64 / pieces as f64).sin_cos();
            let x: Vec3 = std::array::from_fn(|i| from[i] * cos + turned[i] * sin + axis[i] * along * (1.0 - cos));
            unit(x)
        })
        .filter(|x| norm2(*x).is_finite())
        .collect()
}

/// Signed solid angle of the spherical triangle `a, b, c` (Van Oosterom and Strackee 1983,
/// "The solid angle of a plane triangle"), steradians.
fn solid_angle(a: Vec3, b: Vec3, c: Vec3) -> f64 {
    let det = dot(a, cross(b, c));
    2.0 * det.atan2(1.0 + dot(a, b) + dot(b, c) + dot(c, a))
}
