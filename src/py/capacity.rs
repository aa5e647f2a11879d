//! Bindings of the capacity family (`src/capacity/`).

use numpy::{PyArray1, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use super::convert::{as_point_slice, count_arg, float_arg, region_arg, seed_arg, time_limit_arg};
use super::fields::Fields;
use super::partition::cell_fields;
use super::runtime::{progress_arg, run_watched};
use super::{points_arg, weights_arg};
use crate::cancel::RunLimits;
use crate::capacity::{
    capacitated_p_median, capacity_allocation, capacity_cells, AllocationOptions, CapacitatedMedianOptions,
    CapacityAllocation, CellsOptions,
};
use crate::geometry::{Point, Weights};
use crate::partition::Region;

/// Per-site float64 values of shape `(m,)` (capacities).
fn capacities_arg<'py>(obj: &Bound<'py, PyAny>) -> PyResult<numpy::PyReadonlyArray1<'py, f64>> {
    Ok(weights_arg(Some(obj), "capacities")?.expect("capacities is not None"))
}

/// Site rows as int64, -1 for none.
fn rows(values: &[Option<usize>]) -> Vec<i64> {
    values.iter().map(|v| v.map_or(-1, |j| j as i64)).collect()
}

/// The fields of one allocation.
fn allocation_fields<'py>(py: Python<'py>, fields: Fields<'py>, a: &CapacityAllocation) -> PyResult<Fields<'py>> {
    let part_point: Vec<i64> = a.parts.iter().map(|e| e.0 as i64).collect();
    let part_site: Vec<i64> = a.parts.iter().map(|e| e.1 as i64).collect();
    let part_amount: Vec<f64> = a.parts.iter().map(|e| e.2).collect();
    fields
        .put("assignment", PyArray1::from_vec(py, rows(&a.assignment)))?
        .put("share", PyArray1::from_slice(py, &a.share))?
        .put("distance", PyArray1::from_slice(py, &a.distance))?
        .put("cost", PyArray1::from_slice(py, &a.cost))?
        .put("unserved", PyArray1::from_slice(py, &a.unserved))?
        .put("part_point", PyArray1::from_vec(py, part_point))?
        .put("part_site", PyArray1::from_vec(py, part_site))?
        .put("part_amount", PyArray1::from_vec(py, part_amount))?
        .put("load", PyArray1::from_slice(py, &a.load))?
        .put("slack", PyArray1::from_slice(py, &a.slack))?
        .put("price", PyArray1::from_slice(py, &a.price))?
        .put("total_cost", a.total_cost)?
        .put("total_demand", a.total_demand)?
        .put("total_unserved", a.total_unserved)?
        .put("lower_bound", a.lower_bound)?
        .put("relative_gap", a.relative_gap)?
        .put("split", a.split)?
        .put("augmentations", a.augmentations)
}

/// Points as an `(m, 2)` float64 array.
fn points_array<'py>(py: Python<'py>, points: &[Point]) -> PyResult<Bound<'py, PyAny>> {
    let flat: Vec<f64> = points.iter().flatten().copied().collect();
    Ok(PyArray1::from_vec(py, flat).reshape([points.len(), 2])?.into_any())
}

/// Fields: the allocation (per point, per site, parts of split points, totals).
#[pyfunction]
#[pyo3(signature = (points, sites, capacities, weights, split, allow_unserved, time_limit=None, progress=None))]
#[allow(clippy::too_many_arguments)]
fn capacity_allocate<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    sites: &Bound<'py, PyAny>,
    capacities: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    split: bool,
    allow_unserved: bool,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let limits = RunLimits::from_now(time_limit_arg(time_limit)?);
    let mut progress = progress_arg(progress, "capacity_allocation")?;
    let pts = points_arg(points, "points")?;
    let sts = points_arg(sites, "sites")?;
    let caps = capacities_arg(capacities)?;
    let w = weights_arg(weights, "weights")?;
    let (p, s, c) = (as_point_slice(&pts), as_point_slice(&sts), caps.as_slice()?);
    let w = w.as_ref().map(|w| w.as_slice()).transpose()?;
    let options = AllocationOptions { split, allow_unserved, limits };
    let watch = &options.limits.watch;
    let a = run_watched(py, watch, &mut progress, || capacity_allocation(p, s, c, Weights::from_option(w), &options))?;
    Ok(allocation_fields(py, Fields::new(py), &a)?.done())
}

/// Fields: the sites, chosen candidate rows, their capacities, bound, gap, rounds and the
/// allocation's fields.
#[pyfunction]
#[pyo3(signature = (points, p, capacities, weights, candidates, seed, max_rounds, time_limit=None, progress=None))]
#[allow(clippy::too_many_arguments)]
fn capacity_p_median<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    p: &Bound<'py, PyAny>,
    capacities: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    candidates: Option<&Bound<'py, PyAny>>,
    seed: &Bound<'py, PyAny>,
    max_rounds: &Bound<'py, PyAny>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let p = count_arg(p, "p", 1, usize::MAX)?;
    let options = CapacitatedMedianOptions {
        seed: seed_arg(seed)?,
        max_rounds: count_arg(max_rounds, "max_rounds", 1, usize::MAX)?,
        limits: RunLimits::from_now(time_limit_arg(time_limit)?),
    };
    let mut progress = progress_arg(progress, "capacitated_p_median (rounds)")?;
    let pts = points_arg(points, "points")?;
    let cands = candidates.filter(|c| !c.is_none()).map(|c| points_arg(c, "candidates")).transpose()?;
    let caps = capacities_arg(capacities)?;
    let w = weights_arg(weights, "weights")?;
    let pts = as_point_slice(&pts);
    let cands = cands.as_ref().map(as_point_slice);
    let c = caps.as_slice()?;
    let w = w.as_ref().map(|w| w.as_slice()).transpose()?;
    let watch = &options.limits.watch;
    let plan = run_watched(py, watch, &mut progress, || {
        capacitated_p_median(pts, Weights::from_option(w), p, c, cands, &options)
    })?;
    let chosen: Vec<i64> = plan.chosen.iter().map(|&j| j as i64).collect();
    let fields = Fields::new(py)
        .put("sites", points_array(py, &plan.sites)?)?
        .put("chosen", PyArray1::from_vec(py, chosen))?
        .put("capacities", PyArray1::from_slice(py, &plan.capacities))?
        .put("median_lower_bound", plan.lower_bound)?
        .put("median_relative_gap", plan.relative_gap)?
        .put("rounds", plan.rounds)?
        .put("converged", plan.converged)?;
    Ok(allocation_fields(py, fields, &plan.allocation)?.done())
}

/// Fields: per site the powers, per point the plan, the parts of split points, per site
/// load and slack, the totals and the solver's counts; the cells (vertices, offsets, parts,
/// area, exterior as for Voronoi cells) and per site `cell_site` (-1: no cell).
#[pyfunction]
#[pyo3(signature = (points, sites, capacities, weights, tol, region_vertices, ring_offsets, time_limit=None, progress=None))]
#[allow(clippy::too_many_arguments)]
fn capacity_power_cells<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    sites: &Bound<'py, PyAny>,
    capacities: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    tol: &Bound<'py, PyAny>,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let options = CellsOptions {
        tol: float_arg(tol, "tol", "in (0, 1)", |t| t > 0.0 && t < 1.0)?,
        limits: RunLimits::from_now(time_limit_arg(time_limit)?),
    };
    let mut progress = progress_arg(progress, "capacity_cells")?;
    let pts = points_arg(points, "points")?;
    let sts = points_arg(sites, "sites")?;
    let caps = capacities_arg(capacities)?;
    let w = weights_arg(weights, "weights")?;
    let (p, s, c) = (as_point_slice(&pts), as_point_slice(&sts), caps.as_slice()?);
    let w = w.as_ref().map(|w| w.as_slice()).transpose()?;
    let region = region_arg(region_vertices, ring_offsets)?;
    let region = region.as_ref().map(|(v, o)| Region { vertices: as_point_slice(v), ring_offsets: o });
    let watch = &options.limits.watch;
    let r =
        run_watched(py, watch, &mut progress, || capacity_cells(p, s, c, Weights::from_option(w), region, &options))?;
    let assignment: Vec<i64> = r.assignment.iter().map(|&j| j as i64).collect();
    let part_point: Vec<i64> = r.parts.iter().map(|e| e.0 as i64).collect();
    let part_site: Vec<i64> = r.parts.iter().map(|e| e.1 as i64).collect();
    let part_amount: Vec<f64> = r.parts.iter().map(|e| e.2).collect();
    let fields = Fields::new(py)
        .put("power", PyArray1::from_slice(py, &r.power))?
        .put("assignment", PyArray1::from_vec(py, assignment))?
        .put("share", PyArray1::from_slice(py, &r.share))?
        .put("cost", PyArray1::from_slice(py, &r.cost))?
        .put("part_point", PyArray1::from_vec(py, part_point))?
        .put("part_site", PyArray1::from_vec(py, part_site))?
        .put("part_amount", PyArray1::from_vec(py, part_amount))?
        .put("load", PyArray1::from_slice(py, &r.load))?
        .put("slack", PyArray1::from_slice(py, &r.slack))?
        .put("total_cost", r.total_cost)?
        .put("total_distance_cost", r.total_distance_cost)?
        .put("total_demand", r.total_demand)?
        .put("newton_steps", r.newton_steps)?
        .put("exact_points", r.exact_points)?
        .put("augmentations", r.augmentations)?
        .put("cell_site", PyArray1::from_vec(py, rows(&r.cell_site)))?;
    Ok(cell_fields(py, fields, r.cells)?.done())
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(capacity_allocate, m)?)?;
    m.add_function(wrap_pyfunction!(capacity_p_median, m)?)?;
    m.add_function(wrap_pyfunction!(capacity_power_cells, m)?)?;
    Ok(())
}
