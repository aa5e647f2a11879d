//! The assignment step: each point's least power distance site `|x − s_j|² − w_j`, with the
//! gap to the second least (how far the point is from a cell boundary, in squared units).
//!
//! Kept behind one function so the whole-diagram assignment of the power-diagram family
//! can replace it. Each point keeps its `K` nearest sites by power distance under the
//! powers `v` of the listing (plain distance for `v = 0`; a bucket grid searched ring by
//! ring, Bentley, Weide & Yao 1980). A site outside that list has `|x − s|² − v ≥ d_K`,
//! the `K`-th listed value, so under powers `w` it is at least `d_K − max_j (w_j − v_j)`
//! away; the listed best and second best are exact whenever the second best is below that
//! bound, and the point falls back to every site otherwise. Powers that move cells by
//! several site spacings (uneven capacities over uneven Voronoi cells) make plain-distance
//! lists miss a point's power-nearest site, so the lists are drawn again once the powers
//! have their large-scale shape.

use rayon::prelude::*;

use crate::geometry::{distance_squared, BoundingBox, Point};

/// Sites listed per point.
pub(super) const LISTED: usize = 12;

/// Each point's nearest sites by plain distance.
pub(super) struct Candidates {
    /// Sites per point (`min(LISTED, m)`).
    pub per_point: usize,
    /// `per_point` site indices per point, nearest first.
    pub sites: Vec<u32>,
    /// Per point, the power distance to its last listed site (infinite when every site is
    /// listed: nothing lies outside the list).
    pub outside: Vec<f64>,
    /// The powers of the listing.
    pub powers: Vec<f64>,
}

impl Candidates {
    /// The listed sites of every point, nearest by power distance under `powers`.
    pub fn new(points: &[Point], sites: &[Point], powers: &[f64]) -> Candidates {
        let m = sites.len();
        let k = LISTED.min(m);
        let top = powers.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let grid = SiteGrid::new(sites);
        let mut list = vec![0u32; points.len() * k];
        let mut outside = vec![0.0; points.len()];
        list.par_chunks_mut(k).zip(outside.par_iter_mut()).zip(points.par_iter()).for_each_init(
            || Vec::with_capacity(4 * k),
            |found, ((row, out), &p)| {
                grid.nearest(p, sites, powers, top, k, found);
                row.iter_mut().zip(found.iter()).for_each(|(r, &(_, j))| *r = j);
                *out = if k == m { f64::INFINITY } else { found[k - 1].0 };
            },
        );
        Candidates { per_point: k, sites: list, outside, powers: powers.to_vec() }
    }

    /// The listed sites of point `i`.
    #[inline]
    pub fn of(&self, i: usize) -> &[u32] {
        &self.sites[i * self.per_point..(i + 1) * self.per_point]
    }
}

/// Sites in square buckets of about two sites each (CSR by bucket, row-major).
struct SiteGrid {
    origin: Point,
    cell: f64,
    columns: usize,
    rows: usize,
    start: Vec<u32>,
    members: Vec<u32>,
}

impl SiteGrid {
    fn new(sites: &[Point]) -> SiteGrid {
        let b = BoundingBox::of(sites).expect("sites validated non-empty");
        let (w, h) = (b.max[0] - b.min[0], b.max[1] - b.min[1]);
        let span = w.max(h);
        // About two sites per bucket over the box (a flat box: along its length).
        let area = if w > 0.0 && h > 0.0 { w * h } else { span * span / sites.len() as f64 };
        // A span in the subnormal range underflows the area and `span · 1e-9`: the whole
        // span is then one bucket (a cell of 0 would divide the extent to infinity).
        let fine = (2.0 * area / sites.len() as f64).sqrt().max(span * 1e-9);
        let cell = if span > 0.0 {
            if fine > 0.0 {
                fine
            } else {
                span
            }
        } else {
            1.0
        };
        // At most 4,096 buckets a side, clamped before the cast (a huge ratio would wrap).
        let count = |extent: f64| (extent / cell).floor().min(4095.0) as usize + 1;
        let (columns, rows) = (count(w), count(h));
        let mut grid =
            SiteGrid { origin: b.min, cell, columns, rows, start: vec![0; columns * rows + 1], members: Vec::new() };
        let of: Vec<usize> = sites.iter().map(|&s| grid.bucket(s)).collect();
        of.iter().for_each(|&c| grid.start[c + 1] += 1);
        for c in 0..columns * rows {
            grid.start[c + 1] += grid.start[c];
        }
        let mut next = grid.start.clone();
        grid.members = vec![0; sites.len()];
        for (j, &c) in of.iter().enumerate() {
            grid.members[next[c] as usize] = j as u32;
            next[c] += 1;
        }
        grid
    }

    /// Column and row of the bucket holding `p` (clamped to the grid).
    fn cell_of(&self, p: Point) -> (usize, usize) {
        let at = |v: f64, o: f64, n: usize| (((v - o) / self.cell).floor().max(0.0) as usize).min(n - 1);
        (at(p[0], self.origin[0], self.columns), at(p[1], self.origin[1], self.rows))
    }

    fn bucket(&self, p: Point) -> usize {
        let (c, r) = self.cell_of(p);
        r * self.columns + c
    }

    /// The `k` nearest sites of `p` by power distance `|p − s|² − powers` as `(value, site)`,
    /// ascending (ties by site), in `found`; `top` is the largest power. Buckets are visited
    /// in square rings round the point's bucket; a site in a ring not yet visited is at
    /// least `(ring · cell)² − top` away, which ends the search.
    fn nearest(&self, p: Point, sites: &[Point], powers: &[f64], top: f64, k: usize, found: &mut Vec<(f64, u32)>) {
        found.clear();
        let (c0, r0) = self.cell_of(p);
        let (c0, r0) = (c0 as isize, r0 as isize);
        let widest = self.columns.max(self.rows) as isize;
        for ring in 0..=widest {
            let mut visit = |c: isize, r: isize| {
                if c < 0 || r < 0 || c >= self.columns as isize || r >= self.rows as isize {
                    return;
                }
                let b = r as usize * self.columns + c as usize;
                for &j in &self.members[self.start[b] as usize..self.start[b + 1] as usize] {
                    let d = distance_squared(p, sites[j as usize]) - powers[j as usize];
                    if found.len() < k || (d, j) < found[k - 1] {
                        let at = found.partition_point(|e| *e < (d, j));
                        found.insert(at, (d, j));
                        found.truncate(k);
                    }
                }
            };
            if ring == 0 {
                visit(c0, r0);
            } else {
                for c in c0 - ring..=c0 + ring {
                    visit(c, r0 - ring);
                    visit(c, r0 + ring);
                }
                for r in r0 - ring + 1..r0 + ring {
                    visit(c0 - ring, r);
                    visit(c0 + ring, r);
                }
            }
            let reach = ring as f64 * self.cell;
            if found.len() == k && found[k - 1].0 <= reach * reach - top {
                break;
            }
        }
    }
}

/// Per point, the least power distance site (smallest index among equals) and the gap
/// `second least − least` (infinite with one site).
pub(super) fn power_nearest_with_gap(
    points: &[Point],
    sites: &[Point],
    powers: &[f64],
    candidates: &Candidates,
) -> (Vec<u32>, Vec<f64>) {
    let top = powers.iter().zip(&candidates.powers).map(|(w, v)| w - v).fold(f64::NEG_INFINITY, f64::max);
    let rows: Vec<(u32, f64)> = (0..points.len())
        .into_par_iter()
        .map(|i| {
            let p = points[i];
            let listed = two_least(p, sites, powers, candidates.of(i).iter().map(|&j| j as usize));
            if listed.2 < candidates.outside[i] - top {
                (listed.0, listed.2 - listed.1)
            } else {
                let all = two_least(p, sites, powers, 0..sites.len());
                (all.0, all.2 - all.1)
            }
        })
        .collect();
    rows.into_iter().unzip()
}

/// The least power distance site among `which`, the least and the second least values.
#[inline]
fn two_least(p: Point, sites: &[Point], powers: &[f64], which: impl Iterator<Item = usize>) -> (u32, f64, f64) {
    let (mut best, mut first, mut second) = (u32::MAX, f64::INFINITY, f64::INFINITY);
    for j in which {
        let v = distance_squared(p, sites[j]) - powers[j];
        if v < first || (v == first && (j as u32) < best) {
            second = first;
            first = v;
            best = j as u32;
        } else if v < second {
            second = v;
        }
    }
    (best, first, second)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::partition::testing::lcg_cloud;

    #[test]
    fn listed_sites_are_the_nearest_by_brute_force() {
        // Clustered, collinear, repeated and far-away sites; points inside and outside their box.
        let mut clustered = lcg_cloud(40, 3, [0.0, 0.0], 1.0);
        clustered.extend(lcg_cloud(40, 4, [50.0, 50.0], 0.1));
        let line: Vec<Point> = (0..30).map(|j| [j as f64, 2.0]).collect();
        let repeated = vec![[1.0, 1.0]; 20];
        // Subnormal sites: a span of 5e-324 once left the grid without buckets.
        let subnormal = vec![[5e-324, 0.0], [0.0, 0.0], [0.0, 1e-323]];
        for sites in [clustered, line, repeated, vec![[0.0, 0.0], [1e6, -1e6], [3.0, 4.0]], subnormal] {
            let points = lcg_cloud(500, 9, [-20.0, -20.0], 100.0);
            let c = Candidates::new(&points, &sites, &vec![0.0; sites.len()]);
            for (i, &p) in points.iter().enumerate() {
                let mut all: Vec<(f64, u32)> =
                    sites.iter().enumerate().map(|(j, &s)| (distance_squared(p, s), j as u32)).collect();
                all.sort_by(|a, b| a.partial_cmp(b).unwrap());
                let expected: Vec<u32> = all[..c.per_point].iter().map(|e| e.1).collect();
                assert_eq!(c.of(i), expected.as_slice(), "point {i}");
                if c.per_point < sites.len() {
                    assert_eq!(c.outside[i], all[c.per_point - 1].0);
                }
            }
        }
    }
}
