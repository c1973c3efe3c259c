"""The ``thrustmap`` command line, generated from the tool declarations.

::

    thrustmap tools [--json]                      list the installed tools
    thrustmap TOOL INPUT... --out OUT.gpkg [--PARAM VALUE ...]
    thrustmap run PROJECT.toml [--out DIR] [--overwrite]
    thrustmap demo                                run sample_gis/project.toml

Exit status: 0 success; 1 failure while processing; 2 bad usage or bad input
(unknown tool or parameter, value out of range or of the wrong type, missing
file, unknown layer, unreadable data, output exists without ``--overwrite``).
Errors go to standard error and name the file, layer, row and field. This module
only parses arguments and reports: the work is done by the declared tools,
:mod:`thrustmap.tools.runner` and :mod:`thrustmap.pipeline`.
"""

from __future__ import annotations

import argparse
import json
import logging
import shutil
import sys
import textwrap
import traceback
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from pathlib import Path
from typing import Any

from thrustmap import progress
from thrustmap._version import __version__
from thrustmap.errors import (
    InputError,
    OutputExistsError,
    ParameterError,
    SourceNotFoundError,
    ThrustmapError,
)
from thrustmap.io.sources import working_crs
from thrustmap.tools import registry, runner
from thrustmap.tools.declare import LayerOutput, Param, Tool
from thrustmap.tools.options import COMMON_OPTIONS, common_option

__all__ = ["main", "build_parser", "describe_tools", "DEMO_PROJECT"]

log = logging.getLogger(__name__)

#: The project ``thrustmap demo`` runs, relative to the working folder.
DEMO_PROJECT = Path("sample_gis") / "project.toml"
_COMMANDS = ("tools", "run", "demo")
_TOOL_OPTIONS = tuple(o.name for o in COMMON_OPTIONS if o.param is not None)
_WIDTH = 79
_USAGE_ERRORS = (ParameterError, InputError, SourceNotFoundError, OutputExistsError)


def _add_common(parser: argparse.ArgumentParser, name: str, **kwargs: Any) -> None:
    option = common_option(name)
    flags = [option.short, option.flag] if option.short else [option.flag]
    kwargs.setdefault("help", option.help)
    parser.add_argument(*flags, dest=name, **kwargs)


def _add_logging(parser: argparse.ArgumentParser) -> None:
    group = parser.add_mutually_exclusive_group()
    for name in ("quiet", "verbose"):
        option = common_option(name)
        group.add_argument(
            option.short, option.flag, dest=name, action="store_true", help=option.help
        )


def _describe_param(p: Param) -> str:
    parts = [p.help.rstrip(".")] if p.help else []
    if p.unit:
        parts.append(p.unit)
    if p.minimum is not None or p.maximum is not None:
        low = "" if p.minimum is None else f"{p.minimum:g}"
        high = "" if p.maximum is None else f"{p.maximum:g}"
        parts.append(f"range {low}..{high}")
    if p.default is not None:
        parts.append(f"default {p.default}")
    return _escape("; ".join(parts))


def _escape(text: str) -> str:
    """Help text with ``%`` doubled, as argparse expands help strings with ``%``."""
    return text.replace("%", "%%")


def _metavar(p: Param) -> str | None:
    if p.type == "choice":
        return "{" + ",".join(p.choices) + "}"
    if p.unit:
        return p.unit.upper().replace(" ", "_")
    return {"float": "NUMBER", "int": "INTEGER", "str": "TEXT"}.get(p.type)


def _flag(name: str) -> str:
    return "--" + name.replace("_", "-")


def _has_layers(tool: Tool) -> bool:
    return any(isinstance(o, LayerOutput) for o in tool.outputs)


def _example_line(tool: Tool) -> str:
    if tool.example is None:
        return ""
    words = ["thrustmap", tool.name]
    words += [i.name.upper() for i in tool.inputs if not i.optional]
    words += [f"{_flag(i.name)} {i.name.upper()}" for i in tool.inputs if i.optional]
    words += ["--out", "OUT.gpkg" if _has_layers(tool) else "OUT_DIR"]
    for name, value in tool.example.params.items():
        if tool.param(name).type == "bool":
            words.append(_flag(name) if value else "--no-" + name.replace("_", "-"))
        else:
            words += [_flag(name), str(value)]
    summary = f"\n  {tool.example.summary}" if tool.example.summary else ""
    return "example:\n  " + " ".join(words) + summary


def _add_tool_parser(subparsers: Any, tool: Tool) -> argparse.ArgumentParser:
    lines = [textwrap.fill(tool.summary, _WIDTH), "", "outputs:"]
    for o in tool.outputs:
        d = o.describe()
        kind = (
            f"{d['kind']}, {d['geometry']}" if "geometry" in d else f"{d['kind']} {d['filename']}"
        )
        lines.append(
            textwrap.fill(
                f"{o.name} ({kind}): {o.help}",
                _WIDTH,
                initial_indent="  ",
                subsequent_indent="    ",
            )
        )
    parser = subparsers.add_parser(
        tool.name,
        help=_escape(tool.summary),
        description="\n".join(lines),
        epilog=_example_line(tool),
        formatter_class=argparse.RawDescriptionHelpFormatter,
        allow_abbrev=False,
    )
    for i in tool.inputs:
        text = _escape(f"{i.help.rstrip('.')} ({i.geometry}; FILE or FILE:LAYER)".strip())
        if i.optional:
            parser.add_argument(
                _flag(i.name), dest=f"in:{i.name}", metavar=i.name.upper(), help=text
            )
        else:
            parser.add_argument(f"in:{i.name}", metavar=i.name.upper(), help=text)
    declared = {p.name: p for p in tool.params}
    params = parser.add_argument_group("parameters")
    for p in tool.params:
        if p.name in _TOOL_OPTIONS:
            continue
        if p.type == "bool":
            params.add_argument(
                _flag(p.name),
                dest=f"param:{p.name}",
                action=argparse.BooleanOptionalAction,
                default=None,
                help=_describe_param(p),
            )
        else:
            params.add_argument(
                _flag(p.name), dest=f"param:{p.name}", metavar=_metavar(p), help=_describe_param(p)
            )
    shared = parser.add_argument_group("shared options")
    _add_common(shared, "crs", metavar="CRS")
    for name in _TOOL_OPTIONS:
        if name != "crs" and name in declared:
            p = declared[name]
            _add_common(shared, name, metavar=_metavar(p), help=_describe_param(p))
    _add_common(shared, "layer", metavar="LAYER")
    _add_common(shared, "out", metavar="OUT", required=True)
    _add_common(shared, "overwrite", action="store_true")
    _add_logging(shared)
    parser.set_defaults(handler=_run_tool, tool=tool)
    return parser


def build_parser(tools: Sequence[Tool] | None = None) -> argparse.ArgumentParser:
    """The argument parser for the commands and every registered tool.

    Parameters
    ----------
    tools : sequence of Tool, optional
        Tools to offer; default every tool of the registry.

    Examples
    --------
    >>> build_parser().parse_args(["tools", "--json"]).json
    True
    """
    tools = registry.list_tools() if tools is None else tools
    # No abbreviated options: a parameter added later must not change what old commands mean.
    parser = argparse.ArgumentParser(
        prog="thrustmap",
        allow_abbrev=False,
        description="Geoprocessing for fold-and-thrust belt mapping. Results are interpretive aids "
        "to be reviewed by a qualified geologist; local codes and licensed practice prevail.",
        epilog="`thrustmap TOOL --help` describes a tool's inputs, parameters and outputs.",
    )
    parser.add_argument("--version", action="version", version=f"thrustmap {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", required=True)

    listing = sub.add_parser(
        "tools", allow_abbrev=False, help="List the installed tools (and broken plugins)."
    )
    listing.add_argument(
        "--json", action="store_true", help="Describe every tool as JSON, for GIS hosts."
    )
    _add_logging(listing)
    listing.set_defaults(handler=_list_tools)

    run = sub.add_parser(
        "run",
        allow_abbrev=False,
        help="Run a TOML project file: every step, one GeoPackage per run.",
    )
    run.add_argument("project", type=Path, help="The project file (.toml).")
    run.add_argument(
        "--out", type=Path, metavar="DIR", help="Output folder instead of the project's."
    )
    _add_common(run, "overwrite", action="store_true")
    _add_logging(run)
    run.set_defaults(handler=_run_project)

    demo = sub.add_parser(
        "demo",
        allow_abbrev=False,
        help=f"Run the synthetic demo project {DEMO_PROJECT.as_posix()}.",
    )
    _add_logging(demo)
    demo.set_defaults(handler=_run_demo)

    for tool in tools:
        _add_tool_parser(sub, tool)
    return parser


def describe_tools() -> dict[str, Any]:
    """Machine-readable description of every tool: what a GIS host needs for its dialogs.

    Returns
    -------
    dict
        ``thrustmap`` (version), ``entry_point_group``, ``shared_options``,
        ``tools`` (each :meth:`Tool.describe` plus ``usage`` and a ``flag`` per
        parameter and input) and ``broken`` (plugins that failed to load).

    Examples
    --------
    >>> doc = describe_tools()
    >>> convert = next(t for t in doc["tools"] if t["name"] == "convert-attitudes")
    >>> [p["flag"] for p in convert["params"]]
    ['--column', '--kind', '--azimuth']
    """
    parser = build_parser()
    subparsers = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    tools = []
    for tool in registry.list_tools():
        doc = tool.describe()
        doc["usage"] = " ".join(subparsers.choices[tool.name].format_usage().split()[1:])
        for item in doc["inputs"]:
            item["flag"] = _flag(item["name"]) if item["optional"] else None
        for item in doc["params"]:
            item["flag"] = _flag(item["name"])
        tools.append(doc)
    return {
        "thrustmap": __version__,
        "entry_point_group": registry.ENTRY_POINT_GROUP,
        "shared_options": [o.describe() for o in COMMON_OPTIONS],
        "tools": tools,
        "broken": [b.describe() for b in registry.list_broken()],
    }


def _list_tools(args: argparse.Namespace) -> int:
    if args.json:
        print(json.dumps(describe_tools(), indent=2, default=str))
        return 0
    tools = registry.list_tools()
    rows = [(t.name, t.group, t.origin, t.summary) for t in tools]
    header = ("TOOL", "GROUP", "ORIGIN", "SUMMARY")
    widths = [max(len(r[k]) for r in [header, *rows]) for k in range(3)]
    room = max(shutil.get_terminal_size((120, 20)).columns - sum(widths) - 6, 30)
    for row in [header, *rows]:
        summary = row[3] if len(row[3]) <= room else row[3][: room - 3] + "..."
        print("  ".join(c.ljust(w) for c, w in zip(row[:3], widths, strict=True)) + "  " + summary)
    broken = registry.list_broken()
    if broken:
        print(f"\nBROKEN ({len(broken)}): installed but not loadable")
        for b in broken:
            print(f"  {b.name} ({b.origin}; {b.entry_point}): {b.error}")
    return 0


def _run_tool(args: argparse.Namespace) -> int:
    tool: Tool = args.tool
    values = vars(args)
    sources = {
        i.name: values[f"in:{i.name}"]
        for i in tool.inputs
        if values.get(f"in:{i.name}") is not None
    }
    params = {
        p.name: values[f"param:{p.name}"]
        for p in tool.params
        if values.get(f"param:{p.name}") is not None
    }
    for name in _TOOL_OPTIONS:
        if values.get(name) is not None and any(p.name == name for p in tool.params):
            params[name] = values[name]
    if args.crs is not None:
        working_crs(args.crs)
    params = tool.validate_params(params)
    out = Path(args.out)
    geopackage = out if _has_layers(tool) else None
    folder = out.parent if geopackage is not None else out
    runner.check_targets(
        runner.declared_targets(tool, geopackage=geopackage, folder=folder),
        overwrite=args.overwrite,
    )
    frames = runner.load_inputs(tool, sources, layer=args.layer, to_crs=args.crs)
    log.debug("running %s with %s", tool.name, params)
    results = tool.run(frames, params)
    layers, files = runner.collect_outputs(tool, results)
    written = runner.write_outputs(
        layers, files, geopackage=geopackage, folder=folder, overwrite=args.overwrite
    )
    if not args.quiet:
        for name, frame in layers.items():
            print(f"{geopackage}: layer {name} ({len(frame)} rows)")
        for path in written[1 if layers else 0 :]:
            print(path)
    return 0


def _report_run(result: Any, quiet: bool) -> None:
    if quiet:
        return
    for name, rows in result.layers.items():
        print(f"{result.geopackage}: layer {name} ({rows} rows)")
    for path in result.files:
        print(path)


def _run_project(args: argparse.Namespace) -> int:
    from thrustmap.pipeline import run_project

    _report_run(run_project(args.project, output=args.out, overwrite=args.overwrite), args.quiet)
    return 0


def _run_demo(args: argparse.Namespace) -> int:
    from thrustmap.pipeline import run_project

    if not DEMO_PROJECT.exists():
        raise SourceNotFoundError(
            f"file {DEMO_PROJECT}: not found; run `thrustmap demo` (or `make demo`) from the "
            "folder holding sample_gis/"
        )
    _report_run(run_project(DEMO_PROJECT, overwrite=True), args.quiet)
    return 0


class _Formatter(logging.Formatter):
    def format(self, record: logging.LogRecord) -> str:
        text = super().format(record)
        if record.levelno >= logging.WARNING:
            return f"thrustmap: {record.levelname.lower()}: {text}"
        return text


@contextmanager
def _reporting(quiet: bool, verbose: bool) -> Iterator[None]:
    """Log thrustmap's messages to standard error for one command, then restore the settings."""
    logger = logging.getLogger("thrustmap")
    handler = logging.StreamHandler(sys.stderr)
    handler.setFormatter(_Formatter("%(name)s: %(message)s" if verbose else "%(message)s"))
    level = logger.level
    logger.addHandler(handler)
    logger.setLevel(logging.ERROR if quiet else logging.DEBUG if verbose else logging.INFO)
    bars = progress.set_enabled(not quiet)
    try:
        yield
    finally:
        progress.set_enabled(bars)
        logger.setLevel(level)
        logger.removeHandler(handler)


def _first_command(argv: Sequence[str]) -> str | None:
    return next((a for a in argv if not a.startswith("-")), None)


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status (0, 1 or 2).

    Parameters
    ----------
    argv : sequence of str, optional
        Arguments without the program name; default ``sys.argv[1:]``.

    Examples
    --------
    >>> main(["no-such-tool"])
    2
    """
    argv = list(sys.argv[1:] if argv is None else argv)
    verbose = "-v" in argv or "--verbose" in argv
    try:
        command = _first_command(argv)
        if command is not None and command not in _COMMANDS:
            registry.get_tool(command)
        args = build_parser().parse_args(argv)
        with _reporting(args.quiet, args.verbose):
            return args.handler(args)
    except SystemExit as exc:  # argparse: --help, --version and usage errors
        return exc.code if isinstance(exc.code, int) else 0 if exc.code is None else 2
    except _USAGE_ERRORS as exc:
        print(f"thrustmap: error: {exc}", file=sys.stderr)
        return 2
    except Exception as exc:  # the command line reports every failure as exit status 1
        print(
            f"thrustmap: error: {type(exc).__name__}: {exc}"
            if not isinstance(exc, ThrustmapError)
            else f"thrustmap: error: {exc}",
            file=sys.stderr,
        )
        if verbose:
            traceback.print_exc()
        return 1


if __name__ == "__main__":
    sys.exit(main())
