"""Capacities: demand served by sites that can each take only so much.

* :func:`capacity_allocation` — demand to given sites at least total distance within their
  capacities: the exact transportation plan when a point's demand may be split between
  sites, a single-source plan with a proven gap when it may not;
* :func:`capacity_cells` — capacity-constrained catchments: the powers for which every
  site's power cell holds exactly its capacity of demand (squared-distance cost);
* :func:`capacitated_p_median` — ``p`` sites with capacities, continuous or chosen among
  candidates (location–allocation), with a proven gap where a cheap relaxation exists.

The exact plan comes from successive shortest paths with node potentials (Edmonds & Karp
1972; Tomizawa 1971) run on the residual network condensed over the sites, so each step
costs O(m²) for ``m`` sites, not O(n·m). Its optimal capacity prices ``price`` certify it:
every point is served only by sites minimising ``distance + price``, and the price is 0
wherever a site has slack.

When total capacity is below total demand the call refuses with an ``InputError`` stating
the shortfall, unless ``allow_unserved=True``: then the plan serves as much demand as the
capacities hold, at least total distance, and reports what is left unserved per point.

Results are planning aids under the stated model (straight-line distance, the given
weights and capacities) and do not replace local regulations or licensed professional
judgement.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._region import region_rings
from ._results import Result, _require_pandas, as_points
from .partition import _Cells

__all__ = ["CapacitatedMedianPlan", "CapacityCellPolygons", "CapacityCells", "CapacityPlan", "capacitated_p_median",
           "capacity_allocation", "capacity_cells"]


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CapacityPlan(Result):
    """Demand allocated to capacitated sites.

    Attributes
    ----------
    assignment : ndarray of int64, shape (n,)
        The site (row of ``sites``) serving the largest share of each point's demand; -1
        when none of it is served. A point of zero weight gets its nearest site.
    share : ndarray, shape (n,)
        The share (0–1) of the point's demand that ``assignment`` serves.
    distance : ndarray, shape (n,)
        Distance from each point to ``assignment`` (NaN when unserved).
    cost : ndarray, shape (n,)
        Demand × distance of each point, summed over every site serving it.
    unserved : ndarray, shape (n,)
        Demand of each point left unserved (only with ``allow_unserved=True``).
    part_point, part_site, part_amount : ndarray, shape (k,)
        Every (point, site, amount) of the points served by several sites (-1 as the site
        of an unserved part); see :meth:`parts_frame`.
    load, slack, price : ndarray, shape (m,)
        Per site: demand served, ``capacity - load``, and the optimal capacity price of the
        split plan (distance units per unit of demand; 0 where a site has slack).
    total_cost, total_demand, total_unserved : float
        ``Σ cost``, ``Σ weights`` and ``Σ unserved``.
    lower_bound, relative_gap : float
        The split plan's cost (a proven lower bound) and
        ``(total_cost - lower_bound) / total_cost``: 0 for a split plan; NaN when a
        single-source plan leaves more demand unserved than the split one.
    split : bool
        Whether demand was allowed to split.
    augmentations : int
        Augmenting paths the solver used.
    points, sites, capacities : ndarray
        The inputs (not shown in the repr).

    ``to_frame()`` has one row per demand point (``assignment``, ``share``,
    ``distance_<unit>``, ``cost_<unit>``, ``unserved``; ``to_geodataframe()`` adds the
    point); ``sites_frame()`` one row per site; ``parts_frame()`` one row per part of a
    split point; ``summary()`` the totals.
    """

    assignment: np.ndarray = dataclasses.field(repr=False)
    share: np.ndarray = dataclasses.field(repr=False)
    distance: np.ndarray = dataclasses.field(repr=False)
    cost: np.ndarray = dataclasses.field(repr=False)
    unserved: np.ndarray = dataclasses.field(repr=False)
    part_point: np.ndarray = dataclasses.field(repr=False)
    part_site: np.ndarray = dataclasses.field(repr=False)
    part_amount: np.ndarray = dataclasses.field(repr=False)
    load: np.ndarray
    slack: np.ndarray
    price: np.ndarray = dataclasses.field(repr=False)
    total_cost: float
    total_demand: float = dataclasses.field(repr=False)
    total_unserved: float
    lower_bound: float = dataclasses.field(repr=False)
    relative_gap: float
    split: bool
    augmentations: int = dataclasses.field(repr=False)
    points: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)
    capacities: np.ndarray = dataclasses.field(repr=False)

    def _columns(self) -> dict[str, Any]:
        return {"assignment": self.assignment, "share": self.share, self._u("distance"): self.distance,
                self._u("cost"): self.cost, "unserved": self.unserved}

    def _geometry(self) -> Any:
        import shapely

        return shapely.points(self.points)

    def sites_frame(self) -> Any:
        """One row per site: ``x``, ``y``, ``capacity``, ``load``, ``slack``, ``price_<unit>``."""
        return _require_pandas().DataFrame(
            {"x": self.sites[:, 0], "y": self.sites[:, 1], "capacity": self.capacities, "load": self.load,
             "slack": self.slack, self._u("price"): self.price}
        )

    def parts_frame(self) -> Any:
        """One row per part of a point served by several sites: ``point``, ``site`` (-1:
        unserved), ``amount``."""
        site = np.where(self.part_site < len(self.sites), self.part_site, -1)
        return _require_pandas().DataFrame({"point": self.part_point, "site": site, "amount": self.part_amount})

    def summary(self) -> Any:
        """One row: ``cost_<unit>``, ``lower_bound_<unit>``, ``relative_gap``, ``demand``,
        ``unserved``, ``capacity``, ``points``, ``sites``, ``split_points``."""
        return _require_pandas().DataFrame({
            self._u("cost"): [self.total_cost], self._u("lower_bound"): [self.lower_bound],
            "relative_gap": [self.relative_gap], "demand": [self.total_demand],
            "unserved": [self.total_unserved], "capacity": [float(np.sum(self.capacities))],
            "points": [len(self.points)], "sites": [len(self.sites)],
            "split_points": [len(np.unique(self.part_point))],
        })

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the points coloured by their main site (unserved ones in ink) and the sites
        as stars, with a title, unit-labelled axes and a legend (new axes when ``ax`` is
        None); ``style`` goes to the points.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import placewise as pw
        >>> plan = pw.capacity_allocation([[0, 0], [1, 0], [2, 0]], [[0, 0], [2, 0]], [1, 2])
        >>> plan.plot().get_title()
        'Capacitated allocation · 3 points, 2 sites, 0 unserved'
        """
        from .plotting import INK, draw_sites, finish, site_colours

        ax = self._plot_axes(ax)
        palette = np.asarray(site_colours(max(len(self.sites), 1)) + [INK])
        options: dict[str, Any] = {"s": 5, "linewidths": 0, "zorder": 3,
                                   "label": "points (colour = main site)", **style}
        if "color" not in options and "c" not in options:
            options["c"] = palette[np.where(self.assignment >= 0, self.assignment, -1)]
        ax.scatter(self.points[:, 0], self.points[:, 1], **options)
        draw_sites(ax, self.sites, list(palette[:-1]))
        title = (f"Capacitated allocation · {len(self.points)} points, {len(self.sites)} sites, "
                 f"{self.total_unserved:.6g} unserved")
        return finish(ax, title, self.unit)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CapacitatedMedianPlan(CapacityPlan):
    """A capacitated p-median plan: the sites and how they serve the demand.

    Besides the :class:`CapacityPlan` fields (the exact split allocation to these sites):

    Attributes
    ----------
    chosen : ndarray of int64, shape (p,)
        With candidates: the candidate row of each site (else empty).
    median_lower_bound, median_relative_gap : float
        With candidates: the cost of the transportation plan with every candidate open (a
        proven lower bound on any plan of ``p`` sites) and the gap to it; NaN for
        continuous sites, where no cheap relaxation is known.
    rounds : int
        Location–allocation rounds run.
    converged : bool
        True when the rounds ended because moving the sites no longer lowered the cost;
        False when ``max_rounds`` or ``time_limit`` cut them short (the plan is then the
        best found, its allocation still exact and within the capacities).
    """

    chosen: np.ndarray = dataclasses.field(default_factory=lambda: np.zeros(0, dtype=np.int64), repr=False)
    median_lower_bound: float = dataclasses.field(default=float("nan"), repr=False)
    median_relative_gap: float = float("nan")
    rounds: int = dataclasses.field(default=0, repr=False)
    converged: bool = True

    def summary(self) -> Any:
        """As :meth:`CapacityPlan.summary`, with ``median_lower_bound_<unit>``,
        ``median_relative_gap``, ``rounds`` and ``converged``."""
        frame = super().summary()
        frame[self._u("median_lower_bound")] = [self.median_lower_bound]
        frame["median_relative_gap"] = [self.median_relative_gap]
        frame["rounds"] = [self.rounds]
        frame["converged"] = [self.converged]
        return frame


def capacity_allocation(
    points: ArrayLike, sites: ArrayLike, capacities: ArrayLike, weights: ArrayLike | None = None, *,
    split: bool = True, allow_unserved: bool = False, unit: str = "u", time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
) -> CapacityPlan:
    """Serve the weighted demand from ``sites`` within their ``capacities`` at least total
    distance ``Σ amount × distance``.

    With ``split=True`` the plan is the exact optimum of the transportation problem (a
    point's demand may be shared between sites); at most ``m - 1`` points are shared in a
    vertex solution, and with integral weights and capacities the plan is integral. With
    ``split=False`` the shared points are placed whole, heaviest first, at the cheapest
    site with room; the split optimum is a proven lower bound, reported with the gap.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations.
    sites : array_like, shape (m, 2)
        Site locations; a location listed twice must have one capacity.
    capacities : array_like, shape (m,)
        Finite, non-negative demand each site can serve (in weight units).
    weights : array_like, shape (n,), optional
        Finite, non-negative demand per point, not all zero. Default: all 1.
    split : bool
        Allow a point's demand to be shared between sites.
    allow_unserved : bool
        When total capacity is below total demand, serve what fits and report the rest
        (``unserved``) instead of refusing.
    unit : str
        Name of the coordinates' length unit, used in column names.
    time_limit : float, optional
        Seconds (finite, above zero) the exact solve may take, counted from the call's start
        (reading the arguments included). No plan meeting the
        capacities exists before it ends, so when they pass the call fails with an
        ``InputError`` naming ``time_limit`` (the limit was too short). Default: no limit.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while the
        solve runs. Ctrl-C stops the solve within a fraction of a second and raises
        ``KeyboardInterrupt``.

    Returns
    -------
    CapacityPlan

    Raises
    ------
    InputError
        For bad points, sites or weights; a negative, NaN or infinite capacity (naming its
        row); capacities of the wrong length; one location with two capacities; total
        capacity below total demand (the message gives the shortfall) unless
        ``allow_unserved``; with ``split=False``, a point no site has room for whole; a
        ``time_limit`` that is not a number above zero, or that passed before the plan.

    Examples
    --------
    Two clinics of a small district, both full:

    >>> import placewise as pw
    >>> homes = [[0, 0], [1, 0], [2, 0], [4, 0]]
    >>> plan = pw.capacity_allocation(homes, [[0, 0], [3, 0]], [3, 1])
    >>> plan.assignment, plan.load, float(plan.total_cost)
    (array([0, 0, 0, 1]), array([3., 1.]), 4.0)
    >>> plan.sites_frame()[["capacity", "load", "slack"]]
       capacity  load  slack
    0       3.0   3.0    0.0
    1       1.0   1.0    0.0
    >>> pw.capacity_allocation(homes, [[0, 0]], [2], allow_unserved=True).total_unserved
    2.0
    """
    fields = _core.capacity_allocate(points, sites, capacities, weights, split, allow_unserved, time_limit, progress)
    return CapacityPlan(**fields, points=as_points(points), sites=as_points(sites),
                        capacities=np.asarray(capacities, dtype=np.float64), unit=unit)


def capacitated_p_median(
    points: ArrayLike, p: int, capacities: ArrayLike, weights: ArrayLike | None = None, *,
    candidates: ArrayLike | None = None, seed: int = 0, max_rounds: int = 100, unit: str = "u",
    time_limit: float | None = None, progress: bool | Callable[[int, int], object] = False,
) -> CapacitatedMedianPlan:
    """``p`` sites with capacities and the least total distance ``Σ amount × distance``.

    Location–allocation (Cooper 1964) with a capacitated allocation step: allocate by the
    exact transportation plan, move each site to the best location for the demand it
    serves, and repeat while the cost falls. The start is the uncapacitated p-median plan.
    Without candidates a site moves to the weighted Fermat–Weber point of its demand; with
    candidates to the free candidate serving that demand most cheaply with room for it,
    and the plan with every candidate open gives a proven lower bound.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations.
    p : int
        Number of sites, at least 1: with candidates, at most their number (it may exceed
        the number of demand locations, when small capacities need several sites for one
        point); without, at most the number of distinct points of positive weight.
    capacities : array_like
        Without candidates: shape (p,), the capacity of each site to place. With
        candidates: shape (m,), the capacity of each candidate.
    weights : array_like, shape (n,), optional
        Demand per point. Default: all 1.
    candidates : array_like, shape (m, 2), optional
        Locations the sites must be chosen from.
    seed : int
        Seed of the uncapacitated start.
    max_rounds : int
        Most location–allocation rounds.
    unit : str
        Name of the coordinates' length unit.
    time_limit : float, optional
        Seconds (finite, above zero) the run may take, counted from the call's start (reading
        the arguments included). When they pass after the first
        transportation plan, the best plan so far is returned with ``converged`` False
        (with candidates and no time left for the relaxation, ``median_lower_bound`` and
        ``median_relative_gap`` are NaN: nothing is proven); before it, no plan meeting the
        capacities exists yet and an ``InputError`` names ``time_limit``. Default: no limit.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while the
        run works, counting the start, the first plan and the rounds against
        ``max_rounds`` (closed at the total when the run ends). Ctrl-C stops the run
        within a fraction of a second and raises ``KeyboardInterrupt``.

    Returns
    -------
    CapacitatedMedianPlan

    Raises
    ------
    InputError
        As :func:`capacity_allocation`; for ``p`` out of range; when the capacities (with
        candidates: the ``p`` largest) cannot hold the demand; naming ``time_limit`` when
        it passed before the first plan.

    Examples
    --------
    Two of three depot lots, 3 units each, for clusters of 4 and 2 shops:

    >>> import placewise as pw
    >>> shops = [[0, 0], [0, 1], [1, 0], [1, 1], [9, 9], [9, 8]]
    >>> plan = pw.capacitated_p_median(shops, 2, [3, 3, 3], candidates=[[0, 0], [1, 1], [9, 9]])
    >>> plan.chosen.tolist(), plan.load.tolist()
    ([0, 2], [3.0, 3.0])
    """
    fields = _core.capacity_p_median(points, p, capacities, weights, candidates, seed, max_rounds, time_limit,
                                     progress)
    sites = fields.pop("sites")
    caps = fields.pop("capacities")
    return CapacitatedMedianPlan(**fields, points=as_points(points), sites=sites, capacities=caps, unit=unit)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CapacityCellPolygons(_Cells, Result):
    """The cells of :class:`CapacityCells` as polygons, one row per site (the ring layout of
    :class:`~placewise.partition.VoronoiCells`).

    Sites listed twice at one location share one cell: the first of them with capacity
    holds its rings, the others have an empty cell and name the holder in ``cell_site``. A
    site without capacity has an empty cell and ``cell_site`` -1.

    Attributes
    ----------
    vertices, offsets, parts, area, exterior
        The cells, as in :class:`~placewise.partition.VoronoiCells`.
    cell_site : ndarray of int64, shape (m,)
        The site (row) whose rings are this site's cell; -1 for none.
    capacities, load, power : ndarray, shape (m,)
        As in :class:`CapacityCells`.
    sites : ndarray, shape (m, 2)

    ``to_frame()`` has one row per site: ``x``, ``y``, ``area_<unit>2``, ``capacity``,
    ``load``, ``power_<unit>2``, ``cell_site``; ``to_geodataframe()`` adds the cell (empty
    for an empty cell); ``to_shapely()`` and ``to_geojson()`` as for Voronoi cells.
    """

    _title = "Capacity-constrained cells"

    vertices: np.ndarray
    offsets: np.ndarray
    parts: np.ndarray
    area: np.ndarray
    exterior: np.ndarray = dataclasses.field(repr=False)
    cell_site: np.ndarray = dataclasses.field(repr=False)
    capacities: np.ndarray = dataclasses.field(repr=False)
    load: np.ndarray = dataclasses.field(repr=False)
    power: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)

    def __len__(self) -> int:
        return len(self.area)

    def _properties(self, i: int) -> dict[str, Any]:
        return {**super()._properties(i), "capacity": float(self.capacities[i]), "load": float(self.load[i]),
                "cell_site": int(self.cell_site[i])}

    def _columns(self) -> dict[str, Any]:
        return {**super()._columns(), "capacity": self.capacities, "load": self.load,
                self._u("power", 2): self.power, "cell_site": self.cell_site}


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CapacityCells(Result):
    """Capacity-constrained catchments: power cells that hold each site's capacity.

    Attributes
    ----------
    power : ndarray, shape (m,)
        Per site, its power ``w`` (squared length units): a point belongs to the cell of
        the site with the least power distance ``|x - s|² - w``. The largest power among
        sites with capacity is 0, and every site with slack has power 0; a site of zero
        capacity gets the largest power at which it serves nothing.
    assignment : ndarray of int64, shape (n,)
        The site serving the largest share of each point's demand (a point of zero weight:
        its least power distance site).
    share : ndarray, shape (n,)
        The share (0–1) of the point's demand that ``assignment`` serves; below 1 only for
        points on a cell boundary whose demand is split.
    cost : ndarray, shape (n,)
        Demand × squared distance of each point, summed over the sites serving it.
    part_point, part_site, part_amount : ndarray, shape (k,)
        Every (point, site, amount) of the split points; see :meth:`parts_frame`.
    load, slack : ndarray, shape (m,)
        Per site: demand served and ``capacity - load``.
    total_cost : float
        ``Σ cost``: demand × squared distance, the optimised objective.
    total_distance_cost : float
        ``Σ amount × distance`` of the same plan (not optimised for it).
    total_demand : float
        ``Σ weights``.
    newton_steps, exact_points, augmentations : int
        Newton steps of the smoothed stage, points solved exactly in the finish, and the
        finish's augmenting paths.
    vertices, offsets, parts, area, exterior : ndarray
        The cells of the final powers clipped to the region, one per site, in the ring
        layout of :class:`~placewise.partition.VoronoiCells` (see :attr:`cells`).
    cell_site : ndarray of int64, shape (m,)
        The site whose rings are this site's cell: itself, the first site with capacity at
        its location (sites at one location share one cell), or -1 for a site without
        capacity (no cell).
    points, sites, capacities : ndarray
        The inputs (not shown in the repr).

    ``to_frame()`` has one row per demand point (``assignment``, ``share``,
    ``cost_<unit>2``; ``to_geodataframe()`` adds the point); ``sites_frame()`` one row per
    site; ``cells_frame()`` / ``cells_geodataframe()`` one row per site with its cell;
    ``parts_frame()`` one row per part of a split point; ``summary()`` the totals.
    """

    power: np.ndarray
    assignment: np.ndarray = dataclasses.field(repr=False)
    share: np.ndarray = dataclasses.field(repr=False)
    cost: np.ndarray = dataclasses.field(repr=False)
    part_point: np.ndarray = dataclasses.field(repr=False)
    part_site: np.ndarray = dataclasses.field(repr=False)
    part_amount: np.ndarray = dataclasses.field(repr=False)
    load: np.ndarray
    slack: np.ndarray = dataclasses.field(repr=False)
    total_cost: float
    total_distance_cost: float = dataclasses.field(repr=False)
    total_demand: float = dataclasses.field(repr=False)
    newton_steps: int = dataclasses.field(repr=False)
    exact_points: int = dataclasses.field(repr=False)
    augmentations: int = dataclasses.field(repr=False)
    vertices: np.ndarray = dataclasses.field(repr=False)
    offsets: np.ndarray = dataclasses.field(repr=False)
    parts: np.ndarray = dataclasses.field(repr=False)
    area: np.ndarray = dataclasses.field(repr=False)
    exterior: np.ndarray = dataclasses.field(repr=False)
    cell_site: np.ndarray = dataclasses.field(repr=False)
    points: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)
    capacities: np.ndarray = dataclasses.field(repr=False)

    def _columns(self) -> dict[str, Any]:
        return {"assignment": self.assignment, "share": self.share, self._u("cost", 2): self.cost}

    @property
    def cells(self) -> CapacityCellPolygons:
        """The cells as polygons (:class:`CapacityCellPolygons`), one row per site."""
        return CapacityCellPolygons(self.vertices, self.offsets, self.parts, self.area, self.exterior, self.cell_site,
                                    self.capacities, self.load, self.power, self.sites, unit=self.unit)

    def cells_frame(self) -> Any:
        """One row per site with its cell: ``x``, ``y``, ``area_<unit>2``, ``capacity``,
        ``load``, ``power_<unit>2``, ``cell_site``."""
        return self.cells.to_frame()

    def cells_geodataframe(self, crs: Any = None) -> Any:
        """The rows of :meth:`cells_frame` with each cell as a Polygon or MultiPolygon
        (empty for an empty cell), as a GeoDataFrame in ``crs``."""
        return self.cells.to_geodataframe(crs)

    def _geometry(self) -> Any:
        import shapely

        return shapely.points(self.points)

    def sites_frame(self) -> Any:
        """One row per site: ``x``, ``y``, ``capacity``, ``load``, ``slack``, ``power_<unit>2``."""
        return _require_pandas().DataFrame(
            {"x": self.sites[:, 0], "y": self.sites[:, 1], "capacity": self.capacities, "load": self.load,
             "slack": self.slack, self._u("power", 2): self.power}
        )

    def parts_frame(self) -> Any:
        """One row per part of a point whose demand is split between sites: ``point``,
        ``site``, ``amount``."""
        return _require_pandas().DataFrame({"point": self.part_point, "site": self.part_site,
                                            "amount": self.part_amount})

    def summary(self) -> Any:
        """One row: ``cost_<unit>2`` (demand × squared distance), ``distance_cost_<unit>``
        (demand × distance of the same plan), ``demand``, ``capacity``, ``slack``,
        ``points``, ``sites``, ``split_points``."""
        return _require_pandas().DataFrame({
            self._u("cost", 2): [self.total_cost], self._u("distance_cost"): [self.total_distance_cost],
            "demand": [self.total_demand], "capacity": [float(np.sum(self.capacities))],
            "slack": [float(np.sum(self.slack))], "points": [len(self.points)], "sites": [len(self.sites)],
            "split_points": [len(np.unique(self.part_point))],
        })

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the cells filled in their site's colour, the points coloured by their main
        site and the sites, with a title, unit-labelled axes and a legend (new axes when
        ``ax`` is None); ``style`` goes to the points.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import placewise as pw
        >>> cells = pw.capacity_cells([[0, 0], [1, 0], [2, 0]], [[0, 0], [2, 0]], [1, 2])
        >>> cells.plot().get_title()
        'Capacity-constrained cells · 3 points, 2 sites, 0 split'
        """
        from .plotting import finish, site_colours

        ax = self.cells.plot(self._plot_axes(ax), alpha=0.35)  # the cells and the sites
        palette = np.asarray(site_colours(max(len(self.sites), 1)))
        options: dict[str, Any] = {"s": 5, "linewidths": 0, "zorder": 3,
                                   "label": "points (colour = main site)", **style}
        if "color" not in options and "c" not in options:
            options["c"] = palette[self.assignment]
        ax.scatter(self.points[:, 0], self.points[:, 1], **options)
        title = (f"Capacity-constrained cells · {len(self.points)} points, {len(self.sites)} sites, "
                 f"{len(np.unique(self.part_point))} split")
        return finish(ax, title, self.unit)


def capacity_cells(
    points: ArrayLike, sites: ArrayLike, capacities: ArrayLike, weights: ArrayLike | None = None, *,
    region: Any = None, tol: float = 1e-9, unit: str = "u", time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
) -> CapacityCells:
    """Capacity-constrained catchments: the powers ``w`` for which each site's power cell
    (the points whose least power distance ``|x - s|² - w`` is to that site) holds exactly
    its capacity of demand, and the plan those cells carry.

    The powers maximise the concave dual of the transportation problem with cost
    ``|x - s|²`` (Aurenhammer, Hoffmann & Aronov 1998), and the plan is that problem's
    optimum: least total demand × squared distance within the capacities. For point demand
    the dual is piecewise linear, so they are found in two stages: damped Newton steps
    (Kitagawa, Mérigot & Thibert 2019) on the entropically smoothed dual (Cuturi 2013),
    its smoothing lowered level by level, give approximate powers; then the points near a
    cell boundary, with the capacity the others leave, form a small transportation problem
    solved exactly by successive shortest paths (Edmonds & Karp 1972; Tomizawa 1971)
    seeded with those powers. Its prices are the final powers, and every other point is
    checked to lie in its site's final cell (a point that does not joins the exact
    problem); the result therefore satisfies complementary slackness and is exact, not
    approximate. Points exactly on a boundary may have their demand split between sites
    (:meth:`CapacityCells.parts_frame`).

    The cells of the final powers, clipped to ``region``, come as polygons
    (:attr:`CapacityCells.cells`): the power cells of :func:`~placewise.power_cells`, so
    they tile the region and each point lies in (or on the boundary of) its site's cell.
    Sites at one location share one cell, held by the first of them with capacity (the
    others name it in ``cell_site``); a site without capacity has no cell. Every point must
    lie in the region (on its boundary counts): a point outside it is refused, naming its
    row.

    Total capacity may exceed total demand: sites may then be under-full, their powers
    are at most 0, and every site with slack has power 0. Capacity below the demand (by
    more than ``tol`` relative) is refused. Capacities within ``tol`` of the demand are
    scaled to it, so loads match capacities to ``tol`` relative.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations.
    sites : array_like, shape (m, 2)
        Site locations; a location listed twice must have one capacity (such sites share
        one cell and are filled in turn).
    capacities : array_like, shape (m,)
        Finite, non-negative demand each site serves at most (in weight units).
    weights : array_like, shape (n,), optional
        Finite, non-negative demand per point, not all zero. Default: all 1.
    region : shapely Polygon or MultiPolygon, or array_like of shape (r, 2), optional
        The study region the cells are clipped to (holes and several parts allowed), as for
        :func:`~placewise.voronoi_cells`; it must hold every point. Default: the bounding
        box of the points and sites together, grown by 10 % on every side.
    tol : float
        Relative tolerance on the totals, in (0, 1).
    unit : str
        Name of the coordinates' length unit, used in column names.
    time_limit : float, optional
        Seconds (finite, above zero) the computation may take, counted from the call's start
        (reading the arguments included). No plan meeting the
        capacities exists before the exact finish ends, so when they pass the call fails with an
        ``InputError`` naming ``time_limit`` (the limit was too short). Default: no limit.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while it
        runs (steps: Newton steps, then the exact finish). Ctrl-C stops it within a fraction of a second and raises
        ``KeyboardInterrupt``.

    Returns
    -------
    CapacityCells

    Raises
    ------
    InputError
        For bad points, sites or weights; a negative, NaN or infinite capacity (naming its
        row); capacities of the wrong length; one location with two capacities; ``tol``
        outside (0, 1); total capacity below total demand (the message gives the shortfall);
        a point outside ``region`` (naming the first such row); a region without area or
        whose rings cross; points and sites all at one location without a region.

    Examples
    --------
    Two depots on a road of five shops, the western one with room for two:

    >>> import placewise as pw
    >>> shops = [[0, 0], [1, 0], [2, 0], [3, 0], [4, 0]]
    >>> cells = pw.capacity_cells(shops, [[0, 0], [4, 0]], [2, 3])
    >>> cells.assignment.tolist(), cells.load.tolist(), float(cells.total_cost)
    ([0, 0, 1, 1, 1], [2.0, 3.0], 6.0)
    >>> bool(cells.power[1] == 0.0 and cells.power[0] < 0.0)
    True

    A split point: three shops, two depots of 1.5 each share the middle one:

    >>> cells = pw.capacity_cells([[0, 0], [1, 0], [2, 0]], [[0, 0], [2, 0]], [1.5, 1.5])
    >>> cells.parts_frame()
       point  site  amount
    0      1     0     0.5
    1      1     1     0.5

    The cells as polygons, clipped to a strip around the road; both sites have room for 1.5
    shops, so the boundary runs through the middle shop:

    >>> strip = [[-1, -1], [3, -1], [3, 1], [-1, 1]]
    >>> cells = pw.capacity_cells([[0, 0], [1, 0], [2, 0]], [[0, 0], [2, 0]], [1.5, 1.5], region=strip)
    >>> cells.cells_frame()[["area_u2", "load", "cell_site"]]
       area_u2  load  cell_site
    0      4.0   1.5          0
    1      4.0   1.5          1

    A site listed twice shares its cell with the first listing:

    >>> cells = pw.capacity_cells([[0, 0], [2, 0]], [[0, 0], [0, 0], [2, 0]], [0.5, 0.5, 1])
    >>> cells.cell_site.tolist(), (cells.area > 0).tolist()
    ([0, 0, 2], [True, False, True])
    """
    vertices, offsets = region_rings(region)
    fields = _core.capacity_power_cells(points, sites, capacities, weights, tol, vertices, offsets, time_limit,
                                        progress)
    return CapacityCells(**fields, points=as_points(points), sites=as_points(sites),
                         capacities=np.asarray(capacities, dtype=np.float64), unit=unit)
