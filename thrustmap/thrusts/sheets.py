"""Thrust sheets: the polygons between successive thrusts inside the study area.

The snapped traces, clipped to the study area, are noded together with the
area boundary (snap-rounded to ``grid_size`` metres, so ends snapped onto a
trace really split it) and polygonised. Each noded edge that comes from a
trace separates two sheets: the one on the trace's hanging-wall side rides on
that thrust (the thrust is its floor), the one on the footwall side lies under
it (the thrust is its roof).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import shapely
from numpy.typing import ArrayLike, NDArray

from thrustmap.thrusts._geometry import explode, left_normals, tangents_at, unit_vectors

__all__ = ["build_sheets"]

_COLUMNS = ["geometry", "floor", "roof", "floors", "roofs", "area_m2", "mean_width_m", "position_m"]


def build_sheets(
    pieces: ArrayLike,
    piece_trace: ArrayLike,
    sides: ArrayLike,
    area: shapely.Geometry,
    *,
    transport_grid: float,
    grid_size: float = 1e-3,
) -> pd.DataFrame:
    """Polygonise traces with the study-area boundary; floor and roof thrust per sheet.

    Parameters
    ----------
    pieces : array_like of LineString
        Snapped single-part traces, metric CRS.
    piece_trace : array_like of int
        Trace index of each piece.
    sides : array_like of int
        Hanging-wall side per trace (+1 left, -1 right of the digitising direction).
    area : shapely (Multi)Polygon
        Study area.
    transport_grid : float
        Transport azimuth (degrees, grid north).
    grid_size : float
        Snap-rounding grid of the noding, metres.

    Returns
    -------
    DataFrame
        One row per sheet, ordered from the hinterland to the foreland:
        ``geometry`` (Polygon), ``floor`` and ``roof`` (trace index of the thrust
        sharing the longest boundary on each side, -1 for none), ``floors`` and
        ``roofs`` (all such trace indices, longest shared boundary first),
        ``area_m2``, ``mean_width_m`` (area divided by the extent across the
        transport direction: the mean chord along transport) and
        ``position_m`` (centroid coordinate along transport).

    Examples
    --------
    >>> from shapely import LineString, box
    >>> t = [LineString([(1000, -10), (1000, 1010)]), LineString([(2000, -10), (2000, 1010)])]
    >>> s = build_sheets(t, [0, 1], [1, 1], box(0, 0, 3000, 1000), transport_grid=90.0)
    >>> s[["floor", "roof"]].values.tolist()
    [[0, -1], [1, 0], [-1, 1]]
    >>> s["mean_width_m"].round(6).tolist()
    [1000.0, 1000.0, 1000.0]
    """
    pieces = np.asarray(pieces, dtype=object)
    piece_trace = np.asarray(piece_trace, dtype=np.intp)
    sides = np.asarray(sides, dtype=float)
    inside = shapely.covered_by(pieces, area)
    clipped = pieces.copy()
    clipped[~inside] = shapely.intersection(pieces[~inside], area)
    parts, owner = explode(clipped)
    line = (shapely.get_type_id(parts) == 1) & (shapely.length(parts) > 0)
    parts, part_trace = parts[line], piece_trace[owner[line]]
    noded = shapely.union_all(
        np.concatenate([parts, [shapely.boundary(area)]]), grid_size=grid_size
    )
    polys = shapely.get_parts(shapely.polygonize(shapely.get_parts(noded)))
    polys = polys[shapely.contains(area, shapely.point_on_surface(polys))]
    t = unit_vectors(transport_grid)
    across = left_normals(t)
    out = _frame(polys, t, across)
    if len(parts) == 0 or len(polys) == 0:
        return out.reset_index(drop=True)

    edges = shapely.get_parts(noded)
    mids = shapely.line_interpolate_point(edges, 0.5, normalized=True)
    (m, k), dist = shapely.STRtree(parts).query_nearest(
        mids, max_distance=10 * grid_size, return_distance=True, all_matches=False
    )
    tangent = tangents_at(parts[k], shapely.line_locate_point(parts[k], mids[m]))
    mid_xy = shapely.get_coordinates(mids[m])
    eps = 10 * grid_size
    left_pt = shapely.points(mid_xy + eps * left_normals(tangent))
    right_pt = shapely.points(mid_xy - eps * left_normals(tangent))
    tree = shapely.STRtree(out["geometry"].to_numpy())
    left_sheet = _containing(tree, left_pt)
    right_sheet = _containing(tree, right_pt)
    trace = part_trace[k]
    hw_left = sides[trace] > 0
    hw_sheet = np.where(hw_left, left_sheet, right_sheet)
    fw_sheet = np.where(hw_left, right_sheet, left_sheet)
    bounding = hw_sheet != fw_sheet
    length = shapely.length(edges[m])
    links = pd.concat(
        [
            pd.DataFrame({"sheet": hw_sheet, "trace": trace, "role": "floor", "length": length}),
            pd.DataFrame({"sheet": fw_sheet, "trace": trace, "role": "roof", "length": length}),
        ]
    )
    links = links[np.tile(bounding, 2) & (links["sheet"].to_numpy() >= 0)]
    summed = (
        links.groupby(["sheet", "role", "trace"], as_index=False)["length"]
        .sum()
        .sort_values(["sheet", "role", "length", "trace"], ascending=[True, True, False, True])
    )
    for role in ("floor", "roof"):
        sel = summed[summed["role"] == role]
        lists = sel.groupby("sheet")["trace"].agg(list)
        out[role + "s"] = [lists.get(i, []) for i in range(len(out))]
        out[role] = [v[0] if v else -1 for v in out[role + "s"]]
    return out.reset_index(drop=True)


def _frame(
    polys: NDArray[np.object_], t: NDArray[np.float64], across: NDArray[np.float64]
) -> pd.DataFrame:
    coords, index = shapely.get_coordinates(polys, return_index=True)
    v = coords @ across
    lo = np.full(len(polys), np.inf)
    hi = np.full(len(polys), -np.inf)
    np.minimum.at(lo, index, v)
    np.maximum.at(hi, index, v)
    area = shapely.area(polys)
    centroid = shapely.get_coordinates(shapely.centroid(polys))
    frame = pd.DataFrame(
        {
            "geometry": polys,
            "floor": -1,
            "roof": -1,
            "floors": [[] for _ in range(len(polys))],
            "roofs": [[] for _ in range(len(polys))],
            "area_m2": area,
            "mean_width_m": area / np.where(hi > lo, hi - lo, np.nan),
            "position_m": centroid @ t if len(polys) else np.zeros(0),
        },
        columns=_COLUMNS,
    )
    return frame.sort_values("position_m", kind="stable").reset_index(drop=True)


def _containing(tree: shapely.STRtree, points: NDArray[np.object_]) -> NDArray[np.intp]:
    """Index of the polygon containing each point, -1 for none."""
    p, s = tree.query(points, predicate="within")
    out = np.full(len(points), -1, dtype=np.intp)
    out[p] = s
    return out
