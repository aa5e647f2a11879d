"""Capacitated sites on GeoDataFrames: demand allocated to sites that can each serve only so
much (:func:`placewise.capacity_allocation`) and capacity-constrained catchments
(:func:`placewise.capacity_cells`), in the frames' own CRS and row labels."""

from __future__ import annotations

from typing import Any, NamedTuple

import numpy as np

import placewise as _pw

from .._errors import labelled
from ._columns import column
from ._crs import MAX_SCALE_ERROR
from ._frames import annotated, call, framed, in_user_terms, prepare, refuse_geometry_named, weights, with_unit
from ._together import region_geometry

__all__ = ["AllocationLayers", "CellLayers", "capacity_allocation", "capacity_cells"]


class AllocationLayers(NamedTuple):
    """A capacitated allocation as four tables that every file writer keeps.

    Attributes
    ----------
    sites : GeoDataFrame
        A copy of the sites frame with ``capacity``, ``load`` (demand served), ``slack``
        (``capacity - load``) and ``price_<unit>`` (the optimal capacity price of the split
        plan: distance units per unit of demand, 0 where a site has slack).
    demand : GeoDataFrame
        A copy of the demand frame with ``site`` (the index label of the site serving the
        largest share; None when none is served), ``share`` of the demand it serves,
        ``distance_<unit>`` to it, ``cost_<unit>`` (demand × distance over every site serving
        the row) and ``unserved`` demand.
    parts : DataFrame
        One row per part of a demand row served by several sites: ``demand`` and ``site``
        (index labels; None as the site of an unserved part) and ``amount``.
    summary : DataFrame
        One row of totals: ``cost_<unit>``, ``lower_bound_<unit>``, ``relative_gap``,
        ``demand``, ``unserved``, ``capacity``, ``points``, ``sites``, ``split_points``, and for
        geographic input the working projection and its scale error.
    """

    sites: Any
    demand: Any
    parts: Any
    summary: Any


class CellLayers(NamedTuple):
    """Capacity-constrained catchments as four tables that every file writer keeps.

    Attributes
    ----------
    sites : GeoDataFrame
        A copy of the sites frame (points) with ``capacity``, ``load``, ``slack`` and
        ``power_<unit>2``.
    demand : GeoDataFrame
        A copy of the demand frame with ``site`` (the index label of the site serving the
        largest share), ``share`` and ``cost_<unit>2``.
    cells : GeoDataFrame
        The sites' columns with each site's cell (clipped to the region) as geometry, in the
        sites' CRS: ``area_<unit>2`` (in the working CRS; for geographic input
        ``area_m2``, the WGS84 area of the cell drawn back), ``capacity``, ``load``,
        ``power_<unit>2`` and ``cell_site`` (the index label of the site whose geometry is
        this site's cell: sites at one location share one; None for a site without
        capacity, whose cell is empty).
    summary : DataFrame
        One row of totals (see :meth:`placewise.capacity.CapacityCells.summary`), with the
        working CRS and its scale error for geographic input.
    """

    sites: Any
    demand: Any
    cells: Any
    summary: Any


def capacity_allocation(
    demand: Any, sites: Any, capacity: Any, weight: Any = None, *, split: bool = True,
    allow_unserved: bool = False, planar: bool = False, centroids: bool = False, work_crs: Any = None,
    max_scale_error: float = MAX_SCALE_ERROR, time_limit: float | None = None, progress: Any = False,
) -> AllocationLayers:
    """Serve the demand rows from capacitated sites at least total straight-line distance.

    The frames are prepared as for :func:`placewise.gis.p_median`: a projected CRS is used
    as it is; longitude/latitude is projected to the sites' UTM zone (the demand to the same
    one), its worst scale error measured and refused beyond ``max_scale_error``; no CRS needs
    ``planar=True``. The kernel is :func:`placewise.capacity_allocation`.

    Parameters
    ----------
    demand, sites : GeoDataFrame or GeoSeries of points
    capacity : str, Series or array_like
        The sites' capacity column, in the demand's weight units: its name, a Series
        matched to the sites by index label, or one value per site by position.
    weight : str, Series or array_like, optional
        Demand column of ``demand``: its name, a Series matched to the rows by index label
        (a row label it lacks, or a label it repeats, is an ``InputError`` naming it), or
        one value per row by position; default 1 per row.
    split : bool
        Allow a row's demand to be shared between sites (the exact transportation plan); with
        False every row is served whole by one site and the gap to the split plan is reported.
    allow_unserved : bool
        When the capacities cannot hold the demand, serve what fits and report the rest
        instead of raising an ``InputError`` that states the shortfall.
    planar, centroids, work_crs, max_scale_error
        As in :func:`placewise.gis.weber_point`.
    time_limit, progress
        As in :func:`placewise.capacity_allocation` (a limit that passes before the plan is
        an ``InputError``; a progress bar or callable).

    Returns
    -------
    AllocationLayers
        ``sites``, ``demand``, ``parts`` and ``summary``.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> schools = gpd.GeoDataFrame({"seats": [2, 5]}, geometry=gpd.points_from_xy([0, 10], [0, 0]),
    ...                            index=["north", "south"])
    >>> homes = gpd.GeoSeries(gpd.points_from_xy([0, 1, 2, 9], [0, 0, 0, 0]))
    >>> plan = gis.capacity_allocation(homes, schools, "seats", planar=True)
    >>> plan.demand["site"].tolist(), plan.sites["load"].tolist()
    (['north', 'north', 'south', 'south'], [2.0, 2.0])
    >>> float(plan.summary["cost_u"].iloc[0])        # 0 + 1 + 8 + 1
    10.0
    """
    model = {"work_crs": work_crs, "max_scale_error": max_scale_error}
    sf = prepare(sites, "sites", planar=planar, centroids=centroids, **model)
    df = prepare(demand, "demand", planar=planar, centroids=centroids, work=sf.work, **model)
    caps = column(sf.frame, capacity, "sites", "capacity")
    # A geometry column the result's columns would replace: refused before the solve.
    refuse_geometry_named(sf.frame, ["capacity", "load", "slack", f"price_{df.unit}"], "sites")
    refuse_geometry_named(df.frame, ["site", "share", f"distance_{df.unit}", f"cost_{df.unit}", "unserved"], "demand")
    rows = {"points": df.rows, "weights": df.rows, "sites": sf.rows, "capacities": sf.rows}
    result = call(_pw.capacity_allocation, df.xy, sf.xy, caps, weights(df, weight, "demand"), rows=rows,
                  measured_in=df.unit,
                  split=split, allow_unserved=allow_unserved, time_limit=time_limit, progress=progress)
    result = with_unit(result, df)
    site_labels = sf.rows
    site_table = result.sites_frame()
    out_sites = annotated(sf.frame, {name: site_table[name].to_numpy() for name in site_table.columns.drop(["x", "y"])},
                          "sites")
    points = result.to_frame()
    out_demand = annotated(df.frame, {"site": labelled(points["assignment"].to_numpy(), site_labels),
                                      **{name: points[name].to_numpy() for name in points.columns.drop("assignment")}},
                           "demand")
    parts = result.parts_frame()
    parts.insert(0, "demand", labelled(parts.pop("point").to_numpy(), df.rows))
    parts["site"] = labelled(parts["site"].to_numpy(), site_labels)
    summary = result.summary()
    for name, value in df.model().items():
        summary[name] = value
    return AllocationLayers(out_sites, out_demand, parts, summary)


def capacities_of(candidates: Any, capacity: Any, *, planar: bool, centroids: bool, work: Any,
                  model: dict[str, Any]) -> tuple[Any, np.ndarray]:
    """A candidates frame in the working CRS and its capacity column (for the p-median)."""
    cf = prepare(candidates, "candidates", planar=planar, centroids=centroids, work=work, **model)
    return cf, column(cf.frame, capacity, "candidates", "capacity")


def capacity_cells(
    demand: Any, sites: Any, capacity: Any, weight: Any = None, *, region: Any = None, tol: float = 1e-9,
    planar: bool = False, centroids: bool = False, work_crs: Any = None, max_scale_error: float = MAX_SCALE_ERROR,
    time_limit: float | None = None, progress: Any = False,
) -> CellLayers:
    """Capacity-constrained catchments (:func:`placewise.capacity_cells`) of the sites
    frame, in the working CRS (a UTM zone for geographic input), with the cells as polygons.

    Parameters
    ----------
    demand, sites : GeoDataFrame or GeoSeries of points
    capacity : str, Series or array_like
        The sites' capacity column (or values), in weight units, as ``capacity`` of
        :func:`capacity_allocation`.
    weight : str, Series or array_like, optional
        Demand weight column (or values) as in :func:`capacity_allocation`; default 1 per row.
    region : GeoDataFrame, GeoSeries or shapely geometry, optional
        The study region the cells are clipped to, in any CRS (a bare shapely geometry is
        taken to be in the demand's CRS), as for :func:`voronoi_cells`; it must hold every
        demand row. Default: the bounding box of the demand and sites grown by 10 % (a nearly
        flat box widened as for :func:`~placewise.voronoi_cells`).
    tol : float
        Relative tolerance on the totals.
    planar, centroids, work_crs, max_scale_error
        As in :func:`placewise.gis.weber_point`.
    time_limit, progress
        As in :func:`placewise.capacity_cells` (a limit that passes before the plan is
        an ``InputError``; a progress bar or callable).

    Returns
    -------
    CellLayers
        ``sites``, ``demand``, ``cells`` (the cells as polygons, in the sites' CRS) and
        ``summary``.

    Examples
    --------
    >>> import geopandas as gpd, shapely
    >>> from placewise import gis
    >>> depots = gpd.GeoDataFrame({"room": [2.0, 3.0]}, index=["west", "east"],
    ...                           geometry=gpd.points_from_xy([0, 4], [0, 0]))
    >>> shops = gpd.GeoSeries(gpd.points_from_xy([0, 1, 2, 3, 4], [0, 0, 0, 0, 0]))
    >>> plan = gis.capacity_cells(shops, depots, "room", region=shapely.box(-1, -1, 5, 1), planar=True)
    >>> plan.demand["site"].tolist(), plan.sites["load"].tolist()
    (['west', 'west', 'east', 'east', 'east'], [2.0, 3.0])
    >>> round(float(plan.cells.geometry.area.sum()), 9), plan.cells["cell_site"].tolist()  # they tile the box
    (12.0, ['west', 'east'])
    """
    model = {"work_crs": work_crs, "max_scale_error": max_scale_error}
    df = prepare(demand, "demand", planar=planar, centroids=centroids, **model)
    sf = prepare(sites, "sites", planar=planar, centroids=centroids, work=df.work, **model)
    caps = column(sf.frame, capacity, "sites", "capacity")
    geom = region_geometry(region, df, "demand")
    refuse_geometry_named(sf.frame, ["capacity", "load", "slack", f"power_{df.unit}2"], "sites")
    refuse_geometry_named(df.frame, ["site", "share", f"cost_{df.unit}2"], "demand")
    rows = {"points": df.rows, "weights": df.rows, "sites": sf.rows, "capacities": sf.rows}
    result = with_unit(call(_pw.capacity_cells, df.xy, sf.xy, caps, weights(df, weight, "demand"), region=geom,
                                  measured_in=df.unit,
                            tol=tol, rows=rows, time_limit=time_limit, progress=progress), df)
    table = result.sites_frame()
    out_sites = annotated(sf.frame, {name: table[name].to_numpy() for name in table.columns.drop(["x", "y"])},
                          "sites")
    out_demand = annotated(df.frame, {"site": sf.frame.index.to_numpy(dtype=object)[result.assignment],
                                      "share": result.share, f"cost_{df.unit}2": result.cost}, "demand")
    polygons = framed(with_unit(result.cells, sf), sf, None, rows, row_columns=("cell_site",), drawn_areas=True)
    out_cells = _cells_layer(sf, polygons)
    summary = in_user_terms(result.summary(), result, None, rows, prepared=df)
    return CellLayers(out_sites, out_demand, out_cells, summary)


def _cells_layer(sf: Any, polygons: Any) -> Any:
    """The sites' own columns with the cells' geometry and columns (sites' CRS, index)."""
    import geopandas as gpd

    out = gpd.GeoDataFrame(sf.frame.drop(columns=sf.frame.geometry.name), geometry=polygons.geometry.values,
                           crs=polygons.crs)
    for name in polygons.columns.drop([polygons.geometry.name, "x", "y"]):
        out[name] = polygons[name].to_numpy()
    return out
