"""What both tree kinds share: the edge tables (ends may be junctions in a Steiner tree),
the summary columns and the drawing."""

from __future__ import annotations

from typing import Any

import numpy as np

from .._results import Grouped, Result, _require_pandas


def _end_xy(points: np.ndarray, junctions: np.ndarray, row: np.ndarray, junction: np.ndarray) -> np.ndarray:
    """Coordinates of edge ends: ``points[row]`` for an input-row end (``row >= 0``), else
    ``junctions[junction]``."""
    xy = np.empty((len(row), 2))
    is_row = row >= 0
    xy[is_row] = points[row[is_row]]
    xy[~is_row] = junctions[junction[~is_row]]
    return xy


def _edge_groups(edge_offsets: np.ndarray) -> np.ndarray:
    """Group position of every edge, from CSR offsets."""
    return np.repeat(np.arange(len(edge_offsets) - 1), np.diff(edge_offsets))


def _summary_columns(tree: Result, length: Any, mst_length: Any, saving: Any, junctions: Any, edges: Any,
                     optimal: Any = None, lower_bound: Any = None, relative_gap: Any = None) -> dict[str, Any]:
    """The per-tree totals as named columns (one entry per tree)."""
    columns = {
        tree._u("length"): np.atleast_1d(length),
        tree._u("mst_length"): np.atleast_1d(mst_length),
        "saving": np.atleast_1d(saving),
        "junctions": np.atleast_1d(junctions),
    }
    if optimal is not None:
        columns["optimal"] = np.atleast_1d(optimal)
    if lower_bound is not None:
        columns[tree._u("lower_bound")] = np.atleast_1d(lower_bound)
        columns["relative_gap"] = np.atleast_1d(relative_gap)
    columns["edges"] = np.atleast_1d(edges)
    return columns


def _group_summary(trees: Grouped, columns: dict[str, Any]) -> Any:
    """One row per group: ``group``, ``problem``, then the totals."""
    return _require_pandas().DataFrame({"group": trees.labels, "problem": trees.problem, **columns})


def _plot(result: Any, ax: Any, segments: np.ndarray, points: np.ndarray, junctions: np.ndarray | None,
          style: dict[str, Any]) -> Any:
    """The one drawing of every tree: edges (``style``), the input points above them, the
    junctions as open squares, a title with the total length, unit-labelled axes, a legend."""
    from ..plotting import INK, draw_segments, finish, quantity

    ax = result._plot_axes(ax)
    draw_segments(ax, segments[:, 0], segments[:, 1], **{"colors": "steelblue", "zorder": 3, "label": "edges",
                                                         **style})
    ax.plot(points[:, 0], points[:, 1], "o", color=INK, markersize=3.5, zorder=4, label="input points")
    if junctions is not None and len(junctions):
        ax.plot(junctions[:, 0], junctions[:, 1], "s", markerfacecolor="white", markeredgecolor="crimson",
                markeredgewidth=1.2, markersize=5, zorder=5, label="junctions (added points)")
    kind = "Steiner tree" if junctions is not None else "Minimum spanning tree"
    length = np.asarray(result.length, dtype=np.float64)
    if isinstance(result, Grouped):
        title = f"{kind}s of {len(result.labels)} groups · total length {quantity(np.nansum(length), result.unit)}"
    else:
        title = f"{kind} · length {quantity(float(length), result.unit)}"
    return finish(ax, title, result.unit)


class _Edges(Result):
    """Rows are edges: the shared table of both tree kinds, single and grouped."""

    end_a: np.ndarray
    end_b: np.ndarray
    edge_length: np.ndarray
    points: np.ndarray

    def _segments(self) -> np.ndarray:
        """The two end coordinates of every edge, shape (E, 2, 2)."""
        return np.stack([self.points[self.end_a], self.points[self.end_b]], axis=1)

    def _end_columns(self) -> dict[str, Any]:
        return {"end_a": self.end_a, "end_b": self.end_b}

    def _columns(self) -> dict[str, Any]:
        return {**self._end_columns(), self._u("length"): self.edge_length}

    def _geometry(self) -> Any:
        import shapely

        return shapely.linestrings(self._segments())


class _SteinerEdges(_Edges):
    """Edges whose ends may be junctions."""

    junctions: np.ndarray
    junction_a: np.ndarray
    junction_b: np.ndarray

    def _junction_base(self) -> Any:
        """What to add to each edge's junction numbers to index ``junctions`` (0 for one tree)."""
        return 0

    def _segments(self) -> np.ndarray:
        base = self._junction_base()
        a = _end_xy(self.points, self.junctions, self.end_a, base + self.junction_a)
        b = _end_xy(self.points, self.junctions, self.end_b, base + self.junction_b)
        return np.stack([a, b], axis=1)

    def _end_columns(self) -> dict[str, Any]:
        return {"end_a": self.end_a, "end_b": self.end_b, "junction_a": self.junction_a,
                "junction_b": self.junction_b}
