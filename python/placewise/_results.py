"""Small frozen result objects shared by every family, and the one table contract.

Results hold plain numpy arrays (made read-only) and Python scalars. Their ``repr``
shows scalars in full and arrays by shape (with values when small), so a result printed
in a notebook reads at a glance.

Every result knows its rows:

* ``to_frame()`` gives a pandas DataFrame with named columns whose units are stated in
  the name (``cost_m``, ``distance_m``, ``area_m2``; see :attr:`Result.unit`);
* ``to_geodataframe(crs=...)`` gives a GeoDataFrame where the result has geometry, so
  ``.explore()`` and every file writer work on it directly;
* ``summary()`` gives the totals (a plan's cost, a tree's length and saving) as a frame:
  totals are data, never only attributes that a file writer would drop.

Grouped results (from ``groups=``) are sized, iterable and indexable by group label,
returning the single result of that group; their frames carry a ``group`` column and a
``problem`` column (``None``, or why the group was skipped with ``errors="skip"``).
Column names never shadow a GeoDataFrame member (no bare ``area``, ``length`` or
``distance``).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Iterator
from typing import Any

import numpy as np

from ._errors import restate_problems

__all__ = ["Grouped", "Result", "as_points"]

_SMALL = 6


def _freeze(value: Any) -> Any:
    if isinstance(value, np.ndarray):
        value = np.asarray(value)
        value.flags.writeable = False
    return value


def _show(value: Any) -> str:
    if isinstance(value, np.ndarray):
        if value.size <= _SMALL and value.dtype != object:
            return np.array2string(value, precision=6, separator=", ", suppress_small=False).replace("\n", "")
        return f"<{value.dtype} array {value.shape}>"
    if isinstance(value, float):
        return f"{value:.6g}"
    return repr(value)


def as_points(points: Any) -> np.ndarray:
    """The points as an ``(n, 2)`` float64 array, a view when no conversion is needed.

    The one points-to-array helper of the Python package: call it only after the compiled
    kernel accepted ``points`` (it validated shape and values), so the conversion succeeds.
    """
    return np.ascontiguousarray(points, dtype=np.float64).reshape(-1, 2).view()


def _require_pandas() -> Any:
    try:
        import pandas as pd
    except ImportError as exc:  # pragma: no cover - depends on the environment
        raise ImportError("to_frame needs pandas (pip install 'placewise[geo]')") from exc
    return pd


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Result:
    """Base of every result object: frozen fields, read-only arrays, a readable repr.

    Attributes
    ----------
    unit : str
        Name of the coordinates' length unit, used in column names: ``"m"`` gives
        ``distance_m`` and ``area_m2``. The default ``"u"`` stands for "the unit of the
        input coordinates"; the GeoPandas layer sets the CRS's unit.
    """

    unit: str = dataclasses.field(default="u", repr=False, kw_only=True)

    def __post_init__(self) -> None:
        for field in dataclasses.fields(self):
            object.__setattr__(self, field.name, _freeze(getattr(self, field.name)))

    def __repr__(self) -> str:
        # Optional fields left at their default None (a region's fields without a region) are
        # not shown.
        shown = ", ".join(
            f"{f.name}={_show(getattr(self, f.name))}"
            for f in dataclasses.fields(self)
            if f.repr and not (f.default is None and getattr(self, f.name) is None)
        )
        return f"{type(self).__name__}({shown})"

    # ------------------------------------------------------------------ table contract

    def _u(self, name: str, power: int = 1) -> str:
        """A column name with its unit: ``_u("area", 2)`` is ``area_m2`` when the unit is m."""
        return f"{name}_{self.unit}" + (str(power) if power != 1 else "")

    def _columns(self) -> dict[str, Any]:
        """The result's rows as named columns (every family defines its own)."""
        raise NotImplementedError

    def _geometry(self) -> Any:
        """One shapely geometry per row of :meth:`_columns` (families with geometry only)."""
        raise TypeError(f"{type(self).__name__} has no geometry; use to_frame()")

    def to_frame(self) -> Any:
        """The result's rows as a pandas DataFrame, units stated in the column names."""
        pd = _require_pandas()
        return pd.DataFrame(self._columns())

    def summary(self) -> Any:
        """The totals as a one-row DataFrame (for one-row results, the same as ``to_frame``)."""
        return self.to_frame()

    def to_geodataframe(self, crs: Any = None) -> Any:
        """The rows of :meth:`to_frame` with their geometry, as a GeoDataFrame in ``crs``."""
        try:
            import geopandas as gpd
        except ImportError as exc:  # pragma: no cover - depends on the environment
            raise ImportError("to_geodataframe needs geopandas (pip install 'placewise[geo]')") from exc
        geometry = self._geometry()
        return gpd.GeoDataFrame(self._columns(), geometry=gpd.GeoSeries(geometry, crs=crs).values, crs=crs)

    def _plot_axes(self, ax: Any) -> Any:
        """The matplotlib axes to draw on (matplotlib is imported only when plotting)."""
        if ax is None:
            import matplotlib.pyplot as plt

            _, ax = plt.subplots()
            ax.set_aspect("equal")
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Grouped(Result):
    """Base of results of many groups (``groups=``), in sorted label order.

    Sized, iterable (single results in label order) and indexable by label
    (``trees[7]`` is group 7's tree). A group skipped with ``errors="skip"`` keeps its
    place: its ``problem`` says why, its values are NaN (or empty), indexing it raises
    ``InputError`` with that reason, and iterating yields ``None`` in its place (so that
    ``zip(result.labels, result)`` stays aligned and the solved groups stay reachable).

    Attributes
    ----------
    labels : ndarray of int64, shape (G,)
        Sorted unique group labels.
    problem : ndarray of object, shape (G,)
        ``None`` for a solved group; the reason for a skipped one.
    """

    labels: np.ndarray
    problem: np.ndarray = dataclasses.field(repr=False)
    # The kernel's structured errors (None where solved), for restating them in the
    # user's own group and row names (placewise.gis, placewise.cluster).
    problem_detail: tuple[Any, ...] = dataclasses.field(repr=False, kw_only=True, default=())

    @classmethod
    def _from_core(cls, fields: dict[str, Any], **extra: Any) -> Any:
        """Build from a binding's named fields (``labels``, ``problem`` = details, ...)."""
        details = tuple(fields.pop("problem"))
        return cls(**fields, **extra, problem=restate_problems(details), problem_detail=details)

    def __len__(self) -> int:
        return len(self.labels)

    def __iter__(self) -> Iterator[Any]:
        for position in range(len(self)):
            yield None if self.problem[position] is not None else self._item(position)

    def __getitem__(self, label: Any) -> Any:
        position = self.position(label)
        return self._solved(position)

    def __contains__(self, label: Any) -> bool:
        try:
            self.position(label)
        except KeyError:
            return False
        return True

    def position(self, label: Any) -> int:
        """Position of group ``label`` in :attr:`labels`; ``KeyError`` when absent."""
        try:
            key = int(label)
        except (TypeError, ValueError):
            raise KeyError(label) from None
        position = int(np.searchsorted(self.labels, key))
        if position == len(self.labels) or int(self.labels[position]) != key or key != label:
            raise KeyError(label)
        return position

    def _within(self, rows: np.ndarray, row_group: np.ndarray, position: int) -> np.ndarray:
        """Input rows of the group at ``position`` as positions within its own points (what a
        separate call on that group's rows would report); -1 stays -1.

        ``row_group`` is the group position of every input row; a group's points keep their
        input order, so its ``k``-th point is its ``k``-th member row."""
        members = np.flatnonzero(np.asarray(row_group) == position)
        rows = np.asarray(rows)
        return np.where(rows >= 0, np.searchsorted(members, rows), -1).astype(np.int64)

    @staticmethod
    def _row_groups_of(labels: np.ndarray, groups: Any) -> np.ndarray:
        """The group position of every input row, from the sorted labels and the ``groups=``
        argument the kernel accepted (it refuses labels beyond int64, so the cast is exact)."""
        return np.searchsorted(labels, np.asarray(groups).astype(np.int64).ravel())

    @property
    def skipped(self) -> np.ndarray:
        """Boolean mask of the groups skipped with ``errors="skip"``."""
        return np.array([p is not None for p in self.problem], dtype=bool)

    def _solved(self, position: int) -> Any:
        if self.problem[position] is not None:
            from ._core import InputError

            raise InputError(f"group {int(self.labels[position])} was skipped: {self.problem[position]}")
        return self._item(position)

    def _item(self, position: int) -> Any:
        """The single result of the group at ``position`` (every family defines its own)."""
        raise NotImplementedError

    def _row_groups(self) -> np.ndarray:
        """Group position of every row of :meth:`_columns` (one row per group by default)."""
        return np.arange(len(self))

    def _framed(self, columns: dict[str, Any], geometry: Any = None, crs: Any = None, rows: Any = None) -> Any:
        """``columns`` with ``group`` and ``problem`` in front; a skipped group with no rows
        of its own keeps one row holding its problem. ``rows`` is the group position of every
        row (default :meth:`_row_groups`), for a result's second table (a plan's sites)."""
        pd = _require_pandas()
        rows = self._row_groups() if rows is None else np.asarray(rows)
        data = {"group": self.labels[rows], "problem": self.problem[rows], **columns}
        if geometry is not None:
            import geopandas as gpd

            frame = gpd.GeoDataFrame(data, geometry=gpd.GeoSeries(geometry, crs=crs).values, crs=crs)
        else:
            frame = pd.DataFrame(data)
        missing = np.setdiff1d(np.flatnonzero(self.skipped), rows)
        if len(missing):
            extra = pd.DataFrame({"group": self.labels[missing], "problem": self.problem[missing]})
            frame = pd.concat([frame, extra], ignore_index=True)
            order = np.argsort(frame["group"].to_numpy(), kind="stable")
            frame = frame.iloc[order].reset_index(drop=True)
            if geometry is not None:
                import geopandas as gpd

                frame = gpd.GeoDataFrame(frame, geometry=frame.geometry.name, crs=crs)
        return frame

    def to_frame(self) -> Any:
        """Rows of every group with ``group`` and ``problem`` columns, units in the names."""
        return self._framed(self._columns())

    def to_geodataframe(self, crs: Any = None) -> Any:
        """The rows of :meth:`to_frame` with their geometry, as a GeoDataFrame in ``crs``."""
        try:
            import geopandas  # noqa: F401
        except ImportError as exc:  # pragma: no cover - depends on the environment
            raise ImportError("to_geodataframe needs geopandas (pip install 'placewise[geo]')") from exc
        return self._framed(self._columns(), self._geometry(), crs)
