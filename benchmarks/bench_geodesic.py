"""Geodesic kernels on longitude/latitude points: nearest site against scikit-learn's
haversine BallTree, and the geodesic Fermat–Weber point against its own planar time."""

from __future__ import annotations

import numpy as np

import placewise as pw
from harness import Case


def _globe(n: int, seed: int) -> np.ndarray:
    """Points uniform on the sphere, as [longitude, latitude] degrees."""
    rng = np.random.default_rng(seed)
    return np.column_stack([rng.uniform(-180, 180, n), np.degrees(np.arcsin(rng.uniform(-1, 1, n)))])


def _balltree(points: np.ndarray, sites: np.ndarray) -> np.ndarray:
    from sklearn.neighbors import BallTree

    tree = BallTree(np.radians(sites[:, ::-1]), metric="haversine")
    return tree.query(np.radians(points[:, ::-1]), k=1, return_distance=False)[:, 0]


def _brute_force_check(points: np.ndarray, sites: np.ndarray, sample: int = 2_000):
    """Compare an allocation with brute-force geodesic nearest sites (pyproj.Geod) on a sample."""
    from pyproj import Geod

    geod = Geod(ellps="WGS84")
    rows = np.random.default_rng(0).choice(len(points), sample, replace=False)
    p = points[rows]
    d = np.stack([geod.inv(p[:, 0], p[:, 1], np.full(sample, s[0]), np.full(sample, s[1]))[2] for s in sites], axis=1)
    truth = np.argmin(d, axis=1)

    def compare(ours: object, reference: np.ndarray) -> str:
        mine = np.asarray(ours.assignment)[rows]  # type: ignore[attr-defined]
        dist = np.asarray(ours.distance)[rows]  # type: ignore[attr-defined]
        return (f"assignments equal to brute-force geodesic on {sample:,} sampled points: "
                f"{'yes' if np.array_equal(mine, truth) else 'NO'}; max |distance/pyproj - 1| = "
                f"{np.max(np.abs(dist / d.min(axis=1) - 1)):.1e}; BallTree (sphere) differs on "
                f"{int(np.sum(reference[rows] != truth))} of them")

    return compare


def _national(n: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """A national-scale weighted cloud: about 1,200 km by 900 km around (10° E, 51° N)."""
    rng = np.random.default_rng(seed)
    pts = np.column_stack([10.0 + 3.5 * rng.normal(size=n), 51.0 + 2.0 * rng.normal(size=n)])
    pts[:, 1] = np.clip(pts[:, 1], -89.0, 89.0)
    return pts, rng.lognormal(sigma=1.0, size=n)


def cases(quick: bool) -> list[Case]:
    n = 100_000 if quick else 1_000_000
    points, sites = _globe(n, 1), _globe(1_000, 2)

    pts, w = _national(n, 3)
    from pyproj import Geod, Transformer

    x, y = Transformer.from_crs("EPSG:4326", "EPSG:32632", always_xy=True).transform(pts[:, 0], pts[:, 1])
    planar = np.column_stack([x, y])
    geod = Geod(ellps="WGS84")

    def weber_note(ours: object, _planar: object) -> str:
        loc = ours.location  # type: ignore[attr-defined]
        d = geod.inv(np.full(n, loc[0]), np.full(n, loc[1]), pts[:, 0], pts[:, 1])[2]
        cost = float(w @ d)
        return (f"ratio = planar time / geodesic time, target: within 10x; cost ours/pyproj - 1 = "
                f"{ours.cost / cost - 1:+.1e}; relative gap {ours.gap / ours.cost:.1e}; "  # type: ignore[attr-defined]
                f"planar cost in UTM 32N differs by {_planar.cost / cost - 1:+.1e}")  # type: ignore[attr-defined]

    return [
        Case("geodesic nearest_site", f"{n:,} lon/lat points to 1,000 sites",
             lambda: pw.geodesic.nearest_site(points, sites), lambda: _balltree(points, sites),
             "sklearn BallTree(metric='haversine') build + query", target=3.0,
             compare=_brute_force_check(points, sites), repeat=1),
        Case("geodesic weber_point", f"{n:,} weighted lon/lat points",
             lambda: pw.geodesic.weber_point(pts, w), lambda: pw.weber_point(planar, w),
             "placewise.weber_point on the same points projected (UTM 32N)", target=0.1, compare=weber_note,
             repeat=1),
    ]
