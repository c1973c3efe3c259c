"""Validation of thrust inputs: every row accepted or rejected with a reason, CRS handling."""

import numpy as np
import pandas as pd
import pyproj
import pytest
from shapely import LineString, MultiLineString, Point

from tests.thrust_networks import CRS, X0, Y0, line, parallel_set, traces
from thrustmap.errors import CRSError, DegenerateDataError, InputError, ThrustmapError
from thrustmap.thrusts import analyze_thrusts
from thrustmap.thrusts.validate import prepare_constraints, prepare_traces


def _bad_rows():
    ok = line((0, 0), (0, 1000))
    return [
        ("empty geometry", ("A", LineString(), "left", None), "missing_geometry"),
        ("point", ("B", Point(X0, Y0), "left", None), "not_a_line"),
        ("zero length", ("C", line((5, 5), (5, 5)), "left", None), "zero_length"),
        (
            "bow tie",
            ("D", line((0, 0), (100, 100), (100, 0), (0, 100)), "left", None),
            "self_intersection",
        ),
        ("missing id", ("", ok, "left", None), "missing_id"),
        ("bad side", ("F", ok, "up", None), "bad_hw_side"),
        ("bad azimuth", ("G", ok, None, 400.0), "bad_hw_dip_direction"),
    ]


@pytest.mark.parametrize("name,row,reason", _bad_rows(), ids=[r[0] for r in _bad_rows()])
def test_each_bad_row_is_rejected_with_its_reason(name, row, reason):
    gdf = traces([("OK", line((500, 0), (500, 1000)), "left", None), row])
    accepted, rejected, _ = prepare_traces(gdf)
    assert accepted["thrust_id"].tolist() == ["OK"]
    assert rejected["reason"].tolist() == [reason]
    assert rejected["source_row"].tolist() == [2]
    assert rejected["layer"].tolist() == ["thrust_traces"]
    assert rejected["orig_thrust_id"].tolist() == [
        row[0]
    ]  # original column kept, prefixed on clash


def test_nothing_is_lost():
    rows = [r[1] for r in _bad_rows()] + [
        ("T1", line((0, 0), (0, 1000)), "left", None),
        ("T1", line((900, 0), (900, 1000)), "left", None),  # duplicate id
    ]
    gdf = traces(rows)
    gdf.loc[len(gdf) - 1, "dip"] = 95.0  # also a bad dip, but the duplicate id is reported first
    accepted, rejected, _ = prepare_traces(gdf)
    assert len(accepted) + len(rejected) == len(gdf)
    assert sorted(accepted["source_row"].tolist() + rejected["source_row"].tolist()) == list(
        range(1, len(gdf) + 1)
    )
    dup = rejected[rejected["reason"] == "duplicate_id"]
    assert dup["source_row"].tolist() == [9] and "row 8" in dup["message"].iloc[0]


def test_bad_dip_rejected():
    gdf = parallel_set(2)
    gdf["dip"] = [30.0, -5.0]
    _, rejected, _ = prepare_traces(gdf)
    assert rejected[["reason", "field", "value"]].values.tolist() == [["bad_dip", "dip", "-5.0"]]


def test_missing_crs_is_an_error():
    gdf = parallel_set(2).set_crs(None, allow_override=True)
    with pytest.raises(CRSError, match="layer thrust_traces.*no coordinate reference system"):
        analyze_thrusts(gdf)


def test_missing_id_column_is_an_error_listing_columns():
    gdf = parallel_set(2).drop(columns="thrust_id")
    with pytest.raises(InputError, match="no 'thrust_id' column; columns are: name"):
        prepare_traces(gdf)


def test_geographic_input_goes_to_local_utm():
    gdf = parallel_set(2).to_crs(4326)
    accepted, _, crs = prepare_traces(gdf)
    assert crs.to_epsg() == 32633  # UTM zone of 15-16 E, northern hemisphere: common practice
    assert accepted.crs == crs
    assert np.allclose(accepted.geometry.length, 10000.0, rtol=1e-3)


def test_projected_non_metre_crs_goes_to_utm():
    feet = "EPSG:2263"  # a projected CRS in US survey feet
    assert pyproj.CRS(feet).axis_info[0].unit_name.startswith("US survey foot")
    accepted, _, crs = prepare_traces(parallel_set(2).to_crs(feet))
    assert crs.to_epsg() == 32633
    assert np.allclose(accepted.geometry.length, 10000.0, rtol=1e-6)


def test_metric_projected_crs_is_kept():
    _, _, crs = prepare_traces(parallel_set(2))
    assert crs == pyproj.CRS(CRS)


def test_multipart_trace_merged_and_oriented_like_first_part():
    a = [(X0, Y0), (X0, Y0 + 1000)]
    b = [(X0, Y0 + 3000), (X0, Y0 + 2000)]  # digitised the other way
    c = [(X0, Y0 + 1000), (X0, Y0 + 1500)]  # continues the first part
    gdf = traces([("M", MultiLineString([a, b, c]), "left", None)])
    accepted, rejected, _ = prepare_traces(gdf)
    geom = accepted.geometry.iloc[0]
    assert rejected.empty and geom.geom_type == "MultiLineString" and len(geom.geoms) == 2
    for part in geom.geoms:
        assert part.coords[-1][1] > part.coords[0][1]  # both now run south to north


def test_constraints_rejects():
    table = pd.DataFrame(
        {
            "younger": ["T2", "T2", None, "T3", "T9", "T1"],
            "older": ["T1", "T1", "T1", "T3", "T1", "T2"],
            "note": ["seen in outcrop", "again", "", "", "", "contradiction kept"],
        }
    )
    ok, bad = prepare_constraints(table, ["T1", "T2", "T3"], {"T9": "zero_length"})
    assert ok["source_row"].tolist() == [1, 6]
    assert bad[["source_row", "reason"]].values.tolist() == [
        [2, "duplicate_constraint"],
        [3, "missing_id"],
        [4, "self_constraint"],
        [5, "unknown_thrust"],
    ]
    assert "zero_length" in bad["message"].iloc[3]
    assert len(ok) + len(bad) == len(table)


def test_all_rejected_is_a_clear_error():
    gdf = traces([("A", line((0, 0), (0, 0)), "left", None)])
    with pytest.raises(DegenerateDataError, match="no valid thrust trace: zero_length: 1"):
        analyze_thrusts(gdf)


def test_errors_share_the_root():
    assert issubclass(CRSError, ThrustmapError) and issubclass(CRSError, ValueError)


def test_messages_name_the_file_the_reader_recorded():
    gdf = parallel_set(2).set_crs(None, allow_override=True)
    gdf.attrs.update(source="field/thrusts.gpkg", layer="faults_2024")
    with pytest.raises(
        CRSError, match="file field/thrusts.gpkg, layer faults_2024: .*no coordinate"
    ):
        prepare_traces(gdf)
