"""Discrete p-median: placewise's plan and bound against the LP relaxation and the optimum.

Uniform demand points and candidates in [0, 100]², integer weights 1 to 9, straight-line
costs (``_instances.py``, shared with ``bench_discrete.py``). References, all
on the textbook p-median program (ReVelle & Swain 1970: ``Σⱼ xᵢⱼ = 1``, ``xᵢⱼ ≤ yⱼ``,
``Σⱼ yⱼ = p``) solved by HiGHS through scipy:

- the LP relaxation, by multi-cut Benders decomposition over the sites ``y`` (as Duran-Mateluna,
  Ales & Elloumi 2023 solve it): for given ``y`` a point's least cost ``φᵢ(y)`` fills one unit
  from its cheapest candidates, at most ``yⱼ`` from each, and is convex in ``y`` with the cut
  ``φᵢ(y) ≥ D − Σⱼ (D − wᵢcᵢⱼ)⁺ yⱼ`` for every level ``D`` (Cornuéjols, Nemhauser & Wolsey
  1980); a master LP (``scipy.optimize.linprog``, dual simplex) over ``y`` and one ``θᵢ ≥ φᵢ``
  per point gets every point's violated cut at its optimum until none is violated, and its
  value is then the LP's (with ``highspy`` installed the master is one HiGHS model, re-solved
  from its last basis after the cuts are appended);
- ``--exact``: the integer optimum. Every candidate whose opening alone lifts the Lagrangian
  bound at the LP's duals above placewise's plan is closed in every cheaper plan (reduced-cost
  fixing, Beasley 1993); ``scipy.optimize.milp`` (relative gap 0) solves the program on the
  candidates left, and the optimum is the cheaper of its answer and the plan;
- ``--milp SECONDS``: ``scipy.optimize.milp`` on the whole program within a time limit.

The program is built as one sparse matrix (the dense pieces of the tests' builder do not fit
at full size).

    python benchmarks/median_lp.py N M P [--seed S] [--exact] [--milp SECONDS] [--no-lp]
    python benchmarks/median_lp.py --bench [--milp 600] [--no-lp] [--no-placewise]

``--bench`` takes the data of the "p_median coordinates p=50" case of ``bench_discrete.py``
(10,000 points × 1,000 candidates from ``default_rng(3)``).
"""

from __future__ import annotations

import argparse
import os
import time

import numpy as np
import scipy.optimize
import scipy.sparse
import scipy.spatial

from _instances import coordinate_instances, uniform_costs


def bench_instance() -> tuple[np.ndarray, np.ndarray]:
    """The cost matrix and weights of ``bench_discrete.py``'s "p_median coordinates p=50" (at
    full size)."""
    _, (points, candidates, weights) = coordinate_instances(100_000, 10_000)
    return scipy.spatial.distance.cdist(points, candidates), weights


def program(costs: np.ndarray, w: np.ndarray, p: int):  # noqa: ANN201
    """(c, A, lower, upper) of the p-median program over x (row-major, n·m) then y (m):
    rows ``Σⱼ xᵢⱼ = 1`` (n), ``xᵢⱼ − yⱼ ≤ 0`` (n·m), ``Σⱼ yⱼ = p`` (1)."""
    n, m = costs.shape
    nx = n * m
    x = np.arange(nx, dtype=np.int64)
    rows = np.concatenate([x // m, n + x, n + x, np.full(m, n + nx, dtype=np.int64)])
    cols = np.concatenate([x, x, nx + x % m, nx + np.arange(m, dtype=np.int64)])
    vals = np.concatenate([np.ones(nx), np.ones(nx), -np.ones(nx), np.ones(m)])
    a = scipy.sparse.csr_array((vals, (rows, cols)), shape=(n + nx + 1, nx + m))
    lower = np.concatenate([np.ones(n), np.full(nx, -np.inf), [p]])
    upper = np.concatenate([np.ones(n), np.zeros(nx), [p]])
    c = np.concatenate([(w[:, None] * costs).ravel(), np.zeros(m)])
    return c, a, lower, upper


class Master:
    """The Benders master LP: min Σ θᵢ over θ ≥ 0 and 0 ≤ y ≤ 1 with Σ y = p and the cuts
    ``θᵢ + Σⱼ (D − wᵢcᵢⱼ) yⱼ ≥ D``. With ``highspy`` installed the cuts are appended to one HiGHS
    model, whose next solve starts from the last basis; without it scipy solves from scratch."""

    def __init__(self, n: int, m: int, p: int) -> None:
        self.n, self.m, self.p = n, m, p
        self.owners: list[int] = []
        self.levels: list[float] = []
        self.rows: list[tuple[np.ndarray, np.ndarray]] = []
        try:
            import highspy
        except ImportError:
            self.highs = None
            return
        self.highs = highspy.Highs()
        self.highs.setOptionValue("output_flag", False)
        inf = highspy.kHighsInf
        none = np.zeros(0, dtype=np.int32)
        self.highs.addCols(n + m, np.r_[np.ones(n), np.zeros(m)], np.zeros(n + m), np.r_[np.full(n, inf), np.ones(m)],
                           0, np.zeros(n + m, dtype=np.int32), none, np.zeros(0))
        self.highs.addRows(1, np.array([float(p)]), np.array([float(p)]), m, np.zeros(1, dtype=np.int32),
                           (n + np.arange(m)).astype(np.int32), np.ones(m))

    def add(self, owner: np.ndarray, level: np.ndarray, columns: list[np.ndarray], values: list[np.ndarray]) -> None:
        rows = [(np.r_[i, self.n + js].astype(np.int32), np.r_[1.0, v]) for i, js, v in zip(owner, columns, values)]
        self.owners.extend(int(i) for i in owner)
        self.levels.extend(float(d) for d in level)
        if self.highs is None:
            self.rows.extend(rows)
            return
        starts = np.cumsum([0] + [len(r[0]) for r in rows[:-1]]).astype(np.int32)
        self.highs.addRows(len(rows), np.asarray(level, dtype=float), np.full(len(rows), np.inf), int(starts[-1]) +
                           len(rows[-1][0]), starts, np.concatenate([r[0] for r in rows]),
                           np.concatenate([r[1] for r in rows]))

    def solve(self) -> tuple[float, np.ndarray, np.ndarray]:
        """The master's value, its solution (θ then y) and the duals (≥ 0) of the cuts."""
        n, m = self.n, self.m
        if self.highs is not None:
            self.highs.run()
            solution = self.highs.getSolution()
            return (self.highs.getInfo().objective_function_value, np.array(solution.col_value),
                    np.array(solution.row_dual)[1:])
        lengths = [len(r[0]) for r in self.rows]
        a = scipy.sparse.csr_array((np.concatenate([r[1] for r in self.rows]),
                                    (np.repeat(np.arange(len(self.rows)), lengths),
                                     np.concatenate([r[0] for r in self.rows]))), shape=(len(self.rows), n + m))
        lp = scipy.optimize.linprog(np.r_[np.ones(n), np.zeros(m)], A_ub=-a, b_ub=-np.asarray(self.levels),
                                    A_eq=np.r_[np.zeros(n), np.ones(m)][None, :], b_eq=[self.p],
                                    bounds=[(0, None)] * n + [(0, 1)] * m, method="highs-ds")
        assert lp.status == 0, lp.message
        return float(lp.fun), lp.x, -lp.ineqlin.marginals


def benders_lp(costs: np.ndarray, w: np.ndarray, p: int) -> tuple[float, np.ndarray, int]:
    """The LP relaxation's value, multipliers ``λ`` of its assignment rows and the master
    solves, by multi-cut Benders decomposition over the sites (module docstring)."""
    n, m = costs.shape
    weighted = w[:, None] * costs
    order = np.argsort(weighted, axis=1, kind="stable")
    ascending = np.take_along_axis(weighted, order, axis=1)
    every = np.arange(n)
    master = Master(n, m, p)
    start = time.perf_counter()

    def separate(y: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        # Each point fills one unit from its cheapest candidates, at most yⱼ from each: its cost
        # φᵢ(y) and the level D where the unit fills, whose cut is tight at y.
        filled = np.cumsum(y[order], axis=1)
        level = ascending[every, np.minimum((filled < 1 - 1e-9).sum(axis=1), m - 1)]
        cheaper = ascending < level[:, None]
        phi = level + np.where(cheaper, (ascending - level[:, None]) * y[order], 0.0).sum(axis=1)
        return phi, level, cheaper

    def add(points: np.ndarray, level: np.ndarray, cheaper: np.ndarray) -> None:
        columns = [order[i][cheaper[i]] for i in points]
        master.add(points, level[points], columns, [level[i] - weighted[i, js] for i, js in zip(points, columns)])

    phi, level, cheaper = separate(np.full(m, p / m))
    add(every, level, cheaper)
    upper = float(phi.sum())
    for iteration in range(1, 1000):
        value, x, duals = master.solve()
        theta, y = x[:n], x[n:]
        phi, level, cheaper = separate(y)
        # The master is a relaxation (a lower bound); any y's cost is a feasible LP value.
        upper = min(upper, float(phi.sum()))
        missing = np.flatnonzero(phi > theta + 1e-9 * np.maximum(1.0, phi))
        print(f"    round {iteration}: master {value:.4f}, best F(y) {upper:.4f}, {len(missing)} cuts added, "
              f"{time.perf_counter() - start:.1f} s ({load()})", flush=True)
        if len(missing) == 0:
            # λᵢ = Σ (dual of each of i's cuts) · (its level): the Lagrangian multipliers.
            lam = np.bincount(master.owners, weights=duals * np.asarray(master.levels), minlength=n)
            return float(value), lam, iteration
        add(missing, level, cheaper)
    raise RuntimeError("the cuts did not converge")


def exact_optimum(costs: np.ndarray, w: np.ndarray, p: int, lam: np.ndarray, upper: float,
                  seconds: float) -> tuple[float, int, object]:
    """The least total cost (``upper`` when no plan is cheaper; None when milp stopped before
    proving it), the candidates left after reduced-cost fixing at the multipliers ``lam``, and
    milp's answer on them (module docstring)."""
    rho = np.minimum(0.0, w[:, None] * costs - lam[:, None]).sum(axis=0)
    order = np.argsort(rho, kind="stable")
    bound = lam.sum() + rho[order[:p]].sum()
    # Opening j instead of the p-th cheapest of the relaxation's sites bounds every plan with j open.
    left = np.ones(len(rho), dtype=bool)
    left[order[p:]] = bound - rho[order[p - 1]] + rho[order[p:]] <= upper * (1 + 1e-12)
    cols = np.flatnonzero(left)
    n, k = len(w), len(cols)
    c, a, lower, upper_rows = program(costs[:, cols], w, p)
    res = scipy.optimize.milp(c, constraints=scipy.optimize.LinearConstraint(a, lower, upper_rows),
                              integrality=np.r_[np.zeros(n * k), np.ones(k)], bounds=scipy.optimize.Bounds(0, 1),
                              options={"time_limit": seconds, "mip_rel_gap": 0.0})
    if res.status != 0:
        return None, k, res
    return min(upper, float(res.fun)), k, res


def load() -> str:
    return "load average {:.2f} {:.2f} {:.2f}".format(*os.getloadavg())


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("shape", type=int, nargs="*", help="N M P")
    parser.add_argument("--bench", action="store_true")
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument("--exact", type=float, default=0.0, help="seconds for the exact optimum (0: not sought)")
    parser.add_argument("--milp", type=float, default=0.0, help="seconds for milp on the whole program (0: not run)")
    parser.add_argument("--no-lp", action="store_true")
    parser.add_argument("--no-placewise", action="store_true")
    parser.add_argument("--search-rounds", type=int, default=300)
    parser.add_argument("--bound-iterations", type=int, default=1000)
    args = parser.parse_args()
    if args.bench:
        costs, w = bench_instance()
        p = 50
        name = "bench_discrete.py p_median coordinates p=50"
    else:
        n, m, p = args.shape
        costs, w = uniform_costs(n, m, args.seed)
        name = f"seed {args.seed}"
    n, m = costs.shape
    print(f"{n} x {m}, p = {p}, {name} ({load()})", flush=True)
    plan = None
    if not args.no_placewise:
        import placewise as pw  # only here: the references alone run without the build

        start = time.perf_counter()
        plan = pw.discrete.p_median(costs, p, w, search_rounds=args.search_rounds,
                                    bound_iterations=args.bound_iterations)
        took = time.perf_counter() - start
        print(f"  placewise: total cost {plan.total_cost:.4f}, lower bound {plan.lower_bound:.4f}, proven gap "
              f"{100 * plan.relative_gap:.3f} %, {took:.2f} s ({load()})", flush=True)
    if not args.no_lp:
        start = time.perf_counter()
        value, lam, rounds = benders_lp(costs, w, p)
        print(f"  LP relaxation (Benders cuts, HiGHS, {rounds} master solves): {value:.4f}, "
              f"{time.perf_counter() - start:.1f} s ({load()})", flush=True)
        if plan is not None:
            print(f"    placewise bound / LP - 1 = {plan.lower_bound / value - 1:.3e}, "
                  f"plan / LP - 1 = {plan.total_cost / value - 1:.3e}", flush=True)
        if plan is not None and args.exact > 0:
            start = time.perf_counter()
            best, left, res = exact_optimum(costs, w, p, lam, float(plan.total_cost), args.exact)
            took = time.perf_counter() - start
            if best is None:
                print(f"  optimum not proven: milp on the {left} candidates left by reduced-cost fixing stopped "
                      f"with status {res.status} ({res.message}), incumbent {res.fun}, dual bound "
                      f"{getattr(res, 'mip_dual_bound', None)}, {took:.1f} s ({load()})", flush=True)
            else:
                print(f"  optimum: {best:.4f} ({left} candidates left by reduced-cost fixing; milp status "
                      f"{res.status}, {res.fun}), {took:.1f} s ({load()}); LP gap {1 - value / best:.3e}, "
                      f"plan / optimum - 1 = {plan.total_cost / best - 1:.3e}", flush=True)
    if args.milp > 0:
        c, a, lower, upper = program(costs, w, p)
        start = time.perf_counter()
        res = scipy.optimize.milp(c, constraints=scipy.optimize.LinearConstraint(a, lower, upper),
                                  integrality=np.concatenate([np.zeros(n * m), np.ones(m)]),
                                  bounds=scipy.optimize.Bounds(0, 1), options={"time_limit": args.milp})
        took = time.perf_counter() - start
        fun = res.fun if res.fun is not None else float("nan")
        dual = getattr(res, "mip_dual_bound", None)
        print(f"  scipy.optimize.milp (HiGHS, {args.milp:g} s): {fun:.4f}, dual bound "
              f"{dual if dual is not None else float('nan'):.4f}, status {res.status} ({res.message}), "
              f"{took:.1f} s ({load()})", flush=True)


if __name__ == "__main__":
    main()
