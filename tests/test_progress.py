"""Progress bars: drawn on a terminal only, silenced by --quiet, timing logged."""

import io
import logging

from thrustmap import progress as progress_module
from thrustmap.progress import Progress, progress, set_enabled


class Terminal(io.StringIO):
    def isatty(self):
        return True


def test_bar_is_drawn_on_a_terminal(monkeypatch):
    monkeypatch.setattr(progress_module, "_INTERVAL", 0.0)
    screen = Terminal()
    with Progress(4, label="contouring", stream=screen) as bar:
        bar.update(2)
        bar.update(2)
    text = screen.getvalue()
    assert text.startswith("\rcontouring [")
    assert " 50% 2/4" in text and "100% 4/4" in text
    assert text.endswith("\n")


def test_unknown_total_shows_a_count():
    screen = Terminal()
    list(progress(iter(range(5)), label="scanlines", stream=screen))
    assert screen.getvalue().endswith("\rscanlines 5 0s\n")


def test_silent_when_not_a_terminal_and_when_disabled():
    pipe = io.StringIO()
    assert list(progress(range(3), label="x", stream=pipe)) == [0, 1, 2]
    assert pipe.getvalue() == ""
    screen = Terminal()
    set_enabled(False)
    try:
        with Progress(3, stream=screen) as bar:
            bar.update(3)
            assert not bar.visible
    finally:
        set_enabled(True)
    assert screen.getvalue() == ""


def test_elapsed_time_is_logged(caplog):
    with caplog.at_level(logging.DEBUG, logger="thrustmap.progress"):
        with Progress(2, label="bootstrap", stream=io.StringIO()) as bar:
            bar.update(2)
    assert "bootstrap: 2 done in" in caplog.text


def test_cli_draws_bars_on_a_terminal_unless_quiet(tmp_path, monkeypatch):
    import sys

    from thrustmap.cli import main

    (tmp_path / "a.csv").write_text("attitude\n030/45\n")
    argv = ["convert-attitudes", str(tmp_path / "a.csv"), "--out"]
    monkeypatch.setattr(sys, "stderr", Terminal())
    assert main([*argv, str(tmp_path / "o.gpkg"), "-q"]) == 0
    assert sys.stderr.getvalue() == ""
    assert main([*argv, str(tmp_path / "p.gpkg")]) == 0
    assert "converting plane attitudes [" in sys.stderr.getvalue()
    assert Progress(1, stream=Terminal()).visible  # the setting is restored after the command
