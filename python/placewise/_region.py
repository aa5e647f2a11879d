"""The one conversion of a region (study region or feasible region) to the compiled layout,
and the drawing of a feasible region in plots."""

from __future__ import annotations

from typing import Any

import numpy as np

from ._core import InputError

__all__ = ["candidates_in_region", "draw_region", "region_rings"]


def region_rings(region: Any) -> tuple[np.ndarray | None, np.ndarray | None]:
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


def candidates_in_region(candidates: Any, region: Any) -> tuple[np.ndarray, np.ndarray]:
    """The candidate sites the region holds (boundary included, exact test) and their rows.

    Raises an ``InputError`` naming ``region`` when it holds none of them.
    """
    from . import _core

    vertices, offsets = region_rings(region)
    if vertices is None or offsets is None:
        raise InputError("region must be given to filter candidates")
    points = np.ascontiguousarray(candidates, dtype=np.float64).reshape(-1, 2)
    inside = _core.region_covers(points, vertices, offsets)
    rows = np.flatnonzero(inside)
    if len(rows) == 0:
        error = InputError(f"region holds none of the {len(points)} candidates; every site must lie in the region")
        error.argument = "region"
        raise error
    return points[rows], rows
