"""The discrete benchmarks' instances, in one place so that every script measures the same data.

Uniform demand points and candidates in [0, 100]², integer weights 1 to 9, straight-line
costs (the generator of ``tests/test_discrete.py``'s ``instance``). Needs numpy and scipy
only, so that the reference scripts run without the build.
"""

from __future__ import annotations

import numpy as np
import scipy.spatial


def uniform_costs(n: int, m: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """The ``n × m`` cost matrix and the ``n`` weights from ``default_rng(seed)``: points,
    candidates, then weights drawn in that order."""
    rng = np.random.default_rng(seed)
    points, candidates = rng.uniform(0, 100, (n, 2)), rng.uniform(0, 100, (m, 2))
    return scipy.spatial.distance.cdist(points, candidates), rng.integers(1, 10, n).astype(float)


Coordinates = tuple[np.ndarray, np.ndarray, np.ndarray]


def coordinate_instances(big: int, mid: int) -> tuple[Coordinates, Coordinates]:
    """The points, candidates and weights of the coordinate cases, both drawn from one
    ``default_rng(3)`` in this order: ``big`` points with 2,000 candidates (``cover_most``),
    then ``mid`` points with 1,000 candidates (``p_median``). The second instance depends on
    ``big``, whose draws come first."""
    rng = np.random.default_rng(3)
    first = rng.uniform(0, 100, (big, 2)), rng.uniform(0, 100, (2000, 2)), rng.integers(1, 10, big).astype(float)
    second = rng.uniform(0, 100, (mid, 2)), rng.uniform(0, 100, (1000, 2)), rng.integers(1, 10, mid).astype(float)
    return first, second
