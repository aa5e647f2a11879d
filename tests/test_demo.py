"""The demo: runs end to end, writes readable maps, layers and a summary with the model note."""

from __future__ import annotations

import json

import numpy as np
import pytest

pytest.importorskip("matplotlib")
import shapely  # noqa: E402

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


def test_households_go_to_their_nearest_depot(ran):
    from scipy.spatial import cKDTree

    _, out, _ = ran
    s = orsavel()
    doc, homes = layer(out, "households")
    depots_doc, depots = layer(out, "depots_p_median")
    xy = shapely.get_coordinates(homes)
    np.testing.assert_array_equal(xy, s.households)
    labels = np.array([f["properties"]["depot"] for f in depots_doc["features"]])
    # scipy reference: a k-d tree query of the depots layer gives each household's trip and depot.
    d, i = cKDTree(shapely.get_coordinates(depots)).query(xy)
    props = doc["features"]
    np.testing.assert_allclose([f["properties"]["distance_m"] for f in props], d, rtol=1e-12, atol=1e-9)
    np.testing.assert_array_equal([f["properties"]["depot"] for f in props], labels[i])
    # The depots' loads are the people of the households each serves (summed in the test).
    people = np.array([f["properties"]["people"] for f in props])
    served = np.bincount(i, weights=people, minlength=len(labels))
    np.testing.assert_allclose([f["properties"]["people"] for f in depots_doc["features"]], served, rtol=1e-12)


def test_summary_travel_matches_the_households_layer(ran):
    import csv

    _, out, _ = ran
    doc, _ = layer(out, "households")
    people = np.array([f["properties"]["people"] for f in doc["features"]])
    trips = np.array([f["properties"]["distance_m"] for f in doc["features"]])
    with open(out / "summary.csv") as fh:
        rows = {(r["measure"], r["plan"]): r["value"] for r in csv.DictReader(fh)}
    plan = f"{demo.DEPOTS} depots, least total travel (p-median)"
    # Closed form of the measures: sum and weighted mean of the trips, written out here.
    assert float(rows[("total travel", plan)]) == pytest.approx(people @ trips / 1000, abs=1e-3)
    assert float(rows[("mean trip per person", plan)]) == pytest.approx(people @ trips / people.sum() / 1000, abs=1e-3)
    assert float(rows[("worst trip", plan)]) == pytest.approx(trips.max() / 1000, abs=1e-3)


def test_links_are_undirected_named_edges(ran):
    _, out, _ = ran
    s = orsavel()
    names = {f"depot {i + 1}" for i in range(demo.DEPOTS)} | set(s.town_names)
    for name in ("links_mst", "links_steiner"):
        doc, edges = layer(out, name)
        for feature, edge in zip(doc["features"], edges):
            props = feature["properties"]
            assert set(props) == {"end_a", "end_b", "length_m"}  # no from/to: edges have no direction
            for end in (props["end_a"], props["end_b"]):
                assert end in names or (name == "links_steiner" and end.startswith("junction "))
            # shapely reference: the stated length is the segment's own length.
            assert props["length_m"] == pytest.approx(edge.length, rel=1e-12)


def test_no_product_wording_in_the_outputs(ran):
    _, out, printed = ran
    assert not list(out.glob("service_area*"))
    assert "service area" not in printed.lower()
    assert "## Catchments" in printed


def test_out_path_that_is_a_file_is_a_user_error(tmp_path, capsys):
    target = tmp_path / "file.txt"
    target.write_text("x")
    assert main(["demo", "--out", str(target)]) == 2
    assert "not a folder" in capsys.readouterr().err
