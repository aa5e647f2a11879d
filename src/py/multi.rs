//! Bindings of the multi family (`src/multi/`).

use numpy::{PyArray1, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use std::sync::Arc;

use super::convert::{
    as_point_slice, count_arg, feasible_region_arg, index_values, on_error_arg, seed_arg, time_limit_arg, Cloud,
};
use super::errors::argument_error;
use super::fields::Fields;
use super::runtime::{progress_arg, run_watched, Progress};
use super::{labels_arg, points_arg, run_detached, weights_arg};
use crate::batch::{Grouped, RowPlaces};
use crate::cancel::Watch;
use crate::geometry::{validate_points, Point, Weights};
use crate::multi::{p_center, p_centers, p_median, p_medians, CenterOptions, Effort, MedianOptions, Service};
use rayon::prelude::*;

fn effort_arg(name: &str) -> PyResult<Effort> {
    match name {
        "fast" => Ok(Effort::Fast),
        "normal" => Ok(Effort::Normal),
        "thorough" => Ok(Effort::Thorough),
        other => {
            Err(argument_error("effort", format!("effort must be \"fast\", \"normal\" or \"thorough\"; got {other:?}")))
        }
    }
}

/// The region's vertices and ring offsets, as given (both `None`: no region).
type Region<'a, 'py> = (Option<&'a Bound<'py, PyAny>>, Option<&'a Bound<'py, PyAny>>);

/// The options of a p-median call (watched by a fresh [`Watch`]) and its progress report.
fn median_options<'py>(
    effort: &str,
    seed: &Bound<'py, PyAny>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
    region: Region<'_, 'py>,
) -> PyResult<(MedianOptions, Progress<'py>)> {
    let options = MedianOptions {
        effort: effort_arg(effort)?,
        seed: seed_arg(seed)?,
        time_limit: time_limit_arg(time_limit)?,
        watch: Watch::new(),
        region: feasible_region_arg(region.0, region.1)?.map(Arc::new),
    };
    Ok((options, progress_arg(progress, "p_median")?))
}

/// The options of a p-center call (watched by a fresh [`Watch`]) and its progress report.
fn center_options<'py>(
    effort: &str,
    seed: &Bound<'py, PyAny>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
    region: Region<'_, 'py>,
) -> PyResult<(CenterOptions, Progress<'py>)> {
    let options = CenterOptions {
        effort: effort_arg(effort)?,
        seed: seed_arg(seed)?,
        time_limit: time_limit_arg(time_limit)?,
        watch: Watch::new(),
        region: feasible_region_arg(region.0, region.1)?.map(Arc::new),
    };
    Ok((options, progress_arg(progress, "p_center")?))
}

/// `p`, the number of new sites: an integer of at least 1.
fn p_arg(p: &Bound<'_, PyAny>) -> PyResult<usize> {
    count_arg(p, "p", 1, usize::MAX)
}

/// Points as an `(m, 2)` float64 array.
fn points_array<'py>(py: Python<'py>, points: impl Iterator<Item = Point>) -> PyResult<Bound<'py, PyAny>> {
    let flat: Vec<f64> = points.flatten().collect();
    let rows = flat.len() / 2;
    Ok(PyArray1::from_vec(py, flat).reshape([rows, 2])?.into_any())
}

/// The per-point and per-site fields of one plan's service.
fn service_fields<'py>(py: Python<'py>, fields: Fields<'py>, service: &Service) -> PyResult<Fields<'py>> {
    fields
        .put("assignment", PyArray1::from_vec(py, index_values(service.assignment.clone())))?
        .put("distance", PyArray1::from_slice(py, &service.distance))?
        .put("load", PyArray1::from_slice(py, &service.load))?
        .put("count", PyArray1::from_vec(py, index_values(service.count.clone())))?
        .put("total_load", service.total_load)
}

/// The fields of a grouped run's services: per site (every group's sites in label order,
/// `site_offsets` (G + 1,) delimiting them) `load`, `count`; per input point, in input order,
/// `point_group` (position of its group), `assignment` (row of its site in the per-site
/// arrays; -1 in a skipped group) and `distance` (NaN in a skipped group); per group
/// `total_load` (NaN when skipped).
fn grouped_service_fields<'py, T: Sync>(
    py: Python<'py>,
    fields: Fields<'py>,
    grouped: &Grouped<T>,
    places: &RowPlaces,
    service: impl Fn(&T) -> &Service + Sync,
) -> PyResult<Fields<'py>> {
    let (site_offsets, load) = grouped.csr(|r| service(r).load.as_slice());
    let (_, count) = grouped.csr(|r| service(r).count.as_slice());
    let assignment = places.by_row(grouped, -1i64, |r, k| service(r).assignment[k] as i64);
    let assignment: Vec<i64> = assignment
        .into_iter()
        .zip(&places.group)
        .map(|(a, &g)| if a < 0 { a } else { a + site_offsets[g] as i64 })
        .collect();
    fields
        .put("site_offsets", PyArray1::from_vec(py, index_values(site_offsets)))?
        .put("load", PyArray1::from_vec(py, load))?
        .put("count", PyArray1::from_vec(py, index_values(count)))?
        .put("point_group", PyArray1::from_vec(py, index_values(places.group.clone())))?
        .put("assignment", PyArray1::from_vec(py, assignment))?
        .put("distance", PyArray1::from_vec(py, places.by_row(grouped, f64::NAN, |r, k| service(r).distance[k])))?
        .put("total_load", PyArray1::from_vec(py, grouped.column(f64::NAN, |r| service(r).total_load)))
}

/// The fixed sites `(f, 2)` and their group labels `(f,)` of a grouped plan; labels are
/// required when there are fixed sites.
#[allow(clippy::type_complexity)]
fn fixed_args<'py>(
    fixed: Option<&Bound<'py, PyAny>>,
    fixed_groups: Option<&Bound<'py, PyAny>>,
) -> PyResult<(Option<numpy::PyReadonlyArray2<'py, f64>>, Option<numpy::PyReadonlyArray1<'py, i64>>)> {
    let fixed = fixed.filter(|f| !f.is_none()).map(|f| points_arg(f, "fixed")).transpose()?;
    let fixed_groups = fixed_groups.filter(|f| !f.is_none()).map(|f| labels_arg(f, "fixed_groups")).transpose()?;
    if fixed.as_ref().is_some_and(|f| !as_point_slice(f).is_empty()) && fixed_groups.is_none() {
        return Err(argument_error(
            "fixed_groups",
            "fixed_groups must be given with fixed and groups: the group label each fixed site serves".into(),
        ));
    }
    Ok((fixed, fixed_groups))
}

/// Per site of a grouped plan (every group's new sites, then its fixed ones): true for a
/// fixed site; `counts` holds each solved group's (new, fixed) site counts.
fn fixed_flags(counts: impl Iterator<Item = (usize, usize)>) -> Vec<bool> {
    counts.flat_map(|(new, fixed)| std::iter::repeat_n(false, new).chain(std::iter::repeat_n(true, fixed))).collect()
}

/// Fields: sites (p, 2), fixed (f, 2), assignment (n,), distance (n,), load (p + f,),
/// count (p + f,), cost, total_load, iterations, converged.
#[pyfunction]
#[pyo3(signature = (points, p, weights, fixed, seed, effort, time_limit, progress, region_vertices=None, ring_offsets=None))]
#[allow(clippy::too_many_arguments)]
fn p_median_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    p: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    fixed: Option<&Bound<'py, PyAny>>,
    seed: &Bound<'py, PyAny>,
    effort: &str,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let p = p_arg(p)?;
    let (options, mut progress) = median_options(effort, seed, time_limit, progress, (region_vertices, ring_offsets))?;
    let watch = options.watch.clone();
    let points = points_arg(points, "points")?;
    let weights = weights_arg(weights, "weights")?;
    let fixed = fixed.filter(|f| !f.is_none()).map(|f| points_arg(f, "fixed")).transpose()?;
    let pts = as_point_slice(&points);
    let w = weights.as_ref().map(|w| w.as_slice()).transpose()?;
    let fixed_sites: &[Point] = fixed.as_ref().map_or(&[], as_point_slice);
    let plan =
        run_watched(py, &watch, &mut progress, || p_median(pts, Weights::from_option(w), p, fixed_sites, &options))?;
    let fields = Fields::new(py)
        .put("sites", points_array(py, plan.sites.iter().copied())?)?
        .put("fixed", points_array(py, plan.fixed.iter().copied())?)?
        .put("cost", plan.service.cost)?
        .put("iterations", plan.iterations)?
        .put("converged", plan.converged)?;
    Ok(service_fields(py, fields, &plan.service)?.done())
}

/// Fields: labels (G,), problem (G,); per site (S = every group's new sites then its fixed
/// ones) sites (S, 2), fixed (S,) bool, load, count, site_offsets (G + 1,); per point
/// point_group, assignment (row in the per-site arrays), distance; per group cost,
/// total_load, iterations, converged. Skipped groups have no sites, NaN totals, 0 iterations
/// and `converged` false.
#[pyfunction]
#[pyo3(signature = (points, p, weights, groups, fixed, fixed_groups, seed, effort, errors, time_limit, progress, region_vertices=None, ring_offsets=None))]
#[allow(clippy::too_many_arguments)]
fn p_median_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    p: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    groups: &Bound<'py, PyAny>,
    fixed: Option<&Bound<'py, PyAny>>,
    fixed_groups: Option<&Bound<'py, PyAny>>,
    seed: &Bound<'py, PyAny>,
    effort: &str,
    errors: &str,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let p = p_arg(p)?;
    let (options, mut progress) = median_options(effort, seed, time_limit, progress, (region_vertices, ring_offsets))?;
    let watch = options.watch.clone();
    let on_error = on_error_arg(errors)?;
    let points = points_arg(points, "points")?;
    let weights = weights_arg(weights, "weights")?;
    let labels = labels_arg(groups, "groups")?;
    let (fixed, fixed_groups) = fixed_args(fixed, fixed_groups)?;
    let fixed_sites: &[Point] = fixed.as_ref().map_or(&[], as_point_slice);
    let fixed_labels: &[i64] = fixed_groups.as_ref().map(|f| f.as_slice()).transpose()?.unwrap_or(&[]);
    let pts = as_point_slice(&points);
    let w = weights.as_ref().map(|w| w.as_slice()).transpose()?;
    let l = labels.as_slice()?;
    let (g, places) = run_watched(py, &watch, &mut progress, || {
        p_medians(pts, Weights::from_option(w), l, p, fixed_sites, fixed_labels, &options, on_error)
    })?;
    let solved = || g.results.iter().filter_map(|r| r.as_ref().ok());
    let sites = points_array(py, solved().flat_map(|r| r.sites.iter().chain(&r.fixed).copied()))?;
    let is_fixed = fixed_flags(solved().map(|r| (r.sites.len(), r.fixed.len())));
    let fields = Fields::new(py)
        .grouped(&g)?
        .put("sites", sites)?
        .put("fixed", PyArray1::from_vec(py, is_fixed))?
        .put("cost", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.service.cost)))?
        .put("iterations", PyArray1::from_vec(py, g.column(0u64, |r| r.iterations as u64)))?
        .put("converged", PyArray1::from_vec(py, g.column(false, |r| r.converged)))?;
    Ok(grouped_service_fields(py, fields, &g, &places, |r| &r.service)?.done())
}

/// Fields: sites (p, 2), fixed (f, 2), assignment (n,), distance (n,), load (p + f,),
/// count (p + f,), weighted_radius, radius, total_load, optimal, converged, iterations.
#[pyfunction]
#[pyo3(signature = (points, p, weights, fixed, seed, effort, time_limit, progress, region_vertices=None, ring_offsets=None))]
#[allow(clippy::too_many_arguments)]
fn p_center_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    p: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    fixed: Option<&Bound<'py, PyAny>>,
    seed: &Bound<'py, PyAny>,
    effort: &str,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let p = p_arg(p)?;
    let (options, mut progress) = center_options(effort, seed, time_limit, progress, (region_vertices, ring_offsets))?;
    let watch = options.watch.clone();
    let cloud = Cloud::read(points, weights, None)?;
    let fixed = fixed.filter(|f| !f.is_none()).map(|f| points_arg(f, "fixed")).transpose()?;
    let fixed_sites: &[Point] = fixed.as_ref().map_or(&[], as_point_slice);
    let (pts, w) = (cloud.points(), cloud.weights()?);
    let plan =
        run_watched(py, &watch, &mut progress, || p_center(pts, Weights::from_option(w), p, fixed_sites, &options))?;
    let fields = Fields::new(py)
        .put("sites", points_array(py, plan.sites.iter().copied())?)?
        .put("fixed", points_array(py, plan.fixed.iter().copied())?)?
        .put("weighted_radius", plan.service.weighted_radius)?
        .put("radius", plan.service.radius)?
        .put("optimal", plan.optimal)?
        .put("converged", plan.converged)?
        .put("iterations", plan.iterations)?;
    Ok(service_fields(py, fields, &plan.service)?.done())
}

/// Fields: labels (G,), problem (G,); per site (S = every group's new sites then its fixed
/// ones) sites (S, 2), fixed (S,) bool, load, count, site_offsets (G + 1,); per point
/// point_group, assignment (row in the per-site arrays), distance; per group
/// weighted_radius, radius, total_load, optimal, converged, iterations.
#[pyfunction]
#[pyo3(signature = (points, p, weights, groups, fixed, fixed_groups, seed, effort, errors, time_limit, progress, region_vertices=None, ring_offsets=None))]
#[allow(clippy::too_many_arguments)]
fn p_center_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    p: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    groups: &Bound<'py, PyAny>,
    fixed: Option<&Bound<'py, PyAny>>,
    fixed_groups: Option<&Bound<'py, PyAny>>,
    seed: &Bound<'py, PyAny>,
    effort: &str,
    errors: &str,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let p = p_arg(p)?;
    let (options, mut progress) = center_options(effort, seed, time_limit, progress, (region_vertices, ring_offsets))?;
    let watch = options.watch.clone();
    let on_error = on_error_arg(errors)?;
    let cloud = Cloud::read(points, weights, Some(groups))?;
    let (fixed, fixed_groups) = fixed_args(fixed, fixed_groups)?;
    let fixed_sites: &[Point] = fixed.as_ref().map_or(&[], as_point_slice);
    let fixed_labels: &[i64] = fixed_groups.as_ref().map(|f| f.as_slice()).transpose()?.unwrap_or(&[]);
    let (pts, w, l) = (cloud.points(), cloud.weights()?, cloud.labels()?);
    let (g, places) = run_watched(py, &watch, &mut progress, || {
        p_centers(pts, Weights::from_option(w), l, p, fixed_sites, fixed_labels, &options, on_error)
    })?;
    let solved = || g.results.iter().filter_map(|r| r.as_ref().ok());
    let sites = points_array(py, solved().flat_map(|r| r.sites.iter().chain(&r.fixed).copied()))?;
    let fields = Fields::new(py)
        .grouped(&g)?
        .put("sites", sites)?
        .put("fixed", PyArray1::from_vec(py, fixed_flags(solved().map(|r| (r.sites.len(), r.fixed.len())))))?
        .put("weighted_radius", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.service.weighted_radius)))?
        .put("radius", PyArray1::from_vec(py, g.column(f64::NAN, |r| r.service.radius)))?
        .put("optimal", PyArray1::from_vec(py, g.column(false, |r| r.optimal)))?
        .put("converged", PyArray1::from_vec(py, g.column(false, |r| r.converged)))?
        .put("iterations", PyArray1::from_vec(py, g.column(0u64, |r| r.iterations as u64)))?;
    Ok(grouped_service_fields(py, fields, &g, &places, |r| &r.service)?.done())
}

/// Whether the feasible region holds each point (boundary included; exact test), as a bool
/// array: the filter of candidate sites by a region. The points are checked as candidates
/// first (shape `(m, 2)`, at least one, finite coordinates), as the models check them.
#[pyfunction]
#[pyo3(signature = (points, region_vertices, ring_offsets))]
fn region_covers<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    region_vertices: &Bound<'py, PyAny>,
    ring_offsets: &Bound<'py, PyAny>,
) -> PyResult<Bound<'py, PyArray1<bool>>> {
    let region = feasible_region_arg(Some(region_vertices), Some(ring_offsets))?
        .ok_or_else(|| argument_error("region", "region must be given".into()))?;
    let points = points_arg(points, "candidates")?;
    let pts = as_point_slice(&points);
    let inside = run_detached(py, || {
        validate_points("candidates", pts, 1)?;
        Ok(pts.par_iter().map(|&a| region.contains(a)).collect::<Vec<bool>>())
    })?;
    Ok(PyArray1::from_vec(py, inside))
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(region_covers, m)?)?;
    m.add_function(wrap_pyfunction!(p_median_single, m)?)?;
    m.add_function(wrap_pyfunction!(p_median_grouped, m)?)?;
    m.add_function(wrap_pyfunction!(p_center_single, m)?)?;
    m.add_function(wrap_pyfunction!(p_center_grouped, m)?)?;
    Ok(())
}
