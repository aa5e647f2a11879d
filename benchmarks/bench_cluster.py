"""Distributed runs: placewise.cluster on a local two-process Dask cluster against the
in-memory ``groups=`` call on the same table (the ratio shows the cost of distribution)."""

from __future__ import annotations

import numpy as np
import pandas as pd

import placewise as pw
from harness import Case


def cases(quick: bool) -> list[Case]:
    import dask.dataframe as dd
    import distributed

    import placewise.cluster as pc

    n, groups = (200_000, 2_000) if quick else (1_000_000, 10_000)
    rng = np.random.default_rng(21)
    table = pd.DataFrame({
        "x": rng.normal(size=n) * 3_000 + 512_000,
        "y": rng.normal(size=n) * 2_000 + 6_180_000,
        "w": rng.lognormal(size=n),
        "g": rng.integers(0, groups, size=n),
    })
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None)
    _client = distributed.Client(cluster)  # kept alive: every dask computation below runs on it
    ddf = dd.from_pandas(table, npartitions=8).persist()
    distributed.wait(ddf)
    pts, w, g = table[["x", "y"]].to_numpy(), table["w"].to_numpy(), table["g"].to_numpy()

    def distributed_run() -> pd.DataFrame:
        return pc.grouped(ddf, "weber_point", x="x", y="y", weight="w", by="g").compute()

    def equal(ours: pd.DataFrame, ref: object) -> str:
        got = ours.sort_values("g")["cost_u"].to_numpy()
        return f"results equal to the in-memory call: {bool(np.array_equal(got, ref.cost))}"  # type: ignore[attr-defined]

    return [
        Case("cluster.grouped weber_point", f"{n:,} rows, {groups:,} groups, 8 partitions",
             distributed_run, lambda: pw.weber_point(pts, w, groups=g),
             "in-memory groups= call (LocalCluster: 2 worker processes)", compare=equal, repeat=2),
    ]
