//! The assignment step: each point's least power distance site `|x − s_j|² − w_j`, with the
//! gap to the second least (how far the point is from a cell boundary, in squared units).
//!
//! Kept behind one function so the whole-diagram assignment of the power-diagram family
//! can replace it. Each point keeps its `K` nearest sites by plain distance (an R*-tree,
//! Beckmann et al. 1990); a site outside that list is at least `d_K² − max_j w_j` away in
//! power, so the listed best and second best are exact whenever the second best is below
//! that bound, and the point falls back to every site otherwise.

use rayon::prelude::*;
use rstar::primitives::GeomWithData;
use rstar::RTree;

use crate::geometry::{distance_squared, Point};

/// Sites listed per point.
pub(super) const LISTED: usize = 12;

/// Each point's nearest sites by plain distance.
pub(super) struct Candidates {
    /// Sites per point (`min(LISTED, m)`).
    pub per_point: usize,
    /// `per_point` site indices per point, nearest first.
    pub sites: Vec<u32>,
    /// Per point, the squared distance to its last listed site (infinite when every site
    /// is listed: nothing lies outside the list).
    pub outside: Vec<f64>,
}

impl Candidates {
    /// The listed sites of every point.
    pub fn new(points: &[Point], sites: &[Point]) -> Candidates {
        let m = sites.len();
        let k = LISTED.min(m);
        let tree = RTree::bulk_load(sites.iter().enumerate().map(|(j, &s)| GeomWithData::new(s, j)).collect());
        let rows: Vec<(Vec<u32>, f64)> = points
            .par_iter()
            .map(|p| {
                let near: Vec<u32> = tree.nearest_neighbor_iter(*p).take(k).map(|s| s.data as u32).collect();
                let outside = if k == m { f64::INFINITY } else { distance_squared(*p, sites[near[k - 1] as usize]) };
                (near, outside)
            })
            .collect();
        let mut list = Vec::with_capacity(points.len() * k);
        let mut outside = Vec::with_capacity(points.len());
        for (near, o) in rows {
            list.extend(near);
            outside.push(o);
        }
        Candidates { per_point: k, sites: list, outside }
    }

    /// The listed sites of point `i`.
    #[inline]
    pub fn of(&self, i: usize) -> &[u32] {
        &self.sites[i * self.per_point..(i + 1) * self.per_point]
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
    let top = powers.iter().copied().fold(f64::NEG_INFINITY, f64::max);
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
