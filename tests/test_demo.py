"""The demo: runs end to end, writes readable maps, layers and a summary with the model note."""

from __future__ import annotations

import json

import numpy as np
import pytest

pytest.importorskip("matplotlib")
import shapely  # noqa: E402

import placewise as pw  # noqa: E402
from placewise import demo  # noqa: E402
from placewise._scenario import orsavel  # noqa: E402
from placewise.cli import main  # noqa: E402


@pytest.fixture(scope="module")
def ran(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo")
    import contextlib
    import io

    buffer = io.StringIO()
    with contextlib.redirect_stdout(buffer):
        code = main(["demo", "--out", str(out)])
    return code, out, buffer.getvalue()


def layer(out, name):
    doc = json.loads((out / f"{name}.geojson").read_text())
    return doc, [shapely.from_geojson(json.dumps(f["geometry"])) for f in doc["features"]]


def test_demo_runs_and_prints_the_table(ran):
    code, out, printed = ran
    assert code == 0
    assert "| measure |" in printed and "total travel" in printed
    assert "planning aids" in printed and "licensed professional judgement" in printed
    assert (out / "summary.md").read_text().strip() in printed


def test_every_file_states_the_model(ran):
    _, out, _ = ran
    assert "licensed professional judgement" in (out / "summary.md").read_text()
    assert "licensed professional judgement" in (out / "summary.csv").read_text()
    for path in out.glob("*.geojson"):
        assert "straight-line distance" in json.loads(path.read_text())["description"]


def test_maps_are_real_images(ran):
    import matplotlib.image as mpimg

    _, out, _ = ran
    expected = {"depots.png", "catchments.png", "network.png"}
    assert expected <= {p.name for p in out.glob("*.png")}
    for name in expected:
        image = mpimg.imread(out / name)
        assert image.shape[0] > 400 and image.shape[1] > 600
        assert image[..., :3].std() > 0.05  # not a blank canvas


def test_scenario_is_inside_its_region():
    s = orsavel()
    assert s.region.is_valid and len(s.region.interiors) == 1  # the lake is a hole
    assert s.region.convex_hull.area > 1.05 * s.region.area  # the coast makes it non-convex
    assert bool(shapely.contains_xy(s.region, s.households[:, 0], s.households[:, 1]).all())
    assert (s.people > 0).all()
    np.testing.assert_array_equal(orsavel().households, s.households)  # same seed, same data


def test_catchments_cover_the_land_and_carry_all_people(ran):
    _, out, _ = ran
    s = orsavel()
    doc, cells = layer(out, "catchments")
    union = shapely.union_all(cells)
    # shapely reference: the cells tile the region (coast and lake included).
    assert union.symmetric_difference(s.region).area < 1e-6 * s.region.area
    assert sum(f["properties"]["people"] for f in doc["features"]) == pytest.approx(s.people.sum())


def test_network_layers_and_saving(ran):
    _, out, _ = ran
    mst_doc, mst = layer(out, "links_mst")
    st_doc, st = layer(out, "links_steiner")
    mst_len = sum(g.length for g in mst)
    st_len = sum(g.length for g in st)
    assert st_len <= mst_len * (1 + 1e-12)
    assert len(mst) == demo.DEPOTS + len(orsavel().towns) - 1


def test_out_path_that_is_a_file_is_a_user_error(tmp_path, capsys):
    target = tmp_path / "file.txt"
    target.write_text("x")
    assert main(["demo", "--out", str(target)]) == 2
    assert "not a folder" in capsys.readouterr().err
