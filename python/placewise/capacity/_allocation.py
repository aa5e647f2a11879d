"""Demand allocated to given capacitated sites: CapacityPlan, capacity_allocation."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._results import Result, _require_pandas, as_points


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
        split plan (distance units per unit of demand; 0 where a site has slack). A split
        plan's loads stay within the capacities, and a site of capacity 0 serves nothing: the
        rounding residues of the solve move to another site their point uses that has room.
        Only where the amounts at a site sum past its capacity by rounding and its points use
        no other site with room does a load pass its capacity, by at most 4 ulps of the total
        demand; a single-source plan, whose points cannot split, may do the same.
    total_cost, total_demand, total_unserved : float
        ``Σ cost``, ``Σ weights`` and ``Σ unserved``.
    lower_bound, relative_gap : float
        A proven lower bound on the cost of any plan of the same kind (the split plan's
        cost; for a single-source plan the exhaustive search proved optimal, that plan's
        own cost) and ``(total_cost - lower_bound) / total_cost``: 0 for a split plan and a
        proven single-source optimum; NaN when a single-source plan leaves more demand
        unserved than the split one.
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
        from ..plotting import INK, draw_sites, finish, site_colours

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
    ``split=False`` every point is served whole by one site: that single-source problem
    (the generalised assignment problem) is NP-hard. The plan is the best of three starts
    (the split plan with its shared points placed whole, heaviest first, at the cheapest
    site with room; every point, heaviest first, at the cheapest site with room; and at the
    site with least room that holds it), each improved by moving a point to a cheaper site
    with room and by two points trading sites (Osman 1995), within a fixed budget of work.
    The split optimum is a proven lower bound (``lower_bound``), so ``relative_gap`` bounds
    how far the plan can be from the best. With at most 256 points with demand and
    capacity for all of it, an exhaustive search (branch and bound under the split plan's
    capacity prices) follows within a fixed budget of work: when it finishes, the plan is
    the proven single-source optimum, ``lower_bound`` its cost and ``relative_gap`` 0.

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
        Allow a point's demand to be shared between sites (exact); False serves each point
        whole from one site (heuristic with the proven ``relative_gap``, proven optimal on
        small instances when the gap is 0).
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
        ``allow_unserved``; with ``split=False``, a point the heuristic found no site with
        room for whole (when the exhaustive search finished, no single-source plan exists
        and the message says so; otherwise one may still exist on very tight capacities);
        total demand times the points' and sites' extent beyond about 2.8e306, where costs
        overflow float64 (rescale the coordinates or the weights); a ``time_limit`` that is
        not a number above zero, or that passed before the plan.

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
