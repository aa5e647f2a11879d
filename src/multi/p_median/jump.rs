//! j-means jumps: Hansen and Mladenović (2001), "J-Means: a new local search heuristic for
//! minimum sum of squares clustering", Pattern Recognition 34. Move one new site to an
//! unoccupied demand location, choosing the best such move by its exact change in cost,
//! which the nearest and second-nearest distances give in O(n) per candidate location
//! (Whitaker 1983, "A fast algorithm for the greedy interchange for large-scale clustering
//! and median location problems", INFOR 21).

use rayon::prelude::*;

use super::reallocate::scan;
use super::{Budget, Problem, Solution};
use crate::geometry::random::SplitMix64;
use crate::geometry::Point;
use crate::multi::seeding::draw_weighted;

/// Nearest and second-nearest sites of every point.
struct TwoNearest {
    site: Vec<usize>,
    first: Vec<f64>,
    second: Vec<f64>,
}

impl Problem<'_> {
    /// Nearest site (new or fixed), its distance and the second-nearest distance of every point.
    fn two_nearest(&self, sites: &[Point]) -> TwoNearest {
        let all = self.with_fixed(sites);
        let per_point: Vec<(usize, f64, f64)> =
            self.points.par_iter().with_min_len(4096).map(|&a| scan(a, &all)).collect();
        TwoNearest {
            site: per_point.iter().map(|t| t.0).collect(),
            first: per_point.iter().map(|t| t.1).collect(),
            second: per_point.iter().map(|t| t.2).collect(),
        }
    }

    /// The best jump: a demand location `target` not at a site and a new site to move there,
    /// with the exact change in cost. Every distinct location is examined up to 2 000 of
    /// them; beyond, `budget.candidates` are drawn with probability ∝ `wᵢ · dᵢ`.
    pub(super) fn best_jump(
        &self,
        current: &Solution,
        rng: &mut SplitMix64,
        budget: &Budget,
    ) -> Option<(usize, usize, f64)> {
        const EXAMINE_ALL: usize = 2_000;
        let near = self.two_nearest(&current.sites);
        if self.halted() {
            return None;
        }
        let mut targets: Vec<usize> = if self.candidates.len() <= EXAMINE_ALL {
            self.candidates.to_vec()
        } else {
            let scores: Vec<f64> = self.candidates.iter().map(|&i| self.weights.get(i) * near.first[i]).collect();
            let mut drawn: Vec<usize> = (0..budget.candidates)
                .filter_map(|_| draw_weighted(&scores, rng).map(|c| self.candidates[c]))
                .collect();
            drawn.sort_unstable();
            drawn.dedup();
            drawn
        };
        targets.retain(|&i| near.first[i] > 0.0);
        // The positive-weight points as flat columns, so the distance pass vectorises.
        let served: Vec<usize> = (0..self.points.len()).filter(|&i| self.weights.get(i) > 0.0).collect();
        let xs: Vec<f64> = served.iter().map(|&i| self.points[i][0]).collect();
        let ys: Vec<f64> = served.iter().map(|&i| self.points[i][1]).collect();
        let ws: Vec<f64> = served.iter().map(|&i| self.weights.get(i)).collect();
        let first: Vec<f64> = served.iter().map(|&i| near.first[i]).collect();
        let second: Vec<f64> = served.iter().map(|&i| near.second[i]).collect();
        let site: Vec<usize> = served.iter().map(|&i| near.site[i]).collect();
        let p = self.p;
        let evaluated: Vec<(usize, usize, f64)> = targets
            .par_iter()
            .map_init(
                || (vec![0.0; xs.len()], vec![0.0; p]),
                |(dc, loss), &c| {
                    // Stopping early: an infinite change is never taken.
                    if self.halted() {
                        return (c, 0, f64::INFINITY);
                    }
                    let [tx, ty] = self.place(self.points[c]);
                    for ((d, &x), &y) in dc.iter_mut().zip(&xs).zip(&ys) {
                        let (dx, dy) = (x - tx, y - ty);
                        *d = (dx * dx + dy * dy).sqrt();
                    }
                    // Gain where the target is nearer than every site; loss per removed site.
                    let mut gain = 0.0;
                    loss.iter_mut().for_each(|l| *l = 0.0);
                    for k in 0..dc.len() {
                        if dc[k] < first[k] {
                            gain += ws[k] * (first[k] - dc[k]);
                        } else if site[k] < p {
                            loss[site[k]] += ws[k] * (dc[k].min(second[k]) - first[k]);
                        }
                    }
                    let (removed, &least) = loss.iter().enumerate().min_by(|a, b| a.1.total_cmp(b.1)).expect("p >= 1");
                    (c, removed, least - gain)
                },
            )
            .collect();
        // First best in target order: deterministic whatever the thread timing.
        evaluated.into_iter().fold(None, |best: Option<(usize, usize, f64)>, e| match best {
            Some(b) if b.2 <= e.2 => Some(b),
            _ => Some(e),
        })
    }
}
