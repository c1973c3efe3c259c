"""Grid convergence of a projected CRS, the one piece of north handling the thrust tools need.

This private helper follows the project's convention (grid azimuth = true
azimuth - convergence, convergence as pyproj's ``meridian_convergence``); it
stands in for ``thrustmap.north.convergence`` so the thrust package has no
import-time dependency on a sibling module.
"""

from __future__ import annotations

import numpy as np
import pyproj
from numpy.typing import ArrayLike, NDArray

from thrustmap.orientation import normalize_azimuth

__all__ = ["grid_convergence", "true_to_grid", "grid_to_true"]


def grid_convergence(x: ArrayLike, y: ArrayLike, crs: pyproj.CRS) -> NDArray[np.float64]:
    """Meridian convergence (degrees) at projected coordinates ``x``, ``y`` of ``crs``.

    Positive where grid north lies clockwise (east) of true north, as pyproj
    reports it.

    Examples
    --------
    >>> import pyproj
    >>> crs = pyproj.CRS("EPSG:32633")
    >>> to_xy = pyproj.Transformer.from_crs(4326, crs, always_xy=True)
    >>> round(float(grid_convergence(*to_xy.transform(18.0, 45.0), crs)), 4)
    2.1223
    """
    crs = pyproj.CRS(crs)
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    to_geo = pyproj.Transformer.from_crs(crs, crs.geodetic_crs, always_xy=True)
    lon, lat = to_geo.transform(x, y)
    factors = pyproj.Proj(crs).get_factors(np.atleast_1d(lon), np.atleast_1d(lat))
    return np.asarray(factors.meridian_convergence, dtype=float).reshape(x.shape)


def true_to_grid(azimuth: ArrayLike, convergence: ArrayLike) -> NDArray[np.float64]:
    """Grid azimuths (degrees, [0, 360)) from true azimuths and the convergence (degrees).

    Examples
    --------
    >>> float(true_to_grid(90.0, 2.0))
    88.0
    """
    return normalize_azimuth(
        np.asarray(azimuth, dtype=float) - np.asarray(convergence, dtype=float)
    )


def grid_to_true(azimuth: ArrayLike, convergence: ArrayLike) -> NDArray[np.float64]:
    """True azimuths (degrees, [0, 360)) from grid azimuths and the convergence (degrees).

    Examples
    --------
    >>> float(grid_to_true(359.0, 2.0))
    1.0
    """
    return normalize_azimuth(
        np.asarray(azimuth, dtype=float) + np.asarray(convergence, dtype=float)
    )
