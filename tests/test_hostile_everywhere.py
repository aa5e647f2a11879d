"""One hostile-input suite over every public kernel.

Every public function, given any entry of the shared catalogue (tests/hostile.py) or any
array hypothesis can draw — NaN, ±inf, empty, wrong shapes and dtypes, non-contiguous and
Fortran-ordered arrays, huge and tiny scales, far offsets, duplicates, collinear and
cocircular sets — returns an answer or raises ``placewise.InputError``: never another
exception, never a crash.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import array_shapes, arrays

import placewise as pw
from hostile import AWKWARD_POINTS, BAD_POINTS, BAD_WEIGHTS

SITES = np.array([[0.0, 0.0], [3.0, 1.0], [-2.0, 2.0]])
# A feasible region beside the catalogue's clouds: an L-shaped lot (non-convex).
LOT = [[1.0, 1.0], [4.0, 1.0], [4.0, 2.0], [2.0, 2.0], [2.0, 4.0], [1.0, 4.0]]
# A square holding most of the catalogue's clouds, for candidates filtered by a region.
WIDE = [[-1e6, -1e6], [1e6, -1e6], [1e6, 1e6], [-1e6, 1e6]]

# name -> how to call it with a points argument (and, where it takes them, weights)
KERNELS: dict[str, Callable[..., Any]] = {
    "weber_point": lambda p, w=None: pw.weber_point(p, w),
    "weber_point(manhattan)": lambda p, w=None: pw.weber_point(p, w, metric="manhattan"),
    "enclosing_circle": lambda p, w=None: pw.enclosing_circle(p),
    "minimax_point": lambda p, w=None: pw.minimax_point(p, w),
    "enclosing_ellipse": lambda p, w=None: pw.enclosing_ellipse(p),
    "delaunay": lambda p, w=None: pw.delaunay(p),
    "voronoi_cells": lambda p, w=None: pw.voronoi_cells(p),
    "power_cells": lambda p, w=None: pw.power_cells(p, np.zeros(len(p) if hasattr(p, "__len__") else 0)),
    "nearest_site": lambda p, w=None: pw.nearest_site(p, SITES, w),
    "nearest_site(sites)": lambda p, w=None: pw.nearest_site(SITES, p),
    "spanning_tree": lambda p, w=None: pw.spanning_tree(p),
    "steiner_tree": lambda p, w=None: pw.steiner_tree(p),
    "p_median": lambda p, w=None: pw.p_median(p, 2, w),
    "p_center": lambda p, w=None: pw.p_center(p, 2, w),
    "weber_point(region)": lambda p, w=None: pw.weber_point(p, w, region=LOT),
    "minimax_point(region)": lambda p, w=None: pw.minimax_point(p, w, region=LOT),
    "p_median(region)": lambda p, w=None: pw.p_median(p, 2, w, region=LOT, effort="fast"),
    "p_center(region)": lambda p, w=None: pw.p_center(p, 2, w, region=LOT),
    # Longitude/latitude kernels (placewise.geodesic): out-of-range degrees are InputErrors too.
    "geodesic.weber_point": lambda p, w=None: pw.geodesic.weber_point(p, w),
    "geodesic.minimax_point": lambda p, w=None: pw.geodesic.minimax_point(p, w),
    "geodesic.enclosing_circle": lambda p, w=None: pw.geodesic.enclosing_circle(p),
    "geodesic.nearest_site": lambda p, w=None: pw.geodesic.nearest_site(p, SITES, w),
    "geodesic.nearest_site(sites)": lambda p, w=None: pw.geodesic.nearest_site(SITES, p),
    "geodesic.path_length": lambda p, w=None: pw.geodesic.path_length(p),
    "geodesic.ring_area": lambda p, w=None: pw.geodesic.ring_area(p),
    "geodesic.distance": lambda p, w=None: pw.geodesic.distance(p, p),
    "geodesic.delaunay": lambda p, w=None: pw.geodesic.delaunay(p),
    "geodesic.voronoi_cells": lambda p, w=None: pw.geodesic.voronoi_cells(p),
    "geodesic.spanning_tree": lambda p, w=None: pw.geodesic.spanning_tree(p),
    "capacity_allocation": lambda p, w=None: pw.capacity_allocation(p, SITES, [1e9, 1e9, 1e9], w),
    "capacity_allocation(sites)": lambda p, w=None: pw.capacity_allocation(SITES, p, np.full(len(p), 10.0)),
    "capacitated_p_median": lambda p, w=None: pw.capacitated_p_median(p, 2, [1e9, 1e9], w),
    "capacity_cells": lambda p, w=None: pw.capacity_cells(p, SITES, [1e9, 1e9, 1e9], w),
    "capacity_cells(balanced)": lambda p, w=None: pw.capacity_cells(
        p, SITES, np.full(3, np.sum(np.ones(len(p)) if w is None else w) / 3), w),
    "capacity_cells(sites)": lambda p, w=None: pw.capacity_cells(SITES, p, np.full(len(p), 10.0)),
    "p_median(candidates)": lambda p, w=None: pw.p_median(p, 2, w, candidates=p),
    # Candidates filtered by a region are checked as those without one (they once were not).
    "p_median(candidates, region)": lambda p, w=None: pw.p_median(SITES, 1, candidates=p, region=WIDE),
    "p_center(candidates, region)": lambda p, w=None: pw.p_center(SITES, 1, candidates=p, region=WIDE),
    "cover_all": lambda p, w=None: pw.cover_all(p, 2.0, weights=w, candidates=p),
    "cover_all(candidates)": lambda p, w=None: pw.cover_all(SITES, 50.0, candidates=p),
    "cover_most": lambda p, w=None: pw.cover_most(p, 2, 2.0, w, candidates=p),
    "evaluate_sites": lambda p, w=None: pw.evaluate_sites(p, SITES, w, radius=2.0),
    "evaluate_sites(sites)": lambda p, w=None: pw.evaluate_sites(SITES, p),
}
WEIGHTED = {"weber_point", "weber_point(manhattan)", "minimax_point", "nearest_site", "p_median", "p_center",
            "weber_point(region)", "minimax_point(region)", "p_median(region)", "p_center(region)",
            "geodesic.weber_point", "geodesic.minimax_point", "geodesic.nearest_site",
            "capacity_allocation", "capacitated_p_median", "capacity_cells", "capacity_cells(balanced)",
            "p_median(candidates)", "cover_all", "cover_most", "evaluate_sites"}


NAMES = list(KERNELS)


def test_every_public_kernel_is_in_the_catalogue() -> None:
    # A renamed or removed kernel fails here instead of silently dropping out of the suite.
    public = {name for name in pw.__all__ if callable(getattr(pw, name)) and name[0].islower()}
    public -= {"set_threads", "thread_count"}
    geodesic = {f"geodesic.{name}" for name in pw.geodesic.__all__
                if callable(getattr(pw.geodesic, name)) and name[0].islower()}
    geodesic -= {"geodesic.circle_polygon"}  # takes a centre and a radius, not a point set
    geodesic -= {"geodesic.lonlat_polygon"}  # draws one ring, no kernel
    assert public | geodesic == {n.split("(")[0] for n in KERNELS}


@pytest.mark.parametrize("kernel", NAMES)
@pytest.mark.parametrize("case, points", BAD_POINTS, ids=[n for n, _ in BAD_POINTS])
def test_bad_points_raise_input_error(kernel: str, case: str, points: Any) -> None:
    with pytest.raises(pw.InputError) as caught:
        KERNELS[kernel](points)
    well_written(caught.value)


def well_written(error: Exception) -> None:
    """A message reads as written: no run of spaces from a broken line continuation, no
    blank start or end."""
    text = str(error)
    assert text == text.strip() and "  " not in text, repr(text)


@pytest.mark.parametrize("kernel", NAMES)
@pytest.mark.parametrize("case, points", AWKWARD_POINTS, ids=[n for n, _ in AWKWARD_POINTS])
def test_awkward_points_answer_or_input_error(kernel: str, case: str, points: Any) -> None:
    try:
        result = KERNELS[kernel](points)
    except pw.InputError as error:
        well_written(error)
        return
    assert result is not None
    repr(result)  # every result prints


@pytest.mark.parametrize("kernel", [n for n in NAMES if n in WEIGHTED])
@pytest.mark.parametrize("case, make", BAD_WEIGHTS, ids=[n for n, _ in BAD_WEIGHTS])
def test_bad_weights_raise_input_error(kernel: str, case: str, make: Callable[[int], np.ndarray]) -> None:
    pts = np.random.default_rng(1).normal(size=(8, 2))
    with pytest.raises(pw.InputError) as caught:
        KERNELS[kernel](pts, make(8))
    well_written(caught.value)


hostile_floats = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True),
    st.floats(-1e12, 1e12),
    st.sampled_from([0.0, -0.0, 1e-300, 5e-324, 1e300, 6_000_000.0]),
)
hostile_arrays = st.one_of(
    arrays(np.float64, array_shapes(min_dims=1, max_dims=3, min_side=0, max_side=12), elements=hostile_floats),
    arrays(np.float64, st.tuples(st.integers(0, 30), st.just(2)), elements=hostile_floats),
    arrays(np.int64, st.tuples(st.integers(0, 30), st.just(2)), elements=st.integers(-(2**40), 2**40)),
    arrays(np.float32, st.tuples(st.integers(0, 30), st.just(2)), elements=st.floats(-1e6, 1e6, width=32)),
    arrays(np.float64, st.tuples(st.integers(0, 30), st.just(2)), elements=st.sampled_from([0.0, 1.0, 2.0])),
)


@pytest.mark.parametrize("kernel", NAMES)
@settings(max_examples=40)
@given(points=hostile_arrays, fortran=st.booleans())
def test_property_never_anything_but_answer_or_input_error(kernel: str, points: np.ndarray, fortran: bool) -> None:
    if fortran and points.ndim == 2:
        points = np.asfortranarray(points)
    try:
        KERNELS[kernel](points)
    except pw.InputError as error:
        well_written(error)


# Every function that takes ``errors=`` (found by its signature, so a new one joins) refuses
# anything but the two documented values, with or without groups: a misspelt value passed
# unnoticed on the ungrouped path until the data gained groups.
def _takes_errors() -> list[tuple[str, Callable[..., Any]]]:
    import inspect

    from placewise import gis

    found = []
    for module in (pw, pw.geodesic, gis):
        for name in module.__all__:
            f = getattr(module, name)
            if callable(f) and name[0].islower() and "errors" in inspect.signature(f).parameters:
                found.append((f"{module.__name__}.{name}", f))
    return found


@pytest.mark.parametrize("name, function", _takes_errors(), ids=[n for n, _ in _takes_errors()])
@pytest.mark.parametrize("errors", ["ignore", "Skip", None, 1])
def test_errors_other_than_raise_or_skip_are_refused_without_groups(name: str, function: Callable[..., Any],
                                                                     errors: Any) -> None:
    gpd = pytest.importorskip("geopandas")
    points = np.array([[0.0, 0.0], [3.0, 1.0], [1.0, 4.0], [2.0, 2.0], [5.0, 3.0]])
    if name.startswith("placewise.gis."):
        frame = gpd.GeoDataFrame({"power": np.zeros(5)}, geometry=gpd.points_from_xy(*points.T))
        first = {"power_cells": (frame, "power"), "nearest_site": (frame, frame.iloc[:2])}
        args: tuple[Any, ...] = first.get(name.rsplit(".", 1)[1], (frame,))
        options: dict[str, Any] = {"planar": True}
    else:
        if name.startswith("placewise.geodesic."):
            points = points + [10.0, 50.0]
        first = {"power_cells": (points, np.zeros(5)), "nearest_site": (points, points[:2])}
        args = first.get(name.rsplit(".", 1)[1], (points,))
        options = {}
    if name.rsplit(".", 1)[1] in ("p_median", "p_center"):
        args = (*args, 2)
    with pytest.raises(pw.InputError, match='errors must be "raise" or "skip"'):
        function(*args, errors=errors, **options)


# --- group labels beyond int64 -------------------------------------------------------------

LABEL_POINTS = np.random.default_rng(22).random((12, 2))
LABEL_LONLAT = LABEL_POINTS * [2.0, 1.0] + [9.5, 60.0]
#: A 64-bit hashed id beyond int64 (numpy: a valid uint64, above np.iinfo(np.int64).max).
BIG = 2**63 + 5
BIG_GROUPS = np.array([BIG] * 6 + [1] * 6, dtype=np.uint64)
SMALL_GROUPS = np.array([7] * 6 + [1] * 6, dtype=np.uint64)
GROUPED: dict[str, Callable[[np.ndarray], Any]] = {
    "spanning_tree": lambda g: pw.spanning_tree(LABEL_POINTS, groups=g),
    "steiner_tree": lambda g: pw.steiner_tree(LABEL_POINTS, groups=g),
    "delaunay": lambda g: pw.delaunay(LABEL_POINTS, groups=g),
    "voronoi_cells": lambda g: pw.voronoi_cells(LABEL_POINTS, groups=g),
    "power_cells": lambda g: pw.power_cells(LABEL_POINTS, np.zeros(12), groups=g),
    "nearest_site": lambda g: pw.nearest_site(LABEL_POINTS, LABEL_POINTS[[0, 7]], groups=g,
                                              site_groups=g[[0, 7]]),
    "weber_point": lambda g: pw.weber_point(LABEL_POINTS, groups=g),
    "enclosing_circle": lambda g: pw.enclosing_circle(LABEL_POINTS, groups=g),
    "minimax_point": lambda g: pw.minimax_point(LABEL_POINTS, groups=g),
    "enclosing_ellipse": lambda g: pw.enclosing_ellipse(LABEL_POINTS, groups=g),
    "p_median": lambda g: pw.p_median(LABEL_POINTS, 1, groups=g),
    "p_center": lambda g: pw.p_center(LABEL_POINTS, 1, groups=g),
    "geodesic.weber_point": lambda g: pw.geodesic.weber_point(LABEL_LONLAT, groups=g),
    "geodesic.enclosing_circle": lambda g: pw.geodesic.enclosing_circle(LABEL_LONLAT, groups=g),
    "geodesic.minimax_point": lambda g: pw.geodesic.minimax_point(LABEL_LONLAT, groups=g),
    "geodesic.nearest_site": lambda g: pw.geodesic.nearest_site(LABEL_LONLAT, LABEL_LONLAT[[0, 7]], groups=g,
                                                                site_groups=g[[0, 7]]),
}


@pytest.mark.parametrize("name", GROUPED)
def test_uint64_labels_beyond_int64_are_refused_by_value(name: str) -> None:
    # Such labels were wrapped to negative int64 labels (2**63 + 5 -> -9223372036854775803):
    # results then named groups the caller never gave, and indexing by the real label failed.
    assert BIG > np.iinfo(np.int64).max  # numpy: no int64 holds it
    with pytest.raises(pw.InputError, match=rf"groups\[0\] is {BIG}, above the largest int64 label") as e:
        GROUPED[name](BIG_GROUPS)
    assert e.value.argument == "groups"
    # uint64 labels within int64 keep their values (reference: numpy.unique of the labels).
    result = GROUPED[name](SMALL_GROUPS)
    assert np.array_equal(np.asarray(result.labels), np.unique(SMALL_GROUPS).astype(np.int64))


@pytest.mark.parametrize("solve", ["nearest_site", "geodesic.nearest_site"])
def test_uint64_site_labels_beyond_int64_are_refused_by_value(solve: str) -> None:
    sites = (LABEL_POINTS if solve == "nearest_site" else LABEL_LONLAT)[[0, 7]]
    points = LABEL_POINTS if solve == "nearest_site" else LABEL_LONLAT
    fn = pw.nearest_site if solve == "nearest_site" else pw.geodesic.nearest_site
    site_groups = np.array([1, 2**64 - 1], dtype=np.uint64)  # wrapped to [1, -1] before
    with pytest.raises(pw.InputError, match=rf"site_groups\[1\] is {2**64 - 1}") as e:
        fn(points, sites, groups=np.ones(12, dtype=np.uint64), site_groups=site_groups)
    assert e.value.argument == "site_groups"


def test_uint64_fixed_labels_beyond_int64_are_refused_by_value() -> None:
    fixed_groups = np.array([2**63], dtype=np.uint64)  # wrapped to -2**63 before
    with pytest.raises(pw.InputError, match=rf"fixed_groups\[0\] is {2**63}") as e:
        pw.p_median(LABEL_POINTS, 1, groups=SMALL_GROUPS, fixed=LABEL_POINTS[:1], fixed_groups=fixed_groups)
    assert e.value.argument == "fixed_groups"
