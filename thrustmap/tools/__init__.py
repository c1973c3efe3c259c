"""Declared tools: the declaration mechanism and the tool registry."""

from thrustmap.tools.declare import LayerInput, LayerOutput, Param, Tool

__all__ = ["LayerInput", "LayerOutput", "Param", "Tool"]
