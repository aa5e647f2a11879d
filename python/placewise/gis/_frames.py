"""Preparing GeoDataFrames for the kernels, and turning kernel results back into frames.

One path for every function of :mod:`placewise.gis`: validate the frame, bring its points
into the working CRS, code the ``by`` column's values as integer group labels, call the
kernel's grouped form **once** (one crossing into Rust and back), and build the output from
the result's own ``to_geodataframe``, with the group codes and row positions restated in the
user's terms (the ``by`` column's values, the frame's index labels).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np

try:
    import geopandas as gpd
    import pandas as pd
    import shapely
    from pyproj import CRS
except ImportError:  # pragma: no cover - exercised only without the extra
    raise ImportError("placewise.gis needs geopandas and pyproj: pip install 'placewise[geo]'") from None

from .._core import InputError
from .._errors import labelled, plain, refuse, restate, restate_problems
from .._units import unit_of

# The model of geographic input solved on the ellipsoid (the ``work_crs`` column's value).
ELLIPSOID = "WGS84 ellipsoid"


class TooWide(InputError):
    """Geographic data that no working frame holds within ``max_scale_error`` (the functions
    with a spherical form answer on the sphere instead of refusing)."""
_WGS84 = CRS.from_epsg(4326)

# Default bound on the relative scale error a working projection may introduce over the
# data of geographic input (0.1 %); beyond it the functions refuse rather than distort.
MAX_SCALE_ERROR = 1e-3


@dataclasses.dataclass
class Prepared:
    """Points of one frame, in the working (metric) CRS — one for the frame, or one per group."""

    frame: Any  # the caller's GeoDataFrame
    xy: np.ndarray  # (n, 2) float64 in the working CRS (of each row's group)
    crs: Any  # the caller's CRS (None when planar without one)
    work: Any  # the working CRS (None when planar without one; the first group's with frames)
    # For geographic input: the largest relative scale error of the working projection over
    # the data (None for projected or planar input, whose own units are used as they are).
    scale_error: float | None = None
    # The ``by`` groups, when they were coded here (see :func:`prepare`).
    groups: Any = None
    # Per-group working frames of geographic input: the distinct frames, each group's
    # frame (index into ``frames``) and each group's worst scale error.
    frames: list[Any] | None = None
    frame_of_group: np.ndarray | None = None
    group_error: np.ndarray | None = None
    # Geographic input kept as WGS84 longitude/latitude for the geodesic kernels (``xy``
    # holds longitude, latitude; ``work`` is EPSG:4326).
    ellipsoid: bool = False

    @property
    def unit(self) -> str:
        return "m" if self.frames is not None or self.ellipsoid else unit_of(self.work)

    @property
    def rows(self) -> np.ndarray:
        """The frame's index labels, by row position."""
        return self.frame.index.to_numpy(dtype=object)

    def back(self, geoms: Any, codes: np.ndarray | None = None) -> Any:
        """Working-CRS geometries as a GeoSeries in the caller's CRS (``codes``: the group of
        each geometry, when every group has its own frame)."""
        geoms = np.asarray(geoms, dtype=object)
        if self.frames is None or codes is None:
            series = gpd.GeoSeries(geoms, crs=self.work)
            if self.crs is not None and self.work is not None and not CRS(self.crs).equals(self.work):
                series = series.to_crs(self.crs)
            return series.reset_index(drop=True)
        assert self.frame_of_group is not None
        out = np.empty(len(geoms), dtype=object)
        which = self.frame_of_group[np.asarray(codes, dtype=np.int64)]
        for k, work in enumerate(self.frames):
            mine = which == k
            if mine.any():
                out[mine] = gpd.GeoSeries(geoms[mine], crs=work).to_crs(self.crs).values
        return gpd.GeoSeries(out, crs=self.crs)

    def model(self, codes: np.ndarray | None = None) -> dict[str, Any]:
        """Columns stating the model of a geographic result: its working frame and the worst
        scale error that frame introduces over the data (per group with per-group frames).
        On the ellipsoid: ``work_crs`` is "WGS84 ellipsoid" and the scale error 0."""
        if self.ellipsoid:
            count = 1 if codes is None else len(codes)
            return {"work_crs": np.full(count, ELLIPSOID, dtype=object) if codes is not None else ELLIPSOID,
                    "scale_error": np.zeros(count) if codes is not None else 0.0}
        if self.frames is not None and codes is not None:
            assert self.frame_of_group is not None and self.group_error is not None
            codes = np.asarray(codes, dtype=np.int64)
            names = np.array([CRS(f).name for f in self.frames], dtype=object)
            return {"work_crs": names[self.frame_of_group[codes]], "scale_error": self.group_error[codes]}
        if self.scale_error is None:
            return {}
        return {"work_crs": CRS(self.work).name, "scale_error": self.scale_error}


def as_frame(obj: Any, name: str) -> Any:
    if isinstance(obj, gpd.GeoDataFrame):
        return obj
    if isinstance(obj, gpd.GeoSeries):
        return gpd.GeoDataFrame(geometry=obj)
    raise InputError(f"{name} must be a GeoDataFrame or GeoSeries; got {type(obj).__name__}")


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


def _points_of(frame: Any, name: str, centroids: bool) -> np.ndarray:
    geoms = frame.geometry.values
    missing = shapely.is_missing(geoms) | shapely.is_empty(geoms)
    if missing.any():
        row = plain(frame.index[int(np.argmax(missing))])
        raise InputError(f"{name}: row {row!r} has a missing or empty geometry")
    kinds = shapely.get_type_id(geoms)
    not_point = kinds != shapely.GeometryType.POINT
    if not_point.any():
        if not centroids:
            at = int(np.argmax(not_point))
            row = plain(frame.index[at])
            kind = shapely.GeometryType(int(kinds[at])).name.title()
            raise InputError(
                f"{name}: row {row!r} is a {kind}, not a Point; pass centroids=True to use the "
                "centroids of non-point geometries"
            )
        geoms = shapely.centroid(geoms)
    return np.column_stack([shapely.get_x(geoms), shapely.get_y(geoms)]).astype(np.float64)


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
    lonlat = _points_of(frame, name, centroids)
    _check_lonlat(frame, lonlat, name)
    if CRS(frame.crs).equals(_WGS84):
        return lonlat
    return _points_of(frame.to_crs(_WGS84), name, centroids)


def _warn_degrees_in_projected(frame: Any, xy: np.ndarray, name: str, crs: Any) -> None:
    """A projected frame whose coordinates all look like degrees is probably mislabelled."""
    if len(xy) >= 3 and np.all(np.abs(xy[:, 0]) <= 180) and np.all(np.abs(xy[:, 1]) <= 90):
        extent = float(np.ptp(xy, axis=0).max())
        if 0 < extent < 10:
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


def _utm_for(frame: Any, name: str) -> CRS:
    """The UTM zone at a frame's centre, its geometries read as WGS 84 (centroids stand for
    other geometries here, as this only picks the zone)."""
    return _utm_at_centre(_points_of(frame if CRS(frame.crs).equals(_WGS84) else frame.to_crs(_WGS84), name,
                                     centroids=True))


def _utm_of(lon: float, lat: float) -> CRS:
    """The WGS 84 UTM zone of a point (EPSG 326zz north, 327zz south)."""
    zone = int(np.floor((lon + 180.0) / 6.0)) % 60 + 1
    return CRS.from_epsg((32600 if lat >= 0 else 32700) + zone)


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


def goes_on_ellipsoid(crs: Any, work_crs: Any = None) -> bool:
    """True when a frame in ``crs`` is solved on the ellipsoid by the functions that have a
    geodesic form (``prepare(..., ellipsoid=True)``): a geographic CRS and no ``work_crs``."""
    return crs is not None and CRS(crs).is_geographic and work_crs is None


def prepare(
    obj: Any, name: str, *, planar: bool, centroids: bool, work: Any = "estimate", work_crs: Any = None,
    max_scale_error: float = MAX_SCALE_ERROR, by: str | None = None, ellipsoid: bool = False,
) -> Prepared:
    """Validate a frame and bring its points into the working CRS.

    ``work="estimate"`` chooses the working CRS from this frame (``work_crs`` when given);
    otherwise the given working CRS (from a companion frame) is used and this frame must
    agree on having one. Geographic input is checked (latitudes within ±90, longitudes
    within ±540) and the working projection's worst scale error over the data is measured:
    beyond ``max_scale_error`` (unless ``work_crs`` was chosen by the caller) it is an
    ``InputError`` saying how to proceed, never a silent distortion. With ``by``, the
    groups are coded here (``Prepared.groups``) and geographic input puts each group in a
    frame of its own.
    """
    frame = as_frame(obj, name)
    if len(frame) == 0:
        raise InputError(f"{name} has no rows")
    if not (isinstance(max_scale_error, (int, float)) and 0 < max_scale_error < 1):
        raise InputError(f"max_scale_error must be a number between 0 and 1; got {max_scale_error!r}")
    groups = groups_of(frame, by, name)
    if planar and isinstance(work, str) and frame.crs is not None:
        # Before the ellipsoid rule too: a geographic frame must not be solved on the
        # ellipsoid while the caller says its coordinates are planar.
        raise InputError(f"{name} has a CRS ({CRS(frame.crs).name}); planar=True is only for frames without one")
    geographic = frame.crs is not None and CRS(frame.crs).is_geographic
    on_earth = work is ELLIPSOID or (ellipsoid and isinstance(work, str) and goes_on_ellipsoid(frame.crs, work_crs))
    if on_earth:
        return _on_ellipsoid(frame, name, centroids, groups)
    lonlat = _wgs84_lonlat(frame, name, centroids) if geographic else None
    if lonlat is not None:
        if groups is not None and isinstance(work, str) and work_crs is None and not planar:
            xy, frames, frame_of_group, group_error = _frames_per_group(lonlat, groups, name, max_scale_error)
            return Prepared(frame, xy, frame.crs, frames[0], float(group_error.max()), groups, frames,
                            frame_of_group, group_error)
    companion = not isinstance(work, str)  # the working CRS is a companion frame's: never switched here
    if isinstance(work, str):
        work = _working_crs(frame, name, planar, work_crs, lonlat)
    elif (work is None) != (frame.crs is None):
        raise InputError(
            f"{name}: either every frame has a CRS or none has (planar=True); {name} "
            + ("has none" if frame.crs is None else "has one while the first frame has none")
        )
    projected = frame if work is None or CRS(frame.crs).equals(work) else frame.to_crs(work)
    xy = _points_of(projected, name, centroids)
    if lonlat is None:
        if frame.crs is not None:
            _warn_degrees_in_projected(frame, xy, name, frame.crs)
            _warn_distorting_crs(xy, name, work, max_scale_error, chosen=work_crs is not None)
        return Prepared(frame, xy, frame.crs, work, groups=groups)
    error = scale_error_over(work, lonlat, xy)
    if error > max_scale_error and work_crs is None and not companion:
        # Too wide for its UTM zone: a transverse Mercator frame on the data's own centre.
        centred = _centred_frame(float(_centre(lonlat)[0]))
        centred_xy = _points_of(frame.to_crs(centred), name, centroids)
        centred_error = scale_error_over(centred, lonlat, centred_xy)
        if centred_error < error:
            work, xy, error = centred, centred_xy, centred_error
    if error > max_scale_error and work_crs is None:
        _refuse_unprojected(frame, xy, name, work, TooWide)
        extent = float(np.ptp(xy, axis=0).max()) / 1000
        raise TooWide(
            f"{name}: the data span {extent:,.0f} km, and the working frame {CRS(work).name!r} distorts "
            f"distances by up to {100 * error:.3g} % over them (more than the {100 * max_scale_error:.3g} % "
            "allowed); split the data into smaller groups (by=), pass work_crs= with a projection suited to "
            "the whole area, or raise max_scale_error="
        )
    _refuse_unprojected(frame, xy, name, work, InputError)
    if work_crs is not None:
        # The caller's own working CRS is used as given, wide or not: said when it distorts,
        # as for projected input, not only in the scale_error column.
        _say_distortion(name, work, error, max_scale_error, chosen=True)
    return Prepared(frame, xy, frame.crs, work, error, groups)


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


def prepare_or_sphere(obj: Any, name: str, *, planar: bool, centroids: bool, work_crs: Any,
                      max_scale_error: float, by: str | None = None, region: Any = None) -> Prepared:
    """:func:`prepare`, or — for geographic input no working frame holds within
    ``max_scale_error`` (global, polar, wide across the antimeridian), ungrouped and without a
    chosen ``work_crs`` — the points as WGS84 lon/lat for the spherical kernels
    (``Prepared.ellipsoid``). With a ``region`` the working frame is chosen over the points
    and the region together (:func:`~placewise.gis._together.prepare_together`), one frame
    for every group: the region is clipped in it, so its distortion counts too."""
    try:
        if region is None:
            return prepare(obj, name, planar=planar, centroids=centroids, work_crs=work_crs,
                           max_scale_error=max_scale_error, by=by)
        from ._together import prepare_together  # built on this module

        return prepare_together(obj, name, {}, planar=planar, centroids=centroids, region=region, work_crs=work_crs,
                                max_scale_error=max_scale_error, by=by)[0]
    except TooWide:
        if by is not None:
            raise
        return prepare(obj, name, planar=planar, centroids=centroids, work=ELLIPSOID)


def plane_or_sphere(obj: Any, name: str, kernel: Callable[..., Any], sphere: Callable[..., Any] | None, *,
                    planar: bool, centroids: bool, work_crs: Any, max_scale_error: float,
                    by: str | None = None) -> tuple[Prepared, Callable[..., Any]]:
    """A frame's points and the kernel that solves them: ``kernel`` in the working frame
    :func:`prepare` chooses (a UTM zone, the frame's own projected CRS, ``work_crs``, or none
    with ``planar=True``), or — when ``sphere``, the kernel's spherical form, is given and no
    working frame holds the geographic points (:func:`prepare_or_sphere`) — ``sphere`` on
    their WGS84 longitude/latitude. Without ``sphere`` such points are refused
    (:class:`TooWide`)."""
    model = {"work_crs": work_crs, "max_scale_error": max_scale_error}
    if sphere is None:
        return prepare(obj, name, planar=planar, centroids=centroids, by=by, **model), kernel
    prepared = prepare_or_sphere(obj, name, planar=planar, centroids=centroids, by=by, **model)
    return prepared, sphere if prepared.ellipsoid else kernel


def on_earth_only(kernel: Callable[..., Any],
                  where: str = "on the ellipsoid only (geographic input without work_crs or region)"
                  ) -> Callable[..., Any]:
    """``kernel`` (a planar one) refusing ``time_limit`` and ``progress``, which only its
    geodesic or spherical counterpart takes (``where`` says which runs go there). Every
    planar kernel wrapped here is exact and ends in well under a second, so it takes
    neither. Taking them silently would let a caller believe the run was watched; they are
    an ``InputError`` naming the argument instead."""

    def planar(*args: Any, time_limit: Any = None, progress: Any = False, **options: Any) -> Any:
        for name, value, unset in (("time_limit", time_limit, None), ("progress", progress, False)):
            if value is not unset and value is not None:
                refuse(name, f"{name}= applies {where}; the planar kernel is exact and ends in well under a "
                             f"second, so it takes no {name.replace('_', ' ')}: drop {name}=")
        return kernel(*args, **options)

    return planar


def _on_ellipsoid(frame: Any, name: str, centroids: bool, groups: Groups | None) -> Prepared:
    """The frame's points as WGS84 longitude/latitude for the geodesic kernels (checked for
    range and swapped columns; another CRS is transformed to WGS84 first)."""
    if frame.crs is None:
        raise InputError(f"{name} has no CRS; geographic sites need their companion frames to have one too")
    crs = CRS(frame.crs)
    if crs.is_geographic:
        _check_lonlat(frame, _points_of(frame, name, centroids), name)
    points = frame
    if centroids and (shapely.get_type_id(frame.geometry.values) != shapely.GeometryType.POINT).any():
        # Centroids are areal, so they are taken in a metric frame (the data's UTM zone), not
        # in degrees; only the points go on to the ellipsoid.
        utm = _utm_for(frame, name)
        points = gpd.GeoDataFrame(geometry=frame.to_crs(utm).geometry.centroid, crs=utm, index=frame.index)
    if not CRS(points.crs).equals(_WGS84):
        points = points.to_crs(_WGS84)
    lonlat = _points_of(points, name, centroids)
    return Prepared(frame, lonlat, frame.crs, _WGS84, 0.0, groups, ellipsoid=True)


def column(frame: Any, spec: Any, name: str, what: str) -> np.ndarray:
    """A numeric column named ``spec`` (or an array of the frame's length), as float64."""
    if isinstance(spec, str):
        if spec not in frame.columns:
            raise InputError(f"{name} has no {what} column {spec!r}; columns: {list(frame.columns)}")
        values = frame[spec]
        label = f"{what} column {spec!r}"
    else:
        values = np.asarray(spec)
        label = what
        if values.shape != (len(frame),):
            raise InputError(f"{name}: {what} must have one value per row ({len(frame)}); got shape {values.shape}")
    if pd.Series(np.asarray(values)).dtype.kind in "mM":
        # pandas would count dates and durations in nanoseconds.
        raise InputError(f"{name}: {label} holds dates or durations; convert them to numbers in a stated unit first")
    try:
        numbers = pd.to_numeric(pd.Series(np.asarray(values)), errors="raise")
    except (ValueError, TypeError) as exc:
        # Name the first value that is not a number by the frame's own row label (pandas'
        # message counts positions from 0, which name no row the caller knows).
        raw = pd.Series(np.asarray(values, dtype=object))
        try:
            failed = (pd.to_numeric(raw, errors="coerce").isna() & raw.notna()).to_numpy()
        except (ValueError, TypeError):
            failed = np.zeros(len(raw), dtype=bool)
        if failed.any():
            at = int(np.argmax(failed))
            error = InputError(f"{name}: {label} is not numeric: {plain(raw.iloc[at])!r} at row "
                               f"{plain(frame.index[at])!r}")
            error.row = plain(frame.index[at])
            raise error from None
        raise InputError(f"{name}: {label} is not numeric ({exc})") from exc
    if numbers.dtype.kind == "c":  # the cast below would drop the imaginary part with a warning only
        raise InputError(f"{name}: {label} holds complex values; it must hold real numbers")
    out = np.asarray(numbers, dtype=np.float64)
    bad = ~np.isfinite(out)
    if bad.any():
        row = plain(frame.index[int(np.argmax(bad))])
        raise InputError(f"{name}: {label} has a missing or non-finite value at row {row!r}")
    return out


def weights(prepared: Prepared, weight: Any, name: str) -> np.ndarray | None:
    return None if weight is None else column(prepared.frame, weight, name, "weight")


@dataclasses.dataclass
class Groups:
    """A frame's ``by`` column coded as integer labels ``0..G-1`` in sorted order of its values."""

    name: str
    values: Any  # pandas Index of the G sorted group values
    codes: np.ndarray  # (n,) int64

    @property
    def counts(self) -> np.ndarray:
        return np.bincount(self.codes, minlength=len(self.values))


def groups_of(frame: Any, by: str | None, name: str) -> Groups | None:
    if by is None:
        return None
    if by not in frame.columns:
        raise InputError(f"{name} has no group column {by!r}; columns: {list(frame.columns)}")
    values = frame[by]
    if values.isna().any():
        row = plain(frame.index[int(np.argmax(values.isna().to_numpy()))])
        raise InputError(f"{name}: group column {by!r} has a missing value at row {row!r}")
    try:
        codes, uniques = pd.factorize(values, sort=True)
    except TypeError as exc:
        raise InputError(f"{name}: group column {by!r} mixes values that cannot be sorted ({exc})") from exc
    return Groups(by, pd.Index(uniques, name=by), codes.astype(np.int64))


def shared_groups(first: Any, second: Any, by: str, names: tuple[str, str]) -> tuple[Groups, np.ndarray]:
    """Code the ``by`` column of two frames (demand and sites) on the union of their values.

    Returns the first frame's :class:`Groups` (whose ``values`` are the union, so a value
    found only in the second frame is a group of its own) and the second frame's codes.
    """
    a = groups_of(first, by, names[0])
    b = groups_of(second, by, names[1])
    assert a is not None and b is not None
    try:
        values = a.values.append(b.values).unique().sort_values()
    except TypeError as exc:
        raise InputError(f"{names[0]} and {names[1]}: group column {by!r} mixes values that cannot be sorted "
                         f"({exc})") from None
    values = values.rename(by)
    first_codes = values.get_indexer(a.values.take(a.codes)).astype(np.int64)
    second_codes = values.get_indexer(b.values.take(b.codes)).astype(np.int64)
    return Groups(by, values, first_codes), second_codes


def call(
    kernel: Callable[..., Any], *args: Any, groups: Groups | None = None,
    rows: Mapping[str, Any] | None = None, **options: Any,
) -> Any:
    """Run a kernel once (its grouped form when ``groups`` is given), restating any
    ``InputError`` with the user's group values and row labels."""
    try:
        if groups is None:
            return kernel(*args, **options)
        return kernel(*args, groups=groups.codes, **options)
    except InputError as exc:
        raise restate(exc, None if groups is None else groups.values, rows) from None


def solve_points(obj: Any, name: str, kernel: Callable[..., Any], sphere: Callable[..., Any] | None = None, /, *,
                 planar: bool, centroids: bool, work_crs: Any, max_scale_error: float, by: str | None,
                 errors: str, **options: Any) -> tuple[Prepared, Any, dict[str, Any]]:
    """The one step of the functions that solve a frame's points alone (Delaunay
    triangulation, spanning and Steiner trees): the points and their kernel from
    :func:`plane_or_sphere`, the kernel run once on them (its grouped form with ``by``, which
    alone takes ``errors``), its errors restated with the frame's row labels. Returns the
    prepared points, the kernel's result and those labels (``{"points": ...}``)."""
    prepared, kernel = plane_or_sphere(obj, name, kernel, sphere, planar=planar, centroids=centroids,
                                       work_crs=work_crs, max_scale_error=max_scale_error, by=by)
    rows = {"points": prepared.rows}
    grouped = {} if prepared.groups is None else {"errors": errors}
    result = call(kernel, prepared.xy, groups=prepared.groups, rows=rows, **grouped, **options)
    return prepared, result, rows


def in_user_terms(
    table: Any, result: Any, groups: Groups | None, rows: Mapping[str, Any] | None = None,
    *, count: bool = False, prepared: Prepared | None = None,
) -> Any:
    """A result's table with its ``group`` column replaced by the ``by`` column (the user's
    values) and its ``problem`` column restated with the user's group values and row labels;
    with ``prepared``, the model columns of geographic input (working frame, scale error)."""
    if groups is None:
        if prepared is not None:
            for name, value in prepared.model().items():
                table[name] = value
        return table
    code = table["group"].to_numpy(dtype=np.int64)
    problems = restate_problems(result.problem_detail, groups.values, rows)
    table = table.drop(columns=["group", "problem"])
    taken = {*table.columns, "problem", *(["points"] if count else []),
             *(prepared.model(code) if prepared is not None else {})}
    if groups.name in taken:
        # The group values would overwrite, or be overwritten by, a result column.
        raise InputError(f"by: the group column {groups.name!r} has the name of a column of the result "
                         f"({', '.join(sorted(map(str, taken)))}); rename it")
    table.insert(0, groups.name, groups.values.take(code).to_numpy())
    if count:
        table.insert(1, "points", groups.counts[code])
    table["problem"] = problems[code]
    if prepared is not None:
        for name, value in prepared.model(code).items():
            table[name] = value
    if isinstance(table, gpd.GeoDataFrame):
        # A skipped group has no shape: a missing geometry, which every writer stores as
        # null, rather than the kernel's NaN placeholder (``POINT (NaN NaN)``).
        skipped = table["problem"].notna().to_numpy()
        if skipped.any():
            table.loc[skipped, table.geometry.name] = None
    return table


def with_unit(result: Any, prepared: Prepared) -> Any:
    """The result with lengths named in the working CRS's unit (``distance_m``)."""
    return dataclasses.replace(result, unit=prepared.unit)


def framed(
    result: Any, prepared: Prepared, groups: Groups | None, rows: Mapping[str, Any] | None = None,
    *, count: bool = False, row_columns: Sequence[str] = (),
) -> Any:
    """A kernel result as a GeoDataFrame in the caller's CRS, in the user's terms.

    Lengths are named with the working CRS's unit; the ``group`` column becomes the ``by``
    column holding the user's values, the ``problem`` column speaks of the user's groups and
    rows, and ``row_columns`` (input row positions, -1 for none) become the frame's index
    labels (None for none). ``count=True`` adds the rows used (per group).
    """
    out = with_unit(result, prepared).to_geodataframe(crs=None if prepared.frames else prepared.work)
    codes = out["group"].to_numpy(dtype=np.int64) if groups is not None else None
    out = gpd.GeoDataFrame(out.drop(columns=out.geometry.name),
                           geometry=prepared.back(out.geometry.values, codes).values, crs=prepared.crs)
    row_labels(out, prepared, row_columns)
    if groups is None and count:
        out.insert(0, "points", len(prepared.xy))
    return in_user_terms(out, result, groups, rows, count=count, prepared=prepared)


def annotated(frame: Any, columns: Mapping[str, Any], name: str) -> Any:
    """A copy of the caller's ``frame`` with a result's ``columns`` (name to values, one per
    row) set on it, in order.

    A column of the frame that has a result column's name is replaced. When the values it
    held differ from the result's (a column of the caller's own that happens to be called
    ``site`` or ``load``, not the result of an earlier run of the same plan), a warning
    names it, so a column of the caller's is never lost without a word; the geometry column
    cannot be replaced.
    """
    import warnings

    if frame.geometry.name in columns:
        raise InputError(f"{name}: the geometry column is named {frame.geometry.name!r}, the name of a column "
                         f"of the result ({', '.join(map(str, columns))}); rename it")
    out = frame.copy()
    replaced = []
    for key, values in columns.items():
        if key in out.columns and not pd.Series(out[key].to_numpy(dtype=object)).equals(
                pd.Series(np.asarray(values, dtype=object))):
            replaced.append(key)
        out[key] = values
    if replaced:
        warnings.warn(
            f"{name}: the result replaces the frame's own column{'s' if len(replaced) > 1 else ''} "
            f"{', '.join(map(repr, replaced))}, whose values differ; rename "
            f"{'them' if len(replaced) > 1 else 'it'} to keep both",
            UserWarning, stacklevel=_caller_level(),
        )
    return out


def row_labels(table: Any, prepared: Prepared, columns: Sequence[str]) -> None:
    """Replace columns of input row positions (-1 for none) by the frame's index labels (None)."""
    for name in columns:
        table[name] = labelled(table[name].to_numpy(), prepared.rows)
