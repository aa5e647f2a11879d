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

from test_capacity import transport_matrices, transport_program  # noqa: E402
from test_capacity_audit import capacitated_median_instance, capacitated_median_program  # noqa: E402
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


def _median_note(ours, best) -> str:  # noqa: ANN001
    return (f"plan / optimum - 1 = {ours.total_cost / best - 1:.2%}; bound / optimum = "
            f"{ours.median_lower_bound / best:.4f}; reported gap {ours.median_relative_gap:.2%}")


def _cells_note(ours, best) -> str:  # noqa: ANN001
    load_error = float(np.max(np.abs(ours.load - ours.capacities) / ours.capacities))
    note = (f"largest |load/capacity - 1| = {load_error:.1e}; {ours.newton_steps} Newton steps, "
            f"{ours.exact_points:,} points in the exact finish, {ours.augmentations} augmenting paths")
    if best is not None:
        note = f"cost ours/HiGHS - 1 = {ours.total_cost / best - 1:+.1e}; " + note
    return note


def _uniform_cells_instance(n: int, m: int, seed: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The speed target's instance: uniform points in a 20 km box, capacities demand / m ×
    uniform(0.8, 1.2), rescaled to the total demand (balanced: every site full)."""
    rng = np.random.default_rng(seed)
    points = rng.uniform(0, 20_000, (n, 2))
    sites = rng.uniform(0, 20_000, (m, 2))
    caps = n / m * rng.uniform(0.8, 1.2, m)
    return points, sites, caps * n / caps.sum()


def _cells_cases(quick: bool) -> list[Case]:
    # Against HiGHS at a size its n·m-variable program still fits; the target size alone.
    small = _instance(2_000, 20, 2)
    caps = small[2] / 1.05  # balanced: every site full
    n, m = (100_000, 100) if quick else (1_000_000, 1_000)
    points, sites, big_caps = _uniform_cells_instance(n, m, 3)
    return [
        Case("capacity_cells", "2,000 points x 20 sites",
             lambda: pw.capacity_cells(small[0], small[1], caps, small[3]),
             lambda: squared_transport(small[0], small[1], caps, small[3]), "scipy.optimize.linprog (HiGHS)",
             compare=_cells_note, repeat=1),
        Case("capacity_cells", f"{n:,} points x {m:,} sites (uniform, 20 km)",
             lambda: pw.capacity_cells(points, sites, big_caps), None,
             "no reference (HiGHS cannot hold n·m variables); target: under 10 s",
             compare=_cells_note, repeat=1),
    ]


def cells_scaling(sizes: list[tuple[int, int]]) -> None:
    """``capacity_cells`` on the speed target's instances of growing size, one line per run as
    it finishes: wall and CPU seconds, the solver's counts and the largest load error."""
    print("| points x sites | wall | CPU | largest |load/capacity - 1| | Newton steps | exact points | "
          "augmenting paths", flush=True)
    for n, m in sizes:
        points, sites, caps = _uniform_cells_instance(n, m, 3)
        wall, cpu, ours = _timed(lambda: pw.capacity_cells(points, sites, caps))  # noqa: B023
        error = float(np.max(np.abs(ours.load - caps) / caps))
        print(f"| {n:,} x {m:,} | {wall:.2f} s | {cpu:.2f} s | {error:.1e} | {ours.newton_steps} | "
              f"{ours.exact_points:,} | {ours.augmentations:,}", flush=True)


def cases(quick: bool) -> list[Case]:
    n, m = (20_000, 100) if quick else (100_000, 200)
    points, sites, caps, w = _instance(n, m, 0)
    nc, mc = (5_000, 60) if quick else (20_000, 100)
    cpoints, csites, ccaps, cw = _instance(nc, mc, 1)
    ccaps = ccaps * mc / 20 * 1.2  # any 20 candidates of average size hold the demand
    apoints, acands, acaps, aw = capacitated_median_instance(100, 25, 8, 1.1, 0)
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
             "no reference (proven gap from the Lagrangian bound)",
             compare=lambda ours, _: f"relative gap {ours.median_relative_gap:.2e}, {ours.rounds} rounds",
             repeat=1),
        Case("capacitated_p_median candidates", "100 points, 25 candidates, p = 8, tight (1.1)",
             lambda: pw.capacitated_p_median(apoints, 8, acaps, aw, candidates=acands),
             lambda: capacitated_median_program(apoints, acands, acaps, aw, 8),
             "scipy.optimize.milp (HiGHS) on the textbook program", compare=_median_note, repeat=1),
        *_cells_cases(quick),
    ]


def _timed(fn):  # noqa: ANN001, ANN202
    """Wall-clock and CPU seconds (every thread of the process) of one call, and its result."""
    import time

    wall, cpu = time.perf_counter(), time.process_time()
    result = fn()
    return time.perf_counter() - wall, time.process_time() - cpu, result


def scaling(sizes: tuple[int, ...], reference_sizes: tuple[int, ...], m: int = 200) -> None:
    """Both solvers on growing ``n`` (``m`` sites), one line per run as it finishes: how each
    solver's time grows (HiGHS works on all ``n × m`` variables, placewise's condensed network
    on ``m`` site nodes). placewise runs at every size first, then HiGHS at
    ``reference_sizes`` in increasing order, so an interrupted run keeps the largest size the
    reference finished. CPU seconds are given beside wall-clock ones: on a shared machine they
    are the steadier measure (placewise's CPU time includes every thread it used)."""
    print("| solver | points x sites | wall | CPU | cost | note", flush=True)
    ours_cost = {}
    for n in sizes:
        points, sites, caps, w = _instance(n, m, 0)
        wall, cpu, ours = _timed(lambda: pw.capacity_allocation(points, sites, caps, w))  # noqa: B023
        ours_cost[n] = ours.total_cost
        print(f"| placewise | {n:,} x {m} | {wall:.2f} s | {cpu:.2f} s | {ours.total_cost:.10e} | "
              f"{ours.augmentations} augmenting paths", flush=True)
    for n in reference_sizes:
        points, sites, caps, w = _instance(n, m, 0)
        wall, cpu, best = _timed(lambda: transport_program(points, sites, caps, w))  # noqa: B023
        note = f"cost ours/HiGHS - 1 = {ours_cost[n] / best - 1:+.1e}" if n in ours_cost else ""
        print(f"| HiGHS (linprog) | {n:,} x {m} | {wall:.2f} s | {cpu:.2f} s | {best:.10e} | {note}", flush=True)


def limited_reference(n: int, seconds: float, m: int = 200) -> None:
    """placewise, then HiGHS's interior-point method (the faster of linprog's two HiGHS
    methods on this program: 24.8 against 50.9 CPU seconds at 2,000 x 200, 2026-12-03) under a
    wall-clock limit of ``seconds``, on the same ``n`` x ``m`` instance: where HiGHS cannot
    finish, the CPU seconds it spent are a lower bound on its time, and their ratio to
    placewise's a lower bound on the speed-up (equal cost is checked at the sizes HiGHS
    finishes)."""
    from scipy.optimize import linprog

    points, sites, caps, w = _instance(n, m, 0)
    wall, cpu, ours = _timed(lambda: pw.capacity_allocation(points, sites, caps, w))
    print(f"| placewise | {n:,} x {m} | {wall:.2f} s | {cpu:.2f} s | {ours.total_cost:.10e} | "
          f"{ours.augmentations} augmenting paths", flush=True)
    cost, a_point, a_site = transport_matrices(points, sites)
    ref_wall, ref_cpu, res = _timed(lambda: linprog(cost.ravel(), A_ub=a_site, b_ub=caps, A_eq=a_point, b_eq=w,
                                                    method="highs-ipm", options={"time_limit": seconds}))
    if res.status == 0:
        note = f"cost ours/HiGHS - 1 = {ours.total_cost / res.fun - 1:+.1e}; CPU ratio {ref_cpu / cpu:.1f}x"
    else:
        note = (f"not finished within the {seconds:.0f} s limit (status {res.status}: {res.message}); "
                f"CPU ratio > {ref_cpu / cpu:.1f}x")
    print(f"| HiGHS (linprog, highs-ipm) | {n:,} x {m} | {ref_wall:.2f} s | {ref_cpu:.2f} s | "
          f"{res.fun if res.status == 0 else '-'} | {note}", flush=True)


def single_source_quality(sets: list[tuple[int, int, int, float]]) -> None:
    """Single-source plans against ``scipy.optimize.milp`` (HiGHS) on the single-source
    program, one line per instance set ``(count, points, sites, slack)``: how far the plans
    lie above milp's optimum (worst, mean, how many above it), how many the search proved
    optimal, and the time of placewise's calls and of milp's."""
    import time

    from test_capacity_audit import single_source_milp, tight_instances

    print("| instances | above milp (worst / mean) | above it | refused | proven optimal | placewise | milp",
          flush=True)
    for count, n, m, slack in sets:
        excess, proven, refused, ours_s, milp_s = [], 0, 0, 0.0, 0.0
        for points, sites, caps, weights in tight_instances(20, count, n, m, slack):
            start = time.perf_counter()
            best = single_source_milp(points, sites, caps, weights)
            milp_s += time.perf_counter() - start
            if best is None:
                continue
            start = time.perf_counter()
            try:
                plan = pw.capacity_allocation(points, sites, caps, weights, split=False)
            except pw.InputError:  # no plan found although milp has one
                refused += 1
                continue
            finally:
                ours_s += time.perf_counter() - start
            excess.append(plan.total_cost / best - 1)
            proven += plan.relative_gap == 0.0
        e = np.array(excess)
        print(f"| {len(e) + refused} of {n} x {m}, slack {slack} | {e.max():.3%} / {e.mean():.3%} | "
              f"{np.sum(e > 1e-9)} | {refused} | {proven} | {ours_s:.2f} s | {milp_s:.2f} s", flush=True)


# The capacitated p-median audit sets: (label, n, m, p, capacity tightness, seeds). Tightness
# is the capacity of the p largest candidates over the demand.
MEDIAN_AUDIT_SETS = [
    *(("40 x 12, p = 4", 40, 12, 4, t, range(30)) for t in (1.1, 1.3, 1.6, 2.0)),
    *(("100 x 25, p = 8", 100, 25, 8, t, range(5)) for t in (1.1, 1.5)),
]


def median_audit(sets=MEDIAN_AUDIT_SETS, per_instance: bool = False) -> list[dict]:  # noqa: ANN001
    """``capacitated_p_median`` with candidates against ``scipy.optimize.milp`` (HiGHS) on the
    textbook program (``tests/test_capacity_audit.capacitated_median_program``) and its LP
    relaxation, per instance: plan / optimum - 1, bound / optimum, the reported gap, the LP
    relaxation / optimum and both solvers' wall seconds. Prints one summary line per set
    (worst and mean) and returns the rows."""
    import os

    rows = []
    for label, n, m, p, tight, seeds in sets:
        for seed in seeds:
            points, cands, caps, w = capacitated_median_instance(n, m, p, tight, seed)
            wall, _, ours = _timed(lambda: pw.capacitated_p_median(points, p, caps, w, candidates=cands))  # noqa: B023
            ref_wall, _, best = _timed(lambda: capacitated_median_program(points, cands, caps, w, p))  # noqa: B023
            lp = capacitated_median_program(points, cands, caps, w, p, relaxed=True)
            if best is None:
                print(f"{label} tight {tight} seed {seed}: milp did not finish", flush=True)
                continue
            row = dict(set=label, tightness=tight, seed=seed, plan=ours.total_cost / best - 1,
                       bound=ours.median_lower_bound / best, gap=ours.median_relative_gap, lp=lp / best,
                       ours_s=wall, milp_s=ref_wall)
            rows.append(row)
            if per_instance:
                print(" ".join(f"{k}={v:.4g}" if isinstance(v, float) else f"{k}={v}" for k, v in row.items()),
                      flush=True)
        mine = [r for r in rows if r["set"] == label and r["tightness"] == tight]
        if not mine:
            continue

        def col(key: str) -> np.ndarray:
            return np.array([r[key] for r in mine])  # noqa: B023

        print(f"| {label} | {tight} | {len(mine)} | {col('plan').max():.2%} / {col('plan').mean():.2%} | "
              f"{1 - col('bound').min():.2%} / {1 - col('bound').mean():.2%} | "
              f"{col('gap').max():.2%} / {col('gap').mean():.2%} | {1 - col('lp').min():.2%} / "
              f"{1 - col('lp').mean():.2%} | {col('ours_s').max() * 1e3:.1f} / {col('ours_s').mean() * 1e3:.1f} ms | "
              f"{col('milp_s').mean():.2f} s | {os.getloadavg()[0]:.2f}", flush=True)
    return rows


if __name__ == "__main__":
    # python bench_capacity.py 2000,5000,10000,100000 2000,5000,10000
    # python bench_capacity.py cells 100000x100,300000x300,1000000x1000
    # python bench_capacity.py limit 100000 1200
    # python bench_capacity.py single
    # python bench_capacity.py median_audit [-v]
    if sys.argv[1] == "median_audit":
        print("| set | tightness | instances | plan / optimum - 1 (worst / mean) | 1 - bound / optimum | "
              "reported gap | 1 - LP relaxation / optimum | ours (worst / mean) | milp (mean) | load", flush=True)
        median_audit(per_instance="-v" in sys.argv)
        sys.exit()
    if sys.argv[1] == "limit":
        limited_reference(int(sys.argv[2]), float(sys.argv[3]))
        sys.exit()
    if sys.argv[1] == "single":
        single_source_quality([(200, 8, 3, 1.0), (50, 40, 5, 1.05), (20, 100, 8, 1.05), (20, 100, 8, 1.2)])
        sys.exit()
    if sys.argv[1] == "cells":
        cells_scaling([tuple(int(v) for v in size.split("x")) for size in sys.argv[2].split(",")])
        sys.exit()
    ours_sizes = tuple(int(s) for s in sys.argv[1].split(","))
    reference = tuple(int(s) for s in sys.argv[2].split(",")) if len(sys.argv) > 2 else ours_sizes
    scaling(ours_sizes, reference)
