"""How soon Ctrl-C stops a long kernel: each case runs in a child Python process, which is
sent SIGINT two seconds into the call; the latency is the time from the signal to the
child catching ``KeyboardInterrupt`` (both clocks are the same machine's wall clock).

Kernels that poll a cancel flag (the watched ones) stop within one polling interval; a
kernel that does not poll finishes its work first, so its "latency" is the rest of its run
(capped: after ``CAP`` seconds the child is killed and the row says so). The issue's target
is 0.5 s for every kernel that can run longer than about a second.

Run: ``python benchmarks/interrupt.py [CASE ...]``; prints a Markdown table.
"""

from __future__ import annotations

import signal
import subprocess
import sys
import time

# Seconds into the call at which SIGINT is sent, and the longest wait for the child after it.
DELAY = 2.0
CAP = 60.0
# Cases whose signal comes sooner, to land in a particular phase (the row's name says so).
DELAYS = {"geodesic_weber_setup": 0.3, "delaunay": 0.7}

# Each case: (name, size, watched, setup code, the call). The setup runs before the clock.
CASES: dict[str, tuple[str, str, bool, str, str]] = {
    "p_median": ("p_median (default effort)", "1,000,000 points, p = 50", True,
                 "pts = np.random.default_rng(1).random((1_000_000, 2))",
                 "pw.p_median(pts, 50)"),
    "p_center": ("p_center", "1,000,000 points, p = 50", True,
                 "pts = np.random.default_rng(2).random((1_000_000, 2))",
                 "pw.p_center(pts, 50, effort='thorough')"),
    "steiner": ("steiner_tree (heuristic)", "100,000 terminals", True,
                "pts = np.random.default_rng(3).random((100_000, 2))",
                "pw.steiner_tree(pts, exact=False)"),
    "costs": ("TravelGraph.costs", "4,000 origins, 1,000,000-edge grid", True,
              "side = 708\n"
              "ids = np.arange(side * side).reshape(side, side)\n"
              "tail = np.r_[ids[:, :-1].ravel(), ids[:-1, :].ravel()]\n"
              "head = np.r_[ids[:, 1:].ravel(), ids[1:, :].ravel()]\n"
              "cost = np.random.default_rng(4).uniform(1, 2, len(tail))\n"
              "g = pw.TravelGraph.from_edges(tail, head, cost)\n"
              "origins = np.random.default_rng(5).integers(0, side * side, 4_000)",
              "g.costs(origins, origins)"),
    "geodesic_nearest": ("geodesic nearest_site", "1,000,000 lon/lat points, 1,000 sites", True,
                         "rng = np.random.default_rng(6)\n"
                         "pts = np.column_stack([rng.uniform(-180, 180, 1_000_000), "
                         "np.degrees(np.arcsin(rng.uniform(-1, 1, 1_000_000)))])\n"
                         "sites = pts[:1000].copy()",
                         "pw.geodesic.nearest_site(pts, sites)"),
    "discrete_median": ("discrete p_median", "10,000 points x 1,000 candidates, p = 50", True,
                        "rng = np.random.default_rng(7)\n"
                        "pts = rng.random((10_000, 2)) * 100\n"
                        "cands = rng.random((1_000, 2)) * 100",
                        "pw.p_median(pts, 50, candidates=cands)"),
    "cover_most": ("cover_most", "100,000 weighted points x 2,000 candidates, p = 20, r = 10", True,
                   "rng = np.random.default_rng(3)\n"
                   "pts, cands = rng.uniform(0, 100, (100_000, 2)), rng.uniform(0, 100, (2000, 2))\n"
                   "w = rng.integers(1, 10, 100_000).astype(float)",
                   "pw.cover_most(pts, 20, 10.0, w, candidates=cands)"),
    "discrete_center": ("discrete p_center", "20,000 points x 2,000 candidates, p = 50", True,
                        "rng = np.random.default_rng(9)\n"
                        "pts, cands = rng.random((20_000, 2)) * 100, rng.random((2_000, 2)) * 100",
                        "pw.p_center(pts, 50, candidates=cands)"),
    "cover_all": ("cover_all (sites anywhere)", "20,000 points, r = 1", True,
                  "pts = np.random.default_rng(3).uniform(0, 100, (20_000, 2))",
                  "pw.cover_all(pts, 1.0)"),
    "capacity_cells": ("capacity_cells", "300,000 points x 300 sites", True,
                       "rng = np.random.default_rng(8)\n"
                       "pts = rng.uniform(0, 20_000, (300_000, 2))\n"
                       "sites = rng.uniform(0, 20_000, (300, 2))\n"
                       "caps = np.full(300, 1_000.0)",
                       "pw.capacity_cells(pts, sites, caps)"),
    "capacity_allocation": ("capacity_allocation", "1,000,000 points x 200 sites", True,
                            "rng = np.random.default_rng(10)\n"
                            "pts = rng.uniform(0, 20_000, (1_000_000, 2))\n"
                            "sites = rng.uniform(0, 20_000, (200, 2))\n"
                            "caps = np.full(200, 5_000.0)",
                            "pw.capacity_allocation(pts, sites, caps)"),
    "geodesic_weber": ("geodesic weber_point", "1,000,000 lon/lat points", True,
                       "rng = np.random.default_rng(11)\n"
                       "pts = np.column_stack([rng.uniform(-20, 20, 1_000_000), rng.uniform(30, 60, 1_000_000)])",
                       "pw.geodesic.weber_point(pts)"),
    "geodesic_minimax": ("geodesic minimax_point", "1,000,000 weighted lon/lat points", True,
                         "rng = np.random.default_rng(11)\n"
                         "pts = np.column_stack([rng.uniform(-20, 20, 1_000_000), rng.uniform(30, 60, 1_000_000)])\n"
                         "w = rng.uniform(1, 2, 1_000_000)",
                         "pw.geodesic.minimax_point(pts, w)"),
    "geodesic_circle": ("geodesic enclosing_circle", "1,000,000 lon/lat points", True,
                        "rng = np.random.default_rng(11)\n"
                        "pts = np.column_stack([rng.uniform(-20, 20, 1_000_000), rng.uniform(30, 60, 1_000_000)])",
                        "pw.geodesic.enclosing_circle(pts)"),
    "geodesic_minimax_groups": ("geodesic minimax_point, groups", "1,000,000 lon/lat points in 4 groups", True,
                                "rng = np.random.default_rng(12)\n"
                                "pts = np.column_stack([rng.uniform(-20, 20, 1_000_000), "
                                "rng.uniform(30, 60, 1_000_000)])\n"
                                "g = rng.integers(0, 4, 1_000_000)",
                                "pw.geodesic.minimax_point(pts, groups=g)"),
    "geodesic_weber_groups": ("geodesic weber_point, groups", "2,000,000 lon/lat points in 4 groups", True,
                              "rng = np.random.default_rng(13)\n"
                              "pts = np.column_stack([rng.uniform(-20, 20, 2_000_000), "
                              "rng.uniform(30, 60, 2_000_000)])\n"
                              "g = rng.integers(0, 4, 2_000_000)",
                              "pw.geodesic.weber_point(pts, groups=g)"),
    "geodesic_weber_setup": ("geodesic weber_point, signal 0.3 s in (set-up)", "500,000 weighted lon/lat points",
                             True,
                             "rng = np.random.default_rng(14)\n"
                             "pts = np.column_stack([rng.uniform(-20, 20, 500_000), rng.uniform(30, 60, 500_000)])\n"
                             "w = rng.uniform(1, 2, 500_000)",
                             "pw.geodesic.weber_point(pts, w)"),
    "geodesic_nearest_groups": ("geodesic nearest_site, groups", "1,000,000 lon/lat points, 1,000 sites, 4 groups",
                                True,
                                "rng = np.random.default_rng(15)\n"
                                "pts = np.column_stack([rng.uniform(-180, 180, 1_000_000), "
                                "np.degrees(np.arcsin(rng.uniform(-1, 1, 1_000_000)))])\n"
                                "g = rng.integers(0, 4, 1_000_000)\n"
                                "sites, sg = pts[:1000].copy(), g[:1000].copy()",
                                "pw.geodesic.nearest_site(pts, sites, groups=g, site_groups=sg)"),
    "sphere_voronoi": ("geodesic voronoi_cells", "200,000 lon/lat sites over the globe", True,
                       "rng = np.random.default_rng(16)\n"
                       "pts = np.column_stack([rng.uniform(-180, 180, 200_000), "
                       "np.degrees(np.arcsin(rng.uniform(-1, 1, 200_000)))])",
                       "pw.geodesic.voronoi_cells(pts)"),
    "delaunay": ("delaunay, signal 0.7 s in", "2,000,000 points (8 strips)", True,
                 "pts = np.random.default_rng(17).uniform(0, 1000, (2_000_000, 2))",
                 "pw.delaunay(pts)"),
    "spanning_tree": ("spanning_tree", "2,000,000 points", True,
                      "pts = np.random.default_rng(18).uniform(0, 1000, (2_000_000, 2))",
                      "pw.spanning_tree(pts)"),
    "voronoi_cells": ("voronoi_cells", "1,000,000 sites", True,
                      "pts = np.random.default_rng(19).uniform(0, 1000, (1_000_000, 2))",
                      "pw.voronoi_cells(pts)"),
    "capacitated_median": ("capacitated p_median", "20,000 points, p = 10, capacities 5 % over the demand", True,
                           "rng = np.random.default_rng(10)\n"
                           "pts = rng.uniform(0, 20_000, (20_000, 2))\n"
                           "caps = np.full(10, 2_100.0)",
                           "pw.capacitated_p_median(pts, 10, caps)"),
}

CHILD = """
import signal, sys, time
import numpy as np
import placewise as pw
signal.signal(signal.SIGINT, signal.default_int_handler)
signal.pthread_sigmask(signal.SIG_UNBLOCK, {{signal.SIGINT}})
{setup}
print("ready", flush=True)
sys.stdin.readline()
print(f"start {{time.time():.6f}}", flush=True)
try:
    {call}
    print(f"finished {{time.time():.6f}}", flush=True)
except KeyboardInterrupt:
    print(f"interrupted {{time.time():.6f}}", flush=True)
"""


def measure(key: str) -> str:
    name, size, watched, setup, call = CASES[key]
    child = subprocess.Popen([sys.executable, "-c", CHILD.format(setup=setup, call=call)],
                             stdin=subprocess.PIPE, stdout=subprocess.PIPE, text=True)
    assert child.stdin is not None and child.stdout is not None
    assert child.stdout.readline().strip() == "ready"
    child.stdin.write("go\n")
    child.stdin.flush()
    started = float(child.stdout.readline().split()[1])
    time.sleep(max(0.0, started + DELAYS.get(key, DELAY) - time.time()))
    sent = time.time()
    child.send_signal(signal.SIGINT)
    try:
        outcome, at = child.communicate(timeout=CAP)[0].split()[:2]
    except subprocess.TimeoutExpired:
        child.kill()
        child.communicate()
        return f"| {name} | {size} | {'yes' if watched else 'no'} | > {CAP:.0f} s (killed) | NO |"
    latency = float(at) - sent
    if outcome == "finished" and float(at) < sent:
        return f"| {name} | {size} | {'yes' if watched else 'no'} | finished before the signal | - |"
    note = "" if outcome == "interrupted" else " (ran to the end: KeyboardInterrupt after it)"
    met = "yes" if outcome == "interrupted" and latency <= 0.5 else "NO"
    return f"| {name} | {size} | {'yes' if watched else 'no'} | {latency:.3f} s{note} | {met} |"


def main() -> None:
    keys = sys.argv[1:] or list(CASES)
    print(f"| kernel | size | polls a cancel flag | SIGINT {DELAY:.0f} s in → KeyboardInterrupt | within 0.5 s |")
    print("|---|---|---|---|---|", flush=True)
    for key in keys:
        print(measure(key), flush=True)


if __name__ == "__main__":
    main()
