"""Frames that share the points' working CRS: regions, candidate sites and existing sites.

A region or a frame of candidates belongs to the model as much as the demand does, so for
geographic input the working frame is chosen over all of them (:func:`prepare_together`)
and every location is brought into it (:func:`region_geometry` for regions).
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import geopandas as gpd
import numpy as np
import shapely
from pyproj import CRS

from .._core import InputError
from ._columns import _points_of, as_frame, groups_of
from ._crs import MAX_SCALE_ERROR, _check_lonlat
from ._frames import Prepared, prepare

# Longest edge, in degrees, of a geographic region before it is projected: a straight edge in
# lon/lat is a curve in the working frame, so projecting only its vertices would cut the
# region short (or spill past it) between them.
_REGION_STEP_DEGREES = 0.01


def _densified(series: Any) -> Any:
    """A geographic region with vertices inserted along its edges (projected ones as they are)."""
    if series.crs is None or not CRS(series.crs).is_geographic:
        return series
    return gpd.GeoSeries(shapely.segmentize(series.values, _REGION_STEP_DEGREES), crs=series.crs)


def _region_series(region: Any, crs: Any, points: str) -> Any:
    """A region (frame, series or bare shapely geometry, taken to be in ``crs``) as a
    non-empty GeoSeries with a CRS exactly when the points (named ``points``) have one."""
    if isinstance(region, (gpd.GeoDataFrame, gpd.GeoSeries)):
        series = region.geometry if isinstance(region, gpd.GeoDataFrame) else region
        if len(series) == 0:
            raise InputError("region has no rows")
        if (series.crs is None) != (crs is None):
            raise InputError(f"region: either both {points} and region have a CRS or neither has")
        return series
    if isinstance(region, shapely.Geometry):
        return gpd.GeoSeries([region], crs=crs)
    raise InputError(f"region must be a GeoDataFrame, GeoSeries or shapely geometry; got {type(region).__name__}")


def region_geometry(region: Any, pf: Prepared, points: str = "sites") -> Any:
    """The region as one shapely geometry in the working CRS (its rows' union), refused
    when it has no area. A bare shapely geometry is taken to be in the points' CRS."""
    if region is None:
        return None
    series = _region_series(region, pf.crs, points)
    if series.crs is not None and not CRS(series.crs).equals(pf.work):
        series = _densified(series).to_crs(pf.work)
    geom = series.union_all()
    if geom.is_empty or geom.area <= 0.0:
        raise InputError("region has no area (it must be polygonal)")
    return geom


def region_lonlat(region: Any, pf: Prepared, points: str = "sites") -> Any:
    """The region as one lon/lat shapely geometry (its rows' union), its edges densified
    first in its own CRS so that reprojecting only its vertices does not cut it short."""
    series = _densified(_region_series(region, pf.crs, points))
    if CRS(series.crs).is_projected:
        series = gpd.GeoSeries(shapely.segmentize(series.values, 1000.0), crs=series.crs)
    geom = series.to_crs(4326).union_all()
    if geom.is_empty or geom.area <= 0.0:
        raise InputError("region has no area (it must be polygonal)")
    return geom


def prepare_together(
    obj: Any, name: str, companions: Mapping[str, Any], *, planar: bool, centroids: bool,
    region: Any = None, work_crs: Any = None, max_scale_error: float = MAX_SCALE_ERROR, by: str | None = None,
) -> tuple[Prepared, dict[str, Prepared]]:
    """Points of a frame and of its companion frames (candidate sites, existing sites) in one
    working CRS, with the region's vertices counted among the data that choose it.

    Why one frame over everything: candidates or a region may reach beyond the demand, and
    a working frame chosen from the demand alone could distort them unseen. For geographic
    input the frame (UTM zone, or a transverse Mercator frame on the data's centre) is chosen
    over the demand, the companions and the region together, and ``scale_error`` is the
    worst over all of them; with ``by`` every group shares that frame (a companion serves
    any group). Companions given as None are left out of the returned mapping.
    """
    frame = as_frame(obj, name)
    given = {key: as_frame(value, key) for key, value in companions.items() if value is not None}
    model = {"work_crs": work_crs, "max_scale_error": max_scale_error}
    geographic = frame.crs is not None and CRS(frame.crs).is_geographic and work_crs is None and not planar
    if not geographic or (not given and region is None):
        # Per-group frames arise only for geographic input, so ``by`` may choose them here.
        pf = prepare(frame, name, planar=planar, centroids=centroids, by=by, **model)
        return pf, {key: prepare(value, key, planar=planar, centroids=centroids, work=pf.work, **model)
                    for key, value in given.items()}
    # Every location in the demand's CRS, each frame checked under its own name first.
    parts = [_lonlat_checked(frame, name, centroids)]
    for key, value in given.items():
        if value.crs is None:
            raise InputError(f"{key}: either every frame has a CRS or none has (planar=True); {key} has none")
        parts.append(_lonlat_checked(value if CRS(value.crs).equals(frame.crs) else value.to_crs(frame.crs), key,
                                     centroids))
    if region is not None:
        shape = _region_series(region, frame.crs, name)
        if not CRS(shape.crs).equals(frame.crs):
            shape = shape.to_crs(frame.crs)
        parts.append(shapely.get_coordinates(shape.values))
    together = gpd.GeoDataFrame(geometry=gpd.points_from_xy(*np.concatenate(parts).T), crs=frame.crs)
    chosen = prepare(together, f"{name} with {' and '.join([*given, *(['region'] if region is not None else [])])}",
                     planar=planar, centroids=False, **model)
    pf = prepare(frame, name, planar=planar, centroids=centroids, work=chosen.work, **model)
    pf.scale_error = chosen.scale_error
    pf.groups = groups_of(pf.frame, by, name)
    return pf, {key: prepare(value, key, planar=planar, centroids=centroids, work=chosen.work, **model)
                for key, value in given.items()}


def _lonlat_checked(frame: Any, name: str, centroids: bool) -> np.ndarray:
    """A geographic frame's locations, refused (naming the rows) where they cannot be
    longitude/latitude."""
    lonlat = _points_of(frame, name, centroids)
    _check_lonlat(frame, lonlat, name)
    return lonlat
