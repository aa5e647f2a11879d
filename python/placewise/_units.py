"""Short names of length units for column names (``distance_m``, ``gap_usft``), read from a
CRS's first axis: one table for the travel graph and for the GeoDataFrame functions, so the
same lines give the same unit name by either path.

Needs pyproj only when given a CRS that is not already a pyproj ``CRS`` (GeoPandas' CRS
objects are); never geopandas.
"""

from __future__ import annotations

from typing import Any

import numpy as np

__all__ = ["check_on_earth", "check_unit", "length_unit_of", "si_per_unit", "unit_of", "unit_words"]

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


def si_per_unit(crs: Any, default: float = 1.0) -> float:
    """Metres (projected) or radians (geographic) in one unit of a CRS's first axis, as PROJ
    gives it: 0.3048006 for US survey feet, pi/200 for grads; ``default`` where the CRS has no
    axis or no usable factor.

    Examples
    --------
    >>> from placewise._units import si_per_unit
    >>> round(si_per_unit("EPSG:2263"), 7), si_per_unit("EPSG:32632")
    (0.3048006, 1.0)
    """
    if not hasattr(crs, "axis_info"):
        from pyproj import CRS

        crs = CRS(crs)
    axes = crs.axis_info
    factor = float(axes[0].unit_conversion_factor) if axes else default
    return factor if np.isfinite(factor) and factor > 0 else default


def unit_words(unit: str) -> str:
    """A length unit as a sentence writes it: the unnamed default ``"u"`` (planar input
    without a CRS) as "coordinate units", any other as it is named.

    Examples
    --------
    >>> from placewise._units import unit_words
    >>> unit_words("u"), unit_words("m")
    ('coordinate units', 'm')
    """
    return "coordinate units" if unit == "u" else unit


def check_unit(unit: Any, argument: str = "unit") -> str:
    """``unit`` when it can name a column's unit (``cost_<unit>``): a non-empty string of
    letters, digits and underscores, as :func:`unit_of` makes them; else an ``InputError``
    naming ``argument``.

    Examples
    --------
    >>> from placewise._units import check_unit
    >>> check_unit("min")
    'min'
    >>> check_unit("")
    Traceback (most recent call last):
        ...
    placewise.InputError: unit must be a non-empty name of letters, digits and underscores ...; got ''
    """
    if isinstance(unit, str) and unit and all(ch.isalnum() or ch == "_" for ch in unit):
        return unit
    from ._core import InputError

    error = InputError(f"{argument} must be a non-empty name of letters, digits and underscores (it ends column "
                       f"names such as cost_min); got {unit!r}")
    error.argument = argument
    raise error


def length_unit_of(crs: Any) -> str:
    """The unit lengths are measured in for lines in ``crs``: metres for a geographic CRS
    (geodesic lengths on the WGS84 ellipsoid), else the CRS's unit (:func:`unit_of`)."""
    if crs is not None and getattr(crs, "is_geographic", False):
        return "m"
    return unit_of(crs)


# WGS84's semi-major axis (EPSG:7030); every Earth ellipsoid in use lies within 0.02 % of it.
_WGS84_SEMI_MAJOR_METRE = 6378137.0


def check_on_earth(crs: Any, argument: str) -> None:
    """Refuse a geographic CRS of another body (Mars, the Moon): longitude/latitude data are
    measured on the WGS84 ellipsoid (or transformed to it), so their lengths would be the
    Earth's, wrong by the ratio of the radii. An ``InputError`` naming ``argument``."""
    if crs is None or not getattr(crs, "is_geographic", False):
        return
    ellipsoid = crs.ellipsoid
    if ellipsoid is None or abs(ellipsoid.semi_major_metre / _WGS84_SEMI_MAJOR_METRE - 1) <= 0.01:
        return
    from ._core import InputError

    error = InputError(
        f"{argument}: the CRS {crs.name!r} lies on {ellipsoid.name!r} (semi-major axis "
        f"{ellipsoid.semi_major_metre:.6g} m), not the Earth; longitude/latitude data are measured on WGS84, so "
        f"give {argument} in a projected CRS of that body")
    error.argument = argument
    raise error
