"""Reading and writing the command line's files, and the helpers every subcommand shares."""

from __future__ import annotations

import argparse
import re
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import Any, NoReturn

from .._errors import plain

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
    if what == "longitude/latitude" and crs is not None and _projected(crs):
        # The columns' names say degrees, the CRS says metres (or feet): one of them is wrong,
        # and reading degrees as metres gives a plan on an invented map, so ask which.
        raise UserError(f"{path}: columns {x!r}, {y!r} are named as longitude/latitude, but --crs {crs} is "
                        "projected; for degrees drop --crs (or give a geographic one), and if the columns do "
                        "hold projected coordinates, name them with --x and --y")
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


def _projected(crs: str) -> bool:
    """Whether ``crs`` (already checked to be one) is projected rather than geographic."""
    from pyproj import CRS

    return not CRS(crs).is_geographic


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
            raise UserError(f"{path}: no column {column!r} for --{flag.replace('_', '-')} "
                            f"(columns: {shown or 'none'})")


def _with_ids(frame: Any, path: Path, kind: str, args: argparse.Namespace, main: bool, flag: str = "id") -> Any:
    """Rows labelled by the column of ``flag`` (--id: required in the main input, used where
    present in others; --site-id: required in the sites file)."""
    column = getattr(args, flag, None)
    if column is None or (column not in frame.columns and not main):
        return frame
    _check_columns(frame, path, args, (flag,))
    option = "--" + flag.replace("_", "-")
    values = frame[column]
    if values.isna().any():
        at = frame.index[int(values.isna().to_numpy().argmax())]
        raise UserError(f"{path}: {option} column {column!r} is empty on {_where(at, kind)}")
    repeated = values.duplicated(keep=False).to_numpy()
    if repeated.any():
        first = values[repeated].iloc[0]
        rows = frame.index[(values == first).to_numpy()]
        raise UserError(f"{path}: {option} column {column!r} repeats {plain(first)!r} (on {_where(rows[0], kind)} "
                        f"and {_where(rows[1], kind)}); ids must be unique")
    return frame.set_index(column)


def read_points(path_text: str, args: argparse.Namespace, what: str = "input",
                flags: Sequence[str] = ("weight", "by"), main: bool = True, ids: str = "id") -> Any:
    """Read a GeoDataFrame from CSV, GeoPackage, Shapefile, GeoParquet or GeoJSON.

    Rows are labelled as the file counts them (CSV line numbers, feature ids) or by the
    ``--id`` column (``ids`` names another option's column, required then), so every output
    and message about a row names it the user's way.
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
    args.labels[str(path)] = (f"the --{ids.replace('_', '-')} values" if getattr(args, ids, None) in frame.columns
                              else _LABELS.get(kind, "feature ids"))
    return _with_ids(frame, path, kind, args, main or ids != "id", ids)


# How a file without an --id column counts its rows.
_LABELS = {"csv": "line numbers", "parquet": "row numbers from 0"}


def read_sites(args: argparse.Namespace) -> Any:
    """The ``--sites`` file of the commands that serve points from given sites, its rows
    labelled ``site`` by one rule: the ``--site-id`` column where given, else the ``--id``
    column where the file has it, else its CSV line numbers, feature ids or GeoParquet row
    numbers (as any row). Every point's ``site`` and the ``--site-loads`` file's ``site``
    column hold these labels, so the two join on ``site``.

    A sites file with a ``site`` column of its own that does not label the rows (the sites
    layer a plan writes, read without ``--site-id site``) is refused: the outputs' ``site``
    would mean something else than the file's column of the same name.
    """
    site_id = getattr(args, "site_id", None)
    frame = read_points(args.sites, args, "the sites", (), main=False, ids="site_id" if site_id else "id")
    path, _ = _split_layer(args.sites)
    if "site" in frame.columns:
        how = args.labels[str(path)].removeprefix("the ")
        raise UserError(f"{path}: has a column 'site' of its own, but the outputs' site column names these sites by "
                        f"their {how}; to name them by that column give --site-id site, else rename it")
    return frame.rename_axis("site")


def add_sites_options(parser: argparse.ArgumentParser, sites: str, loads: str) -> None:
    """``--sites``, ``--site-id`` and ``--site-loads`` of the commands that serve points from
    given sites (see :func:`read_sites`)."""
    parser.add_argument("--sites", metavar="FILE", required=True,
                        help=f"{sites}; each point's site column names its site by the --site-id column, else "
                             "the sites file's --id column where it has one, else its line number or feature id")
    parser.add_argument("--site-id", metavar="COLUMN",
                        help="column of the sites file naming the sites (unique values), e.g. site for the sites "
                             "a plan writes; needed when the sites file has a column named site")
    parser.add_argument("--site-loads", metavar="FILE",
                        help=f"also write the sites with {loads}, each named in a site column as the points "
                             "name it")


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

    frame = _typed(_named_index(frame))
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


def _typed(frame: Any) -> Any:
    """``frame`` with its columns of Python objects in a dtype of their own.

    Label columns (a plan's sites, --id values, tree ends) arrive as Python objects: typed
    formats (GeoPackage, Parquet) store numbers as numbers. A column of whole numbers with
    gaps (``None``: a junction end of a tree, a row of a skipped group) becomes a nullable
    integer column, written as the numbers read (``2``, not ``2.0``) with the gaps empty; as
    floating point, ids above 2**53 would be rounded, and two rows could name one site.
    """
    import numpy as np
    import pandas as pd

    out = frame.infer_objects()
    for position in range(frame.shape[1]):
        column = frame.iloc[:, position]
        if column.dtype != object:
            continue
        present = column[column.notna()].tolist()
        if not present or len(present) == len(column):  # no gaps: infer_objects keeps whole numbers whole
            continue
        if not all(isinstance(v, (int, np.integer)) and not isinstance(v, (bool, np.bool_)) for v in present):
            continue
        values = [None if pd.isna(v) else int(v) for v in column.tolist()]
        for dtype in ("Int64", "UInt64"):
            try:
                out.isetitem(position, pd.Series(pd.array(values, dtype=dtype), index=column.index))
                break
            except (OverflowError, TypeError, ValueError):
                continue
        else:  # beyond 64 bits: kept as the Python integers they are (CSV writes them exactly)
            out.isetitem(position, column)
    return out


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


def _one_line(exc: BaseException) -> str:
    text = " ".join(str(exc).split())
    return text or type(exc).__name__


# --------------------------------------------------------------------------- shared by the subcommands



# Every option naming a file the command writes, with the flag a message names it by.
_DESTINATIONS = {"output": "-o/--output", "summary": "--summary", "sites_out": "--sites-out", "parts": "--parts",
                 "demand_out": "--demand-out", "site_loads": "--site-loads", "assignment": "--assignment"}


def _check_destinations(args: argparse.Namespace) -> None:
    """Refuse, before any work and any output, a file the command could not write: one whose
    format its extension does not tell, one in a folder that does not exist, or two outputs
    in the same file (the same layer of a GeoPackage), of which the second would replace the
    first."""
    taken: dict[tuple[str, str | None], str] = {}
    for attribute, flag in _DESTINATIONS.items():
        text = getattr(args, attribute, None)
        if text is None:
            continue
        path, layer = _split_layer(text)
        kind = _kind(path, flag)
        if not path.parent.exists():
            raise UserError(f"{flag} {text}: the folder {path.parent} does not exist")
        # Outputs of one GeoPackage go to layers of their own unless FILE.gpkg:LAYER names one.
        key = (str(path.resolve()), layer if kind == "gpkg" and layer is not None else
               (f"default {attribute}" if kind == "gpkg" else None))
        if key in taken:
            raise UserError(f"{flag} {text}: {taken[key]} writes there too, and the second would replace the first; "
                            "give each output its own file" + (" or layer" if kind == "gpkg" else ""))
        taken[key] = flag


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
    from ..gis._crs import MAX_SCALE_ERROR

    if args.planar and args.max_scale_error is not None:
        # Planar coordinates are used as they are: no projection whose distortion to bound.
        raise UserError("--max-scale-error bounds the distortion of a projection; with --planar nothing is "
                        "projected (lengths are in coordinate units)")
    return {"planar": args.planar, "centroids": args.centroids, "work_crs": args.work_crs,
            "max_scale_error": MAX_SCALE_ERROR if args.max_scale_error is None else args.max_scale_error}


def _progress(args: argparse.Namespace) -> dict[str, Any]:
    """``progress=True`` for a long computation when stderr is a terminal, where a person
    watches the bar; nothing with ``--no-progress`` or ``--quiet``, or when stderr goes to a
    file or pipe (a bar there is noise in a log)."""
    if getattr(args, "no_progress", False) or args.quiet or not sys.stderr.isatty():
        return {}
    return {"progress": True}


def _by(args: argparse.Namespace) -> dict[str, Any]:
    return {"by": args.by, "errors": args.errors}


def _measure(frame: Any, prefix: str) -> tuple[str, str]:
    """The column holding a measure (``cost_m``) and its unit (``m``), from the column name."""
    name = next(c for c in frame.columns if str(c).startswith(prefix + "_"))
    return name, str(name)[len(prefix) + 1:]


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
