"""Discovery of declared tools through the ``thrustmap.tools`` entry-point group.

Built-in tool modules and third-party packages register the same way: an entry
point in the ``thrustmap.tools`` group naming a module (or a single
:class:`~thrustmap.tools.declare.Tool`, or an iterable of them). Every
module-level ``Tool`` of a registered module is a tool. An entry point that
fails to load is logged and skipped, so one broken plugin never hides the others.
"""

from __future__ import annotations

import dataclasses
import logging
from collections.abc import Iterable
from importlib.metadata import EntryPoint, entry_points
from types import ModuleType

from thrustmap.errors import ParameterError
from thrustmap.tools.declare import Tool

__all__ = ["ENTRY_POINT_GROUP", "list_tools", "get_tool"]

ENTRY_POINT_GROUP = "thrustmap.tools"

logger = logging.getLogger(__name__)


def _tools_of(obj: object) -> list[Tool]:
    if isinstance(obj, Tool):
        return [obj]
    if isinstance(obj, ModuleType):
        return [value for value in vars(obj).values() if isinstance(value, Tool)]
    if isinstance(obj, Iterable) and not isinstance(obj, str | bytes):
        items = list(obj)
        if all(isinstance(item, Tool) for item in items):
            return items
    raise TypeError(f"expected a module, a Tool or an iterable of Tools, got {type(obj).__name__}")


def _load(ep: EntryPoint) -> list[Tool]:
    origin = ep.dist.name if ep.dist is not None else ep.name
    tools = _tools_of(ep.load())
    if origin == "thrustmap":
        return tools
    return [dataclasses.replace(t, origin=origin) if t.origin == "thrustmap" else t for t in tools]


def list_tools() -> list[Tool]:
    """Every declared tool of the installed packages, sorted by name.

    Returns
    -------
    list of Tool
        One entry per tool name; when two packages declare the same name, the
        first loaded wins and the clash is logged.

    Examples
    --------
    >>> from thrustmap.tools import Tool
    >>> all(isinstance(t, Tool) for t in list_tools())
    True
    """
    found: dict[str, Tool] = {}
    for ep in sorted(entry_points(group=ENTRY_POINT_GROUP), key=lambda e: (e.value, e.name)):
        try:
            tools = _load(ep)
        except Exception:
            logger.warning(
                "thrustmap tool entry point %r (%s) failed to load; its tools are unavailable",
                ep.name,
                ep.value,
                exc_info=True,
            )
            continue
        for tool in tools:
            if tool.name in found:
                logger.warning(
                    "tool %r from %s clashes with the one from %s; keeping the latter",
                    tool.name,
                    tool.origin,
                    found[tool.name].origin,
                )
                continue
            found[tool.name] = tool
    return [found[name] for name in sorted(found)]


def get_tool(name: str) -> Tool:
    """The declared tool called ``name``.

    Raises
    ------
    ParameterError
        When no installed package declares ``name``; the message lists the
        installed tools.

    Examples
    --------
    >>> get_tool("no_such_tool")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    thrustmap.errors.ParameterError: unknown tool 'no_such_tool'; installed tools: ...
    """
    tools = {t.name: t for t in list_tools()}
    if name not in tools:
        raise ParameterError(
            f"unknown tool {name!r}; installed tools: {', '.join(tools) or '(none)'}"
        )
    return tools[name]
