"""The candidate and capacitated forms of the plans, run by their own kernels."""

from __future__ import annotations

from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .._errors import refuse
from .._results import as_points
from ..capacity import CapacitatedMedianPlan, capacitated_p_median


def _on_candidates(model: str, points: ArrayLike, p: int, weights: ArrayLike | None, candidates: ArrayLike, *,
                   fixed: ArrayLike | None, groups: Any, time_limit: Any, progress: Any, region: Any = None,
                   seed: Any = 0, effort: Any = "normal", errors: Any = "raise", fixed_groups: Any = None) -> Any:
    """The discrete form of ``model`` on straight-line costs to ``candidates``; with a
    ``region``, only the candidates it holds may open as new sites, while the ``fixed`` ones
    (existing sites) stay wherever they lie (indices stay the caller's). ``seed`` seeds the
    p-median's search; the options of the continuous search that have no meaning here
    (``effort``, ``errors`` and ``fixed_groups`` without groups, the p-center's ``seed``) are
    refused by name rather than ignored."""
    import dataclasses

    from .. import discrete
    from .._region import candidates_in_region

    if groups is not None:
        refuse("groups", "groups is not supported with candidates (sites chosen from a list)")
    if fixed_groups is not None:
        refuse("fixed_groups", "fixed_groups does not apply with candidates (it needs groups, which candidates do "
                "not take)")
    if errors != "raise":
        refuse("errors", f"errors does not apply with candidates (it says what to do with groups, which candidates "
                f"do not take); got {errors!r}")
    if effort != "normal":
        refuse("effort", f"effort does not apply with candidates (the choice among candidates runs its own search "
                f"to a proven bound; bound it with time_limit); got {effort!r}")
    if model == "p_center" and not (isinstance(seed, (int, np.integer)) and not isinstance(seed, bool) and seed == 0):
        refuse("seed", f"seed does not apply to the p-center with candidates (its search has no random step); "
                f"got {seed!r}")
    if region is not None:
        every = candidates
        candidates, rows, fixed = candidates_in_region(every, region, fixed)
    watch = {"time_limit": time_limit, "progress": progress}
    if model == "p_median":
        chosen: Any = discrete.p_median_planar(points, candidates, p, weights, fixed=fixed, seed=seed, **watch)
    else:
        chosen = discrete.p_center_planar(points, candidates, p, weights, fixed=fixed, **watch)
    if region is None:
        return chosen
    return dataclasses.replace(chosen, open=rows[chosen.open], candidates=as_points(every))


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
