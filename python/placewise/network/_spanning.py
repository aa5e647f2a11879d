"""The Euclidean minimum spanning tree: SpanningTree, SpanningTrees, spanning_tree."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._errors import check_errors
from .._results import Grouped, Result, _require_pandas, as_points
from ._edges import _edge_groups, _Edges, _group_summary, _plot, _summary_columns


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SpanningTree(_Edges, Result):
    """A Euclidean minimum spanning tree.

    Attributes
    ----------
    end_a, end_b : ndarray of int64, shape (n - 1,)
        The input rows each edge joins, smaller first; edges by non-decreasing length.
    edge_length : ndarray, shape (n - 1,)
        Length of each edge.
    length : float
        Total length.

    ``to_frame()`` has one row per edge: ``end_a``, ``end_b``, ``length_<unit>``;
    ``to_geodataframe()`` adds each edge as a LineString. ``summary()`` has one row:
    ``length_<unit>``, ``mst_length_<unit>`` (the same), ``saving`` (0), ``junctions`` (0)
    and ``edges`` (count), the columns of :meth:`SteinerTree.summary` without ``optimal``.
    """

    end_a: np.ndarray
    end_b: np.ndarray
    edge_length: np.ndarray
    length: float
    points: np.ndarray = dataclasses.field(repr=False)

    def summary(self) -> Any:
        """The tree's totals as a one-row DataFrame."""
        columns = _summary_columns(self, self.length, self.length, 0.0, 0, len(self.end_a))
        return _require_pandas().DataFrame(columns)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the edges and the points on matplotlib axes (new axes when ``ax`` is None)."""
        return _plot(self, ax, self._segments(), self.points, None, style)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SpanningTrees(_Edges, Grouped):
    """Minimum spanning trees of many groups, sorted by label.

    ``len``, iteration and ``trees[label]`` give each group's :class:`SpanningTree` (its
    ends are rows of the whole input). ``to_frame()`` has one row per edge, with ``group``
    and ``problem`` before the columns of :class:`SpanningTree`; ``summary()`` one row per
    group.

    Attributes
    ----------
    labels : ndarray, shape (G,)
        Sorted unique group labels.
    edge_offsets : ndarray of int64, shape (G + 1,)
        Group ``g``'s edges are ``edge_offsets[g]:edge_offsets[g + 1]``.
    end_a, end_b : ndarray of int64, shape (E,)
        Input rows (of the whole point set), smaller first.
    edge_length : ndarray, shape (E,)
    length : ndarray, shape (G,)
        Total length per group (NaN for a skipped group, which has no edges).
    """

    edge_offsets: np.ndarray
    end_a: np.ndarray
    end_b: np.ndarray
    edge_length: np.ndarray
    length: np.ndarray
    points: np.ndarray = dataclasses.field(repr=False)
    # Group position of every input row (to give each group's tree in its own row numbers).
    row_group: np.ndarray = dataclasses.field(repr=False)

    def _item(self, position: int) -> SpanningTree:
        # What a separate call on the group's rows gives: ends as positions within the group.
        edges = slice(self.edge_offsets[position], self.edge_offsets[position + 1])
        return SpanningTree(
            self._within(self.end_a[edges], self.row_group, position),
            self._within(self.end_b[edges], self.row_group, position),
            self.edge_length[edges].copy(), float(self.length[position]),
            self.points[self.row_group == position], unit=self.unit,
        )

    def _row_groups(self) -> np.ndarray:
        return _edge_groups(self.edge_offsets)

    def summary(self) -> Any:
        """One row per group: ``group``, ``problem`` and the totals of :meth:`SpanningTree.summary`."""
        saving = np.where(self.skipped, np.nan, 0.0)
        columns = _summary_columns(self, self.length, self.length, saving, np.zeros(len(self), np.int64),
                                   np.diff(self.edge_offsets))
        return _group_summary(self, columns)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw every group's edges."""
        return _plot(self, ax, self._segments(), self.points, None, style)


@overload
def spanning_tree(
    points: ArrayLike, *, groups: None = None, errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] = False,
) -> SpanningTree: ...


@overload
def spanning_tree(
    points: ArrayLike, *, groups: ArrayLike, errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] | None = False,
) -> SpanningTrees: ...


def spanning_tree(
    points: ArrayLike, *, groups: ArrayLike | None = None, errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] | None = False,
) -> SpanningTree | SpanningTrees:
    """The Euclidean minimum spanning tree: the shortest network of straight links between sites.

    Kruskal's algorithm (Kruskal 1956) on the Delaunay edges (the Euclidean MST is a
    subgraph of the Delaunay triangulation: Shamos and Hoey 1975). Repeated locations are
    joined by zero-length edges; collinear points give the chain along their line.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Site locations (planar coordinates).
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: one tree per group (in parallel), returned as ``SpanningTrees``.
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without an answer (smallest
        label); ``"skip"`` keeps such a group with its ``problem`` and solves the rest.
    progress : bool or callable
        True shows a progress bar on stderr; a callable is called as ``progress(done, total)``
        from the calling thread: a step per point, counted as the strip holding it is
        triangulated, then one per Delaunay edge Kruskal's algorithm takes up; with ``groups``,
        the points of finished groups. Ctrl-C (or an exception from the callable) stops the run
        within a fraction of a second and raises ``KeyboardInterrupt`` (grouped: groups not
        begun are skipped, and a large group stops as an ungrouped run does); there is no
        partial tree and no time limit.

    Returns
    -------
    SpanningTree, or SpanningTrees when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes or an empty point set; its ``group`` and
        ``row`` name the group label and input row concerned.

    Examples
    --------
    >>> import placewise as pw
    >>> t = pw.spanning_tree([[0, 0], [1, 0], [0, 1], [1, 1]])
    >>> t.length                      # three unit links
    3.0
    >>> t.to_frame()
       end_a  end_b  length_u
    0      1      3       1.0
    1      2      3       1.0
    2      0      2       1.0
    >>> len(pw.spanning_tree([[2, 3]]).end_a)   # one site: no links
    0

    Grouped, with a two-point group (one link) and a one-point group (none); the ends are
    rows of the whole input:

    >>> trees = pw.spanning_tree([[0, 0], [9, 9], [3, 4], [5, 5]], groups=[1, 2, 1, 3])
    >>> len(trees), trees[1].length
    (3, 5.0)
    >>> trees.to_frame()
       group problem  end_a  end_b  length_u
    0      1    None      0      2       5.0
    >>> trees.summary()[["group", "length_u", "edges"]]
       group  length_u  edges
    0      1       5.0      1
    1      2       0.0      0
    2      3       0.0      0

    See Also
    --------
    steiner_tree : shorter networks with added junctions.
    """
    check_errors(errors)
    if groups is None:
        return SpanningTree(**_core.spanning_tree_single(points, progress), points=as_points(points))
    fields = _core.spanning_tree_grouped(points, groups, errors, progress)
    return SpanningTrees._from_core(
        fields, points=as_points(points), row_group=Grouped._row_groups_of(fields["labels"], groups)
    )
