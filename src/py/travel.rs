//! Bindings of the travel family (`src/travel/`): a compiled travel graph held by Python,
//! and its searches. No geometry here: points and node numbers are converted and handed to
//! the kernels.

use numpy::{PyArray1, PyArrayMethods, PyReadonlyArray2};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use super::convert::{as_point_slice, count_arg, labels_arg, optional_float_arg, points_arg, weights_arg};
use super::errors::argument_error;
use super::fields::Fields;
use super::run_detached;
use super::runtime::{progress_arg, run_watched};
use crate::cancel::Watch;
use crate::geometry::{Point, Weights};
use crate::travel::{
    catchment_pieces, network_catchments, node_spots, reach, snap_points, travel_costs, CostOptions, LineOptions,
    Pieces, Snap, Spot, TravelGraph,
};

/// A travel graph built by the kernels (`placewise.travel.TravelGraph` wraps it).
#[pyclass(frozen, module = "placewise._core")]
pub(crate) struct TravelNetwork {
    graph: TravelGraph,
}

/// Where travel starts or ends, as the caller gave it: node numbers (a 1-D integer array)
/// or points to attach.
enum Places<'py> {
    Nodes(Vec<i64>),
    Points(PyReadonlyArray2<'py, f64>),
}

fn places_arg<'py>(obj: &Bound<'py, PyAny>, argument: &str) -> PyResult<Places<'py>> {
    let Ok(array) = obj.py().import("numpy")?.call_method1("asarray", (obj,)) else {
        // Not an array at all (ragged lists): the points path names the problem.
        return Ok(Places::Points(points_arg(obj, argument)?));
    };
    let ndim: usize = array.getattr("ndim")?.extract()?;
    let kind: String = array.getattr("dtype")?.getattr("kind")?.extract()?;
    let size: usize = array.getattr("size")?.extract()?;
    // Node numbers: a 1-D integer array (an empty list counts as no places at all).
    if ndim == 1 && (matches!(kind.as_str(), "i" | "u") || size == 0) {
        let nodes = labels_arg(&array.call_method1("astype", ("int64",))?, argument)?;
        return Ok(Places::Nodes(nodes.as_slice()?.to_vec()));
    }
    Ok(Places::Points(points_arg(obj, argument)?))
}

/// The argument names the kernels use in their errors.
fn static_name(argument: &str) -> &'static str {
    match argument {
        "origins" => "origins",
        "destinations" => "destinations",
        "sites" => "sites",
        _ => "points",
    }
}

/// [`Places`] borrowed as plain slices, to cross into the detached kernel run.
enum PlacesView<'a> {
    Nodes(&'a [i64]),
    Points(&'a [Point]),
}

impl Places<'_> {
    fn view(&self) -> PlacesView<'_> {
        match self {
            Places::Nodes(n) => PlacesView::Nodes(n),
            Places::Points(p) => PlacesView::Points(as_point_slice(p)),
        }
    }
}

impl PlacesView<'_> {
    /// Spots (and, for points, their attachments), computed in the kernel.
    fn resolve(
        &self,
        graph: &TravelGraph,
        argument: &str,
        max_gap: Option<f64>,
    ) -> crate::Result<(Vec<Spot>, Vec<Snap>)> {
        let argument = static_name(argument);
        let count = match self {
            PlacesView::Nodes(n) => n.len(),
            PlacesView::Points(p) => p.len(),
        };
        if count == 0 {
            return Err(crate::Error::TooFewPoints { argument, needed: 1, got: 0, counted: "places" });
        }
        match self {
            PlacesView::Nodes(n) => Ok((node_spots(graph, n, argument)?, Vec::new())),
            PlacesView::Points(p) => {
                let snaps = snap_points(graph, p, argument, max_gap)?;
                Ok((snaps.iter().map(|s| s.spot).collect(), snaps))
            }
        }
    }
}

fn max_gap_arg(obj: Option<&Bound<'_, PyAny>>) -> PyResult<Option<f64>> {
    optional_float_arg(obj, "max_gap", ">= 0", |g| g >= 0.0)
}

fn limit_arg(obj: Option<&Bound<'_, PyAny>>) -> PyResult<Option<f64>> {
    optional_float_arg(obj, "limit", ">= 0", |g| g >= 0.0)
}

fn snap_fields<'py>(py: Python<'py>, fields: Fields<'py>, prefix: &str, snaps: &[Snap]) -> PyResult<Fields<'py>> {
    let on: Vec<f64> = snaps.iter().flat_map(|s| s.on_edge).collect();
    fields
        .put(&format!("{prefix}edge"), PyArray1::from_iter(py, snaps.iter().map(|s| s.edge as i64)))?
        .put(&format!("{prefix}along"), PyArray1::from_iter(py, snaps.iter().map(|s| s.along)))?
        .put(&format!("{prefix}gap"), PyArray1::from_iter(py, snaps.iter().map(|s| s.gap)))?
        .put(&format!("{prefix}on_edge"), PyArray1::from_vec(py, on).reshape([snaps.len(), 2])?)?
        .put(
            &format!("{prefix}node"),
            PyArray1::from_iter(
                py,
                snaps.iter().map(|s| match s.spot {
                    Spot::Node(u) => u as i64,
                    Spot::OnEdge { .. } => -1,
                }),
            ),
        )
}

fn pieces_fields<'py>(py: Python<'py>, p: &Pieces) -> PyResult<Bound<'py, PyDict>> {
    let coords: Vec<f64> = p.coords.iter().flatten().copied().collect();
    Ok(Fields::new(py)
        .put("site", PyArray1::from_iter(py, p.pieces.iter().map(|x| x.site as i64)))?
        .put("edge", PyArray1::from_iter(py, p.pieces.iter().map(|x| x.edge as i64)))?
        .put("start", PyArray1::from_iter(py, p.pieces.iter().map(|x| x.start)))?
        .put("end", PyArray1::from_iter(py, p.pieces.iter().map(|x| x.end)))?
        .put("cost_start", PyArray1::from_iter(py, p.pieces.iter().map(|x| x.cost_start)))?
        .put("cost_end", PyArray1::from_iter(py, p.pieces.iter().map(|x| x.cost_end)))?
        .put("offsets", PyArray1::from_iter(py, p.offsets.iter().map(|&o| o as i64)))?
        .put("coords", PyArray1::from_vec(py, coords).reshape([p.coords.len(), 2])?)?
        .done())
}

fn optional_costs<'py>(obj: Option<&Bound<'py, PyAny>>, argument: &str) -> PyResult<Option<Vec<f64>>> {
    weights_arg(obj, argument)?.map(|a| Ok(a.as_slice()?.to_vec())).transpose()
}

fn optional_codes(obj: Option<&Bound<'_, PyAny>>, argument: &str) -> PyResult<Option<Vec<i64>>> {
    obj.filter(|o| !o.is_none()).map(|o| Ok(labels_arg(o, argument)?.as_slice()?.to_vec())).transpose()
}

/// A graph from edge arrays (node numbers from 0), with optional node coordinates.
#[pyfunction]
#[pyo3(signature = (tail, head, cost, reverse_cost, one_way, nodes, coordinates))]
#[allow(clippy::too_many_arguments)]
fn travel_from_edges(
    py: Python<'_>,
    tail: &Bound<'_, PyAny>,
    head: &Bound<'_, PyAny>,
    cost: &Bound<'_, PyAny>,
    reverse_cost: Option<&Bound<'_, PyAny>>,
    one_way: Option<&Bound<'_, PyAny>>,
    nodes: Option<&Bound<'_, PyAny>>,
    coordinates: Option<&Bound<'_, PyAny>>,
) -> PyResult<TravelNetwork> {
    let tail = labels_arg(tail, "tail")?;
    let head = labels_arg(head, "head")?;
    let cost = optional_costs(Some(cost), "cost")?.unwrap_or_default();
    let reverse = optional_costs(reverse_cost, "reverse_cost")?;
    let one_way = optional_codes(one_way, "one_way")?;
    let nodes = nodes.filter(|o| !o.is_none()).map(|n| count_arg(n, "nodes", 0, u32::MAX as usize - 1)).transpose()?;
    let coords = coordinates.filter(|o| !o.is_none()).map(|c| points_arg(c, "nodes")).transpose()?;
    let (t, h) = (tail.as_slice()?, head.as_slice()?);
    let xy: Option<&[Point]> = coords.as_ref().map(as_point_slice);
    let graph =
        run_detached(py, || TravelGraph::from_edges(t, h, &cost, reverse.as_deref(), one_way.as_deref(), nodes, xy))?;
    Ok(TravelNetwork { graph })
}

/// Offsets (`offsets`, `parts`) as non-negative positions.
fn positions_arg(obj: &Bound<'_, PyAny>, argument: &str) -> PyResult<Vec<usize>> {
    labels_arg(obj, argument)?
        .as_slice()?
        .iter()
        .map(|&o| usize::try_from(o).map_err(|_| argument_error(argument, format!("{argument} must be >= 0; got {o}"))))
        .collect()
}

/// A graph from lines given as coordinates and offsets (line `i` is
/// `coords[offsets[i]:offsets[i + 1]]`); with `parts`, row `r` is made of the lines
/// `parts[r]:parts[r + 1]` (multi-part geometries) and the columns hold one value per row.
#[pyfunction]
#[allow(clippy::too_many_arguments)]
#[pyo3(signature = (coords, offsets, cost, reverse_cost, one_way, tolerance, split_crossings=false, geodesic=false, parts=None))]
fn travel_from_lines(
    py: Python<'_>,
    coords: &Bound<'_, PyAny>,
    offsets: &Bound<'_, PyAny>,
    cost: Option<&Bound<'_, PyAny>>,
    reverse_cost: Option<&Bound<'_, PyAny>>,
    one_way: Option<&Bound<'_, PyAny>>,
    tolerance: &Bound<'_, PyAny>,
    split_crossings: bool,
    geodesic: bool,
    parts: Option<&Bound<'_, PyAny>>,
) -> PyResult<TravelNetwork> {
    let coords = points_arg(coords, "lines")?;
    let offsets = positions_arg(offsets, "offsets")?;
    let parts = parts.filter(|o| !o.is_none()).map(|p| positions_arg(p, "parts")).transpose()?;
    let cost = optional_costs(cost, "cost")?;
    let reverse = optional_costs(reverse_cost, "reverse_cost")?;
    let one_way = optional_codes(one_way, "one_way")?;
    let tolerance =
        super::convert::float_arg(tolerance, "tolerance", "finite and >= 0", |t| t.is_finite() && t >= 0.0)?;
    let xy = as_point_slice(&coords);
    let graph = run_detached(py, || {
        let options = LineOptions {
            cost: cost.as_deref(),
            reverse_cost: reverse.as_deref(),
            one_way: one_way.as_deref(),
            tolerance,
            split_crossings,
            geodesic,
            parts: parts.as_deref(),
        };
        TravelGraph::from_lines(xy, &offsets, &options)
    })?;
    Ok(TravelNetwork { graph })
}

fn nan_for_inf(values: &[f64]) -> Vec<f64> {
    values.iter().map(|&c| if c.is_finite() { c } else { f64::NAN }).collect()
}

#[pymethods]
impl TravelNetwork {
    /// Fields: nodes, edges, arcs, components, dangling, graph_bytes, shape_bytes, tail,
    /// head, forward, backward (NaN where the direction is not allowed), node_component,
    /// edge_component, node_xy (or None).
    fn info<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyDict>> {
        let g = &self.graph;
        let (tail, head) = g.ends();
        let (forward, backward) = g.edge_costs();
        let (graph_bytes, shape_bytes) = g.memory_bytes();
        let xy = g.node_coordinates().map(|c| {
            let flat: Vec<f64> = c.iter().flatten().copied().collect();
            PyArray1::from_vec(py, flat).reshape([c.len(), 2])
        });
        Ok(Fields::new(py)
            .put("nodes", g.node_count())?
            .put("edges", g.edge_count())?
            .put("arcs", g.arc_count())?
            .put("components", g.component_count())?
            .put("dangling", g.dangling_ends())?
            .put("graph_bytes", graph_bytes)?
            .put("shape_bytes", shape_bytes)?
            .put("tail", PyArray1::from_iter(py, tail.iter().map(|&t| t as i64)))?
            .put("head", PyArray1::from_iter(py, head.iter().map(|&t| t as i64)))?
            .put("forward", PyArray1::from_vec(py, nan_for_inf(forward)))?
            .put("backward", PyArray1::from_vec(py, nan_for_inf(backward)))?
            .put("node_component", PyArray1::from_iter(py, g.node_components().iter().map(|&c| c as i64)))?
            .put("edge_component", PyArray1::from_iter(py, g.edge_components().into_iter().map(|c| c as i64)))?
            .put("node_xy", xy.transpose()?)?
            .put("edge_line", g.edge_lines().map(|l| PyArray1::from_iter(py, l.iter().map(|&i| i as i64))))?
            .done())
    }

    /// Fields: edge, along, gap, on_edge, node (-1 when part-way along the edge).
    #[pyo3(signature = (points, max_gap))]
    fn snap<'py>(
        &self,
        py: Python<'py>,
        points: &Bound<'py, PyAny>,
        max_gap: Option<&Bound<'py, PyAny>>,
    ) -> PyResult<Bound<'py, PyDict>> {
        let max_gap = max_gap_arg(max_gap)?;
        let pts = points_arg(points, "points")?;
        let p = as_point_slice(&pts);
        let snaps = run_detached(py, || snap_points(&self.graph, p, "points", max_gap))?;
        Ok(snap_fields(py, Fields::new(py), "", &snaps)?.done())
    }

    /// Fields: offsets, columns, costs (the pairs within reach, row by row).
    #[pyo3(signature = (origins, destinations, limit, k, max_gap, progress=None))]
    #[allow(clippy::too_many_arguments)]
    fn costs<'py>(
        &self,
        py: Python<'py>,
        origins: &Bound<'py, PyAny>,
        destinations: &Bound<'py, PyAny>,
        limit: Option<&Bound<'py, PyAny>>,
        k: Option<&Bound<'py, PyAny>>,
        max_gap: Option<&Bound<'py, PyAny>>,
        progress: Option<&Bound<'py, PyAny>>,
    ) -> PyResult<Bound<'py, PyDict>> {
        let watch = Watch::new();
        let mut progress = progress_arg(progress, "travel costs (origins)")?;
        let options = CostOptions {
            limit: limit_arg(limit)?,
            k: k.filter(|o| !o.is_none()).map(|k| count_arg(k, "k", 1, usize::MAX)).transpose()?,
            watch: watch.clone(),
        };
        let max_gap = max_gap_arg(max_gap)?;
        let (o, d) = (places_arg(origins, "origins")?, places_arg(destinations, "destinations")?);
        let (o, d) = (o.view(), d.view());
        let graph = &self.graph;
        // Watched: Ctrl-C (and a raising progress callable) cancels the searches not yet begun.
        let (rows, n_dest) = run_watched(py, &watch, &mut progress, || {
            let (os, _) = o.resolve(graph, "origins", max_gap)?;
            let (ds, _) = d.resolve(graph, "destinations", max_gap)?;
            Ok((travel_costs(graph, &os, &ds, &options)?, ds.len()))
        })?;
        Ok(Fields::new(py)
            .put("offsets", PyArray1::from_iter(py, rows.offsets.iter().map(|&v| v as i64)))?
            .put("columns", PyArray1::from_iter(py, rows.columns.iter().map(|&v| v as i64)))?
            .put("costs", PyArray1::from_vec(py, rows.costs))?
            .put("destinations", n_dest)?
            .done())
    }

    /// Fields: site (-1 unreachable), cost (NaN unreachable), load, count, node_site,
    /// node_cost, unreachable, unreachable_weight, total_cost, worst_cost, and the points'
    /// and sites' attachments (point_edge, point_gap, ..., site_edge, site_gap, ...).
    #[pyo3(signature = (points, sites, weights, limit, max_gap))]
    fn catchments<'py>(
        &self,
        py: Python<'py>,
        points: &Bound<'py, PyAny>,
        sites: &Bound<'py, PyAny>,
        weights: Option<&Bound<'py, PyAny>>,
        limit: Option<&Bound<'py, PyAny>>,
        max_gap: Option<&Bound<'py, PyAny>>,
    ) -> PyResult<Bound<'py, PyDict>> {
        let limit = limit_arg(limit)?;
        let max_gap = max_gap_arg(max_gap)?;
        let (p, s) = (places_arg(points, "points")?, places_arg(sites, "sites")?);
        let (p, s) = (p.view(), s.view());
        let w = weights_arg(weights, "weights")?;
        let w = w.as_ref().map(|w| w.as_slice()).transpose()?;
        let graph = &self.graph;
        let (c, psnaps, ssnaps) = run_detached(py, || {
            let (ps, psnaps) = p.resolve(graph, "points", max_gap)?;
            let (ss, ssnaps) = s.resolve(graph, "sites", max_gap)?;
            Ok((network_catchments(graph, &ps, &ss, Weights::from_option(w), limit)?, psnaps, ssnaps))
        })?;
        let fields = Fields::new(py)
            .put("site", PyArray1::from_iter(py, c.site.iter().map(|s| s.map_or(-1, |s| s as i64))))?
            .put("cost", PyArray1::from_vec(py, c.cost))?
            .put("load", PyArray1::from_vec(py, c.load))?
            .put("count", PyArray1::from_iter(py, c.count.iter().map(|&v| v as i64)))?
            .put("node_site", PyArray1::from_iter(py, c.node_site.iter().map(|s| s.map_or(-1, |s| s as i64))))?
            .put("node_cost", PyArray1::from_vec(py, c.node_cost))?
            .put("unreachable", c.unreachable)?
            .put("unreachable_weight", c.unreachable_weight)?
            .put("total_cost", c.total_cost)?
            .put("worst_cost", c.worst_cost)?;
        let fields = snap_fields(py, fields, "point_", &psnaps)?;
        Ok(snap_fields(py, fields, "site_", &ssnaps)?.done())
    }

    /// Fields of the edge pieces by catchment: site, edge, start, end, cost_start, cost_end,
    /// offsets, coords.
    #[pyo3(signature = (sites, limit, max_gap))]
    fn catchment_edges<'py>(
        &self,
        py: Python<'py>,
        sites: &Bound<'py, PyAny>,
        limit: Option<&Bound<'py, PyAny>>,
        max_gap: Option<&Bound<'py, PyAny>>,
    ) -> PyResult<Bound<'py, PyDict>> {
        let limit = limit_arg(limit)?;
        let max_gap = max_gap_arg(max_gap)?;
        let s = places_arg(sites, "sites")?;
        let s = s.view();
        let graph = &self.graph;
        let pieces = run_detached(py, || {
            let (ss, _) = s.resolve(graph, "sites", max_gap)?;
            catchment_pieces(graph, &ss, limit)
        })?;
        pieces_fields(py, &pieces)
    }

    /// Fields of the pieces within `limit` of each site (as `catchment_edges`).
    #[pyo3(signature = (sites, limit, max_gap))]
    fn reach<'py>(
        &self,
        py: Python<'py>,
        sites: &Bound<'py, PyAny>,
        limit: &Bound<'py, PyAny>,
        max_gap: Option<&Bound<'py, PyAny>>,
    ) -> PyResult<Bound<'py, PyDict>> {
        let limit = super::convert::float_arg(limit, "limit", "finite and >= 0", |l| l.is_finite() && l >= 0.0)?;
        let max_gap = max_gap_arg(max_gap)?;
        let s = places_arg(sites, "sites")?;
        let s = s.view();
        let graph = &self.graph;
        let pieces = run_detached(py, || {
            let (ss, _) = s.resolve(graph, "sites", max_gap)?;
            reach(graph, &ss, limit)
        })?;
        pieces_fields(py, &pieces)
    }
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<TravelNetwork>()?;
    m.add_function(wrap_pyfunction!(travel_from_edges, m)?)?;
    m.add_function(wrap_pyfunction!(travel_from_lines, m)?)?;
    Ok(())
}
