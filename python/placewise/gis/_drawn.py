"""Shapes of the working frame drawn in the caller's CRS: the one way out for every result
geometry of :mod:`placewise.gis` (cells, triangles, tree edges, circles, ellipses, sites).

A shape solved in the working frame has edges straight **there**; in the caller's CRS each
edge is a curve. Reprojecting only the vertices would draw the chord instead, hundreds of
metres off over a long edge, so a point near a cell's boundary would be joined to the wrong
cell. :func:`drawn` therefore puts vertices along every edge, in the working frame, until
the drawn shape lies within :data:`DRAW_TOLERANCE_M` of the true one (see
:func:`_densified`), then reprojects them.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import shapely
from pyproj import CRS, Transformer

#: Largest distance, metres in the working frame, between a drawn edge and the true one.
DRAW_TOLERANCE_M = 0.01

# Halvings of an edge at most (a piece 2**-60 of its length is far below the tolerance).
_MOST_HALVINGS = 60


def drawn(geoms: Any, work: Any, crs: Any) -> np.ndarray:
    """Working-frame geometries (in ``work``) as geometries in ``crs``, with edges kept
    within :data:`DRAW_TOLERANCE_M` of their course in the working frame."""
    geoms = np.asarray(geoms, dtype=object)
    if crs is None or work is None or CRS(crs).equals(work):
        return geoms
    source, target = CRS(work), CRS(crs)
    forward = Transformer.from_crs(source, target, always_xy=True)
    backward = Transformer.from_crs(target, source, always_xy=True)
    half_turn = _half_turn(target) if target.is_geographic else None
    paths: list[np.ndarray] = []
    recipes = [_recipe(g, paths) for g in geoms]
    ends = _densified(paths, forward, backward, DRAW_TOLERANCE_M / _metres_per_unit(source), half_turn)
    out = np.empty(len(geoms), dtype=object)
    for k, recipe in enumerate(recipes):
        out[k] = _built(recipe, ends, forward)
    return out


def _half_turn(crs: Any) -> float:
    """The antimeridian's longitude in a geographic CRS's unit: 180 degrees, 200 grads."""
    axes = crs.axis_info
    factor = float(axes[0].unit_conversion_factor) if axes else np.pi / 180.0  # radians per unit
    return float(np.pi / factor) if np.isfinite(factor) and factor > 0 else 180.0


def _metres_per_unit(crs: Any) -> float:
    axes = crs.axis_info
    factor = float(axes[0].unit_conversion_factor) if axes else 1.0
    return factor if np.isfinite(factor) and factor > 0 else 1.0


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
    until the piece is shorter than the tolerance itself."""
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
    return np.split(vertices, offsets[1:-1])


def _moved(transformer: Any, xy: np.ndarray) -> np.ndarray:
    x, y = transformer.transform(xy[:, 0], xy[:, 1])
    return np.column_stack([np.asarray(x, dtype=np.float64), np.asarray(y, dtype=np.float64)])


def _built(recipe: Any, ends: list[np.ndarray], forward: Any) -> Any:
    kind = recipe[0]
    if kind == "as is":
        return recipe[1]
    if kind == "points":
        return shapely.transform(recipe[1], lambda xy: _moved(forward, xy))
    if kind == "line":
        return shapely.LineString(ends[recipe[1]])
    if kind == "polygon":
        rings = [ends[i] for i in recipe[1]]
        return shapely.Polygon(rings[0], rings[1:])
    _, whole, parts = recipe
    built = [_built(part, ends, forward) for part in parts]
    if whole == "MultiPolygon":
        return shapely.MultiPolygon(built)
    if whole == "MultiLineString":
        return shapely.MultiLineString(built)
    return shapely.GeometryCollection(built)
