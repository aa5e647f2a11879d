"""Single sites and enclosing shapes of GeoDataFrames: Fermat–Weber point, minimax point,
smallest enclosing circle, minimum-area enclosing ellipse (one per group with ``by``)."""

from __future__ import annotations

from typing import Any, Literal

import placewise as _pw
from placewise import geodesic as _geodesic

from .._core import DegenerateInputError, InputError
from .._errors import check_errors
from ._crs import MAX_SCALE_ERROR
from ._frames import call, framed, goes_on_ellipsoid, on_earth_only, prepare, weights
from ._together import prepare_together, region_geometry

__all__ = ["enclosing_circle", "enclosing_ellipse", "minimax_point", "weber_point"]


def _one_per_group(kernel: Any, frame: Any, weight: Any, by: str | None, planar: bool, centroids: bool,
                   errors: str, options: dict[str, Any], weighted: bool, model: dict[str, Any],
                   on_earth: Any = None, region: Any = None) -> Any:
    """One kernel answer per group (or for the whole frame) as a GeoDataFrame in user terms;
    geographic input without ``work_crs`` goes to ``on_earth`` (the geodesic kernel), when
    there is one, with longitude/latitude. With a ``region`` (the geodesic kernels take
    none) every group shares one working frame, chosen over the points and the region."""
    if region is not None:
        pf, _ = prepare_together(frame, "frame", {}, planar=planar, centroids=centroids, region=region, by=by,
                                 **model)
        options = {**options, "region": region_geometry(region, pf, "frame")}
    else:
        pf = prepare(frame, "frame", planar=planar, centroids=centroids, by=by, ellipsoid=on_earth is not None,
                     **model)
    if pf.ellipsoid:
        kernel = on_earth
    groups = pf.groups
    rows = {"points": pf.rows, "weights": pf.rows}
    check_errors(errors)  # also without groups, where it is not passed on
    grouped = {} if groups is None else {"errors": errors}
    arguments = (pf.xy, weights(pf, weight, "frame")) if weighted else (pf.xy,)
    try:
        result = call(kernel, *arguments, groups=groups, rows=rows, measured_in=pf.unit, **grouped, **options)
    except DegenerateInputError as exc:
        if not pf.ellipsoid:
            raise
        # Data beyond a hemisphere: say how to proceed in this layer's terms.
        raise type(exc)(f"{exc}; or split the data with by=, or pass work_crs= with a projection suited to "
                        "the whole area") from None
    return framed(result, pf, groups, rows, count=True)


def _geodesic_weber(points: Any, weights: Any = None, *, metric: str = "euclidean", **options: Any) -> Any:
    if metric != "euclidean":
        raise InputError(f"metric={metric!r} has no geodesic form: geographic input is solved on the ellipsoid "
                         "(geodesic distance); pass work_crs= (a projected CRS) to use this metric")
    return _geodesic.weber_point(points, weights, **options)


def _geodesic_circle(points: Any, *, seed: Any = None, **options: Any) -> Any:
    # The geodesic circle is deterministic; ``seed`` only orders the planar method's points.
    return _geodesic.enclosing_circle(points, **options)


def watched_on_earth(frame: Any, *, work_crs: Any = None, region: Any = None) -> bool:
    """True when :func:`minimax_point`, :func:`enclosing_circle` or :func:`weber_point` would
    solve ``frame`` on the ellipsoid (a geographic CRS, no ``work_crs``, no ``region``): the
    runs that take ``time_limit`` and ``progress`` (the command line shows its bar for those)."""
    return region is None and goes_on_ellipsoid(getattr(frame, "crs", None), work_crs)


def _watch(time_limit: float | None, progress: Any) -> dict[str, Any]:
    return {"time_limit": time_limit, "progress": progress}


def weber_point(
    frame: Any, weight: Any = None, by: str | None = None, *, region: Any = None,
    planar: bool = False, centroids: bool = False, work_crs: Any = None,
    max_scale_error: float = MAX_SCALE_ERROR, errors: Literal["raise", "skip"] = "raise", **options: Any,
) -> Any:
    """The weighted Fermat–Weber point of a frame's points (one per group with ``by``).

    Parameters
    ----------
    frame : GeoDataFrame or GeoSeries of points
    weight : str, Series or array_like, optional
        The non-negative demand per row: a column's name; a pandas Series, matched to the
        rows by index label as pandas assignment matches it (its labels the frame lacks are
        left out; a row label it lacks, or a label it repeats, is an ``InputError`` naming
        the labels); or an array or list of one value per row, by position. Default: all 1.
    by : str, optional
        Column whose values split the rows into groups; one result row per group, sorted
        by the group value.
    planar : bool
        The coordinates are planar; allowed only for frames without a CRS.
    centroids : bool
        Use the centroids of non-point geometries instead of raising: taken in the working
        frame, or on the ellipsoid each in the UTM zone of its own place; a polygon of
        longitude/latitude split at the antimeridian (as GeoJSON stores it) is taken whole.
    errors : {"raise", "skip"}
        With ``by``: fail on the first group without an answer, or keep it as a row whose
        ``problem`` says why and solve the rest.
    region : GeoDataFrame, GeoSeries or shapely geometry, optional
        Polygons (their union; holes allowed) where the site must lie, boundary included
        (a bare geometry is in the frame's CRS). The restricted optimum (Hamacher and
        Nickel 1995; see :func:`placewise.weber_point`) adds ``region_active`` (the region
        moved the site), ``region_holds_demand`` and ``free_cost_<unit>`` (the unrestricted
        optimum's cost). One region serves every group. Geographic input with a region is
        solved in a projected working frame (UTM, chosen over the points and the region,
        its ``scale_error`` stated), not on the ellipsoid.
    work_crs : CRS, optional
        A projected CRS to solve in instead of the ellipsoid (geographic input only).
    max_scale_error : float
        With ``work_crs``: unused (the caller's choice stands); for other functions'
        projected frames, the largest scale error allowed.
    **options
        Passed to :func:`placewise.weber_point` (``metric``, ``tol``, ``max_iter``); on the
        ellipsoid to :func:`placewise.geodesic.weber_point` (``tol``, ``max_iter``,
        ``time_limit``, ``progress``). ``time_limit`` and ``progress`` on a planar run are
        an ``InputError``: the planar kernel is exact and ends in well under a second.

    Returns
    -------
    GeoDataFrame
        Point geometry in the input's CRS; columns ``points`` (rows used), ``x``, ``y`` (in
        the working CRS; longitude, latitude on the ellipsoid), ``cost_<unit>`` (weighted
        distance in the working CRS's unit: ``cost_m`` for metres), ``gap_<unit>``
        (certified bound on the excess), ``relative_gap``, ``iterations``, ``converged``;
        for geographic input ``work_crs`` and ``scale_error``; with ``by``, the ``by``
        column first and ``problem`` after the results.

    Notes
    -----
    Geographic input (a lon/lat CRS) without ``work_crs`` is solved on the WGS84 ellipsoid
    (:func:`placewise.geodesic.weber_point`): ``cost_m`` is the true geodesic cost,
    ``work_crs`` reads "WGS84 ellipsoid" and ``scale_error`` 0. Points spanning more than a
    hemisphere are refused; beyond 44° from their mean direction ``gap_m`` is infinite (no
    certificate).

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> towns = gpd.GeoDataFrame({"w": [1, 1, 1]},
    ...                          geometry=gpd.points_from_xy([0, 4, 2], [0, 0, 4]))
    >>> round(float(gis.weber_point(towns, "w", planar=True)["cost_u"].iloc[0]), 6)
    7.464102
    >>> gis.weber_point(towns)
    Traceback (most recent call last):
    ...
    placewise.InputError: frame has no CRS: ...

    The site kept on a strip of land at y >= 5, above the towns:

    >>> import shapely
    >>> kept = gis.weber_point(towns, "w", region=shapely.box(-1, 5, 5, 6), planar=True)
    >>> float(kept["y"].iloc[0]), bool(kept["region_active"].iloc[0])
    (5.0, True)
    """
    return _one_per_group(on_earth_only(_pw.weber_point), frame, weight, by, planar, centroids, errors, options,
                          weighted=True,
                          model={"work_crs": work_crs, "max_scale_error": max_scale_error},
                          on_earth=_geodesic_weber, region=region)


def minimax_point(
    frame: Any, weight: Any = None, by: str | None = None, *, region: Any = None,
    planar: bool = False, centroids: bool = False, work_crs: Any = None,
    max_scale_error: float = MAX_SCALE_ERROR, errors: Literal["raise", "skip"] = "raise",
    time_limit: float | None = None, progress: Any = False,
) -> Any:
    """The weighted minimax point (1-center): the site whose largest weighted trip is least.

    Parameters are those of :func:`weber_point`, and:

    time_limit : float, optional
        Geographic input on the ellipsoid: seconds each group's run may take; when they
        pass, the best centre reached comes back with ``converged`` False (see
        :func:`placewise.geodesic.minimax_point`). Planar runs (a projected CRS,
        ``work_crs``, ``region`` or ``planar``) are exact and end in well under a second:
        a ``time_limit`` there is an ``InputError`` naming it.
    progress : bool or callable
        On the ellipsoid: a progress bar on stderr (True) or a callable ``(done, total)``;
        Ctrl-C stops the run within a fraction of a second either way. On a planar run an
        ``InputError`` naming it, as ``time_limit``.

    Returns
    -------
    GeoDataFrame
        Point geometry and columns ``points``, ``x``, ``y`` and ``weighted_radius_<unit>``
        (the largest weight × distance at the optimum), plus ``by`` and ``problem``; with a
        ``region``, ``gap_<unit>`` (a proven bound on the excess over the restricted
        optimum), ``region_active``, ``region_holds_demand`` and
        ``free_weighted_radius_<unit>``.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> import shapely
    >>> pts = gpd.GeoSeries(gpd.points_from_xy([0, 2, 1], [0, 0, 3]))
    >>> round(float(gis.minimax_point(pts, planar=True)["weighted_radius_u"].iloc[0]), 6)   # 5/3
    1.666667
    >>> kept = gis.minimax_point(pts, region=shapely.box(3, 0, 4, 3), planar=True)   # the site at x >= 3
    >>> float(kept["x"].iloc[0]), bool(kept["region_active"].iloc[0])
    (3.0, True)
    """
    return _one_per_group(on_earth_only(_pw.minimax_point), frame, weight, by, planar, centroids, errors,
                          _watch(time_limit, progress), weighted=True,
                          model={"work_crs": work_crs, "max_scale_error": max_scale_error},
                          on_earth=_geodesic.minimax_point, region=region)


def enclosing_circle(
    frame: Any, by: str | None = None, *,
    planar: bool = False, centroids: bool = False, work_crs: Any = None,
    max_scale_error: float = MAX_SCALE_ERROR, errors: Literal["raise", "skip"] = "raise",
    time_limit: float | None = None, progress: Any = False, **options: Any,
) -> Any:
    """The smallest circle covering a frame's points (one per group with ``by``).

    ``time_limit`` and ``progress`` work as in :func:`minimax_point` (on the ellipsoid
    only: the planar circle is exact and quick, and a planar run refuses them).

    Returns
    -------
    GeoDataFrame
        Polygon geometry (a 128-gon circumscribing the circle, so it covers every point)
        and columns ``points``, ``x``, ``y`` (centre), ``radius_<unit>`` and
        ``area_<unit>2`` (of the exact circle), plus ``by`` and ``problem``.

        Geographic input without ``work_crs`` gets the smallest geodesic circle on the
        WGS84 ellipsoid (:func:`placewise.geodesic.enclosing_circle`): ``radius_m`` and
        ``area_m2`` on the ellipsoid, ``gap_m``, ``iterations``, ``converged``, and as
        geometry the polygon of :func:`placewise.geodesic.circle_polygon` in
        longitude/latitude, which holds the whole geodesic disc (so it covers every point),
        split at the antimeridian into a MultiPolygon where it crosses it (closed through
        the pole when it holds one).

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> pts = gpd.GeoSeries(gpd.points_from_xy([0, 2, 1], [0, 0, 3]))
    >>> float(gis.enclosing_circle(pts, planar=True)["radius_u"].iloc[0])
    1.666666666666...
    """
    return _one_per_group(on_earth_only(_pw.enclosing_circle), frame, None, by, planar, centroids, errors,
                          {**options, **_watch(time_limit, progress)}, weighted=False,
                          model={"work_crs": work_crs, "max_scale_error": max_scale_error},
                          on_earth=_geodesic_circle)


def enclosing_ellipse(
    frame: Any, by: str | None = None, *,
    planar: bool = False, centroids: bool = False, work_crs: Any = None,
    max_scale_error: float = MAX_SCALE_ERROR, errors: Literal["raise", "skip"] = "raise", **options: Any,
) -> Any:
    """The minimum-area ellipse covering a frame's points (one per group with ``by``).

    Returns
    -------
    GeoDataFrame
        Polygon geometry (a 128-gon circumscribing the ellipse) and columns ``points``,
        ``x``, ``y`` (centre), ``semi_major_<unit>``, ``semi_minor_<unit>``, ``angle_deg``
        (major axis, degrees counter-clockwise from the working CRS's +x axis) and
        ``area_<unit>2`` (of the exact ellipse), plus ``by`` and ``problem``.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> box = gpd.GeoSeries(gpd.points_from_xy([0, 4, 4, 0], [0, 0, 2, 2]))
    >>> e = gis.enclosing_ellipse(box, planar=True, tol=1e-10)
    >>> [round(float(e[c].iloc[0]), 5) for c in ("semi_major_u", "semi_minor_u")]   # a/sqrt2, b/sqrt2
    [2.82843, 1.41421]
    """
    return _one_per_group(_pw.enclosing_ellipse, frame, None, by, planar, centroids, errors, options, weighted=False,
                          model={"work_crs": work_crs, "max_scale_error": max_scale_error})
