"""The reference of the large p-median benchmark row checked against HiGHS on small instances.

``benchmarks/median_lp.py`` computes the LP relaxation of the p-median program by Benders
cuts (the only way it fits at 10⁷ pairs) and the integer optimum by milp after reduced-cost
fixing. ``benchmarks/RESULTS.md`` quotes both as the measure of placewise's plan and bound, so
both are checked here against the textbook program solved whole by ``scipy.optimize.milp``
(HiGHS; ``milp_p_median`` of ``test_discrete.py``), with and without ``highspy``.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

from placewise import discrete

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "benchmarks"))

import median_lp  # noqa: E402
from test_discrete import instance, milp_p_median  # noqa: E402

# Instances whose LP relaxation lies below the integer optimum (0.24 %, 0.54 % and 0.08 %, by
# milp on the relaxed and the integer program), so an LP routine returning the integer
# optimum, or a rounded plan's cost, would fail the checks below.
CASES = [(2, 60, 15, 4), (10, 80, 20, 5), (11, 100, 25, 6)]


def _benders(costs: np.ndarray, w: np.ndarray, p: int, master: str, monkeypatch) -> tuple[float, np.ndarray]:  # noqa: ANN001
    if master == "scipy":
        # A failing import: the master falls back to scipy.optimize.linprog.
        monkeypatch.setitem(sys.modules, "highspy", None)
    else:
        import highspy  # noqa: F401 (the test extra installs it; the master falls back silently without it)
    value, lam, _ = median_lp.benders_lp(costs, w, p)
    return value, lam


@pytest.mark.parametrize("master", ["highspy", "scipy"])
@pytest.mark.parametrize(("seed", "n", "m", "p"), CASES)
def test_benders_lp_equals_the_linear_relaxation(seed, n, m, p, master, monkeypatch, capsys):
    _, _, w, costs = instance(seed, n, m)
    value, lam = _benders(costs, w, p, master, monkeypatch)
    relaxation = milp_p_median(costs, w, p, relaxed=True)  # scipy.optimize.milp (HiGHS), y continuous
    best = milp_p_median(costs, w, p)  # scipy.optimize.milp (HiGHS), y binary
    assert relaxation < best * (1 - 1e-4)  # the case has an integrality gap
    assert value == pytest.approx(relaxation, rel=1e-7)
    # LP duality (Geoffrion 1974): the Lagrangian function at the LP's assignment duals is the
    # LP's value, the multipliers the benchmark hands to reduced-cost fixing.
    rho = np.minimum(0.0, w[:, None] * costs - lam[:, None]).sum(axis=0)
    assert lam.sum() + np.sort(rho)[:p].sum() == pytest.approx(relaxation, rel=1e-7)
    # placewise's root Lagrangian bound (no tree search, which may lift it to the optimum)
    # can reach the LP's value, never pass it.
    assert discrete.p_median(costs, p, w, branch_iterations=0).lower_bound <= relaxation * (1 + 1e-7)


@pytest.mark.parametrize(("seed", "n", "m", "p"), CASES)
def test_exact_optimum_after_fixing_equals_milp_on_the_whole_program(seed, n, m, p, monkeypatch, capsys):
    _, _, w, costs = instance(seed, n, m)
    _, lam = _benders(costs, w, p, "scipy", monkeypatch)
    best = milp_p_median(costs, w, p)  # scipy.optimize.milp (HiGHS) on every candidate
    # A plan above the optimum (the heuristic's answer may already be optimal): fixing must
    # keep the optimal plan's candidates whatever upper bound it starts from.
    for upper in (discrete.p_median(costs, p, w, search_rounds=1, branch_iterations=0).total_cost, best * 1.05):
        optimum, left, _ = median_lp.exact_optimum(costs, w, p, lam, upper, 120.0)
        assert optimum == pytest.approx(best, rel=1e-9)
        assert p <= left <= costs.shape[1]
