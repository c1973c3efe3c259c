"""Writing matplotlib figures: several formats from one stem, atomically, with the review caution."""

from __future__ import annotations

import logging
import os
from collections.abc import Callable
from pathlib import Path
from typing import Any

from thrustmap.errors import ParameterError
from thrustmap.io.atomic import atomic_paths

__all__ = ["CAUTION", "FIGURE_FORMATS", "add_caution", "figure_writer", "save_figure"]

log = logging.getLogger(__name__)

FIGURE_FORMATS = ("png", "svg", "pdf")

CAUTION = (
    "Interpretive aid; to be reviewed by a qualified geologist. "
    "Local codes and licensed practice prevail."
)

# no timestamps in vector files, so reruns give identical files
_METADATA = {"svg": {"Date": None}, "pdf": {"CreationDate": None}}


def add_caution(ax, text: str = CAUTION) -> None:
    """Write the caution under an axes, below its x label (kept clear by constrained layout).

    Examples
    --------
    >>> import matplotlib.pyplot as plt
    >>> fig, ax = plt.subplots()
    >>> add_caution(ax)
    >>> ax.texts[-1].get_text().startswith("Interpretive aid")
    True
    >>> plt.close(fig)
    """
    ax.annotate(text, xy=(0.0, 0.0), xycoords="axes fraction", xytext=(0, -36), textcoords="offset points",
                va="top", ha="left", fontsize=6.5, color="#555555")


def _format(path: Path) -> str:
    fmt = path.suffix.lower().lstrip(".")
    if fmt not in FIGURE_FORMATS:
        raise ParameterError(f"figure {path}: format {fmt!r} not valid; choose from {', '.join(FIGURE_FORMATS)}")
    return fmt


def _savefig(fig: Any, path: Path, dpi: int) -> None:
    fmt = _format(path)
    fig.savefig(path, format=fmt, dpi=dpi, metadata=_METADATA.get(fmt))


def figure_writer(make_figure: Callable[[], Any], *, dpi: int = 200) -> Callable[[Path], None]:
    """A ``writer(path)`` for a tool's file output: draws the figure, saves it, closes it.

    The format follows the suffix of the path (png, svg or pdf).

    Examples
    --------
    >>> import matplotlib.pyplot as plt, tempfile, pathlib
    >>> path = pathlib.Path(tempfile.mkdtemp()) / "blank.svg"
    >>> figure_writer(lambda: plt.subplots()[0])(path)
    >>> path.read_text().count("<svg")
    1
    """

    def write(path: Path) -> None:
        import matplotlib.pyplot as plt

        fig = make_figure()
        try:
            _savefig(fig, Path(path), dpi)
        finally:
            plt.close(fig)

    return write


def save_figure(
    fig,
    stem: str | os.PathLike,
    *,
    formats: tuple[str, ...] = ("png", "svg"),
    dpi: int = 200,
    overwrite: bool = False,
) -> list[Path]:
    """Save a figure as ``stem.png``, ``stem.svg``, ... through temporary files renamed when all are done.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure.
    stem : path-like
        Output path without suffix (a suffix given is replaced).
    formats : tuple of str
        Any of "png", "svg", "pdf". Keyword only.
    dpi : int
        Resolution of raster formats.
    overwrite : bool
        Replace existing files.

    Returns
    -------
    list of Path
        The files written, in the order of ``formats``.

    Raises
    ------
    ParameterError
        For an unknown format.
    OutputExistsError
        When a target exists and ``overwrite`` is false (nothing is written).

    Examples
    --------
    >>> import matplotlib.pyplot as plt, tempfile, pathlib
    >>> fig, ax = plt.subplots()
    >>> out = save_figure(fig, pathlib.Path(tempfile.mkdtemp()) / "demo")
    >>> [p.suffix for p in out]
    ['.png', '.svg']
    >>> plt.close(fig)
    """
    base = Path(stem)
    targets = [base.with_suffix(f".{f}") for f in formats]
    if not targets:
        raise ParameterError(f"figure formats: give at least one of {', '.join(FIGURE_FORMATS)}")
    for target in targets:
        _format(target)
    with atomic_paths(*targets, overwrite=overwrite) as temps:
        for tmp in temps:
            _savefig(fig, tmp, dpi)
    for target in targets:
        log.info("wrote %s", target)
    return targets
