"""The invented scenario of the demo: the coastal district of Orsavel.

Everything here is made up — the district, its towns, their populations and the
households — and exists only to show the library at work. Coordinates are metres on a
local planar grid (x east, y north) with its origin at the district's south-west corner.

For desktop GIS the grid is placed, by a shift of ``origin``, in a real projected CRS:
WGS 84 / UTM zone 26N (EPSG:32626), at an invented spot of the open North Atlantic (about
45° N, 28° W) where no real land lies, so that the layers overlay nothing real.
"""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np

__all__ = ["Scenario", "orsavel"]


@dataclasses.dataclass(frozen=True)
class Scenario:
    """An invented planning region with towns and weighted household demand.

    Attributes
    ----------
    name : str
    region : shapely Polygon
        The land: a ragged coastline on the west and south (non-convex) with a lake as a hole.
    lake : shapely Polygon
        The lake (the region's hole), for drawing.
    town_names : list of str
    towns : ndarray, shape (t, 2)
    town_people : ndarray, shape (t,)
    households : ndarray, shape (n, 2)
    people : ndarray, shape (n,)
        People per household (the demand weight).
    crs : str
        The projected CRS the layers are written in.
    origin : ndarray, shape (2,)
        Easting and northing (metres, in ``crs``) of the local grid's origin: a local point
        ``xy`` lies at ``xy + origin``.
    """

    name: str
    region: Any
    lake: Any
    town_names: list[str]
    towns: np.ndarray
    town_people: np.ndarray
    households: np.ndarray
    people: np.ndarray
    crs: str = "EPSG:32626"
    origin: np.ndarray = dataclasses.field(default_factory=lambda: np.array([420_000.0, 5_010_000.0]))


# (name, x km, y km, people) — invented.
_TOWNS = [
    ("Avenby", 22.0, 58.0, 14_000),
    ("Brisholt", 41.0, 71.0, 6_500),
    ("Corrinford", 63.0, 64.0, 9_000),
    ("Dellmere", 88.0, 70.0, 4_000),
    ("Estovan", 106.0, 52.0, 7_500),
    ("Fenmarrow", 30.0, 33.0, 11_000),
    ("Gallin Quay", 47.0, 14.0, 8_000),
    ("Harrowmead", 70.0, 30.0, 5_500),
    ("Istrel", 92.0, 22.0, 12_000),
    ("Jorvale", 110.0, 9.0, 3_000),
    ("Kellasand", 16.0, 12.0, 2_500),
    ("Lunmouth", 56.0, 44.0, 3_500),
]


def _coastline() -> np.ndarray:
    """The district's outline (km): straight inland borders, a ragged sea coast with two bays."""
    # West coast, north to south: x as a function of y with a deep bay near y = 45 km.
    y = np.linspace(80.0, 4.0, 77)
    x = 8.0 + 3.0 * np.sin(y / 6.5) + 1.5 * np.sin(y / 2.3) + 17.0 * np.exp(-(((y - 45.0) / 5.0) ** 2))
    west = np.column_stack([x, y])
    # South coast, west to east: y as a function of x with a second bay near x = 80 km.
    xs = np.linspace(10.0, 118.0, 109)
    ys = 3.0 + 1.6 * np.sin(xs / 5.0) + 1.0 * np.sin(xs / 1.9) + 12.0 * np.exp(-(((xs - 80.0) / 6.0) ** 2))
    south = np.column_stack([xs, ys])
    inland = np.array([[120.0, 3.0], [120.0, 80.0]])
    return np.vstack([west, south, inland])


def _lake() -> np.ndarray:
    t = np.linspace(0.0, 2.0 * np.pi, 60, endpoint=False)
    r = 1.0 + 0.18 * np.sin(3 * t) + 0.08 * np.cos(5 * t)
    return np.column_stack([78.0 + 9.0 * r * np.cos(t), 47.0 + 5.0 * r * np.sin(t)])


def orsavel(seed: int = 7, households: int = 12_000) -> Scenario:
    """The invented district of Orsavel with ``households`` weighted demand points."""
    import shapely

    km = 1000.0
    lake = shapely.Polygon(_lake() * km)
    region = shapely.Polygon(_coastline() * km, holes=[lake.exterior.coords])
    region = shapely.make_valid(region)
    shapely.prepare(region)

    names = [t[0] for t in _TOWNS]
    towns = np.array([[t[1], t[2]] for t in _TOWNS]) * km
    town_people = np.array([t[3] for t in _TOWNS], dtype=np.float64)

    rng = np.random.default_rng(seed)
    rural_share = 0.15
    per_town = np.floor(households * (1 - rural_share) * town_people / town_people.sum()).astype(int)
    chunks = []
    for centre, people, count in zip(towns, town_people, per_town):
        spread = 900.0 * np.sqrt(people / 1000.0)  # bigger towns sprawl further
        chunks.append(centre + rng.normal(scale=spread, size=(3 * count, 2)))
    chunks.append(rng.uniform([0, 0], [120 * km, 80 * km], size=(4 * households, 2)))
    quota = list(per_town) + [households - int(per_town.sum())]
    kept = []
    for pts, want in zip(chunks, quota):
        pts = pts[shapely.contains_xy(region, pts[:, 0], pts[:, 1])]
        kept.append(pts[:want])
    homes = np.vstack(kept)
    people = rng.choice([1.0, 2.0, 3.0, 4.0, 5.0], size=len(homes), p=[0.28, 0.34, 0.16, 0.15, 0.07])
    return Scenario("Orsavel", region, lake, names, towns, town_people, homes, people)
