"""Catchments on GeoDataFrames: each site's Voronoi cell clipped to a study region, with the
demand it serves, and the cells' dual, the Delaunay triangulation of the sites."""

from __future__ import annotations

import contextlib
import warnings
from collections.abc import Iterator
from typing import Any, Literal

import numpy as np

try:
    import geopandas as gpd
    import shapely
except ImportError:  # pragma: no cover - exercised only without the extra
    raise ImportError("placewise.gis needs geopandas and pyproj: pip install 'placewise[geo]'") from None


import placewise as _pw

from .._core import InputError
from .._errors import check_errors, refuse
from .._progress import Stages
from .._sphere import SPHERE_MODEL
from ._columns import groups_of
from ._crs import MAX_SCALE_ERROR
from ._frames import (
    Prepared,
    annotated,
    call,
    ellipsoid_area,
    framed,
    prepare_or_sphere,
    solve_points,
)
from ._together import prepare_together, region_geometry, region_lonlat
from .plans import nearest_site

__all__ = ["delaunay", "power_cells", "voronoi_cells"]


def _sphere_cells(pf: Prepared, region: Any, progress: Any) -> Any:
    """Spherical Voronoi cells of the sites, clipped to the region (lon/lat)."""
    cells = _pw.geodesic.voronoi_cells(pf.xy, progress=progress)
    geoms = cells._geometry()
    if region is None:
        area = cells.area
    else:
        clip = region_lonlat(region, pf)
        geoms = shapely.intersection(geoms, clip)
        area = np.array([ellipsoid_area(g) for g in geoms])
    out = gpd.GeoDataFrame(pf.frame.drop(columns=pf.frame.geometry.name), geometry=pf.back(geoms).values,
                           crs=pf.crs)
    out["area_m2"] = area
    out["work_crs"] = SPHERE_MODEL
    out["scale_error"] = 0.0  # no projection: the cells are drawn and measured on the ellipsoid
    return out


def delaunay(
    frame: Any, by: str | None = None, *, planar: bool = False, centroids: bool = False, work_crs: Any = None,
    max_scale_error: float = MAX_SCALE_ERROR, errors: Literal["raise", "skip"] = "raise", progress: Any = False,
) -> Any:
    """The Delaunay triangulation of a frame's points (one per group with ``by``).

    Triangles whose circumcircles hold no other point (Delaunay 1934): the neighbours of
    every site, the dual of :func:`voronoi_cells`. Projected input is triangulated in its own
    CRS; geographic input in a UTM working frame, as every planar kernel of this module.
    Geographic points that no working frame holds within ``max_scale_error`` (global,
    polar, wide across the antimeridian; without ``by`` and ``work_crs``) get the spherical
    Delaunay triangulation (:func:`placewise.geodesic.delaunay`) instead of a refusal:
    triangles with geodesic edges drawn along great circles and split at the antimeridian,
    ``area_m2`` on the WGS84 ellipsoid, ``work_crs`` stating the model.

    Parameters
    ----------
    frame : GeoDataFrame or GeoSeries of points
    by : str, optional
        A column whose values split the rows into groups; one triangulation each.
    progress : bool or callable
        A progress bar on stderr (True) or a callable ``(done, total)``, on the sphere and in
        the plane alike (with ``by``: the points of finished groups); Ctrl-C stops the run
        either way.

    Returns
    -------
    GeoDataFrame
        One Polygon per triangle: ``corner_a``, ``corner_b``, ``corner_c`` (the corners'
        index labels, counter-clockwise), ``area_<unit>2`` (in the working CRS's unit;
        for geographic input ``area_m2``, the WGS84 area of the shape drawn back), plus
        the ``by`` column and ``problem`` for grouped runs, and ``work_crs`` /
        ``scale_error`` for geographic input.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> pts = gpd.GeoSeries(gpd.points_from_xy([0, 2, 0, 2], [0, 0, 1, 1]), index=list("abcd"))
    >>> mesh = gis.delaunay(pts, planar=True)
    >>> len(mesh), float(mesh["area_u2"].sum())   # two triangles fill the 2 x 1 rectangle
    (2, 2.0)
    """
    pf, result, rows = solve_points(frame, "frame", _pw.delaunay, _pw.geodesic.delaunay, planar=planar,
                                    centroids=centroids, work_crs=work_crs, max_scale_error=max_scale_error, by=by,
                                    errors=errors, progress=progress)
    out = framed(result, pf, pf.groups, rows, row_columns=("corner_a", "corner_b", "corner_c"), drawn_areas=True)
    if pf.ellipsoid:
        out["work_crs"] = SPHERE_MODEL
    return out


def voronoi_cells(
    sites: Any, region: Any = None, *, by: str | None = None, demand: Any = None, weight: Any = None,
    planar: bool = False, centroids: bool = False, work_crs: Any = None, max_scale_error: float = MAX_SCALE_ERROR,
    errors: Literal["raise", "skip"] = "raise", progress: Any = False,
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
    weight : str, Series or array_like, optional
        Demand weight column: its name, a Series matched to the demand rows by index label,
        or one value per row by position (as in :func:`weber_point`); default 1 per demand
        row.
    progress : bool or callable
        A progress bar on stderr (True) or a callable ``(done, total)`` for the cells (with
        ``by``: the sites of finished groups), on the sphere and in the plane alike. With
        ``demand``, the demand rows served follow as one count with the cells: a callable
        sees the cells' steps, then one step per demand row added on (while the cells are
        made, the total holds them and one step for the demand; it grows by the demand rows
        when their search starts, and ``done`` reaches ``total`` only at the end); True draws
        a bar for each. Ctrl-C stops the run either way.

    Geographic sites that no working frame holds within ``max_scale_error`` (global, polar,
    wide across the antimeridian; without ``by`` and ``work_crs``) get spherical Voronoi
    cells (:func:`placewise.geodesic.voronoi_cells`) instead of a refusal: cells in lon/lat
    split at the antimeridian, clipped to the region in lon/lat after its edges are
    densified (no region: the cells cover the globe; a region may cross the antimeridian
    or wind round a pole in its own CRS, or be drawn in lon/lat with longitudes beyond
    180), ``area_m2`` the WGS84 area of each
    piece (geodesic edges through its vertices, so the cells' areas add up to the region's),
    and ``work_crs`` stating the model. ``demand`` is then served on the ellipsoid.

    Returns
    -------
    GeoDataFrame
        The sites' columns with Polygon / MultiPolygon cells as geometry and
        ``area_<unit>2`` (in the working CRS's unit; for geographic input ``area_m2``, the
        WGS84 area of the cell drawn back), plus ``load`` and
        ``points`` with ``demand``, and ``problem`` with ``by``; for geographic input
        ``work_crs`` and ``scale_error``, of the one working frame chosen over the sites and
        the region together (every group shares it when a region is given).

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
    if weight is not None and demand is None:
        # The weights belong to the demand rows; without them they would weigh nothing.
        refuse("weight", "weight applies to the demand rows: pass demand= with it (the cells' loads are the "
               "summed weight of the demand each cell serves)")
    model = {"work_crs": work_crs, "max_scale_error": max_scale_error}
    pf = prepare_or_sphere(sites, "sites", planar=planar, centroids=centroids, by=by, region=region, **model)
    if pf.ellipsoid:
        stages = Stages(progress, 1 if demand is None else 2)
        out = _sphere_cells(pf, region, stages.next())
        if demand is not None:
            with _layers_not_returned():
                served = nearest_site(demand, sites, weight, centroids=centroids, errors=errors,
                                      progress=stages.next())
            stages.close()
            out = _with_loads(out, served)
        return out
    geom = region_geometry(region, pf)
    groups = groups_of(pf.frame, by, "sites")
    rows = {"sites": pf.rows}
    check_errors(errors)  # also without groups, where it is not passed on
    grouped = {} if groups is None else {"errors": errors}
    stages = Stages(progress, 1 if demand is None else 2)
    result = call(_pw.voronoi_cells, pf.xy, geom, groups=groups, rows=rows, measured_in=pf.unit,
                  progress=stages.next(), **grouped)
    # The kernel's rows are the sites in input order: one row per site, with its own columns.
    cells = framed(result, pf, groups, rows, drawn_areas=True)
    base = gpd.GeoDataFrame(pf.frame.drop(columns=pf.frame.geometry.name), geometry=cells.geometry.values,
                            crs=pf.crs)
    out = annotated(base, {name: cells[name].to_numpy() for name in cells.columns
                           if name.startswith("area_") or name in ("problem", "work_crs", "scale_error")}, "sites")
    if demand is not None:
        with _layers_not_returned():
            served = nearest_site(demand, sites, weight, by=by, planar=planar, centroids=centroids, errors=errors,
                                  progress=stages.next(), **model)
        stages.close()
        out = _with_loads(out, served)
    return out


def _with_loads(cells: Any, served: Any) -> Any:
    """The cells with each site's ``load`` and ``points`` from a nearest-site plan."""
    return annotated(cells, {"load": served.sites["load"].to_numpy(), "points": served.sites["points"].to_numpy()},
                     "sites")


@contextlib.contextmanager
def _layers_not_returned() -> Iterator[None]:
    """A context in which a plan's warnings about the layers it copies are not shown: the
    cells use its loads only, and say themselves which of the caller's columns they replace."""
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message=r".*: the result replaces your column")
        yield


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
        ``problem`` with ``by``; for geographic input ``work_crs`` and ``scale_error``, of the
        working frame chosen over the sites and the region together.

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
    pf, _ = prepare_together(sites, "sites", {}, planar=planar, centroids=centroids, region=region, **model)
    if power_column not in pf.frame.columns:
        raise InputError(f"sites has no power column {power_column!r}; columns: {list(pf.frame.columns)}")
    powers = pf.frame[power_column].to_numpy(dtype=np.float64, na_value=np.nan)
    geom = region_geometry(region, pf)
    groups = groups_of(pf.frame, by, "sites")
    rows = {"sites": pf.rows, "powers": pf.rows}
    check_errors(errors)  # also without groups, where it is not passed on
    grouped = {} if groups is None else {"errors": errors}
    result = call(_pw.power_cells, pf.xy, powers, geom, groups=groups, rows=rows, measured_in=pf.unit,
                  **grouped)
    cells = framed(result, pf, groups, rows, drawn_areas=True)
    out = gpd.GeoDataFrame(pf.frame.drop(columns=pf.frame.geometry.name), geometry=cells.geometry.values,
                           crs=pf.crs)
    for name in cells.columns:
        if name.startswith("area_") or name in ("empty", "redundant", "problem", "work_crs", "scale_error"):
            out[name] = cells[name].to_numpy()
    return out
