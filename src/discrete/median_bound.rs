//! The Lagrangian lower bound of the discrete p-median and its Lagrangian heuristic.
//!
//! Relaxing the assignment constraints `Σⱼ xᵢⱼ = 1` with multipliers `λᵢ` (Cornuejols,
//! Fisher & Nemhauser 1977) leaves
//!
//! `L(λ) = Σᵢ λᵢ + Σ_{j open} ρⱼ`, `ρⱼ = Σᵢ min(0, wᵢ costs[i, j] − λᵢ)`,
//!
//! the fixed candidates open and the `p` smallest `ρⱼ` of the others: a lower bound on the
//! optimum for every `λ`. The bound holds for every `λ`, so `λᵢ` may be kept in a box
//! `[0, wᵢ · limitᵢ]` (`limitᵢ` how far point `i`'s list of cheapest candidates is
//! complete): then only listed pairs can have a negative reduced cost and one evaluation
//! reads a short prefix of every list, not the whole matrix.
//!
//! `L` is maximised by projected subgradient optimisation with the step rule of Beasley
//! (1993): step `θ (target − L(λ)) / ‖d‖²` along a direction `d`, from the subgradient
//! `gᵢ = 1 − (open sites with negative reduced cost for i)` with the components pushing `λᵢ`
//! out of its box set to 0, `θ` from 2 halved after a run of iterations without a better
//! bound. The direction is deflected by the previous one (Camerini, Fratta & Maffioli 1975):
//! `d = g + β d₋`, `β = −γ g·d₋ / ‖d₋‖²` when `g·d₋ < 0` (else `d = g`), `0 ≤ γ < 2`. When
//! two successive subgradients point against each other (the zigzag across a ridge of `L`,
//! typical here: a point over-served at one step is unserved at the next), the deflected
//! direction is never at a wider angle to the optimal multipliers than `g` itself (their
//! Theorem), so the same number of iterations climbs further. The target is the cost of the best plan known, and
//! the plan improves as the bound is sought: every so often the open set of the relaxation is
//! handed to the interchange (Beasley's Lagrangian heuristic), and a cheaper plan lowers the
//! target.

use rayon::prelude::*;

use super::near::NearLists;
use super::{sum_rows, Costs};
use crate::cancel::{Clock, Steps};
use crate::geometry::{CompensatedSum, Weights};

/// Iterations without a better bound after which `θ` halves.
const STALE_RUN: usize = 30;
/// `θ` below which the steps no longer move the bound.
const THETA_FLOOR: f64 = 1e-3;
/// Iterations between two calls of the Lagrangian heuristic.
const HEURISTIC_EVERY: usize = 25;
/// The deflection weight `γ` of Camerini, Fratta & Maffioli (1975), who recommend 1.5. On the
/// 10,000 × 1,000, p = 50 benchmark instance it raised the bound of 1,000 iterations from
/// 266,756 to 266,842 (the undeflected steps zigzag: their `θ` falls below its floor with the
/// bound still climbing).
const DEFLECTION: f64 = 1.5;
/// Relative tolerance of every p-median proof: a lower bound within `PROOF_TOLERANCE · |cost|`
/// of the best plan's cost settles it. The subgradient stops there, its step never aims at a
/// smaller gap, and the tree drops a node or decision at the same distance, so a "proven"
/// plan is optimal to this relative tolerance (rounding in sums of 10⁷ terms is far below).
pub(super) const PROOF_TOLERANCE: f64 = 1e-9;

/// Whether `lower` proves the plan of cost `upper` optimal (to [`PROOF_TOLERANCE`]).
pub(super) fn settles(upper: f64, lower: f64) -> bool {
    lower >= upper - PROOF_TOLERANCE * upper.abs()
}

/// The data of one p-median relaxation.
pub(super) struct MedianRelaxation<'a, 'c> {
    pub costs: &'a Costs<'c>,
    pub near: &'a NearLists,
    pub weights: Weights<'a>,
    pub fixed: &'a [usize],
    pub p: usize,
    /// Candidates a branch has closed (`closed[j]`: may not open); empty: none closed.
    pub closed: &'a [bool],
}

/// What one run of [`MedianRelaxation::bound`] found.
pub(super) struct BoundRun {
    /// The best value of the Lagrangian function (a lower bound on every plan the relaxation
    /// allows); +∞ when it allows none (fewer open-able candidates than sites to open).
    pub value: f64,
    /// Evaluations spent.
    pub spent: usize,
    /// The multipliers of the best value (the start when none was evaluated).
    pub lambda: Vec<f64>,
    /// The cost of the best plan known at the end (`upper`, or a cheaper plan of the
    /// Lagrangian heuristic).
    pub upper: f64,
}

impl MedianRelaxation<'_, '_> {
    /// The largest multiplier point `i` may take: beyond it, pairs that are not listed could
    /// have a negative reduced cost.
    fn cap(&self, i: usize) -> f64 {
        let w = self.weights.get(i);
        if w > 0.0 {
            w * self.near.limit(i)
        } else {
            0.0
        }
    }

    /// The candidates the relaxation may choose among, ascending: neither fixed nor closed.
    pub(super) fn free_candidates(&self) -> Vec<usize> {
        let mut is_fixed = vec![false; self.costs.columns()];
        self.fixed.iter().for_each(|&j| is_fixed[j] = true);
        let closed = |j: usize| self.closed.get(j).copied().unwrap_or(false);
        (0..is_fixed.len()).filter(|&j| !is_fixed[j] && !closed(j)).collect()
    }

    /// `ρⱼ` for every candidate (`Σᵢ min(0, wᵢ costs[i, j] − λᵢ)`), summed in a fixed
    /// order so the value is deterministic.
    pub(super) fn reduced_sums(&self, lambda: &[f64]) -> Vec<f64> {
        sum_rows(self.costs.rows(), self.costs.columns(), |i, rho| {
            let (w, l) = (self.weights.get(i), lambda[i]);
            if w > 0.0 && l > 0.0 {
                // λᵢ ≤ wᵢ · limitᵢ: every pair with a negative reduced cost is listed, and the
                // list is in ascending cost, so the first non-negative one ends the row.
                let (columns, values) = self.near.row(i);
                for (&j, &c) in columns.iter().zip(values) {
                    let reduced = w * c - l;
                    if reduced >= 0.0 {
                        break;
                    }
                    rho[j as usize] += reduced;
                }
            }
        })
    }

    /// The best value of `L` found in at most `iterations` evaluations from `start` with the
    /// step factor `θ` starting at `theta`. `improve(open)` runs the Lagrangian heuristic from
    /// an open set of the relaxation and returns the cost of the best plan known (`upper` at
    /// first). Every iteration is a step of `steps`; a stop of `clock` ends the search with
    /// the best value so far (−∞ when none was evaluated), which is still a bound.
    #[allow(clippy::too_many_arguments)]
    pub(super) fn bound(
        &self,
        mut upper: f64,
        start: &[f64],
        iterations: usize,
        theta: f64,
        improve: &mut dyn FnMut(&[usize]) -> f64,
        clock: &Clock,
        steps: &mut Steps<'_>,
    ) -> BoundRun {
        let (n, m) = (self.costs.rows(), self.costs.columns());
        let caps: Vec<f64> = (0..n).map(|i| self.cap(i)).collect();
        let mut lambda: Vec<f64> = start.iter().zip(&caps).map(|(&l, &cap)| l.clamp(0.0, cap)).collect();
        let free = self.free_candidates();
        if free.len() < self.p {
            return BoundRun { value: f64::INFINITY, spent: 0, lambda, upper };
        }
        let (mut best, mut best_open) = (f64::NEG_INFINITY, Vec::new());
        let mut best_lambda = lambda.clone();
        let (mut theta, mut stale) = (theta, 0);
        let mut chosen = vec![false; m];
        let mut order: Vec<usize> = Vec::with_capacity(m);
        let mut g = vec![0.0; n];
        // The previous direction `d₋` (empty until the first step).
        let mut previous: Vec<f64> = Vec::new();
        let mut tried: Vec<Vec<usize>> = Vec::new();
        let mut spent = 0;
        while spent < iterations && !clock.stop() {
            spent += 1;
            steps.step();
            let rho = self.reduced_sums(&lambda);
            order.clone_from(&free);
            // Only the p smallest are needed; ties by column keep the choice deterministic.
            let by_value = |a: &usize, b: &usize| rho[*a].total_cmp(&rho[*b]).then(a.cmp(b));
            if self.p < order.len() {
                order.select_nth_unstable_by(self.p, by_value);
                order.truncate(self.p);
            }
            order.sort_unstable_by(by_value);
            chosen.iter_mut().for_each(|c| *c = false);
            let mut value = CompensatedSum::default();
            for &j in self.fixed.iter().chain(order.iter()) {
                chosen[j] = true;
                value.add(rho[j]);
            }
            for &l in &lambda {
                value.add(l);
            }
            let value = value.total();
            if value > best {
                // A better bound by more than rounding restarts the count of stale steps.
                if best == f64::NEG_INFINITY || value > best + 1e-12 * best.abs() {
                    stale = 0;
                }
                best = value;
                best_open = self.fixed.iter().chain(order.iter()).copied().collect();
                best_lambda.clone_from(&lambda);
            } else {
                stale += 1;
            }
            if stale >= STALE_RUN {
                (theta, stale) = (theta / 2.0, 0);
            }
            if spent % HEURISTIC_EVERY == 0 {
                let mut open: Vec<usize> = self.fixed.iter().chain(order.iter()).copied().collect();
                open[self.fixed.len()..].sort_unstable();
                if !tried.contains(&open) {
                    upper = upper.min(improve(&open));
                    tried.push(open);
                }
            }
            if settles(upper, best) || theta < THETA_FLOOR {
                break;
            }
            // Subgradient, projected on the box: 1 − (open sites with a negative reduced cost).
            g.par_iter_mut().enumerate().for_each(|(i, gi)| {
                let (w, l) = (self.weights.get(i), lambda[i]);
                if w == 0.0 {
                    *gi = 0.0;
                    return;
                }
                let (columns, values) = self.near.row(i);
                let served = columns.iter().zip(values).take_while(|&(_, &c)| w * c - l < 0.0);
                let served = served.filter(|&(&j, _)| chosen[j as usize]).count();
                let step = 1.0 - served as f64;
                *gi = if (step < 0.0 && l <= 0.0) || (step > 0.0 && l >= caps[i]) { 0.0 } else { step };
            });
            if !previous.is_empty() {
                let against: f64 = g.iter().zip(&previous).map(|(a, b)| a * b).sum();
                let length: f64 = previous.iter().map(|b| b * b).sum();
                if against < 0.0 && length > 0.0 {
                    let beta = -DEFLECTION * against / length;
                    g.iter_mut().zip(&previous).for_each(|(a, b)| *a += beta * b);
                }
            }
            let norm: f64 = g.iter().map(|gi| gi * gi).sum();
            if norm == 0.0 {
                // No projected step moves λ (when no point is violated at all, the relaxed
                // plan is feasible and the bound is the optimum).
                break;
            }
            let step = theta * (upper - value).max(PROOF_TOLERANCE * upper.abs()) / norm;
            for ((l, gi), &cap) in lambda.iter_mut().zip(&g).zip(&caps) {
                *l = (*l + step * gi).clamp(0.0, cap);
            }
            previous.clone_from(&g);
        }
        // The open set of the best bound gets the heuristic too (Beasley 1993), unless the run
        // was stopped (or no iteration ran).
        if best_open.is_empty() || clock.stop() {
            return BoundRun { value: best, spent, lambda: best_lambda, upper };
        }
        best_open[self.fixed.len()..].sort_unstable();
        if !tried.contains(&best_open) && !settles(upper, best) {
            upper = upper.min(improve(&best_open));
        }
        BoundRun { value: best, spent, lambda: best_lambda, upper }
    }
}
