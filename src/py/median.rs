//! Bindings of the median family (`src/median/`).

use numpy::{PyArray1, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use super::convert::{count_arg, float_arg, on_error_arg, Cloud};
use super::errors::argument_error;
use super::fields::Fields;
use super::run_detached;
use crate::geometry::Weights;
use crate::median::{weber_point, weber_points, Metric, WeberOptions};

fn options(metric: &str, tol: &Bound<'_, PyAny>, max_iter: &Bound<'_, PyAny>) -> PyResult<WeberOptions> {
    let metric = match metric {
        "euclidean" => Metric::Euclidean,
        "manhattan" => Metric::Manhattan,
        other => {
            return Err(argument_error(
                "metric",
                format!("metric must be \"euclidean\" or \"manhattan\"; got {other:?}"),
            ))
        }
    };
    let tol = float_arg(tol, "tol", "finite and >= 0", |t| t.is_finite() && t >= 0.0)?;
    let max_iter = count_arg(max_iter, "max_iter", 1, usize::MAX)?;
    Ok(WeberOptions { metric, tol, max_iter })
}

/// Fields: location (2,), cost, gap, iterations, converged.
#[pyfunction]
#[pyo3(signature = (points, weights, metric, tol, max_iter))]
fn weber_point_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    metric: &str,
    tol: &Bound<'py, PyAny>,
    max_iter: &Bound<'py, PyAny>,
) -> PyResult<Bound<'py, PyDict>> {
    let options = options(metric, tol, max_iter)?;
    let cloud = Cloud::read(points, weights, None)?;
    let (pts, w) = (cloud.points(), cloud.weights()?);
    let r = run_detached(py, || weber_point(pts, Weights::from_option(w), &options))?;
    Ok(Fields::new(py)
        .put("location", PyArray1::from_slice(py, &r.location))?
        .put("cost", r.cost)?
        .put("gap", r.gap)?
        .put("iterations", r.iterations)?
        .put("converged", r.converged)?
        .done())
}

/// Fields: labels (G,), problem (G,), location (G, 2), cost, gap, iterations, converged (G,).
/// A skipped group has NaN location, cost and gap, 0 iterations and `converged` false.
#[pyfunction]
#[pyo3(signature = (points, weights, groups, metric, tol, max_iter, errors))]
#[allow(clippy::too_many_arguments)]
fn weber_point_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    groups: &Bound<'py, PyAny>,
    metric: &str,
    tol: &Bound<'py, PyAny>,
    max_iter: &Bound<'py, PyAny>,
    errors: &str,
) -> PyResult<Bound<'py, PyDict>> {
    let options = options(metric, tol, max_iter)?;
    let on_error = on_error_arg(errors)?;
    let cloud = Cloud::read(points, weights, Some(groups))?;
    let (pts, w, l) = (cloud.points(), cloud.weights()?, cloud.labels()?);
    let g = run_detached(py, || weber_points(pts, Weights::from_option(w), l, &options, on_error))?;
    let location: Vec<f64> = g.column([f64::NAN; 2], |r| r.location).into_iter().flatten().collect();
    Ok(Fields::new(py)
        .grouped(&g)?
        .put("location", PyArray1::from_vec(py, location).reshape([g.labels.len(), 2])?)?
        .put("cost", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.cost)))?
        .put("gap", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.gap)))?
        .put("iterations", PyArray1::from_vec(py, g.column(0u64, |r| r.iterations as u64)))?
        .put("converged", PyArray1::from_vec(py, g.column(false, |r| r.converged)))?
        .done())
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(weber_point_single, m)?)?;
    m.add_function(wrap_pyfunction!(weber_point_grouped, m)?)?;
    Ok(())
}
