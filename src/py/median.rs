//! Bindings of the median family (`src/median/`).

use numpy::{PyArray1, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use super::convert::{count_arg, feasible_region_arg, float_arg, on_error_arg, Cloud};
use super::errors::argument_error;
use super::fields::Fields;
use super::run_detached;
use crate::batch::Grouped;
use crate::geometry::Weights;
use crate::median::{
    weber_point, weber_point_in_region, weber_points, weber_points_in_region, Metric, RegionWeberPoint, WeberOptions,
    WeberPoint,
};

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

/// A result without a region, in the restricted form: the region is not active.
fn unrestricted(point: WeberPoint) -> RegionWeberPoint {
    RegionWeberPoint { point, free: point, active: false, holds_demand: true, edges_searched: 0 }
}

/// Fields: location (2,), cost, gap, iterations, converged; with a region also
/// region_active, region_holds_demand, free_location (2,), free_cost, edges_searched.
#[pyfunction]
#[pyo3(signature = (points, weights, metric, tol, max_iter, region_vertices=None, ring_offsets=None))]
#[allow(clippy::too_many_arguments)]
fn weber_point_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    metric: &str,
    tol: &Bound<'py, PyAny>,
    max_iter: &Bound<'py, PyAny>,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let options = options(metric, tol, max_iter)?;
    let region = feasible_region_arg(region_vertices, ring_offsets)?;
    let cloud = Cloud::read(points, weights, None)?;
    let (pts, w) = (cloud.points(), cloud.weights()?);
    let w = Weights::from_option(w);
    let r = run_detached(py, || match &region {
        None => weber_point(pts, w, &options).map(unrestricted),
        Some(region) => weber_point_in_region(pts, w, region, &options),
    })?;
    let fields = Fields::new(py)
        .put("location", PyArray1::from_slice(py, &r.point.location))?
        .put("cost", r.point.cost)?
        .put("gap", r.point.gap)?
        .put("iterations", r.point.iterations)?
        .put("converged", r.point.converged)?;
    if region.is_none() {
        return Ok(fields.done());
    }
    Ok(fields
        .put("region_active", r.active)?
        .put("region_holds_demand", r.holds_demand)?
        .put("free_location", PyArray1::from_slice(py, &r.free.location))?
        .put("free_cost", r.free.cost)?
        .put("edges_searched", r.edges_searched)?
        .done())
}

/// Fields: labels (G,), problem (G,), location (G, 2), cost, gap, iterations, converged (G,);
/// with a region also region_active, region_holds_demand (G,), free_location (G, 2),
/// free_cost, edges_searched (G,). A skipped group has NaN location, cost and gap, 0
/// iterations and `converged` false.
#[pyfunction]
#[pyo3(signature = (points, weights, groups, metric, tol, max_iter, errors, region_vertices=None, ring_offsets=None))]
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
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let options = options(metric, tol, max_iter)?;
    let on_error = on_error_arg(errors)?;
    let region = feasible_region_arg(region_vertices, ring_offsets)?;
    let cloud = Cloud::read(points, weights, Some(groups))?;
    let (pts, w, l) = (cloud.points(), cloud.weights()?, cloud.labels()?);
    let w = Weights::from_option(w);
    let g = run_detached(py, || match &region {
        None => weber_points(pts, w, l, &options, on_error).map(|g| Grouped {
            labels: g.labels,
            results: g.results.into_iter().map(|r| r.map(unrestricted)).collect(),
        }),
        Some(region) => weber_points_in_region(pts, w, l, region, &options, on_error),
    })?;
    let n = g.labels.len();
    let pairs = |f: fn(&RegionWeberPoint) -> [f64; 2]| -> Vec<f64> {
        g.column([f64::NAN; 2], f).into_iter().flatten().collect()
    };
    let fields = Fields::new(py)
        .grouped(&g)?
        .put("location", PyArray1::from_vec(py, pairs(|r| r.point.location)).reshape([n, 2])?)?
        .put("cost", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.point.cost)))?
        .put("gap", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.point.gap)))?
        .put("iterations", PyArray1::from_vec(py, g.column(0u64, |r| r.point.iterations as u64)))?
        .put("converged", PyArray1::from_vec(py, g.column(false, |r| r.point.converged)))?;
    if region.is_none() {
        return Ok(fields.done());
    }
    Ok(fields
        .put("region_active", PyArray1::from_vec(py, g.column(false, |r| r.active)))?
        .put("region_holds_demand", PyArray1::from_vec(py, g.column(false, |r| r.holds_demand)))?
        .put("free_location", PyArray1::from_vec(py, pairs(|r| r.free.location)).reshape([n, 2])?)?
        .put("free_cost", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.free.cost)))?
        .put("edges_searched", PyArray1::from_vec(py, g.column(0u64, |r| r.edges_searched as u64)))?
        .done())
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(weber_point_single, m)?)?;
    m.add_function(wrap_pyfunction!(weber_point_grouped, m)?)?;
    Ok(())
}
