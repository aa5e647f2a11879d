//! Discrete location on demand × candidate costs.
//!
//! The sites must be chosen among `m` candidates, and the cost of serving demand point `i`
//! from candidate `j` is any non-negative number `costs[i, j]` (travel time, road distance,
//! straight-line distance), read from one [`Costs`] source: a dense matrix, a sparse matrix of
//! the allowed pairs, or coordinates (see `source.rs`):
//!
//! - [`evaluate_sites`]: how a given set of open candidates serves the demand (the status quo);
//! - [`discrete_p_median`]: `p` candidates minimising the total weighted cost, with a proven
//!   Lagrangian lower bound;
//! - [`discrete_p_center`]: `p` candidates minimising the largest weighted cost, with a
//!   proven lower bound (exact when the covering subproblems are small);
//! - [`cover_all`]: the fewest candidates within `radius` of every point (set covering);
//! - [`cover_most`]: `p` candidates covering the most weight within `radius` (maximal
//!   covering), with a proven Lagrangian upper bound.
//!
//! Every model accepts `fixed` candidates (existing sites kept open) and reports how its
//! sites serve the demand in one [`SiteService`], computed here once so that no caller
//! recomputes a cost, a load or a coverage count.

mod center;
mod cover;
mod cover_bound;
mod dominating;
mod median;
mod median_bound;
mod median_branch;
mod near;
mod neighbourhood;
mod source;
mod swap;

pub use center::{discrete_p_center, DiscreteCenter};
pub use cover::{cover_all, cover_most, CoverAll, CoverMost};
pub use dominating::{circle_intersections, MAX_DOMINATING_CANDIDATES};
pub use median::{discrete_p_median, DiscreteMedian, DiscreteMedianOptions};
pub use source::{with_planar_costs, CostMatrix, Costs, PlanarCosts, SparseCosts, PLANAR_DENSE_CELLS};

use crate::cancel::{cancelled, Clock};
use crate::error::{Error, Result};
use crate::geometry::validate::WEIGHTED_LIMIT;
use crate::geometry::{validate_points, CompensatedSum, Point, Weights};
use source::planar_cost;

/// Largest cost matrix [`euclidean_costs`] builds (cells): 8 bytes each, so about 800 MB.
pub const MAX_COST_CELLS: usize = 100_000_000;

/// Euclidean costs of serving every point from every candidate, row-major `n × m`.
///
/// # Errors
/// [`Error::NonFiniteCoordinate`] or [`Error::TooFewPoints`] for bad `points` or
/// `candidates`; [`Error::InvalidParameter`] when the matrix would exceed [`MAX_COST_CELLS`].
pub fn euclidean_costs(points: &[Point], candidates: &[Point]) -> Result<Vec<f64>> {
    validate_points("points", points, 1)?;
    validate_points("candidates", candidates, 1)?;
    let cells = points.len().saturating_mul(candidates.len());
    if cells > MAX_COST_CELLS {
        return Err(Error::InvalidParameter {
            name: "candidates",
            reason: format!(
                "{} points × {} candidates is {cells} costs, more than the {MAX_COST_CELLS} a dense matrix may hold",
                points.len(),
                candidates.len()
            ),
        });
    }
    Ok(points.iter().flat_map(|&a| candidates.iter().map(move |&c| planar_cost(a, c))).collect())
}

/// Check that `sites` are distinct candidate columns below `columns`.
///
/// # Errors
/// [`Error::InvalidParameter`] naming `argument` and the entry out of range or repeated.
pub fn check_sites(argument: &'static str, sites: &[usize], columns: usize) -> Result<()> {
    let mut seen = vec![false; columns];
    for (k, &j) in sites.iter().enumerate() {
        if j >= columns {
            return Err(Error::InvalidParameter {
                name: argument,
                reason: format!("{argument}[{k}] = {j} is not a candidate column (there are {columns})"),
            });
        }
        if std::mem::replace(&mut seen[j], true) {
            return Err(Error::InvalidParameter {
                name: argument,
                reason: format!("{argument}[{k}] = {j} repeats an earlier entry; every site is opened once"),
            });
        }
    }
    Ok(())
}

/// Check `p ≥ 1` new sites, that `p` plus the fixed ones fit among the candidates, and the
/// fixed sites themselves.
fn check_choice(costs: &Costs<'_>, p: usize, fixed: &[usize]) -> Result<()> {
    check_sites("fixed", fixed, costs.columns())?;
    if p == 0 {
        return Err(Error::InvalidParameter { name: "p", reason: "must be at least 1; got 0".into() });
    }
    let free = costs.columns() - fixed.len();
    if p > free {
        return Err(Error::InvalidParameter {
            name: "p",
            reason: format!("must be at most the number of candidates that are not fixed ({free}); got {p}"),
        });
    }
    Ok(())
}

/// Check that weighted costs stay within [`WEIGHTED_LIMIT`]: the largest allowed cost times
/// the total weight (`summed`, for a total such as the p-median's) or the largest weight (for
/// a largest weighted cost such as the p-center's). Beyond it a plan's objective overflows
/// to infinity, every plan then looks alike, and a gap of 0 would be claimed for any of
/// them: refused instead. Weights must be valid already.
///
/// # Errors
/// [`Error::WeightedOverflow`] naming the product and how to rescale.
fn check_weighted_range(costs: &Costs<'_>, weights: Weights<'_>, summed: bool) -> Result<()> {
    let weight = (0..costs.rows()).map(|i| weights.get(i));
    let weight = if summed { weight.sum::<f64>() } else { weight.fold(0.0, f64::max) };
    let top = costs.ceiling();
    // Written so that a NaN product (0 × inf) is refused too.
    if !(top * weight <= WEIGHTED_LIMIT) {
        return Err(Error::WeightedOverflow { largest: top, weight, summed, limit: WEIGHTED_LIMIT, coordinates: None });
    }
    Ok(())
}

/// The refusal of a run whose clock stopped while it listed `listed`, before any `what`
/// ("cover", "plan") existed: every `what` is built from the complete lists (a set of sites
/// anywhere short of some meeting places does not dominate; coverage lists short of some
/// points leave them out), so none is made from part of them. A cancelled run's error is
/// never seen (the caller drops its outcome).
fn stopped_listing(clock: &Clock, listed: &str, what: &str) -> Error {
    if clock.watch.is_cancelled() {
        return cancelled("points");
    }
    Error::InvalidParameter {
        name: "time_limit",
        reason: format!(
            "the time limit passed while listing {listed}, before any {what} existed (every {what} is built from \
             the complete lists); allow more time, or none"
        ),
    }
}

/// Check an optional coverage radius: finite and positive.
fn check_radius(radius: f64) -> Result<()> {
    if !(radius > 0.0) || !radius.is_finite() {
        return Err(Error::InvalidParameter {
            name: "radius",
            reason: format!("must be finite and > 0; got {radius}"),
        });
    }
    Ok(())
}

/// Coverage within a radius: which points have an open site at cost `<= radius`.
#[derive(Debug, Clone, PartialEq)]
pub struct Coverage {
    /// The coverage standard.
    pub radius: f64,
    /// `covered[i]`: some open site costs at most `radius` from point `i`.
    pub covered: Vec<bool>,
    /// `covering[i]`: number of open sites within `radius` of point `i` (backup coverage;
    /// Hogan & ReVelle 1986).
    pub covering: Vec<usize>,
    /// Summed weight of the covered points.
    pub covered_weight: f64,
    /// `covered_weight` over the total weight.
    pub covered_share: f64,
}

/// The assignment of a point that no open site may serve.
pub const UNSERVED: usize = usize::MAX;

/// How a set of open candidates serves the demand, every point by its cheapest open site.
#[derive(Debug, Clone, PartialEq)]
pub struct SiteService {
    /// The open candidate columns, ascending.
    pub open: Vec<usize>,
    /// `fixed[k]`: open site `k` was given (kept), not chosen.
    pub fixed: Vec<bool>,
    /// `assignment[i]`: position in `open` of point `i`'s cheapest open site (the smallest
    /// column among equally cheap ones); [`UNSERVED`] when no open site may serve it (a
    /// sparse source without the pair), its cost then being infinite.
    pub assignment: Vec<usize>,
    /// `cost[i]`: cost from point `i` to its site.
    pub cost: Vec<f64>,
    /// `load[k]`: summed weight served by open site `k`.
    pub load: Vec<f64>,
    /// `count[k]`: number of points served by open site `k`.
    pub count: Vec<usize>,
    /// `Σ wᵢ · cost[i]` (compensated sum in point order).
    pub total_cost: f64,
    /// `total_cost / Σ wᵢ`.
    pub mean_cost: f64,
    /// `maxᵢ cost[i]`.
    pub worst_cost: f64,
    /// `maxᵢ wᵢ · cost[i]` (the p-center objective).
    pub weighted_worst: f64,
    /// `Σ wᵢ`.
    pub total_weight: f64,
    /// Coverage within the radius, where one was given.
    pub coverage: Option<Coverage>,
}

/// Row `i`'s cheapest site among the ascending columns `open` (`position[j]`: the place of
/// column `j` in `open`, [`UNSERVED`] when closed): `(place, cost, sites within radius)`,
/// the smallest column among equally cheap sites, `(UNSERVED, ∞, 0)` when no open site may
/// serve the row.
///
/// With a radius, the columns within it come from `listed` (a list holding every open column
/// within the radius of the row, as a model's coverage list does) or, for coordinates, from
/// the candidates' tree (the same distances as [`Costs::cost`]); when an open site is among
/// them, the cheapest of them is the cheapest open site (every other one is farther than the
/// radius). Otherwise, and for matrices, every open site is read.
fn nearest_open(
    costs: &Costs<'_>,
    open: &[usize],
    position: &[usize],
    i: usize,
    radius: Option<f64>,
    listed: Option<&[usize]>,
) -> (usize, f64, usize) {
    if let Some(r) = radius {
        let (mut best, mut at, mut within) = (f64::INFINITY, UNSERVED, 0);
        let mut visit = |j: usize, c: f64| {
            let k = position[j];
            if k != UNSERVED && c <= r {
                within += 1;
                // Neither source lists in column order: ties go to the smaller place.
                if c < best || (c == best && k < at) {
                    (best, at) = (c, k);
                }
            }
        };
        match (listed, costs) {
            (Some(list), _) => {
                list.iter().filter(|&&j| position[j] != UNSERVED).for_each(|&j| {
                    if let Some(c) = costs.cost(i, j) {
                        visit(j, c);
                    }
                });
            }
            (None, Costs::Planar(_)) => costs.for_each_within(i, r, visit),
            (None, _) => {}
        }
        if within > 0 {
            return (at, best, within);
        }
    }
    // Strict `<` keeps the smallest column among equally cheap sites (open is ascending).
    let (mut best, mut at, mut within) = (f64::INFINITY, UNSERVED, 0);
    for (k, &j) in open.iter().enumerate() {
        if let Some(c) = costs.cost(i, j) {
            if c < best {
                (best, at) = (c, k);
            }
            within += usize::from(radius.is_some_and(|r| c <= r));
        }
    }
    (at, best, within)
}

impl SiteService {
    /// The service of validated `costs` and `weights` by the distinct columns `open` (of
    /// which those in `fixed` were given).
    ///
    /// # Runtime
    /// O(n · |open|), over the threads; for coordinates with a radius, O(n · (candidates
    /// within the radius)) instead for every point some open site covers (the candidates'
    /// tree lists them; a set cover of 2,500 sites over 20,000 points took about a second
    /// by the full scan).
    fn of(costs: &Costs<'_>, weights: Weights<'_>, open: Vec<usize>, fixed: &[usize], radius: Option<f64>) -> Self {
        SiteService::of_listed(costs, weights, open, fixed, radius, &|_| None)
    }

    /// [`SiteService::of`] where `listed(i)`, when given, holds every open column within
    /// `radius` of row `i` (a coverage list of the model): those rows read only that list.
    fn of_listed<'l>(
        costs: &Costs<'_>,
        weights: Weights<'_>,
        mut open: Vec<usize>,
        fixed: &[usize],
        radius: Option<f64>,
        listed: &(dyn Fn(usize) -> Option<&'l [usize]> + Sync),
    ) -> Self {
        open.sort_unstable();
        let n = costs.rows();
        let (mut assignment, mut cost) = (Vec::with_capacity(n), Vec::with_capacity(n));
        let (mut load, mut count) = (vec![0.0; open.len()], vec![0usize; open.len()]);
        let (mut covered, mut covering) = (Vec::new(), Vec::new());
        let (mut total, mut total_weight, mut covered_weight) =
            (CompensatedSum::default(), CompensatedSum::default(), CompensatedSum::default());
        let (mut worst_cost, mut weighted_worst) = (0.0f64, 0.0f64);
        let mut infinite_total = false;
        let served: Vec<(usize, f64, usize)> = {
            use rayon::prelude::*;
            let mut position = vec![UNSERVED; costs.columns()];
            open.iter().enumerate().for_each(|(k, &j)| position[j] = k);
            (0..n).into_par_iter().map(|i| nearest_open(costs, &open, &position, i, radius, listed(i))).collect()
        };
        for (i, &(at, best, within)) in served.iter().enumerate() {
            let w = weights.get(i);
            assignment.push(at);
            cost.push(best);
            if at != UNSERVED {
                load[at] += w;
                count[at] += 1;
            }
            // A point of weight 0 adds nothing, even when no open site may serve it; one of
            // positive weight that none may serve, or whose weighted cost overflows, makes
            // the total +∞, as the IEEE sum of the terms is (added to the compensated sum,
            // ∞ − ∞ in its compensation gives NaN).
            if w > 0.0 {
                let term = w * best;
                if term.is_finite() {
                    total.add(term);
                } else {
                    infinite_total = true;
                }
            }
            total_weight.add(w);
            worst_cost = worst_cost.max(best);
            weighted_worst = weighted_worst.max(if w > 0.0 { w * best } else { 0.0 });
            if radius.is_some() {
                covering.push(within);
                covered.push(within > 0);
                if within > 0 {
                    covered_weight.add(w);
                }
            }
        }
        let total_weight = total_weight.total();
        let coverage = radius.map(|radius| {
            let covered_weight = covered_weight.total();
            Coverage { radius, covered, covering, covered_weight, covered_share: covered_weight / total_weight }
        });
        let fixed_flags = open.iter().map(|j| fixed.contains(j)).collect();
        let total = if infinite_total { f64::INFINITY } else { total.total() };
        SiteService {
            open,
            fixed: fixed_flags,
            assignment,
            cost,
            load,
            count,
            total_cost: total,
            mean_cost: total / total_weight,
            worst_cost,
            weighted_worst,
            total_weight,
            coverage,
        }
    }
}

/// How the open candidate columns `sites` serve the demand: every point's cheapest open
/// site and cost, every site's load, the totals and (with `radius`) the coverage.
///
/// The same numbers the models report, so a plan and the status quo compare line by line.
/// Every site in the result is marked `fixed` (it was given).
///
/// # Errors
/// [`Error::InvalidWeight`], [`Error::LengthMismatch`] or [`Error::AllWeightsZero`] for bad
/// weights; [`Error::InvalidParameter`] for no sites, a column out of range or repeated, or
/// a radius that is not finite and positive. A point that no given site may serve (a sparse
/// source) is reported with [`UNSERVED`] and an infinite cost, not refused.
pub fn evaluate_sites(
    costs: &Costs<'_>,
    weights: Weights<'_>,
    sites: &[usize],
    radius: Option<f64>,
) -> Result<SiteService> {
    crate::geometry::validate_weights("weights", weights, costs.rows())?;
    if sites.is_empty() {
        return Err(Error::InvalidParameter { name: "sites", reason: "must name at least one candidate".into() });
    }
    check_sites("sites", sites, costs.columns())?;
    if let Some(r) = radius {
        check_radius(r)?;
    }
    Ok(SiteService::of(costs, weights, sites.to_vec(), sites, radius))
}

/// `Σᵢ` of per-row contributions to `len` accumulators: `add(i, acc)` adds row `i`'s share.
/// Rows are split into fixed blocks summed in parallel and the block sums are added in block
/// order, so the result is the same whatever the number of threads (the models stay
/// deterministic).
fn sum_rows(rows: usize, len: usize, add: impl Fn(usize, &mut [f64]) + Sync) -> Vec<f64> {
    use rayon::prelude::*;
    // Blocks of rows whose size depends on the problem only (never on the thread count),
    // summed a wave of blocks at a time so that memory stays at WAVE accumulators.
    const WAVE: usize = 16;
    let block = 256.max(rows.div_ceil(256));
    let blocks = rows.div_ceil(block);
    let mut total = vec![0.0; len];
    for wave in (0..blocks).step_by(WAVE) {
        let sums: Vec<Vec<f64>> = (wave..(wave + WAVE).min(blocks))
            .into_par_iter()
            .map(|b| {
                let mut acc = vec![0.0; len];
                (b * block..((b + 1) * block).min(rows)).for_each(|i| add(i, &mut acc));
                acc
            })
            .collect();
        for sum in sums {
            total.iter_mut().zip(sum).for_each(|(t, v)| *t += v);
        }
    }
    total
}

/// Step-size control of subgradient optimisation (Held, Wolfe & Crowder 1974): the step is
/// `theta · (target − value) / ‖g‖²`, and `theta` starts at 2 and halves after 20 iterations
/// without a better value.
struct StepControl {
    theta: f64,
    stale: usize,
}

impl StepControl {
    fn new() -> StepControl {
        StepControl { theta: 2.0, stale: 0 }
    }

    /// Record whether this iteration's value improved on the best one.
    fn record(&mut self, improved: bool) {
        if improved {
            self.stale = 0;
        } else {
            self.stale += 1;
            if self.stale >= 20 {
                (self.theta, self.stale) = (self.theta / 2.0, 0);
            }
        }
    }

    /// True once the steps are too short to move the bound.
    fn exhausted(&self) -> bool {
        self.theta < 1e-4
    }
}

/// `(upper - lower) / upper`, 0 when both are 0: the share of the objective a proven bound
/// leaves open.
fn relative_gap(upper: f64, lower: f64) -> f64 {
    if upper > 0.0 {
        ((upper - lower) / upper).max(0.0)
    } else {
        0.0
    }
}

/// Brute-force references shared by the tests of this family.
#[cfg(test)]
pub(crate) mod testing {
    /// `Σᵢ wᵢ · minⱼ∈open values[i·m + j]`: the p-median cost of `open`, read straight from a
    /// dense row-major matrix of `m` columns (independent of the kernels' cost lists).
    pub(crate) fn median_total(values: &[f64], m: usize, w: &[f64], open: &[usize]) -> f64 {
        w.iter()
            .enumerate()
            .map(|(i, &wi)| wi * open.iter().map(|&j| values[i * m + j]).fold(f64::INFINITY, f64::min))
            .sum()
    }

    /// Every `p`-subset of the columns `0..m` (`m` ≤ 31), each in increasing order: the
    /// plans a brute-force reference enumerates.
    pub(crate) fn p_subsets(m: usize, p: usize) -> impl Iterator<Item = Vec<usize>> {
        assert!(m <= 31, "brute force over at most 31 columns");
        (0u32..1 << m)
            .filter(move |mask| mask.count_ones() as usize == p)
            .map(move |mask| (0..m).filter(|j| mask >> j & 1 == 1).collect())
    }

    /// The least [`median_total`] over every plan of the `fixed` sites and `p` others, by
    /// enumeration of every subset of the `m` columns (`m` ≤ 31).
    pub(crate) fn least_median_total(values: &[f64], m: usize, w: &[f64], p: usize, fixed: &[usize]) -> f64 {
        p_subsets(m, p)
            .filter(|set| !set.iter().any(|j| fixed.contains(j)))
            .map(|set| {
                let open: Vec<usize> = fixed.iter().chain(&set).copied().collect();
                median_total(values, m, w, &open)
            })
            .fold(f64::INFINITY, f64::min)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cancel::{RunLimits, Watch};

    #[test]
    fn weighted_costs_beyond_the_float_range_are_refused_not_called_optimal() {
        // Costs near 1e300 and a weight of 1e10: every plan's total overflows to infinity
        // (1e310), so no plan could be told from another and a gap of 0 was claimed.
        let values = [1e300, 2e300, 3e300, 1e300, 1.0, 2.0];
        let costs = Costs::from(CostMatrix::new(&values, 3, 2).unwrap());
        let w = [1e10, 1.0, 1.0];
        let options = DiscreteMedianOptions::default();
        for e in [
            discrete_p_median(&costs, Weights::Given(&w), 1, &[], &options).unwrap_err(),
            discrete_p_center(&costs, Weights::Given(&w), 1, &[], &RunLimits::default()).unwrap_err(),
        ] {
            assert!(matches!(e, Error::WeightedOverflow { coordinates: None, .. }), "{e}");
            assert!(e.to_string().contains("rescale"), "{e}");
        }
        // Rescaled by 1e-10 (closed form: site 0 costs 1e300 + 3e290 + 1, site 1 costs
        // 2e300 + 1e290 + 2), the same instance is answered, and exactly.
        let scaled: Vec<f64> = values.iter().map(|v| v * 1e-10).collect();
        let costs = Costs::from(CostMatrix::new(&scaled, 3, 2).unwrap());
        let plan = discrete_p_median(&costs, Weights::Given(&w), 1, &[], &options).unwrap();
        assert_eq!(plan.service.open, vec![0]);
        assert!(plan.service.total_cost.is_finite());
        // The p-center's objective is a largest product (3e290 × 1e10 at most): site 0, whose
        // worst is 1e10 × 1e290 against site 1's 2e300 (closed form).
        let center = discrete_p_center(&costs, Weights::Given(&w), 1, &[], &RunLimits::default()).unwrap();
        assert_eq!(center.service.open, vec![0]);
        assert!(center.service.weighted_worst.is_finite());
    }

    #[test]
    fn evaluation_of_a_hand_checked_network() {
        // Three points, three candidates; sites 0 and 2 open, radius 2.
        let values = [1.0, 5.0, 3.0, 4.0, 0.0, 2.0, 6.0, 1.0, 6.0];
        let costs = Costs::from(CostMatrix::new(&values, 3, 3).unwrap());
        let s = evaluate_sites(&costs, Weights::Given(&[1.0, 2.0, 1.0]), &[2, 0], Some(2.0)).unwrap();
        assert_eq!(s.open, vec![0, 2]);
        // Point 2 costs 6 from both: the smaller column (0) serves it.
        assert_eq!(s.assignment, vec![0, 1, 0]);
        assert_eq!(s.cost, vec![1.0, 2.0, 6.0]);
        assert_eq!((s.load.clone(), s.count.clone()), (vec![2.0, 2.0], vec![2, 1]));
        assert_eq!((s.total_cost, s.mean_cost, s.worst_cost, s.weighted_worst), (11.0, 2.75, 6.0, 6.0));
        let c = s.coverage.unwrap();
        assert_eq!((c.covering, c.covered_weight, c.covered_share), (vec![1, 1, 0], 3.0, 0.75));
    }

    #[test]
    fn bad_costs_name_the_cell() {
        let e = CostMatrix::new(&[1.0, 2.0, f64::NAN, 0.0], 2, 2).unwrap_err();
        assert_eq!(e.to_string(), "costs[1, 0] = NaN; every cost must be finite and >= 0");
        let e = CostMatrix::new(&[1.0, -1.0], 1, 2).unwrap_err();
        assert_eq!(e.to_string(), "costs[0, 1] = -1; every cost must be finite and >= 0");
        let costs = Costs::from(CostMatrix::new(&[1.0, 2.0], 1, 2).unwrap());
        assert!(evaluate_sites(&costs, Weights::Unit, &[2], None).is_err());
        assert!(evaluate_sites(&costs, Weights::Unit, &[1, 1], None).is_err());
        assert!(evaluate_sites(&costs, Weights::Unit, &[1], Some(0.0)).is_err());
        assert!(evaluate_sites(&costs, Weights::Given(&[1.0, 1.0]), &[1], None).is_err());
        assert!(check_choice(&costs, 3, &[]).is_err());
        assert!(check_choice(&costs, 2, &[]).is_ok());
        assert!(check_choice(&costs, 1, &[0]).is_ok());
        assert!(check_choice(&costs, 2, &[0]).is_err());
    }

    #[test]
    fn service_through_the_candidates_tree_equals_the_full_scan() {
        // Coordinates with a radius take the candidates within it from the tree; the full
        // scan of a dense matrix of the same distances is the reference. Candidates 0..4 sit
        // on one spot and 4..8 on another (ties: the smallest column serves), some points lie
        // beyond every radius (served by the full scan), some within several sites.
        let mut rng = crate::geometry::random::SplitMix64::new(5);
        let mut candidates: Vec<Point> = vec![[10.0, 10.0]; 4];
        candidates.extend(vec![[30.0, 10.0]; 4]);
        candidates.extend((0..24).map(|_| [rng.next_f64() * 60.0, rng.next_f64() * 60.0]));
        let points: Vec<Point> = (0..300).map(|_| [rng.next_f64() * 60.0, rng.next_f64() * 60.0]).collect();
        let values = euclidean_costs(&points, &candidates).unwrap();
        let dense = Costs::from(CostMatrix::new(&values, points.len(), candidates.len()).unwrap());
        let planar = Costs::from(PlanarCosts::new(&points, &candidates).unwrap());
        for (open, radius) in [(vec![3, 1, 6, 9, 20], 12.0), (vec![0, 2, 4, 5, 7, 11], 25.0), (vec![31], 2.0)] {
            let (a, b) = (
                evaluate_sites(&dense, Weights::Unit, &open, Some(radius)).unwrap(),
                evaluate_sites(&planar, Weights::Unit, &open, Some(radius)).unwrap(),
            );
            assert_eq!(a, b, "open {open:?}, radius {radius}");
            let c = a.coverage.as_ref().unwrap();
            assert!(c.covering.contains(&0), "some point is beyond every radius (the full scan)");
            if open.len() > 1 {
                assert!(c.covering.iter().any(|&k| k > 1), "some point is within several sites");
            }
        }
    }

    #[test]
    fn every_model_agrees_on_planar_and_dense_sources() {
        let mut rng = crate::geometry::random::SplitMix64::new(21);
        let points: Vec<Point> = (0..60).map(|_| [rng.next_f64() * 50.0, rng.next_f64() * 50.0]).collect();
        let candidates: Vec<Point> = (0..15).map(|_| [rng.next_f64() * 50.0, rng.next_f64() * 50.0]).collect();
        let w: Vec<f64> = (0..60).map(|_| 1.0 + (rng.next_f64() * 5.0).floor()).collect();
        let values = euclidean_costs(&points, &candidates).unwrap();
        let dense = Costs::from(CostMatrix::new(&values, 60, 15).unwrap());
        let planar = Costs::from(PlanarCosts::new(&points, &candidates).unwrap());
        let w = Weights::Given(&w);
        let opts = DiscreteMedianOptions::default();
        let none = RunLimits::default();
        for p in [1, 3, 5] {
            let (a, b) = (
                discrete_p_median(&dense, w, p, &[2], &opts).unwrap(),
                discrete_p_median(&planar, w, p, &[2], &opts).unwrap(),
            );
            assert_eq!((a.service.open, a.service.total_cost), (b.service.open, b.service.total_cost));
            let (a, b) = (
                discrete_p_center(&dense, w, p, &[], &none).unwrap(),
                discrete_p_center(&planar, w, p, &[], &none).unwrap(),
            );
            assert_eq!((a.service.weighted_worst, a.lower_bound), (b.service.weighted_worst, b.lower_bound));
            let (a, b) = (
                cover_most(&dense, w, p, 12.0, &[], &none).unwrap(),
                cover_most(&planar, w, p, 12.0, &[], &none).unwrap(),
            );
            assert_eq!((a.service.open, a.upper_bound), (b.service.open, b.upper_bound));
        }
        let (a, b) =
            (cover_all(&dense, w, 30.0, &[], &none).unwrap(), cover_all(&planar, w, 30.0, &[], &none).unwrap());
        assert_eq!((a.service.open, a.lower_bound), (b.service.open, b.lower_bound));
    }

    #[test]
    fn sparse_pairs_are_never_used_when_absent() {
        // Points 0..6 on a line, candidates on them; point i may use only candidates i and i ± 1.
        let (mut offsets, mut indices, mut values) = (vec![0], Vec::new(), Vec::new());
        for i in 0..6usize {
            for j in i.saturating_sub(1)..(i + 2).min(6) {
                indices.push(j);
                values.push((i as f64 - j as f64).abs());
            }
            offsets.push(indices.len());
        }
        let costs = Costs::from(SparseCosts::new(&offsets, &indices, &values, 6, 6).unwrap());
        let r = discrete_p_median(&costs, Weights::Unit, 2, &[], &DiscreteMedianOptions::default()).unwrap();
        // Hand-checked: sites 1 and 4 serve everyone at cost 1 each except themselves.
        assert_eq!((r.service.open.clone(), r.service.total_cost), (vec![1, 4], 4.0));
        let e = discrete_p_median(&costs, Weights::Unit, 1, &[], &DiscreteMedianOptions::default()).unwrap_err();
        assert!(e.to_string().contains("at least 2 are needed"), "{e}");
        let c = discrete_p_center(&costs, Weights::Unit, 2, &[], &RunLimits::default()).unwrap();
        assert_eq!((c.service.weighted_worst, c.lower_bound), (1.0, 1.0));
        // Evaluation of one site: points out of its reach are unserved, not refused.
        let s = evaluate_sites(&costs, Weights::Unit, &[0], None).unwrap();
        assert_eq!(s.assignment[3], UNSERVED);
        assert!(s.cost[3].is_infinite());
        // The totals are the IEEE sums of the per-point terms (the reference): +∞, not NaN.
        let summed: f64 = s.cost.iter().sum();
        assert_eq!((s.total_cost, s.mean_cost), (summed, summed / 6.0));
        assert_eq!(s.total_cost, f64::INFINITY);
    }

    #[test]
    fn stopped_runs_return_feasible_plans_with_valid_bounds_and_full_progress() {
        let mut rng = crate::geometry::random::SplitMix64::new(5);
        let points: Vec<Point> = (0..300).map(|_| [rng.next_f64() * 100.0, rng.next_f64() * 100.0]).collect();
        let candidates: Vec<Point> = (0..40).map(|_| [rng.next_f64() * 100.0, rng.next_f64() * 100.0]).collect();
        let costs = Costs::from(PlanarCosts::new(&points, &candidates).unwrap());
        let w = Weights::Unit;
        let (p, fixed, radius) = (4, [7], 20.0);
        // A run with no limit gives the reference objectives and bounds.
        let none = RunLimits::default();
        let median = discrete_p_median(&costs, w, p, &fixed, &DiscreteMedianOptions::default()).unwrap();
        let center = discrete_p_center(&costs, w, p, &fixed, &none).unwrap();
        // A zero time limit (expired at the first poll) and a cancelled watch both stop every
        // model at its first poll; the p-median and p-center still answer with p new sites
        // (every point served) and a bound that holds: on the same side of the full run's
        // plan as its own bound. The covering models stop while they list the coverage,
        // before any plan exists, and say so.
        let expired = || RunLimits::new(Some(0.0), Watch::new());
        let cancelled = || {
            let watch = Watch::new();
            watch.cancel();
            RunLimits::new(None, watch)
        };
        for limits in [expired(), cancelled()] {
            let options = DiscreteMedianOptions { limits: limits.clone(), ..Default::default() };
            let r = discrete_p_median(&costs, w, p, &fixed, &options).unwrap();
            assert_eq!((r.service.open.len(), r.bound_iterations), (p + 1, 0));
            assert!(r.service.open.contains(&7) && r.service.assignment.iter().all(|&a| a != UNSERVED));
            assert!(r.lower_bound <= median.service.total_cost && r.service.total_cost >= median.lower_bound);
            assert!(r.relative_gap > 0.0);
            let r = discrete_p_center(&costs, w, p, &fixed, &limits).unwrap();
            assert_eq!(r.service.open.len(), p + 1);
            assert!(r.lower_bound <= center.service.weighted_worst);
            assert!(r.service.weighted_worst >= center.lower_bound);
            for r in [
                cover_most(&costs, w, p, radius, &fixed, &limits).map(|_| ()),
                cover_all(&costs, w, 60.0, &fixed, &limits).map(|_| ()),
            ] {
                let e = r.unwrap_err();
                if limits.watch.is_cancelled() {
                    assert!(e.to_string().contains("cancelled"), "{e}");
                } else {
                    assert!(matches!(e, Error::InvalidParameter { name: "time_limit", .. }), "{e}");
                }
            }
            // Every model closed its count at its total.
            let (done, total) = limits.watch.progress();
            assert!(total > 0 && done == total, "{done} of {total}");
        }
    }

    #[test]
    fn euclidean_costs_row_major() {
        let c = euclidean_costs(&[[0.0, 0.0], [3.0, 4.0]], &[[0.0, 0.0], [3.0, 0.0]]).unwrap();
        assert_eq!(c, vec![0.0, 3.0, 5.0, 4.0]);
    }
}
