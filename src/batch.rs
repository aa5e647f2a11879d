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

/// Per-group results in label order.
#[derive(Debug, Clone)]
pub struct Grouped<T> {
    /// Sorted unique labels.
    pub labels: Vec<i64>,
    /// One result per label.
    pub results: Vec<T>,
}

/// Run `kernel` on every group of `points` defined by `labels`, in parallel.
///
/// Points and weights are validated once for the whole cloud first, so a bad coordinate is
/// reported with its input index; errors that a kernel raises for one group come back
/// labelled with that group ([`Error::InGroup`]), the group with the smallest label first.
///
/// # Errors
/// [`Error::LengthMismatch`] when `labels` or `weights` do not have one entry per point,
/// validation errors of the whole cloud, or the first group's kernel error.
pub fn run_grouped<T, F>(points: &[Point], weights: Weights<'_>, labels: &[i64], kernel: F) -> Result<Grouped<T>>
where
    T: Send,
    F: Fn(GroupView<'_>) -> Result<T> + Sync,
{
    if labels.len() != points.len() {
        return Err(Error::LengthMismatch { argument: "groups", expected: points.len(), got: labels.len() });
    }
    validate_points("points", points, 1)?;
    validate_weights("weights", weights, points.len())?;
    let index = GroupIndex::new(labels);
    // Gather once so every group's points are contiguous (kernels take slices).
    let gathered_points: Vec<Point> = index.order().iter().map(|&i| points[i]).collect();
    let gathered_weights: Option<Vec<f64>> =
        weights.as_slice().map(|w| index.order().iter().map(|&i| w[i]).collect());
    let outcomes: Vec<Result<T>> = (0..index.len())
        .into_par_iter()
        .map(|g| {
            let range = index.offsets()[g]..index.offsets()[g + 1];
            let label = index.labels()[g];
            let group_weights = match &gathered_weights {
                Some(w) => Weights::Given(&w[range.clone()]),
                None => Weights::Unit,
            };
            kernel(GroupView {
                label,
                points: &gathered_points[range.clone()],
                weights: group_weights,
                members: index.members(g),
            })
            .map_err(|e| e.in_group(label))
        })
        .collect();
    let results = outcomes.into_iter().collect::<Result<Vec<T>>>()?;
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
        let r = run_grouped(&pts, Weights::Unit, &[7, 9, 9], |g| {
            if g.points.len() < 2 {
                Err(Error::TooFewPoints { argument: "points", needed: 2, got: g.points.len(), counted: "points" })
            } else {
                Ok(g.points.len())
            }
        });
        assert_eq!(r.unwrap_err().to_string(), "group 7: points must hold at least 2 points; got 1");
    }

    #[test]
    fn group_sizes_and_members() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [2.0, 0.0], [3.0, 0.0]];
        let r = run_grouped(&pts, Weights::Unit, &[2, 1, 2, 1], |g| Ok((g.points.to_vec(), g.members.to_vec()))).unwrap();
        assert_eq!(r.labels, vec![1, 2]);
        assert_eq!(r.results[0], (vec![[1.0, 0.0], [3.0, 0.0]], vec![1, 3]));
        let (offsets, values) = to_csr(r.results.iter().map(|(_, m)| m.clone()));
        assert_eq!(offsets, vec![0, 2, 4]);
        assert_eq!(values, vec![1, 3, 0, 2]);
    }
}
