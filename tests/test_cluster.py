"""Distributed runs (placewise.cluster) on a two-process distributed.LocalCluster.

Worker processes make every result and every error cross a pickle boundary, as on a real
cluster. References, named beside each check: scipy (optimize, cKDTree, csgraph), shapely/GEOS
and closed forms for the values; the in-memory ``groups=`` call on the whole table for the
promise that partitioning changes nothing.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import placewise as pw

dask = pytest.importorskip("dask")
dd = pytest.importorskip("dask.dataframe")
distributed = pytest.importorskip("distributed")
shapely = pytest.importorskip("shapely")
from scipy.optimize import minimize  # noqa: E402
from scipy.sparse.csgraph import minimum_spanning_tree  # noqa: E402
from scipy.spatial import cKDTree  # noqa: E402
from scipy.spatial.distance import cdist  # noqa: E402

pc = pw.cluster  # loaded on attribute access, as the README shows


@pytest.fixture(scope="module")
def client():
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None)
    c = distributed.Client(cluster)
    yield c
    c.close()
    cluster.close()


@pytest.fixture(scope="module")
def table() -> pd.DataFrame:
    """30 districts of 6 to 14 points; index labels from 50_000 (not positions), rows shuffled."""
    rng = np.random.default_rng(14)
    sizes = rng.integers(6, 15, size=30)
    n = int(sizes.sum())
    frame = pd.DataFrame({
        "east": rng.normal(size=n) * 1_000 + 512_000,
        "north": rng.normal(size=n) * 800 + 6_180_000,
        "people": rng.integers(1, 9, size=n).astype(float),
        "district": np.repeat(np.arange(30) * 7 + 3, sizes),  # labels 3, 10, 17, ...
    }, index=np.arange(n) + 50_000)
    return frame.sample(frac=1.0, random_state=3)


def distributed_frame(table: pd.DataFrame, partitions: int = 5):
    return dd.from_pandas(table, npartitions=partitions, sort=False)


def per_group(table: pd.DataFrame):
    """(label, xy, weights, index labels) of every district, rows in index order."""
    ordered = table.sort_index()
    for label, part in ordered.groupby("district", sort=True):
        yield label, part[["east", "north"]].to_numpy(), part["people"].to_numpy(), part.index.to_numpy()


def weber_cost_scipy(xy: np.ndarray, w: np.ndarray) -> float:
    """Weighted Fermat–Weber cost by scipy.optimize (Nelder–Mead, centred and scaled)."""
    c, s = xy.mean(0), float(np.ptp(xy))
    f = lambda p: float(w @ np.hypot(*(xy - c - s * p).T))  # noqa: E731
    return float(minimize(f, np.zeros(2), method="Nelder-Mead", options={"xatol": 1e-10, "fatol": 1e-12}).fun)


def computed(out) -> pd.DataFrame:
    return out.compute()


# ---------------------------------------------------------------- values against outside references


def test_weber_points_match_scipy(client, table):
    out = computed(pc.grouped(distributed_frame(table), "weber_point", x="east", y="north", weight="people",
                              by="district")).set_index("district").sort_index()
    assert out.index.tolist() == sorted(table["district"].unique())
    assert out["problem"].isna().all()
    for label, xy, w, _ in per_group(table):
        assert out.loc[label, "cost_u"] == pytest.approx(weber_cost_scipy(xy, w), rel=1e-7)  # scipy.optimize


def test_enclosing_circles_match_geos(client, table):
    out = computed(pc.grouped(distributed_frame(table), "enclosing_circle", x="east", y="north",
                              by="district")).set_index("district")
    for label, xy, _, _ in per_group(table):
        r = shapely.minimum_bounding_radius(shapely.multipoints(xy))  # GEOS
        assert out.loc[label, "radius_u"] == pytest.approx(r, rel=1e-9)
        assert out.loc[label, "area_u2"] == pytest.approx(np.pi * r * r, rel=1e-9)  # closed form


def test_spanning_trees_name_table_rows_and_match_csgraph(client, table):
    edges = computed(pc.grouped(distributed_frame(table), "spanning_tree", x="east", y="north", by="district"))
    summary = computed(pc.grouped(distributed_frame(table), "spanning_tree", x="east", y="north", by="district",
                                  table="summary")).set_index("district")
    for label, xy, _, rows in per_group(table):
        mine = edges[edges["district"] == label]
        assert len(mine) == len(xy) - 1
        assert set(mine["end_a"]) | set(mine["end_b"]) == set(rows)  # the table's own labels
        ref = float(minimum_spanning_tree(cdist(xy, xy)).sum())  # scipy csgraph
        assert mine["length_u"].sum() == pytest.approx(ref, rel=1e-12)
        assert summary.loc[label, "length_u"] == pytest.approx(ref, rel=1e-12)
        # Every edge's length is the distance between the rows it names (numpy on the table).
        a = table.loc[mine["end_a"].to_list(), ["east", "north"]].to_numpy()
        b = table.loc[mine["end_b"].to_list(), ["east", "north"]].to_numpy()
        np.testing.assert_allclose(mine["length_u"], np.hypot(*(a - b).T), rtol=1e-12)


def test_steiner_summary_against_csgraph(client, table):
    small = table[table["district"] < 60]
    summary = computed(pc.grouped(distributed_frame(small, 3), "steiner_tree", x="east", y="north", by="district",
                                  table="summary", exact=False)).set_index("district")
    for label, xy, _, _ in per_group(small):
        mst = float(minimum_spanning_tree(cdist(xy, xy)).sum())  # scipy csgraph
        assert summary.loc[label, "mst_length_u"] == pytest.approx(mst, rel=1e-12)
        assert summary.loc[label, "length_u"] <= mst * (1 + 1e-12)


def test_delaunay_corners_are_table_labels_and_tile_the_hull(client, table):
    tri = computed(pc.grouped(distributed_frame(table), "delaunay", x="east", y="north", by="district"))
    for label, xy, _, rows in per_group(table):
        mine = tri[tri["district"] == label]
        corners = mine[["corner_a", "corner_b", "corner_c"]].to_numpy()
        assert set(corners.ravel()) <= set(rows)
        hull = shapely.multipoints(xy).convex_hull
        assert mine["area_u2"].sum() == pytest.approx(hull.area, rel=1e-9)  # GEOS convex hull area
        coords = table.loc[corners.ravel().tolist(), ["east", "north"]].to_numpy().reshape(-1, 3, 2)
        np.testing.assert_allclose(shapely.area(shapely.polygons(coords)), mine["area_u2"], rtol=1e-9)  # shapely


def test_p_median_sites_are_numbered_per_group_and_serve_the_nearest_rows(client, table):
    ddf = distributed_frame(table)
    sites = computed(pc.grouped(ddf, "p_median", x="east", y="north", weight="people", by="district",
                                table="sites", p=2))
    rows = computed(pc.grouped(ddf, "p_median", x="east", y="north", weight="people", by="district", p=2))
    assert sorted(rows.index) == sorted(table.index)  # one row per table row, by its own label
    for label, xy, w, labels in per_group(table):
        own = sites[sites["district"] == label].sort_values("site")
        assert own["site"].tolist() == [0, 1]
        d, i = cKDTree(own[["x", "y"]].to_numpy()).query(xy)  # scipy nearest site
        mine = rows.loc[labels]
        assert mine["assignment"].tolist() == own["site"].to_numpy()[i].tolist()
        np.testing.assert_allclose(mine["distance_u"], d, rtol=1e-9, atol=1e-9)
        np.testing.assert_allclose(own["load"], np.bincount(i, weights=w, minlength=2), rtol=1e-12)


def test_partitioning_changes_nothing(client, table):
    # Reference: the in-memory groups= call on the whole table (rows in the table's order).
    ordered = table
    ref = pw.minimax_point(ordered[["east", "north"]].to_numpy(), ordered["people"].to_numpy(),
                           groups=ordered["district"].to_numpy())
    for partitions in (1, 4, 9):
        out = computed(pc.grouped(distributed_frame(table, partitions), "minimax_point", x="east", y="north",
                                  weight="people", by="district")).sort_values("district")
        np.testing.assert_array_equal(out["district"].to_numpy(), ref.labels)
        np.testing.assert_array_equal(out["weighted_radius_u"].to_numpy(), ref.weighted_radius)
        np.testing.assert_array_equal(out[["x", "y"]].to_numpy(), ref.location)


def test_points_meet_the_kernel_in_the_tables_order(client, table):
    # The table's index is shuffled (not sorted): the in-memory groups= call on the table as it
    # stands (pw.p_median, itself checked against scipy.optimize.milp in its own tests) sees
    # each group's points in row order, and the distributed run must answer bit for bit the
    # same. Before, each partition re-sorted its rows by index label, so the randomised search
    # met the points in another order and the plans differed in their last bits.
    assert not table.index.is_monotonic_increasing
    ref = pw.p_median(table[["east", "north"]].to_numpy(), 2, table["people"].to_numpy(),
                      groups=table["district"].to_numpy())
    own = ref.to_frame().set_index(table.index)
    for partitions in (1, 4):
        rows = computed(pc.grouped(distributed_frame(table, partitions), "p_median", x="east", y="north",
                                   weight="people", by="district", p=2))
        np.testing.assert_array_equal(rows.loc[table.index, "distance_u"].to_numpy(), own["distance_u"].to_numpy())
        summary = computed(pc.grouped(distributed_frame(table, partitions), "p_median", x="east", y="north",
                                      weight="people", by="district", p=2, table="summary")).sort_values("district")
        np.testing.assert_array_equal(summary["cost_u"].to_numpy(), ref.summary()["cost_u"].to_numpy())


@pytest.mark.parametrize("kernel, by", [("enclosing_circle", "radius_u"), ("enclosing_circle", "problem"),
                                        ("p_median", "site")])
def test_a_group_column_named_as_a_result_column_is_refused(client, table, kernel, by):
    # Before: a bare pandas ValueError ("cannot insert radius_u, already exists") on compute.
    renamed = table.rename(columns={"district": by})
    options = {"p": 2, "table": "sites"} if kernel == "p_median" else {}
    with pytest.raises(pw.InputError, match=f"group column '{by}' has the name of a column of the result"):
        pc.grouped(distributed_frame(renamed), kernel, x="east", y="north", by=by, **options).compute()


def test_reserved_order_columns_are_refused(client, table):
    with pytest.raises(pw.InputError, match="reserved"):
        pc.grouped(distributed_frame(table.assign(__placewise_position=1)), "enclosing_circle", x="east",
                   y="north", by="district")


# ---------------------------------------------------------------- one- and two-point groups


def test_one_and_two_point_groups_hold_rows_not_lists(client):
    small = pd.DataFrame({"x": [0.0, 3.0, 10.0, 20.0, 23.0, 20.0], "y": [0.0, 4.0, 10.0, 0.0, 4.0, 8.0],
                          "g": ["pair", "pair", "single", "trio", "trio", "trio"]},
                         index=["p1", "p2", "s1", "t1", "t2", "t3"])
    ddf = dd.from_pandas(small, npartitions=2, sort=False)
    circles = computed(pc.grouped(ddf, "enclosing_circle", x="x", y="y", by="g")).set_index("g")
    # Closed forms: a point is its own circle; a pair's circle is on its midpoint.
    assert circles.loc["single", ["x", "y", "radius_u"]].tolist() == [10.0, 10.0, 0.0]
    assert circles.loc["pair", ["x", "y", "radius_u"]].tolist() == pytest.approx([1.5, 2.0, 2.5])
    trees = computed(pc.grouped(ddf, "spanning_tree", x="x", y="y", by="g"))
    pair = trees[trees["g"] == "pair"]
    assert pair[["end_a", "end_b"]].values.tolist() == [["p1", "p2"]]
    assert pair["length_u"].tolist() == pytest.approx([5.0])  # 3-4-5 triangle
    assert "single" not in set(trees["g"])  # a single point has no edge
    summary = computed(pc.grouped(ddf, "spanning_tree", x="x", y="y", by="g", table="summary")).set_index("g")
    assert summary.loc["single", "length_u"] == 0.0 and summary.loc["single", "edges"] == 0
    for column in ("end_a", "end_b", "length_u"):
        assert not any(isinstance(v, (list, np.ndarray)) for v in trees[column])


# ---------------------------------------------------------------- errors in the user's terms


def test_errors_name_the_group_value_and_row_label(client, table):
    bad = table.assign(district="d" + table["district"].astype(str))
    bad.loc[bad.index[5], "east"] = np.nan
    label, group = bad.index[5], bad["district"].iloc[5]
    with pytest.raises(pw.InputError) as info:
        computed(pc.grouped(distributed_frame(bad), "weber_point", x="east", y="north", by="district"))
    assert info.value.group == group and info.value.row == label
    text = str(info.value)
    assert text.startswith(f"group {group!r}: ") and f"points[{label}]" in text
    assert "group 0" not in text and "np." not in text


def test_skip_keeps_a_degenerate_group_with_its_problem(client, table):
    lonely = pd.DataFrame({"east": [0.0], "north": [0.0], "people": [1.0], "district": [999]}, index=[7])
    out = computed(pc.grouped(distributed_frame(pd.concat([table, lonely])), "enclosing_ellipse", x="east",
                              y="north", by="district", errors="skip")).set_index("district")
    assert out.loc[999, "problem"].startswith("group 999: ")
    assert np.isnan(out.loc[999, "area_u2"])
    assert out.drop(index=999)["problem"].isna().all()
    # A solved group's ellipse (grown by 0.1 %) covers its points (GEOS, on a 720-gon).
    row = out.loc[3]
    t = np.linspace(0, 2 * np.pi, 721)
    a, b, th = row["semi_major_u"] * 1.001, row["semi_minor_u"] * 1.001, np.radians(row["angle_deg"])
    ring = np.column_stack([row["x"] + a * np.cos(t) * np.cos(th) - b * np.sin(t) * np.sin(th),
                            row["y"] + a * np.cos(t) * np.sin(th) + b * np.sin(t) * np.cos(th)])
    pts = table[table["district"] == 3][["east", "north"]].to_numpy()
    assert bool(shapely.covers(shapely.Polygon(ring), shapely.points(pts)).all())
    with pytest.raises(pw.DegenerateInputError, match="^group 999: ") as info:
        computed(pc.grouped(distributed_frame(pd.concat([table, lonely])), "enclosing_ellipse", x="east",
                            y="north", by="district"))
    assert info.value.group == 999


def test_argument_and_column_errors_are_raised_before_any_work(client, table):
    ddf = distributed_frame(table)
    with pytest.raises(pw.InputError, match="column 'nope' not found"):
        pc.grouped(ddf, "weber_point", x="nope", y="north", by="district")
    with pytest.raises(pw.InputError, match="kernel must be one of"):
        pc.grouped(ddf, "no_such_kernel", x="east", y="north", by="district")
    with pytest.raises(pw.InputError, match="table must be one of"):
        pc.grouped(ddf, "weber_point", x="east", y="north", by="district", table="edges")
    with pytest.raises(pw.InputError, match="takes no weights"):
        pc.grouped(ddf, "enclosing_circle", x="east", y="north", weight="people", by="district")
    with pytest.raises(pw.InputError, match=r"^p must be an integer >= 1; got 0$"):
        pc.grouped(ddf, "p_median", x="east", y="north", by="district", p=np.int64(0))


def test_missing_group_value_names_the_row(client, table):
    bad = table.astype({"district": float})
    bad.loc[bad.index[3], "district"] = np.nan
    with pytest.raises(pw.InputError, match=f"missing value at row {bad.index[3]}$"):
        computed(pc.grouped(distributed_frame(bad), "weber_point", x="east", y="north", by="district"))


# ---------------------------------------------------------------- nearest site


SITES = np.array([[511_000.0, 6_180_000.0], [513_000.0, 6_180_500.0], [512_000.0, 6_179_000.0]])


def test_nearest_site_matches_ckdtree_with_an_all_zero_partition(client, table):
    ordered = table.sort_index().copy()
    first_end = dd.from_pandas(ordered, npartitions=3).divisions[1]
    ordered.loc[ordered.index < first_end, "people"] = 0.0  # partition 0: all zero
    ddf = dd.from_pandas(ordered, npartitions=3)
    assert not ddf.partitions[0]["people"].compute().any()
    result = pc.nearest_site(ddf, SITES, x="east", y="north", weight="people")
    frame = result.frame.compute()
    load, count, cost = dask.compute(result.load, result.count, result.cost)
    xy, w = ordered[["east", "north"]].to_numpy(), ordered["people"].to_numpy()
    d, i = cKDTree(SITES).query(xy)  # scipy reference
    np.testing.assert_array_equal(frame.loc[ordered.index, "site"].to_numpy(), i)
    np.testing.assert_allclose(frame.loc[ordered.index, "distance_u"].to_numpy(), d, rtol=1e-12)
    np.testing.assert_allclose(load, np.bincount(i, weights=w, minlength=3), rtol=1e-12)
    assert count.tolist() == np.bincount(i, minlength=3).tolist()
    assert cost == pytest.approx(float(w @ d), rel=1e-12)
    summary = result.summary()
    assert summary["cost_u"].iloc[0] == pytest.approx(float(w @ d), rel=1e-12)
    assert summary["load"].iloc[0] == pytest.approx(w.sum()) and summary["points"].iloc[0] == len(xy)
    assert result.sites_frame()["load"].to_numpy() == pytest.approx(np.bincount(i, weights=w, minlength=3))


def test_nearest_site_errors_name_the_row_label(client, table):
    bad = table.sort_index().copy()
    label = bad.index[17]
    bad.loc[label, "people"] = -2.0
    result = pc.nearest_site(dd.from_pandas(bad, npartitions=3), SITES, x="east", y="north", weight="people")
    with pytest.raises(pw.InputError) as info:
        result.load.compute()
    assert info.value.row == label and f"weights[{label}] = -2" in str(info.value)
    zero = table.assign(people=0.0)
    result = pc.nearest_site(dd.from_pandas(zero, npartitions=3), SITES, x="east", y="north", weight="people")
    with pytest.raises(pw.InputError, match="'people' is zero in every row"):
        result.cost.compute()


def test_nearest_site_names_a_column_of_the_tables_it_replaces(client, table):
    # A table with a column of its own called "site" lost it in the result's frame without a
    # word. Reference for the values that replace it: scipy cKDTree's nearest site.
    ordered = table.sort_index().assign(site="depot-row")
    said = (r"ddf: the result will replace your column 'site' whatever it holds \(the result is computed later, "
            r"partition by partition, and not compared with it\); drop it first if it is an earlier result, or "
            r"rename it to keep both")
    with pytest.warns(UserWarning, match=said):
        result = pc.nearest_site(dd.from_pandas(ordered, npartitions=3), SITES, x="east", y="north")
    frame = result.frame.compute()
    i = cKDTree(SITES).query(ordered[["east", "north"]].to_numpy())[1]
    np.testing.assert_array_equal(frame.loc[ordered.index, "site"].to_numpy(), i)

    # The values are known only once computed, so the warning cannot say they differ (it
    # said nothing of them, and read as if they did): it comes when the call is made,
    # without computing the table (a partition that fails when computed proves it), and
    # says the column is replaced whatever it holds, the table's own earlier result too.
    def never(*args):
        raise AssertionError("the table was computed when the call was made")

    lazy = dd.from_delayed([dask.delayed(never)()], meta=frame.iloc[:0])
    with pytest.warns(UserWarning) as caught:
        pc.nearest_site(lazy, SITES, x="east", y="north")
    assert [str(w.message) for w in caught] == [
        "ddf: the result will replace your columns 'site', 'distance_u' whatever they hold (the result is computed "
        "later, partition by partition, and not compared with them); drop them first if they are an earlier "
        "result, or rename them to keep both"]
