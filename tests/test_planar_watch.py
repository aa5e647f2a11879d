"""Long planar runs a person can watch and stop: progress and Ctrl-C for the Delaunay
triangulation, the Voronoi cells, the Euclidean minimum spanning tree and the nearest-site
search, single and grouped (none has a partial answer, so none takes a time limit), as for
their spherical and geodesic counterparts."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.spatial import cKDTree

import placewise as pw
from interrupting import Enough, check_progress_reports, check_prompt_interrupt, child_code, stop_at_first_report

RNG = np.random.default_rng(43)
# 300,000 points: three strips of the parallel triangulation, each counted as it ends.
POINTS = RNG.uniform(0, 1000, (300_000, 2))
GROUPS = RNG.integers(0, 3, len(POINTS))
L_SHAPE = [[0, 0], [1000, 0], [1000, 500], [500, 500], [500, 1000], [0, 1000]]

# Demand for the nearest-site search: every point of the cloud, served by 20,000 sites whose
# Delaunay graph the search walks; and the same split into the three groups, each served by
# the sites of its own label.
SITES = RNG.uniform(0, 1000, (20_000, 2))
SITE_GROUPS = RNG.integers(0, 3, len(SITES))
WEIGHTS = RNG.uniform(0, 5, len(POINTS))

WATCHED = {
    "delaunay": lambda **kw: pw.delaunay(POINTS, **kw),
    "voronoi_cells": lambda **kw: pw.voronoi_cells(POINTS, **kw),
    "voronoi_cells region": lambda **kw: pw.voronoi_cells(POINTS, L_SHAPE, **kw),
    "spanning_tree": lambda **kw: pw.spanning_tree(POINTS, **kw),
    "nearest_site": lambda **kw: pw.nearest_site(POINTS, SITES, WEIGHTS, **kw),
    # Grouped: three groups of about 100,000 points; a group's own strips stop a Ctrl-C.
    "delaunay grouped": lambda **kw: pw.delaunay(POINTS, groups=GROUPS, **kw),
    "voronoi_cells grouped": lambda **kw: pw.voronoi_cells(POINTS, groups=GROUPS, **kw),
    "voronoi_cells region grouped": lambda **kw: pw.voronoi_cells(POINTS, L_SHAPE, groups=GROUPS, **kw),
    "spanning_tree grouped": lambda **kw: pw.spanning_tree(POINTS, groups=GROUPS, **kw),
    "nearest_site grouped": lambda **kw: pw.nearest_site(POINTS, SITES, WEIGHTS, groups=GROUPS,
                                                         site_groups=SITE_GROUPS, **kw),
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
              "exterior", "end_a", "end_b", "edge_length", "length", "assignment", "distance", "load", "count",
              "cost", "total_load", "triangle_offsets", "edge_offsets", "labels")
    compared = [f for f in fields if hasattr(plain, f)]
    assert compared
    for field in compared:
        np.testing.assert_array_equal(getattr(plain, field), getattr(watched, field), err_msg=field)


def _grouped_and_alone(name: str) -> tuple[object, list[object]]:
    """The watched grouped run, and the ungrouped call on each group's own points."""
    grouped = WATCHED[f"{name} grouped"](progress=lambda done, total: None)
    alone = []
    for label in grouped.labels:
        own = POINTS[GROUPS == label]
        if name == "delaunay":
            alone.append(pw.delaunay(own))
        elif name == "voronoi_cells":
            alone.append(pw.voronoi_cells(own))
        else:
            alone.append(pw.spanning_tree(own))
    return grouped, alone


@pytest.mark.parametrize("name", ["delaunay", "voronoi_cells", "spanning_tree"])
def test_a_watched_grouped_run_equals_the_ungrouped_call_on_each_group(name: str) -> None:
    # Each group's answer (numbered by the group's own rows), bit for bit, is that of the
    # ungrouped call on the group's points alone, itself checked against scipy and shapely
    # in the kernels' own tests.
    grouped, alone = _grouped_and_alone(name)
    assert list(grouped.labels) == [0, 1, 2]
    for position, single in enumerate(alone):
        mine = grouped[position]
        if name == "delaunay":
            np.testing.assert_array_equal(mine.corners, single.corners)
            np.testing.assert_array_equal(mine.area, single.area)
        elif name == "voronoi_cells":
            np.testing.assert_array_equal(mine.area, single.area)
            np.testing.assert_array_equal(mine.vertices, single.vertices)
        else:
            np.testing.assert_array_equal(mine.end_a, single.end_a)
            np.testing.assert_array_equal(mine.end_b, single.end_b)
            assert mine.length == single.length


def _kdtree_nearest(points: np.ndarray, sites: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Nearest site by scipy's k-d tree (scipy.spatial.cKDTree), ties to the smaller row:
    the two nearest are asked for and an equal second with a smaller row wins (a tie of three
    or more sites is not settled; random real coordinates make even two-way ties rare)."""
    d, j = cKDTree(sites).query(points, k=2)
    tie = (d[:, 1] == d[:, 0]) & (j[:, 1] < j[:, 0])
    return np.where(tie, j[:, 1], j[:, 0]), d[:, 0]


def test_the_watched_nearest_site_search_matches_scipy() -> None:
    # Reference: scipy.spatial.cKDTree on the same points and sites (exact Euclidean nearest).
    a = WATCHED["nearest_site"](progress=lambda done, total: None)
    index, distance = _kdtree_nearest(POINTS, SITES)
    np.testing.assert_array_equal(a.assignment, index)
    np.testing.assert_allclose(a.distance, distance, rtol=1e-15)
    # Loads: numpy's bincount of the weights by the reference's assignment.
    np.testing.assert_allclose(a.load, np.bincount(index, WEIGHTS, len(SITES)), rtol=1e-12)


def test_the_watched_grouped_nearest_site_search_matches_scipy_per_group() -> None:
    # Each group's points go to the nearest site of their own label (scipy's cKDTree on
    # that label's sites), and each group equals the ungrouped search on its own rows.
    grouped = WATCHED["nearest_site grouped"](progress=lambda done, total: None)
    for label in (0, 1, 2):
        rows, site_rows = np.flatnonzero(GROUPS == label), np.flatnonzero(SITE_GROUPS == label)
        index, distance = _kdtree_nearest(POINTS[rows], SITES[site_rows])
        np.testing.assert_array_equal(grouped.assignment[rows], site_rows[index])
        np.testing.assert_allclose(grouped.distance[rows], distance, rtol=1e-15)
        alone = pw.nearest_site(POINTS[rows], SITES[site_rows], WEIGHTS[rows])
        np.testing.assert_array_equal(grouped.distance[rows], alone.distance)
        np.testing.assert_array_equal(grouped.load[site_rows], alone.load)


def test_progress_must_be_a_bool_or_a_callable() -> None:
    with pytest.raises(pw.InputError) as caught:
        pw.spanning_tree(POINTS[:10], progress="yes")
    assert caught.value.argument == "progress"


NEAREST_POINTS = 13_000_000  # 8 million ran 1.92 s at load 1.3, near the check's floor

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
    "spanning_tree": (3_000_000, "pw.spanning_tree(pts)"),  # 2 million: 1.96 s at load 1.3
    "delaunay": (4_000_000, "pw.delaunay(pts)"),
    # Grouped: four groups of a quarter each (two run at once on two cores, each stopped
    # inside by its own strips; the groups not begun are skipped).
    "voronoi_cells grouped": (2_000_000, "pw.voronoi_cells(pts, groups=np.arange(len(pts)) % 4)"),
    "spanning_tree grouped": (4_000_000, "pw.spanning_tree(pts, groups=np.arange(len(pts)) % 4)"),
    "delaunay grouped": (4_000_000, "pw.delaunay(pts, groups=np.arange(len(pts)) % 4)"),
    # Many small groups: the stop comes between groups.
    "delaunay many groups": (4_000_000, "pw.delaunay(pts, groups=np.arange(len(pts)) % 4000)"),
    # Points on four vertical lines: every strip is one line, so the set is triangulated
    # whole, by insertion along its lines (which looks at the watch).
    "delaunay on four lines": (4_000_000, "pw.delaunay(np.column_stack([np.floor(pts[:, 0] / 250), pts[:, 1]]))"),
    # The search: 200,000 sites (their triangulation is watched too) serving the points.
    "nearest_site": (NEAREST_POINTS, "pw.nearest_site(pts, pts[:200_000])"),
    "nearest_site grouped": (NEAREST_POINTS, "pw.nearest_site(pts, pts[:200_000], groups=np.arange(len(pts)) % 4, "
                                             "site_groups=np.arange(200_000) % 4)"),
}


@pytest.mark.parametrize("name", CALLS)
def test_ctrl_c_stops_the_run_promptly(name: str) -> None:
    # SIGINT into a run of seconds: KeyboardInterrupt must reach Python within half a
    # second, while the same run left alone goes on for longer.
    n, call = CALLS[name]
    runtime, latency = check_prompt_interrupt(child_code(_SETUP.format(n=n), call), 1.0)
    print(f"{name}: runs {runtime:.2f} s; Ctrl-C latency {latency:.3f} s")
