"""The tool registry: every tool, built-in or third-party, comes from one entry-point group.

thrustmap registers its own declaration modules in the ``thrustmap.tools``
entry-point group of its ``pyproject.toml``; a third-party package adds tools by
declaring entries in the same group::

    [project.entry-points."thrustmap.tools"]
    my-tools = "my_package.thrustmap_tools:TOOLS"

Each entry resolves to a :class:`~thrustmap.tools.declare.Tool` or an iterable
of them. Discovery is cached; :func:`refresh` forgets the cache (after
installing a package in a running session). An entry that cannot be imported,
resolves to something else, or declares a tool that breaks the rules (a name
clash, a reserved name, a misused shared option) does not stop the others: it
is kept as a :class:`BrokenTool` with its error, listed by ``thrustmap tools``.
"""

from __future__ import annotations

import logging
import re
from collections.abc import Iterable
from dataclasses import dataclass, replace
from importlib import metadata

from thrustmap.errors import ParameterError, ToolLoadError
from thrustmap.tools.declare import Tool
from thrustmap.tools.options import COMMON_OPTIONS, check_common_params

__all__ = [
    "ENTRY_POINT_GROUP",
    "RESERVED_NAMES",
    "BrokenTool",
    "get_tool",
    "list_tools",
    "list_broken",
    "refresh",
]

log = logging.getLogger(__name__)

ENTRY_POINT_GROUP = "thrustmap.tools"
#: Command names of the command line itself; no tool may take them.
RESERVED_NAMES = frozenset({"tools", "run", "demo", "help"})
_SHARED_NAMES = frozenset(o.name for o in COMMON_OPTIONS)
_NAME = re.compile(r"^[a-z][a-z0-9]*(-[a-z0-9]+)*$")
_PARAM = re.compile(r"^[a-z][a-z0-9_]*$")


@dataclass(frozen=True)
class BrokenTool:
    """An entry point (or one tool of it) that could not be registered.

    Attributes
    ----------
    name : str
        The tool name when known, otherwise the entry-point name.
    origin : str
        Distribution that declared the entry point.
    entry_point : str
        ``name = value`` of the entry point.
    error : str
        Why it could not be registered.
    """

    name: str
    origin: str
    entry_point: str
    error: str

    def describe(self) -> dict[str, str]:
        """JSON-ready description of the broken entry."""
        return {
            "name": self.name,
            "origin": self.origin,
            "entry_point": self.entry_point,
            "error": self.error,
        }


_cache: tuple[dict[str, Tool], list[BrokenTool]] | None = None


def refresh() -> None:
    """Forget the discovered tools; the next look-up scans the entry points again.

    Examples
    --------
    >>> refresh()
    >>> "convert-attitudes" in {t.name for t in list_tools()}
    True
    """
    global _cache
    _cache = None


def _discover() -> tuple[dict[str, Tool], list[BrokenTool]]:
    global _cache
    if _cache is None:
        _cache = _scan(metadata.entry_points(group=ENTRY_POINT_GROUP))
    return _cache


def _dist_name(ep: metadata.EntryPoint) -> str:
    dist = getattr(ep, "dist", None)
    return dist.name if dist is not None else "unknown"


def _scan(entry_points: Iterable[metadata.EntryPoint]) -> tuple[dict[str, Tool], list[BrokenTool]]:
    tools: dict[str, Tool] = {}
    broken: list[BrokenTool] = []
    # thrustmap's own entries first, so a plugin cannot shadow a built-in tool.
    ordered = sorted(
        entry_points, key=lambda ep: (_dist_name(ep) != "thrustmap", _dist_name(ep), ep.name)
    )
    for ep in ordered:
        origin = _dist_name(ep)
        label = f"{ep.name} = {ep.value}"
        try:
            loaded = ep.load()
        except Exception as exc:  # a plugin may fail in any way; it must not stop the others
            log.debug("entry point %s failed to load", label, exc_info=True)
            broken.append(
                BrokenTool(ep.name, origin, label, f"cannot load: {type(exc).__name__}: {exc}")
            )
            continue
        items = [loaded] if isinstance(loaded, Tool) else loaded
        try:
            items = list(items)
        except TypeError:
            items = [loaded]
        for item in items:
            if not isinstance(item, Tool):
                broken.append(
                    BrokenTool(
                        ep.name,
                        origin,
                        label,
                        f"resolves to {type(item).__name__}, expected a Tool or an iterable of Tools",
                    )
                )
                continue
            tool = replace(item, origin=origin)
            problems = _problems(tool, tools)
            if problems:
                broken.append(BrokenTool(tool.name, origin, label, "; ".join(problems)))
            else:
                tools[tool.name] = tool
    return dict(sorted(tools.items())), broken


def _problems(tool: Tool, known: dict[str, Tool]) -> list[str]:
    problems = []
    if not _NAME.match(tool.name):
        problems.append(f"tool name {tool.name!r} must be lower-case words joined by '-'")
    if tool.name in RESERVED_NAMES:
        problems.append(f"tool name {tool.name!r} is a command of thrustmap itself")
    if tool.name in known:
        problems.append(f"tool name {tool.name!r} is already provided by {known[tool.name].origin}")
    names = [i.name for i in tool.inputs] + [p.name for p in tool.params]
    for name in names:
        if not _PARAM.match(name):
            problems.append(f"input or parameter name {name!r} must be snake_case")
    for i in tool.inputs:
        if i.name in _SHARED_NAMES:
            problems.append(f"input name {i.name!r} is the name of a shared option")
    duplicated = sorted({n for n in names if names.count(n) > 1})
    if duplicated:
        problems.append(f"names used twice among inputs and parameters: {', '.join(duplicated)}")
    outputs = [o.name for o in tool.outputs]
    if len(set(outputs)) != len(outputs):
        problems.append("output names must be distinct")
    problems.extend(check_common_params(tool))
    return problems


def list_tools() -> list[Tool]:
    """Every registered tool, sorted by name.

    Examples
    --------
    >>> tools = list_tools()
    >>> "convert-attitudes" in [t.name for t in tools], tools == sorted(tools, key=lambda t: t.name)
    (True, True)
    """
    return list(_discover()[0].values())


def list_broken() -> list[BrokenTool]:
    """Entries of the ``thrustmap.tools`` group that could not be registered, with their errors.

    Examples
    --------
    >>> [b.origin for b in list_broken() if b.origin == "thrustmap"]
    []
    """
    return list(_discover()[1])


def get_tool(name: str) -> Tool:
    """The registered tool called ``name``.

    Raises
    ------
    ToolLoadError
        When the tool's plugin failed to load (the message gives the cause).
    ParameterError
        When no tool has that name; the message lists the installed tools.

    Examples
    --------
    >>> get_tool("convert-attitudes").outputs[0].name
    'converted_attitudes'
    """
    tools, broken = _discover()
    if name in tools:
        return tools[name]
    for b in broken:
        if b.name == name:
            raise ToolLoadError(f"tool {name!r} from {b.origin} could not be loaded: {b.error}")
    installed = ", ".join(tools) or "none"
    raise ParameterError(f"unknown tool {name!r}; installed tools are: {installed}")
