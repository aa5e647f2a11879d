"""Coverage standards and sites chosen from candidate frames, on GeoDataFrames.

* :func:`cover_all` — the fewest sites putting every demand row within ``radius`` (location
  set covering; Toregas, Swain, ReVelle & Bergman 1971);
* :func:`cover_most` — ``p`` sites covering the most demand weight within ``radius``
  (maximal covering; Church & ReVelle 1974);
* :func:`evaluate_sites` — how the sites of today's network serve the demand.

Candidate sites (a frame of parcels, say) and existing sites come as frames of their own and
are brought into the demand's working CRS (:func:`~placewise.gis._together.prepare_together`).
Every answer is a :class:`~placewise.gis.SitePlan` whose tables come from the result's own
tables (:mod:`placewise.discrete`): the ``sites`` name the row each site came from, the
``demand`` says whether and how often each row is covered, and the ``summary`` holds the
covered weight and share, the uncovered rows and the proven bound.
"""

from __future__ import annotations

import re
from typing import Any

import numpy as np

import placewise as _pw

from .._core import InputError
from .._errors import labelled, plain
from ._crs import MAX_SCALE_ERROR
from ._frames import Prepared, annotated, call, in_user_terms, refuse_geometry_named, weights, with_unit
from ._together import prepare_together

__all__ = ["cover_all", "cover_most", "evaluate_sites"]


class Sources:
    """Where each of a discrete kernel's candidate locations came from: the name of its frame
    (``"candidates"``, ``"fixed"``, ``"sites"``, or ``"anywhere"`` for a location the method
    constructed) and its row label there (None for ``"anywhere"``)."""

    def __init__(self) -> None:
        self.names: list[np.ndarray] = []
        self.labels: list[np.ndarray] = []

    def add(self, name: str, prepared: Prepared | None = None, rows: np.ndarray | None = None,
            count: int = 0) -> None:
        """Append a frame's rows (all, or the positions ``rows``), or ``count`` constructed ones."""
        if prepared is None:
            self.names.append(np.full(count, name, dtype=object))
            self.labels.append(np.full(count, None, dtype=object))
            return
        labels = prepared.rows if rows is None else prepared.rows[rows]
        self.names.append(np.full(len(labels), name, dtype=object))
        self.labels.append(np.asarray(labels, dtype=object))

    def columns(self, candidate: np.ndarray) -> dict[str, np.ndarray]:
        names = np.concatenate(self.names) if self.names else np.empty(0, dtype=object)
        labels = np.concatenate(self.labels) if self.labels else np.empty(0, dtype=object)
        return {"source": names[candidate], "source_row": labelled(candidate, labels)}


def selection_plan(result: Any, pf: Prepared, sources: Sources) -> Any:
    """A discrete result (:mod:`placewise.discrete`) as a :class:`~placewise.gis.SitePlan`
    in the caller's CRS and terms.

    ``sites``: one point per open site (index ``site``, the value the demand's ``site``
    holds), its ``source`` frame and ``source_row`` label there, ``x``/``y`` in the working
    CRS, ``load``, ``points`` and ``fixed``. ``demand``: the demand frame with ``site``,
    ``distance_<unit>`` and, with a radius, ``covered`` and ``covering`` (backup coverage).
    ``summary``: the result's totals and bound, ``uncovered_points`` with a radius, and for
    geographic input the working frame and its scale error.
    """
    import geopandas as gpd

    from .plans import SitePlan

    result = with_unit(result, pf)
    table = result.sites_frame()
    candidate = table.pop("candidate").to_numpy(dtype=np.int64)
    for position, (name, values) in enumerate(sources.columns(candidate).items()):
        table.insert(position, name, values)
    geometry = pf.back(gpd.points_from_xy(table["x"], table["y"])).values
    sites = gpd.GeoDataFrame(table, geometry=geometry, crs=pf.crs)
    sites.index.name = "site"

    rows = result.to_frame()
    assignment = rows["assignment"].to_numpy(dtype=np.int64)
    columns = {"site": np.where(assignment >= 0, assignment, None),  # -1: no site may serve the row
               f"distance_{pf.unit}": rows[f"cost_{pf.unit}"].to_numpy()}
    if "covered" in rows.columns:
        columns["covered"] = rows["covered"].to_numpy(dtype=bool)
        columns["covering"] = rows["covering"].to_numpy(dtype=np.int64)
    demand = annotated(pf.frame, columns, "frame")

    summary = result.summary()
    if "covered" in rows.columns:
        summary["uncovered_points"] = int((~demand["covered"].to_numpy(dtype=bool)).sum())
    return SitePlan(sites, demand, in_user_terms(summary, result, None, prepared=pf))


def refuse_geometry_before(pf: Prepared, radius: bool) -> None:
    """Refuse, before the solve, a demand frame whose geometry column has the name of a
    column :func:`selection_plan` writes onto it (with a radius: the coverage ones too)."""
    covering = ["covered", "covering"] if radius else []
    refuse_geometry_named(pf.frame, ["site", f"distance_{pf.unit}", *covering], "frame")


def _radius(radius: Any) -> float:
    """A coverage radius: a finite number above zero (checked here so the message names it
    in this layer's terms, units included)."""
    if isinstance(radius, bool) or not isinstance(radius, (int, float, np.integer, np.floating)):
        raise InputError(f"radius must be a number (metres for geographic input, else the CRS's unit); "
                         f"got {type(radius).__name__}")
    if not (np.isfinite(radius) and radius > 0):
        raise InputError(f"radius must be finite and above zero (metres for geographic input, else the CRS's unit); "
                         f"got {radius!r}")
    return float(radius)


def _candidate_named(exc: InputError, cf: Prepared | None, ff: Prepared | None) -> InputError:
    """``exc`` with an uncoverable point's nearest candidate named by its frame and row label.

    The coordinate models name it ``candidates[j]`` (restated by :func:`call` with the
    candidates' row labels); here the candidates are followed by the existing sites, so a
    position past the candidates is an existing site, named as ``fixed`` and its label."""
    detail = getattr(exc, "detail", None)
    if cf is None or ff is None or detail is None:
        # Without existing sites every position is a candidate's, named already; sites
        # anywhere: every point is a candidate, so no point is left uncovered.
        return exc
    positions = detail.describe(str, lambda argument, row: str(row))
    match = re.search(r"its nearest candidate, candidates\[(\d+)\]", positions)
    if match is None or int(match[1]) < len(cf.rows):
        return exc
    k = int(match[1]) - len(cf.rows)
    text = str(exc).replace(f"its nearest candidate, candidates[{match[1]}]",
                            f"its nearest existing site, fixed[{plain(ff.rows[k])!r}]")
    return _with_attributes(type(exc)(text), exc)


def _with_attributes(out: InputError, exc: InputError) -> InputError:
    for name in ("argument", "group", "row", "detail"):
        if hasattr(exc, name):
            setattr(out, name, getattr(exc, name))
    return out


def with_candidate_labels(exc: InputError, rows: np.ndarray, fixed_rows: np.ndarray | None = None) -> InputError:
    """``exc`` of a cost-matrix model (network costs) with the kernel's candidate column named
    by its row label: a column below ``len(rows)`` is a candidate of row label
    ``rows[column]``, the next ones the existing sites of ``fixed_rows``; other errors come
    back unchanged."""
    text = str(exc)
    match = re.search(r"cheapest candidate, column (\d+)", text)
    if match is None:
        return exc
    column = int(match[1])
    offered = len(rows)
    if column < offered:
        named = f"cheapest candidate, row {plain(rows[column])!r}"
    elif fixed_rows is not None and column - offered < len(fixed_rows):
        named = f"nearest existing site, fixed row {plain(fixed_rows[column - offered])!r}"
    else:
        return exc
    return _with_attributes(type(exc)(text.replace(match[0], named)), exc)


def _sites_offered(cf: Prepared | None, ff: Prepared | None) -> tuple[Any, Any, dict[str, Any]]:
    """The ``candidates`` and ``fixed`` arguments of the coordinate models for a candidates
    frame (None: sites anywhere) and a frame of existing sites, and the row labels of the
    candidates. Given candidates, the existing sites follow them and ``fixed`` indexes them;
    anywhere, ``fixed`` holds their coordinates (the model appends them to its dominating
    set)."""
    if cf is None:
        return None, None if ff is None else ff.xy, {}
    return (*followed_by_existing(cf.xy, ff), {"candidates": cf.rows})


def followed_by_existing(where: np.ndarray, ff: Prepared | None) -> tuple[np.ndarray, np.ndarray | None]:
    """The candidate coordinates ``where`` with the existing sites of ``ff`` appended, and the
    indices of those (the models' ``fixed``; None without existing sites)."""
    if ff is None:
        return where, None
    return np.concatenate([where, ff.xy]), np.arange(len(where), len(where) + len(ff.xy))


def _sources(result: Any, cf: Prepared | None, ff: Prepared | None) -> Sources:
    """Where each of ``result.candidates`` came from, in the order of :func:`_sites_offered`."""
    sources = Sources()
    existing = 0 if ff is None else len(ff.xy)
    if cf is None:
        sources.add("anywhere", count=len(result.candidates) - existing)
    else:
        sources.add("candidates", cf)
    if ff is not None:
        sources.add("fixed", ff)
    return sources


def _rows(pf: Prepared) -> dict[str, Any]:
    return {"points": pf.rows, "weights": pf.rows}


def cover_all(
    frame: Any, radius: float, weight: Any = None, candidates: Any = None, fixed: Any = None, *,
    planar: bool = False, centroids: bool = False, work_crs: Any = None, max_scale_error: float = MAX_SCALE_ERROR,
    time_limit: float | None = None, progress: Any = False,
) -> Any:
    """The fewest sites putting every demand row within ``radius`` (location set covering).

    Sites are chosen among the rows of ``candidates``, or anywhere (exactly, among the
    finite dominating set of Church 1984; see :func:`placewise.cover_all`); existing sites
    in ``fixed`` stay open, and only the new sites the rows beyond their reach need are
    chosen. Straight-line distance in the working CRS.

    Parameters
    ----------
    frame : GeoDataFrame or GeoSeries of demand points
    radius : float
        The coverage standard: **metres** for geographic (longitude/latitude) input, which
        is solved in a projected working frame (its UTM zone; see :mod:`placewise.gis`;
        with a ``work_crs`` in another unit, such as US survey feet, the radius is converted
        to it and the ``radius_<unit>`` column states it there), and the CRS's own unit
        otherwise (the coordinates' unit with ``planar=True``). Finite and above zero.
    weight : str, Series or array_like, optional
        Demand weight column, for the loads and the covered weight: its name, a Series
        matched to the rows by index label, or one value per row by position (as in
        :func:`placewise.gis.weber_point`); default 1.
    candidates : GeoDataFrame or GeoSeries of points, optional
        Where sites may go (e.g. parcels; ``centroids=True`` takes polygons' centroids), in
        any CRS. Default: anywhere.
    fixed : GeoDataFrame or GeoSeries of points, optional
        Existing sites, open whatever the plan, in any CRS; ``chosen`` and ``lower_bound``
        count only new sites.
    planar, centroids, work_crs, max_scale_error
        As in :func:`placewise.gis.weber_point`; for geographic input the working frame is
        chosen over the demand, the candidates and the existing sites together.
    time_limit, progress
        As in :func:`placewise.cover_all`: seconds after which the cover found so far comes
        back with the bound proven so far, and a progress bar (True) or callable.

    Returns
    -------
    SitePlan
        ``sites``: one point per site, index ``site``, with ``source`` ("candidates",
        "fixed", or "anywhere" for a constructed location), ``source_row`` (the candidate's row label:
        which parcel), ``x``/``y`` (working CRS), ``load``, ``points``, ``fixed``.
        ``demand``: the frame with ``site``, ``distance_<unit>``, ``covered`` and
        ``covering`` (how many sites are within the radius: backup coverage).
        ``summary``: ``sites``, ``cost_<unit>`` (total weighted distance),
        ``mean_cost_<unit>``, ``worst_cost_<unit>``, ``weighted_worst_<unit>``, ``load``,
        ``points``, ``radius_<unit>``, ``covered_load``, ``covered_share``, ``chosen``
        (new sites), ``lower_bound`` (proven least number of new sites), ``relative_gap``,
        ``uncovered_points`` (0), and for geographic input ``work_crs`` and ``scale_error``.

    Raises
    ------
    InputError
        For a radius that is not a number above zero, a demand row no candidate covers
        (naming the row), and the frame errors of :mod:`placewise.gis`.

    Notes
    -----
    For geographic input the radius is compared with distances in the working frame, which
    differ from geodesic ones by at most the reported ``scale_error`` (a relative error,
    0.1 % by default): a point within that margin of the radius may be counted either way.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> homes = gpd.GeoSeries(gpd.points_from_xy([0, 1, 9, 10], [0, 0, 0, 1]))
    >>> parcels = gpd.GeoSeries(gpd.points_from_xy([0.5, 5, 9.5], [0, 0, 0.5]), index=["p1", "p2", "p3"])
    >>> plan = gis.cover_all(homes, 1.5, candidates=parcels, planar=True)
    >>> plan.sites["source_row"].tolist(), int(plan.summary["lower_bound"].iloc[0])
    (['p1', 'p3'], 2)
    >>> plan.demand["covering"].tolist()
    [1, 1, 1, 1]

    A clinic already stands beside the first two homes; one new parcel covers the rest:

    >>> clinic = gpd.GeoSeries(gpd.points_from_xy([0.5], [0]), index=["old clinic"])
    >>> more = gis.cover_all(homes, 1.5, candidates=parcels, fixed=clinic, planar=True)
    >>> more.sites[["source", "source_row"]].values.tolist(), int(more.summary["chosen"].iloc[0])
    ([['candidates', 'p3'], ['fixed', 'old clinic']], 1)
    """
    radius = _radius(radius)
    model = {"work_crs": work_crs, "max_scale_error": max_scale_error}
    pf, companions = prepare_together(frame, "frame", {"candidates": candidates, "fixed": fixed}, planar=planar,
                                      centroids=centroids, **model)
    cf, ff = companions.get("candidates"), companions.get("fixed")
    where, existing, rows = _sites_offered(cf, ff)
    refuse_geometry_before(pf, radius=True)
    radius = pf.from_metres(radius)
    try:
        result = call(_pw.cover_all, pf.xy, radius, measured_in=pf.unit, rows={**_rows(pf), **rows, "radius": pf.rows},
                      weights=weights(pf, weight, "frame"), candidates=where, fixed=existing,
                      time_limit=time_limit, progress=progress)
    except InputError as exc:
        raise _candidate_named(exc, cf, ff) from None
    return selection_plan(result, pf, _sources(result, cf, ff))


def cover_most(
    frame: Any, p: int, radius: float, weight: Any = None, candidates: Any = None, fixed: Any = None, *,
    planar: bool = False, centroids: bool = False, work_crs: Any = None, max_scale_error: float = MAX_SCALE_ERROR,
    time_limit: float | None = None, progress: Any = False,
) -> Any:
    """``p`` new sites covering the most demand weight within ``radius`` (maximal covering).

    Sites are chosen among the rows of ``candidates``, or anywhere (exactly, among the
    finite dominating set of Church 1984); existing sites in ``fixed`` stay open and count
    toward the coverage. A proven upper bound on the weight any ``p`` new sites can cover
    comes with the plan (Lagrangian relaxation; see :func:`placewise.discrete.cover_most`).

    Parameters
    ----------
    frame : GeoDataFrame or GeoSeries of demand points
    p : int
        Number of new sites (anywhere: at most the candidates of the dominating set, as in
        :func:`placewise.cover_most`).
    radius : float
        Metres for geographic input, else the CRS's unit (see :func:`cover_all`).
    weight : str, Series or array_like, optional
        Demand weight column (or values, as in :func:`cover_all`); default 1 per row.
    candidates : GeoDataFrame or GeoSeries of points, optional
        Where new sites may go. Default: anywhere.
    fixed : GeoDataFrame or GeoSeries of points, optional
        Existing sites, open whatever the plan (``p`` counts only new ones).
    planar, centroids, work_crs, max_scale_error, time_limit, progress
        As in :func:`cover_all` (the time limit counts from the call's start, finding the
        candidates anywhere included).

    Returns
    -------
    SitePlan
        As :func:`cover_all` (``source`` "fixed" and ``fixed`` True for the existing
        sites), with ``upper_bound`` and ``relative_gap`` in the summary in place of
        ``chosen`` and ``lower_bound``; ``uncovered_points`` counts the demand rows beyond
        the radius of every site.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> villages = gpd.GeoDataFrame({"people": [5, 5, 1, 1, 1]},
    ...                             geometry=gpd.points_from_xy([0, 1, 8, 9, 9], [0, 0, 0, 0, 1]))
    >>> best = gis.cover_most(villages, 1, 1.5, "people", planar=True)
    >>> float(best.summary["covered_load"].iloc[0]), int(best.summary["uncovered_points"].iloc[0])
    (10.0, 3)
    >>> clinic = gpd.GeoSeries(gpd.points_from_xy([0.5], [0]), index=["old clinic"])
    >>> more = gis.cover_most(villages, 1, 1.5, "people", fixed=clinic, planar=True)
    >>> more.sites[["source", "fixed"]].values.tolist(), float(more.summary["covered_share"].iloc[0])
    ([['anywhere', False], ['fixed', True]], 1.0)
    >>> more.sites["source_row"].tolist()[1]
    'old clinic'
    >>> gis.cover_most(villages, 1, 0, planar=True)
    Traceback (most recent call last):
    ...
    placewise.InputError: radius must be finite and above zero (metres for geographic input, else the CRS's unit); got 0
    """
    radius = _radius(radius)
    model = {"work_crs": work_crs, "max_scale_error": max_scale_error}
    pf, companions = prepare_together(frame, "frame", {"candidates": candidates, "fixed": fixed}, planar=planar,
                                      centroids=centroids, **model)
    cf, ff = companions.get("candidates"), companions.get("fixed")
    where, existing, rows = _sites_offered(cf, ff)
    refuse_geometry_before(pf, radius=True)
    radius = pf.from_metres(radius)
    result = call(_pw.cover_most, pf.xy, p, radius, weights(pf, weight, "frame"), measured_in=pf.unit,
                  rows={**_rows(pf), **rows},
                  candidates=where, fixed=existing, time_limit=time_limit, progress=progress)
    return selection_plan(result, pf, _sources(result, cf, ff))


def evaluate_sites(
    frame: Any, sites_frame: Any, weight: Any = None, radius: float | None = None, *, planar: bool = False,
    centroids: bool = False, work_crs: Any = None, max_scale_error: float = MAX_SCALE_ERROR,
) -> Any:
    """How today's sites serve the demand: every row to its nearest site, with the totals a
    plan reports, so a plan and the status quo compare line by line.

    Parameters
    ----------
    frame : GeoDataFrame or GeoSeries of demand points
    sites_frame : GeoDataFrame or GeoSeries of points
        The sites as they are (any CRS).
    weight : str, Series or array_like, optional
        Demand weight column (or values, as in :func:`cover_all`); default 1 per row.
    radius : float, optional
        A coverage standard: metres for geographic input, else the CRS's unit (see
        :func:`cover_all`); adds the coverage columns.
    planar, centroids, work_crs, max_scale_error
        As in :func:`cover_all`.

    Returns
    -------
    SitePlan
        As :func:`cover_all`, every site with ``source`` "sites" and ``source_row`` its
        row label in ``sites_frame``; the summary has no bound (nothing was chosen).
        Distances are straight lines in the working frame (geographic input: its UTM
        zone, whose ``scale_error`` the summary states; :func:`placewise.gis.nearest_site`
        measures geodesic distances instead).

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> homes = gpd.GeoSeries(gpd.points_from_xy([0, 3, 10], [0, 4, 0]))
    >>> now = gis.evaluate_sites(homes, gpd.GeoSeries(gpd.points_from_xy([0, 10], [0, 0])), radius=4, planar=True)
    >>> now.demand["covered"].tolist(), float(now.summary["covered_share"].iloc[0])
    ([True, False, True], 0.6666666666666666)
    """
    if radius is not None:
        radius = _radius(radius)
    model = {"work_crs": work_crs, "max_scale_error": max_scale_error}
    pf, companions = prepare_together(frame, "frame", {"sites": sites_frame}, planar=planar, centroids=centroids,
                                      **model)
    sf = companions["sites"]
    refuse_geometry_before(pf, radius=radius is not None)
    if radius is not None:
        radius = pf.from_metres(radius)
    result = call(_pw.evaluate_sites, pf.xy, sf.xy, weights(pf, weight, "frame"), radius=radius, measured_in=pf.unit,
                  rows={**_rows(pf), "sites": sf.rows})
    sources = Sources()
    sources.add("sites", sf)
    return selection_plan(result, pf, sources)
