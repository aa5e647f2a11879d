//! Coverage models: location set covering and maximal covering, and the covering machinery
//! the discrete p-center shares.
//!
//! - [`cover_all`] (Toregas, Swain, ReVelle & Bergman 1971): the fewest candidates so every
//!   point is within `radius`. Dominated candidates are dropped; a greedy cover (Chvátal
//!   1979) starts a Lagrangian heuristic (Beasley 1990; Caprara, Fischetti & Toth 1999, see
//!   `lagrangian.rs`): subgradient optimisation of the relaxation of the covering
//!   constraints, whose multipliers price a greedy cover every few iterations, followed by
//!   redundancy removal and a two-for-one local search. The lower bound is the better of a
//!   greedy packing (points no candidate covers two of: an integral solution of the LP dual)
//!   and the best Lagrangian value; small gaps are closed by an exact branching search.
//! - [`cover_most`] (Church & ReVelle 1974, `most.rs`): `p` candidates covering the most
//!   weight within `radius`. Greedy addition, then best-swap interchange with the same
//!   `gain − loss + extra` bookkeeping as the p-median's fast swap; an upper bound from the
//!   Lagrangian relaxation of `zᵢ ≤ Σ_{j covers i} yⱼ` by subgradient optimisation.
//!
//! Both poll their clock (`crate::cancel`) between steps: every row of the coverage lists,
//! greedy additions, swaps, bound iterations, local-search moves and every node of the exact
//! searches, and for `cover_all` every column of the dominance reduction. Stopped while the
//! coverage lists are made, no plan exists yet (each is built from the complete lists): the
//! run fails naming `time_limit`. Stopped later, `cover_all` returns the best cover found so
//! far (the plain greedy cover is always completed first: it takes one pass over the
//! coverage lists) with the bound so far; `cover_most` returns its plan so far, filled up to
//! `p` sites, with the bound so far (at least the coverable weight, a valid bound).

mod incidence;
mod lagrangian;
mod most;

pub(super) use incidence::{FlatLists, Incidence};
use lagrangian::Covering;
pub use most::{cover_most, CoverMost};

use super::{check_radius, relative_gap, stopped_listing, Costs, SiteService};
use crate::cancel::{cancelled, RunLimits, Steps};
use crate::error::{Error, Result};
use crate::geometry::{validate_weights, Weights};

/// Work (point visits) the exact covering search may spend over one call.
pub(super) const EXACT_BUDGET: usize = 20_000_000;
/// Most subgradient iterations of the set-covering heuristic (it usually stops earlier, on
/// a proven optimum or a stalled bound).
const COVER_ALL_ITERATIONS: usize = 3000;

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
        let found = if lower > p { None } else { incidence.exact(p, &mut budget, &|| false).flatten() };
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
/// its cheapest candidate's cost); naming `time_limit` when the deadline passes before the
/// coverage lists are complete (no cover exists yet).
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
    let mut steps = Steps::new(&clock.watch, 3 + COVER_ALL_ITERATIONS as u64);
    let demand = outside(costs, fixed, radius, |_| true);
    let stop = || clock.stop();
    let Some(incidence) = Incidence::build_watched(
        costs,
        &demand,
        &not_fixed(costs.columns(), fixed),
        |_| radius,
        |_, c| c <= radius,
        &stop,
    ) else {
        steps.finish();
        return Err(stopped_listing(&clock, "the coverage of the points", "cover"));
    };
    let mut incidence = incidence.freed_aside();
    if let Some(a) = incidence.uncoverable() {
        let i = demand[a];
        let (column, cost) = costs.cheapest(i);
        return Err(Error::Uncoverable { row: i, radius, column, cost, coordinates: None });
    }
    steps.step();
    incidence.drop_dominated(&|| clock.stop());
    steps.step();
    let greedy = incidence.greedy();
    steps.step();
    let floor = incidence.packing().len();
    // Stopped already: the greedy cover and the packing bound, without building the search.
    let covering = if clock.stop() { None } else { Some(Covering::new(&incidence)) };
    let (mut chosen, mut lower) = match covering {
        None => (greedy, floor),
        Some(Some(covering)) => {
            let found = covering.search(&greedy, floor, COVER_ALL_ITERATIONS, &clock, &mut steps);
            (found.cover, found.bound)
        }
        // Indices past 32 bits: the plain greedy cover and bound.
        Some(None) => {
            let lower = incidence.lower_bound(greedy.len(), COVER_ALL_ITERATIONS, &mut || {
                steps.step();
                !clock.stop()
            });
            (greedy, lower)
        }
    };
    steps.finish();
    // A cancelled run's outcome is dropped by the caller: skip the exact step and the
    // service of the plan, so Ctrl-C lands at once.
    if clock.watch.is_cancelled() {
        return Err(cancelled("costs"));
    }
    let mut budget = EXACT_BUDGET;
    while lower < chosen.len() && !clock.stop() {
        // Stopped inside, the search settles nothing: the plan and bound so far stand.
        match incidence.exact(lower, &mut budget, &stop) {
            Some(Some(cover)) => chosen = cover,
            Some(None) => lower += 1,
            None => break,
        }
    }
    let open: Vec<usize> = fixed.iter().chain(&chosen).copied().collect();
    // The coverage lists hold every chosen site within the radius of a point that needs
    // cover (a chosen site is never a dominated column; no fixed site is that near): the
    // service reads them instead of searching the candidates again.
    let listed = |i: usize| demand.binary_search(&i).ok().map(|a| incidence.by_point[a].as_slice());
    let service = SiteService::of_listed(costs, weights, open, fixed, Some(radius), &listed);
    Ok(CoverAll {
        chosen: chosen.len(),
        lower_bound: lower,
        relative_gap: relative_gap(chosen.len() as f64, lower as f64),
        service,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
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
    fn a_deadline_passed_in_the_coverage_lists_is_reported_not_answered() {
        // A nanosecond has passed by the first row: neither model has a plan to give.
        let values = line(40, 1.0);
        let costs = Costs::from(CostMatrix::new(&values, 40, 40).unwrap());
        let limits = RunLimits { time_limit: Some(1e-9), ..RunLimits::default() };
        for e in [
            cover_all(&costs, Weights::Unit, 2.0, &[], &limits).unwrap_err(),
            cover_most(&costs, Weights::Unit, 3, 2.0, &[], &limits).unwrap_err(),
        ] {
            assert!(matches!(e, Error::InvalidParameter { name: "time_limit", .. }), "{e}");
            assert!(e.to_string().contains("before any"), "{e}");
        }
        // Unstopped, the same call answers (closed form: ⌈40/5⌉ sites of reach 2).
        let r = cover_all(&costs, Weights::Unit, 2.0, &[], &RunLimits::default()).unwrap();
        assert_eq!((r.chosen, r.lower_bound), (8, 8));
    }

    #[test]
    fn service_from_the_coverage_lists_equals_the_full_scan() {
        // The plan's service reads the coverage lists; the reference is the service of the
        // same sites without them (as `evaluate_sites` computes it, itself checked against
        // the full scan of a dense matrix), with fixed sites and weights.
        let mut rng = crate::geometry::random::SplitMix64::new(9);
        let points: Vec<[f64; 2]> = (0..400).map(|_| [rng.next_f64() * 40.0, rng.next_f64() * 40.0]).collect();
        let candidates: Vec<[f64; 2]> = (0..120).map(|_| [rng.next_f64() * 40.0, rng.next_f64() * 40.0]).collect();
        let w: Vec<f64> = (0..400).map(|_| 1.0 + (rng.next_f64() * 4.0).floor()).collect();
        let costs = Costs::from(crate::discrete::PlanarCosts::new(&points, &candidates).unwrap());
        for (fixed, radius) in [(vec![], 8.0), (vec![3, 50], 9.0)] {
            let r = cover_all(&costs, Weights::Given(&w), radius, &fixed, &RunLimits::default()).unwrap();
            let scan = SiteService::of(&costs, Weights::Given(&w), r.service.open.clone(), &fixed, Some(radius));
            assert_eq!(r.service, scan);
            assert!(scan.coverage.unwrap().covered.iter().all(|&c| c));
        }
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
}
