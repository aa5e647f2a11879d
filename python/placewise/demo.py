"""The demo: siting depots for the invented coastal district of Orsavel.

``python -m placewise demo --out DIR`` runs the whole library on one invented scenario
(see :mod:`placewise._scenario`): 12,000 households in twelve towns and the countryside of
a district with a ragged coast and a lake.

1. Depot plans: one central depot (Fermat–Weber point), five depots minimising total
   travel (p-median) and five depots minimising the worst trip (p-center), compared.
2. Catchments of the p-median depots: Voronoi cells clipped to the land (coast and lake
   cut them), with the people each serves, and the ellipse covering all demand.
3. A link network joining the depots and the towns: the Steiner tree against the minimum
   spanning tree, with the saving.

Every figure is read from the results' own tables (``to_frame``, ``sites_frame``,
``summary``, ``to_geodataframe``): trips to the assigned depot, loads, costs, areas and
lengths are the kernels'. The demo only condenses the per-household trips into measures no
kernel states (mean and worst trip, the share of people within 10 km).

It writes map PNGs, GeoJSON layers and a summary table (Markdown and CSV) to ``DIR`` and
prints the table. Everything is invented; results are planning aids under the model
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

__all__ = ["DISCLAIMER", "Scenario", "run", "scenario"]

DISCLAIMER = (
    "These results are planning aids under a model: straight-line distance and the given "
    "weights (people per household). They are not a plan. Check them against local "
    "regulations and licensed professional judgement before acting on them. The district of "
    "Orsavel and all its data are invented."
)
_SHORT_NOTE = (
    "Planning aid under the model (straight-line distance, people per household as weights); "
    "check against local regulations and licensed professional judgement. Invented scenario."
)
_GRID = "metres on the invented district's local planar grid (x east, y north)"
DEPOTS = 5


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
    >>> s.name, s.households.shape, len(s.region.interiors)    # one lake
    ('Orsavel', (500, 2), 1)
    >>> scenario(households=0).households.shape                # no demand at all
    (0, 2)
    """
    return orsavel(seed, households)


def _in_metres(result: Any) -> Any:
    """``result`` with its lengths named in the grid's unit, metres (``distance_m``, ``area_m2``)."""
    return dataclasses.replace(result, unit="m")


# --------------------------------------------------------------------------- output helpers


class _Writer:
    def __init__(self, out: Path, quiet: bool) -> None:
        self.out = out
        self.quiet = quiet
        self.files: list[str] = []
        self.started = time.perf_counter()

    def say(self, text: str) -> None:
        if not self.quiet:
            print(f"[{time.perf_counter() - self.started:5.1f} s] {text}", flush=True)

    def layer(self, name: str, frame: Any) -> None:
        """Write a GeoDataFrame as a GeoJSON FeatureCollection on the planar grid, with the model note."""
        features = json.loads(frame.to_json(drop_id=True))["features"]
        doc = {"type": "FeatureCollection", "name": name, "description": DISCLAIMER,
               "coordinates": _GRID, "features": features}
        path = self.out / f"{name}.geojson"
        path.write_text(json.dumps(doc, separators=(",", ":")))
        self.files.append(path.name)

    def figure(self, fig: Any, name: str) -> None:
        fig.text(0.5, 0.012, _SHORT_NOTE, ha="center", va="bottom", fontsize=7.5, color="#4c566a", wrap=True)
        path = self.out / f"{name}.png"
        fig.savefig(path, dpi=130)
        import matplotlib.pyplot as plt

        plt.close(fig)
        self.files.append(path.name)


def _plain(value: Any) -> Any:
    if isinstance(value, (np.floating, float)):
        return round(float(value), 3)
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.bool_):
        return bool(value)
    return value


def _points_layer(table: Any, x: Any, y: Any) -> Any:
    import geopandas as gpd

    return gpd.GeoDataFrame(table, geometry=gpd.points_from_xy(x, y))


def _base_map(ax: Any, s: Scenario, title: str, bounds: tuple[float, float, float, float] | None = None) -> None:
    from matplotlib.ticker import FuncFormatter

    ax.set_facecolor(plotting.SEA)
    plotting.draw_polygons(ax, [s.region], facecolor=plotting.LAND, edgecolor="#6b7a89", linewidth=0.9)
    plotting.draw_polygons(ax, [s.lake], facecolor=plotting.LAKE, edgecolor="#6b7a89", linewidth=0.6)
    x0, y0, x1, y1 = bounds if bounds is not None else s.region.bounds
    pad = 0.02 * max(x1 - x0, y1 - y0)
    ax.set_xlim(x0 - pad, x1 + pad)
    ax.set_ylim(y0 - pad, y1 + pad)
    ax.set_aspect("equal")
    km = FuncFormatter(lambda v, _: f"{v / 1000:.0f}")
    ax.xaxis.set_major_formatter(km)
    ax.yaxis.set_major_formatter(km)
    ax.set_xlabel("km east", fontsize=8)
    ax.set_ylabel("km north", fontsize=8)
    ax.tick_params(labelsize=7)
    ax.set_title(title, fontsize=10.5, loc="left")


def _towns(ax: Any, s: Scenario, labels: bool = True) -> None:
    ax.scatter(s.towns[:, 0], s.towns[:, 1], s=np.sqrt(s.town_people) / 3, facecolor="white",
               edgecolor=plotting.INK, linewidth=0.8, zorder=5)
    if labels:
        for name, (x, y) in zip(s.town_names, s.towns):
            ax.annotate(name, (x, y), xytext=(4, 4), textcoords="offset points", fontsize=7, color=plotting.INK,
                        zorder=6)


# --------------------------------------------------------------------------- the three parts


def _evaluate(tag: str, name: str, result: Any, s: Scenario) -> dict[str, Any]:
    """A plan's travel measures, read from the kernel's tables.

    ``result`` is a p-median plan, or the nearest-site allocation of the households to sites
    chosen otherwise: both state per household its depot and trip (``to_frame``), per depot
    its people and households (``sites_frame``) and the total travel (``summary``).
    """
    import shapely

    result = _in_metres(result)
    trips, depots, totals = result.to_frame(), result.sites_frame(), result.summary().iloc[0]
    d = trips["distance_m"].to_numpy()
    people = float(totals["load"])
    sites = depots[["x", "y"]].to_numpy()
    inside = int(shapely.covers(s.region, shapely.points(sites)).sum())
    return {
        "tag": tag, "plan": name, "result": result, "trips": trips, "depots": depots, "sites": sites,
        "person_km": float(totals["cost_m"]) / 1000, "mean_km": float(totals["cost_m"]) / people / 1000,
        # Worst trip and the share within 10 km: no kernel states them; read off the trips.
        "worst_km": float(d.max()) / 1000, "within_10km": 100 * float(s.people[d <= 10_000].sum()) / people,
        "on_land": f"{inside} of {len(sites)}",
    }


def _plans(s: Scenario, seed: int, w: _Writer) -> list[dict[str, Any]]:
    one = pw.weber_point(s.households, s.people)
    # The Weber point states its total cost only; allocating the households to it gives each trip.
    plans = [_evaluate("central", "one central depot", pw.nearest_site(s.households, [one.location], s.people), s)]
    w.say(f"central depot (Fermat-Weber point): {one.cost / 1000:,.0f} person-km")
    m = pw.p_median(s.households, DEPOTS, s.people, seed=seed)
    plans.append(_evaluate("p_median", f"{DEPOTS} depots, least total travel (p-median)", m, s))
    w.say(f"p-median plan: {m.cost / 1000:,.0f} person-km")
    # The p-center plan counts every household alike (the worst trip of anyone); allocating the
    # weighted households to its depots states the people each serves and the total travel.
    c = pw.p_center(s.households, DEPOTS, seed=seed)
    served = pw.nearest_site(s.households, c.sites, s.people)
    plans.append(_evaluate("p_center", f"{DEPOTS} depots, shortest worst trip (p-center)", served, s))
    w.say(f"p-center plan: worst trip {c.radius / 1000:.1f} km")
    return plans


def _plans_map(s: Scenario, plans: list[dict[str, Any]], w: _Writer) -> None:
    import matplotlib.pyplot as plt

    shown = plans[1:]
    fig, axs = plt.subplots(1, len(shown), figsize=(6.2 * len(shown), 5.0), squeeze=False)
    palette = np.asarray(plotting.SITE_COLOURS)
    for ax, plan in zip(axs[0], shown):
        _base_map(ax, s, f"{plan['plan']}\nmean trip {plan['mean_km']:.1f} km · worst trip {plan['worst_km']:.1f} km")
        assignment = plan["trips"]["assignment"].to_numpy()
        ax.scatter(s.households[:, 0], s.households[:, 1], s=1.2, c=palette[assignment % len(palette)],
                   linewidths=0, alpha=0.55, zorder=3)
        _towns(ax, s, labels=False)
        # Each depot's farthest household, from the kernel's per-household trips.
        reach = plan["trips"].groupby("assignment")["distance_m"].max()
        for i, (x, y) in enumerate(plan["sites"]):
            ax.add_patch(plt.Circle((x, y), reach.get(i, 0.0), fill=False, linestyle=(0, (4, 3)), linewidth=0.9,
                                    edgecolor=plotting.site_colour(i), zorder=4))
            ax.scatter([x], [y], marker="*", s=190, color=plotting.site_colour(i), edgecolor="white",
                       linewidth=0.9, zorder=7)
    fig.suptitle(f"{s.name}: where to put the depots\n(dashed circles reach each depot's farthest household)",
                 fontsize=11)
    fig.tight_layout(rect=(0, 0.07, 1, 0.93))
    w.figure(fig, "depots")


def _catchments(s: Scenario, plan: dict[str, Any], w: _Writer) -> tuple[Any, dict[str, float]]:
    """The p-median depots' catchments (Voronoi cells clipped to the land) with their loads,
    and the smallest ellipse covering all households."""
    import matplotlib.pyplot as plt
    import shapely
    from matplotlib.colors import LinearSegmentedColormap, Normalize

    sites, trips, depots = plan["sites"], plan["trips"], plan["depots"]
    cells = _in_metres(pw.voronoi_cells(sites, s.region)).to_geodataframe()
    # The plan serves every household from its nearest depot, so a depot's catchment holds
    # exactly the households the plan assigns to it: its people and households are the plan's.
    people = depots["load"].to_numpy()
    cells.insert(0, "depot", np.arange(1, len(sites) + 1))
    cells["people"] = people
    cells["households"] = depots["points"].to_numpy()
    # Mean trip per catchment: no kernel states it; the people-weighted trips of its households.
    travel = np.bincount(trips["assignment"], weights=s.people * trips["distance_m"], minlength=len(sites))
    cells["mean_trip_m"] = travel / np.where(people > 0, people, 1.0)
    w.layer("catchments", cells)

    e = _in_metres(pw.enclosing_ellipse(s.households))
    outline = e.to_geodataframe()
    w.layer("demand_ellipse", outline)
    spread = {"semi_major_km": e.semi_major / 1000, "semi_minor_km": e.semi_minor / 1000,
              "angle_deg": e.angle, "area_km2": e.area / 1e6}
    ring = outline.geometry.iloc[0]
    bounds = shapely.union(shapely.box(*s.region.bounds), ring).bounds

    fig, ax = plt.subplots(figsize=(9.0, 6.4))
    _base_map(ax, s, f"{s.name}: catchments of the p-median depots, clipped to the land, with their loads", bounds)
    norm = Normalize(vmin=float(people.min()) * 0.8, vmax=float(people.max()))
    cmap = LinearSegmentedColormap.from_list("load", ["#f6f1df", "#a9d3c0", "#3f9a8c", "#1b5e5a"])
    plotting.draw_polygons(ax, cells.geometry, facecolors=[cmap(norm(v)) for v in people], edgecolor="#2e3440",
                           linewidth=1.0, zorder=2)
    plotting.draw_polygons(ax, [s.lake], facecolor=plotting.LAKE, edgecolor="#6b7a89", linewidth=0.6, zorder=2.5)
    _towns(ax, s)
    for i, (x, y) in enumerate(sites):
        ax.scatter([x], [y], marker="*", s=220, color="#b3473b", edgecolor="white", linewidth=1.0, zorder=7)
        ax.annotate(f"depot {i + 1}\n{people[i]:,.0f} people", (x, y), xytext=(0, -24), textcoords="offset points",
                    ha="center", va="top", fontsize=7.5, fontweight="bold", color="#2e3440", zorder=8,
                    bbox={"boxstyle": "round,pad=0.25", "facecolor": "white", "alpha": 0.85, "linewidth": 0})
    ax.plot(*ring.exterior.xy, color="#75508a", linewidth=1.4, linestyle=(0, (6, 2)), zorder=6,
            label="smallest ellipse covering all households")
    ax.legend(loc="lower left", fontsize=7.5, framealpha=0.9)
    fig.colorbar(plt.cm.ScalarMappable(norm=norm, cmap=cmap), ax=ax, shrink=0.7, label="people served")
    fig.tight_layout(rect=(0, 0.07, 1, 1))
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


def _network(s: Scenario, depots: np.ndarray, w: _Writer, seed: int) -> dict[str, Any]:
    import matplotlib.pyplot as plt

    terminals = np.vstack([depots, s.towns])
    names = [f"depot {i + 1}" for i in range(len(depots))] + s.town_names
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

    fig, ax = plt.subplots(figsize=(8.4, 6.0))
    segments = _segments(mst_edges)
    plotting.draw_segments(ax, segments[:, 0], segments[:, 1], colors="#8f9aa6", linewidths=1.4,
                           linestyles=(0, (5, 3)), zorder=4, label=f"minimum spanning tree {result['mst_km']:.1f} km")
    segments = _segments(st_edges)
    plotting.draw_segments(ax, segments[:, 0], segments[:, 1], colors="#1b6f6a", linewidths=2.2, zorder=5,
                           label=f"Steiner tree {result['steiner_km']:.1f} km ({result['junctions']} junctions)")
    ax.scatter(st.junctions[:, 0], st.junctions[:, 1], s=22, color="#1b6f6a", edgecolor="white", zorder=6)
    _base_map(ax, s, f"{s.name}: linking the depots and towns — the Steiner tree saves {result['saving']:.1f} % "
                     "over the spanning tree")
    _towns(ax, s)
    ax.scatter(depots[:, 0], depots[:, 1], marker="*", s=200, color="#b3473b", edgecolor="white", zorder=7)
    ax.legend(loc="upper right", fontsize=8, framealpha=0.9)
    fig.tight_layout(rect=(0, 0.07, 1, 1))
    w.figure(fig, "network")
    return result


# --------------------------------------------------------------------------- summary


def _tables(s: Scenario, plans: list[dict[str, Any]], cells: Any, spread: dict[str, float],
            net: dict[str, Any]) -> tuple[str, list[list[Any]]]:
    lines = [f"# {s.name}: depot siting summary", "",
             f"{len(s.people):,} households, {s.people.sum():,.0f} people, {len(s.towns)} towns; "
             f"land area {s.region.area / 1e6:,.0f} km².", ""]
    rows: list[list[Any]] = [["section", "measure", "plan", "value", "unit"]]
    head = "| measure | " + " | ".join(p["plan"] for p in plans) + " |"
    lines += ["## Depot plans", "", head, "|" + "---|" * (len(plans) + 1)]
    measures = [("total travel", "person_km", "person-km", "{:,.0f}"),
                ("mean trip per person", "mean_km", "km", "{:.2f}"),
                ("worst trip", "worst_km", "km", "{:.2f}"),
                ("people within 10 km", "within_10km", "%", "{:.1f}"),
                ("depots on land", "on_land", "", "{}")]
    for label, key, unit, fmt in measures:
        shown = label + (f" ({unit})" if unit else "")
        lines.append(f"| {shown} | " + " | ".join(fmt.format(p[key]) for p in plans) + " |")
        rows += [["plans", label, p["plan"], p[key], unit] for p in plans]
    lines += ["", "## Catchments of the p-median depots (clipped to the land)", "",
              "| depot | area (km²) | households | people | mean trip (km) |", "|---|---|---|---|---|"]
    for r in cells.itertuples():
        lines.append(f"| {r.depot} | {r.area_m2 / 1e6:,.0f} | {r.households:,} | {r.people:,.0f} | "
                     f"{r.mean_trip_m / 1000:.2f} |")
        rows += [["catchments", k, f"depot {r.depot}", v, u]
                 for k, v, u in (("area", r.area_m2 / 1e6, "km2"), ("households", r.households, ""),
                                 ("people", r.people, ""), ("mean trip", r.mean_trip_m / 1000, "km"))]
    lines += ["", f"Smallest ellipse covering all households: semi-axes {spread['semi_major_km']:.1f} km and "
              f"{spread['semi_minor_km']:.1f} km, major axis at {spread['angle_deg']:.0f}° from east, area "
              f"{spread['area_km2']:,.0f} km²."]
    rows += [["demand ellipse", k, "", v, u] for (k, v), u in zip(spread.items(), ["km", "km", "deg", "km2"])]
    proven = "proven shortest" if net["optimal"] else "best found, not proven shortest"
    lines += ["", f"## Link network ({net['terminals']} depots and towns)", "",
              "| network | length (km) |", "|---|---|", f"| minimum spanning tree | {net['mst_km']:.1f} |",
              f"| Steiner tree, {net['junctions']} junctions ({proven}) | {net['steiner_km']:.1f} |",
              f"| saving | {net['saving']:.2f} % |"]
    rows += [["network", "minimum spanning tree length", "", net["mst_km"], "km"],
             ["network", "Steiner tree length", "", net["steiner_km"], "km"],
             ["network", "saving over the spanning tree", "", net["saving"], "%"]]
    lines += ["", f"> {DISCLAIMER} Sites are points in the plane: a depot can fall on water, so the "
              "table says how many are on land.", ""]
    return "\n".join(lines), rows


def run(out: str | Path, *, quiet: bool = False, seed: int = 0) -> str:
    """Run the demo, write its files to ``out`` and print (and return) the summary table.

    Parameters
    ----------
    out : path
        Folder for ``depots.png``, ``catchments.png``, ``network.png``, the GeoJSON
        layers (``catchments.geojson``, ``links_mst.geojson``, ...), ``summary.md`` and
        ``summary.csv`` (created if missing).
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
    w = _Writer(out, quiet)
    s = scenario()
    w.say(f"{s.name}: {len(s.people):,} households, {s.people.sum():,.0f} people in {len(s.towns)} towns and around")
    import geopandas as gpd

    w.layer("region", gpd.GeoDataFrame({"name": [s.name], "area_m2": [s.region.area]}, geometry=[s.region]))
    w.layer("towns", _points_layer({"name": s.town_names, "people": s.town_people}, s.towns[:, 0], s.towns[:, 1]))

    plans = _plans(s, seed, w)
    for plan in plans:
        depots = plan["depots"].rename(columns={"load": "people", "points": "households"})
        depots.insert(0, "depot", np.arange(1, len(depots) + 1))
        w.layer(f"depots_{plan['tag']}", _points_layer(depots, depots["x"], depots["y"]))
    chosen = plans[1]  # the p-median plan: least total travel
    households = chosen["result"].to_geodataframe()
    households.insert(0, "people", s.people)
    households.insert(1, "depot", households.pop("assignment") + 1)
    w.layer("households", households)
    _plans_map(s, plans, w)
    w.say("depot maps drawn")

    cells, spread = _catchments(s, chosen, w)
    w.say("catchments drawn")
    net = _network(s, chosen["sites"], w, seed)
    w.say("link network drawn")

    table, rows = _tables(s, plans, cells, spread, net)
    (out / "summary.md").write_text(table)
    with open(out / "summary.csv", "w", newline="") as fh:
        writer = csv.writer(fh)
        writer.writerows([[_plain(v) for v in r] for r in rows])
        writer.writerow(["note", DISCLAIMER, "", "", ""])
    w.files += ["summary.md", "summary.csv"]
    print(table)
    if not quiet:
        print(f"Wrote {len(w.files)} files to {out}: {', '.join(w.files)} "
              f"({time.perf_counter() - w.started:.1f} s)")
    return table
