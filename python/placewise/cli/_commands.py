"""The subcommands of the point families: single sites, partitions, networks and plans."""

from __future__ import annotations

import argparse
import functools
from collections.abc import Callable
from pathlib import Path
from typing import Any

from .._units import unit_words
from . import _capacity
from ._coverage import add_place_options, place_options
from ._io import (
    UserError,
    _by,
    _common,
    _measure,
    _note,
    _positive_float,
    _positive_int,
    _progress,
    _skipped,
    _solved,
    _write_summary,
    add_sites_options,
    read_points,
    read_sites,
    write_frame,
)


def _site_watch(args: argparse.Namespace, frame: Any, place: dict[str, Any]) -> dict[str, Any]:
    """The progress bar (see ``_progress``) for a single-site run solved on the ellipsoid
    (``frame``: the points); a planar run is exact and quick and refuses one."""
    from ..gis.sites import watched_on_earth

    on_earth = watched_on_earth(frame, work_crs=args.work_crs, region=place.get("region")) and not args.planar
    return _progress(args) if on_earth else {}


def _cmd_weber_point(args: argparse.Namespace) -> None:
    from .. import gis

    frame = read_points(args.input, args)
    place = place_options(args)
    out = gis.weber_point(frame, args.weight, metric=args.metric, **place, **_by(args), **_common(args),
                          **_site_watch(args, frame, place))
    write_frame(out, args.output, args, "weber_point")
    cost, unit = _measure(out, "cost")
    _note(args, f"{_solved(out)} site(s); total weighted distance {out[cost].sum():.6g} "
                f"(weight x {unit_words(unit)}){_skipped(args, out)}")


def _cmd_minimax_point(args: argparse.Namespace) -> None:
    from .. import gis

    frame = read_points(args.input, args)
    place = place_options(args)
    out = gis.minimax_point(frame, args.weight, **place, **_by(args), **_common(args),
                            **_site_watch(args, frame, place))
    write_frame(out, args.output, args, "minimax_point")
    radius, unit = _measure(out, "weighted_radius")
    _note(args, f"{_solved(out)} site(s); largest weighted distance {out[radius].max():.6g} "
                f"(weight x {unit_words(unit)}){_skipped(args, out)}")


def _cmd_enclosing_circle(args: argparse.Namespace) -> None:
    from .. import gis

    frame = read_points(args.input, args)
    out = gis.enclosing_circle(frame, **_by(args), **_common(args), **_site_watch(args, frame, {}))
    write_frame(out, args.output, args, "circles")
    radius, unit = _measure(out, "radius")
    _note(args, f"{_solved(out)} circle(s); largest radius {out[radius].max():.6g} {unit_words(unit)}"
                f"{_skipped(args, out)}")


def _cmd_enclosing_ellipse(args: argparse.Namespace) -> None:
    from .. import gis

    out = gis.enclosing_ellipse(read_points(args.input, args), tol=args.tol, **_by(args), **_common(args))
    write_frame(out, args.output, args, "ellipses")
    area, unit = _measure(out, "area")
    _note(args, f"{_solved(out)} ellipse(s); total area {out[area].sum():.6g} {unit_words(unit[:-1])} squared"
                f"{_skipped(args, out)}")


def _cmd_voronoi_cells(args: argparse.Namespace) -> None:
    from .. import gis

    if args.weight is not None and args.demand is None:
        raise UserError("--weight weighs the rows of --demand: give --demand FILE with it")
    sites = read_points(args.input, args, "the sites", ())
    region = None if args.region is None else read_points(args.region, args, "the region", (), main=False)
    demand = None if args.demand is None else read_points(args.demand, args, "the demand", ("weight",), main=False)
    out = gis.voronoi_cells(sites, region, demand=demand, weight=args.weight, **_common(args),
                            **_progress(args))
    write_frame(out, args.output, args, "cells")
    area, unit = _measure(out, "area")
    _note(args, f"{len(out)} cell(s); total area {out[area].sum():.6g} {unit_words(unit[:-1])} squared")


def _cmd_delaunay(args: argparse.Namespace) -> None:
    from .. import gis

    out = gis.delaunay(read_points(args.input, args, flags=("by",)), args.by, errors=args.errors, **_common(args),
                       **_progress(args))
    write_frame(out, args.output, args, "triangles")
    area, unit = _measure(out, "area")
    _note(args, f"{_solved(out)} triangle(s); total area {out[area].sum():.6g} {unit_words(unit[:-1])} squared"
                f"{_skipped(args, out)}")


def _cmd_nearest_site(args: argparse.Namespace) -> None:
    from .. import gis

    demand = read_points(args.input, args, "the demand")
    sites = read_sites(args)
    plan = gis.nearest_site(demand, sites, args.weight, **_common(args), **_progress(args))
    write_frame(plan.demand, args.output, args, "assignment")
    if args.site_loads is not None:
        write_frame(plan.sites, args.site_loads, args, "site_loads")
    _write_summary(plan.summary, args)
    cost, unit = _measure(plan.summary, "cost")
    _note(args, f"{len(plan.demand)} row(s) assigned to {len(plan.sites)} site(s); total weighted distance "
                f"{plan.summary[cost].sum():.6g} (weight x {unit_words(unit)})")


def _network_note(args: argparse.Namespace, net: Any) -> None:
    s = net.summary
    length, unit = _measure(s, "length")
    text = f"{_solved(net.edges)} edge(s); length {s[length].sum():.6g} {unit_words(unit)}"
    if "optimal" in s.columns:  # a Steiner tree (a spanning tree's summary has no proof column)
        mst, _ = _measure(s, "mst_length")
        total, reference = float(s[length].sum()), float(s[mst].sum())
        saving = 1.0 - total / reference if reference > 0 else 0.0
        text = (f"{_solved(net.edges)} edge(s), {int(s['junctions'].sum())} junction(s); length {total:.6g} "
                f"{unit_words(unit)} against minimum spanning tree {reference:.6g} {unit_words(unit)}: "
                f"saving {100 * saving:.2f} %"
                + ("" if bool(s["optimal"].fillna(False).all()) else " (not proven optimal)"))
    _note(args, text + _skipped(args, s))


def _cmd_spanning_tree(args: argparse.Namespace) -> None:
    from .. import gis

    net = gis.spanning_tree(read_points(args.input, args), **_by(args), **_common(args), **_progress(args))
    write_frame(net.edges, args.output, args, "edges")
    _write_summary(net.summary, args)
    _network_note(args, net)


def _cmd_steiner_tree(args: argparse.Namespace) -> None:
    from .. import gis

    options: dict[str, Any] = {"exact": args.exact, "seed": args.seed, **_progress(args)}
    if args.time_limit is not None and args.exact is False:
        raise UserError("--time-limit bounds the exact search, which --heuristic skips: give one of them")
    if args.time_limit is not None:
        options["time_limit"] = args.time_limit
    net = gis.steiner_tree(read_points(args.input, args), **_by(args), **_common(args), **options)
    write_frame(net.edges, args.output, args, "edges")
    _write_summary(net.summary, args)
    _network_note(args, net)


def _plan_command(kind: str, args: argparse.Namespace) -> None:
    from .. import gis

    frame = read_points(args.input, args)
    options: dict[str, Any] = {"seed": args.seed, "effort": args.effort, **place_options(args)}
    if args.fixed is not None:
        options["fixed"] = read_points(args.fixed, args, "the existing sites", (), main=False)
    if kind == "median":
        options.update(_capacity.capacity_options(args, options))
        options.update(_progress(args))
        plan = gis.p_median(frame, args.p, args.weight, **_by(args), **_common(args), **options)
    else:
        plan = gis.p_center(frame, args.p, args.weight, **_by(args), **_common(args), **options, **_progress(args))
    write_frame(plan.sites, args.output, args, "sites")
    if args.assignment is not None:
        write_frame(plan.demand, args.assignment, args, "assignment")
    _write_summary(plan.summary, args)
    if kind == "median":
        cost, unit = _measure(plan.summary, "cost")
        _note(args, f"{_solved(plan.sites)} site(s); total weighted distance {plan.summary[cost].sum():.6g} "
                    f"(weight x {unit_words(unit)}){_skipped(args, plan.summary)}")
    else:
        # Chosen among candidates, the objective is the discrete p-center's weighted_worst.
        radius, unit = _measure(plan.summary, "weighted_radius" if args.candidates is None else "weighted_worst")
        _note(args, f"{_solved(plan.sites)} site(s); largest weighted distance {plan.summary[radius].max():.6g} "
                    f"(weight x {unit_words(unit)}){_skipped(args, plan.summary)}")


def _cmd_demo(args: argparse.Namespace) -> None:
    from .. import demo

    out = Path(args.out)
    if out.exists() and not out.is_dir():
        raise UserError(f"{out}: exists and is not a folder")
    demo.run(out, quiet=args.quiet)


def register(command: Callable[..., argparse.ArgumentParser], parents: Any) -> None:
    """Add this family's subcommands through ``command(name, run, help, parent_parsers)``."""
    weight, by, summary, seed, watch = parents.weight, parents.by, parents.summary, parents.seed, parents.watch
    p = command("weber-point", _cmd_weber_point, "the site minimising total weighted distance (Fermat-Weber point)",
                [weight, by, watch])
    p.add_argument("--metric", choices=["euclidean", "manhattan"], default="euclidean",
                   help="distance measured straight (euclidean) or along the axes of the working CRS "
                        "(manhattan) [euclidean]")
    add_place_options(p, candidates=False)
    p = command("minimax-point", _cmd_minimax_point, "the site minimising the largest weighted distance",
                [weight, by, watch])
    add_place_options(p, candidates=False)
    command("enclosing-circle", _cmd_enclosing_circle, "the smallest circle covering the points", [by, watch])
    p = command("enclosing-ellipse", _cmd_enclosing_ellipse, "the minimum-area ellipse covering the points", [by])
    p.add_argument("--tol", type=_positive_float, default=1e-7, help="relative area gap allowed [1e-7]")
    command("delaunay", _cmd_delaunay, "the Delaunay triangulation of the points (triangles named by their "
            "corners' rows or --id values)", [by, watch])
    p = command("voronoi-cells", _cmd_voronoi_cells, "catchments: each site's Voronoi cell clipped to a region",
                [weight, watch])
    p.add_argument("--region", metavar="FILE", help="polygons of the study region (default: sites' box + 10%%)")
    p.add_argument("--demand", metavar="FILE", help="demand points; adds each cell's load and number of demand points")
    p = command("nearest-site", _cmd_nearest_site, "assign every point to its nearest site",
                [weight, summary, watch])
    add_sites_options(p, "the sites to assign to", "their load and number of demand points")
    command("spanning-tree", _cmd_spanning_tree, "the Euclidean minimum spanning tree linking the points",
            [by, summary, watch])
    p = command("steiner-tree", _cmd_steiner_tree,
                "the shortest network linking the points, with added junctions (Steiner tree)",
                [by, seed, summary, watch])
    mode = p.add_mutually_exclusive_group()
    mode.add_argument("--exact", dest="exact", action="store_const", const=True, default=None,
                      help="insist on a proven optimum")
    mode.add_argument("--heuristic", dest="exact", action="store_const", const=False, help="skip the exact search")
    p.add_argument("--time-limit", type=_positive_float, metavar="SECONDS", help="time allowed for the exact search")
    for name, kind, text in (("p-median", "median", "p sites minimising total weighted distance"),
                             ("p-center", "center", "p sites minimising the largest weighted distance")):
        p = command(name, functools.partial(_plan_command, kind), text, [weight, by, seed, summary, watch])
        p.add_argument("-p", type=_positive_int, required=True, help="number of sites (per group)")
        p.add_argument("--assignment", metavar="FILE", help="also write the input rows with their site and distance")
        add_place_options(p)
        p.add_argument("--effort", choices=["fast", "normal", "thorough"], default="normal",
                       help="time against quality: fast is one short search; thorough runs more and "
                            "longer searches [normal]; not with --candidates (refused there: the choice among "
                            "candidates runs its own search to a proven bound)")
        p.add_argument("--fixed", metavar="FILE", help="existing sites that stay where they are")
        if kind == "median":
            _capacity.add_capacity_options(p)
