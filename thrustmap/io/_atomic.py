"""Atomic output: write beside the target, then rename over it."""

from __future__ import annotations

import os
import shutil
import tempfile
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

from thrustmap.errors import OutputExistsError

__all__ = ["atomic_paths"]


@contextmanager
def atomic_paths(*paths: str | os.PathLike, overwrite: bool = False) -> Iterator[tuple[Path, ...]]:
    """Yield temporary paths to write; rename them onto ``paths`` when the block succeeds.

    The temporary files live in a hidden folder beside the first target, on the
    same file system, so each final ``os.replace`` is atomic. When the block
    raises, nothing is renamed and the temporary folder is removed.

    Parameters
    ----------
    *paths : path-like
        Final output paths, all in one folder.
    overwrite : bool
        Replace existing outputs. Keyword only.

    Yields
    ------
    tuple of Path
        One temporary path per target, with the target's file name.

    Raises
    ------
    OutputExistsError
        When a target exists and ``overwrite`` is false.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> folder = pathlib.Path(tempfile.mkdtemp())
    >>> with atomic_paths(folder / "a.txt") as (tmp,):
    ...     _ = tmp.write_text("done")
    >>> (folder / "a.txt").read_text()
    'done'
    """
    targets = [Path(p) for p in paths]
    if not overwrite:
        existing = [str(p) for p in targets if p.exists()]
        if existing:
            raise OutputExistsError(
                f"output exists: {', '.join(existing)}; pass overwrite=True (--overwrite) to replace it"
            )
    folder = targets[0].parent
    folder.mkdir(parents=True, exist_ok=True)
    tmpdir = Path(tempfile.mkdtemp(prefix=".thrustmap-", dir=folder))
    try:
        temps = tuple(tmpdir / p.name for p in targets)
        yield temps
        for tmp, final in zip(temps, targets, strict=True):
            os.replace(tmp, final)
    finally:
        shutil.rmtree(tmpdir, ignore_errors=True)
