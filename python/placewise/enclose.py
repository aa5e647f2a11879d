"""Enclosing shapes: the worst-case view of a set of demand points.

The smallest circle covering a cloud, the site whose largest (weighted) trip is least, and
the smallest ellipse covering a cloud.

Every result knows its rows (``to_frame()``, ``to_geodataframe(crs=...)``): one row per
point set (per group with ``groups=``), lengths suffixed with the coordinates' unit
(``radius_u``, ``semi_major_u``, ``area_u2``) and angles in degrees (``angle_deg``,
counter-clockwise from the +x axis). A circle's or ellipse's geometry is a 128-gon that
circumscribes the exact curve, so every point the curve covers is inside the polygon.
``support`` (the input rows that fix the shape) is ragged, so it is an attribute rather
than a column.
"""

from __future__ import annotations

import dataclasses
from typing import Any, ClassVar, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._region import draw_region, region_rings
from ._results import Grouped, Result

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

# Vertices of the polygon standing for a circle or ellipse. The regular N-gon whose
# vertices lie at radius r / cos(pi / N) has its edges tangent to the circle of radius r, so
# it contains the disk; an affine map keeps containment and tangency, so the same holds for
# the image of the unit circle's polygon under an ellipse's axes and rotation.
_VERTICES = 128
_UNIT_RING = np.exp(1j * np.linspace(0.0, 2.0 * np.pi, _VERTICES, endpoint=False)) / np.cos(np.pi / _VERTICES)


def _rings(center: Any, semi_major: Any, semi_minor: Any, angle_deg: Any) -> np.ndarray:
    """Closed rings (G, N + 1, 2) of the polygons circumscribing G ellipses (circles when the
    semi-axes are equal); ``angle_deg`` is the major axis, degrees counter-clockwise from +x."""
    center = np.asarray(center, dtype=np.float64).reshape(-1, 2)
    a = np.asarray(semi_major, dtype=np.float64).reshape(-1, 1)
    b = np.asarray(semi_minor, dtype=np.float64).reshape(-1, 1)
    turn = np.exp(1j * np.radians(np.asarray(angle_deg, dtype=np.float64).reshape(-1, 1)))
    ring = (a * _UNIT_RING.real + 1j * b * _UNIT_RING.imag) * turn + (center[:, :1] + 1j * center[:, 1:])
    ring = np.concatenate([ring, ring[:, :1]], axis=1)
    return np.stack([ring.real, ring.imag], axis=-1)


def _geometries(build: Any, coords: np.ndarray) -> np.ndarray:
    """``build(coords[g])`` for every row of ``coords`` (G, ..., 2) as one object array,
    None where a coordinate is missing (a group skipped with ``errors="skip"``)."""
    missing = ~np.isfinite(coords.reshape(len(coords), -1)).all(axis=1)
    out = np.empty(len(coords), dtype=object)
    if (~missing).any():
        out[~missing] = build(coords[~missing])
    return out


def _plot_enclosing(result: Any, ax: Any, points: ArrayLike | None, style: dict[str, Any], what: str,
                    title: str) -> Any:
    """The one drawing of every enclosing result: the demand ``points`` as context with the
    support rows ringed (when the caller passes the points, which results do not keep), each
    shape's outline or site in its group's colour, a title, unit-labelled axes and a legend.
    ``style`` goes to the outlines (circles, ellipses) or the sites (minimax points)."""
    from .plotting import INK, draw_context, draw_sites, finish, site_colours

    ax = result._plot_axes(ax)
    grouped = isinstance(result, Grouped)
    draw_region(ax, getattr(result, "region", None))
    if points is not None:
        xy = np.asarray(points, dtype=np.float64).reshape(-1, 2)
        draw_context(ax, xy)
        support = np.asarray(result.support_index if grouped else result.support, dtype=np.int64)
        if len(support):
            ax.plot(xy[support, 0], xy[support, 1], linestyle="none", marker="o", markersize=7,
                    markerfacecolor="none", markeredgecolor=INK, markeredgewidth=1.1, zorder=5,
                    label="support points (fix the shape)")
    colours = site_colours(len(result.labels) if grouped else 1)
    suffix = " (colour = group)" if grouped and len(colours) > 1 else ""
    if isinstance(result, _Outlined):
        centres = np.asarray(result._outline()[0], dtype=np.float64).reshape(-1, 2)
        drawn = 0
        for g, ring in enumerate(_rings(*result._outline())):
            if np.isfinite(ring).all():
                ax.plot(ring[:, 0], ring[:, 1], **{"color": colours[g], "linewidth": 1.6, "zorder": 4,
                                                   "label": what + suffix if not drawn else "_nolegend_", **style})
                drawn += 1
        ax.plot(centres[:, 0], centres[:, 1], linestyle="none", marker="+", markersize=10, color=INK, zorder=6,
                label="centre" if len(centres) == 1 else "centres")
    else:
        draw_sites(ax, result.location, colours, label=what + suffix, **style)
        if points is None:
            # A site alone gives degenerate limits: frame it with a unit margin.
            at = np.asarray(result.location, dtype=np.float64).reshape(-1, 2)
            at = at[np.isfinite(at).all(axis=1)]
            if len(at):
                ax.update_datalim(np.vstack([at.min(axis=0) - 1, at.max(axis=0) + 1]))
                ax.autoscale_view()
    return finish(ax, title, result.unit)


def _shown(result: Any, value: Any) -> str:
    from .plotting import quantity

    return quantity(value, result.unit)


def _xy(points: Any) -> dict[str, np.ndarray]:
    points = np.asarray(points, dtype=np.float64).reshape(-1, 2)
    return {"x": points[:, 0], "y": points[:, 1]}


def _one(value: Any) -> np.ndarray:
    return np.atleast_1d(np.asarray(value))


class _Outlined:
    """Table and drawing of results shaped as ellipses (circles included), shared by the
    single and grouped forms: ``_outline()`` gives (center, semi_major, semi_minor,
    angle in degrees) per row."""

    def _outline(self) -> tuple[Any, Any, Any, Any]:
        raise NotImplementedError

    def _geometry(self) -> Any:
        import shapely

        return _geometries(shapely.polygons, _rings(*self._outline()))


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class _GroupedWithSupport(Grouped):
    """Grouped results whose groups each name their support rows, in CSR layout; the single
    result of a group (``_single``) has the same field names, holding that group's values.

    Attributes
    ----------
    support_offsets : ndarray of int, shape (G + 1,)
    support_index : ndarray of int
        Group ``g``'s support rows (indices into the whole input) are
        ``support_index[support_offsets[g]:support_offsets[g + 1]]``; :meth:`support`
        gives them by label.
    """

    _single: ClassVar[type[Result]]

    support_offsets: np.ndarray = dataclasses.field(repr=False)
    support_index: np.ndarray = dataclasses.field(repr=False)
    # Group position of every input row (to give each group's result in its own row numbers).
    row_group: np.ndarray = dataclasses.field(repr=False, kw_only=True)

    def _support_at(self, position: int) -> np.ndarray:
        return self.support_index[self.support_offsets[position]:self.support_offsets[position + 1]].copy()

    def support(self, label: Any) -> np.ndarray:
        """Support rows (indices into the whole input) of the group labelled ``label``;
        empty for a group skipped with ``errors="skip"``."""
        return self._support_at(self.position(label))

    def _item(self, position: int) -> Any:
        # What a separate call on the group's rows gives: support as positions within the group.
        values: dict[str, Any] = {"support": self._within(self._support_at(position), self.row_group, position)}
        for field in dataclasses.fields(self._single):
            if field.name not in values and field.init and not field.kw_only:
                value = getattr(self, field.name)[position]
                values[field.name] = value.copy() if isinstance(value, np.ndarray) else value.item()
        return self._single(**values, unit=self.unit)


# ------------------------------------------------------------------------------- circle


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


# ------------------------------------------------------------------------------- minimax


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


# ------------------------------------------------------------------------------- ellipse


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
        (-90, 90]; 0 for a circle.
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


# ------------------------------------------------------------------------------- functions


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
    groups : array_like of int, shape (n,), optional
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
    if groups is None:
        return Circle(**_core.enclosing_circle_single(points, seed))
    fields = _core.enclosing_circle_grouped(points, groups, seed, errors)
    return Circles._from_core(fields, row_group=Grouped._row_groups_of(fields["labels"], groups))


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
    groups : array_like of int, shape (n,), optional
        Group labels: one site per group, returned as ``MinimaxPoints``.
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without an answer (smallest
        label); ``"skip"`` keeps such a group with its ``problem`` and solves the rest.
    region : shapely Polygon or MultiPolygon, or array_like of shape (m, 2), optional
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
    if groups is None:
        return MinimaxPoint(**_core.minimax_point_single(points, weights, vertices, offsets), region=shown)
    fields = _core.minimax_point_grouped(points, weights, groups, errors, vertices, offsets)
    return MinimaxPoints._from_core(fields, row_group=Grouped._row_groups_of(fields["labels"], groups),
                                    region=shown)


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
    groups : array_like of int, shape (n,), optional
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
    if groups is None:
        return Ellipse(**_core.enclosing_ellipse_single(points, tol))
    fields = _core.enclosing_ellipse_grouped(points, groups, tol, errors)
    return Ellipses._from_core(fields, row_group=Grouped._row_groups_of(fields["labels"], groups))
