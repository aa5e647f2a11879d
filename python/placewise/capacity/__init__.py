"""Capacities: demand served by sites that can each take only so much.

* :func:`capacity_allocation` — demand to given sites at least total distance within their
  capacities: the exact transportation plan when a point's demand may be split between
  sites, a single-source plan with a proven gap when it may not;
* :func:`capacity_cells` — capacity-constrained catchments: the powers for which every
  site's power cell holds exactly its capacity of demand (squared-distance cost);
* :func:`capacitated_p_median` — ``p`` sites with capacities, continuous or chosen among
  candidates (location–allocation; with candidates also the swap interchange and a
  Lagrangian heuristic), with a proven gap (Lagrangian bound) where candidates are given.

The exact plan comes from successive shortest paths with node potentials (Edmonds & Karp
1972; Tomizawa 1971) run on the residual network condensed over the sites, so each step
costs O(m²) for ``m`` sites, not O(n·m). Its optimal capacity prices ``price`` certify it:
every point is served only by sites minimising ``distance + price``, and the price is 0
wherever a site has slack.

When total capacity is below total demand the call refuses with an ``InputError`` stating
the shortfall, unless ``allow_unserved=True``: then the plan serves as much demand as the
capacities hold, at least total distance, and reports what is left unserved per point.

Results are planning aids under the stated model (straight-line distance, the given
weights and capacities) and do not replace local regulations or licensed professional
judgement.
"""

from __future__ import annotations

# typing.get_type_hints resolves a class's field annotations ("np.ndarray") in the module the
# class names, which is this package (see the end): the names they use must be here.
import numpy as np  # noqa: F401

from .._package import adopt
from ._allocation import CapacityPlan, capacity_allocation
from ._cells import CapacityCellPolygons, CapacityCells, capacity_cells
from ._median import CapacitatedMedianPlan, capacitated_p_median

__all__ = ["CapacitatedMedianPlan", "CapacityCellPolygons", "CapacityCells", "CapacityPlan", "capacitated_p_median",
           "capacity_allocation", "capacity_cells"]

# The public objects live in the private modules above but belong to this package: their
# reprs, pickles, reference entries and doctests name it, as they did when it was one module.
adopt(globals())
