"""Tests of placewise.power_cells (power diagrams, Aurenhammer 1987).

Every check names the outside reference it compares with: scipy.spatial.ConvexHull (Qhull) of
the lifted points, shapely (GEOS) Voronoi polygons and areas, exact rational arithmetic and
brute force written here.
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest
import scipy.spatial
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st

import placewise as pw
from placewise.partition import PowerCells, PowerCellSets

L_WITH_HOLE = shapely.Polygon([(-1, -1), (11, -1), (11, 5), (5, 5), (5, 11), (-1, 11)],
                              [[(1, 1), (1, 3), (3, 3), (3, 1)]])


def random_input(seed: int, n: int, spread: float = 4.0) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    return rng.uniform(0, 10, (n, 2)), rng.uniform(-spread, spread, n)


def power_distance(x: np.ndarray, sites: np.ndarray, powers: np.ndarray) -> np.ndarray:
    return ((x[:, None, :] - sites[None, :, :]) ** 2).sum(-1) - powers[None, :]


def exact_lower_hull_conflict(a, b, c, d) -> int:
    """Sign of the lifted orientation (positive: lifted d below the plane of ccw a, b, c),
    in rational arithmetic on the lifted floats."""
    rows = []
    for p in (a, b, c):
        rows.append(tuple(Fraction(float(p[k])) - Fraction(float(d[k])) for k in range(3)))
    (a1, a2, a3), (b1, b2, b3), (c1, c2, c3) = rows
    det = a1 * (b2 * c3 - b3 * c2) - a2 * (b1 * c3 - b3 * c1) + a3 * (b1 * c2 - b2 * c1)
    # orient3d's sign convention: positive when d is below; the determinant above is of
    # (a - d, b - d, c - d), positive when d is below a counter-clockwise (from above) a, b, c.
    return (det > 0) - (det < 0)


def test_triangles_are_the_lower_hull_facets_of_qhull():
    # Reference: scipy.spatial.ConvexHull (Qhull) of the lifted points (x, y, x² + y² − w);
    # the facets whose outward normal points down are the regular triangulation's triangles,
    # and the sites on none of them have empty cells.
    for seed in range(5):
        sites, powers = random_input(seed, 300)
        cells = pw.power_cells(sites, powers, region=[[-50, -50], [60, -50], [60, 60], [-50, 60]])
        lifted = np.c_[sites, (sites ** 2).sum(1) - powers]
        hull = scipy.spatial.ConvexHull(lifted)
        lower = hull.simplices[hull.equations[:, 2] < 0]
        ours = {tuple(sorted(t)) for t in cells.corners.tolist()}
        qhull = {tuple(sorted(t)) for t in lower.tolist()}
        assert ours == qhull
        on_lower = np.zeros(len(sites), bool)
        on_lower[np.unique(lower)] = True
        assert np.array_equal(cells.redundant, ~on_lower)
        assert cells.redundant.any()
        # Adjacency: the triangles across each edge share it (Qhull's neighbours restricted
        # to lower facets give the same pairs).
        for t, row in enumerate(cells.across):
            for k, o in enumerate(row):
                if o >= 0:
                    edge = {cells.corners[t][(k + 1) % 3], cells.corners[t][(k + 2) % 3]}
                    assert edge <= set(cells.corners[o].tolist())


def test_equal_powers_give_the_voronoi_cells_of_placewise_and_shapely():
    # References: placewise.voronoi_cells on the same sites, and shapely.voronoi_polygons
    # (GEOS) intersected with the region; areas by shapely.
    sites, _ = random_input(7, 400)
    cells = pw.power_cells(sites, np.full(len(sites), 2.5), region=L_WITH_HOLE)
    voronoi = pw.voronoi_cells(sites, region=L_WITH_HOLE)
    np.testing.assert_allclose(cells.area, voronoi.area, rtol=1e-9, atol=1e-12)
    polys = shapely.get_parts(shapely.voronoi_polygons(shapely.MultiPoint(sites), extend_to=L_WITH_HOLE.buffer(50),
                                                       ordered=True))
    reference = shapely.area(shapely.intersection(polys, L_WITH_HOLE))
    np.testing.assert_allclose(cells.area, reference, rtol=1e-9, atol=1e-9)
    assert not cells.redundant.any()


def test_cells_tile_the_region_and_samples_fall_in_their_least_power_cell():
    # References: shapely's area of the region; brute force over every site for the least
    # power distance of each sample point; shapely's point-in-polygon.
    sites, powers = random_input(11, 200, spread=6.0)
    cells = pw.power_cells(sites, powers, region=L_WITH_HOLE)
    assert cells.area.sum() == pytest.approx(L_WITH_HOLE.area, rel=1e-9)
    geoms = cells.to_shapely()
    rng = np.random.default_rng(5)
    samples = rng.uniform(-1, 11, (4000, 2))
    d = power_distance(samples, sites, powers)
    best = d.argmin(1)
    margin = np.sort(d, 1)[:, 1] - d.min(1)
    inside_region = shapely.contains_xy(L_WITH_HOLE, samples[:, 0], samples[:, 1])
    clear = margin > 1e-9
    for k in np.flatnonzero(clear):
        assert shapely.contains_xy(geoms[best[k]], *samples[k]) == inside_region[k]
    # Empty cells: exactly the rows with no rings; redundant ones among them.
    assert np.array_equal(cells.empty, cells.area == 0)
    assert np.all(cells.empty[cells.redundant])
    assert cells.redundant.any()


def test_degenerate_inputs():
    box = [[0, 0], [4, 0], [4, 4], [0, 4]]
    # One site: the whole region (closed form: 16).
    assert pw.power_cells([[1, 1]], [3.0], box).area.tolist() == [16.0]
    # Four cocircular sites of equal power: four equal quarters (closed form: 4 each).
    four = pw.power_cells([[3, 2], [2, 3], [1, 2], [2, 1]], [1.0] * 4, box)
    np.testing.assert_allclose(four.area, 4.0, rtol=1e-12)
    # Collinear sites: strips; the middle one redundant when its power is low enough. Closed
    # form: lifted z = x² + 4 − w at x = 1, 2, 3 with w = 0, −1.5, 0 is 5, 9.5, 13 — above
    # the chord (9) at x = 2, so redundant; with w = 3 it is 5 < 9, kept.
    hidden = pw.power_cells([[1, 2], [2, 2], [3, 2]], [0.0, -1.5, 0.0], box)
    assert hidden.redundant.tolist() == [False, True, False]
    assert hidden.area.tolist() == pytest.approx([8.0, 0.0, 8.0])
    kept = pw.power_cells([[1, 2], [2, 2], [3, 2]], [0.0, 3.0, 0.0], box)
    # Closed form: |x − 1|² = |x − 2|² − 3 at x = 0 and |x − 2|² − 3 = |x − 3|² at x = 4, so
    # the middle site holds the whole box; the outer cells are empty in it, not redundant.
    assert not kept.redundant.any()
    assert kept.area.tolist() == pytest.approx([0.0, 16.0, 0.0])
    assert kept.empty.tolist() == [True, False, True]
    # A huge power swallows the region; tiny ones still split it.
    big = pw.power_cells([[1, 1], [3, 3]], [1e12, 0.0], box)
    assert big.area.tolist() == [16.0, 0.0] and big.redundant.tolist() == [False, False]
    tiny = pw.power_cells([[1, 1], [3, 1]], [1e-300, 0.0], box)
    np.testing.assert_allclose(tiny.area, [8.0, 8.0], rtol=1e-12)


def test_refusals_name_the_row():
    with pytest.raises(pw.DegenerateInputError, match=r"sites\[2\] repeats sites\[0\]"):
        pw.power_cells([[0, 0], [1, 0], [0, 0]], [1.0, 2.0, 3.0])
    with pytest.raises(pw.InputError, match=r"powers\[1\] = NaN"):
        pw.power_cells([[0, 0], [1, 0]], [0.0, np.nan])
    with pytest.raises(pw.InputError, match=r"powers\[0\] = inf"):
        pw.power_cells([[0, 0], [1, 0]], [np.inf, 0.0])
    with pytest.raises(pw.InputError, match="powers must have one entry per site"):
        pw.power_cells([[0, 0], [1, 0]], [0.0])


def test_tables_and_plot():
    cells = pw.power_cells([[1, 1], [2, 1], [3, 1]], [4.0, -4.0, 4.0], [[0, 0], [4, 0], [4, 2], [0, 2]])
    assert isinstance(cells, PowerCells) and len(cells) == 3
    frame = cells.to_frame()
    assert list(frame.columns) == ["x", "y", "area_u2", "power_u2", "empty", "redundant", "neighbours"]
    assert frame["neighbours"].tolist() == [1, 0, 1]
    assert cells.neighbours(0).tolist() == [2]
    assert cells.adjacency().toarray().tolist() == [[0, 0, 1], [0, 0, 0], [1, 0, 0]]
    summary = cells.summary()
    assert summary.iloc[0].to_dict() == {"sites": 3, "empty": 1, "redundant": 1, "area_u2": 8.0}
    gdf = cells.to_geodataframe()
    assert gdf.geometry.is_empty.tolist() == [False, True, False]
    import matplotlib

    matplotlib.use("Agg")
    ax = cells.plot()
    assert ax.get_title() == "Power cells of 3 sites"


def test_groups_equal_separate_calls():
    sites, powers = random_input(3, 90)
    labels = np.arange(90) % 3
    sets = pw.power_cells(sites, powers, L_WITH_HOLE, groups=labels)
    assert isinstance(sets, PowerCellSets) and len(sets) == 3
    for label in range(3):
        rows = np.flatnonzero(labels == label)
        alone = pw.power_cells(sites[rows], powers[rows], L_WITH_HOLE)
        np.testing.assert_array_equal(sets.area[rows], alone.area)
        np.testing.assert_array_equal(sets.redundant[rows], alone.redundant)
        np.testing.assert_array_equal(sets[label].edges, alone.edges)
    bad = np.r_[sites[:3], sites[2:3]]
    skipped = pw.power_cells(bad, np.zeros(4), L_WITH_HOLE, groups=[1, 1, 2, 2], errors="skip")
    assert np.isnan(skipped.area[[2, 3]]).all()
    assert "sites[3] repeats sites[2]" in skipped.problem[1]
    assert not np.isnan(skipped.area[[0, 1]]).any()


def test_gis_form():
    gpd = pytest.importorskip("geopandas")
    from placewise import gis

    frame = gpd.GeoDataFrame({"power": [2.0, 0.0, np.nan]}, geometry=gpd.points_from_xy([1, 3, 2], [1, 1, 1]),
                             index=["a", "b", "c"])
    out = gis.power_cells(frame.iloc[:2], "power", shapely.box(0, 0, 4, 2), planar=True)
    # Closed form: the boundary at x = 2.5.
    assert out["area_u2"].round(9).tolist() == [5.0, 3.0]
    with pytest.raises(pw.InputError, match=r"powers\['c'\]|powers\[c\]"):
        gis.power_cells(frame, "power", shapely.box(0, 0, 4, 2), planar=True)


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.tuples(st.integers(-6, 6), st.integers(-6, 6), st.integers(-30, 30)), min_size=1, max_size=40),
    st.sampled_from([1.0, 2.0**-30, 2.0**30]),
)
def test_property_regular_and_tiling(raw, scale):
    # Integer grids (collinear, cocircular, equal powers) at tiny and huge scales. References:
    # exact rational lower-hull test written here (no lifted site below a triangle), the
    # region's area (closed form), brute force for which sites have empty cells.
    seen, rows = set(), []
    for x, y, w in raw:
        if (x, y) not in seen:
            seen.add((x, y))
            rows.append((x, y, w))
    sites = np.array([(x * scale, y * scale) for x, y, _ in rows], dtype=float)
    powers = np.array([w * scale * scale for _, _, w in rows], dtype=float)
    box = np.array([[-8, -8], [8, -8], [8, 8], [-8, 8]], dtype=float) * scale
    cells = pw.power_cells(sites, powers, box)
    assert cells.area.sum() == pytest.approx(256 * scale * scale, rel=1e-9)
    lifted = np.c_[sites, (sites ** 2).sum(1) - powers]
    for t in cells.corners:
        for q in range(len(sites)):
            assert exact_lower_hull_conflict(*lifted[t], lifted[q]) <= 0
    assert np.all(cells.area[cells.redundant] == 0)


@settings(max_examples=40, deadline=None)
@given(st.integers(0, 2**32 - 1), st.floats(1e-6, 1e6))
def test_property_random_powers_match_brute_force(seed, spread):
    # Reference: brute force least power distance at sample points, shapely point-in-polygon.
    rng = np.random.default_rng(seed)
    sites = rng.uniform(0, 10, (30, 2))
    powers = rng.uniform(-spread, spread, 30)
    cells = pw.power_cells(sites, powers, [[0, 0], [10, 0], [10, 10], [0, 10]])
    assert cells.area.sum() == pytest.approx(100.0, rel=1e-9)
    samples = rng.uniform(0, 10, (200, 2))
    d = power_distance(samples, sites, powers)
    margin = np.sort(d, 1)[:, 1] - d.min(1)
    geoms = cells.to_shapely()
    for k in np.flatnonzero(margin > 1e-7 * max(1.0, spread)):
        assert shapely.contains_xy(geoms[d[k].argmin()], *samples[k])


@pytest.mark.parametrize("bad", [np.nan, np.inf, -np.inf])
def test_property_non_finite_power_is_named(bad):
    powers = np.zeros(5)
    powers[3] = bad
    with pytest.raises(pw.InputError, match=r"powers\[3\]"):
        pw.power_cells(np.arange(10.0).reshape(5, 2) * [1, 0.5], powers)
