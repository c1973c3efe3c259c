"""The synthetic scenario: determinism, fold geometry, noise, spacing, field sheet, files.

Reference libraries and sources named beside each check:
- mplstereonet (Kington, mplstereonet): ``fit_girdle`` (pi-girdle best fit),
  ``find_fisher_stats`` (Fisher 1953 precision k = (N-1)/(N-R); it returns
  ``(plunge, bearing), (R/N, confidence angle, k)`` as its source shows), ``angular_distance``.
- Fisher, R. A. (1953), "Dispersion on a sphere", Proc. R. Soc. Lond. A 217.
- Fleuty, M. J. (1964), "The description of folds", Proc. Geol. Assoc. 75, interlimb
  classes as tabulated in Lisle, Geological Structures and Maps (see REFERENCES.md).
- pygeomag (World Magnetic Model WMM2020): a second geomagnetic model for the declinations.
- shapely and pyproj for map-view distances and the CRS area of use.
"""

import json
import math
import subprocess
import sys
from pathlib import Path

import mplstereonet
import numpy as np
import pandas as pd
import pyogrio
import pytest
import shapely
from pygeomag import GeoMag
from pyproj import CRS

from thrustmap.errors import OutputExistsError, ParameterError
from thrustmap.io.grid import read_ascii_grid
from thrustmap.io.vocabulary import LINE_FEATURES, PLANE_FEATURES
from thrustmap.orientation import (
    line_to_vector,
    parse_lines,
    parse_planes,
    plane_to_normal,
    strike_to_dip_direction,
)
from thrustmap.synth import _model as model
from thrustmap.synth import make_scenario, random_attitudes, write_scenario
from thrustmap.synth.__main__ import main

REPO = Path(__file__).resolve().parents[1]
SAMPLE = REPO / "sample_gis"
CANONICAL = set(PLANE_FEATURES + LINE_FEATURES)  # CONTRACT.md feature vocabulary
PLANE_TYPES = {"bedding", "cleavage", "thrust"}


@pytest.fixture(scope="module")
def sc():
    return make_scenario(seed=0)


@pytest.fixture(scope="module")
def big():
    return make_scenario(seed=2, n_stations=5000)


@pytest.fixture(scope="module")
def pair():
    return make_scenario(seed=3, n_stations=120), make_scenario(seed=3, n_stations=120)


def _frames_equal(a, b):
    pd.testing.assert_frame_equal(a.drop(columns="geometry"), b.drop(columns="geometry"))
    assert shapely.equals_exact(a.geometry.values, b.geometry.values, tolerance=0).all()


# --------------------------------------------------------------------------- determinism


def test_same_seed_gives_identical_scenario(pair):
    a, b = pair
    for name in ("stations", "thrust_traces", "fold_traces", "domains", "study_area"):
        _frames_equal(getattr(a, name), getattr(b, name))
    pd.testing.assert_frame_equal(a.field_sheet, b.field_sheet)
    pd.testing.assert_frame_equal(a.field_key, b.field_key)
    assert np.array_equal(a.elevation.values, b.elevation.values)
    assert a.truth == b.truth


def test_other_seed_changes_stations_not_design(pair):
    a, b = pair[0], make_scenario(seed=4, n_stations=120)
    assert not a.stations["strike"].equals(b.stations["strike"])
    for key in ("formation_order", "out_of_sequence", "spacing", "kappa", "transport"):
        assert a.truth[key] == b.truth[key]


def test_written_files_are_deterministic_and_not_overwritten(tmp_path):
    write_scenario(tmp_path / "a", seed=5, n_stations=80)
    write_scenario(tmp_path / "b", seed=5, n_stations=80)
    for name in (
        "field_sheet.csv",
        "age_constraints.csv",
        "elevation.asc",
        "elevation.prj",
        "truth.json",
    ):
        assert (tmp_path / "a" / name).read_bytes() == (tmp_path / "b" / name).read_bytes(), name
    for layer in ("stations", "thrust_traces", "domains"):
        _frames_equal(
            pyogrio.read_dataframe(tmp_path / "a" / "scenario.gpkg", layer=layer),
            pyogrio.read_dataframe(tmp_path / "b" / "scenario.gpkg", layer=layer),
        )
    with pytest.raises(OutputExistsError, match="overwrite"):
        write_scenario(tmp_path / "b", seed=5, n_stations=80)
    write_scenario(tmp_path / "b", seed=6, n_stations=60, overwrite=True)
    assert json.loads((tmp_path / "b" / "truth.json").read_text())["generator"]["seed"] == 6
    assert not [
        p for p in (tmp_path / "b").iterdir() if p.name.startswith(".")
    ]  # no temporaries left


@pytest.mark.parametrize(
    "kwargs", [{"n_stations": 10}, {"n_stations": 2.5}, {"seed": -1}, {"n_stations": True}]
)
def test_bad_sizes_are_parameter_errors(kwargs):
    with pytest.raises(ParameterError, match="must be an integer"):
        make_scenario(**kwargs)


# --------------------------------------------------------------------------- folds and noise


def _girdle_axis(strike, dip):
    # mplstereonet.fit_girdle returns the girdle plane; its pole is the fold axis.
    # It edits its inputs in place, hence the copies.
    s, d = mplstereonet.fit_girdle(np.array(strike, float), np.array(dip, float))
    plunge, bearing = mplstereonet.pole2plunge_bearing(s, d)
    return float(bearing[0]), float(plunge[0])


def _axial_angle(t1, p1, t2, p2):
    # mplstereonet.angular_distance on lines (radians, bidirectional = axial)
    a = mplstereonet.line(p1, t1)
    b = mplstereonet.line(p2, t2)
    return math.degrees(float(mplstereonet.angular_distance(a, b, bidirectional=True)[0]))


def test_noise_free_poles_lie_on_the_girdle_of_the_true_axis(sc):
    key = sc.stations_key
    bed = (sc.stations["feature"] == "bedding").to_numpy()
    for dom, t in sc.truth["domains"].items():
        sel = bed & (key["domain"] == dom).to_numpy()
        poles = plane_to_normal(key.loc[sel, "exact_dip_direction"], key.loc[sel, "exact_dip"])
        axis = line_to_vector(t["axis_trend"], t["axis_plunge"])
        # a cylindrical fold: every pole is normal to the axis (truth rounded to 1e-4 degrees)
        assert np.abs(poles @ axis).max() < 1e-5, dom


def test_large_sample_girdle_recovers_the_axis_with_mplstereonet():
    df = random_attitudes(200_000, seed=11)
    truth = make_scenario(seed=0, n_stations=60).truth["domains"]
    for dom, t in truth.items():
        sel = df["domain"] == dom
        trend, plunge = _girdle_axis(df.loc[sel, "strike"], df.loc[sel, "dip"])
        assert _axial_angle(trend, plunge, t["axis_trend"], t["axis_plunge"]) < 1.0, dom


def test_sample_girdles_recover_the_axes_within_a_few_degrees(sc):
    bed = (sc.stations["feature"] == "bedding").to_numpy()
    for dom, t in sc.truth["domains"].items():
        st = sc.stations[bed & (sc.stations_key["domain"] == dom).to_numpy()]
        trend, plunge = _girdle_axis(st["strike"], st["dip"])
        # about 100 poles per domain at kappa 50; the tight fold's limbs lie only 24 degrees
        # apart as axes, so its girdle is the least constrained
        limit = 10.0 if t["tightness"] == "tight" else 5.0
        assert _axial_angle(trend, plunge, t["axis_trend"], t["axis_plunge"]) < limit, dom


def test_limb_poles_make_the_interlimb_angle_and_fleuty_class(sc):
    classes = {"gentle": (120, 180), "open": (70, 120), "close": (30, 70), "tight": (0, 30)}
    seen = set()
    for dom, t in sc.truth["domains"].items():
        back, fore = t["limbs"]
        a = mplstereonet.line(back["pole_plunge"], back["pole_trend"])
        b = mplstereonet.line(fore["pole_plunge"], fore["pole_trend"])
        between = math.degrees(float(mplstereonet.angular_distance(a, b, bidirectional=True)[0]))
        # limbs meeting at interlimb angle phi have poles 180 - phi apart (axially: min of both)
        expected = min(180.0 - t["interlimb_angle"], t["interlimb_angle"])
        assert between == pytest.approx(expected, abs=1e-3), dom
        lo, hi = classes[t["tightness"]]  # Fleuty (1964) via Lisle
        assert lo < t["interlimb_angle"] < hi
        seen.add(t["tightness"])
        # both limb poles lie on the girdle whose pole is the axis
        for limb in (back, fore):
            assert _axial_angle(
                limb["pole_trend"], limb["pole_plunge"], t["axis_trend"], t["axis_plunge"]
            ) == (pytest.approx(90.0, abs=1e-3))
    assert seen == {"gentle", "open", "close", "tight"}


def _rotated_to_common_mean(noisy, exact):
    """Express each noisy unit vector in a frame whose z axis is its own exact direction."""
    sign = np.sign(np.sum(noisy * exact, axis=1))[:, None]
    noisy = noisy * sign
    helper = np.where((np.abs(exact[:, 2]) > 0.9)[:, None], [1.0, 0, 0], [0, 0, 1.0])
    e1 = np.cross(exact, helper)
    e1 /= np.linalg.norm(e1, axis=1)[:, None]
    e2 = np.cross(exact, e1)
    x, y, z = (np.sum(noisy * e, axis=1) for e in (e1, e2, exact))
    return np.degrees(np.arcsin(np.clip(z, -1, 1))), np.degrees(np.arctan2(x, y)) % 360


def test_bedding_noise_has_the_stated_fisher_kappa(big):
    bed = (big.stations["feature"] == "bedding").to_numpy()
    st, key = big.stations[bed], big.stations_key[bed]
    noisy = plane_to_normal(strike_to_dip_direction(st["strike"]), st["dip"])
    exact = plane_to_normal(key["exact_dip_direction"], key["exact_dip"])
    plunge, bearing = _rotated_to_common_mean(noisy, exact)
    # mplstereonet.find_fisher_stats: (mean), (R/N, cone, k); k = (N-1)/(N-R), Fisher (1953)
    _, (_, _, k) = mplstereonet.find_fisher_stats(plunge, bearing, conf=95)
    # N ~ 3250: the relative standard error of k is about 1/sqrt(N) ~ 2 %
    assert k == pytest.approx(big.truth["kappa"]["bedding"], rel=0.08)


def test_cleavage_is_fisher_distributed_about_the_axial_plane(big):
    cl = (big.stations["feature"] == "cleavage").to_numpy()
    for dom in ("D2", "D4"):
        st = big.stations[cl & (big.stations_key["domain"] == dom).to_numpy()]
        t = big.truth["domains"][dom]
        plunge, bearing = mplstereonet.pole2plunge_bearing(
            st["strike"].to_numpy(), st["dip"].to_numpy()
        )
        (mp, mb), _ = mplstereonet.find_fisher_stats(plunge, bearing, conf=95)
        ap_pole_trend = (t["axial_plane_dip_direction"] + 180.0) % 360.0
        assert _axial_angle(mb, mp, ap_pole_trend, 90.0 - t["axial_plane_dip"]) < 2.0
        # poles near the horizontal wrap to both hemispheres: measure them about the known
        # axial-plane pole before the Fisher estimate
        ap = plane_to_normal(np.full(len(st), t["axial_plane_dip_direction"]), t["axial_plane_dip"])
        p2, b2 = _rotated_to_common_mean(line_to_vector(bearing, plunge), ap)
        _, (_, _, k) = mplstereonet.find_fisher_stats(p2, b2, conf=95)
        assert k == pytest.approx(big.truth["kappa"]["cleavage"], rel=0.15)  # N ~ 250-350


@pytest.mark.parametrize("kappa", [5.0, 50.0, 500.0])
def test_fisher_sampler_matches_fisher_1953_estimate(kappa):
    rng = np.random.default_rng(7)
    mean = np.tile(line_to_vector(130.0, 35.0), (20000, 1))
    v = model.fisher(mean, kappa, rng)
    assert np.allclose(np.linalg.norm(v, axis=1), 1.0)
    plunge = np.degrees(np.arcsin(-v[:, 2]))
    bearing = np.degrees(np.arctan2(v[:, 0], v[:, 1])) % 360
    (mp, mb), (_, _, k) = mplstereonet.find_fisher_stats(plunge, bearing, conf=95)
    assert k == pytest.approx(kappa, rel=0.05)  # Fisher (1953) k = (N-1)/(N-R)
    assert _axial_angle(mb, mp, 130.0, 35.0) < 1.0 + 20.0 / kappa


def test_slickenlines_lie_in_their_thrust_planes_and_point_along_transport(sc):
    th = sc.stations[sc.stations["feature"] == "thrust"]
    assert len(th) >= 10 and (th["sense"] == "reverse").all()
    pole_plunge, pole_bearing = mplstereonet.pole2plunge_bearing(
        th["strike"].to_numpy(), th["dip"].to_numpy()
    )
    for i in range(len(th)):
        angle = _axial_angle(
            th["trend"].iloc[i], th["plunge"].iloc[i], pole_bearing[i], pole_plunge[i]
        )
        assert angle == pytest.approx(90.0, abs=0.2)  # 0.1-degree rounding of both
    # each thrust surface lies near the local noise-free plane (kappa 100: P(angle > 25) ~ 1e-4)
    key = sc.stations_key.loc[th.index]
    exact_strike = (key["exact_dip_direction"] - 90.0) % 360.0
    exact = mplstereonet.pole(np.array(exact_strike), np.array(key["exact_dip"]))
    noisy = mplstereonet.pole(np.array(th["strike"]), np.array(th["dip"]))
    assert np.degrees(mplstereonet.angular_distance(exact, noisy)).max() < 25.0
    # and dips toward its trace's hanging wall (truth) on average
    hw = key["thrust_id"].map({t["id"]: t["hw_dip_direction_true"] for t in sc.truth["thrusts"]})
    off = (th["strike"] + 90.0 - hw + 180.0) % 360.0 - 180.0
    assert abs(off.median()) < 10.0
    (_, mean_bearing), _ = mplstereonet.find_fisher_stats(
        th["plunge"].to_numpy(), th["trend"].to_numpy()
    )
    # lower-hemisphere slickenlines plunge toward the hinterland; the hanging wall moved opposite
    moved = (mean_bearing + 180.0) % 360.0
    assert abs((moved - sc.truth["transport"]["azimuth_true"] + 180) % 360 - 180) < 4.0


def test_hinge_lines_are_few_and_near_the_axes(sc):
    hl = sc.stations[sc.stations["feature"] == "hinge_line"]
    key = sc.stations_key[sc.stations["feature"] == "hinge_line"]
    assert 6 <= len(hl) <= 4 * len(sc.truth["domains"])
    for dom in key["domain"].unique():
        t = sc.truth["domains"][dom]
        lines = hl[(key["domain"] == dom).to_numpy()]
        for tr, pl in zip(lines["trend"], lines["plunge"], strict=True):
            assert (
                _axial_angle(tr, pl, t["axis_trend"], t["axis_plunge"]) < 15.0
            )  # kappa 200: ~6 deg spread


# --------------------------------------------------------------------------- map geometry


def _scanlines(truth, n=40):
    az = math.radians(truth["transport"]["azimuth_grid"])
    along = np.array([math.sin(az), math.cos(az)])
    across = np.array([math.cos(az), -math.sin(az)])
    centre = np.array(truth["study_area"]["centre"])
    offsets = np.linspace(-20000, 20000, n)
    starts = centre + offsets[:, None] * across - 40000 * along
    ends = centre + offsets[:, None] * across + 40000 * along
    return shapely.linestrings(np.stack([starts, ends], axis=1))


def test_spacing_in_truth_is_the_distance_along_transport_between_traces(sc):
    traces = dict(zip(sc.thrust_traces["thrust_id"], sc.thrust_traces.geometry, strict=True))
    pairs = sc.truth["spacing"]["pairs_m"]
    measured = {p: [] for p in pairs}
    for scan in _scanlines(sc.truth):
        where = {}
        for tid, line in traces.items():
            hit = shapely.intersection(scan, line)
            if isinstance(hit, shapely.Point):
                where[tid] = shapely.line_locate_point(scan, hit)
        for pair in pairs:
            a, b = pair.split("-")
            if a in where and b in where:
                measured[pair].append(where[b] - where[a])
    for pair, value in pairs.items():
        assert len(measured[pair]) >= 10, pair
        assert np.allclose(measured[pair], value, atol=1.0), pair  # shapely distances, metres
    assert sc.truth["spacing"]["mean_m"] == pytest.approx(np.mean(list(pairs.values())))
    assert all(4000 <= v <= 6000 for v in pairs.values())


def test_out_of_sequence_thrust_truncates_t3_in_map_view(sc):
    traces = dict(zip(sc.thrust_traces["thrust_id"], sc.thrust_traces.geometry, strict=True))
    t3, t6 = traces["T3"], traces["T6"]
    start = shapely.get_point(t3, 0)
    assert shapely.distance(start, t6) < 1e-6  # T3 ends on T6
    at = shapely.line_locate_point(t6, start)
    assert at > 1000.0 and t6.length - at > 1000.0  # T6 continues on both sides
    assert sc.truth["cross_cutting"][0] == {
        **sc.truth["cross_cutting"][0],
        "younger": "T6",
        "older": "T3",
    }
    ins = [traces[t] for t in sc.truth["in_sequence"]]
    for i, a in enumerate(ins):
        for b in ins[i + 1 :]:
            assert not shapely.intersects(a, b)
    for other in ("T1", "T2", "T4", "T5"):
        assert not shapely.intersects(t6, traces[other])
    ages = sc.age_constraints
    assert ((ages["younger"] == "T6") & (ages["older"] == sc.truth["frontal_thrust"])).any()
    assert sc.truth["formation_order"][-1] == "T6" and sc.truth["out_of_sequence"] == ["T6"]


def test_thrusts_are_foreland_vergent_and_hanging_wall_attributes_agree(sc):
    transport = sc.truth["transport"]["azimuth_true"]
    for t in sc.truth["thrusts"]:
        off = abs((t["hw_dip_direction_true"] - (transport + 180.0) + 180) % 360 - 180)
        assert off < 30.0, t["id"]  # hanging walls dip toward the hinterland
    layer = sc.thrust_traces.set_index("thrust_id")
    given = layer["hw_side"].notna() | layer["hw_dip_direction"].notna()
    assert not given["T4"] and given.drop("T4").all()
    assert set(layer["hw_side"].dropna()) == {"left", "right"}


def test_domains_tile_the_study_area_and_match_station_labels(sc):
    area = sc.study_area.geometry.iloc[0]
    doms = sc.domains
    assert list(doms["domain"]) == [f"D{i}" for i in range(1, 7)]
    assert doms.geometry.area.sum() == pytest.approx(area.area, rel=1e-9)
    assert shapely.union_all(doms.geometry.values).symmetric_difference(area).area < 1.0
    pts = sc.stations.geometry
    for dom, poly in zip(doms["domain"], doms.geometry, strict=True):
        inside = shapely.contains_xy(poly, pts.x.to_numpy(), pts.y.to_numpy())
        assert np.array_equal(inside, (sc.stations_key["domain"] == dom).to_numpy()), dom
    assert set(sc.fold_traces["fold_kind"]) == {"anticline", "syncline"}
    assert set(sc.fold_traces["thrust_sheet"]) == set(doms["thrust_sheet"])


def test_everything_lies_in_the_utm_zone_33_area_of_use(sc):
    # EPSG:32633 is defined for 12E-18E (pyproj area_of_use); coordinates beyond it would be
    # legitimately rejected by a strict ingest
    west, south, east, north = CRS.from_epsg(32633).area_of_use.bounds
    good = sc.field_sheet[sc.field_key["reason"] == ""]
    assert good["lon"].between(west, east).all() and good["lat"].between(south, north).all()


def test_elevation_profile_has_the_stated_wedge_slopes(sc):
    w = sc.truth["wedge"]
    pos = {t["id"]: t["position_along_transport_m"] for t in sc.truth["thrusts"]}
    for u in (-6000.0, 0.0, 5000.0):
        for lo, hi, slope in (
            (pos["T3"] + 1000, pos["T5"] - 1000, w["frontal_slope_deg"]),
            (pos["T1"] - 2000, pos["T3"] - 1000, w["rear_slope_deg"]),
        ):
            sp = np.arange(lo, hi, 100.0)
            x, y = model.to_map(np.full(sp.shape, u), sp)
            z = sc.elevation.sample(x, y)
            ok = np.isfinite(z)
            # least-squares line (numpy.polyfit) along a transport-parallel profile
            gradient = -np.polyfit(sp[ok], z[ok], 1)[0]
            assert math.degrees(math.atan(gradient)) == pytest.approx(slope, rel=0.05)
    assert 0 < w["basal_dip_deg"] < 10


# --------------------------------------------------------------------------- field sheet


def _parse(sheet, key):
    plane = key["type"].isin(PLANE_TYPES).to_numpy() | ~sheet["type"].isin(CANONICAL).to_numpy()
    dd, dip, perr = parse_planes(sheet["attitude"].to_numpy())
    tr, pl, lerr = parse_lines(sheet["attitude"].to_numpy())
    err = np.where(plane, perr, lerr)
    return plane, dd, dip, tr, pl, err


def test_good_rows_parse_and_convert_to_the_true_attitude(sc):
    sheet, key = sc.field_sheet, sc.field_key
    plane, dd, dip, tr, pl, err = _parse(sheet, key)
    good = ((key["reason"] == "") & (key["flag"] == "")).to_numpy()
    assert (err[good] == "").all()
    gp, gl = good & plane, good & ~plane
    assert np.array_equal(dd[gp], key["mag_dip_direction"].to_numpy()[gp])
    assert np.array_equal(dip[gp], key["mag_dip"].to_numpy()[gp])
    assert np.array_equal(tr[gl], key["mag_trend"].to_numpy()[gl])
    # true = magnetic + declination; rounding to whole degrees (0.5) plus cardinal snapping (1.5)
    decl = key["declination"].to_numpy()
    d_dd = (dd + decl - key["true_dip_direction"].to_numpy() + 180) % 360 - 180
    d_tr = (tr + decl - key["true_trend"].to_numpy() + 180) % 360 - 180
    assert np.abs(d_dd[gp]).max() <= 2.0 and np.abs(d_tr[gl]).max() <= 0.51
    assert set(key.loc[good, "notation"]) == {
        "rhr",
        "letter",
        "quadrant",
        "cardinal",
        "trend_plunge",
        "quadrant_line",
    }
    # every notation the brief asks for is present
    text = sheet["attitude"]
    assert text.str.fullmatch(r"\d{3}/\d{2}").any()  # 030/45 (and 045/30 lines)
    assert text.str.fullmatch(r"\d{3}/\d{2}[NSEW]{1,2}").any()  # 030/45SE
    assert text.str.fullmatch(r"N\d+[EW] \d+[NSEW]{1,2}").any()  # N30E 45SE
    assert text.str.fullmatch(r"(N-S|E-W) \d+[NSEW]").any()  # N-S 30E
    assert text.str.fullmatch(r"[NS]\d+[EW] \d+").any()  # N30E 20 (line)


def test_bad_rows_are_exactly_the_intended_ones(sc):
    sheet, key, info = sc.field_sheet, sc.field_key, sc.truth["field_sheet"]
    _, _, _, _, _, err = _parse(sheet, key)
    reason = key["reason"].to_numpy()
    for code in (
        "dip_out_of_range",
        "azimuth_out_of_range",
        "unparseable",
        "letter_contradicts_strike",
    ):
        assert np.array_equal(err == code, reason == code), code
    assert set(err[reason == ""]) == {""}
    missing = sheet["lon"].isna() | sheet["lat"].isna()
    assert np.array_equal(missing.to_numpy(), reason == "missing_coordinates")
    # EPSG:4326 area of use (pyproj): longitudes -180..180, latitudes -90..90
    west, south, east, north = CRS.from_epsg(4326).area_of_use.bounds
    outside = ~missing & ~(sheet["lon"].between(west, east) & sheet["lat"].between(south, north))
    assert np.array_equal(outside.to_numpy(), reason == "outside_crs_area")
    dup = sheet.duplicated(keep="first").to_numpy()
    assert np.array_equal(dup, reason == "duplicate_row")
    unknown = ~sheet["type"].isin(CANONICAL).to_numpy()
    assert np.array_equal(unknown, reason == "unknown_feature")
    # truth.json counts and row numbers (1-based data rows)
    for code, rows in info["bad_row_numbers"].items():
        assert rows == list(np.flatnonzero(reason == code) + 1)
        assert info["bad_rows"][code] == len(rows) >= 1
    assert 0.03 <= info["n_bad_rows"] / info["n_rows"] <= 0.05
    assert "<script>alert(1)</script>" in sheet["notes"].iloc[info["script_note_row"] - 1]


def test_warning_rows_parse_with_the_edge_values(sc):
    sheet, key, info = sc.field_sheet, sc.field_key, sc.truth["field_sheet"]
    _, dd, dip, _, _, err = _parse(sheet, key)
    rows = {f: np.array(r) - 1 for f, r in info["warning_row_numbers"].items()}
    assert all(len(r) == 1 for r in rows.values())
    assert (err[np.concatenate(list(rows.values()))] == "").all()
    assert dip[rows["dip_zero"]][0] == 0.0 and dip[rows["dip_vertical"]][0] == 90.0
    assert sheet["attitude"].iloc[rows["azimuth_360"][0]].startswith("360/")
    assert dd[rows["azimuth_360"]][0] == 90.0  # 360 read as north: RHR dip direction 090
    good_dips = dip[(key["reason"] == "").to_numpy() & (key["flag"] == "").to_numpy()]
    assert not np.isin(good_dips[np.isfinite(good_dips)], [0.0, 90.0]).any()


def test_declinations_agree_with_the_world_magnetic_model(sc):
    # Second, independent model: pygeomag's WMM2020 (valid 2020-2025). IGRF and WMM differ
    # by a few tenths of a degree at most at mid-latitudes (REFERENCES.md).
    geo = GeoMag(coefficients_file="wmm/WMM_2020.COF")
    first = sc.field_sheet.drop_duplicates("stn").set_index("stn")
    per = sc.truth["declination"]["per_station"]
    for stn in list(per)[::25]:
        row = first.loc[stn]
        if not (np.isfinite(row["lon"]) and abs(row["lat"]) <= 90 and abs(row["lon"]) <= 180):
            continue
        date = pd.Timestamp(row["date"])
        year = date.year + (date.day_of_year - 0.5) / (366 if date.is_leap_year else 365)
        wmm = geo.calculate(glat=row["lat"], glon=row["lon"], alt=0.3, time=year).d
        assert per[stn] == pytest.approx(wmm, abs=0.3), stn


# --------------------------------------------------------------------------- files


def _approx_equal(a, b, path="truth"):
    if isinstance(a, dict):
        assert a.keys() == b.keys(), path
        for k in a:
            _approx_equal(a[k], b[k], f"{path}.{k}")
    elif isinstance(a, list):
        assert len(a) == len(b), path
        for i, (x, y) in enumerate(zip(a, b, strict=True)):
            _approx_equal(x, y, f"{path}[{i}]")
    elif isinstance(a, float):
        assert a == pytest.approx(b, rel=1e-6, abs=1e-3), path
    else:
        assert a == b, path


def test_committed_sample_is_current_small_and_marked_synthetic():
    truth = json.loads((SAMPLE / "truth.json").read_text())
    gen = truth["generator"]
    fresh = make_scenario(seed=gen["seed"], n_stations=gen["n_stations"])
    _approx_equal(truth, json.loads(json.dumps(fresh.truth)))
    assert sum(p.stat().st_size for p in SAMPLE.iterdir()) < 5 * 1024 * 1024
    assert truth["synthetic"] is True
    assert "synthetic" in (SAMPLE / "README.md").read_text().lower()
    assert 300 <= truth["stations"]["n_sites"] + truth["field_sheet"]["n_sites"] <= 1500


@pytest.mark.parametrize("engine", ["pyogrio", "fiona"])
def test_sample_layers_follow_the_contract(engine):
    import geopandas as gpd

    path = SAMPLE / "scenario.gpkg"
    columns = {
        "stations": {
            "station_id",
            "feature",
            "strike",
            "dip",
            "trend",
            "plunge",
            "sense",
            "overturned",
            "note",
        },
        "thrust_traces": {"thrust_id", "name", "hw_side", "hw_dip_direction", "dip"},
        "fold_traces": {"fold_id", "fold_kind", "thrust_sheet"},
        "domains": {"domain"},
        "study_area": {"name"},
    }
    assert {name for name, _ in pyogrio.list_layers(path)} == set(columns)
    for layer, cols in columns.items():
        gdf = gpd.read_file(path, layer=layer, engine=engine)
        assert cols <= set(gdf.columns), layer
        assert gdf.crs.to_epsg() == 32633
        assert pyogrio.read_info(path, layer=layer)["layer_metadata"]["synthetic"] == "true"
    st = gpd.read_file(path, layer="stations", engine=engine)
    assert set(st["feature"]) <= CANONICAL and st["note"].str.contains("synthetic").all()
    assert st["strike"].dropna().between(0, 360, inclusive="left").all()
    sheet = pd.read_csv(SAMPLE / "field_sheet.csv")
    assert list(sheet.columns) == ["stn", "lon", "lat", "type", "attitude", "date", "notes"]
    assert list(pd.read_csv(SAMPLE / "age_constraints.csv").columns) == ["younger", "older", "note"]
    grid = read_ascii_grid(SAMPLE / "elevation.asc")
    assert grid.crs.to_epsg() == 32633 and grid.cell == 200.0


def test_random_attitudes_shape_and_determinism():
    a, b = random_attitudes(5000, seed=4), random_attitudes(5000, seed=4)
    pd.testing.assert_frame_equal(a, b)
    assert set(a["domain"].cat.categories) == {f"D{i}" for i in range(1, 7)}
    assert (
        a["dip"].between(0, 90).all() and a["dip_direction"].between(0, 360, inclusive="left").all()
    )
    assert not a.equals(random_attitudes(5000, seed=5))
    with pytest.raises(ParameterError):
        random_attitudes(0)


def test_command_line_writes_and_refuses_overwrite(tmp_path, caplog):
    cmd = [
        sys.executable,
        "-m",
        "thrustmap.synth",
        str(tmp_path),
        "--seed",
        "1",
        "--stations",
        "60",
    ]
    done = subprocess.run(
        cmd, capture_output=True, text=True, env={"PYTHONPATH": str(REPO)}, check=False
    )
    assert done.returncode == 0, done.stderr
    assert (tmp_path / "truth.json").exists() and "synthetic scenario" in done.stderr
    assert main([str(tmp_path), "--seed", "1", "--stations", "60"]) == 1
    assert "overwrite" in caplog.text
