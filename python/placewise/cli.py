"""The ``placewise`` command line: one subcommand per public function, plus ``demo``.

Every subcommand reads points from CSV, GeoPackage (``FILE.gpkg:LAYER`` picks a layer),
Shapefile, GeoParquet or GeoJSON (chosen by the file's extension), runs the function through
:mod:`placewise.gis` (one grouped call) and writes the same formats (by the extension of
``-o``; a GeoPackage output is a layer named after what it holds; CSV on standard output
without ``-o``). Rows are named as the file counts them (CSV line numbers, feature ids) or by
``--id COLUMN``. CSV coordinate columns are found by their usual spellings (``x``/``y``,
``lon``/``lat``, ``easting``/``northing``) unless ``--x``/``--y`` name them; longitude and
latitude mean EPSG:4326 unless ``--crs`` or ``--planar`` says otherwise. A user error -- a
missing file, a missing column, bad values, conflicting options -- prints one plain line on
stderr and exits with status 2; a closed output pipe ends the command quietly.

Examples
--------
.. code-block:: console

    $ placewise weber-point shops.csv --weight visits -o best.gpkg
    $ placewise p-median homes.gpkg:homes -p 5 --weight people --id address -o plan.gpkg --assignment plan.gpkg
    $ placewise voronoi-cells depots.geojson --region county.geojson --demand homes.geojson -o areas.gpkg
    $ placewise delaunay masts.csv --planar --id mast -o mesh.parquet
    $ placewise demo --out demo_out
"""

from __future__ import annotations

import argparse
import functools
import os
import re
import sys
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any, NoReturn

from ._errors import plain

__all__ = ["main"]

_READ = {".csv": "csv", ".gpkg": "gpkg", ".shp": "shp", ".parquet": "parquet", ".geoparquet": "parquet",
         ".geojson": "geojson", ".json": "geojson"}
_FORMATS = ("CSV (.csv), GeoPackage (.gpkg; a layer as FILE.gpkg:LAYER), Shapefile (.shp), "
            "GeoParquet (.parquet, .geoparquet) or GeoJSON (.geojson, .json)")
_OGR = {"gpkg": "GPKG", "shp": "ESRI Shapefile", "geojson": "GeoJSON"}
# Coordinate column spellings tried in order when --x/--y are not given (case-insensitive).
# Longitude/latitude columns make EPSG:4326 the default CRS; the others need --crs or --planar.
_SPELLINGS = (
    ("x/y", ("x",), ("y",)),
    ("longitude/latitude", ("lon", "lng", "long", "longitude"), ("lat", "latitude")),
    ("easting/northing", ("easting", "east", "eastings"), ("northing", "north", "northings")),
)


class UserError(Exception):
    """A problem with the command's input: reported in one line, exit status 2."""


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> NoReturn:
        self.exit(2, f"{self.prog}: error: {message} (see {self.prog} --help)\n")


# --------------------------------------------------------------------------- reading / writing


def _split_layer(text: str) -> tuple[Path, str | None]:
    """``FILE.gpkg:LAYER`` as (path, layer); any other name as (path, None)."""
    match = re.fullmatch(r"(.+\.gpkg):([^:/\\]+)", text, flags=re.IGNORECASE)
    return (Path(match[1]), match[2]) if match else (Path(text), None)


def _kind(path: Path, what: str) -> str:
    kind = _READ.get(path.suffix.lower())
    if kind is None:
        raise UserError(f"{path}: cannot tell the format of {what} from its extension; use {_FORMATS}")
    return kind


def _where(label: Any, kind: str) -> str:
    """A row as the file counts it: a CSV line, a feature id, a GeoParquet row."""
    return {"csv": "line", "parquet": "row"}.get(kind, "feature") + f" {plain(label)}"


def _coordinate_columns(table: Any, path: Path, args: argparse.Namespace) -> tuple[str, str, str]:
    """The CSV's coordinate columns (--x/--y, or recognised spellings) and what they are."""
    if (args.x is None) != (args.y is None):
        raise UserError("--x and --y go together: name both coordinate columns or neither")
    if args.x is not None:
        return args.x, args.y, "given"
    lower: dict[str, list[str]] = {}
    for column in table.columns:
        lower.setdefault(str(column).strip().lower(), []).append(str(column))
    for what, xs, ys in _SPELLINGS:
        found = [[c for name in names for c in lower.get(name, [])] for names in (xs, ys)]
        if found[0] and found[1]:
            for axis, columns in zip(("--x", "--y"), found):
                if len(columns) > 1:
                    raise UserError(f"{path}: columns {', '.join(map(repr, columns))} could each be the {what} "
                                    f"coordinate; choose one with {axis}")
            return found[0][0], found[1][0], what
    shown = ", ".join(map(str, table.columns))
    raise UserError(f"{path}: no coordinate columns recognised (columns: {shown}); "
                    "name them with --x and --y")


def _read_csv_points(path: Path, args: argparse.Namespace, main: bool) -> Any:
    import geopandas as gpd
    import numpy as np
    import pandas as pd

    try:
        table = pd.read_csv(path, skip_blank_lines=False)
    except pd.errors.EmptyDataError:
        raise UserError(f"{path}: the file is empty") from None
    except (pd.errors.ParserError, UnicodeDecodeError) as exc:
        raise UserError(f"{path}: not readable as CSV ({_one_line(exc)})") from None
    # Row labels are the file's line numbers (the header is line 1), so every message about a
    # row -- here and from the kernels -- names the line a person finds in an editor.
    table.index = pd.RangeIndex(2, 2 + len(table), name="line")
    table = table.dropna(how="all")
    if len(table) == 0:
        raise UserError(f"{path}: has a header but no rows")
    x, y, what = _coordinate_columns(table, path, args)
    coords = []
    for column in (x, y):
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
                            f"{plain(table[column].iloc[row])!r} on {_where(table.index[row], 'csv')}")
        coords.append(values)
    crs = args.crs
    if what == "longitude/latitude" and crs is None and not args.planar:
        crs = "EPSG:4326"
        for column, values, limit in zip((x, y), coords, (180.0, 90.0)):
            outside = np.abs(values) > limit
            if outside.any():
                row = int(np.argmax(outside))
                raise UserError(f"{path}: column {column!r} holds {plain(values[row])} on "
                                f"{_where(table.index[row], 'csv')}, not a {what.split('/')[column == y]} in "
                                "degrees; give the coordinates' --crs, or --planar")
        args.choices.append(f"placewise: {path}: coordinates from columns {x!r}, {y!r}: longitude/latitude, "
                            "EPSG:4326 (--crs or --planar says otherwise)")
    elif what != "given" and (x, y) != ("x", "y"):
        args.choices.append(f"placewise: {path}: coordinates from columns {x!r}, {y!r} ({what})")
    if crs is None and not args.planar:
        raise UserError(f"{path}: CSV coordinates need --crs (for example --crs EPSG:32632) or --planar")
    if main:  # CSV outputs write point coordinates under the input's own column names
        args.x_out, args.y_out = x, y
    geometry = gpd.points_from_xy(coords[0], coords[1], crs=crs)
    return gpd.GeoDataFrame(table.drop(columns=[x, y]), geometry=geometry, crs=crs)


def _read_layer(path: Path, layer: str | None, kind: str) -> Any:
    import geopandas as gpd
    import pandas as pd

    if kind == "parquet":
        try:
            frame = gpd.read_parquet(path)
        except Exception as exc:  # pyarrow raises several types for unreadable files
            raise UserError(f"{path}: not readable as GeoParquet ({_one_line(exc).split('. ')[0]})") from None
        frame.index = pd.RangeIndex(len(frame), name="row")
        return frame
    import pyogrio

    try:
        layers = [str(name) for name in pyogrio.list_layers(path)[:, 0]]
        if layer is None and len(layers) > 1:
            raise UserError(f"{path}: holds the layers {', '.join(layers)}; choose one as {path}:LAYER")
        if layer is not None and layer not in layers:
            raise UserError(f"{path}: no layer {layer!r} (layers: {', '.join(layers) or 'none'})")
        # Feature ids as row labels: messages and per-row outputs name rows as the file does.
        frame = gpd.read_file(path, layer=layer, fid_as_index=True)
    except UserError:
        raise
    except Exception as exc:  # pyogrio raises several types for unreadable files
        raise UserError(f"{path}: not readable as {kind} ({_one_line(exc).split('. ')[0]})") from None
    return frame.rename_axis("feature")


def _check_columns(frame: Any, path: Path, args: argparse.Namespace, flags: Sequence[str]) -> None:
    """The columns named by ``flags`` (--weight, --by) exist, checked before any work."""
    for flag in flags:
        column = getattr(args, flag, None)
        if column is not None and column not in frame.columns:
            shown = ", ".join(str(c) for c in frame.columns if c != frame.geometry.name)
            raise UserError(f"{path}: no column {column!r} for --{flag} (columns: {shown or 'none'})")


def _with_ids(frame: Any, path: Path, kind: str, args: argparse.Namespace, main: bool) -> Any:
    """Rows labelled by the --id column (required in the main input, used where present in others)."""
    column = getattr(args, "id", None)
    if column is None or (column not in frame.columns and not main):
        return frame
    _check_columns(frame, path, args, ("id",))
    values = frame[column]
    if values.isna().any():
        at = frame.index[int(values.isna().to_numpy().argmax())]
        raise UserError(f"{path}: --id column {column!r} is empty on {_where(at, kind)}")
    repeated = values.duplicated(keep=False).to_numpy()
    if repeated.any():
        first = values[repeated].iloc[0]
        rows = frame.index[(values == first).to_numpy()]
        raise UserError(f"{path}: --id column {column!r} repeats {plain(first)!r} (on {_where(rows[0], kind)} and "
                        f"{_where(rows[1], kind)}); ids must be unique")
    return frame.set_index(column)


def read_points(path_text: str, args: argparse.Namespace, what: str = "input",
                flags: Sequence[str] = ("weight", "by"), main: bool = True) -> Any:
    """Read a GeoDataFrame from CSV, GeoPackage, Shapefile, GeoParquet or GeoJSON.

    Rows are labelled as the file counts them (CSV line numbers, feature ids) or by the
    ``--id`` column, so every output and message about a row names it the user's way.
    """
    path, layer = _split_layer(path_text)
    kind = _kind(path, what)
    if not path.is_file():
        raise UserError(f"{path}: no such file" if not path.exists() else f"{path}: not a file")
    if kind == "csv":
        frame = _read_csv_points(path, args, main)
    else:
        frame = _read_layer(path, layer, kind)
        if len(frame) == 0:
            raise UserError(f"{path}: has no rows")
        if args.crs is not None and frame.crs is None:  # a file's own CRS wins; frames are reconciled later
            frame = frame.set_crs(args.crs)
    _check_columns(frame, path, args, flags)
    args.labels[str(path)] = ("the --id values" if getattr(args, "id", None) in frame.columns
                              else {"csv": "line numbers", "parquet": "row numbers from 0"}.get(kind, "feature ids"))
    return _with_ids(frame, path, kind, args, main)


def write_frame(frame: Any, out: str | None, args: argparse.Namespace, layer: str) -> None:
    """Write a table by the extension of ``out`` (CSV, GeoPackage layer, Shapefile, GeoParquet,
    GeoJSON), or CSV on standard output.

    Layers (GeoDataFrames) keep their geometry; a totals table (a plain DataFrame) is written
    as it is, and as features without geometry where the format needs features. An index that
    names rows (the --id values, line numbers, a plan's ``site`` labels) is written as a
    column. ``layer`` names the GeoPackage layer unless ``FILE.gpkg:LAYER`` does.
    """
    import warnings

    import geopandas as gpd

    # Label columns (a plan's sites, --id values) arrive as Python objects: give them their
    # own dtype, so typed formats (GeoPackage, Parquet) store numbers as numbers.
    frame = _named_index(frame).infer_objects()
    if out is None:
        _as_table(frame, args).to_csv(sys.stdout, index=False)
        return
    path, named = _split_layer(out)
    kind = _kind(path, "the output")
    if not path.parent.exists():
        raise UserError(f"{path}: the folder {path.parent} does not exist")
    spatial = isinstance(frame, gpd.GeoDataFrame)
    if kind == "geojson" and spatial and frame.crs is None and bool(frame.geometry.notna().any()):
        # RFC 7946 coordinates are longitude/latitude: planar ones would be read as WGS84.
        raise UserError(f"{path}: GeoJSON coordinates are read as longitude/latitude, and these are planar; "
                        "write .gpkg, .parquet or .csv instead")
    if not spatial and kind in _OGR:
        frame = gpd.GeoDataFrame(frame, geometry=gpd.GeoSeries([None] * len(frame), index=frame.index))
    try:
        if kind == "csv":
            _as_table(frame, args).to_csv(path, index=False)
        elif kind == "parquet":
            frame.to_parquet(path, index=False)
        else:
            if kind != "gpkg" and path.exists():
                path.unlink()
            with warnings.catch_warnings(record=True) as caught:  # a file without CRS is what planar means
                warnings.simplefilter("always")
                frame.to_file(path, driver=_OGR[kind], **({"layer": named or layer} if kind == "gpkg" else {}))
            if kind == "shp":
                short = [str(c) for c in frame.columns if len(str(c)) > 10]
                if short and any("truncated" in str(w.message) for w in caught):
                    _note(args, f"{path}: Shapefile names hold 10 characters: {', '.join(short)} shortened "
                                "(.gpkg keeps them)")
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
        table[args.x_out] = shapely.get_x(geoms)
        table[args.y_out] = shapely.get_y(geoms)
    else:
        table["wkt"] = shapely.to_wkt(geoms, rounding_precision=-1)
    return table


def _note(args: argparse.Namespace, text: str) -> None:
    """A line on stderr (none with --quiet), after the choices made reading the input (which
    a failing command does not print: its one line is the error)."""
    if not args.quiet:
        for choice in getattr(args, "choices", ()):
            print(choice, file=sys.stderr)
        print(text, file=sys.stderr)
    args.choices = []


# --------------------------------------------------------------------------- commands


def _check_crs(args: argparse.Namespace) -> None:
    from pyproj import CRS
    from pyproj.exceptions import CRSError

    for flag, example in (("crs", "EPSG:4326"), ("work_crs", "EPSG:32632")):
        text = getattr(args, flag, None)
        if text is None:
            continue
        try:
            CRS(text)
        except CRSError:
            raise UserError(f"--{flag.replace('_', '-')}: {text!r} is not a coordinate reference system "
                            f"(try {example})") from None


def _common(args: argparse.Namespace) -> dict[str, Any]:
    return {"planar": args.planar, "centroids": args.centroids, "work_crs": args.work_crs,
            "max_scale_error": args.max_scale_error}


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
        write_frame(summary, args.summary, args, "summary")


def _cmd_weber_point(args: argparse.Namespace) -> None:
    from . import gis

    frame = read_points(args.input, args)
    out = gis.weber_point(frame, args.weight, metric=args.metric, **_by(args), **_common(args))
    write_frame(out, args.output, args, "weber_point")
    cost, unit = _measure(out, "cost")
    _note(args, f"{_solved(out)} site(s); total weighted distance {out[cost].sum():.6g} "
                f"(weight x {_unit_text(unit)}){_skipped(args, out)}")


def _cmd_minimax_point(args: argparse.Namespace) -> None:
    from . import gis

    out = gis.minimax_point(read_points(args.input, args), args.weight, **_by(args), **_common(args))
    write_frame(out, args.output, args, "minimax_point")
    radius, unit = _measure(out, "weighted_radius")
    _note(args, f"{_solved(out)} site(s); largest weighted distance {out[radius].max():.6g} "
                f"(weight x {_unit_text(unit)}){_skipped(args, out)}")


def _cmd_enclosing_circle(args: argparse.Namespace) -> None:
    from . import gis

    out = gis.enclosing_circle(read_points(args.input, args), **_by(args), **_common(args))
    write_frame(out, args.output, args, "circles")
    radius, unit = _measure(out, "radius")
    _note(args, f"{_solved(out)} circle(s); largest radius {out[radius].max():.6g} {_unit_text(unit)}"
                f"{_skipped(args, out)}")


def _cmd_enclosing_ellipse(args: argparse.Namespace) -> None:
    from . import gis

    out = gis.enclosing_ellipse(read_points(args.input, args), tol=args.tol, **_by(args), **_common(args))
    write_frame(out, args.output, args, "ellipses")
    area, unit = _measure(out, "area")
    _note(args, f"{_solved(out)} ellipse(s); total area {out[area].sum():.6g} {_unit_text(unit[:-1])} squared"
                f"{_skipped(args, out)}")


def _cmd_voronoi_cells(args: argparse.Namespace) -> None:
    from . import gis

    sites = read_points(args.input, args, "the sites", ())
    region = None if args.region is None else read_points(args.region, args, "the region", (), main=False)
    demand = None if args.demand is None else read_points(args.demand, args, "the demand", ("weight",), main=False)
    out = gis.voronoi_cells(sites, region, demand=demand, weight=args.weight, **_common(args))
    write_frame(out, args.output, args, "cells")
    area, unit = _measure(out, "area")
    _note(args, f"{len(out)} cell(s); total area {out[area].sum():.6g} {_unit_text(unit[:-1])} squared")


def _cmd_delaunay(args: argparse.Namespace) -> None:
    # placewise.gis has no Delaunay function yet: the command follows the gis layer's one path
    # (prepare, one grouped kernel call, the result's own table in the user's terms).
    from . import delaunay
    from .gis._frames import call, framed, prepare

    pf = prepare(read_points(args.input, args, flags=("by",)), "frame", by=args.by, **_common(args))
    groups = pf.groups
    rows = {"points": pf.rows}
    result = call(delaunay, pf.xy, groups=groups, rows=rows, **({} if groups is None else {"errors": args.errors}))
    out = framed(result, pf, groups, rows, row_columns=("corner_a", "corner_b", "corner_c"))
    write_frame(out, args.output, args, "triangles")
    area, unit = _measure(out, "area")
    _note(args, f"{_solved(out)} triangle(s); total area {out[area].sum():.6g} {_unit_text(unit[:-1])} squared"
                f"{_skipped(args, out)}")


def _cmd_nearest_site(args: argparse.Namespace) -> None:
    from . import gis

    demand = read_points(args.input, args, "the demand")
    sites = read_points(args.sites, args, "the sites", (), main=False)
    plan = gis.nearest_site(demand, sites, args.weight, **_common(args))
    write_frame(plan.demand, args.output, args, "assignment")
    if args.site_loads is not None:
        write_frame(plan.sites, args.site_loads, args, "site_loads")
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
                f"{_unit_text(unit)} against minimum spanning tree {reference:.6g} {_unit_text(unit)}: "
                f"saving {100 * saving:.2f} %"
                + ("" if bool(s["optimal"].fillna(False).all()) else " (not proven optimal)"))
    _note(args, text + _skipped(args, s))


def _cmd_spanning_tree(args: argparse.Namespace) -> None:
    from . import gis

    net = gis.spanning_tree(read_points(args.input, args), **_by(args), **_common(args))
    write_frame(net.edges, args.output, args, "edges")
    _write_summary(net.summary, args)
    _network_note(args, net)


def _cmd_steiner_tree(args: argparse.Namespace) -> None:
    from . import gis

    options: dict[str, Any] = {"exact": args.exact, "seed": args.seed}
    if args.time_limit is not None:
        options["time_limit"] = args.time_limit
    net = gis.steiner_tree(read_points(args.input, args), **_by(args), **_common(args), **options)
    write_frame(net.edges, args.output, args, "edges")
    _write_summary(net.summary, args)
    _network_note(args, net)


def _plan_command(kind: str, args: argparse.Namespace) -> None:
    from . import gis

    frame = read_points(args.input, args)
    options: dict[str, Any] = {"seed": args.seed}
    if kind == "median":
        options["effort"] = args.effort
        if args.fixed is not None:
            options["fixed"] = read_points(args.fixed, args, "the existing sites", (), main=False)
        plan = gis.p_median(frame, args.p, args.weight, **_by(args), **_common(args), **options)
    else:
        plan = gis.p_center(frame, args.p, args.weight, **_by(args), **_common(args), **options)
    write_frame(plan.sites, args.output, args, "sites")
    if args.assignment is not None:
        write_frame(plan.demand, args.assignment, args, "assignment")
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
    io.add_argument("--max-scale-error", type=_positive_float, default=1e-3, metavar="FRACTION",
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

    def command(name: str, run: Callable[[argparse.Namespace], None], text: str,
                parents: Sequence[_Parser]) -> argparse.ArgumentParser:
        p = sub.add_parser(name, help=text, description=text, parents=[io, *parents])
        p.set_defaults(run=run)
        return p

    p = command("weber-point", _cmd_weber_point, "the site minimising total weighted distance (Fermat-Weber point)",
                [weight, by])
    p.add_argument("--metric", choices=["euclidean", "manhattan"], default="euclidean",
                   help="distance measured straight (euclidean) or along the axes of the working CRS "
                        "(manhattan) [euclidean]")
    command("minimax-point", _cmd_minimax_point, "the site minimising the largest weighted distance", [weight, by])
    command("enclosing-circle", _cmd_enclosing_circle, "the smallest circle covering the points", [by])
    p = command("enclosing-ellipse", _cmd_enclosing_ellipse, "the minimum-area ellipse covering the points", [by])
    p.add_argument("--tol", type=_positive_float, default=1e-7, help="relative area gap allowed [1e-7]")
    command("delaunay", _cmd_delaunay, "the Delaunay triangulation of the points (triangles named by their "
            "corners' rows or --id values)", [by])
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
            p.add_argument("--effort", choices=["fast", "normal", "thorough"], default="normal",
                           help="time against quality: fast is one short search; thorough runs more and "
                                "longer searches [normal]")
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


def _in_cli_terms(exc: BaseException, args: argparse.Namespace) -> str:
    """A library error restated for the command line: the input file, not a Python argument
    ("frame"), and how the file's rows are named where the message names one."""
    text = _one_line(exc).replace("planar=True is only for frames without one",
                                  "--planar is only for files without one")
    text = re.sub(r"\b(working|planar) frame\b", r"\1 projection", text).replace("every frame", "every input")
    text = re.sub(r"\bframes?\b", "the input", text).replace("planar=True", "--planar")
    # A kernel's argument names at the start of its message, as the command line spells them.
    text = re.sub(r"^(seed|p|tol|time_limit)\b", lambda m: "-p" if m[1] == "p" else "--" + m[1].replace("_", "-"),
                  text)
    text = re.sub(r"^points\b", "the input", text)
    text = re.sub(r"\bby=", "--by", text)
    text = re.sub(r"\b(work_crs|max_scale_error)\b=?", lambda m: "--" + m[1].replace("_", "-"), text)
    if args.labels and (getattr(exc, "row", None) is not None or re.search(r"\brows? \S|\w\[[^\]]+\]", text)):
        text += " (rows are " + "; ".join(f"{how} of {path}" for path, how in args.labels.items()) + ")"
    return text


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
        from ._core import InputError

        try:
            _check_crs(args)
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
