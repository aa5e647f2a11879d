"""Catchments: Delaunay triangulation, Voronoi cells clipped to a region, nearest-site allocation.

A planner splitting a region among sites needs each site's catchment (its Voronoi cell inside
the study region), which demand each site serves (the nearest site) and the triangulation
that links neighbouring sites.

Every function takes ``groups=`` to run on many groups at once (in parallel, in Rust). In a
grouped result every index is a row of the whole input (never a position inside a group),
per-row arrays follow the input's row order, and ``result[label]`` is the single result of
that group: exactly what a separate call on the group's own rows gives, indexed by position
within the group.
"""

from __future__ import annotations

# typing.get_type_hints resolves a class's field annotations ("np.ndarray") in the module the
# class names, which is this package (see the end): the names they use must be here.
import numpy as np  # noqa: F401

from .._package import adopt
from ._allocation import Allocation, Allocations, nearest_site
from ._delaunay import DelaunayMesh, DelaunayMeshes, delaunay
from ._power import PowerCells, PowerCellSets, power_cells
from ._voronoi import VoronoiCells, VoronoiCellSets, voronoi_cells

# The cell table that the capacity cells build on (placewise.capacity).
from ._voronoi import _Cells as _Cells

__all__ = [
    "Allocation",
    "Allocations",
    "DelaunayMesh",
    "DelaunayMeshes",
    "PowerCellSets",
    "PowerCells",
    "VoronoiCellSets",
    "VoronoiCells",
    "delaunay",
    "nearest_site",
    "power_cells",
    "voronoi_cells",
]

# The public objects live in the private modules above but belong to this package: their
# reprs, pickles and reference entries name it, as they did when it was one module.
adopt(globals())
