"""Every ``gis`` family on real lon/lat data, checked against ``pyproj.Geod`` (GeographicLib):
the model placewise uses by default for geographic input (the WGS84 ellipsoid, the sphere for
cells and trees, or a local frame that must stay within its scale-error limit) against one
transverse Mercator (UTM) zone estimated for the whole frame, the single projection that
was used for all geographic input before and that ``work_crs=`` still forces.

For each family the largest error of what the user receives is measured, not what the
kernel believes: a reported distance, cost, radius, length or area is recomputed by
``pyproj.Geod`` on the returned geometry (sites, edges, cells, polygons), and the answer
itself is compared with the ellipsoidal optimum where one is known (the site's distance from
the ellipsoidal Weber point; points not assigned to their geodesically nearest site; the
tree's true length over the geodesic minimum spanning tree's). "refused" means the call
raised an ``InputError`` that says why and how to proceed (more than a hemisphere for the
single-site kernels; a frame distorting distances by more than 0.1 % for the families solved
in a local frame), which is the intended answer for data that wide.

Data (copied into ``tests/data`` with their citations and licences):

- ``us_airports.csv``: 3,376 US airports with outlying islands (Alaska, Hawaii, Guam, Puerto
  Rico, and four in Thailand, Palau, the Northern Marianas and Micronesia), and its 3,069
  points in the contiguous states;
- ``naturalearth_country_points.csv``: one point per country of the world (177).

Run: ``python benchmarks/earth_truth.py`` (about a minute); prints a Markdown table.
"""

from __future__ import annotations

import sys
import warnings
from collections.abc import Callable
from pathlib import Path
from typing import Any

import geopandas as gpd
import numpy as np
import pandas as pd
from pyproj import Geod, Transformer
from scipy.sparse.csgraph import minimum_spanning_tree

import placewise as pw
from placewise import gis

DATA = Path(__file__).resolve().parent.parent / "tests" / "data"
GEOD = Geod(ellps="WGS84")
SITES = 20


def _frame(lon: np.ndarray, lat: np.ndarray) -> gpd.GeoDataFrame:
    return gpd.GeoDataFrame({"lon": lon, "lat": lat}, geometry=gpd.points_from_xy(lon, lat), crs="EPSG:4326")


def datasets() -> dict[str, gpd.GeoDataFrame]:
    air = pd.read_csv(DATA / "us_airports.csv")
    contiguous = air[air.longitude.between(-125, -66) & air.latitude.between(24, 50)]
    world = pd.read_csv(DATA / "naturalearth_country_points.csv")
    return {
        "national (US airports, 3,376)": _frame(air.longitude.to_numpy(), air.latitude.to_numpy()),
        "national, contiguous (3,069)": _frame(contiguous.longitude.to_numpy(), contiguous.latitude.to_numpy()),
        "global (country points, 177)": _frame(world.lon.to_numpy(), world.lat.to_numpy()),
    }


def _lonlat(frame: gpd.GeoDataFrame) -> np.ndarray:
    geo = frame.geometry.to_crs(4326) if frame.crs is not None else frame.geometry
    return np.column_stack([geo.x.to_numpy(), geo.y.to_numpy()])


def _site(row: Any, kw: dict[str, Any]) -> np.ndarray:
    """The returned site's lon/lat from its ``x``, ``y`` columns (working-CRS coordinates)."""
    if not kw:
        return np.array([row.x, row.y])
    to_lonlat = Transformer.from_crs(kw["work_crs"], 4326, always_xy=True)
    return np.array(to_lonlat.transform(row.x, row.y))


def _geodesic(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    a, b = np.broadcast_arrays(np.atleast_2d(a), np.atleast_2d(b))
    return GEOD.inv(a[:, 0], a[:, 1], b[:, 0], b[:, 1])[2]


def _rel(reported: float, true: float) -> float:
    return abs(reported / true - 1.0)


def _pct(x: float) -> str:
    return f"{100 * x:.3g} %" if x >= 1e-6 else f"{x:.1e}"


def _lines_length(frame: gpd.GeoDataFrame) -> np.ndarray:
    geo = frame.geometry.to_crs(4326)
    return np.array([GEOD.geometry_length(g) for g in geo])


def _area(geom: Any) -> float:
    return abs(GEOD.geometry_area_perimeter(geom)[0])


# Each check takes the frame and the call's keyword arguments (empty: the default model;
# ``work_crs``: the one zone) and returns its findings as text, with the largest error first.

def weber(frame: gpd.GeoDataFrame, kw: dict[str, Any], truth: dict[str, Any]) -> str:
    row = gis.weber_point(frame, **kw).iloc[0]
    site = _site(row, kw)
    pts = _lonlat(frame)
    true_cost = float(_geodesic(pts, site).sum())
    note = f"cost {_pct(_rel(row.cost_m, true_cost))} off"
    if "weber" in truth:
        best_site, best_cost = truth["weber"]
        note += (f"; site {_geodesic(site, best_site)[0] / 1000:.1f} km from the ellipsoidal optimum, "
                 f"true cost {_pct(true_cost / best_cost - 1)} above it")
    elif not kw:
        truth["weber"] = (site, true_cost)
    return note


def minimax(frame: gpd.GeoDataFrame, kw: dict[str, Any], truth: dict[str, Any]) -> str:
    result = gis.enclosing_circle(frame, **kw)
    row = result.iloc[0]
    centre = _site(row, kw)
    pts = _lonlat(frame)
    true_radius = float(_geodesic(pts, centre).max())
    polygon = gpd.GeoSeries([row.geometry], crs=result.crs).to_crs(4326).iloc[0]
    outside = int((~gpd.GeoSeries(frame.geometry.to_crs(4326)).within(polygon.buffer(1e-9))).sum())
    note = f"radius {_pct(_rel(row.radius_m, true_radius))} off; area {_pct(_rel(row.area_m2, _area(polygon)))} off " \
           f"(of its own polygon); {outside} points outside the polygon; polygon valid: {polygon.is_valid}"
    if "minimax" in truth:
        note += f"; worst distance {_pct(true_radius / truth['minimax'] - 1)} above the ellipsoidal optimum"
    elif not kw:
        truth["minimax"] = true_radius
    return note


def nearest(frame: gpd.GeoDataFrame, kw: dict[str, Any], truth: dict[str, Any]) -> str:
    sites = frame.iloc[np.linspace(0, len(frame) - 1, SITES).astype(int)].reset_index(drop=True)
    _, demand, _ = gis.nearest_site(frame, sites, **kw)
    pts, site_pts = _lonlat(frame), _lonlat(sites)
    every = np.stack([_geodesic(pts, s) for s in site_pts], axis=1)
    chosen = demand["site"].to_numpy().astype(int)
    true = every[np.arange(len(pts)), chosen]
    off = np.abs(demand["distance_m"].to_numpy()[true > 0] / true[true > 0] - 1)
    wrong = int((every[np.arange(len(pts)), chosen] > every.min(axis=1) * (1 + 1e-12)).sum())
    return (f"distance up to {_pct(off.max())} off (median {_pct(float(np.median(off)))}); "
            f"{wrong} points not at their geodesically nearest site")


def cells(frame: gpd.GeoDataFrame, kw: dict[str, Any], truth: dict[str, Any]) -> str:
    result = gis.voronoi_cells(frame, **kw)
    polygons = result.geometry.to_crs(4326)
    areas = np.array([_area(g) for g in polygons])
    off = np.abs(result["area_m2"].to_numpy() / areas - 1)
    own = int(sum(not poly.buffer(1e-9).covers(pt) for poly, pt in zip(polygons, frame.geometry.to_crs(4326))))
    return (f"cell areas up to {_pct(off.max())} off their polygons'; "
            f"sum of reported areas {result['area_m2'].sum():.4e} m²; {own} points outside their own cell")


def _edges_off(edges: gpd.GeoDataFrame, summary: Any) -> tuple[np.ndarray, float, float]:
    """A network's edges against ``pyproj.Geod``: their geodesic lengths, the largest
    relative error of a reported edge length, and that of the reported total."""
    true = _lines_length(edges)
    off = np.abs(edges["length_m"].to_numpy()[true > 0] / true[true > 0] - 1)
    return true, float(off.max()), _rel(summary["length_m"].iloc[0], true.sum())


def tree(frame: gpd.GeoDataFrame, kw: dict[str, Any], truth: dict[str, Any]) -> str:
    edges, summary = gis.spanning_tree(frame, **kw)
    true, worst, total = _edges_off(edges, summary)
    if "mst" not in truth:
        pts = _lonlat(frame)
        n = len(pts)
        i, j = np.triu_indices(n, 1)
        dense = np.zeros((n, n))
        dense[i, j] = GEOD.inv(pts[i, 0], pts[i, 1], pts[j, 0], pts[j, 1])[2]
        truth["mst"] = float(minimum_spanning_tree(dense).sum())
    return (f"edge lengths up to {_pct(worst)} off; total reported {_pct(total)} off its edges'; "
            f"the tree's true length {_pct(true.sum() / truth['mst'] - 1)} above the geodesic MST")


def steiner(frame: gpd.GeoDataFrame, kw: dict[str, Any], truth: dict[str, Any]) -> str:
    _, worst, total = _edges_off(*gis.steiner_tree(frame, **kw))
    return f"edge lengths up to {_pct(worst)} off; total {_pct(total)} off"


def _plan_check(kind: str) -> Callable[..., str]:
    def check(frame: gpd.GeoDataFrame, kw: dict[str, Any], truth: dict[str, Any]) -> str:
        sites, demand, summary = getattr(gis, kind)(frame, 5, **kw)
        site_pts = _lonlat(sites)
        pts = _lonlat(frame)
        true = _geodesic(pts, site_pts[demand["site"].to_numpy().astype(int)])
        keep = true > 0
        off = np.abs(demand["distance_m"].to_numpy()[keep] / true[keep] - 1)
        column = "cost_m" if kind == "p_median" else "radius_m"
        total = true.sum() if kind == "p_median" else true.max()
        return f"distances up to {_pct(off.max())} off; {column} {_pct(_rel(summary[column].iloc[0], total))} off"
    return check


def ellipse(frame: gpd.GeoDataFrame, kw: dict[str, Any], truth: dict[str, Any]) -> str:
    result = gis.enclosing_ellipse(frame, **kw)
    polygon = result.geometry.to_crs(4326).iloc[0]
    outside = int((~frame.geometry.to_crs(4326).within(polygon.buffer(1e-9))).sum())
    return f"area {_pct(_rel(result['area_m2'].iloc[0], _area(polygon)))} off its polygon's; {outside} points outside"


FAMILIES: list[tuple[str, Callable[..., str]]] = [
    ("weber_point", weber),
    ("enclosing_circle / minimax_point", minimax),
    ("nearest_site (20 sites)", nearest),
    ("voronoi_cells", cells),
    ("spanning_tree", tree),
    ("steiner_tree", steiner),
    ("p_median (p = 5)", _plan_check("p_median")),
    ("p_center (p = 5)", _plan_check("p_center")),
    ("enclosing_ellipse", ellipse),
]


def run(check: Callable[..., str], frame: gpd.GeoDataFrame, kw: dict[str, Any], truth: dict[str, Any]) -> str:
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            return check(frame, kw, truth)
    except pw.InputError as exc:
        reason = str(exc).split(";")[0]
        return f"refused: {type(exc).__name__} ({reason[:110]}{'…' if len(reason) > 110 else ''})"


def main() -> None:
    print("| data | family | one UTM zone for the whole frame (before; `work_crs=`) | default model (after) |")
    print("|---|---|---|---|")
    for name, frame in datasets().items():
        zone = frame.estimate_utm_crs()
        for family, check in FAMILIES:
            truth: dict[str, Any] = {}
            after = run(check, frame, {}, truth)
            before = run(check, frame, {"work_crs": zone}, truth)
            print(f"| {name} | {family} | {zone.name}: {before} | {after} |", flush=True)


if __name__ == "__main__":
    sys.exit(main())
