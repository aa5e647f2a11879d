//! Where the costs come from: one [`Costs`] source behind every discrete model.
//!
//! A model asks a source three things — the allowed candidates of a demand row with their
//! costs ([`Costs::for_each`]), the cost of one pair ([`Costs::cost`]) and the candidates
//! within a radius ([`Costs::for_each_within`]) — so the same kernel runs on
//!
//! - [`CostMatrix`]: a dense `n × m` matrix, every pair allowed;
//! - [`SparseCosts`]: a compressed sparse row (CSR) matrix storing only the allowed pairs; a
//!   pair that is not stored may not be used (a forbidden assignment);
//! - [`PlanarCosts`]: straight-line distances computed on demand from point and candidate
//!   coordinates, with the candidates in an R*-tree (Beckmann et al. 1990, on `rstar`) for
//!   the candidates within a radius, so no `n × m` matrix is ever held.

use crate::cancel::free_aside;
use crate::error::{Error, Result};
use crate::geometry::{distance, validate_points, LocalTree, Point, WorkingFrame};

/// A dense row-major `rows × columns` matrix of finite, non-negative costs: row `i` is a
/// demand point, column `j` a candidate site.
#[derive(Debug, Clone, Copy)]
pub struct CostMatrix<'a> {
    values: &'a [f64],
    rows: usize,
    columns: usize,
}

/// Check that both dimensions of a cost source are non-empty.
fn check_shape(rows: usize, columns: usize) -> Result<()> {
    if rows == 0 {
        return Err(Error::TooFewPoints { argument: "costs", needed: 1, got: 0, counted: "demand rows" });
    }
    if columns == 0 {
        return Err(Error::TooFewPoints { argument: "costs", needed: 1, got: 0, counted: "candidate columns" });
    }
    Ok(())
}

/// `!(v >= 0.0)` also catches NaN.
fn bad_cost(v: f64) -> bool {
    !(v >= 0.0) || !v.is_finite()
}

impl<'a> CostMatrix<'a> {
    /// Check and wrap `values` (row-major, `rows × columns`).
    ///
    /// # Errors
    /// [`Error::TooFewPoints`] for an empty dimension; [`Error::InvalidParameter`] naming
    /// `costs` for a length that does not match the shape; [`Error::InvalidCost`] naming the
    /// cell `costs[row, column]` of the first NaN, infinite or negative cost.
    pub fn new(values: &'a [f64], rows: usize, columns: usize) -> Result<CostMatrix<'a>> {
        check_shape(rows, columns)?;
        if values.len() != rows * columns {
            return Err(Error::InvalidParameter {
                name: "costs",
                reason: format!("{} values do not fill a {rows} × {columns} matrix", values.len()),
            });
        }
        if let Some(k) = values.iter().position(|&v| bad_cost(v)) {
            return Err(Error::InvalidCost {
                argument: "costs",
                row: k / columns,
                column: k % columns,
                value: values[k],
            });
        }
        Ok(CostMatrix { values, rows, columns })
    }

    /// The costs of demand point `i` to every candidate.
    #[inline]
    fn row(&self, i: usize) -> &'a [f64] {
        &self.values[i * self.columns..(i + 1) * self.columns]
    }
}

/// The allowed pairs of a `rows × columns` cost matrix in compressed sparse row form: the
/// candidates of row `i` are `indices[offsets[i]..offsets[i + 1]]` (strictly ascending) with
/// costs `values[..]` at the same positions. A stored zero is an allowed pair costing 0.
#[derive(Debug, Clone, Copy)]
pub struct SparseCosts<'a> {
    offsets: &'a [usize],
    indices: &'a [usize],
    values: &'a [f64],
    columns: usize,
}

impl<'a> SparseCosts<'a> {
    /// Check and wrap a CSR matrix.
    ///
    /// # Errors
    /// [`Error::TooFewPoints`] for an empty dimension; [`Error::InvalidParameter`] naming
    /// `costs` for offsets or indices that do not describe a `rows × columns` matrix, or a
    /// pair stored twice; [`Error::InvalidCost`] for a NaN, infinite or negative cost;
    /// [`Error::NoCandidate`] naming the first demand row that stores no pair.
    pub fn new(
        offsets: &'a [usize],
        indices: &'a [usize],
        values: &'a [f64],
        rows: usize,
        columns: usize,
    ) -> Result<SparseCosts<'a>> {
        check_shape(rows, columns)?;
        let malformed = |reason: String| Error::InvalidParameter { name: "costs", reason };
        if offsets.len() != rows + 1 || offsets[0] != 0 || offsets[rows] != indices.len() {
            return Err(malformed(format!(
                "row offsets do not describe {rows} rows of {} stored pairs",
                indices.len()
            )));
        }
        if indices.len() != values.len() {
            return Err(malformed(format!("{} columns for {} stored costs", indices.len(), values.len())));
        }
        for i in 0..rows {
            let (a, b) = (offsets[i], offsets[i + 1]);
            if a > b {
                return Err(malformed(format!("row offsets decrease at row {i}")));
            }
            if a == b {
                return Err(Error::NoCandidate { argument: "costs", row: i });
            }
            for k in a..b {
                let j = indices[k];
                if j >= columns {
                    return Err(malformed(format!("row {i} stores column {j}; there are {columns} candidates")));
                }
                if k > a && j <= indices[k - 1] {
                    return Err(malformed(format!(
                        "row {i} stores column {j} twice or out of order; store each allowed pair once, columns ascending"
                    )));
                }
                if bad_cost(values[k]) {
                    return Err(Error::InvalidCost { argument: "costs", row: i, column: j, value: values[k] });
                }
            }
        }
        Ok(SparseCosts { offsets, indices, values, columns })
    }

    fn range(&self, i: usize) -> std::ops::Range<usize> {
        self.offsets[i]..self.offsets[i + 1]
    }
}

/// The straight-line cost of serving `point` from `site`: every cost of the planar sources
/// (the dense matrix of [`super::euclidean_costs`] and [`PlanarCosts`]). A site covers a
/// point within a radius when this cost is at most the radius — the test of the covering
/// models and of evaluating sites — so whatever else decides coverage on coordinates (the
/// dominating set) asks this function too.
#[inline]
pub(crate) fn planar_cost(point: Point, site: Point) -> f64 {
    distance(point, site)
}

/// Straight-line costs between demand points and candidate sites, computed when asked.
#[derive(Debug, Clone)]
pub struct PlanarCosts<'a> {
    points: &'a [Point],
    candidates: &'a [Point],
    /// The candidates in the working frame of the points and candidates.
    tree: LocalTree,
    ceiling: f64,
}

impl<'a> PlanarCosts<'a> {
    /// Check the coordinates and index the candidates.
    ///
    /// # Errors
    /// [`Error::NonFiniteCoordinate`] or [`Error::TooFewPoints`] for bad `points` or
    /// `candidates`.
    ///
    /// # Runtime
    /// O(m log m) for the tree.
    pub fn new(points: &'a [Point], candidates: &'a [Point]) -> Result<PlanarCosts<'a>> {
        validate_points("points", points, 1)?;
        validate_points("candidates", candidates, 1)?;
        let tree = LocalTree::new(candidates, WorkingFrame::of(points).holding(candidates));
        // The diagonal of the joint bounding box bounds every distance.
        let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
        for p in points.iter().chain(candidates) {
            for d in 0..2 {
                lo[d] = lo[d].min(p[d]);
                hi[d] = hi[d].max(p[d]);
            }
        }
        let ceiling = distance(lo, hi) * (1.0 + 1e-9);
        Ok(PlanarCosts { points, candidates, tree, ceiling })
    }
}

/// Largest cost matrix [`with_planar_costs`] holds in memory (cells, 8 bytes each: 200 MB);
/// above it the distances are computed when asked.
pub const PLANAR_DENSE_CELLS: usize = 25_000_000;

/// A source of demand × candidate costs: which pairs are allowed and what they cost.
#[derive(Debug, Clone)]
pub enum Costs<'a> {
    /// Every pair, from a dense matrix.
    Dense(CostMatrix<'a>),
    /// The stored pairs of a sparse matrix.
    Sparse(SparseCosts<'a>),
    /// Straight-line distances from coordinates.
    Planar(PlanarCosts<'a>),
}

impl<'a> From<CostMatrix<'a>> for Costs<'a> {
    fn from(m: CostMatrix<'a>) -> Self {
        Costs::Dense(m)
    }
}

impl<'a> From<SparseCosts<'a>> for Costs<'a> {
    fn from(m: SparseCosts<'a>) -> Self {
        Costs::Sparse(m)
    }
}

impl<'a> From<PlanarCosts<'a>> for Costs<'a> {
    fn from(m: PlanarCosts<'a>) -> Self {
        Costs::Planar(m)
    }
}

impl Costs<'_> {
    /// Number of demand points (rows).
    pub fn rows(&self) -> usize {
        match self {
            Costs::Dense(c) => c.rows,
            Costs::Sparse(c) => c.offsets.len() - 1,
            Costs::Planar(c) => c.points.len(),
        }
    }

    /// Number of candidates (columns).
    pub fn columns(&self) -> usize {
        match self {
            Costs::Dense(c) => c.columns,
            Costs::Sparse(c) => c.columns,
            Costs::Planar(c) => c.candidates.len(),
        }
    }

    /// True when every pair is allowed.
    pub fn is_complete(&self) -> bool {
        !matches!(self, Costs::Sparse(_))
    }

    /// `f(j, cost)` for every allowed candidate `j` of row `i`, columns ascending.
    #[inline]
    pub fn for_each(&self, i: usize, mut f: impl FnMut(usize, f64)) {
        match self {
            Costs::Dense(c) => c.row(i).iter().enumerate().for_each(|(j, &v)| f(j, v)),
            Costs::Sparse(c) => {
                let r = c.range(i);
                c.indices[r.clone()].iter().zip(&c.values[r]).for_each(|(&j, &v)| f(j, v));
            }
            Costs::Planar(c) => {
                let a = c.points[i];
                c.candidates.iter().enumerate().for_each(|(j, &s)| f(j, planar_cost(a, s)));
            }
        }
    }

    /// `f(j, cost)` for every allowed candidate `j` of row `i` with `cost <= radius`, in
    /// no particular order. The planar source asks its tree, then keeps exactly the pairs
    /// whose [`planar_cost`] is within `radius`, so it agrees with [`Costs::for_each`].
    pub fn for_each_within(&self, i: usize, radius: f64, mut f: impl FnMut(usize, f64)) {
        match self {
            Costs::Planar(c) if radius.is_finite() => {
                let a = c.points[i];
                for j in c.tree.within(a, radius) {
                    let d = planar_cost(a, c.candidates[j]);
                    if d <= radius {
                        f(j, d);
                    }
                }
            }
            _ => self.for_each(i, |j, v| {
                if v <= radius {
                    f(j, v)
                }
            }),
        }
    }

    /// The cost of serving row `i` from column `j`, `None` when the pair is not allowed.
    #[inline]
    pub fn cost(&self, i: usize, j: usize) -> Option<f64> {
        match self {
            Costs::Dense(c) => Some(c.values[i * c.columns + j]),
            Costs::Sparse(c) => {
                let r = c.range(i);
                c.indices[r.clone()].binary_search(&j).ok().map(|k| c.values[r.start + k])
            }
            Costs::Planar(c) => Some(planar_cost(c.points[i], c.candidates[j])),
        }
    }

    /// The cheapest allowed candidate of row `i` (smallest column among equally cheap) and
    /// its cost; every row has one.
    pub fn cheapest(&self, i: usize) -> (usize, f64) {
        if let Costs::Planar(c) = self {
            let a = c.points[i];
            let near = c.tree.nearest(a).expect("a candidate");
            let d = planar_cost(a, c.candidates[near]);
            // Every candidate as near in the caller's units (ties, and the frame's rounding):
            // the smallest column.
            let mut best = (near, d);
            for j in c.tree.within(a, d) {
                let e = planar_cost(a, c.candidates[j]);
                if e < best.1 || (e == best.1 && j < best.0) {
                    best = (j, e);
                }
            }
            return best;
        }
        let mut best = (usize::MAX, f64::INFINITY);
        self.for_each(i, |j, v| {
            if v < best.1 {
                best = (j, v);
            }
        });
        best
    }

    /// A value at or above every allowed cost.
    pub fn ceiling(&self) -> f64 {
        match self {
            Costs::Dense(c) => c.values.iter().copied().fold(0.0, f64::max),
            Costs::Sparse(c) => c.values.iter().copied().fold(0.0, f64::max),
            Costs::Planar(c) => c.ceiling,
        }
    }
}

/// Run `f` on the straight-line costs from `points` to `candidates`: a dense matrix when it
/// holds at most [`PLANAR_DENSE_CELLS`] cells (every pass then reads memory), otherwise
/// distances computed when asked (no `n × m` matrix is held).
///
/// # Errors
/// Bad coordinates (see [`PlanarCosts::new`]), and whatever `f` returns.
pub fn with_planar_costs<T>(
    points: &[Point],
    candidates: &[Point],
    f: impl FnOnce(&Costs<'_>) -> Result<T>,
) -> Result<T> {
    if points.len().saturating_mul(candidates.len()) <= PLANAR_DENSE_CELLS {
        let values = super::euclidean_costs(points, candidates)?;
        let matrix = CostMatrix::new(&values, points.len(), candidates.len())?;
        f(&Costs::Dense(matrix))
    } else {
        let costs = Costs::Planar(PlanarCosts::new(points, candidates)?);
        let answer = f(&costs);
        if let Costs::Planar(planar) = costs {
            // One allocation per node, and a bulk-loaded node holds up to six entries (rstar's
            // default): about one per five candidates. Freed aside when that is many, so a
            // stopped run returns at its stop.
            free_aside(planar.tree.into_tree(), candidates.len() / 5);
        }
        answer
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::random::SplitMix64;

    fn pairs(c: &Costs<'_>, i: usize) -> Vec<(usize, f64)> {
        let mut v = Vec::new();
        c.for_each(i, |j, x| v.push((j, x)));
        v
    }

    #[test]
    fn every_source_gives_the_same_pairs() {
        let mut rng = SplitMix64::new(5);
        let points: Vec<Point> = (0..40).map(|_| [rng.next_f64() * 10.0, rng.next_f64() * 10.0]).collect();
        let candidates: Vec<Point> = (0..9).map(|_| [rng.next_f64() * 10.0, rng.next_f64() * 10.0]).collect();
        let dense_values = super::super::euclidean_costs(&points, &candidates).unwrap();
        let dense = Costs::from(CostMatrix::new(&dense_values, 40, 9).unwrap());
        let planar = Costs::from(PlanarCosts::new(&points, &candidates).unwrap());
        let offsets: Vec<usize> = (0..=40).map(|i| i * 9).collect();
        let indices: Vec<usize> = (0..40 * 9).map(|k| k % 9).collect();
        let sparse = Costs::from(SparseCosts::new(&offsets, &indices, &dense_values, 40, 9).unwrap());
        for i in 0..40 {
            assert_eq!(pairs(&dense, i), pairs(&planar, i));
            assert_eq!(pairs(&dense, i), pairs(&sparse, i));
            for r in [0.5, 2.0, 4.0, 20.0] {
                // Independent: the filter of the full row against the tree query.
                let mut want: Vec<usize> = pairs(&dense, i).into_iter().filter(|p| p.1 <= r).map(|p| p.0).collect();
                let mut got = Vec::new();
                planar.for_each_within(i, r, |j, _| got.push(j));
                got.sort_unstable();
                want.sort_unstable();
                assert_eq!(got, want);
            }
            assert_eq!(dense.cheapest(i), planar.cheapest(i));
            assert_eq!(sparse.cost(i, 3), dense.cost(i, 3));
            assert!(planar.ceiling() >= pairs(&dense, i).iter().map(|p| p.1).fold(0.0, f64::max));
        }
    }

    #[test]
    fn the_planar_tree_agrees_with_every_pair_at_extreme_scales() {
        // The tree once held the caller's coordinates and compared squared distances: scaled
        // by 2^-540 every square underflowed (to 0 or a subnormal), so a radius query missed
        // pairs within the radius and the nearest candidate was picked among rounded zeros.
        // Reference: the full row filtered by `distance` (hypot, which neither overflows nor
        // underflows), i.e. brute force over all pairs.
        let mut rng = SplitMix64::new(11);
        let base_points: Vec<Point> = (0..60).map(|_| [rng.next_f64() * 10.0, rng.next_f64() * 10.0]).collect();
        let base_candidates: Vec<Point> = (0..15).map(|_| [rng.next_f64() * 10.0, rng.next_f64() * 10.0]).collect();
        for scale in [2f64.powi(-540), 2f64.powi(-1000), 1e-300, 1.0, 1e200, 2f64.powi(540), 1e300] {
            let points: Vec<Point> = base_points.iter().map(|p| [p[0] * scale, p[1] * scale]).collect();
            let candidates: Vec<Point> = base_candidates.iter().map(|p| [p[0] * scale, p[1] * scale]).collect();
            let planar = Costs::from(PlanarCosts::new(&points, &candidates).unwrap());
            for i in 0..points.len() {
                let row = pairs(&planar, i);
                for r in [0.5, 2.0, 4.0, 20.0] {
                    let radius = r * scale;
                    let mut want: Vec<usize> = row.iter().filter(|p| p.1 <= radius).map(|p| p.0).collect();
                    let mut got = Vec::new();
                    planar.for_each_within(i, radius, |j, _| got.push(j));
                    got.sort_unstable();
                    want.sort_unstable();
                    assert_eq!(got, want, "scale {scale:e}, point {i}, radius {r}");
                }
                let least = row.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
                let first = row.iter().find(|p| p.1 == least).unwrap();
                assert_eq!(planar.cheapest(i), (first.0, first.1), "scale {scale:e}, point {i}");
            }
        }
    }

    #[test]
    fn a_pair_whose_squares_are_subnormal_is_within_its_radius() {
        // Closed form: a candidate at (c, c) with c = √0.6 · 2^-537 lies at √1.2 · 2^-537 from
        // the origin, inside a radius of √1.3 · 2^-537. In the caller's units each square is
        // 0.6 of the least subnormal, so the tree's squared distance rounded to 2 of them
        // against 1 for the squared radius, and the pair was missed.
        let unit = 2f64.powi(-537);
        let c = 0.6f64.sqrt() * unit;
        let points = [[0.0, 0.0], [4.0 * unit, 0.0]];
        let candidates = [[c, c], [9.0 * unit, 9.0 * unit]];
        let planar = Costs::from(PlanarCosts::new(&points, &candidates).unwrap());
        let radius = 1.3f64.sqrt() * unit;
        assert!(distance(points[0], candidates[0]) <= radius);
        let mut got = Vec::new();
        planar.for_each_within(0, radius, |j, d| got.push((j, d)));
        assert_eq!(got, vec![(0, distance(points[0], candidates[0]))]);
        assert_eq!(planar.cheapest(0).0, 0);
    }

    #[test]
    fn malformed_sparse_input_is_named() {
        let e = SparseCosts::new(&[0, 1, 1], &[0], &[1.0], 2, 2).unwrap_err();
        assert_eq!(e.to_string(), "costs: points[1] has no allowed candidate (its row stores no cost)");
        let e = SparseCosts::new(&[0, 2], &[1, 1], &[1.0, 2.0], 1, 2).unwrap_err();
        assert!(e.to_string().contains("twice or out of order"), "{e}");
        let e = SparseCosts::new(&[0, 1], &[2], &[1.0], 1, 2).unwrap_err();
        assert!(e.to_string().contains("stores column 2"), "{e}");
        let e = SparseCosts::new(&[0, 1], &[1], &[f64::NAN], 1, 2).unwrap_err();
        assert_eq!(e.to_string(), "costs[0, 1] = NaN; every cost must be finite and >= 0");
        let s = Costs::from(SparseCosts::new(&[0, 1], &[1], &[3.0], 1, 2).unwrap());
        assert_eq!((s.cost(0, 0), s.cost(0, 1), s.cheapest(0)), (None, Some(3.0), (1, 3.0)));
    }
}
