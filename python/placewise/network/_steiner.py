"""The Euclidean Steiner tree: SteinerTree, SteinerTrees, steiner_tree."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._errors import check_errors
from .._results import Grouped, Result, _require_pandas, as_points
from ._edges import _edge_groups, _group_summary, _plot, _SteinerEdges, _summary_columns


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SteinerTree(_SteinerEdges, Result):
    """A Euclidean Steiner tree: junctions (Steiner points) of three edges at 120°.

    Attributes
    ----------
    junctions : ndarray, shape (k, 2)
        The junctions added (at most ``n - 2``).
    end_a, end_b : ndarray of int64, shape (E,)
        The input row at each end of an edge, or -1 where that end is a junction. Input
        rows come before junctions, so ``end_a`` is -1 only when both ends are junctions.
    junction_a, junction_b : ndarray of int64, shape (E,)
        The junction (row of ``junctions``) at each end, or -1 where that end is an input row.
    edge_length : ndarray, shape (E,)
        Length of each edge.
    length : float
        Total length.
    mst_length : float
        Length of the minimum spanning tree of the input points.
    saving : float
        ``1 - length / mst_length`` (0 when the spanning tree has no length).
    optimal : bool
        True only when the tree is proven to be a Steiner minimum tree.
    lower_bound : float
        A proven lower bound on the length of a Steiner minimum tree (length units), at
        most ``length`` and equal to it when ``optimal``. When the exact method generated
        every full Steiner tree it is the bound of its branch and cut (the smallest LP
        bound of a search node still open); otherwise (heuristic, or the time limit ran
        out while full Steiner trees were being generated) it is ``0.824 * mst_length``,
        the Steiner ratio bound proven by Chung and Graham (1985).
    gap : float
        ``length - lower_bound`` (length units): how much longer the tree may be than a
        Steiner minimum tree.
    relative_gap : float
        ``gap / length`` (0 when the tree has no length).

    ``to_frame()`` has one row per edge: ``end_a``, ``end_b``, ``junction_a``,
    ``junction_b``, ``length_<unit>``; ``to_geodataframe()`` adds each edge as a
    LineString. ``summary()`` has one row: ``length_<unit>``, ``mst_length_<unit>``,
    ``saving``, ``junctions`` (count), ``optimal``, ``lower_bound_<unit>``,
    ``relative_gap``, ``edges`` (count).
    """

    junctions: np.ndarray
    end_a: np.ndarray
    end_b: np.ndarray
    junction_a: np.ndarray
    junction_b: np.ndarray
    edge_length: np.ndarray
    length: float
    mst_length: float
    saving: float
    optimal: bool
    lower_bound: float
    gap: float
    relative_gap: float
    points: np.ndarray = dataclasses.field(repr=False)

    def summary(self) -> Any:
        """The tree's totals as a one-row DataFrame."""
        columns = _summary_columns(self, self.length, self.mst_length, self.saving, len(self.junctions),
                                   len(self.end_a), self.optimal, self.lower_bound, self.relative_gap)
        return _require_pandas().DataFrame(columns)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the edges, the input points (dots) and the junctions (open squares), with
        the length in the title, unit-labelled axes and a legend; ``style`` goes to the edges.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import placewise as pw
        >>> ax = pw.steiner_tree([[0, 0], [2, 0], [1, 2]]).plot()
        >>> [t.get_text() for t in ax.get_legend().get_texts()]
        ['edges', 'input points', 'junctions (added points)']
        >>> pw.steiner_tree([[0, 0], [1, 0]]).plot().get_title()     # two points: one edge
        'Steiner tree · length 1 coordinate units'
        """
        return _plot(self, ax, self._segments(), self.points, self.junctions, style)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SteinerTrees(_SteinerEdges, Grouped):
    """Steiner trees of many groups, sorted by label.

    ``len``, iteration and ``trees[label]`` give each group's :class:`SteinerTree` (its
    ``end_a``/``end_b`` are rows of the whole input; its junctions are its own).
    ``to_frame()`` has one row per edge, with ``group`` and ``problem`` before the columns
    of :class:`SteinerTree`; ``summary()`` one row per group.

    Attributes
    ----------
    labels : ndarray, shape (G,)
        Sorted unique group labels.
    junction_offsets : ndarray of int64, shape (G + 1,)
        Group ``g``'s junctions are ``junctions[junction_offsets[g]:junction_offsets[g + 1]]``.
    junctions : ndarray, shape (K, 2)
    edge_offsets : ndarray of int64, shape (G + 1,)
        Group ``g``'s edges are ``edge_offsets[g]:edge_offsets[g + 1]``.
    end_a, end_b : ndarray of int64, shape (E,)
        Input rows (of the whole point set), or -1 for a junction end.
    junction_a, junction_b : ndarray of int64, shape (E,)
        Junction numbers within the edge's group, or -1 for an input-row end.
    edge_length : ndarray, shape (E,)
    length, mst_length, saving : ndarray, shape (G,)
        NaN for a skipped group (which has no junctions and no edges).
    optimal : ndarray of bool, shape (G,)
    lower_bound, gap, relative_gap : ndarray, shape (G,)
        As in :class:`SteinerTree`; NaN for a skipped group.
    """

    junction_offsets: np.ndarray
    junctions: np.ndarray
    edge_offsets: np.ndarray
    end_a: np.ndarray
    end_b: np.ndarray
    junction_a: np.ndarray
    junction_b: np.ndarray
    edge_length: np.ndarray
    length: np.ndarray
    mst_length: np.ndarray
    saving: np.ndarray
    optimal: np.ndarray
    lower_bound: np.ndarray
    gap: np.ndarray
    relative_gap: np.ndarray
    points: np.ndarray = dataclasses.field(repr=False)
    # Group position of every input row (to give each group's tree in its own row numbers).
    row_group: np.ndarray = dataclasses.field(repr=False)

    def _item(self, position: int) -> SteinerTree:
        nodes = slice(self.junction_offsets[position], self.junction_offsets[position + 1])
        edges = slice(self.edge_offsets[position], self.edge_offsets[position + 1])
        # What a separate call on the group's rows gives: ends as positions within the group.
        return SteinerTree(
            self.junctions[nodes].copy(),
            self._within(self.end_a[edges], self.row_group, position),
            self._within(self.end_b[edges], self.row_group, position),
            self.junction_a[edges].copy(), self.junction_b[edges].copy(), self.edge_length[edges].copy(),
            float(self.length[position]), float(self.mst_length[position]), float(self.saving[position]),
            bool(self.optimal[position]), float(self.lower_bound[position]), float(self.gap[position]),
            float(self.relative_gap[position]), self.points[self.row_group == position], unit=self.unit,
        )

    def _row_groups(self) -> np.ndarray:
        return _edge_groups(self.edge_offsets)

    def _junction_base(self) -> Any:
        # Junction numbers are per group: shift them to rows of the concatenated junctions.
        return self.junction_offsets[self._row_groups()]

    def summary(self) -> Any:
        """One row per group: ``group``, ``problem`` and the totals of :meth:`SteinerTree.summary`."""
        columns = _summary_columns(self, self.length, self.mst_length, self.saving,
                                   np.diff(self.junction_offsets), np.diff(self.edge_offsets), self.optimal,
                                   self.lower_bound, self.relative_gap)
        return _group_summary(self, columns)

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw every group's tree."""
        return _plot(self, ax, self._segments(), self.points, self.junctions, style)


@overload
def steiner_tree(
    points: ArrayLike,
    *,
    exact: bool | None = None,
    seed: int = 0,
    time_limit: float | None = None,
    groups: None = None,
    errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] = False,
) -> SteinerTree: ...


@overload
def steiner_tree(
    points: ArrayLike,
    *,
    exact: bool | None = None,
    seed: int = 0,
    time_limit: float | None = None,
    groups: ArrayLike,
    errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] = False,
) -> SteinerTrees: ...


def steiner_tree(
    points: ArrayLike,
    *,
    exact: bool | None = None,
    seed: int = 0,
    time_limit: float | None = None,
    groups: ArrayLike | None = None,
    errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] = False,
) -> SteinerTree | SteinerTrees:
    """The Euclidean Steiner tree: the shortest network joining the sites when junctions may be added.

    Every junction (Steiner point) joins three edges at 120°. The exact method generates the
    full Steiner trees that can be part of an optimum, with the pruning tests of Winter and
    Zachariasen (1997), and concatenates them by an integer program. The heuristic, up to
    20,000 distinct sites, builds the full Steiner trees of every set of three or four
    sites joined in the Delaunay triangulation, concatenates them greedily by their saving
    (Zachariasen and Winter 1999), then exactly within windows of about 40 sites (the whole
    set up to 150 sites); beyond 20,000 it inserts junctions on Delaunay triangles (Smith,
    Lee and Liebman 1981; Beasley 1992); both re-optimise the junctions (Smith 1992).

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Site locations (planar coordinates).
    exact : bool, optional
        True: exact (any number of points; the time grows exponentially in the worst
        case: uniformly spread ones take about 1 ms for 10, 0.1-0.6 s for 50, 0.4-9 s for
        100 and 24-37 s for 250, on two cores); False: heuristic; None
        (default): exact when the point count allows an answer within seconds (up to 24
        distinct points, trying for 5 s unless ``time_limit`` says otherwise), else the
        heuristic.
    seed : int
        Orders the heuristic's choices of equal gain (0 to 2**64 - 1); the same seed gives
        the same tree.
    time_limit : float, optional
        Seconds allowed for an exact attempt (finite, >= 0); when they run out the best
        tree found is returned (at worst the heuristic's) with ``optimal=False`` and a
        proven ``lower_bound``: the branch and cut's LP bound at the stop when every full
        Steiner tree had been generated, else ``0.824 * mst_length`` (Chung and Graham
        1985). ``gap`` and ``relative_gap`` say how far from optimal the tree may be.
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: one tree per group (in parallel), returned as ``SteinerTrees``.
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without an answer (smallest
        label); ``"skip"`` keeps such a group with its ``problem`` and solves the rest.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while the
        tree is built. Ctrl-C stops the work within a fraction of a second and raises
        ``KeyboardInterrupt``.

    Returns
    -------
    SteinerTree, or SteinerTrees when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, an empty point set, ``exact`` other than
        True/False/None, a ``seed`` or ``time_limit`` of the wrong type or range, a
        ``progress`` that is neither a bool nor callable. Its ``argument`` names the
        argument; ``group`` and ``row`` the group label and input row concerned.

    Examples
    --------
    >>> import placewise as pw
    >>> t = pw.steiner_tree([[0, 0], [1, 0], [1, 1], [0, 1]])
    >>> round(t.length, 9), len(t.junctions), t.optimal   # 1 + sqrt(3)
    (2.732050808, 2, True)
    >>> t.to_frame().round(4)          # four edges to the two junctions, one between them
       end_a  end_b  junction_a  junction_b  length_u
    0      0     -1          -1           0    0.5774
    1      1     -1          -1           1    0.5774
    2      2     -1          -1           1    0.5774
    3      3     -1          -1           0    0.5774
    4     -1     -1           0           1    0.4226
    >>> pw.steiner_tree([[0, 0], [1, 0], [2, 0]]).saving        # collinear: nothing to gain
    0.0

    Grouped, with a two-point group (one edge, no junction) and a one-point group (no
    edges); ends are rows of the whole input:

    >>> trees = pw.steiner_tree([[0, 0], [9, 9], [3, 4], [5, 5]], groups=[1, 2, 1, 3])
    >>> trees.to_frame()
       group problem  end_a  end_b  junction_a  junction_b  length_u
    0      1    None      0      2          -1          -1       5.0
    >>> trees.summary()[["group", "length_u", "junctions", "optimal", "edges"]]
       group  length_u  junctions  optimal  edges
    0      1       5.0          0     True      1
    1      2       0.0          0     True      0
    2      3       0.0          0     True      0

    See Also
    --------
    spanning_tree : the network without junctions.
    weber_point : the best single junction for all sites.
    """
    check_errors(errors)
    if groups is None:
        fields = _core.steiner_tree_single(points, exact, seed, time_limit, progress)
        return SteinerTree(**fields, points=as_points(points))
    fields = _core.steiner_tree_grouped(points, groups, exact, seed, time_limit, errors, progress)
    return SteinerTrees._from_core(
        fields, points=as_points(points), row_group=Grouped._row_groups_of(fields["labels"], groups)
    )
