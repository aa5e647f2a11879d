"""Every result object draws itself: ``.plot(ax=None, **style)`` on matplotlib axes."""

from __future__ import annotations

import numpy as np
import pytest

matplotlib = pytest.importorskip("matplotlib")
matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402

import placewise as pw  # noqa: E402

RNG = np.random.default_rng(11)
PTS = RNG.normal(size=(40, 2))
W = RNG.uniform(1, 2, size=40)
LABELS = np.repeat([3, 8], 20)

# (public function, call on a small cloud); grouped forms where the function takes groups=.
CALLS = {
    "weber_point": [lambda f: f(PTS, W), lambda f: f(PTS, W, groups=LABELS)],
    "minimax_point": [lambda f: f(PTS, W), lambda f: f(PTS, W, groups=LABELS)],
    "enclosing_circle": [lambda f: f(PTS), lambda f: f(PTS, groups=LABELS)],
    "enclosing_ellipse": [lambda f: f(PTS), lambda f: f(PTS, groups=LABELS)],
    "delaunay": [lambda f: f(PTS), lambda f: f(PTS, groups=LABELS)],
    "voronoi_cells": [lambda f: f(PTS[:12]), lambda f: f(PTS[:12], groups=LABELS[14:26])],
    "nearest_site": [lambda f: f(PTS, PTS[:4], W),
                     lambda f: f(PTS, PTS[18:22], W, groups=LABELS, site_groups=LABELS[18:22])],
    "spanning_tree": [lambda f: f(PTS), lambda f: f(PTS, groups=LABELS)],
    "steiner_tree": [lambda f: f(PTS[:8]), lambda f: f(PTS[:16], groups=LABELS[12:28])],
    "p_median": [lambda f: f(PTS, 3, W), lambda f: f(PTS, 3, W, groups=LABELS)],
    "p_center": [lambda f: f(PTS, 3, W), lambda f: f(PTS, 3, W, groups=LABELS)],
}
CASES = [(name, k) for name, calls in CALLS.items() for k in range(len(calls))]


@pytest.mark.parametrize("name,k", CASES, ids=[f"{n}-{'grouped' if k else 'single'}" for n, k in CASES])
def test_result_plots_itself(name, k):
    result = CALLS[name][k](getattr(pw, name))
    fig, ax = plt.subplots()
    try:
        assert result.plot(ax) is ax
        assert ax.has_data() or ax.patches or ax.collections or ax.lines
        new_ax = result.plot()  # new axes when none are given
        assert new_ax is not ax and (new_ax.has_data() or new_ax.patches or new_ax.collections)
        styled = result.plot(ax, alpha=0.5)  # style keywords reach matplotlib
        assert styled is ax
    finally:
        plt.close("all")


def test_every_public_result_type_is_covered():
    from placewise._results import Result

    public = {n for n in pw.__all__ if isinstance(getattr(pw, n), type) and issubclass(getattr(pw, n), Result)}
    produced = set()
    for name, calls in CALLS.items():
        for call in calls:
            produced.add(type(call(getattr(pw, name))).__name__)
    assert public <= produced, public - produced


def test_allocation_plot_takes_a_single_colour():
    # A caller's colour replaces the per-site colours instead of clashing with them.
    allocation = pw.nearest_site(PTS, PTS[:4], W)
    fig, ax = plt.subplots()
    try:
        allocation.plot(ax, color="grey")
        points = ax.collections[0]
        assert np.allclose(points.get_facecolor()[:, :3], matplotlib.colors.to_rgb("grey"))
    finally:
        plt.close("all")
