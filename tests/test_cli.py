"""The ``placewise`` command line: formats, options, and one-line errors with status 2."""

from __future__ import annotations

import shutil
import subprocess
import sys

import numpy as np
import pytest

gpd = pytest.importorskip("geopandas")
import pandas as pd  # noqa: E402
import shapely  # noqa: E402
from scipy.optimize import minimize  # noqa: E402

import placewise as pw  # noqa: E402
from placewise.cli import main  # noqa: E402

from hostile import BAD_WEIGHTS  # noqa: E402


def needs(*names: str):
    missing = [n for n in names if not hasattr(pw, n)]
    return pytest.mark.skipif(bool(missing), reason=f"placewise.{', '.join(missing)} not in this build")


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


def assert_user_error(code, err, *words):
    assert code == 2
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("placewise")
    assert "Traceback" not in err
    for w in words:
        assert w in lines[0], lines[0]


def weber_cost_scipy(xy, w):
    """Weighted Fermat–Weber cost minimised by scipy.optimize (Nelder–Mead)."""
    f = lambda p: float(w @ np.hypot(*(xy - p).T))  # noqa: E731
    return float(minimize(f, xy.mean(0), method="Nelder-Mead", options={"xatol": 1e-6, "fatol": 1e-9}).fun)


# ---------------------------------------------------------------- formats


def test_csv_in_csv_out_on_stdout(csv_path, capsys):
    code, out, err = run(["weber-point", csv_path, "--x", "east", "--y", "north", "--crs", "EPSG:32632",
                          "--weight", "people"], capsys)
    assert code == 0, err
    table = pd.read_csv(pd.io.common.StringIO(out))
    assert list(table.columns[-2:]) == ["east", "north"]
    assert table["cost"].iloc[0] == pytest.approx(weber_cost_scipy(XY, W), rel=1e-6)  # scipy reference
    assert "site" in err  # the summary line


@pytest.mark.parametrize("suffix", [".geojson", ".parquet", ".csv"])
def test_output_formats_by_extension(csv_path, tmp_path, capsys, suffix):
    out_path = tmp_path / f"best{suffix}"
    code, _, err = run(["weber-point", csv_path, "--x", "east", "--y", "north", "--crs", "EPSG:32632",
                        "--weight", "people", "--by", "zone", "-o", out_path, "--quiet"], capsys)
    assert code == 0, err
    assert err == ""  # --quiet: no summary, no progress bar
    back = pd.read_csv(out_path) if suffix == ".csv" else (
        gpd.read_file(out_path) if suffix == ".geojson" else gpd.read_parquet(out_path))
    assert back["zone"].tolist() == ["a", "b", "c"]
    for zone, cost in zip(back["zone"], back["cost"]):
        m = G == zone
        assert cost == pytest.approx(weber_cost_scipy(XY[m], W[m]), rel=1e-6)
    if suffix == ".parquet":
        assert back.crs.to_epsg() == 32632


def test_geojson_input_uses_its_crs(tmp_path, capsys):
    path = tmp_path / "pts.geojson"
    lonlat = gpd.GeoDataFrame({"w": W}, geometry=gpd.points_from_xy(XY[:, 0], XY[:, 1]), crs="EPSG:32632").to_crs(4326)
    lonlat.to_file(path, driver="GeoJSON")
    code, out, err = run(["weber-point", path, "--weight", "w"], capsys)
    assert code == 0, err
    # Projected to the estimated UTM zone (32N here): the same cost as in EPSG:32632.
    assert pd.read_csv(pd.io.common.StringIO(out))["cost"].iloc[0] == pytest.approx(weber_cost_scipy(XY, W), rel=1e-6)


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


def test_missing_column(csv_path, capsys):
    code, _, err = run(["weber-point", csv_path, "--planar"], capsys)
    assert_user_error(code, err, "no column 'x'", "--x")
    code, _, err = run(["weber-point", csv_path, "--x", "east", "--y", "north", "--planar", "--weight", "visits"],
                       capsys)
    assert_user_error(code, err, "'visits'", "--weight")
    code, _, err = run(["weber-point", csv_path, "--x", "east", "--y", "north", "--planar", "--by", "ward"], capsys)
    assert_user_error(code, err, "'ward'", "--by")


def test_bad_coordinate_value_names_the_line(tmp_path, capsys):
    path = tmp_path / "bad.csv"
    path.write_text("x,y\n0,0\n1,one\n2,2\n")
    code, _, err = run(["weber-point", path, "--planar"], capsys)
    assert_user_error(code, err, "'y'", "line 3")


@pytest.mark.parametrize("name,make", BAD_WEIGHTS[:4], ids=[b[0] for b in BAD_WEIGHTS[:4]])
def test_bad_weight_values(tmp_path, capsys, name, make):
    path = tmp_path / "w.csv"
    pd.DataFrame({"x": XY[:10, 0], "y": XY[:10, 1], "w": make(10)}).to_csv(path, index=False)
    code, _, err = run(["weber-point", path, "--planar", "--weight", "w"], capsys)
    assert_user_error(code, err)


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
                                  ["steiner-tree", "x.csv", "--exact", "--heuristic"]])
def test_usage_errors_are_one_line(argv, capsys):
    with pytest.raises(SystemExit) as info:
        main(argv)
    _, err = capsys.readouterr()
    assert_user_error(info.value.code, err)


def test_every_kernel_has_a_subcommand(capsys):
    with pytest.raises(SystemExit):
        main(["--help"])
    out, _ = capsys.readouterr()
    for name in ("weber-point", "minimax-point", "enclosing-circle", "enclosing-ellipse", "p-median", "p-center",
                 "voronoi-cells", "nearest-site", "spanning-tree", "steiner-tree", "demo"):
        assert name in out


# ---------------------------------------------------------------- every kernel


def _planar(csv_path):
    return [csv_path, "--x", "east", "--y", "north", "--crs", "EPSG:32632"]


@needs("minimax_point", "enclosing_circle", "enclosing_ellipse")
def test_enclosing_commands(csv_path, tmp_path, capsys):
    pts = shapely.multipoints(XY)
    for cmd in ("minimax-point", "enclosing-circle"):
        code, out, err = run([cmd, *_planar(csv_path), "-q"], capsys)
        assert code == 0, err
        radius = pd.read_csv(pd.io.common.StringIO(out))["radius"].iloc[0]
        assert radius == pytest.approx(shapely.minimum_bounding_radius(pts), rel=1e-9)  # GEOS reference
    code, _, err = run(["enclosing-ellipse", *_planar(csv_path), "--by", "zone", "-o", tmp_path / "e.geojson"], capsys)
    assert code == 0, err
    ellipses = gpd.read_file(tmp_path / "e.geojson")
    for zone, geom in zip(ellipses["zone"], ellipses.geometry):
        assert bool(shapely.covers(geom, shapely.points(XY[G == zone])).all())


@needs("voronoi_cells", "nearest_site")
def test_service_area_commands(csv_path, tmp_path, capsys):
    sites = tmp_path / "sites.geojson"
    gpd.GeoDataFrame({"name": ["w", "e", "n"]},
                     geometry=gpd.points_from_xy([497_000, 503_000, 500_000], [6_600_000, 6_600_000, 6_602_000]),
                     crs="EPSG:32632").to_file(sites, driver="GeoJSON")
    region = tmp_path / "region.geojson"
    box = shapely.box(*XY.min(0) - 100, *XY.max(0) + 100)
    # The region file is in degrees while the sites and demand are in UTM metres: the layer projects it.
    gpd.GeoDataFrame(geometry=[box.segmentize(50.0)], crs="EPSG:32632").to_crs(4326).to_file(region, driver="GeoJSON")
    code, _, err = run(["voronoi-cells", sites, "--region", region, "--demand", csv_path, "--x", "east", "--y",
                        "north", "--crs", "EPSG:32632", "--weight", "people", "-o", tmp_path / "cells.parquet"], capsys)
    assert code == 0, err
    cells = gpd.read_parquet(tmp_path / "cells.parquet")
    assert cells["area"].sum() == pytest.approx(box.area, rel=1e-6)  # shapely area (after a round trip in degrees)
    assert cells["load"].sum() == pytest.approx(W.sum())
    code, out, err = run(["nearest-site", *_planar(csv_path), "--sites", sites, "--weight", "people", "-q"], capsys)
    assert code == 0, err
    table = pd.read_csv(pd.io.common.StringIO(out))
    assert set(table["site"]) <= {0, 1, 2}
    assert len(table) == len(XY)


@needs("spanning_tree", "steiner_tree")
def test_network_commands(csv_path, tmp_path, capsys):
    from scipy.sparse.csgraph import minimum_spanning_tree
    from scipy.spatial.distance import cdist

    code, _, err = run(["spanning-tree", *_planar(csv_path), "-o", tmp_path / "mst.geojson"], capsys)
    assert code == 0, err
    mst = gpd.read_file(tmp_path / "mst.geojson")
    assert mst["length"].sum() == pytest.approx(minimum_spanning_tree(cdist(XY, XY)).sum(), rel=1e-9)  # scipy
    code, out, err = run(["steiner-tree", *_planar(csv_path), "--by", "zone", "--heuristic"], capsys)
    assert code == 0, err
    assert "saving" in err
    assert "wkt" in pd.read_csv(pd.io.common.StringIO(out)).columns


@needs("p_median", "p_center")
def test_plan_commands(csv_path, tmp_path, capsys):
    code, _, err = run(["p-median", *_planar(csv_path), "-p", "3", "--weight", "people", "-o", tmp_path / "s.csv",
                        "--assignment", tmp_path / "a.csv"], capsys)
    assert code == 0, err
    sites, assigned = pd.read_csv(tmp_path / "s.csv"), pd.read_csv(tmp_path / "a.csv")
    assert len(sites) == 3 and len(assigned) == len(XY)
    assert sites["load"].sum() == pytest.approx(W.sum())
    code, out, err = run(["p-center", *_planar(csv_path), "-p", "2", "--by", "zone", "-q"], capsys)
    assert code == 0, err
    assert len(pd.read_csv(pd.io.common.StringIO(out))) == 6
    code, _, err = run(["p-median", *_planar(csv_path), "-p", "500"], capsys)
    assert_user_error(code, err)


# ---------------------------------------------------------------- entry points


def test_python_dash_m_and_console_script(csv_path):
    for cmd in ([sys.executable, "-m", "placewise"], [shutil.which("placewise")] if shutil.which("placewise") else []):
        if not cmd:
            continue
        ok = subprocess.run([*cmd, "weber-point", str(csv_path), "--x", "east", "--y", "north", "--planar", "-q"],
                            capture_output=True, text=True, timeout=120)
        assert ok.returncode == 0, ok.stderr
        assert "cost" in ok.stdout
        bad = subprocess.run([*cmd, "weber-point", "missing.csv", "--planar"], capture_output=True, text=True,
                             timeout=120)
        assert bad.returncode == 2
        assert bad.stderr.count("\n") == 1 and "Traceback" not in bad.stderr
