//! Bindings of the enclose family (`src/enclose/`).

use numpy::{PyArray1, PyArray2, PyArray3, PyArrayMethods};
use pyo3::prelude::*;

use crate::batch::OnGroupError;
use super::fields::Solved;
use super::convert::{as_point_slice, index_array};
use super::{labels_arg, points_arg, run_detached, weights_arg};
use crate::batch::to_csr;
use crate::enclose::{
    enclosing_circle_with, enclosing_circles, enclosing_ellipse, enclosing_ellipses, minimax_point, minimax_points,
    CircleOptions,
};
use crate::geometry::Weights;

/// Options with the given seed, or the default one.
fn circle_options(seed: Option<u64>) -> CircleOptions {
    seed.map_or_else(CircleOptions::default, |seed| CircleOptions { seed })
}


/// Support lists of every group as (offsets (G + 1,), indices).
fn support_csr<'py>(
    py: Python<'py>,
    lists: impl IntoIterator<Item = impl AsRef<[usize]>>,
) -> (Bound<'py, PyArray1<i64>>, Bound<'py, PyArray1<i64>>) {
    let (offsets, values) = to_csr(lists);
    (index_array(py, &offsets), index_array(py, &values))
}

/// (center, radius, support)
type CircleTuple<'py> = (Bound<'py, PyArray1<f64>>, f64, Bound<'py, PyArray1<i64>>);

#[pyfunction]
#[pyo3(signature = (points, seed))]
fn enclosing_circle_single<'py>(py: Python<'py>, points: &Bound<'py, PyAny>, seed: Option<u64>) -> PyResult<CircleTuple<'py>> {
    let points = points_arg(points, "points")?;
    let pts = as_point_slice(&points);
    let c = run_detached(py, || enclosing_circle_with(pts, &circle_options(seed)))?;
    Ok((PyArray1::from_slice(py, &c.center), c.radius, index_array(py, &c.support)))
}

/// (labels, center (G, 2), radius (G,), support_offsets, support_index)
type CirclesTuple<'py> = (
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray2<f64>>,
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray1<i64>>,
);

#[pyfunction]
#[pyo3(signature = (points, groups, seed))]
fn enclosing_circle_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    groups: &Bound<'py, PyAny>,
    seed: Option<u64>,
) -> PyResult<CirclesTuple<'py>> {
    let points = points_arg(points, "points")?;
    let labels = labels_arg(groups, "groups")?;
    let pts = as_point_slice(&points);
    let l = labels.as_slice()?;
    let g = run_detached(py, || enclosing_circles(pts, l, &circle_options(seed), OnGroupError::Raise))?;
    let g = Solved { labels: g.labels.clone(), results: g.into_solved()? };
    let center: Vec<f64> = g.results.iter().flat_map(|r| r.center).collect();
    let (offsets, index) = support_csr(py, g.results.iter().map(|r| &r.support));
    Ok((
        PyArray1::from_vec(py, g.labels),
        PyArray1::from_vec(py, center).reshape([g.results.len(), 2])?,
        PyArray1::from_iter(py, g.results.iter().map(|r| r.radius)),
        offsets,
        index,
    ))
}

#[pyfunction]
#[pyo3(signature = (points, weights))]
fn minimax_point_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
) -> PyResult<CircleTuple<'py>> {
    let points = points_arg(points, "points")?;
    let weights = weights_arg(weights, "weights")?;
    let pts = as_point_slice(&points);
    let w = weights.as_ref().map(|w| w.as_slice()).transpose()?;
    let m = run_detached(py, || minimax_point(pts, Weights::from_option(w)))?;
    Ok((PyArray1::from_slice(py, &m.location), m.radius, index_array(py, &m.support)))
}

#[pyfunction]
#[pyo3(signature = (points, weights, groups))]
fn minimax_point_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    groups: &Bound<'py, PyAny>,
) -> PyResult<CirclesTuple<'py>> {
    let points = points_arg(points, "points")?;
    let weights = weights_arg(weights, "weights")?;
    let labels = labels_arg(groups, "groups")?;
    let pts = as_point_slice(&points);
    let w = weights.as_ref().map(|w| w.as_slice()).transpose()?;
    let l = labels.as_slice()?;
    let g = run_detached(py, || minimax_points(pts, Weights::from_option(w), l, OnGroupError::Raise))?;
    let g = Solved { labels: g.labels.clone(), results: g.into_solved()? };
    let location: Vec<f64> = g.results.iter().flat_map(|r| r.location).collect();
    let (offsets, index) = support_csr(py, g.results.iter().map(|r| &r.support));
    Ok((
        PyArray1::from_vec(py, g.labels),
        PyArray1::from_vec(py, location).reshape([g.results.len(), 2])?,
        PyArray1::from_iter(py, g.results.iter().map(|r| r.radius)),
        offsets,
        index,
    ))
}

/// (center, shape (2, 2), semi_axes, angle, area, support, gap, iterations, converged)
type EllipseTuple<'py> = (
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray2<f64>>,
    Bound<'py, PyArray1<f64>>,
    f64,
    f64,
    Bound<'py, PyArray1<i64>>,
    f64,
    usize,
    bool,
);

#[pyfunction]
#[pyo3(signature = (points, tol))]
fn enclosing_ellipse_single<'py>(py: Python<'py>, points: &Bound<'py, PyAny>, tol: f64) -> PyResult<EllipseTuple<'py>> {
    let points = points_arg(points, "points")?;
    let pts = as_point_slice(&points);
    let e = run_detached(py, || enclosing_ellipse(pts, tol))?;
    let shape: Vec<f64> = e.shape.iter().flatten().copied().collect();
    Ok((
        PyArray1::from_slice(py, &e.center),
        PyArray1::from_vec(py, shape).reshape([2, 2])?,
        PyArray1::from_slice(py, &e.semi_axes),
        e.angle,
        e.area,
        index_array(py, &e.support),
        e.gap,
        e.iterations,
        e.converged,
    ))
}

/// (labels, center (G, 2), shape (G, 2, 2), semi_axes (G, 2), angle, area, support_offsets,
/// support_index, gap, iterations, converged)
type EllipsesTuple<'py> = (
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray2<f64>>,
    Bound<'py, PyArray3<f64>>,
    Bound<'py, PyArray2<f64>>,
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<u64>>,
    Bound<'py, PyArray1<bool>>,
);

#[pyfunction]
#[pyo3(signature = (points, groups, tol))]
fn enclosing_ellipse_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    groups: &Bound<'py, PyAny>,
    tol: f64,
) -> PyResult<EllipsesTuple<'py>> {
    let points = points_arg(points, "points")?;
    let labels = labels_arg(groups, "groups")?;
    let pts = as_point_slice(&points);
    let l = labels.as_slice()?;
    let g = run_detached(py, || enclosing_ellipses(pts, l, tol, OnGroupError::Raise))?;
    let g = Solved { labels: g.labels.clone(), results: g.into_solved()? };
    let n = g.results.len();
    let center: Vec<f64> = g.results.iter().flat_map(|r| r.center).collect();
    let shape: Vec<f64> = g.results.iter().flat_map(|r| r.shape.into_iter().flatten()).collect();
    let semi_axes: Vec<f64> = g.results.iter().flat_map(|r| r.semi_axes).collect();
    let (offsets, index) = support_csr(py, g.results.iter().map(|r| &r.support));
    Ok((
        PyArray1::from_vec(py, g.labels),
        PyArray1::from_vec(py, center).reshape([n, 2])?,
        PyArray1::from_vec(py, shape).reshape([n, 2, 2])?,
        PyArray1::from_vec(py, semi_axes).reshape([n, 2])?,
        PyArray1::from_iter(py, g.results.iter().map(|r| r.angle)),
        PyArray1::from_iter(py, g.results.iter().map(|r| r.area)),
        offsets,
        index,
        PyArray1::from_iter(py, g.results.iter().map(|r| r.gap)),
        PyArray1::from_iter(py, g.results.iter().map(|r| r.iterations as u64)),
        PyArray1::from_iter(py, g.results.iter().map(|r| r.converged)),
    ))
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(enclosing_circle_single, m)?)?;
    m.add_function(wrap_pyfunction!(enclosing_circle_grouped, m)?)?;
    m.add_function(wrap_pyfunction!(minimax_point_single, m)?)?;
    m.add_function(wrap_pyfunction!(minimax_point_grouped, m)?)?;
    m.add_function(wrap_pyfunction!(enclosing_ellipse_single, m)?)?;
    m.add_function(wrap_pyfunction!(enclosing_ellipse_grouped, m)?)?;
    Ok(())
}
