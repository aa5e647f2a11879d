"""Enclosing shapes: the worst-case view of a set of demand points.

The smallest circle covering a cloud, the site whose largest (weighted) trip is least, and
the smallest ellipse covering a cloud.
"""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._results import Result

__all__ = [
    "Circle",
    "Circles",
    "Ellipse",
    "Ellipses",
    "MinimaxPoint",
    "MinimaxPoints",
    "enclosing_circle",
    "enclosing_ellipse",
    "minimax_point",
]

_RING = np.linspace(0.0, 2.0 * np.pi, 181)


def _circle_xy(center: np.ndarray, radius: float) -> tuple[np.ndarray, np.ndarray]:
    return center[0] + radius * np.cos(_RING), center[1] + radius * np.sin(_RING)


def _ellipse_xy(center: np.ndarray, semi_axes: np.ndarray, angle: float) -> tuple[np.ndarray, np.ndarray]:
    a, b = semi_axes
    c, s = np.cos(angle), np.sin(angle)
    x, y = a * np.cos(_RING), b * np.sin(_RING)
    return center[0] + c * x - s * y, center[1] + s * x + c * y


def _support_of(offsets: np.ndarray, index: np.ndarray, g: int) -> np.ndarray:
    return index[offsets[g]:offsets[g + 1]]


_OUTLINE = {"color": "#3b6ea8", "linewidth": 1.4}
_MARK = {"marker": "+", "markersize": 10, "color": "#3b6ea8", "linestyle": "none"}


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Circle(Result):
    """The smallest circle containing a point set.

    Attributes
    ----------
    center : ndarray, shape (2,)
    radius : float
        The largest distance from ``center`` to an input point.
    support : ndarray of int, shape (k,)
        Indices of the 1 (all points coincide), 2 (a diameter) or 3 input points that
        define the circle.
    """

    center: np.ndarray
    radius: float
    support: np.ndarray

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the circle and mark its centre (new axes when ``ax`` is None)."""
        ax = self._plot_axes(ax)
        ax.plot(*_circle_xy(self.center, self.radius), **{**_OUTLINE, **style})
        ax.plot(*self.center, **_MARK)
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Circles(Result):
    """Smallest enclosing circles of many groups, sorted by label.

    Attributes
    ----------
    labels : ndarray, shape (G,)
        Sorted unique group labels.
    center : ndarray, shape (G, 2)
    radius : ndarray, shape (G,)
    support_offsets : ndarray of int, shape (G + 1,)
    support_index : ndarray of int
        Group ``g``'s support is ``support_index[support_offsets[g]:support_offsets[g + 1]]``
        (indices into the whole input).
    """

    labels: np.ndarray
    center: np.ndarray
    radius: np.ndarray
    support_offsets: np.ndarray
    support_index: np.ndarray

    def support(self, g: int) -> np.ndarray:
        """Support indices of the ``g``-th group (in label order)."""
        return _support_of(self.support_offsets, self.support_index, g)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw every group's circle."""
        ax = self._plot_axes(ax)
        for c, r in zip(self.center, self.radius):
            ax.plot(*_circle_xy(c, r), **{**_OUTLINE, "linewidth": 0.8, **style})
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class MinimaxPoint(Result):
    """The weighted minimax point (weighted Euclidean 1-center).

    Attributes
    ----------
    location : ndarray, shape (2,)
        The site minimising the largest weighted distance ``w_i * |x - a_i|``.
    radius : float
        That largest weighted distance.
    support : ndarray of int, shape (k,)
        Indices of the 1–3 points whose weighted distances fix the optimum (all equal
        ``radius``).
    """

    location: np.ndarray
    radius: float
    support: np.ndarray

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the site as a star (new axes when ``ax`` is None)."""
        ax = self._plot_axes(ax)
        ax.plot(*self.location, **{"marker": "*", "markersize": 14, "color": "crimson", "linestyle": "none", **style})
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class MinimaxPoints(Result):
    """Weighted minimax points of many groups, sorted by label.

    Attributes
    ----------
    labels : ndarray, shape (G,)
    location : ndarray, shape (G, 2)
    radius : ndarray, shape (G,)
    support_offsets : ndarray of int, shape (G + 1,)
    support_index : ndarray of int
        CSR layout as in :class:`Circles`.
    """

    labels: np.ndarray
    location: np.ndarray
    radius: np.ndarray
    support_offsets: np.ndarray
    support_index: np.ndarray

    def support(self, g: int) -> np.ndarray:
        """Support indices of the ``g``-th group (in label order)."""
        return _support_of(self.support_offsets, self.support_index, g)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw every group's site as a star."""
        ax = self._plot_axes(ax)
        ax.plot(self.location[:, 0], self.location[:, 1],
                **{"marker": "*", "markersize": 10, "color": "crimson", "linestyle": "none", **style})
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Ellipse(Result):
    """The minimum-area ellipse containing a point set.

    Attributes
    ----------
    center : ndarray, shape (2,)
    shape : ndarray, shape (2, 2)
        Symmetric positive definite ``A`` with ``(x - center) @ A @ (x - center) <= 1`` for
        every input point.
    semi_axes : ndarray, shape (2,)
        Semi-axis lengths, major first.
    angle : float
        Direction of the major axis in radians from +x, in (-pi/2, pi/2].
    area : float
    support : ndarray of int
        Indices of the hull vertices carrying the optimal dual weight (on the boundary).
    gap : float
        Certified bound on ``area / minimum_area - 1``.
    iterations : int
    converged : bool
        True when ``gap <= tol`` was reached.
    """

    center: np.ndarray
    shape: np.ndarray
    semi_axes: np.ndarray
    angle: float
    area: float
    support: np.ndarray
    gap: float
    iterations: int
    converged: bool

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the ellipse and mark its centre (new axes when ``ax`` is None)."""
        ax = self._plot_axes(ax)
        ax.plot(*_ellipse_xy(self.center, self.semi_axes, self.angle), **{**_OUTLINE, **style})
        ax.plot(*self.center, **_MARK)
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Ellipses(Result):
    """Minimum-area enclosing ellipses of many groups, sorted by label.

    Attributes
    ----------
    labels : ndarray, shape (G,)
    center : ndarray, shape (G, 2)
    shape : ndarray, shape (G, 2, 2)
    semi_axes : ndarray, shape (G, 2)
    angle, area : ndarray, shape (G,)
    support_offsets : ndarray of int, shape (G + 1,)
    support_index : ndarray of int
        CSR layout as in :class:`Circles`.
    gap : ndarray, shape (G,)
    iterations : ndarray, shape (G,)
    converged : ndarray of bool, shape (G,)
    """

    labels: np.ndarray
    center: np.ndarray
    shape: np.ndarray
    semi_axes: np.ndarray
    angle: np.ndarray
    area: np.ndarray
    support_offsets: np.ndarray
    support_index: np.ndarray
    gap: np.ndarray
    iterations: np.ndarray
    converged: np.ndarray

    def support(self, g: int) -> np.ndarray:
        """Support indices of the ``g``-th group (in label order)."""
        return _support_of(self.support_offsets, self.support_index, g)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw every group's ellipse."""
        ax = self._plot_axes(ax)
        for c, a, t in zip(self.center, self.semi_axes, self.angle):
            ax.plot(*_ellipse_xy(c, a, t), **{**_OUTLINE, "linewidth": 0.8, **style})
        return ax


def enclosing_circle(
    points: ArrayLike, *, groups: ArrayLike | None = None, seed: int | None = None
) -> Circle | Circles:
    """The smallest circle containing every point.

    Welzl's (1991) move-to-front method on a seeded shuffle: expected linear time, and the
    same input gives the same answer. Arithmetic is relative to the points' own centre, so
    projected coordinates far from the origin lose nothing.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Planar coordinates (e.g. projected metres).
    groups : array_like of int, shape (n,), optional
        Group labels: one circle per group, computed in parallel, returned as ``Circles``.
    seed : int, optional
        Seed of the shuffle (default: a fixed seed). The circle is unique; the seed can only
        change which of several cocircular points are reported as support.

    Returns
    -------
    Circle, or Circles when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, a shape other than (n, 2), or no points.

    Examples
    --------
    >>> import placewise as pw
    >>> c = pw.enclosing_circle([[0, 0], [4, 0], [2, 1]])   # obtuse: longest side is a diameter
    >>> c.center, c.radius, c.support
    (array([2., 0.]), 2.0, array([0, 1]))
    >>> pw.enclosing_circle([[3, 1]]).radius                 # one point: radius zero
    0.0

    See Also
    --------
    minimax_point : the weighted form (the site minimising the largest weighted distance).
    enclosing_ellipse : the smallest covering ellipse.
    """
    if seed is not None:
        seed = int(seed) & 0xFFFF_FFFF_FFFF_FFFF
    if groups is None:
        center, radius, support = _core.enclosing_circle_single(points, seed)
        return Circle(center, radius, support)
    return Circles(*_core.enclosing_circle_grouped(points, groups, seed))


def minimax_point(
    points: ArrayLike, weights: ArrayLike | None = None, *, groups: ArrayLike | None = None
) -> MinimaxPoint | MinimaxPoints:
    """The weighted minimax point: the site minimising ``max(w_i * |x - a_i|)``.

    Solved exactly by pivoting over bases of at most three points (Elzinga and Hearn 1972):
    the optimum of the current basis, the point of largest weighted distance from it, and
    the optimal basis of those at most four points, until every point is covered. Equal
    weights give the smallest enclosing circle's centre. Points of weight zero are ignored.

    Parameters
    ----------
    points : array_like, shape (n, 2)
    weights : array_like, shape (n,), optional
        Finite, non-negative, not all zero. Default: all 1.
    groups : array_like of int, shape (n,), optional
        Group labels: one site per group, returned as ``MinimaxPoints``.

    Returns
    -------
    MinimaxPoint, or MinimaxPoints when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, negative, non-finite, all-zero or wrong-length
        weights, or no points.

    Examples
    --------
    >>> import placewise as pw
    >>> m = pw.minimax_point([[0, 0], [3, 0]], [2, 1])   # divides the segment 1 : 2
    >>> m.location, m.radius
    (array([1., 0.]), 2.0)
    >>> pw.minimax_point([[0, 0], [9, 9]], [1, 0]).location   # zero weight: ignored
    array([0., 0.])

    See Also
    --------
    enclosing_circle : the unweighted case.
    weber_point : the site minimising the total weighted distance.
    """
    if groups is None:
        location, radius, support = _core.minimax_point_single(points, weights)
        return MinimaxPoint(location, radius, support)
    return MinimaxPoints(*_core.minimax_point_grouped(points, weights, groups))


def enclosing_ellipse(
    points: ArrayLike, *, tol: float = 1e-7, groups: ArrayLike | None = None
) -> Ellipse | Ellipses:
    """The minimum-area ellipse containing every point (the Löwner–John ellipse).

    Khachiyan's algorithm with the Todd–Yildirim (2007) away steps and the Kumar–Yildirim
    (2005) start, run on the convex hull's vertices only. The result carries a certified
    bound ``gap`` on its relative excess area.

    Parameters
    ----------
    points : array_like, shape (n, 2)
    tol : float
        Target bound on ``area / minimum_area - 1``; ``0 < tol < 1``.
    groups : array_like of int, shape (n,), optional
        Group labels: one ellipse per group, returned as ``Ellipses``.

    Returns
    -------
    Ellipse, or Ellipses when ``groups`` is given.

    Raises
    ------
    DegenerateInputError
        When there are fewer than three distinct points or all points are collinear (no
        ellipse of positive area exists).
    InputError
        For NaN/inf coordinates, bad shapes, no points or ``tol`` out of range.

    Examples
    --------
    >>> import placewise as pw
    >>> e = pw.enclosing_ellipse([[0, 0], [1, 0], [0, 1]], tol=1e-10)   # Steiner circumellipse
    >>> e.shape.round(6)
    array([[3. , 1.5],
           [1.5, 3. ]])
    >>> pw.enclosing_ellipse([[0, 0], [1, 1], [2, 2]])
    Traceback (most recent call last):
    ...
    placewise.DegenerateInputError: points: all points are collinear; no ellipse of positive area encloses them

    See Also
    --------
    enclosing_circle : the smallest covering circle.
    """
    if groups is None:
        return Ellipse(*_core.enclosing_ellipse_single(points, float(tol)))
    return Ellipses(*_core.enclosing_ellipse_grouped(points, groups, float(tol)))
