"""Catchments: Delaunay triangulation, Voronoi cells clipped to a region, nearest-site allocation.

A planner splitting a region among sites needs each site's catchment (its Voronoi cell inside
the study region), which demand each site serves (the nearest site) and the triangulation
that links neighbouring sites.

Every function takes ``groups=`` to run on many groups at once (in parallel, in Rust). In a
grouped result every index is a row of the whole input (never a position inside a group),
per-row arrays follow the input's row order, and ``result[label]`` is the single result of
that group: exactly what a separate call on the group's own rows gives, indexed by position
within the group.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._core import InputError
from ._errors import refuse_grouped_progress
from ._region import region_rings
from ._results import Grouped, Result, _require_pandas, as_points

__all__ = [
    "Allocation",
    "Allocations",
    "DelaunayMesh",
    "DelaunayMeshes",
    "PowerCellSets",
    "PowerCells",
    "VoronoiCellSets",
    "VoronoiCells",
    "delaunay",
    "nearest_site",
    "power_cells",
    "voronoi_cells",
]


def _members(row_group: np.ndarray, position: int) -> np.ndarray:
    """Input rows of the group at ``position`` (ascending)."""
    return np.flatnonzero(row_group == position)


def _group_slice(offsets: np.ndarray, position: int) -> slice:
    return slice(int(offsets[position]), int(offsets[position + 1]))


def _cell_rings_of(cells: Any, rows: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """The cells of ``rows`` cut out of a grouped result's shared arrays: their vertices,
    vertex offsets and ring offsets renumbered from 0, and the indices of their rings."""
    lo, hi = cells.offsets[rows], cells.offsets[rows + 1]
    first, last = np.searchsorted(cells.parts, lo), np.searchsorted(cells.parts, hi)
    rings = np.concatenate([np.arange(a, b) for a, b in zip(first, last)] + [np.empty(0, np.int64)])
    vertices = np.concatenate([cells.vertices[a:b] for a, b in zip(lo, hi)] + [np.empty((0, 2))])
    offsets = np.concatenate([[0], np.cumsum(hi - lo)]).astype(np.int64)
    parts = np.concatenate([[0], np.cumsum(cells.parts[rings + 1] - cells.parts[rings])]).astype(np.int64)
    return vertices, offsets, parts, rings


# --------------------------------------------------------------------------- Delaunay


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
        from .plotting import draw_context, finish

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
             progress: Literal[False] | None = False) -> DelaunayMeshes: ...


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
    groups : array_like of int, shape (n,), optional
        Group labels: triangulate every group's points on their own (in parallel) and return
        ``DelaunayMeshes``.
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without a triangulation
        (smallest label); ``"skip"`` keeps such a group with its ``problem`` and solves the rest.
    progress : bool or callable
        Without ``groups``: True shows a progress bar on stderr (tqdm's when installed, else a
        plain line); a callable is called as ``progress(done, total)`` from the calling
        thread: a step per point, counted as the strip holding it is triangulated. Ctrl-C (or
        an exception from the callable) stops the run within a fraction of a second and raises
        ``KeyboardInterrupt``. A triangulation exists only once it is whole, so there is no
        partial answer and no time limit. With ``groups``, an ``InputError`` naming it.

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
    refuse_grouped_progress(progress, groups)
    if groups is None:
        return DelaunayMesh(**_core.delaunay_single(points, progress), points=as_points(points))
    return DelaunayMeshes._from_core(_core.delaunay_grouped(points, groups, errors), points=as_points(points))


# --------------------------------------------------------------------------- Voronoi cells


class _Cells(Result):
    """Rows are sites, each with its cell stored as rings of vertices."""

    _title = "Voronoi cells"

    vertices: np.ndarray
    offsets: np.ndarray
    parts: np.ndarray
    area: np.ndarray
    exterior: np.ndarray
    sites: np.ndarray

    def pieces(self, i: int) -> list[list[np.ndarray]]:
        """Cell ``i`` as a list of pieces, each a list of rings (exterior first, then holes)."""
        lo, hi = int(self.offsets[i]), int(self.offsets[i + 1])
        first, last = np.searchsorted(self.parts, [lo, hi])
        pieces: list[list[np.ndarray]] = []
        for r in range(first, last):
            ring = self.vertices[self.parts[r]:self.parts[r + 1]]
            if self.exterior[r]:
                pieces.append([ring])
            else:
                pieces[-1].append(ring)
        return pieces

    def to_shapely(self) -> np.ndarray:
        """One shapely Polygon or MultiPolygon per site (an empty Polygon for an empty cell)."""
        import shapely

        out = np.empty(len(self.area), dtype=object)
        for i in range(len(self.area)):
            polygons = [shapely.Polygon(rings[0], rings[1:]) for rings in self.pieces(i)]
            if not polygons:
                out[i] = shapely.Polygon()
            elif len(polygons) == 1:
                out[i] = polygons[0]
            else:
                out[i] = shapely.MultiPolygon(polygons)
        return out

    def _properties(self, i: int) -> dict[str, Any]:
        return {"site": i, self._u("area", 2): float(self.area[i])}

    def to_geojson(self) -> dict[str, Any]:
        """A GeoJSON FeatureCollection: one feature per site with ``site`` (its row) and
        ``area_<unit>2`` properties.

        Rings are closed and exteriors counter-clockwise, as RFC 7946 asks; an empty cell
        has a ``null`` geometry.
        """

        def closed(ring: np.ndarray) -> list[list[float]]:
            return [*ring.tolist(), ring[0].tolist()]

        features = []
        for i in range(len(self.area)):
            pieces = [[closed(r) for r in rings] for rings in self.pieces(i)]
            if not pieces:
                geometry = None
            elif len(pieces) == 1:
                geometry = {"type": "Polygon", "coordinates": pieces[0]}
            else:
                geometry = {"type": "MultiPolygon", "coordinates": pieces}
            features.append({"type": "Feature", "geometry": geometry, "properties": self._properties(i)})
        return {"type": "FeatureCollection", "features": features}

    def _columns(self) -> dict[str, Any]:
        return {"x": self.sites[:, 0], "y": self.sites[:, 1], self._u("area", 2): self.area}

    def _geometry(self) -> Any:
        return self.to_shapely()

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Fill every cell in its site's colour (holes kept) and mark the sites, with a
        title, unit-labelled axes and a legend (new axes when ``ax`` is None); ``style``
        goes to the cells.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import shapely
        >>> import placewise as pw
        >>> ax = pw.voronoi_cells([[1, 1], [3, 1]], shapely.box(0, 0, 4, 2)).plot()
        >>> ax.get_title(), [t.get_text() for t in ax.get_legend().get_texts()]
        ('Voronoi cells of 2 sites', ['cell (colour = site)', 'sites'])
        """
        from matplotlib.collections import PatchCollection
        from matplotlib.patches import Patch, PathPatch
        from matplotlib.path import Path

        from .plotting import INK, finish, site_colour

        ax = self._plot_axes(ax)
        patches, colours = [], []
        for i in range(len(self.area)):
            rings = [ring for rings in self.pieces(i) for ring in rings]
            if not rings:
                continue
            codes = [np.r_[Path.MOVETO, np.full(len(r) - 1, Path.LINETO), Path.CLOSEPOLY] for r in rings]
            verts = [np.vstack([r, r[:1]]) for r in rings]
            patches.append(PathPatch(Path(np.vstack(verts), np.concatenate(codes).astype(np.uint8))))
            colours.append(site_colour(i))
        options = {"facecolors": colours, "edgecolor": "white", "linewidth": 0.8, "alpha": 0.6, **style}
        ax.add_collection(PatchCollection(patches, **options))
        # Sites as dark dots (one line: the cells carry the colour); the legend names both.
        ax.plot(self.sites[:, 0], self.sites[:, 1], linestyle="none", marker="o", markersize=4, color=INK,
                zorder=5, label="sites")
        ax.autoscale_view()
        finish(ax, f"{self._title} of {len(self.area)} sites", self.unit, legend=False)
        handles, labels = ax.get_legend_handles_labels()
        cell = Patch(facecolor=site_colour(0), alpha=0.6, edgecolor="white", label="cell (colour = site)")
        ax.legend([cell, *handles], [cell.get_label(), *labels], loc="best", fontsize=7.5, framealpha=0.85)
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class VoronoiCells(_Cells, Result):
    """Voronoi cells of sites clipped to a region, stored as rings of vertices.

    Cell ``i`` is the rings starting at the entries of ``parts`` that lie in
    ``[offsets[i], offsets[i + 1])``; ring ``r`` is ``vertices[parts[r]:parts[r + 1]]``.
    A cell in one piece without holes is a single counter-clockwise ring, so then
    ``vertices[offsets[i]:offsets[i + 1]]`` is the cell. A cell cut into pieces by the region
    stores each piece as a counter-clockwise exterior ring followed by its clockwise holes
    (``exterior`` tells which). Rings are not closed (the first vertex is not repeated). An
    empty cell has no rings.

    Attributes
    ----------
    vertices : ndarray, shape (V, 2)
    offsets : ndarray of int64, shape (n + 1,)
    parts : ndarray of int64, shape (R + 1,)
        Ring starts (and the end of the last ring) in ``vertices``.
    area : ndarray, shape (n,)
        Area of each cell (exteriors minus holes).
    exterior : ndarray of bool, shape (R,)
        Whether each ring is a piece's exterior (else a hole of the exterior before it).
    sites : ndarray, shape (n, 2)
        The sites (not shown in the repr).

    ``len(cells)`` is the number of sites. ``to_frame()`` has one row per site: ``x``,
    ``y``, ``area_<unit>2``; ``to_geodataframe()`` adds the cell as a Polygon or
    MultiPolygon (empty for an empty cell).
    """

    vertices: np.ndarray
    offsets: np.ndarray
    parts: np.ndarray
    area: np.ndarray
    exterior: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)

    def __len__(self) -> int:
        return len(self.area)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class VoronoiCellSets(_Cells, Grouped):
    """Voronoi cells of many groups of sites, each group clipped to the one region.

    The cells follow the sites' input rows: cell ``i`` (rings as in :class:`VoronoiCells`)
    belongs to site row ``i``; a skipped group's sites have empty cells and NaN area.
    ``len``, iteration and ``cells[label]`` give each group's :class:`VoronoiCells` (as a
    separate call on the group's sites gives them). ``to_frame()`` has one row per site in
    input order, with ``group`` and ``problem`` before the columns of :class:`VoronoiCells`.

    Attributes
    ----------
    labels : ndarray, shape (G,)
        Sorted unique group labels.
    vertices : ndarray, shape (V, 2)
    offsets : ndarray of int64, shape (k + 1,)
    parts : ndarray of int64, shape (R + 1,)
    area : ndarray, shape (k,)
        Area of each site's cell.
    exterior : ndarray of bool, shape (R,)
        Whether each ring is a piece's exterior.
    """

    vertices: np.ndarray
    offsets: np.ndarray
    parts: np.ndarray
    area: np.ndarray
    exterior: np.ndarray = dataclasses.field(repr=False)
    site_group: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)

    def _properties(self, i: int) -> dict[str, Any]:
        return {"group": int(self.labels[self.site_group[i]]), **super()._properties(i)}

    def _item(self, position: int) -> VoronoiCells:
        rows = _members(self.site_group, position)
        vertices, offsets, parts, rings = _cell_rings_of(self, rows)
        return VoronoiCells(vertices, offsets, parts, self.area[rows].copy(), self.exterior[rings], self.sites[rows],
                            unit=self.unit)

    def _row_groups(self) -> np.ndarray:
        return self.site_group


@overload
def voronoi_cells(
    sites: ArrayLike, region: Any = None, *, groups: None = None, errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] = False,
) -> VoronoiCells: ...


@overload
def voronoi_cells(
    sites: ArrayLike, region: Any = None, *, groups: ArrayLike, errors: Literal["raise", "skip"] = "raise",
    progress: Literal[False] | None = False,
) -> VoronoiCellSets: ...


def voronoi_cells(
    sites: ArrayLike,
    region: Any = None,
    *,
    groups: ArrayLike | None = None,
    errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] | None = False,
) -> VoronoiCells | VoronoiCellSets:
    """Each site's catchment: its Voronoi cell (the points closer to it than to any other
    site) inside a region.

    The cells tile the region: valid polygons whose areas sum to the region's area and that
    form a clean coverage (neighbouring cells share their vertices exactly: copies of a vertex
    closer than 2**-40 of the region's size are welded into one). A site outside the region
    keeps its clipped, possibly empty, cell. Cells come from the sites'
    Delaunay neighbours by half-plane cuts; a region that is not an axis-aligned rectangle is
    intersected with the cells that meet its boundary by exact integer-grid polygon clipping.

    Parameters
    ----------
    sites : array_like, shape (n, 2)
        Distinct site locations.
    region : shapely Polygon or MultiPolygon, or array_like of shape (m, 2), optional
        The study region: non-convex, with holes, in several parts; or one ring of vertices.
        Default: the sites' bounding box (of each group, with ``groups``) grown by 10 % on
        every side.
    groups : array_like of int, shape (n,), optional
        Group labels: split the region among every group's sites on their own (in parallel)
        and return ``VoronoiCellSets``.
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without cells (smallest label);
        ``"skip"`` keeps such a group with its ``problem`` and solves the rest.
    progress : bool or callable
        Without ``groups``: True shows a progress bar on stderr (tqdm's when installed, else a
        plain line); a callable is called as ``progress(done, total)`` from the calling
        thread: ``3n`` steps (a site triangulated, its cell cut, its cell written). Ctrl-C (or
        an exception from the callable) stops the run within a fraction of a second and raises
        ``KeyboardInterrupt``. Cells are only an answer when all are done, so there is no
        partial answer and no time limit. With ``groups``, an ``InputError`` naming it.

    Returns
    -------
    VoronoiCells, or VoronoiCellSets when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, or a region of another geometry type.
    DegenerateInputError
        For repeated sites, a region without area, or (without a region) sites that all
        coincide.

    Examples
    --------
    >>> import placewise as pw
    >>> cells = pw.voronoi_cells([[1, 1], [3, 1]], region=[[0, 0], [4, 0], [4, 2], [0, 2]])
    >>> cells.area.tolist()         # the bisector x = 2 halves the 4 x 2 box
    [4.0, 4.0]
    >>> cells.to_frame()
         x    y  area_u2
    0  1.0  1.0      4.0
    1  3.0  1.0      4.0
    >>> pw.voronoi_cells([[5, 5]], region=[[0, 0], [10, 0], [10, 10]]).area.tolist()  # one site: the region
    [50.0]
    >>> pw.voronoi_cells([[0, 0], [0, 0]])
    Traceback (most recent call last):
    ...
    placewise.DegenerateInputError: sites: sites[1] repeats sites[0]; every site needs its own location
    >>> sets = pw.voronoi_cells([[1, 1], [3, 3], [3, 1], [3, 3]], region=[[0, 0], [4, 0], [4, 2], [0, 2]],
    ...                         groups=[7, 8, 7, 8], errors="skip")
    >>> sets.to_frame()[["group", "x", "y", "area_u2"]]
       group    x    y  area_u2
    0      7  1.0  1.0      4.0
    1      8  3.0  3.0      NaN
    2      7  3.0  1.0      4.0
    3      8  3.0  3.0      NaN
    >>> sets.problem[1]     # rows are input rows, groups the labels
    'group 8: sites: sites[3] repeats sites[1]; every site needs its own location'

    See Also
    --------
    nearest_site : which site serves each demand point.
    delaunay : the triangulation dual to the cells.
    """
    refuse_grouped_progress(progress, groups)
    vertices, offsets = region_rings(region)
    if groups is None:
        return VoronoiCells(**_core.voronoi_cells_single(sites, vertices, offsets, progress), sites=as_points(sites))
    fields = _core.voronoi_cells_grouped(sites, groups, vertices, offsets, errors)
    return VoronoiCellSets._from_core(fields, sites=as_points(sites))


# --------------------------------------------------------------------------- power cells


class _PowerCells(_Cells):
    """Cells under the power distance, with each site's power and flags."""

    _title = "Power cells"
    powers: np.ndarray
    redundant: np.ndarray
    edges: np.ndarray

    @property
    def empty(self) -> np.ndarray:
        """Whether each site's cell is empty inside the region (redundant sites included)."""
        return np.asarray(self.offsets[1:] == self.offsets[:-1])

    def neighbours(self, i: int) -> np.ndarray:
        """Rows of the sites whose power cells share an edge with site ``i``'s in the plane
        (its neighbours in the regular triangulation), ascending."""
        e = self.edges
        return np.sort(np.concatenate([e[e[:, 0] == i, 1], e[e[:, 1] == i, 0]]))

    def adjacency(self) -> Any:
        """The neighbour relation as a symmetric ``scipy.sparse`` matrix of ones (n × n)."""
        from scipy import sparse

        n, e = len(self.area), self.edges
        ones = np.ones(2 * len(e))
        return sparse.csr_array((ones, (np.r_[e[:, 0], e[:, 1]], np.r_[e[:, 1], e[:, 0]])), shape=(n, n))

    def _properties(self, i: int) -> dict[str, Any]:
        return {**super()._properties(i), self._u("power", 2): float(self.powers[i]),
                "redundant": bool(self.redundant[i])}

    def _columns(self) -> dict[str, Any]:
        return {**super()._columns(), self._u("power", 2): self.powers, "empty": self.empty,
                "redundant": self.redundant, "neighbours": np.bincount(self.edges.ravel(), minlength=len(self.area))}


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class PowerCells(_PowerCells, Result):
    """Power cells of weighted sites clipped to a region, stored as rings of vertices (the
    layout of :class:`VoronoiCells`), with the regular triangulation they come from.

    Attributes
    ----------
    vertices, offsets, parts, area, exterior
        The cells, as in :class:`VoronoiCells`; an empty cell has no rings and area 0.
    redundant : ndarray of bool, shape (n,)
        The site's cell is empty in the whole plane (another site is no farther in power
        distance everywhere); its row is kept.
    corners : ndarray of int64, shape (m, 3)
        The regular triangulation's triangles (counter-clockwise site rows).
    across : ndarray of int64, shape (m, 3)
        The triangle across the edge opposite each corner, -1 on the outline.
    edges : ndarray of int64, shape (e, 2)
        Pairs of sites whose cells share an edge in the plane (plus diagonals of cocircular
        sites of equal power), smaller row first.
    powers : ndarray, shape (n,)
        The sites' powers (squared units).
    sites : ndarray, shape (n, 2)

    ``to_frame()`` has one row per site: ``x``, ``y``, ``area_<unit>2``,
    ``power_<unit>2``, ``empty`` (no area inside the region), ``redundant`` and
    ``neighbours`` (how many); ``to_geodataframe()`` adds the cell; ``summary()`` is one row
    of totals.
    """

    vertices: np.ndarray
    offsets: np.ndarray
    parts: np.ndarray
    area: np.ndarray
    redundant: np.ndarray
    exterior: np.ndarray = dataclasses.field(repr=False)
    corners: np.ndarray = dataclasses.field(repr=False)
    across: np.ndarray = dataclasses.field(repr=False)
    edges: np.ndarray = dataclasses.field(repr=False)
    powers: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)

    def __len__(self) -> int:
        return len(self.area)

    def summary(self) -> Any:
        """One row: ``sites``, ``empty`` and ``redundant`` counts, ``area_<unit>2`` (total)."""
        pd = _require_pandas()
        return pd.DataFrame({"sites": [len(self.area)], "empty": [int(self.empty.sum())],
                             "redundant": [int(self.redundant.sum())], self._u("area", 2): [float(self.area.sum())]})


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class PowerCellSets(_PowerCells, Grouped):
    """Power cells of many groups of sites, each group clipped to the one region.

    Laid out as :class:`VoronoiCellSets` (cells by input row; a skipped group's sites have
    empty cells, NaN area and ``redundant`` False); ``edges`` hold every group's
    neighbour pairs as input rows (group by group, ``edge_offsets``). ``cells[label]`` is the
    group's :class:`PowerCells` without its triangles (call :func:`power_cells` on the group
    for those).
    """

    vertices: np.ndarray
    offsets: np.ndarray
    parts: np.ndarray
    area: np.ndarray
    redundant: np.ndarray
    exterior: np.ndarray = dataclasses.field(repr=False)
    site_group: np.ndarray = dataclasses.field(repr=False)
    edges: np.ndarray = dataclasses.field(repr=False)
    edge_offsets: np.ndarray = dataclasses.field(repr=False)
    powers: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)

    def _properties(self, i: int) -> dict[str, Any]:
        return {"group": int(self.labels[self.site_group[i]]), **super()._properties(i)}

    def _item(self, position: int) -> PowerCells:
        rows = _members(self.site_group, position)
        vertices, offsets, parts, rings = _cell_rings_of(self, rows)
        # Edges name input rows; within the group they name positions.
        position_of = np.full(len(self.area), -1, dtype=np.int64)
        position_of[rows] = np.arange(len(rows))
        edges = position_of[self.edges[_group_slice(self.edge_offsets, position)]].reshape(-1, 2)
        none = np.empty((0, 3), dtype=np.int64)
        return PowerCells(vertices, offsets, parts, self.area[rows].copy(), self.redundant[rows].copy(),
                          self.exterior[rings], none, none.copy(), edges, self.powers[rows].copy(), self.sites[rows],
                          unit=self.unit)

    def _row_groups(self) -> np.ndarray:
        return self.site_group


@overload
def power_cells(
    sites: ArrayLike, powers: ArrayLike, region: Any = None, *, groups: None = None,
    errors: Literal["raise", "skip"] = "raise",
) -> PowerCells: ...


@overload
def power_cells(
    sites: ArrayLike, powers: ArrayLike, region: Any = None, *, groups: ArrayLike,
    errors: Literal["raise", "skip"] = "raise",
) -> PowerCellSets: ...


def power_cells(
    sites: ArrayLike,
    powers: ArrayLike,
    region: Any = None,
    *,
    groups: ArrayLike | None = None,
    errors: Literal["raise", "skip"] = "raise",
) -> PowerCells | PowerCellSets:
    """Each site's power cell inside a region: the points ``x`` where the power distance
    ``|x - site|**2 - power`` is least (Aurenhammer 1987).

    A site with a larger power draws its boundaries outward: the boundary between two sites
    is the straight line where their power distances agree, moved from the midpoint towards
    the site of smaller power. With equal powers the cells are the Voronoi cells. A site can
    have an empty cell (another site is no farther in power distance everywhere): it keeps
    its row, with no rings, area 0 and ``redundant`` True. Cells come from the regular
    (weighted Delaunay) triangulation, built with exact predicates; they are clipped to the
    region exactly as :func:`voronoi_cells` clips, so they tile it.

    The cells are a planning aid under this model; decisions that affect people defer to
    local regulations and licensed professional judgement.

    Parameters
    ----------
    sites : array_like, shape (n, 2)
        Distinct site locations.
    powers : array_like, shape (n,)
        Finite power of each site, in squared coordinate units (any sign; only differences
        matter: adding a constant to all changes nothing). A site of power ``r**2`` and one of
        power 0 split the line between them as circles of radius ``r`` and 0 would.
    region : shapely Polygon or MultiPolygon, or array_like of shape (m, 2), optional
        The study region, as for :func:`voronoi_cells`. Default: the sites' bounding box
        grown by 10 % on every side.
    groups : array_like of int, shape (n,), optional
        Group labels: each group's sites split the region on their own (in parallel); returns
        ``PowerCellSets``.
    errors : {"raise", "skip"}
        With ``groups``: fail on the first group without cells, or keep it with its problem.

    Returns
    -------
    PowerCells, or PowerCellSets when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates or powers (naming the row), or bad shapes.
    DegenerateInputError
        For two sites at one location (whatever their powers), a region without area, or
        (without a region) sites that all coincide.

    Examples
    --------
    >>> import placewise as pw
    >>> box = [[0, 0], [4, 0], [4, 2], [0, 2]]
    >>> cells = pw.power_cells([[1, 1], [3, 1]], [2.0, 0.0], region=box)
    >>> cells.area.tolist()      # the boundary moves from x = 2 to x = 2.5
    [5.0, 3.0]
    >>> cells.to_frame()[["x", "area_u2", "power_u2", "empty", "redundant"]]
         x  area_u2  power_u2  empty  redundant
    0  1.0      5.0       2.0  False      False
    1  3.0      3.0       0.0  False      False
    >>> hidden = pw.power_cells([[1, 1], [2, 1], [3, 1]], [4.0, -4.0, 4.0], region=box)
    >>> hidden.redundant.tolist(), hidden.area.tolist()   # the middle site is never least
    ([False, True, False], [4.0, 0.0, 4.0])
    >>> pw.power_cells([[1, 1], [1, 1]], [0.0, 1.0])
    Traceback (most recent call last):
    ...
    placewise.DegenerateInputError: sites: sites[1] repeats sites[0]; every site needs its own location

    See Also
    --------
    voronoi_cells : the cells without powers.
    """
    vertices, offsets = region_rings(region)
    w = np.asarray(powers, dtype=np.float64)
    if groups is None:
        fields = _core.power_cells_single(sites, w, vertices, offsets)
        return PowerCells(**fields, powers=w, sites=as_points(sites))
    fields = _core.power_cells_grouped(sites, w, groups, vertices, offsets, errors)
    return PowerCellSets._from_core(fields, powers=w, sites=as_points(sites))


# --------------------------------------------------------------------------- allocation


class _Assigned(Result):
    """Rows are demand points, each with its site."""

    assignment: np.ndarray
    distance: np.ndarray
    load: np.ndarray
    count: np.ndarray
    points: np.ndarray
    sites: np.ndarray

    def _columns(self) -> dict[str, Any]:
        return {"assignment": self.assignment, self._u("distance"): self.distance}

    def _geometry(self) -> Any:
        import shapely

        return shapely.points(self.points)

    def _site_columns(self) -> dict[str, Any]:
        return {"x": self.sites[:, 0], "y": self.sites[:, 1], "load": self.load, "points": self.count}

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the points coloured by their site and the sites as outlined stars in the same
        colours above them, with a title, unit-labelled axes and a legend (new axes when
        ``ax`` is None); ``style`` goes to the points.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import placewise as pw
        >>> ax = pw.nearest_site([[0, 0], [5, 5], [1, 0]], [[0, 1], [5, 4]]).plot()
        >>> ax.get_title(), [t.get_text() for t in ax.get_legend().get_texts()]
        ('Nearest-site allocation · 3 points, 2 sites', ['points (colour = their site)', 'sites'])
        """
        from .plotting import INK, draw_sites, finish, site_colours

        ax = self._plot_axes(ax)
        palette = np.asarray(site_colours(max(len(self.sites), 1)) + [INK])
        options: dict[str, Any] = {"s": 5, "linewidths": 0, "zorder": 3, "label": "points (colour = their site)",
                                   **style}
        if "color" not in options and "c" not in options:
            # One colour per site unless the caller chose one (matplotlib refuses both); a
            # point without a site (a skipped group) is drawn in ink.
            options["c"] = palette[np.where(self.assignment >= 0, self.assignment, -1)]
        ax.scatter(self.points[:, 0], self.points[:, 1], **options)
        draw_sites(ax, self.sites, list(palette[:-1]))
        title = f"Nearest-site allocation · {len(self.points)} points, {len(self.sites)} sites"
        if isinstance(self, Grouped):
            title = f"Nearest-site allocations of {len(self.labels)} groups · {len(self.points)} points"
        return finish(ax, title, self.unit)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Allocation(_Assigned, Result):
    """Every demand point allocated to its nearest site.

    Attributes
    ----------
    assignment : ndarray of int64, shape (n,)
        The nearest site (row of ``sites``) of each point; the smallest row among equally
        near sites.
    distance : ndarray, shape (n,)
        Distance from each point to its site.
    load : ndarray, shape (k,)
        Summed weight of the points in each site's catchment.
    count : ndarray of int64, shape (k,)
        Number of points in each site's catchment.
    cost : float
        Total weighted distance ``sum(w_i * distance_i)``.
    total_load : float
        Total weight of the points.
    points, sites : ndarray
        The inputs (not shown in the repr).

    ``to_frame()`` has one row per demand point: ``assignment``, ``distance_<unit>``
    (``to_geodataframe()`` adds the point); ``sites_frame()`` one row per site: ``x``,
    ``y``, ``load``, ``points``; ``summary()`` one row: ``cost_<unit>``, ``load``, ``points``
    (points) and ``sites``.
    """

    assignment: np.ndarray
    distance: np.ndarray
    load: np.ndarray
    count: np.ndarray
    cost: float
    total_load: float
    points: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)

    def sites_frame(self) -> Any:
        """One row per site: ``x``, ``y``, ``load``, ``points``."""
        return _require_pandas().DataFrame(self._site_columns())

    def summary(self) -> Any:
        """One row: ``cost_<unit>``, ``load`` (total weight), ``points`` (demand points), ``sites``."""
        return _require_pandas().DataFrame(
            {self._u("cost"): [self.cost], "load": [self.total_load], "points": [len(self.assignment)],
             "sites": [len(self.load)]}
        )


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Allocations(_Assigned, Grouped):
    """Nearest-site allocations of many groups: each group's points served by the sites of
    the same label.

    Per-point and per-site arrays follow the input rows; ``assignment`` names rows of the
    whole ``sites`` input. ``len``, iteration and ``allocations[label]`` give each group's
    :class:`Allocation` (as a separate call on the group's points and sites gives it).
    ``to_frame()`` has one row per demand point in input order, ``sites_frame()`` one row
    per site, ``summary()`` one row per group, each with ``group`` and ``problem`` first.

    Attributes
    ----------
    labels : ndarray, shape (G,)
        Sorted unique labels of the points and the sites.
    assignment : ndarray of int64, shape (n,)
        Site row of each point (-1 in a skipped group).
    distance : ndarray, shape (n,)
        Distance to it (NaN in a skipped group).
    load : ndarray, shape (k,)
        Summed weight of each site's catchment (NaN in a skipped group).
    count : ndarray of int64, shape (k,)
        Points in each site's catchment (0 in a skipped group).
    cost, total_load : ndarray, shape (G,)
        Per group (NaN when skipped).
    point_count, site_count : ndarray of int64, shape (G,)
        Points and sites of each group.
    """

    assignment: np.ndarray = dataclasses.field(repr=False)
    distance: np.ndarray = dataclasses.field(repr=False)
    point_group: np.ndarray = dataclasses.field(repr=False)
    load: np.ndarray = dataclasses.field(repr=False)
    count: np.ndarray = dataclasses.field(repr=False)
    site_group: np.ndarray = dataclasses.field(repr=False)
    cost: np.ndarray
    total_load: np.ndarray
    point_count: np.ndarray
    site_count: np.ndarray
    points: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)

    def _item(self, position: int) -> Allocation:
        rows = _members(self.point_group, position)
        site_rows = _members(self.site_group, position)
        return Allocation(
            np.searchsorted(site_rows, self.assignment[rows]),
            self.distance[rows],
            self.load[site_rows],
            self.count[site_rows],
            float(self.cost[position]),
            float(self.total_load[position]),
            self.points[rows],
            self.sites[site_rows],
            unit=self.unit,
        )

    def _row_groups(self) -> np.ndarray:
        return self.point_group

    def sites_frame(self) -> Any:
        """One row per site in input order: ``group``, ``problem``, ``x``, ``y``, ``load``, ``points``."""
        at = self.site_group
        return _require_pandas().DataFrame(
            {"group": self.labels[at], "problem": self.problem[at], **self._site_columns()}
        )

    def summary(self) -> Any:
        """One row per group: ``group``, ``problem``, ``cost_<unit>``, ``load``, ``points``, ``sites``."""
        return _require_pandas().DataFrame(
            {"group": self.labels, "problem": self.problem, self._u("cost"): self.cost, "load": self.total_load,
             "points": self.point_count, "sites": self.site_count}
        )


@overload
def nearest_site(
    points: ArrayLike,
    sites: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: None = None,
    site_groups: None = None,
    errors: Literal["raise", "skip"] = "raise",
) -> Allocation: ...


@overload
def nearest_site(
    points: ArrayLike,
    sites: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: ArrayLike,
    site_groups: ArrayLike,
    errors: Literal["raise", "skip"] = "raise",
) -> Allocations: ...


def nearest_site(
    points: ArrayLike,
    sites: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: ArrayLike | None = None,
    site_groups: ArrayLike | None = None,
    errors: Literal["raise", "skip"] = "raise",
) -> Allocation | Allocations:
    """Allocate every demand point to its nearest site.

    The sites go into an R*-tree (bulk loaded); the points are queried on all cores, read in
    place when they are a C-contiguous float64 array. Equally near sites go to the smaller
    site row.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations.
    sites : array_like, shape (k, 2)
        Site locations (repeats allowed; the first copy serves).
    weights : array_like, shape (n,), optional
        Finite, non-negative demand per point, not all zero. Default: all 1.
    groups, site_groups : array_like of int, shapes (n,) and (k,), optional
        Labels of the points and of the sites, given together: every group of points is
        served by the sites with the same label (in parallel), and ``Allocations`` is
        returned. A label with points but no sites is that group's problem; the sites of a
        label without points serve nobody (load and count 0).
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without an answer (smallest
        label); ``"skip"`` keeps such a group with its ``problem`` and solves the rest.

    Returns
    -------
    Allocation, or Allocations when ``groups`` and ``site_groups`` are given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, empty points or sites, bad weights, or only one
        of ``groups`` and ``site_groups``.

    Examples
    --------
    >>> import placewise as pw
    >>> a = pw.nearest_site([[0, 0], [9, 0], [6, 0]], [[1, 0], [8, 0]], weights=[1, 1, 2])
    >>> a.assignment.tolist(), a.load.tolist(), a.count.tolist(), a.cost
    ([0, 1, 1], [1.0, 3.0], [1, 2], 6.0)
    >>> a.summary()
       cost_u  load  points  sites
    0     6.0   4.0      3      2
    >>> pw.nearest_site([[0, 1]], [[1, 0], [-1, 0]]).assignment.tolist()  # a tie: the smaller row
    [0]
    >>> groups = pw.nearest_site([[0, 0], [2, 0], [9, 0]], [[0, 0], [8, 0]], groups=[1, 1, 2], site_groups=[1, 2])
    >>> groups.to_frame()[["group", "assignment", "distance_u"]]
       group  assignment  distance_u
    0      1           0         0.0
    1      1           0         2.0
    2      2           1         1.0
    >>> skipped = pw.nearest_site([[0, 0], [9, 0]], [[0, 0]], groups=[1, 2], site_groups=[1], errors="skip")
    >>> skipped.summary()[["group", "cost_u", "load", "points", "sites"]]
       group  cost_u  load  points  sites
    0      1     0.0   1.0      1      1
    1      2     NaN   NaN      1      0
    >>> skipped.problem[1]
    'group 2: sites must hold at least 1 point; got 0'

    See Also
    --------
    voronoi_cells : the catchment of each site as a region.
    """
    if groups is None or site_groups is None:
        if groups is not None or site_groups is not None:
            raise InputError("groups and site_groups must be given together (labels of the points and of the sites)")
        return Allocation(**_core.nearest_site_single(points, sites, weights), points=as_points(points),
                          sites=as_points(sites))
    fields = _core.nearest_site_grouped(points, sites, weights, groups, site_groups, errors)
    return Allocations._from_core(fields, points=as_points(points), sites=as_points(sites))

