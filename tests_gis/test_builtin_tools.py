"""Every built-in thrustmap tool, run through the GIS on its own worked example.

The example's inputs (``Tool.example``, the synthetic scenario) are read once
with thrustmap's reader and stored in one GeoPackage, so the GIS run and the
command-line run start from the same layers.
"""

import pytest
from runs import assert_outputs_match, run_in_gis, run_in_python, unstable_files

from thrustmap.io.sources import read_source
from thrustmap.io.write import write_layers
from thrustmap.tools.registry import list_tools
from thrustmap.tools.runner import example_invocation

BUILTIN_TOOLS = [t for t in list_tools() if t.origin == "thrustmap"]


@pytest.mark.parametrize("tool", BUILTIN_TOOLS, ids=lambda t: t.name)
def test_builtin_tool_matches_the_command_line(qgis_app, tmp_path, tool):
    sources, params = example_invocation(tool, tmp_path / "example")
    frames = {name: read_source(source) for name, source in sources.items()}
    gpkg = write_layers(tmp_path / "inputs.gpkg", frames) if frames else None
    layers = {name: (gpkg, name) for name in frames}
    got = run_in_gis(tool, layers, params, tmp_path / "gis")
    expected = run_in_python(tool, layers, params)
    unstable = set()
    if any(isinstance(c, str | bytes) for c in expected[1].values()):
        unstable = unstable_files(expected, run_in_python(tool, layers, params))
    assert_outputs_match(tool, got, expected, unstable=unstable)
