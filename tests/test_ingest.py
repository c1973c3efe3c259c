"""Attitude ingest: formats and engines, columns and notations, north references, zero loss."""

import re

import geopandas as gpd
import mplstereonet
import numpy as np
import pandas as pd
import pyproj
import pytest
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st

import thrustmap
from thrustmap.errors import CRSError, InputError, ParameterError, SourceNotFoundError
from thrustmap.io.attitudes import ATTITUDE_COLUMNS, REJECT_COLUMNS, read_attitudes
from thrustmap.io.columns import detect_columns
from thrustmap.io.validation import REASONS
from thrustmap.io.write import write_layers
from thrustmap.north import declination as igrf_declination

ENGINES = ["pyogrio", "fiona"]
UTM33 = "EPSG:32633"

# A small clean dataset: true-north azimuths, UTM zone 33N, east of the central meridian.
STRIKES = [30.0, 210.0, 355.0, 90.0]
DIPS = [45.0, 60.0, 10.0, 80.0]


def _stations():
    return gpd.GeoDataFrame(
        {
            "station_id": ["007", "A2", "A3", "A4", "A5"],
            "feature": ["bedding", "bedding", "cleavage", "fault", "hinge_line"],
            "strike": [*STRIKES, np.nan],
            "dip": [*DIPS, np.nan],
            "trend": [np.nan, np.nan, np.nan, 100.0, 250.0],
            "plunge": [np.nan, np.nan, np.nan, 75.0, 12.0],
            "sense": ["", "", "", "reverse", ""],
            "overturned": [False, True, False, False, False],
            "note": ["first", "", "", "", "last"],
        },
        geometry=gpd.points_from_xy(
            [700_000.0, 705_000.0, 710_000.0, 715_000.0, 720_000.0], [5_090_000.0] * 5
        ),
        crs=UTM33,
    )


def _check_stations(result):
    acc = result.accepted
    assert len(acc) == 5 and result.rejected.empty
    assert acc["source_row"].tolist() == [1, 2, 3, 4, 5]
    assert acc["station"].tolist() == ["007", "A2", "A3", "A4", "A5"]
    assert acc["kind"].tolist() == ["plane"] * 4 + ["line"]
    # Reference library: mplstereonet's right-hand-rule pole; dip direction = pole bearing + 180.
    plunge, bearing = mplstereonet.pole2plunge_bearing(STRIKES, DIPS)
    np.testing.assert_allclose(acc["dip_direction"][:4], (np.asarray(bearing) + 180.0) % 360.0)
    np.testing.assert_allclose(acc["dip"][:4], 90.0 - np.asarray(plunge))
    np.testing.assert_allclose(acc["strike"][:4], STRIKES)
    assert acc["trend"].tolist()[3:] == [100.0, 250.0]
    assert acc["plunge"].tolist()[3:] == [75.0, 12.0]
    assert acc["sense"].tolist()[3] == "reverse"
    assert acc["overturned"].tolist() == [False, True, False, False, False]
    # originals kept under orig_ (CSV cells stay text, exactly as written)
    assert pd.to_numeric(acc["orig_strike"]).tolist()[:4] == STRIKES
    assert acc["note"].fillna("").tolist()[0] == "first"
    assert result.crs == pyproj.CRS(UTM33)
    assert acc.crs == pyproj.CRS(UTM33)
    assert set(ATTITUDE_COLUMNS) <= set(acc.columns)
    assert list(acc.columns[: len(ATTITUDE_COLUMNS)]) == list(ATTITUDE_COLUMNS)


@pytest.mark.parametrize("engine", ENGINES)
@pytest.mark.parametrize("suffix", [".gpkg", ".geojson", ".shp"])
def test_round_trip_vector_formats(tmp_path, engine, suffix):
    path = tmp_path / f"stations{suffix}"
    write_layers(path, {"stations": _stations()}, engine=engine)
    _check_stations(read_attitudes(path, engine=engine))


def test_round_trip_csv_and_xlsx(tmp_path):
    """CSV and XLSX are read by pandas (no vector engine); x/y columns plus a CRS."""
    table = pd.DataFrame(_stations().drop(columns="geometry"))
    table.insert(1, "easting", _stations().geometry.x)
    table.insert(2, "northing", _stations().geometry.y)
    table.to_csv(tmp_path / "sheet.csv", index=False)
    table.to_excel(tmp_path / "sheet.xlsx", index=False, sheet_name="field")
    for name in ("sheet.csv", "sheet.xlsx"):
        result = read_attitudes(tmp_path / name, crs=UTM33)
        _check_stations(result)
        assert result.accepted.geometry.x.tolist() == _stations().geometry.x.tolist()


def test_in_memory_frames_number_rows_in_order():
    gdf = _stations()
    gdf.index = [10, 3, 99, 4, 0]
    _check_stations(read_attitudes(gdf))
    moved = read_attitudes(gdf.set_geometry(gdf.geometry.translate(xoff=1.0)))
    assert moved.accepted.geometry.x.tolist()[0] == 700_001.0


def test_geographic_input_goes_to_local_utm():
    to_geo = pyproj.Transformer.from_crs(UTM33, "EPSG:4326", always_xy=True)
    lon, lat = to_geo.transform(_stations().geometry.x, _stations().geometry.y)
    table = pd.DataFrame(_stations().drop(columns="geometry")).assign(Longitude=lon, Latitude=lat)
    result = read_attitudes(table, crs="EPSG:4326")
    assert result.crs.to_epsg() == 32633
    np.testing.assert_allclose(result.accepted.geometry.x, _stations().geometry.x, atol=1e-3)
    # A named working CRS wins (ETRS89-LAEA Europe, projected, metres).
    laea = read_attitudes(table, crs="EPSG:4326", working_crs="EPSG:3035")
    assert laea.crs.to_epsg() == 3035
    np.testing.assert_allclose(laea.accepted["dip_direction"], result.accepted["dip_direction"])
    # Grid north differs: the grid copies follow each CRS's own convergence.
    assert not np.allclose(laea.accepted["convergence"], result.accepted["convergence"])


def test_convergence_and_grid_columns_against_pyproj():
    result = read_attitudes(_stations())
    acc = result.accepted
    lon, lat = pyproj.Transformer.from_crs(UTM33, "EPSG:4326", always_xy=True).transform(
        acc.geometry.x, acc.geometry.y
    )
    # Reference library: pyproj's factors at each station.
    gamma = pyproj.Proj(UTM33).get_factors(lon, lat).meridian_convergence
    np.testing.assert_allclose(acc["convergence"], gamma, atol=1e-9)
    assert (acc["convergence"] > 1.0).all()  # east of 15 E in the north: grid north east of true
    expected = (acc["dip_direction"] - gamma) % 360.0
    np.testing.assert_allclose(acc["dip_direction_grid"][:4], expected[:4])
    np.testing.assert_allclose(acc["trend_grid"][3:], ((acc["trend"] - gamma) % 360.0)[3:])
    assert (acc["azimuth_ref"] == "true").all() and (acc["azimuth_ref_input"] == "true").all()
    assert (acc["declination"] == 0.0).all()


def test_grid_input_round_trips_to_grid_output():
    result = read_attitudes(_stations(), azimuth_ref="grid")
    acc = result.accepted
    np.testing.assert_allclose(acc["strike_grid"][:4], STRIKES, atol=1e-9)
    np.testing.assert_allclose(acc["trend_grid"][3:], [100.0, 250.0], atol=1e-9)
    np.testing.assert_allclose(
        acc["strike"][:4], (np.asarray(STRIKES) + acc["convergence"][:4]) % 360
    )
    assert (acc["azimuth_ref_input"] == "grid").all()


def test_magnetic_with_dataset_and_row_declinations():
    gdf = _stations().assign(declination=[np.nan, -5.0, np.nan, np.nan, 2.5])
    result = read_attitudes(gdf, azimuth_ref="magnetic", declination=3.0)
    acc = result.accepted
    # common practice: true = magnetic + declination (east positive)
    assert acc["declination"].tolist() == [3.0, -5.0, 3.0, 3.0, 2.5]
    np.testing.assert_allclose(
        acc["strike"][:4], (np.asarray(STRIKES) + acc["declination"][:4]) % 360
    )
    assert acc["trend"].tolist()[4] == 252.5
    assert "orig_declination" in acc.columns


def test_magnetic_with_igrf_from_dates():
    gdf = _stations().assign(date=["2024-05-17", "2024-05-17", "1995-07-01", "", "2026-01-02"])
    result = read_attitudes(gdf, azimuth_ref="magnetic", survey_date="2020-01-01")
    acc = result.accepted
    lon, lat = pyproj.Transformer.from_crs(UTM33, "EPSG:4326", always_xy=True).transform(
        acc.geometry.x, acc.geometry.y
    )
    days = ["2024-05-17", "2024-05-17", "1995-07-01", "2020-01-01", "2026-01-02"]
    expected = igrf_declination(lon, lat, days)
    np.testing.assert_allclose(acc["declination"], expected)
    # Second implementation: pygeomag's WMM2025 at the 2026 station, within 0.25 degrees
    # (IGRF-14 vs WMM2025 model differences, see tests/test_north.py).
    wmm = pytest.importorskip("pygeomag").GeoMag(coefficients_file="wmm/WMM_2025.COF")
    d_wmm = wmm.calculate(glat=lat[4], glon=lon[4], alt=0, time=2026.0).d
    assert acc["declination"].iloc[4] == pytest.approx(d_wmm, abs=0.25)
    np.testing.assert_allclose(acc["strike"][:4], (np.asarray(STRIKES) + expected[:4]) % 360.0)


def _sheet(
    rows, header="stn,x,y,type,attitude,strike,dip,rake,sense,overturned,date,declination,notes"
):
    return header + "\n" + "\n".join(rows) + "\n"


GOOD = "G{i},{x},5090000,bedding,030/45,,,,,,2024-05-01,,"

# (row text, expected reason) for every kind of bad row the ingest rejects.
BAD_ROWS = [
    ("B1,701000,5090000,bedding,030/95,,,,,,2024-05-01,,", "dip_out_of_range"),
    ("B2,702000,5090000,bedding,,030,-5,,,,2024-05-01,,", "dip_out_of_range"),
    ("B3,703000,5090000,bedding,400/45,,,,,,2024-05-01,,", "azimuth_out_of_range"),
    ("B4,704000,5090000,bedding,N95E 45SE,,,,,,2024-05-01,,", "azimuth_out_of_range"),
    ("B5,705000,5090000,bedding,thirty by forty,,,,,,2024-05-01,,", "unparseable"),
    ("B6,706000,5090000,bedding,N30E 45,,,,,,2024-05-01,,", "unparseable"),
    ("B7,707000,5090000,bedding,045/45NE,,,,,,2024-05-01,,", "letter_contradicts_strike"),
    ("B8,708000,5090000,bedding,,,,,,,2024-05-01,,", "missing_attitude"),
    ("B9,709000,5090000,bedding,,030,,,,,2024-05-01,,", "missing_attitude"),
    ("B10,,5090000,bedding,030/45,,,,,,2024-05-01,,", "missing_coordinates"),
    ("B11,abc,5090000,bedding,030/45,,,,,,2024-05-01,,", "missing_coordinates"),
    ("B12,5090000,710000,bedding,030/45,,,,,,2024-05-01,,", "outside_crs_area"),
    ("G1,700100,5090000,bedding,030/45,,,,,,2024-05-01,,", "duplicate_row"),
    ("B13,711000,5090000,dyke,030/45,,,,,,2024-05-01,,", "unknown_feature"),
    ("B14,712000,5090000,bedding,030/45,,,,,,17/05/2024,,", "bad_date"),
    ("B15,713000,5090000,bedding,030/45,,,,,,1850-01-01,,", "bad_date"),
    ("B16,714000,5090000,bedding,030/45,,,,,,2024-05-01,east,", "bad_declination"),
    ("B17,715000,5090000,fault,,030,60,200,,,2024-05-01,,", "rake_out_of_range"),
    ("B18,716000,5090000,fault,,030,60,40,sideways,,2024-05-01,,", "unparseable"),
    ("B19,717000,5090000,bedding,030/45,,,,,maybe,2024-05-01,,", "unparseable"),
    ("B20,718000,5090000,lineation,099/95,,,,,,2024-05-01,,", "plunge_out_of_range"),
    ("B21,719000,5090000,bedding,030/45,,,,,,,,", "bad_date"),
    ("B22,720000,5090000,lineation,,,,40,,,2024-05-01,,", "missing_attitude"),
    ("B23,721000,5090000,fault,,045,60,30SE,,,2024-05-01,,", "letter_contradicts_strike"),
    ("B24,722000,5090000,fault,,045,60,30NN,,,2024-05-01,,", "unparseable"),
    (",,,,,,,,,,,,", "empty_row"),
]


def test_zero_loss_on_every_kind_of_bad_row(tmp_path):
    good = [GOOD.format(i=i, x=700_000 + 100 * i) for i in range(1, 4)]
    bad_lines = [line for line, _ in BAD_ROWS]
    lines = good[:1] + bad_lines[:6] + good[1:] + bad_lines[6:]
    path = tmp_path / "field sheet.csv"
    path.write_text(_sheet(lines))
    result = read_attitudes(path, crs=UTM33, azimuth_ref="magnetic")
    acc, rej = result.accepted, result.rejected
    assert len(acc) + len(rej) == len(lines)  # zero loss
    assert sorted([*acc["source_row"], *rej["source_row"]]) == list(range(1, len(lines) + 1))
    assert acc["station"].tolist() == ["G1", "G2", "G3"]
    expected = pd.Series([reason for _, reason in BAD_ROWS]).value_counts().to_dict()
    got = {k: v for k, v in result.counts.items() if k in REASONS}
    assert got == expected
    assert result.counts["accepted"] == 3 and result.counts["rejected"] == len(BAD_ROWS)
    # each rejected row maps back to its line and names file, row, field and value
    for _, r in rej.iterrows():
        line = lines[r["source_row"] - 1]
        assert line.split(",")[0] == (r["stn"] if isinstance(r["stn"], str) else "")
        assert dict(BAD_ROWS)[line] == r["reason"]
        assert r["message"].startswith(f"file {path}, row {r['source_row']}")
        assert "; accepted: " in r["message"]
        if r["field"]:
            assert f"field {r['field']!r}, value {r['value']!r}" in r["message"]
    assert list(rej.columns[:5]) == list(REJECT_COLUMNS)
    dup = rej[rej["reason"] == "duplicate_row"].iloc[0]
    assert "same as row 1" in dup["message"]
    # the summary has one line per reason, plus the total line
    assert len(result.summary().splitlines()) == 1 + len(expected)
    with pytest.raises(InputError, match=r"rows were rejected[\s\S]*dip_out_of_range: 2"):
        result.raise_if_rejected()
    # the rejects table is a writable layer alongside the accepted points
    out = tmp_path / "out.gpkg"
    write_layers(out, {"attitudes": acc, "attitudes_rejected": rej})
    assert len(gpd.read_file(out, layer="attitudes_rejected")) == len(BAD_ROWS)


def test_vector_rows_without_points():
    gdf = _stations()
    geoms = gdf.geometry.to_numpy().copy()
    geoms[1] = None
    geoms[2] = shapely.LineString([(700_000, 5_090_000), (700_010, 5_090_010)])
    geoms[3] = shapely.Point()
    result = read_attitudes(gdf.set_geometry(geoms))
    assert result.counts == {
        "accepted": 2,
        "rejected": 3,
        "missing_coordinates": 2,
        "not_a_point": 1,
    }
    row = result.rejected.set_index("source_row").loc[3]
    assert row["value"] == "LineString"
    assert row["orig_geometry"].startswith("LINESTRING")


def test_named_xy_columns_win_over_geometry():
    gdf = _stations().assign(e2=710_000.0, n2=5_095_000.0)
    acc = read_attitudes(gdf, columns={"x": "e2", "y": "n2"}).accepted
    assert acc.geometry.x.tolist() == [710_000.0] * 5
    assert acc.geometry.y.tolist() == [5_095_000.0] * 5


def test_flags_on_accepted_rows():
    table = pd.DataFrame(
        {
            "x": [700_000.0 + i for i in range(5)],
            "y": [5_090_000.0] * 5,
            "feature": ["bedding", "bedding", "", "hinge", "bedding"],
            "attitude": ["360/20", "120/0", "045/90", "200/90", "N30E 45SE"],
        }
    )
    acc = read_attitudes(table, crs=UTM33).accepted
    assert acc["flags"].tolist() == [
        "azimuth_360",
        "dip_zero",
        "dip_vertical,feature_default",
        "plunge_vertical",
        "",
    ]
    assert acc["dip_direction"].tolist()[0] == 90.0
    assert read_attitudes(table, crs=UTM33).flag_counts["azimuth_360"] == 1


@pytest.mark.parametrize(
    ("columns", "cells", "expected"),
    [
        # strike in quadrant notation, dip with its letter (common practice)
        ({"Strike": "N30E", "Dip": "45SE"}, {}, (120.0, 45.0)),
        ({"Strike": "030", "Dip": "45NW"}, {}, (300.0, 45.0)),
        ({"Strike": "030", "Dip": "45"}, {}, (120.0, 45.0)),  # right-hand rule
        ({"Dip Dir (deg)": "120", "Dip": "45"}, {}, (120.0, 45.0)),
        ({"Dip Dir (deg)": "S60E", "Dip": "45"}, {}, (120.0, 45.0)),
        ({"attitude": "120/45"}, {"plane_azimuth": "dip_direction"}, (120.0, 45.0)),
        ({"attitude": "120/45"}, {}, (210.0, 45.0)),
        ({"attitude": "S10W 60W"}, {}, (280.0, 60.0)),
        ({"attitude": "N-S 30E"}, {}, (90.0, 30.0)),
        ({"Measured": "030/45"}, {"columns": {"attitude": "Measured"}}, (120.0, 45.0)),
    ],
)
def test_plane_columns_and_notations(columns, cells, expected):
    table = pd.DataFrame(
        {"Easting": [700_000.0], "Northing": [5_090_000.0], **{k: [v] for k, v in columns.items()}}
    )
    acc = read_attitudes(table, crs=UTM33, **cells).accepted
    assert (acc["dip_direction"].iloc[0], acc["dip"].iloc[0]) == pytest.approx(expected)


def test_rakes_against_mplstereonet():
    table = pd.DataFrame(
        {
            "x": [700_000.0, 700_001.0, 700_002.0, 700_003.0],
            "y": [5_090_000.0] * 4,
            "feature": ["fault", "slickenline", "thrust", "fault"],
            "strike": ["030", "030", "030", "030"],
            "dip": ["60", "60", "60", "60"],
            "rake": ["40", "40", "40S", "40N"],
            "sense": ["reverse", "dextral", "thrust", "N"],
        }
    )
    acc = read_attitudes(table, crs=UTM33).accepted
    # Reference library: mplstereonet.rake measures from the right-hand-rule strike.
    lon, lat = mplstereonet.rake(30, 60, 40)
    plunge, bearing = mplstereonet.geographic2plunge_bearing(lon, lat)
    assert acc["trend"].iloc[0] == pytest.approx(bearing[0])
    assert acc["plunge"].iloc[0] == pytest.approx(plunge[0])
    assert acc["dip_direction"].iloc[0] == pytest.approx(120.0)
    # a line row keeps its line only
    assert np.isnan(acc["dip_direction"].iloc[1]) and acc["trend"].iloc[1] == pytest.approx(
        bearing[0]
    )
    # 40 from the south end: the RHR strike (030) points north, so the rake is measured from 210
    lon, lat = mplstereonet.rake(30, 60, 180 - 40)
    plunge, bearing = mplstereonet.geographic2plunge_bearing(lon, lat)
    assert acc["trend"].iloc[2] == pytest.approx(bearing[0])
    assert acc["trend"].iloc[3] == pytest.approx(acc["trend"].iloc[0])
    assert acc["sense"].tolist() == ["reverse", "dextral", "reverse", "normal"]
    assert acc["kind"].tolist() == ["plane", "line", "plane", "plane"]


def test_header_detection_variants():
    got = detect_columns(
        [
            "STN",
            "UTM_E",
            "UTM N",
            "Feature Type",
            "Dip Dir.",
            "Dip (deg)",
            "Trend",
            "Plunge",
            "Pitch",
            "Slip sense",
            "O/T",
            "Survey date",
            "Mag. Dec.",
            "Notes",
        ]
    )
    assert got == {
        "x": "UTM_E",
        "y": "UTM N",
        "station": "STN",
        "feature": "Feature Type",
        "dip_direction": "Dip Dir.",
        "dip": "Dip (deg)",
        "trend": "Trend",
        "plunge": "Plunge",
        "rake": "Pitch",
        "sense": "Slip sense",
        "overturned": "O/T",
        "date": "Survey date",
        "declination": "Mag. Dec.",
    }
    # with both pairs present, a geographic CRS takes lon/lat
    both = ["x", "y", "lon", "lat"]
    assert detect_columns(both, prefer_lonlat=True)["x"] == "lon"
    assert detect_columns(both)["x"] == "x"


def _csv(tmp_path, text, name="sheet.csv"):
    path = tmp_path / name
    path.write_text(text)
    return path


ERROR_CASES = [
    (
        "no crs csv",
        {},
        CRSError,
        r"file .*sheet\.csv has no coordinate reference system .*crs='EPSG:4326'",
    ),
    ("bad crs", {"crs": "EPSG:999999"}, CRSError, "crs='EPSG:999999' is not a CRS pyproj knows"),
    (
        "unknown field",
        {"crs": UTM33, "columns": {"azimuth": "strike"}},
        ParameterError,
        r"unknown field 'azimuth'; fields are x, y, station",
    ),
    (
        "unknown header",
        {"crs": UTM33, "columns": {"dip": "Dip angle"}},
        InputError,
        r"'dip' is mapped to 'Dip angle', which is not a column; columns found: 'easting', 'northing', 'strike', 'dip'",
    ),
    (
        "ref choice",
        {"crs": UTM33, "azimuth_ref": "compass"},
        ParameterError,
        "azimuth_ref='compass' is not valid; choose one of magnetic, true, grid",
    ),
    (
        "plane azimuth",
        {"crs": UTM33, "plane_azimuth": "dipdir"},
        ParameterError,
        "plane_azimuth='dipdir' is not valid; choose one of strike, dip_direction",
    ),
    (
        "default feature",
        {"crs": UTM33, "default_feature": "dyke"},
        ParameterError,
        "default_feature='dyke' is not a known feature; choose one of axial_plane, bedding",
    ),
    (
        "magnetic no decl",
        {"crs": UTM33, "azimuth_ref": "magnetic"},
        ParameterError,
        "azimuth_ref='magnetic' needs a declination: give declination=",
    ),
    (
        "decl on true",
        {"crs": UTM33, "declination": 3.0},
        ParameterError,
        "apply to magnetic azimuths only, but azimuth_ref='true'",
    ),
    (
        "bad decl",
        {"crs": UTM33, "azimuth_ref": "magnetic", "declination": 200.0},
        ParameterError,
        "declination=200.0 is not valid",
    ),
    (
        "bad survey date",
        {"crs": UTM33, "azimuth_ref": "magnetic", "survey_date": "05/06/2024"},
        ParameterError,
        "survey_date='05/06/2024' is not valid; give an ISO date",
    ),
    (
        "grid geographic",
        {"crs": "EPSG:4326", "azimuth_ref": "grid"},
        ParameterError,
        "azimuth_ref='grid' needs a projected source CRS; WGS 84 is not projected",
    ),
    (
        "working geographic",
        {"crs": UTM33, "working_crs": "EPSG:4326"},
        ParameterError,
        "working_crs='EPSG:4326' must be a projected CRS in metres",
    ),
    ("csv layer", {"crs": UTM33, "layer": "sheet1"}, ParameterError, "a text table has no layers"),
]


@pytest.mark.parametrize(
    ("name", "kwargs", "error", "match"), ERROR_CASES, ids=[c[0] for c in ERROR_CASES]
)
def test_clear_errors(tmp_path, name, kwargs, error, match):
    path = _csv(tmp_path, "easting,northing,strike,dip\n700000,5090000,030,45\n")
    with pytest.raises(error, match=match):
        read_attitudes(path, **kwargs)


@pytest.mark.parametrize(
    ("text", "match"),
    [
        (
            "a,b,strike,dip\n1,2,030,45\n",
            r"no coordinates: .*columns=\{'x': \.\.\., 'y': \.\.\.\}; columns found: 'a', 'b', 'strike', 'dip'",
        ),
        (
            "x,easting,y,strike,dip\n1,1,2,030,45\n",
            r"columns 'x' and 'easting' both look like 'x' .*say which with columns=\{'x': \.\.\.\}",
        ),
    ],
)
def test_clear_column_errors(tmp_path, text, match):
    with pytest.raises(InputError, match=match):
        read_attitudes(_csv(tmp_path, text), crs=UTM33)


def test_clear_crs_errors_for_frames_and_layers(tmp_path):
    no_crs = _stations().set_crs(None, allow_override=True)
    with pytest.raises(CRSError, match="input table has no coordinate reference system"):
        read_attitudes(no_crs)
    assert len(read_attitudes(no_crs, crs=UTM33).accepted) == 5
    with pytest.raises(
        CRSError,
        match=re.escape("declares CRS EPSG:32633 (WGS 84 / UTM zone 33N) but crs='EPSG:32634'"),
    ):
        read_attitudes(_stations(), crs="EPSG:32634")
    path = tmp_path / "two.gpkg"
    write_layers(path, {"a": _stations(), "b": _stations()})
    with pytest.raises(
        InputError, match=r"holds 2 layers; name one as FILE:LAYER \(or --layer\): a, b"
    ):
        read_attitudes(path)
    with pytest.raises(InputError, match=r"layer c: no such layer; layers are: a, b"):
        read_attitudes(path, layer="c")
    assert read_attitudes(path, layer="b").source.endswith("(layer b)")
    with pytest.raises(
        ParameterError, match="engine='gdal' is not valid; choose one of pyogrio, fiona"
    ):
        read_attitudes(path, layer="a", engine="gdal")
    with pytest.raises(SourceNotFoundError, match="not found"):
        read_attitudes(tmp_path / "missing.gpkg")


def test_csv_dialects(tmp_path):
    text = (
        "\ufeffStation;Easting;Northing;Strike;Dip\n"
        "007;700000;5090000;030;45\n;;;;\n008;700010;5090000;040;50\n\n"
    )
    result = read_attitudes(_csv(tmp_path, text), crs=UTM33)
    assert result.accepted["station"].tolist() == ["007", "008"]
    assert "Station" in result.accepted.columns  # byte-order mark dropped
    assert result.accepted["source_row"].tolist() == [1, 3]  # the row of empty cells is row 2
    assert result.counts["empty_row"] == 1
    latin = tmp_path / "latin.csv"
    latin.write_bytes(
        "stn,x,y,strike,dip,note\nA,700000,5090000,030,45,d\xe9p\xf4t\n".encode("latin-1")
    )
    assert read_attitudes(latin, crs=UTM33).accepted["note"].tolist() == ["dépôt"]


def test_top_level_export():
    assert thrustmap.read_attitudes is read_attitudes


def _quadrant(az):
    """Quadrant bearing text of an azimuth (common practice: N..E, S..E, S..W, N..W)."""
    az = az % 360.0
    if az <= 90.0:
        return f"N{az:g}E"
    if az < 180.0:
        return f"S{180.0 - az:g}E"
    if az <= 270.0:
        return f"S{az - 180.0:g}W"
    return f"N{360.0 - az:g}W"


_LETTERS = ["N", "NE", "E", "SE", "S", "SW", "W", "NW"]


@settings(max_examples=20, deadline=None)
@given(
    st.lists(
        st.tuples(
            st.integers(0, 3599).map(lambda v: v / 10.0),
            st.integers(0, 900).map(lambda v: v / 10.0),
            st.sampled_from(
                ["rhr", "dipdir", "letter", "quadrant", "columns", "line", "line_quadrant"]
            ),
        ),
        min_size=1,
        max_size=30,
    )
)
def test_notations_round_trip(items):
    """Any plane or line written in any accepted notation reads back as written."""
    texts, features, expected, strikes, dips = [], [], [], [], []
    for dd, dip, style in items:
        strike = (dd - 90.0) % 360.0
        letter = _LETTERS[int(((dd + 22.5) % 360.0) // 45.0)]
        if style == "rhr":
            texts.append(f"{strike:g}/{dip:g}")
        elif style == "dipdir":
            texts.append(f"{dd:g}/{dip:g}")  # read with plane_azimuth="dip_direction" below
        elif style == "letter":
            texts.append(f"{(strike + 180.0) % 360.0:g}/{dip:g}{letter}")
        elif style == "quadrant":
            texts.append(f"{_quadrant(strike)} {dip:g}{letter}")
        elif style == "columns":
            texts.append("")
        elif style == "line":
            texts.append(f"{dd:g}/{dip:g}")
        else:
            texts.append(f"{_quadrant(dd)} {dip:g}")
        strikes.append(strike if style == "columns" else np.nan)
        dips.append(dip if style == "columns" else np.nan)
        features.append("lineation" if style.startswith("line") else "bedding")
        expected.append((style, dd, dip))
    n = len(texts)
    table = pd.DataFrame(
        {
            "x": 700_000.0 + np.arange(n),
            "y": np.full(n, 5_090_000.0),
            "feature": features,
            "attitude": texts,
            "strike": strikes,
            "dip": dips,
        }
    )
    by_strike = read_attitudes(table, crs=UTM33)
    by_dipdir = read_attitudes(table, crs=UTM33, plane_azimuth="dip_direction")
    assert by_strike.counts["accepted"] == n
    for i, (style, dd, dip) in enumerate(expected):
        acc = (by_dipdir if style == "dipdir" else by_strike).accepted.set_index("source_row")
        row = acc.loc[i + 1]
        got_az, got_angle = (
            (row["trend"], row["plunge"])
            if style.startswith("line")
            else (row["dip_direction"], row["dip"])
        )
        assert got_angle == pytest.approx(dip, abs=1e-9)
        assert (got_az - dd + 180.0) % 360.0 - 180.0 == pytest.approx(0.0, abs=1e-9)


def test_contract_field_sheet_layout(tmp_path):
    """The synthetic field sheet's columns (stn, lon, lat, type, attitude, date, notes) are
    found without a mapping; magnetic azimuths take the IGRF declination of each row's date."""
    text = (
        "stn,lon,lat,type,attitude,date,notes\n"
        "S1,18.1,45.9,bedding,N30E 45SE,2024-05-17,<script>alert(1)</script>\n"
        "S2,18.2,45.9,hinge line,N80E 12,2024-05-18,\n"
    )
    result = read_attitudes(_csv(tmp_path, text), crs="EPSG:4326", azimuth_ref="magnetic")
    acc = result.accepted
    assert result.crs.to_epsg() == 32634  # estimate_utm_crs: 18.1-18.2 E lies in zone 34
    expected = igrf_declination([18.1, 18.2], [45.9, 45.9], ["2024-05-17", "2024-05-18"])
    np.testing.assert_allclose(acc["declination"], expected)
    np.testing.assert_allclose(acc["dip_direction"].iloc[0], 120.0 + expected[0])
    np.testing.assert_allclose(acc["trend"].iloc[1], 80.0 + expected[1])
    assert acc["notes"].tolist()[0] == "<script>alert(1)</script>"  # kept verbatim, as data
    assert acc["feature"].tolist() == ["bedding", "hinge_line"]


def test_ingest_tool_on_the_command_line(tmp_path, monkeypatch, capsys):
    """The tool registered by this project's entry points, run by the command line on its
    example: counts per reason are printed and both layers written."""
    import tomllib
    from importlib import metadata
    from pathlib import Path

    from thrustmap.cli import main
    from thrustmap.tools import registry, runner

    pyproject = Path(__file__).resolve().parents[1] / "pyproject.toml"
    entries = tomllib.loads(pyproject.read_text())["project"]["entry-points"]["thrustmap.tools"]
    tools, broken = registry._scan(
        metadata.EntryPoint(k, v, registry.ENTRY_POINT_GROUP) for k, v in entries.items()
    )
    assert broken == [] and "ingest-attitudes" in tools
    monkeypatch.setattr(registry, "_cache", (tools, []))
    sources, params = runner.example_invocation(tools["ingest-attitudes"], tmp_path / "in")
    out = tmp_path / "out" / "result.gpkg"
    argv = ["ingest-attitudes", sources["table"], "--out", str(out)]
    for key, value in params.items():
        argv += ["--" + key.replace("_", "-"), str(value)]
    assert main(argv) == 0
    assert "rejected dip_out_of_range: 1" in capsys.readouterr().err
    acc = gpd.read_file(out, layer="attitudes")
    rej = gpd.read_file(out, layer="attitudes_rejected")
    assert acc.crs.to_epsg() == 32633
    assert acc["source_row"].tolist() == [1, 2, 3] and rej["source_row"].tolist() == [4]
    assert (acc["azimuth_ref_input"] == "magnetic").all()
    assert (acc["declination"] > 0).all()  # IGRF: east declination in this area in 2024
