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

# typing.get_type_hints resolves a class's field annotations ("np.ndarray") in the module the
# class names, which is this package (see the end): the names they use must be here.
import numpy as np  # noqa: F401

from .._package import adopt

# The conversions that the coordinate models of placewise.coverage use.
from ._costs import _placed as _placed
from ._costs import _planar as _planar
from ._models import cover_all, cover_most, evaluate_sites, p_center, p_median
from ._planar_models import (
    cover_all_planar,
    cover_most_planar,
    euclidean_costs,
    evaluate_sites_planar,
    p_center_planar,
    p_median_planar,
)
from ._selections import CenterSelection, CoverAllSelection, CoverMostSelection, MedianSelection, SiteEvaluation

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

# The public objects live in the private modules above but belong to this package: their
# reprs, pickles, reference entries and doctests name it, as they did when it was one module.
adopt(globals())
