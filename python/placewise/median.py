"""The weighted Fermat–Weber point (geometric median): the best single site for demand."""

from __future__ import annotations

import dataclasses
from typing import Any, Literal

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._results import Result

__all__ = ["WeberPoint", "WeberPoints", "weber_point"]


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class WeberPoint(Result):
    """A Fermat–Weber point with its optimality certificate.

    Attributes
    ----------
    location : ndarray, shape (2,)
        The site minimising the total weighted distance.
    cost : float
        Total weighted distance from ``location`` to the points.
    gap : float
        Proven upper bound on ``cost - optimum``.
    iterations : int
        Passes over the points used.
    converged : bool
        True when ``gap <= tol * cost`` was reached.
    """

    location: np.ndarray
    cost: float
    gap: float
    iterations: int
    converged: bool

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the site as a star on matplotlib axes (new axes when ``ax`` is None)."""
        ax = self._plot_axes(ax)
        ax.plot(*self.location, **{"marker": "*", "markersize": 14, "color": "crimson", "linestyle": "none", **style})
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class WeberPoints(Result):
    """Fermat–Weber points of many groups, sorted by label.

    Attributes
    ----------
    labels : ndarray, shape (G,)
        Sorted unique group labels.
    location : ndarray, shape (G, 2)
    cost, gap : ndarray, shape (G,)
    iterations : ndarray, shape (G,)
    converged : ndarray of bool, shape (G,)
    """

    labels: np.ndarray
    location: np.ndarray
    cost: np.ndarray
    gap: np.ndarray
    iterations: np.ndarray
    converged: np.ndarray

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw every group's site as a star."""
        ax = self._plot_axes(ax)
        ax.plot(self.location[:, 0], self.location[:, 1],
                **{"marker": "*", "markersize": 10, "color": "crimson", "linestyle": "none", **style})
        return ax


def weber_point(
    points: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: ArrayLike | None = None,
    metric: Literal["euclidean", "manhattan"] = "euclidean",
    tol: float = 1e-10,
    max_iter: int = 10_000,
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
        Largest number of passes over the points.

    Returns
    -------
    WeberPoint, or WeberPoints when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, negative, all-zero or wrong-length weights,
        or an empty point set.

    Examples
    --------
    >>> import placewise as pw
    >>> r = pw.weber_point([[0, 0], [4, 0], [2, 4]])
    >>> round(r.cost, 9)       # 4 + 2*sqrt(3): the Torricelli point
    7.464101615
    >>> pw.weber_point([[3, 1]]).location   # one point: the point itself
    array([3., 1.])
    >>> pw.weber_point([[0, 0], [2, 0], [0, 2]], groups=[1, 1, 2]).labels
    array([1, 2])

    See Also
    --------
    minimax_point : the site minimising the largest weighted distance.
    p_median : the best p sites.
    """
    if groups is None:
        location, cost, gap, iterations, converged = _core.weber_point_single(
            points, weights, metric, float(tol), int(max_iter)
        )
        return WeberPoint(location, cost, gap, iterations, converged)
    return WeberPoints(*_core.weber_point_grouped(points, weights, groups, metric, float(tol), int(max_iter)))
