"""The travel graph: construction from edges or lines, description, searches and siting."""

from __future__ import annotations

import dataclasses
import warnings
from collections.abc import Callable
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._core import InputError
from .._errors import in_unit, restate
from .._progress import Stages
from .._units import check_unit, length_unit_of, unit_words
from ._inputs import (
    _MODELS,
    _frame_lines,
    _in_degrees,
    _input_error,
    _missing_pair_error,
    _one_way_codes,
    _ragged_lines,
    _unreached_error,
)
from ._results import Attachments, EdgePieces, NetworkCatchments


class TravelGraph:
    """A street network for travel costs (build it with :meth:`from_lines` or
    :meth:`from_edges`).

    Stored compactly in the compiled core (CSR arcs with 32-bit indices; see
    :attr:`memory_bytes`). Nodes are numbered from 0; edges keep their input order (one
    edge per row, unless rows have several parts or lines are split where they cross: then
    :meth:`edges_frame` names each edge's row).

    Attributes
    ----------
    unit : str
        Name of the cost unit, used in column names (``cost_m``, ``cost_min``).
    length_unit : str
        Name of the coordinates' length unit (``gap_m``).
    crs : object or None
        The CRS of the lines, when they came from a GeoDataFrame.
    """

    def __init__(self, core: Any, *, unit: str = "u", length_unit: str = "u", crs: Any = None,
                 row_labels: Any = None) -> None:
        self._core = core
        self.unit = check_unit(unit)
        self.length_unit = length_unit
        self.crs = crs
        # The caller's row labels (a GeoDataFrame's index), for the edges' ``line_label``.
        self._row_labels = None if row_labels is None else np.asarray(row_labels, dtype=object)
        info = core.info()
        self._info = info

    # -------------------------------------------------------------- construction

    @classmethod
    def from_edges(
        cls, tail: ArrayLike, head: ArrayLike, cost: ArrayLike, *, reverse_cost: ArrayLike | None = None,
        one_way: ArrayLike | None = None, nodes: int | None = None, coordinates: ArrayLike | None = None,
        unit: str = "u",
    ) -> TravelGraph:
        """A graph from edge arrays: edge ``i`` runs from node ``tail[i]`` to node ``head[i]``.

        Parameters
        ----------
        tail, head : array_like of int, shape (m,)
            Node numbers from 0.
        cost : array_like, shape (m,)
            Finite, non-negative cost from tail to head. Only the directions an edge may be
            travelled need a cost: it may be NaN on an edge travelled backward only (when
            ``reverse_cost`` is given).
        reverse_cost : array_like, shape (m,), optional
            Cost from head to tail. Default: ``cost``. It may be NaN on an edge travelled
            forward only (a one-way street's empty reverse column).
        one_way : array_like, shape (m,), optional
            True / 1 / ``"forward"``: tail to head only; -1 / ``"backward"``: head to tail
            only; False / 0 / ``"both"``: both ways.
        nodes : int, optional
            Number of nodes (isolated nodes included). Default: largest number + 1, or
            with ``coordinates`` their count (a different ``nodes`` is an ``InputError``).
        coordinates : array_like, shape (nodes, 2), optional
            Node coordinates: edges become straight segments, so points can be attached.
        unit : str
            Name of the cost unit.

        Raises
        ------
        InputError
            Naming the row of a node number out of range, a NaN, infinite or negative cost
            for a direction the edge may be travelled, or an unknown one-way value.

        Examples
        --------
        >>> import placewise as pw
        >>> g = pw.TravelGraph.from_edges([0, 1, 2], [1, 2, 0], [4.0, 1.0, 2.0], one_way=[True, False, False])
        >>> g.costs([0, 1], [0, 1, 2])
        array([[0., 3., 2.],
               [3., 0., 1.]])
        """
        core = _core.travel_from_edges(tail, head, cost, reverse_cost, _one_way_codes(one_way), nodes, coordinates)
        return cls(core, unit=unit)

    @classmethod
    def from_lines(
        cls, lines: Any, *, cost: Any = None, reverse_cost: Any = None, one_way: Any = None,
        tolerance: float = 0.0, unit: str | None = None, split_crossings: bool = False, geodesic: bool = False,
    ) -> TravelGraph:
        """A graph whose edges are lines; line ends closer than ``tolerance`` become one node.

        Each line runs from its first point (tail) to its last (head). Ends are joined in line
        order: an end within ``tolerance`` of an existing node joins the nearest one. Lines
        are joined only at their ends unless ``split_crossings`` is set.

        A MultiLineString row is several lines: each part is its own chain of vertices from
        its first point to its last, joined to other lines (and to the row's other parts)
        only at its ends, exactly as separate lines are. The row's ``one_way`` value holds
        for every part, and its ``cost`` and ``reverse_cost`` are shared among the parts in
        proportion to their lengths (planar, or geodesic with ``geodesic``; equally when all
        have length zero), so the parts' costs add up to the row's. :meth:`edges_frame`
        and errors name the row, not the part. An empty geometry, or an empty part of a
        MultiLineString, is refused naming its row (and the part), as an empty LineString
        is: a line needs at least two points.

        Parameters
        ----------
        lines : GeoDataFrame, GeoSeries or sequence of LineStrings, MultiLineStrings or ``(k, 2)`` arrays
            Planar coordinates, or longitude/latitude with ``geodesic`` (set by itself for a
            GeoDataFrame or GeoSeries in a geographic CRS).
        cost, reverse_cost : array_like or str, optional
            Cost per row each way (a column name for a GeoDataFrame), such as minutes.
            Default: length (planar, or geodesic metres). As in :meth:`from_edges`, a
            direction the row's ``one_way`` forbids may have no cost (NaN).
        one_way : array_like or str, optional
            As :meth:`from_edges`, relative to the drawing direction of each line (of each
            part of a MultiLineString).
        tolerance : float
            Joining distance for line ends, >= 0: in coordinate units, and in metres on the
            ellipsoid for lon/lat lines (``geodesic``), as every other length of such a
            graph. With 0 (only equal ends join) and lines in more than one component, a
            warning counts the components and the dangling ends.
        unit : str, optional
            Name of the cost unit. Default: the CRS's length unit with length costs, else
            ``"u"``.
        split_crossings : bool
            Split lines where two cross in their interiors, or where one ends part-way along
            another, so that travel can turn there. Off by default: a bridge or a tunnel crosses
            a street in the drawing without meeting it, so only set it for networks drawn
            without grade separation (or after removing those lines). Each piece keeps its
            line's one-way value and the share of its cost in proportion to length;
            :meth:`edges_frame` gives each edge's input ``line``. In lon/lat with
            ``geodesic``, the share goes by geodesic length on the WGS84 ellipsoid (a degree
            of longitude is shorter away from the equator). Crossing points are decided
            exactly (orientation tests) and rounded once; three lines through one point may
            need a small ``tolerance`` to meet in one node. Collinear overlaps are not split.
        geodesic : bool
            Coordinates are longitude/latitude (degrees, WGS84): default costs, attachment
            gaps and positions are geodesic lengths in metres on the WGS84 ellipsoid (Karney
            2013), and so is ``tolerance``. Set by itself for a GeoDataFrame in a
            geographic CRS (one whose angles are not degrees, such as grads, is first
            transformed to EPSG:4326, which becomes the graph's ``crs``). Each segment runs
            straight in longitude/latitude the shorter way round (a ferry from 179.9 to
            -179.9 crosses the antimeridian), and ends at one place join whatever turn
            their longitudes are given in (180 and -180; any longitude at a pole). Edges
            are sought in a local frame (longitudes taken in one turn opposite the network
            and scaled by the cosine of the mean latitude); those as near there as that
            frame's distortion over the network's latitudes allows are attached on the
            ellipsoid, so a point goes to the geodesically nearest point of the nearest
            edge.

        Raises
        ------
        InputError
            Naming the row of a missing, empty or non-line geometry (or of a MultiLineString
            with an empty part, and the part), a bad cost or an unknown one-way value; with
            ``geodesic``, of a segment that strays from the geodesic between its ends by more
            than 1 % of its length (over or near a pole: add vertices, or project to a polar
            CRS). Naming ``lines`` when their geographic CRS is of another body than the Earth
            (lengths are measured on WGS84; Earth datums other than WGS84 differ from it by
            about 1e-5 of a length).

        Examples
        --------
        >>> import placewise as pw
        >>> streets = [[(0, 0), (3, 0)], [(3, 0), (3, 4)], [(0, 0), (0, 4), (3, 4)]]
        >>> g = pw.TravelGraph.from_lines(streets)
        >>> g.nodes, g.edges, g.components
        (3, 3, 1)
        >>> g.costs([[1, 0]], [[3, 3]])       # along the bottom, then up
        array([[5.]])
        >>> cross = [[(0, 0), (2, 0)], [(1, -1), (1, 1)]]
        >>> pw.TravelGraph.from_lines(cross, split_crossings=True).edges_frame()[["tail", "head", "line"]]
           tail  head  line
        0     0     1     0
        1     1     2     0
        2     3     1     1
        3     1     4     1

        A street stored as two parts (a MultiLineString) and a side street; the row's 14
        minutes go 6 and 8 to parts 3 and 4 long:

        >>> import shapely
        >>> main = shapely.MultiLineString([[(0, 0), (3, 0)], [(3, 0), (3, 4)]])
        >>> side = shapely.LineString([(3, 0), (6, 0)])
        >>> g = pw.TravelGraph.from_lines([main, side], cost=[14.0, 2.0], unit="min")
        >>> g.edges_frame()[["tail", "head", "cost_forward_min", "line"]]
           tail  head  cost_forward_min  line
        0     0     1               6.0     0
        1     1     2               8.0     0
        2     1     3               2.0     1
        """
        length_unit, crs, labels = "u", None, None
        if hasattr(lines, "geometry") and hasattr(lines, "crs") and hasattr(lines, "columns"):
            lines, cost, reverse_cost, one_way, length_unit, crs, labels = _frame_lines(
                lines, cost, reverse_cost, one_way)
            geodesic = geodesic or (crs is not None and crs.is_geographic)
        elif hasattr(lines, "crs") and getattr(lines, "crs", None) is not None:
            lines = _in_degrees(lines)
            crs = lines.crs
            geodesic = geodesic or crs.is_geographic
            length_unit = length_unit_of(crs)
        try:
            coords, offsets, parts = _ragged_lines(lines, labels)
            codes = _one_way_codes(one_way, labels)
            core = _core.travel_from_lines(coords, offsets, cost, reverse_cost, codes, tolerance, split_crossings,
                                           geodesic, parts)
        except InputError as exc:
            if labels is None:
                raise
            names = {k: labels for k in ("lines", "cost", "reverse_cost", "one_way")}
            raise restate(exc, row_labels=names) from None
        length_unit = "m" if geodesic else length_unit
        cost_unit = unit if unit is not None else (length_unit if cost is None else "u")
        graph = cls(core, unit=cost_unit, length_unit=length_unit, crs=crs, row_labels=labels)
        if tolerance == 0 and graph.components > 1:
            warnings.warn(
                f"the lines form {graph.components} separate components and {graph.dangling_ends} line ends "
                f"meet no other line end; with tolerance=0 only ends with equal coordinates join (pass "
                f"tolerance= to join ends closer than a distance, in {unit_words(length_unit)})",
                UserWarning, stacklevel=2)
        return graph

    # -------------------------------------------------------------- description

    @property
    def nodes(self) -> int:
        """Number of nodes."""
        return int(self._info["nodes"])

    @property
    def edges(self) -> int:
        """Number of edges (input rows, or their parts and pieces: see :meth:`edges_frame`)."""
        return int(self._info["edges"])

    @property
    def arcs(self) -> int:
        """Number of directed arcs (two per two-way edge, one per one-way edge)."""
        return int(self._info["arcs"])

    @property
    def components(self) -> int:
        """Number of weakly connected components (an isolated node is one)."""
        return int(self._info["components"])

    @property
    def dangling_ends(self) -> int:
        """Nodes that end exactly one edge."""
        return int(self._info["dangling"])

    @property
    def memory_bytes(self) -> dict[str, int]:
        """Bytes held by the graph (``graph``: arcs, edges, nodes) and by the edge shapes
        (``shapes``: a copy of the input coordinates)."""
        return {"graph": int(self._info["graph_bytes"]), "shapes": int(self._info["shape_bytes"])}

    def __repr__(self) -> str:
        return (f"TravelGraph(nodes={self.nodes}, edges={self.edges}, arcs={self.arcs}, "
                f"components={self.components})")

    def edges_frame(self) -> Any:
        """One row per edge: ``tail``, ``head``, ``cost_forward_<unit>``,
        ``cost_backward_<unit>`` (NaN where the direction is not allowed), ``component``, and
        ``line`` (the input row, by position) when some rows had several parts
        (MultiLineStrings) or the lines were split where they cross; then, for lines from a
        GeoDataFrame, also ``line_label`` (that row's index label)."""
        import pandas as pd

        i = self._info
        frame = pd.DataFrame({"tail": i["tail"], "head": i["head"], f"cost_forward_{self.unit}": i["forward"],
                              f"cost_backward_{self.unit}": i["backward"], "component": i["edge_component"]})
        if i.get("edge_line") is not None:
            frame["line"] = i["edge_line"]
            if self._row_labels is not None:
                frame["line_label"] = self._row_labels[np.asarray(i["edge_line"], dtype=np.int64)]
        return frame

    def components_frame(self) -> Any:
        """One row per component: ``component``, ``nodes``, ``edges``."""
        import pandas as pd

        i = self._info
        return pd.DataFrame({
            "component": np.arange(self.components),
            "nodes": np.bincount(i["node_component"], minlength=self.components),
            "edges": np.bincount(i["edge_component"], minlength=self.components),
        })

    # -------------------------------------------------------------- searches

    def _measured(self) -> Any:
        """A context in which the kernel's errors write this network's units after their
        costs and lengths (``max_gap = 50 m``)."""
        return in_unit(self.unit, self.length_unit)

    def snap(self, points: ArrayLike, *, max_gap: float | None = None) -> Attachments:
        """Attach points to the nearest point of the nearest edge (a grid of buckets over the
        edges' segments). Edges of zero length are never attached to: they lead nowhere but
        to their own end, which the point reaches through the edges that meet there.

        Raises
        ------
        InputError
            Naming the first point farther than ``max_gap`` from every edge, or when the
            graph has no coordinates; naming ``lines`` when a lon/lat network circles a pole
            (no longitude is free of it, so it has no one flat view to search in: the fault
            is the network's, not the points').

        Examples
        --------
        >>> import placewise as pw
        >>> g = pw.TravelGraph.from_lines([[(0, 0), (10, 0)]])
        >>> a = g.snap([[4, 3]])
        >>> a.edge, a.along, a.gap
        (array([0]), array([4.]), array([3.]))
        """
        with self._measured():
            return Attachments(**self._core.snap(points, max_gap), unit=self.length_unit)

    def costs(self, origins: ArrayLike, destinations: ArrayLike, *, limit: float | None = None,
              k: int | None = None, max_gap: float | None = None,
              progress: bool | Callable[[int, int], object] | None = None) -> Any:
        """Shortest travel costs from every origin to every destination.

        One Dijkstra search (Dijkstra 1959) per origin in the compiled core, in parallel over
        origins, stopped at ``limit`` or once the ``k`` cheapest destinations are settled.

        Parameters
        ----------
        origins, destinations : array_like
            Points ``(n, 2)`` (attached to the nearest edge) or node numbers ``(n,)`` (integers).
        limit : float, optional
            Keep only pairs with cost ``<= limit``.
        k : int, optional
            Keep only each origin's ``k`` cheapest destinations (ties: lower row).
        max_gap : float, optional
            Refuse points farther than this from the network.
        progress : bool or callable, optional
            ``True``: a bar on stderr, one step per origin searched; a callable is called
            with ``(done, total)`` origins from the calling thread. Ctrl-C (or an exception
            from the callable) cancels the searches not yet begun and is raised within
            about one search per worker thread.

        Returns
        -------
        ndarray or scipy.sparse.csr_array, shape (n_origins, n_destinations)
            Without ``limit`` and ``k``: a dense array with ``NaN`` for unreachable pairs.
            With either: a sparse array whose stored entries are the pairs kept (a zero
            cost is stored); an absent pair is unreachable, beyond the limit or not among
            the ``k`` nearest.

        Examples
        --------
        >>> import placewise as pw
        >>> g = pw.TravelGraph.from_edges([0, 2], [1, 3], [1.0, 2.0])   # two separate streets
        >>> g.costs([0, 2], [1, 3])
        array([[ 1., nan],
               [nan,  2.]])
        >>> g.costs([0, 2], [1, 3], limit=1.5).toarray()
        array([[1., 0.],
               [0., 0.]])
        """
        with self._measured():
            f = self._core.costs(origins, destinations, limit, k, max_gap, progress)
        n, m = len(f["offsets"]) - 1, int(f["destinations"])
        if limit is None and k is None:
            dense = np.full((n, m), np.nan)
            rows = np.repeat(np.arange(n), np.diff(f["offsets"]))
            dense[rows, f["columns"]] = f["costs"]
            return dense
        import scipy.sparse

        return scipy.sparse.csr_array((f["costs"], f["columns"], f["offsets"]), shape=(n, m))

    def nearest_site(self, points: ArrayLike, sites: ArrayLike, weights: ArrayLike | None = None, *,
                     limit: float | None = None, max_gap: float | None = None) -> NetworkCatchments:
        """Every point's cheapest site by travel cost from the site, with loads.

        One multi-source Dijkstra search labels every node with its cheapest site; each point
        then takes the cheaper end of its edge (in the directions the edge allows) or a site
        on the same edge. A point no site reaches (another component, one-way edges, beyond
        ``limit``) gets site -1 and cost NaN and is counted in ``unreachable``. Equally cheap
        sites go to the lower site row, for points and nodes alike.

        Examples
        --------
        >>> import placewise as pw
        >>> g = pw.TravelGraph.from_lines([[(0, 0), (10, 0)], [(20, 0), (30, 0)]])
        >>> c = g.nearest_site([[1, 0], [9, 1], [25, 0]], sites=[[0, 0]])
        >>> c.to_frame()
           site  reachable  cost_u  edge  gap_u
        0     0       True     1.0     0    0.0
        1     0       True     9.0     0    1.0
        2    -1      False     NaN     1    0.0
        >>> c.unreachable
        1
        """
        with self._measured():
            f = self._core.catchments(points, sites, weights, limit, max_gap)
        keep = {x.name for x in dataclasses.fields(NetworkCatchments)}
        return NetworkCatchments(**{k: v for k, v in f.items() if k in keep}, unit=self.unit,
                                 length_unit=self.length_unit)

    def catchment_edges(self, sites: ArrayLike, *, limit: float | None = None,
                        max_gap: float | None = None) -> EdgePieces:
        """The network cut where the catchments of two sites meet: every piece is reached
        cheapest from its site, with the cost at both ends (parts no site reaches are left out).

        Examples
        --------
        >>> import placewise as pw
        >>> g = pw.TravelGraph.from_lines([[(0, 0), (10, 0)]])
        >>> g.catchment_edges([[0, 0], [10, 0]]).to_frame()
           site  edge  start  end  cost_start_u  cost_end_u
        0     0     0    0.0  0.5           0.0         5.0
        1     1     0    0.5  1.0           5.0         0.0
        """
        with self._measured():
            return EdgePieces(**self._core.catchment_edges(sites, limit, max_gap), unit=self.unit)

    def reach(self, sites: ArrayLike, limit: float, *, max_gap: float | None = None) -> EdgePieces:
        """For every site, the parts of the network within travel cost ``limit`` of it, as
        line pieces with the cost at both ends (``to_geodataframe()`` gives the lines).

        Examples
        --------
        >>> import placewise as pw
        >>> g = pw.TravelGraph.from_lines([[(0, 0), (10, 0)]])
        >>> g.reach([[4, 0]], 3).to_frame()
           site  edge  start  end  cost_start_u  cost_end_u
        0     0     0    0.1  0.4           3.0         0.0
        1     0     0    0.4  0.7           0.0         3.0
        """
        with self._measured():
            return EdgePieces(**self._core.reach(sites, limit, max_gap), unit=self.unit)

    # -------------------------------------------------------------- siting

    def site_costs(self, points: ArrayLike, candidates: ArrayLike, *, limit: float | None = None,
                   max_gap: float | None = None,
                   progress: bool | Callable[[int, int], object] | None = None) -> Any:
        """The demand × candidate travel-cost matrix (travel from candidate ``j`` to point
        ``i``) that :mod:`placewise.discrete` takes: dense with NaN for unreachable pairs, or
        sparse with a ``limit`` (absent pairs are beyond it or unreachable). ``progress``
        counts the candidates searched, as in :meth:`costs`.

        Examples
        --------
        >>> import placewise as pw
        >>> g = pw.TravelGraph.from_lines([[(0, 0), (10, 0)]])
        >>> g.site_costs([[2, 0], [7, 0]], [[0, 0]])
        array([[2.],
               [7.]])
        """
        matrix = self.costs(candidates, points, limit=limit, max_gap=max_gap, progress=progress)
        return matrix.T.tocsr() if limit is not None else np.ascontiguousarray(matrix.T)

    def choose_sites(self, model: str, points: ArrayLike, candidates: ArrayLike, weights: ArrayLike | None = None,
                     *, limit: float | None = None, max_gap: float | None = None,
                     progress: bool | Callable[[int, int], object] = False, **options: Any) -> Any:
        """A model of :mod:`placewise.discrete` on travel costs from candidates to points.

        Parameters
        ----------
        model : str
            ``"evaluate_sites"``, ``"p_median"``, ``"p_center"``, ``"cover_all"`` or
            ``"cover_most"``.
        points, candidates : array_like
            Demand and candidate sites, as points (attached like any point) or node numbers.
        weights : array_like, optional
            Demand per point.
        limit : float, optional
            Consider only pairs within this cost (a sparse matrix).
        progress : bool or callable
            A callable is called with ``(done, total)`` from the calling thread, as one
            count: first the candidates searched for the cost matrix (one step each, as
            :meth:`costs`), then the model's own steps (all models but
            ``"evaluate_sites"``, which is one pass), added on. While the searches run, the
            total holds them and one step for the model; when the model starts, the total
            grows by its steps. ``done`` and ``total`` never fall, and ``done`` reaches
            ``total`` only when the call ends. ``True`` draws a bar on stderr for each of
            the two stages, labelled with what it counts. Ctrl-C stops either stage.
        **options
            The model's own arguments (``p``, ``radius``, ``fixed``, ``sites``, ...).

        Raises
        ------
        InputError
            Naming the points no candidate reaches (another component, one-way edges or
            beyond ``limit``), with their count and weight; and when some pairs are
            unreachable while the discrete models still need every pair.

        Examples
        --------
        >>> import placewise as pw
        >>> g = pw.TravelGraph.from_lines([[(0, 0), (10, 0)], [(10, 0), (10, 10)]])
        >>> plan = g.choose_sites("p_median", [[1, 0], [2, 0], [10, 9]], [[0, 0], [10, 10]], p=1)
        >>> plan.open, float(plan.total_cost)
        (array([0]), 22.0)
        """
        from .. import discrete

        if model not in _MODELS:
            raise _input_error("model", f"model must be one of {', '.join(map(repr, _MODELS))}; got {model!r}")
        stages = Stages(progress, 1 if model == "evaluate_sites" else 2)
        matrix = self.site_costs(points, candidates, limit=limit, max_gap=max_gap, progress=stages.next())
        n, m = matrix.shape
        # Which pairs have a cost, counted per point without a dense n × m mask on the sparse
        # path (a limit is given precisely when the whole matrix would not fit).
        if isinstance(matrix, np.ndarray):
            reached = ~np.isnan(matrix)
            per_point = reached.sum(axis=1)
        else:
            per_point = np.diff(matrix.indptr)
        every_pair = int(per_point.sum()) == n * m
        lost = np.flatnonzero(per_point == 0)
        if len(lost):
            w = np.ones(n) if weights is None else np.asarray(weights, dtype=np.float64)
            raise _unreached_error(lost, float(w[lost].sum()))
        if every_pair and not isinstance(matrix, np.ndarray):
            matrix = matrix.toarray()
        elif not every_pair and isinstance(matrix, np.ndarray):
            import scipy.sparse

            rows, cols = np.nonzero(reached)
            matrix = scipy.sparse.csr_array((matrix[rows, cols], (rows, cols)), shape=matrix.shape)
        if model != "evaluate_sites":
            options["progress"] = stages.next()
        call = getattr(discrete, model)
        try:
            plan = call(matrix, weights=weights, unit=self.unit, **options)
            stages.close()
            return plan
        except InputError as exc:
            if every_pair:
                raise
            # The first point with a missing pair, and its first candidate without a cost.
            i = int(np.flatnonzero(np.diff(matrix.indptr) < m)[0])
            j = int(np.setdiff1d(np.arange(m), matrix.indices[matrix.indptr[i]:matrix.indptr[i + 1]])[0])
            raise _missing_pair_error(i, j, n * m - matrix.nnz - 1, str(exc)) from exc

