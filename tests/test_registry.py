"""Tool registry: built-ins and plugins through the entry-point group, broken plugins, look-up."""

import ast
import re
import sys
import tomllib
from importlib import metadata
from pathlib import Path

import pytest

from tests.plugins import PLUGIN_DIST
from thrustmap.errors import ParameterError, ToolLoadError
from thrustmap.tools import registry
from thrustmap.tools.declare import Tool

ROOT = Path(__file__).resolve().parents[1]


def _declaration_modules():
    """thrustmap/tools/*.py modules that assign a module-level TOOLS."""
    found = []
    for path in sorted((ROOT / "thrustmap" / "tools").glob("*.py")):
        tree = ast.parse(path.read_text())
        for node in tree.body:
            targets = (
                node.targets if isinstance(node, ast.Assign) else [getattr(node, "target", None)]
            )
            if any(isinstance(t, ast.Name) and t.id == "TOOLS" for t in targets):
                found.append(f"thrustmap.tools.{path.stem}:TOOLS")
    return found


def test_every_declaration_module_is_an_entry_point_in_pyproject():
    declared = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]["entry-points"][
        "thrustmap.tools"
    ]
    modules = _declaration_modules()
    assert modules, "no thrustmap/tools/*.py module defines TOOLS"
    missing = sorted(set(modules) - set(declared.values()))
    assert not missing, f'add these to [project.entry-points."thrustmap.tools"]: {missing}'


def test_installed_metadata_matches_pyproject():
    declared = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]["entry-points"][
        "thrustmap.tools"
    ]
    installed = {
        ep.name: ep.value
        for ep in metadata.entry_points(group=registry.ENTRY_POINT_GROUP)
        if ep.dist is not None and ep.dist.name == "thrustmap"
    }
    assert installed == declared, "the installed thrustmap is stale: reinstall it (make setup)"


def test_builtins_load_and_none_is_broken():
    registry.refresh()
    assert [b for b in registry.list_broken() if b.origin == "thrustmap"] == []
    names = [t.name for t in registry.list_tools()]
    assert "convert-attitudes" in names
    assert names == sorted(names)
    assert registry.get_tool("convert-attitudes").origin == "thrustmap"


def test_unknown_tool_lists_installed():
    with pytest.raises(
        ParameterError, match=r"unknown tool 'frobnicate'; installed tools are: .*convert-attitudes"
    ):
        registry.get_tool("frobnicate")


def test_discovery_is_cached_until_refresh(tmp_path, monkeypatch):
    from tests.plugins import PLUGIN_MODULE, install_plugin

    registry.refresh()
    before = [t.name for t in registry.list_tools()]
    monkeypatch.syspath_prepend(str(install_plugin(tmp_path / "site")))
    assert [t.name for t in registry.list_tools()] == before  # cached
    registry.refresh()
    assert "count-rows" in [t.name for t in registry.list_tools()]
    monkeypatch.undo()
    sys.modules.pop(PLUGIN_MODULE, None)
    registry.refresh()
    assert [t.name for t in registry.list_tools()] == before


def test_plugin_tool_registered_with_its_origin(plugin):
    tool = registry.get_tool("count-rows")
    assert isinstance(tool, Tool)
    assert tool.origin == PLUGIN_DIST


@pytest.mark.parametrize(
    ("name", "error"),
    [
        (
            "missing",
            r"cannot load: ModuleNotFoundError: No module named 'thrustmap_no_such_module'",
        ),
        ("not-a-tool", r"resolves to int, expected a Tool or an iterable of Tools"),
        ("convert-attitudes", r"already provided by thrustmap"),
        ("run", r"'run' is a command of thrustmap itself"),
        ("misused-options", r"'overwrite' takes the name of the run option --overwrite"),
        ("misused-options", r"'azimuth_ref' must be declared like the shared option --azimuth-ref"),
    ],
)
def test_broken_plugins_are_listed_with_their_error(plugin, name, error):
    broken = [b for b in registry.list_broken() if b.name == name]
    assert broken, [b.name for b in registry.list_broken()]
    assert broken[0].origin == PLUGIN_DIST
    assert any(re.search(error, b.error) for b in broken)


def test_builtin_survives_a_shadowing_plugin(plugin):
    assert registry.get_tool("convert-attitudes").origin == "thrustmap"


def test_get_tool_of_a_broken_plugin_says_why(plugin):
    with pytest.raises(
        ToolLoadError, match="'misused-options' from thrustmap-testplugin could not be loaded"
    ):
        registry.get_tool("misused-options")
