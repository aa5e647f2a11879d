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
    from pyproj import CRS
except ImportError:  # pragma: no cover - exercised only without the extra
    raise ImportError("placewise.gis needs geopandas and pyproj: pip install 'placewise[geo]'") from None

from .._core import InputError
from .._errors import check_errors, labelled, refuse, restate, restate_problems
from .._units import check_on_earth, si_per_unit, unit_of
from ._columns import Groups, _points_of, as_frame, column, groups_of
from ._crs import (
    _WGS84,
    MAX_SCALE_ERROR,
    _areal_lonlat,
    _caller_level,
    _centre,
    _centred_frame,
    _check_lonlat,
    _frames_per_group,
    _refuse_unprojected,
    _say_distortion,
    _warn_degrees_in_projected,
    _warn_distorting_crs,
    _wgs84_lonlat,
    _working_crs,
    scale_error_over,
)
from ._drawn import drawn

# The model of geographic input solved on the ellipsoid (the ``work_crs`` column's value).
ELLIPSOID = "WGS84 ellipsoid"


class TooWide(InputError):
    """Geographic data that no working frame holds within ``max_scale_error`` (the functions
    with a spherical form answer on the sphere instead of refusing)."""


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

    def from_metres(self, length: float) -> float:
        """A length the caller gives in metres for geographic input, in the working CRS's
        unit (``length`` itself for projected or planar input, whose lengths are in their own
        unit, and on the ellipsoid). A working CRS in feet gets feet (a ``work_crs`` such as a
        US State Plane zone)."""
        if self.crs is None or self.work is None or self.ellipsoid or not CRS(self.crs).is_geographic:
            return length
        return length / si_per_unit(CRS(self.work))

    @property
    def rows(self) -> np.ndarray:
        """The frame's index labels, by row position."""
        return self.frame.index.to_numpy(dtype=object)

    def back(self, geoms: Any, codes: np.ndarray | None = None) -> Any:
        """Working-CRS geometries as a GeoSeries in the caller's CRS (``codes``: the group of
        each geometry, when every group has its own frame), drawn by
        :func:`~placewise.gis._drawn.drawn`: edges kept on their working-frame course, and
        in a geographic CRS cut at the antimeridian and closed through a pole they hold."""
        geoms = np.asarray(geoms, dtype=object)
        if self.frames is None or codes is None:
            return gpd.GeoSeries(drawn(geoms, self.work, self.crs), crs=self.crs if self.work is not None else None)
        assert self.frame_of_group is not None
        out = np.empty(len(geoms), dtype=object)
        which = self.frame_of_group[np.asarray(codes, dtype=np.int64)]
        for k, work in enumerate(self.frames):
            mine = which == k
            if mine.any():
                out[mine] = drawn(geoms[mine], work, self.crs)
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
        check_on_earth(crs, name)
        _check_lonlat(frame, _points_of(frame, name, centroids), name)
    # Centroids are areal, so they are taken in a metric frame (each geometry's UTM zone),
    # not in degrees; only the points go on to the ellipsoid.
    lonlat = _areal_lonlat(frame, name, centroids)
    return Prepared(frame, lonlat, frame.crs, _WGS84, 0.0, groups, ellipsoid=True)


def weights(prepared: Prepared, weight: Any, name: str) -> np.ndarray | None:
    return None if weight is None else column(prepared.frame, weight, name, "weight")


def call(
    kernel: Callable[..., Any], *args: Any, groups: Groups | None = None,
    rows: Mapping[str, Any] | None = None, measured_in: str | None = None, **options: Any,
) -> Any:
    """Run a kernel once (its grouped form when ``groups`` is given), restating any
    ``InputError`` with the user's group values and row labels, and its lengths with
    ``measured_in``, the working unit (``Prepared.unit``)."""
    try:
        if groups is None:
            return kernel(*args, **options)
        return kernel(*args, groups=groups.codes, **options)
    except InputError as exc:
        raise restate(exc, None if groups is None else groups.values, rows, measured_in) from None


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
    check_errors(errors)  # also without groups, where it is not passed on
    grouped = {} if prepared.groups is None else {"errors": errors}
    result = call(kernel, prepared.xy, groups=prepared.groups, rows=rows, measured_in=prepared.unit, **grouped,
                  **options)
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
    problems = restate_problems(result.problem_detail, groups.values, rows, None if prepared is None else prepared.unit)
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


def ellipsoid_area(geom: Any) -> float:
    """WGS84 area of a lon/lat (Multi)Polygon whose edges are taken as geodesics between its
    vertices: exteriors counter-clockwise minus holes, square metres."""
    from shapely.geometry.polygon import orient

    from ..geodesic import ring_area

    # A ring's signed area is reduced to within half the ellipsoid's; a counter-clockwise
    # ring with a negative area holds more than half of it. The ellipsoid's area is eight
    # times an octant's (by symmetry).
    globe = 8.0 * ring_area([[0.0, 0.0], [90.0, 0.0], [0.0, 90.0]])

    def ccw(ring: Any) -> float:
        area = ring_area(np.asarray(ring.coords)[:-1])
        return area + globe if area < 0 else area

    total = 0.0
    for part in getattr(geom, "geoms", [geom]):
        if part.geom_type != "Polygon" or part.is_empty:
            continue
        part = orient(part, 1.0)
        total += ccw(part.exterior)
        total -= sum(ccw(h.reverse()) for h in part.interiors)
    return total


def _drawn_areas(out: Any, prepared: Prepared) -> Any:
    """``out`` with its area column replaced by the WGS84 area of each shape as drawn back
    (``area_m2``), for geographic input solved in a projected working frame.

    The working frame's area scale is the square of its length scale, so planar areas
    there err by about twice the frame's ``scale_error``; the shapes drawn back follow the
    frame's straight edges to 1 cm (:mod:`placewise.gis._drawn`), and their ellipsoidal
    area (Karney 2013, through :func:`placewise.geodesic.ring_area`) is the area the cell
    or triangle covers on the Earth."""
    if prepared.ellipsoid or prepared.crs is None or not CRS(prepared.crs).is_geographic:
        return out
    names = [c for c in out.columns if str(c).startswith("area_") and str(c).endswith("2")]
    if not names:
        return out
    shapes = out.geometry if CRS(out.crs).equals(CRS("EPSG:4326")) else out.geometry.to_crs("EPSG:4326")
    areas = np.array([np.nan if g is None or g.is_empty else ellipsoid_area(g) for g in shapes.values])
    at = list(out.columns).index(names[0])
    out = out.drop(columns=names)
    out.insert(at, "area_m2", areas)
    return out


def framed(
    result: Any, prepared: Prepared, groups: Groups | None, rows: Mapping[str, Any] | None = None,
    *, count: bool = False, row_columns: Sequence[str] = (), drawn_areas: bool = False,
) -> Any:
    """A kernel result as a GeoDataFrame in the caller's CRS, in the user's terms.

    Lengths are named with the working CRS's unit; the ``group`` column becomes the ``by``
    column holding the user's values, the ``problem`` column speaks of the user's groups and
    rows, and ``row_columns`` (input row positions, -1 for none) become the frame's index
    labels (None for none). ``count=True`` adds the rows used (per group). With
    ``drawn_areas`` (shapes with straight edges in the working frame: cells, triangles),
    geographic input gets the WGS84 area of each shape drawn back (:func:`_drawn_areas`).
    """
    out = with_unit(result, prepared).to_geodataframe(crs=None if prepared.frames else prepared.work)
    codes = out["group"].to_numpy(dtype=np.int64) if groups is not None else None
    out = gpd.GeoDataFrame(out.drop(columns=out.geometry.name),
                           geometry=prepared.back(out.geometry.values, codes).values, crs=prepared.crs)
    row_labels(out, prepared, row_columns)
    if drawn_areas:
        out = _drawn_areas(out, prepared)
    if groups is None and count:
        out.insert(0, "points", len(prepared.xy))
    return in_user_terms(out, result, groups, rows, count=count, prepared=prepared)


def refuse_geometry_named(frame: Any, columns: Sequence[str], name: str) -> None:
    """Refuse a frame whose geometry column has the name of one of ``columns``, the columns a
    result writes onto a copy of it (:func:`annotated`), which cannot replace the geometry.

    Called before solving, so the refusal comes before the (possibly long) run, not after
    it; ``columns`` are those the result will write, in the order it writes them."""
    if frame.geometry.name in columns:
        raise InputError(f"{name}: the geometry column is named {frame.geometry.name!r}, the name of a column "
                         f"of the result ({', '.join(map(str, columns))}); rename it")


def same_values(held: Any, values: Any) -> bool:
    """True when a caller's column ``held`` holds the values ``values`` (one per row).

    Missing is missing whatever spells it (None, NaN, ``pd.NA``, ``NaT``), and the values
    are compared as values, whatever the dtypes: an ``Int64`` column of 1, 2 and ``pd.NA``
    holds the result's 1.0, 2.0 and NaN, a ``string`` column the result's Python strings."""
    old = pd.Series(held).to_numpy(dtype=object)
    new = np.asarray(pd.Series(values, dtype=object), dtype=object)
    if old.shape != new.shape:
        return False
    missing = pd.isna(old)
    if not np.array_equal(missing, pd.isna(new)):
        return False
    try:
        with np.errstate(all="ignore"):
            equal = old[~missing] == new[~missing]
        return bool(np.all(np.asarray(equal, dtype=bool)))
    except (TypeError, ValueError):  # values that do not compare as one truth value
        return False


def annotated(frame: Any, columns: Mapping[str, Any], name: str) -> Any:
    """A copy of the caller's ``frame`` with a result's ``columns`` (name to values, one per
    row) set on it, in order.

    A column of the frame that has a result column's name is replaced. When the values it
    held differ from the result's (a column of the caller's own that happens to be called
    ``site`` or ``load``, not the result of an earlier run of the same plan), a warning
    names it, so a column of the caller's is never lost without a word; values are compared
    as values (:func:`same_values`: missing equals missing, ``Int64`` holds the result's
    integers or floats alike). The geometry column cannot be replaced: refused here, and by
    the functions that solve first with :func:`refuse_geometry_named` before the solve.
    """
    import warnings

    refuse_geometry_named(frame, list(columns), name)
    twice = sorted({str(key) for key in columns if (frame.columns == key).sum() > 1})
    if twice:
        raise InputError(f"{name}: more than one of your columns is named {', '.join(map(repr, twice))}, the "
                         "name of a column of the result; rename them")
    out = frame.copy()
    replaced = []
    for key, values in columns.items():
        if key in out.columns and not same_values(out[key], values):
            replaced.append(key)
        out[key] = values
    if replaced:
        warnings.warn(
            f"{name}: the result replaces your column{'s' if len(replaced) > 1 else ''} "
            f"{', '.join(map(repr, replaced))}, whose values differ; rename "
            f"{'them' if len(replaced) > 1 else 'it'} to keep both",
            UserWarning, stacklevel=_caller_level(),
        )
    return out


def row_labels(table: Any, prepared: Prepared, columns: Sequence[str]) -> None:
    """Replace columns of input row positions (-1 for none) by the frame's index labels (None)."""
    for name in columns:
        table[name] = labelled(table[name].to_numpy(), prepared.rows)
