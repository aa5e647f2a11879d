"""The travel subcommands: files written, read back and compared with
scipy.sparse.csgraph.dijkstra on a graph built here from the same lines."""

from __future__ import annotations

import re

import numpy as np
import pytest

gpd = pytest.importorskip("geopandas")
import pandas as pd  # noqa: E402
import shapely  # noqa: E402
from scipy.sparse import csr_array  # noqa: E402
from scipy.sparse.csgraph import dijkstra  # noqa: E402

from placewise.cli import main  # noqa: E402

SIDE, STEP, CRS = 6, 100.0, "EPSG:32630"


def _grid():
    """Block sides of a SIDE x SIDE grid of corners; every third line one-way (code 1)."""
    ends, one_way = [], []
    for y in range(SIDE):
        for x in range(SIDE):
            for dx, dy in ((1, 0), (0, 1)):
                if x + dx < SIDE and y + dy < SIDE:
                    ends.append(((x, y), (x + dx, y + dy)))
                    one_way.append(1 if len(ends) % 3 == 0 else 0)
    return ends, np.array(one_way)


def _reference(ends, one_way):
    """Node-to-node travel costs (metres) with scipy: node of corner (x, y) is y * SIDE + x."""
    rows, cols = [], []
    for ((x0, y0), (x1, y1)), w in zip(ends, one_way):
        a, b = y0 * SIDE + x0, y1 * SIDE + x1
        rows.append(a), cols.append(b)
        if w == 0:
            rows.append(b), cols.append(a)
    n = SIDE * SIDE
    return dijkstra(csr_array((np.full(len(rows), STEP), (rows, cols)), shape=(n, n)))


@pytest.fixture()
def files(tmp_path):
    ends, one_way = _grid()
    lines = [shapely.LineString([np.multiply(a, STEP), np.multiply(b, STEP)]) for a, b in ends]
    gpd.GeoDataFrame({"oneway": one_way}, geometry=lines, crs=CRS).to_file(tmp_path / "streets.geojson")
    rng = np.random.default_rng(3)
    corners = rng.choice(SIDE * SIDE, 14, replace=False)
    homes, depots = corners[:10], corners[10:]
    for name, nodes in (("homes", homes), ("depots", depots)):
        xy = np.column_stack([nodes % SIDE, nodes // SIDE]) * STEP
        pd.DataFrame({"x": xy[:, 0], "y": xy[:, 1], "people": np.arange(1, len(nodes) + 1)}).to_csv(
            tmp_path / f"{name}.csv", index=False)
    return tmp_path, homes, depots, _reference(ends, one_way)


def test_network_catchments_match_scipy_dijkstra(files, capsys):
    path, homes, depots, costs = files
    out = path / "catchments.csv"
    code = main(["network-catchments", str(path / "homes.csv"), "--crs", CRS, "--network",
                 str(path / "streets.geojson"), "--sites", str(path / "depots.csv"), "--one-way", "oneway",
                 "-o", str(out), "-q"])
    assert code == 0, capsys.readouterr().err
    got = pd.read_csv(out)
    # scipy: the cheapest depot's cost from the depots to each home (travel from the site).
    best = costs[np.ix_(depots, homes)].min(axis=0)
    reached = np.isfinite(best)
    assert np.array_equal(got["reachable"].to_numpy(), reached)
    assert np.allclose(got["cost_m"].to_numpy()[reached], best[reached], rtol=1e-12)


def test_travel_costs_match_scipy_dijkstra_with_k(files, capsys):
    path, homes, depots, costs = files
    out = path / "costs.csv"
    code = main(["travel-costs", str(path / "homes.csv"), "--crs", CRS, "--network", str(path / "streets.geojson"),
                 "--destinations", str(path / "depots.csv"), "--one-way", "oneway", "-o", str(out), "-q"])
    assert code == 0, capsys.readouterr().err
    got = pd.read_csv(out)
    ref = costs[np.ix_(homes, depots)]
    # Rows are named by CSV line numbers (2 is the first data row).
    mine = np.full(ref.shape, np.inf)
    mine[got["origin"].to_numpy() - 2, got["destination"].to_numpy() - 2] = got["cost_m"].to_numpy()
    assert np.array_equal(np.isfinite(mine), np.isfinite(ref))
    assert np.allclose(mine[np.isfinite(ref)], ref[np.isfinite(ref)], rtol=1e-12)
    code = main(["travel-costs", str(path / "homes.csv"), "--crs", CRS, "--network", str(path / "streets.geojson"),
                 "--destinations", str(path / "depots.csv"), "--k", "1", "-o", str(out), "-q"])
    assert code == 0
    assert len(pd.read_csv(out)) == len(homes)


def test_network_siting_p_median_is_optimal_on_scipy_costs(files, capsys):
    path, homes, depots, costs = files
    out, assignment = path / "sites.csv", path / "assigned.csv"
    code = main(["network-siting", str(path / "homes.csv"), "--crs", CRS, "--network", str(path / "streets.geojson"),
                 "--one-way", "oneway", "--candidates", str(path / "depots.csv"), "-p", "2", "--weight", "people",
                 "-o", str(out),
                 "--assignment", str(assignment), "-q"])
    assert code == 0, capsys.readouterr().err
    chosen = pd.read_csv(out)
    # Reference: every pair of candidates evaluated on scipy's costs (candidate -> home).
    w = np.arange(1, len(homes) + 1)
    c = costs[np.ix_(depots, homes)]
    best = min(float((w * np.minimum(c[i], c[j])).sum()) for i in range(4) for j in range(i + 1, 4))
    got = pd.read_csv(assignment)
    assert np.isclose(float((got["people"] * got["cost_m"]).sum()), best, rtol=1e-12)
    assert len(chosen) == 2 and chosen["load"].sum() == w.sum()



@pytest.mark.parametrize("extra, words", [
    # Reference: the --help text: -p is the p-median's number of sites, --within the cover's cost.
    (["--model", "cover", "--within", "500", "-p", "2"], ("-p", "--model p-median")),
    (["-p", "2", "--within", "500"], ("--within", "--model cover")),
])
def test_network_siting_refuses_the_other_models_option(files, capsys, extra, words):
    # Before, the other model's option was accepted and dropped: status 0, a plan it had no part in.
    path, *_ = files
    code = main(["network-siting", str(path / "homes.csv"), "--crs", CRS, "--network", str(path / "streets.geojson"),
                 "--candidates", str(path / "depots.csv"), *extra])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1, err
    assert all(word in err for word in words), err


def test_network_siting_cover_names_the_cheapest_candidate_by_its_line(files, capsys):
    path, homes, depots, costs = files
    c = costs[np.ix_(depots, homes)]  # scipy's costs, candidate -> home (as the p-median test reads them)
    within = float(c.min(axis=0).max()) - 1.0  # the worst-served home is out of reach
    first = int(np.flatnonzero(c.min(axis=0) > within)[0])
    code = main(["network-siting", str(path / "homes.csv"), "--crs", CRS, "--network", str(path / "streets.geojson"),
                 "--one-way", "oneway", "--candidates", str(path / "depots.csv"), "--model", "cover",
                 "--within", str(within)])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1, err
    # Rows are CSV line numbers (header on line 1). Before: "radius: ... within radius ...;
    # its cheapest candidate, column 2", a position among the candidates.
    assert f"--within: points[{first + 2}] has no candidate within" in err, err
    named = re.search(r"its cheapest candidate, row (\d+), costs ([\d.]+)", err)
    assert named is not None, err
    assert c[int(named[1]) - 2, first] == c[:, first].min() == float(named[2])  # a cheapest one (ties alike)


def test_network_siting_names_each_homes_depot_and_tallies_its_sites(files, capsys):
    """The candidates listed last first, so the open sites are not the first rows: every home's
    ``site`` is the CSV line of a chosen depot it reaches at least cost on scipy's costs, and
    each chosen depot's ``points``/``load`` are the homes (and people) so named."""
    path, homes, depots, costs = files
    table = pd.read_csv(path / "depots.csv")
    table.iloc[::-1].to_csv(path / "depots_reversed.csv", index=False)
    order = depots[::-1]
    out, assignment = path / "sites.csv", path / "assigned.csv"
    code = main(["network-siting", str(path / "homes.csv"), "--crs", CRS, "--network", str(path / "streets.geojson"),
                 "--one-way", "oneway", "--candidates", str(path / "depots_reversed.csv"), "-p", "2",
                 "--weight", "people", "-o", str(out),
                 "--assignment", str(assignment), "-q"])
    assert code == 0, capsys.readouterr().err
    chosen, got = pd.read_csv(out), pd.read_csv(assignment)
    rows = chosen["line"].to_numpy() - 2  # CSV line numbers: the header is line 1
    c = costs[np.ix_(order[rows], homes)]  # scipy, chosen depot -> home
    assert not np.array_equal(np.sort(rows), np.arange(2))  # the case the row mapping matters for
    # The named depot is one of least cost (ties between depots may go either way).
    named = np.searchsorted(chosen["line"].to_numpy(), got["site"].to_numpy(), sorter=np.argsort(chosen["line"]))
    named = np.argsort(chosen["line"].to_numpy())[named]
    assert set(got["site"]) <= set(chosen["line"])
    np.testing.assert_allclose(c[named, np.arange(len(homes))], c.min(axis=0), rtol=1e-12)
    np.testing.assert_allclose(got["cost_m"].to_numpy(), c.min(axis=0), rtol=1e-12)
    for line, points, load in zip(chosen["line"], chosen["points"], chosen["load"]):
        mine = got["site"] == line
        assert points == mine.sum() and load == got.loc[mine, "people"].sum()


def test_network_siting_names_a_column_of_the_homes_it_replaces(files, capsys):
    """A homes file with its own "site" column lost it in the assignment file without a word;
    now one warning line names it, and the file's sites are still depots of least cost on
    scipy's costs."""
    path, homes, depots, costs = files
    table = pd.read_csv(path / "homes.csv").assign(site="survey")
    table.to_csv(path / "homes_site.csv", index=False)
    assignment = path / "assigned_site.csv"
    code = main(["network-siting", str(path / "homes_site.csv"), "--crs", CRS, "--network",
                 str(path / "streets.geojson"), "--one-way", "oneway", "--candidates", str(path / "depots.csv"),
                 "-p", "2", "--weight", "people", "-o", str(path / "sites_site.csv"), "--assignment",
                 str(assignment), "-q"])
    err = capsys.readouterr().err
    assert code == 0, err
    assert "placewise: warning: the demand: the result replaces your column 'site'" in err
    got, chosen = pd.read_csv(assignment), pd.read_csv(path / "sites_site.csv")
    assert set(got["site"]) <= set(chosen["line"])
    c = costs[np.ix_(depots[chosen["line"].to_numpy() - 2], homes)]  # scipy, chosen depot -> home
    np.testing.assert_allclose(got["cost_m"].to_numpy(), c.min(axis=0), rtol=1e-12)


def test_a_network_of_multi_part_streets_travels_as_its_blocks(files, capsys):
    # Each east-west street stored as one MultiLineString of its blocks, each block-long
    # minute column shared among them by length: the costs are scipy's dijkstra on the
    # blocks (all both ways, one minute per block).
    path, homes, depots, _ = files
    ends, _ = _grid()
    rows, minutes = [], []
    for y in range(SIDE):
        blocks = [[np.multiply(a, STEP), np.multiply(b, STEP)] for a, b in ends if a[1] == b[1] == y]
        rows.append(shapely.MultiLineString(blocks))
        minutes.append(float(len(blocks)))
    for a, b in ends:
        if a[0] == b[0]:
            rows.append(shapely.LineString([np.multiply(a, STEP), np.multiply(b, STEP)]))
            minutes.append(1.0)
    gpd.GeoDataFrame({"minutes": minutes}, geometry=rows, crs=CRS).to_file(path / "streets_multi.geojson")
    out = path / "costs_multi.csv"
    code = main(["travel-costs", str(path / "homes.csv"), "--crs", CRS, "--network",
                 str(path / "streets_multi.geojson"), "--destinations", str(path / "depots.csv"), "--cost",
                 "minutes", "-o", str(out), "-q"])
    assert code == 0, capsys.readouterr().err
    got = pd.read_csv(out)
    ref = _reference(ends, np.zeros(len(ends), dtype=int))[np.ix_(homes, depots)] / STEP
    mine = np.full(ref.shape, np.inf)
    mine[got["origin"].to_numpy() - 2, got["destination"].to_numpy() - 2] = got["cost_u"].to_numpy()
    np.testing.assert_allclose(mine, ref, rtol=1e-12)


def test_missing_network_column_is_one_line(files, capsys):
    path, *_ = files
    code = main(["network-catchments", str(path / "homes.csv"), "--crs", CRS, "--network",
                 str(path / "streets.geojson"), "--sites", str(path / "depots.csv"), "--cost", "minutes"])
    err = capsys.readouterr().err
    assert code == 2 and "minutes" in err and len(err.strip().splitlines()) == 1


def test_network_siting_names_unreached_homes_by_their_csv_line(tmp_path, capsys):
    # Two streets 4000 ft apart that share no end, in a US-foot CRS: the home on the far
    # street (CSV line 4) reaches no depot. Before, the message named "the input[2]": its
    # position, which reads as CSV line 2 (a home on the depot's street).
    gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (1000, 0)]), shapely.LineString([(5000, 0), (6000, 0)])],
                     crs="EPSG:2263").to_file(tmp_path / "streets.gpkg")
    pd.DataFrame({"x": [100.0, 900.0, 5500.0], "y": [30.0, 0.0, 0.0]}).to_csv(tmp_path / "homes.csv", index=False)
    pd.DataFrame({"x": [0.0], "y": [0.0]}).to_csv(tmp_path / "depots.csv", index=False)
    common = [str(tmp_path / "homes.csv"), "--crs", "EPSG:2263", "--network", str(tmp_path / "streets.gpkg")]
    code = main(["network-siting", *common, "--candidates", str(tmp_path / "depots.csv"), "-p", "1"])
    err = capsys.readouterr().err
    assert code == 2 and "the input[4]: no candidate reaches 1 point(s)" in err, err
    # The catchments read back: the far home unreached (no site), the others at their distance
    # along the street (closed form: x from the depot at the street's west end), in US feet.
    out = tmp_path / "catchments.csv"
    code = main(["network-catchments", *common, "--sites", str(tmp_path / "depots.csv"), "-o", str(out)])
    err = capsys.readouterr().err
    got = pd.read_csv(out)
    assert code == 0 and list(got["reachable"]) == [True, True, False] and got["site"].isna().tolist()[2]
    np.testing.assert_allclose(got["cost_usft"][:2], [100.0, 900.0], rtol=1e-12)
    np.testing.assert_allclose(got["gap_usft"], [30.0, 0.0, 0.0], atol=1e-9)
    assert "2 of 3 row(s) reach one of 1 site(s) along the network; largest travel cost 900 usft" in err, err
    # Within --limit 1200 the second depot (CSV line 3, at the top of a side street 800 ft
    # long) cannot reach the home at CSV line 2 (closed form: 800 + 900 = 1700
    # ft); one site cannot serve both homes, and the message names both by their lines
    # (before: "candidate 1 cannot reach points[0]", positions).
    gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (1000, 0)]), shapely.LineString([(1000, 0), (1000, 800)])],
                     crs="EPSG:2263").to_file(tmp_path / "corner.gpkg")
    pd.DataFrame({"x": [100.0, 1000.0], "y": [30.0, 700.0]}).to_csv(tmp_path / "two.csv", index=False)
    pd.DataFrame({"x": [0.0, 1000.0], "y": [0.0, 800.0]}).to_csv(tmp_path / "ends.csv", index=False)
    code = main(["network-siting", str(tmp_path / "two.csv"), "--crs", "EPSG:2263", "--network",
                 str(tmp_path / "corner.gpkg"), "--candidates", str(tmp_path / "ends.csv"), "-p", "1",
                 "--limit", "1200"])
    err = capsys.readouterr().err
    assert code == 2 and "candidate 3 cannot reach points[2]" in err, err


def test_the_summary_lines_agree_with_scipy_and_with_the_files(files, capsys):
    # Reference: scipy.sparse.csgraph.dijkstra on the grid built here (the fixture): the
    # p-median's total (brute force over pairs of depots), the count of homes a depot
    # reaches and the largest cost among them; the pairs line counts the rows written.
    path, homes, depots, costs = files
    common = ["--crs", CRS, "--network", str(path / "streets.geojson"), "--one-way", "oneway"]
    code = main(["network-siting", str(path / "homes.csv"), *common, "--candidates", str(path / "depots.csv"),
                 "-p", "2", "-o", str(path / "sites.csv")])
    err = capsys.readouterr().err
    c = costs[np.ix_(depots, homes)]
    best = min(float(np.minimum(c[i], c[j]).sum()) for i in range(4) for j in range(i + 1, 4))
    total = re.search(r"total weighted travel cost ([\d.e+]+) \(weight x m\)", err)
    assert code == 0 and total is not None, err
    assert float(total[1]) == pytest.approx(best, rel=1e-6)  # printed to 6 significant digits
    code = main(["network-catchments", str(path / "homes.csv"), *common, "--sites", str(path / "depots.csv"),
                 "-o", str(path / "catchments.csv")])
    err = capsys.readouterr().err
    reach = c.min(axis=0)
    ok = np.isfinite(reach)
    line = re.search(r"(\d+) of (\d+) row\(s\) reach one of (\d+) site\(s\) along the network; largest travel "
                     r"cost ([\d.e+]+) m", err)
    assert code == 0 and line is not None, err
    assert (int(line[1]), int(line[2]), int(line[3])) == (int(ok.sum()), len(homes), len(depots))
    assert float(line[4]) == pytest.approx(reach[ok].max(), rel=1e-6)
    code = main(["travel-costs", str(path / "homes.csv"), *common, "--limit", "450", "-o", str(path / "c.csv")])
    err = capsys.readouterr().err
    pairs = re.search(r"(\d+) pair\(s\) of (\d+) origin\(s\) x (\d+) destination\(s\) kept", err)
    within = costs[np.ix_(homes, homes)] <= 450
    assert code == 0 and pairs is not None, err
    assert int(pairs[1]) == int(within.sum()) == len(pd.read_csv(path / "c.csv"))


def test_a_longitude_latitude_network_travels_in_geodesic_metres(tmp_path, capsys):
    # Streets drawn in EPSG:4326 near 60° N: the costs are geodesic metres along them.
    # Reference: pyproj.Geod (WGS84) lengths of the two streets, summed along the only path.
    pyproj = pytest.importorskip("pyproj")
    net, homes, out = tmp_path / "net.gpkg", tmp_path / "homes.gpkg", tmp_path / "costs.csv"
    gpd.GeoDataFrame(geometry=[shapely.LineString([(10.0, 60.0), (10.01, 60.0)]),
                               shapely.LineString([(10.01, 60.0), (10.01, 60.01)])], crs="EPSG:4326").to_file(net)
    gpd.GeoDataFrame({"name": ["a", "b"]}, geometry=[shapely.Point(10.0, 60.0), shapely.Point(10.01, 60.01)],
                     crs="EPSG:4326").to_file(homes)
    code = main(["travel-costs", str(homes), "--network", str(net), "--destinations", str(homes), "-o", str(out)])
    assert code == 0, capsys.readouterr().err
    costs = pd.read_csv(out)
    geod = pyproj.Geod(ellps="WGS84")
    along = geod.line_length([10.0, 10.01], [60.0, 60.0]) + geod.line_length([10.01, 10.01], [60.0, 60.01])
    across = costs[costs["origin"] != costs["destination"]]["cost_m"]
    assert len(across) == 2 and np.allclose(across, along, rtol=1e-12)


def test_a_cost_column_carries_the_unit_named_by_cost_unit(files, capsys):
    path, homes, depots, costs = files
    streets = gpd.read_file(path / "streets.geojson")
    streets.assign(minutes=streets.geometry.length / 100.0 * 1.5).to_file(path / "timed.geojson")
    base = ["network-catchments", str(path / "homes.csv"), "--crs", CRS, "--network", str(path / "timed.geojson"),
            "--sites", str(path / "depots.csv"), "--one-way", "oneway", "--cost", "minutes"]
    code = main([*base, "--cost-unit", "min", "-o", str(path / "c.csv")])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    got = pd.read_csv(path / "c.csv")
    # scipy dijkstra in metres, 1.5 minutes per 100 m block side.
    best = costs[np.ix_(depots, homes)].min(axis=0) * 1.5 / STEP
    reached = np.isfinite(best)
    assert np.allclose(got["cost_min"].to_numpy()[reached], best[reached], rtol=1e-12)
    assert re.search(rf"largest travel cost {best[reached].max():.6g} min$", captured.err.strip()), captured.err
    # Without a name the summary says the costs are in unnamed cost units, not coordinate units.
    code = main([*base, "-o", str(path / "c2.csv")])
    captured = capsys.readouterr()
    assert code == 0 and "cost units (name them with --cost-unit)" in captured.err, captured.err
    code = main([*base[:-2], "--cost-unit", "min"])
    captured = capsys.readouterr()
    assert code == 2 and "--cost-unit names the unit of the --cost column" in captured.err, captured.err


def test_planar_points_beside_a_network_with_a_crs_are_refused(files, capsys):
    path, *_ = files
    code = main(["network-catchments", str(path / "homes.csv"), "--planar", "--network", str(path / "streets.geojson"),
                 "--sites", str(path / "depots.csv")])
    captured = capsys.readouterr()
    assert code == 2 and captured.out == "", captured
    assert "has no CRS" in captured.err and "WGS 84 / UTM zone 30N" in captured.err, captured.err
