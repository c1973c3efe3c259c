"""Declared tools for reading field attitudes: thin declarations over :mod:`thrustmap.io.attitudes`."""

from __future__ import annotations

from pathlib import Path

import geopandas as gpd
import pandas as pd

from thrustmap.io.attitudes import read_attitudes
from thrustmap.tools.declare import Example, LayerInput, LayerOutput, Param, Tool
from thrustmap.tools.options import AZIMUTH_REF, CRS, DATE, DECLINATION

__all__ = ["INGEST_ATTITUDES", "TOOLS"]


def _ingest(
    table: pd.DataFrame,
    *,
    crs: str | None,
    azimuth_ref: str,
    declination: float | None,
    date: str | None,
    input_crs: str | None,
    plane_azimuth: str,
    default_feature: str,
) -> dict[str, pd.DataFrame]:
    result = read_attitudes(
        table,
        crs=None if isinstance(table, gpd.GeoDataFrame) else input_crs,
        azimuth_ref=azimuth_ref,
        declination=declination,
        survey_date=date,
        working_crs=crs,
        plane_azimuth=plane_azimuth,
        default_feature=default_feature,
    )
    return {"attitudes": result.accepted, "attitudes_rejected": result.rejected}


def _example_inputs(folder: Path) -> dict[str, str]:
    path = folder / "field_sheet.csv"
    pd.DataFrame(
        {
            "stn": ["E1", "E2", "E3", "E4"],
            "lon": [15.20, 15.21, 15.22, 15.23],
            "lat": [45.90, 45.90, 45.91, 45.91],
            "type": ["bedding", "bedding", "hinge line", "cleavage"],
            "attitude": ["N30E 45SE", "210/40", "N80E 12", "030/95"],
            "date": ["2024-06-01"] * 4,
            "notes": ["synthetic example"] * 4,
        }
    ).to_csv(path, index=False)
    return {"table": str(path)}


INGEST_ATTITUDES = Tool(
    name="ingest-attitudes",
    summary="Read field attitudes (a CSV/XLSX field sheet or a point layer, numbers or any "
    "common notation) into the attitude table: true- and grid-north azimuths, and every "
    "row accepted or rejected with a reason code.",
    func=_ingest,
    inputs=(
        LayerInput(
            "table",
            "any",
            help="Field sheet with x/y or lon/lat columns, or a point layer, holding attitudes.",
        ),
    ),
    params=(
        CRS,
        AZIMUTH_REF,
        DECLINATION,
        DATE,
        Param(
            "input_crs",
            "str",
            help="CRS of the coordinate columns of a table that declares none, e.g. EPSG:4326 "
            "for longitude/latitude; never guessed.",
        ),
        Param(
            "plane_azimuth",
            "choice",
            default="strike",
            help="What a bare azimuth in a notation such as 030/45 is: right-hand-rule strike "
            "or dip direction.",
            choices=("strike", "dip_direction"),
        ),
        Param(
            "default_feature",
            "str",
            default="bedding",
            help="Feature of rows that name none (bedding, cleavage, fault, hinge_line, ...).",
        ),
    ),
    outputs=(
        LayerOutput(
            "attitudes",
            "point",
            help="Accepted rows: dip direction, dip, strike, trend, plunge (true north, with "
            "grid-north copies), feature, flags and every original column.",
        ),
        LayerOutput(
            "attitudes_rejected",
            "table",
            help="Rejected rows with source_row, reason code, field, value and a message.",
        ),
    ),
    group="orientation",
    example=Example(
        _example_inputs,
        {"input_crs": "EPSG:4326", "azimuth_ref": "magnetic", "crs": "EPSG:32633"},
        "Four magnetic readings in lon/lat, declination from the IGRF for each row's date; "
        "one impossible dip is rejected.",
    ),
)

TOOLS = (INGEST_ATTITUDES,)
