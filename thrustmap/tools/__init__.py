"""Declared tools: the declaration mechanism, the shared options and the tool registry."""

from thrustmap.tools.declare import Example, FileOutput, LayerInput, LayerOutput, Param, Tool
from thrustmap.tools.registry import get_tool, list_broken, list_tools, refresh

__all__ = [
    "Example",
    "FileOutput",
    "LayerInput",
    "LayerOutput",
    "Param",
    "Tool",
    "get_tool",
    "list_broken",
    "list_tools",
    "refresh",
]
