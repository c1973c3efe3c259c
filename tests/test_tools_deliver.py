"""The deliverable tools run through their declarations, as the CLI and GIS hosts call them."""

from __future__ import annotations

import pandas as pd
import pytest
from PIL import Image

from tests.deliver_data import attitudes, domains, fold_axes, rejected, thrust_traces
from thrustmap.errors import OutputExistsError, ParameterError
from thrustmap.tools.deliver import REVIEW_REPORT, TOOLS, WEB_MAP


def test_declarations_describe_themselves():
    assert [t.name for t in TOOLS] == ["web_map", "review_report"]
    for tool in TOOLS:
        desc = tool.describe()
        assert desc["group"] == "deliver" and all(i["optional"] for i in desc["inputs"])
        assert any(p["name"] == "out" for p in desc["params"])


def test_web_map_tool_runs_with_any_subset_of_layers(tmp_path):
    figs = tmp_path / "figures"
    figs.mkdir()
    Image.new("RGB", (50, 50), "white").save(figs / "stereonet_D2.png")
    out = tmp_path / "map.html"
    result = WEB_MAP.run({"domains": domains(), "thrust_traces": thrust_traces()},
                         {"out": str(out), "figures_dir": str(figs), "symbol_size": "12"})
    summary = result["map_summary"]
    assert dict(zip(summary["layer"], summary["features"], strict=True)) == {
        "thrust_traces": 3, "domains": 2}
    page = out.read_text(encoding="utf-8")
    assert page.count('"image":"data:image/png;base64,') == 1  # D2's stereonet, none for D1
    with pytest.raises(OutputExistsError):
        WEB_MAP.run({"domains": domains()}, {"out": str(out)})


@pytest.mark.parametrize("params, match", [
    ({}, "'out'.*required"),
    ({"out": "m.html", "symbol_size": 0.5}, "symbol_size.*below the minimum 2.0 pixels"),
    ({"out": "m.html", "colour": "red"}, "unknown parameter 'colour'"),
])
def test_web_map_tool_parameter_errors(params, match):
    with pytest.raises(ParameterError, match=match):
        WEB_MAP.run({"domains": domains()}, params)


def test_review_report_tool(tmp_path):
    out = tmp_path / "report.html"
    result = REVIEW_REPORT.run(
        {"attitudes": attitudes(), "attitudes_rejected": rejected(), "domains": domains(),
         "fold_axes": fold_axes(), "thrust_traces": thrust_traces(),
         "spacing": pd.DataFrame({"pair": ["T1-T2"], "spacing_m": [2500.0]})},
        {"out": str(out), "title": "Synthetic review"},
    )
    assert sorted(result["report_files"]["file"]) == ["report.html", "report.md"]
    assert "Synthetic review" in out.read_text(encoding="utf-8")
