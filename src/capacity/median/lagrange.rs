//! A Lagrangian lower bound for the capacitated p-median on candidate sites (split demand),
//! with the relaxation's sites offered to a heuristic as it goes.
//!
//! The program: `y_j ∈ {0, 1}`, `Σ_j y_j = p`, `x_ij ≥ 0`, `Σ_j x_ij = 1`,
//! `Σ_i w_i x_ij ≤ Q_j y_j`, `x_ij ≤ y_j`; minimise `Σ w_i d_ij x_ij`. Relaxing the assignment
//! constraints `Σ_j x_ij = 1` with multipliers `λ_i` (Mulvey & Beck 1984; for the capacitated
//! p-median, Lorena & Senne 2004) leaves, for every `λ`,
//!
//! ```text
//! L(λ) = Σ_i λ_i + min over |S| = p of Σ_{j ∈ S} v_j(λ),
//! v_j(λ) = min { Σ_i (w_i d_ij − λ_i) x_ij : Σ_i w_i x_ij ≤ Q_j, 0 ≤ x_ij ≤ 1 },
//! ```
//!
//! a lower bound on the optimum (weak duality). Each `v_j` is a continuous knapsack (Dantzig
//! 1957): take the points in ascending order of `d_ij − λ_i / w_i` while that is negative,
//! until `Q_j` is full.
//!
//! `S` is the `p` candidates of least `Σ v_j` among those whose capacities hold the demand,
//! `Σ_{j ∈ S} Q_j ≥ Σ_i w_i`: a valid inequality (every plan meets it) that the linear program
//! implies but the relaxation above loses. With it the choice of `S` is a 0-1 knapsack with a
//! cardinality constraint, solved exactly by a depth-first search pruned by the least
//! completion and by the capacity still reachable (`Relaxation::choose`); cheap while the
//! `p` least `v_j` nearly hold the demand. When the search passes [`COVER_NODES`] nodes the
//! evaluation drops the inequality (the `p` least `v_j`): a weaker relaxation, still a bound.
//! Without the inequality the best `L(λ)` equals the program's linear-programming relaxation
//! (both subproblems have the integrality property); with it the bound can pass that value,
//! and on the audit instances of `benchmarks/RESULTS.md` it does (at tight capacities, the
//! worst gap of the linear program to the optimum, 10.6 %, falls to 2.7 %).
//!
//! `λ` is improved by subgradient optimisation (Held, Wolfe & Crowder 1974) with the step
//! rule of Beasley (1993): `λ_i += t g_i`, `g_i = 1 − Σ_{j ∈ S} x_ij`,
//! `t = π (U − L(λ)) / ‖g‖²` with `U` the best plan's cost, `π` from 2 halved after a run of
//! steps without a better bound. Deterministic: no random choices, ties by index.

use crate::cancel::Clock;
use crate::capacity::plain_distance;
use crate::geometry::{CompensatedSum, Point, Weights};

/// Most subgradient steps.
pub(super) const MAX_STEPS: usize = 1_000;
/// Steps without a better bound before `π` halves.
const STALL: usize = 10;
/// Most nodes of the search for the sites holding the demand in one evaluation.
const COVER_NODES: usize = 20_000;
/// `π` below which the steps stop (they no longer move `λ`).
const MIN_PI: f64 = 1e-3;

/// What the bound needs: the demand and the candidates.
pub(super) struct Relaxation<'a> {
    pub(super) points: &'a [Point],
    pub(super) weights: Weights<'a>,
    pub(super) candidates: &'a [Point],
    pub(super) capacities: &'a [f64],
    pub(super) p: usize,
    /// `Σ_i w_i`.
    pub(super) demand: f64,
}

/// One evaluation of `L(λ)`: its value, the `p` candidates chosen (ascending `v_j`, then
/// index) and the subgradient.
struct Evaluation {
    value: f64,
    chosen: Vec<usize>,
    subgradient: Vec<f64>,
}

impl Relaxation<'_> {
    /// `L(λ)` over the points of positive demand `demanded` (`lambda` indexed like it).
    fn evaluate(&self, demanded: &[usize], lambda: &[f64], scratch: &mut Vec<(f64, usize)>) -> Evaluation {
        let m = self.candidates.len();
        let mut values = Vec::with_capacity(m);
        let mut taken: Vec<Vec<(usize, f64)>> = Vec::with_capacity(m);
        for (j, &c) in self.candidates.iter().enumerate() {
            scratch.clear();
            for (k, &i) in demanded.iter().enumerate() {
                let w = self.weights.get(i);
                let ratio = plain_distance(self.points[i], c) - lambda[k] / w;
                if ratio < 0.0 {
                    scratch.push((ratio, k));
                }
            }
            scratch.sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
            let mut room = self.capacities[j];
            let mut v = CompensatedSum::default();
            let mut x = Vec::new();
            for &(ratio, k) in scratch.iter() {
                if room <= 0.0 {
                    break;
                }
                let w = self.weights.get(demanded[k]);
                let share = if w <= room { 1.0 } else { room / w };
                room -= share * w;
                v.add(share * w * ratio);
                x.push((k, share));
            }
            values.push(v.total());
            taken.push(x);
        }
        let mut order: Vec<usize> = (0..m).collect();
        order.sort_by(|&a, &b| values[a].total_cmp(&values[b]).then(a.cmp(&b)));
        let chosen = self.choose(&order, &values).unwrap_or_else(|| order[..self.p].to_vec());
        let mut value = CompensatedSum::default();
        lambda.iter().for_each(|&l| value.add(l));
        let mut subgradient = vec![1.0; demanded.len()];
        for &j in &chosen {
            value.add(values[j]);
            for &(k, share) in &taken[j] {
                subgradient[k] -= share;
            }
        }
        Evaluation { value: value.total(), chosen, subgradient }
    }

    /// The `p` candidates of least `Σ v_j` whose capacities hold the demand (the valid
    /// inequality `Σ_j Q_j y_j ≥ Σ_i w_i`), by depth-first search over `order` (ascending
    /// `v_j`) pruned by the least completion and by the capacity still reachable; `None` when
    /// the search passes [`COVER_NODES`] nodes (the caller then drops the inequality, a
    /// weaker but still valid relaxation).
    fn choose(&self, order: &[usize], values: &[f64]) -> Option<Vec<usize>> {
        let (m, p) = (order.len(), self.p);
        // Rounding of the sums must never exclude a set that holds the demand.
        let need = self.demand * (1.0 - 1e-12);
        let v: Vec<f64> = order.iter().map(|&j| values[j]).collect();
        let q: Vec<f64> = order.iter().map(|&j| self.capacities[j]).collect();
        // Largest capacity from each position on.
        let mut most = vec![0.0_f64; m + 1];
        for k in (0..m).rev() {
            most[k] = most[k + 1].max(q[k]);
        }
        struct Search<'s> {
            v: &'s [f64],
            q: &'s [f64],
            most: &'s [f64],
            need: f64,
            p: usize,
            nodes: usize,
            best: f64,
            best_set: Option<Vec<usize>>,
            path: Vec<usize>,
        }
        fn dive(s: &mut Search<'_>, pos: usize, sum_v: f64, sum_q: f64) -> bool {
            s.nodes += 1;
            if s.nodes > COVER_NODES {
                return false;
            }
            let left = s.p - s.path.len();
            if left == 0 {
                if sum_q >= s.need && sum_v < s.best {
                    s.best = sum_v;
                    s.best_set = Some(s.path.clone());
                }
                return true;
            }
            if s.v.len() - pos < left || sum_q + left as f64 * s.most[pos] < s.need {
                return true;
            }
            // The least completion: the next `left` values (ascending).
            let floor: f64 = sum_v + s.v[pos..pos + left].iter().sum::<f64>();
            if floor >= s.best {
                return true;
            }
            s.path.push(pos);
            let ok = dive(s, pos + 1, sum_v + s.v[pos], sum_q + s.q[pos]);
            s.path.pop();
            ok && dive(s, pos + 1, sum_v, sum_q)
        }
        let mut s = Search {
            v: &v,
            q: &q,
            most: &most,
            need,
            p,
            nodes: 0,
            best: f64::INFINITY,
            best_set: None,
            path: Vec::with_capacity(p),
        };
        if !dive(&mut s, 0, 0.0, 0.0) {
            return None;
        }
        s.best_set.map(|set| set.into_iter().map(|k| order[k]).collect())
    }

    /// The best `L(λ)` found by subgradient steps from `λ_i = w_i · (distance to the nearest
    /// candidate)` (where `L` is the uncapacitated bound with every candidate open), at most
    /// `max_steps` of them, polling `clock` between steps. `upper` is the best plan's cost;
    /// `offer(S)` may turn the relaxation's sites into a plan and return its cost when it is
    /// below `upper` (the steps then use it). Returns the bound, `−∞` when no evaluation
    /// finished, and the steps taken.
    pub(super) fn bound(
        &self,
        mut upper: f64,
        max_steps: usize,
        clock: &Clock,
        mut offer: impl FnMut(&[usize]) -> Option<f64>,
    ) -> (f64, usize) {
        let demanded: Vec<usize> = (0..self.points.len()).filter(|&i| self.weights.get(i) > 0.0).collect();
        let mut lambda: Vec<f64> = demanded
            .iter()
            .map(|&i| {
                let near =
                    self.candidates.iter().map(|&c| plain_distance(self.points[i], c)).fold(f64::INFINITY, f64::min);
                self.weights.get(i) * near
            })
            .collect();
        let mut scratch = Vec::with_capacity(demanded.len());
        let mut best = f64::NEG_INFINITY;
        let mut pi = 2.0;
        let mut stall = 0;
        let mut steps = 0;
        while steps < max_steps && !clock.stop() {
            steps += 1;
            let e = self.evaluate(&demanded, &lambda, &mut scratch);
            if e.value > best {
                best = e.value;
                stall = 0;
                if let Some(better) = offer(&e.chosen) {
                    upper = upper.min(better);
                }
            } else {
                stall += 1;
                if stall >= STALL {
                    pi /= 2.0;
                    stall = 0;
                }
            }
            let norm: f64 = e.subgradient.iter().map(|g| g * g).sum();
            // Proven optimal (to rounding), every assignment met, or steps too small to move.
            if best >= upper * (1.0 - 1e-9) || norm <= 1e-18 || pi < MIN_PI {
                break;
            }
            let t = pi * (upper - e.value).max(0.0) / norm;
            lambda.iter_mut().zip(&e.subgradient).for_each(|(l, g)| *l += t * g);
        }
        (best, steps)
    }
}
