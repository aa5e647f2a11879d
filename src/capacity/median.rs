//! Capacitated p-median by location–allocation.
//!
//! Cooper's (1964) alternation with the allocation step made capacitated: allocate the demand
//! to the current sites by the exact transportation plan ([`super::transport`]), then move
//! every site to the best location for the demand it now serves, and repeat while the total
//! cost falls. A site keeps its capacity when it moves.
//!
//! - Continuous sites: the start is the uncapacitated p-median plan ([`crate::p_median`]);
//!   a site moves to the weighted Fermat–Weber point of its allocated amounts (Weiszfeld).
//!   No cheap relaxation bounds this problem, so no gap is claimed.
//! - Candidate sites (each with its own capacity): the start snaps the uncapacitated plan to
//!   the nearest distinct candidates, swapping in larger candidates while their total
//!   capacity is short; a site moves to the free candidate that serves its allocated amounts
//!   most cheaply and has room for them. The transportation plan with *every* candidate
//!   open is a relaxation (it drops the limit of `p` sites), so its cost is a proven lower
//!   bound and the gap is reported.

use super::allocation::{allocate_with_flows, split_plan, AllocationOptions, CapacityAllocation};
use super::transport::Flows;
use super::{check_capacities, relative_gap, shortfall, validate};
use crate::error::{Error, Result};
use crate::geometry::{distance, validate_points, CompensatedSum, Point, Weights};
use crate::median::{weber_point, WeberOptions};
use crate::multi::{p_median, MedianOptions};

/// Options of [`capacitated_p_median`].
#[derive(Debug, Clone, Copy)]
pub struct CapacitatedMedianOptions {
    /// Seed of the uncapacitated start.
    pub seed: u64,
    /// Most location–allocation rounds.
    pub max_rounds: usize,
}

impl Default for CapacitatedMedianOptions {
    fn default() -> Self {
        CapacitatedMedianOptions { seed: 0, max_rounds: 100 }
    }
}

/// A capacitated p-median plan.
#[derive(Debug, Clone, PartialEq)]
pub struct CapacitatedMedian {
    /// The `p` sites.
    pub sites: Vec<Point>,
    /// With candidates: the candidate row of each site (else empty).
    pub chosen: Vec<usize>,
    /// The capacity of each site.
    pub capacities: Vec<f64>,
    /// How the sites serve the demand (split, exact for these sites).
    pub allocation: CapacityAllocation,
    /// With candidates: the cost of the transportation plan with every candidate open, a
    /// proven lower bound on the optimum; NaN for continuous sites.
    pub lower_bound: f64,
    /// `(cost − lower_bound) / cost`, NaN without a bound.
    pub relative_gap: f64,
    /// Location–allocation rounds run.
    pub rounds: usize,
}

/// Choose `p` capacitated sites for the weighted demand at least total distance, demand split
/// between sites where that lowers the cost.
///
/// `capacities` has one entry per site to place (`p` of them) without `candidates`, or one
/// per candidate with them.
///
/// # Errors
/// Bad points, weights, candidates or capacities; [`Error::InvalidParameter`] naming `p` when
/// `p` is 0 or exceeds the candidates; [`Error::Shortfall`] when the capacities cannot hold
/// the demand (with candidates: the `p` largest).
///
/// # Runtime
/// Each round is one transportation plan (see [`capacity_allocation`]) plus O(n) Weiszfeld
/// steps, or O(n·m) with `m` candidates.
pub fn capacitated_p_median(
    points: &[Point],
    weights: Weights<'_>,
    p: usize,
    capacities: &[f64],
    candidates: Option<&[Point]>,
    options: &CapacitatedMedianOptions,
) -> Result<CapacitatedMedian> {
    validate_points("points", points, 1)?;
    if p == 0 {
        return Err(Error::InvalidParameter { name: "p", reason: "p must be at least 1; got 0".into() });
    }
    let start = p_median(points, weights, p, &[], &MedianOptions { seed: options.seed, ..MedianOptions::default() })?;
    match candidates {
        None => continuous(points, weights, capacities, start.sites, options),
        Some(c) => discrete(points, weights, p, capacities, c, &start.sites, options),
    }
}

/// The exact split allocation to `sites` and its flows.
type Allocated = (CapacityAllocation, Flows);

fn allocate(points: &[Point], sites: &[Point], caps: &[f64], weights: Weights<'_>) -> Result<Allocated> {
    allocate_with_flows(points, sites, caps, weights, &AllocationOptions::default())
}

fn continuous(
    points: &[Point],
    weights: Weights<'_>,
    capacities: &[f64],
    mut sites: Vec<Point>,
    options: &CapacitatedMedianOptions,
) -> Result<CapacitatedMedian> {
    if capacities.len() != sites.len() {
        return Err(Error::InvalidParameter {
            name: "capacities",
            reason: format!(
                "capacities must have one entry per site to place ({}); got {}",
                sites.len(),
                capacities.len()
            ),
        });
    }
    let (demand, capacity) = validate(points, &sites, capacities, weights)?;
    shortfall(demand, capacity, false)?;
    let mut best = allocate(points, &sites, capacities, weights)?;
    let mut rounds = 0;
    while rounds < options.max_rounds {
        rounds += 1;
        let moved: Vec<Point> = (0..sites.len())
            .map(|j| {
                let (pts, amounts) = served_by(points, &best.1, j);
                if pts.is_empty() {
                    return Ok(sites[j]);
                }
                Ok(weber_point(&pts, Weights::Given(&amounts), &WeberOptions::default())?.location)
            })
            .collect::<Result<_>>()?;
        let next = match allocate(points, &moved, capacities, weights) {
            Ok(a) => a,
            Err(_) => break,
        };
        if next.0.total_cost < best.0.total_cost * (1.0 - 1e-12) {
            sites = moved;
            best = next;
        } else {
            break;
        }
    }
    Ok(CapacitatedMedian {
        sites,
        chosen: Vec::new(),
        capacities: capacities.to_vec(),
        allocation: best.0,
        lower_bound: f64::NAN,
        relative_gap: f64::NAN,
        rounds,
    })
}

/// The points site `j` serves and the amounts.
fn served_by(points: &[Point], flows: &Flows, j: usize) -> (Vec<Point>, Vec<f64>) {
    let mut pts = Vec::new();
    let mut amounts = Vec::new();
    for (i, f) in flows.iter().enumerate() {
        for &(s, x) in f {
            if s as usize == j && x > 0.0 {
                pts.push(points[i]);
                amounts.push(x);
            }
        }
    }
    (pts, amounts)
}

fn discrete(
    points: &[Point],
    weights: Weights<'_>,
    p: usize,
    capacities: &[f64],
    candidates: &[Point],
    start: &[Point],
    options: &CapacitatedMedianOptions,
) -> Result<CapacitatedMedian> {
    validate_points("candidates", candidates, 1)?;
    check_capacities(candidates, capacities)?;
    let m = candidates.len();
    if p > m {
        return Err(Error::InvalidParameter {
            name: "p",
            reason: format!("p ({p}) exceeds the number of candidates ({m})"),
        });
    }
    let (demand, all) = validate(points, candidates, capacities, weights)?;
    shortfall(demand, all, false)?;
    let mut by_size: Vec<usize> = (0..m).collect();
    by_size.sort_by(|&a, &b| capacities[b].total_cmp(&capacities[a]).then(a.cmp(&b)));
    let largest: f64 = by_size[..p].iter().map(|&j| capacities[j]).sum();
    shortfall(demand, largest, false)?;
    // Start: snap to the nearest free candidates, then grow capacity where short.
    let mut chosen: Vec<usize> = Vec::with_capacity(p);
    let mut used = vec![false; m];
    for s in start {
        let j = (0..m)
            .filter(|&j| !used[j])
            .min_by(|&a, &b| distance(*s, candidates[a]).total_cmp(&distance(*s, candidates[b])).then(a.cmp(&b)))
            .expect("p ≤ m leaves a free candidate");
        used[j] = true;
        chosen.push(j);
    }
    let mut held: f64 = chosen.iter().map(|&j| capacities[j]).sum();
    for &big in &by_size {
        if held >= demand * (1.0 - 1e-12) {
            break;
        }
        if used[big] {
            continue;
        }
        let (k, &small) =
            chosen.iter().enumerate().min_by(|a, b| capacities[*a.1].total_cmp(&capacities[*b.1])).expect("p ≥ 1");
        if capacities[small] >= capacities[big] {
            break;
        }
        used[small] = false;
        used[big] = true;
        chosen[k] = big;
        held += capacities[big] - capacities[small];
    }
    let plan_of = |chosen: &[usize]| {
        let sites: Vec<Point> = chosen.iter().map(|&j| candidates[j]).collect();
        let caps: Vec<f64> = chosen.iter().map(|&j| capacities[j]).collect();
        allocate(points, &sites, &caps, weights)
    };
    let mut best = plan_of(&chosen)?;
    let mut rounds = 0;
    while rounds < options.max_rounds {
        rounds += 1;
        let mut next = chosen.clone();
        let mut taken = used.clone();
        for k in 0..p {
            let (pts, amounts) = served_by(points, &best.1, k);
            let load: f64 = amounts.iter().sum();
            let cost_at = |c: usize| {
                let mut s = CompensatedSum::default();
                pts.iter().zip(&amounts).for_each(|(q, &x)| s.add(x * distance(*q, candidates[c])));
                s.total()
            };
            let mut pick = (cost_at(next[k]), next[k]);
            for c in 0..m {
                if !taken[c] && capacities[c] >= load {
                    let v = cost_at(c);
                    if v < pick.0 {
                        pick = (v, c);
                    }
                }
            }
            taken[next[k]] = false;
            taken[pick.1] = true;
            next[k] = pick.1;
        }
        if next == chosen {
            break;
        }
        let plan = plan_of(&next)?;
        if plan.0.total_cost < best.0.total_cost * (1.0 - 1e-12) {
            chosen = next;
            used = taken;
            best = plan;
        } else {
            break;
        }
    }
    // Relaxation: every candidate open.
    let relaxed = split_plan(
        points,
        candidates,
        capacities,
        weights,
        0.0,
        super::plain_distance,
        &crate::cancel::Clock::unlimited(),
    )?;
    let mut lower = CompensatedSum::default();
    for (i, f) in relaxed.flows.iter().enumerate() {
        for &(j, x) in f {
            lower.add(x * distance(points[i], candidates[j as usize]));
        }
    }
    let lower_bound = lower.total().min(best.0.total_cost);
    Ok(CapacitatedMedian {
        sites: chosen.iter().map(|&j| candidates[j]).collect(),
        capacities: chosen.iter().map(|&j| capacities[j]).collect(),
        relative_gap: relative_gap(best.0.total_cost, lower_bound),
        chosen,
        allocation: best.0,
        lower_bound,
        rounds,
    })
}
