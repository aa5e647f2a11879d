"""The coverage subcommands and the --candidates / --region options: files written and read
back, one-line errors with status 2.

Every value checked comes from a file the command wrote, read back with pandas/geopandas,
and is compared with an outside reference named beside the check: scipy.optimize.milp on
the textbook integer programs (set covering, Toregas et al. 1971; maximal covering, Church &
ReVelle 1974), scipy's cdist, pyproj.Geod, or shapely/GEOS containment.
"""

from __future__ import annotations

import numpy as np
import pytest

gpd = pytest.importorskip("geopandas")
pyproj = pytest.importorskip("pyproj")
import pandas as pd  # noqa: E402
import shapely  # noqa: E402
from scipy.optimize import Bounds, LinearConstraint, milp  # noqa: E402
from scipy.spatial.distance import cdist  # noqa: E402

from placewise.cli import main  # noqa: E402

RNG = np.random.default_rng(17)
XY = RNG.uniform(0, 10_000, size=(40, 2)) + [500_000.0, 6_600_000.0]
W = RNG.integers(1, 6, size=40).astype(float)
CXY = RNG.uniform(0, 10_000, size=(12, 2)) + [500_000.0, 6_600_000.0]


@pytest.fixture()
def files(tmp_path):
    homes = tmp_path / "homes.csv"
    pd.DataFrame({"east": XY[:, 0], "north": XY[:, 1], "people": W}).to_csv(homes, index=False)
    parcels = tmp_path / "parcels.csv"
    pd.DataFrame({"parcel": [f"P{j:02d}" for j in range(len(CXY))], "east": CXY[:, 0],
                  "north": CXY[:, 1]}).to_csv(parcels, index=False)
    return homes, parcels


def run(argv, capsys):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def assert_user_error(code, err, *words):
    assert code == 2
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("placewise"), err
    for word in words:
        assert word in lines[0], (word, err)


def milp_max_cover(within: np.ndarray, w: np.ndarray, p: int) -> float:
    """Most weight p candidates cover (scipy.optimize.milp; Church & ReVelle 1974)."""
    n, m = within.shape
    res = milp(np.concatenate([np.zeros(m), -w]),
               constraints=[LinearConstraint(np.hstack([-within.astype(float), np.eye(n)]), -np.inf, 0),
                            LinearConstraint(np.concatenate([np.ones(m), np.zeros(n)])[None, :], p, p)],
               integrality=np.ones(m + n), bounds=Bounds(0, 1))
    assert res.status == 0
    return float(-res.fun)


def test_cover_most_files_read_back_against_milp(files, tmp_path, capsys):
    homes, parcels = files
    sites, rows, totals = tmp_path / "sites.gpkg", tmp_path / "rows.csv", tmp_path / "totals.csv"
    code, _, err = run(["cover-most", homes, "--crs", "EPSG:32632", "--weight", "people", "-p", 3,
                        "--radius", 2500, "--candidates", parcels, "-o", sites,
                        "--assignment", rows, "--summary", totals], capsys)
    assert code == 0, err
    best = milp_max_cover(cdist(XY, CXY) <= 2500, W, 3)  # scipy.optimize.milp optimum
    summary = pd.read_csv(totals)
    np.testing.assert_allclose(summary["covered_load"].iloc[0], best, rtol=1e-12)
    assert "radius_m" in summary.columns and "upper_bound" in summary.columns
    chosen = gpd.read_file(sites)
    assert chosen.crs.to_epsg() == 32632 and set(chosen["source"]) == {"candidates"}
    picked = CXY[chosen["source_row"].to_numpy(dtype=int) - 2]  # the parcels' CSV line numbers
    covering = (cdist(XY, picked) <= 2500).sum(axis=1)
    table = pd.read_csv(rows)
    assert table["covering"].tolist() == covering.tolist()
    assert table["covered"].tolist() == (covering > 0).tolist()
    # The summary line on stderr states the radius with its unit and the share covered.
    line = err.strip().splitlines()[-1]
    assert "within 2500 m" in line and f"{100 * best / W.sum():.2f} %" in line


def test_cover_all_planar_anywhere(tmp_path, capsys):
    path = tmp_path / "pts.csv"
    pd.DataFrame({"x": [0, 2, 9, 20], "y": [0, 0, 0, 0]}).to_csv(path, index=False)
    out = tmp_path / "sites.csv"
    code, _, err = run(["cover-all", path, "--planar", "--radius", 1.5, "-o", out], capsys)
    assert code == 0, err
    sites = pd.read_csv(out)
    # Closed form: (0, 0) and (2, 0) share a site, 9 and 20 need one each.
    assert len(sites) == 3 and set(sites["source"]) == {"anywhere"}
    d = cdist([[0, 0], [2, 0], [9, 0], [20, 0]], sites[["x", "y"]].to_numpy())
    assert (d.min(axis=1) <= 1.5 * (1 + 1e-9)).all()
    assert "within 1.5 coordinate units" in err and "at least 3 new needed" in err


def test_cover_all_with_existing_sites_read_back(tmp_path, capsys):
    path, old, out = tmp_path / "pts.csv", tmp_path / "old.csv", tmp_path / "sites.csv"
    pd.DataFrame({"x": [0, 2, 9, 20, 21], "y": [0, 0, 0, 0, 0]}).to_csv(path, index=False)
    pd.DataFrame({"x": [20.5], "y": [0.0]}).to_csv(old, index=False)
    code, _, err = run(["cover-all", path, "--planar", "--radius", 1.5, "--fixed", old, "-o", out], capsys)
    assert code == 0, err
    sites = pd.read_csv(out)
    # Closed form: the old site at 20.5 serves 20 and 21; (0, 0) and (2, 0) share one new
    # site and 9 needs another: 2 new beside the existing one.
    assert sorted(sites["source"]) == ["anywhere", "anywhere", "fixed"]
    assert sites.loc[sites["fixed"], ["x", "y"]].to_numpy().tolist() == [[20.5, 0.0]]
    d = cdist([[0, 0], [2, 0], [9, 0], [20, 0], [21, 0]], sites[["x", "y"]].to_numpy())  # scipy cdist
    assert (d.min(axis=1) <= 1.5 * (1 + 1e-9)).all()
    assert "2 new site(s) and 1 existing, at least 2 new needed" in err


def test_evaluate_sites_lonlat_against_geodesics(tmp_path, capsys):
    homes = tmp_path / "homes.csv"
    lon, lat = 10.7 + 0.1 * RNG.random(30), 59.9 + 0.05 * RNG.random(30)
    pd.DataFrame({"lon": lon, "lat": lat}).to_csv(homes, index=False)
    depots = tmp_path / "depots.geojson"
    gpd.GeoDataFrame({"name": ["a", "b"]}, geometry=gpd.points_from_xy([10.72, 10.78], [59.91, 59.94]),
                     crs="EPSG:4326").to_file(depots)
    out, loads = tmp_path / "rows.parquet", tmp_path / "loads.csv"
    code, _, err = run(["evaluate-sites", homes, "--sites", depots, "--radius", 2000, "-o", out,
                        "--site-loads", loads], capsys)
    assert code == 0, err
    rows = gpd.read_parquet(out)
    _, _, d = pyproj.Geod(ellps="WGS84").inv(np.repeat(lon, 2), np.repeat(lat, 2), np.tile([10.72, 10.78], 30),
                                             np.tile([59.91, 59.94], 30))  # pyproj geodesics
    near = d.reshape(30, 2).min(axis=1)
    np.testing.assert_allclose(rows["distance_m"], near, rtol=2e-3)
    clear = np.abs(near - 2000) > 10
    assert (rows["covered"].to_numpy()[clear] == (near[clear] <= 2000)).all()
    assert pd.read_csv(loads)["points"].sum() == 30
    assert "within 2000 m" in err


def test_p_median_candidates_and_region(files, tmp_path, capsys):
    homes, parcels = files
    zone = shapely.box(500_000, 6_600_000, 505_000, 6_610_000)
    region = tmp_path / "zone.gpkg"
    gpd.GeoDataFrame(geometry=[zone], crs="EPSG:32632").to_file(region)
    out = tmp_path / "sites.gpkg"
    code, _, err = run(["p-median", homes, "--crs", "EPSG:32632", "-p", 2, "--candidates", parcels,
                        "--region", region, "-o", out], capsys)
    assert code == 0, err
    sites = gpd.read_file(out)
    assert shapely.covers(zone, sites.geometry.values).all()  # shapely containment
    assert all(zone.covers(shapely.Point(CXY[line - 2])) for line in sites["source_row"])
    code, _, err = run(["p-center", homes, "--crs", "EPSG:32632", "-p", 2, "--candidates", parcels,
                        "-o", tmp_path / "c.csv"], capsys)
    assert code == 0 and "largest weighted distance" in err


def test_weber_point_region(files, tmp_path, capsys):
    homes, _ = files
    zone = shapely.box(520_000, 6_600_000, 521_000, 6_601_000)  # east of every home
    region = tmp_path / "zone.geojson"
    gpd.GeoDataFrame(geometry=[zone], crs="EPSG:32632").to_crs("EPSG:4326").to_file(region)
    out = tmp_path / "site.gpkg"
    code, _, err = run(["weber-point", homes, "--crs", "EPSG:32632", "--region", region, "-o", out], capsys)
    assert code == 0, err
    site = gpd.read_file(out)
    assert bool(site["region_active"].iloc[0])
    assert zone.distance(site.geometry.iloc[0]) < 0.05  # shapely; the region came through lon/lat
    code, _, err = run(["minimax-point", homes, "--crs", "EPSG:32632", "--region", region, "-o", out], capsys)
    assert code == 0, err


@pytest.mark.parametrize("radius", ["0", "-3", "nan", "ten"])
def test_bad_radius_is_one_line(files, capsys, radius):
    homes, _ = files
    for command in (["cover-all"], ["cover-most", "-p", "1"], ["evaluate-sites", "--sites", homes]):
        with pytest.raises(SystemExit) as info:  # argparse's usage error: one line, status 2
            main([command[0], str(homes), "--crs", "EPSG:32632", f"--radius={radius}", *map(str, command[1:])])
        _, err = capsys.readouterr()
        assert_user_error(info.value.code, err, "--radius")


def test_region_holding_no_candidate_is_one_line(files, tmp_path, capsys):
    homes, parcels = files
    region = tmp_path / "far.gpkg"
    gpd.GeoDataFrame(geometry=[shapely.box(0, 0, 10, 10)], crs="EPSG:32632").to_file(region)
    code, _, err = run(["p-median", homes, "--crs", "EPSG:32632", "-p", 1, "--candidates", parcels,
                        "--region", region], capsys)
    assert_user_error(code, err, "region holds none")


def test_covering_commands_offer_no_region(files, tmp_path, capsys):
    # The covering models take no region: --region is not offered (argparse's one-line usage
    # error, status 2) rather than accepted by the parser and failing inside with a TypeError.
    homes, parcels = files
    region = tmp_path / "zone.gpkg"
    gpd.GeoDataFrame(geometry=[shapely.box(*CXY.min(axis=0), *CXY.max(axis=0))], crs="EPSG:32632").to_file(region)
    for command in (["cover-all"], ["cover-most", "-p", 1]):
        with pytest.raises(SystemExit) as info:
            main([command[0], str(homes), "--crs", "EPSG:32632", "--radius", "9000", *map(str, command[1:]),
                  "--candidates", str(parcels), "--region", str(region)])
        _, err = capsys.readouterr()
        assert_user_error(info.value.code, err, "--region")
        with pytest.raises(SystemExit):
            main([command[0], "--help"])
        assert "--region" not in capsys.readouterr().out


def test_candidates_file_without_coordinates_is_one_line(files, tmp_path, capsys):
    homes, _ = files
    bad = tmp_path / "bad.csv"
    pd.DataFrame({"parcel": ["a", "b"], "area": [1, 2]}).to_csv(bad, index=False)
    code, _, err = run(["cover-most", homes, "--crs", "EPSG:32632", "-p", 1, "--radius", 100,
                        "--candidates", bad], capsys)
    assert_user_error(code, err, "bad.csv", "no coordinate columns")
    code, _, err = run(["cover-all", homes, "--crs", "EPSG:32632", "--radius", 100,
                        "--candidates", tmp_path / "missing.csv"], capsys)
    assert_user_error(code, err, "missing.csv", "no such file")


def test_uncoverable_row_is_one_line_naming_the_line(files, capsys):
    homes, parcels = files
    code, _, err = run(["cover-all", homes, "--crs", "EPSG:32632", "--radius", 1, "--candidates", parcels], capsys)
    # scipy cdist: the first home beyond 1 m of every parcel, and its nearest parcel (CSV line numbers).
    d = cdist(XY, CXY)
    first = int(np.argmax(d.min(axis=1) > 1))
    nearest = int(d[first].argmin()) + 2
    assert_user_error(code, err, f"points[{first + 2}]", f"its nearest candidate, candidates[{nearest}], lies at "
                      "distance ", "line numbers")
    # The distance in metres (the CRS's unit), as scipy measures it.
    said = err.split("lies at distance ")[1].split(" ")[0].rstrip(";,")
    assert float(said) == pytest.approx(d[first].min(), rel=1e-12), err


@pytest.mark.parametrize("command, label", [(["cover-most", "--radius", 2500], "cover_most"),
                                            (["p-median"], "p_median"), (["p-center"], "p_center")])
def test_the_progress_bar_shows_on_a_terminal_unless_turned_off(files, capsys, monkeypatch, tmp_path, command,
                                                                label):
    import sys

    homes, parcels = files
    argv = [command[0], homes, "--crs", "EPSG:32632", "--weight", "people", "-p", 3, *command[1:],
            "--candidates", parcels, "-o", tmp_path / "sites.csv"]
    # stderr captured to a buffer (not a terminal): no bar.
    code, _, err = run(argv, capsys)
    assert code == 0 and label not in err, err
    # stderr as a terminal: the bar is drawn (labelled with the model) ...
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True)
    code, _, err = run(argv, capsys)
    assert code == 0 and label in err, err
    # ... unless turned off, or the command is quiet.
    for off in ("--no-progress", "--quiet"):
        code, _, err = run([*argv, off], capsys)
        assert code == 0 and label not in err, (off, err)
