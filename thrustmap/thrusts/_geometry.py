"""Vectorised plane-geometry helpers shared by the thrust modules (map coordinates, metres)."""

from __future__ import annotations

import numpy as np
import shapely
from numpy.typing import ArrayLike, NDArray

from thrustmap.orientation import normalize_azimuth

__all__ = [
    "azimuth_of",
    "unit_vectors",
    "left_normals",
    "explode",
    "segments",
    "tangents_at",
    "end_directions",
    "direction_sums",
    "axial_mean",
]

Float = NDArray[np.float64]


def azimuth_of(vectors: ArrayLike) -> Float:
    """Azimuths (degrees clockwise from the y axis) of (..., 2) vectors (east, north)."""
    v = np.asarray(vectors, dtype=float)
    return normalize_azimuth(np.degrees(np.arctan2(v[..., 0], v[..., 1])))


def unit_vectors(azimuth: ArrayLike) -> Float:
    """(..., 2) unit vectors (east, north) of azimuths in degrees."""
    a = np.radians(np.asarray(azimuth, dtype=float))
    return np.stack([np.sin(a), np.cos(a)], axis=-1)


def left_normals(vectors: ArrayLike) -> Float:
    """Vectors turned 90 degrees anticlockwise: the left side of a direction of travel."""
    v = np.asarray(vectors, dtype=float)
    return np.stack([-v[..., 1], v[..., 0]], axis=-1)


def explode(geoms: ArrayLike) -> tuple[NDArray[np.object_], NDArray[np.intp]]:
    """Single parts of (multi)geometries and the index of the geometry each came from."""
    parts, index = shapely.get_parts(np.asarray(geoms, dtype=object), return_index=True)
    return parts, index


def segments(lines: ArrayLike) -> tuple[Float, Float, NDArray[np.intp]]:
    """Start points, end points (k, 2) and owner index of every straight segment of LineStrings."""
    coords, index = shapely.get_coordinates(np.asarray(lines, dtype=object), return_index=True)
    same = index[1:] == index[:-1]
    return coords[:-1][same], coords[1:][same], index[:-1][same]


def _normalised(v: Float) -> Float:
    norm = np.linalg.norm(v, axis=-1, keepdims=True)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(norm > 0, v / np.where(norm > 0, norm, 1.0), np.nan)


def tangents_at(lines: ArrayLike, distance: ArrayLike, *, step: float = 0.5) -> Float:
    """Unit tangents (k, 2), in the digitising direction, of LineStrings at distances along them.

    The tangent is the chord between the points ``step`` metres before and after
    (clipped to the line), so a vertex gets the mean of its two segments.
    """
    lines = np.asarray(lines, dtype=object)
    d = np.asarray(distance, dtype=float)
    length = shapely.length(lines)
    h = np.minimum(step, 0.25 * length)
    a = shapely.get_coordinates(shapely.line_interpolate_point(lines, np.clip(d - h, 0, length)))
    b = shapely.get_coordinates(shapely.line_interpolate_point(lines, np.clip(d + h, 0, length)))
    return _normalised(b - a)


def end_directions(lines: ArrayLike) -> tuple[Float, Float]:
    """Outward unit directions (k, 2) of the first and of the last segment of LineStrings.

    The first is the direction from the second vertex to the start, the second
    from the second-to-last vertex to the end: both point out of the line.
    """
    lines = np.asarray(lines, dtype=object)
    coords, index = shapely.get_coordinates(lines, return_index=True)
    counts = shapely.get_num_coordinates(lines)
    first = np.concatenate([[0], np.cumsum(counts)[:-1]]).astype(np.intp)
    last = first + counts - 1
    start_out = coords[first] - coords[first + 1]
    end_out = coords[last] - coords[last - 1]
    return _normalised(start_out), _normalised(end_out)


def direction_sums(lines: ArrayLike, n: int | None = None) -> Float:
    """Sum of the segment vectors (k, 2) of each (multi)line: its net digitising direction.

    ``n`` is the number of geometries (for owners of exploded parts pass the
    owner count).
    """
    lines = np.asarray(lines, dtype=object)
    parts, owner = explode(lines)
    start, end, seg_owner = segments(parts)
    size = len(lines) if n is None else n
    d = end - start
    who = owner[seg_owner]
    return np.stack(
        [
            np.bincount(who, weights=d[:, 0], minlength=size),
            np.bincount(who, weights=d[:, 1], minlength=size),
        ],
        axis=1,
    )


def axial_mean(azimuth: ArrayLike, weights: ArrayLike | None = None) -> tuple[float, float, float]:
    """Weighted mean of axial azimuths (degrees, mod 180) by angle doubling.

    Returns
    -------
    mean : float
        Mean axis in [0, 180) degrees.
    spread : float
        Circular standard deviation of the axes, degrees (half that of the doubled angles).
    resultant : float
        Mean resultant length of the doubled angles, 0-1.

    Examples
    --------
    >>> [round(v, 2) for v in axial_mean([10.0, 190.0, 350.0, 170.0])[:2]]
    [0.0, 10.1]
    """
    a = np.radians(2.0 * np.asarray(azimuth, dtype=float))
    w = np.ones_like(a) if weights is None else np.asarray(weights, dtype=float)
    c = np.sum(w * np.cos(a))
    s = np.sum(w * np.sin(a))
    r = float(np.hypot(c, s) / np.sum(w))
    mean = float(normalize_azimuth(np.degrees(np.arctan2(s, c)) / 2.0) % 180.0)
    spread = float(np.degrees(np.sqrt(-2.0 * np.log(min(max(r, 1e-300), 1.0)))) / 2.0)
    return mean, spread, r
