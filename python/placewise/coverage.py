"""Coverage standards and today's network on coordinates.

* :func:`cover_all` — the fewest sites, among candidate locations or anywhere, putting
  every point within ``radius`` (location set covering; Toregas, Swain, ReVelle & Bergman 1971);
* :func:`cover_most` — ``p`` sites covering the most weight within ``radius`` (maximal
  covering; Church & ReVelle 1974);
* :func:`evaluate_sites` — how the sites of an existing network serve the demand, with the
  same numbers the planners report, so a plan and the status quo compare line by line.

They take coordinates and delegate to :mod:`placewise.discrete` with straight-line costs,
computed when asked (no ``n × m`` matrix is held when it would not fit; the candidates
within the radius come from an R*-tree). Results report the sites, the covered weight and
share, the uncovered points, every point's number of covering sites (backup coverage;
Hogan & ReVelle 1986), a proven bound and ``.plot()`` with the coverage disks.

Sites from these functions are planning aids under the stated model (straight-line
distance, a single coverage standard); they defer to local regulations and licensed
professional judgement.
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable

import numpy as np
from numpy.typing import ArrayLike

from . import discrete
from ._errors import refuse

__all__ = ["cover_all", "cover_most", "evaluate_sites"]


def _candidates(points: ArrayLike, radius: float, candidates: ArrayLike | None,
                time_limit: float | None = None, fixed: np.ndarray | None = None) -> ArrayLike:
    """The given candidates, or for sites anywhere the finite dominating set of Church (1984):
    the points and the intersections of the circles of ``radius`` around them, one per
    distinct set of covered points (computed by the kernel, which refuses, naming
    ``time_limit``, when the time passes before the set is complete)."""
    if candidates is not None:
        return candidates
    from . import _core

    return _core.discrete_circle_candidates(points, radius, time_limit, fixed)


def _anywhere_with_fixed(points: ArrayLike, radius: float, fixed: ArrayLike | None,
                         time_limit: float | None) -> tuple[np.ndarray, np.ndarray | None]:
    """The candidates for sites anywhere beside existing sites at the coordinates ``fixed``:
    the finite dominating set of the points, then the existing sites, and the indices of
    those (``None`` without them). The set still dominates every new site: any location's
    covered points are a subset of one of the set's (Church 1984), and a plan keeps the
    existing sites open, so the set leaves out the locations that would add nothing to what
    they cover (a new site on top of an existing one)."""
    if fixed is None:
        return np.asarray(_candidates(points, radius, None, time_limit), dtype=np.float64).reshape(-1, 2), None
    # Refused as the binding refuses any array that is not real numbers (numpy would drop
    # an imaginary part with a warning, parse digits, count dates).
    raw = np.asarray(fixed)
    if raw.dtype.kind not in "biufO":
        refuse("fixed", f"fixed must hold the (x, y) coordinates of the existing sites as real numbers when sites "
               f"may go anywhere; got dtype {raw.dtype}")
    try:
        existing = raw.astype(np.float64)
    except (TypeError, ValueError):
        refuse("fixed", "fixed must hold the (x, y) coordinates of the existing sites as real numbers when sites "
               "may go anywhere")
    if existing.size == 0:
        existing = existing.reshape(0, 2)
    if existing.ndim != 2 or existing.shape[1] != 2:
        refuse("fixed", "fixed must hold the (x, y) coordinates of the existing sites, shape (f, 2), when sites "
               f"may go anywhere; got shape {existing.shape}")
    # NaN and infinite coordinates: refused by the kernel, which checks `fixed` by row.
    where = np.asarray(_candidates(points, radius, None, time_limit, existing), dtype=np.float64).reshape(-1, 2)
    return np.concatenate([where, existing]), np.arange(len(where), len(where) + len(existing))


def _new_sites_anywhere(p: int, free: int) -> int:
    """``p`` new sites anywhere, at most the ``free`` candidates of the dominating set (those
    not fixed). That set holds an optimal plan of every size (Church 1984) and covers every
    point once all of it is open, so a further site could cover nothing more and none is
    placed. A ``p`` that is not an integer above zero goes to the kernel as given, which
    refuses it by name."""
    if isinstance(p, bool) or not isinstance(p, (int, np.integer)) or p < 1 or free < 1:
        return p
    return min(int(p), free)


def _left(time_limit: float | None, since: float) -> float | None:
    """What remains of ``time_limit`` seconds counted from ``since`` (``time.monotonic``):
    at least a millisecond, so the model still returns its first feasible plan. A value
    that is not a finite number above zero goes to the kernel as given, which refuses it
    by name."""
    if not isinstance(time_limit, (int, float)) or not 0 < time_limit < math.inf:
        return time_limit
    return max(time_limit - (time.monotonic() - since), 1e-3)


def cover_all(
    points: ArrayLike, radius: float, *, weights: ArrayLike | None = None, candidates: ArrayLike | None = None,
    fixed: ArrayLike | None = None, unit: str = "u", time_limit: float | None = None,
    progress: bool | Callable[[int, int], object] = False,
) -> discrete.CoverAllSelection:
    """The fewest sites among ``candidates`` such that every point is within ``radius``.

    See :func:`placewise.discrete.cover_all` for the method and the proven lower bound.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations (planar coordinates).
    radius : float
        The coverage standard, in the coordinates' unit, finite and > 0.
    weights : array_like, shape (n,), optional
        Demand per point, for the reported loads and covered weight.
    candidates : array_like, shape (m, 2), optional
        Possible site locations. Default: sites anywhere in the plane, chosen exactly among
        the finite dominating set of Church (1984) — the points and the intersection points
        of the circles of ``radius`` around them (each where it lies, exactly when it is
        representable, so points exactly on its circle stay covered, and pulled a relative
        1e-9 toward its pair's midpoint so rounding never uncovers the pair; both when each
        covers a point the other misses), kept once per distinct set of covered points by the
        same distance test as the result's coverage; the result's ``candidates`` then holds
        that set and ``open`` indexes it.
        Refused when over 4 million such candidates arise.
    fixed : array_like, optional
        Existing sites, open whatever the plan; only the new sites they leave needed are
        chosen (``chosen`` and ``lower_bound`` count new sites). With ``candidates``: their
        indices. With sites anywhere: their coordinates, shape (f, 2), appended to the
        result's ``candidates`` after the dominating set.
    unit : str
        Name of the coordinates' unit, used in column names.
    time_limit : float, optional
        Seconds (finite, above zero) the call may take, finding the candidates included;
        when they pass, the cover found so far (every point covered) is returned with the
        bound proven so far, ``relative_gap`` above 0 unless it is proven optimal; when
        they pass before the lists of candidates covering each point are complete (no cover
        exists yet), ``InputError`` naming ``time_limit`` is raised. Default: no limit.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while the
        model runs. Ctrl-C stops the call within a fraction of a second and raises
        ``KeyboardInterrupt``.

    Returns
    -------
    placewise.discrete.CoverAllSelection
        ``open`` (candidate indices), ``sites`` (their coordinates), ``covering`` per point
        and ``lower_bound``.

    Raises
    ------
    InputError
        For ``radius <= 0``, bad coordinates or weights, too many intersection points, a
        point no candidate covers (naming the point and its nearest candidate's distance),
        or a ``time_limit`` that passes before any cover exists.

    Examples
    --------
    >>> import placewise as pw
    >>> homes = [[0, 0], [1, 0], [9, 0], [10, 1]]
    >>> cover = pw.cover_all(homes, 1.5, candidates=[[0.5, 0], [5, 0], [9.5, 0.5]])
    >>> cover.open, cover.sites.tolist(), cover.lower_bound
    (array([0, 2]), [[0.5, 0.0], [9.5, 0.5]], 2)
    >>> pw.cover_all([[0, 0], [1, 1]], 5.0, candidates=[[0, 0]]).chosen   # one site covers all
    1
    >>> anywhere = pw.cover_all([[0, 0], [2, 0], [9, 0]], 1.5)     # sites anywhere in the plane
    >>> anywhere.chosen, anywhere.lower_bound, anywhere.covering.tolist()
    (2, 2, [1, 1, 1])

    A clinic already stands at (1, 0), within reach of the first two homes: one new site
    covers the third.

    >>> more = pw.cover_all([[0, 0], [2, 0], [9, 0]], 1.5, fixed=[[1, 0]])
    >>> more.chosen, more.sites.tolist()
    (1, [[9.0, 0.0], [1.0, 0.0]])
    """
    since = time.monotonic()
    if candidates is None:
        candidates, fixed = _anywhere_with_fixed(points, radius, fixed, time_limit)
    return discrete.cover_all_planar(points, candidates, radius, weights, fixed=fixed, unit=unit,
                                     time_limit=_left(time_limit, since), progress=progress)


def cover_most(
    points: ArrayLike, p: int, radius: float, weights: ArrayLike | None = None, *,
    candidates: ArrayLike | None = None, fixed: ArrayLike | None = None, unit: str = "u",
    time_limit: float | None = None, progress: bool | Callable[[int, int], object] = False,
) -> discrete.CoverMostSelection:
    """``p`` sites among ``candidates`` covering the most weight within ``radius``.

    See :func:`placewise.discrete.cover_most` for the method and the proven upper bound.

    Parameters
    ----------
    points, radius, candidates, unit
        As :func:`cover_all`.
    p : int
        Number of new sites.
    weights : array_like, shape (n,), optional
        Demand per point. Default: all 1.
    fixed : array_like, optional
        Existing sites, open whatever the plan and counted in the coverage (``p`` counts only
        new sites). With ``candidates``: their indices. With sites anywhere: their
        coordinates, shape (f, 2), appended to the result's ``candidates`` after the
        dominating set.
    time_limit : float, optional
        As :func:`cover_all`: when the seconds pass, the best ``p`` sites found so far are
        returned with the upper bound proven so far (``InputError`` before any plan exists).
    progress : bool or callable
        As :func:`cover_all`.

    Returns
    -------
    placewise.discrete.CoverMostSelection
        With sites anywhere, at most as many new sites as the dominating set has candidates
        (not fixed): once ``p`` reaches that, they are all open and every point is covered,
        so a further site is not placed. Beside existing sites, that set leaves out the
        locations that would cover nothing they do not already cover.

    Raises
    ------
    InputError
        As :func:`cover_all`, for ``p`` larger than the given candidates not fixed, and with
        sites anywhere when the existing sites already cover every point.

    Examples
    --------
    >>> import placewise as pw
    >>> villages = [[0, 0], [1, 0], [8, 0], [9, 0], [9, 1]]
    >>> best = pw.cover_most(villages, 1, 1.5, [5, 5, 1, 1, 1], candidates=[[0.5, 0], [8.5, 0.5]])
    >>> best.open, float(best.covered_weight), best.covering.tolist()
    (array([0]), 10.0, [1, 1, 0, 0, 0])
    >>> float(pw.cover_most(villages, 1, 1.5, [1, 1, 1, 1, 1]).covered_weight)   # anywhere: 3 villages
    3.0
    >>> pw.cover_most([[0, 0], [1, 0], [9, 0]], 3, 1.5).sites.tolist()   # two sites anywhere cover all
    [[0.0, 0.0], [9.0, 0.0]]
    """
    since = time.monotonic()
    if candidates is None:
        candidates, fixed = _anywhere_with_fixed(points, radius, fixed, time_limit)
        free = len(candidates) - (0 if fixed is None else len(fixed))
        if free == 0 and isinstance(p, (int, np.integer)) and not isinstance(p, bool) and p >= 1:
            refuse("p", f"p: the existing sites already cover every point within radius {radius}, so no new "
                   "site can add coverage; the plan is the existing sites (evaluate_sites measures them)")
        p = _new_sites_anywhere(p, free)
    return discrete.cover_most_planar(points, candidates, p, radius, weights, fixed=fixed, unit=unit,
                                      time_limit=_left(time_limit, since), progress=progress)


def evaluate_sites(
    points: ArrayLike, sites: ArrayLike, weights: ArrayLike | None = None, *, radius: float | None = None,
    unit: str = "u",
) -> discrete.SiteEvaluation:
    """How the existing ``sites`` serve the demand: every point to its nearest site.

    Total and mean weighted distance, worst distance, loads and (with ``radius``) coverage —
    the numbers the planners report, so a plan and today's network compare line by line.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations.
    sites : array_like, shape (k, 2)
        The sites of the network as it is.
    weights : array_like, shape (n,), optional
        Demand per point. Default: all 1.
    radius : float, optional
        Coverage standard, finite and > 0.
    unit : str
        Name of the coordinates' unit.

    Returns
    -------
    placewise.discrete.SiteEvaluation
        ``open`` holds the row of each site in ``sites``.

    Examples
    --------
    >>> import placewise as pw
    >>> now = pw.evaluate_sites([[0, 0], [3, 4], [10, 0]], [[0, 0], [10, 0]], radius=4)
    >>> float(now.total_cost), float(now.worst_cost), now.covered.tolist()
    (5.0, 5.0, [True, False, True])
    """
    # Every given site is open; the kernel checks the coordinates themselves, naming them
    # "sites" as the caller does.
    try:
        rows = np.arange(len(sites))  # type: ignore[arg-type]
    except TypeError:
        rows = np.arange(0)
    now = discrete.evaluate_sites(discrete._planar(points, sites, "sites"), rows, weights, radius=radius, unit=unit)
    return discrete._placed(now, points, sites)
