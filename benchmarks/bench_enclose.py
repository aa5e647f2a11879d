"""Enclosing shapes: placewise against shapely (GEOS) and a plain numpy Khachiyan run."""

from __future__ import annotations

import numpy as np
import shapely

import placewise as pw
from harness import Case


def _cloud(n: int, seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    return rng.normal(size=(n, 2)) * [4_000.0, 2_500.0] + [512_000.0, 6_180_000.0]


def numpy_khachiyan(points: np.ndarray, tol: float) -> tuple[np.ndarray, np.ndarray, float]:
    """Khachiyan's (1996) algorithm, plainly in numpy: all points, uniform start, no away
    steps, the full inverse recomputed every iteration. Stops at the same certified relative
    area gap as placewise (max Mahalanobis distance / 2 - 1 <= tol). Returns (centre, A, gap)."""
    origin = points.mean(axis=0)
    x = points - origin
    s = float(np.abs(x).max())
    x = x / s
    n, d = x.shape
    q = np.column_stack([x, np.ones(n)])
    u = np.full(n, 1.0 / n)
    while True:
        m = (q.T * u) @ q
        omega = np.einsum("ij,jk,ik->i", q, np.linalg.inv(m), q)
        j = int(np.argmax(omega))
        kappa = omega[j]
        gap = (kappa - 1.0) / d - 1.0
        if gap <= tol:
            break
        step = (kappa - d - 1.0) / ((d + 1.0) * (kappa - 1.0))
        u *= 1.0 - step
        u[j] += step
    c = u @ x
    cov = (x - c).T @ ((x - c) * u[:, None])
    a = np.linalg.inv(cov) / (kappa - 1.0)
    return c * s + origin, a / (s * s), gap


def cases(quick: bool) -> list[Case]:
    n = 100_000 if quick else 1_000_000
    pts = _cloud(n, 1)
    geom = shapely.multipoints(pts)

    groups, per = (1_000, 50) if quick else (10_000, 50)
    gpts = _cloud(groups * per, 2)
    labels = np.repeat(np.arange(groups), per)
    geoms = shapely.multipoints(gpts, indices=labels)

    ne = 2_000 if quick else 20_000
    epts = _cloud(ne, 3)
    # Plain Khachiyan needs of the order of 1/tol passes over all points; 1e-3 keeps the
    # reference to seconds (placewise itself defaults to 1e-7).
    tol = 1e-3

    def radius_note(ours: pw.Circle, ref: float) -> str:
        return f"radius ours/GEOS - 1 = {ours.radius / ref - 1:+.1e}"

    def grouped_note(ours: pw.Circles, ref: np.ndarray) -> str:
        return f"max |radius ours/GEOS - 1| = {np.max(np.abs(ours.radius / ref - 1)):.1e}"

    def ellipse_note(ours: pw.Ellipse, ref: tuple[np.ndarray, np.ndarray, float]) -> str:
        area_ref = np.pi / np.sqrt(np.linalg.det(ref[1]))
        return (f"area ours/numpy - 1 = {ours.area / area_ref - 1:+.1e}, "
                f"relative gap {ours.relative_gap:.1e} vs {ref[2]:.1e}")

    return [
        Case("enclosing_circle", f"{n:,} points", lambda: pw.enclosing_circle(pts),
             lambda: shapely.minimum_bounding_radius(geom),
             "shapely.minimum_bounding_radius (multipoint prebuilt)", target=3.0, compare=radius_note),
        Case("enclosing_circle groups=", f"{groups:,} groups x {per}",
             lambda: pw.enclosing_circle(gpts, groups=labels),
             lambda: shapely.minimum_bounding_radius(geoms),
             "shapely.minimum_bounding_radius over multipoints (prebuilt)", target=5.0, compare=grouped_note),
        Case("enclosing_ellipse", f"{ne:,} points, tol {tol:g}",
             lambda: pw.enclosing_ellipse(epts, tol=tol),
             lambda: numpy_khachiyan(epts, tol),
             "plain numpy Khachiyan, same certified gap", target=50.0, compare=ellipse_note),
    ]
