"""North references: meridian convergence sign and size, IGRF declination, conversions."""

import math

import numpy as np
import pyproj
import pytest
from hypothesis import given
from hypothesis import strategies as st

from thrustmap.errors import ParameterError
from thrustmap.north import (
    convergence,
    declination,
    grid_to_true,
    igrf_period,
    magnetic_to_true,
    parse_dates,
    true_to_grid,
    true_to_magnetic,
)

# (EPSG, central meridian, longitude, latitude): east and west of the central
# meridian, northern and southern hemispheres, near and far from it.
UTM_POINTS = [
    (32633, 15.0, 18.0, 45.0),
    (32633, 15.0, 12.0, 45.0),
    (32633, 15.0, 16.0, 75.0),
    (32733, 15.0, 18.0, -45.0),
    (32733, 15.0, 12.0, -45.0),
    (32631, 3.0, 0.0, 60.0),
    (32611, -117.0, -114.0, 36.0),
    (32711, -117.0, -119.5, -10.0),
    (32755, 147.0, 149.9, -42.0),
]


def _to_xy(epsg, lon, lat):
    return pyproj.Transformer.from_crs(4326, epsg, always_xy=True).transform(lon, lat)


@pytest.mark.parametrize(("epsg", "lon0", "lon", "lat"), UTM_POINTS)
def test_convergence_matches_pyproj_factors(epsg, lon0, lon, lat):
    x, y = _to_xy(epsg, lon, lat)
    # Reference library: pyproj's own scale-factor computation at the same point.
    expected = pyproj.Proj(pyproj.CRS.from_epsg(epsg)).get_factors(lon, lat).meridian_convergence
    assert float(convergence(x, y, f"EPSG:{epsg}")) == pytest.approx(expected, abs=1e-9)


@pytest.mark.parametrize(("epsg", "lon0", "lon", "lat"), UTM_POINTS)
def test_convergence_matches_spherical_transverse_mercator(epsg, lon0, lon, lat):
    """Snyder (1987), Map Projections: A Working Manual, USGS PP 1395: the spherical
    Transverse Mercator convergence gamma = atan(tan(lon - lon0) sin(lat)), as commonly
    quoted (equation number unconfirmed).

    Tolerance: the ellipsoid adds terms of order (dlon^3 / 3) sin(lat) cos^2(lat) * 3 e'^2
    cos^2(lat) (e'^2 = 0.00674 for WGS 84), below 2.5e-5 degrees within 3 degrees of the
    central meridian; 1e-4 degrees leaves room for higher orders while a wrong sign,
    central meridian or unit is off by a degree or more.
    """
    x, y = _to_xy(epsg, lon, lat)
    gamma = math.degrees(
        math.atan(math.tan(math.radians(lon - lon0)) * math.sin(math.radians(lat)))
    )
    got = float(convergence(x, y, epsg))
    assert got == pytest.approx(gamma, abs=1e-4)
    # Sign: grid north lies east of true north east of the central meridian in the
    # north, and west of it in the south (common practice).
    assert np.sign(got) == np.sign(lon - lon0) * np.sign(lat)


@pytest.mark.parametrize(
    ("epsg", "lon", "lat", "expected"),
    [
        # REFERENCES.md, values recorded from pyproj get_factors [L].
        (32633, 18.0, 45.0, 2.122300),
        (32633, 12.0, 45.0, -2.122300),
        (32631, 0.0, 60.0, -2.598673),
        (32611, -114.0, 36.0, 1.764425),
    ],
)
def test_convergence_recorded_values(epsg, lon, lat, expected):
    x, y = _to_xy(epsg, lon, lat)
    assert float(convergence(x, y, epsg)) == pytest.approx(expected, abs=1e-6)


@pytest.mark.parametrize(("epsg", "lon0", "lon", "lat"), UTM_POINTS)
def test_true_north_drawn_on_the_grid(epsg, lon0, lon, lat):
    """A short step due true north, projected, has the grid azimuth true_to_grid(0, gamma).

    Independent of the factor computation: the direction comes from projecting two
    points on the same meridian (0.0001 degree apart, so curvature is negligible).
    """
    x0, y0 = _to_xy(epsg, lon, lat)
    x1, y1 = _to_xy(epsg, lon, lat + 1e-4)
    grid_az = math.degrees(math.atan2(x1 - x0, y1 - y0)) % 360.0
    got = float(true_to_grid(0.0, convergence(x0, y0, epsg)))
    assert (got - grid_az + 180.0) % 360.0 - 180.0 == pytest.approx(0.0, abs=1e-4)


def test_convergence_geographic_missing_and_compound():
    assert convergence([10.0, np.nan], [45.0, 45.0], "EPSG:4326").tolist()[0] == 0.0
    assert np.isnan(convergence([10.0, np.nan], [45.0, 45.0], "EPSG:4326")[1])
    x, y = _to_xy(32633, 18.0, 45.0)
    # The horizontal part of a compound CRS (UTM 33N + EGM2008 height) is used.
    assert float(convergence(x, y, "EPSG:32633+3855")) == pytest.approx(2.122300, abs=1e-6)


# NOAA NCEI, WMM2025 test values (published with the model), 0 km altitude.
NOAA_WMM2025 = [
    ("2025-01-01", 80.0, 0.0, 1.28),
    ("2025-01-01", 0.0, 120.0, -0.16),
    ("2025-01-01", -80.0, -120.0, 68.78),
    ("2027-07-02", 80.0, 0.0, 2.59),  # decimal year 2027.5
]


@pytest.mark.parametrize(("date", "lat", "lon", "expected"), NOAA_WMM2025)
def test_declination_against_noaa_wmm2025_test_values(date, lat, lon, expected):
    """IGRF-14 and WMM2025 are separate fits of the same field; at these points they
    differ by at most ~0.04 degrees (REFERENCES.md: ppigrf agrees with NOAA's values to
    0.09 degrees). 0.1 degrees catches a sign, unit or east/north swap (errors of
    degrees here: 68.78 becomes 21.22 or -68.78)."""
    assert float(declination(lon, lat, date)) == pytest.approx(expected, abs=0.1)


def test_declination_against_pygeomag_grid():
    """pygeomag (pure-Python WMM2025) on a 15-degree grid within 60 degrees of the equator.

    Tolerance 0.25 degrees: the two models differ by truncation (IGRF degree 13, WMM
    degree 12) and by their secular-variation forecasts, which drift apart after 2025
    (about 0.1 degrees by 2028 at these points); the horizontal field there exceeds
    4500 nT, so no point is near a magnetic pole where declination is ill-defined.
    """
    pygeomag = pytest.importorskip("pygeomag")
    wmm = pygeomag.GeoMag(coefficients_file="wmm/WMM_2025.COF")
    lats = np.arange(-60.0, 61.0, 15.0)
    lons = np.arange(-180.0, 180.0, 30.0)
    lon_g, lat_g = np.meshgrid(lons, lats)
    for date, year in (("2025-07-02", 2025.5), ("2028-01-01", 2028.0)):
        got = declination(lon_g, lat_g, date)
        ref = np.array(
            [[wmm.calculate(glat=la, glon=lo, alt=0, time=year).d for lo in lons] for la in lats]
        )
        diff = (got - ref + 180.0) % 360.0 - 180.0
        assert np.abs(diff).max() < 0.25


def test_declination_dates_per_point_match_single_dates():
    lon = np.array([15.0, 15.0, -70.0])
    lat = np.array([45.0, 45.0, -30.0])
    dates = ["1990-06-01", "2024-06-01", "2024-06-01"]
    per_point = declination(lon, lat, dates)
    singles = [float(declination(o, a, d)) for o, a, d in zip(lon, lat, dates, strict=True)]
    assert per_point.tolist() == pytest.approx(singles, abs=1e-12)
    # Secular variation is real: 34 years at the same spot changes D by > 1 degree
    # (common practice: declination in southern Europe drifted east since 1990).
    assert per_point[1] - per_point[0] > 1.0


def test_declination_shapes_missing_and_heights():
    out = declination(np.array([[15.0, np.nan]]), 45.0, "2024-01-01")
    assert out.shape == (1, 2)
    assert np.isnan(out[0, 1])
    assert np.isnan(declination(15.0, 45.0, [None])).all()
    # 10 km up changes D only a little at mid-latitudes (common practice: < 0.1 degree).
    ground = float(declination(15.0, 45.0, "2024-01-01"))
    high = float(declination(15.0, 45.0, "2024-01-01", height_km=10.0))
    assert ground != high
    assert abs(ground - high) < 0.1


def test_declination_at_an_hour_of_the_day():
    # IGRF Gauss coefficients vary linearly in time between epochs (Alken et al. 2021,
    # "International Geomagnetic Reference Field: the thirteenth generation", Earth Planets
    # Space 73:49), so over one day D at noon is midway between the two midnights.
    midnight = float(declination(15.0, 45.0, "2024-06-03"))
    next_midnight = float(declination(15.0, 45.0, "2024-06-04"))
    noon = float(declination(15.0, 45.0, "2024-06-03", hour=12.0))
    assert noon != midnight
    assert noon == pytest.approx((midnight + next_midnight) / 2.0, abs=1e-8)
    assert float(declination(15.0, 45.0, "2024-06-03", hour=24.0)) == next_midnight
    with pytest.raises(ParameterError, match="hour = 25.0 is not valid"):
        declination(15.0, 45.0, "2024-06-03", hour=25.0)


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        (
            {"lon": [1.0, 2.0], "lat": [1.0, 2.0], "date": ["2020-01-01"] * 3},
            "3 dates for 2 points",
        ),
        ({"lon": 1.0, "lat": 1.0, "date": "1850-01-01"}, "outside the IGRF period"),
        ({"lon": 1.0, "lat": 1.0, "date": "2090-01-01"}, "give the declination directly"),
    ],
)
def test_declination_errors(kwargs, match):
    with pytest.raises(ParameterError, match=match):
        declination(kwargs["lon"], kwargs["lat"], kwargs["date"])


def test_igrf_period_covers_model_years():
    start, end = igrf_period()
    assert start == np.datetime64("1900-01-01")
    assert end >= np.datetime64("2029-12-31")


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        ("2024-05-17", "2024-05-17"),
        ("2024-05-17T23:30:00-05:00", "2024-05-18"),
        ("2024-05-17 08:00", "2024-05-17"),
        ("17/05/2024", "NaT"),
        ("05/17/2024", "NaT"),
        ("", "NaT"),
        (None, "NaT"),
        (float("nan"), "NaT"),
        ("yesterday", "NaT"),
    ],
)
def test_parse_dates(value, expected):
    assert str(parse_dates([value])[0]) == expected


def test_parse_dates_native_types():
    import datetime as dt

    import pandas as pd

    got = parse_dates([dt.date(2024, 1, 2), dt.datetime(2024, 1, 3, 5), pd.Timestamp("2024-01-04")])
    assert [str(d) for d in got] == ["2024-01-02", "2024-01-03", "2024-01-04"]
    assert str(parse_dates(np.array(["2024-01-05T10"], dtype="datetime64[h]"))[0]) == "2024-01-05"


def test_conversion_signs():
    # Declination 10 E: a compass reading of 000 points 010 true (common practice:
    # add an easterly declination to a magnetic bearing).
    assert float(magnetic_to_true(0.0, 10.0)) == 10.0
    assert float(magnetic_to_true(355.0, 10.0)) == 5.0
    assert float(true_to_magnetic(5.0, 10.0)) == 355.0
    # Convergence +2 (grid north east of true north): a true bearing reads 2 less on the grid.
    assert float(true_to_grid(1.0, 2.0)) == 359.0
    assert float(grid_to_true(359.0, 2.0)) == 1.0


azimuths = st.floats(0.0, 359.999, allow_nan=False)
offsets = st.floats(-30.0, 30.0, allow_nan=False)


@given(azimuths, offsets)
def test_conversions_round_trip(az, offset):
    for there, back in ((magnetic_to_true, true_to_magnetic), (true_to_grid, grid_to_true)):
        got = float(back(there(az, offset), offset))
        assert (got - az + 180.0) % 360.0 - 180.0 == pytest.approx(0.0, abs=1e-9)
