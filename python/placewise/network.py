"""Networks linking sites: the Euclidean minimum spanning tree and the Euclidean Steiner tree."""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._results import Result

__all__ = ["SpanningTree", "SpanningTrees", "SteinerTree", "SteinerTrees", "spanning_tree", "steiner_tree"]


def _draw_edges(ax: Any, nodes: np.ndarray, edges: np.ndarray, style: dict[str, Any]) -> None:
    from matplotlib.collections import LineCollection

    if len(edges):
        ax.add_collection(LineCollection(nodes[edges], **{"colors": "steelblue", "linewidths": 1.2, **style}))
    ax.autoscale_view()


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SpanningTree(Result):
    """A Euclidean minimum spanning tree.

    Attributes
    ----------
    edges : ndarray of int64, shape (n - 1, 2)
        Pairs of input rows (smaller first), by non-decreasing length.
    edge_length : ndarray, shape (n - 1,)
        Length of each edge.
    length : float
        Total length.
    """

    edges: np.ndarray
    edge_length: np.ndarray
    length: float
    points: np.ndarray = dataclasses.field(repr=False)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the edges (and the points) on matplotlib axes (new axes when ``ax`` is None)."""
        ax = self._plot_axes(ax)
        _draw_edges(ax, self.points, self.edges, style)
        ax.plot(self.points[:, 0], self.points[:, 1], "o", color="black", markersize=3)
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SpanningTrees(Result):
    """Minimum spanning trees of many groups, sorted by label.

    Attributes
    ----------
    labels : ndarray, shape (G,)
        Sorted unique group labels.
    edge_offsets : ndarray of int64, shape (G + 1,)
        Group ``g``'s edges are ``edges[edge_offsets[g]:edge_offsets[g + 1]]``.
    edges : ndarray of int64, shape (E, 2)
        Pairs of input rows (of the whole point set).
    edge_length : ndarray, shape (E,)
    length : ndarray, shape (G,)
        Total length per group.
    """

    labels: np.ndarray
    edge_offsets: np.ndarray
    edges: np.ndarray
    edge_length: np.ndarray
    length: np.ndarray
    points: np.ndarray = dataclasses.field(repr=False)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw every group's edges."""
        ax = self._plot_axes(ax)
        _draw_edges(ax, self.points, self.edges, style)
        ax.plot(self.points[:, 0], self.points[:, 1], "o", color="black", markersize=2)
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SteinerTree(Result):
    """A Euclidean Steiner tree: junctions (Steiner points) of three edges at 120°.

    Attributes
    ----------
    nodes : ndarray, shape (m, 2)
        The input points in input order, then the Steiner points.
    terminal_count : int
        How many of ``nodes`` are input points.
    edges : ndarray of int64, shape (m - 1, 2)
        Pairs of node indices.
    length : float
        Total length.
    mst_length : float
        Length of the minimum spanning tree of the input points.
    saving : float
        ``1 - length / mst_length``.
    optimal : bool
        True only when the tree is proven to be a Steiner minimum tree.
    """

    nodes: np.ndarray
    terminal_count: int
    edges: np.ndarray
    length: float
    mst_length: float
    saving: float
    optimal: bool

    @property
    def steiner_points(self) -> np.ndarray:
        """The added junctions, shape (m - terminal_count, 2)."""
        return self.nodes[self.terminal_count:]

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the edges, the input points (dots) and the Steiner points (open squares)."""
        ax = self._plot_axes(ax)
        _draw_edges(ax, self.nodes, self.edges, style)
        t = self.nodes[: self.terminal_count]
        s = self.steiner_points
        ax.plot(t[:, 0], t[:, 1], "o", color="black", markersize=3)
        ax.plot(s[:, 0], s[:, 1], "s", markerfacecolor="none", markeredgecolor="crimson", markersize=4)
        return ax


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SteinerTrees(Result):
    """Steiner trees of many groups, sorted by label.

    Group ``g``'s nodes are ``nodes[node_offsets[g]:node_offsets[g + 1]]`` — its input
    points in input order, then its Steiner points — and its edges,
    ``edges[edge_offsets[g]:edge_offsets[g + 1]]``, index into those nodes.

    Attributes
    ----------
    labels : ndarray, shape (G,)
    node_offsets : ndarray of int64, shape (G + 1,)
    nodes : ndarray, shape (M, 2)
    terminal_count : ndarray of int64, shape (G,)
    edge_offsets : ndarray of int64, shape (G + 1,)
    edges : ndarray of int64, shape (E, 2)
    length, mst_length, saving : ndarray, shape (G,)
    optimal : ndarray of bool, shape (G,)
    """

    labels: np.ndarray
    node_offsets: np.ndarray
    nodes: np.ndarray
    terminal_count: np.ndarray
    edge_offsets: np.ndarray
    edges: np.ndarray
    length: np.ndarray
    mst_length: np.ndarray
    saving: np.ndarray
    optimal: np.ndarray

    def __len__(self) -> int:
        return len(self.labels)

    def __getitem__(self, g: int) -> SteinerTree:
        """Group ``g``'s tree (by position in ``labels``) as a ``SteinerTree``."""
        n0, n1 = self.node_offsets[g], self.node_offsets[g + 1]
        e0, e1 = self.edge_offsets[g], self.edge_offsets[g + 1]
        return SteinerTree(
            self.nodes[n0:n1].copy(), int(self.terminal_count[g]), self.edges[e0:e1].copy(),
            float(self.length[g]), float(self.mst_length[g]), float(self.saving[g]), bool(self.optimal[g]),
        )

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw every group's tree."""
        ax = self._plot_axes(ax)
        for g in range(len(self)):
            self[g].plot(ax, **style)
        return ax


def _as_points(points: ArrayLike) -> np.ndarray:
    return np.ascontiguousarray(points, dtype=np.float64).reshape(-1, 2)


def spanning_tree(points: ArrayLike, *, groups: ArrayLike | None = None) -> SpanningTree | SpanningTrees:
    """The Euclidean minimum spanning tree: the shortest network of straight links between sites.

    Kruskal's algorithm on the Delaunay edges (the Euclidean MST is a subgraph of the
    Delaunay triangulation). Repeated locations are joined by zero-length edges; collinear
    points give the chain along their line.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Site locations (planar coordinates).
    groups : array_like of int, shape (n,), optional
        Group labels: one tree per group (in parallel), returned as ``SpanningTrees``.

    Returns
    -------
    SpanningTree, or SpanningTrees when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes or an empty point set.

    Examples
    --------
    >>> import placewise as pw
    >>> t = pw.spanning_tree([[0, 0], [1, 0], [0, 1], [1, 1]])
    >>> t.length                      # three unit links
    3.0
    >>> pw.spanning_tree([[2, 3]]).edges.shape   # one site: no links
    (0, 2)

    See Also
    --------
    steiner_tree : shorter networks with added junctions.
    """
    if groups is None:
        edges, edge_length, length = _core.spanning_tree_single(points)
        return SpanningTree(edges, edge_length, length, _as_points(points))
    return SpanningTrees(*_core.spanning_tree_grouped(points, groups), _as_points(points))


def steiner_tree(
    points: ArrayLike,
    *,
    exact: bool | None = None,
    seed: int = 0,
    time_limit: float | None = None,
    groups: ArrayLike | None = None,
) -> SteinerTree | SteinerTrees:
    """The Euclidean Steiner tree: the shortest network joining the sites when junctions may be added.

    Every junction (Steiner point) joins three edges at 120°. The exact method generates the
    full Steiner trees that can be part of an optimum, with the pruning tests of Winter and
    Zachariasen (1997), and concatenates them by an integer program; the heuristic inserts
    Steiner points on Delaunay triangles (Smith, Lee and Liebman 1981; Beasley 1992) and
    re-optimises their positions (Smith 1992), round after round while it pays.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Site locations (planar coordinates).
    exact : bool, optional
        True: exact (at most 64 distinct points; uniformly spread ones take about 1 ms for
        10, at most about 2 s for 20 and 25, 10 s for 30); False: heuristic; None
        (default): exact when the point count allows an answer within seconds (up to 24
        distinct points, trying for 5 s unless ``time_limit`` says otherwise), else the
        heuristic.
    seed : int
        Orders heuristic insertions of equal gain; the same seed gives the same tree.
    time_limit : float, optional
        Seconds allowed for an exact attempt; when they run out the heuristic's tree is
        returned with ``optimal=False``.
    groups : array_like of int, shape (n,), optional
        Group labels: one tree per group (in parallel), returned as ``SteinerTrees``.

    Returns
    -------
    SteinerTree, or SteinerTrees when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, an empty point set, a negative
        ``time_limit``, or ``exact=True`` with more than 64 distinct points.

    Examples
    --------
    >>> import placewise as pw
    >>> t = pw.steiner_tree([[0, 0], [1, 0], [1, 1], [0, 1]])
    >>> round(t.length, 9), len(t.steiner_points), t.optimal   # 1 + sqrt(3)
    (2.732050808, 2, True)
    >>> pw.steiner_tree([[0, 0], [1, 0], [2, 0]]).saving        # collinear: nothing to gain
    0.0

    See Also
    --------
    spanning_tree : the network without junctions.
    weber_point : the best single junction for all sites.
    """
    limit = None if time_limit is None else float(time_limit)
    if groups is None:
        return SteinerTree(*_core.steiner_tree_single(points, exact, int(seed), limit))
    return SteinerTrees(*_core.steiner_tree_grouped(points, groups, exact, int(seed), limit))
