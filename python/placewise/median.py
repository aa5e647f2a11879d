"""The weighted Fermat–Weber point (geometric median): the best single site for demand."""

from __future__ import annotations

import dataclasses
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from . import _core
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

    ``to_frame()`` gives one row: ``x``, ``y``, ``cost_<unit>``, ``gap_<unit>``,
    ``relative_gap``, ``iterations``, ``converged``; ``to_geodataframe()`` adds the site as
    a Point.
    """

    location: np.ndarray
    cost: float
    gap: float
    iterations: int
    converged: bool

    @property
    def relative_gap(self) -> float:
        return self.gap / self.cost if self.cost > 0 else 0.0

    def _columns(self) -> dict[str, Any]:
        return {
            "x": [float(self.location[0])],
            "y": [float(self.location[1])],
            self._u("cost"): [self.cost],
            self._u("gap"): [self.gap],
            "relative_gap": [self.relative_gap],
            "iterations": [self.iterations],
            "converged": [self.converged],
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

    @property
    def relative_gap(self) -> np.ndarray:
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(self.cost > 0, self.gap / np.where(self.cost > 0, self.cost, 1.0), 0.0)

    def _item(self, position: int) -> WeberPoint:
        return WeberPoint(
            self.location[position].copy(),
            float(self.cost[position]),
            float(self.gap[position]),
            int(self.iterations[position]),
            bool(self.converged[position]),
            unit=self.unit,
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
        }

    def _geometry(self) -> Any:
        return _site_points(self.location)

    def plot(self, ax: Any = None, *, points: ArrayLike | None = None, **style: Any) -> Any:
        """Draw every group's site as a star in the group's colour, with the demand
        ``points`` as context when given (the result does not keep them)."""
        return _draw_weber(self, ax, points, style)


def _draw_weber(result: WeberPoint | WeberPoints, ax: Any, points: ArrayLike | None, style: dict[str, Any]) -> Any:
    from .plotting import draw_context, draw_sites, finish, quantity

    ax = result._plot_axes(ax)
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
) -> WeberPoint | WeberPoints:
    """The weighted Fermat–Weber point: the site minimising ``sum(w_i * d(x, a_i))``.

    Euclidean distances use Weiszfeld's iteration with the Vardi–Zhang (2001) step at data
    points, Kuhn's (1973) optimality test and safeguarded Newton steps; the answer carries a
    certified optimality ``gap``. Manhattan distances are solved exactly by weighted medians.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations (planar coordinates, e.g. projected metres).
    weights : array_like, shape (n,), optional
        Finite, non-negative demand per point, not all zero. Default: all 1.
    groups : array_like of int, shape (n,), optional
        Group labels: solve every group at once (in parallel) and return ``WeberPoints``.
    metric : {"euclidean", "manhattan"}
    tol : float
        Stop when the certified gap is at most ``tol * cost``.
    max_iter : int
        Largest number of passes over the points (at least 1).
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without an answer (smallest
        label); ``"skip"`` keeps such a group with its ``problem`` and solves the rest.

    Returns
    -------
    WeberPoint, or WeberPoints when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, negative, all-zero or wrong-length weights,
        an empty point set, or a ``tol`` / ``max_iter`` of the wrong type or range. Its
        ``group`` and ``row`` attributes name the group label and input row concerned.

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

    See Also
    --------
    minimax_point : the site minimising the largest weighted distance.
    p_median : the best p sites.
    """
    if groups is None:
        return WeberPoint(**_core.weber_point_single(points, weights, metric, tol, max_iter))
    return WeberPoints._from_core(_core.weber_point_grouped(points, weights, groups, metric, tol, max_iter, errors))
