"""Every result object draws itself: ``.plot(ax=None, **style)`` on matplotlib axes."""

from __future__ import annotations

import dataclasses

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
    "capacity_allocation": [lambda f: f(PTS, PTS[:4], [20.0, 20.0, 20.0, 20.0], W)],
    "capacitated_p_median": [lambda f: f(PTS, 3, [30.0, 30.0, 30.0], W)],
    "power_cells": [lambda f: f(PTS[:12], RNG.uniform(0, 0.1, 12)),
                    lambda f: f(PTS[:12], RNG.uniform(0, 0.1, 12), groups=LABELS[14:26])],
    "capacity_cells": [lambda f: f(PTS, PTS[:4], [20.0, 20.0, 20.0, 20.0], W)],
}
CASES = [(name, k) for name, calls in CALLS.items() for k in range(len(calls))]


@pytest.mark.parametrize("name,k", CASES, ids=[f"{n}-{'grouped' if k else 'single'}" for n, k in CASES])
def test_every_plot_is_dressed(name, k):
    # Title, axis labels with the result's unit and a legend, read back from a rendered figure.
    result = dataclasses.replace(CALLS[name][k](getattr(pw, name)), unit="ft")
    fig, ax = plt.subplots()
    try:
        result.plot(ax)
        fig.canvas.draw()
        assert ax.get_title()
        assert ax.get_xlabel().startswith("x") and ax.get_xlabel().endswith("(ft)")
        assert ax.get_ylabel().startswith("y") and ax.get_ylabel().endswith("(ft)")
        legend = ax.get_legend()
        assert legend is not None and [t.get_text() for t in legend.get_texts()]
        plt.close(fig)
        fig, ax = plt.subplots()
        CALLS[name][k](getattr(pw, name)).plot(ax)  # the default unit: the input's own
        fig.canvas.draw()
        assert ax.get_xlabel() == "x (coordinate units)"
    finally:
        plt.close("all")


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


def _pixel(fig, ax, xy):
    """The rendered RGB colour at data point ``xy`` (Agg canvas, top row first)."""
    image = np.asarray(fig.canvas.buffer_rgba())[..., :3]
    px, py = ax.transData.transform(xy)
    return tuple(image[int(round(image.shape[0] - py)), int(round(px))])


@pytest.mark.parametrize("p", [10, 30])
def test_every_site_has_its_own_colour(p):
    # Read the rendered image at every site: as many distinct colours as sites.
    rng = np.random.default_rng(5)
    pts = rng.uniform(0, 100, size=(600, 2))
    plan = pw.p_median(pts, p, seed=1)
    fig, ax = plt.subplots(figsize=(9, 9), dpi=100)
    try:
        plan.plot(ax)
        fig.canvas.draw()
        colours = {_pixel(fig, ax, site) for site in plan.sites}
        assert len(colours) == p
    finally:
        plt.close("all")


def _srgb_to_lab(hex_colour):
    """CIE 1976 L*a*b* (D65) of an sRGB colour, from the published formulas (IEC 61966-2-1,
    CIE 15), written here independently of the library's Oklab code."""
    rgb = np.array(matplotlib.colors.to_rgb(hex_colour))
    linear = np.where(rgb <= 0.04045, rgb / 12.92, ((rgb + 0.055) / 1.055) ** 2.4)
    xyz = np.array([[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722], [0.0193, 0.1192, 0.9505]]) @ linear
    t = xyz / np.array([0.95047, 1.0, 1.08883])
    f = np.where(t > (6 / 29) ** 3, np.cbrt(t), t / (3 * (6 / 29) ** 2) + 4 / 29)
    return np.array([116 * f[1] - 16, 500 * (f[0] - f[1]), 200 * (f[1] - f[2])])


def test_site_colours_are_far_apart():
    from placewise.plotting import site_colours

    lab = np.array([_srgb_to_lab(c) for c in site_colours(12)])
    gaps = np.linalg.norm(lab[:, None] - lab[None], axis=-1)[np.triu_indices(12, 1)]
    assert gaps.min() > 10  # CIE76 colour difference: about 2.3 is a just-noticeable one
    assert len(set(site_colours(200))) == 200  # no cycling, however many sites
    assert site_colours(5) == site_colours(30)[:5]  # a site keeps its colour whatever the count


@pytest.mark.parametrize("size", [(6.4, 4.8), (4.0, 3.0)])
@pytest.mark.parametrize("spread", [300.0, 3_000.0, 80_000.0])
def test_tick_labels_do_not_overlap_at_projected_scale(size, spread):
    # Projected metres (northings near 6,000,000): rendered tick label boxes must not touch.
    rng = np.random.default_rng(2)
    pts = rng.normal(size=(200, 2)) * spread + [512_345.0, 6_012_345.0]
    tree = dataclasses.replace(pw.spanning_tree(pts), unit="m")
    fig, ax = plt.subplots(figsize=size, dpi=100)
    try:
        tree.plot(ax)
        fig.canvas.draw()
        renderer = fig.canvas.get_renderer()
        for axis in (ax.xaxis, ax.yaxis):
            low, high = sorted(axis.get_view_interval())
            boxes = [t.label1.get_window_extent(renderer) for t in axis.get_major_ticks()
                     if low <= t.get_loc() <= high and t.label1.get_text()]
            assert len(boxes) >= 2
            boxes.sort(key=lambda b: (b.x0, b.y0))
            for a, b in zip(boxes, boxes[1:]):
                assert not a.overlaps(b), (axis.axis_name, axis.get_label_text())
            assert all(len(t.label1.get_text()) <= 7 for t in axis.get_major_ticks())
        # The label says what the short numbers mean: the unit and, when shifted, the origin.
        assert "km" in ax.get_xlabel() if spread > 2_000 else "(m)" in ax.get_xlabel()
        assert "\N{MINUS SIGN}" in ax.get_ylabel()  # northings shown from a stated origin
    finally:
        plt.close("all")


def test_ticks_read_the_right_coordinates():
    # A tick's text, read with the origin and unit from the label, gives back its location.
    fig, ax = plt.subplots()
    try:
        dataclasses.replace(pw.spanning_tree([[500_000, 6_000_000], [501_000, 6_000_400]]), unit="m").plot(ax)
        fig.canvas.draw()
        for axis in (ax.xaxis, ax.yaxis):
            label = axis.get_label_text()
            shifted = "\N{MINUS SIGN} " in label
            origin = float(label.split("\N{MINUS SIGN}")[1].split("(")[0].replace(",", "")) if shifted else 0.0
            assert shifted or axis is ax.xaxis  # northings near 6,000,000 are always shifted
            scale = 1000.0 if "(km)" in label else 1.0
            for tick in axis.get_major_ticks():
                text = tick.label1.get_text().replace(",", "").replace("\N{MINUS SIGN}", "-")
                if text:
                    assert (float(text) + origin) * scale == pytest.approx(tick.get_loc(), abs=1e-6 * scale)
    finally:
        plt.close("all")


def test_fixed_sites_are_drawn_above_the_points():
    # Demand points sit exactly on the fixed site: the rendered pixel there is the fixed
    # site's white face, not a point's colour.
    pts = np.vstack([np.full((50, 2), 5.0), np.random.default_rng(0).uniform(0, 10, size=(50, 2))])
    plan = pw.p_median(pts, 2, fixed=[[5.0, 5.0]], seed=0)
    fig, ax = plt.subplots(dpi=100)
    try:
        plan.plot(ax)
        fig.canvas.draw()
        assert _pixel(fig, ax, (5.0, 5.0)) == (255, 255, 255)
        labels = [t.get_text() for t in ax.get_legend().get_texts()]
        assert "fixed sites" in labels and "new sites" in labels
    finally:
        plt.close("all")


@pytest.mark.parametrize("name", ["weber_point", "minimax_point", "enclosing_circle", "enclosing_ellipse"])
def test_results_without_points_draw_them_when_given(name):
    # The demand is the context: the view covers every point passed in, and the legend says so.
    result = getattr(pw, name)(PTS)
    fig, ax = plt.subplots()
    try:
        result.plot(ax, points=PTS)
        fig.canvas.draw()
        (x0, x1), (y0, y1) = sorted(ax.get_xlim()), sorted(ax.get_ylim())
        assert x0 <= PTS[:, 0].min() and x1 >= PTS[:, 0].max() and y0 <= PTS[:, 1].min() and y1 >= PTS[:, 1].max()
        assert "demand points" in [t.get_text() for t in ax.get_legend().get_texts()]
    finally:
        plt.close("all")


def test_a_lone_site_is_framed():
    # Without points a single site still gets finite, non-degenerate axes around it.
    fig, ax = plt.subplots()
    try:
        pw.weber_point([[6_000_000.0, 10.0]]).plot(ax)
        (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
        assert x0 < 6_000_000.0 < x1 and y0 < 10.0 < y1 and x1 - x0 >= 2
    finally:
        plt.close("all")
