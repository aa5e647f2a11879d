"""Delaunay triangulation of a point set, single and grouped."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._errors import check_errors
from .._results import Grouped, Result, as_points
from ._rows import _group_slice, _members


class _Triangles(Result):
    """Rows are triangles: the shared table of single and grouped meshes."""

    corners: np.ndarray
    area: np.ndarray
    points: np.ndarray

    def _columns(self) -> dict[str, Any]:
        return {
            "corner_a": self.corners[:, 0],
            "corner_b": self.corners[:, 1],
            "corner_c": self.corners[:, 2],
            self._u("area", 2): self.area,
        }

    def _geometry(self) -> Any:
        import shapely

        return shapely.polygons(self.points[self.corners])

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the triangles' edges over the input points, with a title, unit-labelled
        axes and a legend (new axes when ``ax`` is None); ``style`` goes to the edges.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import placewise as pw
        >>> ax = pw.delaunay([[0, 0], [1, 0], [0, 1], [1, 1]]).plot()
        >>> ax.get_title(), ax.get_legend() is not None
        ('Delaunay mesh · 2 triangles', True)
        """
        from ..plotting import draw_context, finish

        ax = self._plot_axes(ax)
        if len(self.corners):
            options = {"color": "#3b6ea8", "linewidth": 0.7, "zorder": 3, **style}
            lines = ax.triplot(self.points[:, 0], self.points[:, 1], self.corners, **options)
            lines[0].set_label("triangle edges")
        draw_context(ax, self.points, label="input points", color="#2e3440", zorder=4)
        count = len(self.corners)
        title = f"Delaunay mesh · {count} triangle{'s' * (count != 1)}"
        if isinstance(self, Grouped):
            title = f"Delaunay meshes of {len(self.labels)} groups · {count} triangles"
        return finish(ax, title, self.unit)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class DelaunayMesh(_Triangles, Result):
    """A Delaunay triangulation, indexed by input row.

    Attributes
    ----------
    corners : ndarray of int64, shape (m, 3)
        Every triangle's corners (input rows), counter-clockwise.
    across : ndarray of int64, shape (m, 3)
        ``across[t, k]`` is the triangle across the edge of ``t`` opposite its corner ``k``;
        -1 on the outline.
    outline : ndarray of int64, shape (h,)
        The boundary (convex hull) vertices, counter-clockwise from the smallest row, vertices
        lying on a boundary edge included.
    edges : ndarray of int64, shape (e, 2)
        Every edge once, as (smaller row, larger row).
    representative : ndarray of int64, shape (n,)
        The vertex kept for each input row: the row itself, or the first row at the same
        location when the input repeats it.
    area : ndarray, shape (m,)
        Area of every triangle (squared coordinate units).
    points : ndarray, shape (n, 2)
        The input coordinates (not shown in the repr).

    ``to_frame()`` has one row per triangle: ``corner_a``, ``corner_b``, ``corner_c``,
    ``area_<unit>2``; ``to_geodataframe()`` adds the triangle as a Polygon.
    """

    corners: np.ndarray
    across: np.ndarray
    outline: np.ndarray
    edges: np.ndarray
    representative: np.ndarray
    area: np.ndarray = dataclasses.field(repr=False)
    points: np.ndarray = dataclasses.field(repr=False)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class DelaunayMeshes(_Triangles, Grouped):
    """Delaunay triangulations of many groups, sorted by label.

    ``len``, iteration and ``meshes[label]`` give each group's :class:`DelaunayMesh` (as a
    separate call on the group's rows gives it). ``to_frame()`` has one row per triangle,
    with ``group`` and ``problem`` before the columns of :class:`DelaunayMesh`.

    Attributes
    ----------
    labels : ndarray, shape (G,)
        Sorted unique group labels.
    corners : ndarray of int64, shape (M, 3)
        Every group's triangles in label order, corners as rows of the whole input; group
        ``g``'s are ``corners[triangle_offsets[g]:triangle_offsets[g + 1]]``.
    across : ndarray of int64, shape (M, 3)
        The row of ``corners`` across each edge; -1 on an outline.
    triangle_offsets : ndarray of int64, shape (G + 1,)
    outline : ndarray of int64, shape (H,)
        Every group's outline (input rows); group ``g``'s is
        ``outline[outline_offsets[g]:outline_offsets[g + 1]]``.
    outline_offsets : ndarray of int64, shape (G + 1,)
    edges : ndarray of int64, shape (E, 2)
        Every group's edges (input rows, smaller first), by ``edge_offsets``.
    edge_offsets : ndarray of int64, shape (G + 1,)
    representative : ndarray of int64, shape (n,)
        The vertex kept for each input row (-1 for the rows of a skipped group).
    area : ndarray, shape (M,)
        Area of every triangle.
    """

    corners: np.ndarray
    across: np.ndarray
    triangle_offsets: np.ndarray
    outline: np.ndarray
    outline_offsets: np.ndarray
    edges: np.ndarray
    edge_offsets: np.ndarray
    representative: np.ndarray
    area: np.ndarray = dataclasses.field(repr=False)
    row_group: np.ndarray = dataclasses.field(repr=False)
    points: np.ndarray = dataclasses.field(repr=False)

    def _item(self, position: int) -> DelaunayMesh:
        rows = _members(self.row_group, position)
        triangles = _group_slice(self.triangle_offsets, position)
        across = self.across[triangles]
        return DelaunayMesh(
            np.searchsorted(rows, self.corners[triangles]),
            np.where(across >= 0, across - triangles.start, -1),
            np.searchsorted(rows, self.outline[_group_slice(self.outline_offsets, position)]),
            np.searchsorted(rows, self.edges[_group_slice(self.edge_offsets, position)]),
            np.searchsorted(rows, self.representative[rows]),
            self.area[triangles].copy(),
            self.points[rows],
            unit=self.unit,
        )

    def _row_groups(self) -> np.ndarray:
        return np.repeat(np.arange(len(self)), np.diff(self.triangle_offsets))


@overload
def delaunay(points: ArrayLike, *, groups: None = None, errors: Literal["raise", "skip"] = "raise",
             progress: bool | Callable[[int, int], object] = False) -> DelaunayMesh: ...


@overload
def delaunay(points: ArrayLike, *, groups: ArrayLike, errors: Literal["raise", "skip"] = "raise",
             progress: bool | Callable[[int, int], object] | None = False) -> DelaunayMeshes: ...


def delaunay(
    points: ArrayLike, *, groups: ArrayLike | None = None, errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] | None = False,
) -> DelaunayMesh | DelaunayMeshes:
    """The Delaunay triangulation of a point set.

    Every triangle's circumcircle holds no input point inside it. Built by a circle sweep
    (Biniaz & Dastghaibyfard 2012) with exact orientation and in-circle tests, so the answer
    is exact for any finite input, including far-offset coordinates. From 100,000 points the
    cloud is cut into vertical strips triangulated in parallel, and the seams between them
    are re-triangulated and verified. Cocircular sets (grids) get one of their Delaunay
    triangulations, the same one on every call and on every machine.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Planar coordinates. Repeated locations are allowed; see ``representative``.
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: triangulate every group's points on their own (in parallel) and return
        ``DelaunayMeshes``.
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without a triangulation
        (smallest label); ``"skip"`` keeps such a group with its ``problem`` and solves the rest.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread: a step per
        point, counted as the strip holding it is triangulated, or with ``groups`` the points
        of finished groups. Ctrl-C (or an exception from the callable) stops the run within a
        fraction of a second and raises ``KeyboardInterrupt`` (grouped: groups not begun are
        skipped, and a large group stops as an ungrouped run does). A triangulation exists
        only once it is whole, so there is no partial answer and no time limit.

    Returns
    -------
    DelaunayMesh, or DelaunayMeshes when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates or bad shapes; its ``group`` and ``row`` name the group label
        and input row concerned.
    DegenerateInputError
        With fewer than three distinct points, or when all points are collinear.

    Examples
    --------
    >>> import placewise as pw
    >>> mesh = pw.delaunay([[0, 0], [1, 0], [1, 1], [0, 1], [0, 0]])
    >>> len(mesh.corners), mesh.outline.tolist()   # a square: two triangles; row 4 repeats row 0
    (2, [0, 1, 2, 3])
    >>> mesh.representative.tolist()
    [0, 1, 2, 3, 0]
    >>> mesh.to_frame()
       corner_a  corner_b  corner_c  area_u2
    0         3         0         1      0.5
    1         2         3         1      0.5
    >>> pw.delaunay([[0, 0], [1, 1], [2, 2]])
    Traceback (most recent call last):
    ...
    placewise.DegenerateInputError: points: all points are collinear, so no triangle exists
    >>> meshes = pw.delaunay([[0, 0], [5, 5], [2, 0], [0, 2], [6, 6], [7, 7]],
    ...                      groups=[1, 2, 1, 1, 2, 2], errors="skip")
    >>> meshes.to_frame()[["group", "corner_a", "corner_b", "corner_c", "area_u2"]]
       group  corner_a  corner_b  corner_c  area_u2
    0      1       3.0       0.0       2.0      2.0
    1      2       NaN       NaN       NaN      NaN
    >>> meshes.problem[1]
    'group 2: points: all points are collinear, so no triangle exists'
    >>> meshes[1].corners.tolist()   # group 1 alone: rows 0, 2, 3 are its points 0, 1, 2
    [[2, 0, 1]]

    See Also
    --------
    voronoi_cells : the dual subdivision, clipped to a region.
    """
    check_errors(errors)
    if groups is None:
        return DelaunayMesh(**_core.delaunay_single(points, progress), points=as_points(points))
    return DelaunayMeshes._from_core(_core.delaunay_grouped(points, groups, errors, progress),
                                     points=as_points(points))
