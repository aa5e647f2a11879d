"""Discrete p-median, p-center, set covering and maximal covering against scipy.optimize.milp.

placewise's heuristics with their proven bounds against HiGHS (through ``scipy.optimize.milp``)
on the textbook integer programs, on the same straight-line cost matrix in the same run. The
integer programs are the ones the tests check against (``tests/test_discrete.py``). Quality is
reported as the objective's excess over the milp optimum and the gap placewise proves itself.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import scipy.spatial

from harness import Case
from placewise import discrete

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from test_discrete import milp_cover_all, milp_cover_most, milp_p_center, milp_p_median  # noqa: E402


def _costs(n: int, m: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    points, candidates = rng.uniform(0, 100, (n, 2)), rng.uniform(0, 100, (m, 2))
    return scipy.spatial.distance.cdist(points, candidates), rng.integers(1, 10, n).astype(float)


def _note(objective: str, maximise: bool = False):  # noqa: ANN202
    def compare(ours, best) -> str:  # noqa: ANN001
        value = float(getattr(ours, objective))
        excess = (best - value) / best if maximise else (value - best) / best
        return f"excess over milp optimum {100 * excess:.3f} %, proven gap {100 * ours.relative_gap:.3f} %"

    return compare


def cases(quick: bool) -> list[Case]:
    n, m = (300, 60) if quick else (600, 80)
    costs, w = _costs(n, m, 0)
    small, ws = _costs(60, 20, 1)
    radius = 15.0
    return [
        Case("discrete p_median p=10", f"{n} x {m}", lambda: discrete.p_median(costs, 10, w),
             lambda: milp_p_median(costs, w, 10), "scipy.optimize.milp (HiGHS)",
             compare=_note("total_cost"), repeat=1),
        Case("discrete cover_most p=8", f"{n} x {m}, r={radius:g}", lambda: discrete.cover_most(costs, 8, radius, w),
             lambda: milp_cover_most(costs, w, 8, radius), "scipy.optimize.milp (HiGHS)",
             compare=_note("covered_weight", maximise=True), repeat=1),
        Case("discrete cover_all", f"{n} x {m}, r=25", lambda: discrete.cover_all(costs, 25.0),
             lambda: milp_cover_all(costs, 25.0), "scipy.optimize.milp (HiGHS)",
             compare=_note("chosen"), repeat=1),
        Case("discrete p_center p=4", "60 x 20", lambda: discrete.p_center(small, 4, ws),
             lambda: milp_p_center(small, ws, 4), "scipy.optimize.milp (HiGHS)",
             compare=_note("weighted_worst"), repeat=1),
    ]
