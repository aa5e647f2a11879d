//! Bindings of the spherical Delaunay triangulation, Voronoi cells and spanning tree
//! (`src/geodesic/sphere/`). Indices are input rows; lengths metres, areas square metres.

use numpy::{PyArray1, PyArray2, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use super::convert::{float_arg, index_rows, index_values};
use super::fields::Fields;
use super::runtime::run_on_points;
use crate::geodesic::{
    sphere_delaunay_watched, sphere_spanning_tree_watched, sphere_voronoi_cells_watched, SphereCellOptions,
};
use crate::geometry::Point;

fn rows<'py>(py: Python<'py>, flat: Vec<i64>, width: usize) -> PyResult<Bound<'py, PyArray2<i64>>> {
    let n = flat.len() / width;
    PyArray1::from_vec(py, flat).reshape([n, width])
}

fn coordinates<'py>(py: Python<'py>, points: &[Point]) -> PyResult<Bound<'py, PyArray2<f64>>> {
    let flat: Vec<f64> = points.iter().flatten().copied().collect();
    PyArray1::from_vec(py, flat).reshape([points.len(), 2])
}

/// Fields: corners (m, 3), across (m, 3) with -1 on the boundary, edges (e, 2), boundary
/// (b, 2), representative (n,), area (m,) square metres, outward_faces.
#[pyfunction]
#[pyo3(signature = (points, progress=None))]
fn sphere_delaunay_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let label = "geodesic delaunay (points inserted, triangle areas)";
    let t = run_on_points(py, points, "points", progress, label, sphere_delaunay_watched)?;
    let across: Vec<i64> = t.adjacent.iter().flatten().map(|a| a.map_or(-1, |i| i as i64)).collect();
    Ok(Fields::new(py)
        .put("corners", rows(py, index_rows(t.triangles), 3)?)?
        .put("across", rows(py, across, 3)?)?
        .put("edges", rows(py, index_rows(t.edges), 2)?)?
        .put("boundary", rows(py, index_rows(t.boundary), 2)?)?
        .put("representative", PyArray1::from_vec(py, index_values(t.representative)))?
        .put("area", PyArray1::from_vec(py, t.area))?
        .put("outward_faces", t.outward_faces)?
        .done())
}

/// Fields: vertices (v, 2) lon/lat, vertex_vectors (v, 3), vertex_offsets (n + 1,),
/// cell_vertices (c,), ring_offsets (n + 1,), rings (r, 2) lon/lat, area (n,) square metres,
/// solid_angle (n,) steradians.
#[pyfunction]
#[pyo3(signature = (sites, max_edge_degrees, progress=None))]
fn sphere_voronoi_single<'py>(
    py: Python<'py>,
    sites: &Bound<'py, PyAny>,
    max_edge_degrees: &Bound<'py, PyAny>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let step = float_arg(max_edge_degrees, "max_edge_degrees", "in (0, 90]", |x| x > 0.0 && x <= 90.0)?;
    let options = SphereCellOptions { max_edge_degrees: step };
    // Ctrl-C stops the hull within a block of insertions and the cells within one cell per
    // worker thread.
    let label = "geodesic voronoi_cells (sites inserted, rings, areas)";
    let c = run_on_points(py, sites, "sites", progress, label, |s, watch| {
        sphere_voronoi_cells_watched(s, &options, watch)
    })?;
    let flat: Vec<f64> = c.vertex_vectors.iter().flatten().copied().collect();
    let vectors = PyArray1::from_vec(py, flat).reshape([c.vertex_vectors.len(), 3])?;
    Ok(Fields::new(py)
        .put("vertices", coordinates(py, &c.vertices)?)?
        .put("vertex_vectors", vectors)?
        .put("vertex_offsets", PyArray1::from_vec(py, index_values(c.vertex_offsets)))?
        .put("cell_vertices", PyArray1::from_vec(py, index_values(c.cell_vertices)))?
        .put("ring_offsets", PyArray1::from_vec(py, index_values(c.ring_offsets)))?
        .put("rings", coordinates(py, &c.rings)?)?
        .put("area", PyArray1::from_vec(py, c.area))?
        .put("solid_angle", PyArray1::from_vec(py, c.solid_angle))?
        .done())
}

/// Fields: end_a, end_b (e,) input rows, smaller first; length (e,) metres; total (metres).
#[pyfunction]
#[pyo3(signature = (points, progress=None))]
fn sphere_spanning_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let label = "geodesic spanning_tree (points inserted, edges measured)";
    let t = run_on_points(py, points, "points", progress, label, sphere_spanning_tree_watched)?;
    let total = {
        let mut sum = crate::geometry::CompensatedSum::default();
        t.length.iter().for_each(|&l| sum.add(l));
        sum.total()
    };
    Ok(Fields::new(py)
        .put("end_a", PyArray1::from_vec(py, t.edges.iter().map(|e| e[0] as i64).collect::<Vec<_>>()))?
        .put("end_b", PyArray1::from_vec(py, t.edges.iter().map(|e| e[1] as i64).collect::<Vec<_>>()))?
        .put("length", PyArray1::from_vec(py, t.length))?
        .put("total", total)?
        .done())
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(sphere_delaunay_single, m)?)?;
    m.add_function(wrap_pyfunction!(sphere_voronoi_single, m)?)?;
    m.add_function(wrap_pyfunction!(sphere_spanning_single, m)?)?;
    Ok(())
}
