"""Shapes of the working frame drawn in the caller's CRS: the one way out for every result
geometry of :mod:`placewise.gis` (cells, triangles, tree edges, circles, ellipses, sites).

A shape solved in the working frame has edges straight **there**; in the caller's CRS each
edge is a curve. Reprojecting only the vertices would draw the chord instead, hundreds of
metres off over a long edge, so a point near a cell's boundary would be joined to the wrong
cell. :func:`drawn` therefore puts vertices along every edge, in the working frame, until
the drawn shape lies within :data:`DRAW_TOLERANCE_M` of the true one (see
:func:`_densified`), then reprojects them.

Into a geographic CRS the shapes are also made valid there, as GeoJSON (RFC 7946 §3.1.9)
asks: a shape crossing the antimeridian is cut there into a MultiPolygon or
MultiLineString, and a ring holding a pole in the working frame is closed through the
pole (:func:`placewise._sphere.lonlat_area`, the one home of both rules).
"""

from __future__ import annotations

from typing import Any

import numpy as np
import shapely
from pyproj import CRS, Transformer

from .._sphere import lonlat_area, lonlat_line
from .._units import si_per_unit
from ._columns import turn_of

#: Largest distance, metres in the working frame, between a drawn edge and the true one.
DRAW_TOLERANCE_M = 0.01

# Halvings of an edge at most (a piece 2**-60 of its length is far below the tolerance).
_MOST_HALVINGS = 60


def drawn(geoms: Any, work: Any, crs: Any) -> np.ndarray:
    """Working-frame geometries (in ``work``) as geometries in ``crs``, with edges kept
    within :data:`DRAW_TOLERANCE_M` of their course in the working frame and, for a
    geographic ``crs``, cut at the antimeridian and closed through a pole they hold."""
    geoms = np.asarray(geoms, dtype=object)
    if crs is None or work is None or CRS(crs).equals(work):
        return geoms
    source, target = CRS(work), CRS(crs)
    forward = Transformer.from_crs(source, target, always_xy=True)
    backward = Transformer.from_crs(target, source, always_xy=True)
    # The antimeridian's longitude in the CRS's unit: 180 degrees, 200 grads.
    half_turn = turn_of(target) / 2 if target.is_geographic else None
    paths: list[np.ndarray] = []
    recipes = [_recipe(g, paths) for g in geoms]
    ends = _densified(paths, forward, backward, DRAW_TOLERANCE_M / si_per_unit(source), half_turn)
    poles = _poles_in(source, target, half_turn, backward) if half_turn is not None else []
    out = np.empty(len(geoms), dtype=object)
    for k, recipe in enumerate(recipes):
        out[k] = _built(recipe, paths, ends, forward, half_turn, poles)
    return out


def _recipe(geom: Any, paths: list[np.ndarray]) -> Any:
    """How to rebuild ``geom`` once its paths (rings, lines) are drawn: its paths are added
    to ``paths`` and named by their index there."""
    if geom is None or shapely.is_empty(geom):
        return ("as is", geom)
    kind = geom.geom_type
    if kind in ("Point", "MultiPoint"):
        return ("points", geom)
    if kind == "LineString":
        paths.append(shapely.get_coordinates(geom))
        return ("line", len(paths) - 1)
    if kind == "Polygon":
        rings = []
        for ring in (geom.exterior, *geom.interiors):
            paths.append(shapely.get_coordinates(ring))
            rings.append(len(paths) - 1)
        return ("polygon", rings)
    return ("parts", kind, [_recipe(part, paths) for part in geom.geoms])


def _densified(paths: list[np.ndarray], forward: Any, backward: Any, tol: float,
               half_turn: float | None) -> list[np.ndarray]:
    """Every path's vertices in the target CRS, with vertices added along its edges.

    An edge (straight in the working frame) is halved, in the working frame, while the
    middle of its drawn chord in the target CRS, brought back to the working frame, lies
    more than ``tol`` (working units) from the edge's line, and the edge is longer than
    ``tol``. For a smooth reprojection the chord strays most at its middle, by about
    ``k s**2 / 8`` for a piece ``s`` long and a curvature ``k`` of the mapped edge; near a
    pole a lon/lat chord of a short piece runs round the pole, and halving goes on there
    until the piece is shorter than the tolerance itself. Longitudes of a geographic target
    are unwrapped along each path (each step the short way round)."""
    if not paths:
        return []
    counts = np.array([len(p) - 1 for p in paths])
    start = np.concatenate([p[:-1] for p in paths]) if counts.sum() else np.empty((0, 2))
    stop = np.concatenate([p[1:] for p in paths]) if counts.sum() else np.empty((0, 2))
    path_of = np.repeat(np.arange(len(paths)), counts)
    key = np.concatenate([np.arange(c, dtype=np.float64) for c in counts]) if counts.sum() else np.empty(0)
    width = np.ones(len(start))
    a, b = _moved(forward, start), _moved(forward, stop)
    kept: list[tuple[np.ndarray, ...]] = []
    for _ in range(_MOST_HALVINGS):
        if len(start) == 0:
            break
        middle = (start + stop) / 2
        m = _moved(forward, middle)
        far = b.copy()
        if half_turn is not None:
            step = far[:, 0] - a[:, 0]
            far[:, 0] = a[:, 0] + step - 2 * half_turn * np.round(step / (2 * half_turn))
        chord = (a + far) / 2
        if half_turn is not None:
            chord[:, 0] = (chord[:, 0] + half_turn) % (2 * half_turn) - half_turn
        there = _moved(backward, chord)
        edge = stop - start
        length = np.hypot(edge[:, 0], edge[:, 1])
        off = there - start
        with np.errstate(invalid="ignore", divide="ignore"):
            stray = np.abs(edge[:, 0] * off[:, 1] - edge[:, 1] * off[:, 0]) / length
        stray = np.where(length > 0, stray, np.hypot(off[:, 0], off[:, 1]))
        split = ~(stray <= tol) & (length > tol) & np.isfinite(m).all(axis=1)
        keep = ~split
        kept.append((path_of[keep], key[keep], a[keep]))
        s = split
        half = width[s] / 2
        start, stop = np.concatenate([start[s], middle[s]]), np.concatenate([middle[s], stop[s]])
        a, b = np.concatenate([a[s], m[s]]), np.concatenate([m[s], b[s]])
        path_of = np.concatenate([path_of[s], path_of[s]])
        key = np.concatenate([key[s], key[s] + half])
        width = np.concatenate([half, half])
    if len(start):
        kept.append((path_of, key, a))
    which = np.concatenate([k[0] for k in kept])
    order = np.lexsort((np.concatenate([k[1] for k in kept]), which))
    firsts = np.concatenate([k[2] for k in kept])[order]
    which = which[order]
    # Every path's vertices in one array: its pieces' starts, then its own last vertex.
    lasts = _moved(forward, np.array([p[-1] for p in paths]))
    sizes = np.bincount(which, minlength=len(paths)) + 1
    offsets = np.concatenate([[0], np.cumsum(sizes)])
    vertices = np.empty((offsets[-1], 2))
    at_last = offsets[1:] - 1
    body = np.ones(offsets[-1], dtype=bool)
    body[at_last] = False
    vertices[body], vertices[at_last] = firsts, lasts
    if half_turn is not None:
        # Each step the short way round, within each path (unwrapped, in one pass).
        turn = 2 * half_turn
        steps = np.diff(vertices[:, 0])
        fix = -turn * np.round(steps / turn)
        fix[offsets[1:-1] - 1] = 0.0  # no step from one path to the next
        shift = np.concatenate([[0.0], np.cumsum(fix)])
        vertices[:, 0] += shift - np.repeat(shift[offsets[:-1]], sizes)
    return np.split(vertices, offsets[1:-1])


def _moved(transformer: Any, xy: np.ndarray) -> np.ndarray:
    x, y = transformer.transform(xy[:, 0], xy[:, 1])
    return np.column_stack([np.asarray(x, dtype=np.float64), np.asarray(y, dtype=np.float64)])


def _poles_in(source: Any, target: Any, half_turn: float, backward: Any) -> list[tuple[float, Any]]:
    """The poles (+1 north, -1 south) as points of the working frame, where it holds them."""
    out = []
    for sign in (1.0, -1.0):
        x, y = _moved(backward, np.array([[0.0, sign * half_turn / 2]]))[0]
        if np.isfinite(x) and np.isfinite(y):
            out.append((sign, shapely.Point(x, y)))
    return out


def _built(recipe: Any, paths: list[np.ndarray], ends: list[np.ndarray], forward: Any,
           half_turn: float | None, poles: list[tuple[float, Any]]) -> Any:
    kind = recipe[0]
    if kind == "as is":
        return recipe[1]
    if kind == "points":
        return shapely.transform(recipe[1], lambda xy: _moved(forward, xy))
    if kind == "line":
        path = ends[recipe[1]]
        return shapely.LineString(path) if half_turn is None else lonlat_line(path, half_turn)
    if kind == "polygon":
        rings = [ends[i] for i in recipe[1]]
        if half_turn is None:
            return shapely.Polygon(rings[0], rings[1:])
        if not all(np.isfinite(ring).all() for ring in rings):
            return shapely.Polygon(rings[0], rings[1:])  # a skipped group's placeholder
        if all(_plain(ring, half_turn) for ring in rings):
            # Within the world, winding round no pole: drawn as it is, when valid so.
            plain = shapely.Polygon(rings[0], rings[1:])
            if plain.is_valid:
                return plain
        shapes = []
        for i, ring in zip(recipe[1], rings, strict=True):
            held = [sign for sign, pole in poles if shapely.Polygon(paths[i]).contains(pole)]
            shapes.append(lonlat_area(ring, pole=held[0] if len(held) == 1 else None, outside=len(held) == 2,
                                      half_turn=half_turn))
        shape = shapes[0]
        if len(shapes) > 1:
            shape = shapely.difference(shape, shapely.union_all(shapes[1:]))
        return _polygonal(shape)
    _, whole, parts = recipe
    built = [_built(part, paths, ends, forward, half_turn, poles) for part in parts]
    if whole == "MultiPolygon":
        return _polygonal(shapely.union_all([g for g in built if g is not None]))
    if whole == "MultiLineString":
        lines = [line for g in built for line in getattr(g, "geoms", [g])]
        return shapely.MultiLineString(lines)
    return shapely.GeometryCollection(built)


def _plain(ring: np.ndarray, half_turn: float) -> bool:
    """True when a lon/lat ring (longitudes unwrapped) lies within the world's longitudes,
    winds round no pole and cannot hold both (it stays off one half of the latitudes)."""
    lon, lat = ring[:, 0], ring[:, 1]
    quarter = half_turn / 2
    return bool(lon.min() >= -half_turn and lon.max() <= half_turn and abs(lon[-1] - lon[0]) < half_turn
                and (lat.max() < quarter / 2 or lat.min() > -quarter / 2))


def _polygonal(shape: Any) -> Any:
    """A Polygon, or a MultiPolygon of several, from a shape's polygons with area."""
    polygons = [g for g in getattr(shape, "geoms", [shape]) if g.geom_type == "Polygon" and g.area > 0]
    return polygons[0] if len(polygons) == 1 else shapely.MultiPolygon(polygons)
