"""The weighted minimax point: MinimaxPoint, MinimaxPoints, minimax_point."""

from __future__ import annotations

import dataclasses
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._errors import check_errors
from .._region import region_rings
from .._results import Grouped, Result
from ._shapes import _geometries, _GroupedWithSupport, _one, _plot_enclosing, _shown, _xy


class _MinimaxTable:
    location: Any
    weighted_radius: Any
    _u: Any

    region_active: Any
    region_holds_demand: Any
    gap: Any
    free_weighted_radius: Any

    def _columns(self) -> dict[str, Any]:
        columns = {**_xy(self.location), self._u("weighted_radius"): _one(self.weighted_radius)}
        if self.region_active is not None:
            columns |= {
                self._u("gap"): _one(self.gap),
                "region_active": _one(self.region_active),
                "region_holds_demand": _one(self.region_holds_demand),
                self._u("free_weighted_radius"): _one(self.free_weighted_radius),
            }
        return columns

    def _geometry(self) -> Any:
        import shapely

        return _geometries(shapely.points, np.asarray(self.location, dtype=np.float64).reshape(-1, 2))


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class MinimaxPoint(_MinimaxTable, Result):
    """The weighted minimax point (weighted Euclidean 1-center).

    Attributes
    ----------
    location : ndarray, shape (2,)
        The site minimising the largest weighted distance ``w_i * |x - a_i|``.
    weighted_radius : float
        That largest weighted distance (weight × coordinate unit).
    support : ndarray of int, shape (k,)
        Input rows of the 1–3 points whose weighted distances fix the optimum (all equal
        ``weighted_radius``; with a region, the rows within a relative 1e-9 of it).
    gap : float or None
        With ``region=``: a proven bound on ``weighted_radius -`` the restricted optimum.
    region_active : bool or None
        With ``region=``: True when the free optimum lies outside the region, so the site
        was moved onto the region's boundary; None without a region.
    region_holds_demand : bool or None
        With ``region=``: False when no demand point of positive weight lies in the region.
    free_location : ndarray, shape (2,), or None
    free_weighted_radius : float or None
        With ``region=``: the unrestricted optimum and its weighted radius.
    edges_searched : int or None
        With ``region=``: boundary edges minimised exactly.

    ``to_frame()`` gives one row: ``x``, ``y``, ``weighted_radius_<unit>`` (with a region
    also ``gap_<unit>``, ``region_active``, ``region_holds_demand``,
    ``free_weighted_radius_<unit>``); ``to_geodataframe()`` adds the site as a Point.
    """

    location: np.ndarray
    weighted_radius: float
    support: np.ndarray
    gap: Any = dataclasses.field(default=None, kw_only=True)
    region_active: Any = dataclasses.field(default=None, kw_only=True)
    region_holds_demand: Any = dataclasses.field(default=None, kw_only=True)
    free_location: Any = dataclasses.field(default=None, kw_only=True)
    free_weighted_radius: Any = dataclasses.field(default=None, kw_only=True)
    edges_searched: Any = dataclasses.field(default=None, kw_only=True)
    region: Any = dataclasses.field(default=None, kw_only=True, repr=False)

    def plot(self, ax: Any = None, *, points: ArrayLike | None = None, **style: Any) -> Any:
        """Draw the site as a star, with the demand ``points`` as context and the support
        rows (the farthest in weighted distance) ringed when given (the result does not keep
        the points); new axes when ``ax`` is None. ``style`` goes to the site's marker.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import placewise as pw
        >>> pts = [[0, 0], [2, 0]]
        >>> ax = pw.minimax_point(pts).plot(points=pts)
        >>> ax.get_title()
        'Weighted minimax point · largest weighted distance 1 coordinate units × weight'
        >>> len(pw.minimax_point([[5, 5]]).plot().lines)         # one point: the site alone
        1
        """
        return _plot_enclosing(self, ax, points, style, "minimax point",
                               "Weighted minimax point · largest weighted distance "
                               f"{_shown(self, self.weighted_radius)} × weight")


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class MinimaxPoints(_MinimaxTable, _GroupedWithSupport):
    """Weighted minimax points of many groups, sorted by label.

    ``len``, iteration and ``sites[label]`` give each group's :class:`MinimaxPoint`;
    ``to_frame()`` has one row per group with the columns of :class:`MinimaxPoint` after
    ``group`` and ``problem``.

    Attributes
    ----------
    labels : ndarray, shape (G,)
    location : ndarray, shape (G, 2)
    weighted_radius : ndarray, shape (G,)
    support_offsets, support_index : ndarray of int
        Support rows in CSR layout as in :class:`Circles`; :meth:`support` gives a
        group's rows by label.
    """

    _single = MinimaxPoint

    location: np.ndarray
    weighted_radius: np.ndarray
    gap: Any = dataclasses.field(default=None, kw_only=True)
    region_active: Any = dataclasses.field(default=None, kw_only=True)
    region_holds_demand: Any = dataclasses.field(default=None, kw_only=True)
    free_location: Any = dataclasses.field(default=None, kw_only=True)
    free_weighted_radius: Any = dataclasses.field(default=None, kw_only=True)
    edges_searched: Any = dataclasses.field(default=None, kw_only=True)
    region: Any = dataclasses.field(default=None, kw_only=True, repr=False)

    def _item(self, position: int) -> Any:
        item = super()._item(position)
        if self.region_active is None:
            return item
        return dataclasses.replace(
            item,
            gap=float(self.gap[position]),
            region_active=bool(self.region_active[position]),
            region_holds_demand=bool(self.region_holds_demand[position]),
            free_location=np.asarray(self.free_location)[position].copy(),
            free_weighted_radius=float(self.free_weighted_radius[position]),
            edges_searched=int(self.edges_searched[position]),
            region=self.region,
        )

    def plot(self, ax: Any = None, *, points: ArrayLike | None = None, **style: Any) -> Any:
        """Draw every group's site as a star in the group's colour, with the input
        ``points`` (the whole input) as context and the support rows ringed when given."""
        return _plot_enclosing(self, ax, points, style, "minimax point",
                               f"Weighted minimax points of {len(self.labels)} groups")


@overload
def minimax_point(
    points: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: None = None,
    errors: Literal["raise", "skip"] = "raise",
    region: Any = None,
) -> MinimaxPoint: ...


@overload
def minimax_point(
    points: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: ArrayLike,
    errors: Literal["raise", "skip"] = "raise",
    region: Any = None,
) -> MinimaxPoints: ...


def minimax_point(
    points: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: ArrayLike | None = None,
    errors: Literal["raise", "skip"] = "raise",
    region: Any = None,
) -> MinimaxPoint | MinimaxPoints:
    """The weighted minimax point: the site minimising ``max(w_i * |x - a_i|)``.

    Solved exactly by pivoting over bases of at most three points (Elzinga and Hearn 1972):
    the optimum of the current basis, the point of largest weighted distance from it, and
    the optimal basis of those at most four points, until every point is covered. Equal
    weights give the smallest enclosing circle's centre. Points of weight zero are ignored.

    With ``region=``, the site must lie in the region (boundary included): the free optimum
    when the region holds it, else the best point of the region's boundary (the objective is
    convex; Hamacher and Nickel 1995), minimised exactly along every boundary edge a lower
    bound does not rule out, with a proven ``gap``.

    Parameters
    ----------
    points : array_like, shape (n, 2)
    weights : array_like, shape (n,), optional
        Finite, non-negative, not all zero (per group with ``groups``). Default: all 1.
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: one site per group, returned as ``MinimaxPoints``.
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without an answer (smallest
        label); ``"skip"`` keeps such a group with its ``problem`` and solves the rest.
    region : shapely Polygon or MultiPolygon, GeoSeries or GeoDataFrame (its rows' union), or (m, 2) ring, optional
        Where the site may go (a polygon with holes, or one ring), in the points'
        coordinates; its rings must not cross. One region serves every group.

    Returns
    -------
    MinimaxPoint, or MinimaxPoints when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, negative, non-finite, all-zero or wrong-length
        weights, or no points; a region with NaN vertices, without area or whose rings
        cross (``argument`` is ``"region"``).

    Examples
    --------
    >>> import placewise as pw
    >>> m = pw.minimax_point([[0, 0], [3, 0]], [2, 1])   # divides the segment 1 : 2
    >>> m.location, m.weighted_radius
    (array([1., 0.]), 2.0)
    >>> pw.minimax_point([[0, 0], [9, 9]], [1, 0]).location   # zero weight: ignored
    array([0., 0.])
    >>> sites = pw.minimax_point([[0, 0], [3, 0], [7, 7]], [2, 1, 0], groups=[5, 5, 6],
    ...                          errors="skip")
    >>> frame = sites.to_frame()
    >>> frame[["group", "x", "y", "weighted_radius_u"]]
       group    x    y  weighted_radius_u
    0      5  1.0  0.0                2.0
    1      6  NaN  NaN                NaN
    >>> print(frame["problem"][1])
    group 6: weights are all zero; at least one weight must be positive

    A mast that must stand in a yard east of two hamlets goes to the yard's nearest edge:

    >>> m = pw.minimax_point([[0, 1], [0, -1]], region=[[3, -2], [5, -2], [5, 2], [3, 2]])
    >>> m.location.round(9).tolist(), round(m.weighted_radius, 9), m.region_active   # √10
    ([3.0, 0.0], 3.16227766, True)

    See Also
    --------
    enclosing_circle : the unweighted case.
    weber_point : the site minimising the total weighted distance.
    """
    vertices, offsets = region_rings(region)
    shown = None if vertices is None else (vertices, offsets)
    check_errors(errors)
    if groups is None:
        return MinimaxPoint(**_core.minimax_point_single(points, weights, vertices, offsets), region=shown)
    fields = _core.minimax_point_grouped(points, weights, groups, errors, vertices, offsets)
    return MinimaxPoints._from_core(fields, row_group=Grouped._row_groups_of(fields["labels"], groups),
                                    region=shown)
