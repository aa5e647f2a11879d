//! Enclosing shapes: the worst-case view of a set of demand points.
//!
//! - `circle`: the smallest enclosing circle — Welzl's move-to-front algorithm (1991).
//! - `minimax`: the weighted minimax point (weighted Euclidean 1-center) — exact
//!   pivoting over bases of at most three points (Elzinga and Hearn 1972).
//! - `restricted`: the weighted minimax point restricted to a feasible region (the free
//!   optimum, or the best boundary point; Hamacher and Nickel 1995).
//! - `ellipse`: the minimum-area enclosing ellipse — Khachiyan's algorithm with the
//!   Todd–Yildirim (2007) away steps and the Kumar–Yildirim (2005) start, on the hull.
//!
//! Every result names the input points that fix it (`support`); the grouped forms share
//! one runner ([`run_supported`]) that maps those positions back to rows of the whole input.

mod circle;
mod ellipse;
mod minimax;
mod restricted;

pub use circle::{enclosing_circle, enclosing_circle_with, enclosing_circles, Circle, CircleOptions};
pub use ellipse::{enclosing_ellipse, enclosing_ellipses, Ellipse};
pub use minimax::{minimax_point, minimax_points, MinimaxPoint};
pub use restricted::{minimax_point_in_region, minimax_points_in_region, RegionMinimaxPoint};

use crate::batch::{run_grouped, GroupView, Grouped, OnGroupError};
use crate::error::Result;
use crate::geometry::{Point, Weights};

/// A result fixed by some of its input points.
trait Supported {
    /// Positions of the points that fix the result, in the point set it was solved on.
    fn support_mut(&mut self) -> &mut Vec<usize>;
}

/// [`run_grouped`] for a kernel whose result names its support: the support positions
/// within each group become rows of the whole input, in increasing order.
///
/// Invariant: a grouped result's support equals the single call's support on that group's
/// points, mapped through the group's members (members are in input order, so the order of
/// the mapped rows is the order of the positions).
fn run_supported<T, F>(
    points: &[Point],
    weights: Weights<'_>,
    labels: &[i64],
    on_error: OnGroupError,
    kernel: F,
) -> Result<Grouped<T>>
where
    T: Supported + Send,
    F: Fn(GroupView<'_>) -> Result<T> + Sync,
{
    run_grouped(points, weights, labels, on_error, |group| {
        let mut solved = kernel(group)?;
        let support = solved.support_mut();
        for s in support.iter_mut() {
            *s = group.members[*s];
        }
        support.sort_unstable();
        Ok(solved)
    })
}
