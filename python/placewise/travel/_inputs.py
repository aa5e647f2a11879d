"""The travel graph's input: direction codes, line shapes, GeoDataFrame columns, and the
errors its siting raises, named by position or by the caller's row labels."""

from __future__ import annotations

from typing import Any

import numpy as np

from .._core import InputError
from .._errors import plain
from .._units import check_on_earth, length_unit_of

_ONE_WAY_WORDS = {"both": 0, "forward": 1, "backward": -1}
_MODELS = ("evaluate_sites", "p_median", "p_center", "cover_all", "cover_most")


def _input_error(argument: str, message: str, row: Any = None) -> InputError:
    error = InputError(message)
    error.argument = argument
    error.row = row
    return error


def _shown(rows: Any, labels: Any = None) -> str:
    """Up to ten rows, by position or by their labels, for a message."""
    names = [repr(r) if labels is None else repr(plain(labels[r])) for r in (int(x) for x in rows[:10])]
    return ", ".join(names) + (", ..." if len(rows) > 10 else "")


def _unreached_error(lost: np.ndarray, weight: float, labels: Any = None) -> InputError:
    """The points no candidate reaches (positions ``lost``), named by position or by
    ``labels``; ``error.relabel(row_labels)`` restates it with the caller's row labels."""
    error = _input_error(
        "points",
        f"points[{_shown(lost, labels)}]: no candidate reaches {len(lost)} point(s) (weight {weight:g}) "
        f"(another component, one-way streets or beyond the limit); drop them or add candidates there",
        int(lost[0]) if labels is None else plain(labels[int(lost[0])]))
    error.relabel = lambda names: _unreached_error(lost, weight, names.get("points"))  # type: ignore[attr-defined]
    return error


def _missing_pair_error(i: int, j: int, others: int, reason: str, labels: Any = None,
                        candidate_labels: Any = None) -> InputError:
    """A candidate without a cost to a point (positions ``j`` and ``i``) that the discrete
    model needs; ``error.relabel(row_labels)`` restates it with the caller's row labels."""
    candidate = j if candidate_labels is None else plain(candidate_labels[j])
    point = i if labels is None else plain(labels[i])
    error = _input_error(
        "costs",
        f"candidate {candidate!r} cannot reach points[{point!r}] (and {others} other pairs); "
        f"the discrete models need a cost for every pair they are given: {reason}",
        point)
    error.relabel = lambda names: _missing_pair_error(  # type: ignore[attr-defined]
        i, j, others, reason, names.get("points"), names.get("candidates"))
    return error


def _one_way_codes(one_way: Any, labels: Any = None) -> np.ndarray | None:
    """Direction codes 0 / 1 / -1 from booleans (True: forward only), integers or the words
    ``"both"``, ``"forward"``, ``"backward"``; anything else is refused naming its row."""
    if one_way is None:
        return None
    values = np.asarray(one_way)
    if values.dtype.kind == "b":
        return values.astype(np.int64)
    if values.dtype.kind in "iu":
        return values.astype(np.int64)
    codes = np.empty(len(values), dtype=np.int64)
    for row, value in enumerate(values.tolist()):
        if isinstance(value, str) and value.lower() in _ONE_WAY_WORDS:
            codes[row] = _ONE_WAY_WORDS[value.lower()]
        elif isinstance(value, bool):
            codes[row] = int(value)
        elif isinstance(value, (int, float)) and not isinstance(value, bool) and float(value) in (0.0, 1.0, -1.0):
            codes[row] = int(value)
        else:
            name = row if labels is None else labels[row]
            raise _input_error(
                "one_way",
                f"one_way[{name!r}]: unknown direction {value!r}; expected True/False, 0/1/-1 or "
                f"'both'/'forward'/'backward'",
                name,
            )
    return codes


def _ragged_lines(lines: Any, labels: Any = None) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]:
    """Coordinates and offsets of a sequence of lines (shapely LineStrings or
    MultiLineStrings, or ``(k, 2)`` arrays), and for rows of several parts the parts of every
    row (row ``r`` is lines ``parts[r]:parts[r + 1]``; None when every row is one line). A
    geometry that is not a line is refused naming its row (its label in ``labels`` when
    given); an empty one passes through with no coordinates (or no parts), for the core to
    refuse by row as it refuses any line of fewer than two points."""
    items = list(lines)
    parts = None
    if any(hasattr(item, "geom_type") or item is None for item in items):
        import shapely

        geoms = np.asarray(items, dtype=object)
        for row, g in enumerate(geoms):
            if g is None or g.geom_type not in ("LineString", "LinearRing", "MultiLineString"):
                kind = "missing" if g is None else g.geom_type
                name = row if labels is None else labels[row]
                raise _input_error("lines", f"lines[{name!r}]: expected a LineString or MultiLineString; got {kind}",
                                   name)
        if any(g.geom_type == "MultiLineString" for g in geoms):
            # Every part its own line; ``parts`` maps them back to their rows.
            pieces, owner = shapely.get_parts(geoms, return_index=True)
            parts = np.zeros(len(geoms) + 1, dtype=np.int64)
            np.cumsum(np.bincount(owner, minlength=len(geoms)), out=parts[1:])
            geoms = pieces
        coords, index = shapely.get_coordinates(geoms, return_index=True)
        counts = np.bincount(index, minlength=len(geoms))
    else:
        arrays = [np.asarray(item, dtype=np.float64).reshape(-1, 2) if np.size(item) else np.empty((0, 2))
                  for item in items]
        counts = np.array([len(a) for a in arrays], dtype=np.int64)
        coords = np.concatenate(arrays) if arrays else np.empty((0, 2))
    offsets = np.zeros(len(counts) + 1, dtype=np.int64)
    np.cumsum(counts, out=offsets[1:])
    return np.ascontiguousarray(coords, dtype=np.float64), offsets, parts


def _in_degrees(lines: Any) -> Any:
    """Lines (GeoDataFrame or GeoSeries) in a geographic CRS whose angles are not degrees
    (grads, radians) transformed to WGS84 longitude/latitude in degrees (EPSG:4326), which the
    geodesic lengths read; other lines as they are."""
    crs = lines.crs
    if crs is None or not crs.is_geographic:
        return lines
    check_on_earth(crs, "lines")
    if all(axis.unit_name.lower() == "degree" for axis in crs.axis_info):
        return lines
    return lines.to_crs("EPSG:4326")


def _frame_lines(frame: Any, cost: Any, reverse_cost: Any, one_way: Any) -> tuple[Any, ...]:
    """A GeoDataFrame's lines and columns (a column name or values), its CRS's length unit."""
    frame = _in_degrees(frame)
    crs = frame.crs
    unit = length_unit_of(crs)

    def column(value: Any) -> Any:
        return frame[value].to_numpy() if isinstance(value, str) else value

    return (list(frame.geometry.values), column(cost), column(reverse_cost), column(one_way), unit, crs,
            frame.index.to_numpy())
