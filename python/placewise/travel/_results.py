"""The travel graph's result types: attachments, network catchments and edge pieces."""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np

from .._results import Result


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Attachments(Result):
    """Points attached to the network: one row per point.

    Attributes
    ----------
    edge : ndarray of int64, shape (n,)
        The edge (input row) each point went to.
    along : ndarray, shape (n,)
        Length along that edge's shape from its first point to the attachment point.
    gap : ndarray, shape (n,)
        Distance from the point to the network (not a travel cost).
    on_edge : ndarray, shape (n, 2)
        The attachment points.
    node : ndarray of int64, shape (n,)
        The node the point sits on when it is attached at an edge's end; -1 part-way along.
    """

    edge: np.ndarray
    along: np.ndarray = dataclasses.field(repr=False)
    gap: np.ndarray
    on_edge: np.ndarray = dataclasses.field(repr=False)
    node: np.ndarray = dataclasses.field(repr=False)

    def _columns(self) -> dict[str, Any]:
        return {"edge": self.edge, self._u("along"): self.along, self._u("gap"): self.gap, "node": self.node}

    def _geometry(self) -> Any:
        import shapely

        return shapely.points(self.on_edge)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class NetworkCatchments(Result):
    """Every point's cheapest site by travel cost from the site (one row per point).

    ``unit`` names the cost unit (``cost_min``); ``length_unit`` the coordinates' unit.

    Attributes
    ----------
    site : ndarray of int64, shape (n,)
        The site row serving each point; -1 where no site reaches it (``reachable`` False).
    cost : ndarray, shape (n,)
        Travel cost from that site; NaN where unreachable.
    load, count : ndarray, shape (s,)
        Weight and number of points each site serves.
    node_site, node_cost : ndarray, shape (nodes,)
        The catchment of every node: its site (-1 unreached) and the cost from it (NaN).
    unreachable, unreachable_weight : int, float
        How many points, and how much weight, no site reaches.
    total_cost, worst_cost : float
        ``Σ wᵢ costᵢ`` and ``max costᵢ`` over the reached points.
    point_edge, point_gap : ndarray, shape (n,)
        The edge each point was attached to and its gap (empty when given as nodes).
    """

    site: np.ndarray
    cost: np.ndarray = dataclasses.field(repr=False)
    load: np.ndarray = dataclasses.field(repr=False)
    count: np.ndarray = dataclasses.field(repr=False)
    node_site: np.ndarray = dataclasses.field(repr=False)
    node_cost: np.ndarray = dataclasses.field(repr=False)
    unreachable: int
    unreachable_weight: float = dataclasses.field(repr=False)
    total_cost: float
    worst_cost: float
    point_edge: np.ndarray = dataclasses.field(repr=False)
    point_gap: np.ndarray = dataclasses.field(repr=False)
    site_edge: np.ndarray = dataclasses.field(repr=False)
    site_gap: np.ndarray = dataclasses.field(repr=False)
    length_unit: str = dataclasses.field(default="u", repr=False, kw_only=True)

    @property
    def reachable(self) -> np.ndarray:
        """Whether some site reaches each point."""
        return self.site >= 0

    def _columns(self) -> dict[str, Any]:
        columns = {"site": self.site, "reachable": self.reachable, self._u("cost"): self.cost}
        if len(self.point_edge) == len(self.site):
            columns |= {"edge": self.point_edge, f"gap_{self.length_unit}": self.point_gap}
        return columns

    def sites_frame(self) -> Any:
        """One row per site: ``site``, ``load``, ``points``."""
        import pandas as pd

        return pd.DataFrame({"site": np.arange(len(self.load)), "load": self.load, "points": self.count})

    def summary(self) -> Any:
        """Totals in one row: ``sites``, ``points``, ``cost_<unit>`` (Σ weight × cost),
        ``worst_cost_<unit>``, ``unreachable`` points and ``unreachable_load``."""
        import pandas as pd

        return pd.DataFrame({
            "sites": [len(self.load)], "points": [len(self.site)], self._u("cost"): [self.total_cost],
            self._u("worst_cost"): [self.worst_cost], "unreachable": [self.unreachable],
            "unreachable_load": [self.unreachable_weight],
        })


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class EdgePieces(Result):
    """Parts of edges, each reached from one site, with the travel cost at both ends.

    Attributes
    ----------
    site, edge : ndarray of int64, shape (k,)
        The site reaching the piece and the edge (input row) it lies on.
    start, end : ndarray, shape (k,)
        Where the piece starts and ends, as shares of the edge's length from its first point.
    cost_start, cost_end : ndarray, shape (k,)
        Travel cost from the site to the piece's start and end.
    offsets, coords : ndarray
        The pieces' shapes (piece ``i`` is ``coords[offsets[i]:offsets[i + 1]]``; empty when
        the graph has no coordinates).
    """

    site: np.ndarray
    edge: np.ndarray
    start: np.ndarray = dataclasses.field(repr=False)
    end: np.ndarray = dataclasses.field(repr=False)
    cost_start: np.ndarray = dataclasses.field(repr=False)
    cost_end: np.ndarray = dataclasses.field(repr=False)
    offsets: np.ndarray = dataclasses.field(repr=False)
    coords: np.ndarray = dataclasses.field(repr=False)

    def _columns(self) -> dict[str, Any]:
        return {"site": self.site, "edge": self.edge, "start": self.start, "end": self.end,
                self._u("cost_start"): self.cost_start, self._u("cost_end"): self.cost_end}

    def _geometry(self) -> Any:
        import shapely

        if len(self.coords) == 0 and len(self.site):
            raise TypeError("the graph has no coordinates, so its pieces have no shape; use to_frame()")
        return shapely.from_ragged_array(shapely.GeometryType.LINESTRING, self.coords, (self.offsets,))
