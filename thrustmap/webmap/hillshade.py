"""Offline background: a tinted hillshade of an elevation grid, resampled to Web Mercator."""

from __future__ import annotations

import base64
import io
from typing import Any

import numpy as np
from numpy.typing import NDArray
from pyproj import CRS, Transformer
from scipy import ndimage

from thrustmap.errors import CRSError, InputError, ParameterError

__all__ = ["hillshade", "hillshade_overlay"]

# Elevation tint stops (low -> high): sage, sand, dusty rose; shaded by illumination.
_TINT = np.array([[196, 211, 190], [233, 221, 192], [214, 196, 184]], dtype=float)


def hillshade(
    values: NDArray[np.floating], cell: float, *, azimuth: float = 315.0, altitude: float = 45.0
) -> NDArray[np.float64]:
    """Illumination of a surface by a distant light, in [0, 1].

    Gradients by Horn's (1981) 3 x 3 weighted differences; illumination is the
    cosine of the angle between the surface normal and the light, i.e.
    ``cos(Z) cos(S) + sin(Z) sin(S) cos(A - aspect)`` (Burrough & McDonnell
    1998), clipped at 0 for faces turned away from the light.

    Parameters
    ----------
    values : 2-D array
        Elevations in metres, first row northernmost; NaN for no data.
    cell : float
        Cell size in metres.
    azimuth : float, default 315
        Direction the light comes from, degrees clockwise from the grid's north.
    altitude : float, default 45
        Light elevation above the horizon, degrees.

    Returns
    -------
    ndarray
        Same shape as ``values``; NaN where a cell or a neighbour is NaN.

    Raises
    ------
    ParameterError
        For a non-positive cell size or an altitude outside 0-90 degrees.

    Examples
    --------
    >>> z = np.zeros((3, 3))
    >>> round(float(hillshade(z, 10.0)[1, 1]), 4)  # flat ground: sin(45 deg)
    0.7071
    """
    if not cell > 0:
        raise ParameterError(f"cell size must be positive metres; got {cell!r}")
    if not 0 <= altitude <= 90:
        raise ParameterError(f"light altitude must be 0-90 degrees; got {altitude!r}")
    z = np.pad(np.asarray(values, dtype=float), 1, mode="edge")
    a, b, c = z[:-2, :-2], z[:-2, 1:-1], z[:-2, 2:]
    d, f = z[1:-1, :-2], z[1:-1, 2:]
    g, h, i = z[2:, :-2], z[2:, 1:-1], z[2:, 2:]
    dz_east = ((c + 2 * f + i) - (a + 2 * d + g)) / (8.0 * cell)
    dz_north = ((a + 2 * b + c) - (g + 2 * h + i)) / (8.0 * cell)
    az, alt = np.radians(azimuth), np.radians(altitude)
    light = np.array([np.sin(az) * np.cos(alt), np.cos(az) * np.cos(alt), np.sin(alt)])
    norm = np.sqrt(dz_east**2 + dz_north**2 + 1.0)
    shade = (-dz_east * light[0] - dz_north * light[1] + light[2]) / norm
    return np.clip(shade, 0.0, 1.0)


def _png_data_uri(rgba: NDArray[np.uint8]) -> str:
    from PIL import Image

    buf = io.BytesIO()
    Image.fromarray(rgba, "RGBA").save(buf, format="PNG", optimize=True)
    return "data:image/png;base64," + base64.b64encode(buf.getvalue()).decode("ascii")


def _grid_parts(grid: Any) -> tuple[NDArray[np.float64], float, float, float, CRS]:
    try:
        values = np.asarray(grid.values, dtype=float)
        x0, y0, cell, crs = float(grid.x0), float(grid.y0), float(grid.cell), grid.crs
    except AttributeError as exc:
        raise InputError(
            "the elevation must be a Grid with values, x0, y0 (upper-left corner), cell and crs "
            f"(thrustmap.io.grid.Grid); got {type(grid).__name__}",
            layer="elevation",
        ) from exc
    if values.ndim != 2 or min(values.shape) < 2:
        raise InputError(f"elevation values must be a 2-D array of at least 2 x 2; got shape "
                         f"{values.shape}", layer="elevation")
    if crs is None:
        raise CRSError("the elevation grid has no CRS", layer="elevation")
    crs = CRS.from_user_input(crs)
    if not crs.is_projected:
        raise CRSError(f"the elevation grid needs a projected CRS in metres; got {crs.name}",
                       layer="elevation")
    return values, x0, y0, cell, crs


def hillshade_overlay(
    grid: Any, *, max_pixels: int = 1200, azimuth: float = 315.0, altitude: float = 45.0
) -> tuple[str, list[list[float]]]:
    """A tinted hillshade as a PNG data URI and its Leaflet bounds.

    Leaflet stretches an image overlay linearly between its corners in Web
    Mercator, so the hillshade is resampled (bilinear) onto a regular Web
    Mercator grid covering the elevation grid; cells outside the grid or with
    no data are transparent.

    Parameters
    ----------
    grid : Grid
        Any object with ``values`` (2-D, NaN for no data), ``x0``, ``y0``
        (upper-left corner), ``cell`` (metres) and ``crs`` (projected), such as
        ``thrustmap.io.grid.Grid``.
    max_pixels : int, default 1200
        Longest side of the image, pixels.
    azimuth, altitude : float
        Light direction and elevation, degrees (see :func:`hillshade`).

    Returns
    -------
    data_uri : str
        ``data:image/png;base64,...``
    bounds : list
        ``[[south, west], [north, east]]`` in degrees (EPSG:4326).

    Raises
    ------
    InputError
        For an object that is not a grid or a grid with no valid cell.
    CRSError
        For a grid without a projected CRS.

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> g = SimpleNamespace(values=np.arange(12.0).reshape(3, 4), x0=500000.0, y0=5000000.0,
    ...                     cell=100.0, crs="EPSG:32633")
    >>> uri, bounds = hillshade_overlay(g)
    >>> uri.startswith("data:image/png;base64,"), round(bounds[0][1], 3)
    (True, 15.0)
    """
    values, x0, y0, cell, crs = _grid_parts(grid)
    if not np.isfinite(values).any():
        raise InputError("the elevation grid holds no valid cell", layer="elevation")
    ny, nx = values.shape
    to_merc = Transformer.from_crs(crs, "EPSG:3857", always_xy=True)
    x1, y1 = x0 + nx * cell, y0 - ny * cell
    edge = np.linspace(0.0, 1.0, 33)
    bx = np.concatenate([x0 + edge * (x1 - x0), np.full_like(edge, x1),
                         x1 - edge * (x1 - x0), np.full_like(edge, x0)])
    by = np.concatenate([np.full_like(edge, y0), y0 + edge * (y1 - y0),
                         np.full_like(edge, y1), y1 - edge * (y1 - y0)])
    mx, my = to_merc.transform(bx, by)
    west, east, south, north = mx.min(), mx.max(), my.min(), my.max()
    res = max(east - west, north - south) / min(max(nx, ny), max_pixels)
    width, height = int(np.ceil((east - west) / res)), int(np.ceil((north - south) / res))
    east, south = west + width * res, north - height * res
    cx = west + (np.arange(width) + 0.5) * res
    cy = north - (np.arange(height) + 0.5) * res
    gx, gy = np.meshgrid(cx, cy)
    sx, sy = to_merc.transform(gx.ravel(), gy.ravel(), direction="INVERSE")
    col = (np.asarray(sx) - x0) / cell - 0.5
    row = (y0 - np.asarray(sy)) / cell - 0.5
    coords = np.vstack([row, col])

    valid = np.isfinite(values)
    shade = hillshade(values, cell, azimuth=azimuth, altitude=altitude)
    valid &= np.isfinite(shade)
    lo, hi = np.nanpercentile(values[valid], [2, 98])
    level = np.clip((values - lo) / max(hi - lo, 1e-9), 0.0, 1.0)
    sampled_ok = ndimage.map_coordinates(valid.astype(float), coords, order=0, cval=0.0) > 0.5
    shade_s = ndimage.map_coordinates(np.where(valid, shade, 0.0), coords, order=1, mode="nearest")
    level_s = ndimage.map_coordinates(np.where(valid, level, 0.0), coords, order=1, mode="nearest")
    pos = level_s * (len(_TINT) - 1)
    k = np.minimum(pos.astype(int), len(_TINT) - 2)
    frac = (pos - k)[:, None]
    tint = _TINT[k] * (1 - frac) + _TINT[k + 1] * frac
    rgb = tint * (0.42 + 0.58 * shade_s)[:, None]
    rgba = np.zeros((width * height, 4), dtype=np.uint8)
    rgba[:, :3] = np.clip(rgb, 0, 255).astype(np.uint8)
    rgba[:, 3] = np.where(sampled_ok, 255, 0)
    to_geo = Transformer.from_crs("EPSG:3857", "EPSG:4326", always_xy=True)
    lon, lat = to_geo.transform([west, east], [south, north])
    bounds = [[round(lat[0], 6), round(lon[0], 6)], [round(lat[1], 6), round(lon[1], 6)]]
    return _png_data_uri(rgba.reshape(height, width, 4)), bounds
