//! Lagrangian heuristic for set covering with unit costs: subgradient optimisation of the
//! Lagrangian relaxation of the covering constraints, a greedy cover steered by the
//! multipliers every few iterations, redundancy removal and a local search, keeping the best
//! cover and the best bound (Beasley 1990; Caprara, Fischetti & Toth 1999, "CFT").
//!
//! Relaxing `Σ_{j ∋ a} xⱼ ≥ 1` with `uₐ ≥ 0` leaves
//!
//! `L(u) = Σₐ uₐ + Σⱼ min(0, γⱼ)`, `γⱼ = 1 − Σ_{a ∈ Sⱼ} uₐ` (the reduced cost),
//!
//! a lower bound on every cover for every `u ≥ 0`; its maximum is the LP optimum. The
//! subgradient is `gₐ = 1 − |{j ∋ a : γⱼ < 0}|`, the step `θ (UB − L) / ‖g‖²` toward the
//! best cover's size `UB`, with `θ` halved after 20 iterations without a better `L`
//! (Beasley 1990). The multipliers start at CFT's `uₐ = min_{j ∋ a} 1 / |Sⱼ|`.
//!
//! Every [`HEURISTIC_EVERY`] iterations the current `u` prices a greedy cover (CFT's score:
//! `γⱼ / μⱼ` for `γⱼ > 0`, else `γⱼ μⱼ`, with `γ` and `μ` over the still uncovered points),
//! whose redundant columns are then dropped (largest reduced cost first) and which a local
//! search shrinks by replacing two columns with one while one does. The best cover found
//! then gets a seeded plateau walk of neutral swaps, each followed by that local search
//! around the swap. Per iteration the work is O(Σ |Sⱼ|), in parallel over columns and
//! points; every value is summed in a fixed order, so the result does not depend on the
//! number of threads.

use std::cmp::{Ordering, Reverse};
use std::collections::BinaryHeap;

use rayon::prelude::*;

use super::{FlatLists, Incidence};
use crate::cancel::{Clock, Steps};
use crate::discrete::StepControl;
use crate::geometry::random::SplitMix64;
use crate::geometry::CompensatedSum;

/// Iterations between two Lagrangian greedy covers.
const HEURISTIC_EVERY: usize = 10;
/// The subgradient stops once [`STALL_WINDOW`] iterations raised the best bound by less than
/// [`STALL_SHARE`] of what still separates it from the best cover (a stall test on the
/// best bound; Beasley 1993).
const STALL_WINDOW: usize = 300;
/// See [`STALL_WINDOW`].
const STALL_SHARE: f64 = 0.01;
/// Columns taken by the greedy, or tried by a pass of the local search, between two polls
/// of the clock (a few milliseconds of work).
const POLL_PICKS: usize = 64;
/// Plateau-walk swaps per column of the best cover after the subgradient (see
/// [`Covering::two_for_one`]). On 20,000 uniform points (r = 1) the walk took the cover
/// from 5.6 % to under 5.1 % above the bound; the covers priced during the subgradient get
/// none (the descent alone), as walks there did not improve the final cover.
const WALK_SWAPS: f64 = 1000.0;

/// A greedy score with a total order (smaller first, ties to the smaller column).
#[derive(PartialEq)]
struct Score(f64, u32);

impl Eq for Score {}

impl PartialOrd for Score {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

impl Ord for Score {
    fn cmp(&self, other: &Self) -> Ordering {
        self.0.total_cmp(&other.0).then(self.1.cmp(&other.1))
    }
}

/// CFT's greedy score of a column with reduced cost `gamma` over its `mu` uncovered points.
/// It never falls as points get covered (`γ` rises by the `uₐ ≥ 0` it loses, `μ` falls by
/// one), which makes the lazy heap of [`Covering::lagrangian_greedy`] exact.
fn score(gamma: f64, mu: u32) -> f64 {
    if gamma > 0.0 {
        gamma / f64::from(mu)
    } else {
        gamma * f64::from(mu)
    }
}

/// The covering problem in compact form: the columns that cover something, renumbered.
pub(super) struct Covering {
    /// Points → compact columns covering them.
    rows: FlatLists,
    /// Compact columns → the points they cover.
    cols: FlatLists,
    /// Compact column → column of the incidence.
    id: Vec<usize>,
}

/// What [`Covering::search`] found.
pub(super) struct Found {
    /// The best cover (incidence columns, ascending).
    pub(super) cover: Vec<usize>,
    /// `⌈L⌉` at the best multipliers: a proven lower bound on every cover's size.
    pub(super) bound: usize,
}

impl Covering {
    /// `None` when a point or column index does not fit in 32 bits.
    pub(super) fn new(inc: &Incidence) -> Option<Covering> {
        let id: Vec<usize> = (0..inc.by_site.len()).filter(|&j| !inc.by_site[j].is_empty()).collect();
        u32::try_from(inc.by_point.len()).ok()?;
        u32::try_from(id.len()).ok()?;
        let mut compact = vec![u32::MAX; inc.by_site.len()];
        id.iter().enumerate().for_each(|(k, &j)| compact[j] = k as u32);
        let rows = FlatLists::of_lists(inc.by_point.iter().map(Vec::as_slice), |j| Some(compact[j]))?;
        let cols = FlatLists::of_lists(id.iter().map(|&j| inc.by_site[j].as_slice()), |a| u32::try_from(a).ok())?;
        Some(Covering { rows, cols, id })
    }

    /// Subgradient optimisation of `L` with the Lagrangian heuristic (see the module docs),
    /// from the cover `start` (incidence columns) and the bound `floor`, for at most
    /// `iterations` iterations, each a step of `steps`. Stops early once `⌈L⌉` reaches the
    /// best cover (proven optimal), when the bound stalls, or when `clock` says so (then
    /// with the best cover and bound so far).
    pub(super) fn search(
        &self,
        start: &[usize],
        floor: usize,
        iterations: usize,
        clock: &Clock,
        steps: &mut Steps<'_>,
    ) -> Found {
        let (n, m) = (self.rows.len(), self.cols.len());
        let mut compact = vec![u32::MAX; self.id.iter().max().map_or(0, |&j| j + 1)];
        self.id.iter().enumerate().for_each(|(k, &j)| compact[j] = k as u32);
        let mut best: Vec<u32> = start.iter().map(|&j| compact[j]).collect();
        debug_assert!(best.iter().all(|&k| k != u32::MAX), "a cover uses only columns covering something");
        // CFT's start: every point priced at its cheapest cost per covered point.
        let mut u: Vec<f64> = (0..n)
            .map(|a| self.rows.of(a).iter().map(|&k| 1.0 / self.cols.of(k as usize).len() as f64).fold(1.0, f64::min))
            .collect();
        let mut bound = floor as f64;
        let mut reduced = vec![0.0; m];
        let mut g = vec![0.0; n];
        // Beasley's step control: the step factor halves after 20 iterations without a
        // better L. Started at 1 rather than 2: on uniform points it reached 99.3 % of the
        // LP value (HiGHS) in under 1,000 iterations, where CFT's window rule on the swing
        // of L stalled near 98.7 % after 3,000.
        let mut control = StepControl::new();
        control.theta = 1.0;
        let mut stall_start = bound;
        let mut scratch = Scratch::new(n, m);
        for it in 0..iterations {
            if clock.stop() || proven(bound) >= best.len() {
                break;
            }
            steps.step();
            self.reduced_costs(&u, &mut reduced);
            let value = lagrangian(&u, &reduced);
            control.record(value > bound + 1e-12 * bound.abs());
            bound = bound.max(value);
            if it % HEURISTIC_EVERY == 0 {
                if let Some(cover) = self.heuristic(&u, &reduced, &mut scratch, clock) {
                    if cover.len() < best.len() {
                        best = cover;
                    }
                }
            }
            if control.exhausted() {
                break;
            }
            if (it + 1) % STALL_WINDOW == 0 {
                // Invariant: `stall_start` is the best bound STALL_WINDOW iterations ago.
                if bound - stall_start < STALL_SHARE * (best.len() as f64 - bound) {
                    break;
                }
                stall_start = bound;
            }
            // gₐ = 1 − (columns of negative reduced cost covering a).
            g.par_iter_mut().enumerate().for_each(|(a, ga)| {
                *ga = 1.0 - self.rows.of(a).iter().filter(|&&k| reduced[k as usize] < 0.0).count() as f64;
            });
            // A multiplier at 0 that would go negative does not move: leave it out of the norm.
            let norm: f64 = u.iter().zip(&g).filter(|(&x, &ga)| x > 0.0 || ga > 0.0).map(|(_, &ga)| ga * ga).sum();
            if norm == 0.0 {
                // The columns of negative reduced cost cover every point exactly once: they
                // are a cover of size L, optimal.
                let cover: Vec<u32> = (0..m as u32).filter(|&k| reduced[k as usize] < 0.0).collect();
                if cover.len() < best.len() {
                    best = cover;
                }
                break;
            }
            let step = control.theta * (best.len() as f64 - value).max(1e-6) / norm;
            u.par_iter_mut().zip(&g).for_each(|(x, &ga)| *x = (*x + step * ga).max(0.0));
        }
        // The plateau walk on the best cover, where it pays most.
        if proven(bound) < best.len() && !clock.stop() {
            scratch.walk = WALK_SWAPS;
            self.two_for_one(&mut best, &mut scratch, clock);
        }
        let mut cover: Vec<usize> = best.iter().map(|&k| self.id[k as usize]).collect();
        cover.sort_unstable();
        // Rounding of the sums must not round the bound up past an integer.
        let bound = proven(bound).max(floor).min(cover.len());
        Found { cover, bound }
    }

    /// `reduced[k] = 1 − Σ_{a ∈ S_k} uₐ` (each column summed in list order).
    fn reduced_costs(&self, u: &[f64], reduced: &mut [f64]) {
        reduced.par_iter_mut().enumerate().for_each(|(k, r)| {
            *r = 1.0 - self.cols.of(k).iter().map(|&a| u[a as usize]).sum::<f64>();
        });
    }

    /// A cover priced by `u` (with `reduced` its reduced costs): the Lagrangian greedy,
    /// redundancy removal and the local search, in compact columns.
    /// `None` when `clock` stopped the greedy before the cover was complete.
    fn heuristic(&self, u: &[f64], reduced: &[f64], scratch: &mut Scratch, clock: &Clock) -> Option<Vec<u32>> {
        let mut cover = self.lagrangian_greedy(u, reduced, scratch, clock)?;
        self.drop_redundant(&mut cover, reduced, scratch);
        self.two_for_one(&mut cover, scratch, clock);
        Some(cover)
    }

    /// CFT's greedy: repeatedly the column of least [`score`] over the uncovered points,
    /// kept in a lazy heap (a popped score that changed is pushed back; scores only rise).
    /// `clock` is polled every [`POLL_PICKS`] columns taken: stopped, the partial cover is
    /// dropped (`None`).
    fn lagrangian_greedy(&self, u: &[f64], reduced: &[f64], scratch: &mut Scratch, clock: &Clock) -> Option<Vec<u32>> {
        let Scratch { gamma, mu, count, .. } = scratch;
        gamma.copy_from_slice(reduced);
        mu.iter_mut().enumerate().for_each(|(k, x)| *x = self.cols.of(k).len() as u32);
        count.iter_mut().for_each(|c| *c = 0);
        let mut heap: BinaryHeap<Reverse<Score>> =
            (0..mu.len()).map(|k| Reverse(Score(score(gamma[k], mu[k]), k as u32))).collect();
        let mut left = count.len();
        let mut cover = Vec::new();
        while left > 0 {
            let Some(Reverse(Score(s, k))) = heap.pop() else { unreachable!("every point has a covering column") };
            let j = k as usize;
            if mu[j] == 0 {
                continue;
            }
            let now = score(gamma[j], mu[j]);
            if now.to_bits() != s.to_bits() {
                heap.push(Reverse(Score(now, k)));
                continue;
            }
            cover.push(k);
            if cover.len() % POLL_PICKS == 0 && clock.stop() {
                return None;
            }
            for &a in self.cols.of(j) {
                let a = a as usize;
                if count[a] == 0 {
                    count[a] = 1;
                    left -= 1;
                    for &l in self.rows.of(a) {
                        gamma[l as usize] += u[a];
                        mu[l as usize] -= 1;
                    }
                }
            }
        }
        Some(cover)
    }

    /// Drop columns whose points all have another column of the cover, largest reduced cost
    /// first (CFT drop redundant columns by decreasing cost; the reduced cost breaks the ties
    /// of unit costs). One pass leaves no redundant column: a column kept has a point only it
    /// covers, and dropping others never adds cover to that point.
    fn drop_redundant(&self, cover: &mut Vec<u32>, reduced: &[f64], scratch: &mut Scratch) {
        let count = &mut scratch.count;
        count.iter_mut().for_each(|c| *c = 0);
        for &k in cover.iter() {
            self.cols.of(k as usize).iter().for_each(|&a| count[a as usize] += 1);
        }
        let mut order = cover.clone();
        order.sort_unstable_by(|&x, &y| reduced[y as usize].total_cmp(&reduced[x as usize]).then(x.cmp(&y)));
        let mut gone = Vec::new();
        for k in order {
            let set = self.cols.of(k as usize);
            if set.iter().all(|&a| count[a as usize] >= 2) {
                set.iter().for_each(|&a| count[a as usize] -= 1);
                gone.push(k);
            }
        }
        gone.sort_unstable();
        cover.retain(|k| gone.binary_search(k).is_err());
    }

    /// Local search on an irredundant cover. Descent: replace two columns `j`, `k` with one
    /// column `l` while such a move exists (first improvement, columns in cover order,
    /// repeated until a pass finds none); `l` must cover every point only `j` covers, and
    /// every point of `k` that `j` and `k` alone cover. Then a plateau walk of
    /// `scratch.walk × |cover|` seeded random swaps: a column `j` leaves for a column `l`
    /// covering every point only `j` covers (the size stays), and the columns of the cover
    /// near the change are tried for removal or a two-for-one move (a neutral move opens
    /// improving ones, as in the flip neighbourhoods of Yagiura, Kishida & Ibaraki 2006).
    /// Size never grows, so the cover returned is the best met; it stays irredundant.
    fn two_for_one(&self, cover: &mut Vec<u32>, st: &mut Scratch, clock: &Clock) {
        st.count.iter_mut().for_each(|c| *c = 0);
        st.chosen.iter_mut().for_each(|c| *c = false);
        for (at, &k) in cover.iter().enumerate() {
            st.chosen[k as usize] = true;
            st.position[k as usize] = at as u32;
            self.cols.of(k as usize).iter().for_each(|&a| st.count[a as usize] += 1);
        }
        let mut improved = true;
        while improved && !clock.stop() {
            improved = false;
            let mut at = 0;
            while at < cover.len() {
                if at % POLL_PICKS == 0 && clock.stop() {
                    break;
                }
                match self.replacement(cover[at] as usize, st) {
                    Some(mv) => {
                        self.apply(mv, cover, st);
                        improved = true;
                    }
                    None => at += 1,
                }
            }
        }
        st.seed += 1;
        let mut rng = SplitMix64::new(st.seed);
        let walk = (st.walk * cover.len() as f64) as usize;
        let mut near = Vec::new();
        for step in 0..walk {
            if step % 64 == 0 && clock.stop() {
                break;
            }
            let j = cover[rng.below(cover.len())] as usize;
            let swaps = self.swaps(j, st);
            if swaps.is_empty() {
                continue;
            }
            let l = swaps[rng.below(swaps.len())];
            self.flip(j, false, cover, st);
            self.flip(l, true, cover, st);
            // The columns of the cover sharing a point with j or l: their own points changed.
            st.epoch += 1;
            near.clear();
            for &a in self.cols.of(j).iter().chain(self.cols.of(l)) {
                for &x in self.rows.of(a as usize) {
                    if st.chosen[x as usize] && st.seen[x as usize] != st.epoch {
                        st.seen[x as usize] = st.epoch;
                        near.push(x as usize);
                    }
                }
            }
            for &x in &near {
                if !st.chosen[x] {
                    continue;
                }
                if self.cols.of(x).iter().all(|&a| st.count[a as usize] >= 2) {
                    self.flip(x, false, cover, st);
                } else if let Some(mv) = self.replacement(x, st) {
                    self.apply(mv, cover, st);
                }
            }
        }
        cover.sort_unstable();
    }

    /// Open or close compact column `k` in `cover` (kept with its positions and counts).
    fn flip(&self, k: usize, open: bool, cover: &mut Vec<u32>, st: &mut Scratch) {
        st.chosen[k] = open;
        if open {
            st.position[k] = cover.len() as u32;
            cover.push(k as u32);
            self.cols.of(k).iter().for_each(|&a| st.count[a as usize] += 1);
        } else {
            let at = st.position[k] as usize;
            cover.swap_remove(at);
            if at < cover.len() {
                st.position[cover[at] as usize] = at as u32;
            }
            self.cols.of(k).iter().for_each(|&a| st.count[a as usize] -= 1);
        }
    }

    /// Apply a two-for-one move `(j, k, l)`.
    fn apply(&self, (j, k, l): (usize, usize, usize), cover: &mut Vec<u32>, st: &mut Scratch) {
        self.flip(l, true, cover, st);
        self.flip(j, false, cover, st);
        self.flip(k, false, cover, st);
    }

    /// The points only compact column `j` of the cover covers, stamped with a new epoch, and
    /// the one of them with the fewest covering columns.
    fn own_points(&self, j: usize, st: &mut Scratch) -> (usize, Option<u32>) {
        st.epoch += 1;
        let (mut own, mut pivot) = (0, None::<u32>);
        for &a in self.cols.of(j) {
            if st.count[a as usize] == 1 {
                st.stamp[a as usize] = st.epoch;
                own += 1;
                let fewer = |p: u32| self.rows.of(a as usize).len() < self.rows.of(p as usize).len();
                if pivot.is_none_or(fewer) {
                    pivot = Some(a);
                }
            }
        }
        (own, pivot)
    }

    /// Columns not in the cover that cover every point only `j` covers (none when `j` has
    /// no such point: it is redundant, and the caller drops it otherwise).
    fn swaps(&self, j: usize, st: &mut Scratch) -> Vec<usize> {
        let (own, Some(pivot)) = self.own_points(j, st) else { return Vec::new() };
        let mark = st.epoch;
        self.rows
            .of(pivot as usize)
            .iter()
            .map(|&l| l as usize)
            .filter(|&l| {
                !st.chosen[l] && self.cols.of(l).iter().filter(|&&a| st.stamp[a as usize] == mark).count() == own
            })
            .collect()
    }

    /// A two-for-one move `(j, k, l)`: a column `l` not in the cover and a column `k ≠ j`
    /// of the cover such that the cover without `j` and `k` but with `l` still covers every
    /// point; the first found.
    fn replacement(&self, j: usize, st: &mut Scratch) -> Option<(usize, usize, usize)> {
        // The points only j covers: l must cover them all.
        let (own, Some(pivot)) = self.own_points(j, st) else { return None };
        let mark = st.epoch;
        for &l in self.rows.of(pivot as usize) {
            let l = l as usize;
            if st.chosen[l] {
                continue;
            }
            let set = self.cols.of(l);
            if set.iter().filter(|&&a| st.stamp[a as usize] == mark).count() != own {
                continue;
            }
            // Columns k of the cover with a point that l covers and only k, or only j and k,
            // cover: the only ones l can make redundant.
            st.epoch += 1;
            let tried = st.epoch;
            for &a in set {
                let a = a as usize;
                if st.count[a] - u32::from(self.covers(j, a)) != 1 {
                    continue;
                }
                let Some(k) = self.rows.of(a).iter().map(|&k| k as usize).find(|&k| st.chosen[k] && k != j) else {
                    continue;
                };
                if st.seen[k] == tried {
                    continue;
                }
                st.seen[k] = tried;
                // k goes when each of its points keeps a cover without j and k but with l.
                let count = &st.count;
                let redundant = self.cols.of(k).iter().all(|&b| {
                    let b = b as usize;
                    count[b] - u32::from(self.covers(j, b)) - 1 + u32::from(self.covers(l, b)) >= 1
                });
                if redundant {
                    return Some((j, k, l));
                }
            }
        }
        None
    }

    /// True when compact column `k` covers point `a` (its list is ascending).
    fn covers(&self, k: usize, a: usize) -> bool {
        self.cols.of(k).binary_search(&(a as u32)).is_ok()
    }
}

/// `⌈L⌉` for a value `L` of the relaxation: the cover size is an integer. A relative `1e-9`
/// is taken off first, so rounding of the sums never rounds the bound up past an integer.
fn proven(value: f64) -> usize {
    (value - 1e-9 * value.abs().max(1.0)).ceil().max(0.0) as usize
}

/// `L(u)` from the reduced costs (compensated sums, in a fixed order).
fn lagrangian(u: &[f64], reduced: &[f64]) -> f64 {
    let mut value = CompensatedSum::default();
    u.iter().for_each(|&x| value.add(x));
    reduced.iter().filter(|&&r| r < 0.0).for_each(|&r| value.add(r));
    value.total()
}

/// Work arrays of the heuristic, reused between its calls.
struct Scratch {
    gamma: Vec<f64>,
    mu: Vec<u32>,
    count: Vec<u32>,
    chosen: Vec<bool>,
    /// Per point: the epoch that last marked it.
    stamp: Vec<u64>,
    /// Per column: the epoch that last tried it.
    seen: Vec<u64>,
    epoch: u64,
    /// Per column of the cover: its position in the cover's list.
    position: Vec<u32>,
    /// Plateau-walk swaps per column of the cover (see [`Covering::two_for_one`]).
    walk: f64,
    /// Seed of the next plateau walk (each walk its own, so runs repeat exactly).
    seed: u64,
}

impl Scratch {
    fn new(n: usize, m: usize) -> Scratch {
        Scratch {
            gamma: vec![0.0; m],
            mu: vec![0; m],
            count: vec![0; n],
            chosen: vec![false; m],
            stamp: vec![0; n],
            seen: vec![0; m],
            epoch: 0,
            position: vec![0; m],
            walk: 0.0,
            seed: 0,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cancel::{RunLimits, Steps};
    use crate::geometry::random::SplitMix64;

    /// A random set-covering instance: `n` points, `m` columns, each point in a few columns.
    fn instance(rng: &mut SplitMix64, n: usize, m: usize) -> Incidence {
        let mut by_site = vec![Vec::new(); m];
        for a in 0..n {
            // Every point in at least one column, and in each other with probability 1/4.
            let mut home = vec![rng.below(m)];
            home.extend((0..m).filter(|_| rng.next_f64() < 0.25));
            home.sort_unstable();
            home.dedup();
            home.iter().for_each(|&j| by_site[j].push(a));
        }
        let mut by_point = vec![Vec::new(); n];
        for (j, set) in by_site.iter().enumerate() {
            set.iter().for_each(|&a| by_point[a].push(j));
        }
        Incidence { by_point, by_site }
    }

    #[test]
    fn covers_match_brute_force_and_are_irredundant() {
        let mut rng = SplitMix64::new(11);
        let limits = RunLimits::default();
        let clock = limits.clock();
        for _ in 0..40 {
            let (n, m) = (24, 14);
            let inc = instance(&mut rng, n, m);
            // Brute force over every subset of columns (independent of the search).
            let mask_of = |j: usize| inc.by_site[j].iter().fold(0u32, |acc, &a| acc | 1 << a);
            let all = (1u32 << n) - 1;
            let optimum = (0u32..1 << m)
                .filter(|&s| (0..m).filter(|&j| s >> j & 1 == 1).fold(0, |acc, j| acc | mask_of(j)) == all)
                .map(u32::count_ones)
                .min()
                .unwrap() as usize;
            let covering = Covering::new(&inc).unwrap();
            let start = inc.greedy();
            let mut steps = Steps::new(&clock.watch, 1);
            let found = covering.search(&start, 0, 500, &clock, &mut steps);
            assert!(
                found.bound <= optimum && optimum <= found.cover.len(),
                "{} {optimum} {}",
                found.bound,
                found.cover.len()
            );
            assert!(found.cover.len() <= optimum + 1, "{} against {optimum}", found.cover.len());
            let mut count = vec![0; n];
            found.cover.iter().for_each(|&j| inc.by_site[j].iter().for_each(|&a| count[a] += 1));
            assert!(count.iter().all(|&c| c > 0), "a point is left uncovered");
            for &j in &found.cover {
                assert!(inc.by_site[j].iter().any(|&a| count[a] == 1), "column {j} is redundant");
            }
        }
    }
}
