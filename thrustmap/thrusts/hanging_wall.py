"""Hanging-wall side of each thrust trace: given, or inferred and marked so.

A side is coded +1 for the left and -1 for the right of the digitising
direction (0 unknown). It may be given as ``left``/``right`` or as the
hanging-wall dip direction (an azimuth); both forms reduce to the same code.
Missing sides are inferred from nearby fault or thrust plane attitudes (their
dip direction) or, failing those, from the dominant vergence (the hanging wall
lies opposite the transport direction).
"""

from __future__ import annotations

import geopandas as gpd
import numpy as np
import pandas as pd
import pyproj
import shapely
from numpy.typing import ArrayLike, NDArray

from thrustmap.north import convergence as grid_convergence
from thrustmap.north import true_to_grid
from thrustmap.thrusts._geometry import (
    azimuth_of,
    direction_sums,
    left_normals,
    tangents_at,
    unit_vectors,
)

__all__ = [
    "ALONG_TRACE_LIMIT",
    "PLANE_FEATURES",
    "given_sides",
    "sides_from_attitudes",
    "sides_from_vergence",
    "hw_dip_directions",
]

ALONG_TRACE_LIMIT = 10.0
"""A given dip direction closer than this (degrees) to the trace direction decides no side."""

PLANE_FEATURES = ("fault", "thrust")


def _left_units(lines: NDArray[np.object_]) -> NDArray[np.float64]:
    d = direction_sums(lines)
    norm = np.linalg.norm(d, axis=1, keepdims=True)
    return left_normals(d / np.where(norm > 0, norm, 1.0))


def given_sides(
    lines: ArrayLike, hw_side: ArrayLike, hw_dip_direction_grid: ArrayLike
) -> tuple[NDArray[np.int8], NDArray[np.object_], NDArray[np.object_]]:
    """Sides from the ``hw_side`` text and the hanging-wall dip direction.

    Parameters
    ----------
    lines : array_like of (Multi)LineString
        Traces; their net digitising direction (sum of segment vectors) defines
        left and right.
    hw_side : array_like of str or None
        ``left``, ``right`` or None.
    hw_dip_direction_grid : array_like of float
        Hanging-wall dip direction (degrees, grid north), NaN when not given.

    Returns
    -------
    side : ndarray of int8
        +1 left, -1 right, 0 not given.
    basis : ndarray of str
        ``hw_side``, ``hw_dip_direction`` or "".
    problem : ndarray of str
        "" or a reject code: ``hw_side_conflict`` (the two forms disagree),
        ``hw_dip_direction_along_trace`` (an azimuth alone, within
        ``ALONG_TRACE_LIMIT`` degrees of the trace direction).

    Examples
    --------
    >>> from shapely import LineString
    >>> line = LineString([(0, 0), (0, 100)])
    >>> side, basis, problem = given_sides([line, line], ["left", None], [float("nan"), 270.0])
    >>> side.tolist(), basis.tolist()
    ([1, 1], ['hw_side', 'hw_dip_direction'])
    """
    lines = np.asarray(lines, dtype=object)
    text = pd.Series(list(hw_side), dtype=object)
    from_text = np.where(text == "left", 1, np.where(text == "right", -1, 0)).astype(np.int8)
    az = np.asarray(hw_dip_direction_grid, dtype=float)
    has_az = np.isfinite(az)
    c = np.sum(unit_vectors(np.where(has_az, az, 0.0)) * _left_units(lines), axis=1)
    decisive = has_az & (np.abs(c) > np.sin(np.radians(ALONG_TRACE_LIMIT)))
    from_az = np.where(decisive, np.sign(c), 0).astype(np.int8)
    side = np.where(from_text != 0, from_text, from_az).astype(np.int8)
    basis = np.where(from_text != 0, "hw_side", np.where(from_az != 0, "hw_dip_direction", ""))
    problem = np.full(len(lines), "", dtype=object)
    problem[(from_text != 0) & (from_az != 0) & (from_text != from_az)] = "hw_side_conflict"
    problem[has_az & ~decisive & (from_text == 0)] = "hw_dip_direction_along_trace"
    return side, basis.astype(object), problem


def sides_from_attitudes(
    lines: ArrayLike, attitudes: gpd.GeoDataFrame, *, crs: pyproj.CRS, radius: float
) -> tuple[NDArray[np.int8], NDArray[np.int64]]:
    """Sides inferred from fault and thrust plane attitudes within ``radius`` metres of each trace.

    Each attitude votes for the side its dip direction points to, relative to
    the local direction of the trace at the nearest point, weighted by how
    squarely it points across the trace. Overturned, horizontal and vertical
    planes do not vote.

    Parameters
    ----------
    lines : array_like of (Multi)LineString
        Traces in the working CRS.
    attitudes : GeoDataFrame
        Attitude table (true-north ``dip_direction``) in the working CRS.
    crs : pyproj.CRS
        The working CRS (for the grid convergence at each station).
    radius : float
        Search distance, metres.

    Returns
    -------
    side : ndarray of int8
        +1 left, -1 right, 0 no vote.
    votes : ndarray of int64
        Number of attitudes used per trace.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from shapely import LineString, Point
    >>> att = gpd.GeoDataFrame({"feature": ["thrust"], "kind": ["plane"],
    ...     "dip_direction": [270.0], "dip": [30.0]},
    ...     geometry=[Point(500010, 5000050)], crs="EPSG:32633")
    >>> line = LineString([(500000, 5000000), (500000, 5000100)])
    >>> side, votes = sides_from_attitudes([line], att, crs=att.crs, radius=100.0)
    >>> side.tolist(), votes.tolist()
    ([1], [1])
    """
    lines = np.asarray(lines, dtype=object)
    n = len(lines)
    feature = attitudes["feature"].astype(str).str.strip().str.lower().to_numpy()
    kind = attitudes["kind"].astype(str).str.strip().str.lower().to_numpy()
    dd = attitudes["dip_direction"].to_numpy(dtype=float, na_value=np.nan)
    dip = attitudes["dip"].to_numpy(dtype=float, na_value=np.nan)
    over = (
        attitudes["overturned"].fillna(False).astype(bool).to_numpy()
        if "overturned" in attitudes
        else np.zeros(len(attitudes), dtype=bool)
    )
    pts = np.asarray(attitudes.geometry, dtype=object)
    x, y = shapely.get_x(pts), shapely.get_y(pts)
    use = (
        np.isin(feature, PLANE_FEATURES)
        & (kind == "plane")
        & np.isfinite(dd)
        & (dip > 0)
        & (dip < 90)
        & ~over
        & np.isfinite(x)
    )
    side = np.zeros(n, dtype=np.int8)
    votes = np.zeros(n, dtype=np.int64)
    if not use.any() or n == 0:
        return side, votes
    idx = np.flatnonzero(use)
    dd_grid = true_to_grid(dd[idx], grid_convergence(x[idx], y[idx], crs))
    tree = shapely.STRtree(pts[idx])
    line_i, pt_j = tree.query(lines, predicate="dwithin", distance=radius)
    if len(line_i) == 0:
        return side, votes
    loc = shapely.line_locate_point(lines[line_i], pts[idx][pt_j])
    tangent = tangents_at(lines[line_i], loc)
    score = np.sum(unit_vectors(dd_grid[pt_j]) * left_normals(tangent), axis=1)
    total = np.zeros(n)
    np.add.at(total, line_i, np.nan_to_num(score))
    np.add.at(votes, line_i, 1)
    side[:] = np.sign(total).astype(np.int8)
    return side, votes


def sides_from_vergence(lines: ArrayLike, transport_grid: float) -> NDArray[np.int8]:
    """Sides from the dominant vergence: the hanging wall lies opposite the transport azimuth.

    Examples
    --------
    >>> from shapely import LineString
    >>> sides_from_vergence([LineString([(0, 0), (0, 100)])], 90.0).tolist()
    [1]
    """
    lines = np.asarray(lines, dtype=object)
    c = np.sum(-unit_vectors(transport_grid) * _left_units(lines), axis=1)
    return np.sign(np.where(np.abs(c) > 1e-9, c, 0.0)).astype(np.int8)


def hw_dip_directions(lines: ArrayLike, side: ArrayLike) -> NDArray[np.float64]:
    """Grid azimuth (degrees) of the hanging-wall side normal to each trace's net direction.

    NaN where the side is unknown.

    Examples
    --------
    >>> from shapely import LineString
    >>> hw_dip_directions([LineString([(0, 0), (0, 100)])], [-1]).tolist()
    [90.0]
    """
    lines = np.asarray(lines, dtype=object)
    s = np.asarray(side, dtype=float)
    az = azimuth_of(s[:, None] * _left_units(lines))
    return np.where(s != 0, az, np.nan)
