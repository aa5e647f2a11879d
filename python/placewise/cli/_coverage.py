"""The coverage subcommands (``cover-all``, ``cover-most``, ``evaluate-sites``) and the
candidate and region files the site-choosing subcommands read."""

from __future__ import annotations

import argparse
from collections.abc import Callable
from typing import Any

from .._units import unit_words
from ._io import (
    _common,
    _measure,
    _note,
    _positive_float,
    _positive_int,
    _progress,
    _write_summary,
    read_points,
    write_frame,
)


def place_options(args: argparse.Namespace) -> dict[str, Any]:
    """The ``candidates`` and ``region`` frames read from ``--candidates`` and ``--region``
    (only those given), for the subcommands that offer them."""
    options: dict[str, Any] = {}
    if getattr(args, "candidates", None) is not None:
        options["candidates"] = read_points(args.candidates, args, "the candidates", (), main=False)
    if getattr(args, "region", None) is not None:
        options["region"] = read_points(args.region, args, "the region", (), main=False)
    return options


def add_place_options(parser: argparse.ArgumentParser, candidates: bool = True, region: bool = True) -> None:
    """``--candidates FILE`` (when the subcommand can choose among them) and ``--region FILE``
    (when its model takes a region)."""
    if candidates:
        parser.add_argument("--candidates", metavar="FILE",
                            help="points where sites may go (e.g. parcels; --centroids for polygons); the sites "
                                 "output names the chosen rows (source_row)")
    if region:
        parser.add_argument("--region", metavar="FILE",
                            help="polygons where the new sites must lie (their union, boundary included)")


def _write_plan(plan: Any, args: argparse.Namespace) -> None:
    write_frame(plan.sites, args.output, args, "sites")
    if args.assignment is not None:
        write_frame(plan.demand, args.assignment, args, "assignment")
    _write_summary(plan.summary, args)


def _coverage_text(s: Any) -> str:
    """Covered weight and share, uncovered rows and the radius, with its unit."""
    radius, unit = _measure(s, "radius")
    return (f"{100 * float(s['covered_share'].iloc[0]):.2f} % of the weight ({float(s['covered_load'].iloc[0]):.6g} "
            f"of {float(s['load'].iloc[0]):.6g}) within {float(s[radius].iloc[0]):.6g} {unit_words(unit)}; "
            f"{int(s['uncovered_points'].iloc[0])} row(s) uncovered")


def _existing_sites(args: argparse.Namespace) -> Any:
    """The frame of existing sites read from ``--fixed`` (None without it)."""
    return None if args.fixed is None else read_points(args.fixed, args, "the existing sites", (), main=False)


def _sites_text(plan: Any) -> str:
    """How many new sites the plan opens, and how many existing ones it keeps."""
    existing = int(plan.sites["fixed"].sum())
    return f"{len(plan.sites) - existing} new site(s)" + (f" and {existing} existing" if existing else "")


def _cmd_cover_all(args: argparse.Namespace) -> None:
    from .. import gis

    frame = read_points(args.input, args, flags=("weight",))
    plan = gis.cover_all(frame, args.radius, args.weight, fixed=_existing_sites(args), **place_options(args),
                         **_common(args), **_progress(args))
    _write_plan(plan, args)
    s = plan.summary
    _note(args, f"{_sites_text(plan)}, at least {int(s['lower_bound'].iloc[0])} new needed (proven); "
                + _coverage_text(s))


def _cmd_cover_most(args: argparse.Namespace) -> None:
    from .. import gis

    frame = read_points(args.input, args, flags=("weight",))
    plan = gis.cover_most(frame, args.p, args.radius, args.weight, fixed=_existing_sites(args), **place_options(args),
                          **_common(args), **_progress(args))
    _write_plan(plan, args)
    s = plan.summary
    _note(args, f"{_sites_text(plan)}; {_coverage_text(s)}; no plan covers more than "
                f"{float(s['upper_bound'].iloc[0]):.6g} (proven; gap {100 * float(s['relative_gap'].iloc[0]):.2f} %)")


def _cmd_evaluate_sites(args: argparse.Namespace) -> None:
    from .. import gis

    demand = read_points(args.input, args, "the demand", flags=("weight",))
    sites = read_points(args.sites, args, "the sites", (), main=False)
    plan = gis.evaluate_sites(demand, sites, args.weight, args.radius, **_common(args))
    write_frame(plan.demand, args.output, args, "assignment")
    if args.site_loads is not None:
        write_frame(plan.sites, args.site_loads, args, "site_loads")
    _write_summary(plan.summary, args)
    s = plan.summary
    cost, unit = _measure(s, "cost")
    worst, _ = _measure(s, "worst_cost")
    text = (f"{len(plan.sites)} site(s) serve {len(plan.demand)} row(s); total weighted distance "
            f"{float(s[cost].iloc[0]):.6g} (weight x {unit_words(unit)}), farthest row {float(s[worst].iloc[0]):.6g} "
            f"{unit_words(unit)}")
    _note(args, text + ("; " + _coverage_text(s) if args.radius is not None else ""))


def register(command: Callable[..., argparse.ArgumentParser], parents: Any) -> None:
    """Add this family's subcommands through ``command(name, run, help, parent_parsers)``."""
    weight, summary, watch = parents.weight, parents.summary, parents.watch
    radius_help = ("the coverage standard: metres for longitude/latitude input, else the CRS's unit "
                   "(coordinate units with --planar)")
    p = command("cover-all", _cmd_cover_all, "the fewest sites putting every point within a radius (set covering)",
                [weight, summary, watch])
    p.add_argument("--radius", type=_positive_float, required=True, help=radius_help)
    # The covering models have no region (gis.cover_all and gis.cover_most take none).
    add_place_options(p, region=False)
    p.add_argument("--fixed", metavar="FILE", help="existing sites, open whatever the plan")
    _add_assignment(p)
    p = command("cover-most", _cmd_cover_most, "p sites covering the most weight within a radius (maximal covering)",
                [weight, summary, watch])
    p.add_argument("-p", type=_positive_int, required=True, help="number of new sites")
    p.add_argument("--radius", type=_positive_float, required=True, help=radius_help)
    # The covering models have no region (gis.cover_all and gis.cover_most take none).
    add_place_options(p, region=False)
    p.add_argument("--fixed", metavar="FILE", help="existing sites, open whatever the plan")
    _add_assignment(p)
    p = command("evaluate-sites", _cmd_evaluate_sites, "how today's sites serve the points: distances, loads and "
                "coverage", [weight, summary])
    p.add_argument("--sites", metavar="FILE", required=True, help="the sites as they are")
    p.add_argument("--radius", type=_positive_float, help=radius_help + "; adds the coverage columns")
    p.add_argument("--site-loads", metavar="FILE",
                   help="also write the sites with their load and number of points served")


def _add_assignment(p: argparse.ArgumentParser) -> None:
    p.add_argument("--assignment", metavar="FILE",
                   help="also write the input rows with their site, distance, covered and covering (the number "
                        "of sites within the radius)")
