"""placewise: geometric optimisation of where things go.

Choose sites for weighted demand (Fermat–Weber point, p-median), see worst-case coverage
(enclosing circle and ellipse, minimax point, p-center), split a region into catchments
(Delaunay, clipped Voronoi cells, nearest-site allocation) and design the shortest network
linking sites (minimum spanning tree, Steiner tree); measure travel along a street network
(shortest paths, network catchments and reach).

Results are planning aids under the stated model — straight-line (or city-block) distance
and the given weights — and do not replace local regulations or licensed professional
judgement.
"""

from __future__ import annotations

from typing import Any

from . import _core
from ._core import DegenerateInputError, InputError
from .capacity import (
    CapacitatedMedianPlan,
    CapacityCells,
    CapacityPlan,
    capacitated_p_median,
    capacity_allocation,
    capacity_cells,
)
from .coverage import cover_all, cover_most, evaluate_sites
from .enclose import (
    Circle,
    Circles,
    Ellipse,
    Ellipses,
    MinimaxPoint,
    MinimaxPoints,
    enclosing_circle,
    enclosing_ellipse,
    minimax_point,
)
from .median import WeberPoint, WeberPoints, weber_point
from .multi import CenterPlan, CenterPlans, MedianPlan, MedianPlans, p_center, p_median
from .network import SpanningTree, SpanningTrees, SteinerTree, SteinerTrees, spanning_tree, steiner_tree
from .partition import (
    Allocation,
    Allocations,
    DelaunayMesh,
    DelaunayMeshes,
    PowerCells,
    PowerCellSets,
    VoronoiCells,
    VoronoiCellSets,
    delaunay,
    nearest_site,
    power_cells,
    voronoi_cells,
)
from .runtime import set_threads, thread_count
from .travel import TravelGraph

__version__: str = _core.__version__

# The GeoPandas and Dask layers load on first use (``placewise.gis``, ``placewise.cluster``),
# so ``import placewise`` stays light and works without the optional extras.
_LAZY_MODULES = ("gis", "cluster", "cli", "demo", "plotting", "discrete", "geodesic")


def __getattr__(name: str) -> Any:
    if name in _LAZY_MODULES:
        import importlib

        module = importlib.import_module(f".{name}", __name__)
        globals()[name] = module
        return module
    raise AttributeError(f"module 'placewise' has no attribute {name!r}")


def __dir__() -> list[str]:
    # Each name once (a lazy module is also a global once loaded), without the names this
    # file imports only for its own annotations.
    return sorted({*globals(), *_LAZY_MODULES} - {"annotations", "Any"})

__all__ = [
    "Allocation",
    "Allocations",
    "CapacitatedMedianPlan",
    "CapacityCells",
    "CapacityPlan",
    "CenterPlan",
    "CenterPlans",
    "Circle",
    "Circles",
    "DegenerateInputError",
    "DelaunayMesh",
    "DelaunayMeshes",
    "Ellipse",
    "Ellipses",
    "InputError",
    "MedianPlan",
    "MedianPlans",
    "MinimaxPoint",
    "MinimaxPoints",
    "PowerCellSets",
    "PowerCells",
    "SpanningTree",
    "SpanningTrees",
    "SteinerTree",
    "SteinerTrees",
    "VoronoiCellSets",
    "VoronoiCells",
    "WeberPoint",
    "WeberPoints",
    "capacitated_p_median",
    "capacity_allocation",
    "capacity_cells",
    "cover_all",
    "cover_most",
    "delaunay",
    "enclosing_circle",
    "enclosing_ellipse",
    "evaluate_sites",
    "minimax_point",
    "nearest_site",
    "p_center",
    "p_median",
    "power_cells",
    "set_threads",
    "spanning_tree",
    "steiner_tree",
    "thread_count",
    "TravelGraph",
    "voronoi_cells",
    "weber_point",
]
