"""The models on a cost matrix: evaluate_sites, p_median, p_center, cover_all, cover_most."""

from __future__ import annotations

from collections.abc import Callable

from numpy.typing import ArrayLike

from .. import _core
from .._errors import in_unit
from .._units import check_unit
from ._costs import _matrix
from ._selections import CenterSelection, CoverAllSelection, CoverMostSelection, MedianSelection, SiteEvaluation


def evaluate_sites(
    costs: ArrayLike, sites: ArrayLike, weights: ArrayLike | None = None, *, radius: float | None = None,
    unit: str = "u",
) -> SiteEvaluation:
    """How the open candidates ``sites`` serve the demand: the numbers the models report.

    Every point goes to its cheapest open site (the smallest column among equally cheap
    ones), so a plan and the status quo compare line by line.

    Parameters
    ----------
    costs : array_like or scipy.sparse matrix, shape (n, m)
        Finite, non-negative cost of serving point ``i`` from candidate ``j``. A sparse
        matrix lists the allowed pairs only (a stored zero is an allowed pair costing 0;
        note that ``csr_matrix(dense)`` drops zeros): a pair it does not store may not be
        used, and every row must store at least one pair. It is never densified.
    sites : array_like of int, shape (k,)
        Distinct open candidate columns, a one-dimensional sequence of integers (bools,
        floats, text and two-column arrays such as coordinates are refused).
    weights : array_like, shape (n,), optional
        Finite, non-negative demand per point, not all zero. Default: all 1.
    radius : float, optional
        Coverage standard (in the cost unit), finite and > 0.
    unit : str
        Name of the cost unit, used in column names (``cost_min``): letters, digits and
        underscores, not empty.

    Returns
    -------
    SiteEvaluation

    Raises
    ------
    InputError
        For a NaN, infinite or negative cost (naming the cell), a shape mismatch with
        ``weights``, bad weights, columns that are not a one-dimensional sequence of
        integers, a column out of range or repeated, ``radius <= 0``, or a ``unit`` that is
        not a non-empty name of letters, digits and underscores.

    Examples
    --------
    >>> import placewise as pw
    >>> costs = [[1, 5, 3], [4, 0, 2], [6, 1, 6]]
    >>> now = pw.discrete.evaluate_sites(costs, [0, 2], radius=2)
    >>> now.to_frame()
       assignment  candidate  cost_u  covered  covering
    0           0          0     1.0     True         1
    1           1          2     2.0     True         1
    2           0          0     6.0    False         0
    >>> float(now.total_cost), float(now.covered_share)
    (9.0, 0.6666666666666666)
    >>> pw.discrete.evaluate_sites([[0.0]], [0]).worst_cost    # one point on its site
    0.0

    A point that no given site may serve (a pair a sparse matrix does not store) has
    ``assignment`` -1 and an infinite cost.
    """
    with in_unit(check_unit(unit)):
        fields = _core.discrete_evaluate(_matrix(costs), weights, sites, radius)
    return SiteEvaluation(**fields, unit=unit)


_Progress = bool | Callable[[int, int], object]


def p_median(
    costs: ArrayLike, p: int, weights: ArrayLike | None = None, *, fixed: ArrayLike | None = None,
    bound_iterations: int = 1000, search_rounds: int = 300, branch_iterations: int | None = None, seed: int = 0,
    unit: str = "u", time_limit: float | None = None, progress: _Progress = False,
) -> MedianSelection:
    """``p`` candidates with the least total weighted cost ``Σ wᵢ minⱼ costs[i, j]``.

    Greedy start, then the fast swap interchange (Teitz & Bart 1968; Whitaker 1983;
    Resende & Werneck 2004) until no swap helps, then variable neighbourhood search
    (Hansen & Mladenović 1997): seeded random jumps of 1 to 10 sites (every other one
    replacing the sites around a random demand point by candidates near it), each followed by
    the interchange, kept when they lead to a cheaper plan; a proven lower bound from the
    Lagrangian relaxation of the assignment constraints by subgradient optimisation (Cornuejols,
    Fisher & Nemhauser 1977; Beasley 1993) with deflected directions (Camerini, Fratta &
    Maffioli 1975). While a gap is left, a branch and bound over the candidates (Christofides
    & Beasley 1982) with the same bound at every node, reduced-cost fixing (Beasley 1993) and
    the same heuristic proves the optimum or raises the bound, within ``branch_iterations``.
    Deterministic.

    Parameters
    ----------
    costs : array_like or scipy.sparse matrix, shape (n, m)
        See :func:`evaluate_sites`.
    p : int
        Number of new sites, from 1 to the number of candidates not in ``fixed``.
    weights : array_like, shape (n,), optional
        Demand per point. Default: all 1.
    fixed : array_like of int, shape (f,), optional
        Candidate columns that stay open (existing sites); ``p`` counts only new ones. A
        one-dimensional sequence of integers, as ``sites`` of :func:`evaluate_sites`: these
        are indices of candidates, not coordinates, so an ``(f, 2)`` array is refused.
    bound_iterations : int
        Most subgradient iterations for the lower bound (0: bound 0).
    search_rounds : int
        Rounds of variable neighbourhood search after the interchange (0: none).
    branch_iterations : int, optional
        Most subgradient iterations, over all its nodes, of the branch and bound (0: none).
        Default: 2³³ divided by the pairs the points' candidate lists hold (each point lists
        ``min(m, max(16 m / p, 64))`` candidates), at most 200,000: about ten seconds of work
        at most, 85,899 iterations at 1,000 x 100 and 21,474 at 2,000 x 200 (p = 10); none
        when that is under 8,192 (above about a million listed pairs), where the gap is mostly
        the relaxation's own and needs far more nodes than that.
    seed : int
        Seed of the search's random jumps, from 0 to 2**64 - 1: the same seed gives the same
        plan; other seeds explore other plans (restarts).
    unit : str
        Name of the cost unit, as in :func:`evaluate_sites`.
    time_limit : float, optional
        Seconds (finite, above zero) the call may take, counted from its start (reading the
        costs and, for costs from coordinates, indexing the candidates included). When they
        pass, the best plan found so far is returned (``p`` sites, every point served) with
        the bound proven so far: ``relative_gap`` above 0 says it is not proven optimal.
        Default: no limit.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while the
        search runs (steps: greedy additions, search rounds and bound iterations). Ctrl-C stops the search
        within a fraction of a second and raises ``KeyboardInterrupt``.

    Returns
    -------
    MedianSelection

    Raises
    ------
    InputError
        As :func:`evaluate_sites`, for ``p`` out of range, and for a ``time_limit`` that is
        not a number above zero or a ``progress`` that is neither a bool nor callable.

    Examples
    --------
    >>> import placewise as pw
    >>> line = [[abs(i - j) for j in range(6)] for i in range(6)]
    >>> plan = pw.discrete.p_median(line, 2)
    >>> plan.open, float(plan.total_cost), float(plan.relative_gap)
    (array([1, 4]), 4.0, 0.0)
    >>> pw.discrete.p_median(line, 1, fixed=[5]).sites_frame()
       candidate  load  points  fixed
    0          1   4.0       4  False
    1          5   2.0       2   True
    >>> pw.discrete.p_median(line, 1, fixed=[[5, 0]])      # coordinates are no candidate index
    Traceback (most recent call last):
        ...
    placewise.InputError: fixed must be a one-dimensional sequence of candidate indices; got shape (1, 2); ...
    >>> float(pw.discrete.p_median([[3.0, 3.0]], 2).total_cost)   # every candidate: p = m
    3.0
    >>> seen = []
    >>> quick = pw.discrete.p_median(line, 2, time_limit=5.0, progress=lambda done, total: seen.append(done))
    >>> quick.open, seen == sorted(seen)
    (array([1, 4]), True)
    """
    with in_unit(check_unit(unit)):
        fields = _core.discrete_p_median_single(_matrix(costs), p, weights, fixed, bound_iterations, search_rounds,
                                                time_limit, progress, branch_iterations, seed)
    return MedianSelection(**fields, unit=unit)


def p_center(
    costs: ArrayLike, p: int, weights: ArrayLike | None = None, *, fixed: ArrayLike | None = None, unit: str = "u",
    time_limit: float | None = None, progress: _Progress = False,
) -> CenterSelection:
    """``p`` candidates with the least largest weighted cost ``maxᵢ wᵢ minⱼ costs[i, j]``.

    Binary search over the sorted distinct weighted costs with a set-covering subproblem
    (Minieka 1970; Daskin 1995): each trial is settled by a packing bound, a greedy cover
    or an exact branching search within a work budget. The reported ``lower_bound`` rests
    only on trials proven infeasible, so ``relative_gap`` 0 proves the plan optimal. Sites
    the covering leaves over are added for the least total weighted cost.

    Parameters
    ----------
    costs, p, weights, fixed, unit
        As :func:`p_median`.
    time_limit : float, optional
        As :func:`p_median`: when the seconds pass, the best plan found so far is returned
        with the bound of the trials settled by then.
    progress : bool or callable
        As :func:`p_median` (steps: trial values of the search).

    Returns
    -------
    CenterSelection

    Raises
    ------
    InputError
        As :func:`p_median`.

    Examples
    --------
    >>> import placewise as pw
    >>> line = [[abs(i - j) for j in range(7)] for i in range(7)]
    >>> plan = pw.discrete.p_center(line, 2)
    >>> float(plan.weighted_worst), float(plan.lower_bound)
    (2.0, 2.0)
    >>> float(pw.discrete.p_center(line, 7).weighted_worst)   # a site on every point
    0.0
    """
    with in_unit(check_unit(unit)):
        fields = _core.discrete_p_center_single(_matrix(costs), p, weights, fixed, time_limit, progress)
    return CenterSelection(**fields, unit=unit)


def cover_all(
    costs: ArrayLike, radius: float, weights: ArrayLike | None = None, *, fixed: ArrayLike | None = None,
    unit: str = "u", time_limit: float | None = None, progress: _Progress = False,
) -> CoverAllSelection:
    """The fewest candidates so every point has an open site at cost ``<= radius``.

    Location set covering (Toregas, Swain, ReVelle & Bergman 1971) by a Lagrangian
    heuristic (Beasley 1990; Caprara, Fischetti & Toth 1999): subgradient optimisation of the
    relaxation of the covering constraints, started from a greedy cover; every few iterations
    the multipliers price a greedy cover, whose redundant sites are dropped and which a local
    search shrinks by replacing two sites with one; the best cover then gets a seeded walk of
    neutral swaps with the same local search. The proven lower bound is the better of a
    packing (the LP dual) and the best Lagrangian value rounded up; small gaps are closed by
    an exact branching search. The result is the same on every run.

    Parameters
    ----------
    costs : array_like or scipy.sparse matrix, shape (n, m)
        See :func:`evaluate_sites`.
    radius : float
        Coverage standard (in the cost unit), finite and > 0.
    weights : array_like, shape (n,), optional
        Demand per point, for the reported loads and covered weight.
    fixed, unit
        As :func:`p_median`.
    time_limit : float, optional
        As :func:`p_median`: when the seconds pass, the best cover found by then (every
        point covered) is returned with the bound proven so far. Every cover is built from
        the complete lists of the candidates covering each point; when the seconds pass
        before those lists are complete, no cover exists yet and ``InputError`` naming
        ``time_limit`` is raised.
    progress : bool or callable
        As :func:`p_median` (steps: the coverage lists, the reduction, the greedy cover and
        the subgradient iterations).

    Returns
    -------
    CoverAllSelection

    Raises
    ------
    InputError
        As :func:`evaluate_sites`, when a point has no candidate within ``radius`` (naming
        the point and its cheapest candidate's cost), and naming ``time_limit`` when it
        passes before any cover exists.

    Examples
    --------
    >>> import placewise as pw
    >>> line = [[2 * abs(i - j) for j in range(7)] for i in range(7)]   # spacing 2
    >>> cover = pw.discrete.cover_all(line, 2)      # each site covers its two neighbours
    >>> cover.chosen, cover.lower_bound, cover.open
    (3, 3, array([1, 4, 5]))
    >>> pw.discrete.cover_all(line, 1).chosen       # radius s / 2: a site per point
    7
    """
    with in_unit(check_unit(unit)):
        fields = _core.discrete_cover_all(_matrix(costs), radius, weights, fixed, time_limit, progress)
    return CoverAllSelection(**fields, unit=unit)


def cover_most(
    costs: ArrayLike, p: int, radius: float, weights: ArrayLike | None = None, *, fixed: ArrayLike | None = None,
    unit: str = "u", time_limit: float | None = None, progress: _Progress = False,
) -> CoverMostSelection:
    """``p`` candidates covering the most weight within ``radius``.

    Maximal covering (Church & ReVelle 1974): greedy addition, then best-swap interchange;
    a proven upper bound from the Lagrangian relaxation of the coverage constraints by
    subgradient optimisation.

    Parameters
    ----------
    costs, p, weights, fixed, unit
        As :func:`p_median`.
    radius : float
        Coverage standard (in the cost unit), finite and > 0.
    time_limit : float, optional
        As :func:`p_median`: when the seconds pass, the best ``p`` sites found so far are
        returned with the upper bound proven so far; as :func:`cover_all` when they pass
        before the coverage lists are complete.
    progress : bool or callable
        As :func:`p_median` (steps: greedy additions and bound iterations).

    Returns
    -------
    CoverMostSelection

    Raises
    ------
    InputError
        As :func:`p_median`, for ``radius <= 0``, and naming ``time_limit`` when it passes
        before any plan exists.

    Examples
    --------
    >>> import placewise as pw
    >>> line = [[abs(i - j) for j in range(6)] for i in range(6)]
    >>> best = pw.discrete.cover_most(line, 1, 1, weights=[1, 1, 1, 5, 5, 5])
    >>> best.open, float(best.covered_weight), bool(best.upper_bound >= 15)
    (array([4]), 15.0, True)
    >>> float(pw.discrete.cover_most(line, 1, 0.5).covered_share)   # only its own point
    0.16666666666666666
    """
    with in_unit(check_unit(unit)):
        fields = _core.discrete_cover_most(_matrix(costs), p, radius, weights, fixed, time_limit, progress)
    return CoverMostSelection(**fields, unit=unit)
