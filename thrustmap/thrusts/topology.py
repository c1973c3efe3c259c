"""Thrust network topology: snapping, trace-end classes and crossings.

Every end of every trace part is classified:

* ``truncation`` - the end abuts another thrust (the other thrust cuts it off);
* ``branch`` - the end merges into another thrust: it meets the other trace
  nearly tangentially (at no more than ``branch_angle`` degrees, 15 by
  default) with its hanging wall on the same side, or it meets the other
  trace's end. Splays curve into the thrust they branch from, while a thrust
  cutting another, even an out-of-sequence one subparallel to the belt,
  usually meets it at a wider angle; map view alone cannot always tell them
  apart, so the angle is a parameter;
* ``boundary`` - the end lies on (within the tolerance) or beyond the
  study-area boundary: the trace leaves the mapped area;
* ``free_tip`` - the thrust dies out in the map.

Ends within ``snap_tolerance`` metres of another trace (or of the boundary) are
moved onto it. Interior crossings of two traces are found after snapping
(``crossing`` nodes). Candidate pairs come from an STRtree; all geometry work
is vectorised with shapely 2.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
import shapely
from numpy.typing import ArrayLike, NDArray

from thrustmap.errors import ParameterError
from thrustmap.thrusts._geometry import end_directions, explode, left_normals, tangents_at

__all__ = ["NODE_KINDS", "Topology", "build_topology"]

NODE_KINDS = ("free_tip", "branch", "truncation", "boundary", "crossing")
_NODE_COLUMNS = ["kind", "thrust", "other", "end", "part", "angle", "gap_m", "x", "y"]


@dataclass(frozen=True)
class Topology:
    """Snapped trace parts and the nodes of the network.

    Attributes
    ----------
    pieces : ndarray of LineString
        Single parts of the traces after snapping, in trace order.
    piece_trace : ndarray of int
        Index of the trace each piece belongs to.
    nodes : DataFrame
        One row per trace end and per crossing point: ``kind`` (see
        ``NODE_KINDS``), ``thrust`` (trace index), ``other`` (trace met or
        crossed, -1 for none), ``end`` (``start``/``end`` of the part, "" for
        crossings), ``part`` (part number within the trace), ``angle``
        (degrees, 0-90, between the two traces where they meet), ``gap_m``
        (distance the end was moved), ``x``, ``y`` (after snapping).
    """

    pieces: NDArray[np.object_]
    piece_trace: NDArray[np.intp]
    nodes: pd.DataFrame


def _axial_angle(u: NDArray[np.float64], v: NDArray[np.float64]) -> NDArray[np.float64]:
    return np.degrees(np.arccos(np.clip(np.abs(np.sum(u * v, axis=1)), 0.0, 1.0)))


def build_topology(
    lines: ArrayLike,
    sides: ArrayLike,
    *,
    snap_tolerance: float,
    branch_angle: float = 15.0,
    area: shapely.Geometry | None = None,
) -> Topology:
    """Snap trace ends, classify them, and find crossings.

    Parameters
    ----------
    lines : array_like of (Multi)LineString
        Traces in a metric CRS.
    sides : array_like of int
        Hanging-wall side per trace (+1 left, -1 right of the digitising
        direction); decides branch (same side) from truncation.
    snap_tolerance : float
        Metres; ends closer than this to another trace or to the study-area
        boundary are moved onto it.
    branch_angle : float
        Largest angle (degrees) at which an end meeting another trace with its
        hanging wall on the same side counts as a branch rather than a truncation.
    area : shapely geometry, optional
        Study area; ends on or beyond its boundary are ``boundary`` nodes.

    Returns
    -------
    Topology

    Raises
    ------
    ParameterError
        For a negative tolerance or an angle outside 0-90.

    Examples
    --------
    >>> from shapely import LineString
    >>> main = LineString([(0, -100), (0, 100)])
    >>> abutting = LineString([(100, 0), (2, 0)])
    >>> topo = build_topology([main, abutting], [1, 1], snap_tolerance=5.0)
    >>> topo.nodes[["kind", "thrust", "other", "end"]].values.tolist()[-1]
    ['truncation', 1, 0, 'end']
    """
    if not snap_tolerance >= 0:
        raise ParameterError(f"snap_tolerance = {snap_tolerance} metres must be >= 0")
    if not 0.0 <= branch_angle <= 90.0:
        raise ParameterError(f"branch_angle = {branch_angle} degrees is outside 0-90")
    lines = np.asarray(lines, dtype=object)
    sides = np.asarray(sides, dtype=float)
    pieces, piece_trace = explode(lines)
    n_p = len(pieces)
    part = np.arange(n_p) - np.searchsorted(piece_trace, piece_trace)
    if n_p == 0:
        return Topology(pieces, piece_trace, pd.DataFrame(columns=_NODE_COLUMNS))
    tol = float(snap_tolerance)

    # ends: [piece 0 start, piece 0 end, piece 1 start, ...]
    end_piece = np.repeat(np.arange(n_p), 2)
    which = np.tile([0, 1], n_p)
    end_pt = np.where(
        which == 0,
        shapely.get_point(pieces[end_piece], 0),
        shapely.get_point(pieces[end_piece], -1),
    )
    end_xy = shapely.get_coordinates(end_pt)
    start_out, end_out = end_directions(pieces)
    out_dir = np.where((which == 0)[:, None], start_out[end_piece], end_out[end_piece])
    own_trace = piece_trace[end_piece]

    tree = shapely.STRtree(pieces)
    e, p = tree.query(end_pt, predicate="dwithin", distance=tol)
    other = piece_trace[p] != own_trace[e]
    e, p = e[other], p[other]
    d = shapely.distance(end_pt[e], pieces[p])
    order = np.lexsort((p, d, e))
    e, p, d = e[order], p[order], d[order]
    first = np.concatenate([[True], e[1:] != e[:-1]]) if len(e) else np.zeros(0, dtype=bool)
    e, p, d = e[first], p[first], d[first]

    n_e = 2 * n_p
    kind = np.full(n_e, "free_tip", dtype=object)
    target = np.full(n_e, -1, dtype=np.intp)
    angle = np.full(n_e, np.nan)
    snapped = end_xy.copy()

    if len(e):
        tgt = pieces[p]
        tgt_len = shapely.length(tgt)
        loc = shapely.line_locate_point(tgt, end_pt[e])
        at_end = (loc <= tol) | (loc >= tgt_len - tol)
        tgt_end = np.where(
            (loc <= tgt_len / 2)[:, None],
            shapely.get_coordinates(shapely.get_point(tgt, 0)),
            shapely.get_coordinates(shapely.get_point(tgt, -1)),
        )
        on_line = shapely.get_coordinates(shapely.line_interpolate_point(tgt, loc))
        snapped[e] = np.where(at_end[:, None], (end_xy[e] + tgt_end) / 2.0, on_line)
        tgt_tan = tangents_at(tgt, loc)
        own_tan = np.where((which[e] == 0)[:, None], -out_dir[e], out_dir[e])
        angle[e] = _axial_angle(out_dir[e], tgt_tan)
        hw_own = sides[own_trace[e], None] * left_normals(own_tan)
        hw_tgt = sides[piece_trace[p], None] * left_normals(tgt_tan)
        same_side = np.sum(hw_own * hw_tgt, axis=1) > 0
        branch = at_end | ((angle[e] <= branch_angle) & same_side)
        kind[e] = np.where(branch, "branch", "truncation")
        target[e] = piece_trace[p]

    if area is not None:
        free = np.flatnonzero(kind == "free_tip")
        boundary = shapely.boundary(area)
        near = shapely.distance(end_pt[free], boundary) <= tol
        outside = ~shapely.covers(area, end_pt[free])
        at_edge = free[near | outside]
        kind[at_edge] = "boundary"
        inside = free[near & ~outside]
        if len(inside):
            snapped[inside] = shapely.get_coordinates(
                shapely.get_point(shapely.shortest_line(end_pt[inside], boundary), -1)
            )

    gap = np.hypot(*(snapped - end_xy).T)
    coords, cindex = shapely.get_coordinates(pieces, return_index=True)
    counts = shapely.get_num_coordinates(pieces)
    first_c = np.concatenate([[0], np.cumsum(counts)[:-1]])
    coords[first_c] = snapped[0::2]
    coords[first_c + counts - 1] = snapped[1::2]
    new_pieces = shapely.set_coordinates(pieces.copy(), coords)

    ends = pd.DataFrame(
        {
            "kind": kind,
            "thrust": own_trace,
            "other": target,
            "end": np.where(which == 0, "start", "end"),
            "part": part[end_piece],
            "angle": angle,
            "gap_m": gap,
            "x": snapped[:, 0],
            "y": snapped[:, 1],
        }
    )
    crossings = _crossings(new_pieces, piece_trace, snapped, max(tol, 1e-6))
    nodes = pd.concat([ends, crossings], ignore_index=True) if len(crossings) else ends
    return Topology(new_pieces, piece_trace, nodes)


def _crossings(
    pieces: NDArray[np.object_],
    piece_trace: NDArray[np.intp],
    end_xy: NDArray[np.float64],
    near: float,
) -> pd.DataFrame:
    """Interior crossing points of pieces of different traces, away from snapped ends."""
    tree = shapely.STRtree(pieces)
    a, b = tree.query(pieces, predicate="crosses")
    keep = (a < b) & (piece_trace[a] != piece_trace[b])
    a, b = a[keep], b[keep]
    if len(a) == 0:
        return pd.DataFrame(columns=_NODE_COLUMNS)
    inter = shapely.intersection(pieces[a], pieces[b])
    pts, k = shapely.get_coordinates(inter, return_index=True)
    a, b = a[k], b[k]
    ends4 = np.stack([end_xy[2 * a], end_xy[2 * a + 1], end_xy[2 * b], end_xy[2 * b + 1]], axis=1)
    dist = np.min(np.hypot(*(ends4 - pts[:, None, :]).transpose(2, 0, 1)), axis=1)
    ok = dist > near
    a, b, pts = a[ok], b[ok], pts[ok]
    pt_geom = shapely.points(pts)
    ta = tangents_at(pieces[a], shapely.line_locate_point(pieces[a], pt_geom))
    tb = tangents_at(pieces[b], shapely.line_locate_point(pieces[b], pt_geom))
    return pd.DataFrame(
        {
            "kind": "crossing",
            "thrust": piece_trace[a],
            "other": piece_trace[b],
            "end": "",
            "part": -1,
            "angle": _axial_angle(ta, tb),
            "gap_m": 0.0,
            "x": pts[:, 0],
            "y": pts[:, 1],
        }
    )
