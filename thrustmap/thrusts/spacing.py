"""Thrust spacing measured on scanlines parallel to the transport direction.

Parallel scanlines at a fixed interval cross the study area along the
transport direction; their intersections with the traces are ordered from the
hinterland to the foreland and the map distance between successive thrusts is
the spacing. Statistics per thrust pair and overall carry a seeded bootstrap
confidence interval of the mean.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import pandas as pd
import shapely
from numpy.typing import ArrayLike, NDArray

from thrustmap.errors import ParameterError
from thrustmap.thrusts._geometry import explode, left_normals, segments, unit_vectors

__all__ = [
    "MAX_SCANLINES",
    "SPACING_COLUMNS",
    "cast_scanlines",
    "scanline_intersections",
    "successive_pairs",
    "spacing_statistics",
]

MAX_SCANLINES = 100_000
SPACING_COLUMNS = [
    "pair",
    "hinterland_thrust",
    "foreland_thrust",
    "n",
    "mean_m",
    "median_m",
    "std_m",
    "cv",
    "ci_low_m",
    "ci_high_m",
]


def cast_scanlines(
    area: shapely.Geometry, azimuth_grid: float, interval: float | None = None
) -> tuple[NDArray[np.object_], NDArray[np.intp]]:
    """Scanlines along ``azimuth_grid`` every ``interval`` metres across the study area.

    Scanlines are centred on the area's extent across the transport direction
    and clipped to the area; a scanline cut into pieces by the area outline
    gives several segments with the same scanline number.

    Parameters
    ----------
    area : shapely (Multi)Polygon
        Study area, metric CRS.
    azimuth_grid : float
        Transport azimuth, degrees from grid north; scanlines run this way.
    interval : float, optional
        Spacing of the scanlines, metres. Default: 1/100 of the area's extent
        across the transport direction.

    Returns
    -------
    segments : ndarray of LineString
        Scanline segments inside the area, each digitised toward the foreland.
    scanline : ndarray of int
        Scanline number (0-based, in order across the area) of each segment.

    Raises
    ------
    ParameterError
        For a non-positive interval or more than ``MAX_SCANLINES`` scanlines.

    Examples
    --------
    >>> from shapely import box
    >>> segs, number = cast_scanlines(box(0, 0, 1000, 300), 90.0, 100.0)
    >>> number.tolist(), [round(s.length, 6) for s in segs]
    ([0, 1, 2], [1000.0, 1000.0, 1000.0])
    """
    t = unit_vectors(azimuth_grid)
    across = left_normals(t)
    coords = shapely.get_coordinates(area)
    u, v = coords @ t, coords @ across
    width = float(v.max() - v.min())
    if interval is None:
        interval = width / 100.0 if width > 0 else 1.0
    if not interval > 0:
        raise ParameterError(f"scanline_interval = {interval} metres must be > 0")
    count = max(1, int(np.floor(width / interval + 1e-9)))
    if count > MAX_SCANLINES:
        raise ParameterError(
            f"scanline_interval = {interval} metres gives {count} scanlines across "
            f"{width:.0f} m; the limit is {MAX_SCANLINES}: use a larger interval"
        )
    offset = v.min() + (width - (count - 1) * interval) / 2.0 + interval * np.arange(count)
    a = (u.min() - 1.0) * t + offset[:, None] * across
    b = (u.max() + 1.0) * t + offset[:, None] * across
    lines = shapely.linestrings(np.stack([a, b], axis=1))
    parts, number = explode(shapely.intersection(lines, area))
    keep = (shapely.get_type_id(parts) == 1) & (shapely.length(parts) > 0)
    return parts[keep], number[keep]


def scanline_intersections(
    scan_segments: ArrayLike, pieces: ArrayLike, piece_trace: ArrayLike, azimuth_grid: float
) -> pd.DataFrame:
    """Intersections of scanline segments with trace pieces, ordered along each segment.

    The scanline segments must be straight and parallel to ``azimuth_grid``
    (as :func:`cast_scanlines` makes them). Every straight segment of every
    piece is intersected with the scanline levels its across-transport range
    spans (half-open, so a vertex lying on a scanline counts once), in one
    vectorised pass.

    Returns
    -------
    DataFrame
        ``segment`` (index into ``scan_segments``), ``thrust`` (trace index), ``u``
        (metres along the transport direction), ``x``, ``y``; sorted by segment
        then ``u`` (hinterland first).

    Examples
    --------
    >>> from shapely import LineString
    >>> seg = [LineString([(0, 0), (100, 0)])]
    >>> pcs = [LineString([(70, -5), (70, 5)]), LineString([(20, -5), (20, 5)])]
    >>> scanline_intersections(seg, pcs, [0, 1], 90.0)[["thrust", "u"]].values.tolist()
    [[1.0, 20.0], [0.0, 70.0]]
    """
    scan_segments = np.asarray(scan_segments, dtype=object)
    pieces = np.asarray(pieces, dtype=object)
    piece_trace = np.asarray(piece_trace, dtype=np.intp)
    t = unit_vectors(azimuth_grid)
    across = left_normals(t)
    empty = pd.DataFrame(
        {
            "segment": np.zeros(0, np.intp),
            "thrust": np.zeros(0, np.intp),
            "u": np.zeros(0),
            "x": np.zeros(0),
            "y": np.zeros(0),
        }
    )
    if len(scan_segments) == 0 or len(pieces) == 0:
        return empty
    s0 = shapely.get_coordinates(shapely.get_point(scan_segments, 0))
    s1 = shapely.get_coordinates(shapely.get_point(scan_segments, -1))
    levels, level_of = np.unique(np.round(s0 @ across, 6), return_inverse=True)
    level_of = np.asarray(level_of).reshape(-1)
    su0 = np.minimum(s0 @ t, s1 @ t)
    su1 = np.maximum(s0 @ t, s1 @ t)
    u_min = float(su0.min())
    span = float(su1.max() - u_min) + 1.0
    key0 = level_of + 0.5 * (su0 - u_min) / span
    seg_order = np.argsort(key0, kind="stable")
    key0 = key0[seg_order]

    a, b, owner = segments(pieces)
    va, vb = a @ across, b @ across
    lo = np.searchsorted(levels, np.minimum(va, vb), side="left")
    hi = np.searchsorted(levels, np.maximum(va, vb), side="left")
    count = np.maximum(hi - lo, 0)
    rep = np.repeat(np.arange(len(a)), count)
    if len(rep) == 0:
        return empty
    first = np.concatenate([[0], np.cumsum(count)[:-1]])
    level = lo[rep] + (np.arange(len(rep)) - first[rep])
    f = (levels[level] - va[rep]) / (vb[rep] - va[rep])
    xy = a[rep] + f[:, None] * (b[rep] - a[rep])
    u = xy @ t
    key = level + 0.5 * (u - u_min) / span
    pos = np.searchsorted(key0, key, side="right") - 1
    cand = seg_order[np.maximum(pos, 0)]
    inside = (
        (pos >= 0) & (level_of[cand] == level) & (u <= su1[cand] + 1e-9) & (u >= su0[cand] - 1e-9)
    )
    frame = pd.DataFrame(
        {
            "segment": cand[inside],
            "thrust": piece_trace[owner[rep[inside]]],
            "u": u[inside],
            "x": xy[inside, 0],
            "y": xy[inside, 1],
        }
    )
    order = np.lexsort(
        (frame["thrust"].to_numpy(), frame["u"].to_numpy(), frame["segment"].to_numpy())
    )
    return frame.iloc[order].reset_index(drop=True)


def successive_pairs(intersections: pd.DataFrame) -> pd.DataFrame:
    """Successive crossings of different thrusts along each scanline segment.

    Returns
    -------
    DataFrame
        ``segment``, ``hinterland`` and ``foreland`` (trace indices),
        ``length_m`` (distance along transport) and the end coordinates
        ``x0``, ``y0``, ``x1``, ``y1``.

    Examples
    --------
    >>> import pandas as pd
    >>> inter = pd.DataFrame({"segment": [0, 0, 0], "thrust": [1, 1, 0],
    ...     "u": [0.0, 5.0, 40.0], "x": [0.0, 5.0, 40.0], "y": [0.0, 0.0, 0.0]})
    >>> successive_pairs(inter)[["hinterland", "foreland", "length_m"]].values.tolist()
    [[1.0, 0.0, 35.0]]
    """
    seg = intersections["segment"].to_numpy()
    thrust = intersections["thrust"].to_numpy()
    u = intersections["u"].to_numpy(dtype=float)
    x = intersections["x"].to_numpy(dtype=float)
    y = intersections["y"].to_numpy(dtype=float)
    ok = (seg[1:] == seg[:-1]) & (thrust[1:] != thrust[:-1])
    i = np.flatnonzero(ok)
    return pd.DataFrame(
        {
            "segment": seg[i],
            "hinterland": thrust[i],
            "foreland": thrust[i + 1],
            "length_m": u[i + 1] - u[i],
            "x0": x[i],
            "y0": y[i],
            "x1": x[i + 1],
            "y1": y[i + 1],
        }
    )


def _bootstrap_means(
    values: NDArray[np.float64],
    start: NDArray[np.intp],
    size: NDArray[np.intp],
    rng: np.random.Generator,
    n_boot: int,
) -> NDArray[np.float64]:
    """(n_boot, groups) bootstrap means of contiguous groups, drawn in bounded chunks."""
    group = np.repeat(np.arange(len(size)), size)
    base = start[group].astype(np.int32)
    top = (size[group] - 1).astype(np.int32)
    scale = size[group].astype(np.float32)
    out = np.empty((n_boot, len(size)))
    chunk = max(1, int(4_000_000 // max(len(values), 1)))
    for b0 in range(0, n_boot, chunk):
        b = min(chunk, n_boot - b0)
        r = rng.random((b, len(values)), dtype=np.float32)
        r *= scale
        draw = r.astype(np.int32)
        np.minimum(draw, top, out=draw)
        draw += base
        out[b0 : b0 + b] = np.add.reduceat(values[draw], start, axis=1) / size
    return out


def spacing_statistics(
    pairs: pd.DataFrame,
    *,
    seed: int = 0,
    n_boot: int = 1000,
    confidence: float = 0.95,
    subsets: Mapping[str, ArrayLike] | None = None,
) -> pd.DataFrame:
    """Spacing statistics per (hinterland, foreland) thrust pair and over all pairs.

    Parameters
    ----------
    pairs : DataFrame
        ``hinterland_thrust``, ``foreland_thrust`` (ids) and ``length_m``, one
        row per successive pair on a scanline.
    seed : int
        Seed of the bootstrap generator (numpy ``default_rng``).
    n_boot : int
        Bootstrap resamples.
    confidence : float
        Level of the percentile confidence interval of the mean.
    subsets : mapping of str to array_like of bool, optional
        Further overall rows: label -> mask over the rows of ``pairs``. A pair
        counts in a subset when any of its rows is selected (subsets are
        made of whole pairs).

    Returns
    -------
    DataFrame
        ``SPACING_COLUMNS``: one row per pair (``pair`` = ``"H-F"``), one with
        ``pair`` = ``"all"``, then one per subset (``pair`` = its label).
        ``std_m`` uses n - 1; ``cv`` = std/mean. Confidence intervals are
        bootstrap percentile intervals of the mean; an overall one resamples
        within each pair (stratified by pair), so the share of each pair stays
        as measured. The interval is NaN for fewer than two distances.

    Raises
    ------
    ParameterError
        For ``n_boot`` < 1 or ``confidence`` outside (0, 1).

    Examples
    --------
    >>> import pandas as pd
    >>> p = pd.DataFrame({"hinterland_thrust": ["T1"] * 3 + ["T2"], "foreland_thrust": ["T2"] * 3
    ...     + ["T3"], "length_m": [900.0, 1000.0, 1100.0, 500.0]})
    >>> s = spacing_statistics(p, seed=1, subsets={"first": [True] * 3 + [False]})
    >>> s[["pair", "n", "mean_m", "median_m", "std_m", "cv"]].values.tolist()[0]
    ['T1-T2', 3, 1000.0, 1000.0, 100.0, 0.1]
    >>> s[["pair", "n", "mean_m"]].values.tolist()[2:]
    [['all', 4, 875.0], ['first', 3, 1000.0]]
    """
    if n_boot < 1:
        raise ParameterError(f"n_boot = {n_boot} must be >= 1")
    if not 0.0 < confidence < 1.0:
        raise ParameterError(f"confidence = {confidence} must be between 0 and 1")
    masks = {"all": np.ones(len(pairs), dtype=bool)}
    masks.update({k: np.asarray(v, dtype=bool) for k, v in (subsets or {}).items()})
    frame = pd.DataFrame(
        {
            "hinterland_thrust": pairs["hinterland_thrust"].astype(object).to_numpy(),
            "foreland_thrust": pairs["foreland_thrust"].astype(object).to_numpy(),
            "length_m": pairs["length_m"].to_numpy(dtype=float),
        }
    )
    order = frame.sort_values(
        ["hinterland_thrust", "foreland_thrust"], kind="stable"
    ).index.to_numpy()
    frame = frame.iloc[order].reset_index(drop=True)
    masks = {k: m[order] for k, m in masks.items()}
    rng = np.random.default_rng(seed)
    q = [(1.0 - confidence) / 2.0, 1.0 - (1.0 - confidence) / 2.0]
    grouped = frame.groupby(["hinterland_thrust", "foreland_thrust"], sort=True)["length_m"]
    table = grouped.agg(n="size", mean_m="mean", median_m="median", std_m="std").reset_index()
    values = frame["length_m"].to_numpy()
    size = table["n"].to_numpy(dtype=np.intp)
    start = np.concatenate([[0], np.cumsum(size)[:-1]]).astype(np.intp)
    ci = np.full((len(table), 2), np.nan)
    means = np.zeros((len(table), 0))
    if len(values):
        means = np.ascontiguousarray(_bootstrap_means(values, start, size, rng, n_boot).T)
        ci = np.quantile(means, q, axis=1).T
        ci[size < 2] = np.nan
    table["ci_low_m"], table["ci_high_m"] = ci[:, 0], ci[:, 1]
    table["pair"] = (
        table["hinterland_thrust"].astype(str) + "-" + table["foreland_thrust"].astype(str)
    )
    group_of_row = np.repeat(np.arange(len(size)), size)
    rows = []
    for label, mask in masks.items():
        chosen = np.zeros(len(size), dtype=bool)
        chosen[group_of_row[mask]] = True
        v = values[np.repeat(chosen, size)]
        band = np.full(2, np.nan)
        if len(v) > 1:
            band = np.quantile(size[chosen] @ means[chosen] / size[chosen].sum(), q)
        rows.append(
            {
                "pair": label,
                "hinterland_thrust": "",
                "foreland_thrust": "",
                "n": len(v),
                "mean_m": v.mean() if len(v) else np.nan,
                "median_m": np.median(v) if len(v) else np.nan,
                "std_m": v.std(ddof=1) if len(v) > 1 else np.nan,
                "ci_low_m": band[0],
                "ci_high_m": band[1],
            }
        )
    out = pd.concat([table, pd.DataFrame(rows)], ignore_index=True)
    out["n"] = out["n"].astype("int64")
    out["cv"] = out["std_m"] / out["mean_m"]
    return out[SPACING_COLUMNS]
