"""Hanging-wall side: given as left/right or as an azimuth, or inferred and marked so."""

import numpy as np
import pandas as pd
import pyproj
import pytest

from tests.thrust_networks import CRS, X0, Y0, area, attitudes, box, line, parallel_set, traces
from thrustmap.errors import DegenerateDataError
from thrustmap.thrusts import analyze_thrusts


def _convergence(dx, dy):
    """Meridian convergence from pyproj (reference library) at an offset from the origin."""
    lon, lat = pyproj.Transformer.from_crs(CRS, 4326, always_xy=True).transform(X0 + dx, Y0 + dy)
    return float(pyproj.Proj(CRS).get_factors(lon, lat).meridian_convergence)


def _network(form):
    """Four west-dipping thrusts, two digitised each way, plus an oblique one truncated against T3."""
    geoms = [
        line((0, 0), (0, 8000)),
        line((1000, 8000), (1000, 0)),
        line((2000, 0), (2000, 8000)),
        line((3000, 8000), (3000, 4000), (2000, 3000)),
    ]
    left_of_travel = [True, False, True, False]  # west is left when travelling north
    rows = []
    for k, (g, west_is_left) in enumerate(zip(geoms, left_of_travel, strict=True)):
        if form == "side":
            rows.append((f"T{k + 1}", g, "left" if west_is_left else "right", None))
        else:
            # true-north azimuth pointing west in grid terms: grid 265 + convergence (pyproj)
            c = g.centroid
            rows.append((f"T{k + 1}", g, None, 265.0 + _convergence(c.x - X0, c.y - Y0)))
    return traces(rows)


def test_left_right_and_azimuth_give_the_same_result():
    kw = dict(study_area=area(box(-500, 0, 3500, 8000)), scanline_interval=400.0)
    a = analyze_thrusts(_network("side"), **kw)
    b = analyze_thrusts(_network("azimuth"), **kw)
    cols = ["thrust_id", "hw_side", "hw_side_source", "rank", "sequence"]
    pd.testing.assert_frame_equal(a.traces[cols], b.traces[cols])
    assert a.traces["hw_side"].tolist() == ["left", "right", "left", "right"]
    assert b.traces["hw_side_basis"].eq("hw_dip_direction").all()
    pd.testing.assert_frame_equal(a.spacing, b.spacing)
    pd.testing.assert_frame_equal(
        a.sheets.drop(columns="geometry"), b.sheets.drop(columns="geometry")
    )
    pd.testing.assert_frame_equal(a.relations, b.relations)
    assert a.transport.azimuth_grid == pytest.approx(b.transport.azimuth_grid)
    # the resolved hanging-wall dip direction points west (grid) on every trace: common practice
    assert np.allclose(a.traces["hw_dip_direction_grid"].iloc[:3], 270.0)
    # a given azimuth is kept, and its grid copy is true - convergence (pyproj get_factors)
    for row in b.traces.itertuples():
        c = row.geometry.centroid
        gamma = _convergence(c.x - X0, c.y - Y0)
        assert row.hw_dip_direction == pytest.approx(265.0 + gamma, abs=0.05)
        assert row.hw_dip_direction_grid == pytest.approx(row.hw_dip_direction - gamma, abs=1e-6)


def test_conflicting_forms_are_rejected():
    gdf = parallel_set(3)
    gdf.loc[1, "hw_dip_direction"] = 90.0  # east, but hw_side says left (west)
    result = analyze_thrusts(gdf, scanline_interval=1000.0)
    assert result.rejected[["thrust_id", "reason", "field"]].values.tolist() == [
        ["T2", "hw_side_conflict", "hw_side"]
    ]
    assert result.traces["thrust_id"].tolist() == ["T1", "T3"]


def test_azimuth_along_the_trace_decides_nothing_and_is_rejected():
    gdf = parallel_set(3)
    gdf.loc[1, "hw_side"] = None
    gdf.loc[1, "hw_dip_direction"] = 3.0  # nearly along a north-south trace
    result = analyze_thrusts(gdf, scanline_interval=1000.0)
    assert result.rejected["reason"].tolist() == ["hw_dip_direction_along_trace"]


def test_missing_side_inferred_from_nearby_fault_attitudes():
    gdf = parallel_set(3)
    gdf.loc[1, "hw_side"] = None  # T2: no side given
    gdf.loc[2, "hw_side"] = None  # T3: no side given, and no attitude near it
    att = attitudes(
        [
            (1100, 5000, "thrust", "plane", 265.0, 35.0, np.nan, np.nan, ""),  # near T2, dips west
            (900, 2000, "fault", "plane", 280.0, 40.0, np.nan, np.nan, ""),
            (
                1050,
                2500,
                "bedding",
                "plane",
                90.0,
                20.0,
                np.nan,
                np.nan,
                "",
            ),  # bedding does not vote
        ]
    )
    result = analyze_thrusts(gdf, attitudes=att, attitude_radius=300.0, scanline_interval=1000.0)
    tr = result.traces.set_index("thrust_id")
    assert tr.loc["T2", ["hw_side", "hw_side_source", "hw_side_basis"]].tolist() == [
        "left",
        "inferred",
        "attitudes",
    ]
    # T3 falls back to the dominant vergence (transport east from T1 and T2): hanging wall west
    assert tr.loc["T3", ["hw_side", "hw_side_source", "hw_side_basis"]].tolist() == [
        "left",
        "inferred",
        "vergence",
    ]
    assert tr.loc["T1", "hw_side_source"] == "given"


def test_attitudes_override_vergence_for_a_backthrust():
    gdf = parallel_set(3)
    gdf.loc[2, "hw_side"] = None
    att = attitudes([(2050, 5000, "thrust", "plane", 95.0, 35.0, np.nan, np.nan, "")])  # dips east
    result = analyze_thrusts(gdf, attitudes=att, attitude_radius=200.0, scanline_interval=1000.0)
    t3 = result.traces.set_index("thrust_id").loc["T3"]
    assert (t3["hw_side"], t3["hw_side_basis"]) == ("right", "attitudes")


def test_vergence_from_a_given_transport_direction():
    gdf = parallel_set(2)
    gdf["hw_side"] = None
    result = analyze_thrusts(
        gdf, transport_azimuth=270.0, azimuth_ref="grid", scanline_interval=1000.0
    )
    assert result.traces["hw_side"].tolist() == [
        "right",
        "right",
    ]  # hanging wall east, opposite transport
    assert result.traces["hw_side_basis"].eq("vergence").all()


def test_no_side_anywhere_is_a_clear_error():
    gdf = parallel_set(2)
    gdf["hw_side"] = None
    with pytest.raises(DegenerateDataError, match="no hanging-wall side"):
        analyze_thrusts(gdf)
