"""Attitude values from table cells: numbers in columns or notation strings.

Each reader fills arrays for the rows it is given and rejects, through a
:class:`~thrustmap.io.validation.RowVerdicts`, the rows it cannot read. Azimuths
stay in the input's north reference; :func:`thrustmap.io.attitudes.read_attitudes`
turns them to true north afterwards.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from thrustmap.io.columns import FIELDS
from thrustmap.io.validation import RowVerdicts
from thrustmap.io.vocabulary import FEATURE_WORDS, canonical_words
from thrustmap.orientation import (
    dip_direction_to_strike,
    normalize_azimuth,
    parse_bearing,
    parse_lines,
    parse_planes,
    rake_to_line,
)

__all__ = [
    "Cells",
    "Attitudes",
    "read_features",
    "read_words",
    "read_planes",
    "read_lines",
]

Float = NDArray[np.float64]
Bool = NDArray[np.bool_]

# parser reason -> (reason code, detail)
_PARSER_REASONS = {
    "missing": ("missing_attitude", ""),
    "unparseable": ("unparseable", ""),
    "dip_out_of_range": ("dip_out_of_range", ""),
    "plunge_out_of_range": ("plunge_out_of_range", ""),
    "azimuth_out_of_range": ("azimuth_out_of_range", ""),
    "quadrant_angle_over_90": ("azimuth_out_of_range", "quadrant angle over 90"),
    "missing_dip_letter": (
        "unparseable",
        "a quadrant strike needs a dip-side letter, e.g. N30E 45SE",
    ),
    "unknown_dip_letter": ("unparseable", "unknown dip-side letter"),
    "letter_contradicts_strike": ("letter_contradicts_strike", ""),
}


_AZ360_TEXT = re.compile(r"(?<![\d.])360(?:\.0*)?(?![\d.])")


_ANGLE_LETTER = re.compile(r"^(\d+(?:\.\d*)?|\.\d+)\s*([NSEW]{1,2})?$")


_LETTER_AZ = {
    "N": 0.0,
    "NE": 45.0,
    "E": 90.0,
    "SE": 135.0,
    "S": 180.0,
    "SW": 225.0,
    "W": 270.0,
    "NW": 315.0,
}


class Cells:
    """One column: header, numbers (NaN where not a number), blank mask and stripped text.

    Text of a numeric column is built only when asked for, and prints whole
    numbers without a spurious ``.0`` (a station 7 read from a spreadsheet stays ``7``).

    Parameters
    ----------
    series : pandas.Series
        The column.
    header : object
        Its name in the source, used in messages.

    Examples
    --------
    >>> import pandas as pd
    >>> c = Cells(pd.Series([7.0, None, 45.5]), "stn")
    >>> c.text.tolist(), c.blank.tolist()
    (['7', '', '45.5'], [False, True, False])
    """

    def __init__(self, series: pd.Series, header: object) -> None:
        self.header = str(header)
        dtype = series.dtype
        self._text: NDArray[np.object_] | None = None
        self._num: Float | None = None
        if pd.api.types.is_numeric_dtype(dtype) and not pd.api.types.is_bool_dtype(dtype):
            self._num = series.to_numpy(dtype=float, na_value=np.nan)
            self.blank: Bool = np.isnan(self._num)
            return
        missing = series.isna().to_numpy()
        text = series.astype(object).where(~missing, "").astype(str).str.strip()
        self._text = text.to_numpy(dtype=object)
        self.blank = self._text == ""

    @property
    def num(self) -> Float:
        """Numbers per row, NaN where blank or not a number."""
        if self._num is None:
            self._num = _to_float(self.text, self.blank)
        return self._num

    @property
    def text(self) -> NDArray[np.object_]:
        """Stripped text per row, ``""`` when blank."""
        if self._text is None:
            num = self.num
            finite = np.isfinite(num)
            whole = finite & (np.abs(num) < 1e15) & (num == np.floor(np.where(finite, num, 0.0)))
            text = np.full(num.size, "", dtype=object)
            text[whole] = num[whole].astype(np.int64).astype(str)
            other = ~whole & ~self.blank
            text[other] = [repr(v) for v in num[other].tolist()]
            self._text = text
        return self._text


def _to_float(text: NDArray[np.object_], blank: Bool) -> Float:
    """Numbers from text; NaN where blank or not a number."""
    filled = np.where(blank, "nan", text)
    try:
        return filled.astype(float)
    except ValueError:  # some cells are not numbers: the slower, forgiving path
        return pd.to_numeric(pd.Series(filled, dtype=object), errors="coerce").to_numpy(dtype=float)


def _unique_apply(
    func: Callable[..., tuple[NDArray, ...]], texts: NDArray[np.object_], **kwargs
) -> tuple[NDArray, ...]:
    """Apply a per-element parser once per distinct text (field sheets repeat attitudes)."""
    uniques, inverse = np.unique(texts.astype(str), return_inverse=True)
    return tuple(out[inverse.ravel()] for out in func(uniques, **kwargs))


def read_features(
    cells: dict[str, Cells], default: str, n: int, verdicts: RowVerdicts
) -> tuple[NDArray[np.object_], Bool]:
    """Canonical feature per row and a mask of rows that took ``default`` (empty cell).

    Rows naming no known feature are rejected as ``unknown_feature``.
    """
    if "feature" not in cells:
        return np.full(n, default, dtype=object), np.zeros(n, dtype=bool)
    c = cells["feature"]
    feature, known = canonical_words(c.text, FEATURE_WORDS)
    feature[c.blank] = default
    verdicts.reject(~known & ~c.blank, "unknown_feature", c.header, c.text)
    return feature, c.blank.copy()


def read_words(
    cells: dict[str, Cells],
    name: str,
    words: Mapping[str, object],
    missing: object,
    verdicts: RowVerdicts,
    accepted: str,
) -> NDArray[np.object_]:
    """Canonical values of the ``name`` column through ``words``; ``missing`` where absent.

    Rows with a word outside the vocabulary are rejected as ``unparseable``, the
    message listing what is ``accepted``.
    """
    n = verdicts.reason.size
    if name not in cells:
        return np.full(n, missing, dtype=object)
    c = cells[name]
    values, known = canonical_words(c.text, words)
    verdicts.reject(~known, "unparseable", c.header, c.text, f"{FIELDS[name][0]}: {accepted}")
    values[~known] = missing
    return values


@dataclass
class Attitudes:
    """Planes and lines per row in the input's north reference; NaN where not given."""

    dip_direction: Float
    dip: Float
    trend: Float
    plunge: Float
    az360: Bool

    @classmethod
    def empty(cls, n: int) -> Attitudes:
        """All-NaN attitudes for ``n`` rows."""
        return cls(*(np.full(n, np.nan) for _ in range(4)), np.zeros(n, dtype=bool))


def _present(cells: dict[str, Cells], name: str, n: int) -> Bool:
    return ~cells[name].blank if name in cells else np.zeros(n, dtype=bool)


def _reject_parser(
    verdicts: RowVerdicts, rows: Bool, errors: NDArray[np.object_], field: object, value: object
) -> None:
    for code, (reason, detail) in _PARSER_REASONS.items():
        verdicts.reject(rows & (errors == code), reason, field, value, detail)


def read_planes(
    att: Attitudes,
    plane_rows: Bool,
    cells: dict[str, Cells],
    plane_azimuth: str,
    verdicts: RowVerdicts,
    *,
    notation: bool = True,
    lacking_detail: str = "",
) -> None:
    """Fill planes for ``plane_rows`` from dip direction or strike + dip columns, else
    (``notation``) from the notation column; reject rows that cannot be read."""
    n = plane_rows.size
    nan = np.full(n, np.nan)
    empty = np.full(n, "", dtype=object)
    c_dd, c_strike, c_dip = cells.get("dip_direction"), cells.get("strike"), cells.get("dip")
    use_dd = _present(cells, "dip_direction", n)
    use_strike = ~use_dd & _present(cells, "strike", n)
    az_given = use_dd | use_strike
    has_dip = _present(cells, "dip", n)
    has_att = _present(cells, "attitude", n) if notation else np.zeros(n, dtype=bool)
    az_num = np.where(use_dd, c_dd.num if c_dd else nan, c_strike.num if c_strike else nan)
    dip_num = c_dip.num if c_dip else nan
    az_header = np.where(
        use_dd, c_dd.header if c_dd else "", c_strike.header if c_strike else "strike"
    )
    dip_header = c_dip.header if c_dip else "dip"

    def az_text() -> NDArray[np.object_]:
        return np.where(use_dd, c_dd.text if c_dd else empty, c_strike.text if c_strike else empty)

    def dip_text() -> NDArray[np.object_]:
        return c_dip.text if c_dip else empty

    in_columns = plane_rows & az_given & has_dip
    in_text = plane_rows & ~in_columns & has_att
    lacking = plane_rows & ~in_columns & ~in_text
    verdicts.reject(
        lacking & az_given, "missing_attitude", dip_header, "", "azimuth given without a dip"
    )
    verdicts.reject(
        lacking & has_dip,
        "missing_attitude",
        az_header,
        "",
        "dip given without a strike or dip direction",
    )
    att_header = cells["attitude"].header if "attitude" in cells and notation else ""
    verdicts.reject(lacking, "missing_attitude", att_header, "", lacking_detail)

    numeric = in_columns & np.isfinite(az_num) & np.isfinite(dip_num)
    verdicts.reject(
        numeric & ((az_num < 0) | (az_num > 360)), "azimuth_out_of_range", az_header, az_text
    )
    verdicts.reject(
        numeric & ((dip_num < 0) | (dip_num > 90)), "dip_out_of_range", dip_header, dip_text
    )
    az = normalize_azimuth(az_num)
    att.dip_direction = np.where(
        numeric, np.where(use_dd, az, normalize_azimuth(az + 90.0)), att.dip_direction
    )
    att.dip = np.where(numeric, dip_num, att.dip)
    att.az360 |= numeric & (az_num == 360.0)

    # columns holding notation: strike "N30E" with dip "45SE"; dip direction "S60E"
    # np.char.add: numpy 1.24 (the desktop GIS's) has no "+" for string arrays.
    field = np.char.add(az_header, "/" + dip_header)
    strike_rows = in_columns & ~numeric & use_strike
    dd_rows = in_columns & ~numeric & use_dd
    if strike_rows.any() or dd_rows.any():
        az_t, dip_t = az_text(), dip_text()
        if strike_rows.any():
            _parse_planes_into(att, strike_rows, az_t + " " + dip_t, "strike", field, verdicts)
            att.az360 |= strike_rows & _is_360(az_t)
        if dd_rows.any():
            _dip_direction_text(att, dd_rows, az_t, dip_t, field, verdicts)
    if in_text.any():
        c = cells["attitude"]
        _parse_planes_into(att, in_text, c.text, plane_azimuth, c.header, verdicts)
        att.az360 |= in_text & _mentions_360(c.text)


def _dip_direction_text(
    att: Attitudes,
    rows: Bool,
    az_text: NDArray[np.object_],
    dip_text: NDArray[np.object_],
    field: object,
    verdicts: RowVerdicts,
) -> None:
    """Dip direction written as a bearing (``S60E``), dip with an optional side letter (``45SE``)."""
    idx = np.flatnonzero(rows)
    bearing = np.full(rows.size, np.nan)
    errors = np.full(rows.size, "", dtype=object)
    bearing[idx], errors[idx] = _unique_apply(parse_bearing, az_text[idx])
    parts = pd.Series(dip_text[idx], dtype=object).str.upper().str.extract(_ANGLE_LETTER)
    dip = np.full(rows.size, np.nan)
    dip[idx] = pd.to_numeric(parts[0], errors="coerce").to_numpy(dtype=float)
    letter_az = np.full(rows.size, np.nan)
    letter_az[idx] = [_LETTER_AZ.get(v, np.nan) for v in parts[1].fillna("")]
    off = np.abs((letter_az - bearing + 180.0) % 360.0 - 180.0)
    value = az_text + " " + dip_text
    _reject_parser(verdicts, rows, errors, field, value)
    verdicts.reject(rows & np.isnan(dip), "unparseable", field, value)
    verdicts.reject(rows & (dip > 90.0), "dip_out_of_range", field, value)
    verdicts.reject(
        rows & np.isfinite(letter_az) & ~(off < 90.0),
        "letter_contradicts_strike",
        field,
        value,
        "the dip-side letter points away from the dip direction",
    )
    att.dip_direction = np.where(rows, bearing, att.dip_direction)
    att.dip = np.where(rows, dip, att.dip)
    att.az360 |= rows & _is_360(az_text)


def _parse_planes_into(
    att: Attitudes,
    rows: Bool,
    texts: NDArray[np.object_],
    mode: str,
    field: object,
    verdicts: RowVerdicts,
) -> None:
    idx = np.flatnonzero(rows)
    dd, dip, err = _unique_apply(parse_planes, texts[idx], azimuth=mode)
    errors = np.full(rows.size, "", dtype=object)
    errors[idx] = err
    _reject_parser(verdicts, rows, errors, field, texts)
    att.dip_direction[idx] = dd
    att.dip[idx] = dip


def _mentions_360(texts: NDArray[np.object_]) -> Bool:
    return (
        pd.Series(texts, dtype=object).str.contains(_AZ360_TEXT).fillna(False).to_numpy(dtype=bool)
    )


def _is_360(texts: NDArray[np.object_]) -> Bool:
    return (
        pd.Series(texts, dtype=object)
        .str.fullmatch(r"360(?:\.0*)?")
        .fillna(False)
        .to_numpy(dtype=bool)
    )


def read_lines(
    att: Attitudes,
    kind: NDArray[np.object_],
    cells: dict[str, Cells],
    plane_azimuth: str,
    verdicts: RowVerdicts,
) -> None:
    """Lines for line rows, and lines measured on plane rows (trend/plunge or rake)."""
    n = kind.size
    line_rows = kind == "line"
    known = line_rows | (kind == "plane")
    has_tr = _present(cells, "trend", n)
    has_pl = _present(cells, "plunge", n)
    has_rake = _present(cells, "rake", n)
    has_att = _present(cells, "attitude", n)
    tr_header = cells["trend"].header if "trend" in cells else "trend"
    pl_header = cells["plunge"].header if "plunge" in cells else "plunge"

    in_columns = known & has_tr & has_pl
    half = known & (has_tr ^ has_pl)
    verdicts.reject(
        half & has_tr, "missing_attitude", pl_header, "", "trend given without a plunge"
    )
    verdicts.reject(
        half & has_pl, "missing_attitude", tr_header, "", "plunge given without a trend"
    )
    if in_columns.any():
        _line_columns(att, in_columns, cells["trend"], cells["plunge"], verdicts)

    by_rake = known & has_rake & ~in_columns & ~half
    host_rows = by_rake & line_rows
    if host_rows.any():
        # the plane a line row's rake is measured on, from the plane columns
        read_planes(
            att,
            host_rows,
            cells,
            plane_azimuth,
            verdicts,
            notation=False,
            lacking_detail="a rake needs its plane: strike or dip direction, and dip",
        )
    if by_rake.any():
        _rake_lines(att, by_rake & verdicts.ok, cells["rake"], verdicts)
    att.dip_direction = np.where(line_rows, np.nan, att.dip_direction)
    att.dip = np.where(line_rows, np.nan, att.dip)

    in_text = line_rows & ~in_columns & ~half & ~by_rake & has_att
    lacking = line_rows & ~in_columns & ~half & ~by_rake & ~has_att
    verdicts.reject(
        lacking,
        "missing_attitude",
        cells["attitude"].header if "attitude" in cells else "",
        "",
        "a line needs trend and plunge, a rake on a plane, or a notation such as 045/30",
    )
    if in_text.any():
        c = cells["attitude"]
        idx = np.flatnonzero(in_text)
        tr, pl, err = _unique_apply(parse_lines, c.text[idx])
        errors = np.full(n, "", dtype=object)
        errors[idx] = err
        _reject_parser(verdicts, in_text, errors, c.header, c.text)
        att.trend[idx] = tr
        att.plunge[idx] = pl
        att.az360 |= in_text & _mentions_360(c.text)


def _line_columns(att: Attitudes, rows: Bool, ct: Cells, cp: Cells, verdicts: RowVerdicts) -> None:
    numeric = rows & np.isfinite(ct.num) & np.isfinite(cp.num)
    verdicts.reject(
        numeric & ((ct.num < 0) | (ct.num > 360)),
        "azimuth_out_of_range",
        ct.header,
        lambda: ct.text,
    )
    verdicts.reject(
        numeric & ((cp.num < 0) | (cp.num > 90)),
        "plunge_out_of_range",
        cp.header,
        lambda: cp.text,
    )
    att.trend = np.where(numeric, normalize_azimuth(ct.num), att.trend)
    att.plunge = np.where(numeric, cp.num, att.plunge)
    att.az360 |= numeric & (ct.num == 360.0)
    textual = rows & ~numeric
    if textual.any():
        idx = np.flatnonzero(textual)
        combined = ct.text + " " + cp.text
        tr, pl, err = _unique_apply(parse_lines, combined[idx])
        errors = np.full(rows.size, "", dtype=object)
        errors[idx] = err
        _reject_parser(verdicts, textual, errors, f"{ct.header}/{cp.header}", combined)
        att.trend[idx] = tr
        att.plunge[idx] = pl
        att.az360 |= textual & _is_360(ct.text)


def _rake_lines(att: Attitudes, rows: Bool, c: Cells, verdicts: RowVerdicts) -> None:
    """Lines from a rake measured on the row's plane, from the RHR strike or a named strike end."""
    upper = pd.Series(c.text, dtype=object).str.upper()
    parts = upper.str.extract(_ANGLE_LETTER)
    angle = pd.to_numeric(parts[0], errors="coerce").to_numpy(dtype=float)
    letter = parts[1].fillna("").to_numpy(dtype=object)
    readable = np.isfinite(angle)
    verdicts.reject(
        rows & ~readable,
        "unparseable",
        c.header,
        c.text,
        "rake: an angle, optionally with the strike end, e.g. 35N",
    )
    verdicts.reject(rows & readable & (angle > 180.0), "rake_out_of_range", c.header, c.text)
    from_az = np.array([_LETTER_AZ.get(s, np.nan) for s in letter], dtype=float)
    verdicts.reject(
        rows & (letter != "") & np.isnan(from_az),
        "unparseable",
        c.header,
        c.text,
        "rake: the strike end is a compass letter such as N, NE or SW",
    )
    strike = dip_direction_to_strike(att.dip_direction)
    off = np.abs((from_az - strike + 180.0) % 360.0 - 180.0)
    verdicts.reject(
        rows & (letter != "") & (np.abs(off - 90.0) < 1e-9),
        "letter_contradicts_strike",
        c.header,
        c.text,
        "the letter is square to the strike, so it names neither strike end",
    )
    use = rows & verdicts.ok
    if use.any():
        tr, pl = rake_to_line(
            att.dip_direction[use],
            att.dip[use],
            angle[use],
            from_azimuth=np.where(np.isnan(from_az[use]), strike[use], from_az[use]),
        )
        att.trend[use] = tr
        att.plunge[use] = pl
