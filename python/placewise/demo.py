"""The demo: siting depots for the invented coastal district of Orsavel.

``python -m placewise demo --out DIR`` runs the whole library on one invented scenario
(see :mod:`placewise._scenario`): 12,000 households in twelve towns and the countryside of
a district with a ragged coast and a lake.

1. Depot plans: one central depot (Fermat–Weber point), five depots minimising total
   travel (p-median) and five depots minimising the worst trip (p-center), compared.
2. Service areas of the p-median depots: Voronoi cells clipped to the land (coast and lake
   cut them), with the people each serves, and the ellipse covering all demand.
3. A link network joining the depots and the towns: the Steiner tree against the minimum
   spanning tree, with the saving.

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

    Examples
    --------
    >>> from placewise.demo import scenario
    >>> s = scenario(households=500)
    >>> s.name, s.households.shape, len(s.region.interiors)    # one lake
    ('Orsavel', (500, 2), 1)
    """
    return orsavel(seed, households)


def _have(*names: str) -> bool:
    return all(hasattr(pw, n) for n in names)


# --------------------------------------------------------------------------- output helpers


class _Writer:
    def __init__(self, out: Path, quiet: bool) -> None:
        self.out = out
        self.quiet = quiet
        self.files: list[str] = []
        self.skipped: list[str] = []
        self.started = time.perf_counter()

    def say(self, text: str) -> None:
        if not self.quiet:
            print(f"[{time.perf_counter() - self.started:5.1f} s] {text}", flush=True)

    def layer(self, name: str, geoms: list[Any], properties: dict[str, Any]) -> None:
        """Write a GeoJSON FeatureCollection (planar grid coordinates, with the model note)."""
        import shapely

        features = []
        for i, geom in enumerate(geoms):
            props = {k: _plain(v[i]) for k, v in properties.items()}
            features.append({"type": "Feature", "properties": props,
                             "geometry": json.loads(shapely.to_geojson(geom))})
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


def _km(value: float, digits: int = 1) -> str:
    return f"{value / 1000:,.{digits}f}"


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


def _evaluate(tag: str, name: str, sites: np.ndarray, s: Scenario, assignment: np.ndarray) -> dict[str, Any]:
    """Travel measures of a plan: every household goes to the site it is assigned to."""
    import shapely

    d = np.hypot(*(s.households - sites[assignment]).T)
    w = s.people
    inside = int(shapely.covers(s.region, shapely.points(sites)).sum())
    return {
        "tag": tag, "plan": name, "sites": sites, "assignment": assignment, "distance": d,
        "person_km": float(w @ d) / 1000, "mean_km": float(w @ d / w.sum()) / 1000,
        "worst_km": float(d.max()) / 1000, "within_10km": 100 * float(w[d <= 10_000].sum() / w.sum()),
        "on_land": f"{inside} of {len(sites)}",
    }


def _plans(s: Scenario, seed: int, w: _Writer) -> list[dict[str, Any]]:
    plans = []
    one = pw.weber_point(s.households, s.people)
    plans.append(_evaluate("central", "one central depot", np.asarray(one.location)[None], s, np.zeros(len(s.people), int)))
    w.say(f"central depot (Fermat-Weber point): {plans[-1]['person_km']:,.0f} person-km")
    if _have("p_median"):
        m = pw.p_median(s.households, DEPOTS, s.people, seed=seed)
        plans.append(_evaluate("p_median", f"{DEPOTS} depots, least total travel (p-median)", np.asarray(m.sites), s,
                               np.asarray(m.assignment)))
        w.say(f"p-median plan: {plans[-1]['person_km']:,.0f} person-km")
    else:
        w.skipped.append("p-median plan (placewise.p_median is not in this build)")
    if _have("p_center"):
        c = pw.p_center(s.households, DEPOTS, seed=seed)
        plans.append(_evaluate("p_center", f"{DEPOTS} depots, shortest worst trip (p-center)", np.asarray(c.sites), s,
                               np.asarray(c.assignment)))
        w.say(f"p-center plan: worst trip {plans[-1]['worst_km']:.1f} km")
    else:
        w.skipped.append("p-center plan (placewise.p_center is not in this build)")
    return plans


def _plans_map(s: Scenario, plans: list[dict[str, Any]], w: _Writer) -> None:
    import matplotlib.pyplot as plt

    shown = plans[1:] if len(plans) > 1 else plans
    fig, axs = plt.subplots(1, len(shown), figsize=(6.2 * len(shown), 5.0), squeeze=False)
    for ax, plan in zip(axs[0], shown):
        _base_map(ax, s, f"{plan['plan']}\nmean trip {plan['mean_km']:.1f} km · worst trip {plan['worst_km']:.1f} km")
        colours = [plotting.site_colour(i) for i in plan["assignment"]]
        ax.scatter(s.households[:, 0], s.households[:, 1], s=1.2, c=colours, linewidths=0, alpha=0.55, zorder=3)
        _towns(ax, s, labels=False)
        for i, (x, y) in enumerate(plan["sites"]):
            reach = plan["distance"][plan["assignment"] == i].max(initial=0.0)
            ax.add_patch(plt.Circle((x, y), reach, fill=False, linestyle=(0, (4, 3)), linewidth=0.9,
                                    edgecolor=plotting.site_colour(i), zorder=4))
            ax.scatter([x], [y], marker="*", s=190, color=plotting.site_colour(i), edgecolor="white",
                       linewidth=0.9, zorder=7)
    fig.suptitle(f"{s.name}: where to put the depots\n(dashed circles reach each depot's farthest household)",
                 fontsize=11)
    fig.tight_layout(rect=(0, 0.07, 1, 0.93))
    w.figure(fig, "depots")


def _service_areas(s: Scenario, plan: dict[str, Any], w: _Writer) -> tuple[list[dict[str, Any]], dict[str, float]]:
    import matplotlib.pyplot as plt
    from matplotlib.colors import LinearSegmentedColormap, Normalize

    sites = plan["sites"]
    cells = pw.voronoi_cells(sites, s.region)
    polygons = list(cells.to_shapely())
    alloc = pw.nearest_site(s.households, sites, s.people)
    index = np.asarray(alloc.index)
    load = np.asarray(alloc.load)
    rows = []
    for i in range(len(sites)):
        mine = index == i
        people = s.people[mine]
        rows.append({"depot": i + 1, "area_km2": float(cells.area[i]) / 1e6, "households": int(mine.sum()),
                     "people": float(load[i]),
                     "mean_km": float(people @ np.asarray(alloc.distance)[mine] / max(people.sum(), 1)) / 1000})
    w.layer("service_areas", polygons, {"depot": [r["depot"] for r in rows],
                                        "area_km2": [r["area_km2"] for r in rows],
                                        "households": [r["households"] for r in rows],
                                        "people": [r["people"] for r in rows],
                                        "mean_trip_km": [r["mean_km"] for r in rows]})
    ring = None
    spread: dict[str, float] = {}
    bounds = s.region.bounds
    if _have("enclosing_ellipse"):
        import shapely

        e = pw.enclosing_ellipse(s.households)
        t = np.linspace(0, 2 * np.pi, 200)
        a, b = np.asarray(e.semi_axes)
        c, sn = np.cos(e.angle), np.sin(e.angle)
        ring = np.column_stack([a * np.cos(t), b * np.sin(t)]) @ np.array([[c, sn], [-sn, c]]) + np.asarray(e.center)
        w.layer("demand_ellipse", [shapely.Polygon(ring[:-1])],
                {"semi_major_km": [a / 1000], "semi_minor_km": [b / 1000], "angle_deg": [np.degrees(e.angle)],
                 "area_km2": [e.area / 1e6]})
        spread = {"semi_major_km": float(a) / 1000, "semi_minor_km": float(b) / 1000,
                  "angle_deg": float(np.degrees(e.angle)), "area_km2": float(e.area) / 1e6}
        bounds = (min(bounds[0], ring[:, 0].min()), min(bounds[1], ring[:, 1].min()),
                  max(bounds[2], ring[:, 0].max()), max(bounds[3], ring[:, 1].max()))
    else:
        w.skipped.append("demand ellipse (placewise.enclosing_ellipse is not in this build)")
    fig, ax = plt.subplots(figsize=(9.0, 6.4))
    _base_map(ax, s, f"{s.name}: service areas of the p-median depots, clipped to the land, with their loads", bounds)
    norm = Normalize(vmin=float(load.min()) * 0.8, vmax=float(load.max()))
    cmap = LinearSegmentedColormap.from_list("load", ["#f6f1df", "#a9d3c0", "#3f9a8c", "#1b5e5a"])
    plotting.draw_polygons(ax, polygons, facecolors=[cmap(norm(v)) for v in load], edgecolor="#2e3440",
                           linewidth=1.0, zorder=2)
    plotting.draw_polygons(ax, [s.lake], facecolor=plotting.LAKE, edgecolor="#6b7a89", linewidth=0.6, zorder=2.5)
    _towns(ax, s)
    for i, (x, y) in enumerate(sites):
        ax.scatter([x], [y], marker="*", s=220, color="#b3473b", edgecolor="white", linewidth=1.0, zorder=7)
        ax.annotate(f"depot {i + 1}\n{load[i]:,.0f} people", (x, y), xytext=(0, -24), textcoords="offset points",
                    ha="center", va="top", fontsize=7.5, fontweight="bold", color="#2e3440", zorder=8,
                    bbox={"boxstyle": "round,pad=0.25", "facecolor": "white", "alpha": 0.85, "linewidth": 0})
    if ring is not None:
        ax.plot(ring[:, 0], ring[:, 1], color="#75508a", linewidth=1.4, linestyle=(0, (6, 2)), zorder=6,
                label="smallest ellipse covering all households")
        ax.legend(loc="lower left", fontsize=7.5, framealpha=0.9)
    sm = plt.cm.ScalarMappable(norm=norm, cmap=cmap)
    fig.colorbar(sm, ax=ax, shrink=0.7, label="people served")
    fig.tight_layout(rect=(0, 0.07, 1, 1))
    w.figure(fig, "service_areas")
    return rows, spread


def _network(s: Scenario, depots: np.ndarray, w: _Writer, seed: int) -> dict[str, Any]:
    import matplotlib.pyplot as plt
    import shapely

    terminals = np.vstack([depots, s.towns])
    names = [f"depot {i + 1}" for i in range(len(depots))] + s.town_names
    mst = pw.spanning_tree(terminals)
    mst_edges = np.asarray(mst.edges)
    result: dict[str, Any] = {"terminals": len(terminals), "mst_km": float(mst.length) / 1000}
    w.layer("links_mst", list(shapely.linestrings(np.stack([terminals[mst_edges[:, 0]], terminals[mst_edges[:, 1]]], 1))),
            {"from": [names[i] for i in mst_edges[:, 0]], "to": [names[j] for j in mst_edges[:, 1]],
             "length_km": np.asarray(mst.edge_length) / 1000})
    fig, ax = plt.subplots(figsize=(8.4, 6.0))
    from . import plotting as pl

    pl.draw_segments(ax, terminals[mst_edges[:, 0]], terminals[mst_edges[:, 1]], colors="#8f9aa6",
                     linewidths=1.4, linestyles=(0, (5, 3)), zorder=4,
                     label=f"minimum spanning tree {result['mst_km']:.1f} km")
    title = f"{s.name}: linking the depots and towns"
    if _have("steiner_tree"):
        st = pw.steiner_tree(terminals, seed=seed, time_limit=5.0)
        nodes = np.asarray(st.nodes)
        edges = np.asarray(st.edges)
        result.update(steiner_km=float(st.length) / 1000, saving=100 * float(st.saving),
                      junctions=len(nodes) - int(st.terminal_count), optimal=bool(st.optimal))
        node_names = names + [f"junction {k + 1}" for k in range(len(nodes) - len(names))]
        w.layer("links_steiner", list(shapely.linestrings(np.stack([nodes[edges[:, 0]], nodes[edges[:, 1]]], 1))),
                {"from": [node_names[i] for i in edges[:, 0]], "to": [node_names[j] for j in edges[:, 1]],
                 "length_km": np.hypot(*(nodes[edges[:, 0]] - nodes[edges[:, 1]]).T) / 1000})
        pl.draw_segments(ax, nodes[edges[:, 0]], nodes[edges[:, 1]], colors="#1b6f6a", linewidths=2.2, zorder=5,
                         label=f"Steiner tree {result['steiner_km']:.1f} km ({result['junctions']} junctions)")
        junctions = nodes[int(st.terminal_count):]
        ax.scatter(junctions[:, 0], junctions[:, 1], s=22, color="#1b6f6a", edgecolor="white", zorder=6)
        title += f" — the Steiner tree saves {result['saving']:.1f} % over the spanning tree"
    else:
        w.skipped.append("Steiner link network (placewise.steiner_tree is not in this build)")
    _base_map(ax, s, title)
    _towns(ax, s)
    ax.scatter(depots[:, 0], depots[:, 1], marker="*", s=200, color="#b3473b", edgecolor="white", zorder=7)
    ax.legend(loc="upper right", fontsize=8, framealpha=0.9)
    fig.tight_layout(rect=(0, 0.07, 1, 1))
    w.figure(fig, "network")
    return result


# --------------------------------------------------------------------------- summary


def _tables(s: Scenario, plans: list[dict[str, Any]], areas: list[dict[str, Any]] | None,
            spread: dict[str, float], net: dict[str, Any] | None) -> tuple[str, list[list[Any]]]:
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
    if areas:
        lines += ["", "## Service areas of the p-median depots (clipped to the land)", "",
                  "| depot | area (km²) | households | people | mean trip (km) |", "|---|---|---|---|---|"]
        for r in areas:
            lines.append(f"| {r['depot']} | {r['area_km2']:,.0f} | {r['households']:,} | {r['people']:,.0f} | "
                         f"{r['mean_km']:.2f} |")
            rows += [["service areas", k, f"depot {r['depot']}", r[k], u]
                     for k, u in (("area_km2", "km2"), ("households", ""), ("people", ""), ("mean_km", "km"))]
    if spread:
        lines += ["", f"Smallest ellipse covering all households: semi-axes {spread['semi_major_km']:.1f} km and "
                  f"{spread['semi_minor_km']:.1f} km, major axis at {spread['angle_deg']:.0f}° from east, area "
                  f"{spread['area_km2']:,.0f} km²."]
        rows += [["demand ellipse", k, "", v, u] for (k, v), u in zip(spread.items(), ["km", "km", "deg", "km2"])]
    if net:
        lines += ["", f"## Link network ({net['terminals']} depots and towns)", "",
                  "| network | length (km) |", "|---|---|", f"| minimum spanning tree | {net['mst_km']:.1f} |"]
        rows.append(["network", "minimum spanning tree length", "", net["mst_km"], "km"])
        if "steiner_km" in net:
            proven = "proven shortest" if net["optimal"] else "best found, not proven shortest"
            lines += [f"| Steiner tree, {net['junctions']} junctions ({proven}) | {net['steiner_km']:.1f} |",
                      f"| saving | {net['saving']:.2f} % |"]
            rows += [["network", "Steiner tree length", "", net["steiner_km"], "km"],
                     ["network", "saving over the spanning tree", "", net["saving"], "%"]]
    lines += ["", f"> {DISCLAIMER} Sites are points in the plane: a depot can fall on water, so the "
              "table says how many are on land.", ""]
    return "\n".join(lines), rows


def run(out: str | Path, *, quiet: bool = False, seed: int = 0) -> str:
    """Run the demo, write its files to ``out`` and print (and return) the summary table.

    Parameters
    ----------
    out : path
        Folder for ``depots.png``, ``service_areas.png``, ``network.png``, the GeoJSON
        layers, ``summary.md`` and ``summary.csv`` (created if missing).
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
    import shapely

    w.layer("region", [s.region], {"name": [s.name], "area_km2": [s.region.area / 1e6]})
    w.layer("towns", list(shapely.points(s.towns)), {"name": s.town_names, "people": s.town_people})

    plans = _plans(s, seed, w)
    for plan in plans:
        w.layer(f"depots_{plan['tag']}", list(shapely.points(plan["sites"])),
                {"depot": list(range(1, len(plan["sites"]) + 1)),
                 "people": np.bincount(plan["assignment"], weights=s.people, minlength=len(plan["sites"]))})
    chosen = next((p for p in plans if p["tag"] == "p_median"), plans[0])
    w.layer("households", list(shapely.points(s.households)),
            {"people": s.people, f"depot_{chosen['tag']}": chosen["assignment"] + 1,
             "trip_km": chosen["distance"] / 1000})
    _plans_map(s, plans, w)
    w.say("depot maps drawn")

    areas: list[dict[str, Any]] | None = None
    spread: dict[str, float] = {}
    if _have("voronoi_cells", "nearest_site") and len(chosen["sites"]) > 1:
        areas, spread = _service_areas(s, chosen, w)
        w.say("service areas drawn")
    else:
        w.skipped.append("service areas (placewise.voronoi_cells / nearest_site or the p-median plan missing)")
    net = None
    if _have("spanning_tree"):
        net = _network(s, chosen["sites"], w, seed)
        w.say("link network drawn")
    else:
        w.skipped.append("link network (placewise.spanning_tree is not in this build)")

    table, rows = _tables(s, plans, areas, spread, net)
    if w.skipped:
        table += "\nNot run in this build: " + "; ".join(w.skipped) + ".\n"
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
