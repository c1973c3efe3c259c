"""Progress of long steps: a bar on a terminal, nothing when output is not a terminal.

Long steps (reading big files, bootstrap, contouring, scanlines, writing maps
and reports) wrap their chunks of work in :class:`Progress` or iterate through
:func:`progress`. The bar is drawn on standard error only when it is a
terminal and progress is enabled (``thrustmap --quiet`` disables it with
:func:`set_enabled`); elsewhere, such as in notebooks, pipes and tests, nothing
is written. Either way the elapsed time is logged at DEBUG level.
"""

from __future__ import annotations

import logging
import sys
import time
from collections.abc import Iterable, Iterator
from typing import TextIO, TypeVar

__all__ = ["Progress", "progress", "set_enabled"]

log = logging.getLogger(__name__)
T = TypeVar("T")

_enabled = True
_WIDTH = 28
_INTERVAL = 0.1  # seconds between redraws


def set_enabled(enabled: bool) -> bool:
    """Allow (``True``, the default) or forbid progress bars in this process.

    Returns
    -------
    bool
        The previous setting, to restore it.

    Examples
    --------
    >>> previous = set_enabled(False)
    >>> _ = set_enabled(previous)
    """
    global _enabled
    previous, _enabled = _enabled, bool(enabled)
    return previous


class Progress:
    """A progress bar for ``total`` units of work.

    Parameters
    ----------
    total : int, optional
        Units of work expected; unknown totals show a running count.
    label : str
        What is being done, shown before the bar and in the log.
    stream : text stream, optional
        Where to draw; default standard error. Nothing is drawn unless the
        stream is a terminal.

    Examples
    --------
    >>> with Progress(3, label="counting") as bar:
    ...     for _ in range(3):
    ...         bar.update()
    >>> bar.done
    3
    """

    def __init__(
        self, total: int | None = None, *, label: str = "", stream: TextIO | None = None
    ) -> None:
        self.total = total
        self.label = label
        self.done = 0
        self._stream = sys.stderr if stream is None else stream
        isatty = getattr(self._stream, "isatty", None)
        self.visible = _enabled and bool(isatty and isatty())
        self._start = time.monotonic()
        self._drawn = 0.0
        self._closed = False

    def update(self, n: int = 1) -> None:
        """Record ``n`` more units done and redraw when due."""
        self.done += n
        now = time.monotonic()
        if self.visible and now - self._drawn >= _INTERVAL:
            self._draw(now)

    def _draw(self, now: float) -> None:
        elapsed = now - self._start
        if self.total:
            fraction = min(self.done / self.total, 1.0)
            filled = int(round(fraction * _WIDTH))
            bar = "#" * filled + "." * (_WIDTH - filled)
            text = f"{self.label} [{bar}] {fraction:4.0%} {self.done}/{self.total} {elapsed:.0f}s"
        else:
            text = f"{self.label} {self.done} {elapsed:.0f}s"
        self._stream.write("\r" + text)
        self._stream.flush()
        self._drawn = now

    def close(self) -> None:
        """Finish the bar (final state and a line break) and log the elapsed time."""
        if self._closed:
            return
        self._closed = True
        now = time.monotonic()
        if self.visible:
            self._draw(now)
            self._stream.write("\n")
            self._stream.flush()
        log.debug("%s: %d done in %.2f s", self.label or "progress", self.done, now - self._start)

    def __enter__(self) -> Progress:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def progress(
    iterable: Iterable[T],
    *,
    total: int | None = None,
    label: str = "",
    stream: TextIO | None = None,
) -> Iterator[T]:
    """Iterate through ``iterable`` with a progress bar (one unit per item).

    ``total`` defaults to ``len(iterable)`` when it has one.

    Examples
    --------
    >>> list(progress(range(3), label="chunks"))
    [0, 1, 2]
    """
    if total is None and hasattr(iterable, "__len__"):
        total = len(iterable)  # type: ignore[arg-type]
    with Progress(total, label=label, stream=stream) as bar:
        for item in iterable:
            yield item
            bar.update()
