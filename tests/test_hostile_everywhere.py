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
