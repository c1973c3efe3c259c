"""The installable plugin zip, loaded by the GIS's command-line runner (qgis_process.bin).

Debian's /usr/bin/qgis_process wrapper adds options the runner refuses, so the
binary is called directly, with a throw-away profile and the plugin unzipped
into its own plugin folder.
"""

import json
import os
import subprocess
import sys
import sysconfig
import zipfile
from pathlib import Path

import pytest
from gisdata import assert_frames_match, read_layer, write_inputs
from models import CHILD_OUTPUT, expected_domain_means, ticks_then_domain_means

from thrustmap.tools.registry import get_tool, list_tools

ROOT = Path(__file__).resolve().parent.parent
RUNNER = "/usr/bin/qgis_process.bin"


@pytest.fixture(scope="module")
def runner(tmp_path_factory, extra_path):
    """Run qgis_process.bin with the unzipped plugin enabled; returns a function of the arguments."""
    folder = tmp_path_factory.mktemp("qgis_process")
    archive = folder / "thrustmap_provider.zip"
    subprocess.run(
        [sys.executable, str(ROOT / "scripts" / "build_gis_plugin.py"), "--out", str(archive)],
        check=True,
        capture_output=True,
    )
    with zipfile.ZipFile(archive) as z:
        names = z.namelist()
        z.extractall(folder / "plugins")
    assert all(n.startswith("thrustmap_provider/") for n in names)
    assert not any("/thrustmap/" in n for n in names), "the zip must not vendor thrustmap"
    env = dict(os.environ)
    env.update(
        QT_QPA_PLATFORM="offscreen",
        PROJ_DATA="/usr/share/proj",
        QGIS_CUSTOM_CONFIG_PATH=str(folder / "profile"),
        QGIS_PLUGINPATH=str(folder / "plugins"),
        # thrustmap (editable checkout), the venv's packages and the sample tool package.
        PYTHONPATH=os.pathsep.join([*extra_path, str(ROOT), sysconfig.get_path("purelib")]),
    )

    def run(*args, without_thrustmap=False):
        run_env = dict(env, PYTHONPATH="") if without_thrustmap else env
        done = subprocess.run(
            [RUNNER, *args], env=run_env, capture_output=True, text=True, timeout=300, cwd=folder
        )
        assert done.returncode == 0, f"{args}: exit {done.returncode}\n{done.stdout}\n{done.stderr}"
        return done.stdout + done.stderr

    run("plugins", "enable", "thrustmap_provider")
    return run


def _json(output):
    """The runner's JSON document (stdout), ignoring the log lines after it."""
    return json.JSONDecoder().raw_decode(output[output.index("{") :])[0]


@pytest.fixture(scope="module")
def gpkg(tmp_path_factory):
    return write_inputs(tmp_path_factory.mktemp("cli_inputs") / "inputs.gpkg")


def test_runner_lists_every_tool(runner):
    listed = _json(runner("--json", "list"))["providers"]["thrustmap"]
    assert listed["name"] == "thrustmap"
    assert sorted(listed["algorithms"]) == sorted(f"thrustmap:{t.name}" for t in list_tools())


def test_missing_thrustmap_is_reported_not_fatal(runner):
    out = runner("--verbose", "list", without_thrustmap=True)
    assert "the thrustmap package cannot be imported in the GIS's Python" in out
    assert "thrustmap:" not in out


def test_runner_runs_a_tool(runner, gpkg, tmp_path):
    ticks, summary = tmp_path / "ticks.gpkg", tmp_path / "summary.gpkg"
    out = runner(
        "--json",
        "run",
        "thrustmap:dip-ticks",
        "--",
        f"stations={gpkg}|layername=stations",
        "length=300",
        "azimuth_field=strike",
        "centred=true",
        f"out_ticks={ticks}",
        f"out_tick_summary={summary}",
    )
    assert set(_json(out)["results"]) == {"out_ticks", "out_tick_summary"}
    params = {"length": 300.0, "azimuth_field": "strike", "centred": True}
    expected = get_tool("dip-ticks").run({"stations": read_layer(gpkg, "stations")}, params)
    assert_frames_match(read_layer(ticks), expected["ticks"], what="ticks")
    assert_frames_match(read_layer(summary, table=True), expected["tick_summary"], what="summary")


def test_runner_runs_a_saved_model(qgis_app, runner, gpkg, tmp_path):
    model = tmp_path / "ticks_then_domain_means.model3"
    out = tmp_path / "domain_means.gpkg"
    assert ticks_then_domain_means().toFile(str(model))
    runner(
        "run",
        str(model),
        "--",
        f"stations={gpkg}|layername=stations",
        f"domains={gpkg}|layername=domains",
        f"{CHILD_OUTPUT}={out}",
    )
    expected = expected_domain_means(read_layer(gpkg, "stations"), read_layer(gpkg, "domains"))
    assert_frames_match(read_layer(out), expected, what="model")
