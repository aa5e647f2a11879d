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
    add_sites_options,
    read_points,
    read_sites,
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
    sites = read_sites(args)
    # The demand's own 'site' column is compared with the sites' labels below, after the model
    # (which numbers the sites from 0) has been named in the command line's terms.
    held = demand["site"] if "site" in demand.columns else None
    plan = gis.evaluate_sites(demand if held is None else demand.drop(columns="site"), sites, args.weight,
                              args.radius, **_common(args))
    plan = _named_by_label(plan, held, list(demand.columns))
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


def _named_by_label(plan: Any, held: Any, order: list[Any]) -> Any:
    """An evaluation with each site named by its row label in the sites file (the model's
    ``source_row``), as nearest-site names it, in the demand's ``site`` and the sites'
    ``site``; a demand column ``site`` of the user's (``held``, in its place in ``order``)
    whose values differ is replaced with a warning, as the library does for its own columns."""
    import warnings

    import pandas as pd

    from ..gis._frames import same_values

    label = dict(zip(plan.sites.index, plan.sites["source_row"]))
    site = pd.Series([None if pd.isna(v) else label[v] for v in plan.demand["site"]], index=plan.demand.index,
                     dtype=object)
    demand = plan.demand.assign(site=site)
    if held is not None:
        demand = demand[order + [c for c in demand.columns if c not in order]]
        if not same_values(held, site):
            warnings.warn("the input: the result replaces your column 'site', whose values differ; rename it to "
                          "keep both", UserWarning, stacklevel=2)
    sites = plan.sites.drop(columns=["source", "source_row"])
    sites.index = pd.Index(plan.sites["source_row"].to_numpy(dtype=object), name="site")
    return plan._replace(demand=demand, sites=sites)


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
    add_sites_options(p, "the sites as they are", "their load and number of points served")
    p.add_argument("--radius", type=_positive_float, help=radius_help + "; adds the coverage columns")


def _add_assignment(p: argparse.ArgumentParser) -> None:
    p.add_argument("--assignment", metavar="FILE",
                   help="also write the input rows with their site, distance, covered and covering (the number "
                        "of sites within the radius)")
