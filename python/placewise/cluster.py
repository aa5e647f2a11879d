"""Distributed runs on Dask: grouped kernels and nearest-site allocation over a
``dask.dataframe`` that may be larger than one machine.

The same code runs on a laptop and on a cluster: connect a ``distributed.Client`` to
the scheduler first (``Client("tcp://scheduler:8786")``) and every computation below
runs there. Requires the ``dask`` extra (``pip install placewise[dask]``).
"""

from __future__ import annotations

import dataclasses
import functools
import inspect
from typing import Any, Callable

import numpy as np

from ._core import InputError
from ._results import Result

__all__ = ["DistributedAllocation", "grouped", "nearest_site", "result_frame"]

# Kernels that accept ``groups=``; looked up on the package lazily so that families added
# later join without edits here.
GROUPED_KERNELS = (
    "weber_point",
    "minimax_point",
    "enclosing_circle",
    "enclosing_ellipse",
    "spanning_tree",
    "steiner_tree",
)


# Batch-result fields that hold input row numbers (rather than positions within a group's
# own output); in a distributed run they are translated to the table's index labels.
_ROW_INDEX_FIELDS = {
    "Circles": ("support_index",),
    "MinimaxPoints": ("support_index",),
    "Ellipses": ("support_index",),
    "SpanningTrees": ("edges",),
}


def _require_dask() -> Any:
    try:
        import dask.dataframe as dd
    except ImportError as exc:  # pragma: no cover - exercised only without the extra
        raise ImportError("placewise.cluster needs dask: pip install 'placewise[dask]'") from exc
    return dd


def _kernel(name: str) -> Callable[..., Any]:
    import placewise

    fn = getattr(placewise, name, None)
    if name not in GROUPED_KERNELS or fn is None or "groups" not in inspect.signature(fn).parameters:
        available = [k for k in GROUPED_KERNELS if hasattr(placewise, k)]
        raise InputError(f"kernel must be one of {available}; got {name!r}")
    return fn


def _column_names(name: str, trailing: tuple[int, ...]) -> list[str]:
    if trailing == (2,):
        return [f"{name}_x", f"{name}_y"]
    return [f"{name}_" + "_".join(map(str, idx)) for idx in np.ndindex(*trailing)]


def result_frame(result: Result, label_column: str = "label", row_labels: Any = None) -> Any:
    """One row per group of a batch result (a ``groups=`` call) as a pandas DataFrame.

    Per-group arrays become columns (a ``(G, 2)`` field ``location`` becomes ``location_x``
    and ``location_y``); CSR pairs (``<name>_offsets`` with the arrays they index) become
    columns of per-group lists; scalars are repeated. With ``row_labels`` (one label per
    input row), fields that hold input row numbers (support points, spanning-tree edges)
    are translated to those labels.

    Examples
    --------
    >>> import placewise as pw
    >>> r = pw.weber_point([[0, 0], [2, 0], [5, 5]], groups=[1, 1, 2])
    >>> result_frame(r, "town")[["town", "location_x", "location_y", "cost"]]
       town  location_x  location_y  cost
    0     1         0.0         0.0   2.0
    1     2         5.0         5.0   0.0
    """
    import pandas as pd

    values = {f.name: getattr(result, f.name) for f in dataclasses.fields(result)}
    labels = np.asarray(values.pop("labels"))
    groups = len(labels)
    columns: dict[str, Any] = {label_column: labels}
    offsets = {
        name[: -len("_offsets")]: np.asarray(v)
        for name, v in values.items()
        if name.endswith("_offsets") and isinstance(v, np.ndarray) and v.shape == (groups + 1,)
    }
    for name, value in values.items():
        if name.endswith("_offsets") and name[: -len("_offsets")] in offsets:
            continue
        if isinstance(value, np.ndarray) and value.ndim >= 1:
            csr = next(
                (o for prefix, o in offsets.items() if name.startswith(prefix) and value.shape[0] == o[-1]),
                None,
            )
            if csr is not None and (value.shape[0] != groups or groups == 0):
                if row_labels is not None and name in _ROW_INDEX_FIELDS.get(type(result).__name__, ()):
                    value = np.asarray(row_labels)[value]
                columns[name] = [value[csr[g] : csr[g + 1]].tolist() for g in range(groups)]
            elif value.shape[0] == groups and value.ndim == 1:
                columns[name] = value
            elif value.shape[0] == groups:
                flat = value.reshape(groups, -1)
                for k, column in enumerate(_column_names(name, value.shape[1:])):
                    columns[column] = flat[:, k]
            else:
                continue
        elif not isinstance(value, np.ndarray):
            columns[name] = [value] * groups
    return pd.DataFrame(columns)


def _run_partition(
    part: Any, kernel: str, x: str, y: str, weight: str | None, by: str, options: dict, meta: Any
) -> Any:
    import pandas as pd

    if len(part) == 0:
        return meta
    fn = _kernel(kernel)
    # The shuffle does not keep row order; restoring the table's index order makes every
    # group see its points in the order the in-memory call would, whatever the partitioning.
    part = part.sort_index(kind="stable")
    # After the shuffle each group sits in exactly one partition, so labels can be coded
    # locally: any hashable label type works.
    codes, uniques = pd.factorize(part[by], sort=True)
    points = part[[x, y]].to_numpy(dtype=np.float64)
    args: list[Any] = [points]
    if weight is not None:
        args.append(part[weight].to_numpy(dtype=np.float64))
    # Support indices are rows of this partition: report them as the table's own index labels.
    frame = result_frame(fn(*args, groups=codes, **options), by, row_labels=part.index.to_numpy())
    frame[by] = uniques.take(frame[by].to_numpy())
    return frame


def _meta_frame(kernel: str, label_dtype: Any, weighted: bool, by: str, options: dict) -> Any:
    import pandas as pd

    fn = _kernel(kernel)
    square = np.array([[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.5]])
    args: list[Any] = [square] + ([np.ones(4)] if weighted else [])
    frame = result_frame(fn(*args, groups=np.zeros(4, dtype=np.int64), **options), by)
    frame[by] = pd.Series(pd.array([], dtype=label_dtype)).reindex(range(len(frame))).array
    return frame.iloc[:0]


def grouped(
    ddf: Any,
    kernel: str,
    *,
    x: str,
    y: str,
    weight: str | None = None,
    by: str,
    **options: Any,
) -> Any:
    """Run a grouped kernel over a Dask DataFrame; one result row per group, lazily.

    The frame may be partitioned any way: it is shuffled so that each group's rows meet in
    one partition, then every partition runs the in-memory ``groups=`` call. The results
    equal that call on the whole table.

    Parameters
    ----------
    ddf : dask.dataframe.DataFrame
        Points table with coordinate columns ``x``, ``y``, optional ``weight``, and ``by``.
    kernel : str
        One of ``"weber_point"``, ``"minimax_point"``, ``"enclosing_circle"``,
        ``"enclosing_ellipse"``, ``"spanning_tree"``, ``"steiner_tree"``.
    x, y, weight, by : str
        Column names. Group labels may be of any hashable type.
    **options
        Passed to the kernel (for example ``tol=1e-8``).

    Returns
    -------
    dask.dataframe.DataFrame
        Lazy; columns as :func:`result_frame`, with the group column ``by``.

    Examples
    --------
    >>> import pandas as pd, dask.dataframe as dd
    >>> import placewise.cluster as pc
    >>> table = pd.DataFrame({"x": [0, 4, 2, 9.0], "y": [0, 0, 4, 9.0], "town": ["a", "a", "a", "b"]})
    >>> out = pc.grouped(dd.from_pandas(table, npartitions=2), "weber_point", x="x", y="y", by="town")
    >>> out.compute(scheduler="sync").set_index("town").sort_index()["cost"].round(6).to_dict()
    {'a': 7.464102, 'b': 0.0}
    """
    _require_dask()
    _kernel(kernel)
    for column in [x, y, by] + ([weight] if weight else []):
        if column not in ddf.columns:
            raise InputError(f"column {column!r} not found; the frame has {list(ddf.columns)}")
    meta = _meta_frame(kernel, ddf._meta[by].dtype, weight is not None, by, options)
    shuffled = ddf.shuffle(on=by)
    run = functools.partial(
        _run_partition, kernel=kernel, x=x, y=y, weight=weight, by=by, options=options, meta=meta
    )
    return shuffled.map_partitions(run, meta=meta)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class DistributedAllocation(Result):
    """Nearest-site allocation of a distributed table.

    Attributes
    ----------
    frame : dask.dataframe.DataFrame
        The input rows with ``site`` (index into ``sites``) and ``distance`` columns (lazy).
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
        part["distance"] = np.zeros(0)
        return part
    w = part[weight].to_numpy(dtype=np.float64) if weight else None
    allocation = placewise.nearest_site(part[[x, y]].to_numpy(dtype=np.float64), sites, w)
    part["site"] = np.asarray(allocation.index, dtype=np.int64)
    part["distance"] = np.asarray(allocation.distance)
    return part


def _partition_totals(part: Any, site_count: int, weight: str | None) -> tuple[np.ndarray, float]:
    w = part[weight].to_numpy(dtype=np.float64) if weight else np.ones(len(part))
    index = part["site"].to_numpy()
    load = np.bincount(index, weights=w, minlength=site_count) if len(part) else np.zeros(site_count)
    return load, float(np.sum(w * part["distance"].to_numpy()))


def _reduce_totals(totals: list[tuple[np.ndarray, float]]) -> tuple[np.ndarray, float]:
    loads = [t[0] for t in totals]
    return np.sum(loads, axis=0), float(np.sum([t[1] for t in totals]))


def nearest_site(ddf: Any, sites: Any, *, x: str, y: str, weight: str | None = None) -> DistributedAllocation:
    """Allocate every row of a Dask DataFrame to its nearest site; loads reduced across partitions.

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
    meta["distance"] = np.zeros(0)
    frame = ddf.map_partitions(_allocate_partition, site_array, x, y, weight, meta=meta)
    totals = [dask.delayed(_partition_totals)(part, len(site_array), weight) for part in frame.to_delayed()]
    reduced = dask.delayed(_reduce_totals)(totals)
    return DistributedAllocation(frame, reduced[0], reduced[1])
