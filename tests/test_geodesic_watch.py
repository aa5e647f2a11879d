"""Long geodesic runs a person can watch and stop: progress, time limits and Ctrl-C for the
minimax point, enclosing circle and Fermat–Weber point on the ellipsoid (single and
grouped); progress and Ctrl-C for the grouped nearest-site search, the spherical Voronoi
cells, Delaunay triangulation and minimum spanning tree (which have no partial answer, so no
time limit).

Truth of a flagged answer is recomputed with pyproj's ``Geod`` (GeographicLib, Karney 2013):
the largest weight × geodesic distance from the returned site, or the weighted sum of
geodesic distances, independently of placewise.
"""

from __future__ import annotations

import numpy as np
import pytest
from pyproj import Geod

import placewise as pw
from interrupting import (
    Enough,
    check_counts,
    check_progress_reports,
    check_prompt_interrupt,
    child_code,
    stop_at_first_report,
)

GEOD = Geod(ellps="WGS84")
RNG = np.random.default_rng(29)
N = 60_000
POINTS = np.column_stack([RNG.uniform(-30, 25, N), RNG.uniform(20, 65, N)])
WEIGHTS = RNG.uniform(1, 3, N)
GROUPS = RNG.integers(0, 4, N)

SITES = np.column_stack([RNG.uniform(-30, 25, 40), RNG.uniform(20, 65, 40)])
SITE_GROUPS = np.arange(40) % 4

MODELS = {
    "minimax_point": lambda **kw: pw.geodesic.minimax_point(POINTS, WEIGHTS, **kw),
    "minimax_point groups": lambda **kw: pw.geodesic.minimax_point(POINTS, WEIGHTS, groups=GROUPS, **kw),
    "enclosing_circle": lambda **kw: pw.geodesic.enclosing_circle(POINTS, **kw),
    "enclosing_circle groups": lambda **kw: pw.geodesic.enclosing_circle(POINTS, groups=GROUPS, **kw),
    "weber_point": lambda **kw: pw.geodesic.weber_point(POINTS, WEIGHTS, **kw),
    "weber_point groups": lambda **kw: pw.geodesic.weber_point(POINTS, WEIGHTS, groups=GROUPS, **kw),
}
#: Kernels with no partial answer: progress and Ctrl-C only.
WHOLE = {
    "nearest_site groups": lambda **kw: pw.geodesic.nearest_site(POINTS, SITES, WEIGHTS, groups=GROUPS,
                                                                 site_groups=SITE_GROUPS, **kw),
    "voronoi_cells": lambda **kw: pw.geodesic.voronoi_cells(POINTS[:20_000], **kw),
    "delaunay": lambda **kw: pw.geodesic.delaunay(POINTS[:20_000], **kw),
    "spanning_tree": lambda **kw: pw.geodesic.spanning_tree(POINTS[:20_000], **kw),
}


def _largest(site: np.ndarray, points: np.ndarray, weights: np.ndarray | None = None) -> float:
    """max w · s(site, a) by pyproj's geodesic inverse problem (metres)."""
    lon, lat = np.full(len(points), site[0]), np.full(len(points), site[1])
    _, _, s = GEOD.inv(lon, lat, points[:, 0], points[:, 1])
    return float((s if weights is None else weights * s).max())


def _weighted_sum(site: np.ndarray, points: np.ndarray, weights: np.ndarray) -> float:
    """sum w · s(site, a) by pyproj's geodesic inverse problem (weight × metres)."""
    lon, lat = np.full(len(points), site[0]), np.full(len(points), site[1])
    _, _, s = GEOD.inv(lon, lat, points[:, 0], points[:, 1])
    return float(np.sum(weights * np.asarray(s)))


@pytest.mark.parametrize("name", [*MODELS, *WHOLE])
def test_progress_counts_grow_and_end_at_the_total(name: str) -> None:
    check_progress_reports({**MODELS, **WHOLE}[name])


@pytest.mark.parametrize("name", [*MODELS, *WHOLE])
def test_a_raising_progress_callable_stops_the_run(name: str) -> None:
    with pytest.raises(Enough):
        {**MODELS, **WHOLE}[name](progress=stop_at_first_report)


def test_watching_leaves_the_whole_answers_unchanged() -> None:
    # Same call without and with a progress callable: the same allocation, cells, triangles
    # and tree, bit for bit.
    for run in WHOLE.values():
        plain, watched = run(), run(progress=lambda done, total: None)
        for field in ("assignment", "distance", "area", "rings", "corners", "edges", "end_a", "end_b",
                      "edge_length"):
            if hasattr(plain, field):
                np.testing.assert_array_equal(getattr(plain, field), getattr(watched, field))


def test_the_watched_grouped_nearest_site_is_the_nearest() -> None:
    # pyproj's distances from every point to every site of its own group (brute force): the
    # site chosen is at the least of them.
    a = WHOLE["nearest_site groups"](progress=lambda done, total: None)
    rows = np.arange(0, N, 997)
    for i in rows:
        mine = np.flatnonzero(SITE_GROUPS == GROUPS[i])
        _, _, s = GEOD.inv(np.full(len(mine), POINTS[i, 0]), np.full(len(mine), POINTS[i, 1]),
                           SITES[mine, 0], SITES[mine, 1])
        assert a.distance[i] == pytest.approx(float(np.min(s)), rel=1e-12, abs=1e-6)
        assert a.assignment[i] in mine


@pytest.mark.parametrize("name", MODELS)
def test_time_limit_is_checked(name: str) -> None:
    for bad in (0, -1.0, float("nan")):
        with pytest.raises(pw.InputError) as caught:
            MODELS[name](time_limit=bad)
        assert caught.value.argument == "time_limit"


def test_a_cut_minimax_point_is_a_true_flagged_answer() -> None:
    full = MODELS["minimax_point"]()
    cut = MODELS["minimax_point"](time_limit=1e-6)
    assert full.converged and not cut.converged
    # The radius reported is the true one of the site returned (pyproj), and the gap holds:
    # the cut run's lower bound (radius - gap) is below a radius the full run achieved, and
    # the full run's proven lower bound is below the cut run's radius.
    assert cut.weighted_radius == pytest.approx(_largest(cut.location, POINTS, WEIGHTS), rel=1e-9)
    assert full.weighted_radius == pytest.approx(_largest(full.location, POINTS, WEIGHTS), rel=1e-9)
    assert cut.weighted_radius - cut.gap <= full.weighted_radius
    assert full.weighted_radius - full.gap <= cut.weighted_radius
    assert cut.iterations < full.iterations
    frame = cut.to_frame()
    assert not frame["converged"].iloc[0] and frame["gap_m"].iloc[0] == cut.gap


def test_a_cut_enclosing_circle_still_covers_every_point() -> None:
    full = MODELS["enclosing_circle"]()
    cut = MODELS["enclosing_circle"](time_limit=1e-6)
    assert not cut.converged
    assert cut.radius == pytest.approx(_largest(cut.center, POINTS), rel=1e-9)
    assert cut.radius >= full.radius - full.gap
    # The disc's area on the ellipsoid: pyproj's area of the 4096-gon inscribed in the circle
    # about the same centre is just below it (inscribed polygons fall short by O(1/N²)).
    azimuths = np.linspace(0.0, 360.0, 4096, endpoint=False)
    lon, lat, _ = GEOD.fwd(np.full(4096, cut.center[0]), np.full(4096, cut.center[1]), azimuths,
                           np.full(4096, cut.radius))
    inscribed = abs(GEOD.polygon_area_perimeter(lon, lat)[0])
    assert inscribed <= cut.area <= inscribed * (1 + 1e-6)


def test_a_cut_weber_point_is_a_true_flagged_answer() -> None:
    full = MODELS["weber_point"]()
    cut = MODELS["weber_point"](time_limit=1e-6)
    assert full.converged and not cut.converged
    # The cost reported is the true weighted sum at the site returned (pyproj), and the gap
    # holds: the cut run's lower bound is below the optimum the full run reached.
    assert cut.cost == pytest.approx(_weighted_sum(cut.location, POINTS, WEIGHTS), rel=1e-9)
    assert full.cost == pytest.approx(_weighted_sum(full.location, POINTS, WEIGHTS), rel=1e-9)
    assert cut.cost - cut.gap <= full.cost <= cut.cost
    assert cut.iterations <= full.iterations
    frame = cut.to_frame()
    assert not frame["converged"].iloc[0] and frame["cost_m"].iloc[0] == cut.cost


@pytest.mark.parametrize("kernel", ["minimax_point", "enclosing_circle"])
def test_a_converged_centre_run_counts_its_iterations_to_the_total(kernel: str) -> None:
    # Each iteration is planned as it begins: the count of a converged run ends at its total,
    # the iterations made (never at max_iter, 200), on the centre of the unwatched run, whose
    # largest (weighted) distance is pyproj's there.
    calls: list[tuple[int, int]] = []
    watched = MODELS[kernel](progress=lambda done, total: calls.append((done, total)))
    plain = MODELS[kernel]()
    check_counts(calls)
    assert watched.converged and calls[-1] == (watched.iterations, watched.iterations)
    assert watched.iterations < 200
    if kernel == "minimax_point":
        np.testing.assert_array_equal(watched.location, plain.location)
        radius, truth = watched.weighted_radius, _largest(plain.location, POINTS, WEIGHTS)
    else:
        np.testing.assert_array_equal(watched.center, plain.center)
        radius, truth = watched.radius, _largest(plain.center, POINTS)
    assert radius == pytest.approx(truth, rel=1e-9)


def test_a_converged_weber_run_counts_its_exact_passes_to_the_total() -> None:
    # Each exact pass is planned as it begins: the count of a converged run ends at its
    # total, the passes made (never at max_iter), on the site of the unwatched run, whose
    # cost is pyproj's weighted sum there.
    calls: list[tuple[int, int]] = []
    watched = MODELS["weber_point"](progress=lambda done, total: calls.append((done, total)))
    plain = MODELS["weber_point"]()
    check_counts(calls)
    assert watched.converged and calls[-1] == (watched.iterations, watched.iterations)
    assert watched.iterations < 10_000
    np.testing.assert_array_equal(watched.location, plain.location)
    assert watched.cost == plain.cost == pytest.approx(_weighted_sum(plain.location, POINTS, WEIGHTS), rel=1e-9)


def test_a_cut_grouped_weber_run_flags_every_group_with_true_costs() -> None:
    cut = MODELS["weber_point groups"](time_limit=1e-6)
    assert len(cut) == 4 and not cut.converged.any()
    for k, label in enumerate(cut.labels):
        mine = GROUPS == label
        assert cut.cost[k] == pytest.approx(_weighted_sum(cut.location[k], POINTS[mine], WEIGHTS[mine]), rel=1e-9)


@pytest.mark.parametrize("kernel", ["minimax_point", "enclosing_circle", "weber_point"])
@pytest.mark.parametrize("name, value", [("time_limit", 5.0), ("progress", True), ("progress", print)])
def test_planar_gis_runs_refuse_what_they_cannot_honour(kernel: str, name: str, value) -> None:  # noqa: ANN001
    # The planar kernels are exact and quick: a time limit or a progress report would be
    # silently ignored, so it is refused, naming the argument; left unset, the run answers
    # (the triangle's smallest circle has radius 5/2 about (2, 1.5): closed form).
    gpd = pytest.importorskip("geopandas")
    frame = gpd.GeoSeries(gpd.points_from_xy([0.0, 4.0, 2.0], [0.0, 0.0, 4.0]))
    run = getattr(pw.gis, kernel)
    with pytest.raises(pw.InputError) as caught:
        run(frame, planar=True, **{name: value})
    assert caught.value.argument == name
    assert len(run(frame, planar=True)) == 1
    if kernel == "enclosing_circle":
        assert run(frame, planar=True, time_limit=None, progress=False)["radius_u"].iloc[0] == pytest.approx(2.5)


def test_a_cut_grouped_run_flags_every_group_with_true_radii() -> None:
    cut = MODELS["minimax_point groups"](time_limit=1e-6)
    assert len(cut) == 4 and not cut.converged.any()
    for k, label in enumerate(cut.labels):
        mine = GROUPS == label
        assert cut.weighted_radius[k] == pytest.approx(
            _largest(cut.location[k], POINTS[mine], WEIGHTS[mine]), rel=1e-9)


@pytest.mark.parametrize("command, label", [(["enclosing-circle"], "geodesic enclosing_circle"),
                                            (["minimax-point", "--by", "zone"], "geodesic minimax_point"),
                                            (["weber-point"], "geodesic weber_point")])
def test_the_cli_shows_the_bar_on_a_terminal_unless_turned_off(capsys, monkeypatch, tmp_path, command,
                                                               label) -> None:
    import sys

    import pandas as pd

    from placewise.cli import main

    path = tmp_path / "towns.csv"
    pd.DataFrame({"lon": POINTS[:2000, 0], "lat": POINTS[:2000, 1], "zone": GROUPS[:2000]}).to_csv(path, index=False)
    argv = [command[0], str(path), *command[1:], "-o", str(tmp_path / "out.csv")]
    assert main(argv) == 0 and label not in capsys.readouterr().err   # stderr not a terminal: no bar
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True)
    assert main(argv) == 0 and label in capsys.readouterr().err
    for off in ("--no-progress", "--quiet"):
        assert main([*argv, off]) == 0 and label not in capsys.readouterr().err, off
    # The centre written is the geodesic one (same as the library's, which pyproj checks above).
    out = pd.read_csv(tmp_path / "out.csv")
    assert len(out) == (len(np.unique(GROUPS[:2000])) if "--by" in command else 1)


@pytest.mark.parametrize("command", ["enclosing-circle", "minimax-point", "weber-point"])
def test_the_cli_draws_no_bar_for_a_planar_run_and_still_answers(capsys, monkeypatch, tmp_path, command) -> None:
    # A planar run refuses progress= (it is exact and quick), so the command line gives it
    # none even on a terminal. Reference: the smallest circle of the triangle (0,0), (4,0),
    # (2,4) has radius 5/2 (its circumcircle; the triangle is acute).
    import sys

    import pandas as pd

    from placewise.cli import main

    path = tmp_path / "plane.csv"
    pd.DataFrame({"x": [0.0, 4.0, 2.0], "y": [0.0, 0.0, 4.0]}).to_csv(path, index=False)
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True)
    out_path = tmp_path / "out.csv"
    assert main([command, str(path), "--planar", "-o", str(out_path)]) == 0
    assert "geodesic" not in capsys.readouterr().err
    if command == "enclosing-circle":
        assert pd.read_csv(out_path)["radius_u"].iloc[0] == pytest.approx(2.5)


_SETUP = """
rng = np.random.default_rng(5)
n = {n}
pts = np.column_stack([rng.uniform(-20, 20, n), rng.uniform(30, 60, n)])
w = rng.uniform(1, 2, n)
groups = rng.integers(0, 3, n)
sites = np.column_stack([rng.uniform(-20, 20, 300), rng.uniform(30, 60, 300)])
site_groups = np.arange(300) % 3
"""

# Sizes of the newly watched calls, so that each runs at least about three seconds on a
# fast idle 2-core machine (the grouped nearest-site search took 1.33 s at 800,000 points
# with load average 2.5, too short for the check; at load 1.3 the grouped search took
# 1.67 s at 2.4 million points, the enclosing circles 1.90 s at 1.5 million and the cells
# 1.87 s at 400,000, within 0.3 s of the check's floor, so those grew by 5/3 or more).
WEBER_N, NEAREST_N, VORONOI_N = 2_000_000, 4_000_000, 700_000
DELAUNAY_N, SPANNING_N = 1_000_000, 1_000_000

CALLS = {
    "minimax_point": (1_600_000, "pw.geodesic.minimax_point(pts, w)"),
    "enclosing_circle groups": (2_500_000, "pw.geodesic.enclosing_circle(pts, groups=groups)"),
    "weber_point groups": (4_000_000, "pw.geodesic.weber_point(pts, w, groups=groups)"),
    "weber_point": (WEBER_N, "pw.geodesic.weber_point(pts, w)"),
    "nearest_site groups": (NEAREST_N,
                            "pw.geodesic.nearest_site(pts, sites, w, groups=groups, site_groups=site_groups)"),
    "voronoi_cells": (VORONOI_N, "pw.geodesic.voronoi_cells(pts)"),
    "delaunay": (DELAUNAY_N, "pw.geodesic.delaunay(pts)"),
    "spanning_tree": (SPANNING_N, "pw.geodesic.spanning_tree(pts)"),
}


@pytest.mark.parametrize("name", CALLS)
def test_ctrl_c_stops_the_run_promptly(name: str) -> None:
    # SIGINT one second into a run of several seconds: KeyboardInterrupt must reach Python
    # within half a second, while the same run left alone goes on for seconds more.
    n, call = CALLS[name]
    runtime, latency = check_prompt_interrupt(child_code(_SETUP.format(n=n), call), 1.0)
    print(f"{name}: runs {runtime:.2f} s; Ctrl-C latency {latency:.3f} s")
