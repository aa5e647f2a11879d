//! The grouped runner: one computation on many groups of a point cloud at once.
//!
//! Labels → stable order → CSR offsets → `rayon` over groups. Every kernel's `groups=`
//! goes through [`run_grouped`], so grouping, gathering, error labelling and result order
//! are written once.
//!
//! Invariants: groups come back sorted by label; within a group, points keep their input
//! order (the sort is stable), so a grouped call gives exactly what separate calls on each
//! group's points would give.

use std::sync::atomic::{AtomicU64, Ordering};

use rayon::prelude::*;

use crate::cancel::Watch;
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
    /// O(n log n) for the sort (parallel for large n).
    pub fn new(labels: &[i64]) -> GroupIndex {
        // (label, index) pairs sorted whole: members of a group stay in input order, as a
        // stable sort by label keeps them, and the pairs sort in place without a lookup of
        // the label per comparison (about 3x faster on 13 million rows than a stable sort of
        // indices keyed by label, and uninterruptible for that much less).
        let mut keyed: Vec<(i64, usize)> = labels.par_iter().enumerate().map(|(i, &l)| (l, i)).collect();
        keyed.par_sort_unstable();
        let mut unique = Vec::new();
        let mut offsets = vec![0];
        for (position, &(label, _)) in keyed.iter().enumerate() {
            if unique.last() != Some(&label) {
                if !unique.is_empty() {
                    offsets.push(position);
                }
                unique.push(label);
            }
        }
        if !unique.is_empty() {
            offsets.push(keyed.len());
        }
        let order: Vec<usize> = keyed.into_par_iter().map(|(_, i)| i).collect();
        GroupIndex { labels: unique, offsets, order }
    }

    /// Number of groups.
    pub fn len(&self) -> usize {
        self.labels.len()
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
    run_indexed("points", points, weights, labels, on_error, kernel).map(|(grouped, _)| grouped)
}

/// [`run_grouped`] for a kernel whose points are called `argument` (`"sites"`), also telling
/// where every input row sits ([`RowPlaces`]), so that per-row outputs can be laid out in
/// input order.
///
/// # Errors
/// As [`run_grouped`], with the points' errors naming `argument`.
pub fn run_grouped_placed<T, F>(
    argument: &'static str,
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    on_error: OnGroupError,
    kernel: F,
) -> Result<(Grouped<T>, RowPlaces)>
where
    T: Send,
    F: Fn(GroupView<'_>) -> Result<T> + Sync,
{
    let (grouped, index) = run_indexed(argument, points, weights, labels, on_error, kernel)?;
    let places = RowPlaces::of(&index, points.len(), |g| g);
    Ok((grouped, places))
}

/// The body of [`run_grouped`], also returning the group index.
fn run_indexed<T, F>(
    argument: &'static str,
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    on_error: OnGroupError,
    kernel: F,
) -> Result<(Grouped<T>, GroupIndex)>
where
    T: Send,
    F: Fn(GroupView<'_>) -> Result<T> + Sync,
{
    if labels.len() != points.len() {
        return Err(Error::LengthMismatch { argument: "groups", expected: points.len(), got: labels.len() });
    }
    check_weight_count(weights, points.len())?;
    if points.is_empty() {
        return Err(Error::TooFewPoints { argument, needed: 1, got: 0, counted: "points" });
    }
    let index = GroupIndex::new(labels);
    // Gather once so every group's points are contiguous (kernels take slices).
    let (gathered_points, gathered_weights) = gather(&index, points, weights);
    let results: Vec<Result<T>> = (0..index.len())
        .into_par_iter()
        .map(|g| {
            let label = index.labels()[g];
            let group = view(&index, g, label, &gathered_points, gathered_weights.as_deref());
            validate_points(argument, group.points, 1)
                .and_then(|()| validate_weights("weights", group.weights, group.points.len()))
                .and_then(|()| kernel(group))
                .map_err(|e| e.rows_from(group.members).in_group(label))
        })
        .collect();
    let grouped = Grouped { labels: index.labels.clone(), results };
    first_error(grouped, on_error).map(|grouped| (grouped, index))
}

fn check_weight_count(weights: Weights<'_>, n: usize) -> Result<()> {
    match weights {
        Weights::Given(w) if w.len() != n => {
            Err(Error::LengthMismatch { argument: "weights", expected: n, got: w.len() })
        }
        _ => Ok(()),
    }
}

/// The points (and weights) in group order, so that every group's are contiguous.
fn gather(index: &GroupIndex, points: &[Point], weights: Weights<'_>) -> (Vec<Point>, Option<Vec<f64>>) {
    let gathered_points = index.order().iter().map(|&i| points[i]).collect();
    let gathered_weights = weights.as_slice().map(|w| index.order().iter().map(|&i| w[i]).collect());
    (gathered_points, gathered_weights)
}

/// What the kernel sees of group `g` of `index` (its gathered points and weights).
fn view<'a>(
    index: &'a GroupIndex,
    g: usize,
    label: i64,
    gathered_points: &'a [Point],
    gathered_weights: Option<&'a [f64]>,
) -> GroupView<'a> {
    let range = index.offsets()[g]..index.offsets()[g + 1];
    GroupView {
        label,
        points: &gathered_points[range.clone()],
        weights: gathered_weights.map_or(Weights::Unit, |w| Weights::Given(&w[range])),
        members: index.members(g),
    }
}

/// With [`OnGroupError::Raise`], the error of the first failing group.
fn first_error<T>(grouped: Grouped<T>, on_error: OnGroupError) -> Result<Grouped<T>> {
    if on_error == OnGroupError::Raise {
        if let Some(Err(first)) = grouped.results.iter().find(|r| r.is_err()) {
            return Err(first.clone());
        }
    }
    Ok(grouped)
}

/// Where every input row sits in a grouped run: the position of its group (in label order)
/// and its own position among that group's rows (which keep input order).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RowPlaces {
    /// `group[i]`: position in the sorted labels of row `i`'s group.
    pub group: Vec<usize>,
    /// `within[i]`: position of row `i` among its group's rows.
    pub within: Vec<usize>,
}

impl RowPlaces {
    /// The places of the `n` rows indexed by `index`, whose group `g` is group `position(g)`
    /// of the run.
    fn of(index: &GroupIndex, n: usize, position: impl Fn(usize) -> usize) -> RowPlaces {
        let mut places = RowPlaces { group: vec![0; n], within: vec![0; n] };
        for g in 0..index.len() {
            for (k, &i) in index.members(g).iter().enumerate() {
                places.group[i] = position(g);
                places.within[i] = k;
            }
        }
        places
    }

    /// Number of rows in each of `groups` groups.
    pub fn sizes(&self, groups: usize) -> Vec<usize> {
        let mut sizes = vec![0; groups];
        self.group.iter().for_each(|&g| sizes[g] += 1);
        sizes
    }

    /// One value per input row, in input order: `value(result, k)` for the `k`-th row of a
    /// solved group, `fill` for the rows of a skipped one.
    pub fn by_row<T: Sync, U: Clone + Send + Sync>(
        &self,
        grouped: &Grouped<T>,
        fill: U,
        value: impl Fn(&T, usize) -> U + Sync,
    ) -> Vec<U> {
        self.group
            .par_iter()
            .zip(&self.within)
            .map(|(&g, &k)| grouped.results[g].as_ref().map_or_else(|_| fill.clone(), |r| value(r, k)))
            .collect()
    }
}

/// Run `kernel` on every group of demand `points` together with the `sites` of the same label
/// (a demand group is served by the sites of its own label), in parallel.
///
/// The groups are the labels found in `labels` or in `site_labels`. Every group's points,
/// weights and sites are validated (finite coordinates, good weights, at least one site), so
/// a label with points but no sites is that group's error; a label with sites but no points
/// reaches the kernel with no points (its sites serve nobody). Errors name rows of the whole
/// input: a site's row through the sites' members (when the error's argument is
/// `sites_argument`), any other through the points' members.
///
/// # Errors
/// [`Error::LengthMismatch`] when `labels`, `weights` or `site_labels` have the wrong length,
/// [`Error::TooFewPoints`] for empty points or sites, or (with `Raise`) the first group's error.
#[allow(clippy::too_many_arguments)]
pub fn run_paired<T, F>(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    sites_argument: &'static str,
    sites: &[Point],
    site_labels: &[i64],
    on_error: OnGroupError,
    kernel: F,
) -> Result<(Grouped<T>, RowPlaces, RowPlaces)>
where
    T: Send,
    F: Fn(GroupView<'_>, GroupView<'_>) -> Result<T> + Sync,
{
    if labels.len() != points.len() {
        return Err(Error::LengthMismatch { argument: "groups", expected: points.len(), got: labels.len() });
    }
    if site_labels.len() != sites.len() {
        return Err(Error::LengthMismatch { argument: "site_groups", expected: sites.len(), got: site_labels.len() });
    }
    check_weight_count(weights, points.len())?;
    if points.is_empty() {
        return Err(Error::TooFewPoints { argument: "points", needed: 1, got: 0, counted: "points" });
    }
    if sites.is_empty() {
        return Err(Error::TooFewPoints { argument: sites_argument, needed: 1, got: 0, counted: "points" });
    }
    let demand = GroupIndex::new(labels);
    let supply = GroupIndex::new(site_labels);
    let mut union: Vec<i64> = demand.labels().iter().chain(supply.labels()).copied().collect();
    union.sort_unstable();
    union.dedup();
    let position = |index: &GroupIndex, g: usize| union.binary_search(&index.labels()[g]).unwrap_or(0);
    let found = |index: &GroupIndex, label: i64| index.labels().binary_search(&label).ok();
    let (gathered_points, gathered_weights) = gather(&demand, points, weights);
    let (gathered_sites, _) = gather(&supply, sites, Weights::Unit);
    let empty = |label: i64| GroupView { label, points: &[], weights: Weights::Unit, members: &[] };
    let results: Vec<Result<T>> = union
        .par_iter()
        .map(|&label| {
            let group = found(&demand, label).map_or_else(
                || empty(label),
                |g| view(&demand, g, label, &gathered_points, gathered_weights.as_deref()),
            );
            let served_by =
                found(&supply, label).map_or_else(|| empty(label), |g| view(&supply, g, label, &gathered_sites, None));
            validate_points("points", group.points, 0)
                .and_then(|()| validate_weights("weights", group.weights, group.points.len()))
                .and_then(|()| validate_points(sites_argument, served_by.points, 1))
                .and_then(|()| kernel(group, served_by))
                .map_err(|e| {
                    let members = if e.argument() == sites_argument { served_by.members } else { group.members };
                    e.rows_from(members).in_group(label)
                })
        })
        .collect();
    // The first error first: a run stopped (or failed) returns without laying out rows.
    let grouped = first_error(Grouped { labels: union.clone(), results }, on_error)?;
    let point_places = RowPlaces::of(&demand, points.len(), |g| position(&demand, g));
    let site_places = RowPlaces::of(&supply, sites.len(), |g| position(&supply, g));
    Ok((grouped, point_places, site_places))
}

/// The watch of a grouped run: every point of the run planned at its start, the groups not
/// yet begun skipped once the watch is cancelled, and the count closed at the total when the
/// guard is dropped (at the end of the grouped run's scope, on every path out of it). Each group's kernel is watched as its ungrouped form is (so a large group stops
/// inside its kernel), either quietly with its points counted when it ends
/// ([`GroupWatch::finished`]) or counting its own points as it goes ([`GroupWatch::counting`]).
///
/// Skipping the groups not begun spares each one the unpolled set-up of its kernel (a
/// validation pass, a sort), which over many groups would add up to seconds after a cancel.
/// A cancelled run's outcome is never read: the caller drops it ([`Watch::finish`]).
#[derive(Debug)]
pub(crate) struct GroupWatch<'a> {
    watch: &'a Watch,
    planned: u64,
    /// Points counted so far, by this runner or by the kernels themselves.
    counted: AtomicU64,
}

impl<'a> GroupWatch<'a> {
    /// Plan a step per point of a grouped run of `points` points on `watch`.
    pub(crate) fn new(watch: &'a Watch, points: usize) -> GroupWatch<'a> {
        watch.plan(points as u64);
        GroupWatch { watch, planned: points as u64, counted: AtomicU64::new(0) }
    }

    /// `kernel` on one group of `points` points, handed a quiet clone of the watch (the
    /// cancel flag, no count of its own); the group's points are counted when it ends,
    /// whatever its outcome.
    ///
    /// # Errors
    /// The kernel's, or an error the caller never sees when the run was cancelled before
    /// this group began.
    pub(crate) fn finished<T>(&self, points: usize, kernel: impl FnOnce(&Watch) -> Result<T>) -> Result<T> {
        self.begin()?;
        let outcome = kernel(&self.watch.quiet());
        self.watch.advance(points as u64);
        self.counted.fetch_add(points as u64, Ordering::Relaxed);
        outcome
    }

    /// `kernel` on one group of `points` points, handed the watch itself: the kernel counts
    /// the group's points as it goes (without planning them: they are planned here). A group
    /// whose kernel fails before counting has its points counted when the run is closed; a
    /// group stopped by a cancel has counted some already and is not counted again (the
    /// cancelled run's count may end short of its total, never past it).
    ///
    /// # Errors
    /// As [`GroupWatch::finished`].
    pub(crate) fn counting<T>(&self, points: usize, kernel: impl FnOnce(&Watch) -> Result<T>) -> Result<T> {
        self.begin()?;
        let outcome = kernel(self.watch);
        if outcome.is_ok() || self.watch.is_cancelled() {
            self.counted.fetch_add(points as u64, Ordering::Relaxed);
        }
        outcome
    }

    fn begin(&self) -> Result<()> {
        if self.watch.is_cancelled() {
            return Err(Error::InvalidParameter {
                name: "groups",
                reason: "the run was cancelled before this group started".into(),
            });
        }
        Ok(())
    }
}

impl Drop for GroupWatch<'_> {
    /// Close the count at the total: the points no group counted (groups that failed
    /// before counting, were skipped, or had no kernel run) count as done.
    fn drop(&mut self) {
        self.watch.advance(self.planned.saturating_sub(*self.counted.get_mut()));
    }
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
    fn a_group_watch_counts_every_point_once_and_skips_groups_once_cancelled() {
        // Groups 1 and 2 counted when they end (quietly inside), group 3 by its own kernel;
        // group 4 fails before counting and is counted when the run closes.
        let pts: Vec<Point> = (0..10).map(|i| [i as f64, 0.0]).collect();
        let labels = [1, 1, 2, 2, 2, 3, 3, 4, 4, 4];
        let watch = Watch::new();
        let groups = GroupWatch::new(&watch, pts.len());
        let r = run_grouped(&pts, Weights::Unit, &labels, OnGroupError::Skip, |g| match g.label {
            1 | 2 => groups.finished(g.points.len(), |quiet| {
                quiet.plan(100);
                quiet.advance(100);
                Ok(g.points.len())
            }),
            3 => groups.counting(g.points.len(), |watch| {
                watch.advance(g.points.len() as u64);
                Ok(g.points.len())
            }),
            _ => groups.counting(g.points.len(), |_| Err(Error::Degenerate { argument: "points", reason: "x".into() })),
        })
        .unwrap();
        drop(groups);
        assert_eq!(watch.progress(), (10, 10));
        assert_eq!(r.column(0, |&n| n), vec![2, 3, 2, 0]);
        // Cancelled before the start: no kernel runs, every group has an error, the count closes.
        let cancelled = Watch::new();
        cancelled.cancel();
        let groups = GroupWatch::new(&cancelled, pts.len());
        let r = run_grouped(&pts, Weights::Unit, &labels, OnGroupError::Skip, |g| {
            groups.finished(g.points.len(), |_| -> Result<usize> { unreachable!("a cancelled run starts no group") })
        })
        .unwrap();
        drop(groups);
        assert!(r.results.iter().all(|o| o.is_err()));
        assert_eq!(cancelled.progress(), (10, 10));
    }

    #[test]
    fn empty_labels_give_no_groups() {
        let index = GroupIndex::new(&[]);
        assert_eq!(index.len(), 0);
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
    #[test]
    fn row_places_lay_group_values_out_in_input_order() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [2.0, 0.0], [f64::NAN, 0.0], [4.0, 0.0]];
        let (g, places) = run_grouped_placed("sites", &pts, Weights::Unit, &[5, 2, 5, 9, 2], OnGroupError::Skip, |g| {
            Ok(g.members.to_vec())
        })
        .unwrap();
        assert_eq!(places.group, vec![1, 0, 1, 2, 0]);
        assert_eq!(places.within, vec![0, 0, 1, 0, 1]);
        assert_eq!(places.sizes(3), vec![2, 2, 1]);
        // Each solved row finds itself; the skipped group's row gets the fill.
        assert_eq!(places.by_row(&g, usize::MAX, |members, k| members[k]), vec![0, 1, 2, usize::MAX, 4]);
        let e = g.results[2].as_ref().unwrap_err();
        assert_eq!(e.to_string(), "group 9: sites[3] has a NaN coordinate; every coordinate must be finite");
    }

    #[test]
    fn paired_groups_meet_by_label_and_name_their_own_rows() {
        let pts = [[0.0, 0.0], [1.0, 0.0], [2.0, 0.0]];
        let sites = [[9.0, 9.0], [f64::INFINITY, 0.0], [7.0, 7.0]];
        let (g, points, served) = run_paired(
            &pts,
            Weights::Unit,
            &[3, 1, 3],
            "sites",
            &sites,
            &[3, 4, 3],
            OnGroupError::Skip,
            |group, sites| Ok((group.members.to_vec(), sites.members.to_vec())),
        )
        .unwrap();
        assert_eq!(g.labels, vec![1, 3, 4]);
        assert_eq!(g.results[1], Ok((vec![0, 2], vec![0, 2])));
        // Label 1 has points but no sites; label 4 has a site (row 1, infinite) but no points.
        assert_eq!(g.results[0].as_ref().unwrap_err().to_string(), "group 1: sites must hold at least 1 point; got 0");
        assert_eq!(
            g.results[2].as_ref().unwrap_err().to_string(),
            "group 4: sites[1] has an infinite (+inf) coordinate; every coordinate must be finite"
        );
        let (g, _, _) =
            run_paired(&pts, Weights::Unit, &[3, 3, 3], "sites", &sites[..1], &[8], OnGroupError::Skip, |group, _| {
                Ok(group.points.len())
            })
            .unwrap();
        assert_eq!((g.labels.clone(), g.results[1].clone()), (vec![3, 8], Ok(0)));
        assert_eq!((points.group.clone(), points.within.clone()), (vec![1, 0, 1], vec![0, 0, 1]));
        assert_eq!(served.group, vec![1, 2, 1]);
        let (g, _, _) =
            run_paired(&pts, Weights::Unit, &[3, 3, 3], "sites", &sites, &[3, 3, 3], OnGroupError::Skip, |_, _| Ok(()))
                .unwrap();
        let e = g.results[0].as_ref().unwrap_err();
        assert_eq!((e.argument(), e.row()), ("sites", Some(1)));
        let short =
            run_paired(&pts, Weights::Unit, &[3, 3, 3], "sites", &sites, &[3, 3], OnGroupError::Raise, |_, _| Ok(()));
        assert_eq!(short.unwrap_err().to_string(), "site_groups must have one entry per site (3); got 2");
    }
}
