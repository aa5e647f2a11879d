//! Allocation inside the search: from scratch, or incrementally after some sites moved.
//!
//! Every point keeps, beside its site and distance, a lower bound on its distance to every
//! *other* site. After the sites move by `δⱼ`, a point whose own site is still nearer than
//! its bound less the largest move of another site keeps its site without looking at the
//! others (Hamerly 2010, "Making k-means even faster", SIAM International Conference on Data
//! Mining). In Cooper's later rounds the sites move little, so almost every point costs one
//! distance per round instead of a nearest-site search.

use rayon::prelude::*;

use super::Problem;
use crate::error::Result;
use crate::geometry::{distance_squared, CompensatedSum, Point};
use crate::partition::{allocate, Allocation, SiteIndex};

/// Up to this many sites (new and fixed) a point whose bound fails scans them all, which
/// also gives its new bound; beyond, the sites' R*-tree answers (and the bound is unknown).
const SCAN_MAX_SITES: usize = 128;

/// Nearest site and its distance for every point, with the total weighted distance.
#[derive(Debug, Clone)]
pub(super) struct Served {
    pub(super) index: Vec<usize>,
    pub(super) distance: Vec<f64>,
    /// A lower bound on every point's distance to each site other than its own (0 when
    /// unknown).
    pub(super) lower: Vec<f64>,
    pub(super) cost: f64,
}

/// Distance in the working frame, where no square can overflow or underflow (so the plain
/// square root of the sum of squares is as accurate as `hypot` and much faster).
#[inline]
pub(super) fn unit_distance(a: Point, b: Point) -> f64 {
    distance_squared(a, b).sqrt()
}

/// Nearest of `sites` to `a` (equally near: the smaller index) and the distance to the
/// nearest of the others.
#[inline]
pub(super) fn scan(a: Point, sites: &[Point]) -> (usize, f64, f64) {
    let (mut site, mut first, mut second) = (usize::MAX, f64::INFINITY, f64::INFINITY);
    for (j, &s) in sites.iter().enumerate() {
        let d = unit_distance(a, s);
        if d < first {
            (second, first, site) = (first, d, j);
        } else if d < second {
            second = d;
        }
    }
    (site, first, second)
}

/// The cost summed in point order: the same bits on every run and thread count.
fn total_cost(problem: &Problem<'_>, distance: &[f64]) -> f64 {
    let mut cost = CompensatedSum::default();
    for (i, &d) in distance.iter().enumerate() {
        cost.add(problem.weights.get(i) * d);
    }
    cost.total()
}

impl Problem<'_> {
    /// Every point's nearest site (new or fixed) and the cost, from scratch.
    pub(super) fn served(&self, sites: &[Point]) -> Result<Served> {
        let all = self.with_fixed(sites);
        if all.len() > SCAN_MAX_SITES {
            let Allocation { index, distance, cost, .. } = allocate(self.points, &SiteIndex::new(&all)?, self.weights);
            let lower = vec![0.0; index.len()];
            return Ok(Served { index, distance, lower, cost });
        }
        let per_point: Vec<(usize, f64, f64)> =
            self.points.par_iter().with_min_len(4096).map(|&a| scan(a, &all)).collect();
        let index = per_point.iter().map(|t| t.0).collect();
        let distance: Vec<f64> = per_point.iter().map(|t| t.1).collect();
        let lower = per_point.iter().map(|t| t.2).collect();
        let cost = total_cost(self, &distance);
        Ok(Served { index, distance, lower, cost })
    }

    /// [`Problem::served`] after the new sites in `moved` went from `before_sites` to
    /// `sites`, updating `before`. A point keeps its site when the bound test allows;
    /// otherwise a point whose site stayed is compared with the moved sites only (every other
    /// site is exactly as far as before), and a point whose site moved is looked up afresh.
    pub(super) fn reallocate(
        &self,
        before_sites: &[Point],
        sites: &[Point],
        moved: &[usize],
        before: &Served,
    ) -> Result<Served> {
        let all = self.with_fixed(sites);
        let tree = if all.len() > SCAN_MAX_SITES { Some(SiteIndex::new(&all)?) } else { None };
        let mut is_moved = vec![false; all.len()];
        // The two largest moves (and whose the largest is): a point's other sites moved by at
        // most the largest move of a site not its own.
        let (mut largest, mut runner_up, mut largest_site) = (0.0f64, 0.0f64, usize::MAX);
        for &j in moved {
            is_moved[j] = true;
            let step = unit_distance(before_sites[j], sites[j]);
            if step > largest {
                (runner_up, largest, largest_site) = (largest, step, j);
            } else if step > runner_up {
                runner_up = step;
            }
        }
        // Equally near: the smaller index wins, as in the full allocation.
        let nearer = |best: &mut (usize, f64), j: usize, d: f64| -> Option<f64> {
            if d < best.1 || (d == best.1 && j < best.0) {
                let displaced = best.1;
                *best = (j, d);
                Some(displaced)
            } else {
                None
            }
        };
        let updated: Vec<(usize, f64, f64)> = (0..self.points.len())
            .into_par_iter()
            .with_min_len(4096)
            .map(|i| {
                let a = self.points[i];
                let old = before.index[i];
                let own = if is_moved[old] { unit_distance(a, all[old]) } else { before.distance[i] };
                let others_moved = if old == largest_site { runner_up } else { largest };
                // Shrunk by a few units in the last place, so rounding in the triangle
                // inequality never keeps a point another site is nearer to.
                let bound = (before.lower[i] - others_moved) * (1.0 - 8.0 * f64::EPSILON);
                if own < bound {
                    return (old, own, bound);
                }
                if tree.is_none() {
                    return scan(a, &all);
                }
                if is_moved[old] {
                    let (j, d) = tree.as_ref().expect("many sites").nearest(a);
                    return (j, d, 0.0);
                }
                // Every site but the moved ones is as far as before: the old bound still holds
                // for them, and the moved ones are measured.
                let mut best = (old, own);
                let mut lower = before.lower[i];
                for &j in moved {
                    let d = unit_distance(a, all[j]);
                    match nearer(&mut best, j, d) {
                        Some(displaced) => lower = lower.min(displaced),
                        None => lower = lower.min(d),
                    }
                }
                (best.0, best.1, lower)
            })
            .collect();
        let index = updated.iter().map(|t| t.0).collect();
        let distance: Vec<f64> = updated.iter().map(|t| t.1).collect();
        let lower = updated.iter().map(|t| t.2).collect();
        let cost = total_cost(self, &distance);
        Ok(Served { index, distance, lower, cost })
    }
}

#[cfg(test)]
mod tests {
    use super::{scan, unit_distance};
    use crate::geometry::random::SplitMix64;
    use crate::geometry::Point;

    /// Against a full sort of the distances (ties by index): the nearest site is the first,
    /// the second distance the next one; on integer coordinates with repeated sites, ties
    /// go to the smaller index.
    #[test]
    fn scan_agrees_with_sorting_the_distances() {
        let mut rng = SplitMix64::new(5);
        let mut grid = || (rng.next_f64() * 6.0).floor();
        for _ in 0..200 {
            let sites: Vec<Point> = (0..1 + (grid() as usize)).map(|_| [grid(), grid()]).collect();
            let a = [grid(), grid()];
            let mut order: Vec<(f64, usize)> =
                sites.iter().enumerate().map(|(j, &s)| (unit_distance(a, s), j)).collect();
            order.sort_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)));
            let second = order.get(1).map_or(f64::INFINITY, |t| t.0);
            assert_eq!(scan(a, &sites), (order[0].1, order[0].0, second));
        }
    }
}
