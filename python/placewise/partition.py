"""Service areas: Delaunay triangulation, Voronoi cells clipped to a region, nearest-site allocation.

A planner splitting a region among sites needs each site's area (its Voronoi cell inside the
study region), which demand each site serves (the nearest site) and the triangulation that
links neighbouring sites.
"""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._core import InputError
from ._results import Result

__all__ = ["Allocation", "Triangulation", "VoronoiCells", "delaunay", "nearest_site", "voronoi_cells"]


def _coordinates(points: ArrayLike) -> np.ndarray:
    """The points as an (n, 2) float64 array, a view when no conversion is needed.

    Called only after the compiled kernel accepted the input, so the conversion succeeds.
    """
    return np.ascontiguousarray(points, dtype=np.float64).reshape(-1, 2).view()


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Triangulation(Result):
    """A Delaunay triangulation, indexed by input row.

    Attributes
    ----------
    triangles : ndarray of int64, shape (m, 3)
        Counter-clockwise vertex triples.
    adjacent : ndarray of int64, shape (m, 3)
        ``adjacent[t, k]`` is the triangle across the edge of ``t`` opposite its vertex ``k``;
        -1 on the hull.
    hull : ndarray of int64, shape (h,)
        Hull vertices, counter-clockwise from the smallest index (vertices lying on a hull
        edge included).
    edges : ndarray of int64, shape (e, 2)
        Every edge once, as (smaller index, larger index).
    representative : ndarray of int64, shape (n,)
        The vertex kept for each input row: the row itself, or the first row at the same
        location when the input repeats it.
    points : ndarray, shape (n, 2)
        The input coordinates (not shown in the repr).
    """

    triangles: np.ndarray
    adjacent: np.ndarray
    hull: np.ndarray
    edges: np.ndarray
    representative: np.ndarray
    points: np.ndarray = dataclasses.field(repr=False)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the triangles' edges (new axes when ``ax`` is None)."""
        ax = self._plot_axes(ax)
        ax.triplot(self.points[:, 0], self.points[:, 1], self.triangles, **{"color": "#3b6ea8", "linewidth": 0.6, **style})
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class VoronoiCells(Result):
    """Voronoi cells of sites clipped to a region, stored as rings of vertices.

    Cell ``i`` is the rings starting at the entries of ``parts`` that lie in
    ``[offsets[i], offsets[i + 1])``; ring ``r`` is ``vertices[parts[r]:parts[r + 1]]``.
    A cell in one piece without holes is a single counter-clockwise ring, so then
    ``vertices[offsets[i]:offsets[i + 1]]`` is the cell. A cell cut into pieces by the region
    stores each piece as a counter-clockwise exterior ring followed by its clockwise holes.
    Rings are not closed (the first vertex is not repeated). An empty cell has no rings.

    Attributes
    ----------
    vertices : ndarray, shape (V, 2)
    offsets : ndarray of int64, shape (n + 1,)
    parts : ndarray of int64, shape (R + 1,)
        Ring starts (and the end of the last ring) in ``vertices``.
    area : ndarray, shape (n,)
        Area of each cell (exteriors minus holes).
    sites : ndarray, shape (n, 2)
        The sites (not shown in the repr).
    """

    vertices: np.ndarray
    offsets: np.ndarray
    parts: np.ndarray
    area: np.ndarray
    sites: np.ndarray = dataclasses.field(repr=False)

    def __len__(self) -> int:
        return len(self.area)

    def pieces(self, i: int) -> list[list[np.ndarray]]:
        """Cell ``i`` as a list of pieces, each a list of rings (exterior first, then holes)."""
        lo, hi = int(self.offsets[i]), int(self.offsets[i + 1])
        first, last = np.searchsorted(self.parts, [lo, hi])
        pieces: list[list[np.ndarray]] = []
        for r in range(first, last):
            ring = self.vertices[self.parts[r]:self.parts[r + 1]]
            x, y = ring[:, 0], ring[:, 1]
            signed = 0.5 * float(np.dot(x - x[0], np.roll(y, -1) - y[0]) - np.dot(y - y[0], np.roll(x, -1) - x[0]))
            if signed > 0 or not pieces:
                pieces.append([ring])
            else:
                pieces[-1].append(ring)
        return pieces

    def to_shapely(self) -> np.ndarray:
        """One shapely Polygon or MultiPolygon per site (an empty Polygon for an empty cell).

        Requires shapely (the ``test`` extra installs it).
        """
        try:
            import shapely
        except ImportError as e:  # pragma: no cover - depends on the environment
            raise ImportError("VoronoiCells.to_shapely needs shapely (pip install shapely)") from e
        out = np.empty(len(self), dtype=object)
        for i in range(len(self)):
            polygons = [shapely.Polygon(rings[0], rings[1:]) for rings in self.pieces(i)]
            if not polygons:
                out[i] = shapely.Polygon()
            elif len(polygons) == 1:
                out[i] = polygons[0]
            else:
                out[i] = shapely.MultiPolygon(polygons)
        return out

    def to_geojson(self) -> dict[str, Any]:
        """A GeoJSON FeatureCollection: one feature per site with ``site`` and ``area`` properties.

        Rings are closed and exteriors counter-clockwise, as RFC 7946 asks; an empty cell
        has a ``null`` geometry.
        """

        def closed(ring: np.ndarray) -> list[list[float]]:
            return [*ring.tolist(), ring[0].tolist()]

        features = []
        for i in range(len(self)):
            pieces = [[closed(r) for r in rings] for rings in self.pieces(i)]
            if not pieces:
                geometry = None
            elif len(pieces) == 1:
                geometry = {"type": "Polygon", "coordinates": pieces[0]}
            else:
                geometry = {"type": "MultiPolygon", "coordinates": pieces}
            features.append(
                {"type": "Feature", "geometry": geometry, "properties": {"site": i, "area": float(self.area[i])}}
            )
        return {"type": "FeatureCollection", "features": features}

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Fill every cell (holes kept) and mark the sites (new axes when ``ax`` is None)."""
        from matplotlib.collections import PatchCollection
        from matplotlib.patches import PathPatch
        from matplotlib.path import Path

        from .plotting import site_colour

        ax = self._plot_axes(ax)
        patches, colours = [], []
        for i in range(len(self)):
            rings = [ring for rings in self.pieces(i) for ring in rings]
            if not rings:
                continue
            codes = [np.r_[Path.MOVETO, np.full(len(r) - 1, Path.LINETO), Path.CLOSEPOLY] for r in rings]
            verts = [np.vstack([r, r[:1]]) for r in rings]
            patches.append(PathPatch(Path(np.vstack(verts), np.concatenate(codes).astype(np.uint8))))
            colours.append(site_colour(i))
        options = {"facecolors": colours, "edgecolor": "white", "linewidth": 0.8, "alpha": 0.6, **style}
        ax.add_collection(PatchCollection(patches, **options))
        ax.plot(self.sites[:, 0], self.sites[:, 1], "k.", markersize=3)
        ax.autoscale_view()
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Allocation(Result):
    """Every demand point allocated to its nearest site.

    Attributes
    ----------
    index : ndarray of int64, shape (n,)
        The nearest site of each point (the smallest site index among equally near ones).
    distance : ndarray, shape (n,)
        Distance from each point to its site.
    load : ndarray, shape (k,)
        Summed weight of the points allocated to each site.
    cost : float
        Total weighted distance ``sum(w_i * distance_i)``.
    points, sites : ndarray
        The inputs (not shown in the repr).
    """

    index: np.ndarray
    distance: np.ndarray
    load: np.ndarray
    cost: float
    points: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the points coloured by their site and the sites as stars."""
        from .plotting import SITE_COLOURS

        ax = self._plot_axes(ax)
        options: dict[str, Any] = {"s": 4, "linewidths": 0, **style}
        if "color" not in options and "c" not in options:
            # One colour per site unless the caller chose one (matplotlib refuses both).
            options["c"] = np.asarray(SITE_COLOURS)[self.index % len(SITE_COLOURS)]
        ax.scatter(self.points[:, 0], self.points[:, 1], **options)
        ax.plot(self.sites[:, 0], self.sites[:, 1], "k*", markersize=10)
        return ax


def delaunay(points: ArrayLike) -> Triangulation:
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

    Returns
    -------
    Triangulation

    Raises
    ------
    InputError
        For NaN/inf coordinates or bad shapes.
    DegenerateInputError
        With fewer than three distinct points, or when all points are collinear.

    Examples
    --------
    >>> import placewise as pw
    >>> t = pw.delaunay([[0, 0], [1, 0], [1, 1], [0, 1], [0, 0]])
    >>> len(t.triangles), t.hull.tolist()   # a square: two triangles; row 4 repeats row 0
    (2, [0, 1, 2, 3])
    >>> t.representative.tolist()
    [0, 1, 2, 3, 0]
    >>> pw.delaunay([[0, 0], [1, 1], [2, 2]])
    Traceback (most recent call last):
    ...
    placewise.DegenerateInputError: points: all points are collinear, so no triangle exists

    See Also
    --------
    voronoi_cells : the dual subdivision, clipped to a region.
    """
    triangles, adjacent, hull, edges, representative = _core.delaunay_triangulation(points)
    return Triangulation(triangles, adjacent, hull, edges, representative, _coordinates(points))


def _region_rings(region: Any) -> tuple[np.ndarray | None, np.ndarray | None]:
    """A region as (vertices, ring offsets): exteriors and holes alike, even-odd inside."""
    if region is None:
        return None, None
    kind = getattr(region, "geom_type", None)
    if kind is not None:
        if kind == "Polygon":
            polygons = [region]
        elif kind == "MultiPolygon":
            polygons = list(region.geoms)
        else:
            raise InputError(f"region must be a Polygon, MultiPolygon or an (m, 2) ring; got a {kind}")
        rings = [
            np.asarray(ring.coords, dtype=np.float64)[:, :2]
            for polygon in polygons
            if not polygon.is_empty
            for ring in (polygon.exterior, *polygon.interiors)
        ]
    else:
        try:
            ring = np.asarray(region, dtype=np.float64)
        except (TypeError, ValueError) as e:
            raise InputError(f"region must be a Polygon, MultiPolygon or an (m, 2) ring: {e}") from None
        if ring.ndim != 2 or ring.shape[1] != 2:
            raise InputError(f"region ring must have shape (m, 2); got shape {ring.shape}")
        rings = [ring]
    offsets = np.zeros(len(rings) + 1, dtype=np.int64)
    np.cumsum([len(r) for r in rings], out=offsets[1:])
    vertices = np.concatenate(rings) if rings else np.empty((0, 2))
    return vertices, offsets


def voronoi_cells(sites: ArrayLike, region: Any = None) -> VoronoiCells:
    """Each site's Voronoi cell (the points closer to it than to any other site) inside a region.

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
        Default: the sites' bounding box grown by 10 % on every side.

    Returns
    -------
    VoronoiCells

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
    >>> pw.voronoi_cells([[5, 5]], region=[[0, 0], [10, 0], [10, 10]]).area.tolist()  # one site: the region
    [50.0]
    >>> pw.voronoi_cells([[0, 0], [0, 0]])
    Traceback (most recent call last):
    ...
    placewise.DegenerateInputError: sites: sites[1] repeats sites[0]; every site needs its own location

    See Also
    --------
    nearest_site : which site serves each demand point.
    delaunay : the triangulation dual to the cells.
    """
    vertices, offsets = _region_rings(region)
    out = _core.voronoi_cells_clipped(sites, vertices, offsets)
    return VoronoiCells(*out, _coordinates(sites))


def nearest_site(points: ArrayLike, sites: ArrayLike, weights: ArrayLike | None = None) -> Allocation:
    """Allocate every demand point to its nearest site.

    The sites go into an R*-tree (bulk loaded); the points are queried on all cores, read in
    place when they are a C-contiguous float64 array. Equally near sites go to the smaller
    site index.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations.
    sites : array_like, shape (k, 2)
        Site locations (repeats allowed; the first copy serves).
    weights : array_like, shape (n,), optional
        Finite, non-negative demand per point, not all zero. Default: all 1.

    Returns
    -------
    Allocation

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, empty points or sites, or bad weights.

    Examples
    --------
    >>> import placewise as pw
    >>> a = pw.nearest_site([[0, 0], [9, 0], [6, 0]], [[1, 0], [8, 0]], weights=[1, 1, 2])
    >>> a.index.tolist(), a.load.tolist(), a.cost
    ([0, 1, 1], [1.0, 3.0], 6.0)
    >>> pw.nearest_site([[0, 1]], [[1, 0], [-1, 0]]).index.tolist()  # a tie: the smaller index
    [0]

    See Also
    --------
    voronoi_cells : the region each site serves.
    """
    index, distance, load, cost = _core.nearest_site_allocation(points, sites, weights)
    return Allocation(index, distance, load, cost, _coordinates(points), _coordinates(sites))
