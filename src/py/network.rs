//! Bindings of the network family (`src/network/`).

use numpy::{PyArray1, PyArray2, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::{PyBool, PyDict, PyString};

use super::convert::{as_point_slice, index_values, on_error_arg, optional_float_arg, seed_arg, Cloud};
use super::errors::argument_error;
use super::fields::Fields;
use super::points_arg;
use super::runtime::{progress_arg, run_on_points, run_watched};
use crate::cancel::Watch;
use crate::geometry::Point;
use crate::network::{
    spanning_tree_watched, spanning_trees_watched, steiner_tree, steiner_trees, EdgeEnd, SteinerMethod, SteinerOptions,
};

fn point_array<'py>(py: Python<'py>, points: &[Point]) -> PyResult<Bound<'py, PyArray2<f64>>> {
    PyArray1::from_vec(py, points.iter().flatten().copied().collect()).reshape([points.len(), 2])
}

/// `exact`: True, False or None (numpy booleans too); anything else is refused by name.
fn method_arg(exact: Option<&Bound<'_, PyAny>>) -> PyResult<SteinerMethod> {
    let Some(exact) = exact.filter(|e| !e.is_none()) else {
        return Ok(SteinerMethod::Auto);
    };
    let type_name = exact.get_type().name().map(|n| n.to_string()).unwrap_or_default();
    if exact.is_instance_of::<PyBool>() || type_name == "bool" || type_name == "bool_" {
        return Ok(if exact.is_truthy()? { SteinerMethod::Exact } else { SteinerMethod::Heuristic });
    }
    // str() prints numpy scalars as plain numbers; strings are quoted so they read as such.
    let shown = if exact.is_instance_of::<PyString>() { exact.repr()? } else { exact.str()? };
    Err(argument_error("exact", format!("exact must be True, False or None; got {shown} ({type_name})")))
}

/// The options of a Steiner call, watched by `watch`.
fn options(
    exact: Option<&Bound<'_, PyAny>>,
    seed: &Bound<'_, PyAny>,
    time_limit: Option<&Bound<'_, PyAny>>,
    watch: &Watch,
) -> PyResult<SteinerOptions> {
    Ok(SteinerOptions {
        method: method_arg(exact)?,
        seed: seed_arg(seed)?,
        time_limit: optional_float_arg(time_limit, "time_limit", "finite and >= 0 (seconds)", |t| {
            t.is_finite() && t >= 0.0
        })?,
        watch: watch.clone(),
    })
}

/// The ends of Steiner tree edges as four int64 columns: `end_a`, `end_b` (input row, or -1
/// where the end is a junction) and `junction_a`, `junction_b` (junction number, or -1 where
/// the end is an input row).
fn steiner_ends(edges: &[[EdgeEnd; 2]]) -> [Vec<i64>; 4] {
    let split = |e: EdgeEnd| match e {
        EdgeEnd::Row(r) => (r as i64, -1),
        EdgeEnd::Junction(j) => (-1, j as i64),
    };
    let mut columns: [Vec<i64>; 4] = Default::default();
    for &[a, b] in edges {
        let ((ra, ja), (rb, jb)) = (split(a), split(b));
        for (column, value) in columns.iter_mut().zip([ra, rb, ja, jb]) {
            column.push(value);
        }
    }
    columns
}

fn put_steiner_ends<'py>(fields: Fields<'py>, py: Python<'py>, edges: &[[EdgeEnd; 2]]) -> PyResult<Fields<'py>> {
    let [end_a, end_b, junction_a, junction_b] = steiner_ends(edges);
    fields
        .put("end_a", PyArray1::from_vec(py, end_a))?
        .put("end_b", PyArray1::from_vec(py, end_b))?
        .put("junction_a", PyArray1::from_vec(py, junction_a))?
        .put("junction_b", PyArray1::from_vec(py, junction_b))
}

fn spanning_ends(edges: &[[usize; 2]]) -> (Vec<i64>, Vec<i64>) {
    edges.iter().map(|e| (e[0] as i64, e[1] as i64)).unzip()
}

/// Fields: end_a, end_b (E,) input rows (smaller first), edge_length (E,), length.
#[pyfunction]
#[pyo3(signature = (points, progress=None))]
fn spanning_tree_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let label = "spanning_tree (points triangulated, edges taken)";
    let t = run_on_points(py, points, "points", progress, label, spanning_tree_watched)?;
    let (end_a, end_b) = spanning_ends(&t.edges);
    Ok(Fields::new(py)
        .put("end_a", PyArray1::from_vec(py, end_a))?
        .put("end_b", PyArray1::from_vec(py, end_b))?
        .put("edge_length", PyArray1::from_vec(py, t.edge_length))?
        .put("length", t.length)?
        .done())
}

/// Fields: labels, problem (G,), edge_offsets (G + 1,), end_a, end_b (E,) input rows of the
/// whole cloud, edge_length (E,), length (G,). A skipped group has no edges and NaN length.
#[pyfunction]
#[pyo3(signature = (points, groups, errors, progress=None))]
fn spanning_tree_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    groups: &Bound<'py, PyAny>,
    errors: &str,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let mut progress = progress_arg(progress, "spanning_tree (points of finished groups)")?;
    let on_error = on_error_arg(errors)?;
    let cloud = Cloud::read(points, None, Some(groups))?;
    let (pts, l) = (cloud.points(), cloud.labels()?);
    let watch = Watch::new();
    let g = run_watched(py, &watch, &mut progress, || spanning_trees_watched(pts, l, on_error, &watch))?;
    let (offsets, edges) = g.csr(|t| t.edges.as_slice());
    let (_, edge_length) = g.csr(|t| t.edge_length.as_slice());
    let (end_a, end_b) = spanning_ends(&edges);
    Ok(Fields::new(py)
        .grouped(&g)?
        .put("edge_offsets", PyArray1::from_vec(py, index_values(offsets)))?
        .put("end_a", PyArray1::from_vec(py, end_a))?
        .put("end_b", PyArray1::from_vec(py, end_b))?
        .put("edge_length", PyArray1::from_vec(py, edge_length))?
        .put("length", PyArray1::from_vec(py, g.column(f64::NAN, |t| t.length)))?
        .done())
}

/// Fields: junctions (k, 2), end_a, end_b, junction_a, junction_b (E,) (see
/// [`steiner_ends`]), edge_length (E,), length, mst_length, saving, optimal, lower_bound, gap,
/// relative_gap.
#[pyfunction]
#[pyo3(signature = (points, exact, seed, time_limit, progress))]
fn steiner_tree_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    exact: Option<&Bound<'py, PyAny>>,
    seed: &Bound<'py, PyAny>,
    time_limit: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let watch = Watch::new();
    let options = options(exact, seed, time_limit, &watch)?;
    let mut progress = progress_arg(progress, "steiner_tree")?;
    let points = points_arg(points, "points")?;
    let pts = as_point_slice(&points);
    let t = run_watched(py, &watch, &mut progress, || steiner_tree(pts, &options))?;
    let fields = Fields::new(py).put("junctions", point_array(py, &t.junctions)?)?;
    Ok(put_steiner_ends(fields, py, &t.edges)?
        .put("edge_length", PyArray1::from_vec(py, t.edge_length.clone()))?
        .put("length", t.length)?
        .put("mst_length", t.mst_length)?
        .put("saving", t.saving())?
        .put("optimal", t.optimal)?
        .put("lower_bound", t.lower_bound)?
        .put("gap", t.gap())?
        .put("relative_gap", t.relative_gap())?
        .done())
}

/// Fields: labels, problem (G,), junction_offsets (G + 1,), junctions (K, 2), edge_offsets
/// (G + 1,), end_a, end_b (input rows of the whole cloud, or -1), junction_a, junction_b
/// (junction number within the group, or -1) (E,), edge_length (E,), length, mst_length,
/// saving, optimal, lower_bound, gap, relative_gap (G,). A skipped group has no junctions or
/// edges, NaN totals and `optimal` false.
#[pyfunction]
#[pyo3(signature = (points, groups, exact, seed, time_limit, errors, progress))]
#[allow(clippy::too_many_arguments)]
fn steiner_tree_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    groups: &Bound<'py, PyAny>,
    exact: Option<&Bound<'py, PyAny>>,
    seed: &Bound<'py, PyAny>,
    time_limit: Option<&Bound<'py, PyAny>>,
    errors: &str,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let watch = Watch::new();
    let options = options(exact, seed, time_limit, &watch)?;
    let mut progress = progress_arg(progress, "steiner_tree")?;
    let on_error = on_error_arg(errors)?;
    let cloud = Cloud::read(points, None, Some(groups))?;
    let (pts, l) = (cloud.points(), cloud.labels()?);
    let g = run_watched(py, &watch, &mut progress, || steiner_trees(pts, l, &options, on_error))?;
    let (junction_offsets, junctions) = g.csr(|t| t.junctions.as_slice());
    let (edge_offsets, edges) = g.csr(|t| t.edges.as_slice());
    let (_, edge_length) = g.csr(|t| t.edge_length.as_slice());
    let fields = Fields::new(py)
        .grouped(&g)?
        .put("junction_offsets", PyArray1::from_vec(py, index_values(junction_offsets)))?
        .put("junctions", point_array(py, &junctions)?)?
        .put("edge_offsets", PyArray1::from_vec(py, index_values(edge_offsets)))?;
    Ok(put_steiner_ends(fields, py, &edges)?
        .put("edge_length", PyArray1::from_vec(py, edge_length))?
        .put("length", PyArray1::from_vec(py, g.column(f64::NAN, |t| t.length)))?
        .put("mst_length", PyArray1::from_vec(py, g.column(f64::NAN, |t| t.mst_length)))?
        .put("saving", PyArray1::from_vec(py, g.column(f64::NAN, |t| t.saving())))?
        .put("optimal", PyArray1::from_vec(py, g.column(false, |t| t.optimal)))?
        .put("lower_bound", PyArray1::from_vec(py, g.column(f64::NAN, |t| t.lower_bound)))?
        .put("gap", PyArray1::from_vec(py, g.column(f64::NAN, |t| t.gap())))?
        .put("relative_gap", PyArray1::from_vec(py, g.column(f64::NAN, |t| t.relative_gap())))?
        .done())
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(spanning_tree_single, m)?)?;
    m.add_function(wrap_pyfunction!(spanning_tree_grouped, m)?)?;
    m.add_function(wrap_pyfunction!(steiner_tree_single, m)?)?;
    m.add_function(wrap_pyfunction!(steiner_tree_grouped, m)?)?;
    Ok(())
}
