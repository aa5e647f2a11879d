"""Catchments on GeoDataFrames: each site's Voronoi cell clipped to a study region, with the
demand it serves."""

from __future__ import annotations

from typing import Any, Literal

import numpy as np

try:
    import geopandas as gpd
except ImportError:  # pragma: no cover - exercised only without the extra
    raise ImportError("placewise.gis needs geopandas and pyproj: pip install 'placewise[geo]'") from None

import placewise as _pw

from .._core import InputError
from ._frames import MAX_SCALE_ERROR, call, framed, groups_of, prepare
from ._together import region_geometry
from .plans import nearest_site

__all__ = ["power_cells", "voronoi_cells"]


def voronoi_cells(
    sites: Any, region: Any = None, *, by: str | None = None, demand: Any = None, weight: Any = None,
    planar: bool = False, centroids: bool = False, work_crs: Any = None, max_scale_error: float = MAX_SCALE_ERROR,
    errors: Literal["raise", "skip"] = "raise",
) -> Any:
    """Each site's catchment: its Voronoi cell clipped to the study region.

    Parameters
    ----------
    sites : GeoDataFrame or GeoSeries of points
    region : GeoDataFrame, GeoSeries or shapely geometry, optional
        The study region (its union is used; non-convex, with holes). A bare shapely
        geometry is taken to be in the sites' CRS. Default: the sites' bounding box grown
        by 10 %.
    by : str, optional
        A column of the sites (and of ``demand``): each group of sites splits the region
        among themselves.
    demand : GeoDataFrame or GeoSeries of points, optional
        When given, each cell gets the ``load`` (summed weight) and ``points`` of the demand
        nearest to its site (within its group with ``by``).
    weight : str or array_like, optional
        Demand weight column (or values); default 1 per demand row.

    Returns
    -------
    GeoDataFrame
        The sites' columns with Polygon / MultiPolygon cells as geometry and
        ``area_<unit>2`` (in the working CRS's unit: ``area_m2``), plus ``load`` and
        ``points`` with ``demand``, and ``problem`` with ``by``.

    Examples
    --------
    >>> import geopandas as gpd, shapely
    >>> from placewise import gis
    >>> sites = gpd.GeoDataFrame({"name": ["a", "b"]},
    ...                          geometry=gpd.points_from_xy([1, 3], [1, 1]))
    >>> cells = gis.voronoi_cells(sites, shapely.box(0, 0, 4, 2), planar=True)
    >>> cells["area_u2"].round(9).tolist()
    [4.0, 4.0]
    """
    model = {"work_crs": work_crs, "max_scale_error": max_scale_error}
    pf = prepare(sites, "sites", planar=planar, centroids=centroids, **model)
    geom = region_geometry(region, pf)
    groups = groups_of(pf.frame, by, "sites")
    rows = {"sites": pf.rows}
    grouped = {} if groups is None else {"errors": errors}
    result = call(_pw.voronoi_cells, pf.xy, geom, groups=groups, rows=rows, **grouped)
    # The kernel's rows are the sites in input order: one row per site, with its own columns.
    cells = framed(result, pf, groups, rows)
    out = gpd.GeoDataFrame(pf.frame.drop(columns=pf.frame.geometry.name), geometry=cells.geometry.values,
                           crs=pf.crs)
    for name in cells.columns:
        if name.startswith("area_") or name == "problem":
            out[name] = cells[name].to_numpy()
    if demand is not None:
        served = nearest_site(demand, sites, weight, by=by, planar=planar, centroids=centroids, errors=errors, **model)
        out["load"] = served.sites["load"].to_numpy()
        out["points"] = served.sites["points"].to_numpy()
    return out


def power_cells(
    sites: Any, power_column: str, region: Any = None, *, by: str | None = None, planar: bool = False,
    centroids: bool = False, work_crs: Any = None, max_scale_error: float = MAX_SCALE_ERROR,
    errors: Literal["raise", "skip"] = "raise",
) -> Any:
    """Each site's power cell (least ``|x - site|**2 - power``) clipped to the study region.

    Parameters
    ----------
    sites : GeoDataFrame of points
    power_column : str
        The column of the sites' powers, in squared units of the working CRS (m² for
        geographic or metric input); NaN or missing values are refused, naming the row.
    region, by, planar, centroids, work_crs, max_scale_error, errors
        As for :func:`voronoi_cells`.

    Returns
    -------
    GeoDataFrame
        The sites' columns with the cells as geometry (empty for an empty cell) and
        ``area_<unit>2``, ``empty``, ``redundant`` (see :func:`placewise.power_cells`), plus
        ``problem`` with ``by``.

    Examples
    --------
    >>> import geopandas as gpd, shapely
    >>> from placewise import gis
    >>> sites = gpd.GeoDataFrame({"power": [2.0, 0.0]},
    ...                          geometry=gpd.points_from_xy([1, 3], [1, 1]))
    >>> cells = gis.power_cells(sites, "power", shapely.box(0, 0, 4, 2), planar=True)
    >>> cells["area_u2"].round(9).tolist()
    [5.0, 3.0]
    """
    model = {"work_crs": work_crs, "max_scale_error": max_scale_error}
    pf = prepare(sites, "sites", planar=planar, centroids=centroids, **model)
    if power_column not in pf.frame.columns:
        raise InputError(f"sites has no power column {power_column!r}; columns: {list(pf.frame.columns)}")
    powers = pf.frame[power_column].to_numpy(dtype=np.float64, na_value=np.nan)
    geom = region_geometry(region, pf)
    groups = groups_of(pf.frame, by, "sites")
    rows = {"sites": pf.rows, "powers": pf.rows}
    grouped = {} if groups is None else {"errors": errors}
    result = call(_pw.power_cells, pf.xy, powers, geom, groups=groups, rows=rows, **grouped)
    cells = framed(result, pf, groups, rows)
    out = gpd.GeoDataFrame(pf.frame.drop(columns=pf.frame.geometry.name), geometry=cells.geometry.values,
                           crs=pf.crs)
    for name in cells.columns:
        if name.startswith("area_") or name in ("empty", "redundant", "problem"):
            out[name] = cells[name].to_numpy()
    return out
