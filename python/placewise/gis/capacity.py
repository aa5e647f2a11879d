"""Capacity-constrained catchments on GeoDataFrames."""

from __future__ import annotations

from typing import Any

import placewise as _pw

from ._frames import MAX_SCALE_ERROR, call, column, in_user_terms, prepare, weights, with_unit
from .plans import SitePlan

__all__ = ["capacity_cells"]


def capacity_cells(
    demand: Any, sites: Any, capacity: Any, weight: Any = None, *, tol: float = 1e-9,
    planar: bool = False, centroids: bool = False, work_crs: Any = None, max_scale_error: float = MAX_SCALE_ERROR,
) -> SitePlan:
    """Capacity-constrained catchments (:func:`placewise.capacity_cells`) of the sites
    frame, in the working CRS (a UTM zone for geographic input).

    Parameters
    ----------
    demand, sites : GeoDataFrame or GeoSeries of points
    capacity : str or array_like
        The sites' capacity column (or values), in weight units.
    weight : str or array_like, optional
        Demand weight column (or values); default 1 per row.
    tol : float
        Relative tolerance on the totals.

    Returns
    -------
    SitePlan
        ``sites`` (the sites frame with ``capacity``, ``load``, ``slack`` and
        ``power_<unit>2``), ``demand`` (with ``site``, the index label of the site serving
        the largest share, and ``share``) and ``summary`` (``cost_<unit>2``,
        ``distance_cost_<unit>``, totals; the working CRS and its scale error for
        geographic input).

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> depots = gpd.GeoDataFrame({"room": [2.0, 3.0]}, index=["west", "east"],
    ...                           geometry=gpd.points_from_xy([0, 4], [0, 0]))
    >>> shops = gpd.GeoSeries(gpd.points_from_xy([0, 1, 2, 3, 4], [0, 0, 0, 0, 0]))
    >>> plan = gis.capacity_cells(shops, depots, "room", planar=True)
    >>> plan.demand["site"].tolist(), plan.sites["load"].tolist()
    (['west', 'west', 'east', 'east', 'east'], [2.0, 3.0])
    """
    model = {"work_crs": work_crs, "max_scale_error": max_scale_error}
    df = prepare(demand, "demand", planar=planar, centroids=centroids, **model)
    sf = prepare(sites, "sites", planar=planar, centroids=centroids, work=df.work, **model)
    caps = column(sf.frame, capacity, "sites", "capacity")
    rows = {"points": df.rows, "weights": df.rows, "sites": sf.rows, "capacities": sf.rows}
    result = with_unit(call(_pw.capacity_cells, df.xy, sf.xy, caps, weights(df, weight, "demand"), tol=tol,
                            rows=rows), df)
    table = result.sites_frame()
    out_sites = sf.frame.copy()
    for name in table.columns.drop(["x", "y"]):
        out_sites[name] = table[name].to_numpy()
    out_demand = df.frame.copy()
    out_demand["site"] = sf.frame.index.to_numpy(dtype=object)[result.assignment]
    out_demand["share"] = result.share
    out_demand[f"cost_{df.unit}2"] = result.cost
    return SitePlan(out_sites, out_demand, in_user_terms(result.summary(), result, None, rows, prepared=df))

