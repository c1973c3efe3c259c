"""Reading one table or layer from CSV, XLSX or any vector format GDAL reads.

CSV cells are read as text, exactly as written (``007`` stays ``007``); only
empty cells become missing. Rows are never skipped, blank ones included, so row
``n`` of the result is data row ``n`` of the file.
"""

from __future__ import annotations

import csv
import io
import logging
import os
from pathlib import Path

import geopandas as gpd
import pandas as pd

from thrustmap.errors import InputFileError, ParameterError

__all__ = ["read_layer", "ENGINES", "TEXT_SUFFIXES", "SHEET_SUFFIXES"]

log = logging.getLogger(__name__)

TEXT_SUFFIXES = (".csv", ".tsv", ".txt")
SHEET_SUFFIXES = (".xlsx", ".xlsm")
_DELIMITERS = (",", ";", "\t", "|")
ENGINES = ("pyogrio", "fiona")


def read_layer(
    source: str | os.PathLike, *, layer: str | None = None, engine: str | None = None
) -> pd.DataFrame:
    """Read a CSV/XLSX table or a vector layer into a (Geo)DataFrame.

    Parameters
    ----------
    source : path-like
        ``.csv``/``.tsv``/``.txt`` (delimiter ``, ; tab |`` taken from the header
        line; UTF-8, else Latin-1), ``.xlsx``/``.xlsm``, or any vector file GDAL
        reads (GeoPackage, GeoJSON, Shapefile, ...).
    layer : str, optional
        Layer (vector) or sheet (XLSX) name; required when the file holds more
        than one. Keyword only.
    engine : {"pyogrio", "fiona"}, optional
        Vector I/O engine; default geopandas' default. Not used for CSV and XLSX.
        Keyword only.

    Returns
    -------
    DataFrame or GeoDataFrame
        A GeoDataFrame for vector layers with geometry, else a DataFrame.

    Raises
    ------
    InputFileError
        When the file is missing or cannot be read as its format.
    ParameterError
        When ``layer`` is needed, unknown, or given for a CSV; or for an unknown engine.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> path = pathlib.Path(tempfile.mkdtemp()) / "sheet.csv"
    >>> _ = path.write_text("stn;dip\\n007;45\\n")
    >>> read_layer(path).to_dict("list")
    {'stn': ['007'], 'dip': ['45']}
    """
    path = Path(source)
    if not path.exists():
        raise InputFileError(f"file {path} does not exist")
    if engine is not None and engine not in ENGINES:
        raise ParameterError(f"engine={engine!r} is not valid; choose one of {', '.join(ENGINES)}")
    suffix = path.suffix.lower()
    if suffix in TEXT_SUFFIXES:
        if layer is not None:
            raise ParameterError(
                f"file {path}: layer={layer!r} given, but a CSV file has no layers"
            )
        return _read_text(path)
    if suffix in SHEET_SUFFIXES:
        return _read_sheet(path, layer)
    return _read_vector(path, layer, engine)


def _read_text(path: Path) -> pd.DataFrame:
    data = path.read_bytes()
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError:
        log.warning("file %s is not UTF-8; reading it as Latin-1", path)
        text = data.decode("latin-1")
    header = text.split("\n", 1)[0]
    counts = {d: len(next(csv.reader([header], delimiter=d), [])) for d in _DELIMITERS}
    delimiter = max(_DELIMITERS, key=lambda d: counts[d])
    try:
        return pd.read_csv(
            io.StringIO(text),
            sep=delimiter,
            dtype=str,
            keep_default_na=False,
            na_values=[""],
            skip_blank_lines=False,
        )
    except (pd.errors.ParserError, pd.errors.EmptyDataError) as exc:
        raise InputFileError(f"file {path}: cannot read as a delimited table: {exc}") from exc


def _read_sheet(path: Path, layer: str | None) -> pd.DataFrame:
    try:
        book = pd.ExcelFile(path)
    except Exception as exc:  # openpyxl raises several unrelated types for broken files
        raise InputFileError(f"file {path}: cannot read as a spreadsheet: {exc}") from exc
    with book:
        sheets = book.sheet_names
        sheet = _choose_layer(path, layer, sheets, "sheet")
        return pd.read_excel(book, sheet_name=sheet)


def _read_vector(path: Path, layer: str | None, engine: str | None) -> pd.DataFrame:
    import pyogrio

    try:
        names = [str(n) for n in pyogrio.list_layers(path)[:, 0]]
    except pyogrio.errors.DataSourceError as exc:
        raise InputFileError(f"file {path}: cannot read as a vector dataset: {exc}") from exc
    chosen = _choose_layer(path, layer, names, "layer")
    return gpd.read_file(path, layer=chosen, engine=engine)


def _choose_layer(path: Path, layer: str | None, names: list[str], what: str) -> str:
    if layer is None:
        if len(names) == 1:
            return names[0]
        raise ParameterError(
            f"file {path} holds {len(names)} {what}s ({', '.join(names)}); choose one with layer="
        )
    if layer not in names:
        raise ParameterError(
            f"file {path}: no {what} {layer!r}; {what}s: {', '.join(names) or 'none'}"
        )
    return layer
