//! Nearest-site allocation: every demand point to its closest site, with the demand load and
//! point count of each site's catchment and the total weighted distance.
//!
//! The sites go into an R*-tree (Beckmann et al. 1990) built by `rstar`'s bulk load
//! (sort-tile-recursive, Leutenegger et al. 1997). When the sites span an area, the tree
//! seeds a grid of starting sites and each query walks the sites' Delaunay graph greedily
//! from the seed of its grid square: a site with no Delaunay neighbour nearer to the point is
//! its nearest site (jump-and-walk, Mücke, Saias & Zhu 1996, here walking Voronoi neighbours),
//! so a query costs a few distance evaluations instead of a tree descent. The points are queried
//! in parallel, borrowed as given.

use rayon::prelude::*;
use rstar::primitives::GeomWithData;
use rstar::RTree;

use super::delaunay::delaunay_watched;
use crate::batch::{run_paired, GroupWatch, Grouped, OnGroupError, RowPlaces};
use crate::cancel::{cancelled, Watch};
use crate::error::Result;
use crate::geometry::predicates::all_collinear;
use crate::geometry::{
    distance, distance_squared, power_of_two_factor, validate_points, validate_weights, BoundingBox, CompensatedSum,
    Point, Weights,
};

/// Which site serves each point, how far away it is and how much demand each site gets.
#[derive(Debug, Clone, PartialEq)]
pub struct Allocation {
    /// `index[i]`: the site nearest to point `i` (the smallest site index among equally near ones).
    pub index: Vec<usize>,
    /// `distance[i]`: Euclidean distance from point `i` to its site.
    pub distance: Vec<f64>,
    /// `load[j]`: summed weight of the points allocated to site `j`.
    pub load: Vec<f64>,
    /// `count[j]`: number of points allocated to site `j`.
    pub count: Vec<usize>,
    /// `Σ wᵢ · distance[i]`.
    pub cost: f64,
    /// `Σ wᵢ`: the demand allocated, summed once (compensated) rather than from the loads.
    pub total_load: f64,
}

type Site = GeomWithData<Point, usize>;

/// Points per parallel task: large enough to amortise scheduling, small enough to balance.
const CHUNK: usize = 4096;

/// The sites' Delaunay graph with a grid of starting sites for greedy walks.
#[derive(Debug, Clone)]
struct SiteGraph {
    sites: Vec<Point>,
    /// Delaunay neighbours of every site as CSR (empty for repeats of an earlier site).
    offsets: Vec<usize>,
    adjacent: Vec<usize>,
    /// Grid over the sites' bounding box: `seed[row * columns + column]` is the site nearest
    /// to the square's centre.
    origin: Point,
    inverse_step: [f64; 2],
    columns: usize,
    rows: usize,
    seed: Vec<usize>,
}

impl SiteGraph {
    /// `None` when the sites do not span an area (fewer than three distinct, or collinear).
    /// The triangulation polls `watch` (counting nothing on it) as [`delaunay_watched`]
    /// does, and so do the rows of the seed grid.
    ///
    /// # Errors
    /// Only [`cancelled`], once `watch` is cancelled.
    fn new(sites: &[Point], tree: &RTree<Site>, watch: &Watch) -> Result<Option<SiteGraph>> {
        if sites.len() < 3 || all_collinear(sites) {
            return Ok(None);
        }
        let t = match delaunay_watched(sites, &watch.quiet()) {
            Ok(t) => t,
            Err(_) if watch.is_cancelled() => return Err(cancelled("sites")),
            Err(_) => return Ok(None),
        };
        let k = sites.len();
        let (offsets, adjacent) = t.neighbours();
        // About two grid squares per site, shaped like the sites' box.
        let Some(b) = BoundingBox::of(sites) else { return Ok(None) };
        let (w, h) = (b.max[0] - b.min[0], b.max[1] - b.min[1]);
        let squares = (2 * k) as f64;
        let columns = ((squares * w / h).sqrt().round() as usize).clamp(1, 4 * k);
        let rows = ((squares / columns as f64).round() as usize).clamp(1, 4 * k);
        let step = [w / columns as f64, h / rows as f64];
        let mut seed = Vec::with_capacity(columns * rows);
        for r in 0..rows {
            if watch.is_cancelled() {
                return Err(cancelled("sites"));
            }
            for c in 0..columns {
                let centre = [b.min[0] + (c as f64 + 0.5) * step[0], b.min[1] + (r as f64 + 0.5) * step[1]];
                let nearest = tree.nearest_neighbor(centre).expect("non-empty tree");
                seed.push(t.representative[nearest.data]);
            }
        }
        Ok(Some(SiteGraph {
            sites: sites.to_vec(),
            offsets,
            adjacent,
            origin: b.min,
            inverse_step: [1.0 / step[0], 1.0 / step[1]],
            columns,
            rows,
            seed,
        }))
    }

    #[inline]
    fn neighbours(&self, j: usize) -> &[usize] {
        &self.adjacent[self.offsets[j]..self.offsets[j + 1]]
    }

    #[inline]
    fn nearest(&self, p: Point) -> usize {
        // Clamped to the grid, so points outside the sites' box start from a border square
        // (NaN-free input: the float-to-integer casts saturate).
        let c = (((p[0] - self.origin[0]) * self.inverse_step[0]) as usize).min(self.columns - 1);
        let r = (((p[1] - self.origin[1]) * self.inverse_step[1]) as usize).min(self.rows - 1);
        let mut j = self.seed[r * self.columns + c];
        let mut d = distance_squared(p, self.sites[j]);
        loop {
            let before = j;
            for &u in self.neighbours(before) {
                let du = distance_squared(p, self.sites[u]);
                if du < d {
                    j = u;
                    d = du;
                }
            }
            if j == before {
                break;
            }
        }
        // Equally near sites have cells meeting at `p`; around `p` they follow one another
        // as Delaunay neighbours, so a search through equally near neighbours finds them all.
        let mut best = j;
        if self.neighbours(j).iter().any(|&u| distance_squared(p, self.sites[u]) == d) {
            let mut stack = vec![j];
            let mut seen = vec![j];
            while let Some(v) = stack.pop() {
                for &u in self.neighbours(v) {
                    if !seen.contains(&u) && distance_squared(p, self.sites[u]) == d {
                        seen.push(u);
                        stack.push(u);
                        best = best.min(u);
                    }
                }
            }
        }
        best
    }
}

/// The sites indexed for nearest-site queries, built once and queried many times.
///
/// Nearness is compared on squared distances. For coordinates beyond about 2^±200 those
/// underflow (points near 1e-300: every square 0, every site "equally near") or overflow
/// (near 1e200), so there the index holds the sites scaled by a power of two
/// ([`power_of_two_factor`] of the largest coordinate) and scales every query the same way:
/// exact, so the order of distances is that of the given coordinates. Distances are always
/// measured between the given coordinates. In between nothing is scaled.
#[derive(Debug, Clone)]
pub struct SiteIndex {
    tree: RTree<Site>,
    graph: Option<SiteGraph>,
    len: usize,
    /// The power of two the compared coordinates are multiplied by (1: none).
    scale: f64,
    /// The sites as given, when `scale` is not 1 (the index holds them scaled).
    given: Vec<Point>,
}

/// Largest coordinate magnitude compared without scaling: squared differences of
/// coordinates up to 2^200 stay below 2^401, and when the largest coordinate is at least
/// 2^-200 the differences near it (at least a unit in its last place) square above 2^-505.
/// The guarantee is about the scale of the largest coordinate only: sites near 1e-300 beside
/// one near 1 are compared unscaled, and their squared differences can still underflow.
const UNSCALED: f64 = 1.6069380442589903e60; // 2^200

/// The power of two [`SiteIndex`] compares `sites` at: 1 when their largest coordinate
/// magnitude lies within [2^-200, 2^200] (or is 0), else the factor bringing it below 1.
fn comparison_scale(sites: &[Point]) -> f64 {
    let largest = sites.iter().flat_map(|s| [s[0].abs(), s[1].abs()]).fold(0.0f64, f64::max);
    if largest == 0.0 || (1.0 / UNSCALED..=UNSCALED).contains(&largest) {
        1.0
    } else {
        power_of_two_factor(largest)
    }
}

impl SiteIndex {
    /// Index `sites` (validated: at least one, all finite).
    ///
    /// # Errors
    /// [`crate::Error::TooFewPoints`] when `sites` is empty, [`crate::Error::NonFiniteCoordinate`].
    ///
    /// # Runtime
    /// O(k log k) for k sites.
    pub fn new(sites: &[Point]) -> Result<SiteIndex> {
        SiteIndex::watched(sites, &Watch::new())
    }

    /// [`SiteIndex::new`] polling `watch` while the sites' Delaunay graph is built (the
    /// longest part for many sites), counting nothing on it.
    ///
    /// # Errors
    /// As [`SiteIndex::new`], and [`cancelled`] once `watch` is cancelled.
    fn watched(sites: &[Point], watch: &Watch) -> Result<SiteIndex> {
        validate_points("sites", sites, 1)?;
        let scale = comparison_scale(sites);
        let scaled: Vec<Point>;
        let compared = if scale == 1.0 {
            sites
        } else {
            scaled = sites.iter().map(|&[x, y]| [x * scale, y * scale]).collect();
            &scaled
        };
        let items = compared.iter().enumerate().map(|(j, &s)| GeomWithData::new(s, j)).collect();
        let tree = RTree::bulk_load(items);
        let graph = SiteGraph::new(compared, &tree, watch)?;
        let given = if scale == 1.0 { Vec::new() } else { sites.to_vec() };
        Ok(SiteIndex { tree, graph, len: sites.len(), scale, given })
    }

    /// Number of sites.
    pub fn len(&self) -> usize {
        self.len
    }

    /// Always false: an index holds at least one site.
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// The nearest site to `p` (smallest index among equally near ones) and its distance.
    #[inline]
    pub fn nearest(&self, p: Point) -> (usize, f64) {
        if self.scale != 1.0 {
            return self.nearest_scaled(p);
        }
        if let Some(graph) = &self.graph {
            let j = graph.nearest(p);
            return (j, distance(p, graph.sites[j]));
        }
        let mut candidates = self.tree.nearest_neighbor_iter_with_distance_2(p);
        let (first, d2) = candidates.next().expect("a site index is never empty");
        // Equally near sites come next in the distance order; keep the smallest index.
        let best = candidates.take_while(|&(_, e2)| e2 == d2).fold(first.data, |b, (s, _)| b.min(s.data));
        // Tied sites share the squared distance; the first one's position gives the distance.
        (best, distance(p, *first.geom()))
    }

    /// [`SiteIndex::nearest`] for an index of scaled sites: the query scaled alike, the
    /// distance measured between the given coordinates. A query so far out that its scaled
    /// coordinates overflow is compared with every site by [`distance`] (which does not
    /// square), the smallest index winning ties.
    #[cold]
    fn nearest_scaled(&self, p: Point) -> (usize, f64) {
        let q = [p[0] * self.scale, p[1] * self.scale];
        if !(q[0].is_finite() && q[1].is_finite()) {
            let mut best = (0, distance(p, self.given[0]));
            for (j, &s) in self.given.iter().enumerate().skip(1) {
                let d = distance(p, s);
                if d < best.1 {
                    best = (j, d);
                }
            }
            return best;
        }
        let j = match &self.graph {
            Some(graph) => graph.nearest(q),
            None => {
                let mut candidates = self.tree.nearest_neighbor_iter_with_distance_2(q);
                let (first, d2) = candidates.next().expect("a site index is never empty");
                candidates.take_while(|&(_, e2)| e2 == d2).fold(first.data, |b, (s, _)| b.min(s.data))
            }
        };
        (j, distance(p, self.given[j]))
    }
}

/// Allocate every point to its nearest site.
///
/// # Errors
/// - [`crate::Error::TooFewPoints`] when `points` or `sites` is empty;
/// - [`crate::Error::NonFiniteCoordinate`] for a NaN or infinite coordinate in either;
/// - [`crate::Error::LengthMismatch`], [`crate::Error::InvalidWeight`],
///   [`crate::Error::AllWeightsZero`] for bad weights.
///
/// # Runtime
/// O(k log k + n log k), the n queries in parallel.
pub fn nearest_site(points: &[Point], sites: &[Point], weights: Weights<'_>) -> Result<Allocation> {
    nearest_site_watched(points, sites, weights, &Watch::new())
}

/// [`nearest_site`] counting points done on `watch` (progress, a chunk of points at a
/// time), and stopping early once it is cancelled: while the sites are indexed (their
/// triangulation stops as [`delaunay_watched`] does), and within one chunk of points per
/// worker thread. A cancelled run has no answer: its outcome is an error that the caller
/// drops ([`Watch::finish`]). Watching changes nothing in the allocation.
///
/// # Errors
/// As [`nearest_site`].
pub fn nearest_site_watched(
    points: &[Point],
    sites: &[Point],
    weights: Weights<'_>,
    watch: &Watch,
) -> Result<Allocation> {
    watch.plan(points.len() as u64);
    allocate_watched(points, sites, weights, watch)
}

/// [`nearest_site_watched`] with the points already planned on `watch` by the caller (a
/// grouped run plans all its points at once).
fn allocate_watched(points: &[Point], sites: &[Point], weights: Weights<'_>, watch: &Watch) -> Result<Allocation> {
    validate_points("points", points, 1)?;
    validate_weights("weights", weights, points.len())?;
    let index = SiteIndex::watched(sites, watch)?;
    assign(points, &index, weights, watch)
}

/// [`nearest_site`] for every group of demand points, each served by the sites of the same
/// label (the crate's paired grouped runner).
#[derive(Debug, Clone)]
pub struct SiteAllocations {
    /// Per group (every label of the points or the sites, sorted): its allocation, with
    /// `index` naming input rows of the sites and `load`, `count` following the group's sites
    /// in input order.
    pub grouped: Grouped<Allocation>,
    /// Where every demand row sits (its group, its place among the group's points).
    pub points: RowPlaces,
    /// Where every site row sits.
    pub sites: RowPlaces,
}

/// Allocate every group of demand points to its nearest site among the sites of its own
/// label, in parallel.
///
/// Each group's allocation is what a separate call on its points and its sites gives, with
/// the site index mapped to the site's input row. A label with points but no sites is that
/// group's error; a label with sites but no points is solved: its sites serve nobody (load
/// and count 0, cost 0).
///
/// # Errors
/// [`crate::Error::LengthMismatch`] when `labels`, `weights` or `site_labels` have the wrong
/// length, [`crate::Error::TooFewPoints`] for empty points or sites; with
/// [`OnGroupError::Raise`], the errors of [`nearest_site`] for the failing group with the
/// smallest label, naming input rows (with `Skip`, they are that group's outcome).
///
/// # Runtime
/// That of [`nearest_site`] on each group, the groups in parallel, plus two O(n log n) sorts.
pub fn nearest_site_grouped(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    sites: &[Point],
    site_labels: &[i64],
    on_error: OnGroupError,
) -> Result<SiteAllocations> {
    nearest_site_grouped_watched(points, weights, labels, sites, site_labels, on_error, &Watch::new())
}

/// [`nearest_site_grouped`] watched: progress counts points (all planned at the start, each
/// group's counted chunk by chunk as in [`nearest_site_watched`], and the points of groups
/// without an answer at the end). Once `watch` is cancelled, groups not yet begun are
/// skipped and a running group stops as [`nearest_site_watched`] does; the caller drops a
/// cancelled run's answer ([`Watch::finish`]).
///
/// # Errors
/// As [`nearest_site_grouped`].
#[allow(clippy::too_many_arguments)]
pub fn nearest_site_grouped_watched(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    sites: &[Point],
    site_labels: &[i64],
    on_error: OnGroupError,
    watch: &Watch,
) -> Result<SiteAllocations> {
    grouped_by_kernel(points, weights, labels, sites, site_labels, on_error, watch, allocate_watched)
}

/// The grouped allocation behind [`nearest_site_grouped_watched`] with any per-group `kernel`
/// of [`allocate_watched`]'s form (the geodesic family passes its own): every group's points
/// go to the sites of their label, and site indices come back as rows of the whole site set.
/// The run is watched by a [`GroupWatch`] on `watch`: every point planned at the start, each
/// group's kernel counting its own points on the watch as it goes.
#[allow(clippy::too_many_arguments)]
pub(crate) fn grouped_by_kernel(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    sites: &[Point],
    site_labels: &[i64],
    on_error: OnGroupError,
    watch: &Watch,
    kernel: impl Fn(&[Point], &[Point], Weights<'_>, &Watch) -> Result<Allocation> + Sync,
) -> Result<SiteAllocations> {
    let groups = GroupWatch::new(watch, points.len());
    let (grouped, points, sites) =
        run_paired(points, weights, labels, "sites", sites, site_labels, on_error, |group, served| {
            if group.points.is_empty() {
                let k = served.points.len();
                let (load, count) = (vec![0.0; k], vec![0; k]);
                return Ok(Allocation { index: vec![], distance: vec![], load, count, cost: 0.0, total_load: 0.0 });
            }
            let allocation = groups
                .counting(group.points.len(), |watch| kernel(group.points, served.points, group.weights, watch))?;
            Ok(allocation.in_rows(served.members))
        })?;
    Ok(SiteAllocations { grouped, points, sites })
}

impl Allocation {
    /// The allocation with its site indices mapped to rows of a larger set of sites:
    /// `rows[j]` is the row of site `j`.
    fn in_rows(mut self, rows: &[usize]) -> Allocation {
        self.index.iter_mut().for_each(|j| *j = rows[*j]);
        self
    }
}

/// [`nearest_site`] with a prebuilt site index and already-validated points and weights
/// (for solvers that allocate the same demand to changing sites many times).
pub fn allocate(points: &[Point], sites: &SiteIndex, weights: Weights<'_>) -> Allocation {
    assign(points, sites, weights, &Watch::new()).expect("a watch nobody holds is never cancelled")
}

/// [`allocate`] counting points done on `watch` (planned by the caller) a chunk at a time;
/// once it is cancelled the chunks not yet begun are skipped and the outcome is
/// [`cancelled`]: an allocation is an answer only when every point is served.
fn assign(points: &[Point], sites: &SiteIndex, weights: Weights<'_>, watch: &Watch) -> Result<Allocation> {
    let n = points.len();
    let mut index = vec![0usize; n];
    let mut dist = vec![0.0f64; n];
    index.par_chunks_mut(CHUNK).zip(dist.par_chunks_mut(CHUNK)).zip(points.par_chunks(CHUNK)).for_each(
        |((idx, d), pts)| {
            if watch.is_cancelled() {
                return;
            }
            for ((slot, dslot), &p) in idx.iter_mut().zip(d.iter_mut()).zip(pts) {
                let (j, dj) = sites.nearest(p);
                *slot = j;
                *dslot = dj;
            }
            watch.advance(pts.len() as u64);
        },
    );
    if watch.is_cancelled() {
        return Err(cancelled("points"));
    }
    // Loads and cost are summed over a number of blocks fixed by `n` and `k` alone and merged in
    // block order, so the sums are bit-identical on every run and thread count (a work-
    // stealing reduction would add in a varying order). At most 2^23 partial loads and as many
    // partial counts in all.
    let k = sites.len();
    let blocks = (n / (16 * CHUNK)).clamp(1, 64).min((1usize << 23) / k.max(1)).max(1);
    let block_len = n.div_ceil(blocks).max(1);
    let partial: Vec<Totals> = (0..blocks)
        .into_par_iter()
        .map(|b| {
            let mut block = Totals::new(k);
            for i in b * block_len..((b + 1) * block_len).min(n) {
                let w = weights.get(i);
                block.load[index[i]] += w;
                block.count[index[i]] += 1;
                block.cost.add(w * dist[i]);
                block.demand.add(w);
            }
            block
        })
        .collect();
    let mut totals = Totals::new(k);
    for block in partial {
        for (total, part) in totals.load.iter_mut().zip(block.load) {
            *total += part;
        }
        for (total, part) in totals.count.iter_mut().zip(block.count) {
            *total += part;
        }
        totals.cost.merge(block.cost);
        totals.demand.merge(block.demand);
    }
    Ok(Allocation {
        index,
        distance: dist,
        load: totals.load,
        count: totals.count,
        cost: totals.cost.total(),
        total_load: totals.demand.total(),
    })
}

/// Per-site loads and counts, the cost and the demand of a block of points.
struct Totals {
    load: Vec<f64>,
    count: Vec<usize>,
    cost: CompensatedSum,
    demand: CompensatedSum,
}

impl Totals {
    fn new(k: usize) -> Totals {
        Totals {
            load: vec![0.0; k],
            count: vec![0; k],
            cost: CompensatedSum::default(),
            demand: CompensatedSum::default(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::Error;
    use proptest::prelude::*;

    #[test]
    fn nearest_sites_at_extreme_scales_match_a_brute_force_without_squares() {
        // Coordinates near 1e-300 (squares underflow to 0) and near 1e200 (they overflow):
        // 953 of 1,000 points went to the wrong site before the index compared scaled
        // coordinates. Reference: the least `distance` (hypot, never squared) over every site,
        // smallest index on ties. Few sites use the R-tree, many the Delaunay graph walk.
        let mut rng = crate::geometry::random::SplitMix64::new(7);
        let unit: Vec<Point> = (0..1_000).map(|_| [rng.next_f64(), rng.next_f64()]).collect();
        for k in [20, 300] {
            let base: Vec<Point> = (0..k).map(|_| [rng.next_f64(), rng.next_f64()]).collect();
            for scale in [1.0, 1e-300, 1e-160, 2f64.powi(-1000), 1e200, 1e300] {
                let pts: Vec<Point> = unit.iter().map(|&[x, y]| [x * scale, y * scale]).collect();
                let sites: Vec<Point> = base.iter().map(|&[x, y]| [x * scale, y * scale]).collect();
                let index = SiteIndex::new(&sites).unwrap();
                for &p in &pts {
                    let brute = (0..k).fold((0, f64::INFINITY), |b, j| {
                        let d = distance(p, sites[j]);
                        if d < b.1 {
                            (j, d)
                        } else {
                            b
                        }
                    });
                    assert_eq!(index.nearest(p), brute, "k {k}, scale {scale:e}, point {p:?}");
                }
            }
        }
        // A query whose scaled coordinates overflow (sites near 1e-300, a point near 1e300):
        // compared unsquared; both sites lie at the same rounded distance, so the first wins.
        let sites = [[1e-300, 0.0], [0.0, 2e-300]];
        let index = SiteIndex::new(&sites).unwrap();
        let far = [-1e300, 1e300];
        assert_eq!(index.nearest(far), (0, distance(far, sites[0])));
        assert!((index.nearest(far).1 / 1e300 - std::f64::consts::SQRT_2).abs() < 1e-15);
    }

    #[test]
    fn loads_and_cost_are_bit_identical_on_any_thread_count() {
        // Deterministic output: the sums do not depend on how the work is scheduled.
        let mut random = crate::geometry::random::SplitMix64::new(5);
        let mut next = || random.next_f64();
        let pts: Vec<Point> = (0..300_000).map(|_| [next(), next()]).collect();
        let w: Vec<f64> = (0..pts.len()).map(|_| next() * 10.0).collect();
        let sites: Vec<Point> = (0..100).map(|_| [next(), next()]).collect();
        let run = |threads: usize| {
            let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
            pool.install(|| nearest_site(&pts, &sites, Weights::Given(&w)).unwrap())
        };
        let one = run(1);
        for threads in [2, 3, 7] {
            let other = run(threads);
            assert_eq!(other.cost.to_bits(), one.cost.to_bits());
            assert!(other.load.iter().zip(&one.load).all(|(a, b)| a.to_bits() == b.to_bits()));
        }
    }

    #[test]
    fn watched_searches_count_every_point_and_a_cancel_leaves_no_answer() {
        // 300,000 points and 50,000 sites (their triangulation in one strip), ungrouped and in
        // three groups. Watching changes nothing in the allocation.
        let mut random = crate::geometry::random::SplitMix64::new(11);
        let mut next = || random.next_f64();
        let pts: Vec<Point> = (0..300_000).map(|_| [next(), next()]).collect();
        let sites: Vec<Point> = (0..50_000).map(|_| [next(), next()]).collect();
        let watch = Watch::new();
        let watched = nearest_site_watched(&pts, &sites, Weights::Unit, &watch).unwrap();
        assert_eq!(watch.progress(), (300_000, 300_000));
        assert_eq!(watched, nearest_site(&pts, &sites, Weights::Unit).unwrap());
        crate::cancel::testing::cancelled_after(1, |watch| nearest_site_watched(&pts, &sites, Weights::Unit, watch));
        let cancelled = Watch::new();
        cancelled.cancel();
        // Cancelled before the start: the sites' triangulation stops, no point is served.
        assert!(nearest_site_watched(&pts, &sites, Weights::Unit, &cancelled).is_err());
        assert_eq!(cancelled.progress(), (0, 300_000));
        let labels: Vec<i64> = (0..pts.len()).map(|i| (i % 3) as i64).collect();
        let site_labels: Vec<i64> = (0..sites.len()).map(|j| (j % 3) as i64).collect();
        let watch = Watch::new();
        let grouped = nearest_site_grouped_watched(
            &pts,
            Weights::Unit,
            &labels,
            &sites,
            &site_labels,
            OnGroupError::Raise,
            &watch,
        )
        .unwrap();
        assert_eq!(watch.progress(), (300_000, 300_000));
        let plain =
            nearest_site_grouped(&pts, Weights::Unit, &labels, &sites, &site_labels, OnGroupError::Raise).unwrap();
        assert_eq!(grouped.grouped.results, plain.grouped.results);
        crate::cancel::testing::cancelled_after(1, |watch| {
            nearest_site_grouped_watched(&pts, Weights::Unit, &labels, &sites, &site_labels, OnGroupError::Raise, watch)
                .map(drop)
        });
    }

    fn brute_force(p: Point, sites: &[Point]) -> (usize, f64) {
        let mut best = (0, f64::INFINITY);
        for (j, &s) in sites.iter().enumerate() {
            let d = crate::geometry::distance_squared(p, s);
            if d < best.1 {
                best = (j, d);
            }
        }
        (best.0, best.1.sqrt())
    }

    #[test]
    fn ties_go_to_the_smaller_site_index() {
        // The centre of a square is equally far from its four corners.
        let sites = [[1.0, 1.0], [0.0, 0.0], [1.0, 0.0], [0.0, 1.0]];
        let a = nearest_site(&[[0.5, 0.5], [0.5, 0.0]], &sites, Weights::Unit).unwrap();
        assert_eq!(a.index, vec![0, 1]);
        // Duplicate sites: the first copy wins.
        let a = nearest_site(&[[5.0, 5.0]], &[[0.0, 0.0], [4.0, 4.0], [4.0, 4.0]], Weights::Unit).unwrap();
        assert_eq!(a.index, vec![1]);
    }

    #[test]
    fn loads_and_cost_follow_weights() {
        let sites = [[0.0, 0.0], [10.0, 0.0]];
        let pts = [[1.0, 0.0], [9.0, 0.0], [8.0, 0.0]];
        let a = nearest_site(&pts, &sites, Weights::Given(&[2.0, 1.0, 0.5])).unwrap();
        assert_eq!(a.index, vec![0, 1, 1]);
        assert_eq!(a.load, vec![2.0, 1.5]);
        assert_eq!(a.count, vec![1, 2]);
        assert_eq!(a.cost, 2.0 * 1.0 + 1.0 * 1.0 + 0.5 * 2.0);
        assert_eq!(a.total_load, 3.5);
    }

    #[test]
    fn grouped_sites_serve_their_own_label_and_errors_name_input_rows() {
        // Label 2 has points but no sites; label 5's demand goes to its own far site (row 2),
        // not to label 1's nearer one (row 0).
        let pts = [[0.0, 0.0], [1.0, 0.0], [0.5, 0.0], [3.0, 0.0]];
        let sites = [[0.0, 0.0], [4.0, 0.0], [100.0, 0.0]];
        let r =
            nearest_site_grouped(&pts, Weights::Unit, &[1, 5, 2, 1], &sites, &[1, 1, 5], OnGroupError::Skip).unwrap();
        assert_eq!(r.grouped.labels, vec![1, 2, 5]);
        let (first, last) = (r.grouped.results[0].as_ref().unwrap(), r.grouped.results[2].as_ref().unwrap());
        assert_eq!((first.index.clone(), first.count.clone()), (vec![0, 1], vec![1, 1]));
        assert_eq!((last.index.clone(), last.distance.clone()), (vec![2], vec![99.0]));
        let e = r.grouped.results[1].as_ref().unwrap_err();
        assert_eq!(e.to_string(), "group 2: sites must hold at least 1 point; got 0");
        assert_eq!(r.points.by_row(&r.grouped, usize::MAX, |a, k| a.index[k]), vec![0, 2, usize::MAX, 1]);
        assert_eq!(r.sites.by_row(&r.grouped, f64::NAN, |a, k| a.load[k]), vec![1.0, 1.0, 1.0]);
        let w = [1.0, 1.0, 1.0, -2.0];
        let e = nearest_site_grouped(&pts, Weights::Given(&w), &[1, 5, 2, 1], &sites, &[1, 1, 5], OnGroupError::Raise);
        assert_eq!(e.unwrap_err().to_string(), "group 1: weights must be finite and >= 0; weights[3] = -2");
    }

    #[test]
    fn bad_input_is_refused() {
        assert!(matches!(nearest_site(&[], &[[0.0, 0.0]], Weights::Unit), Err(Error::TooFewPoints { .. })));
        assert!(matches!(nearest_site(&[[0.0, 0.0]], &[], Weights::Unit), Err(Error::TooFewPoints { .. })));
        assert!(matches!(
            nearest_site(&[[0.0, 0.0]], &[[f64::INFINITY, 0.0]], Weights::Unit),
            Err(Error::NonFiniteCoordinate { argument: "sites", .. })
        ));
        assert!(matches!(
            nearest_site(&[[0.0, 0.0]], &[[0.0, 0.0]], Weights::Given(&[1.0, 2.0])),
            Err(Error::LengthMismatch { .. })
        ));
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]
        #[test]
        fn matches_brute_force(
            sites in proptest::collection::vec((-50i32..50, -50i32..50), 1..40),
            pts in proptest::collection::vec((-60.0f64..60.0, -60.0f64..60.0), 1..200),
        ) {
            // Integer sites make exact ties common; brute force takes the first minimum.
            let sites: Vec<Point> = sites.iter().map(|&(x, y)| [x as f64, y as f64]).collect();
            let pts: Vec<Point> = pts.iter().map(|&(x, y)| [x.round() / 2.0, y.round() / 2.0]).collect();
            let a = nearest_site(&pts, &sites, Weights::Unit).unwrap();
            for (i, &p) in pts.iter().enumerate() {
                let (j, d) = brute_force(p, &sites);
                prop_assert_eq!(a.index[i], j);
                prop_assert!((a.distance[i] - d).abs() <= 1e-12 * d.max(1.0));
            }
            prop_assert_eq!(a.load.iter().sum::<f64>(), pts.len() as f64);
            prop_assert_eq!(a.count.iter().sum::<usize>(), pts.len());
        }

        #[test]
        fn grouped_equals_separate_calls(
            sites in proptest::collection::vec((-20i32..20, -20i32..20, 0i64..3), 1..30),
            pts in proptest::collection::vec((-30i32..30, -30i32..30, 0i64..3, 0u8..4), 1..120),
        ) {
            // Each group's allocation from a separate call on its own points and sites, with
            // the site index mapped to the site's input row here.
            let (site_xy, site_labels): (Vec<Point>, Vec<i64>) = sites.iter().map(|&(x, y, g)| ([x as f64, y as f64], g)).unzip();
            let xy: Vec<Point> = pts.iter().map(|&(x, y, _, _)| [x as f64 / 2.0, y as f64 / 2.0]).collect();
            let labels: Vec<i64> = pts.iter().map(|&(_, _, g, _)| g).collect();
            let w: Vec<f64> = pts.iter().map(|&(_, _, _, w)| f64::from(w) + 0.5).collect();
            let r = nearest_site_grouped(&xy, Weights::Given(&w), &labels, &site_xy, &site_labels, OnGroupError::Skip).unwrap();
            for (&label, outcome) in r.grouped.labels.iter().zip(&r.grouped.results) {
                let rows: Vec<usize> = (0..xy.len()).filter(|&i| labels[i] == label).collect();
                let site_rows: Vec<usize> = (0..site_xy.len()).filter(|&j| site_labels[j] == label).collect();
                let own: Vec<Point> = rows.iter().map(|&i| xy[i]).collect();
                let own_w: Vec<f64> = rows.iter().map(|&i| w[i]).collect();
                let own_sites: Vec<Point> = site_rows.iter().map(|&j| site_xy[j]).collect();
                if rows.is_empty() {
                    // Sites without demand serve nobody.
                    let ours = outcome.as_ref().unwrap();
                    prop_assert!(ours.load.iter().all(|&l| l == 0.0) && ours.count.iter().all(|&c| c == 0));
                    prop_assert_eq!((ours.load.len(), ours.cost, ours.total_load), (site_rows.len(), 0.0, 0.0));
                    continue;
                }
                match (nearest_site(&own, &own_sites, Weights::Given(&own_w)), outcome) {
                    (Ok(mut a), Ok(ours)) => {
                        a.index.iter_mut().for_each(|j| *j = site_rows[*j]);
                        prop_assert_eq!(&a, ours);
                    }
                    (Err(_), Err(ours)) => prop_assert!(site_rows.is_empty(), "{}", ours),
                    (single, grouped) => prop_assert!(false, "separate {:?}, grouped {:?}", single, grouped),
                }
            }
        }
    }
}
