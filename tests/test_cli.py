"""The generated command line: every tool runs from its example, exit codes, messages, listing."""

import json
import os
import re
import subprocess
import sys
from pathlib import Path

import geopandas as gpd
import pandas as pd
import pyogrio
import pytest
import shapely

from thrustmap.cli import main
from thrustmap.tools import registry
from thrustmap.tools.declare import FileOutput, LayerOutput
from thrustmap.tools.runner import example_invocation

ROOT = Path(__file__).resolve().parents[1]
# An empty registry must fail this module, not skip it.
TOOL_NAMES = [t.name for t in registry.list_tools()] or [
    "<no tool registered: is thrustmap installed?>"
]


def _argv(tool, sources, params, out):
    argv = [tool.name]
    argv += [str(sources[i.name]) for i in tool.inputs if not i.optional]
    for i in tool.inputs:
        if i.optional and i.name in sources:
            argv += ["--" + i.name.replace("_", "-"), str(sources[i.name])]
    for name, value in params.items():
        flag = "--" + name.replace("_", "-")
        if tool.param(name).type == "bool":
            argv.append(flag if value else "--no-" + flag[2:])
        else:
            argv += [flag, str(value)]
    return argv + ["--out", str(out)]


def _check_outputs(tool, out):
    has_layers = any(isinstance(o, LayerOutput) for o in tool.outputs)
    folder = out.parent if has_layers else out
    if has_layers:
        layers = set(pyogrio.list_layers(out)[:, 0])
    for o in tool.outputs:
        if isinstance(o, LayerOutput):
            assert o.name in layers, f"{tool.name}: layer {o.name} missing from {out}"
            frame = gpd.read_file(out, layer=o.name, engine="pyogrio")
            if o.geometry in ("point", "line", "polygon"):
                assert isinstance(frame, gpd.GeoDataFrame)
        else:
            target = folder / o.filename
            assert target.exists(), f"{tool.name}: file output {o.filename} missing"
            if o.is_folder:
                assert any(target.iterdir())


@pytest.mark.parametrize("name", TOOL_NAMES)
def test_every_registered_tool_runs_from_its_example(name, tmp_path):
    tool = registry.get_tool(name)
    sources, params = example_invocation(tool, tmp_path / "inputs")
    out = tmp_path / "out" / "result.gpkg"
    assert main(_argv(tool, sources, params, out)) == 0
    _check_outputs(tool, out)


@pytest.mark.parametrize("name", TOOL_NAMES)
def test_every_registered_tool_has_help_with_its_example(name, capsys):
    assert main([name, "--help"]) == 0
    text = capsys.readouterr().out
    assert f"thrustmap {name}" in text
    assert "example:" in text
    tool = registry.get_tool(name)
    for p in tool.params:
        assert "--" + p.name.replace("_", "-") in text


def test_plugin_tool_appears_in_listing_and_runs(plugin, tmp_path, capsys):
    assert main(["tools"]) == 0
    listing = capsys.readouterr().out
    assert "count-rows" in listing and "thrustmap-testplugin" in listing
    assert "BROKEN" in listing and "thrustmap_no_such_module" in listing
    tool = registry.get_tool("count-rows")
    sources, params = example_invocation(tool, tmp_path / "inputs")
    out = tmp_path / "out" / "count.gpkg"
    argv = _argv(tool, sources, params, out) + ["--azimuth-ref", "grid", "--crs", "EPSG:32633"]
    assert main(argv) == 0
    _check_outputs(tool, out)
    row = gpd.read_file(out, layer="row_count", engine="pyogrio").iloc[0]
    assert (row["rows"], row["azimuth_ref"]) == (6, "grid")
    assert row["crs"] == "EPSG:32633"
    assert (out.parent / "notes" / "b.bin").read_bytes() == b"\x00\x01"


def test_tools_json_describes_every_tool(plugin, capsys):
    assert main(["tools", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["entry_point_group"] == "thrustmap.tools"
    assert {o["flag"] for o in doc["shared_options"]} >= {
        "--crs",
        "--layer",
        "--azimuth-ref",
        "--out",
        "--overwrite",
        "--quiet",
        "--verbose",
    }
    tools = {t["name"]: t for t in doc["tools"]}
    assert set(tools) == {t.name for t in registry.list_tools()}
    count = tools["count-rows"]
    assert count["usage"].startswith("thrustmap count-rows")
    multiplier = next(p for p in count["params"] if p["name"] == "multiplier")
    assert (multiplier["flag"], multiplier["minimum"], multiplier["maximum"]) == (
        "--multiplier",
        1,
        10,
    )
    assert [o["kind"] for o in count["outputs"]] == ["layer", "file", "folder"]
    assert any(b["name"] == "missing" for b in doc["broken"])


def _table(folder):
    path = folder / "sheet.csv"
    pd.DataFrame({"stn": ["A", "B"], "attitude": ["030/45", "N30E 45SE"]}).to_csv(path, index=False)
    return path


def _layers(folder):
    path = folder / "layers.gpkg"
    pts = gpd.GeoDataFrame({"n": [1]}, geometry=[shapely.Point(700000, 5080000)], crs="EPSG:32633")
    lines = gpd.GeoDataFrame(
        {"n": [1, 2]},
        geometry=[shapely.Point(700000, 5080000), shapely.LineString([(0, 0), (1, 1)])],
        crs="EPSG:32633",
    )
    pyogrio.write_dataframe(pts, path, layer="points")
    pyogrio.write_dataframe(lines, path, layer="mixed")
    return path


# (argv with {table}, {layers}, {out} placeholders, message expected on stderr)
BAD_USAGE = [
    (
        ["convert-attitudes", "{table}", "--out", "{out}", "--kind", "bent"],
        r"parameter 'kind' = 'bent' is not one of: plane, line",
    ),
    (
        ["count-rows", "{layers}:points", "--out", "{out}", "--multiplier", "11"],
        r"parameter 'multiplier' = 11 is above the maximum 10",
    ),
    (
        ["count-rows", "{layers}:points", "--out", "{out}", "--multiplier", "0"],
        r"parameter 'multiplier' = 0 is below the minimum 1",
    ),
    (
        ["count-rows", "{layers}:points", "--out", "{out}", "--multiplier", "2.5"],
        r"parameter 'multiplier' must be of type int; got '2.5'",
    ),
    (
        ["count-rows", "{layers}:points", "--out", "{out}", "--azimuth-ref", "north"],
        r"parameter 'azimuth_ref' = 'north' is not one of: true, grid, magnetic",
    ),
    (
        ["count-rows", "{layers}:nowhere", "--out", "{out}"],
        r"file .*layers.gpkg, layer nowhere: no such layer; layers are: points, mixed",
    ),
    (
        ["count-rows", "{layers}", "--out", "{out}"],
        r"file .*layers.gpkg: holds 2 layers; name one as FILE:LAYER \(or --layer\): points, mixed",
    ),
    (
        ["count-rows", "{layers}", "--layer", "nowhere", "--out", "{out}"],
        r"layer nowhere: no such layer",
    ),
    (
        ["count-rows", "{layers}:mixed", "--out", "{out}"],
        r"file .*layers.gpkg, layer mixed, row 2: input 'features' expects point geometries; found LineString",
    ),
    (
        ["count-rows", "{table}", "--out", "{out}"],
        r"file .*sheet.csv: input 'features' expects a point layer; found a table without geometry",
    ),
    (["convert-attitudes", "{missing}", "--out", "{out}"], r"file .*no_such_file.csv: not found"),
    (
        ["convert-attitudes", "{table}", "--out", "{out}", "--column", "attitudes"],
        r"file .*sheet.csv, field 'attitudes': no attitude column 'attitudes'; columns are: stn, attitude",
    ),
    (
        ["convert-attitudes", "{table}", "--out", "{out}", "--crs", "EPSG:4326"],
        r"working CRS 'EPSG:4326' \(WGS 84\) is not projected",
    ),
    (
        ["convert-attitudes", "{table}", "--out", "{out}", "--crs", "EPSG:999999"],
        r"unknown CRS 'EPSG:999999'",
    ),
    (
        ["convert-attitudes", "{table}", "--out", "{out}", "--colum", "x"],
        r"unrecognized arguments: --colum x",
    ),
    (["convert-attitudes", "{table}"], r"the following arguments are required: --out"),
    (["convert-attitudes", "--out", "{out}"], r"the following arguments are required: TABLE"),
    (
        ["convert-attitude", "{table}", "--out", "{out}"],
        r"unknown tool 'convert-attitude'; installed tools are: .*convert-attitudes",
    ),
]


@pytest.mark.parametrize(("argv", "message"), BAD_USAGE, ids=[m[:40] for _, m in BAD_USAGE])
def test_bad_usage_exits_2_naming_the_problem(plugin, tmp_path, capsys, argv, message):
    places = {
        "table": _table(tmp_path),
        "layers": _layers(tmp_path),
        "out": tmp_path / "out.gpkg",
        "missing": tmp_path / "no_such_file.csv",
    }
    assert main([a.format(**places) for a in argv]) == 2
    err = capsys.readouterr().err
    assert re.search(message, err), err
    assert not (tmp_path / "out.gpkg").exists()


def test_failure_while_processing_exits_1(plugin, tmp_path, capsys):
    argv = [
        "count-rows",
        f"{_layers(tmp_path)}:points",
        "--out",
        str(tmp_path / "o.gpkg"),
        "--fail",
    ]
    assert main(argv) == 1
    assert "RuntimeError: the test plugin was asked to fail" in capsys.readouterr().err
    assert not (tmp_path / "o.gpkg").exists()
    assert main([*argv, "--verbose"]) == 1
    assert "Traceback" in capsys.readouterr().err


def test_existing_output_needs_overwrite(tmp_path, capsys):
    out = tmp_path / "o.gpkg"
    argv = ["convert-attitudes", str(_table(tmp_path)), "--out", str(out)]
    assert main(argv) == 0
    assert main(argv) == 2
    assert "o.gpkg exists; use --overwrite" in capsys.readouterr().err
    assert main([*argv, "--overwrite", "--kind", "line"]) == 0
    assert "trend" in gpd.read_file(out, layer="converted_attitudes", engine="pyogrio").columns


def test_quiet_prints_nothing_and_result_names_the_layer(tmp_path, capsys):
    table = _table(tmp_path)
    assert main(["convert-attitudes", str(table), "--out", str(tmp_path / "a.gpkg")]) == 0
    assert "layer converted_attitudes (2 rows)" in capsys.readouterr().out
    assert main(["convert-attitudes", str(table), "--out", str(tmp_path / "b.gpkg"), "-q"]) == 0
    captured = capsys.readouterr()
    assert captured.out == "" and captured.err == ""


def test_version_and_top_level_help(capsys):
    assert main(["--version"]) == 0
    assert main(["--help"]) == 0
    text = capsys.readouterr().out
    for command in ("tools", "run", "demo", "convert-attitudes"):
        assert command in text
    assert "qualified geologist" in text
    assert main([]) == 2


def test_subprocess_module_entry_with_plugin(tmp_path):
    from tests.plugins import install_plugin

    site = install_plugin(tmp_path / "site")
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(ROOT), str(site)]))
    listing = subprocess.run(
        [sys.executable, "-m", "thrustmap.cli", "tools", "--json"],
        capture_output=True,
        text=True,
        env=env,
        check=False,
    )
    assert listing.returncode == 0, listing.stderr
    assert "count-rows" in {t["name"] for t in json.loads(listing.stdout)["tools"]}
    out = tmp_path / "o.gpkg"
    run = subprocess.run(
        [
            sys.executable,
            "-m",
            "thrustmap.cli",
            "convert-attitudes",
            str(_table(tmp_path)),
            "--out",
            str(out),
            "--kind",
            "plane",
        ],
        capture_output=True,
        text=True,
        env=env,
        check=False,
    )
    assert run.returncode == 0, run.stderr
    assert pyogrio.list_layers(out)[:, 0].tolist() == ["converted_attitudes"]
    bad = subprocess.run(
        [
            sys.executable,
            "-m",
            "thrustmap.cli",
            "convert-attitudes",
            str(tmp_path / "none.csv"),
            "--out",
            str(tmp_path / "other.gpkg"),
        ],
        capture_output=True,
        text=True,
        env=env,
        check=False,
    )
    assert bad.returncode == 2 and "none.csv: not found" in bad.stderr


def _returning(value, output):
    from thrustmap.tools.declare import Tool

    return Tool("returns", "returns what it is told", lambda: {output.name: value}, outputs=(output,))


@pytest.mark.parametrize(
    ("value", "output", "message"),
    [
        ("text", LayerOutput("layer", "table"), r"output 'layer' should be a DataFrame; got str"),
        ("text", FileOutput("figs", "figures/"), r"folder output 'figs' should be a mapping"),
        ({"../x.png": b""}, FileOutput("figs", "figures/"), r"file '../x.png' of output 'figs' leaves"),
    ],
)
def test_wrong_kind_of_output_is_a_processing_failure(value, output, message):
    from thrustmap.errors import ThrustmapError
    from thrustmap.tools.runner import collect_outputs

    tool = _returning(value, output)
    with pytest.raises(ThrustmapError, match=message):
        collect_outputs(tool, tool.run({}))


def test_a_tool_without_an_example_fails_loudly(tmp_path):
    from thrustmap.errors import ThrustmapError

    tool = _returning(pd.DataFrame(), LayerOutput("layer", "table"))
    with pytest.raises(ThrustmapError, match="'returns' .* declares no example"):
        example_invocation(tool, tmp_path)
