"""The structure tool declarations run the library functions they wrap."""

import json

import pytest

from tests.test_domains import attitudes, fold_rows, two_domains
from thrustmap.domains import domain_statistics
from thrustmap.errors import ParameterError
from thrustmap.tools import Tool
from thrustmap.tools.structure import TOOLS


def test_declarations():
    assert [t.name for t in TOOLS] == ["domain-statistics", "assign-domains"]
    for tool in TOOLS:
        assert isinstance(tool, Tool)
        json.dumps(tool.describe())
        assert all(p.help for p in tool.params)


def test_domain_statistics_tool_matches_function():
    data, _ = fold_rows(8, 700000, n=40)
    att = attitudes(data)
    tool = TOOLS[0]
    out = tool.run({"attitudes": att, "domains": two_domains()}, {"n_boot": "50", "seed": 3})
    direct = domain_statistics(att, two_domains(), n_boot=50, seed=3)
    assert set(out) == {"domains", "fold_axes", "stereonets"}
    assert sorted(out["stereonets"]) == [
        "stereonet_D1.png", "stereonet_D1.svg", "stereonet_D2.png", "stereonet_D2.svg"
    ]
    assert out["fold_axes"]["cone95"].tolist() == direct.fold_axes["cone95"].tolist()
    assert out["domains"]["domain"].tolist() == ["D1", "D2"]


def test_domain_statistics_tool_checks_parameters():
    with pytest.raises(ParameterError, match="bedding, cleavage"):
        TOOLS[0].run({"attitudes": attitudes(fold_rows(8, 700000)[0])}, {"fold_feature": "hinge"})
    with pytest.raises(ParameterError, match="minimum"):
        TOOLS[0].run({"attitudes": attitudes(fold_rows(8, 700000)[0])}, {"n_boot": -1})


def test_assign_domains_tool():
    att = attitudes([(705000, 5085000, "bedding", 90, 30, False)])
    out = TOOLS[1].run({"attitudes": att, "domains": two_domains()})
    assert out["assigned_attitudes"]["domain"].tolist() == ["D1"]
    att["domain"] = "X"
    out = TOOLS[1].run({"attitudes": att})
    assert out["assigned_attitudes"]["domain"].tolist() == ["X"]
