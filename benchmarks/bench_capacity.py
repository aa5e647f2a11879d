"""Capacitated allocation against scipy.optimize.linprog (HiGHS) on the transportation program.

placewise's exact transportation plan and HiGHS solve the same linear program (the one the
tests check against, ``tests/test_capacity.py``) on the same data in the same run; the note
gives the relative difference of the optimal costs. Demand is clustered (several dense towns
over a sparse background) and the sites' capacities hold 1.05 × the demand, spread unevenly,
so a large share of the points cannot go to their nearest site.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

import placewise as pw
from harness import Case

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from test_capacity import transport_program  # noqa: E402


def _instance(n: int, m: int, seed: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    towns = rng.uniform(0, 100_000, (12, 2))
    clustered = towns[rng.integers(0, 12, n - n // 4)] + rng.normal(0, 4_000, (n - n // 4, 2))
    points = np.vstack([clustered, rng.uniform(0, 100_000, (n // 4, 2))])
    sites = rng.uniform(0, 100_000, (m, 2))
    weights = rng.integers(1, 6, n).astype(float)
    shares = rng.uniform(0.5, 1.5, m)
    capacities = shares / shares.sum() * weights.sum() * 1.05
    return points, sites, capacities, weights


def _compare(ours, best) -> str:  # noqa: ANN001
    return (f"cost ours/HiGHS - 1 = {ours.total_cost / best - 1:+.1e}; {ours.augmentations} augmenting paths, "
            f"{len(np.unique(ours.part_point))} points split")


def cases(quick: bool) -> list[Case]:
    n, m = (20_000, 100) if quick else (100_000, 200)
    points, sites, caps, w = _instance(n, m, 0)
    nc, mc = (5_000, 60) if quick else (20_000, 100)
    cpoints, csites, ccaps, cw = _instance(nc, mc, 1)
    ccaps = ccaps * mc / 20 * 1.2  # any 20 candidates of average size hold the demand
    return [
        Case("capacity_allocation split", f"{n:,} points x {m} sites",
             lambda: pw.capacity_allocation(points, sites, caps, w),
             lambda: transport_program(points, sites, caps, w), "scipy.optimize.linprog (HiGHS)",
             target=20, compare=_compare, repeat=1),
        Case("capacity_allocation single-source", f"{n:,} points x {m} sites",
             lambda: pw.capacity_allocation(points, sites, caps, w, split=False), None,
             "no reference (proven gap from the split plan)",
             compare=lambda ours, _: f"relative gap {ours.relative_gap:.2e}", repeat=1),
        Case("capacitated_p_median candidates", f"{nc:,} points, {mc} candidates, p = 20",
             lambda: pw.capacitated_p_median(cpoints, 20, ccaps, cw, candidates=csites), None,
             "no reference (proven gap from every candidate open)",
             compare=lambda ours, _: f"relative gap {ours.median_relative_gap:.2e}, {ours.rounds} rounds",
             repeat=1),
    ]


def scaling(sizes: tuple[int, ...] = (10_000, 25_000, 50_000, 100_000), m: int = 200) -> None:
    """Both solvers on growing ``n`` (``m`` sites), one line per size as it finishes: how the
    ratio and each solver's time grow (HiGHS works on all ``n × m`` variables, placewise's
    condensed network on ``m`` site nodes)."""
    import time

    print("| points x sites | placewise | HiGHS (linprog) | ratio | cost ours/HiGHS - 1 | note", flush=True)
    for n in sizes:
        points, sites, caps, w = _instance(n, m, 0)
        start = time.perf_counter()
        ours = pw.capacity_allocation(points, sites, caps, w)
        ours_t = time.perf_counter() - start
        start = time.perf_counter()
        best = transport_program(points, sites, caps, w)
        ref_t = time.perf_counter() - start
        print(f"| {n:,} x {m} | {ours_t:.2f} s | {ref_t:.2f} s | {ref_t / ours_t:.1f}x | "
              f"{ours.total_cost / best - 1:+.1e} | {ours.augmentations} augmenting paths", flush=True)


if __name__ == "__main__":
    sizes = tuple(int(s) for s in sys.argv[1:]) or (10_000, 25_000, 50_000, 100_000)
    scaling(sizes)
