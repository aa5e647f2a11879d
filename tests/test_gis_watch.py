"""Progress through the GeoDataFrame layer and the command line: the Voronoi cells and the
spanning tree (spherical and planar, single and grouped), the planar Delaunay triangulation,
the nearest-site search (geodesic and planar) and the travel-cost searches take
``progress=`` from :mod:`placewise.gis` and show their bar from the command line on a
terminal.

Each check of a report also checks that watching changed nothing: the frame returned holds
the same cells, edges, sites and costs as the direct call of the kernel on the same points
(:mod:`placewise.geodesic`, :class:`placewise.TravelGraph`), which their own tests compare
with outside references.
"""

from __future__ import annotations

import sys

import numpy as np
import pytest

gpd = pytest.importorskip("geopandas")
import pandas as pd  # noqa: E402
import shapely  # noqa: E402

import placewise as pw  # noqa: E402
from interrupting import check_counts, check_progress_reports  # noqa: E402
from placewise import gis  # noqa: E402
from placewise.cli import main  # noqa: E402
from placewise.gis.travel import travel_costs, travel_graph  # noqa: E402

RNG = np.random.default_rng(17)


def _globe(n: int) -> np.ndarray:
    """``n`` lon/lat points spread over the whole globe (uniform on the sphere), far wider
    than any working frame holds: the layer hands them to the spherical kernels."""
    return np.column_stack([RNG.uniform(-180, 180, n), np.degrees(np.arcsin(RNG.uniform(-1, 1, n)))])


SITES = _globe(300)
HOMES = _globe(2000)
LOCAL = np.column_stack([10.75 + 0.05 * RNG.normal(size=200), 59.9 + 0.03 * RNG.normal(size=200)])


def _frame(lonlat: np.ndarray, prefix: str, **columns) -> gpd.GeoDataFrame:  # noqa: ANN003
    """Lon/lat points in EPSG:4326, indexed by labels that are not row positions."""
    return gpd.GeoDataFrame(columns, geometry=gpd.points_from_xy(lonlat[:, 0], lonlat[:, 1]), crs="EPSG:4326",
                            index=[f"{prefix}{i}" for i in range(len(lonlat))])


def _recorder() -> tuple[list[tuple[int, int]], object]:
    calls: list[tuple[int, int]] = []
    return calls, lambda done, total: calls.append((done, total))


# ------------------------------------------------------------------------- the gis layer


def test_gis_voronoi_cells_on_the_sphere_reports_progress_and_keeps_the_cells() -> None:
    sites = _frame(SITES, "s")
    calls, progress = _recorder()
    out = gis.voronoi_cells(sites, progress=progress)
    check_counts(calls)
    assert calls[-1][1] == 3 * len(SITES)  # sites inserted, rings, areas
    direct = pw.geodesic.voronoi_cells(SITES)
    assert (out["work_crs"] == pw.geodesic.SPHERE_MODEL).all()
    np.testing.assert_array_equal(out["area_m2"].to_numpy(), direct.area)
    assert shapely.equals(out.geometry.values, direct._geometry()).all()
    assert list(out.index) == list(sites.index)


def test_gis_voronoi_cells_with_demand_reports_one_count_of_the_cells_then_the_demand() -> None:
    # One count: the cells (3 steps per site), then the demand rows served on the ellipsoid
    # added on (one step each). While the cells are made the total holds them and one step
    # for the demand to come. The loads are the direct search's.
    sites, homes = _frame(SITES, "s"), _frame(HOMES, "h", people=RNG.uniform(1, 3, len(HOMES)))
    calls, progress = _recorder()
    out = gis.voronoi_cells(sites, demand=homes, weight="people", progress=progress)
    check_counts(calls)
    totals = [t for _, t in calls]
    assert totals == sorted(totals)
    assert (3 * len(SITES), 3 * len(SITES) + 1) in calls
    assert all(d < t for d, t in calls[:-1])
    assert calls[-1] == (3 * len(SITES) + len(HOMES),) * 2
    served = pw.geodesic.nearest_site(HOMES, SITES, homes["people"].to_numpy())
    np.testing.assert_array_equal(out["load"].to_numpy(), served.load)
    np.testing.assert_array_equal(out["points"].to_numpy(), served.count)
    np.testing.assert_array_equal(out["area_m2"].to_numpy(), pw.geodesic.voronoi_cells(SITES).area)


def test_gis_spanning_tree_on_the_sphere_reports_progress_and_keeps_the_tree() -> None:
    frame = _frame(SITES, "p")
    calls, progress = _recorder()
    net = gis.spanning_tree(frame, progress=progress)
    check_counts(calls)
    direct = pw.geodesic.spanning_tree(SITES)
    labels = frame.index.to_numpy()
    assert list(net.edges["end_a"]) == list(labels[direct.end_a])
    assert list(net.edges["end_b"]) == list(labels[direct.end_b])
    np.testing.assert_array_equal(net.edges["length_m"].to_numpy(), direct.edge_length)
    assert float(net.summary["length_m"].iloc[0]) == direct.length


@pytest.mark.parametrize("grouped", [False, True])
def test_gis_nearest_site_on_the_ellipsoid_reports_progress_and_keeps_the_sites(grouped: bool) -> None:
    zone, site_zone = RNG.integers(0, 3, len(HOMES)), np.arange(len(SITES)) % 3
    people = RNG.uniform(1, 3, len(HOMES))
    homes, sites = _frame(HOMES, "h", people=people, zone=zone), _frame(SITES, "s", zone=site_zone)
    by = {"by": "zone"} if grouped else {}
    check_progress_reports(lambda **kw: gis.nearest_site(homes, sites, "people", **by, **kw))
    plan = gis.nearest_site(homes, sites, "people", **by, progress=lambda done, total: None)
    groups = {"groups": zone, "site_groups": site_zone} if grouped else {}
    direct = pw.geodesic.nearest_site(HOMES, SITES, people, **groups)
    assert list(plan.demand["site"]) == list(sites.index.to_numpy()[direct.assignment])
    np.testing.assert_array_equal(plan.demand["distance_m"].to_numpy(), direct.distance)
    np.testing.assert_array_equal(plan.sites["load"].to_numpy(), direct.load)


def test_gis_travel_costs_report_progress_and_keep_the_costs() -> None:
    streets = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, y), (500, y)]) for y in (0, 100, 200)]
                               + [shapely.LineString([(x, 0), (x, 200)]) for x in (0, 250, 500)], crs="EPSG:32630")
    homes = gpd.GeoDataFrame(geometry=gpd.points_from_xy(RNG.uniform(0, 500, 40), RNG.uniform(0, 200, 40)),
                             crs="EPSG:32630", index=[f"h{i}" for i in range(40)])
    graph = travel_graph(streets, tolerance=1e-6, split_crossings=True)
    calls, progress = _recorder()
    table = travel_costs(graph, homes, homes, progress=progress)
    check_counts(calls)
    assert calls[-1][1] == len(homes)  # one search per origin
    xy = np.column_stack([homes.geometry.x, homes.geometry.y])
    direct = graph.costs(xy, xy)
    labels = {label: i for i, label in enumerate(homes.index)}
    got = np.full(direct.shape, np.nan)
    got[table["origin"].map(labels), table["destination"].map(labels)] = table["cost_m"].to_numpy()
    np.testing.assert_array_equal(got, direct)


#: Planar points with index labels that are not row positions (no CRS: solved as given).
PLANE = RNG.uniform(0, 1000, (3000, 2))


def _plane(prefix: str) -> gpd.GeoDataFrame:
    return gpd.GeoDataFrame(geometry=gpd.points_from_xy(PLANE[:, 0], PLANE[:, 1]),
                            index=[f"{prefix}{i}" for i in range(len(PLANE))])


def test_gis_planar_spanning_tree_reports_progress_and_keeps_the_tree() -> None:
    calls, progress = _recorder()
    net = gis.spanning_tree(_plane("p"), planar=True, progress=progress)
    check_counts(calls)
    direct = pw.spanning_tree(PLANE)
    labels = np.array([f"p{i}" for i in range(len(PLANE))], dtype=object)
    assert list(net.edges["end_a"]) == list(labels[direct.end_a])
    assert list(net.edges["end_b"]) == list(labels[direct.end_b])
    np.testing.assert_array_equal(net.edges["length_u"].to_numpy(), direct.edge_length)
    assert float(net.summary["length_u"].iloc[0]) == direct.length


def test_gis_planar_voronoi_cells_report_progress_and_keep_the_cells() -> None:
    calls, progress = _recorder()
    region = shapely.box(-10, -10, 1010, 1010)
    cells = gis.voronoi_cells(_plane("s"), region, planar=True, progress=progress)
    check_counts(calls)
    direct = pw.voronoi_cells(PLANE, region)
    np.testing.assert_array_equal(cells["area_u2"].to_numpy(), direct.area)
    assert list(cells.index) == [f"s{i}" for i in range(len(PLANE))]


_ZONE = np.arange(len(LOCAL)) % 2


@pytest.mark.parametrize("run", [
    lambda **kw: gis.voronoi_cells(_frame(LOCAL, "s"), **kw),
    lambda **kw: gis.spanning_tree(_frame(LOCAL, "p"), **kw).edges,
    lambda **kw: gis.spanning_tree(_frame(LOCAL, "p", zone=_ZONE), by="zone", **kw).edges,
    lambda **kw: gis.voronoi_cells(_frame(LOCAL, "s", zone=_ZONE), by="zone", **kw),
    lambda **kw: gis.delaunay(_frame(LOCAL, "p", zone=_ZONE), by="zone", **kw),
    lambda **kw: gis.nearest_site(_frame(LOCAL, "h"), _frame(LOCAL[:5], "s"), work_crs="EPSG:32632", **kw).demand,
    lambda **kw: gis.nearest_site(_frame(LOCAL, "h", zone=_ZONE), _frame(LOCAL[:6], "s", zone=np.arange(6) % 2),
                                  by="zone", work_crs="EPSG:32632", **kw).demand,
], ids=["voronoi", "spanning", "spanning by", "voronoi by", "delaunay by", "nearest work_crs", "nearest work_crs by"])
def test_gis_planar_runs_in_a_working_frame_report_progress_and_answer_alike(run) -> None:  # noqa: ANN001
    # Points a working frame holds, single and grouped, and the planar nearest-site search:
    # the counts rise to the total, and watched and unwatched runs give the same table.
    calls, progress = _recorder()
    watched, plain = run(progress=progress), run()
    check_counts(calls)
    assert _planar(watched)
    pd.testing.assert_frame_equal(pd.DataFrame(watched.drop(columns="geometry")),
                                  pd.DataFrame(plain.drop(columns="geometry")))


# The CRS kinds as the EPSG registry lists them (epsg.org): 4326 (WGS 84) and 4269 (NAD83)
# are geographic 2D CRSs; 3857 (WGS 84 / Pseudo-Mercator) and 32632 (WGS 84 / UTM zone 32N)
# are projected.
@pytest.mark.parametrize(("crs", "work_crs", "region", "on_earth"), [
    ("EPSG:4326", None, None, True),
    ("EPSG:4269", None, None, True),
    ("EPSG:4326", "EPSG:32632", None, False),
    ("EPSG:4326", None, shapely.box(10.5, 59.7, 11.0, 60.1), False),
    ("EPSG:3857", None, None, False),
    ("EPSG:32632", None, None, False),
], ids=["wgs84", "nad83", "wgs84 work_crs", "wgs84 region", "pseudo-mercator", "utm 32n"])
# The Oslo points read in Web Mercator or UTM 32N as they are: the distortion warning
# (tested in test_gis.py) is not what this test is about.
@pytest.mark.filterwarnings("ignore:.*distorts distances by up to:UserWarning")
def test_watched_on_earth_says_where_the_single_site_functions_solve(crs, work_crs, region, on_earth) -> None:  # noqa: ANN001
    # The command line shows its bar exactly for the runs solved on the ellipsoid: what the
    # rule says agrees with the EPSG kind of the CRS and with the model the run reports.
    from placewise.gis._frames import ELLIPSOID
    from placewise.gis.sites import watched_on_earth

    frame = _frame(LOCAL, "p").to_crs(crs)
    assert watched_on_earth(frame, work_crs=work_crs, region=region) is on_earth
    place = {} if region is None else {"region": gpd.GeoSeries([region], crs="EPSG:4326").to_crs(crs)}
    out = gis.weber_point(frame, work_crs=work_crs, **place)
    assert ("work_crs" in out and out["work_crs"].iloc[0] == ELLIPSOID) is on_earth


def test_planar_single_site_refuses_time_limit_saying_why() -> None:
    # The planar kernel behind a projected run takes no time limit: refused by name, with
    # the reason and the way out in the message.
    frame = _frame(LOCAL, "p")
    with pytest.raises(pw.InputError) as caught:
        gis.minimax_point(frame, work_crs="EPSG:32632", time_limit=1.0)
    assert caught.value.argument == "time_limit"
    assert "exact" in str(caught.value) and "drop time_limit=" in str(caught.value)


def _planar(table) -> bool:  # noqa: ANN001
    """The table was solved in the plane: no ``work_crs`` column naming the sphere."""
    return len(table) > 0 and ("work_crs" not in table or pw.geodesic.SPHERE_MODEL not in set(table["work_crs"]))


# ------------------------------------------------------------------------- the command line


@pytest.fixture()
def files(tmp_path):
    pd.DataFrame({"lon": SITES[:, 0], "lat": SITES[:, 1]}).to_csv(tmp_path / "sites.csv", index=False)
    pd.DataFrame({"lon": HOMES[:, 0], "lat": HOMES[:, 1]}).to_csv(tmp_path / "homes.csv", index=False)
    pd.DataFrame({"lon": LOCAL[:, 0], "lat": LOCAL[:, 1]}).to_csv(tmp_path / "local.csv", index=False)
    return tmp_path


def _commands(path, out):  # noqa: ANN001, ANN202
    return {
        "voronoi-cells": (["voronoi-cells", str(path / "sites.csv"), "-o", str(out)], "geodesic voronoi_cells"),
        "spanning-tree": (["spanning-tree", str(path / "sites.csv"), "-o", str(out)], "geodesic spanning_tree"),
        "nearest-site": (["nearest-site", str(path / "homes.csv"), "--sites", str(path / "sites.csv"), "-o", str(out)],
                         "geodesic nearest_site"),
    }


def _check_bar(argv: list[str], label: str, capsys, monkeypatch) -> None:  # noqa: ANN001
    """The command draws its bar (named ``label``) on stderr only when stderr is a terminal,
    and not with ``--no-progress`` or ``--quiet``; every run succeeds."""
    assert main(argv) == 0 and label not in capsys.readouterr().err   # stderr not a terminal: no bar
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True)
    assert main(argv) == 0 and label in capsys.readouterr().err
    for off in ("--no-progress", "--quiet"):
        assert main([*argv, off]) == 0 and label not in capsys.readouterr().err, off


@pytest.mark.parametrize("command", ["voronoi-cells", "spanning-tree", "nearest-site"])
def test_the_cli_shows_the_bar_on_a_terminal_unless_turned_off(files, capsys, monkeypatch, command) -> None:
    out = files / "out.csv"
    argv, label = _commands(files, out)[command]
    _check_bar(argv, label, capsys, monkeypatch)
    # What was written is the direct call's answer, row for row (CSV line numbers name rows).
    got = pd.read_csv(out)
    if command == "voronoi-cells":
        np.testing.assert_allclose(got["area_m2"], pw.geodesic.voronoi_cells(SITES).area, rtol=1e-15)
    elif command == "spanning-tree":
        direct = pw.geodesic.spanning_tree(SITES)
        assert list(got["end_a"] - 2) == list(direct.end_a) and list(got["end_b"] - 2) == list(direct.end_b)
        np.testing.assert_allclose(got["length_m"], direct.edge_length, rtol=1e-15)
    else:
        direct = pw.geodesic.nearest_site(HOMES, SITES)
        assert list(got["site"] - 2) == list(direct.assignment)
        np.testing.assert_allclose(got["distance_m"], direct.distance, rtol=1e-15)


def test_the_cli_shows_the_bar_for_a_planar_nearest_site_run(files, capsys, monkeypatch) -> None:
    # Sites in a frame given by --work-crs are served in the plane, watched as on the
    # ellipsoid: the command draws the planar search's bar on a terminal.
    out = files / "out.csv"
    extra = ["--sites", str(files / "local.csv"), "--work-crs", "EPSG:32632"]
    _check_bar(["nearest-site", str(files / "local.csv"), *extra, "-o", str(out)], "nearest_site (points)", capsys,
               monkeypatch)
    got = pd.read_csv(out)
    assert _planar(got)
    # Every point is a site: its own, at no distance.
    assert list(got["site"]) == list(range(2, len(LOCAL) + 2)) and (got["distance_m"] == 0).all()


@pytest.mark.parametrize("command, label", [("voronoi-cells", "voronoi_cells (sites triangulated"),
                                            ("spanning-tree", "spanning_tree (points triangulated"),
                                            ("delaunay", "delaunay (points triangulated")])
def test_the_cli_shows_the_planar_bar_on_a_terminal_unless_turned_off(tmp_path, capsys, monkeypatch, command,
                                                                     label) -> None:
    path, out = tmp_path / "plane.csv", tmp_path / "out.csv"
    pd.DataFrame({"x": PLANE[:, 0], "y": PLANE[:, 1]}).to_csv(path, index=False)
    _check_bar([command, str(path), "--planar", "-o", str(out)], label, capsys, monkeypatch)
    # What was written is the direct call's answer, row for row (CSV line numbers name rows).
    got = pd.read_csv(out)
    if command == "voronoi-cells":
        np.testing.assert_array_equal(got["area_u2"], pw.voronoi_cells(PLANE).area)
    elif command == "spanning-tree":
        direct = pw.spanning_tree(PLANE)
        assert list(got["end_a"] - 2) == list(direct.end_a) and list(got["end_b"] - 2) == list(direct.end_b)
        np.testing.assert_array_equal(got["length_u"], direct.edge_length)
    else:
        direct = pw.delaunay(PLANE)
        assert list(got["corner_a"] - 2) == list(direct.corners[:, 0])
        np.testing.assert_array_equal(got["area_u2"], direct.area)


@pytest.mark.parametrize("command", ["spanning-tree", "delaunay"])
def test_the_cli_shows_the_bar_for_a_grouped_planar_run(tmp_path, capsys, monkeypatch, command) -> None:
    path, out = tmp_path / "plane.csv", tmp_path / "out.csv"
    pd.DataFrame({"x": PLANE[:, 0], "y": PLANE[:, 1], "zone": np.arange(len(PLANE)) % 3}).to_csv(path, index=False)
    _check_bar([command, str(path), "--planar", "--by", "zone", "-o", str(out)], "of finished groups", capsys,
               monkeypatch)


def test_the_cli_shows_the_travel_cost_bar_on_a_terminal(tmp_path, capsys, monkeypatch) -> None:
    lines = [shapely.LineString([(0, 0), (500, 0)]), shapely.LineString([(0, 0), (0, 300)])]
    streets = gpd.GeoDataFrame(geometry=lines, crs="EPSG:32630")
    streets.to_file(tmp_path / "streets.geojson")
    pd.DataFrame({"x": [10.0, 400.0, 0.0], "y": [5.0, -3.0, 250.0]}).to_csv(tmp_path / "homes.csv", index=False)
    out = tmp_path / "costs.csv"
    argv = ["travel-costs", str(tmp_path / "homes.csv"), "--crs", "EPSG:32630", "--network",
            str(tmp_path / "streets.geojson"), "-o", str(out)]
    label = "travel costs"
    _check_bar(argv, label, capsys, monkeypatch)
    # The same costs as the graph's own search from the same points.
    xy = np.array([[10.0, 5.0], [400.0, -3.0], [0.0, 250.0]])
    direct = travel_graph(streets).costs(xy, xy)
    got = pd.read_csv(out)
    cost = np.full((3, 3), np.nan)
    cost[got["origin"] - 2, got["destination"] - 2] = got["cost_m"]
    np.testing.assert_array_equal(cost, direct)


def test_the_cli_shows_the_network_siting_bar_on_a_terminal(tmp_path, capsys, monkeypatch) -> None:
    streets = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (600, 0)])], crs="EPSG:32630")
    streets.to_file(tmp_path / "streets.geojson")
    pd.DataFrame({"x": [0.0, 50.0, 550.0, 600.0], "y": 0.0}).to_csv(tmp_path / "homes.csv", index=False)
    pd.DataFrame({"x": [25.0, 300.0, 575.0], "y": 0.0}).to_csv(tmp_path / "depots.csv", index=False)
    out = tmp_path / "sites.csv"
    argv = ["network-siting", str(tmp_path / "homes.csv"), "--crs", "EPSG:32630", "--network",
            str(tmp_path / "streets.geojson"), "--candidates", str(tmp_path / "depots.csv"), "-p", "2",
            "-o", str(out)]
    _check_bar(argv, "p_median", capsys, monkeypatch)
    # The two end depots, each 25 m from both of its homes: closed form.
    assert sorted(pd.read_csv(out)["x"]) == [25.0, 575.0]
