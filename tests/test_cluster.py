"""Distributed runs (placewise.cluster) on a two-process distributed.LocalCluster.

Reference: the in-memory ``groups=`` call on the whole table — the distributed result must
equal it exactly, whatever the partitioning.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import placewise as pw

dd = pytest.importorskip("dask.dataframe")
distributed = pytest.importorskip("distributed")
pc = pytest.importorskip("placewise.cluster")


@pytest.fixture(scope="module")
def client():
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None)
    c = distributed.Client(cluster)
    yield c
    c.close()
    cluster.close()


@pytest.fixture(scope="module")
def table() -> pd.DataFrame:
    rng = np.random.default_rng(14)
    n = 20_000
    return pd.DataFrame({
        "east": rng.normal(size=n) * 1_000 + 512_000,
        "north": rng.normal(size=n) * 800 + 6_180_000,
        "people": rng.integers(1, 9, size=n).astype(float),
        "district": rng.integers(0, 300, size=n),
    })


def in_memory(table: pd.DataFrame, kernel: str, weighted: bool, **options):
    fn = getattr(pw, kernel)
    args = [table[["east", "north"]].to_numpy()]
    if weighted:
        args.append(table["people"].to_numpy())
    return pc.result_frame(fn(*args, groups=table["district"].to_numpy(), **options), "district")


GROUPED_CASES = [(k, w) for k, w in [
    ("weber_point", True), ("minimax_point", True), ("enclosing_circle", False),
    ("enclosing_ellipse", False), ("spanning_tree", False), ("steiner_tree", False),
]]


@pytest.mark.parametrize("kernel, weighted", GROUPED_CASES, ids=[k for k, _ in GROUPED_CASES])
def test_grouped_equals_in_memory_call(client, table: pd.DataFrame, kernel: str, weighted: bool) -> None:
    if not hasattr(pw, kernel):
        pytest.skip(f"{kernel} is not part of this build")
    # Steiner trees: small groups (about 5 terminals each) keep the exact search quick.
    small = table if kernel != "steiner_tree" else table.iloc[:1_500]
    ddf = dd.from_pandas(small.sample(frac=1.0, random_state=3), npartitions=7)  # shuffled rows, odd partitioning
    out = pc.grouped(ddf, kernel, x="east", y="north", weight="people" if weighted else None, by="district")
    got = out.compute().sort_values("district").reset_index(drop=True)
    expected = in_memory(small, kernel, weighted)
    assert list(got.columns) == list(expected.columns)
    np.testing.assert_array_equal(got["district"].to_numpy(), expected["district"].to_numpy())
    for column in expected.columns:
        if expected[column].dtype == object:
            assert [list(v) for v in got[column]] == [list(v) for v in expected[column]], column
        elif kernel in {"weber_point"} or expected[column].dtype.kind not in "f":
            # Same points in the same order within a group: bit-identical.
            np.testing.assert_array_equal(got[column].to_numpy(), expected[column].to_numpy(), err_msg=column)
        else:
            np.testing.assert_allclose(got[column].to_numpy(), expected[column].to_numpy(), rtol=1e-12, err_msg=column)


def test_string_labels_and_bad_column(client, table: pd.DataFrame) -> None:
    named = table.assign(district=("d" + table["district"].astype(str)))
    out = pc.grouped(dd.from_pandas(named, npartitions=3), "weber_point", x="east", y="north", by="district").compute()
    assert set(out["district"]) == set(named["district"])
    with pytest.raises(pw.InputError, match="column 'nope' not found"):
        pc.grouped(dd.from_pandas(named, npartitions=3), "weber_point", x="nope", y="north", by="district")
    with pytest.raises(pw.InputError, match="kernel must be one of"):
        pc.grouped(dd.from_pandas(named, npartitions=3), "no_such_kernel", x="east", y="north", by="district")


def test_nearest_site_loads_reduced_across_partitions(client, table: pd.DataFrame) -> None:
    if not hasattr(pw, "nearest_site"):
        pytest.skip("nearest_site is not part of this build")
    sites = np.array([[511_000.0, 6_180_000.0], [513_000.0, 6_180_500.0], [512_000.0, 6_179_000.0]])
    result = pc.nearest_site(dd.from_pandas(table, npartitions=5), sites, x="east", y="north", weight="people")
    ref = pw.nearest_site(table[["east", "north"]].to_numpy(), sites, table["people"].to_numpy())
    frame = result.frame.compute()
    np.testing.assert_array_equal(frame["site"].to_numpy(), ref.index)
    np.testing.assert_allclose(result.load.compute(), ref.load, rtol=1e-12)
    assert result.cost.compute() == pytest.approx(ref.cost, rel=1e-12)
