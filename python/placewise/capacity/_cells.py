"""Capacity-constrained catchments: CapacityCellPolygons, CapacityCells, capacity_cells."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._region import region_rings
from .._results import Result, _require_pandas, as_points
from ..partition import _Cells


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
        from ..plotting import finish, site_colours

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
    region : shapely Polygon or MultiPolygon, GeoSeries or GeoDataFrame (its rows' union), or (r, 2) ring, optional
        The study region the cells are clipped to (holes and several parts allowed), as for
        :func:`~placewise.voronoi_cells`; it must hold every point. Default: the bounding
        box of the points and sites together, grown by 10 % on every side (a nearly flat box
        widened as for :func:`~placewise.voronoi_cells`).
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
        whose rings cross; points and sites all at one location without a region;
        coordinates so large (near 1e154 and beyond) that the cost, the powers or the
        cells' areas overflow float64 (naming ``points``). Coordinates that small or large
        are otherwise solved in an exactly scaled frame, so the plan does not depend on
        the scale.

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
