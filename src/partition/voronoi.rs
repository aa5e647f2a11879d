//! Voronoi cells of sites, clipped to a study region (non-convex, with holes, in several
//! parts).
//!
//! Each site's cell is the intersection of the region's bounding box with the half-planes
//! closer to the site than to each of its Delaunay neighbours (the Voronoi cell is determined
//! by the Delaunay neighbours alone: Delaunay 1934, Voronoi 1908), cut one half-plane at a
//! time (Sutherland & Hodgman 1974) in a local frame scaled by a power of two. A rectangular
//! region ends there. Any other region is normalised once and every cell that meets its
//! boundary is intersected with it by `i_overlay` on a 64-bit integer grid shared by all
//! cells; cells clear of the boundary are kept or dropped whole after one ray-crossing test.

use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

use i_overlay::core::fill_rule::FillRule;
use i_overlay::core::overlay::ShapeType;
use i_overlay::core::overlay_rule::OverlayRule;
use i_overlay::core::solver::Solver;
use i_overlay::float::overlay::{FloatOverlay, OverlayOptions};
use i_overlay::i_float::adapter::FloatPointAdapter;
use i_overlay::i_float::float::rect::FloatRect;
use rayon::prelude::*;
use rstar::primitives::{GeomWithData, Line};
use rstar::{RTree, AABB};

use super::delaunay::{delaunay_watched, neighbour_lists};
use crate::batch::{run_grouped_placed, GroupWatch, Grouped, OnGroupError, RowPlaces};
use crate::cancel::{cancelled, each_watched, Watch};
use crate::error::{Error, Result};
use crate::geometry::predicates::{all_collinear, orient2d};
use crate::geometry::region::checked_rings;
use crate::geometry::{
    dot, location_key, ring_signed_area, sub, validate_points, BoundingBox, Point, Weights, WorkingFrame,
};

/// A study region as closed rings (exteriors and holes alike; a point is inside when it is
/// enclosed by an odd number of rings). Ring `r` is `vertices[ring_offsets[r]..ring_offsets[r + 1]]`;
/// a ring may repeat its first vertex at its end. Rings may touch at vertices but must not
/// cross or overlap along an edge (checked: see [`checked_rings`]).
#[derive(Debug, Clone, Copy)]
pub struct Region<'a> {
    /// Every ring's vertices, one ring after another.
    pub vertices: &'a [Point],
    /// `R + 1` ascending offsets into `vertices`, from 0 to `vertices.len()`.
    pub ring_offsets: &'a [usize],
}

/// Voronoi cells clipped to a region, as rings of vertices.
///
/// Cell `i` is the rings `parts[r]..parts[r + 1]` lying in `vertices[offsets[i]..offsets[i + 1]]`:
/// each piece is a counter-clockwise exterior ring followed by its clockwise holes
/// (`exterior[r]` tells which). Rings are
/// not closed (the first vertex is not repeated); an empty cell has no rings.
#[derive(Debug, Clone, PartialEq)]
pub struct VoronoiCells {
    /// All ring vertices.
    pub vertices: Vec<Point>,
    /// `n + 1` offsets into `vertices`, one cell per site.
    pub offsets: Vec<usize>,
    /// `R + 1` offsets into `vertices`, one ring after another (every cell offset is one of them).
    pub parts: Vec<usize>,
    /// Area of each cell (exteriors minus holes).
    pub area: Vec<f64>,
    /// `exterior[r]`: whether ring `r` is a piece's exterior (else a hole of the exterior
    /// before it).
    pub exterior: Vec<bool>,
}

impl VoronoiCells {
    /// The cells of a grouped run ([`voronoi_cells_grouped`]) laid out by input row: cell `i`
    /// is that of site row `i`. The sites of a skipped group have empty cells and a NaN area.
    pub fn by_row(grouped: &Grouped<VoronoiCells>, places: &RowPlaces) -> VoronoiCells {
        VoronoiCells::by_row_of(grouped, places, |cells| cells)
    }

    /// [`VoronoiCells::by_row`] for grouped results that hold their cells in a field.
    pub(super) fn by_row_of<T>(
        grouped: &Grouped<T>,
        places: &RowPlaces,
        cells_of: impl Fn(&T) -> &VoronoiCells,
    ) -> VoronoiCells {
        let mut out = VoronoiCells::empty();
        for (&g, &k) in places.group.iter().zip(&places.within) {
            match grouped.results[g].as_ref().map(&cells_of) {
                Ok(cells) => out.push_cell_of(cells, k),
                Err(_) => out.push_empty(f64::NAN),
            }
        }
        out
    }

    /// Cells picked by row: cell `i` is cell `pick[i]` of `self`, or empty (area 0) for `None`.
    pub(crate) fn picked(&self, pick: &[Option<usize>]) -> VoronoiCells {
        let mut out = VoronoiCells::empty();
        for &k in pick {
            match k {
                Some(k) => out.push_cell_of(self, k),
                None => out.push_empty(0.0),
            }
        }
        out
    }

    /// No cells.
    fn empty() -> VoronoiCells {
        VoronoiCells { vertices: Vec::new(), offsets: vec![0], parts: vec![0], area: Vec::new(), exterior: Vec::new() }
    }

    /// Append cell `k` of `cells`.
    fn push_cell_of(&mut self, cells: &VoronoiCells, k: usize) {
        let (lo, hi) = (cells.offsets[k], cells.offsets[k + 1]);
        let shift = self.vertices.len() - lo;
        let first = cells.parts.partition_point(|&p| p <= lo);
        let last = cells.parts.partition_point(|&p| p <= hi);
        self.parts.extend(cells.parts[first..last].iter().map(|&p| p + shift));
        // The ends parts[first..last] close rings first - 1 .. last - 1 (parts[0] = 0).
        self.exterior.extend_from_slice(&cells.exterior[first - 1..last - 1]);
        self.vertices.extend_from_slice(&cells.vertices[lo..hi]);
        self.area.push(cells.area[k]);
        self.offsets.push(self.vertices.len());
    }

    /// Append a cell without rings.
    fn push_empty(&mut self, area: f64) {
        self.area.push(area);
        self.offsets.push(self.vertices.len());
    }
}

/// The default region: the sites' bounding box grown by 10 % on every side (by at least
/// 2^-20 of a tenth of its longest side, and by that tenth across a flat box).
pub(crate) fn default_rings(sites: &[Point]) -> Result<Vec<Vec<Point>>> {
    let b = BoundingBox::of(sites).expect("sites validated non-empty");
    let (w, h) = (b.max[0] - b.min[0], b.max[1] - b.min[1]);
    // A flat box (sites on one horizontal or vertical line) grows by a tenth of its length
    // across as well.
    let grow = 0.1 * w.max(h);
    if grow <= 0.0 || grow.is_nan() {
        return Err(Error::Degenerate {
            argument: "region",
            reason: "the sites' bounding box has no extent (all sites coincide); pass a region".into(),
        });
    }
    // A nearly flat box grows across by at least 2^-20 of its growth along, far above the weld's
    // reach (2^-40 of the region's size), so its cells keep their area.
    let floor = grow * 2f64.powi(-20);
    let (dx, dy) =
        (if w > 0.0 { (0.1 * w).max(floor) } else { grow }, if h > 0.0 { (0.1 * h).max(floor) } else { grow });
    let (lo, hi) = ([b.min[0] - dx, b.min[1] - dy], [b.max[0] + dx, b.max[1] + dy]);
    Ok(vec![vec![lo, [hi[0], lo[1]], hi, [lo[0], hi[1]]]])
}

/// The region's rings, checked as every region is ([`checked_rings`]: vertices, offsets,
/// rings with area, and no edges that cross or overlap, which would make the even-odd
/// set differ from the polygon the rings draw).
pub(super) fn region_rings(region: Region<'_>) -> Result<Vec<Vec<Point>>> {
    checked_rings(region.vertices, region.ring_offsets)
}

/// True when the rings are one rectangle with axis-aligned sides.
fn is_axis_rectangle(rings: &[Vec<Point>]) -> bool {
    let [ring] = rings else { return false };
    if ring.len() != 4 {
        return false;
    }
    let b = BoundingBox::of(ring).expect("four vertices");
    let corner = |p: &Point| (p[0] == b.min[0] || p[0] == b.max[0]) && (p[1] == b.min[1] || p[1] == b.max[1]);
    let axis_step = |p: Point, q: Point| (p[0] == q[0]) != (p[1] == q[1]);
    b.min[0] < b.max[0]
        && b.min[1] < b.max[1]
        && ring.iter().all(corner)
        && (0..4).all(|i| axis_step(ring[i], ring[(i + 1) % 4]))
}

/// Refuse repeated sites, naming the first repeat.
pub(super) fn check_distinct(sites: &[Point]) -> Result<()> {
    let mut seen: HashMap<(u64, u64), usize> = HashMap::with_capacity(sites.len());
    for (j, &p) in sites.iter().enumerate() {
        if let Some(&i) = seen.get(&location_key(p)) {
            return Err(Error::RepeatedPoint { argument: "sites", row: j, first: i });
        }
        seen.insert(location_key(p), j);
    }
    Ok(())
}

/// Voronoi neighbours of every site as CSR (offsets, indices): the Delaunay neighbours, or
/// the previous and next site along the line when all sites are collinear. A step of
/// `watch` per site, as [`delaunay_watched`] counts them.
fn neighbours(sites: &[Point], watch: &Watch) -> Result<(Vec<usize>, Vec<usize>)> {
    let n = sites.len();
    let mut pairs: Vec<[usize; 2]> = Vec::new();
    if n >= 3 && !all_collinear(sites) {
        pairs = delaunay_watched(sites, watch)?.edges;
    } else {
        if n >= 2 {
            let dir = sub(sites[1], sites[0]);
            let mut order: Vec<usize> = (0..n).collect();
            order.sort_by(|&a, &b| dot(sub(sites[a], sites[0]), dir).total_cmp(&dot(sub(sites[b], sites[0]), dir)));
            pairs.extend(order.windows(2).map(|w| [w[0], w[1]]));
        }
        // The steps the triangulation would have counted.
        watch.plan(n as u64);
        watch.advance(n as u64);
    }
    Ok(neighbour_lists(n, &pairs))
}

/// Keep the part of convex polygon `poly` no farther from `v` than from `u`
/// (one Sutherland–Hodgman step against the perpendicular bisector of `v u`).
fn clip_to_bisector(poly: &[Point], v: Point, u: Point, out: &mut Vec<Point>) {
    let m = [0.5 * (u[0] + v[0]), 0.5 * (u[1] + v[1])];
    clip_to_half_plane(poly, m, sub(u, v), out);
}

/// Keep the part of convex polygon `poly` where `(p - m) · d <= 0` (one Sutherland–Hodgman
/// step, Sutherland & Hodgman 1974).
pub(super) fn clip_to_half_plane(poly: &[Point], m: Point, d: Point, out: &mut Vec<Point>) {
    out.clear();
    let side = |p: Point| dot(sub(p, m), d);
    let n = poly.len();
    for i in 0..n {
        let (p, q) = (poly[i], poly[(i + 1) % n]);
        let (sp, sq) = (side(p), side(q));
        if sp <= 0.0 {
            out.push(p);
        }
        if (sp < 0.0 && sq > 0.0) || (sp > 0.0 && sq < 0.0) {
            let t = sp / (sp - sq);
            out.push([p[0] + t * (q[0] - p[0]), p[1] + t * (q[1] - p[1])]);
        }
    }
    out.dedup();
    while out.len() > 1 && out.first() == out.last() {
        out.pop();
    }
}

/// The cell of `sites[i]` within the convex polygon `start` (all in the local frame).
fn convex_cell(
    i: usize,
    sites: &[Point],
    adjacent: &[usize],
    start: &[Point],
    buffers: &mut (Vec<Point>, Vec<Point>),
) -> Vec<Point> {
    clip_convex(start, adjacent, buffers, |ring, j, out| clip_to_bisector(ring, sites[i], sites[j], out))
}

/// The convex polygon `start` cut by one half-plane per neighbour in `adjacent` in turn
/// (`clip(ring, j, out)` writes the part of `ring` kept against neighbour `j` into `out`;
/// the two buffers take turns as ring and output). Empty once fewer than three vertices
/// remain, or when what is left has no positive area.
pub(super) fn clip_convex(
    start: &[Point],
    adjacent: &[usize],
    buffers: &mut (Vec<Point>, Vec<Point>),
    mut clip: impl FnMut(&[Point], usize, &mut Vec<Point>),
) -> Vec<Point> {
    let (a, b) = buffers;
    a.clear();
    a.extend_from_slice(start);
    for &j in adjacent {
        clip(a, j, b);
        std::mem::swap(a, b);
        if a.len() < 3 {
            return Vec::new();
        }
    }
    if ring_signed_area(a) > 0.0 {
        a.clone()
    } else {
        Vec::new()
    }
}

type Edge = GeomWithData<Line<Point>, ()>;

/// The normalised region: rings (exteriors counter-clockwise, holes clockwise) and an index
/// of its edges.
struct ClipRegion {
    shapes: Vec<Vec<Vec<Point>>>,
    /// The area of `shapes` (local units).
    area: f64,
    edges: RTree<Edge>,
    adapter: FloatPointAdapter<Point, i64>,
    max_x: f64,
}

impl ClipRegion {
    fn new(rings: &[Vec<Point>], bounds: BoundingBox) -> Result<ClipRegion> {
        let rect = FloatRect::new(bounds.min[0], bounds.max[0], bounds.min[1], bounds.max[1]).map_err(|e| {
            Error::Degenerate { argument: "region", reason: format!("region bounds rejected by the clipper ({e:?})") }
        })?;
        let adapter = FloatPointAdapter::<Point, i64>::new(rect);
        let capacity = rings.iter().map(Vec::len).sum();
        let mut overlay = FloatOverlay::new_custom(adapter.clone(), OverlayOptions::ogc(), Solver::default(), capacity);
        for ring in rings {
            overlay = overlay.unsafe_add_contour(ring, ShapeType::Subject);
        }
        let shapes = overlay.overlay(OverlayRule::Subject, FillRule::EvenOdd);
        let area: f64 = shapes.iter().flatten().map(|ring| ring_signed_area(ring)).sum();
        if area <= 0.0 || area.is_nan() {
            return Err(Error::Degenerate { argument: "region", reason: "the region has no area".into() });
        }
        let segments: Vec<Edge> = shapes
            .iter()
            .flatten()
            .flat_map(|ring| (0..ring.len()).map(move |k| Line::new(ring[k], ring[(k + 1) % ring.len()])))
            .map(|line| GeomWithData::new(line, ()))
            .collect();
        Ok(ClipRegion { shapes, area, edges: RTree::bulk_load(segments), adapter, max_x: bounds.max[0] })
    }

    /// Point-in-region by crossing parity of a ray towards +x (exact orientation tests).
    fn contains(&self, p: Point) -> bool {
        let ray = AABB::from_corners(p, [self.max_x.max(p[0]), p[1]]);
        let crossings =
            self.edges.locate_in_envelope_intersecting(ray).filter(|e| ray_crosses(e.geom().from, e.geom().to, p));
        crossings.count() % 2 == 1
    }

    /// The convex cell intersected with the region, as pieces (exterior, then holes).
    fn clip(&self, cell: Vec<Point>) -> Vec<Vec<Vec<Point>>> {
        if cell.is_empty() {
            return Vec::new();
        }
        let b = BoundingBox::of(&cell).expect("non-empty cell");
        let envelope = AABB::from_corners(b.min, b.max);
        if self.edges.locate_in_envelope_intersecting(envelope).next().is_none() {
            // Clear of the boundary: wholly inside or wholly outside.
            return if self.contains(cell[0]) { vec![vec![cell]] } else { Vec::new() };
        }
        let capacity = cell.len() + self.shapes.iter().flatten().map(Vec::len).sum::<usize>();
        // Collinear vertices are kept: a region vertex on a cell's edge is a vertex of the
        // neighbouring cell too, and a coverage needs it on both sides.
        let mut options = OverlayOptions::ogc();
        options.preserve_output_collinear = true;
        let mut overlay = FloatOverlay::new_custom(self.adapter.clone(), options, Solver::default(), capacity)
            .unsafe_add_contour(&cell, ShapeType::Subject);
        for ring in self.shapes.iter().flatten() {
            overlay = overlay.unsafe_add_contour(ring, ShapeType::Clip);
        }
        overlay.overlay(OverlayRule::Intersect, FillRule::EvenOdd)
    }
}

/// Multiplicative hashing of grid keys (Knuth's golden-ratio constant): keys are small
/// integers, so SipHash's resistance to adversarial keys buys nothing here.
#[derive(Default)]
pub(crate) struct GridHasher(u64);

impl Hasher for GridHasher {
    fn finish(&self) -> u64 {
        self.0
    }

    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.write_u64(u64::from(b));
        }
    }

    fn write_i64(&mut self, v: i64) {
        self.write_u64(v as u64);
    }

    fn write_u64(&mut self, v: u64) {
        self.0 = (self.0.rotate_left(5) ^ v).wrapping_mul(0x9e37_79b9_7f4a_7c15);
    }
}

type GridMap<V> = HashMap<(i64, i64), V, BuildHasherDefault<GridHasher>>;

/// Welds vertices closer than `tol` (in each coordinate) into one, the first met, so that
/// neighbouring cells, computed independently, share their vertices bit for bit and the
/// cells form a clean coverage.
///
/// # Runtime
/// O(1) expected per vertex: one hash lookup, plus a 3 × 3 neighbourhood search for a new one.
struct Welder {
    tol: f64,
    inv: f64,
    exact: HashMap<(u64, u64), Point, BuildHasherDefault<GridHasher>>,
    heads: GridMap<usize>,
    /// Distinct vertices with the next one in the same grid square.
    kept: Vec<(Point, usize)>,
}

impl Welder {
    fn new(tol: f64) -> Welder {
        Welder { tol, inv: 1.0 / tol, exact: HashMap::default(), heads: HashMap::default(), kept: Vec::new() }
    }

    fn point(&mut self, p: Point) -> Point {
        let bits = location_key(p);
        if let Some(&q) = self.exact.get(&bits) {
            return q;
        }
        let (kx, ky) = ((p[0] * self.inv).floor() as i64, (p[1] * self.inv).floor() as i64);
        let mut found = None;
        'search: for dx in -1..=1 {
            for dy in -1..=1 {
                let mut at = self.heads.get(&(kx + dx, ky + dy)).copied().unwrap_or(usize::MAX);
                while at != usize::MAX {
                    let (q, next) = self.kept[at];
                    if (q[0] - p[0]).abs() <= self.tol && (q[1] - p[1]).abs() <= self.tol {
                        found = Some(q);
                        break 'search;
                    }
                    at = next;
                }
            }
        }
        let q = found.unwrap_or_else(|| {
            let next = self.heads.insert((kx, ky), self.kept.len()).unwrap_or(usize::MAX);
            self.kept.push((p, next));
            p
        });
        self.exact.insert(bits, q);
        q
    }

    /// Weld a ring's vertices and drop the repeats that welding makes consecutive.
    fn ring(&mut self, ring: &mut Vec<Point>) {
        for p in ring.iter_mut() {
            *p = self.point(*p);
        }
        ring.dedup();
        while ring.len() > 1 && ring.first() == ring.last() {
            ring.pop();
        }
    }
}

/// Split a ring at every vertex it visits twice (where welding pinched it) into simple rings.
fn split_pinched(ring: &[Point], out: &mut Vec<Vec<Point>>) {
    let mut stack: Vec<Point> = Vec::with_capacity(ring.len());
    for &p in ring {
        if let Some(j) = stack.iter().position(|&q| q == p) {
            out.push(stack.split_off(j));
        }
        stack.push(p);
    }
    out.push(stack);
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

/// Even-odd point-in-ring test.
fn ring_contains(ring: &[Point], p: Point) -> bool {
    (0..ring.len()).filter(|&k| ray_crosses(ring[k], ring[(k + 1) % ring.len()], p)).count() % 2 == 1
}

/// Rebuild a welded cell's pieces: simple rings, counter-clockwise exteriors each followed
/// by the clockwise holes inside it; rings left without area are dropped.
fn repair(cell: Vec<Vec<Vec<Point>>>) -> Vec<Vec<Vec<Point>>> {
    let mut rings = Vec::new();
    for ring in cell.iter().flatten() {
        split_pinched(ring, &mut rings);
    }
    rings.retain(|r| r.len() >= 3 && ring_signed_area(r) != 0.0);
    let (exteriors, holes): (Vec<_>, Vec<_>) = rings.into_iter().partition(|r| ring_signed_area(r) > 0.0);
    let mut pieces: Vec<Vec<Vec<Point>>> = exteriors.into_iter().map(|r| vec![r]).collect();
    for hole in holes {
        // The exterior holding most of the hole's edge midpoints (midpoints may touch a shell).
        let midpoints: Vec<Point> = (0..hole.len())
            .map(|k| {
                let (a, b) = (hole[k], hole[(k + 1) % hole.len()]);
                [0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])]
            })
            .collect();
        let best =
            (0..pieces.len()).max_by_key(|&e| midpoints.iter().filter(|&&m| ring_contains(&pieces[e][0], m)).count());
        if let Some(e) = best {
            pieces[e].push(hole);
        }
    }
    pieces
}

/// Voronoi cells of `sites` clipped to `region` (default: the sites' bounding box grown by
/// 10 % on every side).
///
/// A site outside the region keeps its clipped, possibly empty, cell. The cells tile the
/// region: their areas sum to the region's area, up to rounding, and neighbouring cells
/// share their vertices exactly (copies of one vertex closer than 2^-40 of the region's size
/// are welded into one).
///
/// # Errors
/// - [`Error::TooFewPoints`] when `sites` is empty;
/// - [`Error::NonFiniteCoordinate`] for a NaN or infinite coordinate (sites or region);
/// - [`Error::Degenerate`] for repeated sites, a region without area or with edges that
///   cross or overlap (a self-crossing ring, overlapping parts), or (without a region) sites
///   that all coincide;
/// - [`Error::InvalidParameter`] for ring offsets that do not describe the vertices.
///
/// # Runtime
/// O(n log n) for the triangulation plus O(n) half-plane cuts; with a non-rectangular region,
/// O(m) more for each of the cells meeting its m-vertex boundary.
pub fn voronoi_cells(sites: &[Point], region: Option<Region<'_>>) -> Result<VoronoiCells> {
    voronoi_cells_watched(sites, region, &Watch::new())
}

/// [`voronoi_cells`] watched: progress counts `3n` steps (a site triangulated, its cell cut
/// from the bisectors, its cell welded and written out; the first as the triangulation's
/// strips end, see [`crate::delaunay_watched`]), and once `watch` is cancelled the run stops
/// when the strips under way end, within one cell per worker thread or within a block of
/// cells. A set of cells is only an answer when whole, so a cancelled run has no answer: its
/// outcome is an error that the caller drops ([`Watch::finish`]). Watching changes nothing
/// in the cells.
///
/// # Errors
/// As [`voronoi_cells`].
pub fn voronoi_cells_watched(sites: &[Point], region: Option<Region<'_>>, watch: &Watch) -> Result<VoronoiCells> {
    let rings = region.map(region_rings).transpose()?;
    cells_within(sites, rings.as_deref(), watch)
}

/// [`voronoi_cells`] of every group of labelled sites, all clipped to the one `region` (or,
/// without one, each group to its own sites' grown bounding box), in parallel (by the crate's
/// grouped runner).
///
/// Each group's cells are those a separate call on its sites gives; errors name input rows
/// (`sites[9] repeats sites[4]`). [`VoronoiCells::by_row`] lays the cells out by input row.
///
/// # Errors
/// The region's own errors ([`Error::NonFiniteCoordinate`], [`Error::InvalidParameter`],
/// [`Error::Degenerate`] for a region without area or with crossing edges) for the whole run;
/// [`Error::LengthMismatch`] when `labels` does not have one entry per site; with
/// [`OnGroupError::Raise`], the errors of [`voronoi_cells`] for the failing group with the
/// smallest label (with `Skip`, they are that group's outcome).
///
/// # Runtime
/// That of [`voronoi_cells`] on each group, the groups in parallel.
pub fn voronoi_cells_grouped(
    sites: &[Point],
    labels: &[i64],
    region: Option<Region<'_>>,
    on_error: OnGroupError,
) -> Result<(Grouped<VoronoiCells>, RowPlaces)> {
    voronoi_cells_grouped_watched(sites, labels, region, on_error, &Watch::new())
}

/// [`voronoi_cells_grouped`] watched: progress counts the sites of finished groups, and once
/// `watch` is cancelled the groups not yet begun are skipped and a running group stops as
/// [`voronoi_cells_watched`] does, with an outcome the caller drops ([`Watch::finish`]).
/// Watching changes nothing in the cells.
///
/// # Errors
/// As [`voronoi_cells_grouped`].
pub fn voronoi_cells_grouped_watched(
    sites: &[Point],
    labels: &[i64],
    region: Option<Region<'_>>,
    on_error: OnGroupError,
    watch: &Watch,
) -> Result<(Grouped<VoronoiCells>, RowPlaces)> {
    let rings = region.map(region_rings).transpose()?;
    let groups = GroupWatch::new(watch, sites.len());
    run_grouped_placed("sites", sites, Weights::Unit, labels, on_error, |group| {
        groups.finished(group.points.len(), |quiet| cells_within(group.points, rings.as_deref(), quiet))
    })
}

/// The cells of `sites` within the region `rings` (checked by [`region_rings`]), or within
/// their grown bounding box, watched as [`voronoi_cells_watched`] says.
fn cells_within(sites: &[Point], rings: Option<&[Vec<Point>]>, watch: &Watch) -> Result<VoronoiCells> {
    validate_points("sites", sites, 1)?;
    check_distinct(sites)?;
    // The cuts and the cells written; the triangulation plans its own steps.
    watch.plan(2 * sites.len() as u64);
    let (offsets, adjacent) = neighbours(sites, watch)?;
    clipped_cells(sites, rings, true, watch, |frame| {
        let scratch = || (Vec::with_capacity(16), Vec::with_capacity(16));
        let cut = |buffers: &mut _, i: usize| {
            convex_cell(i, &frame.sites, &adjacent[offsets[i]..offsets[i + 1]], &frame.start, buffers)
        };
        // A cancelled outcome is told by the watch (`clipped_cells` looks right after).
        each_watched(sites.len(), watch, "sites", scratch, cut).unwrap_or_default()
    })
}

/// Largest share of the region's area the cells may fail to cover (they tile it): cuts
/// lose about 1e-14 of it; a region thinner than the weld's reach loses most of it.
const TILING_TOLERANCE: f64 = 1e-6;

/// Refuse a Voronoi cell that came out empty although its site lies in the region (a
/// Voronoi cell always holds its site): a cell narrower than the weld's reach (2^-40 of the
/// region's size) was welded away. Names the site and the distance to its nearest site.
fn lost_cell(
    sites: &[Point],
    frame: &WorkingFrame,
    weld_reach: f64,
    pieces: &[Vec<Vec<Vec<Point>>>],
    in_region: impl Fn(Point) -> bool,
) -> Result<()> {
    let Some(i) = (0..sites.len()).find(|&i| pieces[i].is_empty() && in_region(frame.to_local(sites[i]))) else {
        return Ok(());
    };
    let nearest = (0..sites.len())
        .filter(|&j| j != i)
        .map(|j| crate::geometry::distance(sites[i], sites[j]))
        .fold(f64::INFINITY, f64::min);
    Err(Error::LostCell { argument: "sites", row: i, nearest, reach: frame.world_length(weld_reach) })
}

/// Cells [`clipped_cells`] welds or writes out between two looks at the watch.
const CELL_BLOCK: usize = 1 << 12;

/// What a convex-cell builder works with: the working frame of the sites and the region,
/// the sites in it, and the region's bounding box in it (the polygon every cell is cut from).
pub(super) struct CellFrame {
    /// The one working frame of the sites and the region.
    pub frame: WorkingFrame,
    /// The sites in local coordinates.
    pub sites: Vec<Point>,
    /// The region's bounding box as a counter-clockwise rectangle, local coordinates.
    pub start: [Point; 4],
}

/// Cells of `sites` in the region `rings` (or their grown bounding box), from the convex
/// cells `convex` computes in the working frame (one counter-clockwise ring per site, empty
/// for an empty cell, each within `start`): they are welded, cut by the region, repaired and
/// mapped back to world coordinates. Voronoi and power cells both end here.
///
/// A step of `watch` per cell written (planned by the caller); once `watch` is cancelled
/// (also while `convex` runs) the outcome is [`cancelled`] within a block of cells.
pub(super) fn clipped_cells(
    sites: &[Point],
    rings: Option<&[Vec<Point>]>,
    cells_hold_their_sites: bool,
    watch: &Watch,
    convex: impl FnOnce(&CellFrame) -> Vec<Vec<Point>>,
) -> Result<VoronoiCells> {
    let stop = || if watch.is_cancelled() { Err(cancelled("sites")) } else { Ok(()) };
    let default;
    let rings = match rings {
        Some(rings) => rings,
        None => {
            default = default_rings(sites)?;
            &default
        }
    };

    // One working frame for the sites and the region: far-offset coordinates lose no digits
    // in the bisector cuts, and the power-of-two scale keeps squares clear of overflow.
    let frame = WorkingFrame::of(&sites.iter().chain(rings.iter().flatten()).copied().collect::<Vec<Point>>());
    let local_sites = frame.local(sites);
    let local_rings: Vec<Vec<Point>> = rings.iter().map(|r| frame.local(r)).collect();
    let b = BoundingBox::of(&local_rings.concat()).expect("rings are non-empty");
    if !(b.min[0] < b.max[0] && b.min[1] < b.max[1]) {
        return Err(Error::Degenerate { argument: "region", reason: "the region has no area".into() });
    }
    let start = [b.min, [b.max[0], b.min[1]], b.max, [b.min[0], b.max[1]]];
    let rectangle = is_axis_rectangle(rings);
    let clip_region = if rectangle { None } else { Some(ClipRegion::new(&local_rings, b)?) };
    let region_area = clip_region.as_ref().map_or((b.max[0] - b.min[0]) * (b.max[1] - b.min[1]), |r| r.area);

    let convex: Vec<Vec<Point>> = convex(&CellFrame { frame, sites: local_sites, start });
    stop()?;

    // 2^-40 of the region's size: far above the rounding of independently computed copies of
    // one vertex, far below any feature of a meaningful region. Welding before the region cut
    // hands the clipper bit-identical shared edges, so it cuts them alike in both cells.
    let size = (b.max[0] - b.min[0]).max(b.max[1] - b.min[1]);
    let weld_reach = size * 2f64.powi(-40);
    let mut welder = Welder::new(weld_reach);
    let mut convex = convex;
    for block in convex.chunks_mut(CELL_BLOCK) {
        stop()?;
        for ring in block {
            welder.ring(ring);
            if ring.len() < 3 || ring_signed_area(ring) <= 0.0 {
                ring.clear();
            }
        }
    }
    let pieces: Vec<Vec<Vec<Vec<Point>>>> = match &clip_region {
        None => convex.into_iter().map(|ring| if ring.is_empty() { Vec::new() } else { vec![vec![ring]] }).collect(),
        Some(region) => {
            // A cancelled run's cells are never read (a skipped cell is left empty).
            let mut clipped: Vec<Vec<Vec<Vec<Point>>>> = convex
                .into_par_iter()
                .map(|cell| if watch.is_cancelled() { Vec::new() } else { region.clip(cell) })
                .collect();
            // The second weld and the repair pass over every cell as the first weld does, so
            // they look at the watch as it does (a cancelled run's cells are never read).
            for block in clipped.chunks_mut(CELL_BLOCK) {
                stop()?;
                for ring in block.iter_mut().flatten().flatten() {
                    welder.ring(ring);
                }
            }
            let repaired = clipped
                .into_par_iter()
                .map(|cell| if watch.is_cancelled() { Vec::new() } else { repair(cell) })
                .collect();
            stop()?;
            repaired
        }
    };

    // Each cell's area in local units, summed over its pieces (holes count negative).
    // Folded from +0.0, not summed (which starts at -0.0): an empty cell's area is 0.
    let local_areas: Vec<f64> =
        pieces.iter().map(|cell| cell.iter().flatten().fold(0.0, |a, ring| a + ring_signed_area(ring))).collect();
    let covered: f64 = local_areas.iter().sum();
    if region_area.is_finite() && (covered - region_area).abs() > TILING_TOLERANCE * region_area {
        // Cells tile the region; cuts that lose a share of it were below the weld's reach.
        return Err(Error::Degenerate {
            argument: "region",
            reason: format!(
                "the cells cover {:.4} % of the region's area, not all of it: the region is too thin for its length \
                 to be cut at double precision (its area is {:.1e} of the square of its longest side); pass a wider \
                 region",
                100.0 * covered / region_area,
                region_area / (size * size)
            ),
        });
    }
    if cells_hold_their_sites {
        lost_cell(sites, &frame, weld_reach, &pieces, |p| match &clip_region {
            None => (b.min[0]..=b.max[0]).contains(&p[0]) && (b.min[1]..=b.max[1]).contains(&p[1]),
            Some(region) => region.contains(p),
        })?;
    }
    let total_vertices = pieces.iter().flatten().flatten().map(Vec::len).sum();
    let mut cells = VoronoiCells {
        vertices: Vec::with_capacity(total_vertices),
        offsets: Vec::with_capacity(sites.len() + 1),
        parts: vec![0],
        area: Vec::with_capacity(sites.len()),
        exterior: Vec::new(),
    };
    cells.offsets.push(0);
    for (k, (cell, &area)) in pieces.iter().zip(&local_areas).enumerate() {
        if k % CELL_BLOCK == 0 {
            stop()?;
            watch.advance(CELL_BLOCK.min(pieces.len() - k) as u64);
        }
        for piece in cell {
            for (r, ring) in piece.iter().enumerate() {
                cells.vertices.extend(ring.iter().map(|&p| frame.to_world(p)));
                cells.parts.push(cells.vertices.len());
                cells.exterior.push(r == 0);
            }
        }
        // Areas scale by the factor squared: divided twice, so the square cannot overflow.
        cells.area.push(frame.world_length(frame.world_length(area)));
        cells.offsets.push(cells.vertices.len());
    }
    Ok(cells)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::partition::testing::lcg_cloud;

    fn square(half: f64) -> Vec<Point> {
        vec![[-half, -half], [half, -half], [half, half], [-half, half]]
    }

    #[test]
    fn a_cell_below_the_weld_is_refused_not_dropped() {
        // Closed form: the Voronoi cell of (0, 0) among (±1, 0) and (0, ±1) is the unit
        // square |x|, |y| <= 0.5. In a region 2e9 across it has area 1; in one 2e12 across it
        // is narrower than the weld (2^-40 of 2e12 is 1.82) and came out empty, without a word.
        let sites = [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [-1.0, 0.0], [0.0, -1.0]];
        let near = square(1e9);
        let cells = voronoi_cells(&sites, Some(Region { vertices: &near, ring_offsets: &[0, 4] })).unwrap();
        assert!((cells.area[0] - 1.0).abs() < 1e-6, "{}", cells.area[0]);
        assert!((cells.area.iter().sum::<f64>() - 4e18).abs() <= 1e-9 * 4e18);
        let far = square(1e12);
        let e = voronoi_cells(&sites, Some(Region { vertices: &far, ring_offsets: &[0, 4] })).unwrap_err();
        assert!(matches!(e, Error::LostCell { argument: "sites", row: 0, .. }), "{e:?}");
        assert!(
            e.to_string().starts_with("sites: the cell of sites[0] is lost: its nearest site lies 1.000e0 away"),
            "{e}"
        );
        // In a grouped run the input row is named: the same sites behind two others of group 5.
        let mut rows = vec![[7.0, 7.0], [8.0, 8.0]];
        rows.extend_from_slice(&sites);
        let labels = [4, 4, 5, 5, 5, 5, 5];
        let region = Region { vertices: &far, ring_offsets: &[0, 4] };
        let e = voronoi_cells_grouped(&rows, &labels, Some(region), OnGroupError::Raise).unwrap_err();
        assert_eq!((e.row(), e.argument()), (Some(2), "sites"), "{e}");
        assert!(e.to_string().contains("the cell of sites[2] is lost"), "{e}");
        // The same region cut by the clipper (an L shape, not a rectangle) finds it too.
        let l_shape = [[-1e12, -1e12], [1e12, -1e12], [1e12, 0.5e12], [0.5e12, 1e12], [-1e12, 1e12]];
        let e = voronoi_cells(&sites, Some(Region { vertices: &l_shape, ring_offsets: &[0, 5] })).unwrap_err();
        assert!(e.to_string().contains("the cell of sites[0] is lost"), "{e}");
    }

    #[test]
    fn a_region_too_thin_to_cut_is_refused_and_a_flat_default_box_is_widened() {
        // A strip 2e12 long and 1 high: thinner than the weld (2^-40 of its length), every
        // cell came out empty. Reference: the cells tile the region, so their areas must sum
        // to its area (2e12).
        let sites = [[-5e11, 0.5], [0.0, 0.5], [5e11, 0.5]];
        let strip = [[-1e12, 0.0], [1e12, 0.0], [1e12, 1.0], [-1e12, 1.0]];
        let e = voronoi_cells(&sites, Some(Region { vertices: &strip, ring_offsets: &[0, 4] })).unwrap_err();
        assert!(matches!(e, Error::Degenerate { argument: "region", .. }), "{e:?}");
        assert!(e.to_string().contains("too thin for its length"), "{e}");
        // Without a region, sites nearly on one line: the box grown by 10 % of its height was
        // as thin, and every cell was empty. Now it grows across by 2^-20 of its growth along.
        let flat = [[-1e12, 0.0], [0.0, 0.0], [1e12, 0.0], [0.0, 1.0]];
        let cells = voronoi_cells(&flat, None).unwrap();
        let across = 0.1 * 2e12 * 2f64.powi(-20);
        let box_area = 2.4e12 * (1.0 + 2.0 * across);
        let total: f64 = cells.area.iter().sum();
        assert!((total - box_area).abs() <= 1e-9 * box_area, "{total} against {box_area}");
        assert!(cells.area.iter().all(|&a| a > 0.0), "{:?}", cells.area);
    }

    #[test]
    fn watched_cells_count_three_steps_per_site_and_a_cancel_leaves_no_answer() {
        // 150,000 sites (two strips), in the default box and in an L-shaped region (cells cut
        // by the clipper too). Watching changes nothing in the cells.
        let sites = lcg_cloud(150_000, 31, [0.0, 0.0], 1.0);
        let (vertices, offsets) =
            (vec![[0.0, 0.0], [1.0, 0.0], [1.0, 0.5], [0.5, 0.5], [0.5, 1.0], [0.0, 1.0]], [0, 6]);
        for region in [None, Some(Region { vertices: &vertices, ring_offsets: &offsets })] {
            let watch = Watch::new();
            let watched = voronoi_cells_watched(&sites, region, &watch).unwrap();
            assert_eq!(watch.progress(), (450_000, 450_000));
            let rings = region.map(region_rings).transpose().unwrap();
            assert_eq!(watched, cells_within(&sites, rings.as_deref(), &Watch::new()).unwrap());
            let cancelled = Watch::new();
            cancelled.cancel();
            assert!(voronoi_cells_watched(&sites, region, &cancelled).is_err());
            // Cancelled once the triangulation is done, and once the cells are cut.
            for mark in [150_000, 300_000] {
                crate::cancel::testing::cancelled_after(mark, |watch| voronoi_cells_watched(&sites, region, watch));
            }
        }
    }

    #[test]
    fn a_watched_grouped_run_counts_every_site_and_a_cancel_leaves_no_answer() {
        // Three groups of 50,000 sites cut by an L-shaped region; watching changes nothing.
        let sites = lcg_cloud(150_000, 37, [0.0, 0.0], 1.0);
        let labels: Vec<i64> = (0..sites.len()).map(|i| (i % 3) as i64).collect();
        let (vertices, offsets) =
            (vec![[0.0, 0.0], [1.0, 0.0], [1.0, 0.5], [0.5, 0.5], [0.5, 1.0], [0.0, 1.0]], [0, 6]);
        let region = Some(Region { vertices: &vertices, ring_offsets: &offsets });
        let watch = Watch::new();
        let (watched, _) = voronoi_cells_grouped_watched(&sites, &labels, region, OnGroupError::Raise, &watch).unwrap();
        assert_eq!(watch.progress(), (150_000, 150_000));
        let (plain, _) = voronoi_cells_grouped(&sites, &labels, region, OnGroupError::Raise).unwrap();
        assert_eq!(watched.results, plain.results);
        crate::cancel::testing::cancelled_after(1, |watch| {
            voronoi_cells_grouped_watched(&sites, &labels, region, OnGroupError::Raise, watch).map(drop)
        });
    }

    fn ring_of(cells: &VoronoiCells, i: usize) -> Vec<&[Point]> {
        let (lo, hi) = (cells.offsets[i], cells.offsets[i + 1]);
        cells
            .parts
            .windows(2)
            .filter(|w| w[0] >= lo && w[1] <= hi && w[0] < w[1])
            .map(|w| &cells.vertices[w[0]..w[1]])
            .collect()
    }

    #[test]
    fn voronoi_cells_of_a_box_sum_to_its_area_and_hold_their_sites() {
        for offset in [[0.0, 0.0], [500_000.0, 6_000_000.0]] {
            let sites = lcg_cloud(500, 5, offset, 100.0);
            let square = [
                offset,
                [offset[0] + 100.0, offset[1]],
                [offset[0] + 100.0, offset[1] + 100.0],
                [offset[0], offset[1] + 100.0],
            ];
            let region = Region { vertices: &square, ring_offsets: &[0, 4] };
            let cells = voronoi_cells(&sites, Some(region)).unwrap();
            let total: f64 = cells.area.iter().sum();
            // Closed form: the square's area is 100².
            assert!((total - 10_000.0).abs() < 1e-6, "total {total}");
            for (i, &s) in sites.iter().enumerate() {
                let rings = ring_of(&cells, i);
                assert_eq!(rings.len(), 1);
                assert!(ring_signed_area(rings[0]) > 0.0);
                assert!(ring_contains(rings[0], s), "site {i} outside its cell");
            }
        }
    }

    #[test]
    fn voronoi_cells_union_covers_region_with_hole() {
        // An L-shaped region (a 10 × 10 square without its upper-right 5 × 5 quarter) with a
        // 2 × 2 square hole: area 75 − 4 = 71 (closed form).
        let outer = [[0.0, 0.0], [10.0, 0.0], [10.0, 5.0], [5.0, 5.0], [5.0, 10.0], [0.0, 10.0]];
        let hole = [[1.0, 1.0], [1.0, 3.0], [3.0, 3.0], [3.0, 1.0]];
        let vertices: Vec<Point> = outer.iter().chain(hole.iter()).copied().collect();
        let region = Region { vertices: &vertices, ring_offsets: &[0, 6, 10] };
        let sites = lcg_cloud(200, 11, [-1.0, -1.0], 12.0);
        let cells = voronoi_cells(&sites, Some(region)).unwrap();
        let total: f64 = cells.area.iter().sum();
        assert!((total - 71.0).abs() < 1e-9, "total {total}");
        assert_eq!(cells.offsets.len(), sites.len() + 1);
        assert_eq!(*cells.parts.last().unwrap(), cells.vertices.len());
    }

    #[test]
    fn one_two_and_collinear_sites() {
        let square = [[0.0, 0.0], [4.0, 0.0], [4.0, 4.0], [0.0, 4.0]];
        let region = Region { vertices: &square, ring_offsets: &[0, 4] };
        let one = voronoi_cells(&[[1.0, 1.0]], Some(region)).unwrap();
        assert_eq!(one.area, vec![16.0]);
        // Two sites: the bisector x = 1 splits the square 4 : 12 (closed form).
        let two = voronoi_cells(&[[0.0, 2.0], [2.0, 2.0]], Some(region)).unwrap();
        assert_eq!(two.area, vec![4.0, 12.0]);
        // Collinear: strips between consecutive bisectors x = 1, 2, 3.
        let line: Vec<Point> = (0..4).map(|i| [0.5 + i as f64, 3.0]).collect();
        let strips = voronoi_cells(&line, Some(region)).unwrap();
        assert_eq!(strips.area, vec![4.0, 4.0, 4.0, 4.0]);
    }

    #[test]
    fn refusals() {
        assert!(matches!(
            voronoi_cells(&[[0.0, 0.0], [1.0, 1.0], [0.0, 0.0]], None),
            Err(Error::RepeatedPoint { argument: "sites", row: 2, first: 0 })
        ));
        assert!(matches!(voronoi_cells(&[[0.0, 0.0]], None), Err(Error::Degenerate { argument: "region", .. })));
        let flat = [[0.0, 0.0], [1.0, 1.0], [2.0, 2.0]];
        let region = Region { vertices: &flat, ring_offsets: &[0, 3] };
        assert!(matches!(
            voronoi_cells(&[[0.0, 0.0], [1.0, 0.0]], Some(region)),
            Err(Error::Degenerate { argument: "region", .. })
        ));
        let region = Region { vertices: &flat, ring_offsets: &[0, 2] };
        assert!(matches!(voronoi_cells(&[[0.0, 0.0]], Some(region)), Err(Error::InvalidParameter { .. })));
    }

    #[test]
    fn regions_whose_rings_cross_are_refused_not_tiled_even_odd() {
        // Closed forms: the bow tie's diagonals (0,0)-(10,10) and (10,0)-(0,10) cross at
        // (5, 5); the boxes [0, 6]² and [4, 10]² overlap on [4, 6]², their edges crossing at
        // (6, 4) and (4, 6). Their even-odd sets (areas 50 and 64) are not the polygons drawn
        // (no simple polygon, and a union of area 68), so cells of them were no answer.
        let sites = [[1.0, 1.0], [9.0, 9.0], [5.0, 5.0], [3.0, 7.0]];
        let bow_tie = [[0.0, 0.0], [10.0, 10.0], [10.0, 0.0], [0.0, 10.0]];
        let mut boxes = vec![[0.0, 0.0], [6.0, 0.0], [6.0, 6.0], [0.0, 6.0]];
        boxes.extend([[4.0, 4.0], [10.0, 4.0], [10.0, 10.0], [4.0, 10.0]]);
        let cases = [
            Region { vertices: &bow_tie, ring_offsets: &[0, 4] },
            Region { vertices: &boxes, ring_offsets: &[0, 4, 8] },
        ];
        for region in cases {
            for e in [
                voronoi_cells(&sites, Some(region)).unwrap_err(),
                crate::partition::power_cells(&sites, &[0.0; 4], Some(region)).unwrap_err(),
            ] {
                assert!(matches!(e, Error::Degenerate { argument: "region", .. }), "{e:?}");
                assert!(e.to_string().contains("cross"), "{e}");
            }
        }
        // Parts touching at a corner are a valid region: closed form 25 + 25.
        let touching =
            [[0.0, 0.0], [5.0, 0.0], [5.0, 5.0], [0.0, 5.0], [5.0, 5.0], [10.0, 5.0], [10.0, 10.0], [5.0, 10.0]];
        let cells = voronoi_cells(&sites, Some(Region { vertices: &touching, ring_offsets: &[0, 4, 8] })).unwrap();
        assert!((cells.area.iter().sum::<f64>() - 50.0).abs() < 1e-9);
    }

    /// The L-shaped region with a hole of the Python property test, in its scaled frame.
    fn small_l_with_hole() -> (Vec<Point>, Vec<usize>) {
        let outer = [[-9.0, -9.0], [11.0, -9.0], [11.0, -1.0], [0.0, -1.0], [0.0, 11.0], [-9.0, 11.0]];
        let hole = [[-7.0, -7.0], [-7.0, -4.0], [-3.0, -4.0], [-3.0, -7.0]];
        (outer.iter().chain(hole.iter()).copied().collect(), vec![0, 6, 10])
    }

    #[test]
    fn bisector_through_a_hole_corner_gives_simple_rings() {
        // Regression (found by the Python property test): the bisector of these sites passes
        // exactly through the hole's corner (-3, -7); welding once pinched the cell's ring there.
        let (vertices, ring_offsets) = small_l_with_hole();
        let region = Region { vertices: &vertices, ring_offsets: &ring_offsets };
        let cells = voronoi_cells(&[[-2.0, 1.0], [1.0, 0.0]], Some(region)).unwrap();
        for w in cells.parts.windows(2) {
            let ring = &cells.vertices[w[0]..w[1]];
            for (k, p) in ring.iter().enumerate() {
                assert!(!ring[k + 1..].contains(p), "ring visits {p:?} twice");
            }
        }
        // Closed form: 20 × 20 − 11 × 12 − 4 × 3 = 256.
        assert!((cells.area.iter().sum::<f64>() - 256.0).abs() < 1e-9);
    }

    #[test]
    fn region_vertex_on_a_shared_edge_is_kept_on_both_sides() {
        // Regression: the bisector y = −1 runs along the region's edge, whose vertex (0, −1) is
        // a corner of the upper cell; the lower cell must keep it too (no T-junction).
        let (vertices, ring_offsets) = small_l_with_hole();
        let region = Region { vertices: &vertices, ring_offsets: &ring_offsets };
        let cells = voronoi_cells(&[[0.0, -2.0], [0.0, 0.0]], Some(region)).unwrap();
        for i in 0..2 {
            let cell = &cells.vertices[cells.offsets[i]..cells.offsets[i + 1]];
            assert!(cell.contains(&[0.0, -1.0]), "cell {i} lacks the region vertex");
        }
    }

    #[test]
    fn grid_sites_give_equal_cells() {
        // A 5 × 5 grid of unit spacing in the box [-0.5, 4.5]²: every cell is a unit square.
        let sites: Vec<Point> = (0..25).map(|i| [(i % 5) as f64, (i / 5) as f64]).collect();
        let square = [[-0.5, -0.5], [4.5, -0.5], [4.5, 4.5], [-0.5, 4.5]];
        let cells = voronoi_cells(&sites, Some(Region { vertices: &square, ring_offsets: &[0, 4] })).unwrap();
        for a in &cells.area {
            assert!((a - 1.0).abs() < 1e-12);
        }
    }

    #[test]
    fn grouped_repeat_names_input_rows_and_skips_its_group() {
        // Rows 1 and 4 (group 7) share a location; group 3 is fine.
        let sites = [[0.0, 0.0], [1.0, 1.0], [5.0, 5.0], [9.0, 0.0], [1.0, 1.0], [2.0, 0.0]];
        let labels = [3, 7, 7, 3, 7, 3];
        let square = [[-1.0, -1.0], [10.0, -1.0], [10.0, 10.0], [-1.0, 10.0]];
        let region = Region { vertices: &square, ring_offsets: &[0, 4] };
        let e = voronoi_cells_grouped(&sites, &labels, Some(region), OnGroupError::Raise).unwrap_err();
        assert_eq!(e.to_string(), "group 7: sites: sites[4] repeats sites[1]; every site needs its own location");
        let (g, places) = voronoi_cells_grouped(&sites, &labels, Some(region), OnGroupError::Skip).unwrap();
        let rows = VoronoiCells::by_row(&g, &places);
        let alone = voronoi_cells(&[[0.0, 0.0], [9.0, 0.0], [2.0, 0.0]], Some(region)).unwrap();
        assert_eq!(g.results[0].as_ref().unwrap(), &alone);
        // Closed form: the group's cells tile the 11 × 11 square.
        assert!((rows.area[0] + rows.area[3] + rows.area[5] - 121.0).abs() < 1e-9);
        assert!(rows.area[1].is_nan() && rows.offsets[1] == rows.offsets[2]);
        assert_eq!(rows.offsets.len(), sites.len() + 1);
        assert_eq!(
            &rows.vertices[rows.offsets[3]..rows.offsets[4]],
            &alone.vertices[alone.offsets[1]..alone.offsets[2]]
        );
        // A bad region fails the whole run, whatever `errors` says.
        let flat = Region { vertices: &square[..2], ring_offsets: &[0, 2] };
        assert!(matches!(
            voronoi_cells_grouped(&sites, &labels, Some(flat), OnGroupError::Skip),
            Err(Error::Degenerate { argument: "region", .. })
        ));
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(48))]
        #[test]
        fn grouped_equals_separate_calls(
            raw in proptest::collection::vec((-8i32..8, -8i32..8, 0i64..3), 1..60),
            with_region in proptest::bool::ANY,
        ) {
            // Each group's cells from a separate call on its own sites, laid out by input row
            // here; errors with their rows mapped to input rows.
            let sites: Vec<Point> = raw.iter().map(|&(x, y, _)| [x as f64, y as f64]).collect();
            let labels: Vec<i64> = raw.iter().map(|&(_, _, g)| g).collect();
            let (vertices, ring_offsets) = small_l_with_hole();
            let region = with_region.then_some(Region { vertices: &vertices, ring_offsets: &ring_offsets });
            let (grouped, places) = voronoi_cells_grouped(&sites, &labels, region, OnGroupError::Skip).unwrap();
            let by_row = VoronoiCells::by_row(&grouped, &places);
            for (&label, outcome) in grouped.labels.iter().zip(&grouped.results) {
                let rows: Vec<usize> = (0..sites.len()).filter(|&i| labels[i] == label).collect();
                let own: Vec<Point> = rows.iter().map(|&i| sites[i]).collect();
                match (voronoi_cells(&own, region), outcome) {
                    (Ok(cells), Ok(ours)) => {
                        proptest::prop_assert_eq!(&cells, ours);
                        for (k, &i) in rows.iter().enumerate() {
                            proptest::prop_assert_eq!(by_row.area[i], cells.area[k]);
                            proptest::prop_assert_eq!(
                                &by_row.vertices[by_row.offsets[i]..by_row.offsets[i + 1]],
                                &cells.vertices[cells.offsets[k]..cells.offsets[k + 1]]
                            );
                        }
                    }
                    (Err(e), Err(ours)) => proptest::prop_assert_eq!(ours, &e.rows_from(&rows).in_group(label)),
                    (single, grouped) => proptest::prop_assert!(false, "separate {:?}, grouped {:?}", single, grouped),
                }
            }
        }
    }
}
