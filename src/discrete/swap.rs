//! The p-median interchange: Teitz & Bart's (1968) vertex substitution with Whitaker's (1983)
//! fast interchange, kept up to date swap by swap as Resende & Werneck (2004) do.
//!
//! With every point's cheapest (`d1`, at open position `c1`) and second-cheapest (`d2`) open
//! cost, the profit of the swap "insert candidate `u`, remove the site at position `r`" is
//! `gain(u) − loss(r) + extra(u, r)`:
//!
//! - `gain(u) = Σᵢ wᵢ · max(0, d1ᵢ − costs[i, u])`;
//! - `loss(r) = Σ_{i: c1ᵢ = r} wᵢ · (d2ᵢ − d1ᵢ)`;
//! - `extra(u, r) = Σ_{i: c1ᵢ = r, costs[i, u] < d2ᵢ} wᵢ · (d2ᵢ − max(d1ᵢ, costs[i, u]))`.
//!
//! A point's share of the three depends on its own `(d1, c1, d2)` only (the sums run over
//! every candidate cheaper than `d2`, open or not; the entries of open candidates are never
//! read), so after a swap only the points whose two cheapest open sites changed — those
//! served first or second by the removed site, and those for which the inserted one is
//! cheaper than their second — take their old share out and put the new one in. A swap then
//! costs O(affected points · their candidates below `d2` + n + m·p) instead of a pass over
//! every point's candidates. The sums are rebuilt from scratch every [`REBUILD_EVERY`] swaps
//! and before the search stops, so rounding accumulated by the updates never decides that no
//! swap (or a false one) improves the plan.

use super::near::NearLists;
use super::{sum_rows, Costs};
use crate::cancel::Clock;
use crate::geometry::Weights;

/// Swaps after which the sums are recomputed from every point.
const REBUILD_EVERY: usize = 256;
/// A missing open position (no allowed open site).
const NONE: usize = usize::MAX;

/// A point's two cheapest open sites: cost and position in `open` of the first, cost and
/// position of the second ([`NONE`] and the ceiling when there is no such site).
#[derive(Clone, Copy)]
struct TopTwo {
    d1: f64,
    c1: usize,
    d2: f64,
    c2: usize,
}

/// The search state: the plan and the sums of every point's share.
struct Interchange<'a, 'c> {
    costs: &'a Costs<'c>,
    near: &'a NearLists,
    weights: Weights<'a>,
    ceiling: f64,
    /// Number of open sites.
    k: usize,
    /// `position[j]`: where candidate `j` is in `open`, [`NONE`] when closed.
    position: Vec<usize>,
    top: Vec<TopTwo>,
    /// `gain` (m) | `loss` (k) | `extra` (m × k, row `u`) | the current total (1).
    sums: Vec<f64>,
}

impl Interchange<'_, '_> {
    /// Point `i`'s two cheapest open sites, from its list in ascending cost when both are in
    /// it, otherwise from every open site.
    fn top_two(&self, i: usize, open: &[usize]) -> TopTwo {
        let mut t = TopTwo { d1: self.ceiling, c1: NONE, d2: self.ceiling, c2: NONE };
        let (columns, values) = self.near.row(i);
        for (&j, &c) in columns.iter().zip(values) {
            let at = self.position[j as usize];
            if at == NONE {
                continue;
            }
            if t.c1 == NONE {
                (t.d1, t.c1) = (c, at);
            } else {
                (t.d2, t.c2) = (c, at);
                return t;
            }
        }
        if self.near.limit(i).is_infinite() {
            // The whole row is listed: what was found is all there is.
            return t;
        }
        // Strict `<` keeps the first position among equally cheap sites.
        t = TopTwo { d1: self.ceiling, c1: NONE, d2: self.ceiling, c2: NONE };
        for (at, &j) in open.iter().enumerate() {
            let Some(c) = self.costs.cost(i, j) else { continue };
            if c < t.d1 {
                (t.d2, t.c2) = (t.d1, t.c1);
                (t.d1, t.c1) = (c, at);
            } else if c < t.d2 {
                (t.d2, t.c2) = (c, at);
            }
        }
        t
    }

    /// Add `sign` times point `i`'s share (see the module docs) to `acc`, laid out as
    /// [`Interchange::sums`].
    fn share(&self, i: usize, t: TopTwo, sign: f64, acc: &mut [f64]) {
        let w = self.weights.get(i);
        if w == 0.0 {
            return;
        }
        let (m, k) = (self.position.len(), self.k);
        let sw = sign * w;
        acc[m + k + m * k] += sw * t.d1;
        let (a, b) = (t.d1, t.d2);
        let r = t.c1;
        if r == NONE {
            // No open site: nothing is lost by a removal; every allowed candidate gains.
            self.near.for_each_below(self.costs, i, b, |u, c| acc[u] += sw * (a - c).max(0.0));
            return;
        }
        acc[m + r] += sw * (b - a);
        self.near.for_each_below(self.costs, i, b, |u, c| {
            if c < a {
                acc[u] += sw * (a - c);
            }
            acc[m + k + u * k + r] += sw * (b - c.max(a));
        });
    }

    /// Every point's two cheapest open sites and the sums, from scratch.
    fn rebuild(&mut self, open: &[usize]) {
        use rayon::prelude::*;
        let (n, m, k) = (self.costs.rows(), self.position.len(), self.k);
        self.top = (0..n).into_par_iter().map(|i| self.top_two(i, open)).collect();
        self.sums = sum_rows(n, m + k + m * k + 1, |i, acc| self.share(i, self.top[i], 1.0, acc));
    }

    /// The best swap `(profit, u, r)` over closed `u` and removable positions `r`, if one
    /// gains more than `tolerance`.
    fn best_swap(&self, removable: std::ops::Range<usize>, tolerance: f64) -> Option<(usize, usize)> {
        let (m, k) = (self.position.len(), removable.end);
        let (gain, rest) = self.sums.split_at(m);
        let (loss, extra) = rest.split_at(k);
        let mut best = (tolerance, NONE, NONE);
        for u in (0..m).filter(|&u| self.position[u] == NONE) {
            let row = &extra[u * k..(u + 1) * k];
            for r in removable.clone() {
                let profit = gain[u] - loss[r] + row[r];
                if profit > best.0 {
                    best = (profit, u, r);
                }
            }
        }
        (best.1 != NONE).then_some((best.1, best.2))
    }

    /// Open `u` in place of the site at position `r`, updating the points it concerns.
    fn apply(&mut self, open: &mut [usize], u: usize, r: usize) {
        let out = open[r];
        self.position[out] = NONE;
        self.position[u] = r;
        open[r] = u;
        let mut sums = std::mem::take(&mut self.sums);
        for i in 0..self.costs.rows() {
            let t = self.top[i];
            let concerned = t.c1 == r || t.c2 == r || self.costs.cost(i, u).is_some_and(|c| c < t.d2);
            if concerned {
                self.share(i, t, -1.0, &mut sums);
                let fresh = self.top_two(i, open);
                self.share(i, fresh, 1.0, &mut sums);
                self.top[i] = fresh;
            }
        }
        self.sums = sums;
    }
}

/// Improve `open` by the best swap (insert a closed candidate, remove a non-fixed open one;
/// ties: smallest candidate, then position) while one lowers the cost; returns the number of
/// swaps. A point without a second allowed open site counts `ceiling` for it: with `ceiling`
/// above what any serving plan costs per unit of weight, no swap leaves a point of positive
/// weight unserved. Stops with the plan so far when `clock` says so (polled before every
/// swap, each well under a second at any size the cost sources allow).
///
/// # Runtime
/// O(n · q + m · p) to start and every [`REBUILD_EVERY`] swaps, `q` the candidates of a
/// point cheaper than its second open site; O(n + a · q + m · p) per swap in between, `a`
/// the points whose two cheapest open sites change.
#[allow(clippy::too_many_arguments)]
pub(super) fn fast_swap(
    costs: &Costs<'_>,
    near: &NearLists,
    weights: Weights<'_>,
    open: &mut [usize],
    fixed_count: usize,
    max_swaps: usize,
    ceiling: f64,
    clock: &Clock,
) -> usize {
    let m = costs.columns();
    let mut position = vec![NONE; m];
    for (at, &j) in open.iter().enumerate() {
        position[j] = at;
    }
    let k = open.len();
    let mut search = Interchange { costs, near, weights, ceiling, k, position, top: Vec::new(), sums: Vec::new() };
    search.rebuild(open);
    let (mut swaps, mut since) = (0, 0);
    while swaps < max_swaps && !clock.stop() {
        // A swap must gain more than rounding noise of the current total.
        let total = search.sums[search.sums.len() - 1];
        let tolerance = 1e-12 * total.max(f64::MIN_POSITIVE);
        match search.best_swap(fixed_count..open.len(), tolerance) {
            Some((u, r)) => {
                search.apply(open, u, r);
                swaps += 1;
                since += 1;
                if since == REBUILD_EVERY {
                    search.rebuild(open);
                    since = 0;
                }
            }
            // Updated sums found nothing: confirm on exact ones before stopping.
            None if since > 0 => {
                search.rebuild(open);
                since = 0;
            }
            None => break,
        }
    }
    swaps
}
