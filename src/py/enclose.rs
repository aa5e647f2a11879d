//! Bindings of the enclose family (`src/enclose/`).
//!
//! Every binding returns named fields ([`Fields`]); support indices are rows of the input.
//! Grouped forms add `labels` and `problem` and give ragged supports as CSR
//! (`support_offsets` (G + 1,), `support_index`); a group skipped with `errors="skip"` has
//! NaN values and an empty support.

use numpy::{PyArray1, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use super::convert::{
    as_point_slice, feasible_region_arg, float_arg, index_array, index_values, on_error_arg, seed_arg, Cloud,
};
use super::fields::Fields;
use super::{points_arg, run_detached};
use crate::batch::Grouped;
use crate::enclose::{
    enclosing_circle_with, enclosing_circles, enclosing_ellipse, enclosing_ellipses, minimax_point,
    minimax_point_in_region, minimax_points, minimax_points_in_region, CircleOptions, MinimaxPoint, RegionMinimaxPoint,
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

/// A result without a region, in the restricted form: the region is not active.
fn unrestricted(point: MinimaxPoint) -> RegionMinimaxPoint {
    RegionMinimaxPoint { free: point.clone(), point, gap: 0.0, active: false, holds_demand: true, edges_searched: 0 }
}

/// Fields: location (2,), weighted_radius, support (k,); with a region also gap,
/// region_active, region_holds_demand, free_location (2,), free_weighted_radius,
/// edges_searched.
#[pyfunction]
#[pyo3(signature = (points, weights, region_vertices=None, ring_offsets=None))]
fn minimax_point_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let region = feasible_region_arg(region_vertices, ring_offsets)?;
    let cloud = Cloud::read(points, weights, None)?;
    let (pts, w) = (cloud.points(), cloud.weights()?);
    let w = Weights::from_option(w);
    let r = run_detached(py, || match &region {
        None => minimax_point(pts, w).map(unrestricted),
        Some(region) => minimax_point_in_region(pts, w, region),
    })?;
    let fields = Fields::new(py)
        .put("location", PyArray1::from_slice(py, &r.point.location))?
        .put("weighted_radius", r.point.radius)?
        .put("support", index_array(py, &r.point.support))?;
    if region.is_none() {
        return Ok(fields.done());
    }
    Ok(fields
        .put("gap", r.gap)?
        .put("region_active", r.active)?
        .put("region_holds_demand", r.holds_demand)?
        .put("free_location", PyArray1::from_slice(py, &r.free.location))?
        .put("free_weighted_radius", r.free.radius)?
        .put("edges_searched", r.edges_searched)?
        .done())
}

/// Fields: labels, problem, location (G, 2), weighted_radius (G,), support_offsets,
/// support_index; with a region also gap, region_active, region_holds_demand (G,),
/// free_location (G, 2), free_weighted_radius, edges_searched (G,).
#[pyfunction]
#[pyo3(signature = (points, weights, groups, errors, region_vertices=None, ring_offsets=None))]
fn minimax_point_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    groups: &Bound<'py, PyAny>,
    errors: &str,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let on_error = on_error_arg(errors)?;
    let region = feasible_region_arg(region_vertices, ring_offsets)?;
    let cloud = Cloud::read(points, weights, Some(groups))?;
    let (pts, w, l) = (cloud.points(), cloud.weights()?, cloud.labels()?);
    let w = Weights::from_option(w);
    let g = run_detached(py, || match &region {
        None => minimax_points(pts, w, l, on_error).map(|g| Grouped {
            labels: g.labels,
            results: g.results.into_iter().map(|r| r.map(unrestricted)).collect(),
        }),
        Some(region) => minimax_points_in_region(pts, w, l, region, on_error),
    })?;
    let fields = grouped_support(py, &g, |m| &m.point.support)?
        .put("location", point_column(py, &g, |m| m.point.location)?)?
        .put("weighted_radius", floats(py, &g, |m| m.point.radius))?;
    if region.is_none() {
        return Ok(fields.done());
    }
    Ok(fields
        .put("gap", floats(py, &g, |m| m.gap))?
        .put("region_active", PyArray1::from_vec(py, g.column(false, |m| m.active)))?
        .put("region_holds_demand", PyArray1::from_vec(py, g.column(false, |m| m.holds_demand)))?
        .put("free_location", point_column(py, &g, |m| m.free.location)?)?
        .put("free_weighted_radius", floats(py, &g, |m| m.free.radius))?
        .put("edges_searched", PyArray1::from_vec(py, g.column(0u64, |m| m.edges_searched as u64)))?
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
