"""The run: every part in turn, its files written to the output folder."""

from __future__ import annotations

import time
from pathlib import Path

from .._scenario import Scenario
from ._district import scenario
from ._files import _points_layer, _tables, _Writer
from ._parts import _catchments, _network, _plans, _plans_map


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
