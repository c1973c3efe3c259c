"""How an input file becomes a frame: the one reader behind the command line and pipelines.

:func:`read_source` is the only place where a file named by a user (``path`` or
``path:layer``) is turned into a (Geo)DataFrame, so every tool, the command line
and the pipeline read files the same way, and a tool that needs the raw table
and the file name (the attitude ingest) gets both: the frame's ``attrs`` carry
``source`` (the path as given) and ``layer``.
"""

from __future__ import annotations

import csv
import io
import logging
import os
from pathlib import Path
from typing import Any

import geopandas as gpd
import pandas as pd
import pyogrio
import pyproj

from thrustmap.errors import CRSError, InputError, ParameterError, SourceNotFoundError

__all__ = [
    "split_source",
    "read_source",
    "parse_crs",
    "working_crs",
    "is_projected_metric",
    "TABLE_SUFFIXES",
    "SHEET_SUFFIXES",
    "ENGINES",
]

log = logging.getLogger(__name__)

#: Delimited text read as tables of strings.
TABLE_SUFFIXES = {".csv": ",", ".tsv": "\t", ".txt": None}
#: Spreadsheets read as tables of strings, one sheet per layer.
SHEET_SUFFIXES = (".xlsx", ".xlsm", ".xls")
#: Vector I/O engines geopandas can read and write with.
ENGINES = ("pyogrio", "fiona")


def split_source(source: str | os.PathLike[str]) -> tuple[Path, str | None]:
    """Split ``"path:layer"`` into the path and the layer name.

    A source that exists as a file is a path even when it contains a colon
    (Windows drives); otherwise the text after the last colon is the layer.

    Examples
    --------
    >>> split_source("scenario.gpkg:stations")
    (PosixPath('scenario.gpkg'), 'stations')
    >>> split_source("field_sheet.csv")
    (PosixPath('field_sheet.csv'), None)
    """
    text = os.fspath(source)
    path = Path(text)
    if ":" in text and not path.exists():
        head, tail = text.rsplit(":", 1)
        if head and tail and "/" not in tail and "\\" not in tail:
            return Path(head), tail
    return path, None


def working_crs(crs: Any) -> pyproj.CRS:
    """The working CRS from any pyproj-readable definition; it must be projected.

    Raises
    ------
    CRSError
        When the definition is unknown or the CRS is not projected (distances
        in a geographic CRS would be in degrees).

    Examples
    --------
    >>> working_crs("EPSG:32633").name
    'WGS 84 / UTM zone 33N'
    """
    parsed = parse_crs(crs)
    if not parsed.is_projected:
        raise CRSError(
            f"working CRS {crs!r} ({parsed.name}) is not projected; distances need a projected "
            "CRS in metres, such as the local UTM zone",
            field="crs",
            value=crs,
        )
    return parsed


def is_projected_metric(crs: pyproj.CRS) -> bool:
    """Whether a CRS is projected with both horizontal axes in metres.

    Examples
    --------
    >>> is_projected_metric(pyproj.CRS("EPSG:32633")), is_projected_metric(pyproj.CRS("EPSG:2227"))
    (True, False)
    """
    return crs.is_projected and all(
        (a.unit_name or "").lower() in ("metre", "meter") for a in crs.axis_info[:2]
    )


def parse_crs(crs: Any) -> pyproj.CRS:
    """A CRS from any pyproj-readable definition (``"EPSG:4326"``, WKT, PROJ string).

    Raises
    ------
    CRSError
        When the definition is unknown.

    Examples
    --------
    >>> parse_crs("EPSG:4326").is_geographic
    True
    """
    try:
        return pyproj.CRS.from_user_input(crs)
    except pyproj.exceptions.CRSError as exc:
        raise CRSError(f"unknown CRS {crs!r}: {exc}", field="crs", value=crs) from None


def read_source(
    source: str | os.PathLike[str],
    *,
    layer: str | None = None,
    crs: Any = None,
    to_crs: Any = None,
    engine: str | None = None,
) -> pd.DataFrame:
    """Read one input: a vector layer, a delimited text table or a spreadsheet sheet.

    * ``.csv``, ``.tsv``, ``.txt``: a DataFrame of strings (every column read as
      text, empty cells as ``""``), so that nothing is lost before validation.
      A ``.csv`` whose header is split by ``;`` is read with that delimiter;
      UTF-8 (with or without a byte-order mark) is read first, else Latin-1.
    * ``.xlsx``, ``.xlsm``, ``.xls``: the sheet named by the layer (default the
      first), as a DataFrame of strings.
    * anything else is a vector source read with geopandas through pyogrio:
      a GeoDataFrame, or a DataFrame for a layer without geometry. A source
      holding several layers needs the layer named.

    Parameters
    ----------
    source : str or path
        ``"path"`` or ``"path:layer"``; a layer in the source wins over ``layer``.
    layer : str, optional
        Layer (or sheet) to read when ``source`` names none.
    crs : optional
        CRS of the coordinates when the file declares none: assigned to a
        GeoDataFrame without a CRS, recorded as ``attrs["crs"]`` on a table (whose
        coordinate columns the reader cannot know).
    to_crs : optional
        Working CRS (see :func:`working_crs`): a GeoDataFrame is reprojected to it,
        and one with no CRS at all is taken to be in it.
    engine : {"pyogrio", "fiona"}, optional
        Vector I/O engine (default pyogrio); not used for text and spreadsheets.

    Returns
    -------
    DataFrame or GeoDataFrame
        With ``attrs["source"]`` (the path as given) and ``attrs["layer"]``.

    Raises
    ------
    SourceNotFoundError
        When the file does not exist.
    InputError
        When the file cannot be read, the layer does not exist (the message lists
        the layers) or a layer is needed and none was named.
    CRSError
        When ``crs`` or ``to_crs`` is not a usable CRS.

    Examples
    --------
    >>> import tempfile
    >>> folder = Path(tempfile.mkdtemp())
    >>> _ = (folder / "sheet.csv").write_text("stn,attitude\\nA,030/45\\nB,\\n")
    >>> frame = read_source(folder / "sheet.csv")
    >>> frame.values.tolist(), frame.attrs["layer"]
    ([['A', '030/45'], ['B', '']], None)
    """
    path, named = split_source(source)
    layer = named if named is not None else layer
    shown = str(path)
    if not path.exists():
        raise SourceNotFoundError(f"file {shown}: not found")
    suffix = path.suffix.lower()
    if suffix in TABLE_SUFFIXES:
        if named is not None:
            raise InputError("a delimited text file has no layers", source=shown, layer=named)
        frame = _read_text(path, TABLE_SUFFIXES[suffix])
        layer = None
    elif suffix in SHEET_SUFFIXES:
        frame, layer = _read_sheet(path, layer)
    else:
        frame, layer = _read_vector(path, layer, engine or "pyogrio")
    frame.attrs["source"] = shown
    frame.attrs["layer"] = layer
    if isinstance(frame, gpd.GeoDataFrame):
        frame = _place(frame, crs, to_crs, shown, layer)
    elif crs is not None:
        frame.attrs["crs"] = parse_crs(crs).to_string()
    log.debug("read %s%s: %d rows", shown, f":{layer}" if layer else "", len(frame))
    return frame


def _read_text(path: Path, sep: str | None) -> pd.DataFrame:
    data = path.read_bytes()
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError:
        log.warning("%s is not UTF-8; reading it as Latin-1", path)
        text = data.decode("latin-1")
    if sep == ",":
        header = text.split("\n", 1)[0]
        sep = max((",", ";"), key=lambda d: len(next(csv.reader([header], delimiter=d), [])))
    try:
        return pd.read_csv(
            io.StringIO(text),
            sep=sep,
            dtype=str,
            keep_default_na=False,
            engine="python" if sep is None else "c",
        )
    except (pd.errors.ParserError, pd.errors.EmptyDataError) as exc:
        raise InputError(f"cannot read as a delimited table: {exc}", source=str(path)) from None


def _read_sheet(path: Path, layer: str | None) -> tuple[pd.DataFrame, str]:
    try:
        book = pd.ExcelFile(path)
    except Exception as exc:  # the engines raise many unrelated types for a damaged file
        raise InputError(f"cannot read as a spreadsheet: {exc}", source=str(path)) from None
    with book:
        sheets = [str(s) for s in book.sheet_names]
        sheet = sheets[0] if layer is None else layer
        if sheet not in sheets:
            raise InputError(
                f"no such sheet; sheets are: {', '.join(sheets)}", source=str(path), layer=layer
            )
        frame = pd.read_excel(book, sheet_name=sheet, dtype=str, keep_default_na=False)
    return frame, sheet


def _read_vector(path: Path, layer: str | None, engine: str) -> tuple[pd.DataFrame, str]:
    if engine not in ENGINES:
        raise ParameterError(f"engine={engine!r} is not valid; choose one of {', '.join(ENGINES)}")
    try:
        layers = [str(name) for name in pyogrio.list_layers(path)[:, 0]]
    except pyogrio.errors.DataSourceError as exc:
        raise InputError(f"cannot open as a vector source: {exc}", source=str(path)) from None
    if layer is None:
        if len(layers) != 1:
            raise InputError(
                f"holds {len(layers)} layers; name one as FILE:LAYER (or --layer): {', '.join(layers)}",
                source=str(path),
            )
        layer = layers[0]
    elif layer not in layers:
        raise InputError(
            f"no such layer; layers are: {', '.join(layers)}", source=str(path), layer=layer
        )
    try:
        frame = gpd.read_file(path, layer=layer, engine=engine)
    except (pyogrio.errors.DataSourceError, pyogrio.errors.DataLayerError) as exc:
        raise InputError(f"cannot read: {exc}", source=str(path), layer=layer) from None
    return frame, layer


def _place(
    frame: gpd.GeoDataFrame, crs: Any, to_crs: Any, shown: str, layer: str | None
) -> gpd.GeoDataFrame:
    attrs = dict(frame.attrs)
    if frame.crs is None and crs is not None:
        frame = frame.set_crs(parse_crs(crs))
    if to_crs is not None:
        target = working_crs(to_crs)
        if frame.crs is None:
            log.warning(
                "%s%s declares no CRS; taken to be in %s",
                shown,
                f":{layer}" if layer else "",
                target.name,
            )
            frame = frame.set_crs(target)
        elif not frame.crs.equals(target):
            frame = frame.to_crs(target)
    frame.attrs.update(attrs)
    return frame
