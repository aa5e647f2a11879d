//! Bindings of the partition family (`src/partition/`).

use numpy::{PyArray1, PyArray2, PyArrayMethods};
use pyo3::prelude::*;

use rayon::prelude::*;

use super::convert::{as_point_slice, index_rows, index_values};
use super::errors::input_error;
use super::{labels_arg, points_arg, run_detached, weights_arg};
use crate::geometry::{Point, Weights};
use crate::partition::{delaunay, nearest_site, voronoi_cells, Region};

fn flat_points(points: &[Point]) -> Vec<f64> {
    points.iter().flatten().copied().collect()
}

fn rows<'py>(py: Python<'py>, flat: Vec<i64>, width: usize) -> PyResult<Bound<'py, PyArray2<i64>>> {
    let n = flat.len() / width;
    PyArray1::from_vec(py, flat).reshape([n, width])
}

/// (triangles (m, 3), adjacent (m, 3) with -1 on the hull, hull (h,), edges (e, 2), representative (n,))
type TriangulationTuple<'py> = (
    Bound<'py, PyArray2<i64>>,
    Bound<'py, PyArray2<i64>>,
    Bound<'py, PyArray1<i64>>,
    Bound<'py, PyArray2<i64>>,
    Bound<'py, PyArray1<i64>>,
);

#[pyfunction]
#[pyo3(signature = (points,))]
fn delaunay_triangulation<'py>(py: Python<'py>, points: &Bound<'py, PyAny>) -> PyResult<TriangulationTuple<'py>> {
    let points = points_arg(points, "points")?;
    let pts = as_point_slice(&points);
    let (triangles, adjacent, hull, edges, representative) = run_detached(py, || {
        let t = delaunay(pts)?;
        let mut adjacent = vec![0i64; 3 * t.adjacent.len()];
        adjacent.par_chunks_mut(3).zip(t.adjacent.par_iter()).for_each(|(out, across)| {
            for (o, a) in out.iter_mut().zip(across) {
                *o = a.map_or(-1, |i| i as i64);
            }
        });
        Ok((
            index_rows(t.triangles),
            adjacent,
            index_values(t.hull),
            index_rows(t.edges),
            index_values(t.representative),
        ))
    })?;
    Ok((
        rows(py, triangles, 3)?,
        rows(py, adjacent, 3)?,
        PyArray1::from_vec(py, hull),
        rows(py, edges, 2)?,
        PyArray1::from_vec(py, representative),
    ))
}

/// (vertices (V, 2), offsets (n + 1,), parts (R + 1,), area (n,))
type CellsTuple<'py> =
    (Bound<'py, PyArray2<f64>>, Bound<'py, PyArray1<i64>>, Bound<'py, PyArray1<i64>>, Bound<'py, PyArray1<f64>>);

#[pyfunction]
#[pyo3(signature = (sites, region_vertices, ring_offsets))]
fn voronoi_cells_clipped<'py>(
    py: Python<'py>,
    sites: &Bound<'py, PyAny>,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
) -> PyResult<CellsTuple<'py>> {
    let sites = points_arg(sites, "sites")?;
    let s = as_point_slice(&sites);
    let region = match (region_vertices.filter(|r| !r.is_none()), ring_offsets.filter(|r| !r.is_none())) {
        (Some(vertices), Some(offsets)) => {
            let offsets = labels_arg(offsets, "region ring offsets")?;
            let offsets: Vec<usize> = offsets
                .as_slice()?
                .iter()
                .map(|&o| usize::try_from(o))
                .collect::<Result<_, _>>()
                .map_err(|_| input_error("region ring offsets must be >= 0".into()))?;
            Some((points_arg(vertices, "region")?, offsets))
        }
        (None, None) => None,
        _ => return Err(input_error("region vertices and ring offsets must be given together".into())),
    };
    let region = region.as_ref().map(|(v, o)| Region { vertices: as_point_slice(v), ring_offsets: o });
    let (vertices, offsets, parts, area) = run_detached(py, || {
        let c = voronoi_cells(s, region)?;
        Ok((flat_points(&c.vertices), index_values(c.offsets), index_values(c.parts), c.area))
    })?;
    let v = vertices.len() / 2;
    Ok((
        PyArray1::from_vec(py, vertices).reshape([v, 2])?,
        PyArray1::from_vec(py, offsets),
        PyArray1::from_vec(py, parts),
        PyArray1::from_vec(py, area),
    ))
}

/// (index (n,), distance (n,), load (k,), cost)
type AllocationTuple<'py> = (Bound<'py, PyArray1<i64>>, Bound<'py, PyArray1<f64>>, Bound<'py, PyArray1<f64>>, f64);

#[pyfunction]
#[pyo3(signature = (points, sites, weights))]
fn nearest_site_allocation<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    sites: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
) -> PyResult<AllocationTuple<'py>> {
    let points = points_arg(points, "points")?;
    let sites = points_arg(sites, "sites")?;
    let weights = weights_arg(weights, "weights")?;
    let (p, s) = (as_point_slice(&points), as_point_slice(&sites));
    let w = weights.as_ref().map(|w| w.as_slice()).transpose()?;
    let (index, a) = run_detached(py, || {
        let mut a = nearest_site(p, s, Weights::from_option(w))?;
        let index = index_values(std::mem::take(&mut a.index));
        Ok((index, a))
    })?;
    Ok((PyArray1::from_vec(py, index), PyArray1::from_vec(py, a.distance), PyArray1::from_vec(py, a.load), a.cost))
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(delaunay_triangulation, m)?)?;
    m.add_function(wrap_pyfunction!(voronoi_cells_clipped, m)?)?;
    m.add_function(wrap_pyfunction!(nearest_site_allocation, m)?)?;
    Ok(())
}
