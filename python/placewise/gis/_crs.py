"""The working CRS of a frame's points: the choice (the caller's ``work_crs``, the frame's
own projected CRS, the UTM zone at the data's centre, a transverse Mercator frame on it, one
frame per group), the checks of longitude/latitude input, the measured scale error of a
projection over the data, and the warnings when coordinates look like degrees or a working
CRS distorts distances beyond ``max_scale_error``.
"""

from __future__ import annotations

from typing import Any

import numpy as np

try:
    import shapely
    from pyproj import CRS
except ImportError:  # pragma: no cover - exercised only without the extra
    raise ImportError("placewise.gis needs geopandas and pyproj: pip install 'placewise[geo]'") from None

from .._core import InputError
from .._errors import plain
from .._units import check_on_earth, unit_of
from ._columns import Groups, _points_of

_WGS84 = CRS.from_epsg(4326)

# Default bound on the relative scale error a working projection may introduce over the
# data of geographic input (0.1 %); beyond it the functions refuse rather than distort.
MAX_SCALE_ERROR = 1e-3


def _working_crs(frame: Any, name: str, planar: bool, work_crs: Any = None, lonlat: np.ndarray | None = None) -> Any:
    """The CRS to solve in: ``work_crs``, the frame's own projected CRS, none (planar), or for a
    geographic frame the UTM zone at the centre of its points ``lonlat`` (already read)."""
    crs = frame.crs
    if work_crs is not None:
        if crs is None:
            raise InputError(f"{name} has no CRS; work_crs= needs one to project from")
        forced = CRS(work_crs)
        if not forced.is_projected:
            raise InputError(f"work_crs must be a projected CRS; got {forced.name!r}")
        return forced
    if crs is None:
        if not planar:
            raise InputError(
                f"{name} has no CRS: set one with .set_crs(...), or pass planar=True if the "
                "coordinates are already planar"
            )
        return None
    crs = CRS(crs)
    if crs.is_geographic:
        assert lonlat is not None, "a geographic frame's points are read before its frame is chosen"
        return _utm_at_centre(lonlat)
    if not crs.is_projected:
        raise InputError(f"{name}: CRS {crs.name!r} is neither geographic nor projected")
    return crs


def _degrees_per_unit(crs: Any) -> float:
    """Degrees in one unit of a geographic CRS's axes: 1 for degrees, 0.9 for grads."""
    axes = CRS(crs).axis_info
    degrees = float(np.degrees(axes[0].unit_conversion_factor)) if axes else 1.0
    return 1.0 if abs(degrees - 1.0) < 1e-12 or not degrees > 0 else degrees


def _check_lonlat(frame: Any, lonlat: np.ndarray, name: str) -> None:
    """Refuse coordinates that cannot be longitude/latitude, naming the rows (the frame's
    coordinates in its own angular unit, compared with the limits in degrees)."""
    scale = 1.0 if frame.crs is None else _degrees_per_unit(frame.crs)
    lon, lat = scale * lonlat[:, 0], scale * lonlat[:, 1]

    def rows(mask: np.ndarray) -> str:
        labels = [repr(plain(v)) for v in frame.index[mask][:5]]
        more = int(mask.sum()) - len(labels)
        return ", ".join(labels) + (f" and {more} more" if more > 0 else "")

    bad_lat = np.abs(lat) > 90
    if bad_lat.any():
        swapped = bool(np.all(np.abs(lat) <= 180) and np.all(np.abs(lon) <= 90))
        hint = ("; the columns look swapped (x must be longitude, y latitude)" if swapped
                else "; are these projected coordinates? set the frame's real CRS")
        raise InputError(f"{name}: latitude (y) outside -90..90 at rows {rows(bad_lat)}{hint}")
    bad_lon = np.abs(lon) > 540
    if bad_lon.any():
        raise InputError(f"{name}: longitude (x) outside -540..540 at rows {rows(bad_lon)}; are these projected "
                         "coordinates? set the frame's real CRS")


def _wgs84_lonlat(frame: Any, name: str, centroids: bool) -> np.ndarray:
    """A geographic frame's points, checked (:func:`_check_lonlat`), as WGS84 longitude and
    latitude in degrees: what the zone choice, PROJ's scale factors and the per-group
    transforms from EPSG:4326 read. Why transform: a geographic CRS may count longitude from
    another prime meridian (Ferro, Paris) or in another unit (grads), and read as WGS84
    degrees its coordinates would be places hundreds of kilometres away."""
    check_on_earth(CRS(frame.crs), name)
    lonlat = _points_of(frame, name, centroids)
    _check_lonlat(frame, lonlat, name)
    if CRS(frame.crs).equals(_WGS84):
        return lonlat
    return _points_of(frame.to_crs(_WGS84), name, centroids)


def _warn_degrees_in_projected(frame: Any, xy: np.ndarray, name: str, crs: Any) -> None:
    """A projected frame whose coordinates all look like degrees is probably mislabelled.

    At any span: projected data within ±180 / ±90 of a CRS's origin is a site a few hundred
    units across at that origin (for most CRSs far out at sea or off the zone), while degrees
    that span a country or a continent are the common form of this mistake."""
    if len(xy) >= 3 and np.all(np.abs(xy[:, 0]) <= 180) and np.all(np.abs(xy[:, 1]) <= 90):
        extent = float(np.ptp(xy, axis=0).max())
        if extent > 0:
            import warnings

            warnings.warn(
                f"{name}: every coordinate lies within ±180 / ±90 and the data span {extent:.3g} "
                f"{unit_of(crs)} in the projected CRS {CRS(crs).name!r}; if these are degrees, set the "
                "frame's CRS to a geographic one (e.g. EPSG:4326)",
                UserWarning, stacklevel=_caller_level(),
            )


def scale_error_over(work: Any, lonlat: np.ndarray, xy: np.ndarray) -> float:
    """The largest relative scale error of the projection ``work`` over the data.

    Evaluated (pyproj's ``Proj.get_factors``) at the vertices of the data's convex hull in
    the working frame — where a transverse Mercator or azimuthal frame distorts most — and
    at a fixed sample of up to 20,000 points for any other projection.
    """
    if not np.isfinite(xy).all():
        # Points the projection cannot reach (beyond a transverse Mercator's range).
        return float("inf")
    return float(np.nanmax(_scale_errors(work, lonlat[_measured_rows(xy)])))


def _measured_rows(xy: np.ndarray) -> np.ndarray:
    """The rows :func:`scale_error_over` measures: the convex hull's vertices and a fixed
    sample of up to 20,000 rows."""
    n = len(xy)
    hull = shapely.convex_hull(shapely.multipoints(xy))
    if hull.geom_type == "Polygon":
        corners = np.asarray(hull.exterior.coords)[:-1]
        at = np.unique(np.concatenate([np.flatnonzero(np.isin(xy[:, 0], corners[:, 0])), [0]]))
    else:
        at = np.array([int(np.argmin(xy[:, 0])), int(np.argmax(xy[:, 0]))])
    return np.unique(np.concatenate([at, np.linspace(0, n - 1, min(n, 20_000)).astype(np.int64)]))


def _warn_distorting_crs(xy: np.ndarray, name: str, work: Any, max_scale_error: float, chosen: bool) -> None:
    """Projected input is solved in its own CRS (or the ``work_crs`` the caller ``chosen``),
    as it is; when that CRS distorts distances over the data beyond ``max_scale_error`` (Web
    Mercator away from the equator, an equal-area projection over a continent, a zone used
    far outside its area), every distance and cost comes out scaled by up to that much, so
    say so with the measured figure instead of letting ``cost_m`` pass for true metres."""
    from pyproj import Transformer

    finite = np.isfinite(xy).all(axis=1)
    if not finite.any():
        return
    rows = _measured_rows(xy[finite])
    try:
        lon, lat = Transformer.from_crs(CRS(work), CRS("EPSG:4326"), always_xy=True).transform(
            xy[finite][rows, 0], xy[finite][rows, 1])
        errors = _scale_errors(work, np.column_stack([lon, lat]))
    except Exception:  # noqa: BLE001 - a CRS PROJ cannot measure is used as it is, unmeasured
        return
    if not np.isfinite(errors).any():
        return
    _say_distortion(name, work, float(np.nanmax(errors)), max_scale_error, chosen)


def _say_distortion(name: str, work: Any, error: float, max_scale_error: float, chosen: bool) -> None:
    """Warn when the working CRS ``work`` (the caller's own, or ``chosen`` as ``work_crs``)
    distorts distances over the data by ``error`` (relative) beyond ``max_scale_error``."""
    import warnings

    if not error > max_scale_error:
        return
    advice = ("choose a work_crs suited to the area" if chosen else
              "pass work_crs= with a projection suited to the area (a UTM zone, a national grid)")
    warnings.warn(
        f"{name}: the working CRS {CRS(work).name!r} distorts distances by up to {100 * error:.3g} % over "
        f"these points (more than the {100 * max_scale_error:.3g} % of max_scale_error); distances, "
        f"costs and radii are in its units ({unit_of(work)}) and differ from true lengths by that much. "
        f"For true lengths {advice}, or raise max_scale_error= to accept them",
        UserWarning, stacklevel=_caller_level(),
    )


def _caller_level() -> int:
    """The ``stacklevel`` that makes a warning point at the first caller outside placewise
    (the gis functions reach :func:`prepare` by paths of different depths)."""
    import os
    import sys

    package = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    frame: Any = sys._getframe(1)
    level = 1
    while frame is not None and os.path.abspath(frame.f_code.co_filename).startswith(package + os.sep):
        frame, level = frame.f_back, level + 1
    return level


def _centres(lonlat: np.ndarray, codes: np.ndarray, count: int) -> np.ndarray:
    """Longitude/latitude of the mean unit vector of each group's points (``codes`` in ``0..count-1``).

    Why not the middle of the bounding box: a group on both sides of the 180° meridian has
    longitudes near -180 and +180, whose box middle lies near 0°, on the other side of the Earth.
    The mean direction is where the group is, whatever meridian it straddles (a group spread
    evenly round a pole or the globe has no such centre, and its scale error refuses it).
    """
    lon, lat = np.radians(lonlat[:, 0]), np.radians(lonlat[:, 1])
    unit = np.column_stack([np.cos(lat) * np.cos(lon), np.cos(lat) * np.sin(lon), np.sin(lat)])
    total = np.zeros((count, 3))
    np.add.at(total, codes, unit)
    return np.column_stack([np.degrees(np.arctan2(total[:, 1], total[:, 0])),
                            np.degrees(np.arctan2(total[:, 2], np.hypot(total[:, 0], total[:, 1])))])


def _centre(lonlat: np.ndarray) -> np.ndarray:
    """Longitude/latitude of the mean unit vector of all the points (:func:`_centres`)."""
    return _centres(lonlat, np.zeros(len(lonlat), dtype=np.int64), 1)[0]


def _utm_at_centre(lonlat: np.ndarray) -> CRS:
    """The UTM zone at the centre of the points (:func:`_centre`)."""
    centre = _centre(lonlat)
    return _utm_of(float(centre[0]), float(centre[1]))


def _areal_lonlat(frame: Any, name: str, centroids: bool) -> np.ndarray:
    """A geographic frame's points as WGS84 longitude/latitude, or with ``centroids`` the
    centroids of its other geometries, each taken in the UTM zone of its own geometry's
    centre (a centroid is areal, so it is taken in a metric frame, not in degrees).

    Why each in its own zone: a zone chosen over the whole frame would move a parcel's
    centroid with the other rows that share the frame (demand and sites in different zones
    put a parcel metres from itself), and a polygon split at the antimeridian would give a
    zone on the other side of the Earth. The centre that picks the zone is taken after the
    parts are joined across the antimeridian (:func:`_points_of`)."""
    import geopandas as gpd

    wgs84 = frame if CRS(frame.crs).equals(_WGS84) else frame.to_crs(_WGS84)
    lonlat = _points_of(wgs84, name, centroids)
    geoms = wgs84.geometry.values
    areal = (np.flatnonzero(shapely.get_type_id(geoms) != shapely.GeometryType.POINT) if centroids
             else np.empty(0, dtype=np.int64))
    if len(areal) == 0:
        return lonlat
    zones = _utm_epsg(lonlat[areal, 0], lonlat[areal, 1])
    for zone in np.unique(zones):
        mine = areal[zones == zone]
        utm = CRS.from_epsg(int(zone))
        centres = gpd.GeoSeries(geoms[mine], crs=_WGS84).to_crs(utm).centroid.to_crs(_WGS84)
        lonlat[mine, 0], lonlat[mine, 1] = centres.x.to_numpy(), centres.y.to_numpy()
    return lonlat


def _utm_epsg(lon: np.ndarray, lat: np.ndarray) -> np.ndarray:
    """The EPSG code of the WGS 84 UTM zone of each point (326zz north, 327zz south)."""
    zone = np.floor((np.asarray(lon, dtype=np.float64) + 180.0) / 6.0).astype(np.int64) % 60 + 1
    return np.where(np.asarray(lat) >= 0, 32600, 32700) + zone


def _utm_of(lon: float, lat: float) -> CRS:
    """The WGS 84 UTM zone of a point (EPSG 326zz north, 327zz south)."""
    return CRS.from_epsg(int(_utm_epsg(np.array([lon]), np.array([lat]))[0]))


def _centred_frame(lon: float) -> CRS:
    """A transverse Mercator frame on the WGS 84 ellipsoid whose central meridian is ``lon``
    (scale 1 on it): for a group too wide for its UTM zone, whose central meridian can lie up
    to 3° from the group's centre, this halves or better the largest distance from the
    central meridian, and the scale error grows with its square."""
    from pyproj.crs import GeographicCRS, ProjectedCRS
    from pyproj.crs.coordinate_operation import TransverseMercatorConversion

    conversion = TransverseMercatorConversion(latitude_natural_origin=0.0, longitude_natural_origin=lon,
                                              false_easting=500_000.0, false_northing=10_000_000.0,
                                              scale_factor_natural_origin=1.0)
    east = f"{abs(lon):.2f}°{'E' if lon >= 0 else 'W'}"
    return ProjectedCRS(conversion, name=f"WGS 84 / transverse Mercator on {east}",
                        geodetic_crs=GeographicCRS(datum="WGS84"))


def _scale_errors(work: Any, lonlat: np.ndarray) -> np.ndarray:
    """PROJ's worst scale error (meridional or parallel) of ``work`` at every point."""
    from pyproj import Proj

    factors = Proj(work).get_factors(lonlat[:, 0], lonlat[:, 1])
    return np.maximum(np.abs(np.asarray(factors.meridional_scale) - 1.0),
                      np.abs(np.asarray(factors.parallel_scale) - 1.0))


def _frames_per_group(
    lonlat: np.ndarray, groups: Groups, name: str, max_scale_error: float,
) -> tuple[np.ndarray, list[Any], np.ndarray, np.ndarray]:
    """Each group in the UTM zone of its own centre: the points in their group's frame, the
    distinct frames, each group's frame and each group's worst scale error.

    Why per group: one projection shared by groups far apart distorts the distant ones; a
    group's own zone keeps its scale error within UTM's (about 0.1 % across a zone). A group
    that its zone distorts beyond ``max_scale_error`` gets a transverse Mercator frame on its
    own centre (:func:`_centred_frame`) before it is refused.
    """
    from pyproj import Transformer

    count = len(groups.values)
    centre = _centres(lonlat, groups.codes, count)
    epsg = np.array([_utm_of(float(c[0]), float(c[1])).to_epsg() for c in centre])
    frames: list[Any] = [CRS.from_epsg(int(e)) for e in np.unique(epsg)]
    frame_of_group = np.searchsorted(np.unique(epsg), epsg)
    error = np.zeros(count)
    row_frame = frame_of_group[groups.codes]
    for k, work in enumerate(frames):
        # PROJ's scale factors at every point of the zone's groups (a transverse Mercator
        # frame distorts most far from its central meridian, least on it: k0 = 0.9996).
        mine = np.flatnonzero(row_frame == k)
        np.maximum.at(error, groups.codes[mine], _scale_errors(work, lonlat[mine]))
    for g in np.flatnonzero(error > max_scale_error):
        centred = _centred_frame(float(centre[g, 0]))
        mine = np.flatnonzero(groups.codes == g)
        centred_error = float(_scale_errors(centred, lonlat[mine]).max())
        if centred_error < error[g]:
            frames.append(centred)
            frame_of_group[g] = len(frames) - 1
            error[g] = centred_error
    xy = np.empty_like(lonlat)
    row_frame = frame_of_group[groups.codes]
    for k, work in enumerate(frames):
        mine = np.flatnonzero(row_frame == k)
        if len(mine):
            to_work = Transformer.from_crs("EPSG:4326", work, always_xy=True)
            xy[mine, 0], xy[mine, 1] = to_work.transform(lonlat[mine, 0], lonlat[mine, 1])
    # A group its frame cannot project (infinite coordinates, NaN scale factors) is as far
    # beyond the limit as a group can be: never let a NaN error compare as within it.
    unreachable = ~np.isfinite(xy).all(axis=1)
    error[np.isnan(error)] = np.inf
    error[np.unique(groups.codes[unreachable])] = np.inf
    worst = int(np.argmax(error))
    if error[worst] > max_scale_error:
        raise InputError(
            f"{name}: group {plain(groups.values[worst])!r} spans too much of the globe for one planar frame: "
            f"{CRS(frames[frame_of_group[worst]]).name!r} distorts its distances by up to "
            f"{100 * error[worst]:.3g} % (more than the {100 * max_scale_error:.3g} % allowed); split it into "
            "smaller groups, pass work_crs= with a projection suited to it, or raise max_scale_error="
        )
    return xy, frames, frame_of_group, error


def _refuse_unprojected(frame: Any, xy: np.ndarray, name: str, work: Any, kind: type[InputError]) -> None:
    """Points the working projection cannot reach (PROJ gives them infinite coordinates: a
    transverse Mercator frame holds about 90° of longitude either side of its meridian at
    most) are refused by row, never passed on as infinite coordinates of the input."""
    bad = np.flatnonzero(~np.isfinite(xy).all(axis=1))
    if len(bad) == 0:
        return
    rows = ", ".join(repr(plain(v)) for v in frame.index[bad[:5]]) + (", ..." if len(bad) > 5 else "")
    raise kind(
        f"{name}: {len(bad)} point(s) (rows {rows}) lie where the working frame {CRS(work).name!r} cannot "
        "project them (it gives them infinite coordinates); split the data into smaller groups (by=), or "
        "pass work_crs= with a projection that holds the whole area"
    )
