"""Catchments: Delaunay vs scipy.spatial.Delaunay, Voronoi cells vs shapely and scipy,
nearest-site allocation vs scipy.spatial.cKDTree, on the same data in the same run."""

from __future__ import annotations

import numpy as np
import scipy.spatial
import shapely

import placewise as pw
from harness import Case
from placewise.partition import Allocation, DelaunayMesh, VoronoiCells


def _cloud(n: int, seed: int, offset: tuple[float, float] = (512_000.0, 6_180_000.0)) -> np.ndarray:
    """Uniform points in a 20 km × 10 km box, by default at projected-metre offsets."""
    rng = np.random.default_rng(seed)
    return rng.uniform(0, 1, size=(n, 2)) * [20_000.0, 10_000.0] + offset


def _same_triangles(ours: DelaunayMesh, ref: scipy.spatial.Delaunay) -> str:
    a = np.sort(np.asarray(ours.corners), axis=1)
    b = np.sort(ref.simplices, axis=1)
    same = len(a) == len(b) and np.array_equal(a[np.lexsort(a.T[::-1])], b[np.lexsort(b.T[::-1])])
    return f"{len(a):,} triangles, identical to scipy: {'yes' if same else 'NO'}"


def _area_check(ours: VoronoiCells, ref: np.ndarray) -> str:
    diff = np.max(np.abs(np.asarray(ours.area) - shapely.area(ref)))
    return f"max |area ours - shapely| = {diff:.1e} m²"


def cases(quick: bool) -> list[Case]:
    n_tri = 100_000 if quick else 1_000_000
    n_cells = 10_000 if quick else 100_000
    n_points, n_sites = (100_000, 1_000) if quick else (1_000_000, 1_000)

    # Local metres: at projected offsets Qhull's floating-point in-circle tests lose digits and
    # its triangles differ from the exact ones in a few dozen places per 100,000 points, which
    # would spoil the identity check (ours are exact at any offset).
    tri_pts = _cloud(n_tri, 1, offset=(0.0, 0.0))

    sites = _cloud(n_cells, 2)
    box = shapely.box(512_000.0, 6_180_000.0, 532_000.0, 6_190_000.0)
    multipoint = shapely.MultiPoint(sites)

    def shapely_cells() -> np.ndarray:
        # GEOS Voronoi extended to the box, then each cell intersected with it; matched to
        # the sites (ordered=True) so the areas can be compared cell by cell.
        cells = shapely.get_parts(shapely.voronoi_polygons(multipoint, extend_to=box, ordered=True))
        return shapely.intersection(cells, box)

    def scipy_cells() -> scipy.spatial.Voronoi:
        # Qhull's unclipped diagram (no region cut, so it does less work than the others).
        return scipy.spatial.Voronoi(sites)

    demand = _cloud(n_points, 3)
    depots = _cloud(n_sites, 4)
    weights = np.random.default_rng(5).lognormal(size=n_points)

    def ckdtree() -> tuple[np.ndarray, np.ndarray]:
        distance, index = scipy.spatial.cKDTree(depots).query(demand, workers=-1)
        return distance, index

    def allocation_check(ours: Allocation, ref: tuple[np.ndarray, np.ndarray]) -> str:
        return f"assignment equal to cKDTree: {'yes' if np.array_equal(ours.assignment, ref[1]) else 'NO'}"

    # Grouped: every district's demand served by its own depots, in one call.
    n_groups = 200 if quick else 2_000
    district = np.random.default_rng(6).integers(0, n_groups, size=n_points)
    district_depots = _cloud(5 * n_groups, 7)
    depot_district = np.repeat(np.arange(n_groups), 5)

    def ckdtree_per_group() -> np.ndarray:
        # One cKDTree per district, its answers mapped back to depot rows.
        order = np.argsort(district, kind="stable")
        starts = np.searchsorted(district[order], np.arange(n_groups + 1))
        out = np.empty(n_points, dtype=np.int64)
        for g in range(n_groups):
            rows = order[starts[g]:starts[g + 1]]
            _, index = scipy.spatial.cKDTree(district_depots[5 * g:5 * g + 5]).query(demand[rows])
            out[rows] = 5 * g + index
        return out

    def grouped_check(ours: pw.partition.Allocations, ref: np.ndarray) -> str:
        return f"assignment equal to cKDTree per group: {'yes' if np.array_equal(ours.assignment, ref) else 'NO'}"

    # Power cells: the same sites with powers up to (30 m)² (spacing ~45 m), against voronoi_cells on them
    # (the target: power cells within 2x of Voronoi cells), and against Qhull's lower hull of
    # the lifted points (the regular triangulation alone, no cells).
    powers = np.random.default_rng(8).uniform(0.0, 30.0**2, n_cells)

    def lower_hull() -> np.ndarray:
        local = sites - sites.mean(0)
        hull = scipy.spatial.ConvexHull(np.c_[local, (local**2).sum(1) - powers])
        return hull.simplices[hull.equations[:, 2] < 0]

    def power_area_check(ours: pw.PowerCells, ref: object) -> str:
        return (f"{int(ours.redundant.sum()):,} redundant; areas sum to the box's to "
                f"{abs(ours.area.sum() / box.area - 1):.1e}")

    def power_vs_qhull(ours: pw.PowerCells, ref: np.ndarray) -> str:
        a, b = np.sort(ours.corners, 1), np.sort(ref, 1)
        same = len(a) == len(b) and np.array_equal(a[np.lexsort(a.T[::-1])], b[np.lexsort(b.T[::-1])])
        return f"{len(a):,} triangles, identical to Qhull's lower hull: {'yes' if same else 'NO'}"

    return [
        Case("power_cells (box)", f"{n_cells:,} sites", lambda: pw.power_cells(sites, powers, box),
             lambda: pw.voronoi_cells(sites, box), "placewise.voronoi_cells (same sites, no powers)", target=0.5,
             compare=power_area_check),
        Case("power_cells (box)", f"{n_cells:,} sites", lambda: pw.power_cells(sites, powers, box), lower_hull,
             "scipy.spatial.ConvexHull of the lifted sites (triangulation only)", compare=power_vs_qhull),
        Case("delaunay", f"{n_tri:,} points", lambda: pw.delaunay(tri_pts), lambda: scipy.spatial.Delaunay(tri_pts),
             "scipy.spatial.Delaunay", target=8.0, compare=_same_triangles),
        Case("voronoi_cells (box)", f"{n_cells:,} sites", lambda: pw.voronoi_cells(sites, box), shapely_cells,
             "shapely.voronoi_polygons + shapely.intersection", target=3.0, compare=_area_check),
        Case("voronoi_cells (box)", f"{n_cells:,} sites", lambda: pw.voronoi_cells(sites, box), scipy_cells,
             "scipy.spatial.Voronoi (unclipped)"),
        Case("nearest_site", f"{n_points:,} points to {n_sites:,} sites",
             lambda: pw.nearest_site(demand, depots, weights), ckdtree,
             "scipy.spatial.cKDTree build + query(workers=-1)", target=1.0, compare=allocation_check,
             reference_repeat=3),
        Case("nearest_site (groups)", f"{n_points:,} points in {n_groups:,} groups of 5 sites",
             lambda: pw.nearest_site(demand, district_depots, groups=district, site_groups=depot_district),
             ckdtree_per_group, "scipy.spatial.cKDTree per group (Python loop)", compare=grouped_check),
    ]
