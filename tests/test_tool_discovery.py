"""Tool discovery through the ``thrustmap.tools`` entry-point group (thrustmap.tools.registry)."""

import logging

import pytest

from thrustmap.errors import ParameterError
from thrustmap.tools.registry import ENTRY_POINT_GROUP, get_tool, list_tools

MODULE = """
from thrustmap.tools import LayerInput, LayerOutput, Param, Tool

def _echo(layer, *, factor):
    return {"echoed": layer}

ZETA = Tool("zeta_echo", "Echo a layer.", _echo, inputs=(LayerInput("layer", "any"),),
            params=(Param("factor", "float", 1.0),), outputs=(LayerOutput("echoed", "any"),))
ALPHA = Tool("alpha_echo", "Echo a layer.", _echo, inputs=(LayerInput("layer", "any"),),
             params=(Param("factor", "float", 1.0),), outputs=(LayerOutput("echoed", "any"),))
NOT_A_TOOL = 3
"""


@pytest.fixture
def plugin_dir(tmp_path, monkeypatch):
    """A stand-in installed package: a module of tools and a broken entry point."""
    (tmp_path / "discovery_sample_tools.py").write_text(MODULE)
    (tmp_path / "discovery_broken_tools.py").write_text("raise ImportError('missing dependency')\n")
    info = tmp_path / "discovery_sample-1.0.dist-info"
    info.mkdir()
    (info / "METADATA").write_text("Metadata-Version: 2.1\nName: discovery-sample\nVersion: 1.0\n")
    (info / "entry_points.txt").write_text(
        f"[{ENTRY_POINT_GROUP}]\nsample = discovery_sample_tools\nbroken = discovery_broken_tools\n"
    )
    monkeypatch.syspath_prepend(str(tmp_path))
    return tmp_path


def test_module_tools_are_found_sorted_with_their_origin(plugin_dir):
    found = [t for t in list_tools() if t.name.endswith("_echo")]
    assert [t.name for t in found] == ["alpha_echo", "zeta_echo"]
    assert {t.origin for t in found} == {"discovery-sample"}


def test_broken_entry_point_is_logged_and_skipped(plugin_dir, caplog):
    with caplog.at_level(logging.WARNING, logger="thrustmap.tools.registry"):
        names = {t.name for t in list_tools()}
    assert {"alpha_echo", "zeta_echo"} <= names
    assert any("'broken'" in r.getMessage() for r in caplog.records)


def test_get_tool(plugin_dir):
    assert get_tool("alpha_echo").summary == "Echo a layer."
    with pytest.raises(ParameterError, match="unknown tool 'omega'; installed tools: .*alpha_echo"):
        get_tool("omega")
