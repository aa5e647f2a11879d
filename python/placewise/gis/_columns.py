"""Reading the caller's frame for the kernels: the frame itself, its points (or centroids),
a numeric column of it, and its ``by`` column coded as integer group labels, each error
naming the frame's own row labels.
"""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np

try:
    import geopandas as gpd
    import pandas as pd
    import shapely
except ImportError:  # pragma: no cover - exercised only without the extra
    raise ImportError("placewise.gis needs geopandas and pyproj: pip install 'placewise[geo]'") from None

from .._core import InputError
from .._errors import plain


def as_frame(obj: Any, name: str) -> Any:
    if isinstance(obj, gpd.GeoDataFrame):
        return obj
    if isinstance(obj, gpd.GeoSeries):
        return gpd.GeoDataFrame(geometry=obj)
    raise InputError(f"{name} must be a GeoDataFrame or GeoSeries; got {type(obj).__name__}")


def _points_of(frame: Any, name: str, centroids: bool) -> np.ndarray:
    geoms = frame.geometry.values
    missing = shapely.is_missing(geoms) | shapely.is_empty(geoms)
    if missing.any():
        row = plain(frame.index[int(np.argmax(missing))])
        raise InputError(f"{name}: row {row!r} has a missing or empty geometry")
    kinds = shapely.get_type_id(geoms)
    not_point = kinds != shapely.GeometryType.POINT
    if not_point.any():
        if not centroids:
            at = int(np.argmax(not_point))
            row = plain(frame.index[at])
            kind = shapely.GeometryType(int(kinds[at])).name.title()
            raise InputError(
                f"{name}: row {row!r} is a {kind}, not a Point; pass centroids=True to use the "
                "centroids of non-point geometries"
            )
        geoms = shapely.centroid(geoms)
    return np.column_stack([shapely.get_x(geoms), shapely.get_y(geoms)]).astype(np.float64)


def column(frame: Any, spec: Any, name: str, what: str) -> np.ndarray:
    """A numeric column named ``spec`` (or an array of the frame's length), as float64."""
    if isinstance(spec, str):
        if spec not in frame.columns:
            raise InputError(f"{name} has no {what} column {spec!r}; columns: {list(frame.columns)}")
        values = frame[spec]
        label = f"{what} column {spec!r}"
    else:
        values = np.asarray(spec)
        label = what
        if values.shape != (len(frame),):
            raise InputError(f"{name}: {what} must have one value per row ({len(frame)}); got shape {values.shape}")
    if pd.Series(np.asarray(values)).dtype.kind in "mM":
        # pandas would count dates and durations in nanoseconds.
        raise InputError(f"{name}: {label} holds dates or durations; convert them to numbers in a stated unit first")
    try:
        numbers = pd.to_numeric(pd.Series(np.asarray(values)), errors="raise")
    except (ValueError, TypeError) as exc:
        # Name the first value that is not a number by the frame's own row label (pandas'
        # message counts positions from 0, which name no row the caller knows).
        raw = pd.Series(np.asarray(values, dtype=object))
        try:
            failed = (pd.to_numeric(raw, errors="coerce").isna() & raw.notna()).to_numpy()
        except (ValueError, TypeError):
            failed = np.zeros(len(raw), dtype=bool)
        if failed.any():
            at = int(np.argmax(failed))
            error = InputError(f"{name}: {label} is not numeric: {plain(raw.iloc[at])!r} at row "
                               f"{plain(frame.index[at])!r}")
            error.row = plain(frame.index[at])
            raise error from None
        raise InputError(f"{name}: {label} is not numeric ({exc})") from exc
    if numbers.dtype.kind == "c":  # the cast below would drop the imaginary part with a warning only
        raise InputError(f"{name}: {label} holds complex values; it must hold real numbers")
    out = np.asarray(numbers, dtype=np.float64)
    bad = ~np.isfinite(out)
    if bad.any():
        row = plain(frame.index[int(np.argmax(bad))])
        raise InputError(f"{name}: {label} has a missing or non-finite value at row {row!r}")
    return out


@dataclasses.dataclass
class Groups:
    """A frame's ``by`` column coded as integer labels ``0..G-1`` in sorted order of its values."""

    name: str
    values: Any  # pandas Index of the G sorted group values
    codes: np.ndarray  # (n,) int64

    @property
    def counts(self) -> np.ndarray:
        return np.bincount(self.codes, minlength=len(self.values))


def groups_of(frame: Any, by: str | None, name: str) -> Groups | None:
    if by is None:
        return None
    if by not in frame.columns:
        raise InputError(f"{name} has no group column {by!r}; columns: {list(frame.columns)}")
    values = frame[by]
    if values.isna().any():
        row = plain(frame.index[int(np.argmax(values.isna().to_numpy()))])
        raise InputError(f"{name}: group column {by!r} has a missing value at row {row!r}")
    try:
        codes, uniques = pd.factorize(values, sort=True)
    except TypeError as exc:
        raise InputError(f"{name}: group column {by!r} mixes values that cannot be sorted ({exc})") from exc
    return Groups(by, pd.Index(uniques, name=by), codes.astype(np.int64))


def shared_groups(first: Any, second: Any, by: str, names: tuple[str, str]) -> tuple[Groups, np.ndarray]:
    """Code the ``by`` column of two frames (demand and sites) on the union of their values.

    Returns the first frame's :class:`Groups` (whose ``values`` are the union, so a value
    found only in the second frame is a group of its own) and the second frame's codes.
    """
    a = groups_of(first, by, names[0])
    b = groups_of(second, by, names[1])
    assert a is not None and b is not None
    try:
        values = a.values.append(b.values).unique().sort_values()
    except TypeError as exc:
        raise InputError(f"{names[0]} and {names[1]}: group column {by!r} mixes values that cannot be sorted "
                         f"({exc})") from None
    values = values.rename(by)
    first_codes = values.get_indexer(a.values.take(a.codes)).astype(np.int64)
    second_codes = values.get_indexer(b.values.take(b.codes)).astype(np.int64)
    return Groups(by, values, first_codes), second_codes
