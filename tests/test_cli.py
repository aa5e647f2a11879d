"""The ``placewise`` command line: files written and read back, one-line errors with status 2.

Every value checked comes from a file (or standard output) the command wrote, read back with
pandas/geopandas, and is compared with an outside reference named beside the check: scipy
(optimize, cKDTree, csgraph), shapely/GEOS, pyproj, or a closed form.
"""

from __future__ import annotations

import io
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

gpd = pytest.importorskip("geopandas")
import pandas as pd  # noqa: E402
import shapely  # noqa: E402
from scipy.optimize import minimize  # noqa: E402
from scipy.sparse.csgraph import minimum_spanning_tree  # noqa: E402
from scipy.spatial import cKDTree  # noqa: E402
from scipy.spatial.distance import cdist  # noqa: E402

from hostile import BAD_WEIGHTS  # noqa: E402
from placewise.cli import main  # noqa: E402
from placewise.geodesic import SPHERE_MODEL  # noqa: E402

RNG = np.random.default_rng(7)
XY = RNG.normal(size=(120, 2)) * [2000.0, 1200.0] + [500_000.0, 6_600_000.0]
W = RNG.integers(1, 5, size=120).astype(float)
G = RNG.choice(["a", "b", "c"], size=120)


@pytest.fixture()
def csv_path(tmp_path):
    path = tmp_path / "homes.csv"
    pd.DataFrame({"east": XY[:, 0], "north": XY[:, 1], "people": W, "zone": G}).to_csv(path, index=False)
    return path


def run(argv, capsys):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def table_of(out: str) -> pd.DataFrame:
    return pd.read_csv(io.StringIO(out))


def assert_user_error(code, err, *words):
    assert code == 2
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("placewise")
    assert "Traceback" not in err and "np." not in err
    for w in words:
        assert w in lines[0], lines[0]
    return lines[0]


def weber_cost_scipy(xy, w):
    """Weighted Fermat–Weber cost minimised by scipy.optimize (Nelder–Mead, centred and scaled)."""
    c, s = xy.mean(0), float(np.ptp(xy))
    f = lambda p: float(w @ np.hypot(*(xy - c - s * p).T))  # noqa: E731
    return float(minimize(f, np.zeros(2), method="Nelder-Mead", options={"xatol": 1e-10, "fatol": 1e-12}).fun)


def mst_length_scipy(xy):
    """Euclidean MST length by scipy.sparse.csgraph."""
    return float(minimum_spanning_tree(cdist(xy, xy)).sum())


def utm(csv_path):
    return [csv_path, "--x", "east", "--y", "north", "--crs", "EPSG:32632"]


# ---------------------------------------------------------------- formats


def test_csv_in_csv_out_on_stdout_with_units(csv_path, capsys):
    code, out, err = run(["weber-point", *utm(csv_path), "--weight", "people"], capsys)
    assert code == 0, err
    table = table_of(out)
    assert list(table.columns[-2:]) == ["east", "north"]
    assert table["cost_m"].iloc[0] == pytest.approx(weber_cost_scipy(XY, W), rel=1e-7)  # scipy reference
    assert "1 site(s)" in err and "(weight x m)" in err  # the summary line states the unit


def test_planar_coordinates_say_coordinate_units(csv_path, capsys):
    code, out, err = run(["weber-point", csv_path, "--x", "east", "--y", "north", "--planar"], capsys)
    assert code == 0, err
    assert "cost_u" in table_of(out).columns
    assert "coordinate units" in err


@pytest.mark.parametrize("suffix", [".geojson", ".parquet", ".csv"])
def test_output_formats_by_extension_read_back(csv_path, tmp_path, capsys, suffix):
    out_path = tmp_path / f"best{suffix}"
    code, _, err = run(["weber-point", *utm(csv_path), "--weight", "people", "--by", "zone", "-o", out_path,
                        "--quiet"], capsys)
    assert code == 0, err
    assert err == ""  # --quiet: no summary line
    back = pd.read_csv(out_path) if suffix == ".csv" else (
        gpd.read_file(out_path) if suffix == ".geojson" else gpd.read_parquet(out_path))
    assert back["zone"].tolist() == ["a", "b", "c"]
    assert back["points"].tolist() == [int((G == z).sum()) for z in "abc"]
    for zone, cost in zip(back["zone"], back["cost_m"]):
        m = G == zone
        assert cost == pytest.approx(weber_cost_scipy(XY[m], W[m]), rel=1e-7)  # scipy per group
    if suffix != ".csv":
        assert back.crs.to_epsg() == 32632


def geodesic_weber_cost_scipy(lonlat: np.ndarray, w: np.ndarray) -> float:
    """Weighted Fermat–Weber cost on the WGS84 ellipsoid: scipy.optimize Nelder–Mead on the
    objective measured with pyproj.Geod (GeographicLib), from the mean point."""
    from pyproj import Geod

    geod = Geod(ellps="WGS84")

    def f(p):
        n = len(lonlat)
        return float(w @ geod.inv(np.full(n, p[0]), np.full(n, p[1]), lonlat[:, 0], lonlat[:, 1])[2])

    res = minimize(f, lonlat.mean(0), method="Nelder-Mead", options={"xatol": 1e-11, "fatol": 1e-9, "maxiter": 40000})
    return float(res.fun)


def test_geojson_input_uses_its_crs(tmp_path, capsys):
    path = tmp_path / "pts.geojson"
    lonlat = gpd.GeoDataFrame({"w": W}, geometry=gpd.points_from_xy(XY[:, 0], XY[:, 1]), crs="EPSG:32632").to_crs(4326)
    lonlat.to_file(path, driver="GeoJSON")
    code, out, err = run(["weber-point", path, "--weight", "w"], capsys)
    assert code == 0, err
    # Solved on the WGS84 ellipsoid: scipy on the geodesic objective measured by pyproj.Geod.
    lonlat_xy = shapely.get_coordinates(lonlat.geometry.values)
    assert table_of(out)["cost_m"].iloc[0] == pytest.approx(geodesic_weber_cost_scipy(lonlat_xy, W), rel=1e-9)
    assert table_of(out)["work_crs"].iloc[0] == "WGS84 ellipsoid"


def test_polygons_need_centroids(tmp_path, capsys):
    path = tmp_path / "plots.geojson"
    gpd.GeoDataFrame(geometry=[shapely.box(0, 0, 0.01, 0.01), shapely.box(0.02, 0, 0.03, 0.01)],
                     crs="EPSG:4326").to_file(path, driver="GeoJSON")
    code, _, err = run(["weber-point", path], capsys)
    assert_user_error(code, err, "centroids")
    code, out, err = run(["weber-point", path, "--centroids", "-q"], capsys)
    assert code == 0, err


# ---------------------------------------------------------------- user errors: one line, status 2


def test_missing_file(capsys, tmp_path):
    code, _, err = run(["weber-point", tmp_path / "nowhere.csv", "--planar"], capsys)
    assert_user_error(code, err, "nowhere.csv", "no such file")


def test_missing_column(csv_path, tmp_path, capsys):
    code, _, err = run(["weber-point", csv_path, "--x", "x", "--y", "north", "--planar"], capsys)
    assert_user_error(code, err, "no column 'x'", "--x")
    odd = tmp_path / "odd.csv"
    odd.write_text("a,b\n1,2\n")
    code, _, err = run(["weber-point", odd, "--planar"], capsys)
    assert_user_error(code, err, "no coordinate columns recognised", "--x and --y")
    code, _, err = run(["weber-point", odd, "--x", "a", "--planar"], capsys)
    assert_user_error(code, err, "--x and --y go together")
    code, _, err = run(["weber-point", csv_path, "--x", "east", "--y", "north", "--planar", "--weight", "visits"],
                       capsys)
    assert_user_error(code, err, "'visits'", "--weight")
    code, _, err = run(["weber-point", csv_path, "--x", "east", "--y", "north", "--planar", "--by", "ward"], capsys)
    assert_user_error(code, err, "'ward'", "--by")


@pytest.mark.parametrize("text, shown", [("x,y\n0,0\n1,one\n2,2\n", "'one'"), ("x,y\n0,0\n1,\n2,2\n", "nan")])
def test_bad_coordinate_value_names_the_line_in_plain_words(tmp_path, capsys, text, shown):
    path = tmp_path / "bad.csv"
    path.write_text(text)
    code, _, err = run(["weber-point", path, "--planar"], capsys)
    assert_user_error(code, err, "'y'", "line 3", f"value {shown} ")


@pytest.mark.parametrize("name,make", BAD_WEIGHTS[:4], ids=[b[0] for b in BAD_WEIGHTS[:4]])
def test_bad_weight_values(tmp_path, capsys, name, make):
    path = tmp_path / "w.csv"
    pd.DataFrame({"x": XY[:10, 0], "y": XY[:10, 1], "w": make(10)}).to_csv(path, index=False)
    code, _, err = run(["weber-point", path, "--planar", "--weight", "w"], capsys)
    assert_user_error(code, err, "weight")


def test_negative_seed_is_a_user_error_naming_seed(csv_path, capsys):
    code, _, err = run(["steiner-tree", *utm(csv_path), "--seed", "-1"], capsys)
    assert_user_error(code, err, "seed", "-1")


def test_without_by_errors_speak_of_no_group(csv_path, tmp_path, capsys):
    two = tmp_path / "two.csv"
    pd.DataFrame({"x": [0.0, 1.0], "y": [0.0, 0.0]}).to_csv(two, index=False)
    code, _, err = run(["enclosing-ellipse", two, "--planar"], capsys)
    line = assert_user_error(code, err, "at least 3 distinct points")
    assert "group" not in line


def test_with_by_errors_name_the_group_value(tmp_path, capsys):
    path = tmp_path / "g.csv"
    pd.DataFrame({"x": [0.0, 4, 2, 9], "y": [0.0, 0, 3, 9], "town": ["oslo", "oslo", "oslo", "bergen"]}).to_csv(
        path, index=False)
    code, _, err = run(["enclosing-ellipse", path, "--planar", "--by", "town"], capsys)
    line = assert_user_error(code, err, "group 'bergen'")
    assert "group 0" not in line and "group 1" not in line


def test_errors_skip_keeps_the_group_as_a_row(tmp_path, capsys):
    path = tmp_path / "g.csv"
    pd.DataFrame({"x": [0.0, 6, 6, 0, 9], "y": [0.0, 0, 2, 2, 9], "town": ["oslo"] * 4 + ["bergen"]}).to_csv(
        path, index=False)
    out_path = tmp_path / "e.gpkg"  # planar: GeoJSON would claim longitude/latitude
    code, _, err = run(["enclosing-ellipse", path, "--planar", "--by", "town", "--errors", "skip", "--tol", "1e-10",
                        "-o", out_path], capsys)
    assert code == 0, err
    assert "1 ellipse(s)" in err and "1 group(s) skipped" in err
    back = gpd.read_file(out_path)
    assert back["town"].tolist() == ["bergen", "oslo"]
    assert back["problem"].iloc[0].startswith("group 'bergen': ") and pd.isna(back["problem"].iloc[1])
    assert back.geometry.iloc[0] is None
    # Closed form: the minimum-area ellipse of a 6 x 2 rectangle has area pi*6*2/2.
    assert back["area_u2"].iloc[1] == pytest.approx(6 * np.pi, rel=1e-6)


def test_csv_needs_crs_or_planar(csv_path, capsys):
    code, _, err = run(["weber-point", csv_path, "--x", "east", "--y", "north"], capsys)
    assert_user_error(code, err, "--crs", "--planar")


def test_bad_crs(csv_path, capsys):
    code, _, err = run(["weber-point", csv_path, "--x", "east", "--y", "north", "--crs", "EPSG:nope"], capsys)
    assert_user_error(code, err, "--crs")


def test_unknown_extensions(csv_path, tmp_path, capsys):
    other = tmp_path / "pts.xlsx"
    other.write_text("x")
    code, _, err = run(["weber-point", other, "--planar"], capsys)
    assert_user_error(code, err, "extension")
    code, _, err = run(["weber-point", csv_path, "--x", "east", "--y", "north", "--planar", "-o", tmp_path / "o.txt"],
                       capsys)
    assert_user_error(code, err, "extension")


def test_output_folder_missing(csv_path, tmp_path, capsys):
    code, _, err = run(["weber-point", csv_path, "--x", "east", "--y", "north", "--planar",
                        "-o", tmp_path / "no" / "o.csv"], capsys)
    assert_user_error(code, err, "does not exist")


@pytest.mark.parametrize("content", ["", "x,y\n", "not,a\ncsv\"file,\n\"\n"])
def test_empty_or_broken_csv(tmp_path, capsys, content):
    path = tmp_path / "odd.csv"
    path.write_text(content)
    code, _, err = run(["weber-point", path, "--planar"], capsys)
    assert_user_error(code, err)


def test_unreadable_geojson(tmp_path, capsys):
    path = tmp_path / "broken.geojson"
    path.write_text("{ this is not json")
    code, _, err = run(["weber-point", path], capsys)
    assert_user_error(code, err, "broken.geojson")


@pytest.mark.parametrize("argv", [[], ["no-such-command"], ["p-median", "x.csv"], ["p-median", "x.csv", "-p", "0"],
                                  ["steiner-tree", "x.csv", "--exact", "--heuristic"],
                                  ["steiner-tree", "x.csv", "--seed", "1.5"]])
def test_usage_errors_are_one_line(argv, capsys):
    with pytest.raises(SystemExit) as info:
        main(argv)
    _, err = capsys.readouterr()
    assert_user_error(info.value.code, err)


def test_a_file_with_a_crs_beside_planar_input_reads_as_english(tmp_path, capsys):
    planar = tmp_path / "p.csv"
    pd.DataFrame({"x": [0.0, 10, 0, 10], "y": [0.0, 0, 10, 10]}).to_csv(planar, index=False)
    sites = tmp_path / "s.gpkg"
    gpd.GeoDataFrame(geometry=gpd.points_from_xy([5.0], [5.0]), crs="EPSG:32632").to_file(sites)
    code, _, err = run(["cover-most", planar, "--planar", "-p", "1", "--radius", "3", "--candidates", sites], capsys)
    # Before: "candidates has one while the first the input has none".
    line = assert_user_error(code, err, "while the first input has none")
    assert "the first the input" not in line


@pytest.mark.parametrize("command, extra, offers_by", [
    (["cover-all"], ["--radius", "100000"], False), (["p-median"], ["-p", "2"], True)])
def test_too_wide_data_advises_only_the_options_the_subcommand_has(tmp_path, capsys, command, extra, offers_by):
    # 20 degrees of longitude at 45-55 N: beyond 0.1 % in any one transverse Mercator frame.
    rng = np.random.default_rng(1)
    path = tmp_path / "wide.csv"
    pd.DataFrame({"lon": rng.uniform(0, 20, 50), "lat": rng.uniform(45, 55, 50)}).to_csv(path, index=False)
    code, _, err = run([*command, path, *extra], capsys)
    line = assert_user_error(code, err, "distorts distances", "--work-crs", "--max-scale-error")
    # Reference: the subcommand's own --help, which lists --by for p-median and not for cover-all.
    with pytest.raises(SystemExit):
        main([*command, "--help"])
    has_by = "--by" in capsys.readouterr().out
    assert has_by == offers_by and ("--by" in line) == has_by


def test_a_distortion_warning_is_one_line_in_the_commands_terms(tmp_path, capsys):
    # Parcels near easting 0 of UTM 32N, some 500 km west of its central meridian (9 E), where
    # the zone's scale errs by about 0.3 % (from memory: k = k0 (1 + x^2 / 2R^2), k0 = 0.9996).
    path = tmp_path / "parcels.gpkg"
    boxes = [shapely.box(x, y, x + 40, y + 60) for x, y in [(0, 0), (500, 200), (900, 800), (300, 600)]]
    gpd.GeoDataFrame({"w": [1.0, 2, 3, 4]}, geometry=boxes, crs="EPSG:32632").to_file(path)
    # Without --centroids: the refusal names the option as the command line spells it.
    code, _, err = run(["weber-point", path, "--weight", "w"], capsys)
    line = assert_user_error(code, err, "--centroids")
    assert "centroids=True" not in line
    code, _, err = run(["weber-point", path, "--weight", "w", "--centroids", "-o", tmp_path / "best.csv"], capsys)
    assert code == 0, err
    warning = [line for line in err.splitlines() if "distorts distances" in line]
    # Before: the interpreter's two lines, naming the placewise script's file and line, then
    # "sys.exit(main())", and the library's keywords (work_crs=, max_scale_error=).
    assert len(warning) == 1 and warning[0].startswith("placewise: warning: "), err
    assert all(line.startswith("placewise") or line[0].isdigit() for line in err.splitlines()), err
    assert "--work-crs" in warning[0] and "--max-scale-error" in warning[0] and "work_crs=" not in warning[0]
    stated = float(re.search(r"up to ([\d.]+) %", warning[0]).group(1)) / 100
    # Outside reference: PROJ's scale factors of UTM 32N at the parcels' centroids.
    from pyproj import Proj, Transformer
    lon, lat = Transformer.from_crs(32632, 4326, always_xy=True).transform([20.0, 520, 920, 320], [30.0, 230, 830, 630])
    factors = Proj("EPSG:32632").get_factors(lon, lat)
    assert stated == pytest.approx(float(np.max(np.abs(np.asarray(factors.meridional_scale) - 1))), rel=2e-2)


def test_a_weight_that_is_not_a_number_is_named_by_its_line(tmp_path, capsys):
    path = tmp_path / "w.csv"
    path.write_text("x,y,w\n0,0,1\n1,0,abc\n0,1,2\n")
    # Reference: the file as written: 'abc' is on line 3 (the header is line 1). Before, the
    # message said "at position 1", pandas' count from 0, which is no line of the file.
    assert path.read_text().splitlines()[2].endswith(",abc")
    code, _, err = run(["weber-point", path, "--planar", "--weight", "w"], capsys)
    line = assert_user_error(code, err, "'abc' at row 3", "line numbers of")
    assert "position" not in line


@pytest.mark.parametrize("extra, words", [
    # Reference: each option's own --help text, which gives it effect only beside another.
    (["enclosing-circle", "--errors", "skip"], ("--errors skip", "--by")),  # "with --by: ..."
    (["delaunay", "--errors", "skip"], ("--errors skip", "--by")),
    (["voronoi-cells", "--weight", "people"], ("--weight", "--demand")),  # weighs the demand rows
    (["steiner-tree", "--heuristic", "--time-limit", "5"], ("--time-limit", "--heuristic")),  # "for the exact search"
])
def test_options_that_would_act_on_nothing_are_refused(csv_path, capsys, extra, words):
    # Before, each run ended with status 0 and a result the option had no part in: the
    # option was read and dropped without a word.
    code, _, err = run([extra[0], *utm(csv_path), *extra[1:]], capsys)
    assert_user_error(code, err, *words)


def test_every_kernel_has_a_subcommand(capsys):
    with pytest.raises(SystemExit):
        main(["--help"])
    out, _ = capsys.readouterr()
    for name in ("weber-point", "minimax-point", "enclosing-circle", "enclosing-ellipse", "p-median", "p-center",
                 "voronoi-cells", "nearest-site", "spanning-tree", "steiner-tree", "demo"):
        assert name in out


# ---------------------------------------------------------------- every kernel, files read back


def test_enclosing_commands(csv_path, tmp_path, capsys):
    r = shapely.minimum_bounding_radius(shapely.multipoints(XY))  # GEOS reference
    code, out, err = run(["enclosing-circle", *utm(csv_path)], capsys)
    assert code == 0, err
    table = table_of(out)
    assert table["radius_m"].iloc[0] == pytest.approx(r, rel=1e-9)
    assert table["area_m2"].iloc[0] == pytest.approx(np.pi * r * r, rel=1e-9)  # closed form
    assert f"largest radius {r:.6g} m" in err
    code, out, err = run(["minimax-point", *utm(csv_path), "-q"], capsys)
    assert code == 0, err
    # Unit weights: the minimax radius is GEOS's minimum bounding radius.
    assert table_of(out)["weighted_radius_m"].iloc[0] == pytest.approx(r, rel=1e-9)
    code, _, err = run(["enclosing-ellipse", *utm(csv_path), "--by", "zone", "-o", tmp_path / "e.geojson"], capsys)
    assert code == 0, err
    assert "m squared" in err
    ellipses = gpd.read_file(tmp_path / "e.geojson")
    for zone, geom, area in zip(ellipses["zone"], ellipses.geometry, ellipses["area_m2"]):
        assert bool(shapely.covers(geom.buffer(1e-6), shapely.points(XY[G == zone])).all())  # GEOS covers
        assert geom.area == pytest.approx(area, rel=1e-3)  # shapely area of the 128-gon vs the exact ellipse


def write_sites(tmp_path):
    sites = tmp_path / "sites.geojson"
    gpd.GeoDataFrame({"name": ["w", "e", "n"]},
                     geometry=gpd.points_from_xy([497_000, 503_000, 500_000], [6_600_000, 6_600_000, 6_602_000]),
                     crs="EPSG:32632").to_file(sites, driver="GeoJSON")
    return sites, np.array([[497_000, 6_600_000], [503_000, 6_600_000], [500_000, 6_602_000]], dtype=float)


def test_catchment_commands(csv_path, tmp_path, capsys):
    sites, site_xy = write_sites(tmp_path)
    region = tmp_path / "region.geojson"
    box = shapely.box(*XY.min(0) - 100, *XY.max(0) + 100)
    # The region file is in degrees while the sites and demand are in UTM metres: the layer projects it.
    gpd.GeoDataFrame(geometry=[box.segmentize(50.0)], crs="EPSG:32632").to_crs(4326).to_file(region, driver="GeoJSON")
    code, _, err = run(["voronoi-cells", sites, "--region", region, "--demand", csv_path, "--x", "east", "--y",
                        "north", "--crs", "EPSG:32632", "--weight", "people", "-o", tmp_path / "cells.parquet"], capsys)
    assert code == 0, err
    assert "m squared" in err
    cells = gpd.read_parquet(tmp_path / "cells.parquet")
    assert cells["area_m2"].sum() == pytest.approx(box.area, rel=1e-6)  # shapely area (after a round trip in degrees)
    nearest = cKDTree(site_xy).query(XY)[1]  # scipy reference
    np.testing.assert_allclose(cells["load"], np.bincount(nearest, weights=W, minlength=3), rtol=1e-12)
    assert cells["name"].tolist() == ["w", "e", "n"]


def test_nearest_site_files_keep_loads_and_totals(csv_path, tmp_path, capsys):
    sites, site_xy = write_sites(tmp_path)
    code, _, err = run(["nearest-site", *utm(csv_path), "--sites", sites, "--weight", "people",
                        "-o", tmp_path / "assigned.csv", "--site-loads", tmp_path / "loads.geojson",
                        "--summary", tmp_path / "summary.csv"], capsys)
    assert code == 0, err
    d, i = cKDTree(site_xy).query(XY)  # scipy reference
    assigned = pd.read_csv(tmp_path / "assigned.csv")
    assert assigned["site"].tolist() == i.tolist()
    np.testing.assert_allclose(assigned["distance_m"], d, rtol=1e-12)
    loads = gpd.read_file(tmp_path / "loads.geojson")
    np.testing.assert_allclose(loads["load"], np.bincount(i, weights=W, minlength=3), rtol=1e-12)
    assert loads["points"].tolist() == np.bincount(i, minlength=3).tolist()
    summary = pd.read_csv(tmp_path / "summary.csv")
    assert summary["cost_m"].iloc[0] == pytest.approx(float(W @ d), rel=1e-12)
    assert summary["load"].iloc[0] == pytest.approx(W.sum())
    assert "(weight x m)" in err


def test_network_commands(csv_path, tmp_path, capsys):
    code, _, err = run(["spanning-tree", *utm(csv_path), "-o", tmp_path / "mst.geojson",
                        "--summary", tmp_path / "mst.csv"], capsys)
    assert code == 0, err
    expected = mst_length_scipy(XY)  # scipy csgraph
    mst = gpd.read_file(tmp_path / "mst.geojson")
    assert mst["length_m"].sum() == pytest.approx(expected, rel=1e-9)
    assert {"end_a", "end_b"} <= set(mst.columns) and not {"from_node", "to_node", "length"} & set(mst.columns)
    assert pd.read_csv(tmp_path / "mst.csv")["length_m"].iloc[0] == pytest.approx(expected, rel=1e-9)
    assert f"length {expected:.6g} m" in err
    code, out, err = run(["steiner-tree", *utm(csv_path), "--by", "zone", "--heuristic",
                          "--summary", tmp_path / "st.geojson"], capsys)
    assert code == 0, err
    assert "saving" in err and " m " in err
    assert "wkt" in table_of(out).columns
    summary = gpd.read_file(tmp_path / "st.geojson")  # totals as features without geometry
    for zone, ref_len, length in zip(summary["zone"], summary["mst_length_m"], summary["length_m"]):
        assert ref_len == pytest.approx(mst_length_scipy(XY[G == zone]), rel=1e-9)  # scipy csgraph
        assert length <= ref_len * (1 + 1e-12)
    edges = table_of(out)
    np.testing.assert_allclose(edges.groupby("zone")["length_m"].sum().to_numpy(), summary["length_m"], rtol=1e-9)


def test_plan_commands(csv_path, tmp_path, capsys):
    code, _, err = run(["p-median", *utm(csv_path), "-p", "3", "--weight", "people", "-o", tmp_path / "s.csv",
                        "--assignment", tmp_path / "a.csv", "--summary", tmp_path / "t.parquet"], capsys)
    assert code == 0, err
    sites, assigned = pd.read_csv(tmp_path / "s.csv"), pd.read_csv(tmp_path / "a.csv")
    summary = pd.read_parquet(tmp_path / "t.parquet")
    assert len(sites) == 3 and len(assigned) == len(XY)
    # The assignment file names each row's site by the sites file's own `site` column.
    site_xy = sites.set_index("site")[["east", "north"]]
    d, i = cKDTree(site_xy.to_numpy()).query(XY)  # scipy, on the sites the command wrote
    assert assigned["site"].tolist() == site_xy.index[i].tolist()
    np.testing.assert_allclose(assigned["distance_m"], d, rtol=1e-6, atol=1e-6)
    np.testing.assert_allclose(sites["load"], np.bincount(i, weights=W, minlength=3), rtol=1e-12)
    assert summary["cost_m"].iloc[0] == pytest.approx(float(W @ d), rel=1e-9)
    assert "(weight x m)" in err
    code, out, err = run(["p-center", *utm(csv_path), "-p", "2", "--by", "zone", "-q"], capsys)
    assert code == 0, err
    assert table_of(out).groupby("zone").size().tolist() == [2, 2, 2]
    code, out_fast, err = run(["p-center", *utm(csv_path), "-p", "2", "--by", "zone", "-q", "--effort", "fast"],
                              capsys)
    assert code == 0, err
    assert table_of(out_fast).groupby("zone").size().tolist() == [2, 2, 2]
    code, _, err = run(["p-median", *utm(csv_path), "-p", "500"], capsys)
    assert_user_error(code, err, "500")


# ---------------------------------------------------------------- entry points


def test_python_dash_m_and_console_script(csv_path):
    for cmd in ([sys.executable, "-m", "placewise"], [shutil.which("placewise")] if shutil.which("placewise") else []):
        if not cmd:
            continue
        ok = subprocess.run([*cmd, "weber-point", str(csv_path), "--x", "east", "--y", "north", "--planar", "-q"],
                            capture_output=True, text=True, timeout=120)
        assert ok.returncode == 0, ok.stderr
        assert "cost_u" in ok.stdout
        bad = subprocess.run([*cmd, "weber-point", "missing.csv", "--planar"], capture_output=True, text=True,
                             timeout=120)
        assert bad.returncode == 2
        assert bad.stderr.count("\n") == 1 and "Traceback" not in bad.stderr


# ---------------------------------------------------------------- formats, ids and coordinate columns

TOWNS = pd.DataFrame({
    "name": ["Arnby", "Bresk", "Corvik", "Dalen", "Elmholt", "Fjardo", "Gransund"],  # invented places
    "lon": [10.02, 10.31, 10.55, 10.18, 10.72, 10.44, 10.09],
    "lat": [59.91, 59.97, 59.88, 60.12, 60.05, 60.21, 60.02],
    "people": [1200, 800, 450, 950, 300, 620, 700],
})


def towns_csv(folder):
    path = folder / "towns.csv"
    TOWNS.to_csv(path, index=False)
    return path


def towns_utm():
    """The towns in UTM zone 32N by pyproj (the zone the gis layer estimates for them)."""
    from pyproj import Transformer

    e, n = Transformer.from_crs(4326, 32632, always_xy=True).transform(TOWNS["lon"].to_numpy(), TOWNS["lat"].to_numpy())
    return np.column_stack([e, n])


def test_lon_lat_columns_are_recognised_and_default_to_wgs84(tmp_path, capsys):
    code, out, err = run(["weber-point", towns_csv(tmp_path), "--weight", "people"], capsys)
    assert code == 0, err
    assert "'lon', 'lat'" in err and "EPSG:4326" in err  # the choice is printed
    lonlat, w = TOWNS[["lon", "lat"]].to_numpy(float), TOWNS["people"].to_numpy(float)
    # scipy on the geodesic objective measured by pyproj.Geod (the ellipsoid model)
    assert table_of(out)["cost_m"].iloc[0] == pytest.approx(geodesic_weber_cost_scipy(lonlat, w), rel=1e-9)
    assert {"lon", "lat"} <= set(table_of(out).columns)  # the point written under the input's own names


@pytest.mark.parametrize("names", [("Easting", "Northing"), ("east", "north"), ("X", "Y")])
def test_planar_spellings_are_recognised(tmp_path, capsys, names):
    path = tmp_path / "p.csv"
    pd.DataFrame({names[0]: XY[:, 0], names[1]: XY[:, 1]}).to_csv(path, index=False)
    code, out, err = run(["enclosing-circle", path, "--planar"], capsys)
    assert code == 0, err
    r = shapely.minimum_bounding_radius(shapely.multipoints(XY))  # GEOS reference
    assert table_of(out)["radius_u"].iloc[0] == pytest.approx(r, rel=1e-9)


def test_lon_lat_choice_can_be_overridden_and_checked(tmp_path, capsys):
    path = towns_csv(tmp_path)
    code, out, err = run(["enclosing-circle", path, "--planar"], capsys)  # --planar: degrees as plain numbers
    assert code == 0, err
    r = shapely.minimum_bounding_radius(shapely.multipoints(TOWNS[["lon", "lat"]].to_numpy()))  # GEOS
    assert table_of(out)["radius_u"].iloc[0] == pytest.approx(r, rel=1e-9)
    bad = tmp_path / "bad.csv"
    pd.DataFrame({"lon": [10.0, 500_000.0], "lat": [60.0, 6_600_000.0]}).to_csv(bad, index=False)
    code, _, err = run(["enclosing-circle", bad], capsys)
    assert_user_error(code, err, "'lon'", "500000", "line 3", "--crs")
    two = tmp_path / "two.csv"
    pd.DataFrame({"lon": [1.0], "longitude": [1.0], "lat": [2.0]}).to_csv(two, index=False)
    code, _, err = run(["enclosing-circle", two], capsys)
    assert_user_error(code, err, "'lon', 'longitude'", "--x")


def test_planar_with_crs_is_refused(csv_path, capsys):
    with pytest.raises(SystemExit) as info:
        main(["weber-point", str(csv_path), "--planar", "--crs", "EPSG:32632"])
    _, err = capsys.readouterr()
    assert_user_error(info.value.code, err, "--planar", "--crs")


def test_max_scale_error_with_planar_is_refused(tmp_path, capsys):
    # Nothing is projected with --planar, so the bound had no part in the run (status 0
    # before). Reference: the option's own --help (a bound on the working projection).
    path = tmp_path / "pts.csv"
    path.write_text("x,y\n0,0\n4,0\n0,3\n")
    code, _, err = run(["weber-point", path, "--planar", "--max-scale-error", "0.01"], capsys)
    assert_user_error(code, err, "--max-scale-error", "--planar")
    code, _, err = run(["weber-point", path, "--planar"], capsys)
    assert code == 0, err


def test_planar_geojson_is_refused_and_gpkg_keeps_no_crs(csv_path, tmp_path, capsys):
    code, _, err = run(["enclosing-circle", csv_path, "--planar", "-o", tmp_path / "c.geojson"], capsys)
    assert_user_error(code, err, "GeoJSON", "longitude/latitude", ".gpkg")
    assert not (tmp_path / "c.geojson").exists()
    code, _, err = run(["enclosing-circle", csv_path, "--planar", "-o", tmp_path / "c.gpkg"], capsys)
    assert code == 0, err
    back = gpd.read_file(tmp_path / "c.gpkg")
    assert back.crs is None  # not read back as WGS84
    r = shapely.minimum_bounding_radius(shapely.multipoints(XY))  # GEOS
    assert back["radius_u"].iloc[0] == pytest.approx(r, rel=1e-9)


def test_geopackage_layers_and_shapefile(csv_path, tmp_path, capsys):
    plan = tmp_path / "plan.gpkg"
    code, _, err = run(["p-median", *utm(csv_path), "-p", "3", "--weight", "people", "-o", plan,
                        "--assignment", plan, "--summary", f"{plan}:totals", "-q"], capsys)
    assert code == 0, err
    import pyogrio

    assert sorted(pyogrio.list_layers(plan)[:, 0]) == ["assignment", "sites", "totals"]
    sites = gpd.read_file(plan, layer="sites")
    assigned = gpd.read_file(plan, layer="assignment")
    assert sites.crs.to_epsg() == 32632
    d, i = cKDTree(shapely.get_coordinates(sites.geometry)).query(XY)  # scipy, on the sites written
    assert assigned["site"].tolist() == sites["site"].to_numpy()[i].tolist()
    assert gpd.read_file(plan, layer="totals")["cost_m"].iloc[0] == pytest.approx(float(W @ d), rel=1e-9)
    # Reading a GeoPackage of several layers needs the layer; a missing one is named.
    code, _, err = run(["enclosing-circle", plan], capsys)
    assert_user_error(code, err, "sites, assignment, totals", "LAYER")
    code, _, err = run(["enclosing-circle", f"{plan}:nope"], capsys)
    assert_user_error(code, err, "no layer 'nope'")
    code, out, err = run(["minimax-point", f"{plan}:assignment", "-o", tmp_path / "c.shp"], capsys)
    assert code == 0, err
    assert "weighted_radius_m shortened" in err  # Shapefile field names hold 10 characters
    circle = gpd.read_file(tmp_path / "c.shp")
    assert circle.crs.to_epsg() == 32632
    r = shapely.minimum_bounding_radius(shapely.multipoints(XY))  # GEOS; unit weights: the minimax radius
    assert circle["weighted_r"].iloc[0] == pytest.approx(r, rel=1e-9)
    code, out, err = run(["enclosing-circle", tmp_path / "c.shp", "-q"], capsys)  # Shapefile in
    assert code == 0, err


def test_id_names_tree_ends_and_assignments(tmp_path, capsys):
    path = towns_csv(tmp_path)
    code, out, err = run(["spanning-tree", path, "--id", "name"], capsys)
    assert code == 0, err
    edges = table_of(out)
    # scipy csgraph MST on the UTM coordinates, its edges named by the towns
    tree = minimum_spanning_tree(cdist(towns_utm(), towns_utm())).tocoo()
    names = TOWNS["name"].to_numpy()
    expected = {frozenset((names[a], names[b])) for a, b in zip(tree.row, tree.col)}
    assert {frozenset(e) for e in zip(edges["end_a"], edges["end_b"])} == expected
    code, _, err = run(["p-median", path, "-p", "2", "--weight", "people", "--id", "name", "--assignment",
                        tmp_path / "a.csv", "-q"], capsys)
    assert code == 0, err
    assigned = pd.read_csv(tmp_path / "a.csv")
    assert assigned["name"].tolist() == TOWNS["name"].tolist()
    sites_path = tmp_path / "depots.csv"
    pd.DataFrame({"depot": ["north", "south"], "lon": [10.3, 10.3], "lat": [60.15, 59.9]}).to_csv(sites_path,
                                                                                                   index=False)
    code, out, err = run(["nearest-site", path, "--sites", sites_path, "--id", "depot", "-q"], capsys)
    assert_user_error(code, err, "no column 'depot' for --id")  # the main input must have the --id column
    code, out, err = run(["nearest-site", path, "--sites", sites_path, "--id", "name", "-q"], capsys)
    assert code == 0, err
    assert table_of(out)["name"].tolist() == TOWNS["name"].tolist()


def test_bad_ids(tmp_path, capsys):
    path = tmp_path / "ids.csv"
    path.write_text("name,x,y\na,0,0\nb,1,0\na,0,1\n")
    code, _, err = run(["spanning-tree", path, "--planar", "--id", "name"], capsys)
    assert_user_error(code, err, "repeats 'a'", "line 2", "line 4")
    path.write_text("name,x,y\na,0,0\n,1,0\nc,0,1\n")
    code, _, err = run(["spanning-tree", path, "--planar", "--id", "name"], capsys)
    assert_user_error(code, err, "empty on line 3")


# Ids above 2**53 (64-bit keys such as H3 cells): as floating point, ...993 and ...995 would
# both read 9007199254740992 or ...996.
BIG_IDS = ["9007199254740993", "9007199254740995", "9007199254740997", "9007199254740999"]
SQUARE = [(0.0, 0.0), (1.0, 0.0), (1.0, 1.0), (0.0, 1.0)]


def _read_rows(path):
    import csv

    with open(path, newline="") as fh:
        return list(csv.DictReader(fh))


def _edge_ends_match_their_ids(ends, lines, where):
    """Every named end of an edge is the input point of that id (shapely's line coordinates)."""
    for name, line in zip(ends, lines):
        if name in ("", None):
            continue
        assert name in where, name  # the id exists in the input, as the input spells it
        assert where[name] in [tuple(c) for c in shapely.get_coordinates(line)], (name, line)


@pytest.mark.parametrize("ids", [BIG_IDS, None], ids=["big-ids", "line-numbers"])
def test_tree_ends_with_junctions_keep_the_ids_as_read(tmp_path, capsys, ids):
    path = tmp_path / "square.csv"
    path.write_text("x,y" + (",id" if ids else "") + "\n"
                    + "".join(f"{x:g},{y:g}" + (f",{i}" if ids else "") + "\n" for (x, y), i in
                              zip(SQUARE, ids or [None] * 4)))
    # Reference: the input file read as text: ids as written there, or its line numbers.
    names = [row["id"] for row in _read_rows(path)] if ids else ["2", "3", "4", "5"]
    where = dict(zip(names, SQUARE))
    id_flag = ["--id", "id"] if ids else []
    out_csv = tmp_path / "edges.csv"
    code, _, err = run(["steiner-tree", path, "--planar", "-q", *id_flag, "-o", out_csv], capsys)
    assert code == 0, err
    rows = _read_rows(out_csv)
    # The unit square's Steiner tree: 4 terminal edges and one between the two junctions.
    assert len(rows) == 5
    assert sorted(r["end_a"] for r in rows if r["end_a"]) == sorted(names)
    _edge_ends_match_their_ids([r["end_a"] for r in rows], shapely.from_wkt([r["wkt"] for r in rows]), where)
    assert all(r["end_b"] == "" for r in rows) and sum(r["end_a"] == "" for r in rows) == 1
    # GeoPackage: read with sqlite3 (a GeoPackage is an SQLite file), not through our writer's library.
    import sqlite3

    code, _, err = run(["steiner-tree", path, "--planar", "-q", *id_flag, "-o", tmp_path / "edges.gpkg"], capsys)
    assert code == 0, err
    with sqlite3.connect(tmp_path / "edges.gpkg") as db:
        stored = [r[0] for r in db.execute("SELECT end_a FROM edges ORDER BY fid")]
    assert sorted(str(v) for v in stored if v is not None) == sorted(names)
    assert all(v is None or isinstance(v, int) for v in stored)
    # GeoJSON (a projected CRS, so it may be written): read with the json module.
    import json

    code, _, err = run(["steiner-tree", path, "--crs", "EPSG:32632", "-q", *id_flag, "-o",
                        tmp_path / "edges.geojson"], capsys)
    assert code == 0, err
    features = json.loads((tmp_path / "edges.geojson").read_text())["features"]
    ends = [f["properties"]["end_a"] for f in features]
    assert sorted(str(v) for v in ends if v is not None) == sorted(names)
    assert all(v is None or isinstance(v, int) for v in ends)


def test_triangle_corners_beside_a_skipped_group_keep_the_ids_as_read(tmp_path, capsys):
    path = tmp_path / "groups.csv"
    path.write_text("x,y,id,g\n0,0,9007199254740993,1\n1,0,9007199254740995,1\n0,1,9007199254740997,1\n"
                    "5,5,9007199254740999,2\n6,6,9007199254741001,2\n7,7,9007199254741003,2\n")
    where = {r["id"]: (float(r["x"]), float(r["y"])) for r in _read_rows(path)}  # reference: the input as text
    out = tmp_path / "mesh.csv"
    code, _, err = run(["delaunay", path, "--planar", "--id", "id", "--by", "g", "--errors", "skip", "-q",
                        "-o", out], capsys)
    assert code == 0, err
    rows = _read_rows(out)
    good = [r for r in rows if r["g"] == "1"]
    assert len(good) == 1
    corners = [good[0][c] for c in ("corner_a", "corner_b", "corner_c")]
    assert sorted(corners) == sorted(k for k in where if where[k][0] < 2)  # three distinct input ids
    triangle = shapely.from_wkt(good[0]["wkt"])  # shapely: the polygon's vertices are those ids' points
    assert {tuple(c) for c in shapely.get_coordinates(triangle)} == {where[c] for c in corners}
    skipped = [r for r in rows if r["g"] == "2"]
    assert [r["corner_a"] for r in skipped] == [""] and skipped[0]["problem"]


def test_delaunay_command_against_scipy(tmp_path, capsys):
    from scipy.spatial import Delaunay

    pts = RNG.uniform(0, 100, size=(40, 2))
    path = tmp_path / "p.csv"
    pd.DataFrame({"site": [f"s{k}" for k in range(40)], "x": pts[:, 0], "y": pts[:, 1]}).to_csv(path, index=False)
    code, _, err = run(["delaunay", path, "--planar", "--id", "site", "-o", tmp_path / "mesh.gpkg"], capsys)
    assert code == 0, err
    mesh = gpd.read_file(tmp_path / "mesh.gpkg")
    ours = {frozenset(t) for t in mesh[["corner_a", "corner_b", "corner_c"]].itertuples(index=False)}
    ref = {frozenset(f"s{k}" for k in t) for t in Delaunay(pts).simplices}  # scipy (Qhull); general position
    assert ours == ref
    hull = shapely.convex_hull(shapely.multipoints(pts)).area  # shapely: the triangles tile the hull
    assert mesh["area_u2"].sum() == pytest.approx(hull, rel=1e-9)
    assert f"{len(ref)} triangle(s); total area {hull:.6g} coordinate units squared" in err
    line = tmp_path / "line.csv"
    line.write_text("x,y\n0,0\n1,1\n2,2\n")
    code, _, err = run(["delaunay", line, "--planar"], capsys)
    assert_user_error(code, err, "collinear")


def test_delaunay_command_on_global_points_answers_on_the_sphere(tmp_path, capsys):
    from scipy.spatial import ConvexHull

    rng = np.random.default_rng(31)
    lon, lat = rng.uniform(-180, 180, 60), np.degrees(np.arcsin(rng.uniform(-1, 1, 60)))
    path = tmp_path / "masts.csv"
    pd.DataFrame({"mast": [f"m{k}" for k in range(60)], "lon": lon, "lat": lat}).to_csv(path, index=False)
    code, _, err = run(["delaunay", path, "--x", "lon", "--y", "lat", "--crs", "EPSG:4326", "--id", "mast",
                        "-o", tmp_path / "mesh.gpkg"], capsys)
    assert code == 0, err
    mesh = gpd.read_file(tmp_path / "mesh.gpkg")
    ours = {frozenset(t) for t in mesh[["corner_a", "corner_b", "corner_c"]].itertuples(index=False)}
    # Outside reference: the faces of the convex hull of the unit vectors (scipy, Qhull) are
    # the spherical Delaunay triangles (Brown 1979).
    la, ph = np.radians(lon), np.radians(lat)
    hull = ConvexHull(np.column_stack([np.cos(ph) * np.cos(la), np.cos(ph) * np.sin(la), np.sin(ph)]))
    assert ours == {frozenset(f"m{k}" for k in t) for t in hull.simplices}
    assert (mesh["work_crs"] == SPHERE_MODEL).all()
    # WGS84's area, 510,065,621.7 km^2 (recalled from memory, so compared to 1e-6).
    assert mesh["area_m2"].sum() == pytest.approx(5.100656217e14, rel=1e-6)
    assert f"{len(hull.simplices)} triangle(s)" in err


def test_rows_are_named_as_the_file_counts_them(tmp_path, capsys):
    path = tmp_path / "w.csv"
    path.write_text("x,y,w\n0,0,1\n\n1,0,2\n0,1,-1\n")  # a blank line 3: the bad weight is on line 5
    code, _, err = run(["weber-point", path, "--planar", "--weight", "w"], capsys)
    line = assert_user_error(code, err, "weights[5] = -1", "line numbers of")
    assert "frame" not in line


def test_header_only_and_empty_layers_say_no_rows(tmp_path, capsys):
    path = tmp_path / "h.csv"
    path.write_text("x,y,w\n")
    code, _, err = run(["weber-point", path, "--planar"], capsys)
    line = assert_user_error(code, err, "no rows")
    assert "frame" not in line


@pytest.mark.filterwarnings("ignore:'crs' was not provided")  # the file is meant to have no CRS
def test_no_crs_speaks_of_the_input_not_a_frame(tmp_path, capsys):
    path = tmp_path / "p.gpkg"
    gpd.GeoDataFrame(geometry=gpd.points_from_xy([0, 1, 2], [0, 1, 0])).to_file(path)
    code, _, err = run(["weber-point", path], capsys)
    line = assert_user_error(code, err, "the input")
    assert "frame" not in line
    code, _, err = run(["weber-point", towns_csv(tmp_path)], capsys)
    code, _, err = run(["weber-point", tmp_path / "towns.gpkg"], capsys)
    assert_user_error(code, err, "no such file")


def test_broken_pipe_exits_quietly(tmp_path):
    big = tmp_path / "big.csv"
    pts = RNG.uniform(0, 1000, size=(20_000, 2))
    pd.DataFrame({"x": pts[:, 0], "y": pts[:, 1]}).to_csv(big, index=False)
    sites = tmp_path / "s.csv"
    pd.DataFrame({"x": [100.0, 900.0], "y": [100.0, 900.0]}).to_csv(sites, index=False)
    cmd = (f"{sys.executable} -m placewise nearest-site {big} --sites {sites} --planar | head -1; "
           "echo status=${PIPESTATUS[0]} >&2")
    done = subprocess.run(["bash", "-c", cmd], capture_output=True, text=True, timeout=120)
    assert done.stdout.count("\n") == 1  # head printed the header
    status = done.stderr.strip().splitlines()[-1]
    assert status in ("status=0", "status=141"), done.stderr
    assert done.stderr.strip() == status  # no message, no traceback


def test_demo_command_checks_its_folder(tmp_path, capsys):
    taken = tmp_path / "taken"
    taken.write_text("a file, not a folder")
    code, _, err = run(["demo", "--out", taken], capsys)
    assert_user_error(code, err, "not a folder")


def test_data_too_wide_for_one_projection_speaks_of_options(tmp_path, capsys):
    path = tmp_path / "wide.csv"
    path.write_text("lon,lat\n-170,0\n0,10\n170,-10\n")
    # Lon/lat input is solved on the ellipsoid; points beyond a hemisphere are refused there,
    # naming the ways on (the ellipsoid has no scale error, so no --max-scale-error).
    code, _, err = run(["weber-point", path], capsys)
    line = assert_user_error(code, err, "hemisphere", "--work-crs", "--by")
    assert "frame" not in line and "=" not in line
    code, _, err = run(["weber-point", path, "--work-crs", "EPSG:nope"], capsys)
    assert_user_error(code, err, "--work-crs", "not a coordinate reference system")


def test_every_option_has_help():
    from placewise.cli import build_parser

    parser = build_parser()
    sub = next(a for a in parser._actions if a.dest == "command")
    assert "delaunay" in sub.choices
    for name, command in sub.choices.items():
        for action in command._actions:
            assert action.help, f"{name} {action.option_strings or action.dest} has no help text"


@pytest.mark.parametrize("command", ["weber-point", "minimax-point", "enclosing-circle", "enclosing-ellipse",
                                     "delaunay", "spanning-tree", "steiner-tree", "p-median", "p-center"])
def test_every_summary_line_states_its_unit(tmp_path, capsys, command):
    extra = ["-p", "2"] if command.startswith("p-") else (["--heuristic"] if command == "steiner-tree" else [])
    code, _, err = run([command, towns_csv(tmp_path), *extra], capsys)
    assert code == 0, err
    summary = err.strip().splitlines()[-1]
    # After the counts, every number is followed by its unit (metres, the towns' UTM zone).
    units = re.findall(r"\d[\d.]*(?:e[+-]?\d+)?( \S+)", summary.split(";", 1)[1])
    assert units and set(units) <= {" m", " m:", " %", " (weight"}, summary


# ---------------------------------------------------------------- the README's examples, as written


def readme_commands():
    text = (Path(__file__).resolve().parent.parent / "README.md").read_text()
    section = text.split("## Command line", 1)[1].split("\n## ", 1)[0]
    blocks = re.findall(r"```console\n(.*?)```", section, flags=re.S)
    return [line[2:] for block in blocks for line in block.splitlines() if line.startswith("$ ")]


def test_readme_commands_run_as_written(tmp_path):
    commands = readme_commands()
    assert len(commands) >= 5
    towns_csv(tmp_path)  # the README's towns.csv (columns name, lon, lat, people)
    env = {**os.environ, "PATH": f"{Path(sys.executable).parent}{os.pathsep}{os.environ.get('PATH', '')}"}
    for command in commands:  # in order: earlier commands write the files later ones read
        done = subprocess.run(["bash", "-o", "pipefail", "-c", command], cwd=tmp_path, env=env,
                              capture_output=True, text=True, timeout=120)
        assert done.returncode == 0, (command, done.stderr)
        assert "Traceback" not in done.stderr
    import pyogrio

    assert sorted(pyogrio.list_layers(tmp_path / "plan.gpkg")[:, 0]) == ["assignment", "sites", "summary"]


def _geodesic_nearest(lon, lat, site_lon, site_lat):
    """Each point's nearest site and the margin to the second, by pyproj.Geod (WGS84 geodesics)."""
    import pyproj

    n, k = len(lon), len(site_lon)
    _, _, d = pyproj.Geod(ellps="WGS84").inv(np.repeat(lon, k), np.repeat(lat, k), np.tile(site_lon, n),
                                             np.tile(site_lat, n))
    d = d.reshape(n, k)
    ordered = np.sort(d, axis=1)
    return d.argmin(axis=1), ordered[:, 1] - ordered[:, 0]


def test_readme_pipeline_joins_every_town_to_its_nearest_depot(tmp_path):
    """The README's p-median, then nearest-site on its sites layer: a town's site in the
    assignment, in the loads file and in the plan all name the depot nearest to it."""
    import sqlite3

    commands = [c for c in readme_commands() if c.split()[1] in ("p-median", "nearest-site")]
    assert len(commands) == 2 and "--site-loads loads.csv" in commands[1]
    towns_csv(tmp_path)
    env = {**os.environ, "PATH": f"{Path(sys.executable).parent}{os.pathsep}{os.environ.get('PATH', '')}"}
    for command in commands:
        done = subprocess.run(["bash", "-c", command], cwd=tmp_path, env=env, capture_output=True, text=True,
                              timeout=120)
        assert done.returncode == 0, (command, done.stderr)
    # The plan's own site numbers read with sqlite3 (a GeoPackage is an SQLite file), by feature
    # id, and the depots' longitude/latitude read by GDAL in the same order.
    with sqlite3.connect(tmp_path / "plan.gpkg") as db:
        numbers = [r[0] for r in db.execute("SELECT site FROM sites ORDER BY fid")]
        planned = dict(db.execute("SELECT name, site FROM assignment"))
    depots = gpd.read_file(tmp_path / "plan.gpkg", layer="sites", fid_as_index=True).sort_index()
    nearest, margin = _geodesic_nearest(TOWNS["lon"].to_numpy(), TOWNS["lat"].to_numpy(), depots.geometry.x.to_numpy(),
                                        depots.geometry.y.to_numpy())
    expected = np.array(numbers)[nearest]
    clear = margin > 1.0  # metres: a near tie may go either way in a projection
    assert clear.sum() >= len(TOWNS) - 1
    assigned = pd.read_csv(tmp_path / "assigned.csv")
    assert assigned["name"].tolist() == TOWNS["name"].tolist()
    assert (assigned["site"].to_numpy()[clear] == expected[clear]).all()
    # The plan's assignment layer numbers the same depots the same way.
    assert [planned[name] for name in assigned["name"]] == assigned["site"].tolist()
    # Joined on site, every town meets its own depot's row of the loads file, which counts the
    # towns nearest to that depot.
    loads = pd.read_csv(tmp_path / "loads.csv")
    assert sorted(loads["site"]) == sorted(numbers) and list(loads.columns).count("site") == 1
    joined = assigned.merge(loads, on="site", suffixes=("", "_site"))
    assert len(joined) == len(TOWNS)
    np.testing.assert_allclose(joined[["lon_site", "lat_site"]].to_numpy()[clear],
                               shapely.get_coordinates(depots.geometry.values)[nearest][clear], atol=1e-9)
    if clear.all():  # the README's nearest-site has no --weight: a town weighs 1
        counts = dict(zip(loads["site"], loads["points"]))
        assert [counts[number] for number in numbers] == np.bincount(nearest, minlength=len(numbers)).tolist()


def test_sites_with_a_site_column_of_their_own_need_site_id(tmp_path, capsys):
    towns = towns_csv(tmp_path)
    code, _, err = run(["p-median", towns, "-p", "2", "--weight", "people", "--id", "name", "-o",
                        tmp_path / "plan.gpkg", "-q"], capsys)
    assert code == 0, err
    for command in ("nearest-site", "evaluate-sites"):
        code, out, err = run([command, towns, "--sites", f"{tmp_path / 'plan.gpkg'}:sites", "--id", "name"], capsys)
        assert_user_error(code, err, "column 'site' of its own", "feature ids", "--site-id site")
        assert out == ""


@pytest.mark.parametrize("site_id", [None, "name"])
def test_evaluate_sites_and_nearest_site_name_the_same_sites_alike(tmp_path, capsys, site_id):
    import csv

    rng = np.random.default_rng(3)
    demand_xy = rng.uniform(-1000, 1000, size=(40, 2))
    homes = tmp_path / "homes.csv"
    pd.DataFrame({"id": [f"h{k}" for k in range(40)], "x": demand_xy[:, 0], "y": demand_xy[:, 1],
                  "w": rng.integers(1, 5, 40)}).to_csv(homes, index=False)
    depots = tmp_path / "depots.csv"
    depots.write_text("x,y,name\n0,0,A\n800,-900,B\n-1000,500,C\n")
    with open(depots, newline="") as fh:  # reference: the sites file as text, its header on line 1
        records = list(csv.DictReader(fh))
    site_xy = np.array([[float(r["x"]), float(r["y"])] for r in records])
    labels = [r["name"] for r in records] if site_id else [str(line) for line in range(2, 2 + len(records))]
    d = cdist(demand_xy, site_xy)  # scipy: the nearest site by brute force
    expected = [labels[k] for k in d.argmin(axis=1)]
    w = pd.read_csv(homes)["w"].to_numpy()
    named = {}
    for command in ("evaluate-sites", "nearest-site"):
        out, loads = tmp_path / f"{command}.csv", tmp_path / f"{command}-loads.csv"
        code, _, err = run([command, homes, "--planar", "--weight", "w", "--id", "id", "--sites", depots,
                            *(["--site-id", site_id] if site_id else []), "-o", out, "--site-loads", loads, "-q"],
                           capsys)
        assert code == 0, err
        with open(out, newline="") as fh:
            named[command] = [r["site"] for r in csv.DictReader(fh)]
        assert named[command] == expected, command
        table = pd.read_csv(loads, dtype={"site": str})
        assert sorted(table["site"]) == sorted(labels), command
        np.testing.assert_allclose(table.set_index("site").loc[labels, "load"],
                                   [w[np.array(expected) == label].sum() for label in labels])
    assert named["evaluate-sites"] == named["nearest-site"]


def test_evaluate_sites_warns_when_it_replaces_the_inputs_site_column(tmp_path, capsys):
    homes = tmp_path / "homes.csv"
    # The rows' own 'site' (numbered from 0, as a plan numbers its sites) beside sites named by line.
    homes.write_text("x,y,site\n0,1,0\n10,1,1\n")
    depots = tmp_path / "depots.csv"
    depots.write_text("x,y\n0,0\n10,0\n")
    out = tmp_path / "rows.csv"
    code, _, err = run(["evaluate-sites", homes, "--planar", "--sites", depots, "-o", out], capsys)
    assert code == 0, err
    assert "replaces your column 'site'" in err
    # Reference: the sites file's line numbers (header on line 1) of the nearest depot, by hand.
    assert pd.read_csv(out)["site"].tolist() == [2, 3]


@pytest.mark.parametrize("sites, site_id, words", [
    ("x,y,code\n0,0,a\n1,0,\n", "code", ["s.csv", "--site-id column 'code' is empty on line 3"]),
    ("x,y,code\n0,0,a\n1,0,a\n", "code", ["--site-id column 'code' repeats 'a'", "line 2", "line 3"]),
    ("x,y,code\n0,0,a\n1,0,b\n", "name", ["no column 'name' for --site-id"]),
    ("x,y,site\n0,0,4\n1,0,5\n", None, ["column 'site' of its own", "line numbers", "--site-id site"]),
])
@pytest.mark.parametrize("command", ["nearest-site", "evaluate-sites"])
def test_site_names_that_cannot_name_the_sites_are_refused(tmp_path, capsys, command, sites, site_id, words):
    (tmp_path / "s.csv").write_text(sites)
    (tmp_path / "d.csv").write_text("x,y\n0,1\n2,1\n")
    argv = [command, tmp_path / "d.csv", "--planar", "--sites", tmp_path / "s.csv", "-o", tmp_path / "out.csv"]
    code, out, err = run(argv + (["--site-id", site_id] if site_id else []), capsys)
    assert_user_error(code, err, *words)
    assert out == "" and not (tmp_path / "out.csv").exists()


# ---------------------------------------------------------------- destinations checked first


@pytest.mark.parametrize("extra, words", [
    (["--summary", "-"], ["--summary", "cannot tell the format"]),
    (["--summary", "totals.txt"], ["--summary", "cannot tell the format"]),
    (["--assignment", "{tmp}/no-such-folder/a.csv"], ["--assignment", "does not exist"]),
    (["-o", "{tmp}/s.csv", "--assignment", "{tmp}/s.csv"], ["--assignment", "-o/--output writes there too"]),
    (["-o", "{tmp}/p.gpkg:plan", "--summary", "{tmp}/p.gpkg:plan"], ["--summary", "own file or layer"]),
])
def test_an_unwritable_destination_is_refused_before_any_output(csv_path, tmp_path, capsys, extra, words):
    # Reference: the file system and standard output after the call -- nothing was written,
    # where the table used to reach standard output before the summary failed.
    argv = ["p-median", *utm(csv_path), "-p", "2", *[a.format(tmp=tmp_path) for a in extra]]
    before = sorted(p.name for p in tmp_path.iterdir())
    code, out, err = run(argv, capsys)
    assert_user_error(code, err, *words)
    assert out == ""
    assert sorted(p.name for p in tmp_path.iterdir()) == before


def test_outputs_to_one_geopackage_take_layers_of_their_own(csv_path, tmp_path, capsys):
    code, _, err = run(["p-median", *utm(csv_path), "-p", "3", "--weight", "people", "-o", tmp_path / "plan.gpkg",
                        "--assignment", tmp_path / "plan.gpkg", "--summary", tmp_path / "plan.gpkg", "-q"], capsys)
    assert code == 0, err
    import geopandas as gpd
    import pyogrio

    assert sorted(name for name, _ in pyogrio.list_layers(tmp_path / "plan.gpkg")) == ["assignment", "sites",
                                                                                    "summary"]
    sites = gpd.read_file(tmp_path / "plan.gpkg", layer="sites")
    assigned = gpd.read_file(tmp_path / "plan.gpkg", layer="assignment")
    # Reference: scipy's cKDTree, each row's nearest site among those written.
    _, nearest = cKDTree(np.column_stack([sites.geometry.x, sites.geometry.y])).query(XY)
    assert assigned["site"].tolist() == sites["site"].to_numpy()[nearest].tolist()


def test_longitude_latitude_columns_under_a_projected_crs_are_a_question_not_a_plan(tmp_path, capsys):
    path = tmp_path / "ll.csv"
    pd.DataFrame({"lon": [10.0, 10.1, 10.05], "lat": [50.0, 50.0, 50.1]}).to_csv(path, index=False)
    code, out, err = run(["weber-point", path, "--crs", "EPSG:32632"], capsys)
    assert_user_error(code, err, "'lon', 'lat'", "longitude/latitude", "EPSG:32632 is projected", "--x and --y")
    assert out == ""
    # Named explicitly, the columns are taken as the CRS's own coordinates (metres), as asked;
    # reference: scipy's Nelder-Mead on the same numbers as planar coordinates.
    code, out, err = run(["weber-point", path, "--crs", "EPSG:32632", "--x", "lon", "--y", "lat", "-q",
                          "--max-scale-error", "0.01"], capsys)
    assert code == 0, err
    xy = np.array([[10.0, 50.0], [10.1, 50.0], [10.05, 50.1]])
    assert table_of(out)["cost_m"].iloc[0] == pytest.approx(weber_cost_scipy(xy, np.ones(3)), rel=1e-6)


def test_a_metric_without_a_geodesic_form_says_how_to_use_it(tmp_path, capsys):
    # Longitude/latitude rows with --metric manhattan: the advice names the option and reads
    # as a sentence (the restating of "frame" once turned it into "a projected the input").
    path = tmp_path / "towns.csv"
    pd.DataFrame({"lon": [10.70, 10.75, 10.80], "lat": [59.90, 59.92, 59.91]}).to_csv(path, index=False)
    code, _, err = run(["weber-point", path, "--metric", "manhattan"], capsys)
    line = assert_user_error(code, err, "pass --work-crs (a projected CRS) to use this metric")
    assert "the input" not in line
