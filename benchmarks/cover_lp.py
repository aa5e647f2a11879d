"""Set covering with sites anywhere: placewise's plan and bound against the LP relaxation.

Uniform points at 2 per unit area (the density of ``bench_discrete.py``'s 20,000 points in
a 100 × 100 square), radius 1, candidates = the finite dominating set (Church 1984) that
``placewise.cover_all`` builds. Reference: the LP relaxation of the same covering problem
solved by HiGHS (``scipy.optimize.linprog``), and optionally the integer optimum by
``scipy.optimize.milp`` (HiGHS) within a time limit.

    python benchmarks/cover_lp.py 800 [--milp SECONDS] [--no-lp] [--seed S]
"""

from __future__ import annotations

import argparse
import os
import time

import numpy as np
import scipy.optimize
import scipy.sparse
from scipy.spatial import cKDTree

import placewise as pw


def incidence(points: np.ndarray, candidates: np.ndarray, radius: float) -> scipy.sparse.csr_matrix:
    """Points × candidates, 1 where the candidate is within ``radius`` of the point."""
    near = cKDTree(candidates).query_ball_point(points, radius * (1 + 1e-12))
    rows = np.repeat(np.arange(len(points)), [len(x) for x in near])
    cols = np.fromiter((j for x in near for j in x), dtype=np.int64, count=len(rows))
    return scipy.sparse.csr_matrix((np.ones(len(rows)), (rows, cols)), shape=(len(points), len(candidates)))


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("n", type=int)
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument("--milp", type=float, default=0.0, help="seconds for scipy.optimize.milp (0: not run)")
    parser.add_argument("--no-lp", action="store_true")
    args = parser.parse_args()
    side = float(np.sqrt(args.n / 2.0))
    points = np.random.default_rng(args.seed).uniform(0, side, (args.n, 2))
    load = os.getloadavg()
    start = time.perf_counter()
    plan = pw.cover_all(points, 1.0)
    took = time.perf_counter() - start
    gap = (plan.chosen - plan.lower_bound) / plan.chosen
    print(f"{args.n} points in a {side:.1f} x {side:.1f} square, r = 1: {len(plan.candidates)} candidates; "
          f"placewise {plan.chosen} sites, bound {plan.lower_bound}, proven gap {100 * gap:.2f} %, "
          f"{took:.2f} s (load average {load[0]:.2f} {load[1]:.2f} {load[2]:.2f})")
    a = incidence(points, plan.candidates, 1.0)
    chosen = np.zeros(a.shape[1])
    chosen[plan.open] = 1
    assert (a @ chosen >= 1).all(), "the plan leaves a point uncovered"
    m = a.shape[1]
    if not args.no_lp:
        start = time.perf_counter()
        lp = scipy.optimize.linprog(np.ones(m), A_ub=-a, b_ub=-np.ones(args.n), bounds=(0, 1), method="highs")
        print(f"  LP relaxation (HiGHS linprog): {lp.fun:.3f} in {time.perf_counter() - start:.1f} s; "
              f"plan / LP = {plan.chosen / lp.fun:.4f}, bound / LP = {plan.lower_bound / lp.fun:.4f}")
    if args.milp > 0:
        start = time.perf_counter()
        res = scipy.optimize.milp(np.ones(m), constraints=[scipy.optimize.LinearConstraint(a, 1, np.inf)],
                                  integrality=np.ones(m), bounds=scipy.optimize.Bounds(0, 1),
                                  options={"time_limit": args.milp})
        print(f"  scipy.optimize.milp (HiGHS, {args.milp:g} s): {res.fun:.0f} (dual bound "
              f"{getattr(res, 'mip_dual_bound', float('nan')):.2f}, status {res.status}) in "
              f"{time.perf_counter() - start:.1f} s")


if __name__ == "__main__":
    main()
