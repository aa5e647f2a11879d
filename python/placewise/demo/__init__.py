"""The demo: siting depots for the invented coastal district of Orsavel.

``python -m placewise demo --out DIR`` runs the whole library on one invented scenario
(see :mod:`placewise._scenario`): 12,000 households in twelve towns and the countryside of
a district with a ragged coast and a lake.

1. Depot plans: one central depot (Fermat–Weber point), five depots minimising total
   travel (p-median) and five depots minimising the worst trip (p-center), compared.
2. Catchments of the p-median depots: Voronoi cells clipped to the land (coast and lake
   cut them), with the people each serves.
3. A link network joining the depots and the towns: the Steiner tree against the minimum
   spanning tree, with the saving.

Every figure is read from the results' own tables (``to_frame``, ``sites_frame``,
``summary``, ``to_geodataframe``): trips to the assigned depot, loads, costs, areas and
lengths are the kernels'. The demo only condenses the per-household trips into measures no
kernel states (mean and worst trip, the share of people within 10 km).

Depots are numbered west to east in the p-median plan, and a depot keeps its number and
colour in every map and layer: a depot of another plan takes the number of the p-median
depot it is paired with (nearest pairs first).

It writes maps (PNG), the layers as one GeoPackage in the scenario's projected CRS
(``orsavel.gpkg``, WGS 84 / UTM zone 26N) and as GeoJSON in WGS 84 longitude/latitude
(RFC 7946), a layer's coordinate columns (``x``, ``y``: a catchment's depot, the demand
ellipse's centre) in the same CRS as its geometry; tidy tables (CSV: one number per cell,
units in the header; and Markdown); and prints the summary. Everything is invented;
results are planning aids under the model (straight-line distance, the given weights), to
be checked against local regulations and licensed professional judgement.

Examples
--------
>>> from placewise import demo
>>> demo.DISCLAIMER.split(":")[0]
'These results are planning aids under a model'
"""

from __future__ import annotations

from .._package import adopt
from .._scenario import Scenario
from ._district import DEPOTS, DISCLAIMER, scenario

# The run with its writer, which the demo's tests use.
from ._runner import _run as _run
from ._runner import run

__all__ = ["DEPOTS", "DISCLAIMER", "Scenario", "run", "scenario"]

# The functions live in the private modules above but belong to this package: their reprs,
# pickles and doctests name it, as they did when it was one module.
adopt(globals())
