"""Atomic writing of run outputs: each file appears complete or not at all.

Everything is first written to a hidden temporary file beside the target and
then renamed over it, so an interrupted run never leaves a half-written
GeoPackage or figure, and an existing output is replaced only when asked.
"""

from __future__ import annotations

import logging
import os
import uuid
from collections.abc import Callable, Iterator, Mapping
from contextlib import contextmanager
from pathlib import Path

import pandas as pd
import pyogrio

from thrustmap.errors import OutputExistsError, ParameterError

__all__ = ["atomic_path", "write_geopackage", "write_file"]

log = logging.getLogger(__name__)

FileContent = str | bytes | Callable[[Path], object]


@contextmanager
def atomic_path(path: str | os.PathLike[str], *, overwrite: bool = False) -> Iterator[Path]:
    """Yield a temporary path beside ``path`` that is renamed to ``path`` on success.

    The temporary name keeps the suffix, so writers that choose the format from
    it (matplotlib, GDAL) behave as for the final name. On an exception the
    temporary file is removed and ``path`` is untouched.

    Raises
    ------
    OutputExistsError
        When ``path`` exists and ``overwrite`` is false.

    Examples
    --------
    >>> import tempfile
    >>> target = Path(tempfile.mkdtemp()) / "note.txt"
    >>> with atomic_path(target) as tmp:
    ...     _ = tmp.write_text("done")
    >>> target.read_text()
    'done'
    """
    final = Path(path)
    if final.exists() and not overwrite:
        raise OutputExistsError(f"{final} exists; use --overwrite (overwrite=True) to replace it")
    final.parent.mkdir(parents=True, exist_ok=True)
    tmp = final.with_name(f".{final.stem}.{uuid.uuid4().hex[:8]}.tmp{final.suffix}")
    try:
        yield tmp
        os.replace(tmp, final)
    finally:
        if tmp.exists():
            tmp.unlink()


def write_geopackage(
    path: str | os.PathLike[str], layers: Mapping[str, pd.DataFrame], *, overwrite: bool = False
) -> Path:
    """Write frames as the layers of one GeoPackage, atomically.

    GeoDataFrames become spatial layers, plain DataFrames attribute tables.

    Parameters
    ----------
    path : str or path
        The GeoPackage to write.
    layers : mapping of str to DataFrame or GeoDataFrame
        Layer name to frame, written in this order.
    overwrite : bool
        Replace an existing file. Keyword only.

    Returns
    -------
    Path
        ``path``.

    Raises
    ------
    OutputExistsError
        When the file exists and ``overwrite`` is false.
    ParameterError
        When ``layers`` is empty.

    Examples
    --------
    >>> import tempfile
    >>> out = Path(tempfile.mkdtemp()) / "run.gpkg"
    >>> _ = write_geopackage(out, {"spacing": pd.DataFrame({"metres": [812.5]})})
    >>> pyogrio.list_layers(out)[:, 0].tolist()
    ['spacing']
    """
    if not layers:
        raise ParameterError(f"{path}: no layers to write")
    with atomic_path(path, overwrite=overwrite) as tmp:
        for name, frame in layers.items():
            pyogrio.write_dataframe(frame, tmp, layer=name, driver="GPKG")
            log.debug("layer %s: %d rows", name, len(frame))
    log.debug("wrote %s (%d layers)", path, len(layers))
    return Path(path)


def write_file(
    path: str | os.PathLike[str], content: FileContent, *, overwrite: bool = False
) -> Path:
    """Write one file atomically from text, bytes or a writer callable.

    Parameters
    ----------
    path : str or path
        The file to write.
    content : str, bytes or callable
        Text (written as UTF-8), bytes, or ``writer(path)`` that writes the file
        at the temporary path it is given.
    overwrite : bool
        Replace an existing file. Keyword only.

    Returns
    -------
    Path
        ``path``.

    Raises
    ------
    OutputExistsError
        When the file exists and ``overwrite`` is false.
    ParameterError
        When ``content`` is none of the accepted kinds.

    Examples
    --------
    >>> import tempfile
    >>> out = write_file(Path(tempfile.mkdtemp()) / "a.md", "# Notes\\n")
    >>> out.read_text()
    '# Notes\\n'
    """
    if not isinstance(content, str | bytes) and not callable(content):
        raise ParameterError(
            f"{path}: file content must be text, bytes or a writer callable; got {type(content).__name__}"
        )
    with atomic_path(path, overwrite=overwrite) as tmp:
        if isinstance(content, str):
            tmp.write_text(content, encoding="utf-8")
        elif isinstance(content, bytes):
            tmp.write_bytes(content)
        else:
            content(tmp)
    log.debug("wrote %s", path)
    return Path(path)
