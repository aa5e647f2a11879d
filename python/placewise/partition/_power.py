"""Power cells of weighted sites clipped to a region, single and grouped."""

from __future__ import annotations

import dataclasses
from typing import Any, Literal, overload

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._errors import check_errors
from .._region import region_rings
from .._results import Grouped, Result, _require_pandas, as_points
from ._rows import _cell_rings_of, _group_slice, _members
from ._voronoi import _Cells


class _PowerCells(_Cells):
    """Cells under the power distance, with each site's power and flags."""

    _title = "Power cells"
    powers: np.ndarray
    redundant: np.ndarray
    edges: np.ndarray

    @property
    def empty(self) -> np.ndarray:
        """Whether each site's cell is empty inside the region (redundant sites included)."""
        return np.asarray(self.offsets[1:] == self.offsets[:-1])

    def neighbours(self, i: int) -> np.ndarray:
        """Rows of the sites whose power cells share an edge with site ``i``'s in the plane
        (its neighbours in the regular triangulation), ascending."""
        e = self.edges
        return np.sort(np.concatenate([e[e[:, 0] == i, 1], e[e[:, 1] == i, 0]]))

    def adjacency(self) -> Any:
        """The neighbour relation as a symmetric ``scipy.sparse`` matrix of ones (n × n)."""
        from scipy import sparse

        n, e = len(self.area), self.edges
        ones = np.ones(2 * len(e))
        return sparse.csr_array((ones, (np.r_[e[:, 0], e[:, 1]], np.r_[e[:, 1], e[:, 0]])), shape=(n, n))

    def _properties(self, i: int) -> dict[str, Any]:
        return {**super()._properties(i), self._u("power", 2): float(self.powers[i]),
                "redundant": bool(self.redundant[i])}

    def _columns(self) -> dict[str, Any]:
        return {**super()._columns(), self._u("power", 2): self.powers, "empty": self.empty,
                "redundant": self.redundant, "neighbours": np.bincount(self.edges.ravel(), minlength=len(self.area))}


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class PowerCells(_PowerCells, Result):
    """Power cells of weighted sites clipped to a region, stored as rings of vertices (the
    layout of :class:`VoronoiCells`), with the regular triangulation they come from.

    Attributes
    ----------
    vertices, offsets, parts, area, exterior
        The cells, as in :class:`VoronoiCells`; an empty cell has no rings and area 0.
    redundant : ndarray of bool, shape (n,)
        The site's cell is empty in the whole plane (another site is no farther in power
        distance everywhere); its row is kept.
    corners : ndarray of int64, shape (m, 3)
        The regular triangulation's triangles (counter-clockwise site rows).
    across : ndarray of int64, shape (m, 3)
        The triangle across the edge opposite each corner, -1 on the outline.
    edges : ndarray of int64, shape (e, 2)
        Pairs of sites whose cells share an edge in the plane (plus diagonals of cocircular
        sites of equal power), smaller row first.
    powers : ndarray, shape (n,)
        The sites' powers (squared units).
    sites : ndarray, shape (n, 2)

    ``to_frame()`` has one row per site: ``x``, ``y``, ``area_<unit>2``,
    ``power_<unit>2``, ``empty`` (no area inside the region), ``redundant`` and
    ``neighbours`` (how many); ``to_geodataframe()`` adds the cell; ``summary()`` is one row
    of totals.
    """

    vertices: np.ndarray
    offsets: np.ndarray
    parts: np.ndarray
    area: np.ndarray
    redundant: np.ndarray
    exterior: np.ndarray = dataclasses.field(repr=False)
    corners: np.ndarray = dataclasses.field(repr=False)
    across: np.ndarray = dataclasses.field(repr=False)
    edges: np.ndarray = dataclasses.field(repr=False)
    powers: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)

    def __len__(self) -> int:
        return len(self.area)

    def summary(self) -> Any:
        """One row: ``sites``, ``empty`` and ``redundant`` counts, ``area_<unit>2`` (total)."""
        pd = _require_pandas()
        return pd.DataFrame({"sites": [len(self.area)], "empty": [int(self.empty.sum())],
                             "redundant": [int(self.redundant.sum())], self._u("area", 2): [float(self.area.sum())]})


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class PowerCellSets(_PowerCells, Grouped):
    """Power cells of many groups of sites, each group clipped to the one region.

    Laid out as :class:`VoronoiCellSets` (cells by input row; a skipped group's sites have
    empty cells, NaN area and ``redundant`` False); ``edges`` hold every group's
    neighbour pairs as input rows (group by group, ``edge_offsets``). ``cells[label]`` is the
    group's :class:`PowerCells` without its triangles (call :func:`power_cells` on the group
    for those).
    """

    vertices: np.ndarray
    offsets: np.ndarray
    parts: np.ndarray
    area: np.ndarray
    redundant: np.ndarray
    exterior: np.ndarray = dataclasses.field(repr=False)
    site_group: np.ndarray = dataclasses.field(repr=False)
    edges: np.ndarray = dataclasses.field(repr=False)
    edge_offsets: np.ndarray = dataclasses.field(repr=False)
    powers: np.ndarray = dataclasses.field(repr=False)
    sites: np.ndarray = dataclasses.field(repr=False)

    def _properties(self, i: int) -> dict[str, Any]:
        return {"group": int(self.labels[self.site_group[i]]), **super()._properties(i)}

    def _item(self, position: int) -> PowerCells:
        rows = _members(self.site_group, position)
        vertices, offsets, parts, rings = _cell_rings_of(self, rows)
        # Edges name input rows; within the group they name positions.
        position_of = np.full(len(self.area), -1, dtype=np.int64)
        position_of[rows] = np.arange(len(rows))
        edges = position_of[self.edges[_group_slice(self.edge_offsets, position)]].reshape(-1, 2)
        none = np.empty((0, 3), dtype=np.int64)
        return PowerCells(vertices, offsets, parts, self.area[rows].copy(), self.redundant[rows].copy(),
                          self.exterior[rings], none, none.copy(), edges, self.powers[rows].copy(), self.sites[rows],
                          unit=self.unit)

    def _row_groups(self) -> np.ndarray:
        return self.site_group


@overload
def power_cells(
    sites: ArrayLike, powers: ArrayLike, region: Any = None, *, groups: None = None,
    errors: Literal["raise", "skip"] = "raise",
) -> PowerCells: ...


@overload
def power_cells(
    sites: ArrayLike, powers: ArrayLike, region: Any = None, *, groups: ArrayLike,
    errors: Literal["raise", "skip"] = "raise",
) -> PowerCellSets: ...


def power_cells(
    sites: ArrayLike,
    powers: ArrayLike,
    region: Any = None,
    *,
    groups: ArrayLike | None = None,
    errors: Literal["raise", "skip"] = "raise",
) -> PowerCells | PowerCellSets:
    """Each site's power cell inside a region: the points ``x`` where the power distance
    ``|x - site|**2 - power`` is least (Aurenhammer 1987).

    A site with a larger power draws its boundaries outward: the boundary between two sites
    is the straight line where their power distances agree, moved from the midpoint towards
    the site of smaller power. With equal powers the cells are the Voronoi cells. A site can
    have an empty cell (another site is no farther in power distance everywhere): it keeps
    its row, with no rings, area 0 and ``redundant`` True. Cells come from the regular
    (weighted Delaunay) triangulation, built with exact predicates; they are clipped to the
    region exactly as :func:`voronoi_cells` clips, so they tile it.

    The cells are a planning aid under this model; decisions that affect people defer to
    local regulations and licensed professional judgement.

    Parameters
    ----------
    sites : array_like, shape (n, 2)
        Distinct site locations.
    powers : array_like, shape (n,)
        Finite power of each site, in squared coordinate units (any sign; only differences
        matter: adding a constant to all changes nothing). A site of power ``r**2`` and one of
        power 0 split the line between them as circles of radius ``r`` and 0 would.
    region : shapely Polygon or MultiPolygon, GeoSeries or GeoDataFrame (its rows' union), or (m, 2) ring, optional
        The study region, as for :func:`voronoi_cells`. Default: the sites' bounding box
        grown by 10 % on every side (a nearly flat box widened as for :func:`voronoi_cells`).
    groups : array_like of int (int64 range), shape (n,), optional
        Group labels: each group's sites split the region on their own (in parallel); returns
        ``PowerCellSets``.
    errors : {"raise", "skip"}
        With ``groups``: fail on the first group without cells, or keep it with its problem.

    Returns
    -------
    PowerCells, or PowerCellSets when ``groups`` is given.

    Raises
    ------
    InputError
        For NaN/inf coordinates or powers (naming the row), or bad shapes.
    DegenerateInputError
        For two sites at one location (whatever their powers), a region without area or
        whose rings cross or overlap (naming the edges) or with a hole outside its exterior, or
        (without a region) sites that all coincide; for a region too thin for its length to
        be cut at double precision (the cells would not cover it).

    Examples
    --------
    >>> import placewise as pw
    >>> box = [[0, 0], [4, 0], [4, 2], [0, 2]]
    >>> cells = pw.power_cells([[1, 1], [3, 1]], [2.0, 0.0], region=box)
    >>> cells.area.tolist()      # the boundary moves from x = 2 to x = 2.5
    [5.0, 3.0]
    >>> cells.to_frame()[["x", "area_u2", "power_u2", "empty", "redundant"]]
         x  area_u2  power_u2  empty  redundant
    0  1.0      5.0       2.0  False      False
    1  3.0      3.0       0.0  False      False
    >>> hidden = pw.power_cells([[1, 1], [2, 1], [3, 1]], [4.0, -4.0, 4.0], region=box)
    >>> hidden.redundant.tolist(), hidden.area.tolist()   # the middle site is never least
    ([False, True, False], [4.0, 0.0, 4.0])
    >>> pw.power_cells([[1, 1], [1, 1]], [0.0, 1.0])
    Traceback (most recent call last):
    ...
    placewise.DegenerateInputError: sites: sites[1] repeats sites[0]; every site needs its own location

    See Also
    --------
    voronoi_cells : the cells without powers.
    """
    vertices, offsets = region_rings(region)
    w = np.asarray(powers, dtype=np.float64)
    check_errors(errors)
    if groups is None:
        fields = _core.power_cells_single(sites, w, vertices, offsets)
        return PowerCells(**fields, powers=w, sites=as_points(sites))
    fields = _core.power_cells_grouped(sites, w, groups, vertices, offsets, errors)
    return PowerCellSets._from_core(fields, powers=w, sites=as_points(sites))
