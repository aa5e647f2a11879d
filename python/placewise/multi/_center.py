"""p-center plans on coordinates, single and grouped."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._errors import check_errors, refuse
from .._region import region_rings
from .._results import as_points
from ._forms import _on_candidates
from ._plans import _GroupedPlan, _Plan


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CenterPlan(_Plan):
    """A p-center plan: new sites and how every point is served.

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
        Allocation–minimax rounds performed.
    points : ndarray, shape (n, 2)
        The demand points (not shown in the repr).
    fixed : ndarray, shape (f, 2)
        The existing sites that served demand beside the new ones.
    weighted_radius : float
        The objective: the largest weighted distance ``w_i * distance_i``, fixed sites
        included.
    radius : float
        The largest distance ``distance_i`` (every point lies within it of its site); equal
        to ``weighted_radius`` for unit weights.
    optimal : bool
        True when the plan is proven optimal (instances of at most 10 distinct points of
        positive weight are solved exactly, as are ``p = 1`` and ``p`` = that count; beside
        fixed sites, when every inner p-center of the threshold search was).

    ``to_frame()`` has one row per point (``assignment``, ``distance_<unit>``),
    ``sites_frame()`` one row per site (``x``, ``y``, ``load``, ``points``, ``fixed``) and
    ``summary()`` one row (``weighted_radius_<unit>``, ``radius_<unit>``, ``optimal``,
    ``sites``, ``load``, ``points``, ``iterations``).
    """

    fixed: np.ndarray
    weighted_radius: float
    radius: float
    optimal: bool

    def _site_xy(self) -> np.ndarray:
        return np.vstack([self.sites, self.fixed])

    def _site_fixed(self) -> np.ndarray:
        return np.arange(len(self.load)) >= len(self.sites)

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
    weighted_radius, radius : ndarray, shape (G,)
        Per group (NaN when skipped).
    optimal : ndarray of bool, shape (G,)
    """

    fixed: np.ndarray
    weighted_radius: np.ndarray
    radius: np.ndarray
    optimal: np.ndarray

    def _site_fixed(self) -> np.ndarray:
        return self.fixed

    def _objective(self) -> dict[str, Any]:
        return {
            self._u("weighted_radius"): self.weighted_radius,
            self._u("radius"): self.radius,
            "optimal": self.optimal,
        }

    def _item(self, position: int) -> CenterPlan:
        at, served = self._served(position)
        fixed = self.fixed[at]
        return CenterPlan(
            sites=self.sites[at][~fixed].copy(),
            fixed=self.sites[at][fixed].copy(),
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
    fixed: ArrayLike | None = None,
    fixed_groups: None = None,
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
    fixed: ArrayLike | None = None,
    fixed_groups: ArrayLike | None = None,
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
    fixed: ArrayLike | None = None,
    fixed_groups: ArrayLike | None = None,
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

    Beside ``fixed`` existing sites (the conditional p-center) the new sites serve the points
    the existing ones serve worst: with ``c_i = w_i * d(a_i, fixed)``, the best plan is the
    least ``max(t, g(t))`` over thresholds ``t`` in ``{0} ∪ {c_i}``, ``g(t)`` being the
    p-center value of the points with ``c_i > t`` (Drezner 1989); a binary search over the
    sorted ``c_i`` finds it with about ``log2(n)`` such p-centers, each solved as above.

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
        each site; ``fixed`` then holds candidate indices; ``time_limit`` and ``progress``
        work as there. ``groups``, ``fixed_groups``, ``errors``, a ``seed`` other than 0 (the
        discrete search has no random step) and an ``effort`` other than "normal" do not
        apply with candidates and are refused with an ``InputError``.
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: plan every group at once (in parallel, the same ``p`` for each) and
        return ``CenterPlans``.
    fixed : array_like, shape (f, 2), optional
        Existing sites that stay where they are and serve demand too; ``p`` counts only the
        new ones. They may lie outside ``region``. An empty array is the same as none. With
        ``candidates``: shape (f,), the indices of the candidates that are existing sites
        (a two-column array is refused: the candidates hold the coordinates); such a
        candidate too may lie outside ``region``.
    fixed_groups : array_like of int (int64 range), shape (f,), optional
        With ``groups`` and ``fixed`` (and required then): the group label of each fixed
        site. A fixed site serves only its own group; one whose label has no points serves
        nobody.
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
        when they pass, the best plan found so far is returned with ``converged`` False
        (beside fixed sites the limit bounds the whole threshold search).
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while the
        search runs. Ctrl-C stops the search within a fraction of a second and raises
        ``KeyboardInterrupt``.
    region : shapely Polygon or MultiPolygon, GeoSeries or GeoDataFrame (its rows' union), or (m, 2) ring, optional
        Where the new sites may go: a polygon with holes (or several), or one ring, in the
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
        in range, an unknown ``effort``, a ``time_limit`` that is not a number above zero, a
        ``progress`` that is neither a bool nor callable, NaN/inf coordinates in ``fixed``,
        ``fixed`` with ``groups`` but without ``fixed_groups``, or with ``candidates`` a
        ``fixed`` that is not a one-dimensional sequence of distinct candidate indices or an
        option that does not apply there (see ``candidates``). Its ``group`` and ``row``
        attributes name the group label and input row concerned.
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

    An existing site at the first square's centre: the one new site goes to the other.

    >>> kept_on = pw.p_center(square + far, 1, fixed=[[1, 1]])
    >>> kept_on.sites, round(kept_on.weighted_radius, 12), kept_on.optimal
    (array([[21.,  1.]]), 1.414213562373, True)
    >>> kept_on.sites_frame()
          x    y  load  points  fixed
    0  21.0  1.0   4.0       4  False
    1   1.0  1.0   4.0       4   True
    >>> pw.p_center(square + far, 1, candidates=[[1, 1], [11, 1], [21, 1]], fixed=[0]).open
    array([0, 2])
    >>> from shapely import box          # new sites east of x = 5; the existing one stays west
    >>> pw.p_center(square + far, 1, candidates=[[1, 1], [11, 1], [21, 1]], fixed=[0], region=box(5, -5, 30, 7)).open
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
        return _on_candidates("p_center", points, p, weights, candidates, fixed=fixed, groups=groups,
                              time_limit=time_limit, progress=progress, region=region, seed=seed, effort=effort,
                              errors=errors, fixed_groups=fixed_groups)
    vertices, offsets = region_rings(region)
    shown = None if vertices is None else (vertices, offsets)
    check_errors(errors)
    if groups is None:
        if fixed_groups is not None:
            refuse("fixed_groups", "fixed_groups is given without groups: it names the group each fixed site serves")
        fields = _core.p_center_single(points, p, weights, fixed, seed, effort, time_limit, progress, vertices,
                                       offsets)
        return CenterPlan(**fields, points=as_points(points), region=shown)
    fields = _core.p_center_grouped(
        points, p, weights, groups, fixed, fixed_groups, seed, effort, errors, time_limit, progress, vertices, offsets
    )
    return CenterPlans._from_core(fields, points=as_points(points), region=shown)
