//! Allocation inside the search: from scratch (R*-tree and Delaunay walk of
//! [`crate::partition::allocate`]) or incrementally after some sites moved.

use rayon::prelude::*;

use super::Problem;
use crate::error::Result;
use crate::geometry::{distance_squared, CompensatedSum, Point};
use crate::partition::{allocate, Allocation, SiteIndex};

/// Nearest site and its distance for every point, with the total weighted distance.
#[derive(Debug, Clone)]
pub(super) struct Served {
    pub(super) index: Vec<usize>,
    pub(super) distance: Vec<f64>,
    pub(super) cost: f64,
}

/// Distance in the working frame, where no square can overflow or underflow (so the plain
/// square root of the sum of squares is as accurate as `hypot` and much faster).
#[inline]
pub(super) fn unit_distance(a: Point, b: Point) -> f64 {
    distance_squared(a, b).sqrt()
}

impl Problem<'_> {
    /// Every point's nearest site (new or fixed) and the cost, from scratch.
    pub(super) fn served(&self, sites: &[Point]) -> Result<Served> {
        let all = self.with_fixed(sites);
        let Allocation { index, distance, cost, .. } = allocate(self.points, &SiteIndex::new(&all)?, self.weights);
        Ok(Served { index, distance, cost })
    }

    /// [`Problem::served`] after the new sites in `moved` changed place, updating `before`:
    /// a point whose site stayed keeps it unless a moved site is now nearer (every other
    /// site is exactly as far as before); a point whose site moved is looked up afresh — by
    /// a scan of the sites when they are few, else in the sites' R*-tree.
    pub(super) fn reallocate(&self, sites: &[Point], moved: &[usize], before: &Served) -> Result<Served> {
        const SCAN_MAX_SITES: usize = 48;
        let all = self.with_fixed(sites);
        let tree = if all.len() > SCAN_MAX_SITES { Some(SiteIndex::new(&all)?) } else { None };
        let mut is_moved = vec![false; all.len()];
        for &j in moved {
            is_moved[j] = true;
        }
        // Equally near: the smaller index wins, as in the full allocation.
        let nearer = |best: &mut (usize, f64), j: usize, d: f64| {
            if d < best.1 || (d == best.1 && j < best.0) {
                *best = (j, d);
            }
        };
        let updated: Vec<(usize, f64)> = (0..self.points.len())
            .into_par_iter()
            .with_min_len(4096)
            .map(|i| {
                let a = self.points[i];
                let old = before.index[i];
                if is_moved[old] {
                    if let Some(tree) = &tree {
                        return tree.nearest(a);
                    }
                    let mut best = (usize::MAX, f64::INFINITY);
                    for (j, &s) in all.iter().enumerate() {
                        nearer(&mut best, j, unit_distance(a, s));
                    }
                    return best;
                }
                let mut best = (old, before.distance[i]);
                for &j in moved {
                    nearer(&mut best, j, unit_distance(a, all[j]));
                }
                best
            })
            .collect();
        let (index, distance): (Vec<usize>, Vec<f64>) = updated.into_iter().unzip();
        // The cost summed in point order: the same bits on every run and thread count.
        let mut cost = CompensatedSum::default();
        for (i, &d) in distance.iter().enumerate() {
            cost.add(self.weights.get(i) * d);
        }
        Ok(Served { index, distance, cost: cost.total() })
    }
}
