"""Declared tools for orientation data: thin declarations over :mod:`thrustmap.convert`."""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from thrustmap.convert import convert_attitudes
from thrustmap.tools.declare import Example, LayerInput, LayerOutput, Param, Tool

__all__ = ["CONVERT_ATTITUDES", "TOOLS"]


def _convert(
    table: pd.DataFrame, *, column: str, kind: str, azimuth: str
) -> dict[str, pd.DataFrame]:
    return {
        "converted_attitudes": convert_attitudes(table, column=column, kind=kind, azimuth=azimuth)
    }


def _example_inputs(folder: Path) -> dict[str, str]:
    path = folder / "attitudes.csv"
    pd.DataFrame(
        {
            "station": ["S1", "S2", "S3", "S4", "S5"],
            "attitude": ["N30E 45SE", "030/45SE", "210/45NW", "N-S 30E", "123/95"],
        }
    ).to_csv(path, index=False)
    return {"table": str(path)}


CONVERT_ATTITUDES = Tool(
    name="convert-attitudes",
    summary="Read a column of attitude text in any common notation into dip direction, dip "
    "and right-hand-rule strike (or trend and plunge), with a reason code for every "
    "unreadable row.",
    func=_convert,
    inputs=(LayerInput("table", "table", help="Table or layer with an attitude text column."),),
    params=(
        Param("column", "str", default="attitude", help="Column holding the attitude text."),
        Param(
            "kind",
            "choice",
            default="plane",
            help="Planes (dip direction, dip, strike) or lines (trend, plunge).",
            choices=("plane", "line"),
        ),
        Param(
            "azimuth",
            "choice",
            default="strike",
            help="What a bare numeric plane azimuth is: right-hand-rule strike or dip direction.",
            choices=("strike", "dip_direction"),
        ),
    ),
    outputs=(
        LayerOutput(
            "converted_attitudes",
            "any",
            help="Every input row with the angles in degrees and an 'error' reason code "
            "(empty when the text was read).",
        ),
    ),
    group="orientation",
    example=Example(
        _example_inputs,
        {"column": "attitude", "kind": "plane"},
        "Five planes in mixed notations, one with an impossible dip.",
    ),
)

TOOLS = (CONVERT_ATTITUDES,)
