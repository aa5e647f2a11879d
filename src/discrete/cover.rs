//! Coverage models: location set covering and maximal covering, and the covering machinery
//! the discrete p-center shares.
//!
//! - [`cover_all`] (Toregas, Swain, ReVelle & Bergman 1971): the fewest candidates so every
//!   point is within `radius`. Greedy covering (Chvátal 1979) with redundant sites removed;
//!   a lower bound from the better of a greedy packing (points no candidate covers two of:
//!   an integral solution of the LP dual) and the Lagrangian relaxation of the covering
//!   constraints; small gaps are closed by an exact branching search.
//! - [`cover_most`] (Church & ReVelle 1974): `p` candidates covering the most weight within
//!   `radius`. Greedy addition, then best-swap interchange with the same
//!   `gain − loss + extra` bookkeeping as the p-median's fast swap; an upper bound from the
//!   Lagrangian relaxation of `zᵢ ≤ Σ_{j covers i} yⱼ` by subgradient optimisation.
//!
//! Both poll their clock (`crate::cancel`) between steps: greedy additions, swaps, bound
//! iterations and exact searches (each within its work budget), and for `cover_all` every
//! column of the dominance reduction. Stopped early, `cover_all` returns its greedy cover
//! (always completed: it is the only feasible answer it has, and takes one pass over the
//! coverage lists) with the bound so far; `cover_most` returns its plan so far, filled up to
//! `p` sites, with the bound so far (at least the coverable weight, a valid bound).

use super::cover_bound::maximal_covering_bound;
use super::{check_choice, check_radius, relative_gap, Costs, SiteService, StepControl};
use crate::cancel::{Clock, RunLimits, Steps};
use crate::error::{Error, Result};
use crate::geometry::{validate_weights, CompensatedSum, Weights};

/// Work (point visits) the exact covering search may spend over one call.
pub(super) const EXACT_BUDGET: usize = 20_000_000;
/// Most subgradient iterations of the maximal-covering bound.
const COVER_BOUND_ITERATIONS: usize = 1000;
/// Most subgradient iterations of the set-covering bound.
const COVER_ALL_BOUND_ITERATIONS: usize = 200;

/// Which candidates cover which of the points that still need cover.
pub(super) struct Incidence {
    /// `by_point[a]`: the candidate columns covering demand point `a` (ascending).
    pub(super) by_point: Vec<Vec<usize>>,
    /// `by_site[j]`: the demand points column `j` covers.
    pub(super) by_site: Vec<Vec<usize>>,
}

impl Incidence {
    /// Coverage of the rows `demand` by the columns with `usable[j]`, where column `j` covers
    /// row `i` when `covers(i, costs[i, j])`, which may hold only for costs up to `reach(i)`.
    pub(super) fn build(
        costs: &Costs<'_>,
        demand: &[usize],
        usable: &[bool],
        reach: impl Fn(usize) -> f64 + Sync,
        covers: impl Fn(usize, f64) -> bool + Sync,
    ) -> Incidence {
        Incidence::build_watched(costs, demand, usable, reach, covers, &|| false)
    }

    /// [`Incidence::build`] asking `stop()` before every row: once it is true the rows left
    /// are empty, and the caller must drop the incidence (it covers nothing it should).
    pub(super) fn build_watched(
        costs: &Costs<'_>,
        demand: &[usize],
        usable: &[bool],
        reach: impl Fn(usize) -> f64 + Sync,
        covers: impl Fn(usize, f64) -> bool + Sync,
        stop: &(dyn Fn() -> bool + Sync),
    ) -> Incidence {
        use rayon::prelude::*;
        let by_point: Vec<Vec<usize>> = demand
            .par_iter()
            .map(|&i| {
                let mut list = Vec::new();
                if stop() {
                    return list;
                }
                costs.for_each_within(i, reach(i), |j, c| {
                    if usable[j] && covers(i, c) {
                        list.push(j);
                    }
                });
                list.sort_unstable();
                list
            })
            .collect();
        let mut by_site = vec![Vec::new(); costs.columns()];
        for (a, list) in by_point.iter().enumerate() {
            for &j in list {
                by_site[j].push(a);
            }
        }
        Incidence { by_point, by_site }
    }

    /// Drop every column whose points another column covers too (a superset, or the same
    /// set at a smaller column): a covering model never needs it (column reduction of set
    /// covering; Toregas & ReVelle 1973). Returns the number dropped. Once `stop()` is true
    /// no further column is dropped (keeping a dominated column changes no answer, only the
    /// work of the searches after it).
    pub(super) fn drop_dominated(&mut self, stop: &dyn Fn() -> bool) -> usize {
        let m = self.by_site.len();
        let contains = |big: &[usize], small: &[usize]| {
            let mut it = big.iter();
            small.iter().all(|x| it.any(|y| y == x))
        };
        let dominated: Vec<bool> = (0..m)
            .map(|j| {
                let set = &self.by_site[j];
                if stop() {
                    return false;
                }
                // Any dominating column covers the point of `set` with the fewest columns.
                let Some(&a) = set.iter().min_by_key(|&&a| self.by_point[a].len()) else { return false };
                self.by_point[a].iter().any(|&k| {
                    let other = &self.by_site[k];
                    k != j && (other.len() > set.len() || (other.len() == set.len() && k < j)) && contains(other, set)
                })
            })
            .collect();
        let dropped = dominated.iter().filter(|&&d| d).count();
        if dropped > 0 {
            for (j, &d) in dominated.iter().enumerate() {
                if d {
                    self.by_site[j].clear();
                }
            }
            for list in &mut self.by_point {
                list.retain(|&j| !dominated[j]);
            }
        }
        dropped
    }

    /// The first demand point (position) that no usable column covers.
    pub(super) fn uncoverable(&self) -> Option<usize> {
        self.by_point.iter().position(Vec::is_empty)
    }

    /// Greedy covering (most newly covered points first, smallest column on ties), then
    /// removal of sites whose points all have another chosen site (latest chosen first).
    /// Every point must have a covering column.
    pub(super) fn greedy(&self) -> Vec<usize> {
        use std::cmp::Reverse;
        use std::collections::BinaryHeap;
        let mut gain: Vec<usize> = self.by_site.iter().map(Vec::len).collect();
        let mut covered = vec![false; self.by_point.len()];
        let mut left = covered.len();
        let mut chosen = Vec::new();
        // Lazy evaluation (gains only fall): the heap holds (gain when pushed, column); a stale
        // top is pushed back with its current gain. Ties go to the smallest column.
        let mut heap: BinaryHeap<(usize, Reverse<usize>)> =
            gain.iter().enumerate().filter(|&(_, &g)| g > 0).map(|(j, &g)| (g, Reverse(j))).collect();
        while left > 0 {
            let Some((g, Reverse(j))) = heap.pop() else { unreachable!("every point has a covering column") };
            if g != gain[j] {
                if gain[j] > 0 {
                    heap.push((gain[j], Reverse(j)));
                }
                continue;
            }
            chosen.push(j);
            for &a in &self.by_site[j] {
                if !std::mem::replace(&mut covered[a], true) {
                    left -= 1;
                    for &k in &self.by_point[a] {
                        gain[k] -= 1;
                    }
                }
            }
        }
        let mut count = vec![0usize; self.by_point.len()];
        for &j in &chosen {
            self.by_site[j].iter().for_each(|&a| count[a] += 1);
        }
        for at in (0..chosen.len()).rev() {
            let j = chosen[at];
            if self.by_site[j].iter().all(|&a| count[a] >= 2) {
                self.by_site[j].iter().for_each(|&a| count[a] -= 1);
                chosen.remove(at);
            }
        }
        chosen.sort_unstable();
        chosen
    }

    /// Points no column covers two of (fewest covering columns first): every cover needs a
    /// site per point, so their number bounds the optimum from below (an integral solution
    /// of the covering LP's dual). Returns the points.
    fn packing(&self) -> Vec<usize> {
        let mut order: Vec<usize> = (0..self.by_point.len()).collect();
        order.sort_by_key(|&a| (self.by_point[a].len(), a));
        let mut used = vec![false; self.by_site.len()];
        let mut packed = Vec::new();
        for a in order {
            if self.by_point[a].iter().all(|&j| !used[j]) {
                self.by_point[a].iter().for_each(|&j| used[j] = true);
                packed.push(a);
            }
        }
        packed
    }

    /// A proven lower bound on the number of sites covering every point: the packing, raised
    /// by the Lagrangian relaxation of the covering constraints,
    /// `L(u) = Σ uₐ + Σⱼ min(0, 1 − Σ_{a ∈ Sⱼ} uₐ)` for `u ≥ 0`, by subgradient steps from
    /// the packing's `u` (Beasley 1990). The cover size is an integer, so `⌈L⌉` bounds too.
    /// `go()` is asked before every iteration (false: stop with the bound so far).
    pub(super) fn lower_bound(&self, upper: usize, iterations: usize, go: &mut dyn FnMut() -> bool) -> usize {
        let packed = self.packing();
        let mut u = vec![0.0; self.by_point.len()];
        packed.iter().for_each(|&a| u[a] = 1.0);
        let (mut best, mut control) = (packed.len() as f64, StepControl::new());
        let mut open = vec![false; self.by_site.len()];
        let mut g = vec![0.0; u.len()];
        for _ in 0..iterations {
            if !go() {
                break;
            }
            let mut value = CompensatedSum::default();
            u.iter().for_each(|&x| value.add(x));
            for (j, set) in self.by_site.iter().enumerate() {
                let reduced = 1.0 - set.iter().map(|&a| u[a]).sum::<f64>();
                open[j] = reduced < 0.0 && !set.is_empty();
                if open[j] {
                    value.add(reduced);
                }
            }
            let value = value.total();
            control.record(value > best + 1e-12);
            best = best.max(value);
            let mut norm = 0.0;
            for (a, ga) in g.iter_mut().enumerate() {
                *ga = 1.0 - self.by_point[a].iter().filter(|&&j| open[j]).count() as f64;
                // A multiplier at 0 that would go negative does not move: leave it out of the norm.
                if u[a] > 0.0 || *ga > 0.0 {
                    norm += *ga * *ga;
                }
            }
            if norm == 0.0 || control.exhausted() || best.ceil() >= upper as f64 {
                break;
            }
            let step = control.theta * (upper as f64 - value).max(1e-6) / norm;
            for (x, ga) in u.iter_mut().zip(&g) {
                *x = (*x + step * ga).max(0.0);
            }
        }
        // Rounding of the sums must not round the bound up past an integer.
        ((best - 1e-9).ceil().max(0.0) as usize).max(packed.len())
    }

    /// A cover by at most `k` columns by exhaustive branching (on the uncovered point with
    /// the fewest covering columns, every cover contains one of them): `Some(Some(cover))`,
    /// `Some(None)` when none exists (proven), `None` when `budget` ran out first.
    pub(super) fn exact(&self, k: usize, budget: &mut usize) -> Option<Option<Vec<usize>>> {
        let mut order: Vec<usize> = (0..self.by_point.len()).collect();
        order.sort_by_key(|&a| (self.by_point[a].len(), a));
        let mut search = Branching {
            incidence: self,
            count: vec![0; self.by_point.len()],
            left: self.by_point.len(),
            chosen: Vec::new(),
            largest: self.by_site.iter().map(Vec::len).max().unwrap_or(0),
            order,
            stamp: vec![0; self.by_site.len()],
            node: 0,
            budget,
        };
        match search.branch(k)? {
            true => {
                let mut cover = search.chosen;
                cover.sort_unstable();
                Some(Some(cover))
            }
            false => Some(None),
        }
    }
}

/// State of [`Incidence::exact`].
struct Branching<'a> {
    incidence: &'a Incidence,
    count: Vec<u32>,
    left: usize,
    chosen: Vec<usize>,
    largest: usize,
    /// Points by their number of covering columns (the packing order).
    order: Vec<usize>,
    /// `stamp[j] == node`: column `j` covers a point packed at this node.
    stamp: Vec<usize>,
    node: usize,
    budget: &'a mut usize,
}

impl Branching<'_> {
    fn branch(&mut self, k: usize) -> Option<bool> {
        if self.left == 0 {
            return Some(true);
        }
        // No room, or the remaining sites cannot cover what is left even if all were largest.
        if self.chosen.len() == k || (k - self.chosen.len()) * self.largest < self.left {
            return Some(false);
        }
        let visits = self.count.len();
        if *self.budget < visits {
            return None;
        }
        *self.budget -= visits;
        // The packing bound on what is still uncovered: that many more sites are needed.
        if self.packing_exceeds(k - self.chosen.len()) {
            return Some(false);
        }
        let by_point = &self.incidence.by_point;
        let a = (0..visits).filter(|&a| self.count[a] == 0).min_by_key(|&a| (by_point[a].len(), a)).expect("uncovered");
        for &j in &by_point[a] {
            self.take(j, true);
            let found = self.branch(k);
            if found == Some(true) {
                return found;
            }
            self.take(j, false);
            found?;
        }
        Some(false)
    }

    /// True when more than `room` uncovered points pairwise share no column (see
    /// [`Incidence::packing`]), so `room` more sites cannot cover them.
    fn packing_exceeds(&mut self, room: usize) -> bool {
        self.node += 1;
        let by_point = &self.incidence.by_point;
        let mut packed = 0;
        for &a in &self.order {
            if self.count[a] > 0 || by_point[a].iter().any(|&j| self.stamp[j] == self.node) {
                continue;
            }
            *self.budget = self.budget.saturating_sub(by_point[a].len());
            by_point[a].iter().for_each(|&j| self.stamp[j] = self.node);
            packed += 1;
            if packed > room {
                return true;
            }
        }
        false
    }

    fn take(&mut self, j: usize, open: bool) {
        for &a in &self.incidence.by_site[j] {
            if open {
                self.left -= usize::from(self.count[a] == 0);
                self.count[a] += 1;
            } else {
                self.count[a] -= 1;
                self.left += usize::from(self.count[a] == 0);
            }
        }
        if open {
            self.chosen.push(j);
        } else {
            self.chosen.pop();
        }
    }
}

/// The rows with `keep(i)` that no fixed site covers within `radius` (in row order).
fn outside(costs: &Costs<'_>, fixed: &[usize], radius: f64, keep: impl Fn(usize) -> bool) -> Vec<usize> {
    (0..costs.rows())
        .filter(|&i| keep(i) && fixed.iter().all(|&j| costs.cost(i, j).is_none_or(|c| c > radius)))
        .collect()
}

/// For a source that does not allow every pair: the `fixed` candidates and at most `p` more
/// such that every point of positive weight has an allowed open site (a set-covering
/// problem on the allowed pairs, settled as in [`cover_all`]).
///
/// # Errors
/// [`Error::InvalidParameter`] naming `p` when fewer than the sites needed are asked for
/// (proven by the covering bound) or when the budgeted search finds no such choice.
pub(super) fn serving_cover(costs: &Costs<'_>, weights: Weights<'_>, p: usize, fixed: &[usize]) -> Result<Vec<usize>> {
    let demand: Vec<usize> = (0..costs.rows())
        .filter(|&i| weights.get(i) > 0.0 && fixed.iter().all(|&j| costs.cost(i, j).is_none()))
        .collect();
    let incidence =
        Incidence::build(costs, &demand, &not_fixed(costs.columns(), fixed), |_| f64::INFINITY, |_, _| true);
    let mut chosen = incidence.greedy();
    if chosen.len() > p {
        let lower = incidence.lower_bound(chosen.len(), 200, &mut || true);
        let mut budget = EXACT_BUDGET;
        let found = if lower > p { None } else { incidence.exact(p, &mut budget).flatten() };
        match found {
            Some(cover) => chosen = cover,
            None if lower > p => {
                return Err(Error::InvalidParameter {
                    name: "p",
                    reason: format!(
                        "{p} new sites cannot serve every point through the allowed pairs of the sparse costs; \
                         at least {lower} are needed"
                    ),
                })
            }
            None => {
                return Err(Error::InvalidParameter {
                    name: "p",
                    reason: format!(
                        "no {p} new sites serving every point through the allowed pairs of the sparse costs were \
                         found (the best found needs {}); allow more pairs or ask for more sites",
                        chosen.len()
                    ),
                })
            }
        }
    }
    Ok(fixed.iter().chain(&chosen).copied().collect())
}

/// Columns flagged usable: every candidate that is not fixed.
fn not_fixed(columns: usize, fixed: &[usize]) -> Vec<bool> {
    let mut usable = vec![true; columns];
    fixed.iter().for_each(|&j| usable[j] = false);
    usable
}

/// A set-covering plan: the fewest new sites putting every point within the radius.
#[derive(Debug, Clone, PartialEq)]
pub struct CoverAll {
    /// How the open sites (fixed and chosen) serve the demand, with coverage at the radius.
    pub service: SiteService,
    /// Number of new sites chosen (the objective).
    pub chosen: usize,
    /// A proven lower bound on the number of new sites.
    pub lower_bound: usize,
    /// `(chosen − lower_bound) / chosen`; 0 proves the plan optimal.
    pub relative_gap: f64,
}

/// The fewest candidates (besides the `fixed` ones) such that every point has an open site at
/// cost `<= radius`.
///
/// # Errors
/// Bad weights or `fixed`; [`Error::InvalidParameter`] naming `radius` when it is not finite
/// and positive, or when a point has no candidate within it (the message names the point and
/// its cheapest candidate's cost).
///
/// Progress counts the coverage lists, the dominance reduction, the greedy cover and the
/// bound iterations.
pub fn cover_all(
    costs: &Costs<'_>,
    weights: Weights<'_>,
    radius: f64,
    fixed: &[usize],
    limits: &RunLimits,
) -> Result<CoverAll> {
    validate_weights("weights", weights, costs.rows())?;
    super::check_sites("fixed", fixed, costs.columns())?;
    check_radius(radius)?;
    let clock = limits.clock();
    let mut steps = Steps::new(&clock.watch, 3 + COVER_ALL_BOUND_ITERATIONS as u64);
    let demand = outside(costs, fixed, radius, |_| true);
    let mut incidence =
        Incidence::build(costs, &demand, &not_fixed(costs.columns(), fixed), |_| radius, |_, c| c <= radius);
    if let Some(a) = incidence.uncoverable() {
        let i = demand[a];
        let (column, cost) = costs.cheapest(i);
        return Err(Error::Uncoverable { row: i, radius, column, cost });
    }
    steps.step();
    incidence.drop_dominated(&|| clock.stop());
    steps.step();
    let mut chosen = incidence.greedy();
    steps.step();
    let mut lower = incidence.lower_bound(chosen.len(), COVER_ALL_BOUND_ITERATIONS, &mut || {
        steps.step();
        !clock.stop()
    });
    steps.finish();
    let mut budget = EXACT_BUDGET;
    while lower < chosen.len() && !clock.stop() {
        match incidence.exact(lower, &mut budget) {
            Some(Some(cover)) => chosen = cover,
            Some(None) => lower += 1,
            None => break,
        }
    }
    let open: Vec<usize> = fixed.iter().chain(&chosen).copied().collect();
    let service = SiteService::of(costs, weights, open, fixed, Some(radius));
    Ok(CoverAll {
        chosen: chosen.len(),
        lower_bound: lower,
        relative_gap: relative_gap(chosen.len() as f64, lower as f64),
        service,
    })
}

/// A maximal-covering plan: `p` new sites covering the most weight within the radius.
#[derive(Debug, Clone, PartialEq)]
pub struct CoverMost {
    /// How the open sites (fixed and chosen) serve the demand, with coverage at the radius;
    /// the objective is `service.coverage.covered_weight`.
    pub service: SiteService,
    /// A proven upper bound on the weight any `p` new sites can cover (with the fixed ones).
    pub upper_bound: f64,
    /// `(upper_bound − covered weight) / upper_bound`; 0 proves the plan optimal.
    pub relative_gap: f64,
    /// Swaps applied by the interchange.
    pub swaps: usize,
}

/// `p` candidates (besides the `fixed` ones) covering the most weight within `radius`.
///
/// # Errors
/// Bad weights, `p` or `fixed` (see [`discrete_p_median`](super::discrete_p_median));
/// [`Error::InvalidParameter`] for a radius that is not finite and positive.
///
/// # Runtime
/// O(n·m) to find the coverage, then O(Σ coverage lists + m·p) per swap and bound iteration.
/// Progress counts greedy additions and bound iterations.
pub fn cover_most(
    costs: &Costs<'_>,
    weights: Weights<'_>,
    p: usize,
    radius: f64,
    fixed: &[usize],
    limits: &RunLimits,
) -> Result<CoverMost> {
    validate_weights("weights", weights, costs.rows())?;
    check_choice(costs, p, fixed)?;
    check_radius(radius)?;
    let clock = limits.clock();
    let mut steps = Steps::new(&clock.watch, (p + COVER_BOUND_ITERATIONS) as u64);
    let m = costs.columns();
    // Points the fixed sites already cover count in full; only the others are contested.
    let demand = outside(costs, fixed, radius, |i| weights.get(i) > 0.0);
    let w: Vec<f64> = demand.iter().map(|&i| weights.get(i)).collect();
    let inc = Incidence::build(costs, &demand, &not_fixed(m, fixed), |_| radius, |_, c| c <= radius);

    // Greedy addition.
    let mut gain: Vec<f64> = inc.by_site.iter().map(|s| s.iter().map(|&a| w[a]).sum()).collect();
    let mut count = vec![0u32; demand.len()];
    let mut position: Vec<Option<usize>> = vec![None; m];
    let mut chosen: Vec<usize> = Vec::with_capacity(p);
    for _ in 0..p {
        steps.step();
        if clock.stop() {
            // Stopped: complete the plan with the smallest free columns (any p are feasible).
            let mut free = (0..m).filter(|&j| position[j].is_none() && !fixed.contains(&j));
            while chosen.len() < p {
                let j = free.next().expect("p fits among the free candidates");
                chosen.push(j);
            }
            break;
        }
        let j = (0..m)
            .filter(|&j| position[j].is_none() && !fixed.contains(&j))
            .max_by(|&a, &b| gain[a].total_cmp(&gain[b]).then(b.cmp(&a)))
            .expect("p fits among the free candidates");
        position[j] = Some(chosen.len());
        chosen.push(j);
        for &a in &inc.by_site[j] {
            count[a] += 1;
            if count[a] == 1 {
                inc.by_point[a].iter().for_each(|&k| gain[k] -= w[a]);
            }
        }
    }

    let free = not_fixed(m, fixed);
    let mut swaps = improve_cover(&inc, &w, &free, &mut chosen, &clock);
    let contested = covered_by(&inc, &w, &chosen);
    let (bound, relaxed) =
        maximal_covering_bound(&inc, &w, p, contested, &free, COVER_BOUND_ITERATIONS, &clock, &mut steps);
    steps.finish();
    // The Lagrangian heuristic (as for the p-median): the relaxation's sites, improved by
    // the same interchange, replace the plan when they cover more.
    if relaxed.len() == p && !clock.stop() {
        let mut other = relaxed;
        let more = improve_cover(&inc, &w, &free, &mut other, &clock);
        if covered_by(&inc, &w, &other) > contested + 1e-12 * contested {
            (chosen, swaps) = (other, swaps + more);
        }
    }

    let open: Vec<usize> = fixed.iter().chain(&chosen).copied().collect();
    let service = SiteService::of(costs, weights, open, fixed, Some(radius));
    let covered = service.coverage.as_ref().map_or(0.0, |c| c.covered_weight);
    // What the fixed sites (and zero weights) contribute whatever the choice.
    let base = covered - covered_by(&inc, &w, &chosen);
    let upper_bound = (base + bound).max(covered);
    Ok(CoverMost { relative_gap: relative_gap(upper_bound, covered), upper_bound, service, swaps })
}

/// Weight of the contested points that some column of `chosen` covers.
fn covered_by(inc: &Incidence, w: &[f64], chosen: &[usize]) -> f64 {
    let mut hit = vec![false; w.len()];
    chosen.iter().for_each(|&j| inc.by_site[j].iter().for_each(|&a| hit[a] = true));
    hit.iter().zip(w).filter(|(&h, _)| h).map(|(_, &x)| x).sum()
}

/// Best-swap interchange of the `chosen` columns (insert a `free` one, remove a chosen one)
/// while a swap covers more weight: `gain(u) − loss(r) + extra(u, r)`, with `gain` the
/// uncovered weight `u` covers, `loss` the weight only `r` covers and `extra` the part of
/// that `u` covers too. Returns the number of swaps; stops with the plan so far when `clock`
/// says so (polled before every swap).
fn improve_cover(inc: &Incidence, w: &[f64], free: &[bool], chosen: &mut [usize], clock: &Clock) -> usize {
    let (m, p) = (inc.by_site.len(), chosen.len());
    let mut count = vec![0u32; w.len()];
    let mut position: Vec<Option<usize>> = vec![None; m];
    for (r, &j) in chosen.iter().enumerate() {
        position[j] = Some(r);
        inc.by_site[j].iter().for_each(|&a| count[a] += 1);
    }
    let tolerance = 1e-12 * w.iter().sum::<f64>().max(f64::MIN_POSITIVE);
    let mut swaps = 0;
    let (mut gain, mut loss, mut extra) = (vec![0.0; m], vec![0.0; p], vec![0.0; m * p]);
    while swaps < 100_000 && !clock.stop() {
        gain.iter_mut().for_each(|g| *g = 0.0);
        loss.iter_mut().for_each(|l| *l = 0.0);
        extra.iter_mut().for_each(|e| *e = 0.0);
        for (a, list) in inc.by_point.iter().enumerate() {
            match count[a] {
                0 => list.iter().for_each(|&u| gain[u] += w[a]),
                1 => {
                    let r = list.iter().find_map(|&j| position[j]).expect("the covering site");
                    loss[r] += w[a];
                    list.iter().filter(|&&u| position[u].is_none()).for_each(|&u| extra[u * p + r] += w[a]);
                }
                _ => {}
            }
        }
        let mut best = (tolerance, usize::MAX, usize::MAX);
        for u in (0..m).filter(|&u| free[u] && position[u].is_none()) {
            for r in 0..p {
                let profit = gain[u] - loss[r] + extra[u * p + r];
                if profit > best.0 {
                    best = (profit, u, r);
                }
            }
        }
        let (_, u, r) = best;
        if u == usize::MAX {
            break;
        }
        let out = chosen[r];
        inc.by_site[out].iter().for_each(|&a| count[a] -= 1);
        inc.by_site[u].iter().for_each(|&a| count[a] += 1);
        (position[out], position[u], chosen[r]) = (None, Some(r), u);
        swaps += 1;
    }
    swaps
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::random::SplitMix64;

    use crate::discrete::CostMatrix;

    fn line(n: usize, spacing: f64) -> Vec<f64> {
        (0..n).flat_map(|i| (0..n).map(move |j| (i as f64 - j as f64).abs() * spacing)).collect()
    }

    #[test]
    fn line_at_spacing_with_half_radius_needs_every_site() {
        // Closed form: points on a line at spacing s, radius s/2 — each site covers only its own
        // point, so n sites are needed.
        let values = line(7, 2.0);
        let costs = Costs::from(CostMatrix::new(&values, 7, 7).unwrap());
        let r = cover_all(&costs, Weights::Unit, 1.0, &[], &RunLimits::default()).unwrap();
        assert_eq!((r.chosen, r.lower_bound), (7, 7));
        // Closed form: radius s covers three neighbours, so ⌈n/3⌉ sites.
        let r = cover_all(&costs, Weights::Unit, 2.0, &[], &RunLimits::default()).unwrap();
        assert_eq!((r.chosen, r.lower_bound), (3, 3));
    }

    #[test]
    fn uncoverable_point_is_named() {
        let costs = Costs::from(CostMatrix::new(&[1.0, 2.0, 5.0, 4.0], 2, 2).unwrap());
        let e = cover_all(&costs, Weights::Unit, 3.0, &[], &RunLimits::default()).unwrap_err();
        assert_eq!(
            e.to_string(),
            "radius: points[1] has no candidate within radius 3; its cheapest candidate, column 1, costs 4"
        );
    }

    #[test]
    fn maximal_covering_matches_brute_force() {
        let mut rng = SplitMix64::new(3);
        for _ in 0..20 {
            let (n, m) = (15, 8);
            let values: Vec<f64> = (0..n * m).map(|_| rng.next_f64() * 10.0).collect();
            let w: Vec<f64> = (0..n).map(|_| 1.0 + (rng.next_f64() * 4.0).floor()).collect();
            let costs = Costs::from(CostMatrix::new(&values, n, m).unwrap());
            for p in 1..4 {
                let r = cover_most(&costs, Weights::Given(&w), p, 3.0, &[], &RunLimits::default()).unwrap();
                // Brute-force enumeration of every p-subset (independent).
                let mut exact = 0.0f64;
                for mask in 0u32..(1 << m) {
                    if mask.count_ones() as usize == p {
                        let got: f64 = (0..n)
                            .filter(|&i| (0..m).any(|j| mask >> j & 1 == 1 && values[i * m + j] <= 3.0))
                            .map(|i| w[i])
                            .sum();
                        exact = exact.max(got);
                    }
                }
                let covered = r.service.coverage.unwrap().covered_weight;
                assert!(covered <= exact + 1e-9 && covered >= 0.9 * exact, "{covered} vs {exact}");
                assert!(r.upper_bound >= exact - 1e-9, "{} < {exact}", r.upper_bound);
            }
        }
    }
}
