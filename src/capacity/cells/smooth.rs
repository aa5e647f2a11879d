//! Approximate powers from the entropically smoothed dual, by damped Newton steps with
//! the smoothing parameter lowered level by level.
//!
//! For point demand the dual `g(w) = Σ_i μ_i min_j (c_ij − w_j) + Σ_j ν_j w_j` is piecewise
//! linear: its Hessian vanishes almost everywhere, so Newton's method does not apply to it
//! directly. Replacing each `min` by the soft minimum `−ε log Σ_j exp(−(c_ij − w_j)/ε)`
//! (the entropic regularisation of transport, Cuturi 2013) gives a smooth concave
//! function whose gradient is `ν − (soft loads)` and whose negative Hessian is the graph
//! Laplacian `L = (1/ε) Σ_i μ_i (diag p_i − p_i p_iᵀ)`. Each level takes damped Newton steps
//! `w ← w + α L⁻¹ (ν − load)` with an Armijo backtracking on `α` (the damping plays the role
//! of the cell-mass safeguard of Kitagawa, Mérigot & Thibert 2019), then divides `ε` by 4.
//! The result only seeds the exact finish, so the soft minimum runs over each point's
//! listed sites alone.
//!
//! The slack of a capacity above the demand is a virtual point at no place (cost 0 to every
//! site), which makes the problem balanced: the dual's `w_j ≤ 0` constraint with `w_j = 0`
//! at sites with slack becomes "the virtual point goes to the sites of largest power".

use std::collections::HashMap;
use std::hash::BuildHasherDefault;

use rayon::prelude::*;

use super::assign::Candidates;
use crate::geometry::{distance_squared, Point};
use crate::partition::GridHasher;

/// Off-diagonal Laplacian entries by site pair `j << 32 | k` (j < k); a multiplicative hash,
/// as the keys are plain integers.
type PairMap = HashMap<u64, f64, BuildHasherDefault<GridHasher>>;

/// Probabilities below this are left out of the Hessian.
const NEGLIGIBLE: f64 = 1e-12;
/// Largest summed load error (relative to the total) that ends a coarse level, and the last.
const LEVEL_TOLERANCE: f64 = 1e-4;
// Measured: a tighter last level (1e-7) added Newton steps without shortening the exact
// finish (the same augmenting paths), so the last level stops where the others do.
const LAST_LEVEL_TOLERANCE: f64 = LEVEL_TOLERANCE;
/// Points per parallel chunk.
const CHUNK: usize = 16_384;

/// The problem as the smoothing sees it: unique sites with positive capacity.
pub(super) struct Smoothed<'a> {
    pub points: &'a [Point],
    pub demand: &'a [f64],
    pub sites: &'a [Point],
    pub capacity: &'a [f64],
    /// Capacity above the demand (0: balanced).
    pub slack: f64,
    pub candidates: &'a Candidates,
}

/// Value, gradient and (optionally) Laplacian of the smoothed dual at `w`.
struct Evaluation {
    value: f64,
    gradient: Vec<f64>,
    /// Off-diagonal entries `(j, k) → −L_jk` (j < k) and the diagonal.
    off: PairMap,
    diagonal: Vec<f64>,
}

/// Where a point's Laplacian terms go: the off-diagonal map and the diagonal.
type Curvature<'a> = (&'a mut PairMap, &'a mut [f64]);

/// One point's soft minimum over `values` (cost − power): adds `μ p_j` to `load`, and with
/// `hessian` its Laplacian terms; returns `μ · softmin`.
#[inline]
fn soft_point(
    mu: f64,
    eps: f64,
    sites: &[u32],
    values: &[f64],
    load: &mut [f64],
    hessian: Option<Curvature<'_>>,
) -> f64 {
    let least = values.iter().copied().fold(f64::INFINITY, f64::min);
    let mut z = 0.0;
    let mut p = [0.0; 64];
    let mut q: Vec<f64>;
    let probs: &mut [f64] = if values.len() <= 64 {
        &mut p[..values.len()]
    } else {
        q = vec![0.0; values.len()];
        &mut q
    };
    for (pk, &v) in probs.iter_mut().zip(values) {
        *pk = (-(v - least) / eps).exp();
        z += *pk;
    }
    probs.iter_mut().for_each(|pk| *pk /= z);
    for (&j, &pk) in sites.iter().zip(probs.iter()) {
        load[j as usize] += mu * pk;
    }
    if let Some((off, diagonal)) = hessian {
        let scale = mu / eps;
        for (a, (&j, &pj)) in sites.iter().zip(probs.iter()).enumerate() {
            if pj < NEGLIGIBLE {
                continue;
            }
            diagonal[j as usize] += scale * pj * (1.0 - pj);
            for (&k, &pk) in sites[a + 1..].iter().zip(probs[a + 1..].iter()) {
                if pk >= NEGLIGIBLE {
                    let key = if j < k { u64::from(j) << 32 | u64::from(k) } else { u64::from(k) << 32 | u64::from(j) };
                    *off.entry(key).or_insert(0.0) += scale * pj * pk;
                }
            }
        }
    }
    mu * (least - eps * z.ln())
}

impl Smoothed<'_> {
    fn evaluate(&self, w: &[f64], eps: f64, hessian: bool) -> Evaluation {
        let m = self.sites.len();
        let k = self.candidates.per_point;
        let n = self.points.len();
        let starts: Vec<usize> = (0..n).step_by(CHUNK).collect();
        let parts: Vec<Evaluation> = starts
            .par_iter()
            .map(|&start| {
                let mut e = Evaluation {
                    value: 0.0,
                    gradient: vec![0.0; m],
                    off: PairMap::default(),
                    diagonal: if hessian { vec![0.0; m] } else { Vec::new() },
                };
                let mut values = vec![0.0; k];
                for i in start..(start + CHUNK).min(n) {
                    let mu = self.demand[i];
                    if mu == 0.0 {
                        continue;
                    }
                    let listed = self.candidates.of(i);
                    for (v, &j) in values.iter_mut().zip(listed) {
                        *v = distance_squared(self.points[i], self.sites[j as usize]) - w[j as usize];
                    }
                    let h = if hessian { Some((&mut e.off, &mut e.diagonal[..])) } else { None };
                    e.value += soft_point(mu, eps, listed, &values, &mut e.gradient, h);
                }
                e
            })
            .collect();
        let mut total =
            Evaluation { value: 0.0, gradient: vec![0.0; m], off: PairMap::default(), diagonal: vec![0.0; m] };
        for part in parts {
            total.value += part.value;
            total.gradient.iter_mut().zip(&part.gradient).for_each(|(a, b)| *a += b);
            if hessian {
                total.diagonal.iter_mut().zip(&part.diagonal).for_each(|(a, b)| *a += b);
                for (key, v) in part.off {
                    *total.off.entry(key).or_insert(0.0) += v;
                }
            }
        }
        if self.slack > 0.0 {
            // The virtual point of the slack: cost 0 to every site.
            let all: Vec<u32> = (0..m as u32).collect();
            let values: Vec<f64> = w.iter().map(|&x| -x).collect();
            let h = if hessian { Some((&mut total.off, &mut total.diagonal[..])) } else { None };
            total.value += soft_point(self.slack, eps, &all, &values, &mut total.gradient, h);
        }
        // gradient = ν − load; value += Σ ν w.
        for ((g, &c), &x) in total.gradient.iter_mut().zip(self.capacity).zip(w) {
            total.value += c * x;
            *g = c - *g;
        }
        total
    }

    /// Damped Newton levels from `w`; returns the powers, the last `ε` and the steps taken.
    ///
    /// `start_eps`: the first smoothing (squared length units); each level stops once the
    /// smoothed loads are within [`LEVEL_TOLERANCE`] of the total ([`LAST_LEVEL_TOLERANCE`]
    /// at `final_eps`), the run once `ε` is at or below `final_eps`.
    pub fn solve(&self, mut w: Vec<f64>, start_eps: f64, final_eps: f64, max_steps: usize) -> (Vec<f64>, f64, usize) {
        let total: f64 = self.capacity.iter().sum();
        let mut eps = start_eps;
        let mut steps = 0;
        loop {
            for _ in 0..30 {
                if steps >= max_steps {
                    return (w, eps, steps);
                }
                let e = self.evaluate(&w, eps, true);
                let error: f64 = e.gradient.iter().map(|g| g.abs()).sum();
                // Coarse levels only steer; the last one is solved tightly (Newton converges
                // quadratically there), so the exact finish starts from nearly balanced
                // loads and needs few augmenting paths.
                let tolerance = if eps <= final_eps { LAST_LEVEL_TOLERANCE } else { LEVEL_TOLERANCE };
                if error <= tolerance * total {
                    break;
                }
                steps += 1;
                let mut d = solve_laplacian(&e, self.sites.len());
                // Keep a step within a few smoothing widths (a site no point lists has no
                // curvature: its step is otherwise unbounded).
                let cap = 10.0 * eps.max(final_eps);
                let big = d.iter().fold(0.0_f64, |a, x| a.max(x.abs()));
                if big > cap {
                    d.iter_mut().for_each(|x| *x *= cap / big);
                }
                let slope: f64 = e.gradient.iter().zip(&d).map(|(g, x)| g * x).sum();
                let mut alpha = 1.0;
                let mut accepted = false;
                for _ in 0..30 {
                    let trial: Vec<f64> = w.iter().zip(&d).map(|(a, x)| a + alpha * x).collect();
                    let t = self.evaluate(&trial, eps, false);
                    if t.value >= e.value + 1e-4 * alpha * slope {
                        w = trial;
                        accepted = true;
                        break;
                    }
                    alpha *= 0.5;
                }
                if !accepted {
                    break;
                }
            }
            if eps <= final_eps {
                return (w, eps, steps);
            }
            eps = (eps / 4.0).max(final_eps);
        }
    }
}

/// Solve `(L + λI) d = g` by conjugate gradients with a Jacobi preconditioner; `λ` is a
/// small multiple of the largest curvature (the Laplacian is singular along constants).
fn solve_laplacian(e: &Evaluation, m: usize) -> Vec<f64> {
    let largest = e.diagonal.iter().copied().fold(0.0_f64, f64::max);
    if largest <= 0.0 {
        return vec![0.0; m];
    }
    let lambda = 1e-9 * largest;
    let diag: Vec<f64> = e.diagonal.iter().map(|&d| d + lambda).collect();
    let pairs: Vec<(usize, usize, f64)> =
        e.off.iter().map(|(&key, &v)| ((key >> 32) as usize, (key & 0xffff_ffff) as usize, v)).collect();
    let apply = |x: &[f64]| -> Vec<f64> {
        let mut y: Vec<f64> = x.iter().zip(&diag).map(|(a, d)| a * d).collect();
        for &(j, k, v) in &pairs {
            y[j] -= v * x[k];
            y[k] -= v * x[j];
        }
        y
    };
    let b = &e.gradient;
    let mut x = vec![0.0; m];
    let mut r = b.clone();
    let mut z: Vec<f64> = r.iter().zip(&diag).map(|(a, d)| a / d).collect();
    let mut p = z.clone();
    let mut rz: f64 = r.iter().zip(&z).map(|(a, b)| a * b).sum();
    let norm_b: f64 = b.iter().map(|v| v * v).sum::<f64>().sqrt();
    for _ in 0..(4 * m).max(50) {
        let ap = apply(&p);
        let pap: f64 = p.iter().zip(&ap).map(|(a, b)| a * b).sum();
        if pap <= 0.0 {
            break;
        }
        let alpha = rz / pap;
        x.iter_mut().zip(&p).for_each(|(a, b)| *a += alpha * b);
        r.iter_mut().zip(&ap).for_each(|(a, b)| *a -= alpha * b);
        let norm_r: f64 = r.iter().map(|v| v * v).sum::<f64>().sqrt();
        if norm_r <= 1e-10 * norm_b {
            break;
        }
        z = r.iter().zip(&diag).map(|(a, d)| a / d).collect();
        let rz_next: f64 = r.iter().zip(&z).map(|(a, b)| a * b).sum();
        p = z.iter().zip(&p).map(|(a, b)| a + rz_next / rz * b).collect();
        rz = rz_next;
    }
    x
}
