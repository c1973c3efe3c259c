"""Cross-sections: attitudes projected with apparent dip, topography, thrust crossings, down-plunge views.

A section line is a LineString in the working (projected) CRS, read from its
start to its end; distances along it are metres from the start. Attitudes
within a buffer are projected onto it perpendicularly and drawn with their
apparent dip in the section's vertical plane::

    tan(apparent dip) = tan(dip) * sin(angle between section and strike)
                      = tan(dip) * cos(angle between section and dip direction)

(e.g. Lisle, Geological Structures and Maps). Apparent dips here are signed:
positive when the plane dips toward increasing distance along the section.
Azimuths are taken from the grid-north columns of the attitude table
(``dip_direction_grid``, ``trend_grid``), since the section lives in the
projected CRS. A polyline section uses the azimuth of the segment each point
projects onto.

The down-plunge view (e.g. Ragan, Structural Geology: An Introduction to
Geometrical Techniques) projects points along a fold axis onto the plane normal
to it, where a cylindrical fold shows its true profile.
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

from thrustmap.errors import CRSError, InputError, ParameterError
from thrustmap.figures import CAUTION, add_caution
from thrustmap.north import convergence, true_to_grid
from thrustmap.orientation import line_to_vector, normalize_azimuth, plane_to_normal
from thrustmap.profiles import (
    _azimuth_of,
    _line_geometries,
    check_grid_crs,
    crossing_distances,
    sample_elevation,
    sample_profiles,
)

if TYPE_CHECKING:
    from matplotlib.figure import Figure

__all__ = [
    "apparent_dip",
    "section_points",
    "section_topography",
    "section_thrusts",
    "build_section",
    "plot_section",
    "down_plunge",
    "plot_down_plunge",
]

log = logging.getLogger(__name__)

Float = NDArray[np.float64]


def apparent_dip(dip_direction: ArrayLike, dip: ArrayLike, azimuth: ArrayLike) -> Float:
    """Signed apparent dip (degrees) of planes in vertical sections of a given azimuth.

    Parameters
    ----------
    dip_direction, dip : array_like
        The planes, degrees.
    azimuth : array_like
        Azimuth of the section (the direction of increasing distance), degrees,
        in the same north reference as ``dip_direction``.

    Returns
    -------
    ndarray
        Apparent dip in (-90, 90]: positive when the plane dips toward
        ``azimuth``, negative when it dips back toward the section's start, 0
        for a section along strike. Vertical planes give +-90 except along strike.

    Examples
    --------
    >>> apparent_dip(90, 30, [90, 0, 270]).round(6).tolist()
    [30.0, 0.0, -30.0]
    >>> round(float(apparent_dip(90, 30, 45)), 4)
    22.2077
    """
    dd = np.radians(np.asarray(dip_direction, dtype=float))
    d = np.radians(np.asarray(dip, dtype=float))
    delta = dd - np.radians(np.asarray(azimuth, dtype=float))
    c = np.cos(delta)
    c = np.where(np.abs(c) < 1e-12, 0.0, c)  # exactly along strike
    return np.degrees(np.arctan2(np.sin(d) * c, np.cos(d))) + 0.0


def _single_line(line: Any, *, layer: str) -> tuple[Any, Any]:
    """The one LineString of a section and its CRS."""
    if isinstance(line, gpd.GeoDataFrame | gpd.GeoSeries):
        if len(line) != 1:
            raise ParameterError(
                f"layer {layer} has {len(line)} features; pick one section line (e.g. with section_id)"
            )
    geoms, crs, _ = _line_geometries(line if not isinstance(line, shapely.Geometry) else [line], layer=layer)
    return geoms[0], crs


def _same_crs(a: Any, b: Any, *, layer: str) -> Any:
    ca = None if a is None else CRS.from_user_input(a)
    cb = None if b is None else CRS.from_user_input(b)
    if ca is not None and cb is not None and ca != cb:
        raise CRSError(
            f"layer {layer} is in {cb.name} but the section line is in {ca.name}; reproject it to the working CRS",
            layer=layer,
        )
    return ca if ca is not None else cb


def _local_azimuth(line: Any, distance: Float) -> Float:
    """Azimuth (degrees, grid north) of the line's segment at each distance."""
    length = line.length
    eps = min(1.0, length * 1e-4)
    a = shapely.get_coordinates(shapely.line_interpolate_point(line, np.clip(distance - eps, 0, length)))
    b = shapely.get_coordinates(shapely.line_interpolate_point(line, np.clip(distance + eps, 0, length)))
    return normalize_azimuth(np.degrees(np.arctan2(b[:, 0] - a[:, 0], b[:, 1] - a[:, 1])))


def _elevation_at(points: NDArray[np.object_], grid: Any) -> tuple[Float, NDArray[np.object_]]:
    """Elevation from the grid, else the points' z, with the source of each value."""
    xy = shapely.get_coordinates(points, include_z=True)
    z = xy[:, 2] if xy.size else np.zeros(0)
    source = np.full(len(points), "", dtype=object)
    elev = np.full(len(points), np.nan)
    if grid is not None:
        elev = sample_elevation(grid, xy[:, 0], xy[:, 1])
        source[np.isfinite(elev)] = "grid"
    use_z = ~np.isfinite(elev) & np.isfinite(z) & shapely.has_z(points)
    elev = np.where(use_z, z, elev)
    source[use_z] = "z"
    return elev, source


def _require(frame: pd.DataFrame, columns: tuple[str, ...], layer: str) -> None:
    missing = [c for c in columns if c not in frame.columns]
    if missing:
        raise InputError(
            f"missing column(s) {', '.join(missing)}; the attitude table of thrustmap.read_attitudes has them "
            "(grid-north azimuths are needed in a projected section)",
            layer=layer, field=missing[0],
        )


def _with_outputs(base: pd.DataFrame, new: dict[str, Any]) -> dict[str, Any]:
    """Original columns first, a clash with a new name prefixed ``orig_``."""
    cols = {(f"orig_{c}" if c in new else c): base[c].to_numpy() for c in base.columns if c != "geometry"}
    return {**cols, **new}


def section_points(
    attitudes: gpd.GeoDataFrame,
    line: Any,
    *,
    buffer: float,
    grid: Any = None,
    section_id: Any = 1,
) -> gpd.GeoDataFrame:
    """Attitudes within a buffer of a section line, projected onto it with apparent dips.

    Parameters
    ----------
    attitudes : GeoDataFrame
        Attitude table (Point geometry; columns ``kind``, ``dip_direction_grid``,
        ``dip``, ``trend_grid``, ``plunge`` as in the data contract).
    line : LineString or one-row GeoDataFrame
        The section line, in the attitudes' CRS.
    buffer : float
        Largest distance from the line, metres (> 0).
    grid : Grid-like, optional
        Elevation grid; without it the points' z is used where they have one.
    section_id : object
        Written to every row.

    Returns
    -------
    GeoDataFrame
        The selected rows (original columns kept, clashing names prefixed
        ``orig_``) plus ``section_id``, ``distance_m``, ``offset_m`` (positive to
        the right looking along the section), ``elevation``,
        ``elevation_source`` ("grid", "z" or ""), ``section_azimuth_grid``,
        ``angle_to_strike`` (0-90, planes), ``apparent_dip`` (signed, planes)
        and ``apparent_plunge`` (signed, lines), sorted by distance.

    Raises
    ------
    ParameterError
        For a buffer that is not positive.
    InputError, CRSError
        For missing columns or mismatched CRSs.

    Examples
    --------
    >>> att = gpd.GeoDataFrame({"kind": ["plane"], "dip_direction_grid": [90.0], "dip": [30.0],
    ...                         "trend_grid": [np.nan], "plunge": [np.nan]},
    ...                        geometry=[shapely.Point(50, 5)])
    >>> s = section_points(att, shapely.LineString([(0, 0), (100, 0)]), buffer=10)
    >>> s[["distance_m", "offset_m", "apparent_dip"]].round(3).values.tolist()
    [[50.0, -5.0, 30.0]]
    """
    buffer = float(buffer)
    if not np.isfinite(buffer) or buffer <= 0:
        raise ParameterError(f"buffer = {buffer} metres must be positive")
    _require(attitudes, ("kind", "dip_direction_grid", "dip", "trend_grid", "plunge"), "attitudes")
    geom_line, line_crs = _single_line(line, layer="section_line")
    crs = _same_crs(line_crs, attitudes.crs, layer="attitudes")
    if grid is not None:
        check_grid_crs(grid, crs, layer="attitudes")
    points = np.asarray(attitudes.geometry.values, dtype=object)
    near = shapely.dwithin(points, geom_line, buffer)
    near &= ~shapely.is_missing(points)
    chosen = attitudes.loc[near]
    pts = points[near]
    dist = shapely.line_locate_point(geom_line, pts)
    az = _local_azimuth(geom_line, dist)
    foot = shapely.get_coordinates(shapely.line_interpolate_point(geom_line, dist))
    xy = shapely.get_coordinates(pts)
    a = np.radians(az)
    offset = (xy[:, 0] - foot[:, 0]) * np.cos(a) - (xy[:, 1] - foot[:, 1]) * np.sin(a)
    elev, source = _elevation_at(pts, grid)
    dd = chosen["dip_direction_grid"].to_numpy(dtype=float)
    dip = chosen["dip"].to_numpy(dtype=float)
    is_plane = chosen["kind"].astype(str).to_numpy() == "plane"
    strike_gap = np.abs((az - (dd - 90.0)) % 180.0)
    to_strike = np.where(is_plane, np.minimum(strike_gap, 180.0 - strike_gap), np.nan)
    app = np.where(is_plane, apparent_dip(dd, dip, az), np.nan)
    tr = chosen["trend_grid"].to_numpy(dtype=float)
    pl = chosen["plunge"].to_numpy(dtype=float)
    c = np.cos(np.radians(tr - az))
    sign = np.where(c < 0, -1.0, 1.0)
    app_pl = sign * np.degrees(np.arctan2(np.sin(np.radians(pl)), np.abs(np.cos(np.radians(pl)) * c)))
    app_pl = np.where(is_plane | ~np.isfinite(pl), np.nan, app_pl)
    new = {
        "section_id": section_id,
        "distance_m": dist,
        "offset_m": offset,
        "elevation": elev,
        "elevation_source": source,
        "section_azimuth_grid": az,
        "angle_to_strike": to_strike,
        "apparent_dip": app,
        "apparent_plunge": app_pl,
    }
    out = gpd.GeoDataFrame(_with_outputs(chosen, new), geometry=list(pts), crs=crs, index=chosen.index)
    log.info("section %s: %d of %d attitudes within %g m", section_id, len(out), len(attitudes), buffer)
    return out.sort_values("distance_m", kind="stable")


def section_topography(line: Any, grid: Any, *, step: float | None = None, section_id: Any = 1) -> gpd.GeoDataFrame:
    """Elevation along a section line.

    Parameters
    ----------
    line : LineString or one-row GeoDataFrame
        The section line.
    grid : Grid-like
        Elevation grid.
    step : float, optional
        Spacing, metres; default one grid cell.
    section_id : object
        Written to every row.

    Returns
    -------
    GeoDataFrame
        Points with ``section_id``, ``distance_m`` and ``elevation``.

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> g = SimpleNamespace(values=np.array([[10.0, 20.0]]), x0=0.0, y0=10.0, cell=10.0, crs=None)
    >>> section_topography(shapely.LineString([(5, 5), (15, 5)]), g, step=5)["elevation"].tolist()
    [10.0, 15.0, 20.0]
    """
    geom, crs = _single_line(line, layer="section_line")
    topo = sample_profiles(gpd.GeoDataFrame(geometry=[geom], crs=crs), grid, step=step, layer="section_line")
    topo = topo.drop(columns="profile_id")
    topo.insert(0, "section_id", section_id)
    return topo


def _true_to_grid(azimuth: Float, xy: Float, crs: Any) -> tuple[Float, bool]:
    """Grid-north azimuths from true-north ones at points; unchanged (and False) without a CRS."""
    if crs is None:
        return azimuth, False
    return true_to_grid(azimuth, convergence(xy[:, 0], xy[:, 1], crs)), True


def section_thrusts(
    traces: gpd.GeoDataFrame,
    line: Any,
    *,
    grid: Any = None,
    section_id: Any = 1,
) -> gpd.GeoDataFrame:
    """Where thrust traces cross a section line, with their dips and apparent dips.

    The dip direction of a thrust at a crossing is normal to the trace there,
    toward its hanging wall, taken from (in this order) a ``dip_direction_grid``
    column, ``hw_side`` ("left"/"right" of the digitising direction) or
    ``hw_dip_direction`` (true north, converted to grid north with the CRS's
    meridian convergence and snapped to the nearer normal of the trace).

    Parameters
    ----------
    traces : GeoDataFrame
        Thrust traces (``thrust_id``, ``dip`` and any of the columns above).
    line : LineString or one-row GeoDataFrame
        The section line.
    grid : Grid-like, optional
        Elevation grid for the crossing elevations.
    section_id : object
        Written to every row.

    Returns
    -------
    GeoDataFrame
        Crossing points with ``section_id``, ``thrust_id``, ``distance_m``,
        ``elevation``, ``dip``, ``dip_direction_grid``, ``dip_direction_source``,
        ``apparent_dip`` (signed as in :func:`apparent_dip`) and ``flags``
        (``dip_unknown``, ``dip_direction_unknown``), sorted by distance.

    Raises
    ------
    InputError, CRSError
        For a layer without ``thrust_id`` or mismatched CRSs.

    Examples
    --------
    >>> t = gpd.GeoDataFrame({"thrust_id": ["T1"], "hw_side": ["right"], "dip": [30.0]},
    ...                      geometry=[shapely.LineString([(50, 10), (50, -10)])])
    >>> s = section_thrusts(t, shapely.LineString([(0, 0), (100, 0)]))
    >>> s[["distance_m", "dip_direction_grid", "apparent_dip"]].round(3).values.tolist()
    [[50.0, 270.0, -30.0]]
    """
    if "thrust_id" not in traces.columns:
        raise InputError("missing column thrust_id", layer="thrust_traces", field="thrust_id")
    geom_line, line_crs = _single_line(line, layer="section_line")
    crs = _same_crs(line_crs, traces.crs, layer="thrust_traces")
    geoms = np.asarray(traces.geometry.values, dtype=object)
    dist, owner, points = crossing_distances(geom_line, geoms)
    rows = traces.iloc[owner]
    trace_geoms = geoms[owner]
    xy = shapely.get_coordinates(points)
    # azimuth of each trace where it crosses
    along = shapely.line_locate_point(trace_geoms, points)
    eps = np.minimum(1.0, shapely.length(trace_geoms) * 1e-4)
    p0 = shapely.get_coordinates(shapely.line_interpolate_point(trace_geoms, np.maximum(along - eps, 0)))
    p1 = shapely.get_coordinates(shapely.line_interpolate_point(trace_geoms, along + eps))
    trace_az = np.degrees(np.arctan2(p1[:, 0] - p0[:, 0], p1[:, 1] - p0[:, 1]))
    right, left = normalize_azimuth(trace_az + 90.0), normalize_azimuth(trace_az - 90.0)
    n = len(rows)
    dd = np.full(n, np.nan)
    source = np.full(n, "", dtype=object)
    if "hw_dip_direction" in rows.columns:
        hw = pd.to_numeric(rows["hw_dip_direction"], errors="coerce").to_numpy(dtype=float)
        hw_grid, converted = _true_to_grid(hw, xy, crs)
        if not converted and np.isfinite(hw).any():
            log.info("thrust_traces has no CRS: hw_dip_direction used as if grid north")
        off = np.abs((hw_grid - right + 180.0) % 360.0 - 180.0)
        snapped = np.where(off <= 90.0, right, left)
        ok = np.isfinite(hw)
        dd[ok], source[ok] = snapped[ok], "hw_dip_direction"
    if "hw_side" in rows.columns:
        side = rows["hw_side"].astype(object).where(rows["hw_side"].notna(), "").astype(str).str.lower().to_numpy()
        for name, value in (("right", right), ("left", left)):
            sel = side == name
            dd[sel], source[sel] = value[sel], "hw_side"
    if "dip_direction_grid" in rows.columns:
        given = pd.to_numeric(rows["dip_direction_grid"], errors="coerce").to_numpy(dtype=float)
        ok = np.isfinite(given)
        dd[ok], source[ok] = given[ok], "dip_direction_grid"
    dip = (pd.to_numeric(rows["dip"], errors="coerce").to_numpy(dtype=float)
           if "dip" in rows.columns else np.full(n, np.nan))
    sec_az = _local_azimuth(geom_line, dist)
    flags = np.where(np.isfinite(dip), "", "dip_unknown").astype(object)
    flags = np.where(np.isfinite(dd), flags, np.where(flags == "", "dip_direction_unknown",
                                                       flags + ",dip_direction_unknown"))
    elev = sample_elevation(grid, xy[:, 0], xy[:, 1]) if grid is not None else np.full(n, np.nan)
    return gpd.GeoDataFrame(
        {
            "section_id": section_id,
            "thrust_id": rows["thrust_id"].to_numpy(),
            "distance_m": dist,
            "elevation": elev,
            "dip": dip,
            "dip_direction_grid": dd,
            "dip_direction_source": source,
            "apparent_dip": apparent_dip(dd, dip, sec_az),
            "flags": flags,
        },
        geometry=list(points),
        crs=crs,
    )


def build_section(
    line: Any,
    attitudes: gpd.GeoDataFrame,
    *,
    buffer: float,
    thrusts: gpd.GeoDataFrame | None = None,
    grid: Any = None,
    step: float | None = None,
    section_id: Any = 1,
) -> dict[str, gpd.GeoDataFrame]:
    """Every layer of one cross-section.

    Parameters
    ----------
    line : LineString or one-row GeoDataFrame
        The section line (e.g. a row of the ``profiles`` layer).
    attitudes : GeoDataFrame
        Attitude table.
    buffer : float
        Projection distance for attitudes, metres.
    thrusts : GeoDataFrame, optional
        Thrust traces.
    grid : Grid-like, optional
        Elevation grid.
    step : float, optional
        Topography spacing, metres; default one grid cell.
    section_id : object
        Identifier written to every layer.

    Returns
    -------
    dict
        ``section_line`` (the line with ``section_id``, ``length_m``,
        ``azimuth_grid``, ``buffer_m``, ``n_points``, ``n_thrusts``),
        ``section_points``, ``section_thrusts`` and ``section_topography``
        (empty without a grid).

    Raises
    ------
    ParameterError, InputError, CRSError
        As the functions called.

    Examples
    --------
    >>> att = gpd.GeoDataFrame({"kind": ["plane"], "dip_direction_grid": [90.0], "dip": [30.0],
    ...                         "trend_grid": [np.nan], "plunge": [np.nan]}, geometry=[shapely.Point(5, 1)])
    >>> layers = build_section(shapely.LineString([(0, 0), (10, 0)]), att, buffer=2)
    >>> sorted(layers), int(layers["section_line"].loc[0, "n_points"])
    (['section_line', 'section_points', 'section_thrusts', 'section_topography'], 1)
    """
    geom, crs = _single_line(line, layer="section_line")
    crs = _same_crs(crs, attitudes.crs, layer="attitudes")
    points = section_points(attitudes, geom, buffer=buffer, grid=grid, section_id=section_id)
    if thrusts is not None:
        crossings = section_thrusts(thrusts, gpd.GeoSeries([geom], crs=crs), grid=grid, section_id=section_id)
    else:
        crossings = gpd.GeoDataFrame(
            {"section_id": [], "thrust_id": [], "distance_m": [], "elevation": [], "dip": [],
             "dip_direction_grid": [], "dip_direction_source": [], "apparent_dip": [], "flags": []},
            geometry=[], crs=crs,
        )
    if grid is not None:
        topo = section_topography(gpd.GeoSeries([geom], crs=crs), grid, step=step, section_id=section_id)
    else:
        topo = gpd.GeoDataFrame({"section_id": [], "distance_m": [], "elevation": []}, geometry=[], crs=crs)
    line_layer = gpd.GeoDataFrame(
        {
            "section_id": [section_id],
            "length_m": [geom.length],
            "azimuth_grid": [_azimuth_of(geom)],
            "buffer_m": [float(buffer)],
            "n_points": [len(points)],
            "n_thrusts": [len(crossings)],
        },
        geometry=[geom],
        crs=crs,
    )
    return {"section_line": line_layer, "section_points": points, "section_thrusts": crossings,
            "section_topography": topo}


def _down_dip(angle: Float) -> tuple[Float, Float]:
    """Unit (horizontal, vertical) step down a signed apparent dip (degrees)."""
    a = np.radians(np.abs(angle))
    return np.where(angle < 0, -1.0, 1.0) * np.cos(a), -np.sin(a)


_FEATURE_COLOURS = {"bedding": "#1b7837", "cleavage": "#762a83", "foliation": "#762a83", "fault": "#b35806",
                    "thrust": "#b2182b", "axial_plane": "#2166ac"}


def plot_section(
    layers: dict[str, gpd.GeoDataFrame],
    *,
    vertical_exaggeration: float = 1.0,
    tick_length: float | None = None,
    decollement: tuple[float, float, float] | None = None,
    title: str | None = None,
) -> Figure:
    """Section sketch: topography, attitudes as apparent-dip ticks, thrusts dipping from their crossings.

    Parameters
    ----------
    layers : dict
        Output of :func:`build_section`.
    vertical_exaggeration : float
        Vertical scale over horizontal scale (>= 1 usual); dips are drawn
        exaggerated accordingly.
    tick_length : float, optional
        Length of attitude ticks, metres; default 2% of the section length.
    decollement : tuple of float, optional
        ``(distance_m, elevation_m, dip)``: a point of the basal detachment and
        its dip in degrees, positive when it deepens toward the section's start
        (the hinterland, for a section run along transport); drawn dashed.
    title : str, optional
        Axes title.

    Returns
    -------
    matplotlib.figure.Figure

    Raises
    ------
    ParameterError
        For a vertical exaggeration that is not positive or a decollement that
        is not three finite numbers.

    Examples
    --------
    >>> att = gpd.GeoDataFrame({"kind": ["plane"], "dip_direction_grid": [90.0], "dip": [30.0],
    ...                         "trend_grid": [np.nan], "plunge": [np.nan]}, geometry=[shapely.Point(5, 1)])
    >>> fig = plot_section(build_section(shapely.LineString([(0, 0), (10, 0)]), att, buffer=2))
    >>> len(fig.axes)
    1
    """
    import matplotlib.pyplot as plt

    ve = float(vertical_exaggeration)
    if not np.isfinite(ve) or ve <= 0:
        raise ParameterError(f"vertical_exaggeration = {vertical_exaggeration} must be positive")
    line = layers["section_line"].iloc[0]
    length = float(line["length_m"])
    pts, thr, topo = layers["section_points"], layers["section_thrusts"], layers["section_topography"]
    tick = 0.02 * length if tick_length is None else float(tick_length)
    elevations = np.concatenate([topo["elevation"].to_numpy(float), pts["elevation"].to_numpy(float),
                                 thr["elevation"].to_numpy(float)])
    base = None
    if decollement is not None:
        try:
            d0, z0, dip0 = (float(v) for v in decollement)
        except (TypeError, ValueError):
            raise ParameterError(f"decollement = {decollement!r}: give (distance_m, elevation_m, dip)") from None
        if not np.all(np.isfinite([d0, z0, dip0])):
            raise ParameterError(f"decollement = {decollement!r}: values must be finite")
        base = np.array([0.0, length]), z0 + (np.array([0.0, length]) - d0) * np.tan(np.radians(dip0))
        elevations = np.concatenate([elevations, base[1]])
    elevations = elevations[np.isfinite(elevations)]
    top = float(elevations.max()) if elevations.size else 0.0
    low = float(elevations.min()) if elevations.size else 0.0
    depth = max(0.25 * length / ve, 0.5 * (top - low), 1.0) if base is None else max(0.05 * (top - low), 1.0)
    bottom = low - depth
    box = (top - bottom + 0.1 * depth) * ve / max(length, 1e-9)  # axes height over width
    fig, ax = plt.subplots(figsize=(10.0, float(np.clip(9.0 * box, 1.5, 8.0)) + 1.3), layout="constrained")
    if len(topo):
        d, z = topo["distance_m"].to_numpy(float), topo["elevation"].to_numpy(float)
        ax.fill_between(d, z, bottom, color="#f3efe6", lw=0)
        ax.plot(d, z, color="#4d4d4d", lw=1.2, label="topography")
    if base is not None:
        ax.plot(base[0], base[1], color="black", lw=1.4, ls=(0, (6, 3)), label="decollement")
    for _, t in thr.iterrows():
        z0 = t["elevation"] if np.isfinite(t["elevation"]) else 0.0
        ax.plot([t["distance_m"]], [z0], marker="v", color="#b2182b", ms=7)
        ax.annotate(str(t["thrust_id"]), (t["distance_m"], z0), xytext=(0, 8), textcoords="offset points",
                    ha="center", fontsize=8, color="#b2182b")
        if np.isfinite(t["apparent_dip"]):
            hx, vy = _down_dip(np.asarray(t["apparent_dip"]))
            reach = (z0 - bottom) / max(-vy, 1e-6)
            ax.plot([t["distance_m"], t["distance_m"] + hx * reach], [z0, z0 + vy * reach],
                    color="#b2182b", lw=1.6, solid_capstyle="butt")
    planes = pts[pts["kind"].astype(str) == "plane"] if len(pts) else pts
    seen = set()
    for _, p in planes.iterrows():
        z0 = p["elevation"] if np.isfinite(p["elevation"]) else 0.0
        if not np.isfinite(p["apparent_dip"]):
            continue
        hx, vy = _down_dip(np.asarray(p["apparent_dip"]))
        # in data units, a length in metres along the dip direction
        dx, dz = float(hx) * tick / 2, float(vy) * tick / 2
        feature = str(p.get("feature", "plane"))
        colour = _FEATURE_COLOURS.get(feature, "#333333")
        ax.plot([p["distance_m"] - dx, p["distance_m"] + dx], [z0 - dz, z0 + dz], color=colour, lw=1.4,
                label=None if feature in seen else feature)
        seen.add(feature)
    lines_ = pts[pts["kind"].astype(str) == "line"] if len(pts) else pts
    if len(lines_):
        z = lines_["elevation"].to_numpy(float)
        ax.plot(lines_["distance_m"], np.where(np.isfinite(z), z, 0.0), "o", ms=3, mfc="white",
                color="#2166ac", label="lines")
    ax.set_xlim(0, length)
    ax.set_ylim(bottom, top + 0.1 * depth)
    ax.set_aspect(ve)
    ax.set_xlabel(f"distance along section (m), toward {line['azimuth_grid']:03.0f} (azimuth from grid north)")
    ax.set_ylabel("elevation (m)")
    ax.set_title(title or f"Section {line['section_id']}  (vertical exaggeration x{ve:g})")
    handles, labels = ax.get_legend_handles_labels()
    if handles:
        ax.legend(fontsize=7, loc="lower right")
    note = CAUTION if np.isfinite(pts["elevation"].to_numpy(float)).all() else (
        CAUTION + " Points without elevation are drawn at datum 0.")
    add_caution(ax, note)
    return fig


def down_plunge(
    attitudes: gpd.GeoDataFrame,
    *,
    trend_grid: float,
    plunge: float,
    grid: Any = None,
) -> gpd.GeoDataFrame:
    """Project points along a fold axis onto the plane normal to it (the down-plunge view).

    The view looks down the plunge: ``view_x_m`` runs to the viewer's right
    (horizontal, normal to the axis trend), ``view_y_m`` up within the profile
    plane, both from the points' centroid. Plane attitudes also get the angle
    of their trace in the view.

    Parameters
    ----------
    attitudes : GeoDataFrame
        Points (e.g. one domain's attitudes) in a projected CRS; plane rows with
        ``kind``, ``dip_direction_grid`` and ``dip`` get a trace angle.
    trend_grid, plunge : float
        The fold axis, degrees, trend from grid north of the CRS.
    grid : Grid-like, optional
        Elevation grid; without it the points' z is used.

    Returns
    -------
    GeoDataFrame
        The rows (original columns kept) with ``view_x_m``, ``view_y_m``,
        ``along_axis_m`` (distance down the axis from the centroid),
        ``trace_angle`` (degrees anticlockwise from the view's right-hand
        horizontal, in (-90, 90]; NaN for lines), ``axis_trend_grid``,
        ``axis_plunge`` and ``elevation``.

    Raises
    ------
    ParameterError
        For an axis out of range or points without elevation (no grid, no z).

    Examples
    --------
    >>> pts = gpd.GeoDataFrame({"kind": ["plane", "plane"], "dip_direction_grid": [90.0, 270.0],
    ...                         "dip": [40.0, 40.0]},
    ...                        geometry=[shapely.Point(100, 0, 0), shapely.Point(-100, 0, 0)])
    >>> v = down_plunge(pts, trend_grid=0, plunge=0)
    >>> v[["view_x_m", "view_y_m", "trace_angle"]].round(3).values.tolist()
    [[100.0, 0.0, -40.0], [-100.0, 0.0, 40.0]]
    """
    t = float(trend_grid)
    p = float(plunge)
    if not (np.isfinite(t) and np.isfinite(p) and 0.0 <= p <= 90.0):
        raise ParameterError(f"fold axis {trend_grid}/{plunge}: plunge must be 0-90 degrees and trend finite")
    pts = np.asarray(attitudes.geometry.values, dtype=object)
    elev, source = _elevation_at(pts, grid)
    missing = ~np.isfinite(elev)
    if np.any(missing):
        row = int(np.flatnonzero(missing)[0])
        raise ParameterError(
            f"{int(missing.sum())} point(s) have no elevation (first: row {row + 1}); a down-plunge view needs "
            "an elevation grid covering them or 3-D point geometries"
        )
    xy = shapely.get_coordinates(pts)
    r = np.column_stack([xy[:, 0], xy[:, 1], elev])
    r = r - r.mean(axis=0)
    tr, pr = np.radians(t), np.radians(p)
    axis = line_to_vector(t, p)
    right = np.array([np.cos(tr), -np.sin(tr), 0.0])
    up = np.array([np.sin(pr) * np.sin(tr), np.sin(pr) * np.cos(tr), np.cos(pr)])
    angle = np.full(len(pts), np.nan)
    if {"kind", "dip_direction_grid", "dip"} <= set(attitudes.columns):
        normal = plane_to_normal(attitudes["dip_direction_grid"].to_numpy(float), attitudes["dip"].to_numpy(float))
        trace = np.cross(normal, axis)
        theta = np.degrees(np.arctan2(trace @ up, trace @ right))
        theta = np.where(theta > 90.0, theta - 180.0, np.where(theta <= -90.0, theta + 180.0, theta))
        degenerate = np.linalg.norm(trace, axis=1) < 1e-9  # plane normal to the axis
        plane = (attitudes["kind"].astype(str).to_numpy() == "plane") & ~degenerate
        angle = np.where(plane, theta + 0.0, np.nan)
    new = {
        "view_x_m": r @ right,
        "view_y_m": r @ up,
        "along_axis_m": r @ axis,
        "trace_angle": angle,
        "axis_trend_grid": t % 360.0,
        "axis_plunge": p,
        "elevation": elev,
    }
    return gpd.GeoDataFrame(_with_outputs(attitudes, new), geometry=list(pts), crs=attitudes.crs,
                            index=attitudes.index)


def plot_down_plunge(
    view: gpd.GeoDataFrame, *, tick_length: float | None = None, title: str | None = None
) -> Figure:
    """Figure of a down-plunge view: points with their bedding traces, equal scales.

    Parameters
    ----------
    view : GeoDataFrame
        Output of :func:`down_plunge`.
    tick_length : float, optional
        Trace tick length, metres; default 4% of the view's extent.
    title : str, optional
        Axes title.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> pts = gpd.GeoDataFrame({"kind": ["plane"], "dip_direction_grid": [90.0], "dip": [40.0]},
    ...                        geometry=[shapely.Point(0, 0, 0)])
    >>> len(plot_down_plunge(down_plunge(pts, trend_grid=0, plunge=10)).axes)
    1
    """
    import matplotlib.pyplot as plt

    x, y = view["view_x_m"].to_numpy(float), view["view_y_m"].to_numpy(float)
    wide = float(np.ptp(x)) if x.size else 0.0
    tall = float(np.ptp(y)) if y.size else 0.0
    extent = max(wide, tall, 1.0)
    fig, ax = plt.subplots(figsize=(7.0, float(np.clip(6.0 * (tall + 0.1 * extent) / (wide + 0.1 * extent), 1.5, 7.0)) + 1.5),
                           layout="constrained")
    tick = 0.04 * extent if tick_length is None else float(tick_length)
    ax.plot(x, y, "o", ms=2.5, color="#4d4d4d", label="stations")
    a = np.radians(view["trace_angle"].to_numpy(float))
    ok = np.isfinite(a)
    dx, dy = np.cos(a[ok]) * tick / 2, np.sin(a[ok]) * tick / 2
    segs = np.stack([np.column_stack([x[ok] - dx, y[ok] - dy]), np.column_stack([x[ok] + dx, y[ok] + dy])], axis=1)
    from matplotlib.collections import LineCollection

    ax.add_collection(LineCollection(segs, colors="#1b7837", linewidths=1.3, label="plane traces"))
    ax.set_aspect("equal")
    ax.autoscale_view()
    if len(view):
        t, p = float(view["axis_trend_grid"].iloc[0]), float(view["axis_plunge"].iloc[0])
        ax.set_title(title or f"Down-plunge view along {p:.0f} -> {t:03.0f} (grid)")
    ax.set_xlabel("across the axis, to the right looking down-plunge (m)")
    ax.set_ylabel("up in the profile plane (m)")
    ax.legend(fontsize=7, loc="best")
    add_caution(ax)
    return fig
