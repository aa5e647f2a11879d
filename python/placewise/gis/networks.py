"""Networks linking a GeoDataFrame's points: minimum spanning tree and Steiner tree."""

from __future__ import annotations

from typing import Any, Literal, NamedTuple

import placewise as _pw

from .._sphere import SPHERE_MODEL
from ._crs import MAX_SCALE_ERROR
from ._frames import framed, in_user_terms, solve_points, with_unit

__all__ = ["Network", "spanning_tree", "steiner_tree"]


class Network(NamedTuple):
    """A network as two layers that every file writer keeps.

    Attributes
    ----------
    edges : GeoDataFrame
        One LineString per edge: ``end_a``, ``end_b`` (the linked rows' index labels; None
        for an added junction), ``length_<unit>``, plus the ``by`` column and ``problem``
        for grouped runs.
    summary : DataFrame
        One row per tree (per group): ``points`` (rows linked), ``length_<unit>`` and, for
        Steiner trees, ``mst_length_<unit>``, ``saving`` (1 − length / MST length),
        ``junctions`` (Steiner points added), ``optimal`` (proven), ``lower_bound_<unit>``
        (a proven lower bound on the shortest tree) and ``relative_gap``.
    """

    edges: Any
    summary: Any


def _network(kernel: Any, frame: Any, by: str | None, planar: bool, centroids: bool, errors: str,
             options: dict[str, Any], model: dict[str, Any], sphere: Any = None) -> Network:
    pf, result, rows = solve_points(frame, "frame", kernel, sphere, planar=planar, centroids=centroids, by=by,
                                    errors=errors, **model, **options)
    groups = pf.groups
    edges = framed(result, pf, groups, rows, row_columns=("end_a", "end_b"))
    summary = with_unit(result, pf).summary()
    if groups is None:
        summary.insert(0, "points", len(pf.xy))
    summary = in_user_terms(summary, result, groups, rows, count=True, prepared=pf)
    if pf.ellipsoid:
        edges["work_crs"] = SPHERE_MODEL
        summary["work_crs"] = SPHERE_MODEL
    return Network(edges, summary)


def spanning_tree(
    frame: Any, by: str | None = None, *, planar: bool = False, centroids: bool = False, work_crs: Any = None,
    max_scale_error: float = MAX_SCALE_ERROR,
    errors: Literal["raise", "skip"] = "raise", progress: Any = False,
) -> Network:
    """The Euclidean minimum spanning tree linking a frame's points (one per group with ``by``).

    Geographic points that no working frame holds within ``max_scale_error`` (global,
    polar, wide across the antimeridian; without ``by`` and ``work_crs``) get the
    great-circle minimum spanning tree on the sphere (:func:`placewise.geodesic.spanning_tree`)
    instead of a refusal: WGS84 geodesic ``length_m``, edges drawn along great circles and
    split at the antimeridian, ``work_crs`` stating the model.

    Parameters
    ----------
    progress : bool or callable
        A progress bar on stderr (True) or a callable ``(done, total)``, on the sphere and in
        the plane alike (with ``by``: the points of finished groups); Ctrl-C stops the run
        either way.

    Returns
    -------
    Network
        ``edges`` (LineStrings with ``end_a``, ``end_b`` as the rows' index labels and
        ``length_<unit>``) and ``summary`` (one row per tree with its total length).

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> pts = gpd.GeoSeries(gpd.points_from_xy([0, 1, 1, 0], [0, 0, 1, 1]))
    >>> float(gis.spanning_tree(pts, planar=True).summary["length_u"].iloc[0])   # three sides
    3.0
    """
    return _network(_pw.spanning_tree, frame, by, planar, centroids, errors, {"progress": progress},
                    {"work_crs": work_crs, "max_scale_error": max_scale_error}, sphere=_pw.geodesic.spanning_tree)


def steiner_tree(
    frame: Any, by: str | None = None, *, planar: bool = False, centroids: bool = False, work_crs: Any = None,
    max_scale_error: float = MAX_SCALE_ERROR,
    errors: Literal["raise", "skip"] = "raise", **options: Any,
) -> Network:
    """The Euclidean Steiner tree linking a frame's points, with its saving over the MST.

    Parameters
    ----------
    **options
        Passed to :func:`placewise.steiner_tree` (``exact``, ``seed``, ``time_limit``).

    Returns
    -------
    Network
        ``edges`` (an end at an added junction has ``end_a`` / ``end_b`` None) and
        ``summary`` with ``length_<unit>``, ``mst_length_<unit>``, ``saving``,
        ``junctions``, ``optimal``, ``lower_bound_<unit>`` and ``relative_gap``.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> pts = gpd.GeoSeries(gpd.points_from_xy([0, 1, 1, 0], [0, 0, 1, 1]))
    >>> net = gis.steiner_tree(pts, planar=True)
    >>> s = net.summary.iloc[0]
    >>> round(float(s["length_u"]), 9), int(s["junctions"])    # 1 + sqrt(3), two junctions
    (2.732050808, 2)
    """
    return _network(_pw.steiner_tree, frame, by, planar, centroids, errors, options,
                    {"work_crs": work_crs, "max_scale_error": max_scale_error})
