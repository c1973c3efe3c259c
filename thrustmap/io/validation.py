"""Row verdicts for readers that never drop data: reason codes, flags and rejects tables.

A reader checks its rows in order of precedence; each row keeps the first
reason it failed on, so every input row ends up either accepted (possibly with
warning flags) or rejected with exactly one reason, and the two tables together
account for every input row.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike, NDArray

__all__ = ["REASONS", "FLAGS", "RowVerdicts", "join_flags", "reason_counts"]

# reason code -> (what is wrong, what is accepted)
REASONS: dict[str, tuple[str, str]] = {
    "empty_row": ("the row is empty", "a row with coordinates and an attitude"),
    "duplicate_row": ("the row repeats an earlier row exactly", "each measurement once"),
    "missing_coordinates": (
        "coordinates are missing or not finite numbers",
        "numeric coordinates in the CRS (or a point geometry)",
    ),
    "not_a_point": ("the geometry is not a point", "a Point geometry"),
    "outside_crs_area": (
        "the position lies outside the area of use of the CRS",
        "coordinates inside the CRS's area of use (check the CRS and the x/y order)",
    ),
    "unknown_feature": (
        "unknown feature type",
        "bedding, cleavage, foliation, fault, thrust, joint, vein, axial_plane, "
        "hinge_line, lineation, slickenline, intersection_lineation (or a common synonym)",
    ),
    "missing_attitude": (
        "no attitude given",
        "strike or dip direction with dip for planes, trend and plunge (or a rake) for lines",
    ),
    "unparseable": (
        "the value cannot be read",
        "numbers, or notations such as 030/45, 030/45SE, N30E 45SE, N-S 30E, 045/30, N30E 20",
    ),
    "dip_out_of_range": ("dip outside 0-90 degrees", "a dip from 0 to 90 degrees"),
    "plunge_out_of_range": ("plunge outside 0-90 degrees", "a plunge from 0 to 90 degrees"),
    "azimuth_out_of_range": (
        "azimuth outside 0-360 degrees (or a quadrant angle over 90)",
        "an azimuth from 0 to 360 degrees, or a quadrant bearing such as N30E",
    ),
    "letter_contradicts_strike": (
        "the dip-direction letter cannot match the strike",
        "a letter on one side of the strike, e.g. 030/45SE or 030/45NW",
    ),
    "rake_out_of_range": (
        "rake outside 0-180 degrees",
        "a rake from 0 to 180 degrees, e.g. 35 or 35N",
    ),
    "bad_date": (
        "the survey date is missing, unreadable or outside the geomagnetic model's period",
        "an ISO date such as 2024-05-17 within the IGRF period",
    ),
    "bad_declination": (
        "the declination is missing or not a number from -180 to 180",
        "degrees, east positive, e.g. 3.5 or -12",
    ),
}

# flag -> meaning, for accepted rows
FLAGS: dict[str, str] = {
    "dip_zero": "horizontal plane: its dip direction is arbitrary",
    "dip_vertical": "vertical plane: either side could be named the dip direction",
    "plunge_vertical": "vertical line: its trend is arbitrary",
    "azimuth_360": "azimuth 360 read as 0",
    "feature_default": "feature cell empty: the default feature was used",
}


def join_flags(flags: dict[str, ArrayLike], n: int) -> NDArray[np.object_]:
    """Comma-separated flag names per row, ``""`` where none is set.

    Examples
    --------
    >>> join_flags({"dip_zero": [True, False], "azimuth_360": [True, True]}, 2).tolist()
    ['dip_zero,azimuth_360', 'azimuth_360']
    """
    out = np.full(n, "", dtype=object)
    for name, mask in flags.items():
        idx = np.flatnonzero(np.asarray(mask, dtype=bool))
        out[idx] = [f"{old},{name}" if old else name for old in out[idx]]
    return out


class RowVerdicts:
    """First failing reason per row, with the field, value and detail behind it.

    Parameters
    ----------
    n : int
        Number of rows.

    Examples
    --------
    >>> v = RowVerdicts(3)
    >>> v.reject([False, True, True], "dip_out_of_range", "Dip", ["10", "95", "-3"])
    >>> v.reject([True, True, False], "duplicate_row", "", "")
    >>> v.reason.tolist(), v.ok.tolist()
    (['duplicate_row', 'dip_out_of_range', 'dip_out_of_range'], [False, False, False])
    """

    def __init__(self, n: int) -> None:
        self.reason = np.full(n, "", dtype=object)
        self.field = np.full(n, "", dtype=object)
        self.value = np.full(n, "", dtype=object)
        self.detail = np.full(n, "", dtype=object)
        self._ok = np.ones(n, dtype=bool)

    @property
    def ok(self) -> NDArray[np.bool_]:
        """Rows not rejected so far (a copy)."""
        return self._ok.copy()

    def reject(
        self,
        mask: ArrayLike,
        reason: str,
        field: ArrayLike,
        value: ArrayLike | Callable[[], ArrayLike],
        detail: ArrayLike = "",
    ) -> None:
        """Reject the rows in ``mask`` that have no reason yet.

        ``field``, ``value`` and ``detail`` are scalars or per-row arrays, stored
        as text; ``value`` may also be a function returning them, called only when
        a row is rejected (building the text of a long column costs time).
        """
        if reason not in REASONS:
            raise KeyError(f"unknown reason code {reason!r}")
        m = np.asarray(mask, dtype=bool) & self._ok
        if not m.any():
            return
        self._ok &= ~m
        if callable(value):
            value = value()
        n = m.size
        self.reason[m] = reason
        for store, given in ((self.field, field), (self.value, value), (self.detail, detail)):
            arr = np.broadcast_to(np.asarray(given, dtype=object), (n,))
            store[m] = [_text(v) for v in arr[m]]

    def messages(self, rows: ArrayLike, where: str) -> NDArray[np.object_]:
        """One message per rejected row: place, row, field, value, problem, what is accepted.

        Parameters
        ----------
        rows : array_like of int
            1-based source row per row.
        where : str
            Place prefix, e.g. ``"file sheet.csv"``.
        """
        bad = ~self.ok
        out = np.full(self.reason.size, "", dtype=object)
        row_arr = np.asarray(rows)
        for i in np.flatnonzero(bad):
            problem, accepted = REASONS[self.reason[i]]
            detail = f" ({self.detail[i]})" if self.detail[i] else ""
            field = f", field {self.field[i]!r}" if self.field[i] else ""
            value = f", value {self.value[i]!r}" if self.field[i] else ""
            out[i] = (
                f"{where}, row {row_arr[i]}{field}{value}: {problem}{detail}; accepted: {accepted}"
            )
        return out


def _text(value: object) -> str:
    if value is None:
        return ""
    if isinstance(value, float) and np.isnan(value):
        return ""
    return str(value)


def reason_counts(reasons: ArrayLike) -> dict[str, int]:
    """Count of each reason code present, in the order of :data:`REASONS`."""
    counts = pd.Series(np.asarray(reasons, dtype=object)).value_counts()
    return {code: int(counts[code]) for code in REASONS if code in counts.index}
