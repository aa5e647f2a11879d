"""Short names of length units for column names (``distance_m``, ``gap_usft``), read from a
CRS's first axis: one table for the travel graph and for the GeoDataFrame functions, so the
same lines give the same unit name by either path.

Needs pyproj only when given a CRS that is not already a pyproj ``CRS`` (GeoPandas' CRS
objects are); never geopandas.
"""

from __future__ import annotations

from typing import Any

__all__ = ["length_unit_of", "unit_of"]

# By the axis unit's name as PROJ gives it, lower-cased.
_UNIT_NAMES = {
    "metre": "m",
    "meter": "m",
    "kilometre": "km",
    "kilometer": "km",
    "foot": "ft",
    "us survey foot": "usft",
    "foot_us": "usft",
}


def unit_of(crs: Any) -> str:
    """The short name of a CRS's length unit (``"m"``, ``"km"``, ``"ft"``, ``"usft"``; other
    units by their name's letters and digits); ``"u"`` (the coordinates' own unit) without a
    CRS or an axis unit."""
    if crs is None:
        return "u"
    if not hasattr(crs, "axis_info"):
        from pyproj import CRS

        crs = CRS(crs)
    axes = crs.axis_info
    name = (axes[0].unit_name if axes else "").strip().lower()
    return _UNIT_NAMES.get(name, "".join(ch for ch in name if ch.isalnum()) or "u")


def length_unit_of(crs: Any) -> str:
    """The unit lengths are measured in for lines in ``crs``: metres for a geographic CRS
    (geodesic lengths on the WGS84 ellipsoid), else the CRS's unit (:func:`unit_of`)."""
    if crs is not None and getattr(crs, "is_geographic", False):
        return "m"
    return unit_of(crs)
