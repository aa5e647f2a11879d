"""GeoPandas layer: every kernel on GeoDataFrames, in the frame's own CRS.

Each function takes a ``GeoDataFrame`` (or ``GeoSeries``) of points and returns
GeoDataFrames in the input's CRS. Coordinates are handled as follows:

* a **projected** CRS is used as it is — distances, costs and areas come out in its units,
  named in the columns (``distance_m``, ``area_m2``; ``_ft`` for feet). Its scale error
  over the data is measured too (PROJ's scale factors): beyond ``max_scale_error`` (Web
  Mercator away from the equator, a zone used far outside its area) a ``UserWarning``
  states the figure, since those units then differ from true lengths by that much;
  ``work_crs=`` solves in a frame that holds;
* a **geographic** CRS (degrees) is checked (latitudes within ±90, longitudes within
  ±540, swapped columns named). :func:`weber_point`, :func:`minimax_point`,
  :func:`enclosing_circle` and :func:`nearest_site` then solve on the WGS84 ellipsoid itself
  (:mod:`placewise.geodesic`): geodesic metres at any extent, across the antimeridian and
  near the poles, with ``work_crs`` reading "WGS84 ellipsoid" and ``scale_error`` 0. The
  other functions project to a UTM zone — the frame's, or with ``by=``
  each group's own — the kernel runs there, and geometries are projected back: distances
  and costs are metres and areas square metres. A shape's edges are straight in the
  working frame, so vertices are put along them there before they are projected back,
  until every edge drawn in the caller's CRS lies within 1 cm of its course in the working
  frame (a spatial join of points to the returned cells then agrees with the cells the
  kernel made); a shape crossing the antimeridian is cut there into a MultiPolygon or
  MultiLineString, and a cell or ellipse holding a pole is closed through it, as GeoJSON
  (RFC 7946 §3.1.9) asks. The areas of cells and triangles (``area_m2``) are those of the
  shapes drawn back, on the WGS84 ellipsoid (a planar area in the frame would err by about
  twice its scale error). The zone's worst scale error over the data
  is measured (PROJ's scale factors) and stated in the ``scale_error`` and ``work_crs``
  columns; beyond ``max_scale_error`` (default 0.1 %) the call is refused with an
  ``InputError`` saying how to proceed (split with ``by=``, or choose ``work_crs=``), never
  answered with silently distorted metres. Ungrouped data too wide for any frame (global,
  polar, wide across the antimeridian) is answered on the sphere by :func:`voronoi_cells`,
  :func:`delaunay` and :func:`spanning_tree` (:mod:`placewise.geodesic`), with
  ``work_crs`` stating that model;
* **candidates, existing sites and regions** come as frames of their own, in any CRS, and
  are brought into the points' working CRS; for geographic input that frame is chosen over
  all of them together, so its ``scale_error`` covers every location the model uses. A
  region in another CRS than the working one, geographic or projected, is densified along
  its edges in its own CRS before it is projected: a straight edge in one CRS is a curve in
  another (a 200 km edge in Web Mercator sags some 350 m in UTM when only its ends are
  projected), and the pieces, at most a thousandth of the region's extent and about 1 km
  long, keep the projected region within about 2 cm of its true edges. A coverage
  ``radius`` is in **metres** for geographic input and in the CRS's unit otherwise.
  :func:`weber_point` and :func:`minimax_point` with a ``region`` solve in a projected
  working frame (the ellipsoid forms take no region);
* **no CRS** raises ``InputError`` unless ``planar=True`` says the coordinates are already
  planar (columns then end in ``_u``: the coordinates' own unit).

**Rows.** Every frame's row labels (its index) must be unique: the results name rows by
them (a plan's ``source_row``, the ``site`` a demand row goes to, a tree's ends, the rows an
error names), so a repeated label, which would name two rows at once, is refused with an
``InputError`` naming the argument and the label (``reset_index()`` numbers the rows
afresh). Per-row values (``weight``, ``capacity``) are a column's name; a pandas Series,
matched to the rows by index label as pandas assignment matches it (labels the frame lacks
are left out; a row label the Series lacks, or a label it repeats, is refused, naming the
labels); or an array or list of one value per row, taken by position.

Grouped runs (``by=``) call the kernel's grouped form once and return rows sorted by the
group value, with a ``problem`` column (``None``, or why a group was skipped with
``errors="skip"``). Errors name the user's group values and row labels. Totals (a plan's
cost, a tree's length and saving) are columns of a ``summary`` table, never only
attributes, so every file writer keeps them. Layers that copy the caller's frame (a plan's
``demand``, an allocation's ``sites``) add the result's columns after the frame's own; a
column of the frame with the same name (``site``, ``load``) is replaced, and when its values
differ a ``UserWarning`` names it.

Results are planning aids under the model (straight-line distance in the working CRS, or
geodesic distance on the ellipsoid, and the given weights); check them against local
regulations and licensed professional judgement.

Requires the ``geo`` extra (geopandas, pyproj).
"""

from __future__ import annotations

from .capacities import AllocationLayers, CellLayers, capacity_allocation, capacity_cells
from .catchments import delaunay, power_cells, voronoi_cells
from .coverage import cover_all, cover_most, evaluate_sites
from .networks import Network, spanning_tree, steiner_tree
from .plans import SitePlan, nearest_site, p_center, p_median
from .sites import enclosing_circle, enclosing_ellipse, minimax_point, weber_point

__all__ = [
    "AllocationLayers",
    "CellLayers",
    "Network",
    "SitePlan",
    "capacity_cells",
    "capacity_allocation",
    "cover_all",
    "cover_most",
    "delaunay",
    "enclosing_circle",
    "enclosing_ellipse",
    "evaluate_sites",
    "minimax_point",
    "nearest_site",
    "p_center",
    "p_median",
    "power_cells",
    "spanning_tree",
    "steiner_tree",
    "voronoi_cells",
    "weber_point",
]
