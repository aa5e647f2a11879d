"""Shared drawing helpers for result ``.plot`` methods, the demo and the notebooks.

matplotlib is an optional dependency: it is imported only inside these functions.

Examples
--------
>>> import matplotlib
>>> matplotlib.use("Agg")
>>> import shapely
>>> from placewise import plotting
>>> ax = plotting.draw_polygons(None, [shapely.box(0, 0, 2, 1).difference(shapely.box(0.5, 0.25, 1, 0.75))])
>>> len(ax.patches)
1
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from typing import Any

import numpy as np

__all__ = [
    "LAKE",
    "LAND",
    "SEA",
    "SITE_COLOURS",
    "axes",
    "draw_polygons",
    "draw_segments",
    "site_colour",
]

# The placewise palette: muted land and water, and strong, distinguishable site colours.
LAND = "#f3eee2"
SEA = "#dce8ee"
LAKE = "#bcd5e6"
INK = "#2e3440"
SITE_COLOURS = ("#1b6f6a", "#c9822b", "#75508a", "#b3473b", "#4d7a2e", "#2f5e9c", "#a4667d", "#7b6a4c")


def site_colour(i: int) -> str:
    """The colour of site ``i`` (cycling through :data:`SITE_COLOURS`).

    Examples
    --------
    >>> from placewise.plotting import SITE_COLOURS, site_colour
    >>> site_colour(len(SITE_COLOURS)) == site_colour(0)
    True
    """
    return SITE_COLOURS[int(i) % len(SITE_COLOURS)]


def axes(ax: Any = None, *, equal: bool = True) -> Any:
    """``ax``, or new matplotlib axes with an equal aspect ratio when it is None.

    Examples
    --------
    >>> import matplotlib
    >>> matplotlib.use("Agg")
    >>> from placewise.plotting import axes
    >>> axes().get_aspect()
    1.0
    """
    if ax is None:
        import matplotlib.pyplot as plt

        _, ax = plt.subplots()
    if equal:
        ax.set_aspect("equal")
    return ax


def _rings_path(polygon: Any) -> tuple[list[np.ndarray], list[np.ndarray]]:
    from matplotlib.path import Path

    vertices, codes = [], []
    for ring in [polygon.exterior, *polygon.interiors]:
        xy = np.asarray(ring.coords)[:, :2]
        if len(xy) < 3:
            continue
        c = np.full(len(xy), Path.LINETO, dtype=np.uint8)
        c[0], c[-1] = Path.MOVETO, Path.CLOSEPOLY
        vertices.append(xy)
        codes.append(c)
    return vertices, codes


def draw_polygons(ax: Any, geoms: Iterable[Any], **style: Any) -> Any:
    """Draw shapely Polygons / MultiPolygons (holes kept) as one patch each.

    ``style`` goes to ``matplotlib.patches.PathPatch`` (``facecolor``, ``edgecolor``,
    ``linewidth``, ``alpha``, …); a ``facecolors`` sequence colours the geometries one by one.

    Examples
    --------
    >>> import matplotlib
    >>> matplotlib.use("Agg")
    >>> import shapely
    >>> from placewise.plotting import draw_polygons
    >>> cells = [shapely.box(0, 0, 1, 1), shapely.MultiPolygon([shapely.box(2, 0, 3, 1), shapely.box(4, 0, 5, 1)])]
    >>> len(draw_polygons(None, cells, facecolors=["red", "blue"]).patches)   # one patch per geometry
    2
    """
    from matplotlib.patches import PathPatch
    from matplotlib.path import Path

    ax = axes(ax)
    facecolors: Sequence[Any] | None = style.pop("facecolors", None)
    style = {"facecolor": LAND, "edgecolor": INK, "linewidth": 0.8, **style}
    drawn = False
    for i, geom in enumerate(geoms):
        if geom is None or geom.is_empty:
            continue
        parts = getattr(geom, "geoms", [geom])
        vertices, codes = [], []
        for part in parts:
            if part.geom_type != "Polygon":
                continue
            v, c = _rings_path(part)
            vertices += v
            codes += c
        if not vertices:
            continue
        own = dict(style)
        if facecolors is not None:
            own["facecolor"] = facecolors[i]
        ax.add_patch(PathPatch(Path(np.vstack(vertices), np.concatenate(codes)), **own))
        drawn = True
    if drawn:
        ax.autoscale_view()
    return ax


def draw_segments(ax: Any, starts: np.ndarray, ends: np.ndarray, **style: Any) -> Any:
    """Draw the segments between ``starts[i]`` and ``ends[i]`` (arrays of shape (m, 2)) as one collection.

    Examples
    --------
    >>> import matplotlib
    >>> matplotlib.use("Agg")
    >>> from placewise.plotting import draw_segments
    >>> ax = draw_segments(None, [[0, 0], [1, 1]], [[1, 0], [2, 2]], colors="black")
    >>> len(ax.collections[0].get_segments())
    2
    """
    from matplotlib.collections import LineCollection

    ax = axes(ax)
    segments = np.stack([np.asarray(starts, float).reshape(-1, 2), np.asarray(ends, float).reshape(-1, 2)], axis=1)
    ax.add_collection(LineCollection(list(segments), **{"colors": INK, "linewidths": 1.2, **style}))
    ax.autoscale_view()
    return ax
