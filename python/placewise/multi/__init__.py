"""Many sites at once: continuous p-median (multisource Weber) and p-center.

Where to put ``p`` depots so that the total weighted travel is least (p-median), or so
that the worst weighted trip is shortest (p-center).

Every plan knows three tables, all computed by the kernel (no distance or load is
recomputed here):

* ``to_frame()`` — one row per demand point, in input order: ``assignment`` (the row of
  :meth:`~MedianPlan.sites_frame` serving it) and ``distance_<unit>`` (to that site);
  ``to_geodataframe()`` adds the demand point as a Point;
* ``sites_frame()`` — one row per site: ``x``, ``y``, ``load`` (summed weight served),
  ``points`` (demand points served), ``fixed`` (an existing site); ``sites_geodataframe()`` adds
  the site as a Point;
* ``summary()`` — the totals in one row: ``cost_<unit>`` (p-median) or
  ``weighted_radius_<unit>`` and ``radius_<unit>`` (p-center), the number of ``sites``, the
  ``load`` and ``points`` of demand served.

Grouped plans (``groups=``) have the same tables with ``group`` and ``problem`` columns in
front: ``to_frame`` keeps input order, ``sites_frame`` lists every group's sites in label
order (a group skipped with ``errors="skip"`` keeps one row holding its problem), and
``summary`` has one row per group.
"""

from __future__ import annotations

# typing.get_type_hints resolves a class's field annotations ("np.ndarray") in the module the
# class names, which is this package (see the end): the names they use must be here.
import numpy as np  # noqa: F401

from .._package import adopt
from ._center import CenterPlan, CenterPlans, p_center
from ._median import MedianPlan, MedianPlans, p_median

__all__ = ["CenterPlan", "CenterPlans", "MedianPlan", "MedianPlans", "p_center", "p_median"]

# The public objects live in the private modules above but belong to this package: their
# reprs, pickles and reference entries name it, as they did when it was one module.
adopt(globals())
