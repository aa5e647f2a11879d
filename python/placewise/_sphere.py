"""Delaunay triangulation, Voronoi cells and minimum spanning tree of lon/lat points of any
extent, on the sphere (exported from :mod:`placewise.geodesic`).

Model: a point ``[lon, lat]`` is the unit vector with those spherical coordinates (geodetic
latitude taken as spherical). The triangulation is the 3-D convex hull of the unit vectors
(Brown 1979), the Voronoi vertices the hull faces' outward normals, the spanning tree
minimal for WGS84 geodesic lengths among the triangulation's edges. Lengths are WGS84 geodesic
lengths in metres between the points, and areas those of polygons with geodesic edges
through the computed vertices, in square metres; shared edges have the same vertices, so
the cells' areas add up to the ellipsoid's. Every result states this in ``model``.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._results import Result, _require_pandas, as_points
from .network import SpanningTree

__all__ = ["SPHERE_MODEL", "SphereCells", "SphereMesh", "SphereTree", "delaunay", "lonlat_polygon",
           "spanning_tree", "voronoi_cells"]

#: How the spherical results measure: stated in every result's ``model``.
SPHERE_MODEL = "sphere (lon/lat as spherical coordinates); WGS84 geodesic lengths and areas"

# Longest straight piece, degrees of arc, of an edge drawn in lon/lat.
_DRAW_STEP_DEGREES = 1.0


def _pole_safe(lon: np.ndarray, lat: np.ndarray, pole: float = 90.0) -> tuple[np.ndarray, np.ndarray]:
    """A ring with every vertex at a pole (latitude ``±pole``) replaced by two, at the
    longitudes of its neighbours (a pole has no longitude of its own)."""
    at_pole = np.abs(lat) == pole
    if not at_pole.any() or at_pole.all():
        return lon, lat
    out_lon: list[float] = []
    out_lat: list[float] = []
    n = len(lon)
    for k in range(n):
        if at_pole[k]:
            out_lon += [lon[(k - 1) % n], lon[(k + 1) % n]]
            out_lat += [lat[k], lat[k]]
        else:
            out_lon.append(lon[k])
            out_lat.append(lat[k])
    return np.asarray(out_lon), np.asarray(out_lat)


def _turn(lon: np.ndarray) -> float:
    """Degrees of longitude a ring of unwrapped longitudes (:func:`unwrapped`) covers once
    closed: 0 for a ring that does not wind round a pole, about +-360 for one that does
    (positive eastward)."""
    closing = lon[0] - lon[-1]
    closing -= 360.0 * np.round(closing / 360.0)
    return float(lon[-1] + closing - lon[0])


def lonlat_polygon(ring: ArrayLike) -> Any:
    """A ring of lon/lat vertices (counter-clockwise seen from outside the Earth, edges drawn
    straight in lon/lat) as a valid shapely polygon in [-180, 180] × [-90, 90]: longitudes
    are unwrapped along the ring, a ring winding round a pole is closed through it, and the
    result is split at the antimeridian into a MultiPolygon where it crosses it (as GeoJSON,
    RFC 7946 §3.1.9, asks).

    Examples
    --------
    >>> from placewise.geodesic import lonlat_polygon
    >>> lonlat_polygon([[170, 0], [-170, 0], [-170, 10], [170, 10]]).geom_type
    'MultiPolygon'
    >>> cap = lonlat_polygon([[0, 80], [120, 80], [-120, 80]])     # round the north pole
    >>> cap.geom_type, cap.bounds[3]
    ('Polygon', 90.0)
    """
    shape = lonlat_area(np.asarray(ring, dtype=np.float64).reshape(-1, 2))
    polygons = [g for g in getattr(shape, "geoms", [shape]) if g.geom_type == "Polygon" and g.area > 0]
    import shapely

    return polygons[0] if len(polygons) == 1 else shapely.MultiPolygon(polygons)


def unwrapped(lon: np.ndarray, half_turn: float = 180.0) -> np.ndarray:
    """Longitudes along a path with each step taken the short way round (within half a
    turn), so that the path runs on past ±180° instead of jumping back."""
    turn = 2.0 * half_turn
    steps = np.diff(lon)
    return lon[0] + np.concatenate([[0.0], np.cumsum(steps - turn * np.round(steps / turn))])


def _in_world(shape: Any, west: float, east: float, half_turn: float) -> Any:
    """The parts of a lon/lat shape drawn with unwrapped longitudes (between ``west`` and
    ``east``) brought into [-half_turn, half_turn], each whole turn cut off and shifted
    back: one piece per side of the antimeridian it crosses."""
    import shapely
    from shapely import affinity

    turn = 2.0 * half_turn
    world = shapely.box(-half_turn, -half_turn / 2, half_turn, half_turn / 2)
    first, last = int(np.floor((west + half_turn) / turn)), int(np.floor((east + half_turn) / turn))
    parts = [shapely.intersection(affinity.translate(shape, xoff=-k * turn), world) for k in range(first, last + 1)]
    return shapely.union_all([p for p in parts if not p.is_empty])


def lonlat_area(ring: np.ndarray, pole: float | None = None, outside: bool | None = None,
                half_turn: float = 180.0) -> Any:
    """The area a closed or open ring of lon/lat vertices (edges straight in lon/lat) bounds,
    valid in the world's box and cut at the antimeridian (a Polygon or MultiPolygon, empty
    when it has no area).

    A ring whose longitudes wind a whole turn holds a pole and is closed through it:
    ``pole`` (+1 north, -1 south), or — when None — the pole it runs round counter-clockwise
    seen from outside the Earth. A ring that does not wind bounds either its inside in
    lon/lat or, when ``outside`` is true, the rest of the world (a ring around both poles);
    when None, a clockwise ring is taken to bound the rest. ``half_turn`` is the longitude
    of the antimeridian in the ring's unit (180 for degrees, 200 for grads)."""
    import shapely

    lon, lat = _pole_safe(ring[:, 0].copy(), ring[:, 1].copy(), half_turn / 2)
    lon = unwrapped(lon, half_turn)
    closing = lon[0] - lon[-1]
    closing -= 2.0 * half_turn * np.round(closing / (2.0 * half_turn))
    turn = lon[-1] + closing - lon[0]
    coords = np.column_stack([lon, lat])
    winds = abs(turn) > half_turn
    if winds:
        if pole is None:
            # Counter-clockwise seen from outside: eastward round the north pole.
            pole = 1.0 if turn > 0 else -1.0
        end, top = lon[0] + turn, np.copysign(half_turn / 2, pole)
        coords = np.vstack([coords, [[end, lat[0]], [end, top], [lon[0], top]]])
    drawn = shapely.Polygon(coords)
    west, east = float(coords[:, 0].min()), float(coords[:, 0].max())
    merged = _in_world(shapely.make_valid(drawn), west, east, half_turn)
    if not winds and (outside if outside is not None else drawn.exterior.is_ccw is False):
        # The ring bounds the rest of the globe (a region holding both poles), which is
        # the world outside it.
        merged = shapely.difference(shapely.box(-half_turn, -half_turn / 2, half_turn, half_turn / 2), merged)
    return merged


def lonlat_line(path: np.ndarray, half_turn: float = 180.0) -> Any:
    """A path of lon/lat vertices (edges straight in lon/lat, each step the short way
    round) as a LineString in the world's box, or a MultiLineString cut at the antimeridian
    where it crosses it (as GeoJSON, RFC 7946 §3.1.9, asks)."""
    import shapely

    lon = unwrapped(np.asarray(path[:, 0], dtype=np.float64), half_turn)
    line = shapely.LineString(np.column_stack([lon, path[:, 1]]))
    if lon.min() >= -half_turn and lon.max() <= half_turn:
        return line
    parts = _in_world(line, float(lon.min()), float(lon.max()), half_turn)
    lines = [g for g in getattr(parts, "geoms", [parts]) if g.geom_type == "LineString" and g.length > 0]
    return lines[0] if len(lines) == 1 else shapely.MultiLineString(lines)


def _unit(lonlat: np.ndarray) -> np.ndarray:
    lon, lat = np.radians(lonlat[:, 0]), np.radians(lonlat[:, 1])
    return np.column_stack([np.cos(lat) * np.cos(lon), np.cos(lat) * np.sin(lon), np.sin(lat)])


def _arc_points(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Lon/lat points along the great-circle arc from ``a`` to ``b`` (lon/lat), ends included,
    at most ``_DRAW_STEP_DEGREES`` apart (drawing only: lengths come from the kernel)."""
    u, v = _unit(np.array([a, b], dtype=np.float64))
    angle = float(np.degrees(np.arctan2(np.linalg.norm(np.cross(u, v)), np.dot(u, v))))
    pieces = max(1, int(np.ceil(angle / _DRAW_STEP_DEGREES)))
    if pieces == 1 or angle == 0.0:
        return np.array([a, b], dtype=np.float64)
    t = np.radians(angle) * np.linspace(0.0, 1.0, pieces + 1)[:, None]
    w = v - u * np.dot(u, v)
    w /= np.linalg.norm(w)
    x = u * np.cos(t) + w * np.sin(t)
    out = np.column_stack([np.degrees(np.arctan2(x[:, 1], x[:, 0])), np.degrees(np.arcsin(np.clip(x[:, 2], -1, 1)))])
    out[0], out[-1] = a, b
    return out


def _arc_line(a: np.ndarray, b: np.ndarray) -> Any:
    """The great-circle arc as a LineString, or a MultiLineString split at the antimeridian."""
    return lonlat_line(_arc_points(a, b))


# --------------------------------------------------------------------------- Delaunay


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SphereMesh(Result):
    """The spherical Delaunay triangulation of lon/lat points, indexed by input row.

    Attributes
    ----------
    corners : ndarray of int64, shape (m, 3)
        Every triangle's corners (input rows), counter-clockwise seen from outside the Earth.
    across : ndarray of int64, shape (m, 3)
        ``across[t, k]``: the triangle across the edge opposite corner ``k``; -1 on the
        boundary (points within an open hemisphere).
    edges : ndarray of int64, shape (e, 2)
        Every edge once, as (smaller row, larger row).
    boundary : ndarray of int64, shape (b, 2)
        The outline of points within an open hemisphere (their spherical convex hull), as
        the triangles run it; empty when the points surround the centre of the Earth.
    representative : ndarray of int64, shape (n,)
        The vertex kept for each row: the row itself, the first row at the same place, or —
        for a point so close to another that rounding leaves it inside the hull — the nearest
        vertex.
    area : ndarray, shape (m,)
        Area of every triangle on the WGS84 ellipsoid (geodesic edges), square metres.
    outward_faces : int
        Hull faces that are not triangles: with every point in an open hemisphere, the faces
        whose plane has the Earth's centre on its outer side (their caps exceed a hemisphere).
    model : str
        How lengths and areas are measured (:data:`SPHERE_MODEL`).
    points : ndarray, shape (n, 2)
        The input lon/lat (not shown in the repr).

    ``to_frame()`` has one row per triangle: ``corner_a``, ``corner_b``, ``corner_c``,
    ``area_m2``; ``to_geodataframe()`` adds the triangle as a lon/lat Polygon (split at the
    antimeridian where needed).
    """

    corners: np.ndarray
    across: np.ndarray
    edges: np.ndarray
    boundary: np.ndarray
    representative: np.ndarray
    area: np.ndarray = dataclasses.field(repr=False)
    outward_faces: int = 0
    model: str = SPHERE_MODEL
    points: np.ndarray = dataclasses.field(repr=False, default_factory=lambda: np.empty((0, 2)))

    def _columns(self) -> dict[str, Any]:
        return {"corner_a": self.corners[:, 0], "corner_b": self.corners[:, 1], "corner_c": self.corners[:, 2],
                self._u("area", 2): self.area}

    def _geometry(self) -> Any:
        out = np.empty(len(self.corners), dtype=object)
        for t, c in enumerate(self.corners):
            ring = [_arc_points(self.points[c[k]], self.points[c[(k + 1) % 3]])[:-1] for k in range(3)]
            out[t] = lonlat_polygon(np.vstack(ring))
        return out

    def summary(self) -> Any:
        """One row: ``triangles``, ``edges``, ``area_m2`` (total), ``merged`` (rows kept
        as another row's vertex), ``outward_faces`` and ``model``."""
        return _require_pandas().DataFrame({
            "triangles": [len(self.corners)], "edges": [len(self.edges)], self._u("area", 2): [float(self.area.sum())],
            "merged": [int((self.representative != np.arange(len(self.representative))).sum())],
            "outward_faces": [self.outward_faces], "model": [self.model]})


def delaunay(points: ArrayLike, *, progress: bool | Callable[[int, int], object] = False) -> SphereMesh:
    """The spherical Delaunay triangulation of lon/lat points of any extent.

    The triangles are the faces of the 3-D convex hull of the points' unit vectors (Brown
    1979), built incrementally with exact orientation tests (Shewchuk 1997). Repeated
    points are merged (``representative``). When every point lies in an open hemisphere,
    the hull faces turned away from the Earth's centre are not triangles
    (``outward_faces``) and the triangulation has a ``boundary``.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        ``[longitude, latitude]`` degrees (longitudes within ±540).
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread: a step per
        point inserted into the hull, then one per triangle's area (the total grows once the
        triangles are known). Ctrl-C (or an exception from the callable) stops the run within
        a fraction of a second and raises ``KeyboardInterrupt``. A triangulation exists only
        once it is whole, so there is no partial answer and no time limit.

    Returns
    -------
    SphereMesh

    Raises
    ------
    DegenerateInputError
        Fewer than three distinct points, or every point on one great circle.

    Examples
    --------
    >>> import placewise as pw
    >>> octahedron = [[0, 0], [90, 0], [180, 0], [-90, 0], [0, 90], [0, -90]]
    >>> mesh = pw.geodesic.delaunay(octahedron)
    >>> len(mesh.corners), len(mesh.edges), round(float(mesh.area.sum()) / 1e12, 3)   # the globe
    (8, 12, 510.066)
    >>> pw.geodesic.delaunay([[0, 0], [10, 0], [0, 10]]).corners.tolist()   # three points
    [[0, 1, 2]]
    """
    f = _core.sphere_delaunay_single(points, progress)
    pts = as_points(points)  # after the kernel validated them
    return SphereMesh(f["corners"], f["across"], f["edges"], f["boundary"], f["representative"], f["area"],
                      int(f["outward_faces"]), SPHERE_MODEL, pts.copy(), unit="m")


# --------------------------------------------------------------------------- Voronoi


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SphereCells(Result):
    """Spherical Voronoi cells of lon/lat sites: every place on Earth goes to the site at
    the least great-circle distance, so the cells cover the globe.

    Attributes
    ----------
    vertices : ndarray, shape (v, 2)
        The Voronoi vertices, lon/lat (one per set of co-circular sites).
    vertex_offsets : ndarray of int64, shape (n + 1,)
    cell_vertices : ndarray of int64
        Site ``i``'s cell is ``vertices[cell_vertices[vertex_offsets[i]:vertex_offsets[i + 1]]]``,
        counter-clockwise seen from outside the Earth.
    ring_offsets : ndarray of int64, shape (n + 1,)
    rings : ndarray, shape (r, 2)
        Each cell's ring: its vertices with points inserted along edges longer than
        ``max_edge_degrees`` (on the edge's great circle).
    area : ndarray, shape (n,)
        Area of each cell on the WGS84 ellipsoid (geodesic edges through its ring), square
        metres; they add up to the ellipsoid's area.
    solid_angle : ndarray, shape (n,)
        Area of each cell on the unit sphere, steradians (they add up to 4π).
    model : str
        How lengths and areas are measured (:data:`SPHERE_MODEL`).
    points : ndarray, shape (n, 2)
        The sites (not shown in the repr).

    ``to_frame()`` has one row per site: ``x``, ``y`` (lon, lat), ``area_m2``,
    ``solid_angle_sr``; ``to_geodataframe()`` adds the cell as a lon/lat Polygon (a
    MultiPolygon where it crosses the antimeridian; a cell holding a pole is closed through
    it).
    """

    vertices: np.ndarray
    vertex_offsets: np.ndarray
    cell_vertices: np.ndarray
    ring_offsets: np.ndarray
    rings: np.ndarray = dataclasses.field(repr=False)
    area: np.ndarray = dataclasses.field(repr=False)
    solid_angle: np.ndarray = dataclasses.field(repr=False)
    model: str = SPHERE_MODEL
    points: np.ndarray = dataclasses.field(repr=False, default_factory=lambda: np.empty((0, 2)))

    def __len__(self) -> int:
        return len(self.area)

    def ring(self, i: int) -> np.ndarray:
        """Site ``i``'s ring, lon/lat (counter-clockwise, not closed)."""
        return self.rings[int(self.ring_offsets[i]):int(self.ring_offsets[i + 1])]

    def _columns(self) -> dict[str, Any]:
        return {"x": self.points[:, 0], "y": self.points[:, 1], self._u("area", 2): self.area,
                "solid_angle_sr": self.solid_angle}

    def _geometry(self) -> Any:
        out = np.empty(len(self), dtype=object)
        for i in range(len(self)):
            out[i] = lonlat_polygon(self.ring(i))
        return out

    def summary(self) -> Any:
        """One row: ``sites``, ``vertices``, ``area_m2`` (total) and ``model``."""
        return _require_pandas().DataFrame({"sites": [len(self)], "vertices": [len(self.vertices)],
                                            self._u("area", 2): [float(self.area.sum())], "model": [self.model]})


def voronoi_cells(sites: ArrayLike, *, max_edge_degrees: float = 1.0,
                  progress: bool | Callable[[int, int], object] = False) -> SphereCells:
    """Spherical Voronoi cells of lon/lat sites of any extent, covering the globe.

    The Voronoi vertices are the outward normals of the faces of the 3-D convex hull of the
    sites' unit vectors (each equidistant from its face's three sites and farther from every
    other); a cell's edges are arcs of the great circles bisecting it from its neighbours.

    Parameters
    ----------
    sites : array_like, shape (n, 2)
        ``[longitude, latitude]`` degrees, every site at its own place.
    max_edge_degrees : float, default 1
        Longest arc of a ring edge; longer Voronoi edges get points along their great circle
        (so the lon/lat polygons follow them), in (0, 90]. Between two ring points the
        polygon's edge is straight in lon/lat and departs from the great circle: by about
        150 m for a 1° step at 32° N (measured), four times less for each halving of the
        step. A point-in-polygon test on the rings can therefore disagree with the nearest
        site within that distance of a cell edge; lower the step where that matters. The
        cells' areas and the nearest-site assignments do not depend on it.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while the
        cells are made: ``3 n`` steps (a site inserted into the hull, a cell's ring, a cell's
        area). Ctrl-C (or an exception from the callable) stops the run within a fraction of
        a second and raises ``KeyboardInterrupt``. The cells exist only once all are made, so
        there is no partial answer and no time limit.

    Returns
    -------
    SphereCells

    Raises
    ------
    DegenerateInputError
        Repeated sites, fewer than three distinct sites or every site on one great circle.

    Examples
    --------
    >>> import placewise as pw
    >>> octahedron = [[0, 0], [90, 0], [180, 0], [-90, 0], [0, 90], [0, -90]]
    >>> cells = pw.geodesic.voronoi_cells(octahedron)
    >>> len(cells.vertices), round(float(cells.solid_angle[0]), 6)        # 8 vertices, 4π/6 each
    (8, 2.094395)
    >>> round(float(cells.area.sum()) / 1e12, 3)                         # the ellipsoid's area
    510.066
    """
    f = _core.sphere_voronoi_single(sites, max_edge_degrees, progress)
    pts = as_points(sites)  # after the kernel validated them
    return SphereCells(f["vertices"], f["vertex_offsets"], f["cell_vertices"], f["ring_offsets"], f["rings"],
                       f["area"], f["solid_angle"], SPHERE_MODEL, pts.copy(), unit="m")


# --------------------------------------------------------------------------- spanning tree


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SphereTree(SpanningTree):
    """A minimum spanning tree for WGS84 geodesic lengths (metres).

    The attributes and tables of :class:`placewise.SpanningTree` (lengths in metres), plus
    ``model``; ``to_geodataframe()`` draws each edge along its great circle (split at the
    antimeridian). The tree is minimal for geodesic lengths among the spherical Delaunay
    edges, which hold the ellipsoid's minimum spanning tree unless four points lie within
    the flattening's effect (about 0.3 %) of one circle.
    """

    model: str = SPHERE_MODEL

    def _geometry(self) -> Any:
        out = np.empty(len(self.end_a), dtype=object)
        for k, (a, b) in enumerate(zip(self.end_a, self.end_b, strict=True)):
            out[k] = _arc_line(self.points[a], self.points[b])
        return out


def spanning_tree(points: ArrayLike, *, progress: bool | Callable[[int, int], object] = False) -> SphereTree:
    """The minimum spanning tree of lon/lat points of any extent for WGS84 geodesic lengths.

    Kruskal's algorithm on the edges of the spherical Delaunay triangulation (the 3-D hull
    of the unit vectors, whose edge graph holds every great-circle MST and, but for points
    within the flattening's effect of co-circular, the ellipsoid's), each weighted by its
    WGS84 geodesic length (Karney 2013), metres; repeated points are joined by zero-length
    edges.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        ``[longitude, latitude]`` degrees (longitudes within ±540).
    progress : bool or callable
        True shows a progress bar on stderr; a callable is called as ``progress(done,
        total)`` from the calling thread: a step per point inserted into the hull, then one
        per Delaunay edge measured. Ctrl-C (or an exception from the callable) stops the run
        within a fraction of a second and raises ``KeyboardInterrupt``; there is no partial
        tree and no time limit.

    Returns
    -------
    SphereTree

    Examples
    --------
    >>> import placewise as pw
    >>> tree = pw.geodesic.spanning_tree([[179.5, 0], [-179.5, 0], [0, 0]])
    >>> tree.end_a.tolist(), tree.end_b.tolist()      # across the antimeridian first
    ([0, 0], [1, 2])
    >>> round(float(tree.edge_length[0]) / 1000, 3)
    111.319
    """
    f = _core.sphere_spanning_single(points, progress)
    pts = as_points(points)  # after the kernel validated them
    return SphereTree(f["end_a"], f["end_b"], f["length"], float(f["total"]), pts.copy(), SPHERE_MODEL, unit="m")
