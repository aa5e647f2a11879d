"""The ``placewise`` command line: one subcommand per public function, plus ``demo``.

Every subcommand reads points from CSV, GeoPackage (``FILE.gpkg:LAYER`` picks a layer),
Shapefile, GeoParquet or GeoJSON (chosen by the file's extension), runs the function through
:mod:`placewise.gis` (one grouped call) and writes the same formats (by the extension of
``-o``; a GeoPackage output is a layer named after what it holds; CSV on standard output
without ``-o``). Rows are named as the file counts them (CSV line numbers, feature ids) or by
``--id COLUMN``; the commands serving points from a ``--sites`` file name each point's site
by the same rule (``--site-id COLUMN`` of the sites file first), in the points' ``site``
column and the ``--site-loads`` file's ``site`` column alike. CSV coordinate columns are
found by their usual spellings (``x``/``y``, ``lon``/``lat``, ``easting``/``northing``)
unless ``--x``/``--y`` name them; longitude and latitude mean EPSG:4326 unless ``--crs``
or ``--planar`` says otherwise. A user error -- a missing file, a missing column, bad
values, conflicting options -- prints one plain line on stderr and exits with status 2; a
closed output pipe ends the command quietly.

Examples
--------
.. code-block:: console

    $ placewise weber-point shops.csv --weight visits -o best.gpkg
    $ placewise p-median homes.gpkg:homes -p 5 --weight people --id address -o plan.gpkg --assignment plan.gpkg
    $ placewise cover-most homes.csv -p 3 --radius 5000 --candidates parcels.gpkg --id parcel -o chosen.gpkg
    $ placewise voronoi-cells depots.geojson --region county.geojson --demand homes.geojson -o areas.gpkg
    $ placewise delaunay masts.csv --planar --id mast -o mesh.parquet
    $ placewise demo --out demo_out
"""

from __future__ import annotations

import argparse
import os
import re
import sys
import warnings
from collections.abc import Callable, Sequence
from types import SimpleNamespace

from . import _capacity, _commands, _coverage, _travel
from ._io import _FORMATS, UserError, _check_crs, _check_destinations, _one_line, _Parser, _positive_float

__all__ = ["main"]

# Each family's module adds its subcommands through ``register(command, parents)``.
_FAMILIES = (_commands, _coverage, _travel, _capacity)


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of the ``placewise`` command.

    Examples
    --------
    >>> from placewise.cli import build_parser
    >>> build_parser().parse_args(["p-median", "homes.csv", "-p", "4"]).p
    4
    """
    from .. import __version__

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
    io.add_argument("-o", "--output", metavar="FILE", help="where to write the result (format by extension; "
                    "a GeoPackage layer is named after the result unless FILE.gpkg:LAYER); CSV on standard "
                    "output without it")
    io.add_argument("--x", metavar="COLUMN", help="CSV column of the x (easting or longitude) coordinate "
                    "[recognised: x, lon/lng/long/longitude, easting/east]")
    io.add_argument("--y", metavar="COLUMN", help="CSV column of the y (northing or latitude) coordinate "
                    "[recognised: y, lat/latitude, northing/north]")
    io.add_argument("--id", metavar="COLUMN", help="column of unique row names, used instead of row numbers in "
                    "every output (tree ends, triangle corners, assignments) and message; also read from the "
                    "other input files that have it")
    place = io.add_mutually_exclusive_group()
    place.add_argument("--crs", metavar="CRS", help="CRS of the coordinates (e.g. EPSG:32632) where the file has "
                       "none; CSV longitude/latitude columns default to EPSG:4326")
    place.add_argument("--planar", action="store_true", help="coordinates are planar (no CRS); lengths in "
                       "coordinate units")
    io.add_argument("--work-crs", metavar="CRS", help="projected CRS to compute in for longitude/latitude input "
                    "[each group's own UTM zone]")
    io.add_argument("--max-scale-error", type=_positive_float, metavar="FRACTION",
                    help="largest distortion of distances allowed in the working projection, as a fraction "
                         "(0.001 is 0.1 %%) [0.001]")
    io.add_argument("--centroids", action="store_true", help="use centroids of non-point geometries")
    io.add_argument("-q", "--quiet", action="store_true", help="no notes or summary line on stderr")
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
    watch = _Parser(add_help=False)
    watch.add_argument("--no-progress", action="store_true",
                       help="no progress bar on stderr (shown by default when stderr is a terminal and not "
                            "--quiet); Ctrl-C stops the computation either way")

    def command(name: str, run: Callable[[argparse.Namespace], None], text: str,
                parents: Sequence[_Parser]) -> argparse.ArgumentParser:
        p = sub.add_parser(name, help=text, description=text, parents=[io, *parents])
        p.set_defaults(run=run)
        return p

    parents = SimpleNamespace(weight=weight, by=by, summary=summary, seed=seed, watch=watch)
    for family in _FAMILIES:
        family.register(command, parents)

    p = sub.add_parser("demo", help="run the invented scenario: depots, catchments and a link network",
                       description="Run the invented demo scenario and write maps, layers and a summary table.")
    p.add_argument("--out", required=True, metavar="DIR", help="folder for the maps, layers and summary")
    p.add_argument("-q", "--quiet", action="store_true", help="print only the summary table")
    p.set_defaults(run=_commands._cmd_demo)
    return parser


def _in_cli_terms(exc: BaseException, args: argparse.Namespace) -> str:
    """A library error restated for the command line: the input file, not a Python argument
    ("frame"), and how the file's rows are named where the message names one."""
    text = _one_line(exc).replace("planar=True is only for frames without one",
                                  "--planar is only for files without one")
    text = re.sub(r"\b(working|planar) frame\b", r"\1 projection", text).replace("every frame", "every input")
    text = text.replace("the first frame", "the first input").replace("centroids=True", "--centroids")
    text = re.sub(r"\bframes?\b", "the input", text).replace("planar=True", "--planar")
    # A kernel's argument names at the start of its message, as the command line spells them.
    text = re.sub(r"^(seed|p|tol|time_limit|effort)\b",
                  lambda m: "-p" if m[1] == "p" else "--" + m[1].replace("_", "-"), text)
    text = re.sub(r"^points\b", "the input", text)
    text = re.sub(r"\bby=", "--by", text)
    if not hasattr(args, "by"):  # advice to split into groups only where the subcommand offers --by
        text = re.sub(r"split the data into smaller groups \((by=|--by)\), ", "", text)
    text = re.sub(r"\b(work_crs|max_scale_error)\b=?", lambda m: "--" + m[1].replace("_", "-"), text)
    if args.labels and (getattr(exc, "row", None) is not None or re.search(r"\brows? \S|\w\[[^\]]+\]", text)):
        text += " (rows are " + "; ".join(f"{how} of {path}" for path, how in args.labels.items()) + ")"
    return text


def _warning_line(args: argparse.Namespace) -> Callable[..., None]:
    """A warning raised during a run, shown as one line in the command line's terms (the
    interpreter's form names a file and line of the ``placewise`` script, then prints it)."""

    def show(message: Warning | str, category: type[Warning], *_: object, **__: object) -> None:
        print(f"placewise: warning: {_in_cli_terms(Exception(str(message)), args)}", file=sys.stderr)

    return show


def _quiet_stdout() -> None:
    """After a closed pipe: send what is left for stdout to /dev/null, so the interpreter's
    final flush does not report the pipe again."""
    try:
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
    except (OSError, ValueError):  # no real file descriptor (stdout replaced in-process)
        pass


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit status (0, 2 for user errors, 1 otherwise).

    A closed output pipe (``placewise ... | head -1``) ends the command quietly with status
    0, as Unix filters do.

    Examples
    --------
    >>> from placewise.cli import main
    >>> main(["weber-point", "no-such-file.csv", "--planar"])   # one line on stderr
    2
    """
    parser = build_parser()
    args = parser.parse_args(argv)
    args.labels, args.choices = {}, []
    args.x_out, args.y_out = getattr(args, "x", None) or "x", getattr(args, "y", None) or "y"
    try:
        from .._core import InputError

        try:
            _check_crs(args)
            _check_destinations(args)
            if getattr(args, "errors", "raise") == "skip" and getattr(args, "by", None) is None:
                raise UserError("--errors skip keeps groups without an answer: it needs --by COLUMN")
            with warnings.catch_warnings():
                warnings.showwarning = _warning_line(args)
                args.run(args)
            sys.stdout.flush()
        except BrokenPipeError:
            raise
        except (UserError, InputError) as exc:
            print(f"placewise: error: {_in_cli_terms(exc, args)}", file=sys.stderr)
            return 2
        except ImportError as exc:
            print(f"placewise: error: {_one_line(exc)} (install the extras: pip install 'placewise[geo]')",
                  file=sys.stderr)
            return 2
        except (ValueError, KeyError, OSError) as exc:
            print(f"placewise: error: {_in_cli_terms(exc, args)}", file=sys.stderr)
            return 2
    except KeyboardInterrupt:
        print("placewise: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        _quiet_stdout()
        return 0
    except Exception as exc:  # an unexpected failure: still one line, never a traceback
        print(f"placewise: internal error: {type(exc).__name__}: {_one_line(exc)}", file=sys.stderr)
        return 1
    return 0
