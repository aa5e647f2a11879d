"""Street networks and point layers on the Earth: tolerance in metres for lon/lat lines, and
no silent mix of a layer without a CRS with one that has one.

References: ``pyproj.Geod`` (WGS84 geodesic lengths) and scipy's connected components.
"""

from __future__ import annotations

import numpy as np
import pytest

import placewise as pw

gpd = pytest.importorskip("geopandas")
pyproj = pytest.importorskip("pyproj")
shapely = pytest.importorskip("shapely")
from scipy.sparse import csr_array  # noqa: E402
from scipy.sparse.csgraph import connected_components  # noqa: E402

from placewise.gis import travel as gt  # noqa: E402

GEOD = pyproj.Geod(ellps="WGS84")


def _streets(coords) -> gpd.GeoDataFrame:  # noqa: ANN001
    return gpd.GeoDataFrame(geometry=[shapely.LineString(c) for c in coords], crs="EPSG:4326")


def _components_by_geod(coords, metres: float) -> tuple[int, int]:  # noqa: ANN001
    """(places, components) of line ends joined when within ``metres`` by pyproj.Geod (every
    pair compared: the lines here have ends far apart or close, no chains)."""
    ends = np.array([c[i] for c in coords for i in (0, -1)], dtype=float)
    n = len(ends)
    near = np.array([[GEOD.inv(*ends[i], *ends[j])[2] <= metres for j in range(n)] for i in range(n)])
    _, place = connected_components(csr_array(near.astype(float)), directed=False)
    rows = [place[2 * k] for k in range(len(coords))]
    cols = [place[2 * k + 1] for k in range(len(coords))]
    places = place.max() + 1
    count, _ = connected_components(csr_array((np.ones(len(rows)), (rows, cols)), shape=(places, places)),
                                    directed=False)
    return int(places), int(count)


STREETS = [[(10.00, 59.0), (10.02, 59.0)], [(10.02, 59.0), (10.04, 59.0)], [(10.00, 59.01), (10.04, 59.01)],
           [(10.0401, 59.01), (10.06, 59.01)]]


@pytest.mark.parametrize("metres", [0.0, 1.0, 5.0, 10.0, 1_000.0])
def test_a_lonlat_tolerance_is_metres_by_the_geodesic(metres):
    # The ends (10.04, 59.01) and (10.0401, 59.01) are 5.7 m apart; the two east-west
    # streets are 1.1 km apart; a 1 m tolerance, read as degrees before, merged every end
    # within 111 km into one node.
    g = gt.travel_graph(_streets(STREETS), tolerance=metres)
    assert (g.nodes, g.components) == _components_by_geod(STREETS, metres)


def test_a_one_metre_tolerance_keeps_a_lonlat_trip_on_its_streets():
    g = gt.travel_graph(_streets(STREETS), tolerance=10.0)
    a = gpd.GeoDataFrame(geometry=gpd.points_from_xy([10.0], [59.01]), crs="EPSG:4326")
    b = gpd.GeoDataFrame(geometry=gpd.points_from_xy([10.06], [59.01]), crs="EPSG:4326")
    cost = gt.travel_costs(g, a, b)["cost_m"].iloc[0]
    # pyproj.Geod: along the northern street and across the 5.7 m joint.
    expected = GEOD.line_length([10.0, 10.04], [59.01, 59.01]) + GEOD.line_length([10.0401, 10.06], [59.01, 59.01])
    assert cost == pytest.approx(expected, rel=1e-9)


def test_points_without_a_crs_beside_lines_with_one_are_refused():
    g = gt.travel_graph(gpd.GeoDataFrame(geometry=[shapely.LineString([(500_000, 6_200_000), (501_000, 6_200_000)])],
                                         crs="EPSG:32633"))
    homes = gpd.GeoDataFrame(geometry=gpd.points_from_xy([15.05], [55.93]))  # lon/lat, no CRS
    depot = gpd.GeoDataFrame(geometry=gpd.points_from_xy([500_000], [6_200_000]), crs="EPSG:32633")
    for call in (lambda: gt.network_catchments(g, homes, depot), lambda: gt.travel_costs(g, homes, depot)):
        with pytest.raises(pw.InputError, match=r"has no CRS; give it its CRS") as caught:
            call()
        assert caught.value.argument in ("points", "origins")
    planar = gt.travel_graph(gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (1_000, 0)])]))
    with pytest.raises(pw.InputError, match=r"network's lines have no CRS"):
        gt.travel_costs(planar, depot, depot)
    # The same frame with its CRS is transformed to the lines' (pyproj), and its gap is true.
    placed = gt.network_catchments(g, homes.set_crs("EPSG:4326"), depot)
    x, y = pyproj.Transformer.from_crs(4326, 32633, always_xy=True).transform(15.05, 55.93)
    gap = shapely.Point(x, y).distance(shapely.LineString([(500_000, 6_200_000), (501_000, 6_200_000)]))
    assert placed["gap_m"].iloc[0] == pytest.approx(gap, rel=1e-9)
