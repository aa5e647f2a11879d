//! Bindings of the multi family (`src/multi/`).

use numpy::{PyArray1, PyArray2, PyArrayMethods};
use pyo3::prelude::*;

use super::convert::{as_point_slice, index_array};
use super::errors::input_error;
use super::{points_arg, run_detached, weights_arg};
use crate::error::Error;
use crate::geometry::{Point, Weights};
use crate::multi::{p_center, p_median, CenterOptions, Effort, MedianOptions};

/// `p` as a count of sites; below 1 is the kernel's own parameter error.
fn site_count(p: i64) -> Result<usize, Error> {
    usize::try_from(p)
        .ok()
        .filter(|&p| p >= 1)
        .ok_or_else(|| Error::InvalidParameter { name: "p", reason: format!("must be at least 1; got {p}") })
}

fn effort(name: &str) -> PyResult<Effort> {
    match name {
        "fast" => Ok(Effort::Fast),
        "normal" => Ok(Effort::Normal),
        "thorough" => Ok(Effort::Thorough),
        other => Err(input_error(format!("effort must be \"fast\", \"normal\" or \"thorough\"; got {other:?}"))),
    }
}

fn sites_array<'py>(py: Python<'py>, sites: &[Point]) -> PyResult<Bound<'py, PyArray2<f64>>> {
    let flat: Vec<f64> = sites.iter().flatten().copied().collect();
    PyArray1::from_vec(py, flat).reshape([sites.len(), 2])
}


/// (sites (p, 2), assignment (n,), cost, load (p + f,), iterations)
type MedianTuple<'py> =
    (Bound<'py, PyArray2<f64>>, Bound<'py, PyArray1<i64>>, f64, Bound<'py, PyArray1<f64>>, usize);

#[pyfunction]
#[pyo3(signature = (points, p, weights, fixed, seed, effort_name))]
fn p_median_plan<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    p: i64,
    weights: Option<&Bound<'py, PyAny>>,
    fixed: Option<&Bound<'py, PyAny>>,
    seed: u64,
    effort_name: &str,
) -> PyResult<MedianTuple<'py>> {
    let options = MedianOptions { effort: effort(effort_name)?, seed };
    let points = points_arg(points, "points")?;
    let weights = weights_arg(weights, "weights")?;
    let fixed = fixed.filter(|f| !f.is_none()).map(|f| points_arg(f, "fixed")).transpose()?;
    let pts = as_point_slice(&points);
    let w = weights.as_ref().map(|w| w.as_slice()).transpose()?;
    let fixed_sites: &[Point] = fixed.as_ref().map_or(&[], as_point_slice);
    let plan = run_detached(py, || p_median(pts, Weights::from_option(w), site_count(p)?, fixed_sites, &options))?;
    Ok((
        sites_array(py, &plan.sites)?,
        index_array(py, &plan.assignment),
        plan.cost,
        PyArray1::from_vec(py, plan.load),
        plan.iterations,
    ))
}

/// (sites (p, 2), assignment (n,), radius, optimal, iterations)
type CenterTuple<'py> = (Bound<'py, PyArray2<f64>>, Bound<'py, PyArray1<i64>>, f64, bool, usize);

#[pyfunction]
#[pyo3(signature = (points, p, weights, seed))]
fn p_center_plan<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    p: i64,
    weights: Option<&Bound<'py, PyAny>>,
    seed: u64,
) -> PyResult<CenterTuple<'py>> {
    let options = CenterOptions { seed, ..CenterOptions::default() };
    let points = points_arg(points, "points")?;
    let weights = weights_arg(weights, "weights")?;
    let pts = as_point_slice(&points);
    let w = weights.as_ref().map(|w| w.as_slice()).transpose()?;
    let plan = run_detached(py, || p_center(pts, Weights::from_option(w), site_count(p)?, &options))?;
    Ok((sites_array(py, &plan.sites)?, index_array(py, &plan.assignment), plan.radius, plan.optimal, plan.iterations))
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(p_median_plan, m)?)?;
    m.add_function(wrap_pyfunction!(p_center_plan, m)?)?;
    Ok(())
}
