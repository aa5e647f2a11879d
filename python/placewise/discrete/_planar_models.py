"""The models on straight-line costs from coordinates, and the straight-line cost matrix."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from ._costs import _placed, _planar
from ._models import _Progress, cover_all, cover_most, evaluate_sites, p_center, p_median
from ._selections import CenterSelection, CoverAllSelection, CoverMostSelection, MedianSelection, SiteEvaluation


def euclidean_costs(points: ArrayLike, candidates: ArrayLike) -> np.ndarray:
    """The straight-line cost matrix ``(n, m)`` from every point to every candidate.

    Built by the kernel; refused (``InputError``) above 100 million cells.

    Examples
    --------
    >>> import placewise as pw
    >>> pw.discrete.euclidean_costs([[0, 0], [3, 4]], [[0, 0]])
    array([[0.],
           [5.]])
    """
    return _core.discrete_euclidean_costs(points, candidates)


def evaluate_sites_planar(
    points: ArrayLike, candidates: ArrayLike, sites: ArrayLike, weights: ArrayLike | None = None, *,
    radius: float | None = None, unit: str = "u",
) -> SiteEvaluation:
    """:func:`evaluate_sites` on straight-line costs from ``points`` to ``candidates``.

    Examples
    --------
    >>> import placewise as pw
    >>> float(pw.discrete.evaluate_sites_planar([[0, 0], [3, 4]], [[0, 0]], [0]).total_cost)
    5.0
    """
    now = evaluate_sites(_planar(points, candidates), sites, weights, radius=radius, unit=unit)
    return _placed(now, points, candidates)


def p_median_planar(
    points: ArrayLike, candidates: ArrayLike, p: int, weights: ArrayLike | None = None, *,
    fixed: ArrayLike | None = None, bound_iterations: int = 1000, search_rounds: int = 300,
    branch_iterations: int | None = None, seed: int = 0, unit: str = "u", time_limit: float | None = None,
    progress: _Progress = False,
) -> MedianSelection:
    """:func:`p_median` on straight-line costs from ``points`` to ``candidates`` (the other
    parameters, ``time_limit`` and ``progress`` included, as there).

    Examples
    --------
    >>> import placewise as pw
    >>> plan = pw.discrete.p_median_planar([[0, 0], [1, 0], [9, 0]], [[0, 0], [10, 0]], 1)
    >>> plan.open, float(plan.total_cost)
    (array([0]), 10.0)
    """
    plan = p_median(_planar(points, candidates), p, weights, fixed=fixed, bound_iterations=bound_iterations,
                    search_rounds=search_rounds, branch_iterations=branch_iterations, seed=seed, unit=unit,
                    time_limit=time_limit, progress=progress)
    return _placed(plan, points, candidates)


def p_center_planar(
    points: ArrayLike, candidates: ArrayLike, p: int, weights: ArrayLike | None = None, *,
    fixed: ArrayLike | None = None, unit: str = "u", time_limit: float | None = None, progress: _Progress = False,
) -> CenterSelection:
    """:func:`p_center` on straight-line costs from ``points`` to ``candidates`` (the other
    parameters, ``time_limit`` and ``progress`` included, as there).

    Examples
    --------
    >>> import placewise as pw
    >>> float(pw.discrete.p_center_planar([[0, 0], [4, 0]], [[0, 0], [2, 0]], 1).worst_cost)
    2.0
    """
    plan = p_center(_planar(points, candidates), p, weights, fixed=fixed, unit=unit, time_limit=time_limit,
                    progress=progress)
    return _placed(plan, points, candidates)


def cover_all_planar(
    points: ArrayLike, candidates: ArrayLike, radius: float, weights: ArrayLike | None = None, *,
    fixed: ArrayLike | None = None, unit: str = "u", time_limit: float | None = None, progress: _Progress = False,
) -> CoverAllSelection:
    """:func:`cover_all` on straight-line costs from ``points`` to ``candidates`` (the other
    parameters, ``time_limit`` and ``progress`` included, as there).

    Examples
    --------
    >>> import placewise as pw
    >>> pw.discrete.cover_all_planar([[0, 0], [1, 1], [2, 0]], [[1, 0], [5, 5]], 1.5).open
    array([0])
    """
    plan = cover_all(_planar(points, candidates), radius, weights, fixed=fixed, unit=unit, time_limit=time_limit,
                     progress=progress)
    return _placed(plan, points, candidates)


def cover_most_planar(
    points: ArrayLike, candidates: ArrayLike, p: int, radius: float, weights: ArrayLike | None = None, *,
    fixed: ArrayLike | None = None, unit: str = "u", time_limit: float | None = None, progress: _Progress = False,
) -> CoverMostSelection:
    """:func:`cover_most` on straight-line costs from ``points`` to ``candidates`` (the other
    parameters, ``time_limit`` and ``progress`` included, as there).

    Examples
    --------
    >>> import placewise as pw
    >>> float(pw.discrete.cover_most_planar([[0, 0], [9, 9]], [[0, 1], [9, 8]], 1, 1.5).covered_share)
    0.5
    """
    plan = cover_most(_planar(points, candidates), p, radius, weights, fixed=fixed, unit=unit,
                      time_limit=time_limit, progress=progress)
    return _placed(plan, points, candidates)
