//! Geodesically nearest site of every point, at any extent.
//!
//! The sites' Earth-centred positions on the ellipsoid go into a 3-D R*-tree (`rstar`,
//! bulk loaded). For each point the tree gives the site of shortest straight-line (chord)
//! distance, whose geodesic distance `s₀` (the inverse problem, Karney 2013) bounds the
//! optimum from above. The chord between two points of the surface is never longer than
//! any path on it, so `chord ≤ s` for every site: only sites whose chord is at most `s₀`
//! can be nearer or as near, and the tree lists exactly those; each is measured on the
//! ellipsoid, and the answer is exact (ties to the smaller site index). Chord order and
//! geodesic order can differ (the ellipsoid is not a sphere, and the chord grows more
//! slowly than the arc), which is why the candidates are all sites within that bound rather
//! than a fixed number.

use rayon::prelude::*;
use rstar::primitives::GeomWithData;
use rstar::RTree;

use super::earth::{ecef, Earth};
use crate::cancel::Watch;
use crate::error::Result;
use crate::geometry::{CompensatedSum, Point, Weights};
use crate::partition::Allocation;

type Site = GeomWithData<[f64; 3], usize>;

/// Points per parallel task.
const CHUNK: usize = 4096;
/// Relative slack on the chord bound, for rounding in the chord and the geodesic distance.
const SLACK: f64 = 1e-12;

/// The sites of a geodesic nearest-site search.
pub(crate) struct SiteTree {
    tree: RTree<Site>,
    sites: Vec<Point>,
    earth: Earth,
}

impl SiteTree {
    pub(crate) fn new(sites: &[Point]) -> SiteTree {
        let entries = sites.iter().enumerate().map(|(j, &p)| Site::new(ecef(p), j)).collect();
        SiteTree { tree: RTree::bulk_load(entries), sites: sites.to_vec(), earth: Earth::wgs84() }
    }

    /// The nearest site to `p` and its geodesic distance, metres.
    pub(crate) fn nearest(&self, p: Point) -> (usize, f64) {
        let q = ecef(p);
        // The chord-nearest site gives an upper bound on the geodesic optimum; every site that
        // can beat or tie it has a chord no longer than that bound (chord <= geodesic).
        let first = self.tree.nearest_neighbor(q).expect("validated: at least one site");
        let mut best = (first.data, self.earth.distance(p, self.sites[first.data]));
        let reach = best.1 * (1.0 + SLACK);
        for site in self.tree.locate_within_distance(q, reach * reach) {
            let j = site.data;
            if j == first.data {
                continue;
            }
            let s = self.earth.distance(p, self.sites[j]);
            if s < best.1 || (s == best.1 && j < best.0) {
                best = (j, s);
            }
        }
        best
    }
}

/// Allocate every (validated) point to its geodesically nearest (validated) site, counting
/// points done on `watch`; once it is cancelled the chunks not yet begun are skipped (the
/// caller drops a cancelled run's answer, see [`Watch::finish`]).
pub(crate) fn allocate(points: &[Point], sites: &[Point], weights: Weights<'_>, watch: &Watch) -> Result<Allocation> {
    watch.plan(points.len() as u64);
    Ok(assign(points, sites, weights, watch))
}

/// [`allocate`] with the points already planned on `watch` by the caller (a grouped run
/// plans all its points at once); counts them done chunk by chunk.
pub(crate) fn assign(points: &[Point], sites: &[Point], weights: Weights<'_>, watch: &Watch) -> Allocation {
    let tree = SiteTree::new(sites);
    let n = points.len();
    let mut index = vec![0usize; n];
    let mut distance = vec![0.0f64; n];
    index.par_chunks_mut(CHUNK).zip(distance.par_chunks_mut(CHUNK)).zip(points.par_chunks(CHUNK)).for_each(
        |((idx, dist), pts)| {
            if watch.is_cancelled() {
                return;
            }
            for ((slot, dslot), &p) in idx.iter_mut().zip(dist.iter_mut()).zip(pts) {
                let (j, s) = tree.nearest(p);
                *slot = j;
                *dslot = s;
            }
            watch.advance(pts.len() as u64);
        },
    );
    // Loads, counts and totals in input order (compensated): the same bits on every run.
    let k = sites.len();
    let mut load = vec![CompensatedSum::default(); k];
    let mut count = vec![0usize; k];
    let (mut cost, mut total) = (CompensatedSum::default(), CompensatedSum::default());
    for i in 0..n {
        let w = weights.get(i);
        load[index[i]].add(w);
        count[index[i]] += 1;
        cost.add(w * distance[i]);
        total.add(w);
    }
    Allocation {
        index,
        distance,
        load: load.iter().map(|s| s.total()).collect(),
        count,
        cost: cost.total(),
        total_load: total.total(),
    }
}
