"""The ``placewise`` command line: one subcommand per kernel, plus ``demo``.

Every kernel subcommand reads points from CSV, GeoJSON or GeoParquet (chosen by the file's
extension), runs the kernel through :mod:`placewise.gis` and writes CSV, GeoJSON or
GeoParquet (by the extension of ``-o``; CSV on standard output without it). A user error
— a missing file, a missing column, bad values — prints one plain line on stderr and exits
with status 2.

Examples
--------
.. code-block:: console

    $ placewise weber-point shops.csv --x lon --y lat --crs EPSG:4326 --weight visits -o best.geojson
    $ placewise p-median homes.geojson -p 5 --weight people -o depots.geojson --assignment homes_out.geojson
    $ placewise voronoi-cells depots.geojson --region county.geojson --demand homes.geojson -o areas.geojson
    $ placewise demo --out demo_out
"""

from __future__ import annotations

import argparse
import functools
import sys
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any, NoReturn

__all__ = ["main"]

_READ = {".csv": "csv", ".geojson": "geojson", ".json": "geojson", ".parquet": "parquet", ".geoparquet": "parquet"}
_FORMATS = "CSV (.csv), GeoJSON (.geojson, .json) or GeoParquet (.parquet, .geoparquet)"


class UserError(Exception):
    """A problem with the command's input: reported in one line, exit status 2."""


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> NoReturn:
        self.exit(2, f"{self.prog}: error: {message} (see {self.prog} --help)\n")


# --------------------------------------------------------------------------- reading / writing


def _kind(path: Path, what: str) -> str:
    kind = _READ.get(path.suffix.lower())
    if kind is None:
        raise UserError(f"{path}: cannot tell the format of {what} from its extension; use {_FORMATS}")
    return kind


def _read_csv_points(path: Path, args: argparse.Namespace) -> Any:
    import geopandas as gpd
    import numpy as np
    import pandas as pd

    from ._errors import plain

    try:
        table = pd.read_csv(path)
    except pd.errors.EmptyDataError:
        raise UserError(f"{path}: the file is empty") from None
    except pd.errors.ParserError as exc:
        raise UserError(f"{path}: not readable as CSV ({str(exc).strip()})") from None
    coords = []
    for column in (args.x, args.y):
        if column not in table.columns:
            raise UserError(
                f"{path}: no column {column!r} (columns: {', '.join(map(str, table.columns))}); "
                "name the coordinate columns with --x and --y"
            )
        values = pd.to_numeric(table[column], errors="coerce").to_numpy(dtype=np.float64)
        bad = ~np.isfinite(values)
        if bad.any():
            row = int(np.argmax(bad))
            raise UserError(f"{path}: column {column!r} has a missing or non-numeric value "
                            f"{plain(table[column].iloc[row])!r} on line {row + 2}")
        coords.append(values)
    if args.crs is None and not args.planar:
        raise UserError(f"{path}: CSV coordinates need --crs (for example --crs EPSG:4326) or --planar")
    geometry = gpd.points_from_xy(coords[0], coords[1])
    return gpd.GeoDataFrame(table.drop(columns=[args.x, args.y]), geometry=geometry, crs=args.crs)


def _check_columns(frame: Any, path: Path, args: argparse.Namespace, flags: Sequence[str]) -> None:
    """The columns named by ``flags`` (--weight, --by) exist, checked before any work."""
    for flag in flags:
        column = getattr(args, flag, None)
        if column is not None and column not in frame.columns:
            shown = ", ".join(str(c) for c in frame.columns if c != frame.geometry.name)
            raise UserError(f"{path}: no column {column!r} for --{flag} (columns: {shown or 'none'})")


def read_points(path_text: str, args: argparse.Namespace, what: str = "input",
                flags: Sequence[str] = ("weight", "by")) -> Any:
    """Read a frame of geometries from CSV, GeoJSON or GeoParquet."""
    import geopandas as gpd

    path = Path(path_text)
    kind = _kind(path, what)
    if not path.is_file():
        raise UserError(f"{path}: no such file" if not path.exists() else f"{path}: not a file")
    if kind == "csv":
        frame = _read_csv_points(path, args)
        _check_columns(frame, path, args, flags)
        return frame
    try:
        frame = gpd.read_file(path) if kind == "geojson" else gpd.read_parquet(path)
    except Exception as exc:  # pyogrio and pyarrow raise several types for unreadable files
        first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise UserError(f"{path}: not readable as {kind} ({first})") from None
    _check_columns(frame, path, args, flags)
    if args.crs is not None and frame.crs is None:  # a file's own CRS wins; frames are reconciled later
        frame = frame.set_crs(args.crs)
    return frame


def write_frame(frame: Any, out: str | None, args: argparse.Namespace) -> None:
    """Write a table to CSV / GeoJSON / GeoParquet by extension, or CSV on stdout.

    Layers (GeoDataFrames) keep their geometry; a totals table (a plain DataFrame) is
    written as it is, and to GeoJSON as features without geometry. An index that names
    rows (a plan's ``site`` labels, which the demand's ``site`` column refers to) is
    written as a column.
    """
    import geopandas as gpd

    frame = _named_index(frame)
    if out is None:
        _as_table(frame, args).to_csv(sys.stdout, index=False)
        return
    path = Path(out)
    kind = _kind(path, "the output")
    if not path.parent.exists():
        raise UserError(f"{path}: the folder {path.parent} does not exist")
    try:
        if kind == "csv":
            _as_table(frame, args).to_csv(path, index=False)
        elif kind == "geojson":
            if path.exists():
                path.unlink()
            if isinstance(frame, gpd.GeoDataFrame):
                frame.to_file(path, driver="GeoJSON")
            else:
                import warnings

                layer = gpd.GeoDataFrame(frame, geometry=gpd.GeoSeries([None] * len(frame), index=frame.index))
                with warnings.catch_warnings():  # features without geometry need no CRS
                    warnings.simplefilter("ignore", UserWarning)
                    layer.to_file(path, driver="GeoJSON")
        else:
            frame.to_parquet(path, index=False)
    except OSError as exc:
        raise UserError(f"{path}: cannot write ({exc.strerror or exc})") from None


def _named_index(frame: Any) -> Any:
    """The index as a column when it names the rows (named, or not just 0..n-1)."""
    import pandas as pd

    index = frame.index
    default = index.name is None and isinstance(index, pd.RangeIndex) and index.start == 0 and index.step == 1
    return frame if default else frame.rename_axis(index.name or "row").reset_index()


def _as_table(frame: Any, args: argparse.Namespace) -> Any:
    """A plain table: x/y columns for points, well-known text for other geometries.

    Missing geometries (the rows of groups skipped with ``--errors skip``) stay empty.
    """
    import geopandas as gpd
    import pandas as pd
    import shapely

    if not isinstance(frame, gpd.GeoDataFrame):
        return frame
    geoms = frame.geometry.values
    table = pd.DataFrame(frame.drop(columns=frame.geometry.name))
    kinds = shapely.get_type_id(geoms)
    present = kinds >= 0
    if bool((kinds[present] == shapely.GeometryType.POINT).all()):
        table[args.x] = shapely.get_x(geoms)
        table[args.y] = shapely.get_y(geoms)
    else:
        table["wkt"] = shapely.to_wkt(geoms, rounding_precision=-1)
    return table


def _note(args: argparse.Namespace, text: str) -> None:
    if not args.quiet:
        print(text, file=sys.stderr)


# --------------------------------------------------------------------------- commands


def _check_crs(args: argparse.Namespace) -> None:
    if getattr(args, "crs", None) is None:
        return
    from pyproj import CRS
    from pyproj.exceptions import CRSError

    try:
        CRS(args.crs)
    except CRSError:
        raise UserError(f"--crs: {args.crs!r} is not a coordinate reference system (try EPSG:4326)") from None


def _common(args: argparse.Namespace) -> dict[str, Any]:
    return {"planar": args.planar, "centroids": args.centroids}


def _by(args: argparse.Namespace) -> dict[str, Any]:
    return {"by": args.by, "errors": args.errors}


def _measure(frame: Any, prefix: str) -> tuple[str, str]:
    """The column holding a measure (``cost_m``) and its unit (``m``), from the column name."""
    name = next(c for c in frame.columns if str(c).startswith(prefix + "_"))
    return name, str(name)[len(prefix) + 1:]


def _unit_text(unit: str) -> str:
    return "coordinate units" if unit == "u" else unit


def _skipped(args: argparse.Namespace, frame: Any) -> str:
    if "problem" not in frame.columns:
        return ""
    count = int(frame["problem"].notna().sum())
    return f"; {count} group(s) skipped (see the problem column)" if count else ""


def _solved(frame: Any) -> int:
    """Rows of solved groups (a group skipped with ``--errors skip`` keeps a row of its own)."""
    return len(frame) if "problem" not in frame.columns else int(frame["problem"].isna().sum())


def _write_summary(summary: Any, args: argparse.Namespace) -> None:
    if getattr(args, "summary", None) is not None:
        write_frame(summary, args.summary, args)


def _cmd_weber_point(args: argparse.Namespace) -> None:
    from . import gis

    frame = read_points(args.input, args)
    out = gis.weber_point(frame, args.weight, metric=args.metric, **_by(args), **_common(args))
    write_frame(out, args.output, args)
    cost, unit = _measure(out, "cost")
    _note(args, f"{_solved(out)} site(s); total weighted distance {out[cost].sum():.6g} "
                f"(weight x {_unit_text(unit)}){_skipped(args, out)}")


def _cmd_minimax_point(args: argparse.Namespace) -> None:
    from . import gis

    out = gis.minimax_point(read_points(args.input, args), args.weight, **_by(args), **_common(args))
    write_frame(out, args.output, args)
    radius, unit = _measure(out, "weighted_radius")
    _note(args, f"{_solved(out)} site(s); largest weighted distance {out[radius].max():.6g} "
                f"(weight x {_unit_text(unit)}){_skipped(args, out)}")


def _cmd_enclosing_circle(args: argparse.Namespace) -> None:
    from . import gis

    out = gis.enclosing_circle(read_points(args.input, args), **_by(args), **_common(args))
    write_frame(out, args.output, args)
    radius, unit = _measure(out, "radius")
    _note(args, f"{_solved(out)} circle(s); largest radius {out[radius].max():.6g} {_unit_text(unit)}"
                f"{_skipped(args, out)}")


def _cmd_enclosing_ellipse(args: argparse.Namespace) -> None:
    from . import gis

    out = gis.enclosing_ellipse(read_points(args.input, args), tol=args.tol, **_by(args), **_common(args))
    write_frame(out, args.output, args)
    area, unit = _measure(out, "area")
    _note(args, f"{_solved(out)} ellipse(s); total area {out[area].sum():.6g} {_unit_text(unit[:-1])} squared"
                f"{_skipped(args, out)}")


def _cmd_voronoi_cells(args: argparse.Namespace) -> None:
    from . import gis

    sites = read_points(args.input, args, "the sites", ())
    region = None if args.region is None else read_points(args.region, args, "the region", ())
    demand = None if args.demand is None else read_points(args.demand, args, "the demand", ("weight",))
    out = gis.voronoi_cells(sites, region, demand=demand, weight=args.weight, **_common(args))
    write_frame(out, args.output, args)
    area, unit = _measure(out, "area")
    _note(args, f"{len(out)} cell(s); total area {out[area].sum():.6g} {_unit_text(unit[:-1])} squared")


def _cmd_nearest_site(args: argparse.Namespace) -> None:
    from . import gis

    demand = read_points(args.input, args, "the demand")
    sites = read_points(args.sites, args, "the sites", ())
    plan = gis.nearest_site(demand, sites, args.weight, **_common(args))
    write_frame(plan.demand, args.output, args)
    if args.site_loads is not None:
        write_frame(plan.sites, args.site_loads, args)
    _write_summary(plan.summary, args)
    cost, unit = _measure(plan.summary, "cost")
    _note(args, f"{len(plan.demand)} row(s) assigned to {len(plan.sites)} site(s); total weighted distance "
                f"{plan.summary[cost].sum():.6g} (weight x {_unit_text(unit)})")


def _network_note(args: argparse.Namespace, net: Any) -> None:
    s = net.summary
    length, unit = _measure(s, "length")
    text = f"{_solved(net.edges)} edge(s); length {s[length].sum():.6g} {_unit_text(unit)}"
    if "optimal" in s.columns:  # a Steiner tree (a spanning tree's summary has no proof column)
        mst, _ = _measure(s, "mst_length")
        total, reference = float(s[length].sum()), float(s[mst].sum())
        saving = 1.0 - total / reference if reference > 0 else 0.0
        text = (f"{_solved(net.edges)} edge(s), {int(s['junctions'].sum())} junction(s); length {total:.6g} "
                f"{_unit_text(unit)} against minimum spanning tree {reference:.6g}: saving {100 * saving:.2f} %"
                + ("" if bool(s["optimal"].fillna(False).all()) else " (not proven optimal)"))
    _note(args, text + _skipped(args, s))


def _cmd_spanning_tree(args: argparse.Namespace) -> None:
    from . import gis

    net = gis.spanning_tree(read_points(args.input, args), **_by(args), **_common(args))
    write_frame(net.edges, args.output, args)
    _write_summary(net.summary, args)
    _network_note(args, net)


def _cmd_steiner_tree(args: argparse.Namespace) -> None:
    from . import gis

    options: dict[str, Any] = {"exact": args.exact, "seed": args.seed}
    if args.time_limit is not None:
        options["time_limit"] = args.time_limit
    net = gis.steiner_tree(read_points(args.input, args), **_by(args), **_common(args), **options)
    write_frame(net.edges, args.output, args)
    _write_summary(net.summary, args)
    _network_note(args, net)


def _plan_command(kind: str, args: argparse.Namespace) -> None:
    from . import gis

    frame = read_points(args.input, args)
    options: dict[str, Any] = {"seed": args.seed}
    if kind == "median":
        options["effort"] = args.effort
        if args.fixed is not None:
            options["fixed"] = read_points(args.fixed, args, "the existing sites", ())
        plan = gis.p_median(frame, args.p, args.weight, **_by(args), **_common(args), **options)
    else:
        plan = gis.p_center(frame, args.p, args.weight, **_by(args), **_common(args), **options)
    write_frame(plan.sites, args.output, args)
    if args.assignment is not None:
        write_frame(plan.demand, args.assignment, args)
    _write_summary(plan.summary, args)
    if kind == "median":
        cost, unit = _measure(plan.summary, "cost")
        _note(args, f"{_solved(plan.sites)} site(s); total weighted distance {plan.summary[cost].sum():.6g} "
                    f"(weight x {_unit_text(unit)}){_skipped(args, plan.summary)}")
    else:
        radius, unit = _measure(plan.summary, "weighted_radius")
        _note(args, f"{_solved(plan.sites)} site(s); largest weighted distance {plan.summary[radius].max():.6g} "
                    f"(weight x {_unit_text(unit)}){_skipped(args, plan.summary)}")


def _cmd_demo(args: argparse.Namespace) -> None:
    from . import demo

    out = Path(args.out)
    if out.exists() and not out.is_dir():
        raise UserError(f"{out}: exists and is not a folder")
    demo.run(out, quiet=args.quiet)


# --------------------------------------------------------------------------- parser


def _positive_int(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"expected at least 1, got {value}")
    return value


def _positive_float(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a number, got {text!r}") from None
    if not value > 0:
        raise argparse.ArgumentTypeError(f"expected a positive number, got {text!r}")
    return value


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``placewise`` command.

    Examples
    --------
    >>> from placewise.cli import build_parser
    >>> build_parser().parse_args(["p-median", "homes.csv", "-p", "4"]).p
    4
    """
    from . import __version__

    parser = _Parser(
        prog="placewise",
        description="Geometric optimisation of where things go. Results are planning aids under the "
                    "model (straight-line distance, the given weights); check them against local "
                    "regulations and licensed professional judgement.",
    )
    parser.add_argument("--version", action="version", version=f"placewise {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    sub.required = True

    io = _Parser(add_help=False)
    io.add_argument("input", help=f"points to read: {_FORMATS}")
    io.add_argument("-o", "--output", metavar="FILE", help="where to write the result (format by extension); "
                    "CSV on standard output without it")
    io.add_argument("--x", default="x", metavar="COLUMN", help="CSV column of the x (or longitude) coordinate [x]")
    io.add_argument("--y", default="y", metavar="COLUMN", help="CSV column of the y (or latitude) coordinate [y]")
    io.add_argument("--crs", metavar="CRS", help="CRS of the coordinates (e.g. EPSG:4326) where the file has none")
    io.add_argument("--planar", action="store_true", help="coordinates are planar; no CRS needed")
    io.add_argument("--centroids", action="store_true", help="use centroids of non-point geometries")
    io.add_argument("-q", "--quiet", action="store_true", help="no summary line on stderr")
    weight = _Parser(add_help=False)
    weight.add_argument("--weight", metavar="COLUMN", help="column of non-negative demand per row (default 1)")
    by = _Parser(add_help=False)
    by.add_argument("--by", metavar="COLUMN", help="column whose values split the rows into groups; one answer each")
    by.add_argument("--errors", choices=["raise", "skip"], default="raise",
                    help="with --by: stop at the first group without an answer (raise), or keep it as a row "
                         "whose problem column says why and solve the rest (skip) [raise]")
    summary = _Parser(add_help=False)
    summary.add_argument("--summary", metavar="FILE", help="also write the totals table (format by extension)")
    seed = _Parser(add_help=False)
    seed.add_argument("--seed", type=int, default=0, help="seed of the randomised search [0]")

    def command(name: str, run: Callable[[argparse.Namespace], None], text: str,
                parents: Sequence[_Parser]) -> argparse.ArgumentParser:
        p = sub.add_parser(name, help=text, description=text, parents=[io, *parents])
        p.set_defaults(run=run)
        return p

    p = command("weber-point", _cmd_weber_point, "the site minimising total weighted distance (Fermat-Weber point)",
                [weight, by])
    p.add_argument("--metric", choices=["euclidean", "manhattan"], default="euclidean")
    command("minimax-point", _cmd_minimax_point, "the site minimising the largest weighted distance", [weight, by])
    command("enclosing-circle", _cmd_enclosing_circle, "the smallest circle covering the points", [by])
    p = command("enclosing-ellipse", _cmd_enclosing_ellipse, "the minimum-area ellipse covering the points", [by])
    p.add_argument("--tol", type=_positive_float, default=1e-7, help="relative area gap allowed [1e-7]")
    p = command("voronoi-cells", _cmd_voronoi_cells, "catchments: each site's Voronoi cell clipped to a region",
                [weight])
    p.add_argument("--region", metavar="FILE", help="polygons of the study region (default: sites' box + 10%%)")
    p.add_argument("--demand", metavar="FILE", help="demand points; adds each cell's load and number of demand points")
    p = command("nearest-site", _cmd_nearest_site, "assign every point to its nearest site", [weight, summary])
    p.add_argument("--sites", metavar="FILE", required=True, help="the sites to assign to")
    p.add_argument("--site-loads", metavar="FILE",
                   help="also write the sites with their load and number of demand points")
    command("spanning-tree", _cmd_spanning_tree, "the Euclidean minimum spanning tree linking the points",
            [by, summary])
    p = command("steiner-tree", _cmd_steiner_tree,
                "the shortest network linking the points, with added junctions (Steiner tree)", [by, seed, summary])
    mode = p.add_mutually_exclusive_group()
    mode.add_argument("--exact", dest="exact", action="store_const", const=True, default=None,
                      help="insist on a proven optimum")
    mode.add_argument("--heuristic", dest="exact", action="store_const", const=False, help="skip the exact search")
    p.add_argument("--time-limit", type=_positive_float, metavar="SECONDS", help="time allowed for the exact search")
    for name, kind, text in (("p-median", "median", "p sites minimising total weighted distance"),
                             ("p-center", "center", "p sites minimising the largest weighted distance")):
        p = command(name, functools.partial(_plan_command, kind), text, [weight, by, seed, summary])
        p.add_argument("-p", type=_positive_int, required=True, help="number of sites (per group)")
        p.add_argument("--assignment", metavar="FILE", help="also write the input rows with their site and distance")
        if kind == "median":
            p.add_argument("--effort", choices=["fast", "normal", "thorough"], default="normal")
            p.add_argument("--fixed", metavar="FILE", help="existing sites that stay where they are")

    p = sub.add_parser("demo", help="run the invented scenario: depots, catchments and a link network",
                       description="Run the invented demo scenario and write maps, layers and a summary table.")
    p.add_argument("--out", required=True, metavar="DIR", help="folder for the maps, layers and summary")
    p.add_argument("-q", "--quiet", action="store_true", help="print only the summary table")
    p.set_defaults(run=_cmd_demo)
    return parser


def _one_line(exc: BaseException) -> str:
    text = " ".join(str(exc).split())
    return text or type(exc).__name__


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit status (0, 2 for user errors, 1 otherwise).

    Examples
    --------
    >>> from placewise.cli import main
    >>> main(["weber-point", "no-such-file.csv", "--planar"])   # one line on stderr
    2
    """
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        from ._core import InputError

        try:
            _check_crs(args)
            args.run(args)
        except (UserError, InputError) as exc:
            print(f"placewise: error: {_one_line(exc)}", file=sys.stderr)
            return 2
        except ImportError as exc:
            print(f"placewise: error: {_one_line(exc)} (install the extras: pip install 'placewise[geo,notebook]')",
                  file=sys.stderr)
            return 2
        except (ValueError, KeyError, OSError) as exc:
            print(f"placewise: error: {_one_line(exc)}", file=sys.stderr)
            return 2
    except KeyboardInterrupt:
        print("placewise: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return 0
    except Exception as exc:  # an unexpected failure: still one line, never a traceback
        print(f"placewise: internal error: {type(exc).__name__}: {_one_line(exc)}", file=sys.stderr)
        return 1
    return 0
