"""The minimum-area enclosing ellipse: Ellipse, Ellipses, enclosing_ellipse."""

from __future__ import annotations

import dataclasses
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._errors import check_errors
from .._results import Grouped, Result
from ._shapes import _GroupedWithSupport, _one, _Outlined, _plot_enclosing, _shown, _xy


class _EllipseTable(_Outlined):
    center: Any
    semi_major: Any
    semi_minor: Any
    angle: Any
    area: Any
    relative_gap: Any
    iterations: Any
    converged: Any
    _u: Any

    def _outline(self) -> tuple[Any, Any, Any, Any]:
        return self.center, self.semi_major, self.semi_minor, self.angle

    def _columns(self) -> dict[str, Any]:
        return {
            **_xy(self.center),
            self._u("semi_major"): _one(self.semi_major),
            self._u("semi_minor"): _one(self.semi_minor),
            "angle_deg": _one(self.angle),
            self._u("area", 2): _one(self.area),
            "relative_gap": _one(self.relative_gap),
            "iterations": _one(self.iterations),
            "converged": _one(self.converged),
        }


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Ellipse(_EllipseTable, Result):
    """The minimum-area ellipse containing a point set.

    Attributes
    ----------
    center : ndarray, shape (2,)
    shape : ndarray, shape (2, 2)
        Symmetric positive definite ``A`` with ``(x - center) @ A @ (x - center) <= 1`` for
        every input point.
    semi_major, semi_minor : float
        Semi-axis lengths (``semi_major >= semi_minor``).
    angle : float
        Direction of the major axis in degrees counter-clockwise from the +x axis, in
        (-90, 90]; 0 for a circle (semi-axes equal to within ``relative_gap`` or 1e-9,
        where the direction is rounding noise).
    area : float
        ``pi * semi_major * semi_minor``.
    support : ndarray of int
        Input rows of the hull vertices carrying the optimal dual weight (on the boundary).
    relative_gap : float
        Certified bound on ``area / minimum_area - 1``.
    iterations : int
    converged : bool
        True when ``relative_gap <= tol`` was reached.

    ``to_frame()`` gives one row: ``x``, ``y`` (the centre), ``semi_major_<unit>``,
    ``semi_minor_<unit>``, ``angle_deg``, ``area_<unit>2``, ``relative_gap``,
    ``iterations``, ``converged``; ``to_geodataframe()`` adds the ellipse as a 128-gon
    circumscribing it.
    """

    center: np.ndarray
    shape: np.ndarray
    semi_major: float
    semi_minor: float
    angle: float
    area: float
    support: np.ndarray
    relative_gap: float
    iterations: int
    converged: bool

    def plot(self, ax: Any = None, *, points: ArrayLike | None = None, **style: Any) -> Any:
        """Draw the ellipse and its centre, with the input ``points`` as context and the
        support rows ringed when given (the result does not keep the points); new axes when
        ``ax`` is None. ``style`` goes to the outline.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import placewise as pw
        >>> pts = [[-2, 0], [2, 0], [0, 1], [0, -1]]
        >>> ax = pw.enclosing_ellipse(pts).plot(points=pts)
        >>> ax.get_legend() is not None and ax.get_xlabel()
        'x (coordinate units)'
        """
        return _plot_enclosing(self, ax, points, style, "smallest enclosing ellipse",
                               f"Smallest enclosing ellipse · semi-axes {_shown(self, self.semi_major)} and "
                               f"{_shown(self, self.semi_minor)}")


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Ellipses(_EllipseTable, _GroupedWithSupport):
    """Minimum-area enclosing ellipses of many groups, sorted by label.

    ``len``, iteration and ``ellipses[label]`` give each group's :class:`Ellipse`;
    ``to_frame()`` has one row per group with the columns of :class:`Ellipse` after
    ``group`` and ``problem``.

    Attributes
    ----------
    labels : ndarray, shape (G,)
    center : ndarray, shape (G, 2)
    shape : ndarray, shape (G, 2, 2)
    semi_major, semi_minor, angle, area : ndarray, shape (G,)
        ``angle`` in degrees counter-clockwise from the +x axis.
    support_offsets, support_index : ndarray of int
        Support rows in CSR layout as in :class:`Circles`; :meth:`support` gives a
        group's rows by label.
    relative_gap : ndarray, shape (G,)
    iterations : ndarray, shape (G,)
    converged : ndarray of bool, shape (G,)
    """

    _single = Ellipse

    center: np.ndarray
    shape: np.ndarray
    semi_major: np.ndarray
    semi_minor: np.ndarray
    angle: np.ndarray
    area: np.ndarray
    relative_gap: np.ndarray
    iterations: np.ndarray
    converged: np.ndarray

    def plot(self, ax: Any = None, *, points: ArrayLike | None = None, **style: Any) -> Any:
        """Draw every group's ellipse in the group's colour, with the input ``points`` (the
        whole input) as context and the support rows ringed when given."""
        return _plot_enclosing(self, ax, points, style, "smallest enclosing ellipse",
                               f"Smallest enclosing ellipses of {len(self.labels)} groups")


@overload
def enclosing_ellipse(
    points: ArrayLike, *, tol: float = 1e-7, groups: None = None, errors: Literal["raise", "skip"] = "raise"
) -> Ellipse: ...


@overload
def enclosing_ellipse(
    points: ArrayLike, *, tol: float = 1e-7, groups: ArrayLike, errors: Literal["raise", "skip"] = "raise"
) -> Ellipses: ...


def enclosing_ellipse(
    points: ArrayLike,
    *,
    tol: float = 1e-7,
    groups: ArrayLike | None = None,
    errors: Literal["raise", "skip"] = "raise",
) -> Ellipse | Ellipses:
    """The minimum-area ellipse containing every point (the Löwner–John ellipse).

    Khachiyan's algorithm with the Todd–Yildirim (2007) away steps and the Kumar–Yildirim
    (2005) start, run on the convex hull's vertices only. The result carries a certified
    bound ``relative_gap`` on its relative excess area.

    Parameters
    ----------
    points : array_like, shape (n, 2)
    tol : float
        Target bound on ``area / minimum_area - 1``; ``0 < tol < 1``.
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: one ellipse per group, returned as ``Ellipses``.
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without an answer (smallest
        label); ``"skip"`` keeps such a group (fewer than three distinct points, all
        collinear) with its ``problem`` and solves the rest.

    Returns
    -------
    Ellipse, or Ellipses when ``groups`` is given.

    Raises
    ------
    DegenerateInputError
        When there are fewer than three distinct points or all points are collinear (no
        ellipse of positive area exists).
    InputError
        For NaN/inf coordinates, bad shapes, no points or a ``tol`` that is not a number
        with ``0 < tol < 1``.

    Examples
    --------
    >>> import placewise as pw
    >>> e = pw.enclosing_ellipse([[0, 0], [1, 0], [0, 1]], tol=1e-10)   # Steiner circumellipse
    >>> e.shape.round(6)
    array([[3. , 1.5],
           [1.5, 3. ]])
    >>> round(e.angle, 6)      # major axis along the diagonal x = y
    -45.0
    >>> pw.enclosing_ellipse([[0, 0], [1, 1], [2, 2]])
    Traceback (most recent call last):
    ...
    placewise.DegenerateInputError: points: all points are collinear; no ellipse of positive area encloses them
    >>> box = [[0, 0], [4, 0], [4, 2], [0, 2], [9, 9]]   # a 4 x 2 box, and one lone point
    >>> ellipses = pw.enclosing_ellipse(box, groups=[1, 1, 1, 1, 2], tol=1e-10, errors="skip")
    >>> frame = ellipses.to_frame()
    >>> frame[["group", "semi_major_u", "semi_minor_u", "angle_deg"]].round(6)   # 4/√2, 2/√2
       group  semi_major_u  semi_minor_u  angle_deg
    0      1      2.828427      1.414214        0.0
    1      2           NaN           NaN        NaN
    >>> print(frame["problem"][1])
    group 2: points must hold at least 3 distinct points; got 1

    See Also
    --------
    enclosing_circle : the smallest covering circle.
    """
    check_errors(errors)
    if groups is None:
        return Ellipse(**_core.enclosing_ellipse_single(points, tol))
    fields = _core.enclosing_ellipse_grouped(points, groups, tol, errors)
    return Ellipses._from_core(fields, row_group=Grouped._row_groups_of(fields["labels"], groups))
