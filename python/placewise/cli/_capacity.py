"""The subcommands of the capacity family: demand allocated to sites that can each serve only
so much, and the capacity options of ``p-median``."""

from __future__ import annotations

import argparse
from collections.abc import Callable
from typing import Any

from .._units import unit_words
from ._io import (
    UserError,
    _common,
    _measure,
    _note,
    _progress,
    _write_summary,
    read_points,
    write_frame,
)


def _cmd_capacity_allocation(args: argparse.Namespace) -> None:
    from .. import gis

    demand = read_points(args.input, args, "the demand", ("weight",))
    sites = read_points(args.sites, args, "the sites", ("capacity",), main=False)
    plan = gis.capacity_allocation(demand, sites, args.capacity, args.weight, split=not args.single_source,
                                   allow_unserved=args.allow_unserved, **_common(args), **_progress(args))
    write_frame(plan.demand, args.output, args, "allocation")
    if args.sites_out is not None:
        write_frame(plan.sites, args.sites_out, args, "site_loads")
    if args.parts is not None:
        write_frame(plan.parts, args.parts, args, "parts")
    _write_summary(plan.summary, args)
    s = plan.summary
    cost, unit = _measure(s, "cost")
    text = (f"{len(plan.demand)} row(s) served by {len(plan.sites)} site(s); total weighted distance "
            f"{float(s[cost].iloc[0]):.6g} (weight x {unit_words(unit)}); "
            f"{int(s['split_points'].iloc[0])} row(s) split between sites; unserved {float(s['unserved'].iloc[0]):.6g}")
    if args.single_source:
        gap = float(s["relative_gap"].iloc[0])
        if gap == 0.0:
            text += "; single-source plan proven optimal (its cost meets the proven lower bound)"
        elif gap == gap:
            text += f"; single-source plan by heuristic, relative gap to the split plan {gap:.3g}"
        else:
            text += ("; single-source plan by heuristic, which leaves more demand unserved than the split plan: "
                     "no gap is proven")
    _note(args, text)


def _cmd_capacity_cells(args: argparse.Namespace) -> None:
    from .. import gis

    demand = read_points(args.input, args, "the demand", ("weight",))
    sites = read_points(args.sites, args, "the sites", ("capacity",), main=False)
    region = None if args.region is None else read_points(args.region, args, "the region", (), main=False)
    plan = gis.capacity_cells(demand, sites, args.capacity, args.weight, region=region, **_common(args),
                              **_progress(args))
    write_frame(plan.cells, args.output, args, "cells")
    if args.demand_out is not None:
        write_frame(plan.demand, args.demand_out, args, "allocation")
    _write_summary(plan.summary, args)
    s = plan.summary
    cost, unit = _measure(s, "cost")
    _note(args, f"{len(plan.cells)} cell(s) holding {len(plan.demand)} row(s); total weighted squared distance "
                f"{float(s[cost].iloc[0]):.6g} (weight x {unit_words(unit[:-1])} squared); "
                f"{int(s['split_points'].iloc[0])} row(s) split between sites")


def add_capacity_options(p: argparse.ArgumentParser) -> None:
    """``--capacity COLUMN`` of ``p-median`` (read from its ``--candidates`` file)."""
    p.add_argument("--capacity", metavar="COLUMN", help="column of the --candidates file holding the demand each "
                   "candidate can serve (in --weight units): the capacitated p-median, a row's demand split "
                   "between sites where that lowers the cost")


def capacity_options(args: argparse.Namespace, options: dict[str, Any]) -> dict[str, Any]:
    """The ``gis.p_median`` option of ``--capacity`` (none without it), checked against the
    candidates frame already read into ``options``."""
    if args.capacity is None:
        return {}
    candidates = options.get("candidates")
    if candidates is None:
        raise UserError("--capacity needs --candidates: the capacity column is read from the candidates file")
    if args.capacity not in candidates.columns:
        shown = ", ".join(str(c) for c in candidates.columns if c != candidates.geometry.name)
        raise UserError(f"{args.candidates}: no column {args.capacity!r} for --capacity (columns: {shown or 'none'})")
    for flag in ("by", "fixed", "region"):
        if getattr(args, flag, None) is not None:
            raise UserError(f"--{flag} is not supported with --capacity")
    if args.effort != "normal":
        raise UserError("--effort is not supported with --capacity")
    return {"capacities": args.capacity}


def register(command: Callable[..., argparse.ArgumentParser], parents: Any) -> None:
    """Add this family's subcommands through ``command(name, run, help, parent_parsers)``."""
    p = command("capacity-allocation", _cmd_capacity_allocation,
                "serve the demand from sites with capacities at least total weighted distance",
                [parents.weight, parents.summary, parents.watch])
    p.add_argument("--sites", metavar="FILE", required=True, help="the sites, with a capacity column")
    p.add_argument("--capacity", metavar="COLUMN", required=True,
                   help="column of the sites file holding the demand each site can serve (in --weight units)")
    p.add_argument("--single-source", action="store_true",
                   help="serve every row whole from one site (default: a row's demand may be split)")
    p.add_argument("--allow-unserved", action="store_true",
                   help="when the capacities cannot hold the demand, serve what fits and report the rest "
                        "(default: stop with the shortfall)")
    p.add_argument("--sites-out", metavar="FILE", help="also write the sites with capacity, load and slack")
    p.add_argument("--parts", metavar="FILE", help="also write one row per part of a row split between sites")
    p = command("capacity-cells", _cmd_capacity_cells,
                "capacity-constrained catchments: each site's cell holding its capacity of demand, as polygons",
                [parents.weight, parents.summary, parents.watch])
    p.add_argument("--sites", metavar="FILE", required=True, help="the sites, with a capacity column")
    p.add_argument("--capacity", metavar="COLUMN", required=True,
                   help="column of the sites file holding the demand each site serves (in --weight units)")
    p.add_argument("--region", metavar="FILE",
                   help="polygons of the study region, holding every demand row (default: the box of the demand "
                        "and sites + 10%%)")
    p.add_argument("--demand-out", metavar="FILE", help="also write the demand rows with their site and share")
