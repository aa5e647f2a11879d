"""p-median plans on coordinates (multisource Weber), single and grouped."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._errors import check_errors
from .._region import region_rings
from .._results import as_points
from ..capacity import CapacitatedMedianPlan
from ._forms import _capacitated, _on_candidates
from ._plans import _GroupedPlan, _Plan


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
        candidate index of each site; ``fixed`` then holds candidate indices. ``seed`` seeds
        its search's random jumps; ``time_limit`` and ``progress`` work as there (a plan cut
        short by the limit has a ``relative_gap`` above 0). ``groups``, ``fixed_groups``,
        ``errors`` and an ``effort`` other than "normal" do not apply with candidates and
        are refused with an ``InputError``.
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: plan every group at once (in parallel, the same ``p`` for each) and
        return ``MedianPlans``.
    fixed : array_like, shape (f, 2), optional
        Existing sites that stay where they are and serve demand too; ``p`` counts only the
        new ones. With ``candidates``: shape (f,), the indices of the candidates that are
        existing sites (a two-column array is refused: the candidates hold the coordinates).
    fixed_groups : array_like of int (int64 range), shape (f,), optional
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
    region : shapely Polygon or MultiPolygon, GeoSeries or GeoDataFrame (its rows' union), or (m, 2) ring, optional
        Where the new sites may go: a polygon with holes (or several), or one ring, in the
        points' coordinates; its rings must not cross. Every new site then lies in the
        region (boundary included): each site's location step is the restricted
        Fermat–Weber point (the free one when the region holds it, else the best boundary
        point; Hamacher and Nickel 1995), and every start, jump and shake target is moved to
        the nearest point of the region. Fixed sites stay where they are. One region serves
        every group. With ``candidates``, only those the region holds may open as new sites;
        a fixed candidate (an existing site) is kept wherever it lies.
    capacities : array_like, optional
        Demand each site can serve (in weight units): the capacitated p-median, solved by
        :func:`placewise.capacitated_p_median` (location–allocation with the exact
        transportation plan as allocation step, and with candidates the swap interchange
        and a Lagrangian heuristic; a point's demand may be split between sites). Without
        ``candidates``: shape (p,), one capacity per site to place. With ``candidates``:
        shape (m,), one per candidate; the plan then reports a proven lower bound and gap
        (``median_relative_gap``). Returns a
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
        ``fixed`` with ``groups`` but without ``fixed_groups``, or with ``candidates`` a
        ``fixed`` that is not a one-dimensional sequence of distinct candidate indices or an
        option that does not apply there (see ``candidates``). Its ``group`` and ``row`` attributes name
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

    The same parcels with a zoning box that holds only the first two, and an existing depot
    on the third: it stays, outside the box, and one new site opens inside it.

    >>> import shapely
    >>> zoned = pw.p_median([[0, 0], [2, 0], [9, 0], [11, 0]], 1, candidates=parcels, fixed=[2],
    ...                     region=shapely.box(0, 0, 6, 6))
    >>> zoned.open, zoned.fixed
    (array([0, 2]), array([False,  True]))

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
                              time_limit=time_limit, progress=progress, region=region, seed=seed, effort=effort,
                              errors=errors, fixed_groups=fixed_groups)
    vertices, offsets = region_rings(region)
    shown = None if vertices is None else (vertices, offsets)
    check_errors(errors)
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
