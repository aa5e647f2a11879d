"""Nearest-site allocation of demand points, single and grouped."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._core import InputError
from .._errors import check_errors
from .._results import Grouped, Result, _require_pandas, as_points
from ._rows import _members


class _Assigned(Result):
    """Rows are demand points, each with its site."""

    assignment: np.ndarray
    distance: np.ndarray
    load: np.ndarray
    count: np.ndarray
    points: np.ndarray
    sites: np.ndarray

    def _columns(self) -> dict[str, Any]:
        return {"assignment": self.assignment, self._u("distance"): self.distance}

    def _geometry(self) -> Any:
        import shapely

        return shapely.points(self.points)

    def _site_columns(self) -> dict[str, Any]:
        return {"x": self.sites[:, 0], "y": self.sites[:, 1], "load": self.load, "points": self.count}

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the points coloured by their site and the sites as outlined stars in the same
        colours above them, with a title, unit-labelled axes and a legend (new axes when
        ``ax`` is None); ``style`` goes to the points.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import placewise as pw
        >>> ax = pw.nearest_site([[0, 0], [5, 5], [1, 0]], [[0, 1], [5, 4]]).plot()
        >>> ax.get_title(), [t.get_text() for t in ax.get_legend().get_texts()]
        ('Nearest-site allocation · 3 points, 2 sites', ['points (colour = their site)', 'sites'])
        """
        from ..plotting import INK, draw_sites, finish, site_colours

        ax = self._plot_axes(ax)
        palette = np.asarray(site_colours(max(len(self.sites), 1)) + [INK])
        options: dict[str, Any] = {"s": 5, "linewidths": 0, "zorder": 3, "label": "points (colour = their site)",
                                   **style}
        if "color" not in options and "c" not in options:
            # One colour per site unless the caller chose one (matplotlib refuses both); a
            # point without a site (a skipped group) is drawn in ink.
            options["c"] = palette[np.where(self.assignment >= 0, self.assignment, -1)]
        ax.scatter(self.points[:, 0], self.points[:, 1], **options)
        draw_sites(ax, self.sites, list(palette[:-1]))
        title = f"Nearest-site allocation · {len(self.points)} points, {len(self.sites)} sites"
        if isinstance(self, Grouped):
            title = f"Nearest-site allocations of {len(self.labels)} groups · {len(self.points)} points"
        return finish(ax, title, self.unit)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Allocation(_Assigned, Result):
    """Every demand point allocated to its nearest site.

    Attributes
    ----------
    assignment : ndarray of int64, shape (n,)
        The nearest site (row of ``sites``) of each point; the smallest row among equally
        near sites.
    distance : ndarray, shape (n,)
        Distance from each point to its site.
    load : ndarray, shape (k,)
        Summed weight of the points in each site's catchment.
    count : ndarray of int64, shape (k,)
        Number of points in each site's catchment.
    cost : float
        Total weighted distance ``sum(w_i * distance_i)``.
    total_load : float
        Total weight of the points.
    points, sites : ndarray
        The inputs (not shown in the repr).

    ``to_frame()`` has one row per demand point: ``assignment``, ``distance_<unit>``
    (``to_geodataframe()`` adds the point); ``sites_frame()`` one row per site: ``x``,
    ``y``, ``load``, ``points``; ``summary()`` one row: ``cost_<unit>``, ``load``, ``points``
    (points) and ``sites``.
    """

    assignment: np.ndarray
    distance: np.ndarray
    load: np.ndarray
    count: np.ndarray
    cost: float
    total_load: float
    points: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)

    def sites_frame(self) -> Any:
        """One row per site: ``x``, ``y``, ``load``, ``points``."""
        return _require_pandas().DataFrame(self._site_columns())

    def summary(self) -> Any:
        """One row: ``cost_<unit>``, ``load`` (total weight), ``points`` (demand points), ``sites``."""
        return _require_pandas().DataFrame(
            {self._u("cost"): [self.cost], "load": [self.total_load], "points": [len(self.assignment)],
             "sites": [len(self.load)]}
        )


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Allocations(_Assigned, Grouped):
    """Nearest-site allocations of many groups: each group's points served by the sites of
    the same label.

    Per-point and per-site arrays follow the input rows; ``assignment`` names rows of the
    whole ``sites`` input. ``len``, iteration and ``allocations[label]`` give each group's
    :class:`Allocation` (as a separate call on the group's points and sites gives it).
    ``to_frame()`` has one row per demand point in input order, ``sites_frame()`` one row
    per site, ``summary()`` one row per group, each with ``group`` and ``problem`` first.

    Attributes
    ----------
    labels : ndarray, shape (G,)
        Sorted unique labels of the points and the sites.
    assignment : ndarray of int64, shape (n,)
        Site row of each point (-1 in a skipped group).
    distance : ndarray, shape (n,)
        Distance to it (NaN in a skipped group).
    load : ndarray, shape (k,)
        Summed weight of each site's catchment (NaN in a skipped group).
    count : ndarray of int64, shape (k,)
        Points in each site's catchment (0 in a skipped group).
    cost, total_load : ndarray, shape (G,)
        Per group (NaN when skipped).
    point_count, site_count : ndarray of int64, shape (G,)
        Points and sites of each group.
    """

    assignment: np.ndarray = dataclasses.field(repr=False)
    distance: np.ndarray = dataclasses.field(repr=False)
    point_group: np.ndarray = dataclasses.field(repr=False)
    load: np.ndarray = dataclasses.field(repr=False)
    count: np.ndarray = dataclasses.field(repr=False)
    site_group: np.ndarray = dataclasses.field(repr=False)
    cost: np.ndarray
    total_load: np.ndarray
    point_count: np.ndarray
    site_count: np.ndarray
    points: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)

    def _item(self, position: int) -> Allocation:
        rows = _members(self.point_group, position)
        site_rows = _members(self.site_group, position)
        return Allocation(
            np.searchsorted(site_rows, self.assignment[rows]),
            self.distance[rows],
            self.load[site_rows],
            self.count[site_rows],
            float(self.cost[position]),
            float(self.total_load[position]),
            self.points[rows],
            self.sites[site_rows],
            unit=self.unit,
        )

    def _row_groups(self) -> np.ndarray:
        return self.point_group

    def sites_frame(self) -> Any:
        """One row per site in input order: ``group``, ``problem``, ``x``, ``y``, ``load``, ``points``."""
        at = self.site_group
        return _require_pandas().DataFrame(
            {"group": self.labels[at], "problem": self.problem[at], **self._site_columns()}
        )

    def summary(self) -> Any:
        """One row per group: ``group``, ``problem``, ``cost_<unit>``, ``load``, ``points``, ``sites``."""
        return _require_pandas().DataFrame(
            {"group": self.labels, "problem": self.problem, self._u("cost"): self.cost, "load": self.total_load,
             "points": self.point_count, "sites": self.site_count}
        )


@overload
def nearest_site(
    points: ArrayLike,
    sites: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: None = None,
    site_groups: None = None,
    errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] | None = False,
) -> Allocation: ...


@overload
def nearest_site(
    points: ArrayLike,
    sites: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: ArrayLike,
    site_groups: ArrayLike,
    errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] | None = False,
) -> Allocations: ...


def nearest_site(
    points: ArrayLike,
    sites: ArrayLike,
    weights: ArrayLike | None = None,
    *,
    groups: ArrayLike | None = None,
    site_groups: ArrayLike | None = None,
    errors: Literal["raise", "skip"] = "raise",
    progress: bool | Callable[[int, int], object] | None = False,
) -> Allocation | Allocations:
    """Allocate every demand point to its nearest site.

    The sites go into an R*-tree (bulk loaded); the points are queried on all cores, read in
    place when they are a C-contiguous float64 array. Equally near sites go to the smaller
    site row.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations.
    sites : array_like, shape (k, 2)
        Site locations (repeats allowed; the first copy serves).
    weights : array_like, shape (n,), optional
        Finite, non-negative demand per point, not all zero. Default: all 1.
    groups, site_groups : array_like of int (int64 range), shapes (n,) and (k,), optional
        Labels of the points and of the sites, given together: every group of points is
        served by the sites with the same label (in parallel), and ``Allocations`` is
        returned. A label with points but no sites is that group's problem; the sites of a
        label without points serve nobody (load and count 0).
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without an answer (smallest
        label); ``"skip"`` keeps such a group with its ``problem`` and solves the rest.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread, counting
        points (of every group, with ``groups``). Ctrl-C (or an exception from the callable)
        stops the run within a fraction of a second and raises ``KeyboardInterrupt``: while
        the sites are indexed, or within one chunk of points per worker thread (grouped:
        groups not begun are skipped). The answer exists only once every point is allocated,
        so there is no time limit.

    Returns
    -------
    Allocation, or Allocations when ``groups`` and ``site_groups`` are given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, empty points or sites, bad weights, or only one
        of ``groups`` and ``site_groups``.

    Examples
    --------
    >>> import placewise as pw
    >>> a = pw.nearest_site([[0, 0], [9, 0], [6, 0]], [[1, 0], [8, 0]], weights=[1, 1, 2])
    >>> a.assignment.tolist(), a.load.tolist(), a.count.tolist(), a.cost
    ([0, 1, 1], [1.0, 3.0], [1, 2], 6.0)
    >>> a.summary()
       cost_u  load  points  sites
    0     6.0   4.0      3      2
    >>> pw.nearest_site([[0, 1]], [[1, 0], [-1, 0]]).assignment.tolist()  # a tie: the smaller row
    [0]
    >>> groups = pw.nearest_site([[0, 0], [2, 0], [9, 0]], [[0, 0], [8, 0]], groups=[1, 1, 2], site_groups=[1, 2])
    >>> groups.to_frame()[["group", "assignment", "distance_u"]]
       group  assignment  distance_u
    0      1           0         0.0
    1      1           0         2.0
    2      2           1         1.0
    >>> skipped = pw.nearest_site([[0, 0], [9, 0]], [[0, 0]], groups=[1, 2], site_groups=[1], errors="skip")
    >>> skipped.summary()[["group", "cost_u", "load", "points", "sites"]]
       group  cost_u  load  points  sites
    0      1     0.0   1.0      1      1
    1      2     NaN   NaN      1      0
    >>> skipped.problem[1]
    'group 2: sites must hold at least 1 point; got 0'

    See Also
    --------
    voronoi_cells : the catchment of each site as a region.
    """
    check_errors(errors)
    if groups is None or site_groups is None:
        if groups is not None or site_groups is not None:
            raise InputError("groups and site_groups must be given together (labels of the points and of the sites)")
        return Allocation(**_core.nearest_site_single(points, sites, weights, progress), points=as_points(points),
                          sites=as_points(sites))
    fields = _core.nearest_site_grouped(points, sites, weights, groups, site_groups, errors, progress)
    return Allocations._from_core(fields, points=as_points(points), sites=as_points(sites))
