"""Sites serving demand on GeoDataFrames: nearest-site catchments of given sites, and the
p-median and p-center plans that choose the sites."""

from __future__ import annotations

from typing import Any, Literal, NamedTuple

import numpy as np

import placewise as _pw
from placewise import geodesic as _geodesic

from .._core import InputError
from .._errors import check_errors, plain
from ._columns import groups_of, shared_groups
from ._crs import MAX_SCALE_ERROR
from ._frames import (
    ELLIPSOID,
    Prepared,
    annotated,
    call,
    in_user_terms,
    prepare,
    refuse_geometry_named,
    weights,
    with_unit,
)
from ._together import candidates_held, prepare_together, region_geometry
from .capacities import capacities_of

__all__ = ["SitePlan", "nearest_site", "p_center", "p_median"]


class SitePlan(NamedTuple):
    """Sites and the demand they serve, as three tables that every file writer keeps.

    Attributes
    ----------
    sites : GeoDataFrame
        One point per site with its ``load`` (summed weight) and ``points`` (rows served);
        for plans also ``x``, ``y`` (the site's coordinates in the working CRS: metres of the
        UTM zone or other frame named by the summary's ``work_crs`` for longitude/latitude
        input, whose geometry stays in degrees) and ``fixed`` (an existing site). Its index
        labels name the sites.
    demand : GeoDataFrame
        A copy of the demand frame with ``site`` (the index label of the serving row of
        ``sites``) and ``distance_<unit>`` (to that site, in the working CRS's unit).
    summary : DataFrame
        One row (per group with ``by``) of totals: ``cost_<unit>`` (total weighted
        distance) or ``weighted_radius_<unit>`` (largest weighted distance, p-center), the
        number of ``sites``, and the demand's ``load`` and ``points``.
    """

    sites: Any
    demand: Any
    summary: Any


def _demand_layer(pf: Prepared, result: Any, site_labels: np.ndarray, name: str) -> Any:
    """The demand frame with its serving site (by the sites frame's label) and distance."""
    points = with_unit(result, pf).to_frame()
    assignment = points["assignment"].to_numpy(dtype=np.int64)
    served = assignment >= 0  # a point of a skipped group has no site
    site = np.full(len(points), None, dtype=object)
    site[served] = site_labels[assignment[served]]
    distance = [c for c in points.columns if c.startswith("distance_")][0]
    columns = {"site": site, distance: points[distance].to_numpy()}
    if "share" in points.columns:  # a capacitated plan: the share served by ``site``, cost, unserved
        for name in points.columns.drop(["assignment", distance]):
            columns[name] = points[name].to_numpy()
    return annotated(pf.frame, columns, name)


def _demand_columns(pf: Prepared, capacitated: bool = False) -> list[str]:
    """The columns :func:`_demand_layer` writes onto the demand frame, known before the solve."""
    return ["site", f"distance_{pf.unit}", *(["share", f"cost_{pf.unit}", "unserved"] if capacitated else [])]


def _summary(result: Any, pf: Prepared, groups: Any, rows: Any) -> Any:
    return in_user_terms(with_unit(result, pf).summary(), result, groups, rows, prepared=pf)


def nearest_site(
    demand: Any, sites: Any, weight: Any = None, *, by: str | None = None,
    planar: bool = False, centroids: bool = False, work_crs: Any = None, max_scale_error: float = MAX_SCALE_ERROR,
    errors: Literal["raise", "skip"] = "raise", progress: Any = False,
) -> SitePlan:
    """Assign every demand row to its nearest site (straight-line distance in the working CRS;
    geodesic distance on the WGS84 ellipsoid for geographic sites without ``work_crs``).

    Parameters
    ----------
    demand, sites : GeoDataFrame or GeoSeries of points
    weight : str, Series or array_like, optional
        Demand weight column's name; a pandas Series, matched to the rows by index label (see
        :func:`placewise.gis.weber_point`); or one value per row, by position. Default 1 per
        row.
    by : str, optional
        A column of both frames: each demand group is served only by the sites of its group.
    progress : bool or callable
        A progress bar on stderr (True) or a callable ``(done, total)`` counting demand rows
        (of every group, with ``by``), on the ellipsoid and in the plane alike; Ctrl-C stops
        the run within a fraction of a second either way.

    Returns
    -------
    SitePlan
        ``sites`` (the sites frame with ``load`` and ``points``), ``demand`` (with ``site``,
        the serving site's index label, and ``distance_<unit>``) and ``summary``.
        Geographic sites without ``work_crs`` are served on the ellipsoid
        (:func:`placewise.geodesic.nearest_site`): the geodesically nearest site and its
        geodesic distance in metres at any extent (the demand is transformed to WGS84 first
        if its CRS differs); the summary's ``work_crs`` reads "WGS84 ellipsoid".

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> sites = gpd.GeoSeries(gpd.points_from_xy([0, 10], [0, 0]), index=["west", "east"])
    >>> homes = gpd.GeoSeries(gpd.points_from_xy([1, 9, 8], [0, 0, 0]))
    >>> plan = gis.nearest_site(homes, sites, planar=True)
    >>> plan.demand["site"].tolist(), float(plan.summary["cost_u"].iloc[0])
    (['west', 'east', 'east'], 4.0)
    >>> plan.sites["load"].tolist()
    [1.0, 2.0]
    """
    model = {"work_crs": work_crs, "max_scale_error": max_scale_error}
    sf = prepare(sites, "sites", planar=planar, centroids=centroids, ellipsoid=True, **model)
    df = prepare(demand, "demand", planar=planar, centroids=centroids, work=ELLIPSOID if sf.ellipsoid else sf.work,
                 **model)
    kernel = _geodesic.nearest_site if sf.ellipsoid else _pw.nearest_site
    # A geometry column the result's columns would replace: refused before the solve.
    refuse_geometry_named(sf.frame, ["load", "points"], "sites")
    refuse_geometry_named(df.frame, _demand_columns(df), "demand")
    rows = {"points": df.rows, "weights": df.rows, "sites": sf.rows}
    w = weights(df, weight, "demand")
    groups = None
    check_errors(errors)
    if by is None:
        result = call(kernel, df.xy, sf.xy, w, rows=rows, measured_in=sf.unit, progress=progress)
    else:
        # Both frames coded on the union of their group values: a demand group without
        # sites is a problem (raise or skip); the sites of a value without demand serve
        # nobody and keep their row (load 0, count 0), with a summary row of their own.
        groups, site_codes = shared_groups(df.frame, sf.frame, by, ("demand", "sites"))
        result = call(kernel, df.xy, sf.xy, w, groups=groups, rows=rows, measured_in=sf.unit,
                      site_groups=site_codes, errors=errors, progress=progress)
    site_table = with_unit(result, sf).sites_frame()
    out_sites = annotated(sf.frame, {"load": site_table["load"].to_numpy(),
                                     "points": site_table["points"].to_numpy()}, "sites")
    return SitePlan(out_sites, _demand_layer(df, result, sf.frame.index.to_numpy(dtype=object), "demand"),
                    _summary(result, df, groups, rows))


def _plan(kind: str, frame: Any, p: int, weight: Any, by: str | None, planar: bool, centroids: bool,
          errors: str, options: dict[str, Any], model: dict[str, Any], fixed: Any = None,
          candidates: Any = None, region: Any = None) -> SitePlan:
    if candidates is not None and options.get("capacities") is None:
        # Every option goes on to the model, which takes those that apply with candidates and
        # refuses the rest by name (a misspelt one is a TypeError, as without candidates).
        return _plan_on_candidates(kind, frame, p, weight, by, planar, centroids, model, fixed, candidates, region,
                                   {k: v for k, v in options.items() if k != "capacities"}, errors)
    # Each group in a frame of its own, unless existing sites or a region must share the
    # demand's frame (chosen over all of them).
    pf, companions = prepare_together(frame, "frame", {"fixed": fixed}, planar=planar, centroids=centroids,
                                      region=region, by=by, **model)
    groups = pf.groups
    rows = {"points": pf.rows, "weights": pf.rows}
    if region is not None:
        options = {**options, "region": region_geometry(region, pf, "frame")}
    cf = None
    if candidates is not None:
        # The capacitated p-median on candidates (the uncapacitated one returned above).
        cf, caps = capacities_of(candidates, options["capacities"], planar=planar, centroids=centroids,
                                 work=pf.work, model=model)
        options = {**options, "candidates": cf.xy, "capacities": caps}
        rows["candidates"] = rows["capacities"] = cf.rows
    if fixed is not None:
        ff = companions["fixed"]
        options = {**options, "fixed": ff.xy}
        rows["fixed"] = ff.rows
        if groups is not None:
            # Each existing site serves only the demand of its own group. One whose group
            # value has no demand would serve nobody and drop out of the plan: refused, so no
            # existing site goes missing from the output unannounced.
            fixed_groups = groups_of(ff.frame, by, "fixed")
            assert fixed_groups is not None
            codes = groups.values.get_indexer(fixed_groups.values.take(fixed_groups.codes))
            if (codes < 0).any():
                lonely = [repr(plain(v)) for v in ff.frame.index[codes < 0][:5]]
                raise InputError(
                    f"fixed: rows {', '.join(lonely)} have a {by!r} value that no demand row has, so they "
                    "would serve nobody; drop them or add their demand"
                )
            options["fixed_groups"] = codes
    check_errors(errors)  # also without groups, where it is not passed on
    grouped = {} if groups is None else {"errors": errors}
    kernel = _pw.p_median if kind == "median" else _pw.p_center
    refuse_geometry_named(pf.frame, _demand_columns(pf, options.get("capacities") is not None), "frame")
    result = call(kernel, pf.xy, p, weights(pf, weight, "frame"), groups=groups, rows=rows, measured_in=pf.unit,
                  **grouped, **options)
    sites = with_unit(result, pf).sites_frame()
    if cf is not None:
        # Named as every other plan on candidates names its sites (the table contract).
        sites.insert(0, "source_row", cf.rows[result.chosen])
        sites.insert(0, "source", "candidates")
    site_layer = framed_sites(sites, pf, result, groups, rows)
    return SitePlan(site_layer, _demand_layer(pf, result, site_layer.index.to_numpy(dtype=object), "frame"),
                    _summary(result, pf, groups, rows))


def _plan_on_candidates(kind: str, frame: Any, p: int, weight: Any, by: str | None, planar: bool, centroids: bool,
                        model: dict[str, Any], fixed: Any, candidates: Any, region: Any,
                        options: dict[str, Any], errors: str) -> SitePlan:
    """The discrete p-median or p-center (:mod:`placewise.discrete`) on straight-line
    distances to the rows of ``candidates`` that the region holds; existing sites are
    appended to them as open candidates (they may lie outside the region)."""
    from .coverage import Sources, followed_by_existing, selection_plan

    if by is not None:
        raise InputError("by= is not supported with candidates (sites chosen from a list); run each group on its own")
    pf, companions = prepare_together(frame, "frame", {"candidates": candidates, "fixed": fixed}, planar=planar,
                                      centroids=centroids, region=region, **model)
    cf, ff = companions["candidates"], companions.get("fixed")
    where, kept = cf.xy, None
    if region is not None:
        # Tested in the region's own CRS, where its edges are straight as drawn.
        where, kept = candidates_held(cf, region, pf, "frame")
    sources = Sources()
    sources.add("candidates", cf, kept)
    where, existing = followed_by_existing(where, ff)
    options = {**options, "errors": errors}
    if ff is not None:
        options["fixed"] = existing
        sources.add("fixed", ff)
    kernel = _pw.p_median if kind == "median" else _pw.p_center
    rows = {"points": pf.rows, "weights": pf.rows}
    refuse_geometry_named(pf.frame, _demand_columns(pf), "frame")
    result = call(kernel, pf.xy, p, weights(pf, weight, "frame"), candidates=where, rows=rows, measured_in=pf.unit,
                  **options)
    return selection_plan(result, pf, sources)


def framed_sites(sites: Any, pf: Prepared, result: Any, groups: Any, rows: Any) -> Any:
    """A plan's sites table as points in the caller's CRS, in the user's terms."""
    import geopandas as gpd

    codes = sites["group"].to_numpy(dtype=np.int64) if groups is not None else None
    geometry = pf.back(gpd.points_from_xy(sites["x"], sites["y"]), codes).values
    out = gpd.GeoDataFrame(sites, geometry=geometry, crs=pf.crs)
    out = in_user_terms(out, result, groups, rows, prepared=pf)
    out.index.name = "site"
    return out


def p_median(
    frame: Any, p: int, weight: Any = None, by: str | None = None, *, fixed: Any = None,
    candidates: Any = None, region: Any = None, capacities: Any = None,
    planar: bool = False, centroids: bool = False, work_crs: Any = None, max_scale_error: float = MAX_SCALE_ERROR,
    errors: Literal["raise", "skip"] = "raise", **options: Any,
) -> SitePlan:
    """The p sites minimising total weighted straight-line distance (continuous p-median).

    Parameters
    ----------
    frame : GeoDataFrame or GeoSeries of demand points
    p : int
        Number of new sites (per group with ``by``).
    weight, by, planar, centroids, errors
        As in :func:`placewise.gis.weber_point`.
    fixed : GeoDataFrame or GeoSeries of points, optional
        Existing sites that stay where they are (``p`` counts only the new ones).
    candidates : GeoDataFrame or GeoSeries of points, optional
        Where the new sites may go (parcels, say; any CRS, ``centroids=True`` for polygons):
        the discrete p-median among them (:func:`placewise.discrete.p_median`: swap search
        with a proven lower bound), on straight-line distances in the working CRS. ``by``
        is refused with candidates.
    region : GeoDataFrame, GeoSeries or shapely geometry, optional
        Polygons (their union; holes allowed) where the new sites must lie, boundary
        included; a bare geometry is in the frame's CRS. Without candidates, each site's
        location step is the restricted Fermat–Weber point (see :func:`placewise.p_median`);
        with candidates, only those the region holds may open (an ``InputError`` when it
        holds none). Existing sites may lie outside it. Geographic input with a region is
        solved in a projected working frame chosen over the demand, the region and the
        other frames together.
    capacities : array_like or str, optional
        The capacitated p-median (:func:`placewise.p_median` with ``capacities``; a row's
        demand may be split between sites, ``site`` naming the one serving its largest
        share): without ``candidates`` one capacity per site to place (``p`` values, in the
        weight's units); with ``candidates`` the name of its capacity column (or one value per
        candidate). ``by`` and ``fixed`` are refused with capacities.
        With ``candidates``, the capacitated p-median chooses among them and its tables
        are those described below.
    **options
        Passed to :func:`placewise.p_median` (``seed``, ``effort``, ``time_limit``,
        ``progress``); a name it does not take is a ``TypeError``. With candidates ``seed``,
        ``time_limit`` and ``progress`` apply; an ``effort`` other than "normal" (and an
        ``errors`` other than "raise") is refused with an ``InputError``.

    Returns
    -------
    SitePlan
        ``sites`` (points with ``x``, ``y`` in the working CRS, ``load``, ``points``,
        ``fixed``), ``demand``
        (a copy with ``site`` and ``distance_<unit>``) and ``summary`` (``cost_<unit>``).
        With candidates the tables are those of :func:`placewise.gis.cover_all`: every
        site names its ``source`` ("candidates" or "fixed") and ``source_row`` (its row
        label there: which parcel), and the summary adds ``mean_cost_<unit>``,
        ``worst_cost_<unit>``, ``lower_bound_<unit>`` and ``relative_gap`` (0 proves the
        plan optimal).
        With capacities the sites have ``capacity``, ``load``, ``slack`` and
        ``price_<unit>`` (and ``source``, ``source_row`` as above), the demand also
        ``share``, ``cost_<unit>`` and ``unserved``, and the summary the bounds and gaps of
        :meth:`placewise.CapacitatedMedianPlan.summary`.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> homes = gpd.GeoSeries(gpd.points_from_xy([0, 0, 10, 10], [0, 1, 0, 1]))
    >>> plan = gis.p_median(homes, 2, planar=True)
    >>> plan.demand["site"].nunique(), float(plan.summary["cost_u"].iloc[0])
    (2, 2.0)

    Two sites among three parcels, one of which lies outside the zoned area:

    >>> import shapely
    >>> parcels = gpd.GeoDataFrame({"owner": ["a", "b", "c"]}, index=[11, 12, 13],
    ...                            geometry=gpd.points_from_xy([0, 10, 5], [2, 2, 9]))
    >>> pick = gis.p_median(homes, 2, candidates=parcels, region=shapely.box(-1, -1, 11, 3), planar=True)
    >>> pick.sites["source_row"].tolist(), float(pick.summary["relative_gap"].iloc[0])
    ([11, 12], 0.0)

    Two of three lots, each with room for two homes' demand:

    >>> lots = gpd.GeoDataFrame({"room": [2, 2, 2]}, geometry=gpd.points_from_xy([0, 5, 10], [0, 0, 0]),
    ...                         index=["a", "b", "c"])
    >>> held = gis.p_median(homes, 2, capacities="room", candidates=lots, planar=True)
    >>> sorted(held.sites["source_row"]), held.sites["slack"].tolist()
    (['a', 'c'], [0.0, 0.0])
    """
    if capacities is not None:
        options["capacities"] = capacities
    return _plan("median", frame, p, weight, by, planar, centroids, errors, options,
                 {"work_crs": work_crs, "max_scale_error": max_scale_error}, fixed, candidates, region)


def p_center(
    frame: Any, p: int, weight: Any = None, by: str | None = None, *, fixed: Any = None,
    candidates: Any = None, region: Any = None,
    planar: bool = False, centroids: bool = False, work_crs: Any = None, max_scale_error: float = MAX_SCALE_ERROR,
    errors: Literal["raise", "skip"] = "raise", **options: Any,
) -> SitePlan:
    """The p sites minimising the largest weighted straight-line trip (continuous p-center).

    Parameters and result are those of :func:`p_median` (without ``capacities``), with
    ``weighted_radius_<unit>`` (the largest weight × distance to the nearest site, new or
    existing) in the summary in place of the cost. ``fixed`` existing sites stay where they
    are and serve too (the conditional p-center of :func:`placewise.p_center`); with ``by``
    each serves only the rows of its own group value. With ``candidates`` the discrete
    p-center (:func:`placewise.discrete.p_center`) chooses among them, existing sites open
    beside them: the summary's objective is ``weighted_worst_<unit>``, with a proven
    ``lower_bound_<unit>`` and ``relative_gap``. Of the options only
    ``time_limit`` and ``progress`` apply then: the discrete p-center has no random step, so a
    ``seed`` other than 0 is refused, as is an ``effort`` other than "normal".

    Examples
    --------
    >>> import geopandas as gpd
    >>> from placewise import gis
    >>> homes = gpd.GeoSeries(gpd.points_from_xy([0, 0, 10, 10], [0, 2, 0, 2]))
    >>> round(float(gis.p_center(homes, 2, planar=True).summary["weighted_radius_u"].iloc[0]), 9)
    1.0
    >>> depots = gpd.GeoSeries(gpd.points_from_xy([0, 10, 5], [1, 1, 1]), index=["n", "s", "mid"])
    >>> chosen = gis.p_center(homes, 2, candidates=depots, planar=True)
    >>> chosen.sites["source_row"].tolist(), float(chosen.summary["weighted_worst_u"].iloc[0])
    (['n', 's'], 1.0)

    An existing depot at the first pair of homes: the one new site serves the other pair.

    >>> old = gpd.GeoSeries(gpd.points_from_xy([0], [1]), index=["old"])
    >>> beside = gis.p_center(homes, 1, fixed=old, planar=True)
    >>> beside.sites[["x", "y", "fixed"]]
             x    y  fixed
    site
    0     10.0  1.0  False
    1      0.0  1.0   True
    """
    return _plan("center", frame, p, weight, by, planar, centroids, errors, options,
                 {"work_crs": work_crs, "max_scale_error": max_scale_error}, fixed, candidates, region)
