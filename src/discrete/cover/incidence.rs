//! Which candidates cover which points, and the covering machinery on it: dominance
//! reduction, greedy covering, a packing bound, a quick Lagrangian bound and an exact
//! branching search.

use crate::cancel::FreedAside;
use crate::discrete::{Costs, StepControl};
use crate::geometry::CompensatedSum;

/// Which candidates cover which of the points that still need cover.
pub(in crate::discrete) struct Incidence {
    /// `by_point[a]`: the candidate columns covering demand point `a` (ascending).
    pub(in crate::discrete) by_point: Vec<Vec<usize>>,
    /// `by_site[j]`: the demand points column `j` covers.
    pub(in crate::discrete) by_site: Vec<Vec<usize>>,
}

impl Incidence {
    /// Coverage of the rows `demand` by the columns with `usable[j]`, where column `j` covers
    /// row `i` when `covers(i, costs[i, j])`, which may hold only for costs up to `reach(i)`.
    pub(in crate::discrete) fn build(
        costs: &Costs<'_>,
        demand: &[usize],
        usable: &[bool],
        reach: impl Fn(usize) -> f64 + Sync,
        covers: impl Fn(usize, f64) -> bool + Sync,
    ) -> Incidence {
        Incidence::build_watched(costs, demand, usable, reach, covers, &|| false).expect("never stopped")
    }

    /// These lists, freed on a thread of their own when dropped ([`FreedAside`]: a list per
    /// point and per candidate, tenths of a second to free), so a run stopped by its deadline
    /// or a cancel returns at its stop.
    pub(in crate::discrete) fn freed_aside(self) -> FreedAside<Incidence> {
        let lists = self.by_point.len() + self.by_site.len();
        FreedAside::new(self, lists)
    }

    /// [`Incidence::build`] asking `stop()` before every row: `None` once it is true (the
    /// rows left were not listed, so the lists cover less than they should and no cover
    /// can come from them).
    pub(in crate::discrete) fn build_watched(
        costs: &Costs<'_>,
        demand: &[usize],
        usable: &[bool],
        reach: impl Fn(usize) -> f64 + Sync,
        covers: impl Fn(usize, f64) -> bool + Sync,
        stop: &(dyn Fn() -> bool + Sync),
    ) -> Option<Incidence> {
        use rayon::prelude::*;
        let by_point: Vec<Vec<usize>> = demand
            .par_iter()
            .map(|&i| {
                if stop() {
                    return None;
                }
                let mut list = Vec::new();
                costs.for_each_within(i, reach(i), |j, c| {
                    if usable[j] && covers(i, c) {
                        list.push(j);
                    }
                });
                list.sort_unstable();
                Some(list)
            })
            .collect::<Option<_>>()?;
        // Each candidate's list allocated once at its size: growing 300,000 short lists
        // push by push spent most of this transposition in reallocation.
        let mut sizes = vec![0usize; costs.columns()];
        by_point.iter().flatten().for_each(|&j| sizes[j] += 1);
        let mut by_site: Vec<Vec<usize>> = sizes.into_iter().map(Vec::with_capacity).collect();
        for (a, list) in by_point.iter().enumerate() {
            for &j in list {
                by_site[j].push(a);
            }
        }
        Some(Incidence { by_point, by_site })
    }

    /// Drop every column whose points another column covers too (a superset, or the same
    /// set at a smaller column): a covering model never needs it (column reduction of set
    /// covering; Toregas & ReVelle 1973). Returns the number dropped. Once `stop()` is true
    /// no further column is dropped (keeping a dominated column changes no answer, only the
    /// work of the searches after it).
    pub(in crate::discrete) fn drop_dominated(&mut self, stop: &dyn Fn() -> bool) -> usize {
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
    pub(in crate::discrete) fn uncoverable(&self) -> Option<usize> {
        self.by_point.iter().position(Vec::is_empty)
    }

    /// Greedy covering (most newly covered points first, smallest column on ties), then
    /// removal of sites whose points all have another chosen site (latest chosen first).
    /// Every point must have a covering column.
    pub(in crate::discrete) fn greedy(&self) -> Vec<usize> {
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
    pub(in crate::discrete) fn packing(&self) -> Vec<usize> {
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
    pub(in crate::discrete) fn lower_bound(
        &self,
        upper: usize,
        iterations: usize,
        go: &mut dyn FnMut() -> bool,
    ) -> usize {
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
    /// `Some(None)` when none exists (proven), `None` when `budget` ran out first or `stop()`
    /// turned true (asked at every node).
    pub(in crate::discrete) fn exact(
        &self,
        k: usize,
        budget: &mut usize,
        stop: &dyn Fn() -> bool,
    ) -> Option<Option<Vec<usize>>> {
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
            stop,
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
    stop: &'a dyn Fn() -> bool,
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
        // A node reads every point, so a poll of the clock per node costs nothing by comparison.
        if *self.budget < visits || (self.stop)() {
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

/// Lists in one flat array of 32-bit indices (compressed rows): the covering subgradients
/// read every list once or twice per iteration, and this layout halves the bytes they read
/// against nested `usize` lists and spares a pointer per list. Same items in the same order,
/// so sums over them are the same.
pub(in crate::discrete) struct FlatLists {
    starts: Vec<usize>,
    items: Vec<u32>,
}

impl FlatLists {
    /// The `lists` with every item mapped by `map`; `None` when `map` refuses one (an index
    /// that does not fit in 32 bits).
    pub(in crate::discrete) fn of_lists<'a>(
        lists: impl IntoIterator<Item = &'a [usize]>,
        map: impl Fn(usize) -> Option<u32>,
    ) -> Option<FlatLists> {
        let (mut starts, mut items) = (vec![0], Vec::new());
        for list in lists {
            for &x in list {
                items.push(map(x)?);
            }
            starts.push(items.len());
        }
        Some(FlatLists { starts, items })
    }

    /// List `x`.
    pub(in crate::discrete) fn of(&self, x: usize) -> &[u32] {
        &self.items[self.starts[x]..self.starts[x + 1]]
    }

    /// How many lists.
    pub(in crate::discrete) fn len(&self) -> usize {
        self.starts.len() - 1
    }
}
