"""Many sites at once: continuous p-median (multisource Weber) and p-center.

Where to put ``p`` depots so that the total weighted travel is least (p-median), or so
that the worst weighted trip is shortest (p-center).

Every plan knows three tables, all computed by the kernel (no distance or load is
recomputed here):

* ``to_frame()`` — one row per demand point, in input order: ``assignment`` (the row of
  :meth:`~MedianPlan.sites_frame` serving it) and ``distance_<unit>`` (to that site);
  ``to_geodataframe()`` adds the demand point as a Point;
* ``sites_frame()`` — one row per site: ``x``, ``y``, ``load`` (summed weight served),
  ``points`` (demand points served), ``fixed`` (an existing site); ``sites_geodataframe()`` adds
  the site as a Point;
* ``summary()`` — the totals in one row: ``cost_<unit>`` (p-median) or
  ``weighted_radius_<unit>`` and ``radius_<unit>`` (p-center), the number of ``sites``, the
  ``load`` and ``points`` of demand served.

Grouped plans (``groups=``) have the same tables with ``group`` and ``problem`` columns in
front: ``to_frame`` keeps input order, ``sites_frame`` lists every group's sites in label
order (a group skipped with ``errors="skip"`` keeps one row holding its problem), and
``summary`` has one row per group.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._errors import refuse
from ._region import draw_region, region_rings
from ._results import Grouped, Result, as_points
from .capacity import CapacitatedMedianPlan, capacitated_p_median

__all__ = ["CenterPlan", "CenterPlans", "MedianPlan", "MedianPlans", "p_center", "p_median"]


def _point_geometry(xy: np.ndarray) -> np.ndarray:
    """One shapely Point per row of ``xy``; None where a coordinate is missing."""
    import shapely

    xy = np.asarray(xy, dtype=np.float64).reshape(-1, 2)
    out = np.empty(len(xy), dtype=object)
    present = np.isfinite(xy).all(axis=1)
    if present.any():
        out[present] = shapely.points(xy[present])
    return out


def _draw_plan(plan: Any, ax: Any, sites: np.ndarray, fixed: np.ndarray, style: dict[str, Any]) -> Any:
    """The one drawing of every plan: points coloured by their site, a thin line from each
    point to its site, the sites as outlined stars in the same colours above the points and
    fixed sites as white squares on top; a title with the objective, unit-labelled axes and a
    legend. Points without a site (``assignment`` -1) are left out; ``style`` goes to the
    points."""
    from matplotlib.collections import LineCollection

    from .plotting import draw_sites, finish, quantity, site_colours

    ax = plan._plot_axes(ax)
    draw_region(ax, plan.region)
    served = plan.assignment >= 0
    points, assignment = plan.points[served], plan.assignment[served]
    palette = np.asarray(site_colours(len(sites)))
    if len(points):
        colours = palette[assignment]
        segments = np.stack([points, sites[assignment]], axis=1)
        ax.add_collection(LineCollection(list(segments), colors=colours, linewidths=0.3, alpha=0.4, zorder=2))
        ax.scatter(points[:, 0], points[:, 1], **{"c": colours, "s": 6, "linewidths": 0, "zorder": 3,
                                                  "label": "demand points (colour = their site)", **style})
    draw_sites(ax, sites, list(palette), fixed=fixed, label="new sites" if fixed.any() else "sites")
    ax.autoscale_view()
    kind = "p-median" if isinstance(plan, (MedianPlan, MedianPlans)) else "p-center"
    if isinstance(plan, Grouped):
        title = f"{kind} plans of {len(plan.labels)} groups · {len(sites)} sites"
    elif kind == "p-median":
        title = (f"p-median plan · {len(sites)} sites · total weighted distance "
                 f"{quantity(plan.cost, plan.unit)} × weight")
    else:
        title = (f"p-center plan · {len(sites)} sites · largest weighted distance "
                 f"{quantity(plan.weighted_radius, plan.unit)} × weight")
    return finish(ax, title, plan.unit)


def _on_candidates(model: str, points: ArrayLike, p: int, weights: ArrayLike | None, candidates: ArrayLike, *,
                   fixed: ArrayLike | None, groups: Any, time_limit: Any, progress: Any, region: Any = None) -> Any:
    """The discrete form of ``model`` on straight-line costs to ``candidates``; with a
    ``region``, only the candidates it holds may open (indices stay the caller's)."""
    import dataclasses

    from . import discrete
    from ._region import candidates_in_region

    if groups is not None:
        error = _core.InputError("groups is not supported with candidates (sites chosen from a list)")
        error.argument = "groups"
        raise error
    if region is not None:
        every = np.ascontiguousarray(candidates, dtype=np.float64).reshape(-1, 2)
        candidates, rows = candidates_in_region(every, region)
        if fixed is not None:
            wanted = np.asarray(fixed, dtype=np.int64).reshape(-1)
            at = np.searchsorted(rows, wanted)
            outside = (at >= len(rows)) | (rows[np.minimum(at, len(rows) - 1)] != wanted)
            if outside.any():
                error = _core.InputError(f"fixed[{int(np.argmax(outside))}] = candidate {int(wanted[outside][0])} "
                                         "lies outside the region; an existing site must lie in it")
                error.argument = "fixed"
                raise error
            fixed = at
    watch = {"time_limit": time_limit, "progress": progress}
    if model == "p_median":
        chosen: Any = discrete.p_median_planar(points, candidates, p, weights, fixed=fixed, **watch)
    else:
        chosen = discrete.p_center_planar(points, candidates, p, weights, **watch)
    if region is None:
        return chosen
    return dataclasses.replace(chosen, open=rows[chosen.open], candidates=every)


def _capacitated(points: ArrayLike, p: int, weights: ArrayLike | None, capacities: ArrayLike | None, *,
                 candidates: ArrayLike | None, seed: int, effort: str, allow_unserved: bool,
                 time_limit: float | None, progress: Any, **unsupported: Any) -> CapacitatedMedianPlan:
    """``p_median(capacities=...)``: the one capacitated kernel, with the options it has no
    form of refused by name rather than ignored."""
    if capacities is None:
        refuse("allow_unserved", "allow_unserved applies only with capacities (sites that can each serve so much)")
    if allow_unserved:
        refuse("allow_unserved", "allow_unserved is not supported by the capacitated p-median: its capacities must "
                "hold the demand; to serve what fits from given sites use capacity_allocation(allow_unserved=True)")
    for name, value in unsupported.items():
        if value is not None and value is not False:
            refuse(name, f"{name} is not supported with capacities (the capacitated p-median has no such form)")
    if effort != "normal":
        refuse("effort", "effort is not supported with capacities (location-allocation runs until the cost "
                "stops falling)")
    return capacitated_p_median(points, p, capacities, weights, candidates=candidates, seed=seed,
                                time_limit=time_limit, progress=progress)


# ------------------------------------------------------------------------------- tables


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class _Plan(Result):
    """What :class:`MedianPlan` and :class:`CenterPlan` share: the sites, how every point is
    served, and the tables built from them."""

    sites: np.ndarray
    assignment: np.ndarray
    distance: np.ndarray
    load: np.ndarray
    count: np.ndarray
    total_load: float
    iterations: int
    converged: bool
    points: np.ndarray = dataclasses.field(repr=False)
    # The feasible region (vertices, ring offsets) the new sites were kept in, for plots.
    region: Any = dataclasses.field(default=None, kw_only=True, repr=False)

    def _site_xy(self) -> np.ndarray:
        """Every site's coordinates, in the order of ``assignment``."""
        return self.sites

    def _site_fixed(self) -> np.ndarray:
        return np.zeros(len(self.load), dtype=bool)

    def _objective(self) -> dict[str, Any]:
        """The plan's objective(s) as named one-row columns."""
        raise NotImplementedError

    def _columns(self) -> dict[str, Any]:
        return {"assignment": self.assignment, self._u("distance"): self.distance}

    def _geometry(self) -> Any:
        return _point_geometry(self.points)

    def _site_columns(self) -> dict[str, Any]:
        xy = self._site_xy()
        return {"x": xy[:, 0], "y": xy[:, 1], "load": self.load, "points": self.count, "fixed": self._site_fixed()}

    def sites_frame(self) -> Any:
        """One row per site (``x``, ``y``, ``load``, ``points``, ``fixed``); the row position is
        the site index that ``assignment`` and ``to_frame()["assignment"]`` hold."""
        import pandas as pd

        return pd.DataFrame(self._site_columns())

    def sites_geodataframe(self, crs: Any = None) -> Any:
        """:meth:`sites_frame` with every site as a Point, as a GeoDataFrame in ``crs``."""
        import geopandas as gpd

        geometry = gpd.GeoSeries(_point_geometry(self._site_xy()), crs=crs).values
        return gpd.GeoDataFrame(self._site_columns(), geometry=geometry, crs=crs)

    def summary(self) -> Any:
        """The plan's totals in one row: its objective, ``sites``, ``load``, ``points`` and
        ``iterations``."""
        import pandas as pd

        return pd.DataFrame({
            **self._objective(),
            "sites": [len(self.load)],
            "load": [self.total_load],
            "points": [len(self.assignment)],
            "iterations": [self.iterations],
        })

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the points coloured by their site, their links to it, the sites as outlined
        stars in the same colours and fixed sites as white squares above everything, with a
        title, unit-labelled axes and a legend; new axes when ``ax`` is None.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import placewise as pw
        >>> pts = [[0, 0], [1, 0], [10, 0], [11, 0]]
        >>> ax = pw.p_median(pts, 1, fixed=[[0.5, 0]]).plot()
        >>> [t.get_text() for t in ax.get_legend().get_texts()]
        ['demand points (colour = their site)', 'new sites', 'fixed sites']
        """
        return _draw_plan(self, ax, self._site_xy(), self._site_fixed(), style)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class _GroupedPlan(Grouped):
    """What :class:`MedianPlans` and :class:`CenterPlans` share: every group's sites (in CSR
    layout), how every input point is served, and the tables built from them."""

    # The feasible region (vertices, ring offsets) the new sites were kept in, for plots.
    region: Any = dataclasses.field(default=None, kw_only=True, repr=False)
    sites: np.ndarray
    load: np.ndarray
    count: np.ndarray
    total_load: np.ndarray
    iterations: np.ndarray
    converged: np.ndarray
    site_offsets: np.ndarray = dataclasses.field(repr=False)
    point_group: np.ndarray = dataclasses.field(repr=False)
    assignment: np.ndarray = dataclasses.field(repr=False)
    distance: np.ndarray = dataclasses.field(repr=False)
    points: np.ndarray = dataclasses.field(repr=False)

    def _site_fixed(self) -> np.ndarray:
        return np.zeros(len(self.load), dtype=bool)

    def _objective(self) -> dict[str, Any]:
        """The groups' objective(s) as named columns."""
        raise NotImplementedError

    def _row_groups(self) -> np.ndarray:
        return self.point_group

    def _columns(self) -> dict[str, Any]:
        # sites_frame() keeps one row for each skipped group (which has no sites), so a site's
        # row there is its index in `sites` plus the skipped groups before its own.
        before = np.cumsum(self.skipped) - self.skipped
        served = self.assignment >= 0
        row = np.where(served, self.assignment + before[self.point_group], -1)
        return {"assignment": row, self._u("distance"): self.distance}

    def _geometry(self) -> Any:
        return _point_geometry(self.points)

    def _site_frame(self, crs: Any, geometry: bool) -> Any:
        rows = np.repeat(np.arange(len(self.labels)), np.diff(self.site_offsets))
        columns = {
            "x": self.sites[:, 0],
            "y": self.sites[:, 1],
            "load": self.load,
            "points": self.count,
            "fixed": self._site_fixed(),
        }
        return self._framed(columns, _point_geometry(self.sites) if geometry else None, crs, rows=rows)

    def sites_frame(self) -> Any:
        """One row per site of every group (``group``, ``problem``, ``x``, ``y``, ``load``,
        ``points``, ``fixed``), groups in label order; a skipped group keeps one row holding
        its problem. The row position is what ``to_frame()["assignment"]`` holds."""
        return self._site_frame(None, geometry=False)

    def sites_geodataframe(self, crs: Any = None) -> Any:
        """:meth:`sites_frame` with every site as a Point, as a GeoDataFrame in ``crs``."""
        return self._site_frame(crs, geometry=True)

    def summary(self) -> Any:
        """One row per group: ``group``, ``problem``, the objective, ``sites``, ``load``,
        ``points`` (demand points in the group) and ``iterations``."""
        g = len(self.labels)
        columns = {
            **self._objective(),
            "sites": np.diff(self.site_offsets),
            "load": self.total_load,
            "points": np.bincount(self.point_group, minlength=g),
            "iterations": self.iterations,
        }
        return self._framed(columns, rows=np.arange(g))

    def _served(self, position: int) -> tuple[slice, dict[str, Any]]:
        """The rows of ``sites`` of the group at ``position``, and the fields its single plan
        shares with every plan (its points in input order, site indices made its own)."""
        at = slice(int(self.site_offsets[position]), int(self.site_offsets[position + 1]))
        members = np.flatnonzero(self.point_group == position)
        return at, {
            "assignment": self.assignment[members] - at.start,
            "distance": self.distance[members].copy(),
            "load": self.load[at].copy(),
            "count": self.count[at].copy(),
            "total_load": float(self.total_load[position]),
            "iterations": int(self.iterations[position]),
            "converged": bool(self.converged[position]),
            "points": self.points[members].copy(),
            "unit": self.unit,
            "region": self.region,
        }

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw every group's points coloured by their site, every site as an outlined star
        in its colour (fixed sites as white squares on top), a title, unit-labelled axes and
        a legend."""
        return _draw_plan(self, ax, self.sites, self._site_fixed(), style)


# ------------------------------------------------------------------------------ p-median


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class MedianPlan(_Plan):
    """A p-median plan: new sites and how every point is served.

    Attributes
    ----------
    sites : ndarray, shape (p, 2)
        The new sites.
    assignment : ndarray of int64, shape (n,)
        The nearest site of each point, indexing the new sites followed by the fixed ones
        (``0 .. p-1`` new, ``p .. p+f-1`` fixed).
    distance : ndarray, shape (n,)
        Distance from each point to its site.
    load : ndarray, shape (p + f,)
        Summed weight served by each site, in the order of ``assignment``.
    count : ndarray of int64, shape (p + f,)
        Points served by each site (weight zero included).
    total_load : float
        Summed weight of all points.
    iterations : int
    converged : bool
        False when ``time_limit`` cut the search short: the plan is the best found by then.
        Allocation–location rounds of Cooper's local step over the whole search.
    points : ndarray, shape (n, 2)
        The demand points (not shown in the repr).
    fixed : ndarray, shape (f, 2)
        The existing sites that served demand beside the new ones.
    cost : float
        Total weighted distance ``sum(w_i * distance_i)``, fixed sites included.

    ``to_frame()`` has one row per point (``assignment``, ``distance_<unit>``),
    ``sites_frame()`` one row per site (``x``, ``y``, ``load``, ``points``, ``fixed``) and
    ``summary()`` one row (``cost_<unit>``, ``sites``, ``load``, ``points``, ``iterations``).
    """

    fixed: np.ndarray
    cost: float

    def _site_xy(self) -> np.ndarray:
        return np.vstack([self.sites, self.fixed])

    def _site_fixed(self) -> np.ndarray:
        return np.arange(len(self.load)) >= len(self.sites)

    def _objective(self) -> dict[str, Any]:
        return {self._u("cost"): [self.cost]}


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class MedianPlans(_GroupedPlan):
    """p-median plans of many groups, sorted by label.

    ``len``, iteration and ``plans[label]`` give each group's :class:`MedianPlan`. The
    arrays hold every group at once:

    Attributes
    ----------
    labels : ndarray of int64, shape (G,)
        Sorted unique group labels.
    sites : ndarray, shape (S, 2)
        Every group's sites, groups in label order: its ``p`` new sites, then its fixed
        sites (in their order in ``fixed``); a skipped group has none.
    load : ndarray, shape (S,)
    count : ndarray of int64, shape (S,)
    total_load : ndarray, shape (G,)
        Per group (NaN when skipped).
    iterations : ndarray of int64, shape (G,)
    converged : ndarray of bool, shape (G,)
        Per group: False when ``time_limit`` cut its search short (or it was skipped).
    site_offsets : ndarray of int64, shape (G + 1,)
        Group ``g``'s sites are rows ``site_offsets[g]:site_offsets[g + 1]``.
    point_group : ndarray of int64, shape (n,)
        Position (in ``labels``) of every input point's group.
    assignment : ndarray of int64, shape (n,)
        Row of ``sites`` serving each input point; -1 in a skipped group.
    distance : ndarray, shape (n,)
        Distance from each input point to its site; NaN in a skipped group.
    points : ndarray, shape (n, 2)
        The demand points (not shown in the repr).
    fixed : ndarray of bool, shape (S,)
        True for an existing (fixed) site.
    cost : ndarray, shape (G,)
        Per group (NaN when skipped).
    """

    fixed: np.ndarray
    cost: np.ndarray

    def _site_fixed(self) -> np.ndarray:
        return self.fixed

    def _objective(self) -> dict[str, Any]:
        return {self._u("cost"): self.cost}

    def _item(self, position: int) -> MedianPlan:
        at, served = self._served(position)
        fixed = self.fixed[at]
        return MedianPlan(
            sites=self.sites[at][~fixed].copy(),
            fixed=self.sites[at][fixed].copy(),
            cost=float(self.cost[position]),
            **served,
        )


@overload
def p_median(
    points: ArrayLike,
    p: int,
    weights: ArrayLike | None = None,
    *,
    candidates: ArrayLike | None = None,
    groups: None = None,
    fixed: ArrayLike | None = None,
    fixed_groups: None = None,
    seed: int = 0,
    effort: Literal["fast", "normal", "thorough"] = "normal",
    errors: Literal["raise", "skip"] = "raise",
    time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
    region: Any = None,
    capacities: None = None,
    allow_unserved: bool = False,
) -> MedianPlan: ...


@overload
def p_median(
    points: ArrayLike,
    p: int,
    weights: ArrayLike | None = None,
    *,
    candidates: ArrayLike | None = None,
    groups: ArrayLike,
    fixed: ArrayLike | None = None,
    fixed_groups: ArrayLike | None = None,
    seed: int = 0,
    effort: Literal["fast", "normal", "thorough"] = "normal",
    errors: Literal["raise", "skip"] = "raise",
    time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
    region: Any = None,
    capacities: None = None,
    allow_unserved: bool = False,
) -> MedianPlans: ...


@overload
def p_median(
    points: ArrayLike,
    p: int,
    weights: ArrayLike | None = None,
    *,
    candidates: ArrayLike | None = None,
    groups: None = None,
    fixed: None = None,
    fixed_groups: None = None,
    seed: int = 0,
    effort: Literal["normal"] = "normal",
    errors: Literal["raise", "skip"] = "raise",
    time_limit: None = None,
    progress: Literal[False] = False,
    region: None = None,
    capacities: ArrayLike,
    allow_unserved: Literal[False] = False,
) -> CapacitatedMedianPlan: ...


def p_median(
    points: ArrayLike,
    p: int,
    weights: ArrayLike | None = None,
    *,
    candidates: ArrayLike | None = None,
    groups: ArrayLike | None = None,
    fixed: ArrayLike | None = None,
    fixed_groups: ArrayLike | None = None,
    seed: int = 0,
    effort: Literal["fast", "normal", "thorough"] = "normal",
    errors: Literal["raise", "skip"] = "raise",
    time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
    region: Any = None,
    capacities: ArrayLike | None = None,
    allow_unserved: bool = False,
) -> MedianPlan | MedianPlans | CapacitatedMedianPlan | Any:
    """The best ``p`` sites for weighted demand: least total weighted distance to the nearest site.

    The continuous p-median (multisource Weber) problem. Cooper's alternating
    location–allocation (1964) — every point to its nearest site, every site to the
    Fermat–Weber point of its cluster — is the local step inside a global search: seeded
    multi-start from D-sampling (the k-means++ seeding of Arthur and Vassilvitskii 2007,
    with distances), j-means jumps of one site to an unoccupied demand point (Hansen and
    Mladenović 2001) and variable neighbourhood search (Brimberg, Hansen, Mladenović and
    Taillard 2000). The same seed gives the same answer. ``p = 1`` without fixed sites is
    :func:`weber_point`.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations (planar coordinates, e.g. projected metres).
    p : int
        Number of new sites (per group with ``groups``), at least 1 and at most the number
        of distinct points with positive weight.
    weights : array_like, shape (n,), optional
        Finite, non-negative demand per point, not all zero. Default: all 1.
    candidates : array_like, shape (m, 2), optional
        Candidate locations: choose the ``p`` sites among them (the discrete p-median, see
        :func:`placewise.discrete.p_median`, on straight-line distances computed when
        asked) and return a ``placewise.discrete.MedianSelection`` whose ``open`` holds the
        candidate index of each site; ``fixed`` then holds candidate indices. ``seed`` and
        ``effort`` do not apply (the method is deterministic); ``groups`` is refused with
        candidates; ``time_limit`` and ``progress`` work as there (a plan cut short by the
        limit has a ``relative_gap`` above 0).
    groups : array_like of int, shape (n,), optional
        Group labels: plan every group at once (in parallel, the same ``p`` for each) and
        return ``MedianPlans``.
    fixed : array_like, shape (f, 2), optional
        Existing sites that stay where they are and serve demand too; ``p`` counts only the
        new ones.
    fixed_groups : array_like of int, shape (f,), optional
        With ``groups`` and ``fixed`` (and required then): the group label of each fixed
        site. A fixed site serves only its own group; one whose label has no points serves
        nobody.
    seed : int
        Seed of the randomised search, from 0 to 2**64 - 1.
    effort : {"fast", "normal", "thorough"}
        Time against quality: "fast" is one short search; "normal" runs the fast search and
        then a longer one, "thorough" both and then a longer one still, and the best plan
        wins, so more effort never gives a worse plan (same input and seed).
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without an answer (smallest
        label); ``"skip"`` keeps such a group with its ``problem`` and plans the rest.
    time_limit : float, optional
        Seconds (finite, above zero) that one plan (each group's, with ``groups``) may take;
        when they pass, the best plan found so far is returned with ``converged`` False.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while the
        search runs. Ctrl-C stops the search within a fraction of a second and raises
        ``KeyboardInterrupt``.
    region : shapely Polygon or MultiPolygon, or array_like of shape (m, 2), optional
        Where the new sites may go: a polygon with holes (or several), or one ring, in the
        points' coordinates; its rings must not cross. Every new site then lies in the
        region (boundary included): each site's location step is the restricted
        Fermat–Weber point (the free one when the region holds it, else the best boundary
        point; Hamacher and Nickel 1995), and every start, jump and shake target is moved to
        the nearest point of the region. Fixed sites stay where they are. One region serves
        every group.
    capacities : array_like, optional
        Demand each site can serve (in weight units): the capacitated p-median, solved by
        :func:`placewise.capacitated_p_median` (location–allocation with the exact
        transportation plan as allocation step; a point's demand may be split between
        sites). Without ``candidates``: shape (p,), one capacity per site to place. With
        ``candidates``: shape (m,), one per candidate; the plan then reports a proven lower
        bound and gap (``median_relative_gap``). Returns a
        :class:`placewise.CapacitatedMedianPlan`, whose ``sites_frame()`` has every site's
        ``capacity``, ``load`` and ``slack``. ``time_limit`` and ``progress`` work as in
        :func:`placewise.capacitated_p_median` (a plan cut short has ``converged`` False).
        ``groups``, ``fixed``, ``region`` and an ``effort`` other than "normal" are refused
        with capacities (the capacitated search has no such forms).
    allow_unserved : bool
        Only meaningful with ``capacities``, and not supported by the capacitated p-median:
        True is refused with an ``InputError`` (a plan of ``p`` sites needs capacities that
        hold the demand; :func:`placewise.capacity_allocation` serves what fits from given
        sites). With capacities below the demand the call raises an ``InputError`` stating
        the shortfall.

    Returns
    -------
    MedianPlan, or MedianPlans when ``groups`` is given, or CapacitatedMedianPlan with
    ``capacities``.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, negative, all-zero or wrong-length weights,
        ``p`` or ``seed`` not an integer in range, an unknown ``effort``, a ``time_limit``
        that is not a number above zero, a ``progress`` that is neither a bool nor callable,
        or ``fixed`` with
        ``groups`` but without ``fixed_groups``. Its ``group`` and ``row`` attributes name
        the group label and input row concerned.
    DegenerateInputError
        When fewer than ``p`` distinct points carry positive weight (in a group).
        Also for a region without area or whose rings cross or overlap (``argument`` is
        ``"region"``; NaN vertices are an ``InputError``).

    Examples
    --------
    >>> import placewise as pw
    >>> plan = pw.p_median([[0, 0], [1, 0], [10, 0], [11, 0]], 2)
    >>> float(plan.cost)          # each pair's site anywhere between the two points
    2.0
    >>> plan.load, plan.count
    (array([2., 2.]), array([2, 2]))
    >>> pw.p_median([[0, 0], [5, 5]], 2).cost     # one site per point: nothing to travel
    0.0
    >>> near = pw.p_median([[0, 0], [2, 0], [1, 0], [10, 0]], 1, fixed=[[10, 0]])
    >>> near.to_frame()                    # the new site at the middle point, (1, 0)
       assignment  distance_u
    0           0         1.0
    1           0         1.0
    2           0         0.0
    3           1         0.0
    >>> near.sites_frame()
          x    y  load  points  fixed
    0   1.0  0.0   3.0      3  False
    1  10.0  0.0   1.0      1   True
    >>> line = [[0, 0], [1, 0], [2, 0], [5, 5], [5, 6], [5, 7]]
    >>> plans = pw.p_median(line, 1, groups=[1, 1, 1, 2, 2, 2])
    >>> plans.summary()[["group", "cost_u", "sites", "load"]]
       group  cost_u  sites  load
    0      1     2.0      1   3.0
    1      2     2.0      1   3.0
    >>> plans[2].sites
    array([[5., 6.]])
    >>> skipped = pw.p_median(line, 2, groups=[1, 1, 1, 2, 2, 2], weights=[1, 1, 1, 1, 0, 0], errors="skip")
    >>> skipped.problem[1]
    'group 2: points must hold at least 2 distinct points with positive weight (one per site); got 1'
    >>> seen = []
    >>> quick = pw.p_median(line, 2, time_limit=10.0, progress=lambda done, total: seen.append(done))
    >>> quick.converged, float(quick.cost)       # (0, 0)-(2, 0) and (5, 5)-(5, 7): 2 + 2
    (True, 4.0)
    >>> parcels = [[1, 1], [5, 5], [10, 1]]                  # only these may be bought
    >>> pick = pw.p_median([[0, 0], [2, 0], [9, 0], [11, 0]], 2, candidates=parcels)
    >>> pick.open, pick.sites.tolist()
    (array([0, 2]), [[1.0, 1.0], [10.0, 1.0]])

    Two depots that may only stand on a strip of land along y = 3 (the demand lies off it):

    >>> strip = [[-1, 3], [12, 3], [12, 4], [-1, 4]]
    >>> kept = pw.p_median([[0, 0], [1, 0], [10, 0], [11, 0]], 2, region=strip)
    >>> sorted(kept.sites[:, 1].round(9).tolist()), round(float(kept.cost), 6)   # 4 × √(3² + 0.5²)
    ([3.0, 3.0], 12.165525)

    Two depots holding 2 units of demand each, for a cluster of three homes and a lone one:
    one home of the cluster goes to the far depot.

    >>> homes = [[0, 0], [1, 0], [2, 0], [10, 0]]
    >>> held = pw.p_median(homes, 2, capacities=[2, 2])
    >>> held.load.tolist(), held.slack.tolist()
    ([2.0, 2.0], [0.0, 0.0])
    >>> pw.p_median(homes, 2, capacities=[1, 2])
    Traceback (most recent call last):
        ...
    placewise.InputError: capacities: total capacity 3 is below total demand 4, 1 short; ...

    See Also
    --------
    weber_point : the best single site.
    p_center : the ``p`` sites minimising the worst weighted trip.
    """
    if capacities is not None or allow_unserved:
        return _capacitated(points, p, weights, capacities, candidates=candidates, seed=seed, effort=effort,
                            allow_unserved=allow_unserved, groups=groups, fixed=fixed, fixed_groups=fixed_groups,
                            time_limit=time_limit, progress=progress, region=region)
    if candidates is not None:
        return _on_candidates("p_median", points, p, weights, candidates, fixed=fixed, groups=groups,
                              time_limit=time_limit, progress=progress, region=region)
    vertices, offsets = region_rings(region)
    shown = None if vertices is None else (vertices, offsets)
    if groups is None:
        if fixed_groups is not None:
            error = _core.InputError("fixed_groups is given without groups: it names the group each fixed site serves")
            error.argument = "fixed_groups"
            raise error
        fields = _core.p_median_single(points, p, weights, fixed, seed, effort, time_limit, progress, vertices, offsets)
        return MedianPlan(**fields, points=as_points(points), region=shown)
    fields = _core.p_median_grouped(
        points, p, weights, groups, fixed, fixed_groups, seed, effort, errors, time_limit, progress, vertices, offsets
    )
    return MedianPlans._from_core(fields, points=as_points(points), region=shown)


# ------------------------------------------------------------------------------ p-center


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CenterPlan(_Plan):
    """A p-center plan: sites and how every point is served.

    Attributes
    ----------
    sites : ndarray, shape (p, 2)
    assignment : ndarray of int64, shape (n,)
        The nearest site of each point.
    distance : ndarray, shape (n,)
        Distance from each point to its site.
    load : ndarray, shape (p,)
        Summed weight served by each site.
    count : ndarray of int64, shape (p,)
        Points served by each site (weight zero included).
    total_load : float
        Summed weight of all points.
    iterations : int
    converged : bool
        False when ``time_limit`` cut the search short: the plan is the best found by then.
        Allocation–minimax rounds performed.
    points : ndarray, shape (n, 2)
        The demand points (not shown in the repr).
    weighted_radius : float
        The objective: the largest weighted distance ``w_i * distance_i``.
    radius : float
        The largest distance ``distance_i`` (every point lies within it of its site); equal
        to ``weighted_radius`` for unit weights.
    optimal : bool
        True when the plan is proven optimal (instances of at most 10 distinct points of
        positive weight are solved exactly, as are ``p = 1`` and ``p`` = that count).

    ``to_frame()`` has one row per point (``assignment``, ``distance_<unit>``),
    ``sites_frame()`` one row per site (``x``, ``y``, ``load``, ``points``, ``fixed``, always
    False) and ``summary()`` one row (``weighted_radius_<unit>``, ``radius_<unit>``,
    ``optimal``, ``sites``, ``load``, ``points``, ``iterations``).
    """

    weighted_radius: float
    radius: float
    optimal: bool

    def _objective(self) -> dict[str, Any]:
        return {
            self._u("weighted_radius"): [self.weighted_radius],
            self._u("radius"): [self.radius],
            "optimal": [self.optimal],
        }


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CenterPlans(_GroupedPlan):
    """p-center plans of many groups, sorted by label.

    ``len``, iteration and ``plans[label]`` give each group's :class:`CenterPlan`.

    Attributes
    ----------
    labels : ndarray of int64, shape (G,)
        Sorted unique group labels.
    sites : ndarray, shape (S, 2)
        Every group's ``p`` sites, groups in label order; a skipped group has none.
    load : ndarray, shape (S,)
    count : ndarray of int64, shape (S,)
    total_load : ndarray, shape (G,)
        Per group (NaN when skipped).
    iterations : ndarray of int64, shape (G,)
    converged : ndarray of bool, shape (G,)
        Per group: False when ``time_limit`` cut its search short (or it was skipped).
    site_offsets : ndarray of int64, shape (G + 1,)
        Group ``g``'s sites are rows ``site_offsets[g]:site_offsets[g + 1]``.
    point_group : ndarray of int64, shape (n,)
        Position (in ``labels``) of every input point's group.
    assignment : ndarray of int64, shape (n,)
        Row of ``sites`` serving each input point; -1 in a skipped group.
    distance : ndarray, shape (n,)
        Distance from each input point to its site; NaN in a skipped group.
    points : ndarray, shape (n, 2)
        The demand points (not shown in the repr).
    weighted_radius, radius : ndarray, shape (G,)
        Per group (NaN when skipped).
    optimal : ndarray of bool, shape (G,)
    """

    weighted_radius: np.ndarray
    radius: np.ndarray
    optimal: np.ndarray

    def _objective(self) -> dict[str, Any]:
        return {
            self._u("weighted_radius"): self.weighted_radius,
            self._u("radius"): self.radius,
            "optimal": self.optimal,
        }

    def _item(self, position: int) -> CenterPlan:
        at, served = self._served(position)
        return CenterPlan(
            sites=self.sites[at].copy(),
            weighted_radius=float(self.weighted_radius[position]),
            radius=float(self.radius[position]),
            optimal=bool(self.optimal[position]),
            **served,
        )


@overload
def p_center(
    points: ArrayLike,
    p: int,
    weights: ArrayLike | None = None,
    *,
    candidates: ArrayLike | None = None,
    groups: None = None,
    seed: int = 0,
    effort: Literal["fast", "normal", "thorough"] = "normal",
    errors: Literal["raise", "skip"] = "raise",
    time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
    region: Any = None,
) -> CenterPlan: ...


@overload
def p_center(
    points: ArrayLike,
    p: int,
    weights: ArrayLike | None = None,
    *,
    candidates: ArrayLike | None = None,
    groups: ArrayLike,
    seed: int = 0,
    effort: Literal["fast", "normal", "thorough"] = "normal",
    errors: Literal["raise", "skip"] = "raise",
    time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
    region: Any = None,
) -> CenterPlans: ...


def p_center(
    points: ArrayLike,
    p: int,
    weights: ArrayLike | None = None,
    *,
    candidates: ArrayLike | None = None,
    groups: ArrayLike | None = None,
    seed: int = 0,
    effort: Literal["fast", "normal", "thorough"] = "normal",
    errors: Literal["raise", "skip"] = "raise",
    time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
    region: Any = None,
) -> CenterPlan | CenterPlans:
    """``p`` sites minimising the largest weighted distance from a point to its nearest site.

    The continuous (weighted) p-center problem. Drezner's alternating method (1984) — every
    point to its nearest site, every site to the minimax point of its cluster — with a
    hand-over of the points fixing the largest circle to neighbouring clusters, from seeded
    restarts (farthest-first, Gonzalez 1985, and D-sampling starts; 2, 16 or 64 by
    ``effort``). Beyond 20,000 distinct locations each restart first descends on a growing
    working set of them (the relaxation of Chen and Chen 2009), then once on all. Instances
    with at most 10 distinct points of positive weight are solved exactly by branch and bound
    over all splits into ``p`` clusters. ``p = 1`` is :func:`minimax_point`.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations (planar coordinates).
    p : int
        Number of sites (per group with ``groups``), at least 1 and at most the number of
        distinct points with positive weight.
    weights : array_like, shape (n,), optional
        Finite, non-negative weights, not all zero: the objective is ``max(w_i * d_i)``.
        Points of weight zero are allocated but do not pull the sites. Default: all 1.
    candidates : array_like, shape (m, 2), optional
        Candidate locations: choose the ``p`` sites among them (the discrete p-center, see
        :func:`placewise.discrete.p_center`) and return a
        ``placewise.discrete.CenterSelection`` whose ``open`` holds the candidate index of
        each site; ``groups`` is refused with candidates; ``time_limit`` and ``progress``
        work as there.
    groups : array_like of int, shape (n,), optional
        Group labels: plan every group at once (in parallel, the same ``p`` for each) and
        return ``CenterPlans``.
    seed : int
        Seed of the restarts, from 0 to 2**64 - 1.
    effort : {"fast", "normal", "thorough"}
        Time against quality: 2, 16 or 64 restarts. A higher effort runs the lower one's
        restarts first and keeps the best plan, so more effort never gives a larger radius
        (same input and seed).
    errors : {"raise", "skip"}
        With ``groups``: ``"raise"`` fails on the first group without an answer (smallest
        label); ``"skip"`` keeps such a group with its ``problem`` and plans the rest.
    time_limit : float, optional
        Seconds (finite, above zero) that one plan (each group's, with ``groups``) may take;
        when they pass, the best plan found so far is returned with ``converged`` False.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while the
        search runs. Ctrl-C stops the search within a fraction of a second and raises
        ``KeyboardInterrupt``.
    region : shapely Polygon or MultiPolygon, or array_like of shape (m, 2), optional
        Where the sites may go: a polygon with holes (or several), or one ring, in the
        points' coordinates; its rings must not cross. Every site then lies in the region
        (boundary included): each cluster's site is its restricted minimax point (the free
        one when the region holds it, else the best boundary point; Hamacher and Nickel
        1995) and every start is moved to the nearest point of the region; tiny instances
        are still solved exactly. One region serves every group.

    Returns
    -------
    CenterPlan, or CenterPlans when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates, bad shapes, bad weights, ``p`` or ``seed`` not an integer
        in range, an unknown ``effort``, a ``time_limit`` that is not a number above zero, or a
        ``progress`` that is neither a bool nor callable. Its ``group`` and ``row`` attributes
        name the group label and input row concerned.
    DegenerateInputError
        When fewer than ``p`` distinct points carry positive weight (in a group).
        Also for a region without area or whose rings cross or overlap (``argument`` is
        ``"region"``; NaN vertices are an ``InputError``).

    Examples
    --------
    >>> import placewise as pw
    >>> square = [[0, 0], [2, 0], [0, 2], [2, 2]]
    >>> far = [[20, 0], [22, 0], [20, 2], [22, 2]]
    >>> plan = pw.p_center(square + far, 2)
    >>> round(plan.weighted_radius, 12), plan.optimal     # each square's circle: radius sqrt(2)
    (1.414213562373, True)
    >>> plan.count
    array([4, 4])
    >>> round(pw.p_center(square + far, 2, effort="fast").weighted_radius, 12)
    1.414213562373
    >>> pw.p_center([[1, 1], [1, 1], [4, 5]], 2).weighted_radius   # a site on each distinct point
    0.0
    >>> heavy = pw.p_center([[0, 0], [4, 0]], 1, [3, 1])    # the site moves toward the heavy point
    >>> heavy.sites, heavy.weighted_radius, heavy.radius
    (array([[1., 0.]]), 3.0, 3.0)
    >>> pw.p_center(square + far, 2, candidates=[[1, 1], [11, 1], [21, 1]]).open
    array([0, 2])
    >>> plans = pw.p_center(square + far, 1, groups=[0] * 4 + [1] * 4)
    >>> plans.summary()[["group", "weighted_radius_u", "sites", "points"]].round(6)
       group  weighted_radius_u  sites  points
    0      0           1.414214      1      4
    1      1           1.414214      1      4

    Two masts kept out of a lake between the squares' centres (a hole in the allowed land):

    >>> land = [[-5, -5], [27, -5], [27, 7], [-5, 7]]
    >>> lake = [[0.5, 0.5], [0.5, 1.5], [21.5, 1.5], [21.5, 0.5]]
    >>> from shapely import Polygon
    >>> kept = pw.p_center(square + far, 2, region=Polygon(land, [lake]))
    >>> round(kept.weighted_radius, 6)     # (1, 1.5): farthest corners at √(1 + 1.5²)
    1.802776

    See Also
    --------
    minimax_point : the best single site for the worst trip.
    p_median : the ``p`` sites minimising the total weighted trip.
    """
    if candidates is not None:
        return _on_candidates("p_center", points, p, weights, candidates, fixed=None, groups=groups,
                              time_limit=time_limit, progress=progress, region=region)
    vertices, offsets = region_rings(region)
    shown = None if vertices is None else (vertices, offsets)
    if groups is None:
        fields = _core.p_center_single(points, p, weights, seed, effort, time_limit, progress, vertices, offsets)
        return CenterPlan(**fields, points=as_points(points), region=shown)
    fields = _core.p_center_grouped(
        points, p, weights, groups, seed, effort, errors, time_limit, progress, vertices, offsets
    )
    return CenterPlans._from_core(fields, points=as_points(points), region=shown)
