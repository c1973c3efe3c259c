"""Writing matplotlib figures: one stem, several formats, each written atomically."""

from __future__ import annotations

import logging
import os
import tempfile
from pathlib import Path

from thrustmap.errors import OutputExistsError, ParameterError

__all__ = ["CAUTION", "FIGURE_FORMATS", "add_caution", "save_figure"]

log = logging.getLogger(__name__)

FIGURE_FORMATS = ("png", "svg", "pdf")

CAUTION = (
    "Interpretive aid; to be reviewed by a qualified geologist. "
    "Local codes and licensed practice prevail."
)


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


def save_figure(
    fig,
    stem: str | os.PathLike,
    *,
    formats: tuple[str, ...] = ("png", "svg"),
    dpi: int = 200,
    overwrite: bool = False,
) -> list[Path]:
    """Save a figure as ``stem.png``, ``stem.svg``, ... through a temporary file and a rename.

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
    bad = [f for f in formats if f not in FIGURE_FORMATS]
    if bad or not formats:
        raise ParameterError(f"figure formats {list(formats)} not valid; choose from {', '.join(FIGURE_FORMATS)}")
    base = Path(stem)
    targets = [base.with_suffix(f".{f}") for f in formats]
    existing = [str(p) for p in targets if p.exists()]
    if existing and not overwrite:
        raise OutputExistsError(
            f"output exists: {', '.join(existing)}; pass overwrite=True (--overwrite) to replace it"
        )
    base.parent.mkdir(parents=True, exist_ok=True)
    for fmt, target in zip(formats, targets, strict=True):
        fd, tmp = tempfile.mkstemp(prefix=f".{target.stem}-", suffix=f".{fmt}", dir=target.parent)
        os.close(fd)
        try:
            # no timestamps, so reruns give identical vector files
            meta = {"svg": {"Date": None}, "pdf": {"CreationDate": None}}.get(fmt)
            fig.savefig(tmp, format=fmt, dpi=dpi, metadata=meta)
            os.replace(tmp, target)
        finally:
            if os.path.exists(tmp):
                os.remove(tmp)
        log.info("wrote %s", target)
    return targets
