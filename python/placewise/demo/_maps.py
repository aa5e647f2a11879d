"""The maps' common parts: base map, symbols, labels placed clear of each other, and the
title, legend and model note around the axes."""

from __future__ import annotations

from typing import Any

import numpy as np

from .. import plotting
from .._scenario import Scenario
from ._district import _colour

_SHORT_NOTE = (
    "Planning aid under the model (straight-line distance, people per household as weights); "
    "check against local regulations and licensed professional judgement. Invented scenario. "
    "Axes: km east and north of the district's south-west corner (UTM zone 26N, 420,000 E 5,010,000 N)."
)
_DESIGN = "households coloured by the depot serving them"
_CANDIDATES = [(1, 1), (1, -1), (-1, 1), (-1, -1), (0, 1.4), (0, -1.4), (1.4, 0), (-1.4, 0)]


def _base_map(ax: Any, s: Scenario, title: str) -> None:
    """Sea, land and lake, framed on the region, in km from the grid's origin."""
    ax.set_facecolor(plotting.SEA)
    plotting.draw_polygons(ax, [s.region], facecolor=plotting.LAND, edgecolor="#6b7a89", linewidth=0.9, zorder=1)
    x0, y0, x1, y1 = s.region.bounds
    pad = 0.02 * max(x1 - x0, y1 - y0)
    ax.set_xlim(x0 - pad, x1 + pad)
    ax.set_ylim(y0 - pad, y1 + pad)
    ax.set_aspect("equal")
    plotting.coordinate_axes(ax, "m", ("east", "north"))
    ax.tick_params(labelsize=7)
    ax.xaxis.label.set_size(8)
    ax.yaxis.label.set_size(8)
    ax.set_title(title, fontsize=9.5, loc="left")


def _lake(ax: Any, s: Scenario) -> None:
    plotting.draw_polygons(ax, [s.lake], facecolor=plotting.LAKE, edgecolor="#6b7a89", linewidth=0.6, zorder=2.5)


def _town_sizes(s: Scenario) -> np.ndarray:
    return np.sqrt(s.town_people) / 2.6  # marker area (pt²) grows with the people


def _towns(ax: Any, s: Scenario) -> None:
    ax.scatter(s.towns[:, 0], s.towns[:, 1], s=_town_sizes(s), facecolor="white", edgecolor=plotting.INK,
               linewidth=0.9, zorder=5)


def _depots(ax: Any, sites: np.ndarray, numbers: np.ndarray, size: float = 17) -> None:
    for (x, y), n in zip(sites, numbers):
        ax.plot([x], [y], marker="*", markersize=size, markerfacecolor=_colour(n), markeredgecolor=plotting.INK,
                markeredgewidth=1.1, linestyle="none", zorder=8)


def _marker_box(ax: Any, xy: Any, diameter_pt: float) -> Any:
    """The display box of a marker of ``diameter_pt`` points centred at data point ``xy``."""
    from matplotlib.transforms import Bbox

    px, py = ax.transData.transform(xy)
    r = 0.5 * diameter_pt * ax.figure.dpi / 72
    return Bbox([[px - r, py - r], [px + r, py + r]])


def _place_labels(ax: Any, items: list[tuple[str, Any, dict[str, Any]]], obstacles: list[Any]) -> list[Any]:
    """Label points without collisions: try offsets around each anchor, nearest ring first,
    and keep the first whose rendered text box (with a 2 px margin) meets neither a placed
    label nor an ``obstacles`` box (markers) and stays inside the axes; when none does, the
    candidate with the least overlap. Run after the final layout, since the boxes are read
    in display space. The placed boxes are appended to ``obstacles``."""
    import matplotlib.patheffects as pe

    renderer = ax.figure.canvas.get_renderer()
    frame = ax.get_window_extent(renderer)
    placed = []
    for text, xy, style in items:
        best, best_cost = None, np.inf
        corners = np.array([[o.x0, o.y0, o.x1, o.y1] for o in obstacles]).reshape(-1, 4)
        for radius in (5.0, 10.0, 16.0):
            for dx, dy in _CANDIDATES:
                label = ax.annotate(
                    text, xy, xytext=(dx * radius, dy * radius), textcoords="offset points",
                    ha="left" if dx > 0 else "right" if dx < 0 else "center",
                    va="bottom" if dy > 0 else "top" if dy < 0 else "center",
                    zorder=9, path_effects=[pe.withStroke(linewidth=2.2, foreground="white")],
                    **{"fontsize": 7, "color": plotting.INK, **style})
                box = label.get_window_extent(renderer).padded(2)
                wide = np.clip(np.minimum(box.x1, corners[:, 2]) - np.maximum(box.x0, corners[:, 0]), 0, None)
                high = np.clip(np.minimum(box.y1, corners[:, 3]) - np.maximum(box.y0, corners[:, 1]), 0, None)
                cost = float(wide @ high)
                if not (frame.x0 <= box.x0 and box.x1 <= frame.x1 and frame.y0 <= box.y0 and box.y1 <= frame.y1):
                    cost += box.width * box.height
                if cost < best_cost:
                    if best is not None:
                        best.remove()
                    best, best_cost, best_box = label, cost, box
                else:
                    label.remove()
                if best_cost == 0:
                    break
            if best_cost == 0:
                break
        obstacles.append(best_box)
        placed.append(best)
    return placed


def _label_map(ax: Any, s: Scenario, depots: list[tuple[str, Any, dict[str, Any]]], depot_xy: np.ndarray,
               extra: list[Any] | None = None) -> list[Any]:
    """Place the depot labels, then the town names, clear of each other and of the markers."""
    obstacles = [_marker_box(ax, xy, 17 * 0.8) for xy in depot_xy]
    obstacles += [_marker_box(ax, xy, float(np.sqrt(a))) for xy, a in zip(s.towns, _town_sizes(s))]
    obstacles += list(extra or [])
    towns: list[tuple[str, Any, dict[str, Any]]] = [(name, xy, {}) for name, xy in zip(s.town_names, s.towns)]
    return _place_labels(ax, depots + towns, obstacles)


def _finish_figure(fig: Any, handles: list[Any], title: str) -> None:
    """Title on top; legend and the model note below the axes, each in its own band, so
    that nothing overlaps (the bands are measured after drawing, then the axes laid out)."""
    import textwrap

    fig.suptitle(title, fontsize=11, x=0.01, ha="left")
    width_chars = int(fig.get_figwidth() * 15)
    note = fig.text(0.01, 0.01, textwrap.fill(_SHORT_NOTE, width_chars), ha="left", va="bottom", fontsize=7.5,
                    color="#4c566a")
    renderer = fig.canvas.get_renderer()
    height = fig.bbox.height
    note_top = (note.get_window_extent(renderer).height + 0.01 * height + 4) / height
    legend = fig.legend(handles=handles, loc="lower center", bbox_to_anchor=(0.5, note_top), ncol=min(len(handles), 4),
                        fontsize=8, frameon=False)
    legend_top = note_top + (legend.get_window_extent(renderer).height + 6) / height
    title_bottom = 1 - (fig._suptitle.get_window_extent(renderer).height + 10) / height
    fig.tight_layout(rect=(0, legend_top, 1, title_bottom))
    # tight_layout works on the axes before their equal aspect is applied; check the drawn
    # result and lift the axes until their labels clear the legend band.
    for _ in range(4):
        fig.canvas.draw()
        low = min(ax.get_tightbbox(renderer).y0 for ax in fig.axes) / height
        if low >= legend_top:
            break
        fig.subplots_adjust(bottom=fig.subplotpars.bottom + legend_top - low + 0.005)


def _symbols(*keys: str, colours: list[str] | None = None) -> list[Any]:
    """Legend entries for the map symbols named in ``keys``."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    colours = colours or [_colour(1)]
    made = {
        "households": Line2D([], [], marker="o", linestyle="none", markersize=4, markerfacecolor=colours[0],
                             markeredgewidth=0, label=_DESIGN),
        "depot": Line2D([], [], marker="*", linestyle="none", markersize=13, markerfacecolor=colours[0],
                        markeredgecolor=plotting.INK, label="depot (numbered west to east; colour = depot)"),
        "town": Line2D([], [], marker="o", linestyle="none", markersize=7, markerfacecolor="white",
                       markeredgecolor=plotting.INK, label="town (size = people)"),
        "catchment": Patch(facecolor=colours[0], alpha=0.4, edgecolor=plotting.INK,
                           label="catchment: land nearest to the depot (colour = depot)"),
        "lake": Patch(facecolor=plotting.LAKE, edgecolor="#6b7a89", label="lake / sea"),
    }
    return [made[k] for k in keys]
