"""Sites chosen from a candidate list, on any demand × candidate cost matrix.

``costs[i, j]`` is the cost of serving demand point ``i`` from candidate ``j``: travel times
or road distances from any source (a dense array, or a ``scipy.sparse`` matrix of the allowed
pairs only), or straight-line distances (:func:`euclidean_costs`, and the ``*_planar``
functions taking coordinates, which compute the distances when asked and never hold an
``n × m`` matrix that would not fit). Every model accepts ``fixed`` candidates
(existing sites kept open), so "add k sites to what we have" is one call:

* :func:`evaluate_sites` — how given open sites serve the demand (the status quo);
* :func:`p_median` — ``p`` sites with the least total weighted cost, with a proven lower bound;
* :func:`p_center` — ``p`` sites with the least largest weighted cost, with a proven lower bound;
* :func:`cover_all` — the fewest sites within ``radius`` of every point (set covering);
* :func:`cover_most` — ``p`` sites covering the most weight within ``radius`` (maximal
  covering), with a proven upper bound.

Every result has the same tables, all computed by the kernel (nothing is recomputed here):

* ``to_frame()`` — one row per demand point: ``assignment`` (row of ``sites_frame()``),
  ``candidate`` (its column in ``costs``), ``cost_<unit>``, and with a radius ``covered`` and
  ``covering`` (the number of open sites within the radius: backup coverage);
* ``sites_frame()`` — one row per open site: ``candidate``, ``load``, ``points``, ``fixed``;
* ``summary()`` — the totals and the proven bound with its ``relative_gap``.

Costs are in the matrix's own unit: pass ``unit="min"`` to name the columns ``cost_min``.

Every model takes ``time_limit`` (seconds; when they pass, the best plan found so far comes
back with the bound proven so far, so its ``relative_gap`` says how far from optimal it may
be) and ``progress`` (True for a bar on stderr, or a callable ``progress(done, total)``);
Ctrl-C stops a model within a fraction of a second with ``KeyboardInterrupt``.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._results import Result, as_points

__all__ = [
    "CenterSelection",
    "CoverAllSelection",
    "CoverMostSelection",
    "MedianSelection",
    "SiteEvaluation",
    "cover_all",
    "cover_all_planar",
    "cover_most",
    "cover_most_planar",
    "euclidean_costs",
    "evaluate_sites",
    "evaluate_sites_planar",
    "p_center",
    "p_center_planar",
    "p_median",
    "p_median_planar",
]

def _input_error(argument: str, message: str) -> Exception:
    error = _core.InputError(message)
    error.argument = argument
    return error


def _matrix(costs: Any) -> Any:
    """``costs`` as the kernels take it. A ``scipy.sparse`` matrix goes over as its allowed
    pairs (compressed rows, columns ascending) and is never densified: a pair it does not
    store may not be used. Anything else passes through to the kernel's own conversion."""
    if not type(costs).__module__.startswith("scipy.sparse"):
        return costs
    import scipy.sparse

    n, m = costs.shape
    if costs.dtype.kind not in "biuf":
        # As for dense costs: complex values would lose their imaginary part with a warning only.
        raise _input_error("costs", f"costs must hold real numbers; got a sparse matrix of dtype {costs.dtype}")
    csr = scipy.sparse.csr_array(costs, dtype=np.float64, copy=True)
    if costs.format == "coo" and csr.nnz < costs.nnz:
        raise _input_error("costs", "costs: the sparse matrix stores some pair twice; store each allowed pair once")
    csr.sort_indices()
    return ("csr", csr.indptr, csr.indices, csr.data, int(n), int(m))


def _planar(points: ArrayLike, candidates: ArrayLike, name: str = "candidates") -> tuple:
    """Straight-line costs from ``points`` to ``candidates``, computed by the kernel (held as
    a matrix only when it is small); its errors call the columns ``name`` ("candidates", or
    "sites" for existing sites evaluated as they are)."""
    return ("planar", points, candidates, name)


def _placed(result: Any, points: ArrayLike, candidates: ArrayLike) -> Any:
    """``result`` with the coordinates it was computed from (the kernel accepted them)."""
    return dataclasses.replace(result, points=as_points(points), candidates=as_points(candidates))


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class _Selection(Result):
    """What every discrete result shares: the open sites and how they serve the demand."""

    open: np.ndarray
    fixed: np.ndarray = dataclasses.field(repr=False)
    assignment: np.ndarray = dataclasses.field(repr=False)
    cost: np.ndarray = dataclasses.field(repr=False)
    load: np.ndarray = dataclasses.field(repr=False)
    count: np.ndarray = dataclasses.field(repr=False)
    total_cost: float
    mean_cost: float = dataclasses.field(repr=False)
    worst_cost: float
    weighted_worst: float = dataclasses.field(repr=False)
    total_weight: float = dataclasses.field(repr=False)
    radius: float | None = dataclasses.field(repr=False)
    covered: np.ndarray | None = dataclasses.field(repr=False)
    covering: np.ndarray | None = dataclasses.field(repr=False)
    covered_weight: float | None = dataclasses.field(repr=False)
    covered_share: float | None
    #: Demand and candidate coordinates, when the costs came from coordinates (the
    #: ``*_planar`` forms and the top-level functions); None for a cost matrix.
    points: np.ndarray | None = dataclasses.field(default=None, repr=False, kw_only=True)
    candidates: np.ndarray | None = dataclasses.field(default=None, repr=False, kw_only=True)

    @property
    def sites(self) -> np.ndarray | None:
        """Coordinates of the open sites (rows of ``open``), when the candidates have some."""
        return None if self.candidates is None else self.candidates[self.open]

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the demand points (coloured by their site), the sites (fixed ones as white
        squares) and, with a radius, every site's coverage disk; uncovered points in black.
        Needs coordinates (a result from coordinates)."""
        from matplotlib.patches import Circle

        from .plotting import draw_sites, finish, quantity, site_colours

        if self.points is None or self.candidates is None:
            raise _input_error("plot", "plot: this plan was made from a cost matrix and has no coordinates to draw")
        ax = self._plot_axes(ax)
        sites = self.candidates[self.open]
        palette = np.asarray(site_colours(len(sites)))
        served = self.assignment >= 0
        xy = self.points
        ax.scatter(xy[served, 0], xy[served, 1], **{"c": palette[self.assignment[served]], "s": 6, "linewidths": 0,
                                                   "zorder": 3, "label": "demand points (colour = their site)",
                                                   **style})
        if self.radius is not None:
            for k, (x, y) in enumerate(sites):
                ax.add_patch(Circle((x, y), self.radius, facecolor=palette[k], alpha=0.12, edgecolor=palette[k],
                                    linewidth=0.8, zorder=1, label="coverage disks" if k == 0 else None))
            out = ~np.asarray(self.covered, dtype=bool)
            if out.any():
                ax.scatter(xy[out, 0], xy[out, 1], c="black", s=10, marker="x", linewidths=0.8, zorder=4,
                           label="uncovered points")
        draw_sites(ax, sites, list(palette), fixed=self.fixed, label="new sites" if self.fixed.any() else "sites")
        ax.autoscale_view()
        title = f"{len(sites)} sites · total weighted cost {quantity(self.total_cost, self.unit)} × weight"
        if self.radius is not None:
            title = (f"{len(sites)} sites · {100 * float(self.covered_share or 0.0):.1f} % of the weight within "
                     f"{quantity(self.radius, self.unit)}")
        return finish(ax, title, self.unit)

    def _columns(self) -> dict[str, Any]:
        # assignment -1: no open site may serve the point (a pair the sparse costs do not allow).
        candidate = np.where(self.assignment >= 0, self.open[np.maximum(self.assignment, 0)], -1)
        columns: dict[str, Any] = {"assignment": self.assignment, "candidate": candidate, self._u("cost"): self.cost}
        if self.radius is not None:
            columns |= {"covered": self.covered, "covering": self.covering}
        return columns

    def sites_frame(self) -> Any:
        """One row per open site (``candidate``, ``load``, ``points``, ``fixed``); the row
        position is what ``assignment`` holds."""
        import pandas as pd

        columns: dict[str, Any] = {"candidate": self.open}
        if self.candidates is not None:
            columns |= {"x": self.candidates[self.open, 0], "y": self.candidates[self.open, 1]}
        return pd.DataFrame(columns | {"load": self.load, "points": self.count, "fixed": self.fixed})

    def _bounds(self) -> dict[str, Any]:
        return {}

    def summary(self) -> Any:
        """The totals in one row: ``sites``, ``cost_<unit>`` (total), ``mean_cost_<unit>``,
        ``worst_cost_<unit>``, ``weighted_worst_<unit>``, ``load``, ``points``, the coverage
        (with a radius) and the model's proven bound with its ``relative_gap``."""
        import pandas as pd

        row: dict[str, Any] = {
            "sites": len(self.open),
            self._u("cost"): self.total_cost,
            self._u("mean_cost"): self.mean_cost,
            self._u("worst_cost"): self.worst_cost,
            self._u("weighted_worst"): self.weighted_worst,
            "load": self.total_weight,
            "points": len(self.assignment),
        }
        if self.radius is not None:
            row |= {self._u("radius"): self.radius, "covered_load": self.covered_weight,
                    "covered_share": self.covered_share}
        row |= self._bounds()
        return pd.DataFrame({k: [v] for k, v in row.items()})


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SiteEvaluation(_Selection):
    """How given open sites serve the demand (see the module docstring for the tables).

    Attributes
    ----------
    open : ndarray of int64, shape (k,)
        The open candidate columns, ascending; ``assignment`` indexes this.
    assignment, cost : ndarray, shape (n,)
        Every point's cheapest open site (row of ``open``) and its cost.
    load, count : ndarray, shape (k,)
        Weight and number of points each site serves.
    total_cost, mean_cost, worst_cost, weighted_worst : float
        ``Σ wᵢ costᵢ``, that over ``Σ wᵢ``, ``max costᵢ`` and ``max wᵢ costᵢ``.
    covered, covering : ndarray, shape (n,), or None
        With a radius: whether some open site is within it, and how many are.
    covered_weight, covered_share : float or None
        With a radius: the covered weight and its share of the total.
    """


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class MedianSelection(_Selection):
    """A discrete p-median plan; ``total_cost`` is its objective.

    ``lower_bound`` is a proven lower bound on the optimum (Lagrangian relaxation, and the
    branch and bound's when it ran: ``branch_nodes``) and
    ``relative_gap = (total_cost - lower_bound) / total_cost``: 0 (to 1e-9) proves the plan
    optimal.
    """

    lower_bound: float = 0.0
    relative_gap: float = 0.0
    swaps: int = dataclasses.field(default=0, repr=False)
    bound_iterations: int = dataclasses.field(default=0, repr=False)
    branch_nodes: int = dataclasses.field(default=0, repr=False)

    def _bounds(self) -> dict[str, Any]:
        return {self._u("lower_bound"): self.lower_bound, "relative_gap": self.relative_gap}


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CenterSelection(_Selection):
    """A discrete p-center plan; ``weighted_worst`` is its objective.

    ``lower_bound`` is proven (the value above the largest trial proven infeasible) and
    ``relative_gap = (weighted_worst - lower_bound) / weighted_worst``.
    """

    lower_bound: float = 0.0
    relative_gap: float = 0.0

    def _bounds(self) -> dict[str, Any]:
        return {self._u("lower_bound"): self.lower_bound, "relative_gap": self.relative_gap}


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CoverAllSelection(_Selection):
    """A set-covering plan: ``chosen`` new sites put every point within ``radius``.

    ``lower_bound`` is a proven lower bound on the number of new sites and
    ``relative_gap = (chosen - lower_bound) / chosen``.
    """

    chosen: int = 0
    lower_bound: int = 0
    relative_gap: float = 0.0

    def _bounds(self) -> dict[str, Any]:
        return {"chosen": self.chosen, "lower_bound": self.lower_bound, "relative_gap": self.relative_gap}


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CoverMostSelection(_Selection):
    """A maximal-covering plan; ``covered_weight`` is its objective.

    ``upper_bound`` is a proven upper bound on the weight any plan covers (Lagrangian
    relaxation) and ``relative_gap = (upper_bound - covered_weight) / upper_bound``.
    """

    upper_bound: float = 0.0
    relative_gap: float = 0.0
    swaps: int = dataclasses.field(default=0, repr=False)

    def _bounds(self) -> dict[str, Any]:
        return {"upper_bound": self.upper_bound, "relative_gap": self.relative_gap}


# ------------------------------------------------------------------------------ models


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
        Distinct open candidate columns.
    weights : array_like, shape (n,), optional
        Finite, non-negative demand per point, not all zero. Default: all 1.
    radius : float, optional
        Coverage standard (in the cost unit), finite and > 0.
    unit : str
        Name of the cost unit, used in column names (``cost_min``).

    Returns
    -------
    SiteEvaluation

    Raises
    ------
    InputError
        For a NaN, infinite or negative cost (naming the cell), a shape mismatch with
        ``weights``, bad weights, a column out of range or repeated, or ``radius <= 0``.

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
    fixed : array_like of int, optional
        Candidate columns that stay open (existing sites); ``p`` counts only new ones.
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
        Name of the cost unit.
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
    >>> float(pw.discrete.p_median([[3.0, 3.0]], 2).total_cost)   # every candidate: p = m
    3.0
    >>> seen = []
    >>> quick = pw.discrete.p_median(line, 2, time_limit=5.0, progress=lambda done, total: seen.append(done))
    >>> quick.open, seen == sorted(seen)
    (array([1, 4]), True)
    """
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
    fields = _core.discrete_cover_most(_matrix(costs), p, radius, weights, fixed, time_limit, progress)
    return CoverMostSelection(**fields, unit=unit)


# --------------------------------------------------------------------- planar front-ends


def euclidean_costs(points: ArrayLike, candidates: ArrayLike) -> np.ndarray:
    """The straight-line cost matrix ``(n, m)`` from every point to every candidate.

    Built by the kernel; refused (``InputError``) above 100 million cells.

    Examples
    --------
    >>> import placewise as pw
    >>> pw.discrete.euclidean_costs([[0, 0], [3, 4]], [[0, 0]])
    array([[0.],
           [5.]])
    """
    return _core.discrete_euclidean_costs(points, candidates)


def evaluate_sites_planar(
    points: ArrayLike, candidates: ArrayLike, sites: ArrayLike, weights: ArrayLike | None = None, *,
    radius: float | None = None, unit: str = "u",
) -> SiteEvaluation:
    """:func:`evaluate_sites` on straight-line costs from ``points`` to ``candidates``.

    Examples
    --------
    >>> import placewise as pw
    >>> float(pw.discrete.evaluate_sites_planar([[0, 0], [3, 4]], [[0, 0]], [0]).total_cost)
    5.0
    """
    now = evaluate_sites(_planar(points, candidates), sites, weights, radius=radius, unit=unit)
    return _placed(now, points, candidates)


def p_median_planar(
    points: ArrayLike, candidates: ArrayLike, p: int, weights: ArrayLike | None = None, *,
    fixed: ArrayLike | None = None, bound_iterations: int = 1000, search_rounds: int = 300,
    branch_iterations: int | None = None, seed: int = 0, unit: str = "u", time_limit: float | None = None,
    progress: _Progress = False,
) -> MedianSelection:
    """:func:`p_median` on straight-line costs from ``points`` to ``candidates`` (the other
    parameters, ``time_limit`` and ``progress`` included, as there).

    Examples
    --------
    >>> import placewise as pw
    >>> plan = pw.discrete.p_median_planar([[0, 0], [1, 0], [9, 0]], [[0, 0], [10, 0]], 1)
    >>> plan.open, float(plan.total_cost)
    (array([0]), 10.0)
    """
    plan = p_median(_planar(points, candidates), p, weights, fixed=fixed, bound_iterations=bound_iterations,
                    search_rounds=search_rounds, branch_iterations=branch_iterations, seed=seed, unit=unit,
                    time_limit=time_limit, progress=progress)
    return _placed(plan, points, candidates)


def p_center_planar(
    points: ArrayLike, candidates: ArrayLike, p: int, weights: ArrayLike | None = None, *,
    fixed: ArrayLike | None = None, unit: str = "u", time_limit: float | None = None, progress: _Progress = False,
) -> CenterSelection:
    """:func:`p_center` on straight-line costs from ``points`` to ``candidates`` (the other
    parameters, ``time_limit`` and ``progress`` included, as there).

    Examples
    --------
    >>> import placewise as pw
    >>> float(pw.discrete.p_center_planar([[0, 0], [4, 0]], [[0, 0], [2, 0]], 1).worst_cost)
    2.0
    """
    plan = p_center(_planar(points, candidates), p, weights, fixed=fixed, unit=unit, time_limit=time_limit,
                    progress=progress)
    return _placed(plan, points, candidates)


def cover_all_planar(
    points: ArrayLike, candidates: ArrayLike, radius: float, weights: ArrayLike | None = None, *,
    fixed: ArrayLike | None = None, unit: str = "u", time_limit: float | None = None, progress: _Progress = False,
) -> CoverAllSelection:
    """:func:`cover_all` on straight-line costs from ``points`` to ``candidates`` (the other
    parameters, ``time_limit`` and ``progress`` included, as there).

    Examples
    --------
    >>> import placewise as pw
    >>> pw.discrete.cover_all_planar([[0, 0], [1, 1], [2, 0]], [[1, 0], [5, 5]], 1.5).open
    array([0])
    """
    plan = cover_all(_planar(points, candidates), radius, weights, fixed=fixed, unit=unit, time_limit=time_limit,
                     progress=progress)
    return _placed(plan, points, candidates)


def cover_most_planar(
    points: ArrayLike, candidates: ArrayLike, p: int, radius: float, weights: ArrayLike | None = None, *,
    fixed: ArrayLike | None = None, unit: str = "u", time_limit: float | None = None, progress: _Progress = False,
) -> CoverMostSelection:
    """:func:`cover_most` on straight-line costs from ``points`` to ``candidates`` (the other
    parameters, ``time_limit`` and ``progress`` included, as there).

    Examples
    --------
    >>> import placewise as pw
    >>> float(pw.discrete.cover_most_planar([[0, 0], [9, 9]], [[0, 1], [9, 8]], 1, 1.5).covered_share)
    0.5
    """
    plan = cover_most(_planar(points, candidates), p, radius, weights, fixed=fixed, unit=unit,
                      time_limit=time_limit, progress=progress)
    return _placed(plan, points, candidates)
