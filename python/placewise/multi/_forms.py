"""The candidate and capacitated forms of the plans, run by their own kernels."""

from __future__ import annotations

from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._errors import refuse
from ..capacity import CapacitatedMedianPlan, capacitated_p_median


def _on_candidates(model: str, points: ArrayLike, p: int, weights: ArrayLike | None, candidates: ArrayLike, *,
                   fixed: ArrayLike | None, groups: Any, time_limit: Any, progress: Any, region: Any = None,
                   seed: int = 0) -> Any:
    """The discrete form of ``model`` on straight-line costs to ``candidates``; with a
    ``region``, only the candidates it holds may open (indices stay the caller's). ``seed``
    seeds the p-median's search (the p-center's has no random step)."""
    import dataclasses

    from .. import discrete
    from .._region import candidates_in_region

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
        chosen: Any = discrete.p_median_planar(points, candidates, p, weights, fixed=fixed, seed=seed, **watch)
    else:
        chosen = discrete.p_center_planar(points, candidates, p, weights, fixed=fixed, **watch)
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
