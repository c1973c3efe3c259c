"""End to end against the synthetic scenario's truth.

The truth here is our own: ``thrustmap.synth`` generates the invented belt
(``make_scenario`` in memory, the committed ``sample_gis/`` for seed 0) and
writes every value it used to ``truth.json``. These tests run the public chain
(ingest, domains and folds, thrusts, profiles, the pipeline) on the generated
data and compare with that truth; each tolerance says why it is what it is.
They catch our estimators drifting from the generator's design, not errors
shared by both: the reference-library and published-value checks live beside
each module's own tests.
"""

import json
import logging
import shutil
from pathlib import Path

import geopandas as gpd
import numpy as np
import pandas as pd
import pyogrio
import pytest
import shapely

import thrustmap
from thrustmap.cli import main
from thrustmap.domains import domain_statistics
from thrustmap.orientation import angle_between_lines, plane_to_pole
from thrustmap.pipeline import PROVENANCE_LAYER
from thrustmap.profiles import surface_profiles, transport_lines
from thrustmap.synth import make_scenario

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "sample_gis"
TRUTH = json.loads((SAMPLE / "truth.json").read_text())
GPKG = SAMPLE / "scenario.gpkg"

# The seed sweep of the fold checks (issue 3): 30 scenarios of ~6 x 80-130 beds each.
SWEEP = range(30)
SWEEP_BOOT = 200


@pytest.fixture(autouse=True)
def _quiet_domain_notes(caplog):
    # domain_statistics logs a note per domain (few hinge lines, girdle-shaped bedding)
    caplog.set_level(logging.ERROR, logger="thrustmap.domains")


def _layer(name):
    return gpd.read_file(GPKG, layer=name, engine="pyogrio")


# --------------------------------------------------------------- folds (issue 3)


def test_fold_axes_and_interlimb_angles_over_a_seed_sweep():
    rows = []
    for seed in SWEEP:
        sc = make_scenario(seed=seed)
        attitudes = thrustmap.read_attitudes(sc.stations).accepted
        fits = domain_statistics(attitudes, sc.domains, n_boot=SWEEP_BOOT, seed=seed)
        axes = fits.fold_axes.set_index("domain")
        for name, truth in sc.truth["domains"].items():
            fit = axes.loc[name]
            miss = angle_between_lines(
                fit["axis_trend"], fit["axis_plunge"], truth["axis_trend"], truth["axis_plunge"]
            )
            rows.append(
                (name, miss <= fit["cone95"], fit["interlimb_angle"] - truth["interlimb_angle"])
            )
    cases = pd.DataFrame(rows, columns=["domain", "inside", "error"])
    assert len(cases) == 6 * len(SWEEP)
    # Issue 3: the true axis inside the bootstrap cone95 for >= 90 % of (seed, domain)
    # cases (a calibrated 95 % cone would give ~95 %; we measure ~93 %).
    assert cases["inside"].mean() >= 0.90
    # Issue 3: interlimb within 5 degrees. The generator's Fisher noise (kappa 50,
    # truth.json) has an angular sd of ~81/sqrt(kappa) = 11.5 degrees per bed (Fisher
    # 1953 statistics as given in Tauxe, Essentials of Paleomagnetism), ~8 within the
    # profile plane; with ~45 beds per limb the interlimb angle has a sampling sd of
    # ~1.7 (we measure ~2), so a few % of draws miss 5 degrees whatever the estimator;
    # we ask for 95 % of the cases (we measure ~97 %).
    assert (cases["error"].abs() <= 5.0).mean() >= 0.95
    # No bias: hinge-zone beds pulling the limbs together made the mean error per
    # domain +4 to +8.5 degrees; now it must stay within 2.5 (~5 standard errors of
    # a 30-seed mean).
    bias = cases.groupby("domain")["error"].mean()
    assert bias.abs().max() < 2.5, bias.round(2).to_dict()


def test_committed_sample_folds():
    # Seed 0, read from the files a user gets: stations layer -> read_attitudes ->
    # domain_statistics with the domains layer.
    attitudes = thrustmap.read_attitudes(GPKG, layer="stations").accepted
    axes = domain_statistics(attitudes, _layer("domains"), n_boot=SWEEP_BOOT).fold_axes
    axes = axes.set_index("domain")
    assert sorted(axes.index) == sorted(TRUTH["domains"])
    for name, truth in TRUTH["domains"].items():
        fit = axes.loc[name]
        # interlimb within 5 degrees (issue 3); before the limb modes D2, D4 and D5
        # came out 55, 70.5 and 109 against 48, 62 and 104
        assert fit["interlimb_angle"] == pytest.approx(truth["interlimb_angle"], abs=5.0), name
        # Fleuty (1964) class, as the generator classed its design angle; every design
        # angle lies more than 5 degrees from a class limit
        assert fit["tightness"] == truth["tightness"], name
        # the axial plane bisects the limbs and holds the axis: within 5 degrees, as
        # the interlimb angle (the axis errors are ~2-3 degrees, the cone's size)
        pole = plane_to_pole(fit["axial_plane_dip_direction"], fit["axial_plane_dip"])
        true_pole = plane_to_pole(truth["axial_plane_dip_direction"], truth["axial_plane_dip"])
        assert angle_between_lines(*pole, *true_pole) < 5.0, name


# --------------------------------------------------------------- thrusts (issue 4)


@pytest.mark.parametrize(
    ("source", "tolerance"),
    [
        # given: the truth itself, read back through the true -> grid conversion
        ("given", 0.01),
        # slickenlines are the transport resolved onto each (bent, T6 oblique) thrust
        # plane: their noise-free mean lies ~1.5 degrees off the horizontal transport
        # on this scenario, plus the Fisher alpha95 of ~45 noisy lines (~2.8)
        ("slickenlines", 5.0),
        # normal to the length-weighted mean strike: T6, ~11 % of the trace length and
        # 20 degrees oblique, turns it ~2.2 degrees
        ("trace_geometry", 5.0),
    ],
)
def test_thrust_network_recovers_the_design(source, tolerance):
    traces = _layer("thrust_traces")
    options = {
        "given": {"transport_azimuth": TRUTH["transport"]["azimuth_true"]},
        "slickenlines": {"attitudes": thrustmap.read_attitudes(GPKG, layer="stations").accepted},
        "trace_geometry": {},
    }[source]
    result = thrustmap.analyze_thrusts(
        traces,
        study_area=_layer("study_area"),
        age_constraints=pd.read_csv(SAMPLE / "age_constraints.csv", dtype=str),
        scanline_interval=500.0,
        n_boot=200,
        **options,
    )
    transport = result.transport
    assert transport.source == source
    miss = (transport.azimuth_true - TRUTH["transport"]["azimuth_true"] + 180.0) % 360.0 - 180.0
    assert abs(miss) < tolerance

    assert result.order == TRUTH["formation_order"]
    out = result.traces.loc[result.traces["sequence"] == "out", "thrust_id"]
    assert sorted(out) == sorted(TRUTH["out_of_sequence"])
    assert result.contradictions.empty

    # hanging-wall sides as designed; T4 carries no hanging-wall attribute and is inferred
    sides = result.traces.set_index("thrust_id")
    for thrust in TRUTH["thrusts"]:
        assert sides.loc[thrust["id"], "hw_side"] == thrust["hw_side"], thrust["id"]
        given = not thrust["hw_attribute_given"].startswith("none")
        assert (sides.loc[thrust["id"], "hw_side_source"] == "given") == given, thrust["id"]

    # spacing per in-sequence pair within 5 % (issue 4); the generated traces are
    # parallel, so the spacing is exact along the true transport and changes by
    # 1 - cos(miss) < 0.4 % for a transport 5 degrees off
    spacing = result.spacing.set_index("pair")
    for pair, metres in TRUTH["spacing"]["pairs_m"].items():
        assert spacing.loc[pair, "mean_m"] == pytest.approx(metres, rel=0.05), pair

    # the truncation of T3 by T6, found in map view where the generator made it
    relations = result.relations
    for cut in TRUTH["cross_cutting"]:
        found = relations[
            (relations["younger"] == cut["younger"])
            & (relations["older"] == cut["older"])
            & (relations["evidence"] == cut["kind"])
        ]
        assert list(found["status"]) == ["used"]
        nodes = result.nodes[
            (result.nodes["kind"] == cut["kind"]) & (result.nodes["thrust_id"] == cut["older"])
        ]
        gap = shapely.distance(shapely.Point(cut["point"]), np.asarray(nodes.geometry))
        assert gap.min() < 10.0  # the default snap tolerance, metres


# --------------------------------------------------------------- ingest (issue 2)


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_field_sheet_rejects_and_flags_what_the_generator_spoiled(seed):
    if seed == 0:
        sheet, truth = SAMPLE / "field_sheet.csv", TRUTH
    else:
        scenario = make_scenario(seed=seed)
        sheet, truth = scenario.field_sheet, scenario.truth
    read = thrustmap.read_attitudes(
        sheet, crs="EPSG:4326", azimuth_ref="magnetic", working_crs=TRUTH["crs"]
    )
    accepted, rejected = read.accepted, read.rejected
    info = truth["field_sheet"]
    assert len(accepted) + len(rejected) == info["n_rows"]
    expected = {row: reason for reason, rows in info["bad_row_numbers"].items() for row in rows}
    assert dict(zip(rejected["source_row"], rejected["reason"], strict=True)) == expected
    flagged = accepted.set_index("source_row")["flags"]
    for flag, rows in info["warning_row_numbers"].items():
        assert [r for r in flagged.index if flag in flagged[r].split(",")] == rows, flag
    # IGRF declination per station: truth evaluates ppigrf at the station elevation,
    # ingest on the ellipsoid; a few hundred metres change it by ~0.005 degrees, and
    # the truth is rounded to 1e-4
    declination = accepted["stn"].map(truth["declination"]["per_station"])
    assert np.abs(accepted["declination"] - declination).max() < 0.02
    assert (accepted["azimuth_ref"] == "true").all()
    assert set(accepted["azimuth_ref_input"]) == {"magnetic"}
    # the note with markup is data: kept as written (escaping is each output's job)
    note = accepted.loc[accepted["source_row"] == info["script_note_row"], "notes"]
    assert note.str.contains("<script>alert(1)</script>", regex=False).all() and len(note) == 1


# --------------------------------------------------------------- wedge (issue 7)


@pytest.mark.parametrize("seed", [0, 3])
def test_surface_slopes_front_and_rear(seed):
    sc = make_scenario(seed=seed)
    wedge = sc.truth["wedge"]
    lines = transport_lines(
        sc.study_area, azimuth=sc.truth["transport"]["azimuth_grid"], spacing=5000.0
    )
    profiles = surface_profiles(
        lines,
        sc.elevation,
        azimuth=sc.truth["transport"]["azimuth_grid"],
        thrusts=sc.thrust_traces,
        break_thrust="T3",  # the generator's slope break ("hinterland of T3")
        toe_thrust=sc.truth["frontal_thrust"],
    )
    split = profiles[profiles["break_method"] == "thrust T3"]
    assert len(split) >= 3
    # issue 7: within 10 % of the generated slopes; the roughness (+-6 m waves) is
    # what the robust fit has to see through
    np.testing.assert_allclose(split["alpha_front"], wedge["frontal_slope_deg"], rtol=0.10)
    np.testing.assert_allclose(split["alpha_rear"], wedge["rear_slope_deg"], rtol=0.10)


# --------------------------------------------------------------- pipeline (issue 6)


def _as_the_demo_names_it(value):
    prefix = f"{SAMPLE.as_posix()}/"
    return value.replace(prefix, "sample_gis/") if isinstance(value, str) else value


def test_run_of_the_project_file_equals_the_demo(tmp_path, monkeypatch, capsys):
    # `thrustmap demo` runs sample_gis/project.toml from the working folder and writes
    # <folder>/out (the project's `output = "../out"`): run it in a copy, so the
    # repository keeps no outputs. `thrustmap run` reads the committed project file
    # from another folder, writing where --out says.
    shutil.copytree(SAMPLE, tmp_path / "demo" / "sample_gis")
    monkeypatch.chdir(tmp_path / "demo")
    assert main(["demo"]) == 0
    assert main(["demo", "-q"]) == 0  # the demo replaces its own outputs
    (tmp_path / "elsewhere").mkdir()
    monkeypatch.chdir(tmp_path / "elsewhere")
    assert main(["run", str(SAMPLE / "project.toml"), "--out", str(tmp_path / "run")]) == 0
    assert "thrustmap.gpkg: layer provenance" in capsys.readouterr().out

    demo, run = tmp_path / "demo" / "out", tmp_path / "run"
    a, b = demo / "thrustmap.gpkg", run / "thrustmap.gpkg"
    layers = pyogrio.list_layers(a)
    assert sorted(map(tuple, layers)) == sorted(map(tuple, pyogrio.list_layers(b)))
    for name in layers[:, 0]:
        left = gpd.read_file(a, layer=name, engine="pyogrio")
        right = gpd.read_file(b, layer=name, engine="pyogrio")
        assert len(left) == len(right), name
        assert getattr(left, "crs", None) == getattr(right, "crs", None), name
        if name == PROVENANCE_LAYER:
            left = left.drop(columns=["started_utc", "seconds"])
            right = right.drop(columns=["started_utc", "seconds"])
        # messages name the file as the run was given it: relative for the demo
        for column in right.columns.drop("geometry", errors="ignore"):
            right[column] = right[column].map(_as_the_demo_names_it)
        pd.testing.assert_frame_equal(left, right, obj=name)
    files = sorted(p.relative_to(demo) for p in demo.rglob("*") if p.is_file())
    assert files == sorted(p.relative_to(run) for p in run.rglob("*") if p.is_file())
