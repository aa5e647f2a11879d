"""Frames that share the points' working CRS: regions, candidate sites and existing sites.

A region or a frame of candidates belongs to the model as much as the demand does, so for
geographic input the working frame is chosen over all of them (:func:`prepare_together`)
and every location is brought into it (:func:`region_geometry` for regions).

A region in another CRS than the working one is densified in its own CRS before it is
reprojected (:func:`densified`): a straight edge in one CRS is a curve in another, and
projecting only its vertices would cut the region short, or spill past it, between them.
The densified region in the working frame still differs from the curved one by a sliver
(about 2 cm at most, see :func:`region_step`); :func:`candidates_held` therefore asks
whether a candidate site lies in the region in the region's own CRS, where its edges are
straight.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import geopandas as gpd
import numpy as np
import shapely
from pyproj import CRS

from .._core import InputError
from .._errors import refuse
from .._units import si_per_unit
from ._columns import _points_of, as_frame, groups_of, turn_of
from ._crs import MAX_SCALE_ERROR, _check_lonlat
from ._frames import Prepared, prepare

# The longest piece of a region's edge once densified (:func:`region_step`): a thousandth of
# the region's extent, and at most about a kilometre (0.01 degree of longitude/latitude, or
# 1000 metres of a projected CRS, in the CRS's own unit).
_REGION_PIECES = 1000
_REGION_STEP_DEGREES = 0.01
_REGION_STEP_METRES = 1000.0


def region_step(series: Any) -> float:
    """The longest piece, in the region's own CRS unit, that :func:`densified` leaves of an edge.

    Why this length: reprojected, a straight piece of length ``s`` becomes a curve that
    leaves the straight chord between its projected ends by about ``k s**2 / 8``, where
    ``k`` is the curve's curvature; between the CRSs a region comes in (geographic, UTM,
    national grids, Web Mercator) ``k`` is of the order of one over the Earth's radius
    (6.4e6 m), so pieces of at most 1 km (or 0.01 degree, 1.1 km) leave the region off by
    about 2 cm at most (measured against pieces 200,000 times finer, each in a UTM zone:
    1.2 cm for a 10° lon/lat box, under 2 mm for boxes of 200 to 400 km in Web Mercator or
    in the next UTM zone, and for a lon/lat box at 79°N). Tied to the region's extent too, a
    small region keeps that error in proportion. The step is in the CRS's own unit (feet,
    grads), read from its first axis.
    """
    crs = CRS(series.crs)
    factor = si_per_unit(crs)  # metres (or radians) per unit
    most = (np.radians(_REGION_STEP_DEGREES) if crs.is_geographic else _REGION_STEP_METRES) / factor
    west, south, east, north = series.total_bounds
    piece = float(np.hypot(east - west, north - south)) / _REGION_PIECES
    return piece if np.isfinite(piece) and 0 < piece < most else most


def densified(series: Any) -> Any:
    """A region with vertices inserted along its edges, in its own CRS, so that no piece is
    longer than :func:`region_step`: what reprojecting it vertex by vertex needs to keep its
    straight edges (geographic or projected alike)."""
    return gpd.GeoSeries(shapely.segmentize(series.values, region_step(series)), crs=series.crs)


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


def _polygonal(series: Any) -> Any:
    """A region's rows' union, refused when it has no area."""
    geom = series.union_all()
    if geom.is_empty or geom.area <= 0.0:
        raise InputError("region has no area (it must be polygonal)")
    return geom


def _reprojected(series: Any, crs: Any) -> Any:
    """A region in ``crs``: densified in its own CRS first (:func:`densified`) unless it is
    in ``crs`` already, so that its edges keep their course when only vertices move."""
    if series.crs is None or CRS(series.crs).equals(crs):
        return series
    return densified(series).to_crs(crs)


def region_geometry(region: Any, pf: Prepared, points: str = "sites") -> Any:
    """The region as one shapely geometry in the working CRS (its rows' union), refused
    when it has no area. A bare shapely geometry is taken to be in the points' CRS.

    A region in another CRS (geographic or projected) is densified in its own CRS before
    it is projected (:func:`densified`): its edges then stay within about 2 cm of their
    true course in the working frame (:func:`region_step`), where projecting its vertices
    alone would bend them by hundreds of metres over a 100 km edge.
    """
    if region is None:
        return None
    return _polygonal(_reprojected(_region_series(region, pf.crs, points), pf.work))


def region_lonlat(region: Any, pf: Prepared, points: str = "sites") -> Any:
    """The region as one lon/lat shapely geometry (its rows' union) in [-180, 180] x [-90, 90],
    split at the antimeridian where it crosses it (GeoJSON's form, RFC 7946 §3.1.9, which
    the spherical cells it clips have too).

    Its edges are densified first in its own CRS (:func:`densified`) so that reprojecting
    only its vertices does not cut it short. A region in WGS84 already is densified too: the
    cells' areas on the ellipsoid take an edge between two vertices as a geodesic, and short
    pieces keep the region on its straight lon/lat edges.

    Why each ring is rebuilt (:func:`_lonlat_ring`): a region that crosses the antimeridian
    in its own CRS (a Pacific-centred projection, a lon/lat box drawn to 250 degrees) comes
    back from PROJ with longitudes jumping between +180 and -180 along an edge, or beyond
    180, and read as a plain polygon it would hold the other side of the Earth, or lose its
    part beyond 180.
    """
    from pyproj import Transformer

    series = _region_series(region, pf.crs, points)
    geom = _polygonal(series)
    step = region_step(series)
    to_lonlat = Transformer.from_crs(series.crs, 4326, always_xy=True)
    poles = np.column_stack(Transformer.from_crs(4326, series.crs, always_xy=True).transform([0.0, 0.0],
                                                                                             [90.0, -90.0]))
    pieces = []
    for polygon in shapely.get_parts(geom):
        if polygon.geom_type != "Polygon" or polygon.is_empty:
            continue
        rings = [_lonlat_ring(r, step, to_lonlat, poles, points) for r in (polygon.exterior, *polygon.interiors)]
        holes = [r for r in rings[1:] if not r.is_empty]
        pieces.append(shapely.difference(rings[0], shapely.union_all(holes)) if holes else rings[0])
    out = shapely.union_all(pieces)
    if out.is_empty or out.area <= 0.0:
        raise InputError("region has no area (it must be polygonal)")
    return out


def _lonlat_ring(ring: Any, step: float, to_lonlat: Any, poles: np.ndarray, points: str) -> Any:
    """The part of the globe a ring of the region (in its own CRS) bounds, as a lon/lat
    polygon split at the antimeridian (:func:`placewise._sphere.lonlat_polygon`).

    The ring is densified in its own CRS (pieces of ``step``) and its vertices brought to
    lon/lat (``to_lonlat``), where their longitudes are unwrapped along it. A ring that does
    not wind round a pole bounds what lies inside it there, whichever way it runs. One that
    winds round a pole (a polar cap drawn in a polar projection) bounds the cap of the pole
    it holds in its own CRS (``poles``: the north and south pole there, infinite where the
    CRS cannot show them); one that holds neither is refused.
    """
    from .._sphere import _pole_safe, _turn, lonlat_polygon, unwrapped

    own = np.asarray(shapely.segmentize(ring, step).coords)[:-1, :2]
    lon, lat = to_lonlat.transform(own[:, 0], own[:, 1])
    lonlat = np.column_stack([lon, lat])
    if len(lonlat) < 3 or not np.isfinite(lonlat).all():
        refuse("region", f"region: a vertex of the region has no longitude/latitude (PROJ cannot bring it from its "
                         f"CRS), so it cannot be clipped with the {points} on the sphere; give the region in "
                         "longitude/latitude")
    safe_lon, safe_lat = _pole_safe(lonlat[:, 0].copy(), lonlat[:, 1].copy())
    safe_lon = unwrapped(safe_lon)
    turn = _turn(safe_lon)
    if abs(turn) > 180.0:
        # Counter-clockwise seen from outside the Earth: eastward round the north pole.
        shape = shapely.Polygon(own)
        held = [np.isfinite(pole).all() and shape.covers(shapely.Point(pole)) for pole in poles]
        if not any(held):
            refuse("region", "region: a ring of the region winds round a pole in longitude but holds neither pole in "
                             "its own CRS, so which side of it the region lies on is unknown; give the region in "
                             "longitude/latitude")
        forward = (turn > 0) == bool(held[0])
    else:
        forward = bool(shapely.LinearRing(np.column_stack([safe_lon, safe_lat])).is_ccw)
    return lonlat_polygon(lonlat if forward else lonlat[::-1])


def candidates_held(cf: Prepared, region: Any, pf: Prepared, points: str = "frame") -> tuple[np.ndarray, np.ndarray]:
    """The candidate sites (``cf``, in the working CRS of ``pf``) that the region holds,
    and their rows, the region refused when it holds none (as
    :func:`placewise._region.candidates_in_region`).

    The test is made in the region's **own** CRS: the candidates are brought there (pyproj,
    point by point, exact to rounding) and tested against the region as it was drawn, with
    straight edges, boundary included (the exact test of
    :func:`~placewise._region.candidates_in_region`). Why not in the working frame: there
    the region's edges are curves, which the densified polygon of :func:`region_geometry`
    follows to within about 2 cm only, so a candidate that close to the boundary could be
    counted either way. A candidate the region's CRS cannot represent is not held.

    In a geographic CRS a longitude and the same longitude plus or minus a full turn are
    one meridian: a region drawn across the antimeridian with longitudes beyond 180 (a box
    from 179 to 181) holds a candidate at -179.5, which PROJ (and the caller) may write in
    [-180, 180]. Each candidate is therefore tested at every turn of its longitude that
    reaches the region's longitudes (:func:`_turns`), and held when one of them lies in it.
    """
    from .._region import candidates_in_region

    series = _region_series(region, pf.crs, points)
    geom = _polygonal(series)
    xy = cf.xy
    if series.crs is not None and pf.work is not None and not CRS(series.crs).equals(pf.work):
        from pyproj import Transformer

        x, y = Transformer.from_crs(pf.work, series.crs, always_xy=True).transform(xy[:, 0], xy[:, 1])
        xy = np.column_stack([x, y])
    west, south, east, north = geom.bounds
    # A candidate PROJ cannot bring into the region's CRS has infinite coordinates there,
    # which the exact test refuses: it lies in no region, so it stands beyond the region's
    # box instead, where the test holds it nowhere and every count stays the caller's.
    lost = ~np.isfinite(xy).all(axis=1)
    turns = _turns(xy[~lost, 0], west, east, series.crs)
    tried = np.concatenate([xy + [shift, 0.0] for shift in turns])
    if lost.any():
        tried[np.tile(lost, len(turns))] = [2 * east - west + 1, 2 * north - south + 1]
    _, rows, _ = candidates_in_region(tried, geom)
    rows = np.unique(rows % len(xy))
    return cf.xy[rows], rows


def _turns(lon: np.ndarray, west: float, east: float, crs: Any) -> list[float]:
    """The shifts of whole turns of longitude (in the CRS's angular unit: 360 degrees, 400
    grads) that bring some of the longitudes ``lon`` within ``west..east``, the longitudes
    of a region in the geographic CRS ``crs``; only ``[0.0]`` for a projected CRS or none."""
    if crs is None or not CRS(crs).is_geographic or len(lon) == 0:
        return [0.0]
    turn = turn_of(crs)
    low = int(np.floor((west - lon.max()) / turn))
    high = int(np.ceil((east - lon.min()) / turn))
    return [0.0] + [k * turn for k in range(low, high + 1) if k != 0]


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
