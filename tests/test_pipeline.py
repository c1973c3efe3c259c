"""TOML pipeline: the demo project, validation with line numbers, filling shared parameters, outputs."""

import re
import shutil
from pathlib import Path

import geopandas as gpd
import pandas as pd
import pyogrio
import pytest
import shapely

from thrustmap.cli import main
from thrustmap.errors import InputError, OutputExistsError, SourceNotFoundError
from thrustmap.pipeline import PROVENANCE_LAYER, key_line, load_project, run_project

ROOT = Path(__file__).resolve().parents[1]

# Columns of sample_gis/field_sheet.csv fixed by CONTRACT.md.
FIELD_SHEET_COLUMNS = ["stn", "lon", "lat", "type", "attitude", "date", "notes"]


@pytest.fixture
def demo_dir(tmp_path):
    """A copy of sample_gis/ to run the demo in; stands in a small field sheet while the
    scenario generator's files are not in the tree, so the real project.toml is what runs."""
    shutil.copytree(ROOT / "sample_gis", tmp_path / "sample_gis")
    sheet = tmp_path / "sample_gis" / "field_sheet.csv"
    if not sheet.exists():
        pd.DataFrame(
            [
                ["A1", "15.71", "45.93", "bedding", "N30E 45SE", "2024-06-01", ""],
                [
                    "A2",
                    "15.72",
                    "45.94",
                    "bedding",
                    "210/45NW",
                    "2024-06-01",
                    "<script>alert(1)</script>",
                ],
                ["A3", "15.73", "45.95", "bedding", "123/95", "2024-06-02", "dip over 90"],
            ],
            columns=FIELD_SHEET_COLUMNS,
        ).to_csv(sheet, index=False)
    return tmp_path


def test_demo_project_loads_with_every_step_known():
    project = load_project(ROOT / "sample_gis" / "project.toml")
    assert project.crs == "EPSG:32633"  # CONTRACT.md working CRS
    assert project.steps, "the demo has no steps"
    assert project.domains_input == "domains" and project.domains_field == "domain"
    assert project.output.name == "out"


def test_demo_equals_run_of_the_project(demo_dir, monkeypatch, capsys):
    monkeypatch.chdir(demo_dir)
    assert main(["demo"]) == 0
    assert main(["demo", "-q"]) == 0  # the demo replaces its own outputs
    assert main(["run", "sample_gis/project.toml", "--out", "again"]) == 0
    demo = demo_dir / "out" / "thrustmap.gpkg"
    again = demo_dir / "again" / "thrustmap.gpkg"
    assert sorted(pyogrio.list_layers(demo)[:, 0]) == sorted(pyogrio.list_layers(again)[:, 0])
    for layer in pyogrio.list_layers(demo)[:, 0]:
        a = gpd.read_file(demo, layer=layer, engine="pyogrio")
        b = gpd.read_file(again, layer=layer, engine="pyogrio")
        if layer == PROVENANCE_LAYER:
            a, b = (
                a.drop(columns=["started_utc", "seconds"]),
                b.drop(columns=["started_utc", "seconds"]),
            )
        pd.testing.assert_frame_equal(a, b)
    assert "thrustmap.gpkg: layer provenance" in capsys.readouterr().out


def test_demo_outside_the_source_tree_is_bad_usage(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    assert main(["demo"]) == 2
    assert "sample_gis/project.toml: not found" in capsys.readouterr().err


BASE = [
    "[project]",  # 1
    'name = "t"',  # 2
    'crs = "EPSG:32633"',  # 3
    "",  # 4
    "[inputs.sheet]",  # 5
    'path = "sheet.csv"',  # 6
    'azimuth_ref = "magnetic"',  # 7
    "",  # 8
    "[inputs.points]",  # 9
    'path = "layers.gpkg"',  # 10
    'layer = "points"',  # 11
    "",  # 12
    "[[steps]]",  # 13
    'tool = "convert-attitudes"',  # 14
    'inputs = { table = "sheet" }',  # 15
    'params = { column = "attitude" }',  # 16
    "",  # 17
    "[[steps]]",  # 18
    'id = "count"',  # 19
    'tool = "count-rows"',  # 20
    'inputs = { features = "points" }',  # 21
    "params = { multiplier = 2 }",  # 22
]


def _write_project(folder, lines):
    folder.mkdir(parents=True, exist_ok=True)
    pd.DataFrame({"stn": ["A", "B"], "attitude": ["030/45", "N30E 45SE"]}).to_csv(
        folder / "sheet.csv", index=False
    )
    points = gpd.GeoDataFrame(
        {"n": [1, 2]},
        geometry=shapely.points([[15.7, 45.9], [15.8, 46.0]]),
        crs="EPSG:4326",
    )
    pyogrio.write_dataframe(points, folder / "layers.gpkg", layer="points")
    domains = gpd.GeoDataFrame(
        {"domain": ["D1"]}, geometry=[shapely.box(0, 0, 1e6, 1e7)], crs="EPSG:32633"
    )
    pyogrio.write_dataframe(domains, folder / "layers.gpkg", layer="domains")
    path = folder / "project.toml"
    path.write_text("\n".join(lines) + "\n")
    return path


def _edit(line, text):
    lines = list(BASE)
    lines[line - 1] = text
    return lines


# (lines of the project file, expected error message)
INVALID = [
    (_edit(2, 'nmae = "t"'), r"line 2: unknown key 'nmae' in \[project\]; valid keys: name,"),
    (BASE + ["[outputs]", "x = 1"], r"line 23: unknown key 'outputs' in the top level"),
    (_edit(11, 'layr = "points"'), r"line 11: unknown key 'layr' in \[inputs.points\]"),
    (
        _edit(16, 'params = { colum = "attitude" }'),
        r"line 16: unknown key 'colum' in \[\[steps\]\] #1 \(convert-attitudes\) params; "
        r"parameters are: column, kind, azimuth",
    ),
    (
        _edit(22, "params = { multiplier = 20 }"),
        r"line 22: count-rows: parameter 'multiplier' = 20 is above the maximum 10",
    ),
    (
        _edit(22, 'params = { multiplier = 2, fail = "perhaps" }'),
        r"line 22: count-rows: parameter 'fail' must be of type bool; got 'perhaps'",
    ),
    (
        _edit(7, 'azimuth_ref = "north"'),
        r"line 7: \[inputs.sheet\]: parameter 'azimuth_ref' = 'north'",
    ),
    (_edit(7, 'date = "June"'), r"line 7: date 'June' in \[inputs.sheet\] is not an ISO date"),
    (
        _edit(3, 'crs = "EPSG:4326"'),
        r"line 3: .*working CRS 'EPSG:4326' \(WGS 84\) is not projected",
    ),
    (
        _edit(20, 'tool = "count-rowz"'),
        r"line 20: unknown tool 'count-rowz'; installed tools are: ",
    ),
    (
        _edit(21, 'inputs = { feature = "points" }'),
        r"line 21: unknown key 'feature' in \[\[steps\]\] #2 \(count\) inputs; count-rows inputs are: "
        r"features, extra, domains",
    ),
    (
        _edit(21, 'inputs = { features = "nope" }'),
        r"line 21: .* reads 'nope', which is neither a project input nor an output of an earlier step; "
        r"choose one of: sheet, points, convert-attitudes.converted_attitudes",
    ),
    (
        _edit(21, 'inputs = { features = "convert-attitudes.rejects" }'),
        r"line 21: .*step 'convert-attitudes' has no layer output 'rejects'",
    ),
    (
        _edit(19, 'id = "convert-attitudes"'),
        r"line 19: .*step id 'convert-attitudes' is already used",
    ),
    (_edit(14, ""), r"line 13: \[\[steps\]\] #1 needs a tool"),
    (_edit(21, ""), r"line 18: .*tool input 'features' is not wired"),
    (
        _edit(22, 'params = { multiplier = 2 }\noutputs = { row_count = "converted_attitudes" }'),
        r"line 18: .*writes layer converted_attitudes, already written by step 'convert-attitudes'",
    ),
    (
        _edit(22, 'outputs = { row_count = "provenance" }'),
        r"line 18: .*already written by the run itself",
    ),
    (
        _edit(22, 'outputs = { summary = "../summary.txt" }'),
        r"line 22: output 'summary' in .* must stay inside the output folder",
    ),
    (_edit(16, "params = { column = }"), r"not valid TOML: .*line 16"),
]


@pytest.mark.parametrize(("lines", "message"), INVALID, ids=[m[:30] for _, m in INVALID])
def test_invalid_project_names_line_and_key(plugin, tmp_path, lines, message):
    path = _write_project(tmp_path / "p", lines)
    with pytest.raises(InputError, match=message) as info:
        load_project(path)
    assert str(path) in str(info.value)


def test_invalid_project_from_the_command_line_exits_2(plugin, tmp_path, capsys):
    path = _write_project(tmp_path / "p", _edit(16, 'params = { colum = "attitude" }'))
    assert main(["run", str(path)]) == 2
    assert "line 16: unknown key 'colum'" in capsys.readouterr().err


def test_run_fills_shared_parameters_and_writes_files(plugin, tmp_path, monkeypatch):
    lines = BASE + [
        "",
        "[domains]",
        'input = "domains"',
        'field = "domain"',
        "",
        "[inputs.domains]",
        'path = "layers.gpkg"',
        'layer = "domains"',
    ]
    lines[10:10] = ['azimuth_ref = "grid"']  # into [inputs.points]
    path = _write_project(tmp_path / "p", lines)
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    monkeypatch.chdir(elsewhere)  # paths are relative to the project file, not the working folder
    result = run_project(path)
    out = tmp_path / "p" / "out"
    assert result.geopackage == out / "thrustmap.gpkg"
    assert set(result.layers) == {"converted_attitudes", "row_count", PROVENANCE_LAYER}
    row = gpd.read_file(result.geopackage, layer="row_count", engine="pyogrio").iloc[0]
    assert row["rows"] == 4
    assert row["azimuth_ref"] == "grid"  # from [inputs.points]
    assert row["crs"] == "EPSG:32633"  # from [project]
    assert (row["domains"], row["domain_field"]) == (1, "domain")  # from [domains]
    assert row["source"].endswith("layers.gpkg")
    assert (out / "summary.txt").read_text() == "2 rows\n"
    assert (out / "notes" / "a.txt").read_text() == "first\n"
    assert sorted(result.files) == sorted(
        [out / "summary.txt", out / "notes/a.txt", out / "notes/b.bin"]
    )
    points = gpd.read_file(tmp_path / "p" / "layers.gpkg", layer="points", engine="pyogrio")
    assert (
        points.crs.to_epsg() == 4326
    )  # the input itself is untouched; the step saw it in EPSG:32633
    provenance = gpd.read_file(result.geopackage, layer=PROVENANCE_LAYER, engine="pyogrio")
    assert provenance["tool"].tolist() == ["convert-attitudes", "count-rows"]
    assert (
        provenance["inputs"].tolist()[1] == '{"features": "layers.gpkg", "domains": "layers.gpkg"}'
    )
    assert provenance["origin"].tolist() == ["thrustmap", "thrustmap-testplugin"]
    assert not any(str(tmp_path) in text for text in provenance.to_numpy().ravel().astype(str))


def test_explicit_parameter_wins_and_inputs_may_disagree_only_when_set(plugin, tmp_path):
    lines = _edit(21, 'inputs = { features = "points", extra = "sheet" }')
    lines[10:10] = ['azimuth_ref = "grid"']
    path = _write_project(tmp_path / "p", lines)
    with pytest.raises(
        InputError, match=r"line 19: .*its inputs disagree on azimuth_ref \(grid, magnetic\)"
    ):
        load_project(path)
    lines[22] = 'params = { multiplier = 2, azimuth_ref = "true" }'
    path.write_text("\n".join(lines) + "\n")
    row = gpd.read_file(run_project(path).geopackage, layer="row_count", engine="pyogrio").iloc[0]
    assert (row["azimuth_ref"], row["extra_rows"]) == ("true", 2)


def test_renamed_outputs_and_step_outputs_feeding_later_steps(plugin, tmp_path):
    lines = BASE[:15] + [
        'params = { column = "attitude" }',
        'outputs = { converted_attitudes = "planes" }',
    ]
    lines += [
        "",
        "[[steps]]",
        'tool = "convert-attitudes"',
        'id = "again"',
        'inputs = { table = "convert-attitudes.converted_attitudes" }',
        'params = { column = "stn" }',
    ]
    result = run_project(_write_project(tmp_path / "p", lines))
    assert set(result.layers) == {"planes", "converted_attitudes", PROVENANCE_LAYER}
    again = gpd.read_file(result.geopackage, layer="converted_attitudes", engine="pyogrio")
    assert "orig_error" in again.columns  # the second step read the first one's output
    assert again["error"].tolist() == ["unparseable", "unparseable"]


def test_failed_step_writes_nothing(plugin, tmp_path):
    path = _write_project(tmp_path / "p", _edit(22, "params = { fail = true }"))
    with pytest.raises(RuntimeError, match="asked to fail"):
        run_project(path)
    assert not (tmp_path / "p" / "out").exists()
    assert main(["run", str(path)]) == 1


def test_missing_input_file_stops_before_any_step(plugin, tmp_path, capsys):
    path = _write_project(tmp_path / "p", _edit(10, 'path = "absent.gpkg"'))
    with pytest.raises(SourceNotFoundError, match=r"absent.gpkg: not found"):
        run_project(path)
    assert main(["run", str(path)]) == 2
    assert "absent.gpkg: not found" in capsys.readouterr().err


def test_existing_outputs_are_kept_without_overwrite(plugin, tmp_path):
    path = _write_project(tmp_path / "p", BASE)
    first = run_project(path)
    before = first.geopackage.stat().st_mtime_ns
    with pytest.raises(OutputExistsError, match=r"thrustmap.gpkg exists; use --overwrite"):
        run_project(path)
    assert first.geopackage.stat().st_mtime_ns == before
    run_project(path, overwrite=True)
    other = run_project(path, output=tmp_path / "second")
    assert other.geopackage == tmp_path / "second" / "thrustmap.gpkg"


KEY_TEXT = """\
# a comment with key = 1
[project]
name = "a # not a comment"   # comment
'quoted key' = 1

[[steps]]
tool = "x"
[steps.params]
alpha = 1

[[steps]]
tool = "y"
params.beta = 2
inputs = { a = "b", gamma = "c" }
"""


@pytest.mark.parametrize(
    ("path", "line"),
    [
        (("project", "name"), 3),
        (("project", "quoted key"), 4),
        (("steps", 0, "params", "alpha"), 9),
        (("steps", 0, "params"), 8),
        (("steps", 1), 11),
        (("steps", 1, "params", "beta"), 13),
        (("steps", 1, "inputs", "gamma"), 14),
        (("steps", 1, "inputs", "delta"), 14),  # not written: the enclosing table's line
        (("nowhere",), None),
    ],
)
def test_key_line(path, line):
    assert key_line(KEY_TEXT, path) == line


def test_demo_project_has_no_absolute_paths():
    text = (ROOT / "sample_gis" / "project.toml").read_text()
    assert not re.search(r"(^|[\"'])(/|[A-Za-z]:\\)", text, flags=re.M)
