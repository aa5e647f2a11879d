"""Sites restricted to a feasible region: weber_point, minimax_point, p_median and p_center
with ``region=``, checked against scipy, shapely, brute force and closed forms."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.optimize
import shapely
from hypothesis import given
from hypothesis import strategies as st
from shapely.geometry import Point, Polygon

import placewise as pw
from placewise._region import candidates_in_region


def weber_cost(points: np.ndarray, weights: np.ndarray, x: np.ndarray) -> float:
    return float(np.sum(weights * np.hypot(points[:, 0] - x[0], points[:, 1] - x[1])))


def minimax_cost(points: np.ndarray, weights: np.ndarray, x: np.ndarray) -> float:
    return float(np.max(weights * np.hypot(points[:, 0] - x[0], points[:, 1] - x[1])))


def halfplanes(ring: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """A counter-clockwise convex ring as A x <= b."""
    a, b = ring, np.roll(ring, -1, axis=0)
    edge = b - a
    normal = np.column_stack([edge[:, 1], -edge[:, 0]])
    return normal, np.sum(normal * a, axis=1)


def violation(ring, x):
    """How far ``x`` lies outside the convex ring (0 inside): SLSQP may end slightly outside."""
    a, b = halfplanes(ring)
    return float(max(0.0, np.max((a @ x - b) / np.hypot(a[:, 0], a[:, 1]))))


def scipy_weber_in_convex(points, weights, ring, start):
    """Reference: scipy.optimize.minimize (SLSQP) with the polygon's half-planes as linear
    inequality constraints."""
    a, b = halfplanes(ring)
    cons = {"type": "ineq", "fun": lambda x: b - a @ x, "jac": lambda x: -a}
    r = scipy.optimize.minimize(lambda x: weber_cost(points, weights, x), start, method="SLSQP",
                                constraints=[cons], options={"ftol": 1e-14, "maxiter": 2000})
    return r.x, r.fun


def scipy_minimax_in_convex(points, weights, ring, start):
    """Reference: SLSQP on the epigraph form min t s.t. t >= w_i |x - a_i| and the half-planes."""
    a, b = halfplanes(ring)
    cons = [
        {"type": "ineq", "fun": lambda z: b - a @ z[:2]},
        {"type": "ineq", "fun": lambda z: z[2] - weights * np.hypot(points[:, 0] - z[0], points[:, 1] - z[1])},
    ]
    z0 = np.r_[start, minimax_cost(points, weights, start)]
    r = scipy.optimize.minimize(lambda z: z[2], z0, method="SLSQP", constraints=cons,
                                options={"ftol": 1e-14, "maxiter": 2000})
    return r.x[:2], minimax_cost(points, weights, r.x[:2])


def boundary_samples(polygon: Polygon, per_edge: int = 400) -> np.ndarray:
    """Dense points along every ring of the polygon (brute force over the boundary)."""
    out = []
    for ring in (polygon.exterior, *polygon.interiors):
        xy = np.asarray(ring.coords)
        for p, q in zip(xy[:-1], xy[1:], strict=True):
            t = np.linspace(0.0, 1.0, per_edge)[:, None]
            out.append(p + t * (q - p))
    return np.vstack(out)


def grid_in(polygon: Polygon, step: float) -> np.ndarray:
    """A dense grid over the polygon, kept where shapely's ``contains`` holds."""
    x0, y0, x1, y1 = polygon.bounds
    xs, ys = np.meshgrid(np.arange(x0, x1 + step, step), np.arange(y0, y1 + step, step))
    grid = np.column_stack([xs.ravel(), ys.ravel()])
    return grid[shapely.contains_xy(polygon, grid[:, 0], grid[:, 1])]


RNG = np.random.default_rng(14)
CLOUD = RNG.uniform(0, 10, size=(300, 2))
WEIGHTS = RNG.uniform(0.5, 3.0, size=300)
# A convex lot east of the demand (counter-clockwise), and a non-convex region with holes
# over the middle of the demand.
LOT = np.array([[12.0, 1.0], [16.0, 2.0], [15.0, 9.0], [12.5, 8.0]])
HOLED = Polygon(
    [[-1, -1], [11, -1], [11, 11], [6, 11], [6, 6.5], [4, 6.5], [4, 11], [-1, 11]],
    [[[3, 3], [3, 5.5], [7, 5.8], [7.5, 3.2]][::-1], [[8, 8], [9.5, 8], [9.5, 9.5], [8, 9.5]][::-1]],
)


# --- single site against outside references ------------------------------------------------

def test_weber_in_convex_lot_matches_scipy_slsqp():
    r = pw.weber_point(CLOUD, WEIGHTS, region=LOT)
    x, fun = scipy_weber_in_convex(CLOUD, WEIGHTS, LOT, LOT.mean(axis=0))
    assert r.region_active and not r.region_holds_demand
    # scipy.optimize.minimize (SLSQP): equal optimum to 1e-7; its answer may lie outside the
    # lot by a hair, worth at most (total weight) x (that distance) of cost.
    slack = WEIGHTS.sum() * violation(LOT, x)
    assert r.cost <= fun * (1 + 1e-9) + slack
    assert abs(r.cost - fun) <= 1e-7 * fun
    assert r.cost - r.gap <= fun * (1 + 1e-12) + slack
    # shapely covers the site.
    assert Polygon(LOT).covers(Point(r.location))


def test_minimax_in_convex_lot_matches_scipy_slsqp():
    r = pw.minimax_point(CLOUD, WEIGHTS, region=LOT)
    x, fun = scipy_minimax_in_convex(CLOUD, WEIGHTS, LOT, LOT.mean(axis=0))
    # scipy.optimize.minimize (SLSQP, epigraph form): equal optimum to 1e-7 (its answer may
    # lie outside the lot by a hair, worth at most the largest weight times that distance).
    assert r.weighted_radius <= fun * (1 + 1e-9) + WEIGHTS.max() * violation(LOT, x)
    assert abs(r.weighted_radius - fun) <= 1e-7 * fun
    assert r.gap <= 1e-9 * r.weighted_radius
    assert Polygon(LOT).covers(Point(r.location))


@pytest.mark.parametrize("kind", ["weber", "minimax"])
def test_non_convex_region_with_holes_against_brute_force(kind):
    cost = weber_cost if kind == "weber" else minimax_cost
    if kind == "weber":
        r = pw.weber_point(CLOUD, WEIGHTS, region=HOLED)
        value = r.cost
    else:
        r = pw.minimax_point(CLOUD, WEIGHTS, region=HOLED)
        value = r.weighted_radius
    assert r.region_active and r.region_holds_demand
    assert HOLED.covers(Point(r.location))       # shapely covers
    lower = value - r.gap
    # Brute force with shapely: a dense grid over the region and dense boundary samples;
    # none beats the proven lower bound, and the best sample is within its spacing of ours.
    samples = np.vstack([grid_in(HOLED, 0.05), boundary_samples(HOLED)])
    values = np.array([cost(CLOUD, WEIGHTS, s) for s in samples])
    assert values.min() >= lower * (1 - 1e-12)
    assert value <= values.min() * (1 + 1e-12)
    # Lipschitz constant times the sample spacing bounds how far the best sample can be off.
    lipschitz = WEIGHTS.sum() if kind == "weber" else WEIGHTS.max()
    assert values.min() - value <= lipschitz * 0.05


def test_region_holding_the_free_optimum_changes_nothing():
    # Closed form: the free optimum is feasible, so it is the restricted optimum.
    free = pw.weber_point(CLOUD, WEIGHTS)
    kept = pw.weber_point(CLOUD, WEIGHTS, region=[[-50, -50], [50, -50], [50, 50], [-50, 50]])
    assert not kept.region_active and kept.region_holds_demand
    assert kept.location.tolist() == free.location.tolist() and kept.cost == free.cost
    m = pw.minimax_point(CLOUD, WEIGHTS, region=[[-50, -50], [50, -50], [50, 50], [-50, 50]])
    assert m.location.tolist() == pw.minimax_point(CLOUD, WEIGHTS).location.tolist()


def test_box_beside_the_demand_puts_the_site_on_its_nearest_edge():
    # Closed form: demand symmetric about y = 0, left of x = 5; in the box [5, 9] x [-3, 3]
    # the cost rises with x and, on x = 5, is least at y = 0.
    pts = np.array([[0, 1], [0, -1], [1, 2], [1, -2], [-2, 0]], dtype=float)
    box = [[5, -3], [9, -3], [9, 3], [5, 3]]
    exact = weber_cost(pts, np.ones(5), np.array([5.0, 0.0]))
    r = pw.weber_point(pts, region=box)
    assert abs(r.location[0] - 5) <= 1e-12 and abs(r.location[1]) <= 1e-6
    assert abs(r.cost - exact) <= 1e-9 * exact
    m = pw.minimax_point(pts, region=box)            # the farthest point is (-2, 0): 7
    assert m.location.round(9).tolist() == [5.0, 0.0] and abs(m.weighted_radius - 7.0) <= 1e-9


def test_far_offset_coordinates_keep_the_site_inside():
    offset = np.array([500_000.0, 6_000_000.0])
    r = pw.weber_point(CLOUD + offset, WEIGHTS, region=Polygon(HOLED.exterior.coords, [
        np.asarray(h.coords) for h in HOLED.interiors]).__class__(
            np.asarray(HOLED.exterior.coords) + offset, [np.asarray(h.coords) + offset for h in HOLED.interiors]))
    near = pw.weber_point(CLOUD, WEIGHTS, region=HOLED)
    assert abs(r.cost - near.cost) <= 1e-9 * near.cost
    assert shapely.affinity.translate(HOLED, *offset).covers(Point(r.location))


# --- many sites -------------------------------------------------------------------------

def test_p_median_sites_lie_in_the_region_and_pay_for_it():
    plan = pw.p_median(CLOUD, 3, WEIGHTS, region=HOLED, seed=2)
    free = pw.p_median(CLOUD, 3, WEIGHTS, seed=2)
    # shapely covers every site; the restriction cannot make the plan cheaper than the
    # free plan's proven-good cost by more than the free search's own slack.
    assert all(HOLED.covers(Point(s)) for s in plan.sites)
    assert plan.cost >= free.cost * (1 - 1e-3)
    # Cooper's conditions: each site is its cluster's restricted Fermat–Weber point.
    for j in range(3):
        members = plan.assignment == j
        single = pw.weber_point(CLOUD[members], WEIGHTS[members], region=HOLED)
        here = weber_cost(CLOUD[members], WEIGHTS[members], plan.sites[j])
        assert here <= single.cost * (1 + 1e-6)


def test_p_median_region_holding_every_site_changes_nothing():
    big = [[-100, -100], [100, -100], [100, 100], [-100, 100]]
    a = pw.p_median(CLOUD, 4, WEIGHTS, seed=1, region=big)
    b = pw.p_median(CLOUD, 4, WEIGHTS, seed=1)
    assert abs(a.cost - b.cost) <= 1e-9 * b.cost


def test_p_center_sites_lie_in_the_region_and_tiny_instances_are_exact():
    plan = pw.p_center(CLOUD, 3, WEIGHTS, region=HOLED)
    assert all(HOLED.covers(Point(s)) for s in plan.sites)
    # Tiny instance, brute force: every split of 6 points into 2 clusters, each cluster's
    # site by a dense grid and boundary samples of the region (shapely), the best max.
    pts = np.array([[4.5, 4.2], [5.5, 4.0], [5.0, 5.0], [8.7, 8.7], [9.0, 9.0], [0.0, 0.0]])
    exact = pw.p_center(pts, 2, region=HOLED)
    assert exact.optimal and all(HOLED.covers(Point(s)) for s in exact.sites)
    samples = np.vstack([grid_in(HOLED, 0.1), boundary_samples(HOLED, 200)])
    d = np.hypot(samples[:, None, 0] - pts[None, :, 0], samples[:, None, 1] - pts[None, :, 1])
    best = math.inf
    for mask in range(1, 2 ** 5):
        side = np.array([(mask >> k) & 1 for k in range(5)] + [0], dtype=bool)
        r1 = d[:, side].max(axis=1).min()
        r2 = d[:, ~side].max(axis=1).min()
        best = min(best, max(r1, r2))
    assert exact.weighted_radius <= best * (1 + 1e-9)
    assert best - exact.weighted_radius <= 0.1 * math.sqrt(2)


def test_grouped_forms_share_one_region():
    groups = np.repeat([3, 7], 150)
    g = pw.weber_point(CLOUD, WEIGHTS, groups=groups, region=HOLED)
    for label in (3, 7):
        rows = groups == label
        single = pw.weber_point(CLOUD[rows], WEIGHTS[rows], region=HOLED)
        assert g[label].location.tolist() == single.location.tolist()
        assert g[label].region_active == single.region_active
    m = pw.minimax_point(CLOUD, WEIGHTS, groups=groups, region=HOLED)
    assert all(HOLED.covers(Point(s)) for s in m.location)
    assert "region_active" in m.to_frame() and "free_cost_u" in g.to_frame()
    plans = pw.p_center(CLOUD, 2, WEIGHTS, groups=groups, region=HOLED)
    assert all(HOLED.covers(Point(s)) for s in plans.sites)


def test_plots_draw_the_region():
    import matplotlib

    matplotlib.use("Agg")
    for result in (pw.weber_point(CLOUD, region=LOT), pw.minimax_point(CLOUD, region=LOT),
                   pw.p_median(CLOUD, 2, region=HOLED, effort="fast")):
        ax = result.plot()
        assert "feasible region" in [line.get_label() for line in ax.lines]


# --- candidates --------------------------------------------------------------------------

def test_candidates_outside_the_region_are_dropped():
    cands = np.array([[0, 0], [5, 4], [12.5, 5], [5, 10]], dtype=float)
    kept, rows, fixed = candidates_in_region(cands, HOLED)
    # shapely covers, candidate by candidate.
    assert rows.tolist() == [i for i, c in enumerate(cands) if HOLED.covers(Point(c))]
    assert kept.tolist() == cands[rows].tolist() and fixed is None
    # An existing site among them stays wherever it lies (shapely: the last one is outside).
    assert not HOLED.covers(Point(cands[3]))
    kept, rows, fixed = candidates_in_region(cands, HOLED, [3])
    assert rows.tolist() == [i for i, c in enumerate(cands) if HOLED.covers(Point(c))] + [3]
    assert rows[fixed].tolist() == [3]
    with pytest.raises(pw.InputError, match="region holds none") as e:
        candidates_in_region([[100, 100]], HOLED)
    assert e.value.argument == "region"


# --- bad regions -------------------------------------------------------------------------

@pytest.mark.parametrize(
    ("region", "message"),
    [
        ([[0, 0], [1, 1], [2, 2]], "no area"),
        ([[0, 0], [4, 4], [4, 0], [0, 1]], "cross"),
        ([[0, 0], [np.nan, 1], [1, 0]], "NaN"),
        (Polygon([[0, 0], [2, 0], [2, 2], [0, 2]], [[[0, 0], [2, 0], [2, 2], [0, 2]]]), "overlap"),
        (shapely.Point(0, 0).buffer(1).boundary, "LineString|LinearRing"),
    ],
)
@pytest.mark.parametrize("call", ["weber", "minimax", "p_median", "p_center"])
def test_bad_regions_raise_input_error_naming_region(region, message, call):
    fn = {
        "weber": lambda: pw.weber_point(CLOUD, region=region),
        "minimax": lambda: pw.minimax_point(CLOUD, region=region),
        "p_median": lambda: pw.p_median(CLOUD, 2, region=region),
        "p_center": lambda: pw.p_center(CLOUD, 2, region=region),
    }[call]
    with pytest.raises(pw.InputError, match=message) as e:
        fn()
    if getattr(e.value, "argument", None) is not None:
        assert e.value.argument == "region"


def test_region_without_demand_is_allowed_and_said():
    r = pw.weber_point(CLOUD, region=LOT)
    assert r.region_active and r.region_holds_demand is False
    assert bool(r.to_frame()["region_holds_demand"][0]) is False


# --- properties on hostile regions ------------------------------------------------------

@st.composite
def star_region(draw):
    """A star-shaped polygon around a random centre (often with collinear or near-repeated
    vertices and tiny or huge scales), possibly with a hole."""
    n = draw(st.integers(3, 12))
    scale = draw(st.sampled_from([1e-6, 1.0, 1e6]))
    cx, cy = draw(st.floats(-20, 20)), draw(st.floats(-20, 20))
    angles = np.sort(np.array(draw(st.lists(st.floats(0, 2 * np.pi, exclude_max=True), min_size=n, max_size=n,
                                              unique=True))))
    radii = np.array(draw(st.lists(st.floats(0.2, 3.0), min_size=n, max_size=n)))
    ring = np.column_stack([cx + radii * np.cos(angles), cy + radii * np.sin(angles)]) * scale
    shell = Polygon(ring)
    if draw(st.booleans()):
        hole = shapely.Point(cx * scale, cy * scale).buffer(0.1 * scale, quad_segs=2)
        if shell.contains(hole):
            return Polygon(ring, [np.asarray(hole.exterior.coords)]), scale
    return shell, scale


@given(star_region(), st.integers(0, 2 ** 32 - 1))
def test_property_sites_are_covered_or_the_region_is_refused(region_scale, seed):
    region, scale = region_scale
    rng = np.random.default_rng(seed)
    pts = rng.normal(scale=5 * scale, size=(25, 2))
    w = rng.uniform(0.1, 2.0, size=25)
    try:
        r = pw.weber_point(pts, w, region=region)
        m = pw.minimax_point(pts, w, region=region)
    except pw.InputError as e:
        # Only a region that is not a valid polygon with area may be refused.
        assert not region.is_valid or region.area == 0, e
        return
    for site in (r.location, m.location):
        assert region.covers(Point(site))          # shapely covers
    assert r.gap >= 0 and m.gap >= 0
    # Never worse than the best vertex of the region (brute force over vertices).
    ring = np.asarray(region.exterior.coords)
    assert r.cost <= min(weber_cost(pts, w, v) for v in ring) * (1 + 1e-9) + 1e-12
    assert m.weighted_radius <= min(minimax_cost(pts, w, v) for v in ring) * (1 + 1e-9) + 1e-12
