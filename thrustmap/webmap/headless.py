"""Open a web map in headless Chromium with the network cut off, and report what happened.

Used by the browser tests and the benchmark, and by anyone who wants to
check that a map really opens offline. Needs the ``playwright`` package and a
system Chromium (Debian: ``apt-get install chromium``); Playwright's own
browser download is never used.
"""

from __future__ import annotations

import os
import shutil
import tempfile
import time
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from thrustmap.errors import ThrustmapError

__all__ = ["CHROMIUM_ARGS", "find_chromium", "offline_browser", "open_offline", "PageReport"]

# Without the background-networking flags Chromium tries to reach its vendor's services.
CHROMIUM_ARGS = (
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--disable-default-apps",
    "--disable-extensions",
)


def find_chromium() -> str | None:
    """Path of a Chromium executable: ``$THRUSTMAP_CHROMIUM``, then ``chromium`` on PATH.

    Examples
    --------
    >>> find_chromium() is None or os.path.exists(find_chromium())
    True
    """
    candidates = [os.environ.get("THRUSTMAP_CHROMIUM"), shutil.which("chromium"),
                  shutil.which("chromium-browser"), "/usr/bin/chromium"]
    return next((c for c in candidates if c and os.path.exists(c)), None)


@dataclass
class PageReport:
    """What a page did while it loaded: errors, blocked requests, dialogs, load time."""

    errors: list[str] = field(default_factory=list)
    requests: list[str] = field(default_factory=list)
    dialogs: list[str] = field(default_factory=list)
    load_seconds: float = float("nan")

    @property
    def clean(self) -> bool:
        """No console error, no page error, no network request and no dialog."""
        return not (self.errors or self.requests or self.dialogs)


@contextmanager
def offline_browser(
    *, executable: str | None = None, width: int = 1280, height: int = 860
) -> Iterator[Any]:
    """A Playwright browser context on system Chromium with an empty, throw-away profile.

    Raises
    ------
    ThrustmapError
        When Playwright or Chromium is missing.
    """
    try:
        from playwright.sync_api import sync_playwright
    except ImportError as exc:
        raise ThrustmapError("the playwright package is needed: pip install playwright") from exc
    exe = executable or find_chromium()
    if exe is None:
        raise ThrustmapError("no Chromium found: install it (Debian: apt-get install chromium) "
                             "or set THRUSTMAP_CHROMIUM to its path")
    with tempfile.TemporaryDirectory(prefix="thrustmap-chromium-") as profile, \
            sync_playwright() as pw:
        context = pw.chromium.launch_persistent_context(
            profile, executable_path=exe, args=list(CHROMIUM_ARGS), headless=True,
            viewport={"width": width, "height": height}, device_scale_factor=1,
        )
        try:
            yield context
        finally:
            context.close()


def open_offline(context: Any, path: str | os.PathLike[str], *, timeout_ms: float = 60_000,
                 ready: str = "window.thrustmap && window.thrustmap.ready") -> tuple[Any, PageReport]:
    """Open a local HTML file with every non-``file:``/``data:`` request aborted.

    Parameters
    ----------
    context : playwright BrowserContext
        From :func:`offline_browser`.
    path : path-like
        The HTML file.
    timeout_ms : float
        How long to wait for the page to say it is ready.
    ready : str
        JavaScript expression that turns true once the page has drawn.

    Returns
    -------
    page, PageReport
        The open page and the report, which keeps filling while the page lives.

    Raises
    ------
    ThrustmapError
        When the page does not become ready in time (the message holds the report).
    """
    report = PageReport()
    page = context.new_page()
    page.on("console", lambda m: m.type == "error" and report.errors.append(m.text))
    page.on("pageerror", lambda e: report.errors.append(f"pageerror: {e}"))

    def on_dialog(dialog: Any) -> None:
        report.dialogs.append(f"{dialog.type}: {dialog.message}")
        dialog.dismiss()

    page.on("dialog", on_dialog)

    def route(r: Any) -> None:
        url = r.request.url
        if url.startswith(("file:", "data:")):
            r.continue_()
        else:
            report.requests.append(url)
            r.abort()

    page.route("**/*", route)
    start = time.perf_counter()
    page.goto(Path(path).resolve().as_uri())
    try:
        page.wait_for_function(ready, timeout=timeout_ms)
    except Exception as exc:  # playwright's TimeoutError; name what the page reported
        page.close()
        raise ThrustmapError(f"{path} never became ready ({ready}): {report}") from exc
    report.load_seconds = time.perf_counter() - start
    return page, report
