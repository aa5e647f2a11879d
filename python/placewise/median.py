"""The weighted Fermat–Weber point (geometric median): the best single site for demand."""

from __future__ import annotations

import dataclasses
import math
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._errors import check_errors
from ._region import draw_region, region_rings
from ._results import Grouped, Result

__all__ = ["WeberPoint", "WeberPoints", "weber_point"]


def _site_points(location: np.ndarray) -> Any:
    import shapely

    return shapely.points(np.asarray(location, dtype=np.float64).reshape(-1, 2))


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class WeberPoint(Result):
    """A Fermat–Weber point with its optimality certificate.

    Attributes
    ----------
    location : ndarray, shape (2,)
        The site minimising the total weighted distance.
    cost : float
        Total weighted distance from ``location`` to the points (weight × coordinate unit).
    gap : float
        Proven upper bound on ``cost - optimum``.
    relative_gap : float
        ``gap / cost`` (0 when the cost is 0).
    iterations : int
        Passes over the points used.
    converged : bool
        True when ``gap <= tol * cost`` was reached.
    region_active : bool or None
        With ``region=``: True when the free optimum lies outside the region, so the site
        was moved onto the region's boundary; None without a region.
    region_holds_demand : bool or None
        With ``region=``: False when no demand point of positive weight lies in the region.
    free_location : ndarray, shape (2,), or None
        With ``region=``: the unrestricted optimum.
    free_cost : float or None
        With ``region=``: its cost (what the region costs is ``cost - free_cost``).
    edges_searched : int or None
        With ``region=``: boundary edges minimised exactly (the others were ruled out by a
        lower bound).

    ``to_frame()`` gives one row: ``x``, ``y``, ``cost_<unit>``, ``gap_<unit>``,
    ``relative_gap``, ``iterations``, ``converged`` (with a region also ``region_active``,
    ``region_holds_demand``, ``free_cost_<unit>``); ``to_geodataframe()`` adds the site as a
    Point.
    """

    location: np.ndarray
    cost: float
    gap: float
    iterations: int
    converged: bool
    region_active: bool | None = dataclasses.field(default=None, kw_only=True)
    region_holds_demand: bool | None = dataclasses.field(default=None, kw_only=True)
    free_location: np.ndarray | None = dataclasses.field(default=None, kw_only=True)
    free_cost: float | None = dataclasses.field(default=None, kw_only=True)
    edges_searched: int | None = dataclasses.field(default=None, kw_only=True)
    region: Any = dataclasses.field(default=None, kw_only=True, repr=False)

    @property
    def relative_gap(self) -> float:
        if self.cost > 0:
            return self.gap / self.cost
        # No answer (a skipped group): no gap either; else a zero cost is met exactly.
        return math.nan if math.isnan(self.cost) or math.isnan(self.gap) else 0.0

    def _columns(self) -> dict[str, Any]:
        return {
            "x": [float(self.location[0])],
            "y": [float(self.location[1])],
            self._u("cost"): [self.cost],
            self._u("gap"): [self.gap],
            "relative_gap": [self.relative_gap],
            "iterations": [self.iterations],
            "converged": [self.converged],
            **_region_columns(self, lambda v: [v]),
        }

    def _geometry(self) -> Any:
        return _site_points(self.location)

    def plot(self, ax: Any = None, *, points: ArrayLike | None = None, **style: Any) -> Any:
        """Draw the site as a star, with the demand ``points`` (shape (n, 2)) as context when
        given (the result does not keep them); new axes when ``ax`` is None. ``style`` goes
        to the site's marker.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import placewise as pw
        >>> pts = [[0, 0], [4, 0], [0, 3]]
        >>> ax = pw.weber_point(pts).plot(points=pts)
        >>> [line.get_label() for line in ax.lines]
        ['demand points', 'Fermat–Weber point']
        >>> pw.weber_point([[1, 1]]).plot().get_title()        # one point: the site is the point
        'Fermat–Weber point · total weighted distance 0 coordinate units × weight'
        """
        return _draw_weber(self, ax, points, style)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class WeberPoints(Grouped):
    """Fermat–Weber points of many groups, sorted by label.

    ``len``, iteration and ``points[label]`` give each group's :class:`WeberPoint`;
    ``to_frame()`` has one row per group with the columns of :class:`WeberPoint` after
    ``group`` and ``problem``.

    Attributes
    ----------
    labels : ndarray, shape (G,)
        Sorted unique group labels.
    location : ndarray, shape (G, 2)
    cost, gap : ndarray, shape (G,)
    iterations : ndarray, shape (G,)
    converged : ndarray of bool, shape (G,)
    """

    location: np.ndarray
    cost: np.ndarray
    gap: np.ndarray
    iterations: np.ndarray
    converged: np.ndarray
    region_active: np.ndarray | None = dataclasses.field(default=None, kw_only=True)
    region_holds_demand: np.ndarray | None = dataclasses.field(default=None, kw_only=True)
    free_location: np.ndarray | None = dataclasses.field(default=None, kw_only=True)
    free_cost: np.ndarray | None = dataclasses.field(default=None, kw_only=True)
    edges_searched: np.ndarray | None = dataclasses.field(default=None, kw_only=True)
    region: Any = dataclasses.field(default=None, kw_only=True, repr=False)

    @property
    def relative_gap(self) -> np.ndarray:
        with np.errstate(divide="ignore", invalid="ignore"):
            # A group without an answer (skipped) has no gap either: NaN, never 0 ("proven").
            met = np.where(np.isnan(self.cost) | np.isnan(self.gap), np.nan, 0.0)
            return np.where(self.cost > 0, self.gap / np.where(self.cost > 0, self.cost, 1.0), met)

    def _item(self, position: int) -> WeberPoint:
        return WeberPoint(
            self.location[position].copy(),
            float(self.cost[position]),
            float(self.gap[position]),
            int(self.iterations[position]),
            bool(self.converged[position]),
            unit=self.unit,
            **_region_item(self, position),
        )

    def _columns(self) -> dict[str, Any]:
        return {
            "x": self.location[:, 0],
            "y": self.location[:, 1],
            self._u("cost"): self.cost,
            self._u("gap"): self.gap,
            "relative_gap": self.relative_gap,
            "iterations": self.iterations,
            "converged": self.converged,
            **_region_columns(self, lambda v: v),
        }

    def _geometry(self) -> Any:
        return _site_points(self.location)

    def plot(self, ax: Any = None, *, points: ArrayLike | None = None, **style: Any) -> Any:
        """Draw every group's site as a star in the group's colour, with the demand
        ``points`` as context when given (the result does not keep them)."""
        return _draw_weber(self, ax, points, style)


def _region_columns(result: Any, column: Any) -> dict[str, Any]:
    """The region's columns (none without a region)."""
    if result.region_active is None:
        return {}
    return {
        "region_active": column(result.region_active),
        "region_holds_demand": column(result.region_holds_demand),
        result._u("free_cost"): column(result.free_cost),
    }


def _region_item(result: WeberPoints, position: int) -> dict[str, Any]:
    """One group's region fields (none without a region)."""
    if result.region_active is None:
        return {}
    return {
        "region_active": bool(np.asarray(result.region_active)[position]),
        "region_holds_demand": bool(np.asarray(result.region_holds_demand)[position]),
        "free_location": np.asarray(result.free_location)[position].copy(),
        "free_cost": float(np.asarray(result.free_cost)[position]),
        "edges_searched": int(np.asarray(result.edges_searched)[position]),
        "region": result.region,
    }


def _draw_weber(result: WeberPoint | WeberPoints, ax: Any, points: ArrayLike | None, style: dict[str, Any]) -> Any:
    from .plotting import draw_context, draw_sites, finish, quantity

    ax = result._plot_axes(ax)
    draw_region(ax, result.region)
    if points is not None:
        draw_context(ax, points)
    sites = np.asarray(result.location, dtype=np.float64).reshape(-1, 2)
    draw_sites(ax, sites, label="Fermat–Weber point" + (" (colour = group)" if len(sites) > 1 else ""), **style)
    if points is None and len(sites):
        # A lone site gives degenerate limits: frame it with a unit margin instead.
        ax.update_datalim(np.vstack([sites.min(axis=0) - 1, sites.max(axis=0) + 1]))
        ax.autoscale_view()
    if isinstance(result, WeberPoints):
        title = f"Fermat–Weber points of {len(result.labels)} groups"
    else:
        title = f"Fermat–Weber point · total weighted distance {quantity(result.cost, result.unit)} × weight"
    return finish(ax, title, result.unit)


@overload
def weber_point(
    points: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: None = None,
    metric: Literal["euclidean", "manhattan"] = "euclidean",
    tol: float = 1e-10,
    max_iter: int = 10_000,
    errors: Literal["raise", "skip"] = "raise",
    region: Any = None,
) -> WeberPoint: ...


@overload
def weber_point(
    points: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: ArrayLike,
    metric: Literal["euclidean", "manhattan"] = "euclidean",
    tol: float = 1e-10,
    max_iter: int = 10_000,
    errors: Literal["raise", "skip"] = "raise",
    region: Any = None,
) -> WeberPoints: ...


def weber_point(
    points: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: ArrayLike | None = None,
    metric: Literal["euclidean", "manhattan"] = "euclidean",
    tol: float = 1e-10,
    max_iter: int = 10_000,
    errors: Literal["raise", "skip"] = "raise",
    region: Any = None,
) -> WeberPoint | WeberPoints:
    """The weighted Fermat–Weber point: the site minimising ``sum(w_i * d(x, a_i))``.

    Euclidean distances use Weiszfeld's iteration with the Vardi–Zhang (2001) step at data
    points, Kuhn's (1973) optimality test and safeguarded Newton steps; the answer carries a
    certified optimality ``gap``. Manhattan distances are solved exactly by weighted medians.

    With ``region=``, the site must lie in the region (boundary included). The objective is
    convex, so the free optimum is kept when the region holds it; otherwise the restricted
    optimum lies on the region's boundary (Hamacher and Nickel 1995, restricted planar
    location), found by minimising the objective exactly along every boundary edge that a
    lower bound does not rule out. ``gap`` then bounds the distance to the restricted
    optimum, and ``region_active`` says whether the region moved the site.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations (planar coordinates, e.g. projected metres).
    weights : array_like, shape (n,), optional
        Finite, non-negative demand per point, not all zero. Default: all 1.
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: solve every group at once (in parallel) and return ``WeberPoints``.
    metric : {"euclidean", "manhattan"}
    tol : float
        Stop when the certified gap is at most ``tol * cost``.
    max_iter : int
        Largest number of passes over the points (at least 1).
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without an answer (smallest
        label); ``"skip"`` keeps such a group with its ``problem`` and solves the rest.
    region : shapely Polygon or MultiPolygon, GeoSeries or GeoDataFrame (its rows' union), or (m, 2) ring, optional
        Where the site may go: a polygon with holes (or several), or one ring of vertices,
        in the points' coordinates. Its rings must not cross. One region serves every group.
        A region holding none of the demand is allowed (``region_holds_demand`` is False).

    Returns
    -------
    WeberPoint, or WeberPoints when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, negative, all-zero or wrong-length weights,
        an empty point set, or a ``tol`` / ``max_iter`` of the wrong type or range, or a
        region with NaN vertices or bad ring offsets. Its ``group`` and ``row`` attributes
        name the group label and input row concerned.
    DegenerateInputError
        For a region without area or whose rings cross or overlap (``argument`` is
        ``"region"``).

    Examples
    --------
    >>> import placewise as pw
    >>> r = pw.weber_point([[0, 0], [4, 0], [2, 4]])
    >>> round(r.cost, 9)       # 4 + 2*sqrt(3): the Torricelli point
    7.464101615
    >>> pw.weber_point([[3, 1]]).location   # one point: the point itself
    array([3., 1.])
    >>> sites = pw.weber_point([[0, 0], [2, 0], [0, 2]], groups=[1, 1, 2])
    >>> len(sites), sites.labels.tolist(), sites[2].location.tolist()
    (2, [1, 2], [0.0, 2.0])
    >>> sites.to_frame()[["group", "x", "y", "cost_u"]]
       group    x    y  cost_u
    0      1  0.0  0.0     2.0
    1      2  0.0  2.0     0.0

    A depot that must stand on a lot east of the demand lands on the lot's nearest edge:

    >>> homes = [[0, 1], [0, -1], [1, 0]]
    >>> lot = [[3, -2], [6, -2], [6, 2], [3, 2]]
    >>> d = pw.weber_point(homes, region=lot)
    >>> d.location.round(9).tolist(), d.region_active, d.region_holds_demand
    ([3.0, 0.0], True, False)
    >>> round(d.cost, 6), bool(d.gap <= 1e-9 * d.cost)   # 2·√10 + 2 from (3, 0)
    (8.324555, True)

    See Also
    --------
    minimax_point : the site minimising the largest weighted distance.
    p_median : the best p sites.
    """
    vertices, offsets = region_rings(region)
    shown = None if vertices is None else (vertices, offsets)
    check_errors(errors)
    if groups is None:
        return WeberPoint(**_core.weber_point_single(points, weights, metric, tol, max_iter, vertices, offsets),
                          region=shown)
    fields = _core.weber_point_grouped(points, weights, groups, metric, tol, max_iter, errors, vertices, offsets)
    return WeberPoints._from_core(fields, region=shown)
