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

from ._units import unit_words

__all__ = [
    "LAKE",
    "LAND",
    "SEA",
    "axes",
    "draw_polygons",
    "draw_segments",
    "coordinate_axes",
    "draw_context",
    "draw_sites",
    "finish",
    "quantity",
    "site_colour",
    "site_colours",
    "unit_name",
]

# The placewise palette: muted land and water for maps; site colours are generated (below).
LAND = "#f3eee2"
SEA = "#dce8ee"
LAKE = "#bcd5e6"
INK = "#2e3440"
CONTEXT = "#9aa3ad"

# Site colours: hues stepped by the golden angle in the Oklab space (Ottosson, 2020), so that
# site i has the same colour whatever the number of sites (a depot keeps its colour between
# maps) and any run of consecutive sites is spread round the hue circle; the lightness cycles
# through three levels so that neighbours in hue also differ in lightness. Invariant: every
# colour is inside the sRGB gamut (the chroma is reduced until it is).
_GOLDEN_ANGLE = 137.50776405003785
_LIGHTNESS = (0.60, 0.45, 0.75)
_CHROMA = 0.15


def _oklab_to_srgb(lab: np.ndarray) -> np.ndarray:
    """Oklab (L, a, b) to gamma-encoded sRGB, unclipped (Ottosson, 2020)."""
    m1 = np.array([[1.0, 0.3963377774, 0.2158037573],
                   [1.0, -0.1055613458, -0.0638541728],
                   [1.0, -0.0894841775, -1.2914855480]])
    m2 = np.array([[4.0767416621, -3.3077115913, 0.2309699292],
                   [-1.2684380046, 2.6097574011, -0.3413193965],
                   [-0.0041960863, -0.7034186147, 1.7076147010]])
    linear = m2 @ (m1 @ lab) ** 3
    # sRGB transfer function (IEC 61966-2-1).
    return np.where(linear <= 0.0031308, 12.92 * linear, 1.055 * np.abs(linear) ** (1 / 2.4) - 0.055)


def site_colour(i: int) -> str:
    """The colour of site ``i``: a qualitative scheme with no repeats, the same for site ``i``
    whatever the number of sites.

    Examples
    --------
    >>> from placewise.plotting import site_colour
    >>> site_colour(0)
    '#c5547c'
    >>> len({site_colour(i) for i in range(100)})    # never cycles
    100
    """
    hue = np.deg2rad(_GOLDEN_ANGLE * int(i))
    lightness = _LIGHTNESS[int(i) % len(_LIGHTNESS)]
    chroma = _CHROMA
    while True:
        rgb = _oklab_to_srgb(np.array([lightness, chroma * np.cos(hue), chroma * np.sin(hue)]))
        if ((rgb >= 0) & (rgb <= 1)).all() or chroma <= 0:
            break
        chroma -= 0.005
    rgb = np.clip(rgb, 0.0, 1.0)
    return "#" + "".join(f"{round(float(c) * 255):02x}" for c in rgb)


def site_colours(n: int) -> list[str]:
    """The colours of sites ``0 .. n-1`` (see :func:`site_colour`).

    Examples
    --------
    >>> from placewise.plotting import site_colours
    >>> len(set(site_colours(30))), site_colours(0)
    (30, [])
    """
    return [site_colour(i) for i in range(int(n))]


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


# --------------------------------------------------------------------------- axes dressing


# How a result's ``unit`` reads on an axis ("u", the input's coordinate unit, as
# "coordinate units"): the words every message uses.
unit_name = unit_words


def quantity(value: float, unit: str, power: int = 1) -> str:
    """``value`` in ``unit`` as a title shows it: four significant digits with thousands
    separators, metres from 10 km up in km (squared units for ``power`` 2).

    Examples
    --------
    >>> from placewise.plotting import quantity
    >>> quantity(425_312.8, "m"), quantity(0.012345, "u"), quantity(3.2e7, "m", 2), quantity(float("nan"), "m")
    ('425.3 km', '0.01235 coordinate units', '32 km²', 'nan m')
    """
    value = float(value)
    shown = unit_name(unit)
    if unit == "m" and abs(value) >= (10_000 if power == 1 else 1e6):
        value, shown = value / 1000**power, "km"
    if power == 2:
        shown += "²"
    if not np.isfinite(value) or value == 0:
        return f"{value:g} {shown}"
    decimals = max(0, 3 - int(np.floor(np.log10(abs(value)))))
    return f"{value:,.{decimals}f}".rstrip("0").rstrip(".") + f" {shown}" if decimals else f"{value:,.0f} {shown}"


def _scale(unit: str, low: float, high: float, spread: float | None = None) -> tuple[float, str, float]:
    """(divisor, shown unit, origin) for coordinates spanning ``low .. high``; ``spread`` is
    the larger span of the two axes (so that both read in the same unit).

    Metres over 10 km or more read in km. When the values are large against their spread
    (projected coordinates: 6,000,000 m with a 50 km window) they are shown relative to a
    round origin, which the axis label states, so that every tick label stays short.
    """
    spread = high - low if spread is None else spread
    divisor, shown = (1000.0, "km") if unit == "m" and spread >= 10_000 else (1.0, unit_name(unit))
    low, high = low / divisor, high / divisor
    span = max(high - low, 1e-300)
    size = max(abs(low), abs(high))
    origin = 0.0
    if size >= 1000 and span < 0.25 * size:
        step = 10.0 ** np.floor(np.log10(span))
        origin = float(np.round(low / step) * step)
    return divisor, shown, origin


def _number(value: float) -> str:
    text = f"{value:,.6g}" if abs(value) < 1e6 else f"{value:,.0f}"
    return text.replace("-", "\N{MINUS SIGN}")


def _coordinate_formatter(name: str, unit: str) -> Any:
    from matplotlib.ticker import Formatter

    class CoordinateFormatter(Formatter):
        """Tick labels in a readable scale; sets the axis label to match (at draw time,
        so that it follows the final limits)."""

        divisor, origin, decimals = 1.0, 0.0, 0

        def set_locs(self, locs: Any) -> None:
            super().set_locs(locs)
            axis: Any = self.axis
            low, high = sorted(axis.get_view_interval())
            spans = [float(np.ptp(a.get_view_interval())) for a in (axis.axes.xaxis, axis.axes.yaxis)]
            self.divisor, shown, self.origin = _scale(unit, float(low), float(high), max(spans))
            ticks = np.asarray(locs, dtype=float) / self.divisor
            step = float(np.min(np.diff(np.sort(ticks)))) if len(ticks) > 1 else 1.0
            self.decimals = max(0, int(-np.floor(np.log10(step)))) if 0 < step < 1 else 0
            relative = f" \N{MINUS SIGN} {_number(self.origin)}" if self.origin else ""
            axis.set_label_text(f"{name}{relative} ({shown})")

        def __call__(self, value: float, pos: Any = None) -> str:
            shown = value / self.divisor - self.origin
            if abs(shown) < 0.5 * 10.0 ** -self.decimals:
                shown = 0.0
            return f"{shown:,.{self.decimals}f}".replace("-", "\N{MINUS SIGN}")

    return CoordinateFormatter()


def coordinate_axes(ax: Any, unit: str, names: tuple[str, str] = ("x", "y")) -> Any:
    """Label both axes with the coordinate unit and keep tick labels short at any scale.

    Metres over 10 km or more read in km; large coordinates with a small spread (projected
    metres) read relative to a round origin that the label states, e.g. ``y − 6,000 (km)``.

    Examples
    --------
    >>> import matplotlib
    >>> matplotlib.use("Agg")
    >>> import matplotlib.pyplot as plt
    >>> from placewise.plotting import coordinate_axes
    >>> fig, ax = plt.subplots()
    >>> _ = ax.plot([500_000, 520_000], [6_000_000, 6_001_000])
    >>> _ = coordinate_axes(ax, "m")
    >>> fig.canvas.draw()
    >>> ax.get_xlabel(), ax.get_ylabel()
    ('x (km)', 'y − 6,000 (km)')
    >>> fig, ax = plt.subplots()                                   # nothing drawn yet
    >>> _ = coordinate_axes(ax, "u"); fig.canvas.draw(); ax.get_xlabel()
    'x (coordinate units)'
    """
    for axis, name in zip((ax.xaxis, ax.yaxis), names):
        axis.set_major_formatter(_coordinate_formatter(name, unit))
        axis.set_label_text(f"{name} ({unit_name(unit)})")
    return ax


def finish(ax: Any, title: str, unit: str, *, legend: bool = True) -> Any:
    """Dress result axes: ``title``, coordinate labels with ``unit`` (see
    :func:`coordinate_axes`) and a legend of the labelled artists.

    Examples
    --------
    >>> import matplotlib
    >>> matplotlib.use("Agg")
    >>> from placewise.plotting import axes, finish
    >>> ax = axes()
    >>> _ = ax.plot([0, 1], [0, 1], "o", label="points")
    >>> ax = finish(ax, "Two points", "u")
    >>> ax.get_title(), [t.get_text() for t in ax.get_legend().get_texts()]
    ('Two points', ['points'])
    """
    ax.set_title(title, fontsize=10)
    coordinate_axes(ax, unit)
    if legend and ax.get_legend_handles_labels()[0]:
        ax.legend(loc="best", fontsize=7.5, framealpha=0.85)
    return ax


def draw_context(ax: Any, points: Any, label: str = "demand points", **style: Any) -> Any:
    """Draw ``points`` (shape (n, 2)) as small grey dots beneath the result.

    Examples
    --------
    >>> import matplotlib
    >>> matplotlib.use("Agg")
    >>> from placewise.plotting import axes, draw_context
    >>> ax = draw_context(axes(), [[0, 0], [1, 2]])
    >>> ax.lines[0].get_label()
    'demand points'
    """
    xy = np.asarray(points, dtype=float).reshape(-1, 2)
    ax.plot(xy[:, 0], xy[:, 1], **{"marker": ".", "linestyle": "none", "markersize": 3, "color": CONTEXT,
                                   "zorder": 2, "label": label, **style})
    return ax


def draw_sites(ax: Any, sites: Any, colours: Sequence[Any] | None = None, *, label: str = "sites",
               fixed: Any = None, **style: Any) -> Any:
    """Draw sites as stars with a dark outline above everything else, each in its own colour
    (:func:`site_colour` unless ``colours`` are given); sites flagged in ``fixed`` as white
    squares on top, so that existing sites stand apart from new ones.

    One line per site (so that each keeps its colour); the first carries ``label``.

    Examples
    --------
    >>> import matplotlib
    >>> matplotlib.use("Agg")
    >>> from placewise.plotting import axes, draw_sites
    >>> ax = draw_sites(axes(), [[0, 0], [1, 1], [2, 0]], fixed=[False, False, True])
    >>> [line.get_label() for line in ax.lines][::2], ax.lines[2].get_marker()
    (['sites', 'fixed sites'], 's')
    >>> len(draw_sites(axes(), [[0, 0]][:0]).lines)                 # no sites, nothing drawn
    0
    """
    xy = np.asarray(sites, dtype=float).reshape(-1, 2)
    fixed = np.zeros(len(xy), dtype=bool) if fixed is None else np.asarray(fixed, dtype=bool)
    colours = site_colours(len(xy)) if colours is None else colours
    first = {False: True, True: True}
    for i, (x, y) in enumerate(xy):
        if not (np.isfinite(x) and np.isfinite(y)):
            continue
        own = {"marker": "*", "markersize": 13, "markerfacecolor": colours[i], "markeredgecolor": INK,
               "markeredgewidth": 0.9, "zorder": 6}
        name = label
        if fixed[i]:
            own = {"marker": "s", "markersize": 8, "markerfacecolor": "white", "markeredgecolor": INK,
                   "markeredgewidth": 1.6, "zorder": 7}
            name = "fixed sites"
        own["label"] = name if first[bool(fixed[i])] else "_nolegend_"
        first[bool(fixed[i])] = False
        ax.plot([x], [y], linestyle="none", **{**own, **style})
    return ax
