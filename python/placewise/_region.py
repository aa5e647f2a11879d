"""The one conversion of a region (study region or feasible region) to the compiled layout,
and the drawing of a feasible region in plots."""

from __future__ import annotations

from typing import Any

import numpy as np

from ._core import DegenerateInputError, InputError

__all__ = ["candidates_in_region", "draw_region", "region_rings"]


def region_rings(region: Any) -> tuple[np.ndarray | None, np.ndarray | None]:
    """A region as (vertices, ring offsets): exteriors and holes alike, even-odd inside."""
    if region is None:
        return None, None
    kind = getattr(region, "geom_type", None)
    if kind is not None and hasattr(kind, "iloc"):
        # A GeoSeries or GeoDataFrame (its geom_type is a Series): the region its rows make
        # together, in its coordinates as they are (these functions are planar).
        if len(region) == 0:
            raise InputError("region must be a Polygon, MultiPolygon or an (m, 2) ring; got an empty GeoSeries")
        region = region.union_all() if hasattr(region, "union_all") else region.unary_union
        kind = region.geom_type
    if kind is not None:
        if kind == "Polygon":
            polygons = [region]
        elif kind == "MultiPolygon":
            polygons = list(region.geoms)
        else:
            raise InputError(f"region must be a Polygon, MultiPolygon or an (m, 2) ring; got a {kind}")
        rings = []
        for p, polygon in enumerate(polygons):
            if polygon.is_empty:
                continue
            shell, *holes = (np.asarray(ring.coords, dtype=np.float64)[:, :2]
                             for ring in (polygon.exterior, *polygon.interiors))
            _check_holes_inside(shell, holes, p)
            rings += [shell, *holes]
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


def _check_holes_inside(shell: np.ndarray, holes: list[np.ndarray], polygon: int) -> None:
    """Refuse a hole of polygon ``polygon`` with a vertex outside its exterior ring.

    The compiled layout reads rings by the even-odd rule, where a hole outside its shell
    would count as one more piece of the region; only here is it known which ring is a hole.
    The test is the kernels' exact one on the hole's vertices (boundary included, so holes
    touching the shell pass); a hole whose vertices lie inside but whose edges leave the shell
    crosses it, which the kernels' crossing check refuses, as it does a shell it cannot read.
    """
    if not holes:
        return
    from . import _core

    vertices = np.concatenate(holes)
    try:
        inside = _core.region_covers(vertices, shell, np.array([0, len(shell)], dtype=np.int64))
    except InputError:
        return
    if inside.all():
        return
    first = int(np.flatnonzero(~inside)[0])
    hole = int(np.searchsorted(np.cumsum([len(h) for h in holes]), first, side="right"))
    x, y = (float(c) for c in vertices[first])
    error = DegenerateInputError(
        f"region: hole {hole} of polygon {polygon} is not inside its exterior ring (its vertex ({x!r}, {y!r}) lies "
        "outside it); a polygon's holes must lie inside its exterior")
    error.argument, error.group, error.row, error.detail = "region", None, None, None
    raise error


def draw_region(ax: Any, region: tuple[np.ndarray, np.ndarray] | None) -> None:
    """Outline a feasible region's rings (dashed, labelled once) on ``ax``."""
    if region is None:
        return
    from .plotting import INK

    vertices, offsets = region
    for r in range(len(offsets) - 1):
        ring = np.asarray(vertices[offsets[r]:offsets[r + 1]], dtype=np.float64)
        if len(ring) < 2:
            continue
        ring = np.vstack([ring, ring[:1]])
        ax.plot(ring[:, 0], ring[:, 1], color=INK, linestyle="--", linewidth=1.0, zorder=2,
                label="feasible region" if r == 0 else "_nolegend_")


def candidates_in_region(candidates: Any, region: Any,
                         fixed: Any = None) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]:
    """The candidate sites the region holds (boundary included, exact test), their rows, and
    the positions among them of the existing sites ``fixed`` (candidate rows), which stay
    wherever they lie (None without ``fixed``).

    ``candidates`` and ``fixed`` are checked as the models check them: shape ``(m, 2)``, at
    least one candidate, finite coordinates; ``fixed`` a one-dimensional sequence of distinct
    candidate rows. An ``InputError`` names the argument (and the row).

    Raises an ``InputError`` naming ``region`` when it holds none of the candidates.
    """
    from . import _core
    from ._results import as_points

    vertices, offsets = region_rings(region)
    if vertices is None or offsets is None:
        raise InputError("region must be given to filter candidates")
    inside = _core.region_covers(candidates, vertices, offsets)
    points = as_points(candidates)
    kept = None if fixed is None else _core.discrete_columns(fixed, "fixed", len(points))
    if not inside.any():
        error = InputError(f"region holds none of the {len(points)} candidates; every new site must lie in the "
                           "region")
        error.argument = "region"
        raise error
    if kept is not None:
        inside[kept] = True
    rows = np.flatnonzero(inside)
    return points[rows], rows, None if kept is None else np.searchsorted(rows, kept)
