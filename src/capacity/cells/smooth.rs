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
//! The Laplacian's sparsity is fixed for the run: site `j` and `k` can only be coupled by a
//! point that lists both. The points are regrouped once ([`Pattern`]) into blocks of points
//! whose listed sites together number at most [`BLOCK_SITES`]; within a block a point's
//! pair terms go to a small dense matrix indexed by block-local site numbers, which is
//! added into the global pattern (compressed by site pair, built once) when the block ends.
//! A step then costs plain array updates per point, no hashing.
//!
//! The slack of a capacity above the demand is a virtual point at no place (cost 0 to every
//! site), which makes the problem balanced: the dual's `w_j ≤ 0` constraint with `w_j = 0`
//! at sites with slack becomes "the virtual point goes to the sites of largest power". It
//! couples every pair of sites, so its Laplacian term `(s/ε)(diag p − p pᵀ)` is kept as a
//! diagonal plus a rank-one term rather than in the pattern.

use rayon::prelude::*;

use super::assign::Candidates;
use crate::cancel::{Clock, Steps};
use crate::geometry::{distance_squared, Point};

/// Probabilities below this are left out of the Hessian.
const NEGLIGIBLE: f64 = 1e-12;
/// Largest summed load error (relative to the total) that ends a coarse level: a coarse
/// level only steers the next one, whose Newton steps start from its powers.
const LEVEL_TOLERANCE: f64 = 1e-3;
/// Largest summed load error (relative to the total) that ends the last level.
// Measured: a tighter last level (1e-7) added Newton steps without shortening the exact
// finish (the same augmenting paths).
const LAST_LEVEL_TOLERANCE: f64 = 1e-4;
/// Most distinct listed sites in one block of points (block-local site numbers are `u8`).
const BLOCK_SITES: usize = 128;
/// Points per parallel task (whole blocks; a fixed split, so sums are reproducible).
const TASK_POINTS: usize = 32_768;

/// The problem as the smoothing sees it: unique sites with positive capacity, and the
/// points of positive demand regrouped for the Laplacian's fixed pattern.
pub(super) struct Smoothed<'a> {
    sites: &'a [Point],
    capacity: &'a [f64],
    /// Capacity above the demand (0: balanced).
    slack: f64,
    pattern: Pattern,
}

/// Consecutive points of the pattern's order whose listed sites number at most
/// [`BLOCK_SITES`], numbered block-locally in the order first listed.
struct Block {
    start: usize,
    end: usize,
    /// `(a · BLOCK_SITES + b, slot)`: every block-local site pair `a < b` listed together
    /// by some point of the block, and its slot in the global pattern.
    pairs: Vec<(u16, u32)>,
}

/// The points regrouped by nearest listed site and cut into blocks, with the global
/// pattern of site pairs listed together by some point (built once per run).
struct Pattern {
    per_point: usize,
    points: Vec<Point>,
    demand: Vec<f64>,
    /// `per_point` listed sites per point, in the pattern's order.
    listed: Vec<u32>,
    /// The same sites by block-local number.
    local: Vec<u8>,
    blocks: Vec<Block>,
    /// Ranges of blocks, one per parallel task.
    tasks: Vec<std::ops::Range<usize>>,
    /// Per slot, its site pair `(j, k)` with `j < k`, ascending.
    pair_sites: Vec<(u32, u32)>,
}

impl Pattern {
    fn new(points: &[Point], demand: &[f64], m: usize, candidates: &Candidates) -> Pattern {
        let k = candidates.per_point;
        // Points of positive demand by nearest listed site (a stable counting sort): nearby
        // points list nearly the same sites, so blocks stay long.
        let kept: Vec<usize> = (0..points.len()).filter(|&i| demand[i] > 0.0).collect();
        let mut next = vec![0usize; m + 1];
        kept.iter().for_each(|&i| next[candidates.of(i)[0] as usize + 1] += 1);
        for j in 0..m {
            next[j + 1] += next[j];
        }
        let mut order = vec![0usize; kept.len()];
        for &i in &kept {
            let j = candidates.of(i)[0] as usize;
            order[next[j]] = i;
            next[j] += 1;
        }
        // Greedy blocks: a point that would take its block past BLOCK_SITES sites opens the next.
        let mut listed = Vec::with_capacity(order.len() * k);
        let mut local = vec![0u8; order.len() * k];
        let mut numbered_in = vec![usize::MAX; m];
        let mut number = vec![0u8; m];
        let mut bounds: Vec<(usize, usize)> = Vec::new();
        let (mut start, mut size) = (0, 0);
        for (r, &i) in order.iter().enumerate() {
            let row = candidates.of(i);
            let fresh = row.iter().filter(|&&j| numbered_in[j as usize] != bounds.len()).count();
            if size + fresh > BLOCK_SITES {
                bounds.push((start, r));
                (start, size) = (r, 0);
            }
            for (slot, &j) in local[r * k..(r + 1) * k].iter_mut().zip(row) {
                let j = j as usize;
                if numbered_in[j] != bounds.len() {
                    numbered_in[j] = bounds.len();
                    number[j] = size as u8;
                    size += 1;
                }
                *slot = number[j];
            }
            listed.extend_from_slice(row);
        }
        if start < order.len() {
            bounds.push((start, order.len()));
        }
        // Each block's local pairs with their global keys `j << 32 | k` (j < k).
        let found: Vec<Vec<(u16, u64)>> = bounds
            .par_iter()
            .map(|&(s, e)| {
                let mut seen = vec![false; BLOCK_SITES * BLOCK_SITES];
                let mut out = Vec::new();
                for r in s..e {
                    let (row, loc) = (&listed[r * k..(r + 1) * k], &local[r * k..(r + 1) * k]);
                    for a in 0..k {
                        for b in a + 1..k {
                            let at = local_pair(loc[a], loc[b]);
                            if !seen[at] {
                                seen[at] = true;
                                let (j, l) = (row[a].min(row[b]), row[a].max(row[b]));
                                out.push((at as u16, u64::from(j) << 32 | u64::from(l)));
                            }
                        }
                    }
                }
                out
            })
            .collect();
        let mut keys: Vec<u64> = found.iter().flatten().map(|e| e.1).collect();
        keys.par_sort_unstable();
        keys.dedup();
        let blocks: Vec<Block> = found
            .into_par_iter()
            .zip(bounds)
            .map(|(pairs, (start, end))| Block {
                start,
                end,
                pairs: pairs
                    .into_iter()
                    .map(|(at, key)| (at, keys.binary_search(&key).expect("every block pair is a key") as u32))
                    .collect(),
            })
            .collect();
        let mut tasks = Vec::new();
        let (mut first, mut held) = (0, 0);
        for (b, block) in blocks.iter().enumerate() {
            held += block.end - block.start;
            if held >= TASK_POINTS {
                tasks.push(first..b + 1);
                (first, held) = (b + 1, 0);
            }
        }
        if first < blocks.len() {
            tasks.push(first..blocks.len());
        }
        Pattern {
            per_point: k,
            points: order.iter().map(|&i| points[i]).collect(),
            demand: order.iter().map(|&i| demand[i]).collect(),
            listed,
            local,
            blocks,
            tasks,
            pair_sites: keys.iter().map(|&key| ((key >> 32) as u32, key as u32)).collect(),
        }
    }
}

/// Index of the block-local pair `{a, b}` in a block's dense scratch matrix.
#[inline]
fn local_pair(a: u8, b: u8) -> usize {
    usize::from(a.min(b)) * BLOCK_SITES + usize::from(a.max(b))
}

/// Value, gradient and (optionally) Laplacian of the smoothed dual at `w`.
struct Evaluation {
    value: f64,
    gradient: Vec<f64>,
    /// Per pattern slot, the off-diagonal entry `−L_jk`.
    off: Vec<f64>,
    diagonal: Vec<f64>,
    /// The slack point's coupling of every pair: `−L_jk += −scale · p_j p_k` for `j ≠ k`.
    rank_one: Option<(f64, Vec<f64>)>,
}

impl Evaluation {
    fn empty(m: usize, slots: usize, hessian: bool) -> Evaluation {
        Evaluation {
            value: 0.0,
            gradient: vec![0.0; m],
            off: vec![0.0; if hessian { slots } else { 0 }],
            diagonal: vec![0.0; if hessian { m } else { 0 }],
            rank_one: None,
        }
    }
}

/// Where a point's Laplacian terms go: the block's scratch pairs (by block-local site
/// number), the point's block-local numbers, and the diagonal.
struct Curvature<'a> {
    pairs: &'a mut [f64],
    local: &'a [u8],
    diagonal: &'a mut [f64],
}

/// The soft minimum of `values` (cost − power) at smoothing `eps`, with the probabilities
/// `p_j ∝ exp(−values_j / ε)` written to `probs`.
#[inline]
fn soft_min(values: &[f64], eps: f64, probs: &mut [f64]) -> f64 {
    let least = values.iter().copied().fold(f64::INFINITY, f64::min);
    // exp(−40) ≈ 4e-18 is below the rounding of the sum (which holds a term 1): such a
    // term is 0 without the exponential.
    let far = least + 40.0 * eps;
    let mut z = 0.0;
    for (pk, &v) in probs.iter_mut().zip(values) {
        *pk = if v > far { 0.0 } else { (-(v - least) / eps).exp() };
        z += *pk;
    }
    probs.iter_mut().for_each(|pk| *pk /= z);
    least - eps * z.ln()
}

/// One point's soft minimum over its listed sites: adds `μ p_j` to `load`, and with
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
    let mut buffer = [0.0; 64];
    let probs = &mut buffer[..values.len()];
    let soft = soft_min(values, eps, probs);
    for (&j, &pk) in sites.iter().zip(probs.iter()) {
        load[j as usize] += mu * pk;
    }
    if let Some(Curvature { pairs, local, diagonal }) = hessian {
        let scale = mu / eps;
        for (a, (&j, &pj)) in sites.iter().zip(probs.iter()).enumerate() {
            if pj < NEGLIGIBLE {
                continue;
            }
            diagonal[j as usize] += scale * pj * (1.0 - pj);
            for (b, &pk) in probs.iter().enumerate().skip(a + 1) {
                if pk >= NEGLIGIBLE {
                    pairs[local_pair(local[a], local[b])] += scale * pj * pk;
                }
            }
        }
    }
    mu * soft
}

impl<'a> Smoothed<'a> {
    /// The smoothed problem of `points` (zero demand is left out) over `sites` with
    /// `capacity`, `slack` capacity above the demand; regroups the points once.
    pub fn new(
        points: &[Point],
        demand: &[f64],
        sites: &'a [Point],
        capacity: &'a [f64],
        slack: f64,
        candidates: &Candidates,
    ) -> Smoothed<'a> {
        debug_assert!(candidates.per_point <= 64);
        Smoothed { sites, capacity, slack, pattern: Pattern::new(points, demand, sites.len(), candidates) }
    }

    fn evaluate(&self, w: &[f64], eps: f64, hessian: bool) -> Evaluation {
        let m = self.sites.len();
        let p = &self.pattern;
        let k = p.per_point;
        let slots = p.pair_sites.len();
        let parts: Vec<Evaluation> = p
            .tasks
            .par_iter()
            .map(|range| {
                let mut e = Evaluation::empty(m, slots, hessian);
                let mut scratch = vec![0.0; if hessian { BLOCK_SITES * BLOCK_SITES } else { 0 }];
                let mut values = vec![0.0; k];
                for block in &p.blocks[range.clone()] {
                    for r in block.start..block.end {
                        let listed = &p.listed[r * k..(r + 1) * k];
                        for (v, &j) in values.iter_mut().zip(listed) {
                            *v = distance_squared(p.points[r], self.sites[j as usize]) - w[j as usize];
                        }
                        let h = hessian.then(|| Curvature {
                            pairs: &mut scratch,
                            local: &p.local[r * k..(r + 1) * k],
                            diagonal: &mut e.diagonal,
                        });
                        e.value += soft_point(p.demand[r], eps, listed, &values, &mut e.gradient, h);
                    }
                    if hessian {
                        for &(at, slot) in &block.pairs {
                            e.off[slot as usize] += scratch[at as usize];
                            scratch[at as usize] = 0.0;
                        }
                    }
                }
                e
            })
            .collect();
        // Summed in task order (a fixed split): reproducible to the last bit.
        let mut total = Evaluation::empty(m, slots, hessian);
        for part in parts {
            total.value += part.value;
            total.gradient.iter_mut().zip(&part.gradient).for_each(|(a, b)| *a += b);
            if hessian {
                total.diagonal.iter_mut().zip(&part.diagonal).for_each(|(a, b)| *a += b);
                total.off.iter_mut().zip(&part.off).for_each(|(a, b)| *a += b);
            }
        }
        if self.slack > 0.0 {
            // The virtual point of the slack: cost 0 to every site.
            let values: Vec<f64> = w.iter().map(|&x| -x).collect();
            let mut probs = vec![0.0; m];
            total.value += self.slack * soft_min(&values, eps, &mut probs);
            total.gradient.iter_mut().zip(&probs).for_each(|(g, &pj)| *g += self.slack * pj);
            if hessian {
                let scale = self.slack / eps;
                total.diagonal.iter_mut().zip(&probs).for_each(|(d, &pj)| *d += scale * pj * (1.0 - pj));
                total.rank_one = Some((scale, probs));
            }
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
    /// `from_zero`: `w` is the zero start, far from the first level's optimum.
    /// `last`: the tolerance of the level at `final_eps` (a coarse level's when this run
    /// only steers a later one).
    pub fn solve(
        &self,
        mut w: Vec<f64>,
        (start_eps, final_eps): (f64, f64),
        max_steps: usize,
        from_zero: bool,
        last: bool,
        (clock, progress): (&Clock, &mut Steps<'_>),
    ) -> (Vec<f64>, f64, usize) {
        let total: f64 = self.capacity.iter().sum();
        let mut eps = start_eps;
        let mut steps = 0;
        loop {
            // The accepted trial point's evaluation, with its Laplacian when it was the full
            // step (the usual case): the next step starts from it instead of evaluating again.
            let mut current: Option<Evaluation> = None;
            for _ in 0..30 {
                // A stop returns the powers so far (the caller then has no plan to give).
                if steps >= max_steps || clock.stop() {
                    return (w, eps, steps);
                }
                let e = current.take().unwrap_or_else(|| self.evaluate(&w, eps, true));
                let error: f64 = e.gradient.iter().map(|g| g.abs()).sum();
                // Coarse levels only steer; the last one is solved tightly (Newton converges
                // quadratically there), so the exact finish starts from nearly balanced
                // loads and needs few augmenting paths.
                let tolerance = if eps <= final_eps && last { LAST_LEVEL_TOLERANCE } else { LEVEL_TOLERANCE };
                if error <= tolerance * total {
                    break;
                }
                steps += 1;
                progress.step();
                let mut d = solve_laplacian(&e, &self.pattern.pair_sites, self.sites.len());
                // Keep a step within a few smoothing widths (a site no point lists has no
                // curvature: its step is otherwise unbounded).
                // The first level starts from zero powers, far from its optimum (loads off by
                // the spread of the capacities): a wider bound there saves capped steps.
                let widths = if from_zero && eps == start_eps { 100.0 } else { 10.0 };
                let cap = widths * eps.max(final_eps);
                let big = d.iter().fold(0.0_f64, |a, x| a.max(x.abs()));
                if big > cap {
                    d.iter_mut().for_each(|x| *x *= cap / big);
                }
                let slope: f64 = e.gradient.iter().zip(&d).map(|(g, x)| g * x).sum();
                let mut alpha = 1.0;
                let mut accepted = false;
                for _ in 0..30 {
                    let trial: Vec<f64> = w.iter().zip(&d).map(|(a, x)| a + alpha * x).collect();
                    let full = alpha == 1.0;
                    let t = self.evaluate(&trial, eps, full);
                    if t.value >= e.value + 1e-4 * alpha * slope {
                        w = trial;
                        accepted = true;
                        current = full.then_some(t);
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
fn solve_laplacian(e: &Evaluation, pair_sites: &[(u32, u32)], m: usize) -> Vec<f64> {
    let largest = e.diagonal.iter().copied().fold(0.0_f64, f64::max);
    if largest <= 0.0 {
        return vec![0.0; m];
    }
    let lambda = 1e-9 * largest;
    let diag: Vec<f64> = e.diagonal.iter().map(|&d| d + lambda).collect();
    let apply = |x: &[f64]| -> Vec<f64> {
        let mut y: Vec<f64> = x.iter().zip(&diag).map(|(a, d)| a * d).collect();
        for (&(j, k), &v) in pair_sites.iter().zip(&e.off) {
            let (j, k) = (j as usize, k as usize);
            y[j] -= v * x[k];
            y[k] -= v * x[j];
        }
        if let Some((scale, p)) = &e.rank_one {
            // −scale · p_j (p·x − p_j x_j): the slack point's off-diagonal terms.
            let dot: f64 = p.iter().zip(x).map(|(a, b)| a * b).sum();
            y.iter_mut().zip(p).zip(x).for_each(|((yj, &pj), &xj)| *yj -= scale * pj * (dot - pj * xj));
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
