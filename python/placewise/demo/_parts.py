"""The three parts: depot plans compared, the p-median depots' catchments, and a link network."""

from __future__ import annotations

from typing import Any

import numpy as np

import placewise as pw

from .. import plotting
from .._scenario import Scenario
from ._district import DEPOTS, _colour, _in_metres, _pair_numbers
from ._files import _Writer
from ._maps import _base_map, _depots, _finish_figure, _label_map, _lake, _marker_box, _symbols, _towns


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
