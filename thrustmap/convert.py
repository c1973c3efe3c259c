"""Attitude text columns converted to numeric orientation columns, row for row."""

from __future__ import annotations

import numpy as np
import pandas as pd

from thrustmap.errors import InputError, ParameterError
from thrustmap.orientation import dip_direction_to_strike, parse_lines, parse_planes
from thrustmap.progress import Progress

__all__ = ["convert_attitudes", "CONVERTED_COLUMNS"]

#: Columns added by :func:`convert_attitudes`, by kind of attitude.
CONVERTED_COLUMNS = {
    "plane": ("dip_direction", "dip", "strike", "error"),
    "line": ("trend", "plunge", "error"),
}
_CHUNK = 20_000


def convert_attitudes(
    table: pd.DataFrame,
    *,
    column: str = "attitude",
    kind: str = "plane",
    azimuth: str = "strike",
) -> pd.DataFrame:
    """Read a column of attitude text into dip direction / dip / strike or trend / plunge.

    Every row is kept: rows whose text cannot be read get NaN angles and the
    reason code in ``error`` (``""`` for rows that parsed), so the result lines
    up with the input row for row. Notations are those of
    :func:`thrustmap.orientation.parse_planes` and
    :func:`thrustmap.orientation.parse_lines`.

    Parameters
    ----------
    table : DataFrame or GeoDataFrame
        Any table with an attitude text column; geometry and other columns are kept.
    column : str
        Name of the attitude text column.
    kind : {"plane", "line"}
        Whether the texts are planes (giving ``dip_direction``, ``dip`` and
        right-hand-rule ``strike``) or lines (giving ``trend`` and ``plunge``).
    azimuth : {"strike", "dip_direction"}
        What a bare numeric plane azimuth means; ignored for lines.

    Returns
    -------
    DataFrame or GeoDataFrame
        A copy of ``table`` with the new columns (degrees, same north as the
        text) appended; an existing column of the same name is renamed with the
        prefix ``orig_``.

    Raises
    ------
    InputError
        When ``column`` is not in the table (the message lists the columns).
    ParameterError
        When ``kind`` or ``azimuth`` is not one of the accepted values.

    Examples
    --------
    >>> out = convert_attitudes(pd.DataFrame({"attitude": ["N30E 45SE", "210/95"]}))
    >>> out[["dip_direction", "dip", "strike", "error"]].values.tolist()
    [[120.0, 45.0, 30.0, ''], [nan, nan, nan, 'dip_out_of_range']]
    """
    if kind not in CONVERTED_COLUMNS:
        raise ParameterError(
            f"kind={kind!r} is not valid; choose one of {', '.join(CONVERTED_COLUMNS)}"
        )
    if azimuth not in ("strike", "dip_direction"):
        raise ParameterError(
            f"azimuth={azimuth!r} is not valid; choose one of strike, dip_direction"
        )
    if column not in table.columns:
        raise InputError(
            f"no attitude column {column!r}; columns are: {', '.join(map(str, table.columns))}",
            source=table.attrs.get("source"),
            layer=table.attrs.get("layer"),
            field=column,
        )
    texts = table[column].to_numpy(dtype=object)
    n = len(texts)
    first = np.full(n, np.nan)
    second = np.full(n, np.nan)
    error = np.full(n, "", dtype=object)
    with Progress(n, label=f"converting {kind} attitudes") as bar:
        for start in range(0, n, _CHUNK):
            part = slice(start, start + _CHUNK)
            if kind == "plane":
                first[part], second[part], error[part] = parse_planes(texts[part], azimuth=azimuth)
            else:
                first[part], second[part], error[part] = parse_lines(texts[part])
            bar.update(len(texts[part]))
    if kind == "plane":
        values = {"dip_direction": first, "dip": second, "strike": dip_direction_to_strike(first)}
    else:
        values = {"trend": first, "plunge": second}
    values["error"] = error
    out = table.rename(columns={c: f"orig_{c}" for c in values if c in table.columns})
    for name, data in values.items():
        out[name] = data
    return out
