"""What every p-median and p-center plan shares: its tables, geometry and drawing."""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np

from .._region import draw_region
from .._results import Grouped, Result


def _point_geometry(xy: np.ndarray) -> np.ndarray:
    """One shapely Point per row of ``xy``; None where a coordinate is missing."""
    import shapely

    xy = np.asarray(xy, dtype=np.float64).reshape(-1, 2)
    out = np.empty(len(xy), dtype=object)
    present = np.isfinite(xy).all(axis=1)
    if present.any():
        out[present] = shapely.points(xy[present])
    return out


def _draw_plan(plan: Any, ax: Any, sites: np.ndarray, fixed: np.ndarray, style: dict[str, Any]) -> Any:
    """The one drawing of every plan: points coloured by their site, a thin line from each
    point to its site, the sites as outlined stars in the same colours above the points and
    fixed sites as white squares on top; a title with the objective, unit-labelled axes and a
    legend. Points without a site (``assignment`` -1) are left out; ``style`` goes to the
    points."""
    from matplotlib.collections import LineCollection

    from ..plotting import draw_sites, finish, quantity, site_colours

    # The plan classes are defined on top of this module's tables, so they are named here.
    from ._median import MedianPlan, MedianPlans

    ax = plan._plot_axes(ax)
    draw_region(ax, plan.region)
    served = plan.assignment >= 0
    points, assignment = plan.points[served], plan.assignment[served]
    palette = np.asarray(site_colours(len(sites)))
    if len(points):
        colours = palette[assignment]
        segments = np.stack([points, sites[assignment]], axis=1)
        ax.add_collection(LineCollection(list(segments), colors=colours, linewidths=0.3, alpha=0.4, zorder=2))
        ax.scatter(points[:, 0], points[:, 1], **{"c": colours, "s": 6, "linewidths": 0, "zorder": 3,
                                                  "label": "demand points (colour = their site)", **style})
    draw_sites(ax, sites, list(palette), fixed=fixed, label="new sites" if fixed.any() else "sites")
    ax.autoscale_view()
    kind = "p-median" if isinstance(plan, (MedianPlan, MedianPlans)) else "p-center"
    if isinstance(plan, Grouped):
        title = f"{kind} plans of {len(plan.labels)} groups · {len(sites)} sites"
    elif kind == "p-median":
        title = (f"p-median plan · {len(sites)} sites · total weighted distance "
                 f"{quantity(plan.cost, plan.unit)} × weight")
    else:
        title = (f"p-center plan · {len(sites)} sites · largest weighted distance "
                 f"{quantity(plan.weighted_radius, plan.unit)} × weight")
    return finish(ax, title, plan.unit)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class _Plan(Result):
    """What :class:`MedianPlan` and :class:`CenterPlan` share: the sites, how every point is
    served, and the tables built from them."""

    sites: np.ndarray
    assignment: np.ndarray
    distance: np.ndarray
    load: np.ndarray
    count: np.ndarray
    total_load: float
    iterations: int
    converged: bool
    points: np.ndarray = dataclasses.field(repr=False)
    # The feasible region (vertices, ring offsets) the new sites were kept in, for plots.
    region: Any = dataclasses.field(default=None, kw_only=True, repr=False)

    def _site_xy(self) -> np.ndarray:
        """Every site's coordinates, in the order of ``assignment``."""
        return self.sites

    def _site_fixed(self) -> np.ndarray:
        return np.zeros(len(self.load), dtype=bool)

    def _objective(self) -> dict[str, Any]:
        """The plan's objective(s) as named one-row columns."""
        raise NotImplementedError

    def _columns(self) -> dict[str, Any]:
        return {"assignment": self.assignment, self._u("distance"): self.distance}

    def _geometry(self) -> Any:
        return _point_geometry(self.points)

    def _site_columns(self) -> dict[str, Any]:
        xy = self._site_xy()
        return {"x": xy[:, 0], "y": xy[:, 1], "load": self.load, "points": self.count, "fixed": self._site_fixed()}

    def sites_frame(self) -> Any:
        """One row per site (``x``, ``y``, ``load``, ``points``, ``fixed``); the row position is
        the site index that ``assignment`` and ``to_frame()["assignment"]`` hold."""
        import pandas as pd

        return pd.DataFrame(self._site_columns())

    def sites_geodataframe(self, crs: Any = None) -> Any:
        """:meth:`sites_frame` with every site as a Point, as a GeoDataFrame in ``crs``."""
        import geopandas as gpd

        geometry = gpd.GeoSeries(_point_geometry(self._site_xy()), crs=crs).values
        return gpd.GeoDataFrame(self._site_columns(), geometry=geometry, crs=crs)

    def summary(self) -> Any:
        """The plan's totals in one row: its objective, ``sites``, ``load``, ``points`` and
        ``iterations``."""
        import pandas as pd

        return pd.DataFrame({
            **self._objective(),
            "sites": [len(self.load)],
            "load": [self.total_load],
            "points": [len(self.assignment)],
            "iterations": [self.iterations],
        })

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the points coloured by their site, their links to it, the sites as outlined
        stars in the same colours and fixed sites as white squares above everything, with a
        title, unit-labelled axes and a legend; new axes when ``ax`` is None.

        Examples
        --------
        >>> import matplotlib
        >>> matplotlib.use("Agg")
        >>> import placewise as pw
        >>> pts = [[0, 0], [1, 0], [10, 0], [11, 0]]
        >>> ax = pw.p_median(pts, 1, fixed=[[0.5, 0]]).plot()
        >>> [t.get_text() for t in ax.get_legend().get_texts()]
        ['demand points (colour = their site)', 'new sites', 'fixed sites']
        """
        return _draw_plan(self, ax, self._site_xy(), self._site_fixed(), style)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class _GroupedPlan(Grouped):
    """What :class:`MedianPlans` and :class:`CenterPlans` share: every group's sites (in CSR
    layout), how every input point is served, and the tables built from them."""

    # The feasible region (vertices, ring offsets) the new sites were kept in, for plots.
    region: Any = dataclasses.field(default=None, kw_only=True, repr=False)
    sites: np.ndarray
    load: np.ndarray
    count: np.ndarray
    total_load: np.ndarray
    iterations: np.ndarray
    converged: np.ndarray
    site_offsets: np.ndarray = dataclasses.field(repr=False)
    point_group: np.ndarray = dataclasses.field(repr=False)
    assignment: np.ndarray = dataclasses.field(repr=False)
    distance: np.ndarray = dataclasses.field(repr=False)
    points: np.ndarray = dataclasses.field(repr=False)

    def _site_fixed(self) -> np.ndarray:
        return np.zeros(len(self.load), dtype=bool)

    def _objective(self) -> dict[str, Any]:
        """The groups' objective(s) as named columns."""
        raise NotImplementedError

    def _row_groups(self) -> np.ndarray:
        return self.point_group

    def _columns(self) -> dict[str, Any]:
        # sites_frame() keeps one row for each skipped group (which has no sites), so a site's
        # row there is its index in `sites` plus the skipped groups before its own.
        before = np.cumsum(self.skipped) - self.skipped
        served = self.assignment >= 0
        row = np.where(served, self.assignment + before[self.point_group], -1)
        return {"assignment": row, self._u("distance"): self.distance}

    def _geometry(self) -> Any:
        return _point_geometry(self.points)

    def _site_frame(self, crs: Any, geometry: bool) -> Any:
        rows = np.repeat(np.arange(len(self.labels)), np.diff(self.site_offsets))
        columns = {
            "x": self.sites[:, 0],
            "y": self.sites[:, 1],
            "load": self.load,
            "points": self.count,
            "fixed": self._site_fixed(),
        }
        return self._framed(columns, _point_geometry(self.sites) if geometry else None, crs, rows=rows)

    def sites_frame(self) -> Any:
        """One row per site of every group (``group``, ``problem``, ``x``, ``y``, ``load``,
        ``points``, ``fixed``), groups in label order; a skipped group keeps one row holding
        its problem. The row position is what ``to_frame()["assignment"]`` holds."""
        return self._site_frame(None, geometry=False)

    def sites_geodataframe(self, crs: Any = None) -> Any:
        """:meth:`sites_frame` with every site as a Point, as a GeoDataFrame in ``crs``."""
        return self._site_frame(crs, geometry=True)

    def summary(self) -> Any:
        """One row per group: ``group``, ``problem``, the objective, ``sites``, ``load``,
        ``points`` (demand points in the group) and ``iterations``."""
        g = len(self.labels)
        columns = {
            **self._objective(),
            "sites": np.diff(self.site_offsets),
            "load": self.total_load,
            "points": np.bincount(self.point_group, minlength=g),
            "iterations": self.iterations,
        }
        return self._framed(columns, rows=np.arange(g))

    def _served(self, position: int) -> tuple[slice, dict[str, Any]]:
        """The rows of ``sites`` of the group at ``position``, and the fields its single plan
        shares with every plan (its points in input order, site indices made its own)."""
        at = slice(int(self.site_offsets[position]), int(self.site_offsets[position + 1]))
        members = np.flatnonzero(self.point_group == position)
        return at, {
            "assignment": self.assignment[members] - at.start,
            "distance": self.distance[members].copy(),
            "load": self.load[at].copy(),
            "count": self.count[at].copy(),
            "total_load": float(self.total_load[position]),
            "iterations": int(self.iterations[position]),
            "converged": bool(self.converged[position]),
            "points": self.points[members].copy(),
            "unit": self.unit,
            "region": self.region,
        }

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw every group's points coloured by their site, every site as an outlined star
        in its colour (fixed sites as white squares on top), a title, unit-labelled axes and
        a legend."""
        return _draw_plan(self, ax, self.sites, self._site_fixed(), style)
