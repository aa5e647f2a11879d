//! Discrete location on a demand × candidate cost matrix.
//!
//! The sites must be chosen among `m` candidates, and the cost of serving demand point `i`
//! from candidate `j` is any non-negative number `costs[i, j]` (travel time, road distance,
//! straight-line distance from [`euclidean_costs`]):
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
mod median;

pub use center::{discrete_p_center, DiscreteCenter};
pub use cover::{cover_all, cover_most, CoverAll, CoverMost};
pub use median::{discrete_p_median, DiscreteMedian, DiscreteMedianOptions};

use crate::error::{Error, Result};
use crate::geometry::{distance, validate_points, CompensatedSum, Point, Weights};

/// Largest cost matrix [`euclidean_costs`] builds (cells): 8 bytes each, so about 800 MB.
pub const MAX_COST_CELLS: usize = 100_000_000;

/// A dense row-major `rows × columns` matrix of finite, non-negative costs: row `i` is a
/// demand point, column `j` a candidate site.
#[derive(Debug, Clone, Copy)]
pub struct CostMatrix<'a> {
    values: &'a [f64],
    rows: usize,
    columns: usize,
}

impl<'a> CostMatrix<'a> {
    /// Check and wrap `values` (row-major, `rows × columns`).
    ///
    /// # Errors
    /// [`Error::TooFewPoints`] for an empty dimension; [`Error::InvalidParameter`] naming
    /// `costs` for a length that does not match the shape; [`Error::InvalidCost`] naming the
    /// cell `costs[row, column]` of the first NaN, infinite or negative cost.
    pub fn new(values: &'a [f64], rows: usize, columns: usize) -> Result<CostMatrix<'a>> {
        if rows == 0 {
            return Err(Error::TooFewPoints { argument: "costs", needed: 1, got: 0, counted: "demand rows" });
        }
        if columns == 0 {
            return Err(Error::TooFewPoints { argument: "costs", needed: 1, got: 0, counted: "candidate columns" });
        }
        if values.len() != rows * columns {
            return Err(Error::InvalidParameter {
                name: "costs",
                reason: format!("{} values do not fill a {rows} × {columns} matrix", values.len()),
            });
        }
        // `!(v >= 0.0)` also catches NaN.
        if let Some(k) = values.iter().position(|&v| !(v >= 0.0) || !v.is_finite()) {
            return Err(Error::InvalidCost {
                argument: "costs",
                row: k / columns,
                column: k % columns,
                value: values[k],
            });
        }
        Ok(CostMatrix { values, rows, columns })
    }

    /// Number of demand points (rows).
    pub fn rows(&self) -> usize {
        self.rows
    }

    /// Number of candidates (columns).
    pub fn columns(&self) -> usize {
        self.columns
    }

    /// The costs of demand point `i` to every candidate.
    #[inline]
    pub(crate) fn row(&self, i: usize) -> &'a [f64] {
        &self.values[i * self.columns..(i + 1) * self.columns]
    }

    /// The largest cost in the matrix.
    fn max_cost(&self) -> f64 {
        self.values.iter().copied().fold(0.0, f64::max)
    }
}

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
    Ok(points.iter().flat_map(|&a| candidates.iter().map(move |&c| distance(a, c))).collect())
}

/// Check that `sites` are distinct candidate columns below `columns`.
fn check_sites(argument: &'static str, sites: &[usize], columns: usize) -> Result<()> {
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
fn check_choice(costs: &CostMatrix<'_>, p: usize, fixed: &[usize]) -> Result<()> {
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

/// How a set of open candidates serves the demand, every point by its cheapest open site.
#[derive(Debug, Clone, PartialEq)]
pub struct SiteService {
    /// The open candidate columns, ascending.
    pub open: Vec<usize>,
    /// `fixed[k]`: open site `k` was given (kept), not chosen.
    pub fixed: Vec<bool>,
    /// `assignment[i]`: position in `open` of point `i`'s cheapest open site (the smallest
    /// column among equally cheap ones).
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

impl SiteService {
    /// The service of validated `costs` and `weights` by the distinct columns `open` (of
    /// which those in `fixed` were given).
    ///
    /// # Runtime
    /// O(n · |open|).
    fn of(
        costs: &CostMatrix<'_>,
        weights: Weights<'_>,
        mut open: Vec<usize>,
        fixed: &[usize],
        radius: Option<f64>,
    ) -> Self {
        open.sort_unstable();
        let n = costs.rows();
        let (mut assignment, mut cost) = (Vec::with_capacity(n), Vec::with_capacity(n));
        let (mut load, mut count) = (vec![0.0; open.len()], vec![0usize; open.len()]);
        let (mut covered, mut covering) = (Vec::new(), Vec::new());
        let (mut total, mut total_weight, mut covered_weight) =
            (CompensatedSum::default(), CompensatedSum::default(), CompensatedSum::default());
        let (mut worst_cost, mut weighted_worst) = (0.0f64, 0.0f64);
        for i in 0..n {
            let row = costs.row(i);
            let w = weights.get(i);
            // Strict `<` keeps the smallest column among equally cheap sites (open is ascending).
            let (mut best, mut at) = (f64::INFINITY, 0);
            for (k, &j) in open.iter().enumerate() {
                if row[j] < best {
                    (best, at) = (row[j], k);
                }
            }
            assignment.push(at);
            cost.push(best);
            load[at] += w;
            count[at] += 1;
            total.add(w * best);
            total_weight.add(w);
            worst_cost = worst_cost.max(best);
            weighted_worst = weighted_worst.max(w * best);
            if let Some(r) = radius {
                let c = open.iter().filter(|&&j| row[j] <= r).count();
                covering.push(c);
                covered.push(c > 0);
                if c > 0 {
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
        SiteService {
            open,
            fixed: fixed_flags,
            assignment,
            cost,
            load,
            count,
            total_cost: total.total(),
            mean_cost: total.total() / total_weight,
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
/// a radius that is not finite and positive.
pub fn evaluate_sites(
    costs: &CostMatrix<'_>,
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
    const BLOCK: usize = 256;
    let blocks: Vec<Vec<f64>> = (0..rows.div_ceil(BLOCK))
        .into_par_iter()
        .map(|b| {
            let mut acc = vec![0.0; len];
            (b * BLOCK..((b + 1) * BLOCK).min(rows)).for_each(|i| add(i, &mut acc));
            acc
        })
        .collect();
    let mut total = vec![0.0; len];
    for block in blocks {
        total.iter_mut().zip(block).for_each(|(t, v)| *t += v);
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn evaluation_of_a_hand_checked_network() {
        // Three points, three candidates; sites 0 and 2 open, radius 2.
        let values = [1.0, 5.0, 3.0, 4.0, 0.0, 2.0, 6.0, 1.0, 6.0];
        let costs = CostMatrix::new(&values, 3, 3).unwrap();
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
        let costs = CostMatrix::new(&[1.0, 2.0], 1, 2).unwrap();
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
    fn euclidean_costs_row_major() {
        let c = euclidean_costs(&[[0.0, 0.0], [3.0, 4.0]], &[[0.0, 0.0], [3.0, 0.0]]).unwrap();
        assert_eq!(c, vec![0.0, 3.0, 5.0, 4.0]);
    }
}
