"""Enclosing shapes: the worst-case view of a set of demand points.

The smallest circle covering a cloud, the site whose largest (weighted) trip is least, and
the smallest ellipse covering a cloud.

Every result knows its rows (``to_frame()``, ``to_geodataframe(crs=...)``): one row per
point set (per group with ``groups=``), lengths suffixed with the coordinates' unit
(``radius_u``, ``semi_major_u``, ``area_u2``) and angles in degrees (``angle_deg``,
counter-clockwise from the +x axis). A circle's or ellipse's geometry is a 128-gon that
circumscribes the exact curve, so every point the curve covers is inside the polygon.
``support`` (the input rows that fix the shape) is ragged, so it is an attribute rather
than a column.
"""

from __future__ import annotations

# typing.get_type_hints resolves a class's field annotations ("np.ndarray") in the module the
# class names, which is this package (see the end): the names they use must be here.
from typing import Any  # noqa: F401

import numpy as np  # noqa: F401

from .._package import adopt
from ._circle import Circle, Circles, enclosing_circle
from ._ellipse import Ellipse, Ellipses, enclosing_ellipse
from ._minimax import MinimaxPoint, MinimaxPoints, minimax_point

# The shared parts that the geodesic results build on (placewise.geodesic).
from ._shapes import _geometries as _geometries
from ._shapes import _GroupedWithSupport as _GroupedWithSupport
from ._shapes import _one as _one
from ._shapes import _xy as _xy

__all__ = [
    "Circle",
    "Circles",
    "Ellipse",
    "Ellipses",
    "MinimaxPoint",
    "MinimaxPoints",
    "enclosing_circle",
    "enclosing_ellipse",
    "minimax_point",
]

# The public objects live in the private modules above but belong to this package: their
# reprs, pickles, reference entries and doctests name it, as they did when it was one module.
adopt(globals())
