"""Topology of hand-made networks: each kind of trace end, crossings and snapping.

Terms (branch line/point, truncation, floor and roof thrust) as in Boyer and
Elliott (1982), Thrust systems, AAPG Bulletin 66, 1196-1230 (from memory);
the classification thresholds are thrustmap's own choice, documented in
thrustmap.thrusts.topology.
"""

import numpy as np
import pytest

from tests.thrust_networks import X0, Y0, analyze_east, line, traces
from thrustmap.errors import ParameterError
from thrustmap.thrusts.topology import build_topology


def _nodes(result):
    n = result.nodes
    return {(r.thrust_id, r.end, r.kind, r.other_thrust) for r in n.itertuples()}


def _network():
    """Main thrust M (west-dipping), a splay S leaving it at 10 degrees with the same
    hanging-wall side, a thrust K abutting M at right angles from the hinterland, an
    isolated thrust F with two free tips, all inside a larger study area."""
    rows = [
        ("M", line((0, 0), (0, 10000)), "left", None),
        # splay: starts 4 m off M (snapped), runs NNE at 10 degrees from M
        ("S", line((4, 2000), (4 + 3000 * np.tan(np.radians(10)), 5000)), "left", None),
        # K comes from the west and stops 6 m short of M (undershoot, snapped)
        ("K", line((-3000, 7000), (-6, 7000)), "left", None),
        ("F", line((3000, 3000), (3000, 6000)), "left", None),
    ]
    return traces(rows)


def test_each_end_kind():
    result = analyze_east(_network(), (-5000, -2000, 5000, 12000), snap_tolerance=10.0)
    nodes = _nodes(result)
    assert ("S", "start", "branch", "M") in nodes
    assert ("K", "end", "truncation", "M") in nodes
    assert ("F", "start", "free_tip", "") in nodes and ("F", "end", "free_tip", "") in nodes
    assert ("M", "start", "free_tip", "") in nodes
    n = result.nodes.set_index(["thrust_id", "end"])
    # K abuts M at right angles and S leaves it at 10 degrees (construction)
    assert n.loc[("K", "end"), "angle"] == pytest.approx(90.0)
    assert n.loc[("S", "start"), "angle"] == pytest.approx(10.0, abs=0.01)
    assert n.loc[("K", "end"), "gap_m"] == pytest.approx(6.0)  # undershoot closed by snapping
    assert n.loc[("S", "start"), "gap_m"] == pytest.approx(4.0)
    # snapped: the traces now touch M exactly
    tr = result.traces.set_index("thrust_id").geometry
    assert tr["K"].distance(tr["M"]) == pytest.approx(0.0, abs=1e-6)
    assert tr["S"].distance(tr["M"]) == pytest.approx(0.0, abs=1e-6)
    # only the truncation makes an age relation: the truncating thrust M is younger than K
    cut = result.relations[result.relations["evidence"] != "in_sequence"]
    assert cut[["younger", "older", "evidence"]].values.tolist() == [["M", "K", "truncation"]]
    assert n.loc[("K", "end"), "younger"] == "M" and n.loc[("S", "start"), "younger"] == ""


def test_beyond_tolerance_stays_a_free_tip():
    result = analyze_east(_network(), (-5000, -2000, 5000, 12000), snap_tolerance=3.0)
    nodes = _nodes(result)
    assert ("K", "end", "free_tip", "") in nodes and ("S", "start", "free_tip", "") in nodes


def test_oblique_junction_is_a_truncation():
    gdf = _network()
    s = line((4, 2000), (4 + 3000 * np.tan(np.radians(20)), 5000))  # 20 degrees: above the default
    gdf.loc[gdf["thrust_id"] == "S", "geometry"] = s
    result = analyze_east(gdf, (-5000, -2000, 5000, 12000))
    assert ("S", "start", "truncation", "M") in _nodes(result)
    assert ("S", "start", "branch", "M") in _nodes(
        analyze_east(gdf, (-5000, -2000, 5000, 12000), branch_angle=25.0)
    )


def test_branch_needs_same_hanging_wall_side():
    gdf = _network()
    gdf.loc[gdf["thrust_id"] == "S", "hw_side"] = "right"  # a backthrust splay
    result = analyze_east(gdf, (-5000, -2000, 5000, 12000))
    assert ("S", "start", "truncation", "M") in _nodes(result)


def test_crossing_and_the_thrust_cutting_more_is_younger():
    rows = [
        ("T1", line((0, 0), (0, 10000)), "left", None),
        ("T2", line((1000, 0), (1000, 10000)), "left", None),
        ("X", line((-1000, 2000), (2000, 8000)), "left", None),  # cuts obliquely through both
    ]
    result = analyze_east(traces(rows), (-2000, 0, 3000, 10000))
    cross = result.nodes[result.nodes["kind"] == "crossing"]
    assert sorted(map(tuple, cross[["thrust_id", "other_thrust"]].values)) == [
        ("T1", "X"),
        ("T2", "X"),
    ]
    # crossing points from the construction: X runs y = 2000 + 2 (x + 1000)
    pts = sorted((round(p.x - X0, 6), round(p.y - Y0, 6)) for p in cross.geometry)
    assert pts == [(0.0, 4000.0), (1000.0, 6000.0)]
    assert set(cross["younger"]) == {"X"}
    rel = result.relations[result.relations["evidence"] == "crossing"]
    assert sorted(rel[["younger", "older"]].values.tolist()) == [["X", "T1"], ["X", "T2"]]


def test_equal_crossing_is_left_undetermined():
    rows = [
        ("A", line((0, 0), (0, 10000)), "left", None),
        ("B", line((-1000, 2000), (1000, 8000)), "left", None),
    ]
    result = analyze_east(traces(rows), (-2000, 0, 2000, 10000))
    cross = result.nodes[result.nodes["kind"] == "crossing"]
    assert len(cross) == 1 and cross["younger"].iloc[0] == ""
    assert "crossing" not in set(result.relations["evidence"])


def test_overshoot_is_trimmed_not_a_crossing():
    rows = [
        ("M", line((0, 0), (0, 10000)), "left", None),
        ("K", line((-3000, 5000), (5, 5000)), "left", None),  # overshoots M by 5 m
    ]
    result = analyze_east(traces(rows), (-4000, 0, 1000, 10000))
    kinds = dict(
        zip(
            zip(result.nodes["thrust_id"], result.nodes["end"], strict=True),
            result.nodes["kind"],
            strict=True,
        )
    )
    assert kinds[("K", "end")] == "truncation"
    assert "crossing" not in kinds.values()


def test_end_meeting_an_end_is_a_branch():
    rows = [
        ("A", line((0, 0), (0, 5000)), "left", None),
        ("B", line((3, 5002), (500, 10000)), "left", None),
    ]
    topo = build_topology(np.asarray(traces(rows).geometry), [1, 1], snap_tolerance=10.0)
    ends = topo.nodes.set_index(["thrust", "end"])
    assert ends.loc[(0, "end"), "kind"] == "branch" and ends.loc[(1, "start"), "kind"] == "branch"
    # both ends moved to their midpoint
    assert ends.loc[(0, "end"), ["x", "y"]].tolist() == pytest.approx([X0 + 1.5, Y0 + 5001.0])
    assert ends.loc[(1, "start"), ["x", "y"]].tolist() == pytest.approx([X0 + 1.5, Y0 + 5001.0])


def test_boundary_ends_are_snapped_onto_the_outline():
    rows = [("A", line((0, 5), (0, 9995)), "left", None)]  # 5 m short of both edges
    result = analyze_east(traces(rows), (-1000, 0, 1000, 10000))
    assert set(result.nodes["kind"]) == {"boundary"}
    assert len(result.sheets) == 2  # the trace now splits the area


@pytest.mark.parametrize(
    "kw,msg",
    [
        ({"snap_tolerance": -1.0}, "snap_tolerance"),
        ({"branch_angle": 120.0}, "branch_angle = 120.0 degrees is outside 0-90"),
    ],
)
def test_bad_parameters(kw, msg):
    args = {"snap_tolerance": 1.0, **kw}
    with pytest.raises(ParameterError, match=msg):
        build_topology([line((0, 0), (0, 10))], [1], **args)
