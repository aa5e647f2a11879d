"""GeoPandas layer: every kernel on GeoDataFrames, in the frame's own CRS.

Each function takes a ``GeoDataFrame`` (or ``GeoSeries``) of points and returns a
``GeoDataFrame`` in the input's CRS. Coordinates are handled as follows:

* a **projected** CRS is used as it is — distances, costs and areas come out in its units;
* a **geographic** CRS (degrees) is projected to the frame's estimated UTM zone
  (``GeoDataFrame.estimate_utm_crs``, via pyproj), the kernel runs there, and geometries are
  projected back — distances and costs are then metres and areas square metres;
* **no CRS** raises ``InputError`` unless ``planar=True`` says the coordinates are already
  planar.

Non-point geometries raise ``InputError``; with ``centroids=True`` their centroids (taken in
the metric CRS) stand in for them. Grouped runs (``by=``) return one row per group, sorted
by the group value; ``progress=True`` shows a progress bar on stderr for runs that last more
than about a second.

Results are planning aids under the model (straight-line distance in the working CRS and
the given weights); check them against local regulations and licensed professional
judgement.

Requires the ``geo`` extra (geopandas, pyproj).
"""

from __future__ import annotations

import dataclasses
import sys
from typing import Any, Callable, Iterator, NamedTuple, Sequence

import numpy as np

try:
    import geopandas as gpd
    import pandas as pd
    import shapely
    from pyproj import CRS
except ImportError:  # pragma: no cover - exercised only without the extra
    raise ImportError("placewise.gis needs geopandas and pyproj: pip install 'placewise[geo]'")

import placewise as _pw
from ._core import InputError

__all__ = [
    "SitePlan",
    "enclosing_circle",
    "enclosing_ellipse",
    "minimax_point",
    "nearest_site",
    "p_center",
    "p_median",
    "spanning_tree",
    "steiner_tree",
    "voronoi_cells",
    "weber_point",
]

# Vertices of the polygons standing for circles and ellipses. The polygons circumscribe the
# exact curve (vertex radius r / cos(pi / N)), so every covered point stays inside them.
_CURVE_VERTICES = 128


class SitePlan(NamedTuple):
    """The answer of :func:`p_median` and :func:`p_center`: sites, and demand assigned to them.

    Attributes
    ----------
    sites : GeoDataFrame
        One point per chosen site, with its ``load`` (summed weight) and ``count``.
    demand : GeoDataFrame
        A copy of the demand frame with ``site`` (the row of ``sites`` serving it) and
        ``distance`` columns.
    """

    sites: Any
    demand: Any


# --------------------------------------------------------------------------- preparation


@dataclasses.dataclass
class _Frame:
    """Points of one frame, in the working (metric) CRS."""

    frame: Any  # the caller's GeoDataFrame
    xy: np.ndarray  # (n, 2) float64 in the working CRS
    crs: Any  # the caller's CRS (None when planar without one)
    work: Any  # the working CRS (None when planar without one)

    def back(self, geoms: Sequence[Any] | np.ndarray) -> Any:
        """A GeoSeries of working-CRS geometries, projected back to the caller's CRS."""
        series = gpd.GeoSeries(np.asarray(geoms, dtype=object), crs=self.work)
        if self.crs is not None and self.work is not None and not CRS(self.crs).equals(self.work):
            series = series.to_crs(self.crs)
        return series.reset_index(drop=True)


def _as_frame(obj: Any, name: str) -> Any:
    if isinstance(obj, gpd.GeoDataFrame):
        return obj
    if isinstance(obj, gpd.GeoSeries):
        return gpd.GeoDataFrame(geometry=obj)
    raise InputError(f"{name} must be a GeoDataFrame or GeoSeries; got {type(obj).__name__}")


def _working_crs(frame: Any, name: str, planar: bool) -> Any:
    crs = frame.crs
    if crs is None:
        if not planar:
            raise InputError(
                f"{name} has no CRS: set one with .set_crs(...), or pass planar=True if the "
                "coordinates are already planar"
            )
        return None
    crs = CRS(crs)
    if crs.is_geographic:
        try:
            utm = frame.estimate_utm_crs()
        except Exception as exc:  # pyproj/geopandas raise several types here
            raise InputError(f"{name}: cannot estimate a UTM zone for its extent ({exc})") from exc
        return CRS(utm)
    if not crs.is_projected:
        raise InputError(f"{name}: CRS {crs.name!r} is neither geographic nor projected")
    return crs


def _points_of(frame: Any, name: str, centroids: bool) -> np.ndarray:
    geoms = frame.geometry.values
    missing = shapely.is_missing(geoms) | shapely.is_empty(geoms)
    if missing.any():
        row = frame.index[int(np.argmax(missing))]
        raise InputError(f"{name}: row {row!r} has a missing or empty geometry")
    kinds = shapely.get_type_id(geoms)
    not_point = kinds != shapely.GeometryType.POINT
    if not_point.any():
        if not centroids:
            row = frame.index[int(np.argmax(not_point))]
            kind = shapely.get_type_id(geoms[int(np.argmax(not_point))])
            raise InputError(
                f"{name}: row {row!r} is a {shapely.GeometryType(kind).name.title()}, not a "
                "Point; pass centroids=True to use the centroids of non-point geometries"
            )
        geoms = shapely.centroid(geoms)
    return np.column_stack([shapely.get_x(geoms), shapely.get_y(geoms)]).astype(np.float64)


def _prepare(obj: Any, name: str, *, planar: bool, centroids: bool, work: Any = "estimate") -> _Frame:
    """Validate a frame and bring its points into the working CRS.

    ``work="estimate"`` chooses the working CRS from this frame; otherwise the given
    working CRS (from a companion frame) is used and this frame must agree on having one.
    """
    frame = _as_frame(obj, name)
    if len(frame) == 0:
        raise InputError(f"{name} is empty")
    if isinstance(work, str):
        work = _working_crs(frame, name, planar)
    elif (work is None) != (frame.crs is None):
        raise InputError(
            f"{name}: either every frame has a CRS or none has (planar=True); {name} "
            + ("has none" if frame.crs is None else "has one while the first frame has none")
        )
    projected = frame if work is None or CRS(frame.crs).equals(work) else frame.to_crs(work)
    return _Frame(frame, _points_of(projected, name, centroids), frame.crs, work)


def _column(frame: Any, spec: Any, name: str, what: str) -> np.ndarray:
    """A numeric column named ``spec`` (or an array of the frame's length)."""
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
    try:
        out = np.asarray(pd.to_numeric(pd.Series(np.asarray(values)), errors="raise"), dtype=np.float64)
    except (ValueError, TypeError) as exc:
        raise InputError(f"{name}: {label} is not numeric ({exc})") from exc
    bad = ~np.isfinite(out)
    if bad.any():
        row = frame.index[int(np.argmax(bad))]
        raise InputError(f"{name}: {label} has a missing or non-finite value at row {row!r}")
    return out


def _weights(pf: _Frame, weight: Any, name: str) -> np.ndarray | None:
    return None if weight is None else _column(pf.frame, weight, name, "weight")


@dataclasses.dataclass
class _Groups:
    """Groups of a frame: integer codes 0..G-1 in sorted order of the group values."""

    name: str
    values: Any  # pandas Index of the G sorted group values
    codes: np.ndarray  # (n,) int64
    order: np.ndarray  # stable argsort of codes
    start: np.ndarray  # (G + 1,) offsets into order

    def members(self, g: int) -> np.ndarray:
        return self.order[self.start[g]:self.start[g + 1]]


def _groups(frame: Any, by: str, name: str) -> _Groups:
    if by not in frame.columns:
        raise InputError(f"{name} has no group column {by!r}; columns: {list(frame.columns)}")
    column = frame[by]
    if column.isna().any():
        row = frame.index[int(np.argmax(column.isna().to_numpy()))]
        raise InputError(f"{name}: group column {by!r} has a missing value at row {row!r}")
    try:
        codes, values = pd.factorize(column, sort=True)
    except TypeError as exc:
        raise InputError(f"{name}: group column {by!r} mixes values that cannot be sorted ({exc})") from exc
    codes = codes.astype(np.int64)
    order = np.argsort(codes, kind="stable")
    start = np.searchsorted(codes[order], np.arange(len(values) + 1))
    return _Groups(by, pd.Index(values, name=by), codes, order, start)


def _progress(total: int, enabled: bool, what: str) -> Any:
    from tqdm import tqdm

    return tqdm(total=total, disable=not enabled, delay=1.0, file=sys.stderr, unit=what, leave=False)


def _chunks(groups: _Groups, n: int) -> Iterator[tuple[int, int]]:
    """Runs of whole groups of about ``max(20_000, n / 64)`` points each."""
    target = max(20_000, n // 64)
    g0, total = 0, len(groups.values)
    while g0 < total:
        g1 = int(np.searchsorted(groups.start, groups.start[g0] + target, side="right"))
        g1 = min(max(g1 - 1, g0 + 1), total)
        yield g0, g1
        g0 = g1


def _grouped_fields(
    kernel: Callable[..., Any], pf: _Frame, w: np.ndarray | None, groups: _Groups,
    fields: Sequence[str], progress: bool, **options: Any,
) -> dict[str, np.ndarray]:
    """Run a kernel's ``groups=`` form chunk by chunk (for progress), keeping per-group fields."""
    parts: dict[str, list[np.ndarray]] = {f: [] for f in fields}
    with _progress(len(groups.values), progress, "group") as bar:
        for g0, g1 in _chunks(groups, len(pf.xy)):
            idx = groups.order[groups.start[g0]:groups.start[g1]]
            args = (pf.xy[idx],) if w is None else (pf.xy[idx], w[idx])
            try:
                result = kernel(*args, groups=groups.codes[idx], **options)
            except InputError as exc:
                _name_failing_group(kernel, pf, w, groups, range(g0, g1), options)
                raise InputError(f"groups {_plain(groups.values[g0])!r} to {_plain(groups.values[g1 - 1])!r}: {exc}") from exc
            for f in fields:
                parts[f].append(np.asarray(getattr(result, f)))
            bar.update(g1 - g0)
    return {f: np.concatenate(v) for f, v in parts.items()}


def _plain(value: Any) -> Any:
    """A group value as the user wrote it (numpy scalars become Python scalars)."""
    return value.item() if isinstance(value, np.generic) else value


def _name_failing_group(
    kernel: Callable[..., Any], pf: _Frame, w: np.ndarray | None, groups: _Groups, span: range,
    options: dict[str, Any],
) -> None:
    """After a grouped call failed, find the first group that fails alone and name it.

    The kernel's own message names the internal group code, which the caller never saw.
    """
    for g in span:
        idx = groups.members(g)
        try:
            kernel(*((pf.xy[idx],) if w is None else (pf.xy[idx], w[idx])), **options)
        except InputError as exc:
            raise InputError(f"group {_plain(groups.values[g])!r}: {exc}") from exc


def _each_group(groups: _Groups | None, n: int, progress: bool) -> Iterator[tuple[Any, np.ndarray]]:
    """(group value, member indices) per group, or one pseudo-group of all rows."""
    if groups is None:
        yield None, np.arange(n)
        return
    with _progress(len(groups.values), progress, "group") as bar:
        for g, value in enumerate(groups.values):
            yield value, groups.members(g)
            bar.update(1)


def _in_group(value: Any, groups: _Groups | None, call: Callable[[], Any]) -> Any:
    try:
        return call()
    except InputError as exc:
        if groups is None:
            raise
        raise InputError(f"group {_plain(value)!r}: {exc}") from exc


def _counts(groups: _Groups | None, n: int) -> np.ndarray:
    return np.array([n]) if groups is None else np.diff(groups.start)


def _result_frame(pf: _Frame, geoms: Sequence[Any] | np.ndarray, columns: dict[str, Any], groups: _Groups | None) -> Any:
    data = {} if groups is None else {groups.name: np.asarray(groups.values)}
    data.update(columns)
    return gpd.GeoDataFrame(data, geometry=pf.back(geoms))


def _ellipse_rings(center: np.ndarray, semi_axes: np.ndarray, angle: np.ndarray) -> np.ndarray:
    """Polygons circumscribing ellipses (circles when the semi-axes are equal), all at once.

    ``center`` (G, 2), ``semi_axes`` (G, 2), ``angle`` (G,) radians; returns (G,) Polygons.
    """
    t = np.linspace(0.0, 2.0 * np.pi, _CURVE_VERTICES, endpoint=False)
    scale = 1.0 / np.cos(np.pi / _CURVE_VERTICES)
    u = semi_axes[:, :1] * scale * np.cos(t)  # (G, N)
    v = semi_axes[:, 1:] * scale * np.sin(t)
    c, s = np.cos(angle)[:, None], np.sin(angle)[:, None]
    ring = np.stack([center[:, :1] + c * u - s * v, center[:, 1:] + s * u + c * v], axis=-1)
    return shapely.polygons(np.concatenate([ring, ring[:, :1]], axis=1))


# --------------------------------------------------------------------------- single sites


def weber_point(
    frame: Any, weight: Any = None, by: str | None = None, *,
    planar: bool = False, centroids: bool = False, progress: bool = False, **options: Any,
) -> Any:
    """The weighted Fermat–Weber point of a frame's points (one per group with ``by``).

    Parameters
    ----------
    frame : GeoDataFrame or GeoSeries of points
    weight : str or array_like, optional
        Column name (or values) of the non-negative demand per row. Default: all 1.
    by : str, optional
        Column whose values split the rows into groups; one result row per group.
    planar : bool
        The coordinates are planar; allowed only then without a CRS.
    centroids : bool
        Use the centroids of non-point geometries instead of raising.
    progress : bool
        Progress bar on stderr for grouped runs longer than about a second.
    **options
        Passed to :func:`placewise.weber_point` (``metric``, ``tol``, ``max_iter``).

    Returns
    -------
    GeoDataFrame
        Point geometry in the input's CRS and columns ``cost`` (weighted distance, in the
        working CRS's units), ``gap`` (certified bound on the excess), ``iterations``,
        ``converged`` and ``count`` (rows used), plus the ``by`` column.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> towns = gpd.GeoDataFrame({"w": [1, 1, 1]},
    ...                          geometry=gpd.points_from_xy([0, 4, 2], [0, 0, 4]))
    >>> round(float(gis.weber_point(towns, "w", planar=True)["cost"].iloc[0]), 6)
    7.464102
    >>> gis.weber_point(towns)
    Traceback (most recent call last):
    ...
    placewise.InputError: frame has no CRS: ...
    """
    pf = _prepare(frame, "frame", planar=planar, centroids=centroids)
    w = _weights(pf, weight, "frame")
    fields = ("location", "cost", "gap", "iterations", "converged")
    if by is None:
        r = _pw.weber_point(pf.xy, w, **options)
        got = {f: np.asarray(getattr(r, f))[None] for f in fields}
        groups = None
    else:
        groups = _groups(pf.frame, by, "frame")
        got = _grouped_fields(_pw.weber_point, pf, w, groups, fields, progress, **options)
    geoms = shapely.points(got["location"])
    columns = {f: got[f] for f in fields[1:]}
    columns["count"] = _counts(groups, len(pf.xy))
    return _result_frame(pf, geoms, columns, groups)


def minimax_point(
    frame: Any, weight: Any = None, by: str | None = None, *,
    planar: bool = False, centroids: bool = False, progress: bool = False,
) -> Any:
    """The weighted minimax point (1-center): the site whose largest weighted trip is least.

    Parameters are those of :func:`weber_point`.

    Returns
    -------
    GeoDataFrame
        Point geometry and columns ``radius`` (the largest weighted distance at the
        optimum) and ``count``, plus the ``by`` column.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> pts = gpd.GeoSeries(gpd.points_from_xy([0, 2, 1], [0, 0, 3]))
    >>> round(float(gis.minimax_point(pts, planar=True)["radius"].iloc[0]), 6)   # 5/3: circumradius
    1.666667
    """
    pf = _prepare(frame, "frame", planar=planar, centroids=centroids)
    w = _weights(pf, weight, "frame")
    fields = ("location", "radius")
    if by is None:
        r = _pw.minimax_point(pf.xy, w)
        got = {f: np.asarray(getattr(r, f))[None] for f in fields}
        groups = None
    else:
        groups = _groups(pf.frame, by, "frame")
        got = _grouped_fields(_pw.minimax_point, pf, w, groups, fields, progress)
    return _result_frame(pf, shapely.points(got["location"]),
                         {"radius": got["radius"], "count": _counts(groups, len(pf.xy))}, groups)


def enclosing_circle(
    frame: Any, by: str | None = None, *,
    planar: bool = False, centroids: bool = False, progress: bool = False,
) -> Any:
    """The smallest circle covering a frame's points (one per group with ``by``).

    Returns
    -------
    GeoDataFrame
        Polygon geometry (a 128-gon circumscribing the circle, so it covers every point)
        and columns ``radius`` (working CRS units, metres for geographic input), ``area``
        (of the exact circle) and ``count``, plus the ``by`` column.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> pts = gpd.GeoSeries(gpd.points_from_xy([0, 2, 1], [0, 0, 3]))
    >>> float(gis.enclosing_circle(pts, planar=True)["radius"].iloc[0])
    1.666666666666...
    """
    pf = _prepare(frame, "frame", planar=planar, centroids=centroids)
    fields = ("center", "radius")
    if by is None:
        r = _pw.enclosing_circle(pf.xy)
        got = {f: np.asarray(getattr(r, f))[None] for f in fields}
        groups = None
    else:
        groups = _groups(pf.frame, by, "frame")
        got = _grouped_fields(_pw.enclosing_circle, pf, None, groups, fields, progress)
    radius = np.asarray(got["radius"], dtype=np.float64)
    geoms = _ellipse_rings(got["center"].reshape(-1, 2), np.column_stack([radius, radius]), np.zeros(len(radius)))
    columns = {"radius": got["radius"], "area": np.pi * got["radius"] ** 2, "count": _counts(groups, len(pf.xy))}
    return _result_frame(pf, geoms, columns, groups)


def enclosing_ellipse(
    frame: Any, by: str | None = None, *,
    planar: bool = False, centroids: bool = False, progress: bool = False, tol: float = 1e-7,
) -> Any:
    """The minimum-area ellipse covering a frame's points (one per group with ``by``).

    Returns
    -------
    GeoDataFrame
        Polygon geometry (a 128-gon circumscribing the ellipse) and columns
        ``semi_major``, ``semi_minor``, ``angle`` (degrees, major axis anticlockwise from
        the working CRS's +x axis), ``area`` (of the exact ellipse) and ``count``.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> box = gpd.GeoSeries(gpd.points_from_xy([0, 4, 4, 0], [0, 0, 2, 2]))
    >>> e = gis.enclosing_ellipse(box, planar=True, tol=1e-10)
    >>> [round(float(e[c].iloc[0]), 5) for c in ("semi_major", "semi_minor")]   # a/sqrt2, b/sqrt2
    [2.82843, 1.41421]
    """
    pf = _prepare(frame, "frame", planar=planar, centroids=centroids)
    fields = ("center", "semi_axes", "angle", "area")
    if by is None:
        r = _pw.enclosing_ellipse(pf.xy, tol=tol)
        got = {f: np.asarray(getattr(r, f))[None] for f in fields}
        groups = None
    else:
        groups = _groups(pf.frame, by, "frame")
        got = _grouped_fields(_pw.enclosing_ellipse, pf, None, groups, fields, progress, tol=tol)
    axes = got["semi_axes"].reshape(-1, 2)
    geoms = _ellipse_rings(got["center"].reshape(-1, 2), axes, np.asarray(got["angle"], dtype=np.float64))
    columns = {
        "semi_major": axes[:, 0], "semi_minor": axes[:, 1],
        "angle": np.degrees(got["angle"]), "area": got["area"], "count": _counts(groups, len(pf.xy)),
    }
    return _result_frame(pf, geoms, columns, groups)


# --------------------------------------------------------------------------- service areas


def _region_geometry(region: Any, pf: _Frame) -> Any:
    """The study region as one shapely geometry in the working CRS."""
    if region is None:
        return None
    if isinstance(region, (gpd.GeoDataFrame, gpd.GeoSeries)):
        series = region.geometry if isinstance(region, gpd.GeoDataFrame) else region
        if len(series) == 0:
            raise InputError("region is empty")
        if (series.crs is None) != (pf.work is None):
            raise InputError("region: either both sites and region have a CRS or neither has")
        if series.crs is not None and not CRS(series.crs).equals(pf.work):
            series = series.to_crs(pf.work)
        geom = series.union_all()
    elif isinstance(region, shapely.Geometry):
        geom = region
        if pf.crs is not None and pf.work is not None and not CRS(pf.crs).equals(pf.work):
            geom = gpd.GeoSeries([geom], crs=pf.crs).to_crs(pf.work).iloc[0]
    else:
        raise InputError(f"region must be a GeoDataFrame, GeoSeries or shapely geometry; got {type(region).__name__}")
    if geom.is_empty or geom.area <= 0.0:
        raise InputError("region has no area (it must be polygonal)")
    return geom


def voronoi_cells(
    sites: Any, region: Any = None, *, demand: Any = None, weight: Any = None,
    planar: bool = False, centroids: bool = False,
) -> Any:
    """Each site's service area: its Voronoi cell clipped to the study region.

    Parameters
    ----------
    sites : GeoDataFrame or GeoSeries of points
    region : GeoDataFrame, GeoSeries or shapely geometry, optional
        The study region (its union is used; non-convex, with holes). A bare shapely
        geometry is taken to be in the sites' CRS. Default: the sites' bounding box grown
        by 10 %.
    demand : GeoDataFrame or GeoSeries of points, optional
        When given, each cell gets the ``load`` (summed weight) and ``count`` of the demand
        nearest to its site.
    weight : str or array_like, optional
        Demand weight column (or values); default 1 per demand row.

    Returns
    -------
    GeoDataFrame
        The sites' columns with Polygon / MultiPolygon cells as geometry and an ``area``
        column (working CRS units squared), plus ``load`` and ``count`` with ``demand``.

    Examples
    --------
    >>> import geopandas as gpd, shapely
    >>> from placewise import gis
    >>> sites = gpd.GeoDataFrame({"name": ["a", "b"]},
    ...                          geometry=gpd.points_from_xy([1, 3], [1, 1]))
    >>> cells = gis.voronoi_cells(sites, shapely.box(0, 0, 4, 2), planar=True)
    >>> cells["area"].round(9).tolist()
    [4.0, 4.0]
    """
    pf = _prepare(sites, "sites", planar=planar, centroids=centroids)
    geom = _region_geometry(region, pf)
    cells = _pw.voronoi_cells(pf.xy, geom)
    out = gpd.GeoDataFrame(pf.frame.drop(columns=pf.frame.geometry.name), geometry=pf.back(cells.to_shapely()).values,
                           crs=pf.crs)
    out["area"] = np.asarray(cells.area)
    if demand is not None:
        df = _prepare(demand, "demand", planar=planar, centroids=centroids, work=pf.work)
        alloc = _pw.nearest_site(df.xy, pf.xy, _weights(df, weight, "demand"))
        out["load"] = np.asarray(alloc.load)
        out["count"] = np.bincount(np.asarray(alloc.index), minlength=len(pf.xy))
    return out


def nearest_site(
    demand: Any, sites: Any, weight: Any = None, *, planar: bool = False, centroids: bool = False,
) -> Any:
    """Assign every demand row to its nearest site (straight-line distance).

    Returns
    -------
    GeoDataFrame
        A copy of ``demand`` with columns ``site`` (the index label of the serving row of
        ``sites``) and ``distance`` (working CRS units). ``attrs`` holds ``cost`` (the total
        weighted distance) and ``load`` (a dict: site label → summed weight).

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> sites = gpd.GeoSeries(gpd.points_from_xy([0, 10], [0, 0]), index=["west", "east"])
    >>> homes = gpd.GeoSeries(gpd.points_from_xy([1, 9, 8], [0, 0, 0]))
    >>> out = gis.nearest_site(homes, sites, planar=True)
    >>> out["site"].tolist(), out.attrs["cost"]
    (['west', 'east', 'east'], 4.0)
    """
    sf = _prepare(sites, "sites", planar=planar, centroids=centroids)
    df = _prepare(demand, "demand", planar=planar, centroids=centroids, work=sf.work)
    alloc = _pw.nearest_site(df.xy, sf.xy, _weights(df, weight, "demand"))
    out = df.frame.copy()
    out["site"] = sf.frame.index[np.asarray(alloc.index)]
    out["distance"] = np.asarray(alloc.distance)
    out.attrs["cost"] = float(alloc.cost)
    out.attrs["load"] = dict(zip(sf.frame.index.tolist(), np.asarray(alloc.load).tolist()))
    return out


# --------------------------------------------------------------------------- networks


def _network_frame(
    pf: _Frame, groups: _Groups | None, progress: bool, kernel: Callable[..., Any], steiner: bool,
    options: dict[str, Any],
) -> Any:
    """Edges of one network per group as LineString rows, from the kernel's ``groups=`` form."""
    n = len(pf.xy)
    grouped = groups is not None
    if groups is None:  # one pseudo-group holding every row
        groups = _Groups("", pd.Index([0]), np.zeros(n, np.int64), np.arange(n), np.array([0, n]))
    row_labels = pf.frame.index.to_numpy(dtype=object)
    parts: dict[str, list[np.ndarray]] = {k: [] for k in ("group", "a", "b", "from", "to", "junction")}
    totals = {"length": 0.0, "mst_length": 0.0, "optimal": True, "junctions": 0}
    with _progress(len(groups.values), progress and grouped, "group") as bar:
        for g0, g1 in _chunks(groups, n):
            idx = groups.order[groups.start[g0]:groups.start[g1]]
            try:
                tree = kernel(pf.xy[idx], groups=groups.codes[idx], **options)
            except InputError as exc:
                if grouped:
                    _name_failing_group(kernel, pf, None, groups, range(g0, g1), options)
                raise
            edges = np.asarray(tree.edges, dtype=np.int64).reshape(-1, 2)
            g = np.repeat(np.arange(g0, g1), np.diff(np.asarray(tree.edge_offsets)))  # group code per edge
            if steiner:
                # Group k's nodes: its rows (in input order, as idx holds them), then its junctions.
                node_start = np.asarray(tree.node_offsets)[g - g0]
                terminals = np.asarray(tree.terminal_count)[g - g0]
                nodes = np.asarray(tree.nodes)[node_start[:, None] + edges]
                is_row = edges < terminals[:, None]
                rows = (groups.start[g] - groups.start[g0])[:, None] + np.where(is_row, edges, 0)
                labels: np.ndarray = np.asarray(np.where(is_row, row_labels[idx[rows]], None))
                totals["mst_length"] += float(np.sum(tree.mst_length))
                totals["optimal"] = bool(totals["optimal"] and np.all(tree.optimal))
                totals["junctions"] += int(np.sum(np.diff(np.asarray(tree.node_offsets)) - np.asarray(tree.terminal_count)))
                parts["junction"].append(np.asarray(~is_row.all(axis=1)))
            else:  # edges are rows of the chunk's points
                nodes = pf.xy[idx][edges]
                labels = row_labels[idx[edges]]
            totals["length"] += float(np.sum(tree.length))
            parts["group"].append(g)
            parts["a"].append(nodes[:, 0])
            parts["b"].append(nodes[:, 1])
            parts["from"].append(labels[:, 0])
            parts["to"].append(labels[:, 1])
            bar.update(g1 - g0)
    a, b = np.concatenate(parts["a"]), np.concatenate(parts["b"])
    data: dict[str, Any] = {groups.name: np.asarray(groups.values)[np.concatenate(parts["group"])]} if grouped else {}
    data.update({"from_node": np.concatenate(parts["from"]), "to_node": np.concatenate(parts["to"]),
                 "length": np.hypot(*(a - b).T)})
    if steiner:
        data["junction"] = np.concatenate(parts["junction"])
    geoms = shapely.linestrings(np.stack([a, b], axis=1))
    out = gpd.GeoDataFrame(data, geometry=pf.back(geoms).values, crs=pf.crs)
    out.attrs["length"] = totals["length"]
    if steiner:
        out.attrs["mst_length"] = totals["mst_length"]
        out.attrs["saving"] = 1.0 - totals["length"] / totals["mst_length"] if totals["mst_length"] > 0 else 0.0
        out.attrs["optimal"] = totals["optimal"]
        out.attrs["junctions"] = totals["junctions"]
    return out


def spanning_tree(
    frame: Any, by: str | None = None, *, planar: bool = False, centroids: bool = False, progress: bool = False,
) -> Any:
    """The Euclidean minimum spanning tree linking a frame's points (one per group with ``by``).

    Returns
    -------
    GeoDataFrame
        One LineString row per edge with ``from_node`` / ``to_node`` (the rows' index
        labels) and ``length``; ``attrs["length"]`` is the total.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> pts = gpd.GeoSeries(gpd.points_from_xy([0, 1, 1, 0], [0, 0, 1, 1]))
    >>> gis.spanning_tree(pts, planar=True).attrs["length"]   # unit square: three sides
    3.0
    """
    pf = _prepare(frame, "frame", planar=planar, centroids=centroids)
    groups = None if by is None else _groups(pf.frame, by, "frame")
    return _network_frame(pf, groups, progress, _pw.spanning_tree, steiner=False, options={})


def steiner_tree(
    frame: Any, by: str | None = None, *, planar: bool = False, centroids: bool = False,
    progress: bool = False, **options: Any,
) -> Any:
    """The Euclidean Steiner tree linking a frame's points, with its saving over the MST.

    Parameters
    ----------
    **options
        Passed to :func:`placewise.steiner_tree` (``exact``, ``seed``, ``time_limit``).

    Returns
    -------
    GeoDataFrame
        One LineString row per edge with ``from_node`` / ``to_node`` (row labels; None for
        an added junction), ``length`` and ``junction`` (the edge touches a Steiner point).
        ``attrs`` holds ``length``, ``mst_length``, ``saving`` (1 − length / MST length),
        ``optimal`` (proven) and ``junctions`` (Steiner points added).

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> pts = gpd.GeoSeries(gpd.points_from_xy([0, 1, 1, 0], [0, 0, 1, 1]))
    >>> net = gis.steiner_tree(pts, planar=True)
    >>> round(net.attrs["length"], 9), net.attrs["junctions"]    # 1 + sqrt(3), two junctions
    (2.732050808, 2)
    """
    pf = _prepare(frame, "frame", planar=planar, centroids=centroids)
    groups = None if by is None else _groups(pf.frame, by, "frame")
    return _network_frame(pf, groups, progress, _pw.steiner_tree, steiner=True, options=options)


# --------------------------------------------------------------------------- many sites


def _plan(
    kind: str, frame: Any, p: int, weight: Any, by: str | None, planar: bool, centroids: bool,
    progress: bool, options: dict[str, Any], fixed: Any = None,
) -> SitePlan:
    pf = _prepare(frame, "frame", planar=planar, centroids=centroids)
    w = _weights(pf, weight, "frame")
    groups = None if by is None else _groups(pf.frame, by, "frame")
    fixed_xy = None
    if fixed is not None:
        fixed_xy = _prepare(fixed, "fixed", planar=planar, centroids=centroids, work=pf.work).xy
        options = {**options, "fixed": fixed_xy}
    kernel = _pw.p_median if kind == "median" else _pw.p_center
    site_rows: dict[str, list[Any]] = {"site": [], "load": [], "count": [], "fixed": []}
    group_col: list[Any] = []
    geoms: list[Any] = []
    assignment = np.zeros(len(pf.xy), dtype=np.int64)
    distance = np.zeros(len(pf.xy))
    totals = {"cost": 0.0, "radius": 0.0}
    for value, members in _each_group(groups, len(pf.xy), progress):
        wm = None if w is None else w[members]
        plan = _in_group(value, groups, lambda: kernel(pf.xy[members], int(p), wm, **options))
        sites = np.asarray(plan.sites).reshape(-1, 2)
        if fixed_xy is not None:  # the assignment indexes the new sites, then the fixed ones
            sites = np.vstack([sites, fixed_xy])
        assigned = np.asarray(plan.assignment, dtype=np.int64)
        base = len(site_rows["site"])
        k = len(sites)
        d = np.hypot(*(pf.xy[members] - sites[assigned]).T)
        weights = np.ones(len(members)) if wm is None else wm
        load = np.bincount(assigned, weights=weights, minlength=k)
        assignment[members] = base + assigned
        distance[members] = d
        site_rows["site"].extend(range(base, base + k))
        site_rows["load"].extend(load.tolist())
        site_rows["count"].extend(np.bincount(assigned, minlength=k).tolist())
        n_fixed = 0 if fixed_xy is None else len(fixed_xy)
        site_rows["fixed"].extend([i >= k - n_fixed if kind == "median" and n_fixed else False for i in range(k)])
        geoms.extend(shapely.points(sites))
        group_col.extend([value] * k)
        if kind == "median":
            totals["cost"] += float(plan.cost)
        else:
            totals["radius"] = max(totals["radius"], float(plan.radius))
    data: dict[str, Any] = {} if groups is None else {groups.name: group_col}
    data.update(site_rows)
    if fixed_xy is None:
        del data["fixed"]
    out_sites = gpd.GeoDataFrame(data, geometry=pf.back(geoms).values, crs=pf.crs)
    out_demand = pf.frame.copy()
    out_demand["site"] = assignment
    out_demand["distance"] = distance
    for f in (out_sites, out_demand):
        if kind == "median":
            f.attrs["cost"] = totals["cost"]
        else:
            f.attrs["radius"] = totals["radius"]
    return SitePlan(out_sites, out_demand)


def p_median(
    frame: Any, p: int, weight: Any = None, by: str | None = None, *, fixed: Any = None,
    planar: bool = False, centroids: bool = False, progress: bool = False, **options: Any,
) -> SitePlan:
    """The p sites minimising total weighted straight-line distance (continuous p-median).

    Parameters
    ----------
    frame : GeoDataFrame or GeoSeries of demand points
    p : int
        Number of new sites (per group with ``by``).
    weight, by, planar, centroids, progress
        As in :func:`weber_point`.
    fixed : GeoDataFrame or GeoSeries of points, optional
        Existing sites that stay where they are (``p`` counts only the new ones).
    **options
        Passed to :func:`placewise.p_median` (``seed``, ``effort``).

    Returns
    -------
    SitePlan
        ``sites`` (points with ``site``, ``load``, ``count``, and ``fixed`` when existing
        sites were given) and ``demand`` (a copy with ``site`` and ``distance``); both
        carry ``attrs["cost"]``.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> homes = gpd.GeoSeries(gpd.points_from_xy([0, 0, 10, 10], [0, 1, 0, 1]))
    >>> plan = gis.p_median(homes, 2, planar=True)
    >>> plan.demand["site"].nunique(), plan.sites.attrs["cost"]
    (2, 2.0)
    """
    return _plan("median", frame, p, weight, by, planar, centroids, progress, options, fixed)


def p_center(
    frame: Any, p: int, weight: Any = None, by: str | None = None, *,
    planar: bool = False, centroids: bool = False, progress: bool = False, **options: Any,
) -> SitePlan:
    """The p sites minimising the largest weighted straight-line trip (continuous p-center).

    Parameters and result are those of :func:`p_median`, with ``attrs["radius"]`` (the
    largest weighted distance to the nearest site) in place of ``cost``.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> homes = gpd.GeoSeries(gpd.points_from_xy([0, 0, 10, 10], [0, 2, 0, 2]))
    >>> round(gis.p_center(homes, 2, planar=True).sites.attrs["radius"], 9)
    1.0
    """
    return _plan("center", frame, p, weight, by, planar, centroids, progress, options)
