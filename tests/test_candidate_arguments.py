"""Arguments of the models that choose among candidate sites: candidate indices (``fixed``,
``sites``), candidates filtered by a region, options that do not apply with candidates, and
the cost unit. Each was once taken silently in a wrong sense; each is now an answer checked
against an outside reference or a refusal naming the argument (and the row).

References: brute force over every choice of sites (``itertools.combinations`` on distances
from ``numpy.hypot``), shapely's ``covers`` for the region, numpy's own reading of the
argument (``ndim``, ``dtype.kind``, ``isfinite``) and the Python language's rule that a
keyword a function does not take is a ``TypeError``.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import array_shapes, arrays

import placewise as pw
from placewise import discrete

shapely = pytest.importorskip("shapely")

LINE = [[0.0, 0.0], [1.0, 0.0], [10.0, 0.0], [11.0, 0.0]]
PAIRS = [[0.5, 0.0], [10.5, 0.0], [5.0, 5.0]]
BOX = shapely.box(-1, -1, 12, 6)


def distances(points, candidates) -> np.ndarray:
    a, c = np.asarray(points, dtype=float), np.asarray(candidates, dtype=float)
    return np.hypot(a[:, None, 0] - c[None, :, 0], a[:, None, 1] - c[None, :, 1])


def brute(points, candidates, p, fixed=(), allowed=None, objective="median") -> float:
    """Best objective over every ``p`` of the allowed candidates beside ``fixed`` (brute force)."""
    d = distances(points, candidates)
    allowed = [j for j in (range(len(candidates)) if allowed is None else allowed) if j not in fixed]
    best = np.inf
    for chosen in itertools.combinations(allowed, p):
        near = d[:, [*fixed, *chosen]].min(axis=1)
        best = min(best, near.sum() if objective == "median" else near.max())
    return float(best)


# ------------------------------------------------------------------ candidate indices


def candidate_calls(fixed):
    """Every model given ``fixed`` as candidate indices (a cost matrix or coordinates)."""
    costs = distances(LINE, PAIRS)
    return {
        "discrete.p_median": lambda: discrete.p_median(costs, 1, fixed=fixed),
        "discrete.p_center": lambda: discrete.p_center(costs, 1, fixed=fixed),
        "discrete.cover_all": lambda: discrete.cover_all(costs, 20.0, fixed=fixed),
        "discrete.cover_most": lambda: discrete.cover_most(costs, 1, 20.0, fixed=fixed),
        "discrete.evaluate_sites": lambda: discrete.evaluate_sites(costs, fixed),
        "p_median": lambda: pw.p_median(LINE, 1, candidates=PAIRS, fixed=fixed),
        "p_center": lambda: pw.p_center(LINE, 1, candidates=PAIRS, fixed=fixed),
        "p_median(region)": lambda: pw.p_median(LINE, 1, candidates=PAIRS, fixed=fixed, region=BOX),
        "p_center(region)": lambda: pw.p_center(LINE, 1, candidates=PAIRS, fixed=fixed, region=BOX),
        "cover_all": lambda: pw.cover_all(LINE, 20.0, candidates=PAIRS, fixed=fixed),
        "cover_most": lambda: pw.cover_most(LINE, 1, 20.0, candidates=PAIRS, fixed=fixed),
    }


NAMES = list(candidate_calls(None))


@pytest.mark.parametrize("name", NAMES)
def test_coordinates_given_as_fixed_are_refused_not_read_as_indices(name):
    # (1, 0) read row by row was candidates 1 and 0: two existing sites nobody named.
    # Reference: numpy reads [[1, 0]] as ndim 2, shape (1, 2).
    assert np.asarray([[1, 0]]).shape == (1, 2)
    argument = "sites" if name == "discrete.evaluate_sites" else "fixed"
    with pytest.raises(pw.InputError, match=rf"^{argument} must be a one-dimensional sequence of candidate "
                                            r"indices; got shape \(1, 2\); .*not coordinates") as caught:
        candidate_calls([[1, 0]])[name]()
    assert caught.value.argument == argument


@pytest.mark.parametrize("name", NAMES)
@pytest.mark.parametrize(
    ("value", "words"),
    [
        ([True], "dtype bool"),
        ([1.7], r"dtype float64 \((fixed|sites)\[0\] = 1.7\)"),
        ([1.0], "dtype float64"),
        (["1"], "dtype <U1"),
        ([1, None], "dtype object"),
        (np.ones((2, 2, 2), dtype=int), r"shape \(2, 2, 2\)"),
        (1, "a single value"),
    ],
    ids=["bool", "fraction", "whole float", "text", "None inside", "3-D", "scalar"],
)
def test_candidate_indices_that_are_not_integers_are_refused(name, value, words):
    # Reference: numpy's dtype.kind of the value is not "i"/"u", or its ndim is not 1.
    array = np.asarray(value)
    assert array.dtype.kind not in "iu" or array.ndim != 1
    argument = "sites" if name == "discrete.evaluate_sites" else "fixed"
    with pytest.raises(pw.InputError, match=words) as caught:
        candidate_calls(value)[name]()
    assert caught.value.argument == argument


@pytest.mark.parametrize("name", [n for n in NAMES if n != "discrete.evaluate_sites"])
def test_empty_fixed_of_any_shape_is_none(name):
    # An empty (0, 2) array (no existing sites, written as coordinates) is the same as none.
    # Reference: the same call without fixed.
    import dataclasses

    def fields(plan):
        return {k: v for k, v in dataclasses.asdict(plan).items() if isinstance(v, (np.ndarray, float, int))}

    with_empty, without = fields(candidate_calls(np.empty((0, 2)))[name]()), fields(candidate_calls(None)[name]())
    assert with_empty.keys() == without.keys()
    for key in without:
        np.testing.assert_array_equal(with_empty[key], without[key], err_msg=key)


def test_fixed_candidate_indices_give_the_brute_force_plan():
    # Reference: brute force over the candidates beside the fixed one (itertools).
    plan = pw.p_median(LINE, 1, candidates=PAIRS, fixed=[1])
    assert plan.total_cost == pytest.approx(brute(LINE, PAIRS, 1, fixed=(1,)))
    assert plan.open.tolist() == [0, 1] and plan.fixed.tolist() == [False, True]
    center = pw.p_center(LINE, 1, candidates=PAIRS, fixed=np.array([1], dtype=np.uint8))
    assert center.worst_cost == pytest.approx(brute(LINE, PAIRS, 1, fixed=(1,), objective="center"))


# ------------------------------------------------------------------ candidates with a region


@pytest.mark.parametrize("model", ["p_median", "p_center"])
@pytest.mark.parametrize(
    ("candidates", "fixed", "argument", "row"),
    [
        ([[0.5, 0, 99], [10.5, 0, 99]], None, "candidates", None),       # three columns
        ([[0.5, 0], [10.5, 0]], [1.7], "fixed", None),                   # not an index
        ([[0.5, 0], [10.5, 0]], [[1, 0]], "fixed", None),                # coordinates
        ([[0.5, 0], [10.5, 0]], [2], "fixed", None),                     # out of range
        ([[0.5, 0], [10.5, 0]], [1, 1], "fixed", None),                  # repeated
        ([[np.nan, 0], [10.5, 0]], None, "candidates", 0),               # NaN row
        ([[0.5, 0], [10.5, np.inf]], None, "candidates", 1),             # infinite row
        ([["a", "b"], [1, 0]], None, "candidates", None),                # text
        (np.empty((0, 2)), None, "candidates", None),                    # none at all
    ],
    ids=["3 columns", "fraction", "coordinates", "out of range", "repeated", "NaN", "inf", "text", "empty"],
)
def test_a_region_checks_candidates_as_the_plain_call_does(model, candidates, fixed, argument, row):
    # Reference for the row: numpy's isfinite over the rows. Reference for the wording:
    # the same call without a region, which always checked them.
    fn = getattr(pw, model)
    if row is not None:
        assert int(np.argmin(np.isfinite(np.asarray(candidates, dtype=float)).all(axis=1))) == row
    with pytest.raises(pw.InputError) as plain:
        fn(LINE, 1, candidates=candidates, fixed=fixed)
    with pytest.raises(pw.InputError) as caught:
        fn(LINE, 1, candidates=candidates, fixed=fixed, region=BOX)
    assert (caught.value.argument, caught.value.row) == (argument, row)
    assert (plain.value.argument, plain.value.row) == (argument, row)
    assert str(caught.value) == str(plain.value)


@pytest.mark.parametrize("model", ["p_median", "p_center"])
def test_a_fixed_candidate_outside_the_region_is_kept_where_it_stands(model):
    # The documentation (p_center: fixed sites "may lie outside region") and the GIS layer
    # keep an existing site where it stands; only new sites must lie in the region.
    # References: shapely's covers for inside/outside, brute force for the plan.
    rng = np.random.default_rng(5)
    points = rng.uniform(0, 10, (30, 2))
    candidates = rng.uniform(0, 10, (9, 2))
    region = shapely.box(0, 0, 10, 5)
    inside = [j for j in range(len(candidates)) if region.covers(shapely.Point(candidates[j]))]
    outside = [j for j in range(len(candidates)) if j not in inside]
    assert len(inside) >= 3 and outside
    existing = outside[0]
    plan = getattr(pw, model)(points, 2, candidates=candidates, fixed=[existing], region=region)
    assert existing in plan.open.tolist() and plan.fixed[plan.open.tolist().index(existing)]
    new = [j for j in plan.open.tolist() if j != existing]
    assert len(new) == 2 and all(region.covers(shapely.Point(candidates[j])) for j in new)
    np.testing.assert_array_equal(plan.sites, candidates[plan.open])
    objective = "median" if model == "p_median" else "center"
    best = brute(points, candidates, 2, fixed=(existing,), allowed=inside, objective=objective)
    got = plan.total_cost if model == "p_median" else plan.worst_cost
    assert got == pytest.approx(best, rel=1e-9)


def test_the_gis_layer_and_the_plain_call_agree_on_an_existing_site_outside_the_region():
    gpd = pytest.importorskip("geopandas")
    rng = np.random.default_rng(8)
    points, candidates = rng.uniform(0, 10, (25, 2)), rng.uniform(0, 10, (8, 2))
    region = shapely.box(0, 0, 10, 5)
    existing = next(j for j in range(8) if not region.covers(shapely.Point(candidates[j])))
    others = [j for j in range(8) if j != existing]
    frame = gpd.GeoSeries(gpd.points_from_xy(*points.T))
    parcels = gpd.GeoSeries(gpd.points_from_xy(*candidates[others].T))
    old = gpd.GeoSeries(gpd.points_from_xy(*candidates[[existing]].T))
    layer = pw.gis.p_median(frame, 1, candidates=parcels, fixed=old, region=region, planar=True)
    plain = pw.p_median(points, 1, candidates=candidates, fixed=[existing], region=region)
    # Reference: brute force (itertools) over the candidates the region holds.
    inside = [j for j in range(8) if region.covers(shapely.Point(candidates[j]))]
    best = brute(points, candidates, 1, fixed=(existing,), allowed=inside)
    assert float(layer.summary["cost_u"].iloc[0]) == pytest.approx(best, rel=1e-9)
    assert plain.total_cost == pytest.approx(best, rel=1e-9)


# ------------------------------------------------------------------ options with candidates


@pytest.mark.parametrize("model", ["p_median", "p_center"])
@pytest.mark.parametrize(
    ("option", "value"),
    [("effort", "thorough"), ("effort", "bogus"), ("errors", "skip"), ("errors", "nope"), ("fixed_groups", [7])],
)
def test_options_without_a_meaning_among_candidates_are_refused(model, option, value):
    with pytest.raises(pw.InputError, match=rf"^{option} does not apply with candidates") as caught:
        getattr(pw, model)(LINE, 1, candidates=PAIRS, **{option: value})
    assert caught.value.argument == option


def test_the_p_center_among_candidates_has_no_seed_and_the_p_median_checks_its_own():
    with pytest.raises(pw.InputError, match="^seed does not apply to the p-center with candidates") as caught:
        pw.p_center(LINE, 1, candidates=PAIRS, seed=-5)
    assert caught.value.argument == "seed"
    with pytest.raises(pw.InputError, match="^seed") as caught:
        pw.p_median(LINE, 1, candidates=PAIRS, seed=-5)
    assert caught.value.argument == "seed"
    # The defaults, written out, still run (brute force on the line).
    assert pw.p_center(LINE, 1, candidates=PAIRS, seed=0, effort="normal", errors="raise").worst_cost == \
        pytest.approx(brute(LINE, PAIRS, 1, objective="center"))


def test_misspelt_keywords_are_type_errors_with_and_without_candidates():
    gpd = pytest.importorskip("geopandas")
    # Reference: Python's rule for a keyword the function does not take.
    homes = gpd.GeoSeries(gpd.points_from_xy(*np.asarray(LINE).T))
    parcels = gpd.GeoSeries(gpd.points_from_xy(*np.asarray(PAIRS).T))
    for kernel in (pw.gis.p_median, pw.gis.p_center):
        for candidates in (None, parcels):
            with pytest.raises(TypeError, match="time_limt"):
                kernel(homes, 1, candidates=candidates, planar=True, time_limt=1e-9)


@pytest.mark.parametrize(
    ("kernel", "option", "value"),
    [("p_median", "effort", "bogus"), ("p_median", "effort", "fast"), ("p_median", "errors", "bogus"),
     ("p_center", "errors", "skip"), ("p_center", "seed", 3), ("p_center", "effort", "thorough")],
)
def test_gis_refuses_options_without_a_meaning_among_candidates(kernel, option, value):
    gpd = pytest.importorskip("geopandas")
    homes = gpd.GeoSeries(gpd.points_from_xy(*np.asarray(LINE).T))
    parcels = gpd.GeoSeries(gpd.points_from_xy(*np.asarray(PAIRS).T))
    with pytest.raises(pw.InputError, match=f"^{option} does not apply") as caught:
        getattr(pw.gis, kernel)(homes, 1, candidates=parcels, planar=True, **{option: value})
    assert caught.value.argument == option


def test_gis_honours_the_seed_and_time_limit_among_candidates():
    gpd = pytest.importorskip("geopandas")
    homes = gpd.GeoSeries(gpd.points_from_xy(*np.asarray(LINE).T))
    parcels = gpd.GeoSeries(gpd.points_from_xy(*np.asarray(PAIRS).T))
    plan = pw.gis.p_median(homes, 1, candidates=parcels, planar=True, seed=7, time_limit=30.0)
    # Reference: brute force (itertools) over the three parcels.
    assert float(plan.summary["cost_u"].iloc[0]) == pytest.approx(brute(LINE, PAIRS, 1))
    with pytest.raises(pw.InputError, match="^seed"):
        pw.gis.p_median(homes, 1, candidates=parcels, planar=True, seed=-1)


def test_cli_refuses_effort_with_candidates_and_says_so_in_its_help(tmp_path, capsys):
    pytest.importorskip("geopandas")
    import pandas as pd

    from placewise.cli import main

    homes, parcels = tmp_path / "homes.csv", tmp_path / "parcels.csv"
    pd.DataFrame({"x": [p[0] for p in LINE], "y": [p[1] for p in LINE]}).to_csv(homes, index=False)
    pd.DataFrame({"x": [p[0] for p in PAIRS], "y": [p[1] for p in PAIRS]}).to_csv(parcels, index=False)
    code = main(["p-median", str(homes), "--planar", "-p", "1", "--candidates", str(parcels),
                 "--effort", "thorough", "-o", str(tmp_path / "s.csv")])
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2 and len(err) == 1 and "--effort does not apply with candidates" in err[0], err
    with pytest.raises(SystemExit):
        main(["p-median", "--help"])
    assert "not with --candidates" in " ".join(capsys.readouterr().out.split())


# ------------------------------------------------------------------ the cost unit


@pytest.mark.parametrize("unit", ["", 5, None, "a b", "m/s", "cost-min", b"m"])
@pytest.mark.parametrize("model", ["evaluate_sites", "p_median", "p_center", "cover_all", "cover_most"])
def test_a_unit_that_cannot_end_a_column_name_is_refused(model, unit):
    # Reference: str.isidentifier-like rule, letters, digits and underscores only.
    assert not (isinstance(unit, str) and unit and all(c.isalnum() or c == "_" for c in unit))
    costs = distances(LINE, PAIRS)
    call = {
        "evaluate_sites": lambda: discrete.evaluate_sites(costs, [0], unit=unit),
        "p_median": lambda: discrete.p_median(costs, 1, unit=unit),
        "p_center": lambda: discrete.p_center_planar(LINE, PAIRS, 1, unit=unit),
        "cover_all": lambda: discrete.cover_all(costs, 20.0, unit=unit),
        "cover_most": lambda: discrete.cover_most(costs, 1, 20.0, unit=unit),
    }[model]
    with pytest.raises(pw.InputError, match="^unit must be a non-empty name") as caught:
        call()
    assert caught.value.argument == "unit"


@pytest.mark.parametrize("unit", ["min", "m", "usft", "veh_h", "m2"])
def test_a_unit_name_ends_the_columns(unit):
    plan = discrete.p_median(distances(LINE, PAIRS), 1, unit=unit)
    assert f"cost_{unit}" in plan.to_frame().columns


def test_a_travel_graph_refuses_the_same_units():
    with pytest.raises(pw.InputError, match="^unit must be a non-empty name"):
        pw.TravelGraph.from_edges([0], [1], [1.0], unit="")


# ------------------------------------------------------------------ hostile input, drawn


SHAPES = array_shapes(min_dims=0, max_dims=3, min_side=0, max_side=4)
hostile_indices = st.one_of(
    st.sampled_from([np.float64, np.int64, np.int8, np.float32]).flatmap(
        lambda dtype: arrays(dtype, SHAPES, elements=st.integers(-3, 5))),
    arrays(np.uint16, SHAPES, elements=st.integers(0, 5)),
    arrays(np.bool_, SHAPES),
    st.lists(st.one_of(st.integers(-3, 5), st.floats(allow_nan=True), st.text(max_size=2), st.none()),
             max_size=4),
)


@settings(max_examples=60, deadline=None)
@given(value=hostile_indices, region=st.booleans(), model=st.sampled_from(["p_median", "p_center"]))
def test_property_fixed_is_used_as_written_or_refused_by_name(value, region, model):
    # Either the value is a 1-D sequence of distinct integer indices in range (numpy's own
    # reading decides), and the plan keeps exactly those candidates open, or an InputError
    # names fixed. Never another exception, never a reinterpretation.
    try:
        array = np.asarray(value)
    except ValueError:
        array = np.asarray(value, dtype=object)
    indices = array.size == 0 or (
        array.ndim == 1 and array.dtype.kind in "iu" and array.min() >= 0 and array.max() < len(PAIRS)
        and len(set(array.tolist())) == len(array))
    options = {"region": BOX} if region else {}
    try:
        plan = getattr(pw, model)(LINE, 1, candidates=PAIRS, fixed=value, **options)
    except pw.InputError as e:
        # Every candidate fixed leaves none for the one new site: p is refused then.
        assert e.argument == ("p" if indices else "fixed"), (value, e)
        return
    assert indices and array.size < len(PAIRS), value
    kept = set(array.reshape(-1).tolist())
    assert kept == set(plan.open[plan.fixed].tolist())


@settings(max_examples=60, deadline=None)
@given(candidates=arrays(np.float64, array_shapes(min_dims=0, max_dims=3, min_side=0, max_side=4),
                         elements=st.floats(allow_nan=True, allow_infinity=True, width=64)))
def test_property_a_region_never_lets_bad_candidates_through(candidates):
    # Reference: numpy's shape and isfinite decide whether the candidates are usable.
    usable = bool(candidates.ndim == 2 and candidates.shape[1] == 2 and len(candidates)
                  and np.isfinite(candidates).all())
    try:
        plan = pw.p_median(LINE, 1, candidates=candidates, region=BOX)
    except pw.InputError as e:
        if not usable:
            assert e.argument == "candidates", e
        return
    assert usable
    np.testing.assert_array_equal(plan.sites, candidates[plan.open])
    assert all(BOX.covers(shapely.Point(c)) for c in plan.sites)  # shapely
