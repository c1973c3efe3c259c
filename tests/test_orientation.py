"""Orientation core: conversions, parsers and conventions.

Reference library: mplstereonet (Kington, mplstereonet, stereonet plots for
matplotlib) for the right-hand-rule and pole conventions; check values copied
from shared REFERENCES.md where they carry a source.
"""

import mplstereonet
import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from mplstereonet.stereonet_math import sph2cart

from tests.common import ANTIPODAL, LINES, PLANES
from thrustmap import orientation as o
from thrustmap.errors import AttitudeParseError, InputError, ThrustmapError

azimuths = st.floats(0, 359.999, allow_nan=False)
dips = st.floats(0, 90, allow_nan=False)


@given(azimuths)
def test_strike_dip_direction_round_trip(strike):
    back = o.dip_direction_to_strike(o.strike_to_dip_direction(strike))
    assert abs(((back - strike) + 180) % 360 - 180) < 1e-9


@given(azimuths, dips)
def test_plane_pole_round_trip(dd, dip):
    t, p = o.plane_to_pole(dd, dip)
    dd2, dip2 = o.pole_to_plane(t, p)
    assert abs(dip2 - dip) < 1e-9
    if 0 < dip:
        assert abs(((dd2 - dd) + 180) % 360 - 180) < 1e-9


@given(azimuths, st.floats(0, 89.9))
def test_line_vector_round_trip(trend, plunge):
    t, p = o.vector_to_line(o.line_to_vector(trend, plunge))
    assert abs(p - plunge) < 1e-9
    assert abs(((t - trend) + 180) % 360 - 180) < 1e-6


@given(azimuths, st.floats(1, 89), st.floats(0, 180))
def test_rake_round_trip(dd, dip, rake):
    t, p = o.rake_to_line(dd, dip, rake)
    r = o.line_to_rake(dd, dip, t, p)
    assert abs(r - rake) < 1e-6 or abs(abs(r - rake) - 180) < 1e-6


@pytest.mark.parametrize("name,dd,dip", PLANES)
def test_pole_matches_mplstereonet(name, dd, dip):
    # Reference: mplstereonet.pole2plunge_bearing (RHR strike); see REFERENCES.md
    strike = o.dip_direction_to_strike(dd)
    plunge, bearing = mplstereonet.pole2plunge_bearing(strike, dip)
    t, p = o.plane_to_pole(dd, dip)
    assert p == pytest.approx(plunge[0], abs=1e-9)
    if p < 90:
        assert o.angle_between_lines(t, p, bearing[0], plunge[0]) < 1e-6


def test_reference_values_mplstereonet():
    # REFERENCES.md [L]: pole2plunge_bearing(0, 30) -> (60, 270)
    assert [float(v) for v in o.plane_to_pole(o.strike_to_dip_direction(0), 30)] == [270.0, 60.0]
    # plunge_bearing2pole(60, 270) -> strike 0, dip 30
    dd, dip = o.pole_to_plane(270, 60)
    assert float(o.dip_direction_to_strike(dd)) == 0.0 and float(dip) == 30.0


@pytest.mark.parametrize("name,t,p", LINES)
def test_line_vector_matches_mplstereonet_frame(name, t, p):
    # mplstereonet: x = cos(lat)cos(lon), y = cos(lat)sin(lon), z = sin(lat);
    # world (E, N, Up) = (y, z, -x) (REFERENCES.md, [L]).
    lon, lat = mplstereonet.line(p, t)
    x, y, z = sph2cart(lon, lat)
    ref = np.array([y[0], z[0], -x[0]])
    assert np.allclose(o.line_to_vector(t, p), ref, atol=1e-9)


@pytest.mark.parametrize("up,down", ANTIPODAL)
def test_lower_hemisphere(up, down):
    assert np.allclose(o.lower_hemisphere(*up), down)


def test_angles():
    assert float(o.angle_between_planes(90, 30, 270, 30)) == pytest.approx(60)
    assert float(o.angle_between_lines(0, 0, 180, 0)) == pytest.approx(0, abs=1e-6)
    t, p = o.plane_intersection(90, 30, 90, 30)
    assert np.isnan(t) and np.isnan(p)


def test_nan_propagates():
    t, p = o.plane_to_pole(np.nan, 30)
    assert np.isnan(t)
    t, p = o.vector_to_line([0.0, 0.0, 0.0])
    assert np.isnan(t) and np.isnan(p)


@pytest.mark.parametrize(
    "text,expected",
    [
        # every quadrant, common practice (quadrant bearing notation)
        ("N30E 45SE", (120, 45)),
        ("N30E 45NW", (300, 45)),
        ("S30E 45SW", (240, 45)),
        ("S10W 60W", (280, 60)),
        ("N10W 60E", (80, 60)),
        ("N-S 30E", (90, 30)),
        ("N-S 30W", (270, 30)),
        ("E-W 20N", (0, 20)),
        ("E-W 20S", (180, 20)),
        ("030/45SE", (120, 45)),
        ("030/45", (120, 45)),
        ("210/45NW", (300, 45)),
        ("030 45 se", (120, 45)),
        ("360/10", (90, 10)),
        ("N90E 30S", (180, 30)),
    ],
)
def test_parse_plane_forms(text, expected):
    assert o.parse_plane(text) == pytest.approx(expected)


def test_parse_plane_dip_direction_azimuth():
    assert o.parse_plane("120/45", azimuth="dip_direction") == (120.0, 45.0)
    assert o.parse_plane("120/45SE", azimuth="dip_direction") == (120.0, 45.0)


@pytest.mark.parametrize(
    "text,reason",
    [
        ("090/45E", "letter_contradicts_strike"),  # E lies along the strike (common practice)
        ("000/45N", "letter_contradicts_strike"),  # letter along strike
        ("N30E 45", "missing_dip_letter"),
        ("030/95", "dip_out_of_range"),
        ("400/45", "azimuth_out_of_range"),
        ("N95E 30S", "quadrant_angle_over_90"),
        ("banana", "unparseable"),
        ("", "missing"),
    ],
)
def test_parse_plane_errors(text, reason):
    dd, dip, err = o.parse_planes([text])
    assert err[0] == reason and np.isnan(dd[0])


def test_parse_planes_never_raises_halfway():
    dd, dip, err = o.parse_planes(["030/45", "junk", None, "N30E 45SE"])
    assert err.tolist() == ["", "unparseable", "missing", ""]
    assert dd[3] == 120


def test_parse_plane_raises_valueerror_subclass():
    with pytest.raises(AttitudeParseError, match="letter contradicts strike"):
        o.parse_plane("000/45N")
    assert issubclass(AttitudeParseError, ValueError)
    assert issubclass(AttitudeParseError, InputError) and issubclass(InputError, ThrustmapError)


def test_parse_azimuth_choice_error_lists_values():
    with pytest.raises(ValueError, match="strike, dip_direction"):
        o.parse_planes(["030/45"], azimuth="bogus")


@pytest.mark.parametrize(
    "text,expected",
    [("045/30", (45, 30)), ("N30E 20", (30, 20)), ("20 N30E", (30, 20)), ("S20W/10", (200, 10))],
)
def test_parse_line_forms(text, expected):
    assert o.parse_line(text) == pytest.approx(expected)


def test_parse_line_error():
    with pytest.raises(AttitudeParseError, match="plunge out of range"):
        o.parse_line("045/95")


def test_rake_from_named_strike_end():
    # A rake of 30 from the north end of a plane striking N-S dipping 90 E (common practice)
    t, p = o.rake_to_line(90, 90, 30, from_azimuth=0)
    assert float(t) == pytest.approx(0) and float(p) == pytest.approx(30)
    t, p = o.rake_to_line(90, 90, 30, from_azimuth=180)
    assert float(t) == pytest.approx(180) and float(p) == pytest.approx(30)
