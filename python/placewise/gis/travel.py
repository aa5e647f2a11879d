"""Travel along a street network on GeoDataFrames: the graph from a frame of lines, and
costs, network catchments and reach with the user's row labels and CRS.

Lines in a geographic CRS (lon/lat) have WGS84 geodesic edge lengths and attachment gaps in
metres; point frames in another CRS are transformed to the lines' CRS, and a point frame
without a CRS beside lines with one (or the reverse) is refused. Errors name the user's row
labels.
Results are planning aids under the stated model (travel along the given network at the
given costs); check them against local regulations and licensed professional judgement.

Requires the ``geo`` extra (geopandas, pyproj).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .._core import InputError
from .._errors import restate
from ..travel import TravelGraph
from ._columns import as_frame, column
from ._frames import annotated, refuse_geometry_named

__all__ = ["network_catchments", "network_reach", "travel_costs", "travel_graph"]


def travel_graph(lines: Any, *, cost: Any = None, reverse_cost: Any = None, one_way: Any = None,
                 tolerance: float = 0.0, unit: str | None = None, split_crossings: bool = False) -> TravelGraph:
    """A :class:`placewise.TravelGraph` from a GeoDataFrame of LineStrings and
    MultiLineStrings (projected, or lon/lat with geodesic lengths in metres; ``tolerance``
    is in the same length unit, so metres for lon/lat);
    ``cost``, ``reverse_cost`` and ``one_way`` may name columns (see
    :meth:`placewise.TravelGraph.from_lines`). Each part of a MultiLineString is a line of
    its own, with the row's one-way value and its share of the row's costs by length; empty
    geometries and empty parts are refused naming the row's label, as empty LineStrings are.

    Examples
    --------
    >>> import geopandas as gpd, shapely
    >>> from placewise.gis.travel import travel_graph
    >>> streets = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (300, 0)]),
    ...                                      shapely.LineString([(300, 0), (300, 400)])], crs="EPSG:32630")
    >>> travel_graph(streets)
    TravelGraph(nodes=3, edges=2, arcs=4, components=1)
    >>> road = shapely.MultiLineString([[(0, 0), (300, 0)], [(300, 0), (300, 100)]])
    >>> g = travel_graph(gpd.GeoDataFrame({"minutes": [2.0]}, geometry=[road], crs="EPSG:32630"), cost="minutes",
    ...                  unit="min")
    >>> g.edges_frame()[["cost_forward_min", "line"]]
       cost_forward_min  line
    0               1.5     0
    1               0.5     0
    """
    return TravelGraph.from_lines(lines, cost=cost, reverse_cost=reverse_cost, one_way=one_way,
                                  tolerance=tolerance, unit=unit, split_crossings=split_crossings)


def _points(graph: TravelGraph, frame: Any, argument: str) -> tuple[np.ndarray, np.ndarray]:
    """A point frame's coordinates in the graph's CRS and its row labels (unique: checked by
    :func:`~placewise.gis._columns.as_frame`, as for every frame of :mod:`placewise.gis`); a
    frame without a CRS beside a network with one (or the reverse) is refused."""
    from pyproj import CRS

    frame = as_frame(frame, argument)
    geometry = frame.geometry
    if (graph.crs is None) != (geometry.crs is None):
        # One side without a CRS: its coordinates cannot be placed against the other's (a
        # lon/lat frame read as metres is 6,000 km off), as the other GeoDataFrame functions
        # refuse (either every frame has a CRS or none has).
        if geometry.crs is None:
            text = (f"{argument}: the network's lines are in {CRS(graph.crs).name} and {argument} has no CRS; "
                    f"give it its CRS (GeoDataFrame.set_crs) so it can be transformed to the lines'")
        else:
            text = (f"{argument}: {argument} is in {CRS(geometry.crs).name} and the network's lines have no CRS; "
                    "build the network from lines with their CRS, or drop both CRSs for planar coordinates")
        error = InputError(text)
        error.argument = argument
        raise error
    if graph.crs is not None and geometry.crs != graph.crs:
        geometry = geometry.to_crs(graph.crs)
    kinds = geometry.geom_type.to_numpy()
    bad = np.flatnonzero(kinds != "Point")
    if len(bad):
        label = frame.index[bad[0]]
        error = InputError(f"{argument}[{label!r}]: expected a Point; got {kinds[bad[0]]}")
        error.argument, error.row = argument, label
        raise error
    return np.column_stack([geometry.x.to_numpy(), geometry.y.to_numpy()]), frame.index.to_numpy()


def _restated(call: Any, labels: dict[str, np.ndarray], graph: TravelGraph) -> Any:
    """``call()``, its input errors naming rows by ``labels`` (per argument name): the
    kernels' errors through :func:`restate` (with ``graph``'s units), the travel graph's own
    through their ``relabel``."""
    try:
        return call()
    except InputError as exc:
        relabel = getattr(exc, "relabel", None)
        if relabel is not None:
            raise relabel(labels) from None
        raise restate(exc, row_labels=labels, unit=graph.unit, length_unit=graph.length_unit) from None


def travel_costs(graph: TravelGraph, origins: Any, destinations: Any, *, limit: float | None = None,
                 k: int | None = None, max_gap: float | None = None, progress: Any = False) -> Any:
    """Travel costs as a long table: one row per pair kept (``origin``, ``destination`` as
    the frames' row labels, ``cost_<unit>``); unreachable pairs (and pairs beyond ``limit``
    or outside the ``k`` nearest) have no row.

    Parameters
    ----------
    progress : bool or callable
        A progress bar on stderr (True) or a callable ``(done, total)`` counting origins
        searched (see :meth:`placewise.TravelGraph.costs`); Ctrl-C stops the searches either
        way.

    Examples
    --------
    >>> import geopandas as gpd, shapely
    >>> from placewise.gis.travel import travel_costs, travel_graph
    >>> streets = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (300, 0)])], crs="EPSG:32630")
    >>> homes = gpd.GeoDataFrame(geometry=gpd.points_from_xy([10, 250], [5, -5]), index=["a", "b"],
    ...                          crs="EPSG:32630")
    >>> travel_costs(travel_graph(streets), homes.iloc[:1], homes)
      origin destination  cost_m
    0      a           a     0.0
    1      a           b   240.0
    """
    import pandas as pd

    o, o_labels = _points(graph, origins, "origins")
    d, d_labels = _points(graph, destinations, "destinations")
    labels = {"origins": o_labels, "destinations": d_labels}
    matrix = _restated(lambda: graph.costs(o, d, limit=limit, k=k, max_gap=max_gap, progress=progress), labels,
                       graph)
    if isinstance(matrix, np.ndarray):
        rows, cols = np.nonzero(~np.isnan(matrix))
        values = matrix[rows, cols]
    else:
        coo = matrix.tocoo()
        order = np.lexsort((coo.col, coo.row))
        rows, cols, values = coo.row[order], coo.col[order], coo.data[order]
    return pd.DataFrame({"origin": o_labels[rows], "destination": d_labels[cols], f"cost_{graph.unit}": values})


def network_catchments(graph: TravelGraph, points: Any, sites: Any, *, weight: Any = None,
                       limit: float | None = None, max_gap: float | None = None) -> Any:
    """Every point's cheapest site by travel cost, as the points frame with ``site`` (the
    sites frame's row label, None where unreachable), ``reachable``, ``cost_<unit>`` and
    ``gap_<unit>`` columns; ``weight`` names a column of demand (or is a Series matched to
    the points by index label, or values by position, as in :func:`placewise.gis.weber_point`).

    Examples
    --------
    >>> import geopandas as gpd, shapely
    >>> from placewise.gis.travel import network_catchments, travel_graph
    >>> streets = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (300, 0)])], crs="EPSG:32630")
    >>> homes = gpd.GeoDataFrame(geometry=gpd.points_from_xy([10, 250], [5, -5]), index=["a", "b"],
    ...                          crs="EPSG:32630")
    >>> depots = gpd.GeoDataFrame(geometry=gpd.points_from_xy([0, 300], [0, 0]), index=["west", "east"],
    ...                           crs="EPSG:32630")
    >>> network_catchments(travel_graph(streets), homes, depots)[["site", "cost_m"]]
       site  cost_m
    a  west    10.0
    b  east    50.0
    """
    # A GeoSeries of points gets its columns in a frame (set on the series, they became four
    # more rows holding arrays).
    frame = as_frame(points, "points")
    p, p_labels = _points(graph, frame, "points")
    s, s_labels = _points(graph, sites, "sites")
    weights = None if weight is None else column(frame, weight, "points", "weight")
    labels = {"points": p_labels, "sites": s_labels, "weights": p_labels}
    columns = ["site", "reachable", f"cost_{graph.unit}", f"gap_{graph.length_unit}"]
    refuse_geometry_named(frame, columns, "points")  # before the search, not after it
    result = _restated(lambda: graph.nearest_site(p, s, weights, limit=limit, max_gap=max_gap), labels, graph)
    site = np.full(len(p), None, dtype=object)
    site[result.reachable] = s_labels[result.site[result.reachable]]
    return annotated(frame, dict(zip(columns, [site, result.reachable, result.cost, result.point_gap])), "points")


def network_reach(graph: TravelGraph, sites: Any, limit: float, *, max_gap: float | None = None) -> Any:
    """The parts of the network within travel cost ``limit`` of each site, as a GeoDataFrame
    of line pieces in the lines' CRS: ``site`` (row label), ``edge``, ``start``, ``end``
    (shares of the edge), ``cost_start_<unit>``, ``cost_end_<unit>``.

    Examples
    --------
    >>> import geopandas as gpd, shapely
    >>> from placewise.gis.travel import network_reach, travel_graph
    >>> streets = gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (300, 0)])], crs="EPSG:32630")
    >>> depots = gpd.GeoDataFrame(geometry=gpd.points_from_xy([0], [0]), index=["west"], crs="EPSG:32630")
    >>> reach = network_reach(travel_graph(streets), depots, 100)
    >>> list(reach["site"]), float(reach.length.sum())
    (['west'], 100.0)
    """
    s, s_labels = _points(graph, sites, "sites")
    pieces = _restated(lambda: graph.reach(s, limit, max_gap=max_gap), {"sites": s_labels}, graph)
    frame = pieces.to_geodataframe(crs=graph.crs)
    frame["site"] = s_labels[pieces.site]
    return frame
