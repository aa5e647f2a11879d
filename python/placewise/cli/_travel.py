"""The subcommands of travel along a street network: network catchments, travel costs and
siting by travel cost.

The network is a file of lines, LineStrings or MultiLineStrings (GeoPackage, Shapefile,
GeoParquet or GeoJSON), in a projected CRS or in longitude/latitude (lengths then geodesic
metres on the WGS84 ellipsoid); points in another CRS are transformed to it. Each
part of a MultiLineString is a line of its own. Costs are the lines' lengths unless
``--cost`` names a column (a multi-part line's cost shared among its parts by length);
``--one-way`` names a column of direction codes (0 both ways, 1 along the drawing direction,
-1 against it). Results are planning aids under the stated model
(travel along the given network at the given costs); check them against local regulations
and licensed professional judgement.
"""

from __future__ import annotations

import argparse
import warnings
from collections.abc import Callable
from typing import Any

import numpy as np

from .._core import InputError
from ._io import UserError, _note, _positive_float, _positive_int, _progress, read_points, write_frame


def _network(args: argparse.Namespace) -> Any:
    """The travel graph of ``--network``, with the named cost and one-way columns."""
    from ..gis.travel import travel_graph

    if args.cost_unit is not None and args.cost is None:
        raise UserError("--cost-unit names the unit of the --cost column; without --cost the costs are the lines' "
                        "lengths, in the network's length unit")
    lines = read_points(args.network, args, "the network", (), main=False)
    for option, column in (("--cost", args.cost), ("--one-way", args.one_way)):
        if column is not None and column not in lines.columns:
            raise UserError(f"{args.network}: no column {column!r} (named by {option})")
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        graph = travel_graph(lines, cost=args.cost, one_way=args.one_way, tolerance=args.tolerance,
                             unit=args.cost_unit, split_crossings=args.split_crossings)
    for w in caught:
        _note(args, f"note: {w.message}")
    return graph


def _cost_unit(graph: Any) -> str:
    """The travel costs' unit as a summary line writes it."""
    return "cost units (name them with --cost-unit)" if graph.unit == "u" else graph.unit


def _cmd_network_catchments(args: argparse.Namespace) -> None:
    from ..gis.travel import network_catchments

    graph = _network(args)
    points = read_points(args.input, args, "the demand", ("weight",))
    sites = read_points(args.sites, args, "the sites", (), main=False)
    out = network_catchments(graph, points, sites, weight=args.weight, limit=args.limit, max_gap=args.max_gap)
    write_frame(out, args.output, args, "catchments")
    reached = int(out["reachable"].sum())
    _note(args, f"{reached} of {len(out)} row(s) reach one of {len(sites)} site(s) along the network; "
                f"largest travel cost {out[f'cost_{graph.unit}'].max():.6g} {_cost_unit(graph)}")


def _cmd_travel_costs(args: argparse.Namespace) -> None:
    from ..gis.travel import travel_costs

    graph = _network(args)
    origins = read_points(args.input, args, "the origins", ())
    destinations = (origins if args.destinations is None
                    else read_points(args.destinations, args, "the destinations", (), main=False))
    out = travel_costs(graph, origins, destinations, limit=args.limit, k=args.k, max_gap=args.max_gap,
                       **_progress(args))
    write_frame(out, args.output, args, "travel_costs")
    _note(args, f"{len(out)} pair(s) of {len(origins)} origin(s) x {len(destinations)} destination(s) kept")


def _cmd_network_siting(args: argparse.Namespace) -> None:
    from ..gis.travel import _points, _restated

    if args.model == "p-median" and args.within is not None:
        raise UserError("--within is for --model cover; --model p-median opens -p sites")
    if args.model == "cover" and args.p is not None:
        raise UserError("-p is for --model p-median; --model cover opens the fewest sites reaching every row "
                        "within --within")
    graph = _network(args)
    demand = read_points(args.input, args, "the demand", ("weight",))
    candidates = read_points(args.candidates, args, "the candidates", (), main=False)
    p, p_labels = _points(graph, demand, "points")
    c, c_labels = _points(graph, candidates, "candidates")
    weights = None if args.weight is None else demand[args.weight].to_numpy(dtype=np.float64)
    if args.model == "p-median":
        if args.p is None:
            raise UserError("-p is needed with --model p-median")
        model, options = "p_median", {"p": args.p}
    else:
        if args.within is None:
            raise UserError("--within is needed with --model cover")
        model, options = "cover_all", {"radius": args.within}
    labels = {"points": p_labels, "weights": p_labels, "candidates": c_labels}
    try:
        plan = _restated(lambda: graph.choose_sites(model, p, c, weights, limit=args.limit, max_gap=args.max_gap,
                                                    **options, **_progress(args)), labels, graph)
    except InputError as exc:
        from ..gis.coverage import with_candidate_labels

        # The kernel's candidate column named by the candidates' row label (as gis.cover_all
        # does); the covering model's "radius" is --within here.
        named = with_candidate_labels(exc, c_labels)
        if args.model != "cover" or not str(named).startswith("radius: "):
            raise named from None
        raise UserError("--within: " + str(named)[len("radius: "):].replace("within radius ", "within ")) from None
    opened = np.asarray(plan.open)
    from ..gis._frames import annotated

    # The plan's own per-site tallies; ``assignment`` is a row of the open sites (-1: none).
    out = annotated(candidates.iloc[opened], {"points": np.asarray(plan.count), "load": np.asarray(plan.load)},
                    "the candidates")
    write_frame(out, args.output, args, "sites")
    if args.assignment is not None:
        assignment = np.asarray(plan.assignment)
        site = np.full(len(assignment), None, dtype=object)
        site[assignment >= 0] = c_labels[opened[assignment[assignment >= 0]]]
        assigned = annotated(demand, {"site": site, f"cost_{graph.unit}": np.asarray(plan.cost)}, "the demand")
        write_frame(assigned, args.assignment, args, "assignment")
    _note(args, f"{len(out)} site(s) of {len(c)} candidate(s); total weighted travel cost "
                f"{float(plan.total_cost):.6g} (weight x {_cost_unit(graph)})")


def register(command: Callable[..., argparse.ArgumentParser], parents: Any) -> None:
    """Add this family's subcommands through ``command(name, run, help, parent_parsers)``."""
    network = argparse.ArgumentParser(add_help=False)
    network.add_argument("--network", metavar="FILE", required=True,
                         help="lines of the street network, LineStrings or MultiLineStrings (GeoPackage, "
                              "Shapefile, GeoParquet, GeoJSON) in a projected CRS, or in longitude/latitude "
                              "(lengths in metres on the WGS84 ellipsoid)")
    network.add_argument("--cost", metavar="COLUMN", help="column of each line's travel cost, shared among the parts "
                         "of a MultiLineString by length [its length]")
    network.add_argument("--cost-unit", metavar="NAME", help="unit of the --cost column (e.g. min), named in the "
                         "cost columns (cost_min) and summaries [u]")
    network.add_argument("--one-way", metavar="COLUMN", help="column of direction codes: 0 both ways, 1 along the "
                         "line's drawing direction only, -1 against it only [both ways]")
    network.add_argument("--tolerance", type=float, default=0.0, metavar="DISTANCE",
                         help="line ends closer than this join into one node, in the network's length unit "
                              "(metres for longitude/latitude lines) [0: equal ends only]")
    network.add_argument("--split-crossings", action="store_true",
                         help="join lines where they cross (not for networks with bridges or tunnels drawn as "
                              "crossing lines)")
    network.add_argument("--max-gap", type=_positive_float, metavar="DISTANCE",
                         help="refuse points farther than this from every line [no limit]")
    network.add_argument("--limit", type=_positive_float, metavar="COST",
                         help="keep only travel within this cost")
    p = command("network-catchments", _cmd_network_catchments,
                "every point's cheapest site by travel along a street network", [parents.weight, network])
    p.add_argument("--sites", metavar="FILE", required=True, help="the sites travel starts from")
    p = command("travel-costs", _cmd_travel_costs,
                "travel costs along a street network from every input point to the destinations",
                [network, parents.watch])
    p.add_argument("--destinations", metavar="FILE", help="where travel ends [the input points]")
    p.add_argument("--k", type=_positive_int, metavar="K", help="keep only each origin's k cheapest destinations")
    p = command("network-siting", _cmd_network_siting,
                "choose sites among candidates by travel cost along a street network (p-median, or covering "
                "every point within a cost)", [parents.weight, network, parents.watch])
    p.add_argument("--candidates", metavar="FILE", required=True, help="candidate sites")
    p.add_argument("--model", choices=["p-median", "cover"], default="p-median",
                   help="p-median: p sites minimising total weighted travel cost; cover: fewest sites reaching "
                        "every point within --within [p-median]")
    p.add_argument("-p", type=_positive_int, help="number of sites (p-median)")
    p.add_argument("--within", type=_positive_float, metavar="COST", help="travel cost every point must be within "
                   "(cover)")
    p.add_argument("--assignment", metavar="FILE", help="also write the input rows with their site and cost")
