//! Bindings of the discrete family (`src/discrete/`): models on a demand × candidate cost
//! matrix.

use numpy::{PyArray1, PyArray2, PyArrayMethods, PyReadonlyArray1, PyReadonlyArray2, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyTuple};

use super::convert::{
    as_point_slice, count_arg, float_arg, index_values, matrix_arg, optional_float_arg, points_arg, seed_arg,
    time_limit_arg, weights_arg,
};
use super::errors::argument_error;
use super::fields::Fields;
use super::run_detached;
use super::runtime::{progress_arg, run_watched, Progress};
use crate::cancel::RunLimits;
use crate::discrete::{
    check_sites, circle_intersections, cover_all, cover_most, discrete_p_center, discrete_p_median, euclidean_costs,
    evaluate_sites, with_planar_costs, CostMatrix, Costs, DiscreteMedianOptions, SiteService, SparseCosts,
    MAX_DOMINATING_CANDIDATES,
};
use crate::geometry::{validate_points, Weights};

/// The cost matrix as a C-contiguous, aligned `(n, m)` float64 array.
fn costs_arg<'py>(obj: &Bound<'py, PyAny>) -> PyResult<PyReadonlyArray2<'py, f64>> {
    matrix_arg(obj, "costs")
}

/// Candidate columns (`sites`, `fixed`): a one-dimensional sequence of non-negative
/// integers (an empty one of any shape is none); range and repeats are checked by the
/// kernel. A two-column array is refused with a word on coordinates: beside candidate
/// coordinates, `fixed` holds their indices, while the continuous models take `fixed` as
/// `(f, 2)` coordinates.
fn columns_arg(obj: Option<&Bound<'_, PyAny>>, argument: &str) -> PyResult<Vec<usize>> {
    let Some(obj) = obj.filter(|o| !o.is_none()) else { return Ok(Vec::new()) };
    let numpy = obj.py().import("numpy")?;
    let array = numpy.call_method1("asarray", (obj,)).map_err(|e| {
        argument_error(argument, format!("{argument} must be a sequence of candidate indices (integers): {e}"))
    })?;
    let size: usize = array.getattr("size")?.extract()?;
    if size == 0 {
        return Ok(Vec::new());
    }
    let shape: Vec<usize> = array.getattr("shape")?.extract()?;
    if shape.len() != 1 {
        let shown = match shape.as_slice() {
            [] => "a single value (write it as a list of one)".to_string(),
            dims => format!("shape ({})", dims.iter().map(|d| d.to_string()).collect::<Vec<_>>().join(", ")),
        };
        let coordinates = if matches!(shape.as_slice(), [_, 2]) {
            format!(
                "; {argument} holds the indices of candidate sites (rows of candidates, columns of costs), not \
                 coordinates: an existing site is one of the candidates"
            )
        } else {
            String::new()
        };
        return Err(argument_error(
            argument,
            format!("{argument} must be a one-dimensional sequence of candidate indices; got {shown}{coordinates}"),
        ));
    }
    let kind: String = array.getattr("dtype")?.getattr("kind")?.extract()?;
    if !matches!(kind.as_str(), "i" | "u") {
        let dtype = array.getattr("dtype")?.str()?.to_string();
        // The entry as the caller wrote it (a Python value, not a numpy scalar's repr).
        let first = array.call_method0("tolist")?.get_item(0)?.repr()?.to_string();
        return Err(argument_error(
            argument,
            format!("{argument} must hold candidate indices (integers); got dtype {dtype} ({argument}[0] = {first})"),
        ));
    }
    let flat = array.call_method1("astype", ("int64",))?;
    let values: PyReadonlyArray1<'_, i64> = flat.cast_into::<PyArray1<i64>>()?.readonly();
    values
        .as_array()
        .iter()
        .enumerate()
        .map(|(k, &v)| {
            usize::try_from(v).map_err(|_| {
                argument_error(argument, format!("{argument}[{k}] = {v} is not a candidate column (they start at 0)"))
            })
        })
        .collect()
}

/// The service fields every discrete result shares.
fn service<'py>(py: Python<'py>, fields: Fields<'py>, s: &SiteService) -> PyResult<Fields<'py>> {
    let c = s.coverage.as_ref();
    fields
        .put("open", PyArray1::from_vec(py, index_values(s.open.clone())))?
        .put("fixed", PyArray1::from_slice(py, &s.fixed))?
        // A point no open site may serve (UNSERVED) reads -1.
        .put("assignment", PyArray1::from_vec(py, s.assignment.iter().map(|&a| a as i64).collect::<Vec<i64>>()))?
        .put("cost", PyArray1::from_slice(py, &s.cost))?
        .put("load", PyArray1::from_slice(py, &s.load))?
        .put("count", PyArray1::from_vec(py, index_values(s.count.clone())))?
        .put("total_cost", s.total_cost)?
        .put("mean_cost", s.mean_cost)?
        .put("worst_cost", s.worst_cost)?
        .put("weighted_worst", s.weighted_worst)?
        .put("total_weight", s.total_weight)?
        .put("radius", c.map(|c| c.radius))?
        .put("covered", c.map(|c| PyArray1::from_slice(py, &c.covered)))?
        .put("covering", c.map(|c| PyArray1::from_vec(py, index_values(c.covering.clone()))))?
        .put("covered_weight", c.map(|c| c.covered_weight))?
        .put("covered_share", c.map(|c| c.covered_share))
}

fn radius_arg(radius: &Bound<'_, PyAny>) -> PyResult<f64> {
    float_arg(radius, "radius", "finite and > 0", |r| r.is_finite() && r > 0.0)
}

/// Non-negative integer entries of a one-dimensional array (CSR offsets or columns).
fn index_vec(obj: &Bound<'_, PyAny>, what: &str) -> PyResult<Vec<usize>> {
    let numpy = obj.py().import("numpy")?;
    let flat = numpy.call_method1("ascontiguousarray", (obj, "int64"))?.call_method1("reshape", (-1,))?;
    let values: PyReadonlyArray1<'_, i64> = flat.cast_into::<PyArray1<i64>>()?.readonly();
    values
        .as_array()
        .iter()
        .map(|&v| usize::try_from(v).map_err(|_| argument_error("costs", format!("costs: negative {what} {v}"))))
        .collect()
}

/// A model's stopping rule (a fresh watch and `time_limit`) and its progress report.
fn watched<'py>(
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
    label: &'static str,
) -> PyResult<(RunLimits, Progress<'py>)> {
    let limits = RunLimits::from_now(time_limit_arg(time_limit)?);
    Ok((limits, progress_arg(progress, label)?))
}

/// Run `kernel` on the checked costs and weights, watched by `limits` (Ctrl-C and
/// `progress` reach it while it runs). `costs` is a dense `(n, m)` array, or a
/// tagged tuple from the Python layer: `("csr", offsets, columns, values, n, m)` for the
/// allowed pairs of a sparse matrix, `("planar", points, candidates)` for straight-line
/// costs (held densely only when small; see `with_planar_costs`).
fn with_costs<'py, T: Send>(
    py: Python<'py>,
    costs: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    (limits, progress): (&RunLimits, &mut Progress<'py>),
    kernel: impl FnOnce(&Costs<'_>, Weights<'_>) -> crate::Result<T> + Send,
) -> PyResult<T> {
    let watch = &limits.watch;
    let weights = weights_arg(weights, "weights")?;
    let w = weights.as_ref().map(|w| w.as_slice()).transpose()?;
    if let Ok(tagged) = costs.cast::<PyTuple>() {
        let tag: String = tagged.get_item(0)?.extract()?;
        if tag == "csr" && tagged.len() == 6 {
            let offsets = index_vec(&tagged.get_item(1)?, "row offset")?;
            let indices = index_vec(&tagged.get_item(2)?, "column")?;
            let numpy = py.import("numpy")?;
            let data = numpy.call_method1("ascontiguousarray", (tagged.get_item(3)?, "float64"))?;
            let data: PyReadonlyArray1<'_, f64> = data.cast_into::<PyArray1<f64>>()?.readonly();
            let (rows, columns): (usize, usize) = (tagged.get_item(4)?.extract()?, tagged.get_item(5)?.extract()?);
            let values = data.as_slice()?;
            return run_watched(py, watch, progress, || {
                let source = SparseCosts::new(&offsets, &indices, values, rows, columns)?;
                kernel(&Costs::from(source), Weights::from_option(w))
            });
        }
        if tag == "planar" && (3..=4).contains(&tagged.len()) {
            // An optional fourth item names the columns as the caller's argument: "sites"
            // when the caller's existing sites serve as the candidates.
            let name = match tagged.get_item(3).ok().map(|n| n.extract::<String>()).transpose()?.as_deref() {
                None | Some("candidates") => "candidates",
                Some("sites") => "sites",
                Some(other) => return Err(argument_error("costs", format!("unknown name of the columns: {other:?}"))),
            };
            let pts = points_arg(&tagged.get_item(1)?, "points")?;
            let cands = points_arg(&tagged.get_item(2)?, name)?;
            let (a, b) = (as_point_slice(&pts), as_point_slice(&cands));
            return run_watched(py, watch, progress, || {
                // The kernel checks the columns as "candidates": checked first under the caller's name.
                validate_points("points", a, 1)?;
                validate_points(name, b, 1)?;
                // Refusals in the coordinates' terms: a candidate's row and distance, not a
                // column and a cost of a matrix the caller never wrote.
                with_planar_costs(a, b, |c| kernel(c, Weights::from_option(w))).map_err(|e| e.on_coordinates(name))
            });
        }
        return Err(argument_error("costs", "costs must be a matrix of shape (n, m)".to_string()));
    }
    let array = costs_arg(costs)?;
    let (rows, columns) = (array.shape()[0], array.shape()[1]);
    let values = array.as_slice()?;
    run_watched(py, watch, progress, || {
        kernel(&Costs::from(CostMatrix::new(values, rows, columns)?), Weights::from_option(w))
    })
}

/// The Euclidean cost matrix `(n, m)` from points to candidates.
#[pyfunction]
fn discrete_euclidean_costs<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    candidates: &Bound<'py, PyAny>,
) -> PyResult<Bound<'py, PyArray2<f64>>> {
    let pts = points_arg(points, "points")?;
    let cands = points_arg(candidates, "candidates")?;
    let (a, b) = (as_point_slice(&pts), as_point_slice(&cands));
    let values = run_detached(py, || euclidean_costs(a, b))?;
    PyArray1::from_vec(py, values).reshape([a.len(), b.len()])
}

/// Candidate sites for coverage anywhere in the plane within `radius` of `points` (the
/// finite dominating set), `(k, 2)`, beside existing sites at `fixed` (those adding nothing
/// to them left out); refused (naming `time_limit`) when the time passes before the set is
/// complete, as a partial set does not dominate.
#[pyfunction]
#[pyo3(signature = (points, radius, time_limit=None, fixed=None))]
fn discrete_circle_candidates<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    radius: &Bound<'py, PyAny>,
    time_limit: Option<&Bound<'py, PyAny>>,
    fixed: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyArray2<f64>>> {
    let radius = radius_arg(radius)?;
    let (limits, mut progress) = watched(time_limit, None, "candidates")?;
    let pts = points_arg(points, "points")?;
    let a = as_point_slice(&pts);
    let held = fixed.map(|f| points_arg(f, "fixed")).transpose()?;
    let f = held.as_ref().map_or(&[][..], |h| as_point_slice(h));
    let out = run_watched(py, &limits.watch, &mut progress, || {
        circle_intersections(a, f, radius, MAX_DOMINATING_CANDIDATES, &limits)
    })?;
    let k = out.len();
    PyArray1::from_vec(py, out.into_iter().flatten().collect()).reshape([k, 2])
}

/// Candidate columns `values` (`fixed` or `sites`) checked as the models check them: a
/// one-dimensional sequence of distinct integers below `columns`, as int64. For callers
/// that renumber the candidates before a model runs (a region's filter).
#[pyfunction]
#[pyo3(signature = (values, argument, columns))]
fn discrete_columns<'py>(
    py: Python<'py>,
    values: Option<&Bound<'py, PyAny>>,
    argument: &str,
    columns: usize,
) -> PyResult<Bound<'py, PyArray1<i64>>> {
    let argument: &'static str = match argument {
        "fixed" => "fixed",
        "sites" => "sites",
        other => return Err(argument_error("argument", format!("unknown candidate argument {other:?}"))),
    };
    let chosen = columns_arg(values, argument)?;
    check_sites(argument, &chosen, columns)?;
    Ok(PyArray1::from_vec(py, index_values(chosen)))
}

/// Fields: the service (open, fixed, assignment, cost, load, count, totals, coverage).
#[pyfunction]
#[pyo3(signature = (costs, weights, sites, radius))]
fn discrete_evaluate<'py>(
    py: Python<'py>,
    costs: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    sites: &Bound<'py, PyAny>,
    radius: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let radius = optional_float_arg(radius, "radius", "finite and > 0", |r| r.is_finite() && r > 0.0)?;
    let sites = columns_arg(Some(sites), "sites")?;
    let quiet = (&RunLimits::default(), &mut Progress::Off);
    let s = with_costs(py, costs, weights, quiet, |c, w| evaluate_sites(c, w, &sites, radius))?;
    Ok(service(py, Fields::new(py), &s)?.done())
}

/// Fields: the service, lower_bound, relative_gap, swaps, bound_iterations.
#[pyfunction]
#[pyo3(signature = (costs, p, weights, fixed, bound_iterations, search_rounds, time_limit=None, progress=None, branch_iterations=None, seed=None))]
#[allow(clippy::too_many_arguments)]
fn discrete_p_median_single<'py>(
    py: Python<'py>,
    costs: &Bound<'py, PyAny>,
    p: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    fixed: Option<&Bound<'py, PyAny>>,
    bound_iterations: &Bound<'py, PyAny>,
    search_rounds: &Bound<'py, PyAny>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
    branch_iterations: Option<&Bound<'py, PyAny>>,
    seed: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let p = count_arg(p, "p", 1, usize::MAX)?;
    let (limits, mut progress) = watched(time_limit, progress, "p_median")?;
    let branch_iterations = match branch_iterations {
        Some(b) if !b.is_none() => Some(count_arg(b, "branch_iterations", 0, usize::MAX)?),
        _ => None,
    };
    let options = DiscreteMedianOptions {
        bound_iterations: count_arg(bound_iterations, "bound_iterations", 0, usize::MAX)?,
        search_rounds: count_arg(search_rounds, "search_rounds", 0, usize::MAX)?,
        branch_iterations,
        seed: seed.map(seed_arg).transpose()?.unwrap_or(0),
        limits,
        ..Default::default()
    };
    let fixed = columns_arg(fixed, "fixed")?;
    let watched = (&options.limits, &mut progress);
    let r = with_costs(py, costs, weights, watched, |c, w| discrete_p_median(c, w, p, &fixed, &options))?;
    Ok(service(py, Fields::new(py), &r.service)?
        .put("lower_bound", r.lower_bound)?
        .put("relative_gap", r.relative_gap)?
        .put("swaps", r.swaps)?
        .put("bound_iterations", r.bound_iterations)?
        .put("branch_nodes", r.branch_nodes)?
        .done())
}

/// Fields: the service, lower_bound, relative_gap.
#[pyfunction]
#[pyo3(signature = (costs, p, weights, fixed, time_limit=None, progress=None))]
fn discrete_p_center_single<'py>(
    py: Python<'py>,
    costs: &Bound<'py, PyAny>,
    p: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    fixed: Option<&Bound<'py, PyAny>>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let p = count_arg(p, "p", 1, usize::MAX)?;
    let (limits, mut progress) = watched(time_limit, progress, "p_center")?;
    let fixed = columns_arg(fixed, "fixed")?;
    let r =
        with_costs(py, costs, weights, (&limits, &mut progress), |c, w| discrete_p_center(c, w, p, &fixed, &limits))?;
    Ok(service(py, Fields::new(py), &r.service)?
        .put("lower_bound", r.lower_bound)?
        .put("relative_gap", r.relative_gap)?
        .done())
}

/// Fields: the service (with coverage), chosen, lower_bound, relative_gap.
#[pyfunction]
#[pyo3(signature = (costs, radius, weights, fixed, time_limit=None, progress=None))]
fn discrete_cover_all<'py>(
    py: Python<'py>,
    costs: &Bound<'py, PyAny>,
    radius: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    fixed: Option<&Bound<'py, PyAny>>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let radius = radius_arg(radius)?;
    let (limits, mut progress) = watched(time_limit, progress, "cover_all")?;
    let fixed = columns_arg(fixed, "fixed")?;
    let r = with_costs(py, costs, weights, (&limits, &mut progress), |c, w| cover_all(c, w, radius, &fixed, &limits))?;
    Ok(service(py, Fields::new(py), &r.service)?
        .put("chosen", r.chosen)?
        .put("lower_bound", r.lower_bound)?
        .put("relative_gap", r.relative_gap)?
        .done())
}

/// Fields: the service (with coverage), upper_bound, relative_gap, swaps.
#[pyfunction]
#[pyo3(signature = (costs, p, radius, weights, fixed, time_limit=None, progress=None))]
#[allow(clippy::too_many_arguments)]
fn discrete_cover_most<'py>(
    py: Python<'py>,
    costs: &Bound<'py, PyAny>,
    p: &Bound<'py, PyAny>,
    radius: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    fixed: Option<&Bound<'py, PyAny>>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let p = count_arg(p, "p", 1, usize::MAX)?;
    let radius = radius_arg(radius)?;
    let (limits, mut progress) = watched(time_limit, progress, "cover_most")?;
    let fixed = columns_arg(fixed, "fixed")?;
    let r =
        with_costs(py, costs, weights, (&limits, &mut progress), |c, w| cover_most(c, w, p, radius, &fixed, &limits))?;
    Ok(service(py, Fields::new(py), &r.service)?
        .put("upper_bound", r.upper_bound)?
        .put("relative_gap", r.relative_gap)?
        .put("swaps", r.swaps)?
        .done())
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(discrete_euclidean_costs, m)?)?;
    m.add_function(wrap_pyfunction!(discrete_evaluate, m)?)?;
    m.add_function(wrap_pyfunction!(discrete_columns, m)?)?;
    m.add_function(wrap_pyfunction!(discrete_circle_candidates, m)?)?;
    m.add_function(wrap_pyfunction!(discrete_p_median_single, m)?)?;
    m.add_function(wrap_pyfunction!(discrete_p_center_single, m)?)?;
    m.add_function(wrap_pyfunction!(discrete_cover_all, m)?)?;
    m.add_function(wrap_pyfunction!(discrete_cover_most, m)?)?;
    Ok(())
}
