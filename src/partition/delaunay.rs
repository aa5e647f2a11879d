//! Delaunay triangulation of a point set, on `spade`'s circle-sweep bulk load
//! (Biniaz & Dastghaibyfard 2012, "A faster circle-sweep Delaunay triangulation
//! algorithm"), whose every sign decision is Shewchuk's exact `orient2d`/`incircle`.
//!
//! The triangulation is built on the input coordinates themselves (scaled by a power of two
//! only when they fall outside the exponent range the exact predicates accept), so far-offset
//! clouds are triangulated exactly as they are given: no rounding by a change of origin.

use std::collections::HashMap;

use rayon::prelude::*;
use spade::{ConstrainedDelaunayTriangulation, DelaunayTriangulation, HasPosition, Point2, Triangulation as SpadeTriangulation};

use crate::error::{Error, Result};
use crate::geometry::predicates::{all_collinear_in, incircle};
use crate::geometry::{validate_points, Point};

/// A Delaunay triangulation, indexed by input point.
///
/// Every index refers to a row of the input. When the input repeats a location, only one
/// row of each repeated location (the smallest index) is a vertex; [`Triangulation::representative`]
/// maps every row to it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Triangulation {
    /// Triangles as counter-clockwise vertex triples.
    pub triangles: Vec<[usize; 3]>,
    /// `adjacent[t][k]` is the triangle across the edge of `t` opposite its vertex `k`
    /// (`None` on the hull).
    pub adjacent: Vec<[Option<usize>; 3]>,
    /// The hull's vertices, counter-clockwise from the smallest row, each once (vertices lying
    /// on a hull edge included).
    pub hull: Vec<usize>,
    /// Every edge once, as `[smaller index, larger index]`.
    pub edges: Vec<[usize; 2]>,
    /// `representative[i]` is the vertex kept for input row `i` (`i` itself unless row `i`
    /// repeats an earlier location).
    pub representative: Vec<usize>,
}

/// A vertex handed to spade: its position and the input row it came from.
#[derive(Debug, Clone, Copy)]
struct Vertex {
    position: Point2<f64>,
    row: usize,
}

impl HasPosition for Vertex {
    type Scalar = f64;

    #[inline]
    fn position(&self) -> Point2<f64> {
        self.position
    }
}

/// Power-of-two factor bringing coordinates into the range spade's exact predicates accept
/// (nonzero magnitudes in [2^-142, 2^201]); `1.0` when they already are.
///
/// Scaling by a power of two is exact, so the triangulation is that of the input. Only when
/// the magnitudes span more than the accepted range (about 1e103) do the smallest nonzero
/// coordinates, below 2^-142 of the largest, become zero.
#[derive(Debug, Clone, Copy)]
struct Scale(f64);

impl Scale {
    fn of(points: &[Point]) -> Scale {
        Scale(exact_scale(points))
    }

    /// The scaled position, with magnitudes below spade's smallest accepted one made zero.
    #[inline]
    fn apply(self, p: Point) -> Point2<f64> {
        let flush = |c: f64| {
            let s = c * self.0;
            if s.abs() < spade::MIN_ALLOWED_VALUE {
                0.0
            } else {
                s
            }
        };
        Point2::new(flush(p[0]), flush(p[1]))
    }
}

fn exact_scale(points: &[Point]) -> f64 {
    let mut largest = 0.0f64;
    let mut smallest = f64::INFINITY;
    for &c in points.iter().flatten() {
        let a = c.abs();
        largest = largest.max(a);
        if a != 0.0 {
            smallest = smallest.min(a);
        }
    }
    if largest <= spade::MAX_ALLOWED_VALUE && smallest >= spade::MIN_ALLOWED_VALUE {
        return 1.0;
    }
    // Bring the largest magnitude into [1, 2).
    let exponent = largest.log2().floor() as i32;
    2f64.powi(-exponent.clamp(-1000, 1000))
}

/// Bit pattern of a vertex position, with `-0.0` and `0.0` made equal (spade compares with `==`).
#[inline]
fn position_key(p: Point2<f64>) -> (u64, u64) {
    ((p.x + 0.0).to_bits(), (p.y + 0.0).to_bits())
}

/// The Delaunay triangulation of `points`.
///
/// Cocircular input (grids, regular polygons) is legal: the triangulation then is one of the
/// Delaunay triangulations, the same one on every call for the same input.
///
/// From [`STRIPS_FROM`] points on, the plane is cut into vertical strips that are
/// triangulated in parallel and stitched together (see [`by_strips`]); the stitched result is
/// verified, and any input it does not fit is triangulated whole.
///
/// # Errors
/// - [`Error::TooFewPoints`] with fewer than three points, or fewer than three distinct ones;
/// - [`Error::NonFiniteCoordinate`] for a NaN or infinite coordinate;
/// - [`Error::Degenerate`] when all points are collinear (no triangle exists).
///
/// # Runtime
/// O(n log n) (the sweep's distance sort), near linear in practice, spread over the strips;
/// duplicates add one hash pass.
pub fn delaunay(points: &[Point]) -> Result<Triangulation> {
    delaunay_in_strips(points, strip_count(points.len()))
}

/// Inputs with at least this many points are triangulated by strips in parallel.
pub const STRIPS_FROM: usize = 100_000;

/// Number of strips for `n` points: one below [`STRIPS_FROM`], then one per 250,000 points
/// (2 to 8). It depends on `n` alone, never on the thread count, so that cocircular input
/// gets the same triangulation on every machine.
fn strip_count(n: usize) -> usize {
    if n < STRIPS_FROM {
        1
    } else {
        (n / 250_000).clamp(2, 8)
    }
}

/// [`delaunay`] with a given number of strips (tests force the stitched path on small input).
fn delaunay_in_strips(points: &[Point], strips: usize) -> Result<Triangulation> {
    validate_points("points", points, 3)?;
    let scale = Scale::of(points);
    let positions: Vec<Point2<f64>> = points.par_iter().map(|&p| scale.apply(p)).collect();
    let mesh = match (strips > 1).then(|| by_strips(&positions, strips)).flatten() {
        Some(mesh) => mesh,
        None => whole(&positions)?,
    };
    let Mesh { mut triangles, adjacent, mut hull, kept } = mesh;
    let representative = representatives(points, scale, kept);
    if kept < points.len() {
        // spade keeps one row of each repeated location, not necessarily the smallest.
        triangles.par_iter_mut().flatten().for_each(|v| *v = representative[*v]);
        hull.iter_mut().for_each(|v| *v = representative[*v]);
    }
    // Start the hull at its smallest row, whichever construction found it.
    if let Some(first) = hull.iter().enumerate().min_by_key(|&(_, &v)| v).map(|(i, _)| i) {
        hull.rotate_left(first);
    }
    let edges = edges_of(&triangles, &adjacent);
    Ok(Triangulation { triangles, adjacent, hull, edges, representative })
}

/// Triangles, adjacency and hull of a triangulation, by the input rows spade kept.
struct Mesh {
    triangles: Vec<[usize; 3]>,
    adjacent: Vec<[Option<usize>; 3]>,
    hull: Vec<usize>,
    /// Number of distinct locations (vertices).
    kept: usize,
}

/// Every edge once, as `[smaller, larger]`: the edge opposite vertex `k` of triangle `t` is
/// emitted by `t` when it is on the hull or the triangle across it comes later.
fn edges_of(triangles: &[[usize; 3]], adjacent: &[[Option<usize>; 3]]) -> Vec<[usize; 2]> {
    triangles
        .par_iter()
        .zip(adjacent)
        .enumerate()
        .flat_map_iter(|(t, (tri, across))| {
            (0..3).filter(move |&k| across[k].is_none_or(|o| o > t)).map(move |k| {
                let (a, b) = (tri[(k + 1) % 3], tri[(k + 2) % 3]);
                [a.min(b), a.max(b)]
            })
        })
        .collect()
}

/// The inner faces of a spade triangulation as counter-clockwise row triples, the face
/// across the edge opposite each corner (by face number, `None` outside), and `judge` of
/// each face's corner positions (read here, where they are stored in sweep order, rather
/// than later through the rows, which would miss the cache).
fn faces_of<T: SpadeTriangulation<Vertex = Vertex>>(
    dt: &T,
    judge: impl Fn(Point2<f64>, Point2<f64>, Point2<f64>) -> bool,
) -> (Vec<[usize; 3]>, Vec<[Option<usize>; 3]>, Vec<bool>) {
    let mut triangles = Vec::with_capacity(dt.num_inner_faces());
    let mut adjacent = Vec::with_capacity(dt.num_inner_faces());
    let mut verdict = Vec::with_capacity(dt.num_inner_faces());
    for face in dt.inner_faces() {
        // Inner faces are numbered 1.., the outer face is 0.
        debug_assert_eq!(face.fix().index(), triangles.len() + 1);
        let e = face.adjacent_edges();
        let corners = [*e[0].from().data(), *e[1].from().data(), *e[2].from().data()];
        triangles.push(corners.map(|v| v.row));
        verdict.push(judge(corners[0].position, corners[1].position, corners[2].position));
        // Edge e[k] runs from vertex k to vertex k+1, so the edge opposite vertex k is e[k+1].
        let across = |k: usize| {
            let f = e[(k + 1) % 3].rev().face();
            if f.is_outer() {
                None
            } else {
                Some(f.fix().index() - 1)
            }
        };
        adjacent.push([across(0), across(1), across(2)]);
    }
    (triangles, adjacent, verdict)
}

/// The hull of a spade triangulation, counter-clockwise, by row.
fn hull_of<T: SpadeTriangulation<Vertex = Vertex>>(dt: &T) -> Vec<usize> {
    // spade walks the hull clockwise; reversed, its edges' origins are the hull counter-clockwise.
    let mut hull: Vec<usize> = dt.convex_hull().map(|e| e.from().data().row).collect();
    hull.reverse();
    hull
}

/// The Delaunay triangulation of `vertices` by the faster construction that suits them.
///
/// spade's circle sweep is the fastest on generic clouds, but it sets aside every point that
/// lies on a line through the sweep's centre and inserts those one by one from scratch at
/// the end, which is quadratic for points on a few long lines (transects, raster rows,
/// rounded coordinates): 40,000 points on three lines took a minute. Such input is recognised
/// by repeated coordinate values in a sample and triangulated by incremental insertion in a
/// biased randomised insertion order instead (Amenta, Choi & Rote 2003): rounds of doubling
/// size in random order, each round sorted along a Hilbert curve, every insertion walking
/// from the previous vertex. Its expected work is O(n log n) whatever the configuration
/// (Clarkson & Shor 1989).
fn triangulate(vertices: Vec<Vertex>) -> Option<DelaunayTriangulation<Vertex>> {
    if !lies_on_lines(&vertices) {
        return DelaunayTriangulation::bulk_load(vertices).ok();
    }
    let n = vertices.len();
    let (mut low, mut high) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    for v in &vertices {
        let p = v.position;
        low = [low[0].min(p.x), low[1].min(p.y)];
        high = [high[0].max(p.x), high[1].max(p.y)];
    }
    let cells = f64::from(HILBERT_SIDE - 1);
    let per_unit = [0, 1].map(|k| if high[k] > low[k] { cells / (high[k] - low[k]) } else { 0.0 });
    let cell = |c: f64, k: usize| (((c - low[k]) * per_unit[k]) as u32).min(HILBERT_SIDE - 1);
    let rounds = usize::BITS - n.leading_zeros();
    let mut random = crate::geometry::random::SplitMix64::new(0x5eed_de1a_0a7e);
    let mut order: Vec<(u32, u64, u32)> = vertices
        .iter()
        .enumerate()
        .map(|(i, v)| {
            // Round r (counted from the last, largest one) holds each point with probability
            // 2^-(r+1): the trailing ones of a random word.
            let r = random.next_u64().trailing_ones().min(rounds);
            (rounds - r, hilbert_index(cell(v.position.x, 0), cell(v.position.y, 1)), i as u32)
        })
        .collect();
    order.sort_unstable();
    let mut dt = DelaunayTriangulation::<Vertex>::with_capacity(n, 3 * n, 2 * n);
    let mut previous = None;
    for &(_, _, i) in &order {
        let v = vertices[i as usize];
        previous = Some(match previous {
            Some(hint) => dt.insert_with_hint(v, hint).ok()?,
            None => dt.insert(v).ok()?,
        });
    }
    Some(dt)
}

/// Cells per side of the Hilbert curve's grid.
const HILBERT_SIDE: u32 = 1 << 16;

/// Position of cell `(x, y)` along the Hilbert curve (Hilbert 1891) filling the
/// `HILBERT_SIDE`² grid, by the classic quadrant-by-quadrant rotation.
fn hilbert_index(mut x: u32, mut y: u32) -> u64 {
    let mut index = 0u64;
    let mut s = HILBERT_SIDE / 2;
    while s > 0 {
        let rx = u32::from(x & s > 0);
        let ry = u32::from(y & s > 0);
        index += u64::from(s) * u64::from(s) * u64::from((3 * rx) ^ ry);
        if ry == 0 {
            if rx == 1 {
                x = HILBERT_SIDE - 1 - x;
                y = HILBERT_SIDE - 1 - y;
            }
            std::mem::swap(&mut x, &mut y);
        }
        s /= 2;
    }
    index
}

/// Whether many points share an x or a y value: in an evenly spaced sample of up to 4,096
/// points, more than a quarter repeat another sample point's x, or its y. (Generic clouds
/// repeat none.)
fn lies_on_lines(vertices: &[Vertex]) -> bool {
    const SAMPLE: usize = 4096;
    let n = vertices.len();
    if n < 64 {
        return false;
    }
    let picked: Vec<Point2<f64>> = (0..SAMPLE.min(n)).map(|i| vertices[i * n / SAMPLE.min(n)].position).collect();
    [0, 1].into_iter().any(|axis| {
        let mut values: Vec<f64> = picked.iter().map(|p| if axis == 0 { p.x } else { p.y }).collect();
        values.sort_unstable_by(f64::total_cmp);
        let repeated = (0..values.len())
            .filter(|&i| (i > 0 && values[i - 1] == values[i]) || (i + 1 < values.len() && values[i + 1] == values[i]))
            .count();
        4 * repeated > values.len()
    })
}

/// Whether all positions lie on one line (or one point), by the exact orientation test.
fn collinear(positions: impl Iterator<Item = Point2<f64>> + Clone) -> bool {
    all_collinear_in(positions.map(|p| [p.x, p.y]))
}

/// All points triangulated at once, with the errors of [`delaunay`].
fn whole(positions: &[Point2<f64>]) -> Result<Mesh> {
    // Refused before spade sees it: spade inserts collinear points one by one along its line,
    // which is quadratic.
    if collinear(positions.iter().copied()) {
        let mut distinct: Vec<(u64, u64)> = positions.iter().map(|&p| position_key(p)).collect();
        distinct.sort_unstable();
        distinct.dedup();
        if distinct.len() < 3 {
            return Err(Error::TooFewPoints { argument: "points", needed: 3, got: distinct.len(), counted: "distinct points" });
        }
        return Err(Error::Degenerate {
            argument: "points",
            reason: "all points are collinear, so no triangle exists".into(),
        });
    }
    let vertices: Vec<Vertex> = positions.iter().enumerate().map(|(row, &position)| Vertex { position, row }).collect();
    let dt = triangulate(vertices).ok_or_else(|| {
        // Unreachable after validation and scaling; reported rather than unwrapped.
        Error::Degenerate { argument: "points", reason: "coordinates rejected by the triangulator".into() }
    })?;
    let kept = dt.num_vertices();
    if kept < 3 {
        return Err(Error::TooFewPoints { argument: "points", needed: 3, got: kept, counted: "distinct points" });
    }
    if dt.num_inner_faces() == 0 {
        return Err(Error::Degenerate {
            argument: "points",
            reason: "all points are collinear, so no triangle exists".into(),
        });
    }
    let (triangles, adjacent, _) = faces_of(&dt, |_, _, _| true);
    Ok(Mesh { triangles, adjacent, hull: hull_of(&dt), kept })
}

/// One strip's triangulation.
struct Strip {
    triangles: Vec<[usize; 3]>,
    adjacent: Vec<[Option<usize>; 3]>,
    /// Whether each triangle is Delaunay in the whole set, known from the strip alone.
    fixed: Vec<bool>,
    hull: Vec<usize>,
    kept: usize,
}

/// Whether the circumcircle of the triangle lies strictly between `x = lower` and
/// `x = upper` (`None`: unbounded), with a relative margin for the rounding of its centre
/// and radius.
fn circle_within(a: Point2<f64>, b: Point2<f64>, c: Point2<f64>, lower: Option<f64>, upper: Option<f64>) -> bool {
    let (bx, by, cx, cy) = (b.x - a.x, b.y - a.y, c.x - a.x, c.y - a.y);
    let d = 2.0 * (bx * cy - by * cx);
    let (b2, c2) = (bx * bx + by * by, cx * cx + cy * cy);
    let ux = (cy * b2 - by * c2) / d;
    let uy = (bx * c2 - cx * b2) / d;
    let radius_squared = (ux * ux + uy * uy) * (1.0 + 1e-8);
    let centre = a.x + ux;
    if !(radius_squared.is_finite() && centre.is_finite()) {
        return false;
    }
    // Clearance of the circle from a bound: positive, and its square beyond the radius'
    // (squares rather than a square root: this runs for every triangle).
    // The rounding of the centre's x is a few units in the last place of the coordinates
    // (the radius' relative error is covered by the factor above); the bound test then
    // needs only that much slack, even far from the origin.
    let slack = 1e-14 * (centre.abs() + a.x.abs() + lower.unwrap_or(0.0).abs() + upper.unwrap_or(0.0).abs());
    let clear = |gap: f64| gap > slack && (gap - slack) * (gap - slack) > radius_squared;
    lower.is_none_or(|l| clear(centre - l)) && upper.is_none_or(|u| clear(u - centre))
}

/// The triangulation stitched from `strips` vertical strips triangulated in parallel, or
/// `None` when the input does not suit it (then [`whole`] decides).
///
/// The points are split at x-quantiles; strip `j` holds the points with
/// `t_j <= x < t_{j+1}`, so repeated locations share a strip. A triangle of a strip whose
/// circumcircle stays strictly inside the strip's slab (between the largest x of the strips
/// left of it and the smallest x of those right of it) has no point of any strip inside its
/// circle, so it is a triangle of the whole Delaunay triangulation: it is *fixed*. The
/// rest of the hull, the seam, is covered by the Delaunay triangles whose vertices are all
/// vertices of unfixed triangles or of a strip's hull (a vertex whose star is all fixed
/// already has its whole neighbourhood). So the seam is re-triangulated from those vertices
/// alone, as a constrained Delaunay triangulation whose constraints are the edges between
/// fixed triangles and the seam, and the seam's triangles are collected by a flood fill
/// that starts beside those edges and never crosses one. This is the "merge by
/// re-triangulating the boundary" scheme of parallel Delaunay construction, e.g.
/// Blelloch et al. (1999) and Chen (2010).
///
/// The result is accepted only after a check that makes it a Delaunay triangulation:
/// every seam edge is met from both sides with opposite orientation, the hull is covered
/// once, the triangle count is Euler's `2n − 2 − h`, and the exact in-circle test passes
/// across every constraint edge (edges inside a strip or inside the seam are locally
/// Delaunay by construction; locally Delaunay everywhere is Delaunay, Delaunay 1934).
fn by_strips(positions: &[Point2<f64>], strips: usize) -> Option<Mesh> {
    let n = positions.len();
    let mut xs: Vec<f64> = positions.iter().map(|p| p.x).collect();
    let cuts: Vec<f64> = (1..strips)
        .map(|q| {
            let at = q * n / strips;
            *xs.select_nth_unstable_by(at, f64::total_cmp).1
        })
        .collect();
    let strip_of_x = |x: f64| cuts.partition_point(|&t| t <= x);
    let mut members: Vec<Vec<Vertex>> = (0..strips).map(|_| Vec::with_capacity(n / strips + 1)).collect();
    let mut strip_of = vec![0u8; n];
    let mut lowest = vec![f64::INFINITY; strips];
    let mut highest = vec![f64::NEG_INFINITY; strips];
    for (row, &position) in positions.iter().enumerate() {
        let j = strip_of_x(position.x);
        strip_of[row] = j as u8;
        lowest[j] = lowest[j].min(position.x);
        highest[j] = highest[j].max(position.x);
        members[j].push(Vertex { position, row });
    }
    if members.iter().any(|m| m.len() < 3) {
        return None;
    }

    let built: Vec<Option<Strip>> = members
        .into_par_iter()
        .enumerate()
        .map(|(j, vertices)| {
            if collinear(vertices.iter().map(|v| v.position)) {
                return None;
            }
            let dt = triangulate(vertices)?;
            if dt.num_inner_faces() == 0 {
                return None;
            }
            let lower = (j > 0).then(|| highest[j - 1]);
            let upper = (j + 1 < strips).then(|| lowest[j + 1]);
            let (triangles, adjacent, fixed) = faces_of(&dt, |a, b, c| circle_within(a, b, c, lower, upper));
            Some(Strip { triangles, adjacent, fixed, hull: hull_of(&dt), kept: dt.num_vertices() })
        })
        .collect();
    let built: Vec<Strip> = built.into_iter().collect::<Option<_>>()?;

    // Seam vertices and the constraint edges (u, v): counter-clockwise edges of fixed
    // triangles whose other side is unfixed or outside the strip. The seam lies to their right.
    let mut on_seam = vec![false; n];
    let mut boundary: Vec<(usize, usize, usize)> = Vec::new(); // (strip, triangle, corner)
    for (j, s) in built.iter().enumerate() {
        for &v in &s.hull {
            on_seam[v] = true;
        }
        for (t, tri) in s.triangles.iter().enumerate() {
            if !s.fixed[t] {
                tri.iter().for_each(|&v| on_seam[v] = true);
                continue;
            }
            for k in 0..3 {
                if s.adjacent[t][k].is_none_or(|o| !s.fixed[o]) {
                    boundary.push((j, t, k));
                }
            }
        }
    }
    let seam_rows: Vec<usize> = (0..n).filter(|&v| on_seam[v]).collect();
    if 2 * seam_rows.len() > n {
        // Most triangles cross the cuts (points on a circle, two long lines): stitching
        // would redo nearly everything, so the cloud is triangulated whole.
        return None;
    }
    let mut seam_index = vec![u32::MAX; n];
    for (i, &v) in seam_rows.iter().enumerate() {
        seam_index[v] = i as u32;
    }
    let corner = |&(j, t, k): &(usize, usize, usize)| {
        let tri = built[j].triangles[t];
        (tri[(k + 1) % 3], tri[(k + 2) % 3])
    };
    let constraints: Vec<[usize; 2]> = boundary
        .iter()
        .map(|b| {
            let (u, v) = corner(b);
            [seam_index[u] as usize, seam_index[v] as usize]
        })
        .collect();
    let seam_vertices: Vec<Vertex> = seam_rows.iter().map(|&row| Vertex { position: positions[row], row }).collect();
    let mut conflict = false;
    let cdt: ConstrainedDelaunayTriangulation<Vertex> =
        ConstrainedDelaunayTriangulation::try_bulk_load_cdt(seam_vertices, constraints, |_| conflict = true).ok()?;
    if conflict || cdt.num_vertices() != seam_rows.len() {
        return None;
    }
    let (seam_triangles, seam_adjacent, _) = faces_of(&cdt, |_, _, _| true);
    let is_constraint: Vec<[bool; 3]> = cdt
        .inner_faces()
        .map(|face| {
            let e = face.adjacent_edges();
            [1, 2, 0].map(|k| cdt.is_constraint_edge(e[k].fix().as_undirected()))
        })
        .collect();
    // Directed seam edges (u, v) → (seam triangle, corner opposite).
    let mut seam_edge: HashMap<(usize, usize), (usize, usize)> = HashMap::with_capacity(3 * seam_triangles.len());
    for (t, tri) in seam_triangles.iter().enumerate() {
        for k in 0..3 {
            seam_edge.insert((tri[(k + 1) % 3], tri[(k + 2) % 3]), (t, k));
        }
    }

    // Flood fill of the seam from beside the constraint edges (and from any triangle with
    // corners in two strips), never crossing a constraint edge.
    let mut in_seam = vec![false; seam_triangles.len()];
    let mut stack: Vec<usize> = boundary
        .iter()
        .filter_map(|b| {
            let (u, v) = corner(b);
            seam_edge.get(&(v, u)).map(|&(t, _)| t)
        })
        .collect();
    stack.extend((0..seam_triangles.len()).filter(|&t| {
        let s = seam_triangles[t].map(|v| strip_of[v]);
        s[0] != s[1] || s[1] != s[2]
    }));
    if boundary.is_empty() {
        stack.extend(0..seam_triangles.len());
    }
    while let Some(t) = stack.pop() {
        if std::mem::replace(&mut in_seam[t], true) {
            continue;
        }
        for k in 0..3 {
            if let Some(o) = seam_adjacent[t][k] {
                if !is_constraint[t][k] && !in_seam[o] {
                    stack.push(o);
                }
            }
        }
    }

    // Global numbering: the fixed triangles strip by strip, then the seam's.
    let mut first_of_strip = Vec::with_capacity(strips + 1);
    let mut count = 0usize;
    let numbering: Vec<Vec<usize>> = built
        .iter()
        .map(|s| {
            first_of_strip.push(count);
            s.fixed
                .iter()
                .map(|&f| {
                    if f {
                        count += 1;
                        count - 1
                    } else {
                        usize::MAX
                    }
                })
                .collect()
        })
        .collect();
    let seam_first = count;
    first_of_strip.push(seam_first);
    let mut seam_number = vec![usize::MAX; seam_triangles.len()];
    for t in (0..seam_triangles.len()).filter(|&t| in_seam[t]) {
        seam_number[t] = count;
        count += 1;
    }
    let kept: usize = built.iter().map(|s| s.kept).sum();
    let hull = hull_of(&cdt);
    if count + 2 + hull.len() != 2 * kept {
        return None;
    }

    let mut triangles = vec![[0usize; 3]; count];
    let mut adjacent = vec![[None; 3]; count];
    {
        // Fixed triangles, strip by strip in parallel; edges to the seam are filled below.
        let mut rest: &mut [[usize; 3]] = &mut triangles[..seam_first];
        let mut rest_adjacent: &mut [[Option<usize>; 3]] = &mut adjacent[..seam_first];
        let mut parts = Vec::with_capacity(strips);
        for (j, s) in built.iter().enumerate() {
            let size = first_of_strip[j + 1] - first_of_strip[j];
            let (head, tail) = rest.split_at_mut(size);
            let (head_adjacent, tail_adjacent) = rest_adjacent.split_at_mut(size);
            rest = tail;
            rest_adjacent = tail_adjacent;
            parts.push((s, &numbering[j], head, head_adjacent));
        }
        parts.into_par_iter().for_each(|(s, number, out, out_adjacent)| {
            let mut i = 0;
            for (t, tri) in s.triangles.iter().enumerate() {
                if number[t] == usize::MAX {
                    continue;
                }
                out[i] = *tri;
                out_adjacent[i] = s.adjacent[t].map(|o| o.map(|o| number[o]).filter(|&g| g != usize::MAX));
                i += 1;
            }
        });
    }
    for t in 0..seam_triangles.len() {
        let g = seam_number[t];
        if g == usize::MAX {
            continue;
        }
        triangles[g] = seam_triangles[t];
        adjacent[g] = seam_adjacent[t].map(|o| o.map(|o| seam_number[o]).filter(|&h| h != usize::MAX));
    }

    // Stitch and check every constraint edge from the fixed side.
    let mut hull_claimed = 0usize;
    let mut claimed = 0usize;
    let point = |v: usize| [positions[v].x, positions[v].y];
    for b in &boundary {
        let &(j, t, k) = b;
        let (u, v) = corner(b);
        let g = numbering[j][t];
        match seam_edge.get(&(v, u)) {
            Some(&(st, sk)) => {
                let h = seam_number[st];
                if h == usize::MAX || adjacent[h][sk].is_some() {
                    return None;
                }
                let mine = triangles[g];
                let theirs = triangles[h];
                if incircle(point(mine[0]), point(mine[1]), point(mine[2]), point(theirs[sk])) > 0.0
                    || incircle(point(theirs[0]), point(theirs[1]), point(theirs[2]), point(mine[k])) > 0.0
                {
                    return None;
                }
                adjacent[g][k] = Some(h);
                adjacent[h][sk] = Some(g);
                claimed += 1;
            }
            None => {
                // Nothing of the seam beyond (u, v): it must be a hull edge, with the seam
                // triangle on its inner side left out of the seam.
                let &(st, sk) = seam_edge.get(&(u, v))?;
                if seam_adjacent[st][sk].is_some() || in_seam[st] {
                    return None;
                }
                hull_claimed += 1;
            }
        }
    }
    // Every seam edge without a seam triangle beyond it must have been met by a fixed one,
    // and the hull covered once.
    let mut open = 0usize;
    let mut seam_hull = 0usize;
    for t in (0..seam_triangles.len()).filter(|&t| in_seam[t]) {
        for k in 0..3 {
            match seam_adjacent[t][k] {
                None => seam_hull += 1,
                Some(o) if !in_seam[o] => open += 1,
                Some(_) => {}
            }
        }
    }
    if open != claimed || seam_hull + hull_claimed != hull.len() {
        return None;
    }
    Some(Mesh { triangles, adjacent, hull, kept })
}

/// `representative[i]`: the smallest input row at the location of row `i`.
///
/// Locations are compared as spade compares them (after the same exact scaling, `==` on
/// coordinates), so the groups found here are exactly the vertices spade merged.
fn representatives(points: &[Point], scale: Scale, kept: usize) -> Vec<usize> {
    if kept == points.len() {
        return (0..points.len()).collect();
    }
    let mut first_row: HashMap<(u64, u64), usize> = HashMap::with_capacity(kept);
    points
        .iter()
        .enumerate()
        .map(|(row, &p)| *first_row.entry(position_key(scale.apply(p))).or_insert(row))
        .collect()
}

impl Triangulation {
    /// Every vertex's neighbours (the other ends of its edges) as CSR: the neighbours of row
    /// `i` are `adjacent[offsets[i]..offsets[i + 1]]`; rows that repeat an earlier location
    /// have none.
    pub fn neighbours(&self) -> (Vec<usize>, Vec<usize>) {
        neighbour_lists(self.representative.len(), &self.edges)
    }
}

/// CSR neighbour lists `(offsets, adjacent)` of `n` vertices from undirected edges.
pub(crate) fn neighbour_lists(n: usize, edges: &[[usize; 2]]) -> (Vec<usize>, Vec<usize>) {
    let mut offsets = vec![0usize; n + 1];
    for &[a, b] in edges {
        offsets[a + 1] += 1;
        offsets[b + 1] += 1;
    }
    for i in 0..n {
        offsets[i + 1] += offsets[i];
    }
    let mut fill = offsets.clone();
    let mut adjacent = vec![0usize; offsets[n]];
    for &[a, b] in edges {
        adjacent[fill[a]] = b;
        fill[a] += 1;
        adjacent[fill[b]] = a;
        fill[b] += 1;
    }
    (offsets, adjacent)
}

/// Check the structural invariants of a triangulation of `points`: counter-clockwise
/// triangles, symmetric adjacency, the empty-circumcircle property (exact `incircle`),
/// Euler's counts `t = 2n − 2 − h` and `e = 3n − 3 − h`, a counter-clockwise convex hull and
/// representatives that keep their location. Returns a description of the first violation.
///
/// # Runtime
/// O(t) for the local checks; the empty-circumcircle check is the local Delaunay condition
/// across every interior edge, which for a triangulation is equivalent to the global one
/// (Delaunay 1934).
pub fn check_triangulation(points: &[Point], t: &Triangulation) -> std::result::Result<(), String> {
    use crate::geometry::predicates::{incircle, orient2d};
    let n_vertices = t.representative.iter().enumerate().filter(|&(i, &r)| i == r).count();
    for (i, &r) in t.representative.iter().enumerate() {
        if !(points[r][0] == points[i][0] && points[r][1] == points[i][1]) {
            return Err(format!("representative of row {i} is at another location"));
        }
        if t.representative[r] != r {
            return Err(format!("representative of row {i} is not itself a vertex"));
        }
    }
    let h = t.hull.len();
    if t.triangles.len() != 2 * n_vertices - 2 - h {
        return Err(format!("{} triangles, Euler's formula wants {}", t.triangles.len(), 2 * n_vertices - 2 - h));
    }
    if t.edges.len() != 3 * n_vertices - 3 - h {
        return Err(format!("{} edges, Euler's formula wants {}", t.edges.len(), 3 * n_vertices - 3 - h));
    }
    for (ti, tri) in t.triangles.iter().enumerate() {
        let [a, b, c] = tri.map(|v| points[v]);
        if orient2d(a, b, c) <= 0.0 {
            return Err(format!("triangle {ti} is not counter-clockwise"));
        }
        for k in 0..3 {
            let Some(other) = t.adjacent[ti][k] else { continue };
            let (u, v) = (tri[(k + 1) % 3], tri[(k + 2) % 3]);
            let o = t.triangles[other];
            let Some(j) = (0..3).find(|&j| o[(j + 1) % 3] == v && o[(j + 2) % 3] == u) else {
                return Err(format!("triangles {ti} and {other} do not share edge {u}-{v}"));
            };
            if t.adjacent[other][j] != Some(ti) {
                return Err(format!("adjacency of {ti} and {other} is not symmetric"));
            }
            if incircle(a, b, c, points[o[j]]) > 0.0 {
                return Err(format!("vertex {} lies inside the circumcircle of triangle {ti}", o[j]));
            }
        }
    }
    for i in 0..h {
        let (a, b, c) = (points[t.hull[i]], points[t.hull[(i + 1) % h]], points[t.hull[(i + 2) % h]]);
        if orient2d(a, b, c) < 0.0 {
            return Err(format!("hull turns clockwise at position {}", (i + 1) % h));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn lcg_cloud(n: usize, seed: u64, offset: Point) -> Vec<Point> {
        let mut s = seed;
        let mut next = || {
            s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            (s >> 11) as f64 / (1u64 << 53) as f64
        };
        (0..n).map(|_| [offset[0] + next(), offset[1] + next()]).collect()
    }

    #[test]
    fn grid_has_two_triangles_per_cell() {
        // Closed form: a k × k grid of unit cells is split into 2 (k − 1)² triangles.
        for k in [2usize, 3, 7, 20] {
            let pts: Vec<Point> = (0..k * k).map(|i| [(i % k) as f64, (i / k) as f64]).collect();
            let t = delaunay(&pts).unwrap();
            assert_eq!(t.triangles.len(), 2 * (k - 1) * (k - 1));
            check_triangulation(&pts, &t).unwrap();
        }
    }

    #[test]
    fn random_and_far_offset_clouds_satisfy_invariants() {
        // Euler's formula and the empty-circumcircle property (exact predicate).
        for (seed, offset) in [(1, [0.0, 0.0]), (2, [500_000.0, 6_000_000.0]), (3, [-1e9, 3e8])] {
            let pts = lcg_cloud(2000, seed, offset);
            let t = delaunay(&pts).unwrap();
            check_triangulation(&pts, &t).unwrap();
        }
    }

    #[test]
    fn duplicates_map_to_smallest_row() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [1.0, 0.0], [-0.0, 0.0], [0.0, 1.0], [2.0, 2.0]];
        let t = delaunay(&pts).unwrap();
        assert_eq!(t.representative, vec![0, 1, 2, 1, 0, 2, 6]);
        check_triangulation(&pts, &t).unwrap();
        assert_eq!(t.triangles.len(), 2);
    }

    #[test]
    fn degenerate_inputs_are_refused() {
        let collinear: Vec<Point> = (0..10).map(|i| [i as f64, 2.0 * i as f64]).collect();
        assert!(matches!(delaunay(&collinear), Err(Error::Degenerate { .. })));
        let two = [[0.0, 0.0], [1.0, 1.0], [0.0, 0.0], [1.0, 1.0]];
        assert!(matches!(delaunay(&two), Err(Error::TooFewPoints { needed: 3, got: 2, .. })));
        assert!(matches!(delaunay(&[[0.0, 0.0]]), Err(Error::TooFewPoints { got: 1, .. })));
        let nan = [[0.0, 0.0], [1.0, f64::NAN], [1.0, 1.0]];
        assert!(matches!(delaunay(&nan), Err(Error::NonFiniteCoordinate { index: 1, .. })));
    }

    #[test]
    fn extreme_magnitudes_are_triangulated() {
        // Outside spade's accepted exponent range the input is scaled exactly by a power of
        // two, so the triangulation equals that of the same cloud at unit scale (the exact
        // predicates of the checker would overflow or underflow at the original scale).
        let unit = lcg_cloud(200, 9, [-0.5, -0.5]);
        let reference = delaunay(&unit).unwrap();
        check_triangulation(&unit, &reference).unwrap();
        for factor in [2f64.powi(990), 2f64.powi(-990)] {
            let scaled: Vec<Point> = unit.iter().map(|p| [p[0] * factor, p[1] * factor]).collect();
            assert_eq!(delaunay(&scaled).unwrap(), reference);
        }
    }

    #[test]
    fn cocircular_points_are_triangulated() {
        // Closed form: 16 points on a circle (a convex polygon) give 16 − 2 triangles.
        let pts: Vec<Point> = (0..16)
            .map(|i| {
                let a = i as f64 * std::f64::consts::PI / 8.0;
                [a.cos(), a.sin()]
            })
            .collect();
        let t = delaunay(&pts).unwrap();
        assert_eq!(t.triangles.len(), 14);
        check_triangulation(&pts, &t).unwrap();
    }

    /// The triangles as a set of sorted vertex triples.
    fn triangle_set(t: &Triangulation) -> std::collections::BTreeSet<[usize; 3]> {
        t.triangles
            .iter()
            .map(|tri| {
                let mut s = *tri;
                s.sort_unstable();
                s
            })
            .collect()
    }

    fn positions(points: &[Point]) -> Vec<Point2<f64>> {
        let scale = Scale::of(points);
        points.iter().map(|&p| scale.apply(p)).collect()
    }

    #[test]
    fn points_on_few_lines_take_the_randomised_insertion() {
        // Three columns and two rows of points: the sweep's worst case. Checked by Euler's
        // counts and the exact empty-circumcircle test.
        let mut random = crate::geometry::random::SplitMix64::new(3);
        let columns: Vec<Point> = (0..6000).map(|i| [(i % 3) as f64, random.next_f64()]).collect();
        let rows: Vec<Point> = (0..6000).map(|i| [random.next_f64() * 100.0, (i % 2) as f64]).collect();
        for pts in [columns, rows] {
            let vertices: Vec<Vertex> =
                positions(&pts).into_iter().enumerate().map(|(row, position)| Vertex { position, row }).collect();
            assert!(lies_on_lines(&vertices));
            let t = delaunay(&pts).unwrap();
            check_triangulation(&pts, &t).unwrap();
        }
        let generic: Vec<Vertex> = positions(&lcg_cloud(5000, 4, [0.0, 0.0]))
            .into_iter()
            .enumerate()
            .map(|(row, position)| Vertex { position, row })
            .collect();
        assert!(!lies_on_lines(&generic));
    }

    #[test]
    fn hilbert_curve_visits_the_corner_square_cell_by_cell() {
        // Property of the Hilbert curve (Hilbert 1891): its first 4^k cells fill a
        // 2^k × 2^k corner square, and consecutive cells share a side.
        let side = 64u32;
        let mut by_index = vec![None; (side * side) as usize];
        for x in 0..side {
            for y in 0..side {
                let i = hilbert_index(x, y) as usize;
                assert!(i < by_index.len() && by_index[i].is_none(), "cell ({x}, {y}) -> {i}");
                by_index[i] = Some((x as i64, y as i64));
            }
        }
        for pair in by_index.windows(2) {
            let ((x0, y0), (x1, y1)) = (pair[0].unwrap(), pair[1].unwrap());
            assert_eq!((x0 - x1).abs() + (y0 - y1).abs(), 1);
        }
    }

    #[test]
    fn strips_stitch_to_the_whole_triangulation() {
        // In general position the Delaunay triangulation is unique (Delaunay 1934), so the
        // stitched one must hold exactly the triangles of the one built whole.
        let mut clustered = lcg_cloud(10_000, 14, [0.0, 0.0]);
        clustered.iter_mut().for_each(|p| *p = [p[0] * 0.001, p[1] * 0.001]);
        clustered.extend(lcg_cloud(20_000, 15, [-0.5, -0.5]).iter().map(|p| [p[0] * 50.0, p[1] * 50.0]));
        let clouds = [
            (lcg_cloud(30_000, 11, [0.0, 0.0]), 2),
            (lcg_cloud(30_000, 12, [500_000.0, 6_000_000.0]), 3),
            (lcg_cloud(30_000, 13, [-1e9, 3e8]), 8),
            (clustered, 4),
        ];
        for (seed, (pts, strips)) in clouds.into_iter().enumerate() {
            assert!(by_strips(&positions(&pts), strips).is_some(), "cloud {seed}: the stitch was refused");
            let stitched = delaunay_in_strips(&pts, strips).unwrap();
            check_triangulation(&pts, &stitched).unwrap();
            let whole = delaunay_in_strips(&pts, 1).unwrap();
            assert_eq!(triangle_set(&stitched), triangle_set(&whole));
            assert_eq!(stitched.hull, whole.hull);
            let mut a = stitched.edges.clone();
            let mut b = whole.edges.clone();
            a.sort_unstable();
            b.sort_unstable();
            assert_eq!(a, b);
        }
    }

    #[test]
    fn strips_stitch_grids_and_repeats() {
        // Cocircular cells and repeated rows: the stitch keeps a Delaunay triangulation
        // (exact in-circle check), 2 (k − 1)² triangles for a k × k grid (closed form).
        let k = 150usize;
        let mut pts: Vec<Point> = (0..k * k).map(|i| [(i % k) as f64, (i / k) as f64]).collect();
        assert!(by_strips(&positions(&pts), 4).is_some(), "the grid stitch was refused");
        let t = delaunay_in_strips(&pts, 4).unwrap();
        assert_eq!(t.triangles.len(), 2 * (k - 1) * (k - 1));
        check_triangulation(&pts, &t).unwrap();
        pts.extend_from_within(..500);
        let t = delaunay_in_strips(&pts, 3).unwrap();
        assert_eq!(t.triangles.len(), 2 * (k - 1) * (k - 1));
        assert_eq!(t.representative[k * k + 7], 7);
        check_triangulation(&pts, &t).unwrap();
    }

    #[test]
    fn strips_that_cannot_be_triangulated_fall_back() {
        // Two columns of points: each strip is collinear, so the input is triangulated whole.
        let pts: Vec<Point> = (0..200).map(|i| [(i % 2) as f64, (i / 2) as f64]).collect();
        assert!(by_strips(&positions(&pts), 2).is_none());
        let t = delaunay_in_strips(&pts, 2).unwrap();
        check_triangulation(&pts, &t).unwrap();
        assert_eq!(t.triangles.len(), 2 * 99);
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]
        #[test]
        fn stitched_integer_clouds_satisfy_invariants(
            raw in proptest::collection::vec((-8i32..8, -8i32..8), 3..200),
            strips in 2usize..6,
        ) {
            // Heavily degenerate input through the stitched path (or its fallback).
            let pts: Vec<Point> = raw.iter().map(|&(x, y)| [x as f64, y as f64]).collect();
            match delaunay_in_strips(&pts, strips) {
                Ok(t) => prop_assert_eq!(check_triangulation(&pts, &t), Ok(())),
                Err(e) => prop_assert!(e.is_degenerate()),
            }
        }

        #[test]
        fn stitched_clouds_equal_whole(seed in 0u64..1000, strips in 2usize..6) {
            // General position: unique triangulation (Delaunay 1934), stitched = whole.
            let pts = lcg_cloud(3000, seed, [0.0, 0.0]);
            let stitched = delaunay_in_strips(&pts, strips).unwrap();
            prop_assert_eq!(check_triangulation(&pts, &stitched), Ok(()));
            prop_assert_eq!(triangle_set(&stitched), triangle_set(&delaunay_in_strips(&pts, 1).unwrap()));
        }

        #[test]
        fn integer_clouds_with_repeats_satisfy_invariants(
            raw in proptest::collection::vec((-6i32..6, -6i32..6), 3..60)
        ) {
            // Small integer coordinates: many duplicates, collinear runs and cocircular quads.
            let pts: Vec<Point> = raw.iter().map(|&(x, y)| [x as f64, y as f64]).collect();
            match delaunay(&pts) {
                Ok(t) => prop_assert_eq!(check_triangulation(&pts, &t), Ok(())),
                Err(e) => prop_assert!(e.is_degenerate()),
            }
        }
    }
}
