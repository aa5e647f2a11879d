"""The demo: runs end to end, writes readable maps, placed layers and tidy tables with the model note."""

from __future__ import annotations

import contextlib
import csv
import io
import json

import numpy as np
import pytest

pytest.importorskip("matplotlib")
gpd = pytest.importorskip("geopandas")
import matplotlib  # noqa: E402

matplotlib.use("Agg")
import shapely  # noqa: E402

from placewise import demo  # noqa: E402
from placewise._scenario import orsavel  # noqa: E402
from placewise.cli import main  # noqa: E402

MAPS = ("depots", "catchments", "network")
LAYERS = ("region", "towns", "depots_central", "depots_p_median", "depots_p_center", "households", "catchments",
          "demand_ellipse", "links_mst", "links_steiner")


@pytest.fixture(scope="module")
def ran(tmp_path_factory):
    """One run of the demo, its figures kept open so that their layout can be measured."""
    out = tmp_path_factory.mktemp("demo")
    buffer = io.StringIO()
    with contextlib.redirect_stdout(buffer):
        table, writer = demo._run(out, False, 0, demo.scenario(), keep=True)
    yield out, buffer.getvalue(), writer
    import matplotlib.pyplot as plt

    plt.close("all")


def package(out, name):
    """A layer of the GeoPackage, read by GDAL (through geopandas), with its CRS."""
    return gpd.read_file(out / "orsavel.gpkg", layer=name)


def local(frame):
    """The layer's geometries moved back to the scenario's local grid."""
    s = orsavel()
    return frame.geometry.translate(-s.origin[0], -s.origin[1]).values


def read_csv(path):
    with open(path) as fh:
        return list(csv.DictReader(fh))


def test_demo_prints_the_summary(ran):
    out, printed, _ = ran
    assert "| plan | method | depots |" in printed and "total travel (person-km)" in printed
    assert "planning aids" in printed and "licensed professional judgement" in printed
    assert (out / "summary.md").read_text().strip() in printed


def test_every_output_states_the_model(ran):
    import pyogrio

    out, _, _ = ran
    assert "licensed professional judgement" in (out / "summary.md").read_text()
    for name in LAYERS:
        assert "straight-line distance" in json.loads((out / f"{name}.geojson").read_text())["description"]
        meta = pyogrio.read_info(out / "orsavel.gpkg", layer=name)["layer_metadata"]
        assert "licensed professional judgement" in meta["DESCRIPTION"]
    for fig in ran[2].figures.values():
        assert any("licensed professional judgement" in t.get_text().replace("\n", " ") for t in fig.texts)


def test_geopackage_is_in_the_projected_crs_at_the_invented_place(ran):
    import pyogrio
    import pyproj

    out, _, _ = ran
    s = orsavel()
    assert [str(n) for n, _ in pyogrio.list_layers(out / "orsavel.gpkg")] == list(LAYERS)
    homes = package(out, "households")
    # pyproj reference: the layer's CRS is WGS 84 / UTM zone 26N, a projected CRS in metres.
    crs = pyproj.CRS.from_user_input(homes.crs)
    assert crs.to_epsg() == 32626 and crs.is_projected and crs.axis_info[0].unit_name == "metre"
    # The local grid shifted by the stated origin (closed form).
    np.testing.assert_allclose(shapely.get_coordinates(homes.geometry.values), s.households + s.origin, rtol=0,
                               atol=1e-6)


def test_geojson_is_wgs84_and_standard(ran):
    import pyproj

    out, _, _ = ran
    to_lonlat = pyproj.Transformer.from_crs("EPSG:32626", "EPSG:4326", always_xy=True)
    for name in LAYERS:
        doc = json.loads((out / f"{name}.geojson").read_text())
        # RFC 7946 §7.1: no "coordinates" member outside a geometry; §4: no "crs" member.
        assert "coordinates" not in doc and "crs" not in doc and doc["type"] == "FeatureCollection"
        xy = shapely.get_coordinates([shapely.from_geojson(json.dumps(f["geometry"])) for f in doc["features"]])
        # pyproj reference: the GeoPackage's projected coordinates, converted to lon/lat.
        projected = shapely.get_coordinates(package(out, name).geometry.values)
        lon, lat = to_lonlat.transform(projected[:, 0], projected[:, 1])
        np.testing.assert_allclose(xy, np.column_stack([lon, lat]), atol=1e-9)
        # The invented district lies in the open North Atlantic, near 45.5° N 27° W.
        assert (-29 < xy[:, 0]).all() and (xy[:, 0] < -26).all() and (45 < xy[:, 1]).all() and (xy[:, 1] < 46.5).all()


def _geojson_layer(out, name):
    """A GeoJSON layer read with the json module: its properties, and its geometries by shapely."""
    import pandas as pd

    features = json.loads((out / f"{name}.geojson").read_text())["features"]
    table = pd.DataFrame([f["properties"] for f in features])
    return table, [shapely.from_geojson(json.dumps(f["geometry"])) for f in features]


# Layers carrying coordinate columns beside their geometry, and what those columns locate.
COORDINATE_LAYERS = {"catchments": "the depot of the cell", "demand_ellipse": "the ellipse's centre"}


def test_coordinate_columns_agree_with_the_geometry_in_every_file(ran):
    import pandas as pd
    import pyproj

    out, _, _ = ran
    to_lonlat = pyproj.Transformer.from_crs("EPSG:32626", "EPSG:4326", always_xy=True)
    for name in LAYERS:  # no other layer has coordinate columns, in either format
        columns = set(package(out, name).columns) | set(_geojson_layer(out, name)[0].columns)
        found = columns & {"x", "y", "lon", "lat", "easting", "northing"}
        assert found == ({"x", "y"} if name in COORDINATE_LAYERS else set()), (name, found)
    for table in (pd.read_csv(out / n) for n in ("summary.csv", "catchments.csv", "network.csv")):
        assert not set(table.columns) & {"x", "y", "lon", "lat"}

    # Catchments: x, y is the cell's depot, the point of the same depot in the depots layer
    # (GeoPackage: EPSG:32626 metres; GeoJSON: longitude, latitude), read by shapely.
    cells, depots = package(out, "catchments"), package(out, "depots_p_median").set_index("depot")
    where = shapely.get_coordinates(depots.loc[cells["depot"]].geometry.values)
    np.testing.assert_allclose(cells[["x", "y"]].to_numpy(), where, rtol=0, atol=1e-6)
    cells_json, _ = _geojson_layer(out, "catchments")
    depots_json, points = _geojson_layer(out, "depots_p_median")
    lonlat = dict(zip(depots_json["depot"], shapely.get_coordinates(points).tolist()))
    np.testing.assert_allclose(cells_json[["x", "y"]].to_numpy(), [lonlat[d] for d in cells_json["depot"]],
                               rtol=0, atol=1e-9)

    # Demand ellipse: x, y is the centre, the centroid of the (point-symmetric) polygon by shapely;
    # in GeoJSON that centre converted to longitude/latitude by pyproj.
    ellipse = package(out, "demand_ellipse")
    centre = shapely.get_coordinates(shapely.centroid(ellipse.geometry.values))
    np.testing.assert_allclose(ellipse[["x", "y"]].to_numpy(), centre, rtol=0, atol=1e-3)
    ellipse_json, _ = _geojson_layer(out, "demand_ellipse")
    lon, lat = to_lonlat.transform(centre[:, 0], centre[:, 1])
    np.testing.assert_allclose(ellipse_json[["x", "y"]].to_numpy(), np.column_stack([lon, lat]), rtol=0, atol=1e-7)


def test_maps_are_real_images(ran):
    import matplotlib.image as mpimg

    out, _, _ = ran
    for name in MAPS:
        image = mpimg.imread(out / f"{name}.png")
        assert image.shape[0] > 400 and image.shape[1] > 600
        assert image[..., :3].std() > 0.05  # not a blank canvas


def test_footnote_and_legend_clear_the_axes(ran):
    # Rendered boxes: the axes (with tick labels and axis labels), the legend and the model
    # note each keep to their own band.
    for name, fig in ran[2].figures.items():
        renderer = fig.canvas.get_renderer()
        note = next(t for t in fig.texts if "Planning aid" in t.get_text()).get_window_extent(renderer)
        legend = fig.legends[0].get_window_extent(renderer)
        assert not note.overlaps(legend), name
        for ax in fig.axes:
            box = ax.get_tightbbox(renderer)
            assert not box.overlaps(note) and not box.overlaps(legend), name
            assert "km" in ax.get_xlabel() and "km" in ax.get_ylabel()


def test_every_symbol_has_a_legend_entry(ran):
    wanted = {"depots": ["households coloured", "depot", "town", "lake"],
              "catchments": ["catchment", "depot", "town", "lake"],
              "network": ["minimum spanning tree", "Steiner tree", "junction", "depot", "town"]}
    for name, fig in ran[2].figures.items():
        texts = [t.get_text() for t in fig.legends[0].get_texts()]
        for start in wanted[name]:
            assert any(t.startswith(start) for t in texts), (name, start, texts)


def test_labels_do_not_collide_and_name_every_town(ran):
    s = orsavel()
    for name, fig in ran[2].figures.items():
        renderer = fig.canvas.get_renderer()
        for ax in fig.axes:
            labels = [t for t in ax.texts if t.get_text()]
            assert set(s.town_names) <= {t.get_text() for t in labels}, name
            boxes = [t.get_window_extent(renderer) for t in labels]
            frame = ax.get_window_extent(renderer)
            for i, a in enumerate(boxes):
                assert frame.x0 <= a.x0 and a.x1 <= frame.x1 and frame.y0 <= a.y0 and a.y1 <= frame.y1
                for b in boxes[i + 1:]:
                    assert not a.overlaps(b), (name, labels[i].get_text())


def _star_colours(ax):
    """Depot number -> RGB of the star drawn nearest to the label with that number."""
    stars = [line for line in ax.lines if line.get_marker() == "*"]
    colours = {}
    for text in ax.texts:
        digits = text.get_text().removeprefix("depot ").split(":")[0]
        if digits.isdigit():
            at = np.array(text.xy)
            star = min(stars, key=lambda line: np.hypot(*(np.array(line.get_xydata()[0]) - at)))
            colours[int(digits)] = matplotlib.colors.to_rgb(star.get_markerfacecolor())
    return colours


def test_a_depot_keeps_its_colour_in_every_map(ran):
    figures = ran[2].figures
    panels = [_star_colours(ax) for name in MAPS for ax in figures[name].axes]
    assert all(len(p) == demo.DEPOTS for p in panels)
    assert all(p == panels[0] for p in panels)  # depot n has one colour everywhere
    assert len(set(panels[0].values())) == demo.DEPOTS  # and no two depots share one
    # The catchment of depot n is filled with depot n's colour.
    out = ran[0]
    cells = package(out, "catchments")
    ax = figures["catchments"].axes[0]
    fills = [matplotlib.colors.to_rgb(p.get_facecolor()) for p in ax.patches[1:1 + len(cells)]]
    assert fills == [panels[0][n] for n in cells["depot"]]


def test_depots_are_numbered_west_to_east(ran):
    out, _, _ = ran
    depots = package(out, "depots_p_median").sort_values("depot")
    assert list(depots["depot"]) == list(range(1, demo.DEPOTS + 1))
    assert np.all(np.diff(depots.geometry.x.to_numpy()) >= 0)


def test_scenario_is_inside_its_region():
    s = orsavel()
    assert s.region.is_valid and len(s.region.interiors) == 1  # the lake is a hole
    assert s.region.convex_hull.area > 1.05 * s.region.area  # the coast makes it non-convex
    assert bool(shapely.contains_xy(s.region, s.households[:, 0], s.households[:, 1]).all())
    assert (s.people > 0).all()
    np.testing.assert_array_equal(orsavel().households, s.households)  # same seed, same data


def test_catchments_cover_the_land_and_carry_all_people(ran):
    out, _, _ = ran
    s = orsavel()
    cells = package(out, "catchments")
    # shapely reference: the cells tile the region (coast and lake included).
    union = shapely.union_all(local(cells))
    assert union.symmetric_difference(s.region).area < 1e-6 * s.region.area
    assert cells["people"].sum() == pytest.approx(s.people.sum())


def test_network_layers_and_saving(ran):
    out, _, _ = ran
    mst = package(out, "links_mst")
    st = package(out, "links_steiner")
    assert st.length.sum() <= mst.length.sum() * (1 + 1e-12)
    assert len(mst) == demo.DEPOTS + len(orsavel().towns) - 1
    rows = {r["network"]: r for r in read_csv(out / "network.csv")}
    # The table's lengths are the layers' (shapely lengths, in km).
    assert float(rows["Steiner tree"]["length_km"]) == pytest.approx(st.length.sum() / 1000, abs=1e-3)
    assert float(rows["minimum spanning tree"]["length_km"]) == pytest.approx(mst.length.sum() / 1000, abs=1e-3)


def test_households_go_to_their_nearest_depot(ran):
    from scipy.spatial import cKDTree

    out, _, _ = ran
    homes = package(out, "households")
    depots = package(out, "depots_p_median")
    xy = shapely.get_coordinates(homes.geometry.values)
    # scipy reference: a k-d tree query of the depots layer gives each household's trip and depot.
    d, i = cKDTree(shapely.get_coordinates(depots.geometry.values)).query(xy)
    np.testing.assert_allclose(homes["distance_m"], d, rtol=1e-9, atol=1e-6)
    np.testing.assert_array_equal(homes["depot"], depots["depot"].to_numpy()[i])
    # The depots' loads are the people of the households each serves (summed in the test).
    served = np.bincount(i, weights=homes["people"].to_numpy(), minlength=len(depots))
    np.testing.assert_allclose(depots["people"], served, rtol=1e-12)


def test_summary_is_tidy_and_matches_the_households_layer(ran):
    out, _, _ = ran
    for name, header in (("summary", ["plan", "method", "depots", "depots_on_land", "total_travel_person_km",
                                      "mean_trip_km", "worst_trip_km", "people_within_10km_percent"]),
                         ("catchments", ["depot", "area_km2", "households", "people", "mean_trip_km"]),
                         ("network", ["network", "length_km", "junctions", "saving_percent", "proven_optimal"])):
        rows = read_csv(out / f"{name}.csv")
        assert list(rows[0]) == header
        for row in rows:  # one value per cell: every non-name column parses as a number
            for key, value in row.items():
                if key not in ("plan", "method", "network", "proven_optimal"):
                    float(value)
    homes = package(out, "households")
    people, trips = homes["people"].to_numpy(), homes["distance_m"].to_numpy()
    plan = next(r for r in read_csv(out / "summary.csv") if r["method"] == "p-median")
    # Closed form of the measures: sum and weighted mean of the trips, written out here.
    assert float(plan["total_travel_person_km"]) == pytest.approx(people @ trips / 1000, abs=1e-3)
    assert float(plan["mean_trip_km"]) == pytest.approx(people @ trips / people.sum() / 1000, abs=1e-3)
    assert float(plan["worst_trip_km"]) == pytest.approx(trips.max() / 1000, abs=1e-3)
    assert int(plan["depots"]) == demo.DEPOTS and 0 <= int(plan["depots_on_land"]) <= demo.DEPOTS


def test_links_are_undirected_named_edges(ran):
    out, _, _ = ran
    s = orsavel()
    names = {f"depot {i + 1}" for i in range(demo.DEPOTS)} | set(s.town_names)
    for name in ("links_mst", "links_steiner"):
        edges = package(out, name)
        assert set(edges.columns) == {"end_a", "end_b", "length_m", "geometry"}  # no from/to
        for row in edges.itertuples():
            for end in (row.end_a, row.end_b):
                assert end in names or (name == "links_steiner" and end.startswith("junction "))
        # shapely reference: the stated length is the segment's own length.
        np.testing.assert_allclose(edges["length_m"], edges.length, rtol=1e-9)


def test_no_product_wording_in_the_outputs(ran):
    out, printed, _ = ran
    assert not list(out.glob("service_area*"))
    assert "service area" not in printed.lower()
    assert "## Catchments" in printed


def test_the_command_runs_the_demo(tmp_path):
    buffer = io.StringIO()
    with contextlib.redirect_stdout(buffer):
        assert main(["demo", "--out", str(tmp_path), "--quiet"]) == 0
    assert {f"{m}.png" for m in MAPS} <= {p.name for p in tmp_path.iterdir()}
    assert "licensed professional judgement" in buffer.getvalue()


def test_out_path_that_is_a_file_is_a_user_error(tmp_path, capsys):
    target = tmp_path / "file.txt"
    target.write_text("x")
    assert main(["demo", "--out", str(target)]) == 2
    assert "not a folder" in capsys.readouterr().err
