"""The cells of placewise.capacity_cells as polygons, against outside references.

References: shapely (GEOS) for point-in-polygon (``covers``), areas, unions and the
intersections of cells; scipy.spatial.ConvexHull (Qhull) of the lifted points
``(x, y, x² + y² - w)`` for which cells share an edge (the regular triangulation, as in
``tests/test_power.py``); pyproj (through geopandas) for the CRS of the GeoPandas form.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
import scipy.spatial
import shapely

import placewise as pw

L_WITH_HOLE = shapely.Polygon([(-1, -1), (101, -1), (101, 45), (45, 45), (45, 101), (-1, 101)],
                              [[(10, 10), (10, 30), (30, 30), (30, 10)]])


def demand_in(region, n, seed):
    """``n`` uniform points inside ``region`` (rejection sampling, shapely) and weights."""
    rng = np.random.default_rng(seed)
    lo, hi = np.array(region.bounds[:2]), np.array(region.bounds[2:])
    out = np.empty((0, 2))
    while len(out) < n:
        xy = rng.uniform(lo, hi, (2 * n, 2))
        out = np.vstack([out, xy[shapely.contains_xy(region, xy[:, 0], xy[:, 1])]])
    return out[:n], rng.uniform(0.5, 2.0, n)


def capacities_for(weights, m, seed, slack=1.0):
    shares = np.random.default_rng(seed).uniform(0.8, 1.2, m)
    return shares / shares.sum() * weights.sum() * slack


def assert_points_in_their_cells(points, cells, scale):
    """shapely: every point with demand lies in or on its site's cell; a point whose demand is
    split lies on the cell of each site serving it. ``covers`` is exact on the float polygon,
    whose vertices are rounded: a point on a cell boundary may miss it by a rounding error,
    so a miss is allowed when the point is within 1e-9 of the data's extent of the cell."""
    geoms = cells.cells.to_shapely()
    holders = np.where(cells.cell_site >= 0, cells.cell_site, 0)
    pairs = [(i, int(j)) for i, j in enumerate(cells.assignment)]
    pairs += list(zip(cells.part_point.tolist(), cells.part_site.tolist(), strict=True))
    for i, j in pairs:
        cell = geoms[holders[j]]
        p = shapely.Point(points[i])
        assert cell.covers(p) or cell.distance(p) <= 1e-9 * scale, (i, j, cell.distance(p))


@pytest.mark.parametrize("seed", range(3))
@pytest.mark.parametrize("slack", [1.0, 1.25])
def test_cells_tile_the_region_and_hold_their_points(seed, slack):
    points, w = demand_in(L_WITH_HOLE, 4000, seed)
    sites, _ = demand_in(L_WITH_HOLE, 25, seed + 100)
    caps = capacities_for(w, 25, seed, slack)
    cells = pw.capacity_cells(points, sites, caps, w, region=L_WITH_HOLE)
    if slack == 1.0:
        np.testing.assert_allclose(cells.load, caps, rtol=1e-9)  # loads equal capacities
    else:
        assert np.all(cells.load <= caps * (1 + 1e-9))
    assert_points_in_their_cells(points, cells, 100.0)
    geoms = cells.cells.to_shapely()
    assert all(g.is_valid for g in geoms)
    # shapely: the areas agree with ours, the cells are disjoint (their union has the sum of
    # their areas) and their union is the region.
    np.testing.assert_allclose(shapely.area(geoms), cells.area, rtol=1e-9, atol=1e-9)
    union = shapely.union_all(geoms)
    assert union.area == pytest.approx(cells.area.sum(), rel=1e-9)
    assert union.area == pytest.approx(L_WITH_HOLE.area, rel=1e-9)
    assert shapely.symmetric_difference(union, L_WITH_HOLE).area <= 1e-9 * L_WITH_HOLE.area
    for a, b in itertools.combinations(range(len(geoms)), 2):
        assert shapely.intersection(geoms[a], geoms[b]).area <= 1e-9 * L_WITH_HOLE.area


def test_neighbouring_cells_are_the_regular_triangulation_edges_of_qhull():
    # Reference: scipy.spatial.ConvexHull (Qhull) of the lifted sites (x, y, x² + y² − w)
    # at the returned powers: its downward facets are the regular triangulation, whose edges
    # join exactly the sites whose cells share an edge (in a region large enough to hold
    # every shared edge's piece near the data); shapely measures the shared boundaries.
    rng = np.random.default_rng(3)
    points = rng.uniform(0, 100, (3000, 2))
    sites = rng.uniform(10, 90, (15, 2))
    caps = capacities_for(np.ones(3000), 15, 3)
    far = [[-1e4, -1e4], [1e4, -1e4], [1e4, 1e4], [-1e4, 1e4]]
    cells = pw.capacity_cells(points, sites, caps, region=far)
    lifted = np.c_[sites, (sites ** 2).sum(1) - cells.power]
    hull = scipy.spatial.ConvexHull(lifted)
    lower = hull.simplices[hull.equations[:, 2] < 0]
    qhull = {tuple(sorted(e)) for t in lower.tolist() for e in itertools.combinations(t, 2)}
    geoms = cells.cells.to_shapely()
    touching = {(a, b) for a, b in itertools.combinations(range(15), 2)
                if shapely.intersection(geoms[a].boundary, geoms[b].boundary).length > 1e-6}
    assert touching == qhull
    assert cells.area.sum() == pytest.approx(shapely.Polygon(far).area, rel=1e-9)


def test_sites_at_one_location_share_a_cell_and_sites_without_capacity_have_none():
    rng = np.random.default_rng(8)
    points = rng.uniform(0, 10, (500, 2))
    sites = np.array([[2, 2], [8, 8], [2, 2], [8, 2], [5, 5], [5, 8]], float)
    caps = np.array([100, 150, 100, 150, 0, 0], float)  # rows 0, 2 share; rows 4, 5 hold nothing
    # (one location lists one capacity per row, the same on each)
    cells = pw.capacity_cells(points, sites, caps)
    assert cells.cell_site.tolist() == [0, 1, 0, 3, -1, -1]
    # The sharing rows are each filled to capacity from the one cell (row 0's rings).
    np.testing.assert_allclose(cells.load, caps, rtol=1e-9)
    assert cells.area[0] > 0 and cells.area[2] == 0 and cells.area[4] == 0 and cells.area[5] == 0
    frame = cells.cells_frame()
    assert list(frame.columns) == ["x", "y", "area_u2", "capacity", "load", "power_u2", "cell_site"]
    geoms = cells.cells.to_shapely()
    assert geoms[2].is_empty and geoms[4].is_empty
    assert_points_in_their_cells(points, cells, 10.0)
    # Default region: the bounding box of the points and sites grown by 10 % (shapely area).
    span = np.vstack([points, sites])
    lo, hi = span.min(0), span.max(0)
    grown = shapely.box(*(lo - 0.1 * (hi - lo)), *(hi + 0.1 * (hi - lo)))
    assert shapely.union_all(geoms).area == pytest.approx(grown.area, rel=1e-9)


def test_points_outside_the_region_are_refused_by_row():
    square = [[0, 0], [10, 0], [10, 10], [0, 10]]
    points = np.array([[1, 1], [5, 5], [12, 3], [9, 9]], float)
    with pytest.raises(pw.InputError, match=r"points\[2\] at \(12, 3\) lies outside the region") as e:
        pw.capacity_cells(points, [[2, 2], [8, 8]], [2, 2], region=square)
    assert (e.value.argument, e.value.row) == ("points", 2)
    # In a hole is outside too; on the boundary (an edge or a vertex) is inside.
    holed = shapely.Polygon(square, [[(4, 4), (6, 4), (6, 6), (4, 6)]])
    with pytest.raises(pw.InputError, match=r"points\[1\]"):
        pw.capacity_cells(points[[0, 1, 3]], [[2, 2], [8, 8]], [2, 1], region=holed)
    on_edge = np.array([[0, 5], [10, 10], [4, 5], [3, 3]], float)
    cells = pw.capacity_cells(on_edge, [[2, 2], [8, 8]], [2, 2], region=holed)
    assert cells.area.sum() == pytest.approx(holed.area, rel=1e-12)
    with pytest.raises(pw.InputError, match="no extent"):
        pw.capacity_cells([[1, 1], [1, 1]], [[1, 1]], [2])


def test_plot_draws_the_cells():
    matplotlib = pytest.importorskip("matplotlib")
    matplotlib.use("Agg")
    points, w = demand_in(L_WITH_HOLE, 300, 1)
    cells = pw.capacity_cells(points, [[20, 50], [70, 20], [20, 80]], capacities_for(w, 3, 1), w,
                              region=L_WITH_HOLE)
    ax = cells.plot()
    assert ax.get_title().startswith("Capacity-constrained cells · 300 points, 3 sites, ")
    patches = [c for c in ax.collections if c.__class__.__name__ == "PatchCollection"]
    assert len(patches) == 1 and len(patches[0].get_paths()) == 3


def test_geodataframe_and_gis_form_in_any_crs():
    gpd = pytest.importorskip("geopandas")
    from placewise import gis

    # A projected study area (UTM 33N), its region given in lon/lat: the cells tile the
    # region (areas in the working CRS, by shapely) and are returned in the sites' CRS.
    box = shapely.box(500_000, 5_000_000, 520_000, 5_020_000)
    rng = np.random.default_rng(2)
    xy = rng.uniform([500_500, 5_000_500], [519_500, 5_019_500], (2000, 2))
    demand = gpd.GeoDataFrame({"w": rng.uniform(1, 3, 2000)}, geometry=gpd.points_from_xy(*xy.T), crs=32633)
    sites = gpd.GeoDataFrame({"room": capacities_for(demand["w"].to_numpy(), 6, 2)}, index=list("abcdef"),
                             geometry=gpd.points_from_xy(*rng.uniform([502_000, 5_002_000], [518_000, 5_018_000],
                                                                      (6, 2)).T), crs=32633)
    region = gpd.GeoSeries([box], crs=32633).to_crs(4326)
    plan = gis.capacity_cells(demand, sites, "room", "w", region=region)
    assert plan.cells.crs == sites.crs and list(plan.cells.index) == list("abcdef")
    assert plan.cells["cell_site"].tolist() == list("abcdef")
    np.testing.assert_allclose(plan.sites["load"], sites["room"], rtol=1e-9)
    union = shapely.union_all(plan.cells.geometry.values)
    assert union.area == pytest.approx(box.area, rel=1e-6)  # the region went to lon/lat and back
    assert plan.cells["area_m2"].sum() == pytest.approx(box.area, rel=1e-6)
    # Each demand row lies in the cell of its site (shapely, in the sites' CRS).
    cell_of = plan.cells.geometry.loc[plan.demand["site"]].values
    assert np.all(shapely.distance(cell_of, plan.demand.geometry.values) <= 1e-3)
    with pytest.raises(pw.InputError, match="outside the region"):
        gis.capacity_cells(demand, sites, "room", "w", region=shapely.box(500_000, 5_000_000, 510_000, 5_010_000))
    # The plain result in a CRS of the caller's choice.
    cells = pw.capacity_cells(xy, sites.geometry.get_coordinates().to_numpy(), sites["room"].to_numpy(),
                              demand["w"].to_numpy(), region=box, unit="m")
    frame = cells.cells_geodataframe(crs=32633)
    assert frame.crs == demand.crs and "area_m2" in frame.columns
    np.testing.assert_allclose(frame.geometry.area, cells.area, rtol=1e-9)


def test_command_line_writes_the_cells(tmp_path, capsys):
    gpd = pytest.importorskip("geopandas")
    import pandas as pd

    from placewise.cli import main
    from test_capacity_cells import squared_transport

    rng = np.random.default_rng(12)
    xy = rng.uniform(0, 1000, (200, 2)) + [500_000, 6_600_000]
    sites = rng.uniform(100, 900, (4, 2)) + [500_000, 6_600_000]
    seats = np.array([40.0, 60.0, 50.0, 50.0])
    homes, schools, region = tmp_path / "homes.csv", tmp_path / "schools.csv", tmp_path / "region.geojson"
    pd.DataFrame({"east": xy[:, 0], "north": xy[:, 1]}).to_csv(homes, index=False)
    pd.DataFrame({"east": sites[:, 0], "north": sites[:, 1], "seats": seats}).to_csv(schools, index=False)
    box = shapely.box(499_990, 6_599_990, 501_010, 6_601_010)
    gpd.GeoDataFrame(geometry=[box], crs=32632).to_file(region)
    out, summary = tmp_path / "cells.gpkg", tmp_path / "totals.csv"
    code = main([str(a) for a in ["capacity-cells", homes, "--x", "east", "--y", "north", "--crs", "EPSG:32632",
                                  "--sites", schools, "--capacity", "seats", "--region", region, "-o", out,
                                  "--summary", summary]])
    assert code == 0, capsys.readouterr().err
    cells = gpd.read_file(out)
    # shapely: the written polygons tile the region; scipy.optimize.linprog (HiGHS): the cost.
    assert shapely.union_all(cells.geometry.values).area == pytest.approx(box.area, rel=1e-9)
    assert cells["load"].tolist() == pytest.approx(seats.tolist(), rel=1e-9)
    cost = pd.read_csv(summary)["cost_m2"].iloc[0]
    assert cost == pytest.approx(squared_transport(xy, sites, seats, np.ones(200)), rel=1e-9)
