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
from test_capacity_cells import squared_transport  # noqa: E402


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


def _cells_note(ours, best) -> str:  # noqa: ANN001
    load_error = float(np.max(np.abs(ours.load - ours.capacities) / ours.capacities))
    note = (f"largest |load/capacity - 1| = {load_error:.1e}; {ours.newton_steps} Newton steps, "
            f"{ours.exact_points:,} points in the exact finish, {ours.augmentations} augmenting paths")
    if best is not None:
        note = f"cost ours/HiGHS - 1 = {ours.total_cost / best - 1:+.1e}; " + note
    return note


def _cells_cases(quick: bool) -> list[Case]:
    # Against HiGHS at a size its n·m-variable program still fits; the target size alone.
    small = _instance(2_000, 20, 2)
    caps = small[2] / 1.05  # balanced: every site full
    n, m = (100_000, 100) if quick else (1_000_000, 1_000)
    points, sites, _, w = _instance(n, m, 3)
    shares = np.random.default_rng(4).uniform(0.5, 1.5, m)
    big_caps = shares / shares.sum() * w.sum()
    return [
        Case("capacity_cells", "2,000 points x 20 sites",
             lambda: pw.capacity_cells(small[0], small[1], caps, small[3]),
             lambda: squared_transport(small[0], small[1], caps, small[3]), "scipy.optimize.linprog (HiGHS)",
             compare=_cells_note, repeat=1),
        Case("capacity_cells", f"{n:,} points x {m:,} sites", lambda: pw.capacity_cells(points, sites, big_caps, w),
             None, "no reference (HiGHS cannot hold n·m variables); target: under 10 s",
             compare=_cells_note, repeat=1),
    ]


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
        *_cells_cases(quick),
    ]
