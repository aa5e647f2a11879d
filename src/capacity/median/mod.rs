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
//!   the nearest distinct candidates (one site per demand location at most; when `p` is
//!   larger, the largest free candidates make up the rest), swapping in larger candidates
//!   while their total capacity is short; a site moves to the free candidate that serves
//!   its allocated amounts most cheaply and has room for them. The plan is then improved
//!   ([`swap`]) by the swap interchange (close one site, open one candidate, re-solve the
//!   transportation plan), by the Lagrangian heuristic (the sites of the relaxation below,
//!   repaired to hold the demand, each costed by its transportation plan) and by the
//!   interchange again from the best of those.
//!
//!   Two proven lower bounds, the larger reported with its gap: the transportation plan
//!   with *every* candidate open (a relaxation dropping the limit of `p` sites), and the
//!   Lagrangian relaxation of the assignment constraints with subgradient optimisation
//!   ([`lagrange`]; Mulvey & Beck 1984, Lorena & Senne 2004), which approaches the
//!   program's linear-programming relaxation and passes it where the valid inequality "the
//!   open capacities hold the demand" binds. With `p` equal to the number of candidates
//!   the only plan is every candidate open, and the first bound is its cost (gap 0).
//!
//! # Stopping early
//! [`CapacitatedMedianOptions::limits`] are polled between rounds, between the sites of a
//! candidate round, inside every transportation plan, between the swaps of the interchange
//! and between subgradient steps. A run stopped after its first plan returns the best plan
//! found (every plan it keeps meets the capacities exactly), flagged `converged` false; its
//! bound is the best proven before the stop (NaN when neither bound was reached). Stopped
//! before the first plan (no plan meeting the capacities exists yet) it fails with
//! [`super::stopped`]. The uncapacitated start may take half of the time limit. Progress
//! counts the start's own steps, then the first plan and every round against `max_rounds`,
//! the bound and the improvement, closed at the total when the run ends.

use std::time::Instant;

mod lagrange;
mod swap;

use lagrange::Relaxation;
use swap::{hold_demand, lower, Sets};

use super::allocation::{allocate_on_clock, served_cost, split_plan, AllocationOptions, CapacityAllocation};
use super::transport::Flows;
use super::{check_capacities, check_capacity_values, check_weighted_distances, relative_gap, serve_all, validate};
use crate::cancel::{Clock, RunLimits, Steps};
use crate::error::{Error, Result};
use crate::geometry::{distance, location_key, validate_points, validate_weights, CompensatedSum, Point, Weights};
use crate::median::{weber_point, WeberOptions};
use crate::multi::{distinct_weighted, p_median, MedianOptions};

/// Options of [`capacitated_p_median`].
#[derive(Debug, Clone)]
pub struct CapacitatedMedianOptions {
    /// Seed of the uncapacitated start.
    pub seed: u64,
    /// Most rounds: location–allocation rounds and, with candidates, swap-interchange passes
    /// together.
    pub max_rounds: usize,
    /// Deadline and cancel flag (see the module's "Stopping early").
    pub limits: RunLimits,
}

impl Default for CapacitatedMedianOptions {
    fn default() -> Self {
        CapacitatedMedianOptions { seed: 0, max_rounds: 100, limits: RunLimits::default() }
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
    /// With candidates: a proven lower bound on the optimum, the larger of the transportation
    /// plan with every candidate open and the Lagrangian bound (see the module's doc); NaN
    /// for continuous sites, and when the limits stopped the run before either was proven.
    pub lower_bound: f64,
    /// `(cost − lower_bound) / cost`, NaN without a bound.
    pub relative_gap: f64,
    /// Location–allocation rounds run, and with candidates the swap-interchange passes.
    pub rounds: usize,
    /// True when the rounds ended because moving the sites no longer lowered the cost (a
    /// local optimum of location–allocation; with candidates, of the swap interchange);
    /// false when `max_rounds` or the limits cut them short.
    pub converged: bool,
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
/// steps, or O(n·m) with `m` candidates. With candidates, each interchange pass (a round)
/// solves up to `6·p` transportation plans (warm-started from the current plan's prices),
/// and the bound takes up to 1,000 subgradient steps of O(n·m log n) each.
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
    let clock = options.limits.clock();
    let mut steps = Steps::new(&clock.watch, options.max_rounds as u64 + 2);
    let result = plan(points, weights, p, capacities, candidates, options, &clock, &mut steps);
    steps.finish();
    result
}

#[allow(clippy::too_many_arguments)]
fn plan(
    points: &[Point],
    weights: Weights<'_>,
    p: usize,
    capacities: &[f64],
    candidates: Option<&[Point]>,
    options: &CapacitatedMedianOptions,
    clock: &Clock,
    steps: &mut Steps<'_>,
) -> Result<CapacitatedMedian> {
    // The start under the run's cancel flag and half of what is left of its deadline (the
    // rest for the plans that meet the capacities); cut short, it is still a plan. Its own
    // steps count on the run's watch, so the bar moves while it searches.
    let half = clock.deadline().map(|d| (d.saturating_duration_since(Instant::now()).as_secs_f64() / 2.0).max(1e-9));
    let start_options =
        MedianOptions { seed: options.seed, time_limit: half, watch: clock.watch.clone(), ..MedianOptions::default() };
    // With candidates, small capacities can call for more sites than there are demand
    // locations (several sites serving one heavy point): the uncapacitated start places one
    // site per location at most, and the rest are filled in from the candidates below.
    // Without candidates the same holds: the sites beyond the demand locations start at the
    // heaviest locations (see `fill_sites`).
    validate_weights("weights", weights, points.len())?;
    let start_p = p.min(distinct_weighted(points, weights).len()).max(1);
    let start = p_median(points, weights, start_p, &[], &start_options)?;
    steps.step();
    let run = Run { points, weights, clock, steps, max_rounds: options.max_rounds };
    match candidates {
        None => continuous(run, p, capacities, start.sites),
        Some(c) => discrete(run, p, capacities, c, &start.sites),
    }
}

/// What every round needs: the demand, the stopping rule and the progress count.
struct Run<'a, 'b> {
    points: &'a [Point],
    weights: Weights<'a>,
    clock: &'a Clock,
    steps: &'a mut Steps<'b>,
    max_rounds: usize,
}

/// The exact split allocation to `sites` and its flows.
type Allocated = (CapacityAllocation, Flows);

/// The exact split allocation under the run's clock (the run counts its own steps).
/// `checked` holds the totals of the input check made at the run's start, for sites the run
/// has moved: they may meet at one location (several sites serving one heavy point), which
/// the input check refuses for sites of different capacities.
fn allocate(
    points: &[Point],
    sites: &[Point],
    caps: &[f64],
    weights: Weights<'_>,
    clock: &Clock,
    checked: Option<(f64, f64)>,
) -> Result<Allocated> {
    allocate_on_clock(points, sites, caps, weights, &AllocationOptions::default(), &clock.quiet(), checked)
}

/// The first plan: without it there is no answer, so a stop before it ends is the error of
/// [`super::stopped`].
fn first_plan(run: &mut Run<'_, '_>, sites: &[Point], caps: &[f64]) -> Result<Allocated> {
    // The transportation plan fails with [`stopped`] when the limits cut it short.
    let plan = allocate(run.points, sites, caps, run.weights, run.clock, None)?;
    run.steps.step();
    Ok(plan)
}

fn continuous(run: Run<'_, '_>, p: usize, capacities: &[f64], start: Vec<Point>) -> Result<CapacitatedMedian> {
    let (points, weights) = (run.points, run.weights);
    if capacities.len() != p {
        return Err(Error::InvalidParameter {
            name: "capacities",
            reason: format!("capacities must have one entry per site to place ({p}); got {}", capacities.len()),
        });
    }
    check_capacity_values(capacities)?;
    let mut demand = CompensatedSum::default();
    (0..points.len()).for_each(|i| demand.add(weights.get(i)));
    let mut capacity = CompensatedSum::default();
    capacities.iter().for_each(|&c| capacity.add(c));
    let (demand, capacity) = (demand.total(), capacity.total());
    serve_all(demand, capacity)?;
    // The sites move within the points' hull, so the points' own extent bounds every distance.
    check_weighted_distances(points, points, demand)?;
    let mut sites = fill_sites(points, weights, start, p);
    // The sites are the model's own: several may share a location (a heavy point needing
    // more than one site's capacity), whatever their capacities, so the location check of
    // the input is skipped.
    let mut best = allocate(points, &sites, capacities, weights, run.clock, Some((demand, capacity)))?;
    run.steps.step();
    let mut rounds = 0;
    let mut converged = false;
    while rounds < run.max_rounds && !run.clock.stop() {
        rounds += 1;
        run.steps.step();
        let moved: Vec<Point> = (0..sites.len())
            .map(|j| {
                let (pts, amounts) = served_by(points, &best.1, j);
                if pts.is_empty() {
                    return Ok(sites[j]);
                }
                Ok(weber_point(&pts, Weights::Given(&amounts), &WeberOptions::default())?.location)
            })
            .collect::<Result<_>>()?;
        // A plan cut short by the limits is an error here, and so is any other refusal: the
        // best plan so far stands, never flagged converged.
        let Ok(next) = allocate(points, &moved, capacities, weights, run.clock, Some((demand, capacity))) else {
            converged = false;
            break;
        };
        if next.0.total_cost < best.0.total_cost * (1.0 - 1e-12) {
            sites = moved;
            best = next;
        } else {
            converged = true;
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
        converged,
    })
}

/// `start` grown to `p` sites when the demand has fewer locations than `p`: the extra sites
/// start at the locations of most demand (then the lowest first row), in turn, so that a
/// location holding more than one site's capacity gets several.
fn fill_sites(points: &[Point], weights: Weights<'_>, mut start: Vec<Point>, p: usize) -> Vec<Point> {
    if start.len() >= p {
        return start;
    }
    let mut at: std::collections::HashMap<_, usize> = std::collections::HashMap::new();
    let mut places: Vec<(Point, usize, CompensatedSum)> = Vec::new();
    for (i, &q) in points.iter().enumerate() {
        if weights.get(i) > 0.0 {
            let g = *at.entry(location_key(q)).or_insert_with(|| {
                places.push((q, i, CompensatedSum::default()));
                places.len() - 1
            });
            places[g].2.add(weights.get(i));
        }
    }
    places.sort_by(|a, b| b.2.total().total_cmp(&a.2.total()).then(a.1.cmp(&b.1)));
    let mut k = 0;
    while start.len() < p {
        start.push(places[k % places.len()].0);
        k += 1;
    }
    start
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
    mut run: Run<'_, '_>,
    p: usize,
    capacities: &[f64],
    candidates: &[Point],
    start: &[Point],
) -> Result<CapacitatedMedian> {
    let (points, weights) = (run.points, run.weights);
    validate_points("candidates", candidates, 1)?;
    check_capacities("candidates", candidates, capacities)?;
    let m = candidates.len();
    if p > m {
        return Err(Error::InvalidParameter {
            name: "p",
            reason: format!("p ({p}) exceeds the number of candidates ({m})"),
        });
    }
    let (demand, all) = validate(points, candidates, capacities, weights)?;
    serve_all(demand, all)?;
    let mut by_size: Vec<usize> = (0..m).collect();
    by_size.sort_by(|&a, &b| capacities[b].total_cmp(&capacities[a]).then(a.cmp(&b)));
    let largest: f64 = by_size[..p].iter().map(|&j| capacities[j]).sum();
    serve_all(demand, largest)?;
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
    // Sites the start could not place (p above the demand locations): the largest free
    // candidates, which the rounds then move.
    for &big in &by_size {
        if chosen.len() == p {
            break;
        }
        if !used[big] {
            used[big] = true;
            chosen.push(big);
        }
    }
    hold_demand(&mut chosen, &by_size, capacities, demand);
    used.fill(false);
    chosen.iter().for_each(|&j| used[j] = true);
    let picked = |chosen: &[usize]| -> (Vec<Point>, Vec<f64>) {
        (chosen.iter().map(|&j| candidates[j]).collect(), chosen.iter().map(|&j| capacities[j]).collect())
    };
    let (sites, caps) = picked(&chosen);
    let mut best = first_plan(&mut run, &sites, &caps)?;
    let mut rounds = 0;
    let mut converged = false;
    'rounds: while rounds < run.max_rounds && !run.clock.stop() {
        rounds += 1;
        run.steps.step();
        let mut next = chosen.clone();
        let mut taken = used.clone();
        for k in 0..p {
            // Each site's move scans every candidate over its demand: poll between sites.
            if run.clock.stop() {
                break 'rounds;
            }
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
            converged = true;
            break;
        }
        let (sites, caps) = picked(&next);
        let Ok(plan) = allocate(points, &sites, &caps, weights, run.clock, None) else {
            // Cut short by the limits (the sites' capacities hold the demand: no other
            // error is possible once the first plan exists); the best plan so far stands.
            break;
        };
        if lower(plan.0.total_cost, best.0.total_cost) {
            chosen = next;
            used = taken;
            best = plan;
        } else {
            converged = true;
            break;
        }
    }
    // Relaxation: every candidate open. Stopped by the limits, it proves nothing (NaN).
    run.steps.plan(2);
    let transport_bound =
        match split_plan(points, candidates, capacities, weights, 0.0, super::plain_distance, run.clock) {
            Ok(relaxed) if !run.clock.stop() => served_cost(points, candidates, &relaxed.flows, m),
            _ => f64::NAN,
        };
    // Better plans and a stronger bound: the swap interchange from the location–allocation
    // plan, the Lagrangian relaxation offering its sites (repaired to hold the demand) as
    // plans, and the interchange again from the best of those when it is new.
    let mut sets = Sets::new(points, weights, candidates, capacities, demand, run.clock);
    sets.seen(&chosen);
    let mut set = chosen.clone();
    let mut cost = best.0.total_cost;
    let mut prices = best.0.price.clone();
    let mut lagrangian = f64::NAN;
    if p < m {
        let (passes, local) = sets.interchange(&mut set, &mut cost, &mut prices, run.max_rounds.saturating_sub(rounds));
        rounds += passes;
        converged = local;
        let relaxation = Relaxation { points, weights, candidates, capacities, p, demand };
        let mut offered: Option<(Vec<usize>, Vec<f64>)> = None;
        let (value, _) = relaxation.bound(cost, lagrange::MAX_STEPS, run.clock, |relaxed| {
            let mut repaired = relaxed.to_vec();
            hold_demand(&mut repaired, &by_size, capacities, demand);
            let (v, y) = sets.cost(&repaired, None)?;
            if lower(v, cost) {
                cost = v;
                offered = Some((repaired, y));
                Some(v)
            } else {
                None
            }
        });
        run.steps.step();
        if value.is_finite() {
            lagrangian = value;
        }
        if let Some((mut from, mut y)) = offered {
            let (passes, local) = sets.interchange(&mut from, &mut cost, &mut y, run.max_rounds.saturating_sub(rounds));
            rounds += passes;
            converged = local;
            set = from;
        }
        run.steps.step();
        if set != chosen {
            let (sites, caps) = picked(&set);
            // Cut short by the limits, the location–allocation plan stands.
            if let Ok(plan) = allocate(points, &sites, &caps, weights, run.clock, None) {
                if lower(plan.0.total_cost, best.0.total_cost) {
                    chosen = set;
                    best = plan;
                }
            }
        }
    }
    // Both bounds are proven; either may be missing (stopped by the limits).
    let lower_bound = match (transport_bound.is_nan(), lagrangian.is_nan()) {
        (true, true) => f64::NAN,
        _ => transport_bound.max(lagrangian).min(best.0.total_cost),
    };
    Ok(CapacitatedMedian {
        sites: chosen.iter().map(|&j| candidates[j]).collect(),
        capacities: chosen.iter().map(|&j| capacities[j]).collect(),
        relative_gap: if lower_bound.is_nan() { f64::NAN } else { relative_gap(best.0.total_cost, lower_bound) },
        chosen,
        allocation: best.0,
        lower_bound,
        rounds,
        converged,
    })
}

#[cfg(test)]
mod tests;
