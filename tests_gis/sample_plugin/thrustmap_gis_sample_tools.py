"""Three small tools of a stand-in third-party package, used only by the desktop-GIS tests.

The tests register this module in the ``thrustmap.tools`` entry-point group
through a temporary ``dist-info`` folder, exactly as an installed package
would. Between them the tools read point, line-or-any, polygon and table
inputs (one optional), take float, int, choice, bool and str parameters and
write line, point, polygon and table outputs.
"""

from __future__ import annotations

import dataclasses
import logging

import geopandas
import numpy as np
import pandas as pd
import pyproj
import shapely

from thrustmap.errors import InputError, ParameterError
from thrustmap.orientation import (
    dip_direction_to_strike,
    normal_to_plane,
    plane_to_normal,
    strike_to_dip_direction,
)
from thrustmap.tools import LayerInput, LayerOutput, Param, Tool
from thrustmap.tools.options import CRS

__all__ = ["DIP_TICKS", "DOMAIN_MEAN_PLANE", "TABLE_TO_STATIONS", "TOOLS"]

logger = logging.getLogger(__name__)


def _column(frame: pd.DataFrame, name: str, *, layer: str) -> np.ndarray:
    if name not in frame.columns:
        raise InputError(
            f"no such column; columns are: {', '.join(map(str, frame.columns))}",
            layer=layer,
            field=name,
        )
    values = pd.to_numeric(frame[name], errors="coerce").to_numpy(dtype=float)
    bad = np.flatnonzero(np.isnan(values))
    if bad.size:
        raise InputError(
            f"{bad.size} value(s) missing or not numeric",
            layer=layer,
            row=int(bad[0]) + 1,
            field=name,
        )
    return values


def dip_ticks(
    stations: geopandas.GeoDataFrame,
    *,
    length: float,
    azimuth_field: str,
    centred: bool,
    prefix: str,
) -> dict[str, pd.DataFrame]:
    """Dip ticks: a line from each station along the dip direction, plus a one-row summary."""
    dip = _column(stations, "dip", layer="stations")
    azimuth = _column(stations, azimuth_field, layer="stations")
    dd = strike_to_dip_direction(azimuth) if azimuth_field == "strike" else azimuth % 360.0
    xy = shapely.get_coordinates(stations.geometry.array)
    step = length * np.stack([np.sin(np.radians(dd)), np.cos(np.radians(dd))], axis=-1)
    start = xy - step / 2.0 if centred else xy
    ticks = stations.drop(columns=stations.geometry.name).copy()
    ticks["dip_direction"] = dd
    ticks["strike"] = dip_direction_to_strike(dd)
    ticks["tick_length"] = length
    ticks["label"] = [f"{prefix}{a:03.0f}/{d:02.0f}" for a, d in zip(dd, dip, strict=True)]
    lines = shapely.linestrings(np.stack([start, start + step], axis=1))
    summary = pd.DataFrame(
        {
            "n_ticks": [len(stations)],
            "total_length": [length * len(stations)],
            "mean_dip": [float(dip.mean()) if dip.size else np.nan],
        }
    )
    return {
        "ticks": geopandas.GeoDataFrame(ticks, geometry=lines, crs=stations.crs),
        "tick_summary": summary,
    }


def domain_mean_plane(
    attitudes: geopandas.GeoDataFrame,
    domains: geopandas.GeoDataFrame,
    *,
    min_count: int,
    domain_field: str,
) -> dict[str, pd.DataFrame]:
    """Mean plane per domain polygon from the principal axis of the poles' orientation tensor."""
    if domain_field not in domains.columns:
        raise InputError("no such column", layer="domains", field=domain_field)
    normals = plane_to_normal(
        _column(attitudes, "dip_direction", layer="attitudes"),
        _column(attitudes, "dip", layer="attitudes"),
    )
    where = attitudes.geometry.to_crs(domains.crs).representative_point()
    inside = shapely.contains(
        np.asarray(domains.geometry.array, dtype=object)[:, None],
        np.asarray(where.array, dtype=object)[None, :],
    )
    outside = int((~inside.any(axis=0)).sum())
    if outside:
        logger.warning("%d attitude(s) lie outside every domain", outside)
    counts = inside.sum(axis=1)
    tensors = np.einsum("da,ai,aj->dij", inside.astype(float), normals, normals)
    _, vectors = np.linalg.eigh(tensors)
    dd, dip = normal_to_plane(vectors[:, :, -1])
    enough = counts >= min_count
    out = domains[[domain_field]].copy()
    out["n"] = counts
    out["mean_dip_direction"] = np.where(enough, dd, np.nan)
    out["mean_dip"] = np.where(enough, dip, np.nan)
    return {
        "domain_means": geopandas.GeoDataFrame(
            out, geometry=domains.geometry.array, crs=domains.crs
        )
    }


def table_to_stations(
    table: pd.DataFrame,
    clip: geopandas.GeoDataFrame | None,
    *,
    x_field: str,
    y_field: str,
    crs: str,
) -> dict[str, pd.DataFrame]:
    """Points from coordinate columns (in ``crs``); ``inside`` tells whether each lies within the clip polygons."""
    try:
        crs_value = pyproj.CRS.from_user_input(crs)
    except pyproj.exceptions.CRSError:
        raise ParameterError(f"parameter 'crs' = {crs!r} is not a CRS pyproj can read") from None
    points = shapely.points(
        _column(table, x_field, layer="table"), _column(table, y_field, layer="table")
    )
    stations = geopandas.GeoDataFrame(table.copy(), geometry=points, crs=crs_value)
    if clip is None:
        stations["inside"] = True
    else:
        area = shapely.union_all(np.asarray(clip.to_crs(crs_value).geometry.array, dtype=object))
        stations["inside"] = shapely.contains(area, points)
    return {"stations": stations}


DIP_TICKS = Tool(
    name="dip-ticks",
    summary="Draw a dip tick (line along the dip direction) at every station.",
    func=dip_ticks,
    inputs=(LayerInput("stations", "point", help="Stations with dip and an azimuth column."),),
    params=(
        Param(
            "length",
            "float",
            100.0,
            help="Tick length.",
            unit="metres",
            minimum=1.0,
            maximum=5000.0,
        ),
        Param(
            "azimuth_field",
            "choice",
            "dip_direction",
            help="Column holding the azimuth: dip direction or right-hand-rule strike.",
            choices=("dip_direction", "strike"),
        ),
        Param(
            "centred",
            "bool",
            False,
            help="Centre the tick on the station instead of starting there.",
        ),
        Param("prefix", "str", "", help="Text put before each tick label."),
    ),
    outputs=(
        LayerOutput("ticks", "line", help="One tick per station, with the station's columns."),
        LayerOutput("tick_summary", "table", help="Number of ticks, total length, mean dip."),
    ),
    group="test drawing",
)

DOMAIN_MEAN_PLANE = Tool(
    name="domain-mean-plane",
    summary="Mean plane of the attitudes inside each domain polygon.",
    func=domain_mean_plane,
    inputs=(
        LayerInput("attitudes", "any", help="Features with dip_direction and dip columns."),
        LayerInput("domains", "polygon", help="Domain polygons."),
    ),
    params=(
        Param(
            "min_count", "int", 3, help="Fewest attitudes for a mean.", minimum=1, maximum=100000
        ),
        Param("domain_field", "str", "domain", help="Column naming the domain."),
    ),
    outputs=(LayerOutput("domain_means", "polygon", help="Domains with n and the mean plane."),),
    group="test statistics",
)

TABLE_TO_STATIONS = Tool(
    name="table-to-stations",
    summary="Make station points from a table of projected coordinates.",
    func=table_to_stations,
    inputs=(
        LayerInput("table", "table", help="Rows with coordinate columns."),
        LayerInput("clip", "polygon", help="Area to flag stations against.", optional=True),
    ),
    params=(
        Param("x_field", "str", "x", help="Column of eastings."),
        Param("y_field", "str", "y", help="Column of northings."),
        dataclasses.replace(CRS, default="EPSG:32633"),
    ),
    outputs=(LayerOutput("stations", "point", help="The points, with an inside flag."),),
    group="test drawing",
)

TOOLS = (DIP_TICKS, DOMAIN_MEAN_PLANE, TABLE_TO_STATIONS)
