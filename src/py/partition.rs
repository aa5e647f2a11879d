//! Bindings of the partition family (`src/partition/`).
//!
//! Every function returns named fields (see `fields.rs`). Grouped forms lay per-row values out
//! in input order (`-1`, NaN or empty for the rows of a skipped group) and say where each row
//! sits: `row_group` / `point_group` / `site_group` give the position of its group in `labels`.

use numpy::{PyArray1, PyArray2, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use rayon::prelude::*;

use super::convert::{as_point_slice, index_rows, index_values, on_error_arg, region_arg, Cloud};
use super::fields::Fields;
use super::runtime::{progress_arg, run_on_points, run_watched, Progress};
use super::{labels_arg, points_arg, run_detached, weights_arg};
use crate::batch::{OnGroupError, RowPlaces};
use crate::cancel::Watch;
use crate::geometry::{Point, Weights};
use crate::partition::{
    delaunay_grouped_watched as delaunay_groups, delaunay_watched, nearest_site_grouped_watched as nearest_site_groups,
    nearest_site_watched, voronoi_cells_grouped_watched as voronoi_cells_groups, voronoi_cells_watched, Allocation,
    Region, SiteAllocations, Triangulation, VoronoiCells,
};
use crate::partition::{power_cells, power_cells_grouped as power_cells_groups, PowerCells};

fn flat_points(points: &[Point]) -> Vec<f64> {
    points.iter().flatten().copied().collect()
}

fn rows<'py>(py: Python<'py>, flat: Vec<i64>, width: usize) -> PyResult<Bound<'py, PyArray2<i64>>> {
    let n = flat.len() / width;
    PyArray1::from_vec(py, flat).reshape([n, width])
}

/// `across[t][k]` as int64, `-1` on the outline, with `first` added to every triangle number
/// (the position of the triangulation's first triangle among all groups' triangles).
fn across_values(adjacent: &[[Option<usize>; 3]], first: usize) -> Vec<i64> {
    let mut out = vec![0i64; 3 * adjacent.len()];
    out.par_chunks_mut(3).zip(adjacent.par_iter()).for_each(|(out, across)| {
        for (o, a) in out.iter_mut().zip(across) {
            *o = a.map_or(-1, |i| (i + first) as i64);
        }
    });
    out
}

/// The group position of every row, as int64.
fn positions(places: &RowPlaces) -> Vec<i64> {
    places.group.iter().map(|&g| g as i64).collect()
}

/// Fields: corners (m, 3), across (m, 3) with -1 on the outline, outline (h,), edges (e, 2),
/// representative (n,), area (m,).
#[pyfunction]
#[pyo3(signature = (points, progress=None))]
fn delaunay_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let label = "delaunay (points triangulated)";
    let (area, t) = run_on_points(py, points, "points", progress, label, |pts, watch| {
        let t = delaunay_watched(pts, watch)?;
        Ok((t.areas(pts), t))
    })?;
    let across = across_values(&t.adjacent, 0);
    let Triangulation { triangles, hull, edges, representative, .. } = t;
    Ok(Fields::new(py)
        .put("corners", rows(py, index_rows(triangles), 3)?)?
        .put("across", rows(py, across, 3)?)?
        .put("outline", PyArray1::from_vec(py, index_values(hull)))?
        .put("edges", rows(py, index_rows(edges), 2)?)?
        .put("representative", PyArray1::from_vec(py, index_values(representative)))?
        .put("area", PyArray1::from_vec(py, area))?
        .done())
}

/// Fields: labels (G,), problem (G,), corners (M, 3) and edges (E, 2) of every group in label
/// order (input rows) with triangle_offsets / edge_offsets (G + 1,), across (M, 3) naming rows of
/// `corners` (-1 on an outline), area (M,), outline (H,) with outline_offsets (G + 1,),
/// representative (n,) (-1 for rows of a skipped group), row_group (n,).
#[pyfunction]
#[pyo3(signature = (points, groups, errors, progress=None))]
fn delaunay_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    groups: &Bound<'py, PyAny>,
    errors: &str,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let mut progress = progress_arg(progress, "delaunay (points of finished groups)")?;
    let on_error = on_error_arg(errors)?;
    let cloud = Cloud::read(points, None, Some(groups))?;
    let (pts, l) = (cloud.points(), cloud.labels()?);
    let watch = Watch::new();
    let (g, places) = run_watched(py, &watch, &mut progress, || delaunay_groups(pts, l, on_error, &watch))?;
    let (triangle_offsets, corners) = g.csr(|t| t.triangles.as_slice());
    let (edge_offsets, edges) = g.csr(|t| t.edges.as_slice());
    let (outline_offsets, outline) = g.csr(|t| t.hull.as_slice());
    let (across, area) = run_detached(py, || {
        let solved =
            g.results.iter().zip(&triangle_offsets).filter_map(|(r, &first)| r.as_ref().ok().map(|t| (t, first)));
        let across: Vec<i64> = solved.clone().flat_map(|(t, first)| across_values(&t.adjacent, first)).collect();
        let area: Vec<f64> = solved.flat_map(|(t, _)| t.areas(pts)).collect();
        Ok((across, area))
    })?;
    let representative = places.by_row(&g, -1i64, |t, k| t.representative[k] as i64);
    Ok(Fields::new(py)
        .grouped(&g)?
        .put("corners", rows(py, index_rows(corners), 3)?)?
        .put("across", rows(py, across, 3)?)?
        .put("area", PyArray1::from_vec(py, area))?
        .put("triangle_offsets", PyArray1::from_vec(py, index_values(triangle_offsets)))?
        .put("outline", PyArray1::from_vec(py, index_values(outline)))?
        .put("outline_offsets", PyArray1::from_vec(py, index_values(outline_offsets)))?
        .put("edges", rows(py, index_rows(edges), 2)?)?
        .put("edge_offsets", PyArray1::from_vec(py, index_values(edge_offsets)))?
        .put("representative", PyArray1::from_vec(py, representative))?
        .put("row_group", PyArray1::from_vec(py, positions(&places)))?
        .done())
}

/// The cells' rings as fields: vertices (V, 2), offsets (n + 1,), parts (R + 1,), area (n,),
/// exterior (R,).
pub(super) fn cell_fields<'py>(py: Python<'py>, fields: Fields<'py>, cells: VoronoiCells) -> PyResult<Fields<'py>> {
    let v = cells.vertices.len();
    fields
        .put("vertices", PyArray1::from_vec(py, flat_points(&cells.vertices)).reshape([v, 2])?)?
        .put("offsets", PyArray1::from_vec(py, index_values(cells.offsets)))?
        .put("parts", PyArray1::from_vec(py, index_values(cells.parts)))?
        .put("area", PyArray1::from_vec(py, cells.area))?
        .put("exterior", PyArray1::from_vec(py, cells.exterior))
}

/// Fields: vertices (V, 2), offsets (n + 1,), parts (R + 1,), area (n,), exterior (R,).
#[pyfunction]
#[pyo3(signature = (sites, region_vertices, ring_offsets, progress=None))]
fn voronoi_cells_single<'py>(
    py: Python<'py>,
    sites: &Bound<'py, PyAny>,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let region = region_arg(region_vertices, ring_offsets)?;
    let region = region.as_ref().map(|(v, o)| Region { vertices: as_point_slice(v), ring_offsets: o });
    let label = "voronoi_cells (sites triangulated, cells cut, cells written)";
    let cells = run_on_points(py, sites, "sites", progress, label, |s, watch| voronoi_cells_watched(s, region, watch))?;
    Ok(cell_fields(py, Fields::new(py), cells)?.done())
}

/// Fields: labels (G,), problem (G,), the cells of every site row in input order as
/// vertices (V, 2), offsets (k + 1,), parts (R + 1,), area (k,), exterior (R,) (a skipped group's sites have
/// empty cells and NaN area), site_group (k,).
#[pyfunction]
#[pyo3(signature = (sites, groups, region_vertices, ring_offsets, errors, progress=None))]
fn voronoi_cells_grouped<'py>(
    py: Python<'py>,
    sites: &Bound<'py, PyAny>,
    groups: &Bound<'py, PyAny>,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
    errors: &str,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let mut progress = progress_arg(progress, "voronoi_cells (sites of finished groups)")?;
    let on_error = on_error_arg(errors)?;
    let sites = points_arg(sites, "sites")?;
    let labels = labels_arg(groups, "groups")?;
    let s = as_point_slice(&sites);
    let l = labels.as_slice()?;
    let region = region_arg(region_vertices, ring_offsets)?;
    let region = region.as_ref().map(|(v, o)| Region { vertices: as_point_slice(v), ring_offsets: o });
    let watch = Watch::new();
    let (g, places) = run_watched(py, &watch, &mut progress, || voronoi_cells_groups(s, l, region, on_error, &watch))?;
    let cells = run_detached(py, || Ok(VoronoiCells::by_row(&g, &places)))?;
    let fields = Fields::new(py).grouped(&g)?;
    Ok(cell_fields(py, fields, cells)?.put("site_group", PyArray1::from_vec(py, positions(&places)))?.done())
}

/// The powers argument: one float per site (finite values are checked by the kernel).
fn powers_arg<'py>(powers: &Bound<'py, PyAny>) -> PyResult<numpy::PyReadonlyArray1<'py, f64>> {
    weights_arg(Some(powers), "powers")?.ok_or_else(|| super::errors::input_error("powers must be given".into()))
}

/// Fields: the cells (vertices, offsets, parts, area, exterior as for Voronoi cells),
/// redundant (n,), and the regular triangulation: corners (m, 3), across (m, 3) with -1 on
/// the outline, edges (e, 2).
#[pyfunction]
#[pyo3(signature = (sites, powers, region_vertices, ring_offsets))]
fn power_cells_single<'py>(
    py: Python<'py>,
    sites: &Bound<'py, PyAny>,
    powers: &Bound<'py, PyAny>,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    let sites = points_arg(sites, "sites")?;
    let powers = powers_arg(powers)?;
    let (s, w) = (as_point_slice(&sites), powers.as_slice()?);
    let region = region_arg(region_vertices, ring_offsets)?;
    let region = region.as_ref().map(|(v, o)| Region { vertices: as_point_slice(v), ring_offsets: o });
    let p = run_detached(py, || power_cells(s, w, region))?;
    let across = across_values(&p.adjacent, 0);
    let PowerCells { cells, redundant, triangles, edges, .. } = p;
    Ok(cell_fields(py, Fields::new(py), cells)?
        .put("redundant", PyArray1::from_vec(py, redundant))?
        .put("corners", rows(py, index_rows(triangles), 3)?)?
        .put("across", rows(py, across, 3)?)?
        .put("edges", rows(py, index_rows(edges), 2)?)?
        .done())
}

/// Fields: labels (G,), problem (G,), the cells of every site row in input order (as for
/// grouped Voronoi cells; a skipped group's sites have empty cells and NaN area), redundant
/// (k,) (false there), site_group (k,), and every group's regular-triangulation edges (E, 2)
/// as input rows in label order with edge_offsets (G + 1,).
#[pyfunction]
#[pyo3(signature = (sites, powers, groups, region_vertices, ring_offsets, errors))]
fn power_cells_grouped<'py>(
    py: Python<'py>,
    sites: &Bound<'py, PyAny>,
    powers: &Bound<'py, PyAny>,
    groups: &Bound<'py, PyAny>,
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
    errors: &str,
) -> PyResult<Bound<'py, PyDict>> {
    let on_error = on_error_arg(errors)?;
    let sites = points_arg(sites, "sites")?;
    let powers = powers_arg(powers)?;
    let labels = labels_arg(groups, "groups")?;
    let (s, w, l) = (as_point_slice(&sites), powers.as_slice()?, labels.as_slice()?);
    let region = region_arg(region_vertices, ring_offsets)?;
    let region = region.as_ref().map(|(v, o)| Region { vertices: as_point_slice(v), ring_offsets: o });
    let (g, places, cells) = run_detached(py, || {
        let (g, places) = power_cells_groups(s, w, l, region, on_error)?;
        let cells = PowerCells::cells_by_row(&g, &places);
        Ok((g, places, cells))
    })?;
    let redundant = places.by_row(&g, false, |p, k| p.redundant[k]);
    let (edge_offsets, edges) = g.csr(|p| p.edges.as_slice());
    let fields = Fields::new(py).grouped(&g)?;
    Ok(cell_fields(py, fields, cells)?
        .put("redundant", PyArray1::from_vec(py, redundant))?
        .put("site_group", PyArray1::from_vec(py, positions(&places)))?
        .put("edges", rows(py, index_rows(edges), 2)?)?
        .put("edge_offsets", PyArray1::from_vec(py, index_values(edge_offsets)))?
        .done())
}

/// Fields: assignment (n,), distance (n,), load (k,), count (k,), cost, total_load.
#[pyfunction]
#[pyo3(signature = (points, sites, weights, progress=None))]
fn nearest_site_single<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    sites: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    // Watched: Ctrl-C stops the sites' indexing, or the search within one chunk of points
    // per worker thread.
    let progress = progress_arg(progress, "nearest_site (points)")?;
    nearest_site_binding(py, (points, sites, weights), progress, nearest_site_watched)
}

/// The binding of a nearest-site kernel (planar here, geodesic in `geodesic.rs`): reads
/// `(points, sites, weights)`, runs `kernel` watched and lays its allocation out as the
/// fields of `nearest_site_single`.
pub(super) fn nearest_site_binding<'py>(
    py: Python<'py>,
    (points, sites, weights): (&Bound<'py, PyAny>, &Bound<'py, PyAny>, Option<&Bound<'py, PyAny>>),
    mut progress: Progress<'py>,
    kernel: impl FnOnce(&[Point], &[Point], Weights<'_>, &Watch) -> crate::Result<Allocation> + Send,
) -> PyResult<Bound<'py, PyDict>> {
    let points = points_arg(points, "points")?;
    let sites = points_arg(sites, "sites")?;
    let weights = weights_arg(weights, "weights")?;
    let (p, s) = (as_point_slice(&points), as_point_slice(&sites));
    let w = weights.as_ref().map(|w| w.as_slice()).transpose()?;
    let watch = Watch::new();
    let a = run_watched(py, &watch, &mut progress, || kernel(p, s, Weights::from_option(w), &watch))?;
    Ok(Fields::new(py)
        .put("assignment", PyArray1::from_vec(py, index_values(a.index)))?
        .put("distance", PyArray1::from_vec(py, a.distance))?
        .put("load", PyArray1::from_vec(py, a.load))?
        .put("count", PyArray1::from_vec(py, index_values(a.count)))?
        .put("cost", a.cost)?
        .put("total_load", a.total_load)?
        .done())
}

/// Fields: labels (G,), problem (G,); per demand row assignment (n,) (the site's input row;
/// -1 in a skipped group), distance (n,) (NaN there), point_group (n,); per site row load (k,)
/// (NaN in a skipped group), count (k,) (0 there), site_group (k,); per group cost,
/// total_load (G,) (NaN when skipped), point_count, site_count (G,).
#[pyfunction]
#[pyo3(signature = (points, sites, weights, groups, site_groups, errors, progress=None))]
#[allow(clippy::too_many_arguments)]
fn nearest_site_grouped<'py>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    sites: &Bound<'py, PyAny>,
    weights: Option<&Bound<'py, PyAny>>,
    groups: &Bound<'py, PyAny>,
    site_groups: &Bound<'py, PyAny>,
    errors: &str,
    progress: Option<&Bound<'py, PyAny>>,
) -> PyResult<Bound<'py, PyDict>> {
    // Watched: Ctrl-C skips the groups not begun and stops the running ones as the
    // ungrouped search stops.
    let progress = progress_arg(progress, "nearest_site (points)")?;
    let arguments = (points, sites, weights, groups, site_groups);
    nearest_site_grouped_binding(py, arguments, errors, progress, nearest_site_groups)
}

/// The arguments of a grouped nearest-site binding: points, sites, weights, groups,
/// site_groups.
pub(super) type GroupedSiteArguments<'a, 'py> = (
    &'a Bound<'py, PyAny>,
    &'a Bound<'py, PyAny>,
    Option<&'a Bound<'py, PyAny>>,
    &'a Bound<'py, PyAny>,
    &'a Bound<'py, PyAny>,
);

/// A grouped nearest-site kernel: points, weights, groups, sites, site groups, what to do with
/// a failing group, and the watch.
pub(super) type GroupedSiteKernel =
    fn(&[Point], Weights<'_>, &[i64], &[Point], &[i64], OnGroupError, &Watch) -> crate::Result<SiteAllocations>;

/// The binding of a grouped nearest-site kernel (planar here, geodesic in `geodesic.rs`):
/// reads the arguments, runs `kernel` watched and lays the groups' allocations out as the
/// fields of `nearest_site_grouped`.
pub(super) fn nearest_site_grouped_binding<'py>(
    py: Python<'py>,
    (points, sites, weights, groups, site_groups): GroupedSiteArguments<'_, 'py>,
    errors: &str,
    mut progress: Progress<'py>,
    kernel: GroupedSiteKernel,
) -> PyResult<Bound<'py, PyDict>> {
    let on_error = on_error_arg(errors)?;
    let points = points_arg(points, "points")?;
    let sites = points_arg(sites, "sites")?;
    let weights = weights_arg(weights, "weights")?;
    let labels = labels_arg(groups, "groups")?;
    let site_labels = labels_arg(site_groups, "site_groups")?;
    let (p, s) = (as_point_slice(&points), as_point_slice(&sites));
    let w = weights.as_ref().map(|w| w.as_slice()).transpose()?;
    let (l, sl) = (labels.as_slice()?, site_labels.as_slice()?);
    let watch = Watch::new();
    let r = run_watched(py, &watch, &mut progress, || kernel(p, Weights::from_option(w), l, s, sl, on_error, &watch))?;
    let g = &r.grouped;
    let assignment = r.points.by_row(g, -1i64, |a, k| a.index[k] as i64);
    let distance = r.points.by_row(g, f64::NAN, |a, k| a.distance[k]);
    let load = r.sites.by_row(g, f64::NAN, |a, k| a.load[k]);
    let count = r.sites.by_row(g, 0i64, |a, k| a.count[k] as i64);
    let groups = g.labels.len();
    let sizes = |places: &RowPlaces| index_values(places.sizes(groups));
    Ok(Fields::new(py)
        .grouped(g)?
        .put("assignment", PyArray1::from_vec(py, assignment))?
        .put("distance", PyArray1::from_vec(py, distance))?
        .put("point_group", PyArray1::from_vec(py, positions(&r.points)))?
        .put("load", PyArray1::from_vec(py, load))?
        .put("count", PyArray1::from_vec(py, count))?
        .put("site_group", PyArray1::from_vec(py, positions(&r.sites)))?
        .put("cost", PyArray1::from_vec(py, g.column(f64::NAN, |a| a.cost)))?
        .put("total_load", PyArray1::from_vec(py, g.column(f64::NAN, |a| a.total_load)))?
        .put("point_count", PyArray1::from_vec(py, sizes(&r.points)))?
        .put("site_count", PyArray1::from_vec(py, sizes(&r.sites)))?
        .done())
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(delaunay_single, m)?)?;
    m.add_function(wrap_pyfunction!(delaunay_grouped, m)?)?;
    m.add_function(wrap_pyfunction!(voronoi_cells_single, m)?)?;
    m.add_function(wrap_pyfunction!(voronoi_cells_grouped, m)?)?;
    m.add_function(wrap_pyfunction!(power_cells_single, m)?)?;
    m.add_function(wrap_pyfunction!(power_cells_grouped, m)?)?;
    m.add_function(wrap_pyfunction!(nearest_site_single, m)?)?;
    m.add_function(wrap_pyfunction!(nearest_site_grouped, m)?)?;
    Ok(())
}
