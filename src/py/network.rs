//! Bindings of the network family (`src/network/`).

use numpy::{PyArray1, PyArray2, PyArrayMethods};
use pyo3::prelude::*;

use crate::batch::OnGroupError;
use super::fields::Solved;
use super::convert::as_point_slice;
use super::{labels_arg, points_arg, run_detached};
use crate::batch::to_csr;
use crate::network::{spanning_tree, spanning_trees, steiner_tree, steiner_trees, SteinerMethod, SteinerOptions};

fn edge_array<'py>(py: Python<'py>, edges: &[[usize; 2]]) -> PyResult<Bound<'py, PyArray2<i64>>> {
    let flat: Vec<i64> = edges.iter().flat_map(|e| [e[0] as i64, e[1] as i64]).collect();
    PyArray1::from_vec(py, flat).reshape([edges.len(), 2])
}

fn point_array<'py>(py: Python<'py>, points: &[[f64; 2]]) -> PyResult<Bound<'py, PyArray2<f64>>> {
    let flat: Vec<f64> = points.iter().flatten().copied().collect();
    PyArray1::from_vec(py, flat).reshape([points.len(), 2])
}

fn options(exact: Option<bool>, seed: u64, time_limit: Option<f64>) -> SteinerOptions {
    let method = match exact {
        None => SteinerMethod::Auto,
        Some(true) => SteinerMethod::Exact,
        Some(false) => SteinerMethod::Heuristic,
    };
    SteinerOptions { method, seed, time_limit }
}

/// (edges (E, 2), edge_length (E,), length)
type SpanningTuple<'py> = (Bound<'py, PyArray2<i64>>, Bound<'py, PyArray1<f64>>, f64);

#[pyfunction]
#[pyo3(signature = (points))]
fn spanning_tree_single<'py>(py: Python<'py>, points: &Bound<'py, PyAny>) -> PyResult<SpanningTuple<'py>> {
    let points = points_arg(points, "points")?;
    let pts = as_point_slice(&points);
    let t = run_detached(py, || spanning_tree(pts))?;
    Ok((edge_array(py, &t.edges)?, PyArray1::from_vec(py, t.edge_length), t.length))
}

/// (labels, edge_offsets (G + 1,), edges (E, 2), edge_length (E,), length (G,))
type SpanningGroupedTuple<'py> = (
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray2<i64>>,
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<f64>>,
);

#[pyfunction]
#[pyo3(signature = (points, groups))]
fn spanning_tree_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    groups: &Bound<'py, PyAny>,
) -> PyResult<SpanningGroupedTuple<'py>> {
    let points = points_arg(points, "points")?;
    let labels = labels_arg(groups, "groups")?;
    let pts = as_point_slice(&points);
    let l = labels.as_slice()?;
    let g = run_detached(py, || spanning_trees(pts, l, OnGroupError::Raise))?;
    let g = Solved { labels: g.labels.clone(), results: g.into_solved()? };
    let (offsets, edges) = to_csr(g.results.iter().map(|t| t.edges.as_slice()));
    let (_, lengths) = to_csr(g.results.iter().map(|t| t.edge_length.as_slice()));
    Ok((
        PyArray1::from_vec(py, g.labels),
        PyArray1::from_iter(py, offsets.iter().map(|&o| o as i64)),
        edge_array(py, &edges)?,
        PyArray1::from_vec(py, lengths),
        PyArray1::from_iter(py, g.results.iter().map(|t| t.length)),
    ))
}

/// (nodes (m, 2), terminal_count, edges (E, 2), length, mst_length, saving, optimal)
type SteinerTuple<'py> = (Bound<'py, PyArray2<f64>>, usize, Bound<'py, PyArray2<i64>>, f64, f64, f64, bool);

#[pyfunction]
#[pyo3(signature = (points, exact, seed, time_limit))]
fn steiner_tree_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    exact: Option<bool>,
    seed: u64,
    time_limit: Option<f64>,
) -> PyResult<SteinerTuple<'py>> {
    let options = options(exact, seed, time_limit);
    let points = points_arg(points, "points")?;
    let pts = as_point_slice(&points);
    let t = run_detached(py, || steiner_tree(pts, &options))?;
    Ok((
        point_array(py, &t.nodes)?,
        t.terminal_count,
        edge_array(py, &t.edges)?,
        t.length,
        t.mst_length,
        t.saving(),
        t.optimal,
    ))
}

/// (labels, node_offsets, nodes, terminal_count, edge_offsets, edges, length, mst_length,
/// saving, optimal)
type SteinerGroupedTuple<'py> = (
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray2<f64>>,
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray2<i64>>,
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<f64>>,
    Bound<'py, PyArray1<bool>>,
);

#[pyfunction]
#[pyo3(signature = (points, groups, exact, seed, time_limit))]
fn steiner_tree_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    groups: &Bound<'py, PyAny>,
    exact: Option<bool>,
    seed: u64,
    time_limit: Option<f64>,
) -> PyResult<SteinerGroupedTuple<'py>> {
    let options = options(exact, seed, time_limit);
    let points = points_arg(points, "points")?;
    let labels = labels_arg(groups, "groups")?;
    let pts = as_point_slice(&points);
    let l = labels.as_slice()?;
    let g = run_detached(py, || steiner_trees(pts, l, &options, OnGroupError::Raise))?;
    let g = Solved { labels: g.labels.clone(), results: g.into_solved()? };
    let (node_offsets, nodes) = to_csr(g.results.iter().map(|t| t.nodes.as_slice()));
    let (edge_offsets, edges) = to_csr(g.results.iter().map(|t| t.edges.as_slice()));
    let as_i64 = |v: &[usize]| v.iter().map(|&o| o as i64).collect::<Vec<i64>>();
    Ok((
        PyArray1::from_vec(py, g.labels),
        PyArray1::from_vec(py, as_i64(&node_offsets)),
        point_array(py, &nodes)?,
        PyArray1::from_iter(py, g.results.iter().map(|t| t.terminal_count as i64)),
        PyArray1::from_vec(py, as_i64(&edge_offsets)),
        edge_array(py, &edges)?,
        PyArray1::from_iter(py, g.results.iter().map(|t| t.length)),
        PyArray1::from_iter(py, g.results.iter().map(|t| t.mst_length)),
        PyArray1::from_iter(py, g.results.iter().map(|t| t.saving())),
        PyArray1::from_iter(py, g.results.iter().map(|t| t.optimal)),
    ))
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(spanning_tree_single, m)?)?;
    m.add_function(wrap_pyfunction!(spanning_tree_grouped, m)?)?;
    m.add_function(wrap_pyfunction!(steiner_tree_single, m)?)?;
    m.add_function(wrap_pyfunction!(steiner_tree_grouped, m)?)?;
    Ok(())
}
