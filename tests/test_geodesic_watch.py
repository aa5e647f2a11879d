"""Long geodesic runs a person can watch and stop: progress, time limits and Ctrl-C for the
minimax point and enclosing circle on the ellipsoid (single and grouped), and Ctrl-C for the
grouped Fermat–Weber point.

Truth of a flagged answer is recomputed with pyproj's ``Geod`` (GeographicLib, Karney 2013):
the largest weight × geodesic distance from the returned site, independently of placewise.
"""

from __future__ import annotations

import numpy as np
import pytest
from pyproj import Geod

import placewise as pw
from interrupting import Enough, check_progress_reports, check_prompt_interrupt, stop_at_first_report

GEOD = Geod(ellps="WGS84")
RNG = np.random.default_rng(29)
N = 60_000
POINTS = np.column_stack([RNG.uniform(-30, 25, N), RNG.uniform(20, 65, N)])
WEIGHTS = RNG.uniform(1, 3, N)
GROUPS = RNG.integers(0, 4, N)

MODELS = {
    "minimax_point": lambda **kw: pw.geodesic.minimax_point(POINTS, WEIGHTS, **kw),
    "minimax_point groups": lambda **kw: pw.geodesic.minimax_point(POINTS, WEIGHTS, groups=GROUPS, **kw),
    "enclosing_circle": lambda **kw: pw.geodesic.enclosing_circle(POINTS, **kw),
    "enclosing_circle groups": lambda **kw: pw.geodesic.enclosing_circle(POINTS, groups=GROUPS, **kw),
}


def _largest(site: np.ndarray, points: np.ndarray, weights: np.ndarray | None = None) -> float:
    """max w · s(site, a) by pyproj's geodesic inverse problem (metres)."""
    lon, lat = np.full(len(points), site[0]), np.full(len(points), site[1])
    _, _, s = GEOD.inv(lon, lat, points[:, 0], points[:, 1])
    return float((s if weights is None else weights * s).max())


@pytest.mark.parametrize("name", MODELS)
def test_progress_counts_grow_and_end_at_the_total(name: str) -> None:
    check_progress_reports(MODELS[name])


@pytest.mark.parametrize("name", MODELS)
def test_a_raising_progress_callable_stops_the_run(name: str) -> None:
    with pytest.raises(Enough):
        MODELS[name](progress=stop_at_first_report)


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


def test_a_cut_grouped_run_flags_every_group_with_true_radii() -> None:
    cut = MODELS["minimax_point groups"](time_limit=1e-6)
    assert len(cut) == 4 and not cut.converged.any()
    for k, label in enumerate(cut.labels):
        mine = GROUPS == label
        assert cut.weighted_radius[k] == pytest.approx(
            _largest(cut.location[k], POINTS[mine], WEIGHTS[mine]), rel=1e-9)


@pytest.mark.parametrize("command, label", [(["enclosing-circle"], "geodesic enclosing_circle"),
                                            (["minimax-point", "--by", "zone"], "geodesic minimax_point")])
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
    assert len(out) == (1 if command[0] == "enclosing-circle" else len(np.unique(GROUPS[:2000])))


_CHILD = r"""
import signal, sys, time
import numpy as np
import placewise as pw

# Ctrl-C as a terminal delivers it, whatever the parent left: a job started in the
# background of a shell ignores SIGINT, Python keeps an ignored SIGINT ignored, and a
# blocked one stays blocked across exec.
signal.signal(signal.SIGINT, signal.default_int_handler)
signal.pthread_sigmask(signal.SIG_UNBLOCK, {{signal.SIGINT}})

rng = np.random.default_rng(5)
n = {n}
pts = np.column_stack([rng.uniform(-20, 20, n), rng.uniform(30, 60, n)])
w = rng.uniform(1, 2, n)
groups = rng.integers(0, 3, n)
print("started", flush=True)
try:
    {call}
    print("finished", time.time(), flush=True)
except KeyboardInterrupt:
    print("interrupted", time.time(), flush=True)
"""

CALLS = {
    "minimax_point": (1_600_000, "pw.geodesic.minimax_point(pts, w)"),
    "enclosing_circle groups": (1_500_000, "pw.geodesic.enclosing_circle(pts, groups=groups)"),
    "weber_point groups": (4_000_000, "pw.geodesic.weber_point(pts, w, groups=groups)"),
}


@pytest.mark.parametrize("name", CALLS)
def test_ctrl_c_stops_the_run_promptly(name: str) -> None:
    # SIGINT one second into a run of several seconds: KeyboardInterrupt must reach Python
    # within half a second, while the same run left alone goes on for seconds more.
    n, call = CALLS[name]
    runtime, latency = check_prompt_interrupt(_CHILD.format(n=n, call=call), 1.0)
    print(f"{name}: runs {runtime:.2f} s; Ctrl-C latency {latency:.3f} s")
