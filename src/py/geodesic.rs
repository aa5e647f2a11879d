//! Bindings of the geodesic family (`src/geodesic/`): longitude/latitude points on the WGS84
//! ellipsoid. Every binding returns named fields ([`Fields`]); lengths are metres, areas
//! square metres; support indices are input rows (grouped forms: CSR `support_offsets`,
//! `support_index`).

use numpy::{PyArray1, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use super::convert::{
    as_point_slice, count_arg, float_arg, index_array, index_values, on_error_arg, time_limit_arg, Cloud,
};
use super::fields::Fields;
use super::partition::{nearest_site_binding, nearest_site_grouped_binding};
use super::runtime::{progress_arg, run_watched, Progress};
use super::{points_arg, run_detached};
use crate::batch::Grouped;
use crate::cancel::RunLimits;
use crate::geodesic::{
    geodesic_area, geodesic_circle, geodesic_distances, geodesic_enclosing_circle, geodesic_enclosing_circles,
    geodesic_length, geodesic_minimax_point, geodesic_minimax_points, geodesic_nearest_site_grouped_watched,
    geodesic_nearest_site_watched, geodesic_weber_point_watched, geodesic_weber_points_watched, CenterOptions,
};
use crate::geometry::Weights;
use crate::median::WeberOptions;

fn weber_options(tol: &Bound<'_, PyAny>, max_iter: &Bound<'_, PyAny>) -> PyResult<WeberOptions> {
    let tol = float_arg(tol, "tol", "finite and >= 0", |t| t.is_finite() && t >= 0.0)?;
    let max_iter = count_arg(max_iter, "max_iter", 1, usize::MAX)?;
    Ok(WeberOptions { tol, max_iter, ..WeberOptions::default() })
}

/// The options of a minimax or enclosing-circle call, watched by a fresh [`Watch`], and its
/// progress report (labelled `label`).
fn center_options<'py>(
    tol: &Bound<'py, PyAny>,
    max_iter: &Bound<'py, PyAny>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
    label: &'static str,
) -> PyResult<(CenterOptions, Progress<'py>)> {
    let tol = float_arg(tol, "tol", "finite and >= 0", |t| t.is_finite() && t >= 0.0)?;
    let max_iter = count_arg(max_iter, "max_iter", 1, usize::MAX)?;
    let limits = RunLimits::from_now(time_limit_arg(time_limit)?);
    Ok((CenterOptions { tol, max_iter, limits }, progress_arg(progress, label)?))
}

fn point_column<'py, T>(py: Python<'py>, g: &Grouped<T>, at: impl Fn(&T) -> [f64; 2]) -> PyResult<Bound<'py, PyAny>> {
    let flat: Vec<f64> = g.column([f64::NAN; 2], at).into_iter().flatten().collect();
    Ok(PyArray1::from_vec(py, flat).reshape([g.labels.len(), 2])?.into_any())
}

/// Fields: distance (n,), metres.
#[pyfunction]
#[pyo3(signature = (a, b))]
fn geodesic_distance<'py>(
    py: Python<'py>,
    a: &Bound<'py, PyAny>,
    b: &Bound<'py, PyAny>,
) -> PyResult<Bound<'py, PyDict>> {
    let (a, b) = (points_arg(a, "a")?, points_arg(b, "b")?);
    let (pa, pb) = (as_point_slice(&a), as_point_slice(&b));
    let d = run_detached(py, || geodesic_distances(pa, pb))?;
    Fields::new(py).put("distance", PyArray1::from_vec(py, d)).map(Fields::done)
}

/// Fields: length (metres).
#[pyfunction]
#[pyo3(signature = (path,))]
fn geodesic_path_length<'py>(py: Python<'py>, path: &Bound<'py, PyAny>) -> PyResult<Bound<'py, PyDict>> {
    let path = points_arg(path, "path")?;
    let p = as_point_slice(&path);
    let length = run_detached(py, || geodesic_length(p))?;
    Fields::new(py).put("length", length).map(Fields::done)
}

/// Fields: area (square metres; positive counter-clockwise).
#[pyfunction]
#[pyo3(signature = (ring,))]
fn geodesic_ring_area<'py>(py: Python<'py>, ring: &Bound<'py, PyAny>) -> PyResult<Bound<'py, PyDict>> {
    let ring = points_arg(ring, "ring")?;
    let r = as_point_slice(&ring);
    let area = run_detached(py, || geodesic_area(r))?;
    Fields::new(py).put("area", area).map(Fields::done)
}

/// Fields: ring (vertices, 2): longitude/latitude, longitudes unwrapped from the centre's.
#[pyfunction]
#[pyo3(signature = (center, radius, vertices))]
fn geodesic_circle_ring<'py>(
    py: Python<'py>,
    center: &Bound<'py, PyAny>,
    radius: &Bound<'py, PyAny>,
    vertices: &Bound<'py, PyAny>,
) -> PyResult<Bound<'py, PyDict>> {
    let center = points_arg(center, "center")?;
    let c = as_point_slice(&center);
    let radius = float_arg(radius, "radius", "finite and >= 0", |r| r.is_finite() && r >= 0.0)?;
    let vertices = count_arg(vertices, "vertices", 8, 1 << 20)?;
    let centre =
        *c.first().ok_or_else(|| super::errors::argument_error("center", "center must hold one point".into()))?;
    let ring = run_detached(py, || geodesic_circle(centre, radius, vertices))?;
    let flat: Vec<f64> = ring.iter().flatten().copied().collect();
    Fields::new(py).put("ring", PyArray1::from_vec(py, flat).reshape([ring.len(), 2])?).map(Fields::done)
}

/// Fields: location (2,), cost, gap, iterations, converged.
#[pyfunction]
#[pyo3(signature = (points, weights, tol, max_iter, time_limit=None, progress=None))]
fn geodesic_weber_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    tol: &Bound<'py, PyAny>,
    max_iter: &Bound<'py, PyAny>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let options = weber_options(tol, max_iter)?;
    let limits = RunLimits::from_now(time_limit_arg(time_limit)?);
    let mut progress = progress_arg(progress, "geodesic weber_point (exact passes)")?;
    let cloud = Cloud::read(points, weights, None)?;
    let (pts, w) = (cloud.points(), cloud.weights()?);
    let r = run_watched(py, &limits.watch, &mut progress, || {
        geodesic_weber_point_watched(pts, Weights::from_option(w), &options, &limits)
    })?;
    Ok(Fields::new(py)
        .put("location", PyArray1::from_slice(py, &r.location))?
        .put("cost", r.cost)?
        .put("gap", r.gap)?
        .put("iterations", r.iterations)?
        .put("converged", r.converged)?
        .done())
}

/// Fields: labels, problem, location (G, 2), cost, gap, iterations, converged (G,).
#[pyfunction]
#[pyo3(signature = (points, weights, groups, tol, max_iter, errors, time_limit=None, progress=None))]
#[allow(clippy::too_many_arguments)]
fn geodesic_weber_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    groups: &Bound<'py, PyAny>,
    tol: &Bound<'py, PyAny>,
    max_iter: &Bound<'py, PyAny>,
    errors: &str,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let options = weber_options(tol, max_iter)?;
    let limits = RunLimits::from_now(time_limit_arg(time_limit)?);
    let mut progress = progress_arg(progress, "geodesic weber_point (points of finished groups)")?;
    let on_error = on_error_arg(errors)?;
    let cloud = Cloud::read(points, weights, Some(groups))?;
    let (pts, w, l) = (cloud.points(), cloud.weights()?, cloud.labels()?);
    let g = run_watched(py, &limits.watch, &mut progress, || {
        geodesic_weber_points_watched(pts, Weights::from_option(w), l, &options, on_error, &limits)
    })?;
    Ok(Fields::new(py)
        .grouped(&g)?
        .put("location", point_column(py, &g, |r| r.location)?)?
        .put("cost", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.cost)))?
        .put("gap", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.gap)))?
        .put("iterations", PyArray1::from_vec(py, g.column(0u64, |r| r.iterations as u64)))?
        .put("converged", PyArray1::from_vec(py, g.column(false, |r| r.converged)))?
        .done())
}

/// Fields: location (2,), weighted_radius, gap, support (k,), iterations, converged.
#[pyfunction]
#[pyo3(signature = (points, weights, tol, max_iter, time_limit=None, progress=None))]
fn geodesic_minimax_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    tol: &Bound<'py, PyAny>,
    max_iter: &Bound<'py, PyAny>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let (options, mut progress) =
        center_options(tol, max_iter, time_limit, progress, "geodesic minimax_point (iterations)")?;
    let cloud = Cloud::read(points, weights, None)?;
    let (pts, w) = (cloud.points(), cloud.weights()?);
    let watch = &options.limits.watch;
    let r = run_watched(py, watch, &mut progress, || geodesic_minimax_point(pts, Weights::from_option(w), &options))?;
    Ok(Fields::new(py)
        .put("location", PyArray1::from_slice(py, &r.location))?
        .put("weighted_radius", r.radius)?
        .put("gap", r.gap)?
        .put("support", index_array(py, &r.support))?
        .put("iterations", r.iterations)?
        .put("converged", r.converged)?
        .done())
}

/// Fields: labels, problem, location (G, 2), weighted_radius, gap (G,), support_offsets,
/// support_index, iterations, converged (G,).
#[pyfunction]
#[pyo3(signature = (points, weights, groups, tol, max_iter, errors, time_limit=None, progress=None))]
#[allow(clippy::too_many_arguments)]
fn geodesic_minimax_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    groups: &Bound<'py, PyAny>,
    tol: &Bound<'py, PyAny>,
    max_iter: &Bound<'py, PyAny>,
    errors: &str,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let (options, mut progress) =
        center_options(tol, max_iter, time_limit, progress, "geodesic minimax_point (points of finished groups)")?;
    let on_error = on_error_arg(errors)?;
    let cloud = Cloud::read(points, weights, Some(groups))?;
    let (pts, w, l) = (cloud.points(), cloud.weights()?, cloud.labels()?);
    let watch = &options.limits.watch;
    let g = run_watched(py, watch, &mut progress, || {
        geodesic_minimax_points(pts, Weights::from_option(w), l, &options, on_error)
    })?;
    let (offsets, index) = g.csr(|r| &r.support);
    Ok(Fields::new(py)
        .grouped(&g)?
        .put("location", point_column(py, &g, |r| r.location)?)?
        .put("weighted_radius", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.radius)))?
        .put("gap", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.gap)))?
        .put("support_offsets", PyArray1::from_vec(py, index_values(offsets)))?
        .put("support_index", PyArray1::from_vec(py, index_values(index)))?
        .put("iterations", PyArray1::from_vec(py, g.column(0u64, |r| r.iterations as u64)))?
        .put("converged", PyArray1::from_vec(py, g.column(false, |r| r.converged)))?
        .done())
}

/// Fields: center (2,), radius, area, gap, support (k,), iterations, converged.
#[pyfunction]
#[pyo3(signature = (points, tol, max_iter, time_limit=None, progress=None))]
fn geodesic_circle_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    tol: &Bound<'py, PyAny>,
    max_iter: &Bound<'py, PyAny>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let (options, mut progress) =
        center_options(tol, max_iter, time_limit, progress, "geodesic enclosing_circle (iterations)")?;
    let cloud = Cloud::read(points, None, None)?;
    let pts = cloud.points();
    let watch = &options.limits.watch;
    let r = run_watched(py, watch, &mut progress, || geodesic_enclosing_circle(pts, &options))?;
    Ok(Fields::new(py)
        .put("center", PyArray1::from_slice(py, &r.center.location))?
        .put("radius", r.center.radius)?
        .put("area", r.area)?
        .put("gap", r.center.gap)?
        .put("support", index_array(py, &r.center.support))?
        .put("iterations", r.center.iterations)?
        .put("converged", r.center.converged)?
        .done())
}

/// Fields: labels, problem, center (G, 2), radius, area, gap (G,), support_offsets,
/// support_index, iterations, converged (G,).
#[pyfunction]
#[pyo3(signature = (points, groups, tol, max_iter, errors, time_limit=None, progress=None))]
#[allow(clippy::too_many_arguments)]
fn geodesic_circle_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    groups: &Bound<'py, PyAny>,
    tol: &Bound<'py, PyAny>,
    max_iter: &Bound<'py, PyAny>,
    errors: &str,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let (options, mut progress) =
        center_options(tol, max_iter, time_limit, progress, "geodesic enclosing_circle (points of finished groups)")?;
    let on_error = on_error_arg(errors)?;
    let cloud = Cloud::read(points, None, Some(groups))?;
    let (pts, l) = (cloud.points(), cloud.labels()?);
    let watch = &options.limits.watch;
    let g = run_watched(py, watch, &mut progress, || geodesic_enclosing_circles(pts, l, &options, on_error))?;
    let (offsets, index) = g.csr(|r| &r.center.support);
    Ok(Fields::new(py)
        .grouped(&g)?
        .put("center", point_column(py, &g, |r| r.center.location)?)?
        .put("radius", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.center.radius)))?
        .put("area", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.area)))?
        .put("gap", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.center.gap)))?
        .put("support_offsets", PyArray1::from_vec(py, index_values(offsets)))?
        .put("support_index", PyArray1::from_vec(py, index_values(index)))?
        .put("iterations", PyArray1::from_vec(py, g.column(0u64, |r| r.center.iterations as u64)))?
        .put("converged", PyArray1::from_vec(py, g.column(false, |r| r.center.converged)))?
        .done())
}

/// Fields as `nearest_site_single` (distances and cost in metres).
#[pyfunction]
#[pyo3(signature = (points, sites, weights, progress=None))]
fn geodesic_nearest_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    sites: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    // Watched: Ctrl-C stops the search within one chunk of points per worker thread.
    let progress = progress_arg(progress, "geodesic nearest_site (points)")?;
    nearest_site_binding(py, (points, sites, weights), progress, geodesic_nearest_site_watched)
}

/// Fields as `nearest_site_grouped` (distances and costs in metres).
#[pyfunction]
#[pyo3(signature = (points, sites, weights, groups, site_groups, errors, progress=None))]
#[allow(clippy::too_many_arguments)]
fn geodesic_nearest_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    sites: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    groups: &Bound<'py, PyAny>,
    site_groups: &Bound<'py, PyAny>,
    errors: &str,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    // Watched: Ctrl-C skips the groups not begun and stops the running ones within one
    // chunk of points per worker thread.
    let progress = progress_arg(progress, "geodesic nearest_site (points)")?;
    let arguments = (points, sites, weights, groups, site_groups);
    nearest_site_grouped_binding(py, arguments, errors, progress, geodesic_nearest_site_grouped_watched)
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(geodesic_distance, m)?)?;
    m.add_function(wrap_pyfunction!(geodesic_path_length, m)?)?;
    m.add_function(wrap_pyfunction!(geodesic_ring_area, m)?)?;
    m.add_function(wrap_pyfunction!(geodesic_circle_ring, m)?)?;
    m.add_function(wrap_pyfunction!(geodesic_weber_single, m)?)?;
    m.add_function(wrap_pyfunction!(geodesic_weber_grouped, m)?)?;
    m.add_function(wrap_pyfunction!(geodesic_minimax_single, m)?)?;
    m.add_function(wrap_pyfunction!(geodesic_minimax_grouped, m)?)?;
    m.add_function(wrap_pyfunction!(geodesic_circle_single, m)?)?;
    m.add_function(wrap_pyfunction!(geodesic_circle_grouped, m)?)?;
    m.add_function(wrap_pyfunction!(geodesic_nearest_single, m)?)?;
    m.add_function(wrap_pyfunction!(geodesic_nearest_grouped, m)?)?;
    Ok(())
}
