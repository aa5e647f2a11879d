"""The GeoPandas layer's rows and regions: a region in another CRS keeps its straight edges,
a weight Series is matched to the rows by label, and repeated row labels are refused.

References named beside each check: shapely/GEOS containment in the region's own CRS,
pyproj (reprojection of a finely segmented region), pandas' own alignment of a Series to a
frame (``frame.assign``), and brute force over the candidates.
"""

from __future__ import annotations

import numpy as np
import pytest

gpd = pytest.importorskip("geopandas")
pyproj = pytest.importorskip("pyproj")
import pandas as pd  # noqa: E402
import shapely  # noqa: E402
from scipy.spatial.distance import cdist  # noqa: E402

import placewise as pw  # noqa: E402
from placewise import gis  # noqa: E402
from placewise.cli import main  # noqa: E402
from placewise.gis._frames import prepare  # noqa: E402
from placewise.gis._together import candidates_held, densified, region_geometry  # noqa: E402
from placewise.gis.travel import network_catchments, network_reach, travel_costs, travel_graph  # noqa: E402

# Toy coordinates sit in UTM zones far from their central meridians here and there: the
# distortion warning is checked elsewhere (test_gis.py).
pytestmark = pytest.mark.filterwarnings("ignore:.*distorts distances by up to:UserWarning")

# --- 1. a region in another projected CRS -------------------------------------------------

# A 200 km box in Web Mercator (EPSG:3857) over southern Norway; the data are in UTM 32N.
# Projected vertex by vertex into UTM its straight edges bend by some 350 m.
BOX = shapely.box(1.10e6, 8.15e6, 1.30e6, 8.35e6)
REGION = gpd.GeoSeries([BOX], crs=3857)


def _edge_points(offsets: np.ndarray) -> gpd.GeoDataFrame:
    """Points on the middle of the box's north and south edges at signed ``offsets`` (metres
    of EPSG:3857, positive into the box), named by edge and offset, moved into UTM 32N."""
    x = np.full(2 * len(offsets), 1.2e6)
    y = np.r_[8.35e6 - offsets, 8.15e6 + offsets]
    names = [f"N {o:+g}" for o in offsets] + [f"S {o:+g}" for o in offsets]
    pts = gpd.GeoSeries(gpd.points_from_xy(x, y), crs=3857)
    return gpd.GeoDataFrame({"name": names}, geometry=pts.values, crs=3857).to_crs(32632).set_index("name")


def _covered_in_region_crs(frame: gpd.GeoDataFrame) -> list[str]:
    """The rows shapely says the box covers, tested in the box's own CRS (the outside reference)."""
    back = frame.to_crs(3857)
    return sorted(back.index[BOX.covers(back.geometry.values)])


HOMES = gpd.GeoSeries(gpd.points_from_xy([596000, 598000], [6650000, 6652000]), crs=32632)


def test_candidates_in_a_region_of_another_projected_crs_agree_with_shapely_there():
    parcels = _edge_points(np.array([200.0, -200.0]))
    held = _covered_in_region_crs(parcels)  # shapely in EPSG:3857
    assert held == ["N +200", "S +200"]
    plan = gis.p_median(HOMES, 2, candidates=parcels, region=REGION)
    assert sorted(plan.sites["source_row"]) == held
    centre = gis.p_center(HOMES, 2, candidates=parcels, region=REGION)
    assert sorted(centre.sites["source_row"]) == held


@pytest.mark.parametrize("metres", [50.0, 1.0, 0.05])
def test_the_densified_region_agrees_with_shapely_beyond_its_stated_sliver(metres):
    # The region in the working frame follows its curved edges to within 2 cm (the step of
    # region_step): any point farther from the boundary is classed as shapely classes it in
    # the region's own CRS.
    parcels = _edge_points(np.array([metres, -metres]))
    pf = prepare(parcels, "candidates", planar=False, centroids=False)
    inside = region_geometry(REGION, pf, "candidates").covers(parcels.geometry.values)
    assert sorted(parcels.index[inside]) == _covered_in_region_crs(parcels)  # shapely in EPSG:3857


@pytest.mark.parametrize("metres", [1e-3, 1e-2, 1.0, 1e3])
def test_candidates_held_are_tested_in_the_region_crs(metres):
    # However close to the edge (a millimetre), the candidate test in the region's own CRS
    # agrees with shapely there; the point on the edge itself is held (boundary included).
    parcels = _edge_points(np.array([metres, 0.0, -metres]))
    pf = prepare(parcels, "candidates", planar=False, centroids=False)
    where, rows = candidates_held(pf, REGION, pf, "candidates")
    expected = _covered_in_region_crs(parcels)  # shapely in EPSG:3857
    assert sorted(parcels.index[rows]) == expected
    assert set(expected) >= {f"N {metres:+g}", f"S {metres:+g}"}
    np.testing.assert_array_equal(where, pf.xy[rows])


def test_candidates_held_in_a_geographic_region_are_tested_in_longitude_latitude():
    # A lon/lat box, candidates a ten-millionth of a degree (1 cm) either side of its north
    # edge: tested in lon/lat, where the edge is straight, they agree with shapely there.
    box = shapely.box(10.0, 59.5, 11.0, 60.5)
    lat = 60.5 + np.array([-1e-7, 1e-7, -1e-7, 1e-7])
    lon = np.array([10.5, 10.5, 10.0001, 10.9999])
    parcels = gpd.GeoSeries(gpd.points_from_xy(lon, lat), crs=4326, index=list("acde"))
    pf = prepare(parcels, "candidates", planar=False, centroids=False)
    assert pf.work.is_projected  # the test comes back from a UTM working frame
    _, rows = candidates_held(pf, gpd.GeoSeries([box], crs=4326), pf, "candidates")
    assert parcels.index[rows].tolist() == [c for c, g in parcels.items() if box.covers(g)] == ["a", "d"]


def test_a_candidate_the_regions_crs_cannot_hold_is_not_held():
    # Candidates around the globe in a world frame, the region a box in UTM 32N: a candidate
    # 90 degrees east of the zone has no UTM coordinates (PROJ gives it infinities) and is
    # not held, rather than compared as infinite numbers.
    box = gpd.GeoSeries([shapely.box(4.9e5, 6.64e6, 5.1e5, 6.66e6)], crs=32632)
    parcels = gpd.GeoSeries(gpd.points_from_xy([9.0, 100.0, 9.0], [59.99, 0.0, 70.0]), crs=4326, index=[1, 2, 3])
    pf = prepare(parcels, "candidates", planar=False, centroids=False, work_crs="EPSG:4087")
    _, rows = candidates_held(pf, box, pf, "candidates")
    inside = [i for i, g in parcels.to_crs(32632).items() if np.isfinite(g.x) and box.iloc[0].covers(g)]
    assert parcels.index[rows].tolist() == inside == [1]  # shapely in EPSG:32632


def test_candidates_held_refuses_a_region_holding_none():
    parcels = _edge_points(np.array([-5.0]))
    pf = prepare(parcels, "candidates", planar=False, centroids=False)
    with pytest.raises(pw.InputError, match="region holds none of the 2 candidates") as info:
        candidates_held(pf, REGION, pf, "candidates")
    assert info.value.argument == "region"


@pytest.mark.parametrize("solve", [
    lambda demand: gis.p_median(demand, 1, region=REGION),
    lambda demand: gis.p_center(demand, 1, region=REGION),
    lambda demand: gis.weber_point(demand, region=REGION),
    lambda demand: gis.minimax_point(demand, region=REGION),
])
def test_a_continuous_site_stays_in_a_region_of_another_projected_crs(solve):
    # Demand north of the box: the site goes to its north edge, which in the region's own
    # CRS is straight; vertex by vertex it sagged some 340 m and the site with it.
    demand = gpd.GeoSeries(gpd.points_from_xy([1.18e6, 1.2e6, 1.22e6], [8.40e6, 8.42e6, 8.40e6]),
                           crs=3857).to_crs(32632)
    out = solve(demand)
    sites = out.sites if isinstance(out, gis.SitePlan) else out
    site = sites.to_crs(3857).geometry.iloc[0]
    assert BOX.distance(site) < 0.02  # shapely in EPSG:3857: on the box, within the 2 cm sliver
    assert site.y > 8.35e6 - 1.0  # on the north edge, not sagged inside it


def test_cells_tile_a_region_given_in_another_projected_crs():
    # The cells' areas sum to the region's own area in the working frame: the outside
    # reference is pyproj on the box segmented every metre.
    rng = np.random.default_rng(5)
    sites = gpd.GeoSeries(gpd.points_from_xy(rng.uniform(1.12e6, 1.28e6, 6), rng.uniform(8.17e6, 8.33e6, 6)),
                          crs=3857).to_crs(32632)
    cells = gis.voronoi_cells(sites, REGION)
    fine = gpd.GeoSeries([shapely.segmentize(BOX, 1.0)], crs=3857).to_crs(32632).iloc[0]
    assert cells["area_m2"].sum() == pytest.approx(fine.area, rel=1e-8)


def test_a_region_in_feet_is_densified_in_its_own_unit():
    # A region in a CRS counted in US feet (New York Long Island, EPSG:2263), 800,000 ft
    # (about 244 km) a side, and data in UTM 18N: the cells' areas sum to the region's area
    # in the working frame (pyproj on the box segmented every foot), which its four corners
    # alone miss by 1.4e-7.
    box = shapely.box(6e5, 1e5, 1.4e6, 9e5)
    region = gpd.GeoSeries([box], crs=2263)
    sites = gpd.GeoSeries(gpd.points_from_xy([8e5, 1.2e6, 1e6], [3e5, 7e5, 5e5]), crs=2263).to_crs(32618)
    cells = gis.voronoi_cells(sites, region)
    fine = gpd.GeoSeries([shapely.segmentize(box, 1.0)], crs=2263).to_crs(32618).iloc[0]
    assert cells["area_m2"].sum() == pytest.approx(fine.area, rel=1e-10)


@pytest.mark.parametrize(("crs", "metres_per_unit"), [
    ("EPSG:2263", 0.3048006096012192),                            # US survey feet
    ("+proj=utm +zone=32 +ellps=WGS84 +units=km +type=crs", 1000.0),
    ("EPSG:3857", 1.0),
])
@pytest.mark.parametrize("extent_m", [5e3, 5e6])
def test_the_densified_pieces_are_at_most_a_kilometre_and_a_thousandth_of_the_extent(crs, metres_per_unit, extent_m):
    # Whatever the CRS's unit, no piece is longer than 1 km nor a thousandth of the region's
    # diagonal (shapely measures the pieces in the CRS's unit; the unit's length is pyproj's).
    assert pyproj.CRS(crs).axis_info[0].unit_conversion_factor == pytest.approx(metres_per_unit)
    side = extent_m / np.sqrt(2) / metres_per_unit
    region = gpd.GeoSeries([shapely.box(1e5 / metres_per_unit, 1e6 / metres_per_unit,
                                        1e5 / metres_per_unit + side, 1e6 / metres_per_unit + side)], crs=crs)
    ring = np.asarray(densified(region).iloc[0].exterior.coords)
    pieces = np.hypot(*np.diff(ring, axis=0).T) * metres_per_unit
    assert pieces.max() <= min(1000.0, extent_m / 1000) * (1 + 1e-9)
    assert pieces.max() >= 0.5 * min(1000.0, extent_m / 1000)  # and not needlessly finer


def test_a_geographic_region_is_densified_to_a_hundredth_of_a_degree_at_most():
    region = gpd.GeoSeries([shapely.box(5.0, 55.0, 15.0, 65.0)], crs=4326)
    ring = np.asarray(densified(region).iloc[0].exterior.coords)
    assert np.hypot(*np.diff(ring, axis=0).T).max() <= 0.01 * (1 + 1e-9)


@pytest.mark.parametrize("region", [
    gpd.GeoSeries([shapely.box(1e6, 8e6, 1e6, 8.1e6)], crs=3857),                      # no area
    gpd.GeoSeries([shapely.LineString([(1e6, 8e6), (1.1e6, 8.1e6)])], crs=3857),       # not polygonal
    gpd.GeoSeries([shapely.Polygon()], crs=3857),                                        # empty
])
def test_a_degenerate_region_in_another_crs_is_refused_naming_region(region):
    with pytest.raises(pw.InputError, match="region"):
        gis.p_median(HOMES, 1, region=region)


def test_cli_p_median_region_file_in_another_projected_crs(tmp_path, capsys):
    parcels = _edge_points(np.array([200.0, -200.0]))
    homes_file, parcels_file, zone, out = (tmp_path / "homes.csv", tmp_path / "parcels.csv", tmp_path / "zone.gpkg",
                                           tmp_path / "sites.gpkg")
    pd.DataFrame({"east": [596000.0, 598000.0], "north": [6650000.0, 6652000.0]}).to_csv(homes_file, index=False)
    pd.DataFrame({"parcel": parcels.index, "east": parcels.geometry.x, "north": parcels.geometry.y}).to_csv(
        parcels_file, index=False)
    REGION.to_frame("geometry").to_file(zone)
    code = main([str(a) for a in ["p-median", homes_file, "--crs", "EPSG:32632", "-p", 2, "--candidates",
                                  parcels_file, "--region", zone, "-o", out]])
    err = capsys.readouterr().err
    assert code == 0, err
    chosen = gpd.read_file(out)
    lines = chosen["source_row"].to_numpy(dtype=int) - 2  # the parcels' CSV line numbers
    assert sorted(parcels.index[lines]) == _covered_in_region_crs(parcels)  # shapely in EPSG:3857

    code = main([str(a) for a in ["p-median", homes_file, "--crs", "EPSG:32632", "-p", 1, "--region", zone,
                                  "-o", out]])
    assert code == 0, capsys.readouterr().err
    site = gpd.read_file(out).to_crs(3857).geometry.iloc[0]
    assert BOX.distance(site) < 0.02  # shapely in EPSG:3857


# --- 2. a weight Series is matched by row label --------------------------------------------

HOME_XY = np.array([[0.0, 0.0], [10.0, 0.0], [4.0, 3.0]])
HOME_ROWS = ["a", "b", "c"]
W = pd.Series({"b": 100.0, "c": 7.0, "a": 1.0})  # another order than the frame's rows
CAPACITY = pd.Series({"B": 120.0, "A": 1.0})


def _homes(crs=None):
    return gpd.GeoDataFrame(geometry=gpd.points_from_xy(*HOME_XY.T), index=HOME_ROWS, crs=crs)


def _parcels(crs=None):
    return gpd.GeoSeries(gpd.points_from_xy([0.0, 10.0], [0.0, 0.0]), index=["A", "B"], crs=crs)


def test_a_weight_series_in_another_order_matches_pandas_assignment_and_brute_force():
    homes = _homes().iloc[:2]
    w = pd.Series({"b": 100, "a": 1})
    by_series = gis.p_median(homes, 1, w, candidates=_parcels(), planar=True).sites["source_row"].tolist()
    by_column = gis.p_median(homes.assign(w=w), 1, "w", candidates=_parcels(), planar=True).sites["source_row"]
    # Brute force: the candidate of least weighted distance, weights matched by label.
    cost = (cdist(HOME_XY[:2], [[0, 0], [10, 0]]) * w.reindex(["a", "b"]).to_numpy()[:, None]).sum(axis=0)
    assert by_series == by_column.tolist() == [["A", "B"][int(np.argmin(cost))]] == ["B"]


# Every function of the layer that takes a per-row column through one argument: the call
# with a Series (in another order than the rows), and the same call with the column assigned
# by pandas and named (the outside reference: pandas' own alignment).
CALLS = {
    "weber_point": lambda f, w: gis.weber_point(f, w, planar=True),
    "minimax_point": lambda f, w: gis.minimax_point(f, w, planar=True),
    "p_median": lambda f, w: gis.p_median(f, 1, w, planar=True).summary,
    "p_median_candidates": lambda f, w: gis.p_median(f, 1, w, candidates=_parcels(), planar=True).sites,
    "p_center": lambda f, w: gis.p_center(f, 1, w, planar=True).summary,
    "p_center_candidates": lambda f, w: gis.p_center(f, 1, w, candidates=_parcels(), planar=True).sites,
    "nearest_site": lambda f, w: gis.nearest_site(f, _parcels(), w, planar=True).sites,
    "cover_all": lambda f, w: gis.cover_all(f, 8.0, w, candidates=_parcels(), planar=True).summary,
    "cover_most": lambda f, w: gis.cover_most(f, 1, 6.0, w, candidates=_parcels(), planar=True).summary,
    "evaluate_sites": lambda f, w: gis.evaluate_sites(f, _parcels(), w, planar=True).summary,
    "voronoi_cells": lambda f, w: gis.voronoi_cells(_parcels(), shapely.box(-1, -5, 11, 5), demand=f, weight=w,
                                                    planar=True),
    "capacity_allocation": lambda f, w: gis.capacity_allocation(f, _parcels(), [200.0, 200.0], w,
                                                                planar=True).sites,
    "capacity_cells": lambda f, w: gis.capacity_cells(f, _parcels(), [200.0, 200.0], w,
                                                      region=shapely.box(-1, -5, 11, 5), planar=True).sites,
}


@pytest.mark.parametrize("name", sorted(CALLS))
def test_a_weight_series_is_matched_by_label_as_pandas_assigns_it(name):
    by_series = CALLS[name](_homes(), W)
    by_column = CALLS[name](_homes().assign(w=W), "w")  # pandas aligns W on the index
    pd.testing.assert_frame_equal(pd.DataFrame(by_series.drop(columns="geometry", errors="ignore")),
                                  pd.DataFrame(by_column.drop(columns="geometry", errors="ignore")))
    # And it differs from taking the Series by position (the order matters for this data).
    by_position = CALLS[name](_homes(), W.to_numpy())
    assert not pd.DataFrame(by_position.drop(columns="geometry", errors="ignore")).equals(
        pd.DataFrame(by_column.drop(columns="geometry", errors="ignore"))), name


@pytest.mark.parametrize("call", [
    lambda cap: gis.capacity_allocation(_homes(), _parcels().to_frame("geometry"), cap, [1.0, 100.0, 7.0],
                                        planar=True).sites,
    lambda cap: gis.capacity_cells(_homes(), _parcels().to_frame("geometry"), cap, [1.0, 100.0, 7.0],
                                   region=shapely.box(-1, -5, 11, 5), planar=True).sites,
    lambda cap: gis.p_median(_homes(), 1, [1.0, 100.0, 7.0], candidates=_parcels().to_frame("geometry"),
                             capacities=cap, planar=True).sites,
])
def test_a_capacity_series_is_matched_by_label_as_pandas_assigns_it(call):
    by_series = call(CAPACITY)
    parcels = _parcels().to_frame("geometry").assign(room=CAPACITY)  # pandas aligns on the index
    assert parcels["room"].tolist() == [1.0, 120.0]
    by_column = call(parcels["room"].to_numpy())  # the aligned values by position, in the rows' order
    by_position = call(CAPACITY.to_numpy())  # the Series' own order: another answer for this data
    assert not pd.DataFrame(by_position.drop(columns="geometry", errors="ignore")).equals(
        pd.DataFrame(by_column.drop(columns="geometry", errors="ignore")))
    pd.testing.assert_frame_equal(pd.DataFrame(by_series.drop(columns="geometry", errors="ignore")),
                                  pd.DataFrame(by_column.drop(columns="geometry", errors="ignore")))


def test_a_network_catchments_weight_series_is_matched_by_label():
    streets = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (300, 0)])], crs="EPSG:32630")
    homes = gpd.GeoDataFrame(geometry=gpd.points_from_xy([10, 250, 100], [5, -5, 0]), index=["a", "b", "c"],
                             crs="EPSG:32630")
    depots = gpd.GeoDataFrame(geometry=gpd.points_from_xy([0, 300], [0, 0]), index=["west", "east"],
                              crs="EPSG:32630")
    graph = travel_graph(streets)
    by_series = network_catchments(graph, homes, depots, weight=W)
    by_column = network_catchments(graph, homes.assign(w=W), depots, weight="w").drop(columns="w")
    pd.testing.assert_frame_equal(pd.DataFrame(by_series), pd.DataFrame(by_column))  # pandas alignment
    with pytest.raises(pw.InputError, match="points: the weight Series has no value for row label 'c'"):
        network_catchments(graph, homes, depots, weight=pd.Series({"b": 1.0, "a": 2.0, "z": 3.0}))


@pytest.mark.parametrize(("series", "words"), [
    (pd.Series({"a": 1.0, "b": 2.0}), ["no value for row label 'c'"]),
    (pd.Series([1.0, 2.0, 3.0]), ["no value for row labels 'a', 'b', 'c'", ".to_numpy()"]),
    (pd.Series([1.0, 2.0, 3.0, 4.0], index=["a", "b", "c", "a"]), ["repeats the label 'a'"]),
    (pd.Series([1.0, 2.0, 3.0], index=["a", "b", np.nan]), ["no value for row label 'c'"]),
    (pd.Series(dtype=float), ["no value for row labels 'a', 'b', 'c'"]),
])
@pytest.mark.parametrize("name", ["weber_point", "p_median_candidates", "cover_all", "capacity_allocation"])
def test_a_weight_series_that_does_not_match_the_rows_is_refused_naming_the_labels(series, words, name):
    with pytest.raises(pw.InputError) as info:
        CALLS[name](_homes(), series)
    for word in words:
        assert word in str(info.value), (word, str(info.value))
    assert "weight" in str(info.value)


def test_a_weight_series_with_more_labels_than_rows_keeps_the_rows_own():
    # As pandas assignment does, labels of the Series that the frame lacks are left out.
    more = pd.concat([W, pd.Series({"z": 1e9})])
    pd.testing.assert_frame_equal(gis.weber_point(_homes(), more, planar=True),
                                  gis.weber_point(_homes().assign(w=more), "w", planar=True))


def test_a_weight_series_with_a_non_number_names_the_frames_row():
    bad = pd.Series({"c": "seven", "a": 1.0, "b": 2.0})
    with pytest.raises(pw.InputError, match="not numeric: 'seven' at row 'c'") as info:
        gis.weber_point(_homes(), bad, planar=True)
    assert info.value.row == "c"
    with pytest.raises(pw.InputError, match="non-finite value at row 'b'"):
        gis.weber_point(_homes(), pd.Series({"c": 1.0, "b": np.inf, "a": 1.0}), planar=True)


@pytest.mark.parametrize("values", [[1.0, 100.0, 7.0], np.array([1.0, 100.0, 7.0]), pd.Index([1.0, 100.0, 7.0])])
def test_plain_arrays_keep_their_positional_meaning(values):
    pd.testing.assert_frame_equal(gis.weber_point(_homes(), values, planar=True),
                                  gis.weber_point(_homes().assign(w=list(values)), "w", planar=True))


# --- 3. repeated row labels ----------------------------------------------------------------

def _repeated(kind: str, labels: list) -> object:
    xy = np.column_stack([np.arange(len(labels)) * 3.0, np.zeros(len(labels))])
    series = gpd.GeoSeries(gpd.points_from_xy(*xy.T), index=pd.Index(labels, tupleize_cols=False))
    return series if kind == "series" else gpd.GeoDataFrame({"w": 1.0}, geometry=series.values, index=series.index)


FRAMES = {
    "frame": lambda bad: gis.weber_point(bad, planar=True),
    "demand": lambda bad: gis.nearest_site(bad, _parcels(), planar=True),
    "sites": lambda bad: gis.nearest_site(_homes(), bad, planar=True),
    "candidates": lambda bad: gis.p_median(_homes(), 2, candidates=bad, planar=True),
    "fixed": lambda bad: gis.cover_all(_homes(), 3.0, candidates=_parcels(), fixed=bad, planar=True),
    "sites_frame": lambda bad: gis.evaluate_sites(_homes(), bad, planar=True),
    "voronoi sites": lambda bad: gis.voronoi_cells(bad, shapely.box(-1, -5, 20, 5), planar=True),
    "tree points": lambda bad: gis.spanning_tree(bad, planar=True),
    "capacity sites": lambda bad: gis.capacity_allocation(_homes(), bad, [100.0] * len(bad), planar=True),
    "p_center candidates": lambda bad: gis.p_center(_homes(), 1, candidates=bad, planar=True),
}
ARGUMENT = {"voronoi sites": "sites", "tree points": "frame", "capacity sites": "sites", "sites_frame": "sites",
            "p_center candidates": "candidates"}


@pytest.mark.parametrize("kind", ["series", "frame"])
@pytest.mark.parametrize("where", sorted(FRAMES))
def test_repeated_row_labels_are_refused_naming_the_argument_and_label(where, kind):
    with pytest.raises(pw.InputError) as info:
        FRAMES[where](_repeated(kind, [7, 7, 8]))
    argument = ARGUMENT.get(where, where)
    text = str(info.value)
    assert text.startswith(f"{argument}: row label 7 is used by 2 rows"), text
    assert "reset_index(" in text
    assert info.value.argument == argument and info.value.row == 7


@pytest.mark.parametrize(("labels", "first", "times", "more"), [
    (["x", "y", "y", "x", "z"], "'x'", 2, " (and 1 more labels repeat)"),
    ([np.nan, 1.0, np.nan], "nan", 2, ""),
    ([(1, "a"), (1, "a"), (2, "b")], "(1, 'a')", 2, ""),
    ([1, 1.0, 2], "1.0", 2, ""),        # pandas holds 1 and 1.0 as one label, 1.0
    (["", "", "", "q"], "''", 3, ""),
])
def test_hostile_repeated_labels_are_named_as_the_user_wrote_them(labels, first, times, more):
    with pytest.raises(pw.InputError) as info:
        gis.p_median(_homes(), 1, candidates=_repeated("frame", labels), planar=True)
    assert str(info.value).startswith(f"candidates: row label {first} is used by {times} rows{more};"), info.value


def test_a_repeated_multiindex_row_is_refused():
    index = pd.MultiIndex.from_tuples([("n", 1), ("n", 1), ("s", 2)])
    parcels = gpd.GeoSeries(gpd.points_from_xy([0, 5, 10], [0, 0, 0]), index=index)
    with pytest.raises(pw.InputError, match=r"candidates: row label \('n', 1\) is used by 2 rows"):
        gis.p_median(_homes(), 1, candidates=parcels, planar=True)


def test_the_fix_the_refusal_names_gives_each_site_its_own_row():
    # After reset_index, as the message says, every chosen parcel names one row, and the old
    # labels travel along in a column: the source rows are the brute-force optimum's.
    parcels = gpd.GeoDataFrame({"lot": [7, 7, 8]}, geometry=gpd.points_from_xy([0, 10, 3], [0, 0, 3]),
                               index=[7, 7, 8])
    with pytest.raises(pw.InputError, match="reset_index"):
        gis.p_median(_homes(), 2, candidates=parcels, planar=True)
    fixed = parcels.reset_index()
    plan = gis.p_median(_homes(), 2, candidates=fixed, planar=True)
    cost = cdist(HOME_XY, [[0, 0], [10, 0], [3, 3]])
    pairs = [(i, j) for i in range(3) for j in range(i + 1, 3)]
    best = min(pairs, key=lambda ij: cost[:, list(ij)].min(axis=1).sum())  # brute force over pairs
    assert sorted(plan.sites["source_row"]) == list(best)
    assert plan.sites["source_row"].map(fixed["lot"]).tolist() == fixed["lot"].take(sorted(best)).tolist()


def test_travel_functions_refuse_repeated_labels():
    streets = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (300, 0)])], crs="EPSG:32630")
    graph = travel_graph(streets)
    twice = gpd.GeoSeries(gpd.points_from_xy([10, 250], [0, 0]), index=["d", "d"], crs="EPSG:32630")
    once = gpd.GeoSeries(gpd.points_from_xy([10, 250], [0, 0]), index=["p", "q"], crs="EPSG:32630")
    for call, argument in [(lambda: travel_costs(graph, twice, once), "origins"),
                           (lambda: travel_costs(graph, once, twice), "destinations"),
                           (lambda: network_catchments(graph, once, twice), "sites"),
                           (lambda: network_catchments(graph, twice, once), "points"),
                           (lambda: network_reach(graph, twice, 50.0), "sites")]:
        with pytest.raises(pw.InputError, match=f"^{argument}: row label 'd' is used by 2 rows") as info:
            call()
        assert info.value.argument == argument


def test_unique_labels_of_any_kind_pass():
    # Labels that are unique but awkward (NaN once, tuples, mixed types) are accepted and
    # come back as given.
    parcels = gpd.GeoSeries(gpd.points_from_xy([0.0, 10.0, 4.0], [0.0, 0.0, 3.0]),
                            index=pd.Index([np.nan, ("t", 1), "s"], dtype=object, tupleize_cols=False))
    plan = gis.p_median(_homes(), 3, candidates=parcels, planar=True)
    assert len(plan.sites) == 3
    rows = plan.sites["source_row"].tolist()
    assert ("t", 1) in rows and "s" in rows and any(isinstance(r, float) and np.isnan(r) for r in rows)
