"""Thrust sheets: polygons between thrusts inside the study area, floor and roof thrusts.

A sheet lies in the hanging wall of its floor thrust and the footwall of its
roof thrust (Boyer and Elliott 1982, Thrust systems, AAPG Bulletin 66,
1196-1230; from memory). Areas and widths below follow from the construction.
"""

import pytest

from tests.thrust_networks import analyze_east, box, line, parallel_set, traces
from thrustmap.thrusts import analyze_thrusts


def test_parallel_sheets_floor_roof_area_width():
    result = analyze_east(
        parallel_set(3, reverse=(1,)), (-1000, 0, 3000, 10000), scanline_interval=1000.0
    )
    s = result.sheets
    assert s["sheet_id"].tolist() == ["S1", "S2", "S3", "S4"]  # hinterland (west) first
    # west-dipping thrusts: the sheet east of a thrust is its footwall, the sheet west its hanging wall
    assert s[["floor_thrust", "roof_thrust"]].values.tolist() == [
        ["T1", ""],
        ["T2", "T1"],
        ["T3", "T2"],
        ["", "T3"],
    ]
    assert s["area_m2"].tolist() == pytest.approx([1e7, 1e7, 1e7, 1e7])
    assert s["mean_width_m"].tolist() == pytest.approx([1000.0] * 4)
    assert s.geometry.union_all().area == pytest.approx(4e7)


def test_trace_crossing_the_study_area_boundary_twice():
    # enters through the south edge, bends, leaves through the east edge
    rows = [("A", line((500, -1000), (500, 4000), (3000, 4000)), "left", None)]
    result = analyze_east(traces(rows), (0, 0, 2000, 6000))
    assert set(result.nodes["kind"]) == {"boundary"}  # both ends lie outside the area
    s = result.sheets.set_index("roof_thrust")
    # hanging wall on the left of travel: west of the north leg, then north of the east leg
    assert s.loc["", "floor_thrust"] == "A"
    assert s.loc["", "area_m2"] == pytest.approx(
        500 * 4000 + 2000 * 2000
    )  # the L-shaped outer sheet
    assert s.loc["A", "floor_thrust"] == ""
    assert s.loc["A", "area_m2"] == pytest.approx(1500 * 4000)
    assert result.sheets.geometry.union_all().area == pytest.approx(2000 * 6000)
    # the trace keeps its full length; spacing scanlines stay inside the area
    assert result.traces["length_m"].iloc[0] == pytest.approx(5000 + 2500)
    assert result.scanlines.geometry.within(box(0, 0, 2000, 6000).buffer(1e-6)).all()


def test_default_study_area_is_the_bounding_box():
    result = analyze_thrusts(parallel_set(3), scanline_interval=1000.0)
    assert result.sheets.geometry.union_all().area == pytest.approx(2000 * 10000)
    assert len(result.sheets) == 2
