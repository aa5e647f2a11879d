//! The whole point set triangulated at once: spade's circle sweep (Biniaz & Dastghaibyfard
//! 2012) on generic clouds, the biased randomised insertion ([`super::brio`]) on points that
//! lie on a few lines.

use spade::{DelaunayTriangulation, Point2, Triangulation as SpadeTriangulation};

use super::adapter::{collinear, faces_of, hull_of, position_key, Vertex};
use super::brio::{insert_biased, lies_on_lines};
use super::Mesh;
use crate::cancel::{cancelled, Watch};
use crate::error::{Error, Result};

/// The Delaunay triangulation of `vertices` by the faster construction that suits them.
///
/// spade's circle sweep is the fastest on generic clouds, but it sets aside every point that
/// lies on a line through the sweep's centre and inserts those one by one from scratch at
/// the end, which is quadratic for points on a few long lines (transects, raster rows,
/// rounded coordinates): 40,000 points on three lines took a minute. Such input is recognised
/// by repeated coordinate values in a sample and triangulated by [`insert_biased`] instead,
/// which stops (`None`) once `watch` is cancelled; the circle sweep cannot be interrupted.
pub(super) fn triangulate(vertices: Vec<Vertex>, watch: &Watch) -> Option<DelaunayTriangulation<Vertex>> {
    if lies_on_lines(&vertices) {
        insert_biased(vertices, watch)
    } else {
        DelaunayTriangulation::bulk_load(vertices).ok()
    }
}

/// All points triangulated at once, with the errors of [`super::delaunay`]; once `watch` is
/// cancelled, an insertion on lines stops within a block of points (outcome [`cancelled`]).
pub(super) fn whole(positions: &[Point2<f64>], watch: &Watch) -> Result<Mesh> {
    // Refused before spade sees it: spade inserts collinear points one by one along its line,
    // which is quadratic.
    if collinear(positions.iter().copied()) {
        let mut distinct: Vec<(u64, u64)> = positions.iter().map(|&p| position_key(p)).collect();
        distinct.sort_unstable();
        distinct.dedup();
        if distinct.len() < 3 {
            return Err(Error::TooFewPoints {
                argument: "points",
                needed: 3,
                got: distinct.len(),
                counted: "distinct points",
            });
        }
        return Err(Error::Degenerate {
            argument: "points",
            reason: "all points are collinear, so no triangle exists".into(),
        });
    }
    let vertices: Vec<Vertex> = positions.iter().enumerate().map(|(row, &position)| Vertex { position, row }).collect();
    let dt = triangulate(vertices, watch);
    if watch.is_cancelled() {
        return Err(cancelled("points"));
    }
    let dt = dt.ok_or_else(|| {
        // Unreachable after validation and scaling; reported rather than unwrapped.
        Error::Degenerate { argument: "points", reason: "coordinates rejected by the triangulator".into() }
    })?;
    let kept = dt.num_vertices();
    if kept < 3 {
        return Err(Error::TooFewPoints { argument: "points", needed: 3, got: kept, counted: "distinct points" });
    }
    if dt.num_inner_faces() == 0 {
        return Err(Error::Degenerate {
            argument: "points",
            reason: "all points are collinear, so no triangle exists".into(),
        });
    }
    let (triangles, adjacent, _) = faces_of(&dt, |_, _, _| true);
    Ok(Mesh { triangles, adjacent, hull: hull_of(&dt), kept })
}
