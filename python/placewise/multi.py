"""Many sites at once: continuous p-median (multisource Weber) and p-center.

Where to put ``p`` depots so that the total weighted travel is least (p-median), or so
that the worst weighted trip is shortest (p-center).
"""

from __future__ import annotations

import dataclasses
import operator
from typing import Any, Literal

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._results import Result

__all__ = ["CenterPlan", "MedianPlan", "p_center", "p_median"]

_SEED_MASK = (1 << 64) - 1


def _seed(seed: int) -> int:
    """Any Python int as the 64-bit seed of the kernels (negative seeds wrap around)."""
    return operator.index(seed) & _SEED_MASK


def _as_points(points: ArrayLike) -> np.ndarray:
    """The (already validated) points as an (n, 2) float array, kept for plotting."""
    return np.asarray(points, dtype=float).reshape(-1, 2)


def _draw_plan(ax: Any, points: np.ndarray, sites: np.ndarray, assignment: np.ndarray, style: dict[str, Any]) -> None:
    """Points coloured by their site, a thin line from each point to its site, sites as stars."""
    from matplotlib.collections import LineCollection

    from .plotting import SITE_COLOURS

    palette = np.asarray(SITE_COLOURS)
    colours = palette[assignment % len(palette)]
    if len(points):
        segments = np.stack([points, sites[assignment]], axis=1)
        ax.add_collection(LineCollection(list(segments), colors=colours, linewidths=0.3, alpha=0.4))
        ax.scatter(points[:, 0], points[:, 1], **{"c": colours, "s": 6, "linewidths": 0, **style})
    ax.plot(sites[:, 0], sites[:, 1], "k*", markersize=12)
    ax.autoscale_view()


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class MedianPlan(Result):
    """A p-median plan: new sites and the allocation of every point.

    Attributes
    ----------
    sites : ndarray, shape (p, 2)
        The new sites.
    assignment : ndarray of int64, shape (n,)
        The nearest site of each point, indexing the new sites followed by the fixed ones
        (``0 .. p-1`` new, ``p .. p+f-1`` fixed).
    cost : float
        Total weighted distance ``sum(w_i * distance to the nearest site)``, fixed sites included.
    load : ndarray, shape (p + f,)
        Summed weight served by each site, in the order of ``assignment``.
    iterations : int
        Allocation–location rounds of Cooper's local step over the whole search.
    points, fixed : ndarray
        The demand points and the fixed sites (not shown in the repr).
    """

    sites: np.ndarray
    assignment: np.ndarray
    cost: float
    load: np.ndarray
    iterations: int
    points: np.ndarray = dataclasses.field(repr=False)
    fixed: np.ndarray = dataclasses.field(repr=False)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the points coloured by their site, their links to it, the new sites as black
        stars and the fixed sites as grey squares (new axes when ``ax`` is None)."""
        ax = self._plot_axes(ax)
        _draw_plan(ax, self.points, np.vstack([self.sites, self.fixed]), self.assignment, style)
        if len(self.fixed):
            ax.plot(self.fixed[:, 0], self.fixed[:, 1], "s", color="0.45", markersize=8)
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CenterPlan(Result):
    """A p-center plan: sites and the allocation of every point.

    Attributes
    ----------
    sites : ndarray, shape (p, 2)
    assignment : ndarray of int64, shape (n,)
        The nearest site of each point.
    radius : float
        The largest weighted distance ``w_i * distance`` from a point to its nearest site.
    optimal : bool
        True when the plan is proven optimal (instances of at most 10 distinct points of
        positive weight are solved exactly, as are ``p = 1`` and ``p`` = that count).
    iterations : int
        Allocation–minimax rounds performed.
    points : ndarray
        The demand points (not shown in the repr).
    """

    sites: np.ndarray
    assignment: np.ndarray
    radius: float
    optimal: bool
    iterations: int
    points: np.ndarray = dataclasses.field(repr=False)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the points coloured by their site, their links to it and the sites as stars
        (new axes when ``ax`` is None)."""
        ax = self._plot_axes(ax)
        _draw_plan(ax, self.points, self.sites, self.assignment, style)
        return ax


def p_median(
    points: ArrayLike,
    p: int,
    weights: ArrayLike | None = None,
    *,
    fixed: ArrayLike | None = None,
    seed: int = 0,
    effort: Literal["fast", "normal", "thorough"] = "normal",
) -> MedianPlan:
    """The best ``p`` sites for weighted demand: least total weighted distance to the nearest site.

    The continuous p-median (multisource Weber) problem. Cooper's alternating
    location–allocation (1964) — every point to its nearest site, every site to the
    Fermat–Weber point of its cluster — is the local step inside a global search: seeded
    multi-start, j-means jumps of one site to an unoccupied demand point (Hansen and
    Mladenović 2001) and variable neighbourhood search (Brimberg, Hansen, Mladenović and
    Taillard 2000). The same seed gives the same answer. ``p = 1`` without fixed sites is
    :func:`weber_point`.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations (planar coordinates, e.g. projected metres).
    p : int
        Number of new sites, at least 1 and at most the number of distinct points with
        positive weight.
    weights : array_like, shape (n,), optional
        Finite, non-negative demand per point, not all zero. Default: all 1.
    fixed : array_like, shape (f, 2), optional
        Existing sites that stay where they are and serve demand too; ``p`` counts only the
        new ones.
    seed : int
        Seed of the randomised search.
    effort : {"fast", "normal", "thorough"}
        Time against quality: "fast" is one short search; "thorough" runs more and longer
        searches and examines more jump targets on large inputs.

    Returns
    -------
    MedianPlan

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, negative, all-zero or wrong-length weights,
        ``p < 1`` or an unknown ``effort``.
    DegenerateInputError
        When fewer than ``p`` distinct points carry positive weight.

    Examples
    --------
    >>> import placewise as pw
    >>> plan = pw.p_median([[0, 0], [1, 0], [10, 0], [11, 0]], 2)
    >>> float(plan.cost)          # each pair's site anywhere between the two points
    2.0
    >>> plan.load
    array([2., 2.])
    >>> pw.p_median([[0, 0], [5, 5]], 2).cost     # one site per point: nothing to travel
    0.0
    >>> pw.p_median([[0, 0], [1, 0], [10, 0]], 1, fixed=[[10, 0]]).assignment
    array([0, 0, 1])

    See Also
    --------
    weber_point : the best single site.
    p_center : the ``p`` sites minimising the worst weighted trip.
    """
    sites, assignment, cost, load, iterations = _core.p_median_plan(
        points, operator.index(p), weights, fixed, _seed(seed), effort
    )
    fixed_array = np.empty((0, 2)) if fixed is None else _as_points(fixed)
    return MedianPlan(sites, assignment, cost, load, iterations, _as_points(points), fixed_array)


def p_center(points: ArrayLike, p: int, weights: ArrayLike | None = None, *, seed: int = 0) -> CenterPlan:
    """``p`` sites minimising the largest weighted distance from a point to its nearest site.

    The continuous (weighted) p-center problem. Drezner's alternating method (1984) — every
    point to its nearest site, every site to the minimax point of its cluster — with a
    hand-over of the points fixing the largest circle to neighbouring clusters, from 16
    seeded restarts. Instances with at most 10 distinct points of positive weight are solved
    exactly by branch and bound over all splits into ``p`` clusters. ``p = 1`` is
    :func:`minimax_point`.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations (planar coordinates).
    p : int
        Number of sites, at least 1 and at most the number of distinct points with positive
        weight.
    weights : array_like, shape (n,), optional
        Finite, non-negative weights, not all zero: the objective is ``max(w_i * d_i)``.
        Points of weight zero are allocated but do not pull the sites. Default: all 1.
    seed : int
        Seed of the restarts.

    Returns
    -------
    CenterPlan

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, bad weights or ``p < 1``.
    DegenerateInputError
        When fewer than ``p`` distinct points carry positive weight.

    Examples
    --------
    >>> import placewise as pw
    >>> square = [[0, 0], [2, 0], [0, 2], [2, 2]]
    >>> far = [[20, 0], [22, 0], [20, 2], [22, 2]]
    >>> plan = pw.p_center(square + far, 2)
    >>> round(plan.radius, 12), plan.optimal     # each square's circle: radius sqrt(2)
    (1.414213562373, True)
    >>> pw.p_center([[1, 1], [1, 1], [4, 5]], 2).radius   # a site on each distinct point
    0.0

    See Also
    --------
    minimax_point : the best single site for the worst trip.
    p_median : the ``p`` sites minimising the total weighted trip.
    """
    sites, assignment, radius, optimal, iterations = _core.p_center_plan(points, operator.index(p), weights, _seed(seed))
    return CenterPlan(sites, assignment, radius, optimal, iterations, _as_points(points))
