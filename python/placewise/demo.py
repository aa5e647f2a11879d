"""The demo: siting depots for the invented coastal district of Orsavel.

``python -m placewise demo --out DIR`` runs the whole library on one invented scenario
(see :mod:`placewise._scenario`): 12,000 households in twelve towns and the countryside of
a district with a ragged coast and a lake.

1. Depot plans: one central depot (Fermat–Weber point), five depots minimising total
   travel (p-median) and five depots minimising the worst trip (p-center), compared.
2. Catchments of the p-median depots: Voronoi cells clipped to the land (coast and lake
   cut them), with the people each serves.
3. A link network joining the depots and the towns: the Steiner tree against the minimum
   spanning tree, with the saving.

Every figure is read from the results' own tables (``to_frame``, ``sites_frame``,
``summary``, ``to_geodataframe``): trips to the assigned depot, loads, costs, areas and
lengths are the kernels'. The demo only condenses the per-household trips into measures no
kernel states (mean and worst trip, the share of people within 10 km).

Depots are numbered west to east in the p-median plan, and a depot keeps its number and
colour in every map and layer: a depot of another plan takes the number of the p-median
depot it is paired with (nearest pairs first).

It writes maps (PNG), the layers as one GeoPackage in the scenario's projected CRS
(``orsavel.gpkg``, WGS 84 / UTM zone 26N) and as GeoJSON in WGS 84 longitude/latitude
(RFC 7946), and tidy tables (CSV: one number per cell, units in the header; and Markdown),
and prints the summary. Everything is invented; results are planning aids under the model
(straight-line distance, the given weights), to be checked against local regulations and
licensed professional judgement.

Examples
--------
>>> from placewise import demo
>>> demo.DISCLAIMER.split(":")[0]
'These results are planning aids under a model'
"""

from __future__ import annotations

import csv
import dataclasses
import json
import time
from pathlib import Path
from typing import Any

import numpy as np

import placewise as pw

from . import plotting
from ._scenario import Scenario, orsavel

__all__ = ["DEPOTS", "DISCLAIMER", "Scenario", "run", "scenario"]

DISCLAIMER = (
    "These results are planning aids under a model: straight-line distance and the given "
    "weights (people per household). They are not a plan. Check them against local "
    "regulations and licensed professional judgement before acting on them. The district of "
    "Orsavel and all its data are invented."
)
_SHORT_NOTE = (
    "Planning aid under the model (straight-line distance, people per household as weights); "
    "check against local regulations and licensed professional judgement. Invented scenario. "
    "Axes: km east and north of the district's south-west corner (UTM zone 26N, 420,000 E 5,010,000 N)."
)
_DESIGN = "households coloured by the depot serving them"
DEPOTS = 5
_CANDIDATES = [(1, 1), (1, -1), (-1, 1), (-1, -1), (0, 1.4), (0, -1.4), (1.4, 0), (-1.4, 0)]


def scenario(seed: int = 7, households: int = 12_000) -> Scenario:
    """The demo's invented district of Orsavel (see :class:`Scenario`), for notebooks and examples.

    Parameters
    ----------
    seed : int
        Seed of the invented households.
    households : int
        Number of households to place.

    Returns
    -------
    Scenario

    Examples
    --------
    >>> from placewise.demo import scenario
    >>> s = scenario(households=500)
    >>> s.name, s.households.shape, len(s.region.interiors), s.crs    # one lake
    ('Orsavel', (500, 2), 1, 'EPSG:32626')
    >>> scenario(households=0).households.shape                       # no demand at all
    (0, 2)
    """
    return orsavel(seed, households)


def _in_metres(result: Any) -> Any:
    """``result`` with its lengths named in the grid's unit, metres (``distance_m``, ``area_m2``)."""
    return dataclasses.replace(result, unit="m")


def _colour(number: int) -> str:
    """The colour of depot ``number`` (1-based), the same in every map."""
    return plotting.site_colour(number - 1)


def _pair_numbers(sites: np.ndarray, reference: np.ndarray) -> np.ndarray:
    """Depot numbers (1-based) for ``sites``: each takes the number of the ``reference``
    depot (numbered 1, 2, ... in its row order) it is paired with, pairing the nearest
    pairs first (a greedy matching); sites left over take the next free numbers.

    Only for display (same colour, same number for the depots that stand for each other),
    so a few distances on at most a handful of depots are formed here.
    """
    gap = np.hypot(*(sites[:, None, :] - reference[None, :, :]).transpose(2, 0, 1))
    numbers = np.zeros(len(sites), dtype=np.int64)
    taken: set[int] = set()
    for flat in np.argsort(gap, axis=None, kind="stable"):
        i, j = divmod(int(flat), len(reference))
        if numbers[i] == 0 and j not in taken:
            numbers[i] = j + 1
            taken.add(j)
    spare = iter(range(len(reference) + 1, len(reference) + len(sites) + 1))
    return np.array([n if n else next(spare) for n in numbers], dtype=np.int64)


# --------------------------------------------------------------------------- output helpers


class _Writer:
    """Writes the demo's files; with ``keep`` the figures stay open in ``figures`` (for tests)."""

    def __init__(self, out: Path, quiet: bool, s: Scenario, keep: bool = False) -> None:
        self.out = out
        self.quiet = quiet
        self.s = s
        self.keep = keep
        self.files: list[str] = []
        self.figures: dict[str, Any] = {}
        self.started = time.perf_counter()
        self.gpkg = out / f"{s.name.lower()}.gpkg"
        if self.gpkg.exists():
            self.gpkg.unlink()  # a fresh package: layers of an earlier run would linger

    def say(self, text: str) -> None:
        if not self.quiet:
            print(f"[{time.perf_counter() - self.started:5.1f} s] {text}", flush=True)

    def layer(self, name: str, frame: Any) -> None:
        """Write a GeoDataFrame on the local grid as a layer of the GeoPackage, in the
        scenario's projected CRS (the grid shifted to its origin), and as GeoJSON in WGS 84
        (RFC 7946: longitude, latitude; no CRS member), both carrying the model note."""
        placed = frame.set_geometry(frame.geometry.translate(*self.s.origin)).set_crs(self.s.crs, allow_override=True)
        placed.to_file(self.gpkg, layer=name, driver="GPKG", layer_options={"DESCRIPTION": DISCLAIMER})
        if self.gpkg.name not in self.files:
            self.files.append(self.gpkg.name)
        features = json.loads(placed.to_crs("EPSG:4326").to_json(drop_id=True))["features"]
        doc = {"type": "FeatureCollection", "name": name, "description": DISCLAIMER, "features": features}
        path = self.out / f"{name}.geojson"
        path.write_text(json.dumps(doc, separators=(",", ":")))
        self.files.append(path.name)

    def figure(self, fig: Any, name: str) -> None:
        path = self.out / f"{name}.png"
        fig.savefig(path, dpi=130)
        self.files.append(path.name)
        if self.keep:
            self.figures[name] = fig
        else:
            import matplotlib.pyplot as plt

            plt.close(fig)


def _table(path: Path, columns: dict[str, list[Any]]) -> None:
    """A tidy CSV: one row per item, one number per cell, units in the header."""
    with open(path, "w", newline="") as fh:
        writer = csv.writer(fh)
        writer.writerow(list(columns))
        for row in zip(*columns.values()):
            writer.writerow([round(float(v), 3) if isinstance(v, (float, np.floating)) else v for v in row])


def _points_layer(table: Any, x: Any, y: Any) -> Any:
    import geopandas as gpd

    return gpd.GeoDataFrame(table, geometry=gpd.points_from_xy(x, y))


# --------------------------------------------------------------------------- map helpers


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


# --------------------------------------------------------------------------- the three parts


def _evaluate(tag: str, name: str, method: str, result: Any, s: Scenario, numbers: np.ndarray) -> dict[str, Any]:
    """A plan's travel measures, read from the kernel's tables.

    ``result`` is a p-median plan, or the nearest-site allocation of the households to sites
    chosen otherwise: both state per household its depot and trip (``to_frame``), per depot
    its people and households (``sites_frame``) and the total travel (``summary``).
    ``numbers`` are the depots' display numbers (1-based, in the kernel's site order).
    """
    import shapely

    result = _in_metres(result)
    trips, depots, totals = result.to_frame(), result.sites_frame(), result.summary().iloc[0]
    d = trips["distance_m"].to_numpy()
    people = float(totals["load"])
    sites = depots[["x", "y"]].to_numpy()
    return {
        "tag": tag, "plan": name, "method": method, "result": result, "trips": trips, "depots": depots,
        "sites": sites, "numbers": numbers, "depot_count": len(sites),
        "person_km": float(totals["cost_m"]) / 1000, "mean_km": float(totals["cost_m"]) / people / 1000,
        # Worst trip and the share within 10 km: no kernel states them; read off the trips.
        "worst_km": float(d.max()) / 1000, "within_10km": 100 * float(s.people[d <= 10_000].sum()) / people,
        "on_land": int(shapely.covers(s.region, shapely.points(sites)).sum()),
    }


def _plans(s: Scenario, seed: int, w: _Writer) -> list[dict[str, Any]]:
    one = pw.weber_point(s.households, s.people)
    w.say(f"central depot (Fermat-Weber point): {one.cost / 1000:,.0f} person-km")
    m = pw.p_median(s.households, DEPOTS, s.people, seed=seed)
    # Number the p-median depots west to east (ties: south first); the others pair with them.
    order = np.lexsort((m.sites[:, 1], m.sites[:, 0]))
    m_numbers = np.empty(len(order), dtype=np.int64)
    m_numbers[order] = np.arange(1, len(order) + 1)
    reference = m.sites[order]
    # The Weber point states its total cost only; allocating the households to it gives each trip.
    central = pw.nearest_site(s.households, [one.location], s.people)
    plans = [_evaluate("central", "one central depot", "Fermat-Weber point", central, s,
                       _pair_numbers(one.location.reshape(1, 2), reference))]
    plans.append(_evaluate("p_median", f"{DEPOTS} depots, least total travel", "p-median", m, s, m_numbers))
    w.say(f"p-median plan: {m.cost / 1000:,.0f} person-km")
    # The p-center plan counts every household alike (the worst trip of anyone); allocating the
    # weighted households to its depots states the people each serves and the total travel.
    c = pw.p_center(s.households, DEPOTS, seed=seed)
    served = pw.nearest_site(s.households, c.sites, s.people)
    plans.append(_evaluate("p_center", f"{DEPOTS} depots, shortest worst trip", "p-center", served, s,
                           _pair_numbers(c.sites, reference)))
    w.say(f"p-center plan: worst trip {c.radius / 1000:.1f} km")
    return plans


def _plans_map(s: Scenario, plans: list[dict[str, Any]], w: _Writer) -> None:
    import matplotlib.pyplot as plt

    shown = plans[1:]
    fig, axs = plt.subplots(1, len(shown), figsize=(6.4 * len(shown), 6.0), squeeze=False)
    for ax, plan in zip(axs[0], shown):
        _base_map(ax, s, f"{plan['plan']} ({plan['method']})\n"
                         f"mean trip {plan['mean_km']:.1f} km · worst trip {plan['worst_km']:.1f} km")
        number = plan["numbers"][plan["trips"]["assignment"].to_numpy()]
        ax.scatter(s.households[:, 0], s.households[:, 1], s=1.0, c=[_colour(n) for n in number],
                   linewidths=0, alpha=0.45, zorder=3)
        _lake(ax, s)
        _towns(ax, s)
        _depots(ax, plan["sites"], plan["numbers"])
    handles = _symbols("households", "depot", "town", "lake")
    _finish_figure(fig, handles, f"{s.name}: where to put {DEPOTS} depots: two aims compared")
    for ax, plan in zip(axs[0], shown):
        depots = [(str(n), xy, {"fontsize": 9, "fontweight": "bold"}) for n, xy in zip(plan["numbers"], plan["sites"])]
        _label_map(ax, s, depots, plan["sites"])
    w.figure(fig, "depots")


def _catchments(s: Scenario, plan: dict[str, Any], w: _Writer) -> tuple[Any, dict[str, float]]:
    """The p-median depots' catchments (Voronoi cells clipped to the land) with their loads,
    and the smallest ellipse covering all households (reported, not drawn: it says how far
    demand spreads, not where to serve it)."""
    import matplotlib.pyplot as plt

    sites, trips, depots, numbers = plan["sites"], plan["trips"], plan["depots"], plan["numbers"]
    cells = _in_metres(pw.voronoi_cells(sites, s.region)).to_geodataframe()
    # The plan serves every household from its nearest depot, so a depot's catchment holds
    # exactly the households the plan assigns to it: its people and households are the plan's.
    people = depots["load"].to_numpy()
    cells.insert(0, "depot", numbers)
    cells["people"] = people
    cells["households"] = depots["points"].to_numpy()
    # Mean trip per catchment: no kernel states it; the people-weighted trips of its households.
    travel = np.bincount(trips["assignment"], weights=s.people * trips["distance_m"], minlength=len(sites))
    cells["mean_trip_m"] = travel / np.where(people > 0, people, 1.0)
    cells = cells.sort_values("depot").reset_index(drop=True)
    w.layer("catchments", cells)

    e = _in_metres(pw.enclosing_ellipse(s.households))
    w.layer("demand_ellipse", e.to_geodataframe())
    spread = {"semi_major_km": e.semi_major / 1000, "semi_minor_km": e.semi_minor / 1000,
              "angle_deg": e.angle, "area_km2": e.area / 1e6}

    fig, ax = plt.subplots(figsize=(10.0, 7.6))
    _base_map(ax, s, "Each depot serves the land nearest to it (straight-line distance), clipped to the coast")
    plotting.draw_polygons(ax, cells.geometry, facecolors=[_colour(n) for n in cells["depot"]], edgecolor=plotting.INK,
                           linewidth=1.0, alpha=0.4, zorder=2)
    _lake(ax, s)
    _towns(ax, s)
    _depots(ax, sites, numbers)
    handles = _symbols("catchment", "depot", "town", "lake")
    _finish_figure(fig, handles, f"{s.name}: catchments of the {len(sites)} p-median depots")
    labels = [(f"depot {n}: {p:,.0f} people", xy, {"fontsize": 7.5, "fontweight": "bold"})
              for n, p, xy in zip(numbers, people, sites)]
    _label_map(ax, s, labels, sites)
    w.figure(fig, "catchments")
    return cells, spread


def _named_ends(edges: Any, names: list[str]) -> Any:
    """A tree's edge layer with both ends named: a depot or town, or ``junction k`` (an added
    Steiner point). Edges are undirected, so the ends are ``end_a`` and ``end_b``."""
    out = edges.drop(columns=[c for c in ("junction_a", "junction_b") if c in edges])
    for end in ("a", "b"):
        row = edges[f"end_{end}"].to_numpy()
        junction = edges[f"junction_{end}"].to_numpy() if f"junction_{end}" in edges else np.full(len(row), -1)
        out[f"end_{end}"] = [names[r] if r >= 0 else f"junction {j + 1}" for r, j in zip(row, junction)]
    return out


def _segments(edges: Any) -> np.ndarray:
    """The ends of every straight edge of a layer, shape (E, 2, 2)."""
    import shapely

    return shapely.get_coordinates(edges.geometry.values).reshape(-1, 2, 2)


def _network(s: Scenario, plan: dict[str, Any], w: _Writer, seed: int) -> dict[str, Any]:
    import matplotlib.pyplot as plt
    from matplotlib.lines import Line2D

    depots, numbers = plan["sites"], plan["numbers"]
    terminals = np.vstack([depots, s.towns])
    names = [f"depot {n}" for n in numbers] + s.town_names
    mst = _in_metres(pw.spanning_tree(terminals))
    st = _in_metres(pw.steiner_tree(terminals, seed=seed, time_limit=5.0))
    mst_edges = _named_ends(mst.to_geodataframe(), names)
    st_edges = _named_ends(st.to_geodataframe(), names)
    w.layer("links_mst", mst_edges)
    w.layer("links_steiner", st_edges)
    totals = st.summary().iloc[0]
    result = {"terminals": len(terminals), "mst_km": float(mst.summary()["length_m"].iloc[0]) / 1000,
              "steiner_km": float(totals["length_m"]) / 1000, "saving": 100 * float(totals["saving"]),
              "junctions": int(totals["junctions"]), "optimal": bool(totals["optimal"])}

    fig, ax = plt.subplots(figsize=(10.0, 7.6))
    _base_map(ax, s, "Links joining every depot and town: dashed the shortest tree through them only, solid the "
                     "shorter one\nwith added branch points (junctions)")
    segments = _segments(mst_edges)
    plotting.draw_segments(ax, segments[:, 0], segments[:, 1], colors="#7d8894", linewidths=1.3,
                           linestyles=(0, (5, 3)), zorder=4)
    segments = _segments(st_edges)
    plotting.draw_segments(ax, segments[:, 0], segments[:, 1], colors="#1b6f6a", linewidths=2.2, zorder=5)
    ax.plot(st.junctions[:, 0], st.junctions[:, 1], "s", markersize=5, markerfacecolor="white",
            markeredgecolor="#1b6f6a", markeredgewidth=1.4, zorder=6)
    _lake(ax, s)
    _towns(ax, s)
    _depots(ax, depots, numbers)
    handles = [
        Line2D([], [], color="#7d8894", linewidth=1.3, linestyle=(0, (5, 3)),
               label=f"minimum spanning tree: {result['mst_km']:.1f} km"),
        Line2D([], [], color="#1b6f6a", linewidth=2.2,
               label=f"Steiner tree: {result['steiner_km']:.1f} km ({result['saving']:.1f} % shorter)"),
        Line2D([], [], marker="s", linestyle="none", markersize=6, markerfacecolor="white", markeredgecolor="#1b6f6a",
               label="junction J1, J2, ... (added branch point)"),
        *_symbols("depot", "town"),
    ]
    _finish_figure(fig, handles, f"{s.name}: a link network for the depots and towns")
    junction_boxes = [_marker_box(ax, xy, 5) for xy in st.junctions]
    # The links, sampled every 1.5 km, as small obstacles: labels keep off the lines where they can.
    for edges in (_segments(mst_edges), _segments(st_edges)):
        for a, b in edges:
            steps = max(2, int(np.hypot(*(b - a)) // 1500))
            junction_boxes += [_marker_box(ax, a + t * (b - a), 2.5) for t in np.linspace(0, 1, steps + 1)]
    labels = [(f"depot {n}", xy, {"fontsize": 7.5, "fontweight": "bold"}) for n, xy in zip(numbers, depots)]
    labels += [(f"J{k + 1}", xy, {"fontsize": 6, "color": "#1b6f6a"}) for k, xy in enumerate(st.junctions)]
    _label_map(ax, s, labels, np.vstack([depots, st.junctions]) if len(st.junctions) else depots, junction_boxes)
    w.figure(fig, "network")
    return result


# --------------------------------------------------------------------------- summary


def _tables(s: Scenario, plans: list[dict[str, Any]], cells: Any, spread: dict[str, float],
            net: dict[str, Any], out: Path) -> tuple[str, list[str]]:
    """The summary in Markdown and as tidy CSV tables (one number per cell, units in the header)."""
    plan_columns = {
        "plan": [p["plan"] for p in plans], "method": [p["method"] for p in plans],
        "depots": [p["depot_count"] for p in plans], "depots_on_land": [p["on_land"] for p in plans],
        "total_travel_person_km": [p["person_km"] for p in plans], "mean_trip_km": [p["mean_km"] for p in plans],
        "worst_trip_km": [p["worst_km"] for p in plans],
        "people_within_10km_percent": [p["within_10km"] for p in plans],
    }
    catchment_columns = {
        "depot": list(cells["depot"]), "area_km2": list(cells["area_m2"] / 1e6),
        "households": list(cells["households"]), "people": list(cells["people"]),
        "mean_trip_km": list(cells["mean_trip_m"] / 1000),
    }
    network_columns = {
        "network": ["minimum spanning tree", "Steiner tree"], "length_km": [net["mst_km"], net["steiner_km"]],
        "junctions": [0, net["junctions"]], "saving_percent": [0.0, net["saving"]],
        "proven_optimal": [True, net["optimal"]],
    }
    written = []
    for name, columns in (("summary", plan_columns), ("catchments", catchment_columns), ("network", network_columns)):
        _table(out / f"{name}.csv", columns)
        written.append(f"{name}.csv")

    def markdown(header: list[str], rows: list[list[str]]) -> list[str]:
        return (["| " + " | ".join(header) + " |", "|" + "---|" * len(header)]
                + ["| " + " | ".join(r) + " |" for r in rows] + [""])

    lines = [f"# {s.name}: depot siting summary", "",
             f"{len(s.people):,} households, {s.people.sum():,.0f} people, {len(s.towns)} towns; "
             f"land area {s.region.area / 1e6:,.0f} km². Depots are numbered west to east; a depot keeps "
             "its number and colour in every map and layer.", "", "## Depot plans", ""]
    lines += markdown(
        ["plan", "method", "depots", "depots on land", "total travel (person-km)", "mean trip (km)",
         "worst trip (km)", "people within 10 km (%)"],
        [[p["plan"], p["method"], str(p["depot_count"]), str(p["on_land"]), f"{p['person_km']:,.0f}",
          f"{p['mean_km']:.2f}", f"{p['worst_km']:.2f}", f"{p['within_10km']:.1f}"] for p in plans])
    lines += ["## Catchments of the p-median depots (clipped to the land)", ""]
    lines += markdown(["depot", "area (km²)", "households", "people", "mean trip (km)"],
                      [[str(r.depot), f"{r.area_m2 / 1e6:,.0f}", f"{r.households:,}", f"{r.people:,.0f}",
                        f"{r.mean_trip_m / 1000:.2f}"] for r in cells.itertuples()])
    lines += [f"All households lie within an ellipse of semi-axes {spread['semi_major_km']:.1f} km and "
              f"{spread['semi_minor_km']:.1f} km (major axis {spread['angle_deg']:.0f}° from east, "
              f"{spread['area_km2']:,.0f} km²).", "",
              f"## Link network ({net['terminals']} depots and towns)", ""]
    proven = "yes" if net["optimal"] else "no (best found)"
    lines += markdown(["network", "length (km)", "junctions", "saving (%)", "proven optimal"],
                      [["minimum spanning tree", f"{net['mst_km']:.1f}", "0", "0.00", "yes"],
                       ["Steiner tree", f"{net['steiner_km']:.1f}", str(net["junctions"]), f"{net['saving']:.2f}",
                        proven]])
    lines += [f"> {DISCLAIMER} Sites are points in the plane: a depot can fall on water, so the "
              "table says how many are on land.", "",
              f"Layers: `{s.name.lower()}.gpkg` in {s.crs} (WGS 84 / UTM zone 26N; the invented district is "
              "placed in the open ocean) and GeoJSON in WGS 84 longitude/latitude.", ""]
    return "\n".join(lines), written


def run(out: str | Path, *, quiet: bool = False, seed: int = 0) -> str:
    """Run the demo, write its files to ``out`` and print (and return) the summary table.

    Parameters
    ----------
    out : path
        Folder for the maps (``depots.png``, ``catchments.png``, ``network.png``), the
        layers (``orsavel.gpkg`` in the scenario's projected CRS and ``<layer>.geojson`` in
        WGS 84), the tidy tables (``summary.csv``, ``catchments.csv``, ``network.csv``) and
        ``summary.md`` (created if missing).
    quiet : bool
        Print only the summary table, not the progress lines.
    seed : int
        Seed of the randomised searches.

    Returns
    -------
    str
        The summary table (Markdown).

    Examples
    --------
    >>> from placewise import demo
    >>> table = demo.run("demo-output", quiet=True)   # doctest: +SKIP
    """
    import matplotlib

    matplotlib.use("Agg")
    out = Path(out)
    out.mkdir(parents=True, exist_ok=True)
    s = scenario()
    table, w = _run(out, quiet, seed, s)
    return table


def _run(out: Path, quiet: bool, seed: int, s: Scenario, keep: bool = False) -> tuple[str, _Writer]:
    w = _Writer(out, quiet, s, keep)
    w.say(f"{s.name}: {len(s.people):,} households, {s.people.sum():,.0f} people in {len(s.towns)} towns and around")
    import geopandas as gpd

    w.layer("region", gpd.GeoDataFrame({"name": [s.name], "area_m2": [s.region.area]}, geometry=[s.region]))
    w.layer("towns", _points_layer({"name": s.town_names, "people": s.town_people}, s.towns[:, 0], s.towns[:, 1]))

    plans = _plans(s, seed, w)
    for plan in plans:
        depots = plan["depots"].rename(columns={"load": "people", "points": "households"})
        depots.insert(0, "depot", plan["numbers"])
        layer = _points_layer(depots.drop(columns=["x", "y"]), depots["x"], depots["y"])
        w.layer(f"depots_{plan['tag']}", layer.sort_values("depot").reset_index(drop=True))
    chosen = plans[1]  # the p-median plan: least total travel
    households = chosen["result"].to_geodataframe()
    households.insert(0, "people", s.people)
    households.insert(1, "depot", chosen["numbers"][households.pop("assignment").to_numpy()])
    w.layer("households", households)
    _plans_map(s, plans, w)
    w.say("depot maps drawn")

    cells, spread = _catchments(s, chosen, w)
    w.say("catchments drawn")
    net = _network(s, chosen, w, seed)
    w.say("link network drawn")

    table, written = _tables(s, plans, cells, spread, net, out)
    (out / "summary.md").write_text(table)
    w.files += ["summary.md", *written]
    print(table)
    if not quiet:
        print(f"Wrote {len(w.files)} files to {out}: {', '.join(dict.fromkeys(w.files))} "
              f"({time.perf_counter() - w.started:.1f} s)")
    return table, w
