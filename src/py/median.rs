//! Bindings of the median family (`src/median/`).

use numpy::{PyArray1, PyArray2, PyArrayMethods};
use pyo3::prelude::*;

use super::convert::as_point_slice;
use super::errors::input_error;
use super::{labels_arg, points_arg, run_detached, weights_arg};
use crate::geometry::Weights;
use crate::median::{weber_point, weber_points, Metric, WeberOptions};

fn options(metric: &str, tol: f64, max_iter: usize) -> PyResult<WeberOptions> {
    let metric = match metric {
        "euclidean" => Metric::Euclidean,
        "manhattan" => Metric::Manhattan,
        other => {
            return Err(input_error(format!(
                "metric must be \"euclidean\" or \"manhattan\"; got {other:?}"
            )))
        }
    };
    Ok(WeberOptions { metric, tol, max_iter })
}

/// (location, cost, gap, iterations, converged)
type WeberTuple<'py> = (Bound<'py, PyArray1<f64>>, f64, f64, usize, bool);

#[pyfunction]
#[pyo3(signature = (points, weights, metric, tol, max_iter))]
fn weber_point_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    metric: &str,
    tol: f64,
    max_iter: usize,
) -> PyResult<WeberTuple<'py>> {
    let options = options(metric, tol, max_iter)?;
    let points = points_arg(points, "points")?;
    let weights = weights_arg(weights, "weights")?;
    let pts = as_point_slice(&points);
    let w = weights.as_ref().map(|w| w.as_slice()).transpose()?;
    let r = run_detached(py, || weber_point(pts, Weights::from_option(w), &options))?;
    Ok((PyArray1::from_slice(py, &r.location), r.cost, r.gap, r.iterations, r.converged))
}

/// (labels, location (G, 2), cost, gap, iterations, converged)
type WeberGroupedTuple<'py> = (
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray2<f64>>,
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<u64>>,
    Bound<'py, PyArray1<bool>>,
);

#[pyfunction]
#[pyo3(signature = (points, weights, groups, metric, tol, max_iter))]
fn weber_point_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    groups: &Bound<'py, PyAny>,
    metric: &str,
    tol: f64,
    max_iter: usize,
) -> PyResult<WeberGroupedTuple<'py>> {
    let options = options(metric, tol, max_iter)?;
    let points = points_arg(points, "points")?;
    let weights = weights_arg(weights, "weights")?;
    let labels = labels_arg(groups, "groups")?;
    let pts = as_point_slice(&points);
    let w = weights.as_ref().map(|w| w.as_slice()).transpose()?;
    let l = labels.as_slice()?;
    let g = run_detached(py, || weber_points(pts, Weights::from_option(w), l, &options))?;
    let location: Vec<f64> = g.results.iter().flat_map(|r| r.location).collect();
    Ok((
        PyArray1::from_vec(py, g.labels),
        PyArray1::from_vec(py, location).reshape([g.results.len(), 2])?,
        PyArray1::from_iter(py, g.results.iter().map(|r| r.cost)),
        PyArray1::from_iter(py, g.results.iter().map(|r| r.gap)),
        PyArray1::from_iter(py, g.results.iter().map(|r| r.iterations as u64)),
        PyArray1::from_iter(py, g.results.iter().map(|r| r.converged)),
    ))
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(weber_point_single, m)?)?;
    m.add_function(wrap_pyfunction!(weber_point_grouped, m)?)?;
    Ok(())
}
