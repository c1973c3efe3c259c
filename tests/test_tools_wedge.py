"""The wedge, profile and section tools: declarations and runs through Tool.run."""

import inspect
import json
from pathlib import Path

import geopandas as gpd
import numpy as np
import pandas as pd
import pytest
import shapely

from thrustmap.errors import ParameterError
from thrustmap.io.grid import Grid, write_ascii_grid
from thrustmap.tools.declare import FileOutput, LayerOutput
from thrustmap.tools.runner import collect_outputs, example_invocation, load_inputs, write_outputs
from thrustmap.tools.wedge import DOWN_PLUNGE, SECTION, SURFACE_PROFILES, TOOLS, WEDGE_TAPER
from thrustmap.wedge import critical_taper

SAMPLE_GIS = Path(__file__).resolve().parents[1] / "sample_gis"

CRS = "EPSG:32633"
X0, Y0 = 720000.0, 5095000.0


def test_declarations_match_their_functions():
    names = [t.name for t in TOOLS]
    assert len(set(names)) == len(names) == 4
    for tool in TOOLS:
        signature = inspect.signature(tool.func).parameters
        declared = [i.name for i in tool.inputs] + [p.name for p in tool.params]
        assert list(signature) == declared, tool.name
        described = tool.describe()
        assert described["outputs"] and all(p["help"] for p in described["params"])
        for p in tool.params:
            if p.type == "float" and p.name not in ("seed",):
                assert p.unit or p.name.endswith("ratio"), (tool.name, p.name)


def test_wedge_taper_tool_with_given_alpha():
    # Dahlen (1984) check value [D, REFERENCES.md]: phi 30, phi_b 10, lambda 0.5, beta 3 -> 1.0799
    out = WEDGE_TAPER.run({}, {"alpha": 1.0799, "alpha_sd": 0.3, "beta": 3, "beta_sd": 1, "pore_ratio": 0.5,
                               "samples": 2000})
    row = out["taper"].iloc[0]
    assert row["alpha_source"] == "given" and row["state"] == "critical"
    assert row["critical_pore_ratio"] == pytest.approx(0.5, abs=1e-3)
    assert set(out["taper_envelope"]["branch"]) == {"compressional", "extensional"}


def test_wedge_taper_tool_from_profiles():
    profiles = gpd.GeoDataFrame(
        {"profile_id": [1, 2, 3], "alpha": [3.0, 3.4, np.nan], "alpha_low": [2.8, 3.1, np.nan],
         "alpha_high": [3.2, 3.7, np.nan]},
        geometry=[shapely.LineString([(0, i), (10, i)]) for i in range(3)], crs=CRS,
    )
    out = WEDGE_TAPER.run({"profiles": profiles}, {"beta": 2.0, "samples": 500})
    row = out["taper"].iloc[0]
    assert row["alpha"] == pytest.approx(3.2)
    assert row["alpha_sd"] == pytest.approx(np.std([3.0, 3.4], ddof=1))
    assert row["alpha_source"] == "profiles alpha (median of 2)"
    expected = critical_taper(2.0, friction=30, basal_friction=10)
    assert row["critical_alpha"] == pytest.approx(expected)


@pytest.mark.parametrize(
    ("tool", "inputs", "params", "match"),
    [
        (WEDGE_TAPER, {}, {"alpha": 3}, "'beta'"),
        (WEDGE_TAPER, {}, {"beta": 3}, "give alpha"),
        (WEDGE_TAPER, {}, {"beta": 3, "profile_slope": "alpha_toe"}, "alpha, alpha_front, alpha_rear"),
        (WEDGE_TAPER, {}, {"beta": 3, "alpha": 3, "setting": "lake"}, "subaerial, submarine"),
        (SURFACE_PROFILES, {}, {}, "'elevation'"),
        (SURFACE_PROFILES, {}, {"elevation": "dem.tif"}, "ESRI ASCII"),
        (SECTION, {"attitudes": gpd.GeoDataFrame(geometry=[])}, {}, "section_line"),
        (DOWN_PLUNGE, {"attitudes": gpd.GeoDataFrame(geometry=[])}, {"axis_trend": 10}, "axis_plunge"),
        (SECTION, {"attitudes": gpd.GeoDataFrame({"kind": [], "dip_direction_grid": [], "dip": [],
                                                  "trend_grid": [], "plunge": []}, geometry=[], crs=CRS),
                   "section_line": gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (1, 0)])], crs=CRS)},
         {"decollement_dip": 3.0}, "all of decollement"),
    ],
)
def test_tool_errors(tool, inputs, params, match):
    if tool is SURFACE_PROFILES and "elevation" in params:
        params = dict(params, azimuth=90.0)
        inputs = {"study_area": gpd.GeoDataFrame(geometry=[shapely.box(0, 0, 10, 10)], crs=CRS)}
    with pytest.raises(ParameterError, match=match):
        tool.run(inputs, params)


def _attitudes(n=30, seed=0):
    rng = np.random.default_rng(seed)
    x = rng.uniform(X0, X0 + 3000, n)
    y = rng.uniform(Y0 - 200, Y0 + 200, n)
    return gpd.GeoDataFrame(
        {"station": [f"S{i}" for i in range(n)], "feature": "bedding", "kind": "plane",
         "dip_direction_grid": rng.choice([100.0, 280.0], n), "dip": rng.uniform(10, 60, n),
         "trend_grid": np.nan, "plunge": np.nan, "convergence": 2.0,
         "domain": np.where(x < X0 + 1500, "D1", "D2")},
        geometry=shapely.points(x, y, rng.uniform(300, 400, n)), crs=CRS,
    )


def test_section_tool_along_a_profile():
    profiles = gpd.GeoDataFrame(
        {"profile_id": [7, 8]},
        geometry=[shapely.LineString([(X0 - 100, Y0), (X0 + 3100, Y0)]),
                  shapely.LineString([(X0, Y0 + 5000), (X0 + 10, Y0 + 5000)])],
        crs=CRS,
    )
    thrusts = gpd.GeoDataFrame({"thrust_id": ["T1"], "hw_side": ["right"], "dip": [30.0]},
                               geometry=[shapely.LineString([(X0 + 1000, Y0 + 900), (X0 + 1000, Y0 - 900)])], crs=CRS)
    out = SECTION.run({"attitudes": _attitudes(), "profiles": profiles, "thrust_traces": thrusts},
                      {"section_id": "7", "buffer": 300})
    assert set(out) == {o.name for o in SECTION.outputs}
    assert len(out["section_points"]) == 30 and (out["section_points"]["section_id"] == 7).all()
    assert out["section_points"]["elevation_source"].eq("z").all()
    assert out["section_thrusts"]["apparent_dip"].iloc[0] == pytest.approx(-30.0)
    with pytest.raises(ParameterError, match="ids are: 7, 8"):
        SECTION.run({"attitudes": _attitudes(), "profiles": profiles}, {"section_id": "9"})


def test_down_plunge_tool_selects_a_domain():
    att = _attitudes()
    domains = gpd.GeoDataFrame({"domain": ["D1", "D2"]},
                               geometry=[shapely.box(X0 - 10, Y0 - 300, X0 + 1500, Y0 + 300),
                                         shapely.box(X0 + 1500, Y0 - 300, X0 + 3010, Y0 + 300)], crs=CRS)
    out = DOWN_PLUNGE.run({"attitudes": att, "domains": domains},
                          {"axis_trend": 92.0, "axis_plunge": 15.0, "domain": "D2"})["section_down_plunge"]
    assert len(out) == (att["domain"] == "D2").sum() and (out["domain"] == "D2").all()
    # true trend 92 with +2 degrees of convergence is grid 090 (grid = true - convergence)
    assert out["axis_trend_grid"].iloc[0] == pytest.approx(90.0)
    by_field = DOWN_PLUNGE.run({"attitudes": att}, {"axis_trend": 92.0, "axis_plunge": 15.0, "domain": "D1"})
    assert len(by_field["section_down_plunge"]) == (att["domain"] == "D1").sum()
    with pytest.raises(ParameterError, match="no attitudes left"):
        DOWN_PLUNGE.run({"attitudes": att}, {"axis_trend": 92.0, "axis_plunge": 15.0, "features": "cleavage"})


def test_wedge_taper_tool_uses_the_chosen_profile_slope():
    profiles = gpd.GeoDataFrame({"alpha": [3.0], "alpha_front": [2.0], "alpha_rear": [5.0]},
                                geometry=[shapely.LineString([(0, 0), (10, 0)])], crs=CRS)
    row = WEDGE_TAPER.run({"profiles": profiles}, {"beta": 2.0, "profile_slope": "alpha_front",
                                                   "samples": 200})["taper"].iloc[0]
    assert row["alpha"] == 2.0 and row["alpha_source"] == "profiles alpha_front (median of 1)"


def test_surface_profiles_tool_reads_the_shared_grid(tmp_path):
    cell = 100.0
    x = X0 - 5000 + (np.arange(100) + 0.5) * cell
    values = np.tile(2000.0 - (x - x[0]) * np.tan(np.radians(2.5)), (100, 1))
    grid = Grid(values, x0=X0 - 5000, y0=Y0 + 5000, cell=cell, crs=CRS)
    path = tmp_path / "elevation.asc"
    write_ascii_grid(path, grid)
    area = gpd.GeoDataFrame({"name": ["synthetic area"]}, geometry=[shapely.box(X0 - 4000, Y0 - 4000, X0 + 4000, Y0 + 4000)],
                            crs=CRS)
    out = SURFACE_PROFILES.run({"study_area": area}, {"elevation": str(path), "azimuth": 90.0, "spacing": 2000.0})
    prof = out["profiles"]
    assert len(prof) == 5
    np.testing.assert_allclose(prof["alpha"], 2.5, atol=1e-6)
    assert isinstance(prof, pd.DataFrame) and prof.crs == area.crs


def test_synthetic_scenario_wedge_slopes():
    # truth: the generated slopes in sample_gis/truth.json; the issue asks for 10%
    truth = json.loads((SAMPLE_GIS / "truth.json").read_text())
    gpkg = SAMPLE_GIS / "scenario.gpkg"
    area = gpd.read_file(gpkg, layer="study_area", engine="pyogrio")
    thrusts = gpd.read_file(gpkg, layer="thrust_traces", engine="fiona")
    out = SURFACE_PROFILES.run(
        {"study_area": area, "thrust_traces": thrusts},
        {"elevation": str(SAMPLE_GIS / "elevation.asc"), "azimuth": truth["transport"]["azimuth_grid"],
         "spacing": 5000.0, "break_thrust": "T3", "toe_thrust": truth["frontal_thrust"]},
    )["profiles"]
    split = out[out["break_method"] == "thrust T3"]
    assert len(split) >= 2
    np.testing.assert_allclose(split["alpha_rear"], truth["wedge"]["rear_slope_deg"], rtol=0.10)
    np.testing.assert_allclose(split["alpha_front"], truth["wedge"]["frontal_slope_deg"], rtol=0.10)


@pytest.mark.parametrize("tool", TOOLS, ids=[t.name for t in TOOLS])
def test_examples_write_every_declared_output(tool, tmp_path):
    # the same path as the command line: read the sources, run, write layers and files
    sources, params = example_invocation(tool, tmp_path / "inputs")
    inputs = load_inputs(tool, sources, to_crs=CRS)
    layers, files = collect_outputs(tool, tool.run(inputs, params))
    gpkg = tmp_path / "out" / "result.gpkg"
    write_outputs(layers, files, geopackage=gpkg, folder=gpkg.parent, overwrite=False)
    for out in tool.outputs:
        if isinstance(out, LayerOutput):
            assert len(gpd.read_file(gpkg, layer=out.name, engine="pyogrio")) > 0, out.name
        else:
            assert isinstance(out, FileOutput)
            head = (gpkg.parent / out.filename).read_bytes()[:200]
            assert head.startswith(b"\x89PNG") if out.filename.endswith(".png") else b"<svg" in head
