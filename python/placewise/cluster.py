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
from ._errors import labelled, plain, restate, restate_problems
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
# Plans: the rows of their ``to_frame()`` are the input rows (indexed here by the table's
# labels), and their sites are numbered within each group.
_PLANS = {"p_median", "p_center"}
_TABLES = ("frame", "summary", "sites")
# Each row's place in the table (its partition, its position there), carried through the
# shuffle so that every group sees its points in the table's own order.
_ORDER = ["__placewise_partition", "__placewise_position"]


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
        raise InputError(f"table='sites' is only for kernels with sites (p_median, p_center); "
                         f"got {type(result).__name__}")
    return result.sites_frame()


def _call(kernel: Callable[..., Any], *args: Any, group_values: Any = None, rows: Any = None,
          **options: Any) -> Any:
    """Run a kernel on a worker; an ``InputError`` is restated in the user's terms and made
    ready to travel to the client.

    A worker pickles the error with its whole chain (``__context__`` included): the error is
    raised outside the handler, without the kernel's own error chained, keeping the message,
    the ``argument``, ``group`` and ``row`` (the user's own values) and the ``detail`` (which
    crosses as its message and attributes).
    """
    try:
        return kernel(*args, **options)
    except InputError as exc:
        error = restate(exc, group_values, rows)
    raise error


def _site_numbers(site_group: np.ndarray) -> np.ndarray:
    """Each row of a plan's sites table as its site's number within its group (0, 1, ...),
    from the rows' group labels (sorted: the table lists the groups in label order).

    A site's row in that table is what ``to_frame()["assignment"]`` holds: a position that
    means nothing outside one partition, while (group, number) does.
    """
    return np.arange(len(site_group)) - np.searchsorted(site_group, site_group, side="left")


def _solve(part: Any, kernel: str, x: str, y: str, weight: str | None, by: str, table: str, errors: str,
           options: dict[str, Any]) -> Any:
    """One partition holding whole groups: one grouped kernel call, its table in user terms."""
    import pandas as pd

    fn = _kernel(kernel)
    # The shuffle does not keep row order; restoring the table's own order (partition by
    # partition, as ``ddf.compute()`` lists the rows) makes every group see its points in the
    # order the in-memory call on the table would, whatever the partitioning and the index.
    if _ORDER[0] in part.columns:
        part = part.sort_values(_ORDER, kind="stable").drop(columns=_ORDER)
    missing = part[by].isna().to_numpy()
    if missing.any():
        row = plain(part.index[int(np.argmax(missing))])
        raise InputError(f"group column {by!r} has a missing value at row {row!r}")
    codes, uniques = pd.factorize(part[by], sort=True)
    points = part[[x, y]].to_numpy(dtype=np.float64)
    labels = part.index.to_numpy()
    rows = {"points": labels, "weights": labels}
    arguments: dict[str, Any] = dict(options)
    if weight is not None:
        arguments["weights"] = part[weight].to_numpy(dtype=np.float64)
    result = _call(fn, points, groups=codes, errors=errors, group_values=uniques, rows=rows, **arguments)
    frame = _table(result, table)
    code = frame["group"].to_numpy(dtype=np.int64)
    frame["problem"] = restate_problems(result.problem_detail, uniques, rows)[code]
    frame = frame.drop(columns=["group"])
    frame.insert(0, by, uniques.take(code))
    for name in GROUPED_KERNELS[kernel]:
        if name in frame.columns:
            frame[name] = labelled(frame[name], labels)
    if kernel in _PLANS and table == "sites":
        number = _site_numbers(code)
        frame.insert(1, "site", np.where(frame["problem"].isna().to_numpy(), number, -1))
    elif kernel in _PLANS and table == "frame":
        # One row per input row: indexed by the table's labels; the serving site by its
        # number within the group (the ``site`` column of ``table="sites"``), -1 for none.
        number = _site_numbers(result.sites_frame()["group"].to_numpy())
        at = frame["assignment"].to_numpy(dtype=np.int64)
        frame["assignment"] = np.where(at >= 0, number[np.maximum(at, 0)], -1)
        frame.index = part.index
    return frame


def _meta_frame(ddf: Any, kernel: str, weighted: bool, by: str, table: str, options: dict[str, Any]) -> Any:
    """The output's columns and dtypes, from the kernel run on a small group of our own.

    The group has ``p`` points more than five fixed ones (no three on a line), so every
    kernel finds an answer for valid options; invalid options fail here, naming the option.
    """
    import pandas as pd

    p = options.get("p", 0)
    extra = int(p) if isinstance(p, (int, np.integer)) and 0 < p < 10_000 else 0
    turn = np.arange(extra) * 2.399963  # golden-angle spiral: distinct points, none repeated
    x = np.r_[0.0, 1.0, 1.0, 0.0, 0.5, 3 + np.sqrt(turn + 1) * np.cos(turn)]
    y = np.r_[0.0, 0.0, 1.0, 1.5, 0.4, 3 + np.sqrt(turn + 1) * np.sin(turn)]
    small = pd.DataFrame({"x": x, "y": y, "w": 1.0, "g": 0})
    frame = _solve(small, kernel, "x", "y", "w" if weighted else None, "g", table, "raise", options)
    if by in frame.columns.drop("g"):
        raise InputError(f"group column {by!r} has the name of a column of the result ({list(frame.columns[1:])}); "
                         "rename it")
    frame = frame.rename(columns={"g": by}).iloc[:0]
    frame[by] = pd.Series(pd.array([], dtype=ddf._meta[by].dtype))
    frame["problem"] = frame["problem"].astype(object)
    for name in GROUPED_KERNELS[kernel]:
        if name in frame.columns:
            frame[name] = frame[name].astype(object)
    if kernel in _PLANS and table == "frame":
        frame.index = ddf._meta.index[:0]
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
    result equals that call's table on the whole table (``ddf.compute()``, its rows in that
    order: each group sees its points in the table's order, whatever the index).

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
        Lazy; the ``by`` column (the user's values), ``problem`` and the table's columns.
        Columns holding input rows (tree ends, triangle corners) hold the table's index
        labels (None for a junction end or a skipped group). For plans (``p_median``,
        ``p_center``) the sites are numbered within their group: ``table="sites"`` has a
        ``site`` column, and ``table="frame"`` (one row per input row, indexed by the
        table's labels) names each row's site by that number in ``assignment`` (-1 in a
        skipped group). Rows come partition by partition: sort them by ``by`` for a fixed
        order.

    Examples
    --------
    >>> import pandas as pd, dask.dataframe as dd
    >>> import placewise.cluster as pc
    >>> table = pd.DataFrame({"x": [0, 4, 2, 9.0], "y": [0, 0, 4, 9.0], "town": ["a", "a", "a", "b"]})
    >>> out = pc.grouped(dd.from_pandas(table, npartitions=2), "weber_point", x="x", y="y", by="town")
    >>> out.compute(scheduler="sync").set_index("town").sort_index()["cost_u"].round(6).to_dict()
    {'a': 7.464102, 'b': 0.0}
    >>> ellipses = pc.grouped(dd.from_pandas(table, npartitions=1), "enclosing_ellipse", x="x", y="y",
    ...                       by="town", errors="skip").compute(scheduler="sync")
    >>> round(float(ellipses["area_u2"].iloc[0]), 4)    # triangle area 8 x 4 pi / (3 sqrt 3)
    19.3472
    >>> ellipses["problem"].iloc[1]                     # a one-point group, kept as a row
    "group 'b': points must hold at least 3 distinct points; got 1"
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
    meta = _meta_frame(ddf, kernel, weight is not None, by, table, options)
    run = functools.partial(_solve_or_meta, kernel=kernel, x=x, y=y, weight=weight, by=by, table=table,
                            errors=errors, options=options, meta=meta)
    if any(name in ddf.columns for name in _ORDER):
        raise InputError(f"columns {_ORDER} are reserved for the row order; rename them")
    return ddf.map_partitions(_numbered).shuffle(on=by).map_partitions(run, meta=meta)


def _numbered(part: Any, partition_info: dict[str, Any] | None = None) -> Any:
    """The partition with each row's place in the table (partition number, position)."""
    number = 0 if partition_info is None else int(partition_info["number"])
    return part.assign(**{_ORDER[0]: np.full(len(part), number, dtype=np.int64),
                          _ORDER[1]: np.arange(len(part), dtype=np.int64)})


def _solve_or_meta(part: Any, meta: Any, **arguments: Any) -> Any:
    if len(part) == 0:
        return meta
    return _solve(part, **arguments)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class DistributedAllocation(Result):
    """Nearest-site allocation of a distributed table.

    Every partition is allocated by one kernel call, which gives both its rows and its
    totals (loads, counts and cost come from the kernel, summed across partitions).

    Attributes
    ----------
    frame : dask.dataframe.DataFrame
        The input rows with ``site`` (row of ``sites``) and ``distance_u`` (coordinate units)
        columns (lazy).
    load : dask.delayed.Delayed
        Summed weight per site, shape ``(k,)``, reduced across partitions (``.compute()``).
    count : dask.delayed.Delayed
        Rows served by each site, shape ``(k,)``.
    cost : dask.delayed.Delayed
        Total weighted distance (``.compute()``).
    sites : ndarray, shape (k, 2)
        The sites.

    ``sites_frame()`` (``x``, ``y``, ``load``, ``points`` per site) and ``summary()``
    (``cost_u``, ``load``, ``points``, ``sites``) compute the totals; ``to_frame()`` computes
    ``frame``.
    """

    frame: Any
    load: Any
    count: Any
    cost: Any
    sites: np.ndarray = dataclasses.field(repr=False)

    def to_frame(self) -> Any:
        """The allocated rows, computed (the whole table: mind its size)."""
        return self.frame.compute()

    def sites_frame(self) -> Any:
        """One row per site: ``x``, ``y``, ``load``, ``points`` (computed)."""
        import dask
        import pandas as pd

        load, count = dask.compute(self.load, self.count)
        return pd.DataFrame({"x": self.sites[:, 0], "y": self.sites[:, 1], "load": load, "points": count})

    def summary(self) -> Any:
        """One row: ``cost_u``, ``load`` (total weight), ``points`` (rows), ``sites`` (computed)."""
        import dask
        import pandas as pd

        load, count, cost = dask.compute(self.load, self.count, self.cost)
        return pd.DataFrame({self._u("cost"): [cost], "load": [float(np.sum(load))], "points": [int(np.sum(count))],
                             "sites": [len(self.sites)]})


def _allocate_partition(part: Any, sites: np.ndarray, x: str, y: str, weight: str | None,
                        distance: str) -> tuple[Any, np.ndarray, np.ndarray, float]:
    """One kernel call: the partition's rows with their site and distance, and its totals."""
    import placewise

    part = part.copy()
    if len(part) == 0:
        part["site"] = np.zeros(0, dtype=np.int64)
        part[distance] = np.zeros(0)
        return part, np.zeros(len(sites)), np.zeros(len(sites), dtype=np.int64), 0.0
    w = part[weight].to_numpy(dtype=np.float64) if weight else None
    # Weights all zero are valid in one partition of a valid table (another partition holds
    # the positive weight): the rows are allocated by distance alone and add no load and no
    # cost. The kernel refuses all-zero weights for a whole problem, so it gets none here.
    unweighted = w is not None and not w.any()
    labels = part.index.to_numpy()
    allocation = _call(placewise.nearest_site, part[[x, y]].to_numpy(dtype=np.float64), sites,
                       None if unweighted else w, rows={"points": labels, "weights": labels})
    points = allocation.to_frame()
    part["site"] = points["assignment"].to_numpy(dtype=np.int64)
    part[distance] = points[distance].to_numpy()
    if unweighted:
        return part, np.zeros(len(sites)), allocation.count, 0.0
    return part, allocation.load, allocation.count, float(allocation.cost)


def _reduce_totals(totals: list[tuple[Any, np.ndarray, np.ndarray, float]],
                   weight: str | None) -> tuple[np.ndarray, np.ndarray, float]:
    """Loads, counts and cost summed over the partitions (the cost by ``math.fsum``),
    refusing a table whose weights are all zero, as the in-memory call does."""
    import math

    load = np.sum([t[1] for t in totals], axis=0)
    count = np.sum([t[2] for t in totals], axis=0)
    if weight is not None and count.any() and not load.any():
        raise InputError(f"weight column {weight!r} is zero in every row; at least one weight must be positive")
    return load, count, math.fsum(t[3] for t in totals)


def nearest_site(ddf: Any, sites: Any, *, x: str, y: str, weight: str | None = None) -> DistributedAllocation:
    """Allocate every row of a Dask DataFrame to its nearest site; loads reduced across partitions.

    Each partition is allocated by one kernel call, which also gives its loads, counts and
    cost. A partition whose weights are all zero is valid (it adds nothing to the loads and
    the cost); a table whose weights are all zero is not.

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

    Warns
    -----
    UserWarning
        When ``ddf`` has a column named ``site`` or ``distance_u``, when the call is made
        (not on ``.compute()``): the result's column replaces it whatever it holds. Its
        values are not compared with the result's, which exist only once computed; drop it
        first if it is an earlier result, or rename it to keep both.

    Raises
    ------
    InputError
        Naming the table's own index label for a bad coordinate or weight (on ``.compute()``).

    Examples
    --------
    >>> import pandas as pd, dask.dataframe as dd
    >>> import placewise.cluster as pc
    >>> demand = dd.from_pandas(pd.DataFrame({"x": [0, 1, 9, 10.0], "y": [0, 0, 0, 0.0], "w": [0, 0, 1, 3.0]}),
    ...                         npartitions=2)
    >>> a = pc.nearest_site(demand, [[0, 0], [10, 0]], x="x", y="y", weight="w")   # partition 1: all zero
    >>> a.load.compute(scheduler="sync").tolist(), a.cost.compute(scheduler="sync")
    ([0.0, 4.0], 1.0)
    >>> a.summary()
       cost_u  load  points  sites
    0     1.0   4.0       4      2
    """
    _require_dask()
    import dask
    import dask.dataframe as dd

    site_array = np.ascontiguousarray(sites, dtype=np.float64)
    if site_array.ndim != 2 or site_array.shape[1] != 2 or len(site_array) == 0:
        raise InputError(f"sites must have shape (k, 2) with k >= 1; got shape {site_array.shape}")
    for column in [x, y] + ([weight] if weight else []):
        if column not in ddf.columns:
            raise InputError(f"column {column!r} not found; the frame has {list(ddf.columns)}")
    distance = "distance_u"  # the table's coordinates are planar, in their own unit
    taken = [name for name in ("site", distance) if name in ddf.columns]
    if taken:
        # Said when the graph is built, where the caller's code runs: the values are computed
        # later, partition by partition on the workers (whose warnings a distributed client
        # never shows), and comparing them here would compute the table. So the warning
        # cannot know whether they differ, and says that the column is replaced as it is.
        import warnings

        many = len(taken) > 1
        warnings.warn(f"ddf: the result will replace your column{'s' if many else ''} {', '.join(map(repr, taken))} "
                      f"whatever {'they hold' if many else 'it holds'} (the result is computed later, partition by "
                      f"partition, and not compared with {'them' if many else 'it'}); drop "
                      f"{'them' if many else 'it'} first if {'they are' if many else 'it is'} an earlier result, or "
                      f"rename {'them' if many else 'it'} to keep both", UserWarning, stacklevel=2)
    meta = ddf._meta.copy()
    meta["site"] = np.zeros(0, dtype=np.int64)
    meta[distance] = np.zeros(0)
    solved = [dask.delayed(_allocate_partition)(part, site_array, x, y, weight, distance)
              for part in ddf.to_delayed()]
    frame = dd.from_delayed([part[0] for part in solved], meta=meta, divisions=ddf.divisions)
    reduced = dask.delayed(_reduce_totals)(solved, weight)
    return DistributedAllocation(frame, reduced[0], reduced[1], reduced[2], site_array)
