"""Long planar runs a person can watch and stop: progress and Ctrl-C for the Delaunay
triangulation, the Voronoi cells and the Euclidean minimum spanning tree (which have no
partial answer, so no time limit), as for their spherical counterparts."""

from __future__ import annotations

import numpy as np
import pytest

import placewise as pw
from interrupting import Enough, check_progress_reports, check_prompt_interrupt, child_code, stop_at_first_report

RNG = np.random.default_rng(43)
# 300,000 points: three strips of the parallel triangulation, each counted as it ends.
POINTS = RNG.uniform(0, 1000, (300_000, 2))
GROUPS = RNG.integers(0, 3, len(POINTS))
L_SHAPE = [[0, 0], [1000, 0], [1000, 500], [500, 500], [500, 1000], [0, 1000]]

WATCHED = {
    "delaunay": lambda **kw: pw.delaunay(POINTS, **kw),
    "voronoi_cells": lambda **kw: pw.voronoi_cells(POINTS, **kw),
    "voronoi_cells region": lambda **kw: pw.voronoi_cells(POINTS, L_SHAPE, **kw),
    "spanning_tree": lambda **kw: pw.spanning_tree(POINTS, **kw),
}
GROUPED = {
    "delaunay": lambda **kw: pw.delaunay(POINTS[:3000], groups=GROUPS[:3000], **kw),
    "voronoi_cells": lambda **kw: pw.voronoi_cells(POINTS[:3000], groups=GROUPS[:3000], **kw),
    "spanning_tree": lambda **kw: pw.spanning_tree(POINTS[:3000], groups=GROUPS[:3000], **kw),
}


@pytest.mark.parametrize("name", WATCHED)
def test_progress_counts_grow_and_end_at_the_total(name: str) -> None:
    check_progress_reports(WATCHED[name])


@pytest.mark.parametrize("name", WATCHED)
def test_a_raising_progress_callable_stops_the_run(name: str) -> None:
    with pytest.raises(Enough):
        WATCHED[name](progress=stop_at_first_report)


@pytest.mark.parametrize("name", WATCHED)
def test_watching_leaves_the_answers_unchanged(name: str) -> None:
    # Same call without and with a progress callable: the same triangles, cells and tree,
    # bit for bit.
    plain, watched = WATCHED[name](), WATCHED[name](progress=lambda done, total: None)
    fields = ("corners", "across", "edges", "outline", "representative", "area", "vertices", "offsets", "parts",
              "exterior", "end_a", "end_b", "edge_length")
    compared = [f for f in fields if hasattr(plain, f)]
    assert compared
    for field in compared:
        np.testing.assert_array_equal(getattr(plain, field), getattr(watched, field), err_msg=field)
    assert not hasattr(plain, "length") or plain.length == watched.length


@pytest.mark.parametrize("name", GROUPED)
def test_a_grouped_run_refuses_progress_by_name_and_answers_without(name: str) -> None:
    with pytest.raises(pw.InputError) as caught:
        GROUPED[name](progress=True)
    assert caught.value.argument == "progress"
    assert len(GROUPED[name]()) == len(GROUPED[name](progress=False)) == 3


def test_progress_must_be_a_bool_or_a_callable() -> None:
    with pytest.raises(pw.InputError) as caught:
        pw.spanning_tree(POINTS[:10], progress="yes")
    assert caught.value.argument == "progress"


_SETUP = """
rng = np.random.default_rng(5)
pts = rng.uniform(0, 1000, ({n}, 2))
"""

# Sizes at which each call runs at least about 2.5 s on an idle 2-core machine (see
# benchmarks/RESULTS.md). The triangulation stops when the strips under way end, and a strip
# holds at most about 250,000 points at any size (the triangulation alone: about 4 s for
# 4,000,000 points at load 3, 0.12-0.29 s from the signal).
CALLS = {
    "voronoi_cells": (1_000_000, "pw.voronoi_cells(pts)"),
    "spanning_tree": (2_000_000, "pw.spanning_tree(pts)"),
    "delaunay": (4_000_000, "pw.delaunay(pts)"),
}


@pytest.mark.parametrize("name", CALLS)
def test_ctrl_c_stops_the_run_promptly(name: str) -> None:
    # SIGINT into a run of seconds: KeyboardInterrupt must reach Python within half a
    # second, while the same run left alone goes on for longer.
    n, call = CALLS[name]
    runtime, latency = check_prompt_interrupt(child_code(_SETUP.format(n=n), call), 1.0)
    print(f"{name}: runs {runtime:.2f} s; Ctrl-C latency {latency:.3f} s")
