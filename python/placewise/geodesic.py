"""Longitude/latitude points solved on the WGS84 ellipsoid.

Points are ``(n, 2)`` arrays of ``[longitude, latitude]`` in degrees (x = longitude, as GIS
frames store them; longitudes within ±540, latitudes within ±90). Every distance, cost,
radius, length and area is measured along geodesics of the WGS84 ellipsoid (Karney 2013,
"Algorithms for geodesics", J. Geodesy 87), in metres and square metres, at any extent:
across the antimeridian, near and around the poles.

- :func:`distance`, :func:`path_length`, :func:`ring_area`: geodesic distances, polyline
  lengths and polygon areas.
- :func:`weber_point`: the weighted Fermat–Weber point (Weiszfeld's iteration in the tangent
  plane of each iterate; Fletcher, Venkatasubramanian & Joshi 2009).
- :func:`minimax_point`, :func:`enclosing_circle`: the weighted minimax point and the
  smallest geodesic circle (the planar kernel in a frame recentred at each iterate).
- :func:`nearest_site`: every point's geodesically nearest site.
- :func:`delaunay`, :func:`voronoi_cells`, :func:`spanning_tree`: the spherical Delaunay
  triangulation, Voronoi cells covering the globe and great-circle minimum spanning tree,
  from the 3-D convex hull of the points' unit vectors, with WGS84 geodesic lengths and
  areas (the model is stated in each result's ``model``).

Results follow the table contract of the planar functions, with ``unit="m"``; the columns
``x`` and ``y`` hold longitude and latitude. Results are planning aids under the stated model
(geodesic distance on the ellipsoid and the given weights); check them against local
regulations and licensed professional judgement.

Certificates: a Fermat–Weber ``gap`` is proven when the points lie within
``CONVEX_CAP_DEGREES`` (44°) of their mean direction, where the objective is convex; farther
out ``gap`` is infinite and ``converged`` false (the location is a stationary point). Points
reaching 90° or more from their mean direction (more than a hemisphere) are refused with a
``DegenerateInputError``: the objective has several local optima there. A minimax ``gap``
is always finite: the pair bound ``s(a, b) · w_a w_b / (w_a + w_b)`` holds on any metric
space, and inside the convex cap a first-order bound is added.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any, ClassVar, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._errors import check_errors
from ._results import Grouped, Result, as_points
from ._sphere import (
    SPHERE_MODEL,
    SphereCells,
    SphereMesh,
    SphereTree,
    delaunay,
    lonlat_polygon,
    spanning_tree,
    voronoi_cells,
)
from .enclose import _GroupedWithSupport, _one, _xy
from .median import WeberPoint, WeberPoints
from .partition import Allocation, Allocations

__all__ = [
    "CONVEX_CAP_DEGREES",
    "GeodesicCenter",
    "GeodesicCenters",
    "GeodesicCircle",
    "GeodesicCircles",
    "SPHERE_MODEL",
    "SphereCells",
    "SphereMesh",
    "SphereTree",
    "circle_polygon",
    "delaunay",
    "distance",
    "enclosing_circle",
    "lonlat_polygon",
    "minimax_point",
    "nearest_site",
    "path_length",
    "ring_area",
    "spanning_tree",
    "voronoi_cells",
    "weber_point",
]

#: Largest angle (degrees) from the points' mean direction within which the geodesic
#: Fermat–Weber objective is certified convex (see the module notes).
CONVEX_CAP_DEGREES = 44.0

# The polygon standing for a geodesic circle (:func:`circle_polygon`): at first a 256-gon,
# its vertex count doubled (up to 16384) while its edges must be pushed out by more than
# 0.02 % of the radius to clear the circle; each edge, straight in lon/lat, is checked at 9
# points along it and must clear the circle by 1 mm (after at most 8 pushes outward).
_CIRCLE_VERTICES = 256
_CIRCLE_MOST_VERTICES = 16384
_CIRCLE_SLACK = 2e-4
_CIRCLE_CHECKS = 9  # odd: the middle of each edge is one of them
_CIRCLE_CLEARANCE_M = 1e-3
_CIRCLE_PUSHES = 8


def distance(a: ArrayLike, b: ArrayLike) -> np.ndarray:
    """Geodesic distance in metres from ``a[i]`` to ``b[i]`` (both ``(n, 2)`` lon/lat).

    Examples
    --------
    >>> import placewise as pw
    >>> round(float(pw.geodesic.distance([[0, 0]], [[0, 90]])[0]), 3)   # the meridian quadrant
    10001965.729
    """
    return _core.geodesic_distance(a, b)["distance"]


def path_length(path: ArrayLike) -> float:
    """Length in metres of the geodesic polyline through ``path`` (``(n, 2)`` lon/lat).

    Examples
    --------
    >>> import placewise as pw
    >>> round(pw.geodesic.path_length([[179, 0], [-179, 0]]) / 1000, 3)   # across the antimeridian
    222.639
    """
    return float(_core.geodesic_path_length(path)["length"])


def ring_area(ring: ArrayLike) -> float:
    """Area in square metres of the polygon with geodesic edges through ``ring`` (lon/lat,
    closed implicitly): positive when the vertices run counter-clockwise, negative otherwise.

    Examples
    --------
    >>> import placewise as pw
    >>> round(pw.geodesic.ring_area([[0, 0], [1, 0], [1, 1], [0, 1]]) / 1e6, 1)
    12308.8
    """
    return float(_core.geodesic_ring_area(ring)["area"])


@overload
def weber_point(
    points: ArrayLike, weights: ArrayLike | None = None, *, groups: None = None, tol: float = 1e-10,
    max_iter: int = 10_000, errors: Literal["raise", "skip"] = "raise", time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
) -> WeberPoint: ...


@overload
def weber_point(
    points: ArrayLike, weights: ArrayLike | None = None, *, groups: ArrayLike, tol: float = 1e-10,
    max_iter: int = 10_000, errors: Literal["raise", "skip"] = "raise", time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
) -> WeberPoints: ...


def weber_point(
    points: ArrayLike, weights: ArrayLike | None = None, *, groups: ArrayLike | None = None, tol: float = 1e-10,
    max_iter: int = 10_000, errors: Literal["raise", "skip"] = "raise", time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
) -> WeberPoint | WeberPoints:
    """The weighted Fermat–Weber point on the ellipsoid: the site minimising
    ``sum(w_i * s(x, a_i))`` with ``s`` the geodesic distance.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        ``[longitude, latitude]`` in degrees.
    weights : array_like, shape (n,), optional
        Finite, non-negative demand per point, not all zero. Default: all 1.
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: solve every group at once and return ``WeberPoints``.
    tol : float
        Stop when the certified gap is at most ``tol * cost`` plus the allowance for
        GeographicLib's accuracy (see ``converged`` below).
    max_iter : int
        Largest number of exact geodesic passes over the points (``iterations`` counts
        them; the start is found on Gauss's conformal sphere, and from 262,144 points on
        its first step is estimated from a sample of 65,536 of them, outside this count).
    errors : {"raise", "skip"}
        With ``groups``: fail on the first group without an answer, or keep it with its
        ``problem``.
    time_limit : float, optional
        Seconds (finite, above zero) the run may take (each group's, from its own start,
        with ``groups``). When they pass, the site reached comes back with ``converged``
        False unless its certificate already holds; ``cost`` is still its exact geodesic
        cost and ``gap`` a proven bound. The first exact pass always completes (it gives the
        site its cost), so a limit shorter than the set-up and one pass over the points is
        overrun by that much, and the site returned is then the start. Default: no limit.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while the
        run goes on: exact passes over the points, or with ``groups`` the points of finished
        groups. How many passes a run needs is known only once it has converged, so each is
        planned as it begins: the total is the passes made and the one under way (at most
        ``max_iter``), and a run's count ends at its total. Ctrl-C (or an exception
        from the callable) stops the run, set-up included, within a fraction of a pass and
        raises ``KeyboardInterrupt``.

    Returns
    -------
    WeberPoint or WeberPoints
        ``location`` is ``[longitude, latitude]``; ``cost`` and ``gap`` are weight × metres
        (columns ``cost_m``, ``gap_m``). ``converged`` is true when ``gap`` is within
        ``tol * cost`` of the allowance ``gap`` carries for GeographicLib's accuracy and
        rounding: 3e-8 m times the total weight, plus up to 5e-15 of the cost (4e-13 at
        tolerances of 1e-11 or more), which outweighs ``tol * cost`` for points within a few
        hundred metres. ``gap`` is infinite (and ``converged`` false) for points beyond the convex
        cap (see the module notes).

    Raises
    ------
    InputError
        For bad coordinates (named by row), weights or options.
    DegenerateInputError
        For points spanning more than a hemisphere around their mean direction.

    Examples
    --------
    >>> import placewise as pw
    >>> r = pw.geodesic.weber_point([[179.0, 10.0], [-179.0, 10.0], [180.0, 12.0]])
    >>> r.to_frame().columns.tolist()
    ['x', 'y', 'cost_m', 'gap_m', 'relative_gap', 'iterations', 'converged']
    >>> bool(r.converged), round(abs(float(r.location[0])), 6)    # on the antimeridian, by symmetry
    (True, 180.0)
    >>> passes = []
    >>> r = pw.geodesic.weber_point([[0, 50], [2, 51], [1, 53]], time_limit=60.0,
    ...                             progress=lambda done, total: passes.append(done))
    >>> bool(r.converged), passes[-1] == r.iterations    # the count ends at the passes made
    (True, True)
    >>> pw.geodesic.weber_point([[0, 0], [90, 0], [180, 0], [-90, 0]])
    Traceback (most recent call last):
    ...
    placewise.DegenerateInputError: points: the points reach ...
    """
    check_errors(errors)
    if groups is None:
        return WeberPoint(**_core.geodesic_weber_single(points, weights, tol, max_iter, time_limit, progress),
                          unit="m")
    fields = _core.geodesic_weber_grouped(points, weights, groups, tol, max_iter, errors, time_limit, progress)
    return WeberPoints._from_core(fields, unit="m")


# ------------------------------------------------------------------------------- minimax


class _CenterTable:
    location: Any
    weighted_radius: Any
    gap: Any
    iterations: Any
    converged: Any
    _u: Any

    def _columns(self) -> dict[str, Any]:
        radius = _one(self.weighted_radius).astype(np.float64)
        gap = _one(self.gap).astype(np.float64)
        with np.errstate(divide="ignore", invalid="ignore"):
            # A group without an answer (skipped) has no gap either: NaN, never 0 ("proven").
            met = np.where(np.isnan(radius) | np.isnan(gap), np.nan, 0.0)
            relative = np.where(radius > 0, gap / np.where(radius > 0, radius, 1.0), met)
        return {**_xy(self.location), self._u("weighted_radius"): radius, self._u("gap"): gap,
                "relative_gap": relative, "iterations": _one(self.iterations), "converged": _one(self.converged)}

    def _geometry(self) -> Any:
        import shapely

        from .enclose import _geometries

        return _geometries(shapely.points, np.asarray(self.location, dtype=np.float64).reshape(-1, 2))


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class GeodesicCenter(_CenterTable, Result):
    """The weighted minimax point on the ellipsoid.

    Attributes
    ----------
    location : ndarray, shape (2,)
        ``[longitude, latitude]`` of the site minimising ``max(w_i * s(x, a_i))``.
    weighted_radius : float
        That largest weight × geodesic distance (weight × metres).
    gap : float
        Proven bound on ``weighted_radius - optimum``.
    support : ndarray of int
        Input rows of the points that fix the answer.
    iterations : int
    converged : bool
        True when ``gap <= tol * weighted_radius`` plus the allowance ``gap`` carries for
        GeographicLib's accuracy and rounding (3e-8 m times the largest weight plus about
        2e-15 of the radius, which outweighs the first term for a radius of a few metres).

    ``to_frame()`` gives ``x`` (longitude), ``y`` (latitude), ``weighted_radius_m``,
    ``gap_m``, ``relative_gap``, ``iterations``, ``converged``.
    """

    location: np.ndarray
    weighted_radius: float
    gap: float
    support: np.ndarray
    iterations: int
    converged: bool


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class GeodesicCenters(_CenterTable, _GroupedWithSupport):
    """Geodesic minimax points of many groups, sorted by label (fields as
    :class:`GeodesicCenter`, one per group; support rows in CSR layout)."""

    _single: ClassVar[type[Result]] = GeodesicCenter

    location: np.ndarray
    weighted_radius: np.ndarray
    gap: np.ndarray
    iterations: np.ndarray
    converged: np.ndarray


@overload
def minimax_point(
    points: ArrayLike, weights: ArrayLike | None = None, *, groups: None = None, tol: float = 1e-9,
    max_iter: int = 200, errors: Literal["raise", "skip"] = "raise", time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
) -> GeodesicCenter: ...


@overload
def minimax_point(
    points: ArrayLike, weights: ArrayLike | None = None, *, groups: ArrayLike, tol: float = 1e-9,
    max_iter: int = 200, errors: Literal["raise", "skip"] = "raise", time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
) -> GeodesicCenters: ...


def minimax_point(
    points: ArrayLike, weights: ArrayLike | None = None, *, groups: ArrayLike | None = None, tol: float = 1e-9,
    max_iter: int = 200, errors: Literal["raise", "skip"] = "raise", time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
) -> GeodesicCenter | GeodesicCenters:
    """The weighted minimax point (1-center) on the ellipsoid: the site whose largest
    weight × geodesic distance is least.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        ``[longitude, latitude]`` in degrees.
    weights : array_like, shape (n,), optional
        Finite, non-negative weight per point, not all zero. Default: all 1.
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: solve every group at once and return ``GeodesicCenters``.
    tol : float
        Stop when the certified gap is at most ``tol * weighted_radius`` plus the allowance
        for GeographicLib's accuracy (see ``converged`` below).
    max_iter : int
        Largest number of iterations (recentred planar solves, each after one exact
        geodesic pass over the points).
    errors : {"raise", "skip"}
        With ``groups``: fail on the first group without an answer, or keep it with its
        ``problem``.
    time_limit : float, optional
        Seconds (finite, above zero) that the run (each group's, with ``groups``) may take;
        when they pass, the best centre reached is returned with its true
        ``weighted_radius`` and proven ``gap``, and ``converged`` False unless that gap
        already meets ``tol``. The first pass over the points (at the start) always ends,
        so a run may overrun a very short limit by that pass (about a second per million
        points). Default: no limit.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while the
        run works. It counts iterations, each planned as it begins (the total is the
        iterations made and the one under way, at most ``max_iter``), so a run's count ends
        at its total; with ``groups``, the points of finished groups. Ctrl-C stops the run
        within a fraction of a second and raises ``KeyboardInterrupt``.

    Returns
    -------
    GeodesicCenter or GeodesicCenters
        ``weighted_radius`` and ``gap`` are weight × metres (columns ``weighted_radius_m``,
        ``gap_m``).

    Raises
    ------
    InputError
        For bad coordinates (named by row), weights or options.
    DegenerateInputError
        For points spanning more than a hemisphere around their mean direction.

    Examples
    --------
    >>> import placewise as pw
    >>> a, b = [170.0, -40.0], [-170.0, -45.0]
    >>> r = pw.geodesic.minimax_point([a, b])     # two points: the geodesic midpoint
    >>> d = pw.geodesic.distance([a], [b])[0]
    >>> bool(abs(r.weighted_radius - d / 2) < 1e-6), bool(r.converged)
    (True, True)
    """
    check_errors(errors)
    if groups is None:
        return GeodesicCenter(**_core.geodesic_minimax_single(points, weights, tol, max_iter, time_limit, progress),
                              unit="m")
    fields = _core.geodesic_minimax_grouped(points, weights, groups, tol, max_iter, errors, time_limit, progress)
    return GeodesicCenters._from_core(fields, row_group=Grouped._row_groups_of(fields["labels"], groups), unit="m")


# ------------------------------------------------------------------------------- circle


def circle_polygon(center: ArrayLike, radius: float) -> Any:
    """The geodesic circle of ``radius`` metres about ``center`` (lon/lat) as a shapely
    polygon in longitude/latitude that holds the whole disc: every point at most ``radius``
    from the centre lies inside it, so a spatial join to it keeps every point the circle
    covers. A circle crossing the antimeridian is split there into a MultiPolygon (as
    GeoJSON, RFC 7946 §3.1.9, asks); one around a pole is closed through the pole.

    How it is drawn: the vertices lie on a geodesic circle about the centre, at equal
    azimuth steps, and the edges between them are straight in longitude/latitude (as every
    GIS draws a polygon), which is not the circle's course: between its ends such an edge
    bends towards the centre, most near the poles. Each edge is therefore checked at 9
    points along it (geodesic distance from the centre, Karney 2013), and the vertices
    pushed out until every one lies at least 1 mm beyond ``radius``. The polygon starts as a
    256-gon and its vertex count doubles (up to 16384) while that push exceeds 0.02 % of the
    radius, so it reaches at most about ``radius * 1.0002`` from the centre (more only for a
    circle passing within a few kilometres of a pole, where even 16384 straight edges bend
    farther).

    Raises
    ------
    DegenerateInputError
        The circle's edges cannot be pushed clear of it (a circle reaching round the
        Earth to its own centre's antipode).

    Examples
    --------
    >>> import placewise as pw
    >>> pw.geodesic.circle_polygon([180.0, -17.0], 50_000).geom_type      # split at ±180°
    'MultiPolygon'
    >>> cap = pw.geodesic.circle_polygon([0.0, 89.0], 300_000)            # holds the pole
    >>> cap.geom_type, round(cap.bounds[3], 6)
    ('Polygon', 90.0)
    >>> import shapely
    >>> towns = [[0.0, 45.0], [30.0, 65.0], [40.0, 40.0]]        # all three on the smallest circle
    >>> c = pw.geodesic.enclosing_circle(towns)
    >>> bool(pw.geodesic.circle_polygon(c.center, c.radius).covers(shapely.points(towns)).all())
    True
    """
    centre = np.asarray(center, dtype=np.float64).reshape(1, 2)
    radius = float(radius)
    goal = radius + _CIRCLE_CLEARANCE_M
    vertices = _CIRCLE_VERTICES
    while True:
        ring, reach = _circle_ring_clear_of(centre, goal, vertices)
        if vertices >= _CIRCLE_MOST_VERTICES or (ring is not None and reach - goal <= _CIRCLE_SLACK * goal):
            break
        vertices *= 2
    if ring is None:
        from ._core import DegenerateInputError

        raise DegenerateInputError(
            f"radius: a lon/lat polygon cannot hold the geodesic circle of {radius:,.0f} m about "
            f"({centre[0, 0]:g}, {centre[0, 1]:g}); its edges cannot be pushed clear of it")
    return lonlat_polygon(ring)


def _circle_ring_clear_of(centre: np.ndarray, goal: float, vertices: int) -> tuple[Any, float]:
    """The ring of ``vertices`` points on a geodesic circle about ``centre`` whose lon/lat
    edges all stay at least ``goal`` metres from it (checked at ``_CIRCLE_CHECKS`` points
    each), and the vertices' distance; (None, inf) when ``_CIRCLE_PUSHES`` pushes outward do
    not clear it. The kernel puts the vertices at ``radius / cos(pi / vertices)``, so it is
    asked for ``reach * cos(pi / vertices)`` to put them at ``reach``."""
    shrink = float(np.cos(np.pi / vertices))
    reach = goal / shrink  # the planar polygon's own reach: a first guess
    along = np.arange(1, _CIRCLE_CHECKS + 1)[:, None, None] / (_CIRCLE_CHECKS + 1)
    for _ in range(_CIRCLE_PUSHES):
        ring = _core.geodesic_circle_ring(centre, reach * shrink, vertices)["ring"]
        # Each edge as lonlat_polygon draws it: straight from a vertex to the next, the
        # next's longitude taken within 180° of it.
        ends = np.roll(ring, -1, axis=0)
        step = ends[:, 0] - ring[:, 0]
        ends[:, 0] = ring[:, 0] + step - 360.0 * np.round(step / 360.0)
        checks = (ring + along * (ends - ring)).reshape(-1, 2)
        checks[:, 0] = (checks[:, 0] + 180.0) % 360.0 - 180.0
        low = float(distance(np.broadcast_to(centre, checks.shape), checks).min())
        # Along an edge the distance from the centre dips about as a parabola, by at most
        # ``reach - low``; between checks ``h`` of the edge apart it dips at most
        # ``(reach - low) * h**2`` below the lowest check, so that much is asked for too.
        short = goal + (reach - low) / (_CIRCLE_CHECKS + 1) ** 2 - low
        if short <= 0.0:
            return ring, reach
        # An edge bends inward by about as much at any nearby reach: push out by the
        # shortfall, and a quarter more so that the next check clears it.
        reach += 1.25 * short
    return None, float("inf")


class _GeodesicCircleTable:
    center: Any
    radius: Any
    area: Any
    gap: Any
    iterations: Any
    converged: Any
    _u: Any

    def _columns(self) -> dict[str, Any]:
        return {**_xy(self.center), self._u("radius"): _one(self.radius), self._u("area", 2): _one(self.area),
                self._u("gap"): _one(self.gap), "iterations": _one(self.iterations),
                "converged": _one(self.converged)}

    def _geometry(self) -> Any:
        centers = np.asarray(self.center, dtype=np.float64).reshape(-1, 2)
        radii = _one(self.radius).astype(np.float64)
        out = np.empty(len(centers), dtype=object)
        for k, (c, r) in enumerate(zip(centers, radii, strict=True)):
            out[k] = circle_polygon(c, float(r)) if np.isfinite(c).all() and np.isfinite(r) else None
        return out


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class GeodesicCircle(_GeodesicCircleTable, Result):
    """The smallest geodesic circle covering longitude/latitude points.

    Attributes
    ----------
    center : ndarray, shape (2,)
        ``[longitude, latitude]``.
    radius : float
        Largest geodesic distance from the centre to a point, metres.
    area : float
        Area of the geodesic disc on the ellipsoid, square metres.
    gap : float
        Proven bound on ``radius - optimum``, metres.
    support : ndarray of int
    iterations : int
    converged : bool

    ``to_frame()`` gives ``x``, ``y`` (the centre's longitude, latitude), ``radius_m``,
    ``area_m2``, ``gap_m``, ``iterations``, ``converged``; ``to_geodataframe()`` adds the
    circle polygon of :func:`circle_polygon` (longitude/latitude: pass ``crs="EPSG:4326"``).
    """

    center: np.ndarray
    radius: float
    area: float
    gap: float
    support: np.ndarray
    iterations: int
    converged: bool


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class GeodesicCircles(_GeodesicCircleTable, _GroupedWithSupport):
    """Smallest geodesic circles of many groups, sorted by label (fields as
    :class:`GeodesicCircle`, one per group; support rows in CSR layout)."""

    _single: ClassVar[type[Result]] = GeodesicCircle

    center: np.ndarray
    radius: np.ndarray
    area: np.ndarray
    gap: np.ndarray
    iterations: np.ndarray
    converged: np.ndarray


@overload
def enclosing_circle(
    points: ArrayLike, *, groups: None = None, tol: float = 1e-9, max_iter: int = 200,
    errors: Literal["raise", "skip"] = "raise", time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
) -> GeodesicCircle: ...


@overload
def enclosing_circle(
    points: ArrayLike, *, groups: ArrayLike, tol: float = 1e-9, max_iter: int = 200,
    errors: Literal["raise", "skip"] = "raise", time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
) -> GeodesicCircles: ...


def enclosing_circle(
    points: ArrayLike, *, groups: ArrayLike | None = None, tol: float = 1e-9, max_iter: int = 200,
    errors: Literal["raise", "skip"] = "raise", time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
) -> GeodesicCircle | GeodesicCircles:
    """The smallest geodesic circle covering longitude/latitude points (per group with
    ``groups``): the unweighted :func:`minimax_point` with the disc's area.

    Parameters are those of :func:`minimax_point` without ``weights``. A run cut short by
    ``time_limit`` returns the circle about the best centre reached: it still covers every
    point (``radius`` is that centre's largest distance, metres), with ``converged`` False
    unless its proven ``gap`` already meets ``tol``.

    Returns
    -------
    GeodesicCircle or GeodesicCircles
        ``radius`` and ``gap`` in metres, ``area`` in square metres.

    Examples
    --------
    >>> import placewise as pw
    >>> c = pw.geodesic.enclosing_circle([[179.0, 0.0], [-179.0, 0.0]])
    >>> round(c.radius / 1000, 3), round(abs(float(c.center[0])), 6)
    (111.319, 180.0)
    >>> c.to_geodataframe(crs="EPSG:4326").geometry.iloc[0].geom_type   # split at ±180°
    'MultiPolygon'
    """
    check_errors(errors)
    if groups is None:
        return GeodesicCircle(**_core.geodesic_circle_single(points, tol, max_iter, time_limit, progress), unit="m")
    fields = _core.geodesic_circle_grouped(points, groups, tol, max_iter, errors, time_limit, progress)
    return GeodesicCircles._from_core(fields, row_group=Grouped._row_groups_of(fields["labels"], groups), unit="m")


# ------------------------------------------------------------------------------- nearest site


@overload
def nearest_site(
    points: ArrayLike, sites: ArrayLike, weights: ArrayLike | None = None, *, groups: None = None,
    site_groups: None = None, errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] | None = None,
) -> Allocation: ...


@overload
def nearest_site(
    points: ArrayLike, sites: ArrayLike, weights: ArrayLike | None = None, *, groups: ArrayLike,
    site_groups: ArrayLike, errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] | None = None,
) -> Allocations: ...


def nearest_site(
    points: ArrayLike, sites: ArrayLike, weights: ArrayLike | None = None, *, groups: ArrayLike | None = None,
    site_groups: ArrayLike | None = None, errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] | None = None,
) -> Allocation | Allocations:
    """Allocate every longitude/latitude point to its geodesically nearest site.

    The sites' Earth-centred positions go into a 3-D R*-tree; each point takes sites in
    increasing chord length and measures them on the ellipsoid until the next chord exceeds
    the best geodesic distance (a chord is never longer than a path on the surface), so the
    answer is exact at any extent. Ties go to the smaller site index.

    ``progress``: ``True`` draws a bar on stderr counting points (of every group, with
    ``groups``), a callable is called with ``(done, total)`` points from the calling thread.
    Ctrl-C (or an exception from the callable) stops the search within one chunk of points
    per worker thread (grouped: groups not begun are skipped) and is raised. The answer
    exists only once every point is allocated, so there is no time limit.

    Returns
    -------
    Allocation or Allocations
        As :func:`placewise.nearest_site`, with ``distance`` and ``cost`` in metres
        (``distance_m``, ``cost_m``).

    Examples
    --------
    >>> import placewise as pw
    >>> a = pw.geodesic.nearest_site([[179.5, 0.0], [-170.0, 5.0]], [[-179.5, 0.0], [170.0, 0.0]])
    >>> a.assignment.tolist(), round(float(a.distance[0]) / 1000, 3)
    ([0, 0], 111.319)
    """
    check_errors(errors)
    if groups is None and site_groups is None:
        return Allocation(**_core.geodesic_nearest_single(points, sites, weights, progress),
                          points=as_points(points), sites=as_points(sites), unit="m")
    from ._core import InputError

    if groups is None or site_groups is None:
        raise InputError("groups and site_groups go together: give both or neither")
    fields = _core.geodesic_nearest_grouped(points, sites, weights, groups, site_groups, errors, progress)
    return Allocations._from_core(fields, points=as_points(points), sites=as_points(sites), unit="m")
