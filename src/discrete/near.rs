//! Every demand point's cheapest candidates in ascending cost, held once and read by every
//! pass of the p-median search and bound.
//!
//! The swap interchange only looks at candidates cheaper than a point's second open site and
//! the Lagrangian function only at pairs of negative reduced cost, both a short prefix of the
//! point's candidates in cost order; reading that prefix instead of the whole row makes a
//! pass cost O(n · prefix) instead of O(n · m). A row holds at most a fixed number of
//! candidates; `limit[i]` records how far it is complete, and a question beyond it falls
//! back to the source itself, so every answer is exact.

use rayon::prelude::*;

use super::Costs;

/// The cheapest candidates of every row in ascending cost (ties: ascending column).
pub(super) struct NearLists {
    offsets: Vec<usize>,
    columns: Vec<u32>,
    costs: Vec<f64>,
    /// Every allowed pair of row `i` costing less than `limit[i]` is listed (infinite when
    /// the whole row is).
    limit: Vec<f64>,
}

impl NearLists {
    /// The `keep` cheapest allowed candidates of every row (all of them when `keep` is at
    /// least the row's length), and every candidate tied with the last one kept.
    ///
    /// # Runtime
    /// O(n · m) to read the rows, O(n · keep · log keep) to order them.
    pub(super) fn new(costs: &Costs<'_>, keep: usize) -> NearLists {
        let keep = keep.max(1);
        let rows: Vec<(Vec<(f64, u32)>, f64)> = (0..costs.rows())
            .into_par_iter()
            .map(|i| {
                let mut row: Vec<(f64, u32)> = Vec::new();
                costs.for_each(i, |j, c| row.push((c, j as u32)));
                let by_cost = |a: &(f64, u32), b: &(f64, u32)| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1));
                if row.len() <= keep {
                    row.sort_unstable_by(by_cost);
                    return (row, f64::INFINITY);
                }
                row.select_nth_unstable_by(keep, by_cost);
                // The first candidate left out bounds what is listed: every pair cheaper than
                // it is among the `keep` first; those as cheap as it are dropped.
                let limit = row[keep].0;
                row.truncate(keep);
                row.retain(|&(c, _)| c < limit);
                row.sort_unstable_by(by_cost);
                (row, limit)
            })
            .collect();
        let total = rows.iter().map(|(r, _)| r.len()).sum();
        let mut near = NearLists {
            offsets: Vec::with_capacity(rows.len() + 1),
            columns: Vec::with_capacity(total),
            costs: Vec::with_capacity(total),
            limit: Vec::with_capacity(rows.len()),
        };
        near.offsets.push(0);
        for (row, limit) in rows {
            for (c, j) in row {
                near.costs.push(c);
                near.columns.push(j);
            }
            near.offsets.push(near.costs.len());
            near.limit.push(limit);
        }
        near
    }

    /// The number of rows.
    #[inline]
    pub(super) fn rows(&self) -> usize {
        self.limit.len()
    }

    /// The number of pairs listed over all rows.
    pub(super) fn pairs(&self) -> usize {
        self.columns.len()
    }

    /// How far row `i` is complete: every allowed pair costing less is listed.
    #[inline]
    pub(super) fn limit(&self, i: usize) -> f64 {
        self.limit[i]
    }

    /// The listed candidates of row `i`, ascending in cost.
    #[inline]
    pub(super) fn row(&self, i: usize) -> (&[u32], &[f64]) {
        let r = self.offsets[i]..self.offsets[i + 1];
        (&self.columns[r.clone()], &self.costs[r])
    }

    /// `f(j, cost)` for every allowed candidate `j` of row `i` with `cost < below` (in
    /// ascending cost when the list answers, in no particular order when the source does).
    #[inline]
    pub(super) fn for_each_below(&self, costs: &Costs<'_>, i: usize, below: f64, mut f: impl FnMut(usize, f64)) {
        if below <= self.limit[i] {
            let (columns, values) = self.row(i);
            for (&j, &c) in columns.iter().zip(values) {
                if c >= below {
                    break;
                }
                f(j as usize, c);
            }
        } else {
            costs.for_each_within(i, below, |j, c| {
                if c < below {
                    f(j, c)
                }
            });
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::discrete::CostMatrix;

    #[test]
    fn answers_match_the_source_inside_and_beyond_the_lists() {
        let mut rng = crate::geometry::random::SplitMix64::new(5);
        let (n, m) = (20, 30);
        // Rounded costs so that ties occur.
        let values: Vec<f64> = (0..n * m).map(|_| (rng.next_f64() * 10.0).round()).collect();
        let costs = Costs::from(CostMatrix::new(&values, n, m).unwrap());
        for keep in [1, 4, 29, 30, 40] {
            let near = NearLists::new(&costs, keep);
            for i in 0..n {
                for below in [0.0, 0.5, 3.0, 5.0, 10.0, 11.0] {
                    let mut ours = Vec::new();
                    near.for_each_below(&costs, i, below, |j, c| ours.push((j, c)));
                    ours.sort_by_key(|a| a.0);
                    let direct: Vec<(usize, f64)> =
                        (0..m).map(|j| (j, values[i * m + j])).filter(|&(_, c)| c < below).collect();
                    assert_eq!(ours, direct, "keep {keep}, row {i}, below {below}");
                }
            }
        }
    }
}
