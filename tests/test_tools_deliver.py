"""The deliverable tools run through their declarations, as the command line calls them."""

from __future__ import annotations

import pytest
from PIL import Image

from tests.deliver_data import attitudes, domains, fold_axes, thrust_traces
from thrustmap.errors import ParameterError
from thrustmap.tools.declare import FileOutput
from thrustmap.tools.deliver import REVIEW_REPORT, TOOLS, WEB_MAP
from thrustmap.tools.runner import collect_outputs, example_invocation, load_inputs, write_outputs


def test_declarations():
    assert [t.name for t in TOOLS] == ["web-map", "review-report"]
    assert all(t.example is not None for t in TOOLS)  # tests/test_cli.py runs them all


def test_web_map_example_writes_the_page(tmp_path):
    # the same path as the command line: read the sources, run, write the files
    tool = WEB_MAP
    sources, params = example_invocation(tool, tmp_path / "inputs")
    inputs = load_inputs(tool, sources, to_crs="EPSG:32633")
    layers, files = collect_outputs(tool, tool.run(inputs, params))
    out = tmp_path / "out"
    write_outputs(layers, files, geopackage=out / "result.gpkg", folder=out, overwrite=False)
    for output in tool.outputs:
        assert isinstance(output, FileOutput)
        if not output.is_folder:
            text = (out / output.filename).read_text(encoding="utf-8")
            assert "qualified geologist" in text  # the caution travels with every page
    page = (out / "map.html").read_text(encoding="utf-8")
    assert '"attitudes"' in page and "Hillshade (offline)" in page
    # without figures_dir each domain's stereonet is drawn for its popup
    assert page.count('"image":"data:image/png;base64,') == 6


def test_drawn_stereonets_when_no_figures_are_given():
    result = WEB_MAP.run({"domains": domains(), "attitudes": attitudes()}, {})
    assert result["map"].count('"image":"data:image/png;base64,') == 2  # D1 and D2 hold stations
    report = REVIEW_REPORT.run({"domains": domains(), "attitudes": attitudes()}, {})
    assert report["report_html"].count('src="data:image/png;base64,') == 2


def test_web_map_figures_found_by_domain_name(tmp_path):
    figs = tmp_path / "figures"
    figs.mkdir()
    Image.new("RGB", (50, 50), "white").save(figs / "stereonet_D2.png")
    Image.new("RGB", (50, 50), "white").save(figs / "legend.png")
    result = WEB_MAP.run({"domains": domains(), "thrust_traces": thrust_traces()},
                         {"figures_dir": str(figs), "symbol_size": "12"})
    assert result["map"].count('"image":"data:image/png;base64,') == 1  # D2 only


@pytest.mark.parametrize("params, match", [
    ({"symbol_size": 0.5}, "symbol_size.*below the minimum 2.0 pixels"),
    ({"colour": "red"}, "unknown parameter 'colour'"),
    ({"elevation": "dem.tif"}, "ESRI ASCII grid"),
    ({"figures_dir": "no/such/folder"}, "not a folder"),
])
def test_web_map_parameter_errors(params, match):
    with pytest.raises(ParameterError, match=match):
        WEB_MAP.run({"domains": domains()}, params)


def test_review_report_returns_both_twins(tmp_path):
    Image.new("RGB", (60, 60), "white").save(tmp_path / "D1.png")
    result = REVIEW_REPORT.run({"domains": domains(), "fold_axes": fold_axes()},
                               {"figures_dir": str(tmp_path), "title": "Synthetic review"})
    assert "<h2>Folds</h2>" in result["report_html"]
    assert result["report_html"].count('src="data:image/png;base64,') == 1
    assert "_Stereonet D1: in the HTML report._" in result["report_md"]
