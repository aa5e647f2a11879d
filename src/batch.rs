//! The grouped runner: one computation on many groups of a point cloud at once.
//!
//! Labels → stable order → CSR offsets → `rayon` over groups. Every kernel's `groups=`
//! goes through [`run_grouped`], so grouping, gathering, error labelling and result order
//! are written once.
//!
//! Invariants: groups come back sorted by label; within a group, points keep their input
//! order (the sort is stable), so a grouped call gives exactly what separate calls on each
//! group's points would give.

use rayon::prelude::*;

use crate::error::{Error, Result};
use crate::geometry::{validate_points, validate_weights, Point, Weights};

/// Group labels resolved into a stable order and CSR offsets.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct GroupIndex {
    labels: Vec<i64>,
    offsets: Vec<usize>,
    order: Vec<usize>,
}

impl GroupIndex {
    /// Index the labels `labels[i]` of points `i = 0..n`.
    ///
    /// # Runtime
    /// O(n log n) for the stable sort (parallel for large n).
    pub fn new(labels: &[i64]) -> GroupIndex {
        let mut order: Vec<usize> = (0..labels.len()).collect();
        // Stable: members of a group stay in input order.
        order.par_sort_by_key(|&i| labels[i]);
        let mut unique = Vec::new();
        let mut offsets = vec![0];
        for (position, &i) in order.iter().enumerate() {
            if unique.last() != Some(&labels[i]) {
                if !unique.is_empty() {
                    offsets.push(position);
                }
                unique.push(labels[i]);
            }
        }
        if !unique.is_empty() {
            offsets.push(order.len());
        }
        GroupIndex { labels: unique, offsets, order }
    }

    /// Number of groups.
    pub fn len(&self) -> usize {
        self.labels.len()
    }

    /// True when there are no groups (no points).
    pub fn is_empty(&self) -> bool {
        self.labels.is_empty()
    }

    /// Sorted unique labels.
    pub fn labels(&self) -> &[i64] {
        &self.labels
    }

    /// CSR offsets into [`GroupIndex::order`], length `len() + 1`.
    pub fn offsets(&self) -> &[usize] {
        &self.offsets
    }

    /// Input indices, grouped: group `g` is `order[offsets[g]..offsets[g + 1]]`.
    pub fn order(&self) -> &[usize] {
        &self.order
    }

    /// Input indices of group `g`'s members, in input order.
    pub fn members(&self, g: usize) -> &[usize] {
        &self.order[self.offsets[g]..self.offsets[g + 1]]
    }
}

/// What a kernel sees of one group.
#[derive(Debug, Clone, Copy)]
pub struct GroupView<'a> {
    /// The group's label.
    pub label: i64,
    /// The group's points, in input order.
    pub points: &'a [Point],
    /// The group's weights (or unit weights).
    pub weights: Weights<'a>,
    /// Input index of each of the group's points (to map support indices back).
    pub members: &'a [usize],
}

/// What a grouped run does when one group has no answer.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub enum OnGroupError {
    /// Fail the whole run with the error of the failing group with the smallest label.
    #[default]
    Raise,
    /// Keep the error as that group's outcome and solve the others.
    Skip,
}

/// Per-group outcomes in label order.
///
/// Invariant: `labels` and `results` have one entry per group; an `Err` outcome occurs only
/// in a run made with [`OnGroupError::Skip`], and it is labelled with its group
/// ([`Error::InGroup`]) and names rows of the whole input.
#[derive(Debug, Clone)]
pub struct Grouped<T> {
    /// Sorted unique labels.
    pub labels: Vec<i64>,
    /// One outcome per label.
    pub results: Vec<Result<T>>,
}

impl<T> Grouped<T> {
    /// One value per group: `value(result)` for solved groups, `fill` for skipped ones.
    pub fn column<U: Clone>(&self, fill: U, value: impl Fn(&T) -> U) -> Vec<U> {
        self.results.iter().map(|r| r.as_ref().map_or_else(|_| fill.clone(), &value)).collect()
    }

    /// Ragged per-group lists as CSR (see [`to_csr`]); a skipped group has an empty list.
    pub fn csr<U: Copy>(&self, list: impl Fn(&T) -> &[U]) -> (Vec<usize>, Vec<U>) {
        to_csr(self.results.iter().map(|r| r.as_ref().map_or(&[][..], &list)))
    }

    /// The solved results, or the first group's error.
    ///
    /// # Errors
    /// The error of the first skipped group.
    pub fn into_solved(self) -> Result<Vec<T>> {
        self.results.into_iter().collect()
    }
}

/// Run `kernel` on every group of `points` defined by `labels`, in parallel.
///
/// Each group's points and weights are validated before its kernel runs; every error is
/// labelled with its group ([`Error::InGroup`]) and names rows of the whole input (positions
/// within the group are mapped back through the group's members). With
/// [`OnGroupError::Raise`] the error of the failing group with the smallest label is
/// returned; with [`OnGroupError::Skip`] it becomes that group's outcome.
///
/// # Errors
/// [`Error::LengthMismatch`] when `labels` or `weights` do not have one entry per point,
/// [`Error::TooFewPoints`] for an empty input, or (with `Raise`) the first group's error.
pub fn run_grouped<T, F>(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    on_error: OnGroupError,
    kernel: F,
) -> Result<Grouped<T>>
where
    T: Send,
    F: Fn(GroupView<'_>) -> Result<T> + Sync,
{
    if labels.len() != points.len() {
        return Err(Error::LengthMismatch { argument: "groups", expected: points.len(), got: labels.len() });
    }
    if let Weights::Given(w) = weights {
        if w.len() != points.len() {
            return Err(Error::LengthMismatch { argument: "weights", expected: points.len(), got: w.len() });
        }
    }
    if points.is_empty() {
        return Err(Error::TooFewPoints { argument: "points", needed: 1, got: 0, counted: "points" });
    }
    let index = GroupIndex::new(labels);
    // Gather once so every group's points are contiguous (kernels take slices).
    let gathered_points: Vec<Point> = index.order().iter().map(|&i| points[i]).collect();
    let gathered_weights: Option<Vec<f64>> =
        weights.as_slice().map(|w| index.order().iter().map(|&i| w[i]).collect());
    let results: Vec<Result<T>> = (0..index.len())
        .into_par_iter()
        .map(|g| {
            let range = index.offsets()[g]..index.offsets()[g + 1];
            let label = index.labels()[g];
            let group_points = &gathered_points[range.clone()];
            let group_weights = match &gathered_weights {
                Some(w) => Weights::Given(&w[range.clone()]),
                None => Weights::Unit,
            };
            let members = index.members(g);
            validate_points("points", group_points, 1)
                .and_then(|()| validate_weights("weights", group_weights, group_points.len()))
                .and_then(|()| kernel(GroupView { label, points: group_points, weights: group_weights, members }))
                .map_err(|e| e.rows_from(members).in_group(label))
        })
        .collect();
    if on_error == OnGroupError::Raise {
        if let Some(Err(first)) = results.iter().find(|r| r.is_err()) {
            return Err(first.clone());
        }
    }
    Ok(Grouped { labels: index.labels, results })
}

/// Ragged per-group lists as CSR: `values[offsets[g]..offsets[g + 1]]` belongs to group `g`.
pub fn to_csr<T: Copy>(lists: impl IntoIterator<Item = impl AsRef<[T]>>) -> (Vec<usize>, Vec<T>) {
    let mut offsets = vec![0];
    let mut values = Vec::new();
    for list in lists {
        values.extend_from_slice(list.as_ref());
        offsets.push(values.len());
    }
    (offsets, values)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_sorted_members_stable() {
        let index = GroupIndex::new(&[5, -1, 5, 3, -1]);
        assert_eq!(index.labels(), &[-1, 3, 5]);
        assert_eq!(index.offsets(), &[0, 2, 3, 5]);
        assert_eq!(index.members(0), &[1, 4]);
        assert_eq!(index.members(2), &[0, 2]);
    }

    #[test]
    fn empty_labels_give_no_groups() {
        let index = GroupIndex::new(&[]);
        assert!(index.is_empty());
        assert_eq!(index.offsets(), &[0]);
    }

    #[test]
    fn kernel_errors_are_labelled_with_their_group() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [2.0, 0.0]];
        let r = run_grouped(&pts, Weights::Unit, &[7, 9, 9], OnGroupError::Raise, |g| {
            if g.points.len() < 2 {
                Err(Error::TooFewPoints { argument: "points", needed: 2, got: g.points.len(), counted: "points" })
            } else {
                Ok(g.points.len())
            }
        });
        assert_eq!(r.unwrap_err().to_string(), "group 7: points must hold at least 2 points; got 1");
        let skipped = run_grouped(&pts, Weights::Unit, &[7, 9, 9], OnGroupError::Skip, |g| {
            if g.points.len() < 2 {
                Err(Error::TooFewPoints { argument: "points", needed: 2, got: g.points.len(), counted: "points" })
            } else {
                Ok(g.points.len())
            }
        })
        .unwrap();
        assert_eq!(skipped.column(0, |&n| n), vec![0, 2]);
        assert_eq!(skipped.results[0].as_ref().unwrap_err().group(), Some(7));
    }

    #[test]
    fn rows_inside_a_group_are_named_as_input_rows() {
        // Row 3 of the input is the second point of group 1; its NaN is reported as row 3.
        let pts = [[0.0, 0.0], [1.0, 0.0], [2.0, 0.0], [f64::NAN, 0.0]];
        let r = run_grouped(&pts, Weights::Unit, &[1, 2, 2, 1], OnGroupError::Raise, |g| Ok(g.points.len()));
        let e = r.unwrap_err();
        assert_eq!((e.group(), e.row()), (Some(1), Some(3)));
        assert_eq!(e.to_string(), "group 1: points[3] has a NaN coordinate; every coordinate must be finite");
    }

    #[test]
    fn group_sizes_and_members() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [2.0, 0.0], [3.0, 0.0]];
        let r = run_grouped(&pts, Weights::Unit, &[2, 1, 2, 1], OnGroupError::Raise, |g| {
            Ok((g.points.to_vec(), g.members.to_vec()))
        })
        .unwrap();
        assert_eq!(r.labels, vec![1, 2]);
        assert_eq!(r.results[0], Ok((vec![[1.0, 0.0], [3.0, 0.0]], vec![1, 3])));
        let (offsets, values) = r.csr(|(_, m)| m.as_slice());
        assert_eq!(offsets, vec![0, 2, 4]);
        assert_eq!(values, vec![1, 3, 0, 2]);
    }
}
