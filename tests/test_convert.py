"""convert_attitudes against mplstereonet's notation parsers (Kington, mplstereonet)."""

import geopandas as gpd
import mplstereonet
import numpy as np
import pandas as pd
import pytest
import shapely

from thrustmap.convert import convert_attitudes
from thrustmap.errors import InputError, ParameterError

# mplstereonet's quadrant parser uses 2-D np.cross, deprecated in NumPy 2; not ours to fix.
pytestmark = pytest.mark.filterwarnings("ignore:Arrays of 2-dimensional vectors:DeprecationWarning")

# (strike text, dip text) as mplstereonet.parse_strike_dip takes them, and our one-field form.
PLANES = [
    ("N30E", "45SE", "N30E 45SE"),
    ("S10W", "60W", "S10W 60W"),
    ("N80W", "20S", "N80W 20S"),
    ("210", "45NW", "210/45NW"),
    ("315", "80", "315/80"),
]


def test_planes_match_mplstereonet():
    table = pd.DataFrame({"attitude": [p[2] for p in PLANES]})
    out = convert_attitudes(table)
    # Reference: mplstereonet.parse_strike_dip returns the right-hand-rule strike and dip.
    expected = [mplstereonet.parse_strike_dip(s, d) for s, d, _ in PLANES]
    assert out["strike"].tolist() == pytest.approx([float(s) for s, _ in expected])
    assert out["dip"].tolist() == pytest.approx([float(d) for _, d in expected])
    assert out["dip_direction"].tolist() == pytest.approx(
        [(float(s) + 90) % 360 for s, _ in expected]
    )
    assert (out["error"] == "").all()


def test_lines_match_mplstereonet():
    out = convert_attitudes(
        pd.DataFrame({"attitude": ["N30E 20", "045/30", "S20W/10"]}), kind="line"
    )
    # Reference: mplstereonet.parse_plunge_bearing(plunge, bearing) -> (plunge, bearing).
    ref = [
        mplstereonet.parse_plunge_bearing(p, b)
        for p, b in [("20", "N30E"), ("30", "045"), ("10", "S20W")]
    ]
    assert out["trend"].tolist() == pytest.approx([float(b) for _, b in ref])
    assert out["plunge"].tolist() == pytest.approx([float(p) for p, _ in ref])


def test_every_row_is_kept_with_a_reason():
    table = gpd.GeoDataFrame(
        {"attitude": ["030/45", "", None, "N30E 45", "030/95"], "error": ["x"] * 5},
        geometry=[shapely.Point(i, i) for i in range(5)],
        crs="EPSG:32633",
    )
    out = convert_attitudes(table)
    assert isinstance(out, gpd.GeoDataFrame) and out.crs == table.crs
    assert len(out) == len(table)
    assert out["error"].tolist() == [
        "",
        "missing",
        "missing",
        "missing_dip_letter",
        "dip_out_of_range",
    ]
    assert out["orig_error"].tolist() == ["x"] * 5
    assert np.isnan(out["dip"].to_numpy()[1:]).all()
    assert "error" in table.columns and "dip" not in table.columns  # the input is not modified


def test_dip_direction_azimuths():
    out = convert_attitudes(pd.DataFrame({"a": ["120/45"]}), column="a", azimuth="dip_direction")
    assert (out["dip_direction"][0], out["strike"][0]) == (120.0, 30.0)


def test_bad_arguments():
    frame = pd.DataFrame({"attitude": ["030/45"]})
    frame.attrs.update(source="sheet.csv", layer=None)
    with pytest.raises(InputError, match=r"file sheet.csv, field 'att': no attitude column 'att'"):
        convert_attitudes(frame, column="att")
    with pytest.raises(ParameterError, match="kind='fold'"):
        convert_attitudes(frame, kind="fold")
    with pytest.raises(ParameterError, match="azimuth='dip'"):
        convert_attitudes(frame, azimuth="dip")


def test_empty_table():
    out = convert_attitudes(pd.DataFrame({"attitude": pd.Series([], dtype=object)}))
    assert out.columns.tolist() == ["attitude", "dip_direction", "dip", "strike", "error"]
