"""Voronoi cells of sites clipped to a region, single and grouped."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._errors import check_errors
from .._region import region_rings
from .._results import Grouped, Result, as_points
from ._rows import _cell_rings_of, _members


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

        from ..plotting import INK, finish, site_colour

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
    progress: bool | Callable[[int, int], object] | None = False,
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
    region : shapely Polygon or MultiPolygon, GeoSeries or GeoDataFrame (its rows' union), or (m, 2) ring, optional
        The study region: non-convex, with holes, in several parts; or one ring of vertices.
        Rings may touch at vertices but not cross or overlap, and a polygon's holes lie
        inside its exterior.
        Default: the sites' bounding box (of each group, with ``groups``) grown by 10 % on
        every side; a nearly flat box grows across by at least 2^-20 of its growth along, so
        that sites almost on one line still get cells with area.
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: split the region among every group's sites on their own (in parallel)
        and return ``VoronoiCellSets``.
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without cells (smallest label);
        ``"skip"`` keeps such a group with its ``problem`` and solves the rest.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread: ``3n`` steps
        (a site triangulated, its cell cut, its cell written), or with ``groups`` the sites of
        finished groups. Ctrl-C (or an exception from the callable) stops the run within a
        fraction of a second and raises ``KeyboardInterrupt`` (grouped: groups not begun are
        skipped, and a large group stops as an ungrouped run does). Cells are only an answer
        when all are done, so there is no partial answer and no time limit.

    Returns
    -------
    VoronoiCells, or VoronoiCellSets when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, or a region of another geometry type.
    DegenerateInputError
        For repeated sites, a region without area, a region whose rings cross or overlap (a
        self-crossing ring, overlapping parts: naming the edges) or with a hole outside its
        exterior, or (without a region) sites that all coincide; for a region too thin for
        its length to be cut at double precision (the cells would not cover it); and for a
        site whose cell is narrower than 2^-40 of the region's size (naming the site and its
        nearest site's distance), which would come out empty.

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
    vertices, offsets = region_rings(region)
    check_errors(errors)
    if groups is None:
        return VoronoiCells(**_core.voronoi_cells_single(sites, vertices, offsets, progress), sites=as_points(sites))
    fields = _core.voronoi_cells_grouped(sites, groups, vertices, offsets, errors, progress)
    return VoronoiCellSets._from_core(fields, sites=as_points(sites))
