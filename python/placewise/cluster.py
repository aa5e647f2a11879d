"""Distributed runs on Dask: grouped kernels and nearest-site allocation over a
``dask.dataframe`` that may be larger than one machine.

The same code runs on a laptop and on a cluster: connect a ``distributed.Client`` to
the scheduler first (``Client("tcp://scheduler:8786")``) and every computation below
runs there. Every partition calls the kernel's grouped form once and builds its rows from
the result's own table (``to_frame``, ``summary`` or ``sites_frame``); errors and skipped
groups name the user's group values and the table's own index labels, never positions
inside a partition. Requires the ``dask`` extra (``pip install placewise[dask]``).
"""

from __future__ import annotations

import dataclasses
import functools
from collections.abc import Callable
from typing import Any, Literal

import numpy as np

from ._core import InputError
from ._errors import restate, restate_problems
from ._results import Result

__all__ = ["DistributedAllocation", "GROUPED_KERNELS", "grouped", "nearest_site"]

# Kernels with a grouped form over one point table, and the columns of their rows that
# hold input row positions (translated to the table's index labels).
GROUPED_KERNELS: dict[str, tuple[str, ...]] = {
    "weber_point": (),
    "minimax_point": (),
    "enclosing_circle": (),
    "enclosing_ellipse": (),
    "spanning_tree": ("end_a", "end_b"),
    "steiner_tree": ("end_a", "end_b"),
    "delaunay": ("corner_a", "corner_b", "corner_c"),
    "p_median": (),
    "p_center": (),
}
_WEIGHTED = {"weber_point", "minimax_point", "p_median", "p_center"}
_TABLES = ("frame", "summary", "sites")


def _require_dask() -> Any:
    try:
        import dask.dataframe as dd
    except ImportError as exc:  # pragma: no cover - exercised only without the extra
        raise ImportError("placewise.cluster needs dask: pip install 'placewise[dask]'") from exc
    return dd


def _kernel(name: str) -> Callable[..., Any]:
    import placewise

    if name not in GROUPED_KERNELS:
        raise InputError(f"kernel must be one of {sorted(GROUPED_KERNELS)}; got {name!r}")
    return getattr(placewise, name)


def _table(result: Result, table: str) -> Any:
    if table == "frame":
        return result.to_frame()
    if table == "summary":
        return result.summary()
    if not hasattr(result, "sites_frame"):
        raise InputError(f"table='sites' is only for kernels with sites (p_median, p_center); got {type(result).__name__}")
    return result.sites_frame()


def _solve(part: Any, kernel: str, x: str, y: str, weight: str | None, by: str, table: str, errors: str,
           options: dict[str, Any]) -> Any:
    """One partition holding whole groups: one grouped kernel call, its table in user terms."""
    import pandas as pd

    fn = _kernel(kernel)
    # The shuffle does not keep row order; restoring the table's index order makes every
    # group see its points in the order the in-memory call would, whatever the partitioning.
    part = part.sort_index(kind="stable")
    codes, uniques = pd.factorize(part[by], sort=True)
    points = part[[x, y]].to_numpy(dtype=np.float64)
    rows = {"points": part.index.to_numpy(), "weights": part.index.to_numpy()}
    arguments: dict[str, Any] = dict(options)
    if weight is not None:
        arguments["weights"] = part[weight].to_numpy(dtype=np.float64)
    try:
        result = fn(points, groups=codes, errors=errors, **arguments)
    except InputError as exc:
        raise restate(exc, uniques, rows) from None
    frame = _table(result, table)
    code = frame["group"].to_numpy(dtype=np.int64)
    frame["problem"] = restate_problems(result.problem_detail, uniques, rows)[code]
    frame = frame.drop(columns=["group"])
    frame.insert(0, by, uniques.take(code))
    labels = part.index.to_numpy()
    for name in GROUPED_KERNELS[kernel]:
        if name in frame.columns:
            positions = frame[name].to_numpy(dtype=np.int64)
            named = np.full(len(frame), None, dtype=object)
            named[positions >= 0] = labels[positions[positions >= 0]]
            frame[name] = named
    return frame


def _meta_frame(kernel: str, label_dtype: Any, weighted: bool, by: str, table: str, options: dict[str, Any]) -> Any:
    """The output's columns and dtypes, from the kernel run on a tiny group of our own."""
    import pandas as pd

    square = pd.DataFrame({"x": [0.0, 1.0, 1.0, 0.0, 0.5], "y": [0.0, 0.0, 1.0, 1.5, 0.4], "w": 1.0, "g": 0})
    frame = _solve(square, kernel, "x", "y", "w" if weighted else None, "g", table, "raise", options)
    frame = frame.rename(columns={"g": by}).iloc[:0]
    frame[by] = pd.Series(pd.array([], dtype=label_dtype))
    frame["problem"] = frame["problem"].astype(object)
    return frame


def grouped(
    ddf: Any,
    kernel: str,
    *,
    x: str,
    y: str,
    weight: str | None = None,
    by: str,
    table: Literal["frame", "summary", "sites"] = "frame",
    errors: Literal["raise", "skip"] = "raise",
    **options: Any,
) -> Any:
    """Run a grouped kernel over a Dask DataFrame, lazily; the rows of the result's table.

    The frame may be partitioned any way: it is shuffled so that each group's rows meet in
    one partition, then every partition runs the in-memory ``groups=`` call once. The
    result equals that call's table on the whole table.

    Parameters
    ----------
    ddf : dask.dataframe.DataFrame
        Points table with coordinate columns ``x``, ``y``, optional ``weight``, and ``by``.
    kernel : str
        One of :data:`GROUPED_KERNELS`: ``"weber_point"``, ``"minimax_point"``,
        ``"enclosing_circle"``, ``"enclosing_ellipse"``, ``"spanning_tree"``,
        ``"steiner_tree"``, ``"delaunay"``, ``"p_median"``, ``"p_center"``.
    x, y, weight, by : str
        Column names. Group labels may be of any sortable type.
    table : {"frame", "summary", "sites"}
        Which table of the result: its rows (``to_frame``: one per group for single sites,
        one per edge for trees), its totals (``summary``), or a plan's sites.
    errors : {"raise", "skip"}
        Fail on the first group without an answer, or keep it with its ``problem``.
    **options
        Passed to the kernel (for example ``tol=1e-8``, ``p=5``).

    Returns
    -------
    dask.dataframe.DataFrame
        Lazy; the ``by`` column (the user's values), the table's columns, and ``problem``.
        Columns holding input rows (tree ends) hold the table's index labels.

    Examples
    --------
    >>> import pandas as pd, dask.dataframe as dd
    >>> import placewise.cluster as pc
    >>> table = pd.DataFrame({"x": [0, 4, 2, 9.0], "y": [0, 0, 4, 9.0], "town": ["a", "a", "a", "b"]})
    >>> out = pc.grouped(dd.from_pandas(table, npartitions=2), "weber_point", x="x", y="y", by="town")
    >>> out.compute(scheduler="sync").set_index("town").sort_index()["cost_u"].round(6).to_dict()
    {'a': 7.464102, 'b': 0.0}
    """
    _require_dask()
    _kernel(kernel)
    if table not in _TABLES:
        raise InputError(f"table must be one of {list(_TABLES)}; got {table!r}")
    if weight is not None and kernel not in _WEIGHTED:
        raise InputError(f"{kernel} takes no weights; got weight={weight!r}")
    for column in [x, y, by] + ([weight] if weight else []):
        if column not in ddf.columns:
            raise InputError(f"column {column!r} not found; the frame has {list(ddf.columns)}")
    meta = _meta_frame(kernel, ddf._meta[by].dtype, weight is not None, by, table, options)
    run = functools.partial(_solve_or_meta, kernel=kernel, x=x, y=y, weight=weight, by=by, table=table,
                            errors=errors, options=options, meta=meta)
    return ddf.shuffle(on=by).map_partitions(run, meta=meta)


def _solve_or_meta(part: Any, meta: Any, **arguments: Any) -> Any:
    if len(part) == 0:
        return meta
    return _solve(part, **arguments)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class DistributedAllocation(Result):
    """Nearest-site allocation of a distributed table.

    Attributes
    ----------
    frame : dask.dataframe.DataFrame
        The input rows with ``site`` (row of ``sites``) and ``distance_u`` (coordinate units)
        columns (lazy).
    load : dask.delayed.Delayed
        Summed weight per site, shape ``(k,)``, reduced across partitions (``.compute()``).
    cost : dask.delayed.Delayed
        Total weighted distance (``.compute()``).
    """

    frame: Any
    load: Any
    cost: Any


def _allocate_partition(part: Any, sites: np.ndarray, x: str, y: str, weight: str | None) -> Any:
    import placewise

    part = part.copy()
    if len(part) == 0:
        part["site"] = np.zeros(0, dtype=np.int64)
        part["distance_u"] = np.zeros(0)
        return part
    w = part[weight].to_numpy(dtype=np.float64) if weight else None
    rows = {"points": part.index.to_numpy(), "weights": part.index.to_numpy()}
    try:
        allocation = placewise.nearest_site(part[[x, y]].to_numpy(dtype=np.float64), sites, w)
    except InputError as exc:
        raise restate(exc, None, rows) from None
    points = allocation.to_frame()
    part["site"] = points["assignment"].to_numpy(dtype=np.int64)
    part["distance_u"] = points["distance_u"].to_numpy()
    return part


def _partition_totals(part: Any, sites: np.ndarray, x: str, y: str, weight: str | None) -> tuple[np.ndarray, float]:
    import placewise

    if len(part) == 0:
        return np.zeros(len(sites)), 0.0
    w = part[weight].to_numpy(dtype=np.float64) if weight else None
    allocation = placewise.nearest_site(part[[x, y]].to_numpy(dtype=np.float64), sites, w)
    return np.asarray(allocation.sites_frame()["load"], dtype=np.float64), float(allocation.cost)


def _reduce_totals(totals: list[tuple[np.ndarray, float]]) -> tuple[np.ndarray, float]:
    loads = [t[0] for t in totals]
    return np.sum(loads, axis=0), float(np.sum([t[1] for t in totals]))


def nearest_site(ddf: Any, sites: Any, *, x: str, y: str, weight: str | None = None) -> DistributedAllocation:
    """Allocate every row of a Dask DataFrame to its nearest site; loads reduced across partitions.

    Each partition's loads and cost come from the kernel (a partition whose weights are all
    zero is valid and adds nothing).

    Parameters
    ----------
    ddf : dask.dataframe.DataFrame
        Demand table with coordinate columns ``x``, ``y`` and optional ``weight``.
    sites : array_like, shape (k, 2)
        Site coordinates (small: sent to every worker).
    x, y, weight : str
        Column names.

    Returns
    -------
    DistributedAllocation

    Examples
    --------
    >>> import pandas as pd, dask.dataframe as dd
    >>> import placewise.cluster as pc
    >>> demand = dd.from_pandas(pd.DataFrame({"x": [0, 1, 9, 10.0], "y": [0, 0, 0, 0.0]}), npartitions=2)
    >>> a = pc.nearest_site(demand, [[0, 0], [10, 0]], x="x", y="y")
    >>> a.load.compute(scheduler="sync").tolist()
    [2.0, 2.0]
    """
    _require_dask()
    import dask

    site_array = np.ascontiguousarray(sites, dtype=np.float64)
    if site_array.ndim != 2 or site_array.shape[1] != 2 or len(site_array) == 0:
        raise InputError(f"sites must have shape (k, 2) with k >= 1; got shape {site_array.shape}")
    for column in [x, y] + ([weight] if weight else []):
        if column not in ddf.columns:
            raise InputError(f"column {column!r} not found; the frame has {list(ddf.columns)}")
    meta = ddf._meta.copy()
    meta["site"] = np.zeros(0, dtype=np.int64)
    meta["distance_u"] = np.zeros(0)
    frame = ddf.map_partitions(_allocate_partition, site_array, x, y, weight, meta=meta)
    totals = [dask.delayed(_partition_totals)(part, site_array, x, y, weight) for part in ddf.to_delayed()]
    reduced = dask.delayed(_reduce_totals)(totals)
    return DistributedAllocation(frame, reduced[0], reduced[1])
