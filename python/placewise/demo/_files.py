"""The demo's files: layers (GeoPackage and GeoJSON), figures, tidy tables and the summary."""

from __future__ import annotations

import csv
import json
import time
from pathlib import Path
from typing import Any

import numpy as np

from .._scenario import Scenario
from ._district import DISCLAIMER

# The coordinate columns a layer may carry beside its geometry (a cell's site, an ellipse's centre).
_XY = {"x", "y"}


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
        (RFC 7946: longitude, latitude; no CRS member), both carrying the model note.

        Coordinate columns (``x``, ``y``: a catchment's depot, an ellipse's centre) move with
        the geometry, so in every file they are in the layer's own CRS: eastings and
        northings in the GeoPackage, longitude and latitude in GeoJSON."""
        shifted = frame.set_geometry(frame.geometry.translate(*self.s.origin))
        if _XY <= set(frame.columns):
            shifted = shifted.assign(x=frame["x"] + self.s.origin[0], y=frame["y"] + self.s.origin[1])
        placed = shifted.set_crs(self.s.crs, allow_override=True)
        placed.to_file(self.gpkg, layer=name, driver="GPKG", layer_options={"DESCRIPTION": DISCLAIMER})
        if self.gpkg.name not in self.files:
            self.files.append(self.gpkg.name)
        features = json.loads(_to_crs(placed, "EPSG:4326").to_json(drop_id=True))["features"]
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


def _to_crs(frame: Any, crs: str) -> Any:
    """``frame`` in ``crs``, its coordinate columns (``x``, ``y``) transformed with the geometry."""
    import geopandas as gpd

    out = frame.to_crs(crs)
    if _XY <= set(frame.columns):
        points = gpd.GeoSeries(gpd.points_from_xy(frame["x"], frame["y"]), crs=frame.crs).to_crs(crs)
        out = out.assign(x=points.x.to_numpy(), y=points.y.to_numpy())
    return out


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
