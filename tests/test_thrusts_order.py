"""Formation order: cross-cutting, constraints, the in-sequence default and contradictions.

Rules checked: a thrust that cuts another is younger (principle of
cross-cutting relationships: common practice); in an in-sequence (piggy-back)
system thrusts get younger toward the foreland, and a thrust that formed after
one lying foreland of it is out of sequence (Butler 1982, The terminology of
structures in thrust belts, J. Struct. Geol. 4, 239-245; Morley 1988,
Out-of-sequence thrusts, Tectonics 7, 539-561; both from memory). Expected
orders follow from these rules applied to each construction by hand.
"""

import numpy as np
import pandas as pd
import pytest

from tests.thrust_networks import analyze_east, area, box, line, parallel_set, traces
from thrustmap.thrusts import analyze_thrusts
from thrustmap.thrusts.order import formation_order


def _oos_network():
    """T1..T4 west-dipping, 1 km apart, transport east; X between T2 and T3,
    and T3 bends at its north end onto X (T3 truncated by X)."""
    rows = [
        ("T1", line((0, 0), (0, 10000)), "left", None),
        ("T2", line((1000, 0), (1000, 10000)), "left", None),
        ("T3", line((2000, 0), (2000, 6000), (1500, 6200)), "left", None),
        ("X", line((1500, 0), (1500, 10000)), "left", None),
        ("T4", line((3000, 0), (3000, 10000)), "left", None),
    ]
    return traces(rows)


def test_in_sequence_set_ranks_toward_the_foreland():
    result = analyze_east(parallel_set(4, reverse=(2,)), (-500, 0, 3500, 10000))
    assert result.order == ["T1", "T2", "T3", "T4"]
    assert result.traces["sequence"].eq("in").all()
    assert set(result.relations["evidence"]) == {"in_sequence"}
    assert result.relations["weight"].eq(1).all() and result.relations["status"].eq("used").all()
    assert result.contradictions.empty


def test_reversed_vergence_reverses_the_order():
    result = analyze_thrusts(
        parallel_set(4, side="right"),
        study_area=area(box(-500, 0, 3500, 10000)),
        scanline_interval=500.0,
    )
    assert result.transport.azimuth_grid == pytest.approx(270.0)
    assert result.order == ["T4", "T3", "T2", "T1"]  # foreland is now to the west


def test_out_of_sequence_thrust_flagged_from_truncation():
    result = analyze_east(_oos_network(), (-500, 0, 3500, 10000))
    assert result.order == ["T1", "T2", "T3", "X", "T4"]
    tr = result.traces.set_index("thrust_id")
    assert tr["sequence"].to_dict() == {"T1": "in", "T2": "in", "T3": "in", "X": "out", "T4": "in"}
    assert tr.loc["X", "sequence_detail"] == "younger than T3, which lies foreland of it"
    assert "out of sequence: X" in result.summary().splitlines()
    rel = result.relations
    cut = rel[rel["evidence"] == "truncation"]
    assert cut[["younger", "older"]].values.tolist() == [["X", "T3"]]
    # the in-sequence default between X and T3 is not used: the truncation speaks
    ins = rel[rel["evidence"] == "in_sequence"]
    assert not ((ins["younger"] == "T3") & (ins["older"] == "X")).any()


def test_out_of_sequence_thrust_flagged_from_a_constraint():
    x = traces([("X", line((1500, 0), (1500, 10000)), "left", None)])
    gdf = pd.concat([parallel_set(4), x], ignore_index=True)  # keeps the CRS on geopandas 1.0
    constraints = pd.DataFrame({"younger": ["X"], "older": ["T4"], "note": ["growth strata"]})
    result = analyze_east(gdf, (-500, 0, 3500, 10000), age_constraints=constraints)
    assert result.order == ["T1", "T2", "T3", "T4", "X"]
    tr = result.traces.set_index("thrust_id")
    assert tr.loc["X", "sequence"] == "out" and (tr.drop("X")["sequence"] == "in").all()
    c = result.relations[result.relations["evidence"] == "constraint"]
    assert c[["younger", "older", "weight", "detail"]].values.tolist() == [
        ["X", "T4", 3, "age constraint, row 1: growth strata"]
    ]
    # spacing: X halves the T2-T3 sheet; the in-sequence stack keeps 1 km (construction)
    sp = result.spacing.set_index("pair")
    assert sp.loc["X-T3", "mean_m"] == pytest.approx(500.0)
    assert sp.loc["all", "mean_m"] == pytest.approx(750.0)
    assert sp.loc["in_sequence", ["mean_m", "n"]].tolist() == pytest.approx([1000.0, 40])


def test_cycle_of_constraints_is_reported_not_broken():
    constraints = pd.DataFrame(
        {"younger": ["T2", "T3", "T1"], "older": ["T1", "T2", "T3"], "note": ["a", "b", "c"]}
    )
    result = analyze_east(parallel_set(4), (-500, 0, 3500, 10000), age_constraints=constraints)
    assert len(result.contradictions) == 1
    c = result.contradictions.iloc[0]
    assert c["thrusts"] == "T1,T2,T3"
    assert c["cycle"] == "T1 -> T2 -> T3 -> T1"
    rel = result.relations.set_index("relation_id")
    assert sorted(c["relations"].split(",")) == ["R1", "R2", "R3"]
    assert rel.loc[["R1", "R2", "R3"], "status"].eq("contradicted").all()
    assert rel.loc[["R1", "R2", "R3"], "contradiction"].eq("C1").all()
    tr = result.traces.set_index("thrust_id")
    assert tr["contradiction"].to_dict() == {"T1": "C1", "T2": "C1", "T3": "C1", "T4": ""}
    assert sorted(tr["rank"]) == [1, 2, 3, 4]  # ranks still produced
    assert result.order == ["T1", "T2", "T3", "T4"]
    assert "contradiction C1: T1 -> T2 -> T3 -> T1" in result.summary()


def test_constraint_against_position_overrides_the_default():
    # T1 said to be younger than T3: the in-sequence default yields where it must
    constraints = pd.DataFrame({"younger": ["T1"], "older": ["T3"], "note": [""]})
    result = analyze_east(parallel_set(3), (-500, 0, 2500, 10000), age_constraints=constraints)
    assert result.order == ["T2", "T3", "T1"]
    tr = result.traces.set_index("thrust_id")
    assert tr.loc["T1", "sequence"] == "out"
    rel = result.relations
    over = rel[rel["status"] == "overridden"]
    assert over[["younger", "older", "evidence"]].values.tolist() == [["T2", "T1", "in_sequence"]]


def test_formation_order_never_crashes_on_dense_cycles():
    rng = np.random.default_rng(0)
    n = 30
    y, o = rng.integers(0, n, 200), rng.integers(0, n, 200)
    keep = y != o
    rel = pd.DataFrame(
        {
            "younger": y[keep],
            "older": o[keep],
            "evidence": "constraint",
            "detail": "",
            "x": np.nan,
            "y": np.nan,
        }
    )
    cand = pd.DataFrame(
        {"older": np.arange(n - 1), "younger": np.arange(1, n), "n_for": 1, "n_against": 0}
    )
    out = formation_order([f"T{i}" for i in range(n)], np.arange(n, dtype=float), rel, cand)
    assert sorted(out.rank) == list(range(1, n + 1))
    assert len(out.contradictions) >= 1


def test_single_trace_and_no_relation():
    result = analyze_east(parallel_set(1), (-500, 0, 500, 10000))
    assert result.order == ["T1"] and result.traces["sequence"].tolist() == ["in"]
    assert result.relations.empty and result.relations["weight"].dtype == "int64"
    assert result.spacing["pair"].tolist() == ["all", "in_sequence"]
    assert result.spacing["n"].tolist() == [0, 0]
    assert result.sheets[["floor_thrust", "roof_thrust"]].values.tolist() == [
        ["T1", ""],
        ["", "T1"],
    ]
