"""Refusals write the caller's unit after every length and cost they quote.

A message such as "its nearest candidate lies at distance 5855" leaves a GIS analyst asking
whether that is metres, feet or degrees; the number is only useful with its unit. Each check
compares the quoted number with an outside measurement of the same quantity (numpy on the
matrix, ``pyproj.Geod`` on the ellipsoid, shapely in the plane) and the unit with the one the
call states.
"""

from __future__ import annotations

import re

import numpy as np
import pytest

import placewise as pw

gpd = pytest.importorskip("geopandas")
pyproj = pytest.importorskip("pyproj")
shapely = pytest.importorskip("shapely")


def _refusal(call) -> str:  # noqa: ANN001
    with pytest.raises(pw.InputError) as caught:
        call()
    return str(caught.value)


def test_a_cost_matrix_refusal_quotes_its_costs_in_the_matrix_unit() -> None:
    costs = np.array([[0.0, 5.0], [7.5, 9.0]])
    text = _refusal(lambda: pw.discrete.cover_all(costs, 1.0, unit="min"))
    # Reference: numpy, the cheapest cost of the uncovered row.
    cheapest = costs[1].min()
    assert text == (f"radius: points[1] has no candidate within radius 1 min; its cheapest candidate, "
                    f"column {costs[1].argmin()}, costs {cheapest:g} min")


def test_without_a_named_unit_the_numbers_stand_alone() -> None:
    text = _refusal(lambda: pw.cover_all([[0, 0], [10, 0]], 1.0, candidates=[[0, 0]]))
    assert text.endswith("within radius 1; its nearest candidate, candidates[0], lies at distance 10")
    text = _refusal(lambda: pw.cover_all([[0, 0], [10, 0]], 1.0, candidates=[[0, 0]], unit="km"))
    assert text.endswith("within radius 1 km; its nearest candidate, candidates[0], lies at distance 10 km")


def test_a_refusal_on_longitude_latitude_quotes_metres_on_the_ellipsoid() -> None:
    homes = gpd.GeoDataFrame(geometry=gpd.points_from_xy([10.0, 10.3], [50.0, 50.0]), crs=4326,
                             index=["near", "far"])
    parcels = gpd.GeoDataFrame(geometry=gpd.points_from_xy([10.0], [50.0]), crs=4326, index=["lot-1"])
    text = _refusal(lambda: pw.gis.cover_all(homes, 1000.0, candidates=parcels))
    found = re.fullmatch(r"radius: points\['far'\] has no candidate within radius 1000 m; its nearest candidate, "
                         r"candidates\['lot-1'\], lies at distance (\S+) m", text)
    assert found, text
    # Reference: pyproj.Geod on WGS84; the working frame's scale error stays below 0.1 %.
    _, _, metres = pyproj.Geod(ellps="WGS84").inv(10.0, 50.0, 10.3, 50.0)
    assert float(found[1]) == pytest.approx(metres, rel=1e-3)


def test_a_street_network_quotes_its_gaps_in_its_length_unit_and_its_costs_in_its_own() -> None:
    streets = gpd.GeoDataFrame({"minutes": [2.0, 3.0]},
                               geometry=[shapely.LineString([(500_000, 5_500_000), (500_100, 5_500_000)]),
                                         shapely.LineString([(500_100, 5_500_000), (500_100, 5_500_150)])],
                               crs=32632)
    graph = pw.TravelGraph.from_lines(streets, cost="minutes", unit="min")
    home = (500_000.0, 5_500_040.0)
    text = _refusal(lambda: graph.snap([home], max_gap=25.0))
    # Reference: shapely's distance from the point to the nearest street, in the CRS's metres.
    gap = shapely.Point(home).distance(shapely.MultiLineString(list(streets.geometry)))
    assert text == f"points[0] lies {gap:g} m from the nearest edge, farther than max_gap = 25 m"
    # Costs in minutes, lengths in metres, in one refusal chain: the matrix model names minutes.
    text = _refusal(lambda: graph.choose_sites("cover_all", [[500_000, 5_500_000], [500_100, 5_500_150]],
                                               [[500_000, 5_500_000]], radius=1.0))
    assert "within radius 1 min" in text and "costs 5 min" in text, text


def test_a_restated_refusal_keeps_the_units_when_rows_are_renamed() -> None:
    homes = gpd.GeoDataFrame(geometry=gpd.points_from_xy([500_000.0, 500_900.0], [5_500_000.0, 5_500_000.0]),
                             crs=32632, index=[11, 12])
    parcels = gpd.GeoDataFrame(geometry=gpd.points_from_xy([500_000.0], [5_500_000.0]), crs=32632, index=["lot-1"])
    text = _refusal(lambda: pw.gis.cover_all(homes, 100.0, candidates=parcels))
    # Reference: the distance by hand, 900 m along the x axis of UTM 32N.
    assert text.endswith("points[12] has no candidate within radius 100 m; its nearest candidate, "
                         "candidates['lot-1'], lies at distance 900 m"), text
