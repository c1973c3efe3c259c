"""North references: magnetic declination (IGRF) and grid (meridian) convergence.

Three norths are in play for a field azimuth:

* **magnetic** — what a compass reads; ``true = magnetic + declination``, with the
  declination positive when magnetic north lies east of true north;
* **true** — the geographic meridian; thrustmap's attitude columns are true-north;
* **grid** — the +y axis of a projected CRS; ``grid = true - convergence``, with
  the convergence positive when grid north lies east (clockwise) of true north,
  pyproj's sign (``Proj.get_factors(...).meridian_convergence``).

Declination comes from the International Geomagnetic Reference Field through the
pure-Python ``ppigrf`` package, evaluated at the ellipsoid surface unless a height
is given. Convergence comes from pyproj at each point, for any projected CRS.
"""

from __future__ import annotations

import functools
import logging

import numpy as np
import pandas as pd
import pyproj
from numpy.typing import ArrayLike, NDArray

from thrustmap.errors import ParameterError
from thrustmap.orientation import normalize_azimuth

__all__ = [
    "declination",
    "igrf_period",
    "parse_dates",
    "convergence",
    "magnetic_to_true",
    "true_to_magnetic",
    "true_to_grid",
    "grid_to_true",
]

log = logging.getLogger(__name__)

Float = NDArray[np.float64]

# ppigrf builds dense (points x coefficients) matrices; chunks bound the memory.
_CHUNK = 50_000


@functools.cache
def igrf_period() -> tuple[np.datetime64, np.datetime64]:
    """First and last date (inclusive) the installed IGRF coefficients cover.

    Returns
    -------
    start, end : numpy.datetime64
        Day precision.

    Examples
    --------
    >>> start, end = igrf_period()
    >>> str(start), str(end) >= "2025-01-01"
    ('1900-01-01', True)
    """
    from ppigrf import ppigrf as model

    g, _ = model.read_shc()
    return (
        np.datetime64(g.index[0].date(), "D"),
        np.datetime64(g.index[-1].date(), "D"),
    )


def parse_dates(values: object) -> NDArray[np.datetime64]:
    """Read survey dates into days, NaT where a value is missing or not a date.

    Accepted: ISO 8601 text (``2024-05-17``, ``2024-05-17T09:30``, with or without
    a time zone), ``datetime``/``date`` objects, pandas timestamps and numpy
    ``datetime64``. Day-first or month-first text such as ``05/06/2024`` is not
    accepted: it is ambiguous. Times are converted to UTC, then truncated to the
    day (the geomagnetic field changes by far less than 0.01 degrees in a day).

    Parameters
    ----------
    values : date-like or array_like of date-like
        One date or one per element.

    Returns
    -------
    ndarray of datetime64[D]
        At least 1-D.

    Examples
    --------
    >>> parse_dates(["2024-05-17", "17/05/2024", None]).tolist()
    [datetime.date(2024, 5, 17), None, None]
    """
    arr = np.atleast_1d(np.asarray(values))
    if np.issubdtype(arr.dtype, np.datetime64):
        return arr.astype("datetime64[D]")
    flat = arr.astype(object).ravel()
    text = np.array(["" if pd.isna(v) else str(v).strip() for v in flat], dtype=object)
    parsed = pd.to_datetime(pd.Series(text), format="ISO8601", utc=True, errors="coerce")
    days = parsed.dt.tz_convert(None).to_numpy().astype("datetime64[D]")
    return days.reshape(arr.shape)


def declination(
    lon: ArrayLike,
    lat: ArrayLike,
    date: object,
    *,
    height_km: ArrayLike = 0.0,
    hour: float = 0.0,
) -> Float:
    """Magnetic declination (degrees, east positive) from the IGRF at points and dates.

    D = atan2(B_east, B_north) of the IGRF main field at geodetic longitude,
    latitude and height above the ellipsoid.

    Parameters
    ----------
    lon, lat : array_like
        Geodetic longitude and latitude, degrees (WGS 84 is close enough: the
        field varies over hundreds of kilometres).
    date : date-like or array_like of date-like
        One date for all points, or one per point (see :func:`parse_dates`).
    height_km : array_like, optional
        Height above the ellipsoid, kilometres. Keyword only.
    hour : float, optional
        Hour of the day (UTC, 0 to 24) at which each date's field is taken;
        midnight by default. Keyword only.

    Returns
    -------
    ndarray
        Declination in degrees, the broadcast shape of ``lon``, ``lat`` and
        ``height_km``; NaN where a coordinate or the date is missing.

    Raises
    ------
    ParameterError
        When dates are given per point but their number does not match the
        points, a date lies outside the model's period (:func:`igrf_period`),
        or ``hour`` is outside 0 to 24.

    Examples
    --------
    >>> round(float(declination(-120.0, -80.0, "2025-01-01")), 1)
    68.8
    """
    if not 0.0 <= hour <= 24.0:
        raise ParameterError(f"declination: hour = {hour!r} is not valid; give an hour from 0 to 24 (UTC)")
    lon_b, lat_b, h_b = np.broadcast_arrays(
        np.asarray(lon, dtype=float),
        np.asarray(lat, dtype=float),
        np.asarray(height_km, dtype=float),
    )
    shape = lon_b.shape
    lon_f, lat_f, h_f = (a.ravel() for a in (lon_b, lat_b, h_b))
    days = parse_dates(date).ravel()
    if days.size == 1:
        days = np.repeat(days, lon_f.size)
    elif days.size != lon_f.size:
        raise ParameterError(
            f"declination: {days.size} dates for {lon_f.size} points; give one date or one per point"
        )
    out = np.full(lon_f.size, np.nan)
    ok = np.isfinite(lon_f) & np.isfinite(lat_f) & np.isfinite(h_f) & ~np.isnat(days)
    if not ok.any():
        return out.reshape(shape)
    start, end = igrf_period()
    outside = ok & ((days < start) | (days > end))
    if outside.any():
        bad = days[outside][0]
        raise ParameterError(
            f"declination: date {bad} is outside the IGRF period {start} to {end}; "
            "give the declination directly for that survey"
        )
    import ppigrf

    for day in np.unique(days[ok]):
        idx = np.flatnonzero(ok & (days == day))
        when = (pd.Timestamp(day) + pd.Timedelta(hours=hour)).to_pydatetime()
        for part in np.array_split(idx, -(-idx.size // _CHUNK)):
            be, bn, _ = ppigrf.igrf(lon_f[part], lat_f[part], h_f[part], when)
            out[part] = np.degrees(np.arctan2(be[0], bn[0]))
    return out.reshape(shape)


def convergence(x: ArrayLike, y: ArrayLike, crs: object) -> Float:
    """Meridian (grid) convergence in degrees at points given in a CRS.

    Positive when grid north lies east (clockwise) of true north, the sign of
    pyproj's ``meridian_convergence``; ``grid azimuth = true azimuth - convergence``.

    Parameters
    ----------
    x, y : array_like
        Coordinates in ``crs`` (easting/northing, or longitude/latitude for a
        geographic CRS).
    crs : object
        Anything :meth:`pyproj.CRS.from_user_input` accepts.

    Returns
    -------
    ndarray
        Degrees, the broadcast shape of ``x`` and ``y``; 0 for a geographic CRS
        (its grid north is true north); NaN where a coordinate is missing.

    Examples
    --------
    Grid north lies east of true north east of the central meridian (15 E) of
    UTM zone 33N, at about 18 E, 45 N:

    >>> round(float(convergence(736_446.0, 4_987_329.5, "EPSG:32633")), 4)
    2.1223
    """
    x_b, y_b = np.broadcast_arrays(np.asarray(x, dtype=float), np.asarray(y, dtype=float))
    missing = ~(np.isfinite(x_b) & np.isfinite(y_b))
    horizontal = _horizontal(pyproj.CRS.from_user_input(crs))
    if horizontal.is_geographic or x_b.size == 0:
        return np.where(missing, np.nan, 0.0)
    to_geo = pyproj.Transformer.from_crs(horizontal, horizontal.geodetic_crs, always_xy=True)
    lon, lat = to_geo.transform(x_b, y_b)
    factors = pyproj.Proj(horizontal).get_factors(lon, lat, errcheck=False)
    gamma = np.asarray(factors.meridian_convergence, dtype=float).reshape(x_b.shape)
    return np.where(missing | ~np.isfinite(gamma), np.nan, gamma)


def _horizontal(crs: pyproj.CRS) -> pyproj.CRS:
    """The horizontal part of a compound CRS, else the CRS itself."""
    if crs.is_compound:
        for sub in crs.sub_crs_list:
            if sub.is_projected or sub.is_geographic:
                return sub
    return crs


def magnetic_to_true(azimuth: ArrayLike, declination: ArrayLike) -> Float:
    """True azimuths (degrees) from magnetic ones and the declination (east positive).

    Examples
    --------
    >>> magnetic_to_true([350.0, 10.0], 15.0).tolist()
    [5.0, 25.0]
    """
    return normalize_azimuth(
        np.asarray(azimuth, dtype=float) + np.asarray(declination, dtype=float)
    )


def true_to_magnetic(azimuth: ArrayLike, declination: ArrayLike) -> Float:
    """Magnetic azimuths (degrees) from true ones and the declination (east positive).

    Examples
    --------
    >>> true_to_magnetic([5.0, 25.0], 15.0).tolist()
    [350.0, 10.0]
    """
    return normalize_azimuth(
        np.asarray(azimuth, dtype=float) - np.asarray(declination, dtype=float)
    )


def true_to_grid(azimuth: ArrayLike, convergence: ArrayLike) -> Float:
    """Grid azimuths (degrees) from true ones and the meridian convergence (pyproj sign).

    Examples
    --------
    >>> true_to_grid([1.0, 90.0], 2.0).tolist()
    [359.0, 88.0]
    """
    return normalize_azimuth(
        np.asarray(azimuth, dtype=float) - np.asarray(convergence, dtype=float)
    )


def grid_to_true(azimuth: ArrayLike, convergence: ArrayLike) -> Float:
    """True azimuths (degrees) from grid ones and the meridian convergence (pyproj sign).

    Examples
    --------
    >>> grid_to_true([359.0, 88.0], 2.0).tolist()
    [1.0, 90.0]
    """
    return normalize_azimuth(
        np.asarray(azimuth, dtype=float) + np.asarray(convergence, dtype=float)
    )
