"""Atomic output: each file appears complete or not at all.

Outputs are written into a hidden temporary folder beside their targets, on the
same file system, and moved over the targets with :func:`os.replace` only when
all of them are complete. An interrupted write leaves any earlier file as it
was, and an existing output is replaced only when asked.
"""

from __future__ import annotations

import logging
import os
import shutil
import tempfile
from collections.abc import Callable, Iterable, Iterator
from contextlib import contextmanager
from pathlib import Path

from thrustmap.errors import OutputExistsError, ParameterError

__all__ = ["FileContent", "atomic_paths", "check_targets", "write_file"]

log = logging.getLogger(__name__)

FileContent = str | bytes | Callable[[Path], object]


def check_targets(paths: Iterable[str | os.PathLike[str]], *, overwrite: bool) -> None:
    """Refuse to replace existing outputs unless ``overwrite`` is true.

    Parameters
    ----------
    paths : iterable of path-like
        The outputs about to be written.
    overwrite : bool
        Existing outputs may be replaced. Keyword only.

    Raises
    ------
    OutputExistsError
        Naming the first output that exists, when ``overwrite`` is false.

    Examples
    --------
    >>> check_targets([Path("no-such-output.gpkg")], overwrite=False)
    """
    if overwrite:
        return
    for path in paths:
        if Path(path).exists():
            raise OutputExistsError(
                f"{path} exists; use --overwrite (overwrite=True) to replace it"
            )


@contextmanager
def atomic_paths(
    *paths: str | os.PathLike[str], overwrite: bool = False
) -> Iterator[tuple[Path, ...]]:
    """Yield temporary paths to write; move them onto ``paths`` when the block succeeds.

    Each temporary path has its target's file name, so writers that choose the
    format from the suffix (matplotlib, GDAL) behave as for the final name. They
    live in a hidden folder beside the first target, so each final
    :func:`os.replace` is atomic. When the block raises, nothing is moved and the
    folder is removed. A target the block leaves unwritten is removed, so a set
    of files such as a shapefile's parts is replaced as a whole.

    Parameters
    ----------
    *paths : path-like
        Final output paths, all in one folder (created when missing).
    overwrite : bool
        Replace existing outputs. Keyword only.

    Yields
    ------
    tuple of Path
        One temporary path per target.

    Raises
    ------
    OutputExistsError
        When a target exists and ``overwrite`` is false (see :func:`check_targets`).

    Examples
    --------
    >>> folder = Path(tempfile.mkdtemp())
    >>> with atomic_paths(folder / "a.txt") as (tmp,):
    ...     _ = tmp.write_text("done")
    >>> (folder / "a.txt").read_text(), sorted(p.name for p in folder.iterdir())
    ('done', ['a.txt'])
    """
    targets = [Path(p) for p in paths]
    check_targets(targets, overwrite=overwrite)
    folder = targets[0].parent
    folder.mkdir(parents=True, exist_ok=True)
    staging = Path(tempfile.mkdtemp(prefix=".thrustmap-", dir=folder))
    try:
        temps = tuple(staging / p.name for p in targets)
        yield temps
        for tmp, final in zip(temps, targets, strict=True):
            if tmp.exists():
                os.replace(tmp, final)
            else:
                final.unlink(missing_ok=True)
    finally:
        shutil.rmtree(staging, ignore_errors=True)


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
        at the temporary path it is given (with the final file name).
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
    >>> out = write_file(Path(tempfile.mkdtemp()) / "a.md", "# Notes\\n")
    >>> out.read_text()
    '# Notes\\n'
    """
    if not isinstance(content, str | bytes) and not callable(content):
        raise ParameterError(
            f"{path}: file content must be text, bytes or a writer callable; got {type(content).__name__}"
        )
    with atomic_paths(path, overwrite=overwrite) as (tmp,):
        if isinstance(content, str):
            tmp.write_text(content, encoding="utf-8")
        elif isinstance(content, bytes):
            tmp.write_bytes(content)
        else:
            content(tmp)
    log.debug("wrote %s", path)
    return Path(path)
