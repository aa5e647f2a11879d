"""The discrete results: what every plan shares, and one class per model."""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np

from .._results import Result
from ._costs import _input_error


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class _Selection(Result):
    """What every discrete result shares: the open sites and how they serve the demand."""

    open: np.ndarray
    fixed: np.ndarray = dataclasses.field(repr=False)
    assignment: np.ndarray = dataclasses.field(repr=False)
    cost: np.ndarray = dataclasses.field(repr=False)
    load: np.ndarray = dataclasses.field(repr=False)
    count: np.ndarray = dataclasses.field(repr=False)
    total_cost: float
    mean_cost: float = dataclasses.field(repr=False)
    worst_cost: float
    weighted_worst: float = dataclasses.field(repr=False)
    total_weight: float = dataclasses.field(repr=False)
    radius: float | None = dataclasses.field(repr=False)
    covered: np.ndarray | None = dataclasses.field(repr=False)
    covering: np.ndarray | None = dataclasses.field(repr=False)
    covered_weight: float | None = dataclasses.field(repr=False)
    covered_share: float | None
    #: Demand and candidate coordinates, when the costs came from coordinates (the
    #: ``*_planar`` forms and the top-level functions); None for a cost matrix.
    points: np.ndarray | None = dataclasses.field(default=None, repr=False, kw_only=True)
    candidates: np.ndarray | None = dataclasses.field(default=None, repr=False, kw_only=True)

    @property
    def sites(self) -> np.ndarray | None:
        """Coordinates of the open sites (rows of ``open``), when the candidates have some."""
        return None if self.candidates is None else self.candidates[self.open]

    def plot(self, ax: Any = None, **style: Any) -> Any:
        """Draw the demand points (coloured by their site), the sites (fixed ones as white
        squares) and, with a radius, every site's coverage disk; uncovered points in black.
        Needs coordinates (a result from coordinates)."""
        from matplotlib.patches import Circle

        from ..plotting import draw_sites, finish, quantity, site_colours

        if self.points is None or self.candidates is None:
            raise _input_error("plot", "plot: this plan was made from a cost matrix and has no coordinates to draw")
        ax = self._plot_axes(ax)
        sites = self.candidates[self.open]
        palette = np.asarray(site_colours(len(sites)))
        served = self.assignment >= 0
        xy = self.points
        ax.scatter(xy[served, 0], xy[served, 1], **{"c": palette[self.assignment[served]], "s": 6, "linewidths": 0,
                                                   "zorder": 3, "label": "demand points (colour = their site)",
                                                   **style})
        if self.radius is not None:
            for k, (x, y) in enumerate(sites):
                ax.add_patch(Circle((x, y), self.radius, facecolor=palette[k], alpha=0.12, edgecolor=palette[k],
                                    linewidth=0.8, zorder=1, label="coverage disks" if k == 0 else None))
            out = ~np.asarray(self.covered, dtype=bool)
            if out.any():
                ax.scatter(xy[out, 0], xy[out, 1], c="black", s=10, marker="x", linewidths=0.8, zorder=4,
                           label="uncovered points")
        draw_sites(ax, sites, list(palette), fixed=self.fixed, label="new sites" if self.fixed.any() else "sites")
        ax.autoscale_view()
        title = f"{len(sites)} sites · total weighted cost {quantity(self.total_cost, self.unit)} × weight"
        if self.radius is not None:
            title = (f"{len(sites)} sites · {100 * float(self.covered_share or 0.0):.1f} % of the weight within "
                     f"{quantity(self.radius, self.unit)}")
        return finish(ax, title, self.unit)

    def _columns(self) -> dict[str, Any]:
        # assignment -1: no open site may serve the point (a pair the sparse costs do not allow).
        candidate = np.where(self.assignment >= 0, self.open[np.maximum(self.assignment, 0)], -1)
        columns: dict[str, Any] = {"assignment": self.assignment, "candidate": candidate, self._u("cost"): self.cost}
        if self.radius is not None:
            columns |= {"covered": self.covered, "covering": self.covering}
        return columns

    def sites_frame(self) -> Any:
        """One row per open site (``candidate``, ``load``, ``points``, ``fixed``); the row
        position is what ``assignment`` holds."""
        import pandas as pd

        columns: dict[str, Any] = {"candidate": self.open}
        if self.candidates is not None:
            columns |= {"x": self.candidates[self.open, 0], "y": self.candidates[self.open, 1]}
        return pd.DataFrame(columns | {"load": self.load, "points": self.count, "fixed": self.fixed})

    def _bounds(self) -> dict[str, Any]:
        return {}

    def summary(self) -> Any:
        """The totals in one row: ``sites``, ``cost_<unit>`` (total), ``mean_cost_<unit>``,
        ``worst_cost_<unit>``, ``weighted_worst_<unit>``, ``load``, ``points``, the coverage
        (with a radius) and the model's proven bound with its ``relative_gap``."""
        import pandas as pd

        row: dict[str, Any] = {
            "sites": len(self.open),
            self._u("cost"): self.total_cost,
            self._u("mean_cost"): self.mean_cost,
            self._u("worst_cost"): self.worst_cost,
            self._u("weighted_worst"): self.weighted_worst,
            "load": self.total_weight,
            "points": len(self.assignment),
        }
        if self.radius is not None:
            row |= {self._u("radius"): self.radius, "covered_load": self.covered_weight,
                    "covered_share": self.covered_share}
        row |= self._bounds()
        return pd.DataFrame({k: [v] for k, v in row.items()})


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class SiteEvaluation(_Selection):
    """How given open sites serve the demand (see the module docstring for the tables).

    Attributes
    ----------
    open : ndarray of int64, shape (k,)
        The open candidate columns, ascending; ``assignment`` indexes this.
    assignment, cost : ndarray, shape (n,)
        Every point's cheapest open site (row of ``open``) and its cost.
    load, count : ndarray, shape (k,)
        Weight and number of points each site serves.
    total_cost, mean_cost, worst_cost, weighted_worst : float
        ``Σ wᵢ costᵢ``, that over ``Σ wᵢ``, ``max costᵢ`` and ``max wᵢ costᵢ``.
    covered, covering : ndarray, shape (n,), or None
        With a radius: whether some open site is within it, and how many are.
    covered_weight, covered_share : float or None
        With a radius: the covered weight and its share of the total.
    """


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class MedianSelection(_Selection):
    """A discrete p-median plan; ``total_cost`` is its objective.

    ``lower_bound`` is a proven lower bound on the optimum (Lagrangian relaxation, and the
    branch and bound's when it ran: ``branch_nodes``) and
    ``relative_gap = (total_cost - lower_bound) / total_cost``: 0 (to 1e-9) proves the plan
    optimal.
    """

    lower_bound: float = 0.0
    relative_gap: float = 0.0
    swaps: int = dataclasses.field(default=0, repr=False)
    bound_iterations: int = dataclasses.field(default=0, repr=False)
    branch_nodes: int = dataclasses.field(default=0, repr=False)

    def _bounds(self) -> dict[str, Any]:
        return {self._u("lower_bound"): self.lower_bound, "relative_gap": self.relative_gap}


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CenterSelection(_Selection):
    """A discrete p-center plan; ``weighted_worst`` is its objective.

    ``lower_bound`` is proven (the value above the largest trial proven infeasible) and
    ``relative_gap = (weighted_worst - lower_bound) / weighted_worst``.
    """

    lower_bound: float = 0.0
    relative_gap: float = 0.0

    def _bounds(self) -> dict[str, Any]:
        return {self._u("lower_bound"): self.lower_bound, "relative_gap": self.relative_gap}


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CoverAllSelection(_Selection):
    """A set-covering plan: ``chosen`` new sites put every point within ``radius``.

    ``lower_bound`` is a proven lower bound on the number of new sites and
    ``relative_gap = (chosen - lower_bound) / chosen``.
    """

    chosen: int = 0
    lower_bound: int = 0
    relative_gap: float = 0.0

    def _bounds(self) -> dict[str, Any]:
        return {"chosen": self.chosen, "lower_bound": self.lower_bound, "relative_gap": self.relative_gap}


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class CoverMostSelection(_Selection):
    """A maximal-covering plan; ``covered_weight`` is its objective.

    ``upper_bound`` is a proven upper bound on the weight any plan covers (Lagrangian
    relaxation) and ``relative_gap = (upper_bound - covered_weight) / upper_bound``.
    """

    upper_bound: float = 0.0
    relative_gap: float = 0.0
    swaps: int = dataclasses.field(default=0, repr=False)

    def _bounds(self) -> dict[str, Any]:
        return {"upper_bound": self.upper_bound, "relative_gap": self.relative_gap}
