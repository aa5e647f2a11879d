"""Reading the caller's frame for the kernels: the frame itself (its row labels unique), its
points (or centroids), a numeric column of it, and its ``by`` column coded as integer group
labels, each error naming the frame's own row labels.
"""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np

try:
    import geopandas as gpd
    import pandas as pd
    import shapely
    from pyproj import CRS
except ImportError:  # pragma: no cover - exercised only without the extra
    raise ImportError("placewise.gis needs geopandas and pyproj: pip install 'placewise[geo]'") from None

from .._core import InputError
from .._errors import plain, refuse
from .._units import si_per_unit


def as_frame(obj: Any, name: str) -> Any:
    """The caller's frame (a GeoSeries as a GeoDataFrame of its geometry), its row labels
    checked to be unique (:func:`unique_labels`).

    Every frame argument of :mod:`placewise.gis` (demand, sites, candidates, existing sites,
    travel origins and destinations) comes through here, so the check is made once for all.
    """
    if isinstance(obj, gpd.GeoDataFrame):
        frame = obj
    elif isinstance(obj, gpd.GeoSeries):
        frame = gpd.GeoDataFrame(geometry=obj)
    else:
        refuse(name, f"{name} must be a GeoDataFrame or GeoSeries; got {type(obj).__name__}")
    unique_labels(frame.index, name, isinstance(obj, gpd.GeoSeries))
    return frame


def _label(value: Any) -> Any:
    """A row label as the user wrote it (numpy scalars as Python ones, in a tuple of a
    MultiIndex too)."""
    return tuple(plain(v) for v in value) if isinstance(value, tuple) else plain(value)


def _listed(labels: Any, limit: int = 5) -> str:
    """Up to ``limit`` labels as the user wrote them, and how many more there are."""
    shown = ", ".join(repr(_label(v)) for v in labels[:limit])
    return shown + (f" and {len(labels) - limit} more" if len(labels) > limit else "")


def unique_labels(index: Any, name: str, series: bool = False) -> None:
    """Refuse a frame (``series``: a GeoSeries) whose index repeats a label.

    Why: the results name rows by their labels (a plan's ``source_row``, a demand row's
    ``site``, a tree's ends, the rows an error names), and a repeated label would name two
    rows at once, so which parcel was chosen could not be told. The message names the
    argument and the first repeated label, and says how to number the rows afresh.
    """
    if index.is_unique:
        return
    codes = pd.factorize(index, use_na_sentinel=False)[0]
    repeated = index.duplicated(keep=False)
    at = int(np.argmax(repeated))
    first = _label(index[at])
    times = int((codes == codes[at]).sum())
    others = np.unique(codes[repeated]).size - 1
    fix = ("reset_index(drop=True)" if series else
           "reset_index() (the old labels become a column), or set a column of unique names as the index")
    more = f" (and {others} more labels repeat)" if others else ""
    error = InputError(f"{name}: row label {first!r} is used by {times} rows{more}; results name rows by their index "
                       f"label, so each must be unique: pass {name}.{fix}")
    error.argument, error.row = name, first
    raise error


def turn_of(crs: Any) -> float:
    """A whole turn of longitude in a geographic CRS's own angular unit (360 degrees, 400
    grads), read from its first axis."""
    return 2.0 * np.pi / si_per_unit(CRS(crs), default=np.pi / 180.0)


def joined_across_antimeridian(geoms: np.ndarray, turn: float) -> np.ndarray:
    """Multi-part lon/lat geometries with each part moved by whole turns of longitude
    (``turn``, in the CRS's unit) to lie beside the largest part (by area, else length):
    a polygon split at the antimeridian, as GeoJSON stores it (RFC 7946 §3.1.9), becomes one
    piece again, so that its centroid is taken where it lies (180, not 0 degrees). Parts
    already within half a turn of the largest are left as they are, as is every single-part
    geometry."""
    out = np.array(geoms, dtype=object)
    bounds = shapely.bounds(out)
    wide = np.flatnonzero((shapely.get_num_geometries(out) > 1) & (bounds[:, 2] - bounds[:, 0] > turn / 2))
    for i in wide:
        parts = shapely.get_parts(out[i])
        size = shapely.area(parts)
        if not (size > 0).any():
            size = shapely.length(parts)
        box = shapely.bounds(parts)
        middle = (box[:, 0] + box[:, 2]) / 2
        shifts = turn * np.round((middle[int(np.argmax(size))] - middle) / turn)
        if not shifts.any():
            continue
        moved = [shapely.transform(part, lambda xy, shift=shift: xy + [shift, 0.0]) if shift else part
                 for part, shift in zip(parts, shifts, strict=True)]
        out[i] = (shapely.geometrycollections(moved) if out[i].geom_type == "GeometryCollection"
                  else type(out[i])(moved))
    return out


def _points_of(frame: Any, name: str, centroids: bool) -> np.ndarray:
    """A frame's points as an ``(n, 2)`` array in its own CRS, or with ``centroids`` the
    centroids of its other geometries there (those of a geographic frame taken after
    :func:`joined_across_antimeridian`, in degrees: where a geometry lies, to choose and
    measure a working frame; metric centroids are taken in a projected CRS)."""
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
        if frame.crs is not None and CRS(frame.crs).is_geographic:
            geoms = joined_across_antimeridian(geoms, turn_of(frame.crs))
        geoms = shapely.centroid(geoms)
    return np.column_stack([shapely.get_x(geoms), shapely.get_y(geoms)]).astype(np.float64)


def column(frame: Any, spec: Any, name: str, what: str) -> np.ndarray:
    """A numeric column of ``frame`` (called ``name`` in errors) as float64: the column named
    ``spec``; a pandas Series matched to the rows by its index labels (:func:`_aligned`); or
    values by position (an array or list of the frame's length)."""
    if isinstance(spec, str):
        if spec not in frame.columns:
            raise InputError(f"{name} has no {what} column {spec!r}; columns: {list(frame.columns)}")
        values = frame[spec]
        label = f"{what} column {spec!r}"
    elif isinstance(spec, pd.Series):
        values = _aligned(frame, spec, name, what)
        label = what
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


def _aligned(frame: Any, spec: Any, name: str, what: str) -> Any:
    """The Series ``spec`` in the order of the frame's rows, matched by index label.

    Why by label: pandas matches a Series to a frame by its index (``frame.assign(w=spec)``),
    so a Series in another order, or of a frame filtered or sorted since, means its values
    for those labels; taken by position it would weigh the wrong rows without a word. Labels
    of ``spec`` that the frame lacks are left out, as pandas assignment leaves them; a row
    label ``spec`` lacks (pandas would give it NaN), or a label ``spec`` repeats (one row,
    two values), is refused, naming the labels.
    """
    labels = spec.index
    if not labels.is_unique:
        repeated = labels[labels.duplicated(keep=False)]
        error = InputError(f"{name}: the {what} Series repeats the label {_label(repeated[0])!r}, so that row would "
                           "have two values; a Series is matched to the rows by its index labels")
        error.row = _label(repeated[0])
        raise error
    missing = frame.index[~frame.index.isin(labels)]
    if len(missing):
        error = InputError(
            f"{name}: the {what} Series has no value for row label{'s' if len(missing) > 1 else ''} "
            f"{_listed(missing)}; a Series is matched to the rows by its index labels (as pandas assignment "
            "does): give it one value per row label, or pass its .to_numpy() to use its values by position")
        error.row = _label(missing[0])
        raise error
    return spec.reindex(frame.index)


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
