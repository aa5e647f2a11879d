"""Spherical Delaunay triangulation and Voronoi cells of global lon/lat points against
scipy.spatial.ConvexHull (Qhull) of the unit vectors and scipy.spatial.SphericalVoronoi."""

from __future__ import annotations

import numpy as np

import placewise as pw
from harness import Case


def _globe(n: int, seed: int) -> np.ndarray:
    """Points uniform on the sphere, as [longitude, latitude] degrees."""
    rng = np.random.default_rng(seed)
    return np.column_stack([rng.uniform(-180, 180, n), np.degrees(np.arcsin(rng.uniform(-1, 1, n)))])


def _unit(lonlat: np.ndarray) -> np.ndarray:
    lon, lat = np.radians(lonlat[:, 0]), np.radians(lonlat[:, 1])
    return np.column_stack([np.cos(lat) * np.cos(lon), np.cos(lat) * np.sin(lon), np.sin(lat)])


def _same_triangles(ours: object, hull: object) -> str:
    mine = {tuple(sorted(t)) for t in ours.corners.tolist()}  # type: ignore[attr-defined]
    theirs = {tuple(sorted(t)) for t in hull.simplices.tolist()}  # type: ignore[attr-defined]
    return f"triangles equal to Qhull's: {'yes' if mine == theirs else 'NO'} ({len(mine):,})"


def _same_areas(ours: object, sv: object) -> str:
    areas = sv.calculate_areas()  # type: ignore[attr-defined]
    worst = float(np.max(np.abs(ours.solid_angle - areas) / areas))  # type: ignore[attr-defined]
    return f"cell areas on the unit sphere, max relative difference {worst:.1e}"


def cases(quick: bool) -> list[Case]:
    from scipy.spatial import ConvexHull, SphericalVoronoi

    n = 100_000
    pts = _globe(n, 1)
    return [
        Case("sphere delaunay", f"{n:,} global lon/lat points", lambda: pw.geodesic.delaunay(pts),
             lambda: ConvexHull(_unit(pts)), "scipy.spatial.ConvexHull of the unit vectors (Qhull)",
             target=1.0, compare=_same_triangles),
        Case("sphere voronoi_cells", f"{n:,} global lon/lat sites", lambda: pw.geodesic.voronoi_cells(pts),
             lambda: SphericalVoronoi(_unit(pts)), "scipy.spatial.SphericalVoronoi (cells unsorted, no areas)",
             target=1.0, compare=_same_areas),
    ]
