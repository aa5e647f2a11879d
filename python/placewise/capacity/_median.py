"""The capacitated p-median: CapacitatedMedianPlan, capacitated_p_median."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._results import as_points
from ._allocation import CapacityPlan


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CapacitatedMedianPlan(CapacityPlan):
    """A capacitated p-median plan: the sites and how they serve the demand.

    Besides the :class:`CapacityPlan` fields (the exact split allocation to these sites):

    Attributes
    ----------
    chosen : ndarray of int64, shape (p,)
        With candidates: the candidate row of each site (else empty).
    median_lower_bound, median_relative_gap : float
        With candidates: a proven lower bound on any plan of ``p`` sites and the gap
        ``(total_cost - median_lower_bound) / total_cost`` to it. The bound is the larger of
        the transportation plan with every candidate open and a Lagrangian bound (the
        assignment constraints relaxed, subgradient optimisation; Mulvey & Beck 1984,
        Lorena & Senne 2004), which reaches the linear-programming relaxation of the
        capacitated p-median and passes it where "the open capacities hold the demand"
        binds. NaN for continuous sites, where no cheap relaxation is known, and when
        ``time_limit`` passed before either bound was proven.
    rounds : int
        Rounds run: location–allocation rounds, then with candidates the passes of the
        swap interchange.
    converged : bool
        True when the rounds ended at a local optimum (moving the sites, and with candidates
        swapping one open site for a closed candidate, no longer lowered the cost); False
        when ``max_rounds`` or ``time_limit`` cut them short (the plan is then the best
        found, its allocation still exact and within the capacities).
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


def capacitated_p_median(
    points: ArrayLike, p: int, capacities: ArrayLike, weights: ArrayLike | None = None, *,
    candidates: ArrayLike | None = None, seed: int = 0, max_rounds: int = 100, unit: str = "u",
    time_limit: float | None = None, progress: bool | Callable[[int, int], object] = False,
) -> CapacitatedMedianPlan:
    """``p`` sites with capacities and the least total distance ``Σ amount × distance``.

    Location–allocation (Cooper 1964) with a capacitated allocation step: allocate by the
    exact transportation plan, move each site to the best location for the demand it
    serves, and repeat while the cost falls. The start is the uncapacitated p-median plan.
    Without candidates a site moves to the weighted Fermat–Weber point of its demand. With
    candidates a site moves to the free candidate serving that demand most cheaply with
    room for it; the plan is then improved by the swap interchange (close one site, open
    one of the candidates nearest to it, re-solve the transportation plan) and by the
    Lagrangian heuristic (the sites of the Lagrangian relaxation, made to hold the demand),
    and the run proves a lower bound (see ``median_lower_bound``) and reports the gap.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        Demand locations.
    p : int
        Number of sites, at least 1; with candidates, at most their number. It may exceed
        the number of demand locations, when small capacities need several sites for one
        point: without candidates, the sites beyond them start at the locations of most
        demand (several sites may end at one location).
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
        Most rounds: location–allocation rounds and, with candidates, swap-interchange
        passes together.
    unit : str
        Name of the coordinates' length unit.
    time_limit : float, optional
        Seconds (finite, above zero) the run may take, counted from the call's start (reading
        the arguments included). When they pass after the first
        transportation plan, the best plan so far is returned with ``converged`` False
        (with candidates, the bound is the best proven before the limit; with no time
        left for either bound, ``median_lower_bound`` and ``median_relative_gap`` are NaN:
        nothing is proven); before it, no plan meeting the
        capacities exists yet and an ``InputError`` names ``time_limit``. Default: no limit.
    progress : bool or callable
        True shows a progress bar on stderr (tqdm's when installed, else a plain line); a
        callable is called as ``progress(done, total)`` from the calling thread while the
        run works, counting the start, the first plan, the rounds against ``max_rounds``,
        the bound and the improvement (closed at the total when the run ends). Ctrl-C stops
        the run within a fraction of a second and raises ``KeyboardInterrupt``.

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
