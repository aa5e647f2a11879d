"""The smallest enclosing circle: Circle, Circles, enclosing_circle."""

from __future__ import annotations

import dataclasses
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._errors import check_errors
from .._results import Grouped, Result
from ._shapes import _GroupedWithSupport, _one, _Outlined, _plot_enclosing, _shown, _xy


class _CircleTable(_Outlined):
    center: Any
    radius: Any
    area: Any
    _u: Any

    def _outline(self) -> tuple[Any, Any, Any, Any]:
        return self.center, self.radius, self.radius, 0.0

    def _columns(self) -> dict[str, Any]:
        return {**_xy(self.center), self._u("radius"): _one(self.radius), self._u("area", 2): _one(self.area)}


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Circle(_CircleTable, Result):
    """The smallest circle containing a point set.

    Attributes
    ----------
    center : ndarray, shape (2,)
    radius : float
        The largest distance from ``center`` to an input point.
    area : float
        ``pi * radius**2``.
    support : ndarray of int, shape (k,)
        Input rows of the 1 (all points coincide), 2 (a diameter) or 3 points that define
        the circle.

    ``to_frame()`` gives one row: ``x``, ``y`` (the centre), ``radius_<unit>``,
    ``area_<unit>2``; ``to_geodataframe()`` adds the circle as a 128-gon circumscribing it.
    """

    center: np.ndarray
    radius: float
    area: float
    support: np.ndarray

    def plot(self, ax: Any = None, *, points: ArrayLike | None = None, **style: Any) -> Any:
        """Draw the circle and its centre, with the input ``points`` as context and the
        support rows ringed when given (the result does not keep the points); new axes when
        ``ax`` is None. ``style`` goes to the outline.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import placewise as pw
        >>> pts = [[0, 0], [2, 0], [1, 1]]
        >>> ax = pw.enclosing_circle(pts).plot(points=pts)
        >>> ax.get_title(), [line.get_label() for line in ax.lines]
        ('Smallest enclosing circle · radius 1 coordinate units', \
['demand points', 'support points (fix the shape)', 'smallest enclosing circle', 'centre'])
        >>> pw.enclosing_circle([[3, 3]]).plot().get_title()     # one point: radius 0
        'Smallest enclosing circle · radius 0 coordinate units'
        """
        return _plot_enclosing(self, ax, points, style, "smallest enclosing circle",
                               f"Smallest enclosing circle · radius {_shown(self, self.radius)}")


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Circles(_CircleTable, _GroupedWithSupport):
    """Smallest enclosing circles of many groups, sorted by label.

    ``len``, iteration and ``circles[label]`` give each group's :class:`Circle`;
    ``to_frame()`` has one row per group with the columns of :class:`Circle` after
    ``group`` and ``problem``.

    Attributes
    ----------
    labels : ndarray, shape (G,)
        Sorted unique group labels.
    center : ndarray, shape (G, 2)
    radius, area : ndarray, shape (G,)
    support_offsets, support_index : ndarray of int
        Every group's support rows (indices into the whole input) in CSR layout: group
        ``g``'s are ``support_index[support_offsets[g]:support_offsets[g + 1]]``;
        :meth:`support` gives them by label.
    """

    _single = Circle

    center: np.ndarray
    radius: np.ndarray
    area: np.ndarray

    def plot(self, ax: Any = None, *, points: ArrayLike | None = None, **style: Any) -> Any:
        """Draw every group's circle in the group's colour, with the input ``points`` (the
        whole input) as context and the support rows ringed when given."""
        return _plot_enclosing(self, ax, points, style, "smallest enclosing circle",
                               f"Smallest enclosing circles of {len(self.labels)} groups")


@overload
def enclosing_circle(
    points: ArrayLike, *, groups: None = None, seed: int | None = None, errors: Literal["raise", "skip"] = "raise"
) -> Circle: ...


@overload
def enclosing_circle(
    points: ArrayLike, *, groups: ArrayLike, seed: int | None = None, errors: Literal["raise", "skip"] = "raise"
) -> Circles: ...


def enclosing_circle(
    points: ArrayLike,
    *,
    groups: ArrayLike | None = None,
    seed: int | None = None,
    errors: Literal["raise", "skip"] = "raise",
) -> Circle | Circles:
    """The smallest circle containing every point.

    Welzl's (1991) move-to-front method on a seeded shuffle: expected linear time, and the
    same input gives the same answer. Arithmetic is relative to the points' own centre, so
    projected coordinates far from the origin lose nothing.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Planar coordinates (e.g. projected metres).
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: one circle per group, computed in parallel, returned as ``Circles``.
    seed : int, optional
        Seed of the shuffle, from 0 to 2**64 - 1 (default: a fixed seed). The circle is
        unique; the seed can only change which of several cocircular points are reported
        as support.
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without an answer (smallest
        label); ``"skip"`` keeps such a group with its ``problem`` and solves the rest.

    Returns
    -------
    Circle, or Circles when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, a shape other than (n, 2), no points, or a ``seed`` that
        is not an integer from 0 to 2**64 - 1. Its ``group`` and ``row`` attributes name
        the group label and input row concerned.

    Examples
    --------
    >>> import placewise as pw
    >>> c = pw.enclosing_circle([[0, 0], [4, 0], [2, 1]])   # obtuse: longest side is a diameter
    >>> c.center, c.radius, c.support
    (array([2., 0.]), 2.0, array([0, 1]))
    >>> pw.enclosing_circle([[3, 1]]).radius                 # one point: radius zero
    0.0
    >>> circles = pw.enclosing_circle([[0, 0], [2, 0], [5, 5], [5, 7]], groups=[1, 1, 2, 2])
    >>> len(circles), circles[2].radius, circles.support(2).tolist()
    (2, 1.0, [2, 3])
    >>> circles.to_frame()
       group problem    x    y  radius_u  area_u2
    0      1    None  1.0  0.0       1.0  3.141593
    1      2    None  5.0  6.0       1.0  3.141593

    See Also
    --------
    minimax_point : the weighted form (the site minimising the largest weighted distance).
    enclosing_ellipse : the smallest covering ellipse.
    """
    check_errors(errors)
    if groups is None:
        return Circle(**_core.enclosing_circle_single(points, seed))
    fields = _core.enclosing_circle_grouped(points, groups, seed, errors)
    return Circles._from_core(fields, row_group=Grouped._row_groups_of(fields["labels"], groups))
