//! Bindings of the enclose family (`src/enclose/`).
//!
//! Every binding returns named fields ([`Fields`]); support indices are rows of the input.
//! Grouped forms add `labels` and `problem` and give ragged supports as CSR
//! (`support_offsets` (G + 1,), `support_index`); a group skipped with `errors="skip"` has
//! NaN values and an empty support.

use numpy::{PyArray1, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use super::convert::{as_point_slice, float_arg, index_array, index_values, on_error_arg, seed_arg, Cloud};
use super::fields::Fields;
use super::{points_arg, run_detached};
use crate::batch::Grouped;
use crate::enclose::{
    enclosing_circle_with, enclosing_circles, enclosing_ellipse, enclosing_ellipses, minimax_point, minimax_points,
    CircleOptions,
};
use crate::geometry::Weights;

/// Options with the given seed (validated), or the default one.
fn circle_options(seed: Option<&Bound<'_, PyAny>>) -> PyResult<CircleOptions> {
    match seed.filter(|s| !s.is_none()) {
        None => Ok(CircleOptions::default()),
        Some(seed) => Ok(CircleOptions { seed: seed_arg(seed)? }),
    }
}

/// The ellipse's relative area tolerance, `0 < tol < 1`.
fn tol_arg(tol: &Bound<'_, PyAny>) -> PyResult<f64> {
    float_arg(tol, "tol", "> 0 and < 1", |t| t > 0.0 && t < 1.0)
}

/// `labels`, `problem` and the CSR of every group's support (skipped groups: empty).
fn grouped_support<'py, T>(py: Python<'py>, g: &Grouped<T>, support: impl Fn(&T) -> &[usize]) -> PyResult<Fields<'py>> {
    let (offsets, index) = g.csr(support);
    Fields::new(py)
        .grouped(g)?
        .put("support_offsets", PyArray1::from_vec(py, index_values(offsets)))?
        .put("support_index", PyArray1::from_vec(py, index_values(index)))
}

/// One value per group as a (G,) array; NaN for skipped groups.
fn floats<'py, T>(py: Python<'py>, g: &Grouped<T>, value: impl Fn(&T) -> f64) -> Bound<'py, PyArray1<f64>> {
    PyArray1::from_vec(py, g.column(f64::NAN, value))
}

/// One point per group as a (G, 2) array; NaN for skipped groups.
fn point_column<'py, T>(py: Python<'py>, g: &Grouped<T>, at: impl Fn(&T) -> [f64; 2]) -> PyResult<Bound<'py, PyAny>> {
    let flat: Vec<f64> = g.column([f64::NAN; 2], at).into_iter().flatten().collect();
    Ok(PyArray1::from_vec(py, flat).reshape([g.labels.len(), 2])?.into_any())
}

/// Fields: center (2,), radius, area, support (k,).
#[pyfunction]
#[pyo3(signature = (points, seed))]
fn enclosing_circle_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    seed: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let options = circle_options(seed)?;
    let points = points_arg(points, "points")?;
    let pts = as_point_slice(&points);
    let c = run_detached(py, || enclosing_circle_with(pts, &options))?;
    Ok(Fields::new(py)
        .put("center", PyArray1::from_slice(py, &c.center))?
        .put("radius", c.radius)?
        .put("area", c.area)?
        .put("support", index_array(py, &c.support))?
        .done())
}

/// Fields: labels, problem, center (G, 2), radius, area (G,), support_offsets, support_index.
#[pyfunction]
#[pyo3(signature = (points, groups, seed, errors))]
fn enclosing_circle_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    groups: &Bound<'py, PyAny>,
    seed: Option<&Bound<'py, PyAny>>,
    errors: &str,
) -> PyResult<Bound<'py, PyDict>> {
    let options = circle_options(seed)?;
    let on_error = on_error_arg(errors)?;
    let cloud = Cloud::read(points, None, Some(groups))?;
    let (pts, l) = (cloud.points(), cloud.labels()?);
    let g = run_detached(py, || enclosing_circles(pts, l, &options, on_error))?;
    Ok(grouped_support(py, &g, |c| &c.support)?
        .put("center", point_column(py, &g, |c| c.center)?)?
        .put("radius", floats(py, &g, |c| c.radius))?
        .put("area", floats(py, &g, |c| c.area))?
        .done())
}

/// Fields: location (2,), weighted_radius, support (k,).
#[pyfunction]
#[pyo3(signature = (points, weights))]
fn minimax_point_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let cloud = Cloud::read(points, weights, None)?;
    let (pts, w) = (cloud.points(), cloud.weights()?);
    let m = run_detached(py, || minimax_point(pts, Weights::from_option(w)))?;
    Ok(Fields::new(py)
        .put("location", PyArray1::from_slice(py, &m.location))?
        .put("weighted_radius", m.radius)?
        .put("support", index_array(py, &m.support))?
        .done())
}

/// Fields: labels, problem, location (G, 2), weighted_radius (G,), support_offsets,
/// support_index.
#[pyfunction]
#[pyo3(signature = (points, weights, groups, errors))]
fn minimax_point_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    groups: &Bound<'py, PyAny>,
    errors: &str,
) -> PyResult<Bound<'py, PyDict>> {
    let on_error = on_error_arg(errors)?;
    let cloud = Cloud::read(points, weights, Some(groups))?;
    let (pts, w, l) = (cloud.points(), cloud.weights()?, cloud.labels()?);
    let g = run_detached(py, || minimax_points(pts, Weights::from_option(w), l, on_error))?;
    Ok(grouped_support(py, &g, |m| &m.support)?
        .put("location", point_column(py, &g, |m| m.location)?)?
        .put("weighted_radius", floats(py, &g, |m| m.radius))?
        .done())
}

/// Fields: center (2,), shape (2, 2), semi_major, semi_minor, angle (degrees), area,
/// support (k,), relative_gap, iterations, converged.
#[pyfunction]
#[pyo3(signature = (points, tol))]
fn enclosing_ellipse_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    tol: &Bound<'py, PyAny>,
) -> PyResult<Bound<'py, PyDict>> {
    let tol = tol_arg(tol)?;
    let points = points_arg(points, "points")?;
    let pts = as_point_slice(&points);
    let e = run_detached(py, || enclosing_ellipse(pts, tol))?;
    let shape: Vec<f64> = e.shape.iter().flatten().copied().collect();
    Ok(Fields::new(py)
        .put("center", PyArray1::from_slice(py, &e.center))?
        .put("shape", PyArray1::from_vec(py, shape).reshape([2, 2])?)?
        .put("semi_major", e.semi_major)?
        .put("semi_minor", e.semi_minor)?
        .put("angle", e.angle)?
        .put("area", e.area)?
        .put("support", index_array(py, &e.support))?
        .put("relative_gap", e.relative_gap)?
        .put("iterations", e.iterations)?
        .put("converged", e.converged)?
        .done())
}

/// Fields: labels, problem, center (G, 2), shape (G, 2, 2), semi_major, semi_minor, angle,
/// area (G,), support_offsets, support_index, relative_gap, iterations, converged (G,).
/// A skipped group has NaN values, 0 iterations and `converged` false.
#[pyfunction]
#[pyo3(signature = (points, groups, tol, errors))]
fn enclosing_ellipse_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    groups: &Bound<'py, PyAny>,
    tol: &Bound<'py, PyAny>,
    errors: &str,
) -> PyResult<Bound<'py, PyDict>> {
    let tol = tol_arg(tol)?;
    let on_error = on_error_arg(errors)?;
    let cloud = Cloud::read(points, None, Some(groups))?;
    let (pts, l) = (cloud.points(), cloud.labels()?);
    let g = run_detached(py, || enclosing_ellipses(pts, l, tol, on_error))?;
    let shape: Vec<f64> = g.column([[f64::NAN; 2]; 2], |e| e.shape).into_iter().flatten().flatten().collect();
    Ok(grouped_support(py, &g, |e| &e.support)?
        .put("center", point_column(py, &g, |e| e.center)?)?
        .put("shape", PyArray1::from_vec(py, shape).reshape([g.labels.len(), 2, 2])?)?
        .put("semi_major", floats(py, &g, |e| e.semi_major))?
        .put("semi_minor", floats(py, &g, |e| e.semi_minor))?
        .put("angle", floats(py, &g, |e| e.angle))?
        .put("area", floats(py, &g, |e| e.area))?
        .put("relative_gap", floats(py, &g, |e| e.relative_gap))?
        .put("iterations", PyArray1::from_vec(py, g.column(0u64, |e| e.iterations as u64)))?
        .put("converged", PyArray1::from_vec(py, g.column(false, |e| e.converged)))?
        .done())
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
