"""Travel along a street network: shortest travel costs, network catchments and reach.

Straight-line distance is a model; by road is another. :class:`TravelGraph` holds a street
network the user supplies — built from line shapes (:meth:`TravelGraph.from_lines`: arrays
of coordinates, shapely LineStrings or MultiLineStrings, or a GeoDataFrame of them) or from
edge arrays (:meth:`TravelGraph.from_edges`) — with a cost each way on every edge (length by
default, or a column such as travel time, shared among a MultiLineString's parts by length)
and one-way edges. Points are attached to the
nearest point of the nearest edge and travel starts and ends part-way along edges, in the
directions the edges allow. A line drawn by several rows (a two-way street given as two one-way
records, one each way, or a lane repeated with another cost) carries a point on it along every
one of them: it is reported on the lowest of those rows, and travel part-way along the line
costs the cheapest of them in each direction.

* :meth:`TravelGraph.costs` — the travel-cost matrix between origins and destinations
  (Dijkstra 1959, parallel over origins), dense or sparse with a ``limit`` or ``k``;
* :meth:`TravelGraph.nearest_site` — every point's cheapest site by travel cost, with loads;
* :meth:`TravelGraph.catchment_edges`, :meth:`TravelGraph.reach` — the network cut into the
  parts each site reaches first, and the parts within a cost of each site, as lines;
* :meth:`TravelGraph.choose_sites` — the discrete siting models of :mod:`placewise.discrete`
  on travel costs.

Costs along an edge are in proportion to its length (uniform speed along each edge). The
off-network gap between a point and the network is reported, never added to a cost.
Unreachable pairs (separate components, one-way edges) are explicit: ``NaN`` in a dense
matrix, absent from a sparse one, site ``-1`` in a catchment. Results are planning aids under
this model; they defer to local regulations and licensed professional judgement.

Coordinates are planar, or longitude/latitude with ``geodesic=True`` (set by itself for a
GeoDataFrame in a geographic CRS): edge lengths, gaps and positions along edges are then
WGS84 geodesic lengths in metres. Lon/lat lines may cross the antimeridian (each segment
runs the shorter way round in longitude, and ends at 180 and -180, or at a pole under any
longitude, join) and reach the poles along meridians, while a segment that strays from its
geodesic by more than 1 % of its length (over or near a pole) is refused by row, and
attaching points to a network that circles a pole is refused naming the lines. Lines drawn
crossing each other meet there only with ``split_crossings=True`` (a bridge crosses a street
without meeting it).
"""

from __future__ import annotations

# typing.get_type_hints resolves a class's field annotations ("np.ndarray") in the module the
# class names, which is this package (see the end): the names they use must be here.
import numpy as np  # noqa: F401

from .._package import adopt
from ._graph import TravelGraph
from ._results import Attachments, EdgePieces, NetworkCatchments

__all__ = ["Attachments", "EdgePieces", "NetworkCatchments", "TravelGraph"]

# The public objects live in the private modules above but belong to this package: their
# reprs, pickles and reference entries name it, as they did when it was one module.
adopt(globals())
