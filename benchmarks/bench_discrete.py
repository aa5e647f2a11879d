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

import placewise as pw
from _instances import coordinate_instances, uniform_costs
from harness import Case
from placewise import discrete

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from test_discrete import milp_cover_all, milp_cover_most, milp_p_center, milp_p_median  # noqa: E402


def _note(objective: str, maximise: bool = False):  # noqa: ANN202
    def compare(ours, best) -> str:  # noqa: ANN001
        value = float(getattr(ours, objective))
        excess = (best - value) / best if maximise else (value - best) / best
        return f"excess over milp optimum {100 * excess:.3f} %, proven gap {100 * ours.relative_gap:.3f} %"

    return compare


def _sparse(n: int, m: int, k: int, seed: int):  # noqa: ANN202
    """Costs where each point may use only its k nearest candidates: (dense, allowed, sparse, w)."""
    import scipy.sparse

    costs, w = uniform_costs(n, m, seed)
    near = np.argsort(costs, axis=1, kind="stable")[:, :k]
    allowed = np.zeros_like(costs, dtype=bool)
    np.put_along_axis(allowed, near, True, axis=1)
    rows, cols = np.nonzero(allowed)
    return costs, allowed, scipy.sparse.csr_array((costs[rows, cols], (rows, cols)), shape=costs.shape), w


def _gap_only(objective: str):  # noqa: ANN202
    def note(ours, _) -> str:  # noqa: ANN001
        return f"{objective} {float(getattr(ours, objective)):.6g}, proven gap {100 * ours.relative_gap:.3f} %"

    return note


def cases(quick: bool) -> list[Case]:
    n, m = (300, 60) if quick else (600, 80)
    costs, w = uniform_costs(n, m, 0)
    small, ws = uniform_costs(60, 20, 1)
    radius = 15.0
    dense2, allowed, sparse, ws2 = _sparse(n, m, 10, 2)
    big, mid = (20_000, 2_000) if quick else (100_000, 10_000)
    (bp, bc, bw), (mp, mc, mw) = coordinate_instances(big, mid)
    # Sites anywhere at the density of the 20,000 points above (2 per unit area), at full size.
    wide = np.random.default_rng(4).uniform(0, 100 * np.sqrt(5), (100_000, 2))
    cover_note = (lambda ours, _: f"{ours.chosen} sites, {len(ours.candidates):,} candidates, lower bound "
                                  f"{ours.lower_bound}, proven gap {100 * ours.relative_gap:.2f} %")
    anywhere = [] if quick else [
        Case("cover_all continuous sites", "100,000 points, r=1, 2 per unit area",
             lambda: pw.cover_all(wide, 1.0), None, "no reference (proven bound only)", compare=cover_note, repeat=1),
    ]
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
        Case("discrete p_median sparse p=10", f"{n} x {m}, 10 pairs per point",
             lambda: discrete.p_median(sparse, 10, ws2),
             lambda: milp_p_median(dense2, ws2, 10, allowed=allowed), "scipy.optimize.milp (HiGHS)",
             compare=_note("total_cost"), repeat=1),
        Case("discrete cover_most sparse p=8", f"{n} x {m}, 10 pairs per point, r={radius:g}",
             lambda: discrete.cover_most(sparse, 8, radius, ws2),
             lambda: milp_cover_most(dense2, ws2, 8, radius, allowed=allowed), "scipy.optimize.milp (HiGHS)",
             compare=_note("covered_weight", maximise=True), repeat=1),
        Case("cover_most coordinates p=20", f"{big:,} weighted points x 2,000 candidates, r=10",
             lambda: pw.cover_most(bp, 20, 10.0, bw, candidates=bc), None, "no reference (proven bound only)",
             compare=_gap_only("covered_weight"), repeat=1),
        Case("cover_all continuous sites", "20,000 points, r=1",
             lambda: pw.cover_all(bp[:20_000], 1.0), None, "no reference (proven bound only)",
             compare=cover_note, repeat=1),
        Case("p_median coordinates p=50", f"{mid:,} points x 1,000 candidates",
             lambda: pw.p_median(mp, 50, mw, candidates=mc), None, "no reference (proven bound only)",
             compare=_gap_only("total_cost"), repeat=1),
    ] + anywhere
