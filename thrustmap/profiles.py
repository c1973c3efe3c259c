"""Transport-parallel surface profiles and the regional surface slope of a wedge.

Profile lines run along the tectonic transport direction, from the hinterland
(the rear of the wedge) toward the foreland (its toe). Elevation is sampled
along them from a regular grid, and the surface slope ``alpha`` is fitted by
Theil-Sen regression (median of pairwise slopes, robust to the relief of
valleys and ridges; Sen 1968, J. Am. Stat. Assoc. 63, via
``scipy.stats.theilslopes``). ``alpha`` is positive where the surface descends
toward the foreland, the sign used by :mod:`thrustmap.wedge`. The rear and
frontal slopes are fitted separately on either side of a break: a distance
given by the user, the crossing of a named thrust, or the break that best
splits the profile into two straight segments.

Grids are :class:`thrustmap.io.grid.Grid` objects (``values`` 2-D, rows north
to south, NaN for nodata; ``x0``, ``y0`` the upper-left corner; ``cell`` in
metres; ``crs``) or any object with those attributes.
"""

from __future__ import annotations

import logging
from typing import TYPE_CHECKING, Any

import geopandas as gpd
import numpy as np
import pandas as pd
import shapely
from numpy.typing import ArrayLike, NDArray
from pyproj import CRS
from scipy.stats import theilslopes

from thrustmap.errors import CRSError, DegenerateDataError, InputError, ParameterError
from thrustmap.figures import add_caution
from thrustmap.io.grid import Grid

if TYPE_CHECKING:
    from matplotlib.figure import Figure

__all__ = [
    "sample_elevation",
    "check_grid_crs",
    "orient_lines",
    "transport_lines",
    "sample_profiles",
    "crossing_distances",
    "fit_slope",
    "split_slopes",
    "surface_profiles",
    "plot_profiles",
]

log = logging.getLogger(__name__)

Float = NDArray[np.float64]

# Theil-Sen uses all pairs; beyond this many points the profile is thinned evenly.
_MAX_FIT_POINTS = 2000


def sample_elevation(grid: Any, x: ArrayLike, y: ArrayLike) -> Float:
    """Elevation at points by bilinear interpolation between cell centres.

    Points outside the grid and points whose interpolation touches a nodata
    (NaN) cell give NaN (see :meth:`thrustmap.io.grid.Grid.sample`).

    Parameters
    ----------
    grid : Grid-like
        A :class:`~thrustmap.io.grid.Grid`, any object with a ``sample(x, y)``
        method, or an object with ``values``, ``x0``, ``y0``, ``cell`` (and
        optionally ``crs``) from which a Grid is made.
    x, y : array_like
        Coordinates in the grid's CRS, metres.

    Returns
    -------
    ndarray
        Elevations, shaped like the broadcast inputs.

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> g = SimpleNamespace(values=np.array([[0.0, 10.0], [20.0, 30.0]]), x0=0.0, y0=20.0, cell=10.0)
    >>> sample_elevation(g, [10.0, 5.0, 99.0], [10.0, 15.0, 0.0]).tolist()
    [15.0, 0.0, nan]
    """
    if not callable(getattr(grid, "sample", None)):
        grid = Grid(grid.values, x0=grid.x0, y0=grid.y0, cell=grid.cell, crs=getattr(grid, "crs", None))
    return np.asarray(grid.sample(x, y), dtype=float)


def _crs(value: Any) -> CRS | None:
    return None if value is None else CRS.from_user_input(value)


def check_grid_crs(grid: Any, crs: Any, *, layer: str = "layer") -> None:
    """Check that a grid and a vector layer share one projected, metric CRS.

    A side with no CRS is accepted (and logged): the other side's CRS is assumed.

    Parameters
    ----------
    grid : Grid-like
        Object with a ``crs`` attribute (pyproj CRS, WKT, EPSG code or None).
    crs : object
        The layer's CRS, anything pyproj accepts, or None.
    layer : str
        Layer name for messages.

    Raises
    ------
    CRSError
        When the CRSs differ or are geographic (distances must be in metres).

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> check_grid_crs(SimpleNamespace(crs="EPSG:32633"), "EPSG:32633", layer="profiles")
    """
    g, v = _crs(getattr(grid, "crs", None)), _crs(crs)
    for name, c in (("elevation grid", g), (f"layer {layer}", v)):
        if c is not None and not c.is_projected:
            raise CRSError(
                f"the {name} is in {c.name}, a geographic CRS; distances need a projected CRS "
                "in metres: reproject it (e.g. to the working UTM zone)",
                layer=layer,
            )
    if g is None or v is None:
        log.info("elevation grid or layer %s has no CRS; assuming they match", layer)
        return
    if g != v:
        raise CRSError(
            f"the elevation grid is in {g.name} but the layer is in {v.name}; reproject one "
            "so that both use the working CRS",
            layer=layer,
        )


def _line_geometries(lines: Any, *, layer: str) -> tuple[NDArray[np.object_], Any, pd.Index]:
    """LineString array, CRS and index of a line layer; multi-part lines merged or rejected."""
    if isinstance(lines, gpd.GeoDataFrame | gpd.GeoSeries):
        geoms, crs, index = np.asarray(lines.geometry.values, dtype=object), lines.crs, lines.index
    else:
        geoms = np.atleast_1d(np.asarray(lines, dtype=object))
        crs, index = None, pd.RangeIndex(len(geoms))
    merged = shapely.line_merge(np.where(shapely.get_type_id(geoms) == 5, geoms, None))
    geoms = np.where(shapely.get_type_id(geoms) == 5, merged, geoms)
    bad = (shapely.get_type_id(geoms) != 1) | shapely.is_empty(geoms) | (shapely.length(geoms) <= 0)
    if np.any(bad):
        row = int(np.flatnonzero(bad)[0])
        raise InputError(
            f"geometry {shapely.to_wkt(geoms[row], rounding_precision=1) if geoms[row] is not None else None} "
            "is not a single non-empty LineString (multi-part lines must join end to end)",
            layer=layer, row=row + 1, field="geometry",
        )
    return geoms, crs, index


def _direction(azimuth: float) -> Float:
    a = np.radians(azimuth)
    return np.array([np.sin(a), np.cos(a)])


def orient_lines(lines: ArrayLike, azimuth: float) -> NDArray[np.object_]:
    """Reverse the lines whose start-to-end direction points against an azimuth.

    Parameters
    ----------
    lines : array_like of LineString
        Lines in a projected CRS.
    azimuth : float
        Degrees clockwise from grid north toward which the lines should run.

    Returns
    -------
    ndarray of LineString

    Examples
    --------
    >>> shapely.to_wkt(orient_lines([shapely.LineString([(10, 0), (0, 0)])], 90)[0])
    'LINESTRING (0 0, 10 0)'
    """
    geoms = np.atleast_1d(np.asarray(lines, dtype=object))
    start = shapely.get_coordinates(shapely.get_point(geoms, 0))
    end = shapely.get_coordinates(shapely.get_point(geoms, -1))
    backward = (end - start) @ _direction(azimuth) < 0
    return np.where(backward, shapely.reverse(geoms), geoms)


def transport_lines(area: Any, *, azimuth: float, spacing: float) -> gpd.GeoDataFrame:
    """Parallel profile lines along the transport direction across a study area.

    Parameters
    ----------
    area : GeoDataFrame, GeoSeries or shapely geometry
        Study-area polygon(s) in a projected CRS; several are united.
    azimuth : float
        Transport direction, degrees clockwise from grid north of the CRS (the
        direction the hanging walls moved, toward the foreland).
    spacing : float
        Distance between the lines, metres; the set is centred on the area.

    Returns
    -------
    GeoDataFrame
        ``profile_id`` (1, 2, ...), ``azimuth_grid``, ``n_parts`` (pieces of the
        line inside the area; the longest is kept) and the LineString running
        from the hinterland to the foreland.

    Raises
    ------
    ParameterError
        For a spacing that is not positive or an empty area.
    DegenerateDataError
        When no line crosses the area.

    Examples
    --------
    >>> box = shapely.box(0, 0, 1000, 500)
    >>> lines = transport_lines(box, azimuth=90, spacing=200)
    >>> lines["profile_id"].tolist(), [round(g.length) for g in lines.geometry]
    ([1, 2, 3], [1000, 1000, 1000])
    """
    if isinstance(area, gpd.GeoDataFrame | gpd.GeoSeries):
        crs = area.crs
        polygon = shapely.union_all(np.asarray(area.geometry.values, dtype=object))
    else:
        crs, polygon = None, area
    if polygon is None or shapely.is_empty(polygon) or shapely.area(polygon) <= 0:
        raise ParameterError("the study area is empty; give at least one polygon with an area")
    spacing = float(spacing)
    if not np.isfinite(spacing) or spacing <= 0:
        raise ParameterError(f"spacing = {spacing} metres must be positive")
    u = _direction(azimuth)
    n = np.array([u[1], -u[0]])
    ring = shapely.get_coordinates(shapely.envelope(polygon))
    across, along = ring @ n, ring @ u
    width = across.max() - across.min()
    count = int(np.floor(width / spacing)) + 1
    offsets = across.min() + (width - (count - 1) * spacing) / 2 + spacing * np.arange(count)
    pad = along.max() - along.min() + spacing
    starts = offsets[:, None] * n + (along.min() - pad) * u
    ends = offsets[:, None] * n + (along.max() + pad) * u
    chords = shapely.linestrings(np.stack([starts, ends], axis=1))
    pieces = shapely.intersection(chords, polygon)
    parts, part_index = shapely.get_parts(pieces, return_index=True)
    keep = (shapely.get_type_id(parts) == 1) & ~shapely.is_empty(parts)
    parts, part_index = parts[keep], part_index[keep]
    if parts.size == 0:
        raise DegenerateDataError("no profile line crosses the study area; reduce the spacing")
    frame = pd.DataFrame({"line": part_index, "length": shapely.length(parts), "geometry": parts})
    n_parts = frame.groupby("line").size()
    longest = frame.loc[frame.groupby("line")["length"].idxmax()].sort_values("line")
    geoms = orient_lines(longest["geometry"].to_numpy(), azimuth)
    return gpd.GeoDataFrame(
        {
            "profile_id": np.arange(1, len(geoms) + 1),
            "azimuth_grid": float(azimuth) % 360.0,
            "n_parts": n_parts.loc[longest["line"]].to_numpy(),
        },
        geometry=list(geoms),
        crs=crs,
    )


def _profile_ids(lines: Any, count: int) -> NDArray[np.object_]:
    if isinstance(lines, gpd.GeoDataFrame) and "profile_id" in lines.columns:
        return lines["profile_id"].to_numpy()
    return np.arange(1, count + 1)


def sample_profiles(lines: Any, grid: Any, *, step: float | None = None, layer: str = "profiles") -> gpd.GeoDataFrame:
    """Elevation sampled at regular distances along profile lines.

    Parameters
    ----------
    lines : GeoDataFrame, GeoSeries or array of LineString
        Profile lines, each sampled from its start; ``profile_id`` is kept when
        the layer has one.
    grid : Grid-like
        Elevation grid (see :func:`sample_elevation`).
    step : float, optional
        Sample spacing along the lines, metres; default one grid cell.
    layer : str
        Layer name for messages.

    Returns
    -------
    GeoDataFrame
        Points with ``profile_id``, ``distance_m`` (from the line's start) and
        ``elevation`` (NaN outside the grid or over nodata); the last sample of
        each line is its end.

    Raises
    ------
    ParameterError
        For a step that is not positive.
    InputError, CRSError
        For lines that are not single LineStrings or a CRS that does not match the grid.

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> g = SimpleNamespace(values=np.array([[5.0, 5.0], [0.0, 0.0]]), x0=0.0, y0=20.0, cell=10.0, crs=None)
    >>> s = sample_profiles([shapely.LineString([(5, 15), (5, 5)])], g, step=5)
    >>> s["distance_m"].tolist(), s["elevation"].tolist()
    ([0.0, 5.0, 10.0], [5.0, 2.5, 0.0])
    """
    geoms, crs, _ = _line_geometries(lines, layer=layer)
    check_grid_crs(grid, crs, layer=layer)
    step = float(grid.cell if step is None else step)
    if not np.isfinite(step) or step <= 0:
        raise ParameterError(f"step = {step} metres must be positive")
    lengths = shapely.length(geoms)
    counts = np.floor(lengths / step).astype(int) + 1
    owner = np.repeat(np.arange(len(geoms)), counts + 1)
    first = np.repeat(np.cumsum(counts + 1) - (counts + 1), counts + 1)
    dist = (np.arange(owner.size) - first) * step
    dist = np.minimum(dist, lengths[owner])
    # the extra last sample lands on the line's end; drop it where it repeats the previous one
    dup = np.zeros(dist.size, dtype=bool)
    dup[1:] = (owner[1:] == owner[:-1]) & (dist[1:] <= dist[:-1] + 1e-9)
    owner, dist = owner[~dup], dist[~dup]
    points = shapely.line_interpolate_point(geoms[owner], dist)
    xy = shapely.get_coordinates(points)
    return gpd.GeoDataFrame(
        {
            "profile_id": _profile_ids(lines, len(geoms))[owner],
            "distance_m": dist,
            "elevation": sample_elevation(grid, xy[:, 0], xy[:, 1]),
        },
        geometry=points,
        crs=crs,
    )


def crossing_distances(line: Any, traces: Any) -> tuple[Float, NDArray[np.intp], NDArray[np.object_]]:
    """Where lines (e.g. thrust traces) cross a profile or section line.

    Parameters
    ----------
    line : LineString
        The profile or section line.
    traces : array_like of LineString
        Lines that may cross it.

    Returns
    -------
    distance : ndarray
        Distance along ``line`` of each crossing, metres, ascending.
    trace : ndarray of int
        Position in ``traces`` of the crossing trace.
    point : ndarray of Point
        The crossing points.

    Examples
    --------
    >>> d, i, _ = crossing_distances(shapely.LineString([(0, 0), (10, 0)]),
    ...                              [shapely.LineString([(4, -1), (4, 1)])])
    >>> d.tolist(), i.tolist()
    ([4.0], [0])
    """
    traces = np.atleast_1d(np.asarray(traces, dtype=object))
    hits = shapely.intersection(traces, line)
    parts, owner = shapely.get_parts(hits, return_index=True)
    # a trace running along the line gives a segment: use its first point
    points = np.where(shapely.get_type_id(parts) == 0, parts, shapely.get_point(parts, 0))
    ok = ~shapely.is_missing(points)
    ok[ok] = ~shapely.is_empty(points[ok])
    points, owner = points[ok], owner[ok]
    dist = shapely.line_locate_point(line, points)
    order = np.argsort(dist, kind="stable")
    return dist[order], owner[order], points[order]


def fit_slope(distance: ArrayLike, elevation: ArrayLike, *, min_samples: int = 10) -> dict[str, float]:
    """Robust surface slope of elevation against distance (Theil-Sen, 95% interval).

    Parameters
    ----------
    distance, elevation : array_like
        Metres along the profile (toward the foreland) and metres above datum;
        NaN pairs are left out (and counted).
    min_samples : int
        Fewest valid pairs that give a slope; fewer give NaN.

    Returns
    -------
    dict
        ``alpha``, ``alpha_low``, ``alpha_high`` (degrees, positive descending
        toward the foreland), ``n`` (pairs used) and ``n_nodata``.

    Examples
    --------
    >>> d = np.arange(0.0, 1000.0, 10.0)
    >>> round(fit_slope(d, 100 - d * np.tan(np.radians(3)))["alpha"], 6)
    3.0
    """
    d = np.asarray(distance, dtype=float)
    z = np.asarray(elevation, dtype=float)
    ok = np.isfinite(d) & np.isfinite(z)
    out = {"alpha": np.nan, "alpha_low": np.nan, "alpha_high": np.nan, "n": int(ok.sum()),
           "n_nodata": int((~ok).sum())}
    if ok.sum() < max(int(min_samples), 2) or np.ptp(d[ok]) == 0:
        return out
    d, z = d[ok], z[ok]
    if d.size > _MAX_FIT_POINTS:
        pick = np.linspace(0, d.size - 1, _MAX_FIT_POINTS).round().astype(int)
        d, z = d[pick], z[pick]
    res = theilslopes(z, d, 0.95)
    slope, low, high = res[0], res[2], res[3]
    out.update(alpha=float(-np.degrees(np.arctan(slope))),
               alpha_low=float(-np.degrees(np.arctan(high))),
               alpha_high=float(-np.degrees(np.arctan(low))))
    return out


def _best_break(d: Float, z: Float, min_samples: int) -> float:
    """Hinge of the continuous two-segment least-squares fit of z against d.

    Each candidate hinge k gives the model z = a + b d + c max(d - k, 0); the
    candidate with the least squared misfit wins. Candidates are the sample
    distances leaving at least ``min_samples`` points on each side (at most 400
    of them, evenly chosen).
    """
    order = np.argsort(d)
    d, z = d[order], z[order]
    n = d.size
    if n < 2 * min_samples + 1:
        raise DegenerateDataError(
            f"{n} samples are too few to split into two segments of at least {min_samples}"
        )
    candidates = d[min_samples:n - min_samples]
    if candidates.size > 400:
        candidates = candidates[np.linspace(0, candidates.size - 1, 400).round().astype(int)]
    scale = max(float(np.ptp(d)), 1.0)
    x = (d - d[0]) / scale  # conditioning
    k = (candidates - d[0]) / scale
    design = np.stack(np.broadcast_arrays(np.ones_like(x), x, np.maximum(x[None, :] - k[:, None], 0.0)), axis=-1)
    normal = np.einsum("kni,knj->kij", design, design)
    rhs = np.einsum("kni,n->ki", design, z)
    coef = np.linalg.solve(normal + 1e-12 * np.eye(3), rhs[..., None])[..., 0]
    misfit = np.sum((np.einsum("kni,ki->kn", design, coef) - z) ** 2, axis=1)
    return float(candidates[int(np.argmin(misfit))])


def split_slopes(
    distance: ArrayLike,
    elevation: ArrayLike,
    *,
    break_distance: float | None = None,
    min_samples: int = 10,
) -> dict[str, Any]:
    """Rear and frontal surface slopes on either side of a break.

    Parameters
    ----------
    distance, elevation : array_like
        Metres along the profile (from the hinterland toward the foreland) and
        elevations; NaN pairs are left out.
    break_distance : float, optional
        Where to split, metres along the profile. Default: the hinge of the
        continuous two-segment least-squares fit (each side with at least
        ``min_samples`` points); slopes are then refitted robustly on each side.
    min_samples : int
        Fewest samples per side.

    Returns
    -------
    dict
        ``break_m``, and for ``rear`` and ``front`` the entries of
        :func:`fit_slope` prefixed ``alpha_rear``/``alpha_front``.

    Raises
    ------
    DegenerateDataError
        When a break must be fitted but there are too few samples.

    Examples
    --------
    >>> d = np.arange(0.0, 2000.0, 10.0)
    >>> z = np.where(d < 1000, 500 - d * 0.02, 480 - (d - 1000) * 0.08)
    >>> r = split_slopes(d, z)
    >>> round(r["break_m"]), round(r["alpha_rear"], 3), round(r["alpha_front"], 3)
    (1000, 1.146, 4.574)
    """
    d = np.asarray(distance, dtype=float)
    z = np.asarray(elevation, dtype=float)
    ok = np.isfinite(d) & np.isfinite(z)
    if break_distance is None:
        brk = _best_break(d[ok], z[ok], max(int(min_samples), 2))
    else:
        brk = float(break_distance)
    out: dict[str, Any] = {"break_m": brk}
    for name, side in (("rear", d < brk), ("front", d >= brk)):
        fit = fit_slope(d[side], z[side], min_samples=min_samples)
        out.update({f"alpha_{name}": fit["alpha"], f"alpha_{name}_low": fit["alpha_low"],
                    f"alpha_{name}_high": fit["alpha_high"], f"n_{name}": fit["n"]})
    return out


def surface_profiles(
    lines: Any,
    grid: Any,
    *,
    azimuth: float | None = None,
    step: float | None = None,
    window_start: float | None = None,
    window_end: float | None = None,
    break_distance: float | None = None,
    thrusts: gpd.GeoDataFrame | None = None,
    break_thrust: str | None = None,
    toe_thrust: str | None = None,
    min_samples: int = 10,
) -> gpd.GeoDataFrame:
    """The ``profiles`` layer: regional, rear and frontal surface slopes along each profile line.

    Parameters
    ----------
    lines : GeoDataFrame, GeoSeries or array of LineString
        Profile lines in the grid's projected CRS (e.g. from
        :func:`transport_lines`); ``profile_id`` is kept when present.
    grid : Grid-like
        Elevation grid (see :func:`sample_elevation`).
    azimuth : float, optional
        Transport direction, degrees from grid north; lines running against it
        are reversed. Default: each line's digitised direction is the transport
        direction.
    step : float, optional
        Sample spacing, metres; default one grid cell.
    window_start, window_end : float, optional
        Part of each profile used for the slopes, metres from its start.
    break_distance : float, optional
        Split between the rear and frontal slopes, metres from the start.
    thrusts : GeoDataFrame, optional
        Thrust traces with ``thrust_id``; with ``break_thrust`` the split is where
        that thrust crosses each profile.
    break_thrust : str, optional
        ``thrust_id`` of the thrust to split at.
    toe_thrust : str, optional
        ``thrust_id`` of the frontal thrust (the wedge's toe): the window ends
        where it crosses each profile, leaving the foreland out.
    min_samples : int
        Fewest valid samples for a slope (per window or side).

    Returns
    -------
    GeoDataFrame
        One row per line: ``profile_id``, ``azimuth_grid``, ``length_m``,
        ``n_samples``, ``n_nodata``, ``window_start_m``, ``window_end_m``,
        ``alpha``, ``alpha_low``, ``alpha_high`` (regional slope and its 95%
        interval, degrees), ``break_m``, ``break_method`` ("given", "thrust
        <id>" or "fitted"), ``alpha_rear`` and ``alpha_front`` with their
        intervals, ``note`` (why a value is missing) and the line geometry.

    Raises
    ------
    ParameterError
        For bad options (window out of order, unknown thrust).
    InputError, CRSError
        For bad line geometries or CRS mismatch.

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> x = np.arange(0, 4000, 50.0)
    >>> z = np.tile(800 - x * np.tan(np.radians(2.0)), (10, 1))
    >>> g = SimpleNamespace(values=z, x0=-25.0, y0=500.0, cell=50.0, crs=None)
    >>> p = surface_profiles([shapely.LineString([(0, 250), (3900, 250)])], g, azimuth=90)
    >>> round(float(p.loc[0, "alpha"]), 3)
    2.0
    """
    geoms, crs, index = _line_geometries(lines, layer="profiles")
    if azimuth is not None:
        geoms = orient_lines(geoms, azimuth)
    if window_start is not None and window_end is not None and window_end <= window_start:
        raise ParameterError(
            f"window_end = {window_end} m must be greater than window_start = {window_start} m"
        )
    break_lines = _thrust_lines(thrusts, break_thrust, "break_thrust")
    toe_lines = _thrust_lines(thrusts, toe_thrust, "toe_thrust")
    ids = _profile_ids(lines, len(geoms))
    # sampled by position, so repeated profile ids stay apart
    samples = sample_profiles(gpd.GeoDataFrame({"profile_id": np.arange(len(geoms))}, geometry=list(geoms), crs=crs),
                              grid, step=step)
    lengths = shapely.length(geoms)
    rows = []
    for i, group in samples.groupby("profile_id", sort=True):
        pid = ids[i]
        d, z = group["distance_m"].to_numpy(), group["elevation"].to_numpy()
        lo = 0.0 if window_start is None else float(window_start)
        hi = lengths[i] if window_end is None else float(window_end)
        notes = []
        if toe_lines is not None:
            toe, _, _ = crossing_distances(geoms[i], toe_lines)
            if toe.size:
                hi = min(hi, float(toe[0]))
            else:
                notes.append(f"toe thrust {toe_thrust} does not cross this profile; window not cut")
        inside = (d >= lo) & (d <= hi)
        fit = fit_slope(d[inside], z[inside], min_samples=min_samples)
        if np.isnan(fit["alpha"]):
            notes.append(f"only {fit['n']} valid samples in the window (need {min_samples})")
        brk, method = break_distance, "given"
        if brk is None and break_lines is not None:
            dist, _, _ = crossing_distances(geoms[i], break_lines)
            if dist.size:
                brk, method = float(dist[0]), f"thrust {break_thrust}"
            else:
                notes.append(f"thrust {break_thrust} does not cross this profile; break fitted")
        if brk is None:
            method = "fitted"
        try:
            split = split_slopes(d[inside], z[inside], break_distance=brk, min_samples=min_samples)
        except DegenerateDataError as exc:
            split = {"break_m": np.nan}
            notes.append(str(exc))
        for side in ("rear", "front"):
            if np.isnan(split.get(f"alpha_{side}", np.nan)) and "break_m" in split and np.isfinite(split["break_m"]):
                notes.append(f"too few samples for the {side} slope")
        rows.append({
            "profile_id": pid,
            "azimuth_grid": _azimuth_of(geoms[i]),
            "length_m": float(lengths[i]),
            "n_samples": int(d.size),
            "n_nodata": int(np.isnan(z).sum()),
            "window_start_m": lo,
            "window_end_m": float(hi),
            "alpha": fit["alpha"], "alpha_low": fit["alpha_low"], "alpha_high": fit["alpha_high"],
            "break_m": split.get("break_m", np.nan),
            "break_method": method,
            **{k: split.get(k, np.nan) for k in ("alpha_rear", "alpha_rear_low", "alpha_rear_high",
                                                 "alpha_front", "alpha_front_low", "alpha_front_high")},
            "note": "; ".join(notes),
        })
    return gpd.GeoDataFrame(pd.DataFrame(rows, index=index), geometry=list(geoms), crs=crs)


def _thrust_lines(thrusts: gpd.GeoDataFrame | None, thrust_id: str | None, option: str) -> NDArray[np.object_] | None:
    """Traces of one thrust, by id, or None when no id is asked for."""
    if thrust_id is None:
        return None
    if thrusts is None or "thrust_id" not in thrusts.columns:
        raise ParameterError(f"{option} needs a thrust_traces layer with a thrust_id field")
    chosen = thrusts[thrusts["thrust_id"].astype(str) == str(thrust_id)]
    if chosen.empty:
        raise ParameterError(
            f"{option} = {thrust_id!r} is not a thrust_id of the thrust layer; ids are: "
            + ", ".join(sorted(thrusts["thrust_id"].astype(str).unique()))
        )
    return np.asarray(chosen.geometry.values, dtype=object)


def _azimuth_of(line: Any) -> float:
    """Azimuth (degrees from grid north) from a line's start to its end."""
    (x0, y0), (x1, y1) = shapely.get_coordinates(line)[[0, -1]]
    return float(np.degrees(np.arctan2(x1 - x0, y1 - y0)) % 360.0)


def plot_profiles(
    samples: gpd.GeoDataFrame, profiles: gpd.GeoDataFrame, *, title: str | None = None
) -> Figure:
    """Figure of elevation along each profile with the fitted rear and frontal slopes.

    Parameters
    ----------
    samples : GeoDataFrame
        Output of :func:`sample_profiles`.
    profiles : GeoDataFrame
        Output of :func:`surface_profiles` for the same lines.
    title : str, optional
        Figure title.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> g = SimpleNamespace(values=np.tile(np.linspace(900, 100, 80), (4, 1)), x0=0.0, y0=200.0,
    ...                     cell=50.0, crs=None)
    >>> lines = [shapely.LineString([(0, 100), (3990, 100)])]
    >>> fig = plot_profiles(sample_profiles(lines, g), surface_profiles(lines, g))
    >>> len(fig.axes)
    1
    """
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots(figsize=(8.0, 4.5), layout="constrained")
    colours = plt.get_cmap("viridis")(np.linspace(0, 0.85, max(len(profiles), 1)))
    for colour, (_, prof) in zip(colours, profiles.iterrows(), strict=False):
        s = samples[samples["profile_id"] == prof["profile_id"]]
        d, z = s["distance_m"].to_numpy() / 1000.0, s["elevation"].to_numpy()
        ax.plot(d, z, color=colour, lw=1.0, label=f"{prof['profile_id']}: alpha {prof['alpha']:.2f} (rear {prof['alpha_rear']:.2f}, "
                f"front {prof['alpha_front']:.2f})")
        brk = prof["break_m"]
        if np.isfinite(brk):
            ax.axvline(brk / 1000.0, color=colour, lw=0.6, ls=":")
            for side, sel in (("rear", s["distance_m"] < brk), ("front", s["distance_m"] >= brk)):
                a = prof[f"alpha_{side}"]
                ok = sel & s["elevation"].notna()
                if not np.isfinite(a) or not ok.any():
                    continue
                dd, zz = s.loc[ok, "distance_m"].to_numpy(), s.loc[ok, "elevation"].to_numpy()
                slope = -np.tan(np.radians(a))
                z0 = np.median(zz - slope * dd)
                ax.plot(dd[[0, -1]] / 1000.0, z0 + slope * dd[[0, -1]], color=colour, lw=2.0, alpha=0.6)
    ax.set_xlabel("distance along transport (km, hinterland to foreland)")
    ax.set_ylabel("elevation (m)")
    if title:
        ax.set_title(title)
    ax.legend(fontsize=7, ncols=2)
    add_caution(ax)
    return fig
