"""The messy field sheet: magnetic azimuths, mixed notations and deliberate bad rows."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from thrustmap.north import true_to_magnetic

SURVEY_START = dt.date(2024, 6, 3)
STATIONS_PER_DAY = 9
MAX_SURVEY_DAYS = 35
BAD_FRACTION = 0.035
CARDINAL_SNAP = 1.5
PLANE_STYLES = ("rhr", "letter", "quadrant")
PLANE_STYLE_P = (0.4, 0.25, 0.35)

# Rejection reason codes, in the order the rows are spoiled; see truth.json "field_sheet".
BAD_REASONS = (
    "dip_out_of_range",
    "azimuth_out_of_range",
    "unparseable",
    "letter_contradicts_strike",
    "missing_coordinates",
    "outside_crs_area",
    "duplicate_row",
    "unknown_feature",
)
WARNINGS = ("dip_zero", "dip_vertical", "azimuth_360")
UNPARSEABLE = ("see sketch p. 12", "12O/40", "??/35", "steep, not measured")
UNKNOWN_TYPES = ("fossil", "sample")
SCRIPT_NOTE = "synthetic; pasted from a web form: <script>alert(1)</script>"

_LETTERS = np.array(["N", "NE", "E", "SE", "S", "SW", "W", "NW"])


def _letter(azimuth: NDArray) -> NDArray:
    """Nearest of the eight compass letters to each azimuth."""
    return _LETTERS[np.round(np.asarray(azimuth, float) / 45.0).astype(int) % 8]


def _pad(values: NDArray, width: int) -> pd.Series:
    return pd.Series(np.asarray(values, int)).astype(str).str.zfill(width)


def _plane_quadrant(strike: NDArray) -> pd.Series:
    """Quadrant bearing of the north end of each strike line (``N30E``, ``N45W``)."""
    s = np.asarray(strike, int) % 180
    east = s <= 90
    angle = pd.Series(np.where(east, s, 180 - s)).astype(str)
    return "N" + angle + pd.Series(np.where(east, "E", "W"))


def _line_quadrant(trend: NDArray) -> pd.Series:
    """Quadrant bearing of each trend (``N30E``, ``S20W``)."""
    t = np.asarray(trend, int) % 360
    first = np.where((t > 90) & (t <= 270), "S", "N")
    angle = np.select([t <= 90, t <= 180, t <= 270], [t, 180 - t, t - 180], 360 - t)
    last = np.where(t <= 180, "E", "W")
    return pd.Series(first) + pd.Series(angle).astype(str) + pd.Series(last)


def survey_dates(lon: NDArray, rng: np.random.Generator) -> tuple[NDArray, NDArray]:
    """Station order (west to east traverses) and survey date of each site (weekdays only).

    Nine stations a day, more for large scenarios so that the survey never
    lasts more than ``MAX_SURVEY_DAYS`` working days.
    """
    order = np.lexsort((rng.random(lon.size), np.round(lon, 2)))
    rank = np.empty(lon.size, int)
    rank[order] = np.arange(lon.size)
    per_day = max(STATIONS_PER_DAY, -(-lon.size // MAX_SURVEY_DAYS))
    workday = rank // per_day
    w = np.arange(workday.max() + 1)
    offsets = 7 * (w // 5) + w % 5
    days = np.array([SURVEY_START + dt.timedelta(days=int(o)) for o in offsets])
    return rank, days[workday]


def write_attitudes(rows: pd.DataFrame, rng: np.random.Generator) -> pd.DataFrame:
    """Magnetic, rounded attitude texts in mixed notations for good rows.

    ``rows`` holds ``kind`` and true ``dip_direction``, ``dip``, ``trend``,
    ``plunge`` and ``declination``. Returns the text plus the magnetic values
    the text states (``mag_dip_direction``, ``mag_dip``, ``mag_trend``,
    ``mag_plunge``) and the ``notation`` used.
    """
    n = len(rows)
    plane = (rows["kind"] == "plane").to_numpy()
    decl = rows["declination"].to_numpy()
    strike_exact = true_to_magnetic(rows["dip_direction"].to_numpy() - 90.0, decl)
    off = (strike_exact + 45.0) % 90.0 - 45.0
    cardinal = plane & (np.abs(off) <= CARDINAL_SNAP)
    strike = np.where(cardinal, strike_exact - off, strike_exact)
    strike = np.round(np.nan_to_num(strike)).astype(int) % 360
    dip = np.clip(np.round(np.nan_to_num(rows["dip"].to_numpy())), 1, 89).astype(int)
    trend = (
        np.round(np.nan_to_num(true_to_magnetic(rows["trend"].to_numpy(), decl))).astype(int)
        % 360
    )
    plunge = np.clip(np.round(np.nan_to_num(rows["plunge"].to_numpy())), 1, 89).astype(int)
    dd = (strike + 90) % 360

    style = np.where(plane, rng.choice(PLANE_STYLES, size=n, p=PLANE_STYLE_P), "")
    style = np.where(cardinal, "cardinal", style)
    line_style = rng.choice(("trend_plunge", "quadrant_line"), size=n)
    style = np.where(plane, style, line_style)

    # "letter" rows give either strike end; the letter fixes the dip side.
    flip = rng.random(n) < 0.5
    letter_az = np.where(flip, (strike + 180) % 360, strike)
    dip_s = pd.Series(dip).astype(str)
    texts = {
        "rhr": _pad(strike, 3) + "/" + _pad(dip, 2),
        "letter": _pad(letter_az, 3) + "/" + _pad(dip, 2) + pd.Series(_letter(dd)),
        "quadrant": _plane_quadrant(strike) + " " + dip_s + pd.Series(_letter(dd)),
        "cardinal": pd.Series(np.where(strike % 180 == 0, "N-S", "E-W"))
        + " "
        + dip_s
        + pd.Series(_LETTERS[(dd // 45) % 8]),
        "trend_plunge": _pad(trend, 3) + "/" + _pad(plunge, 2),
        "quadrant_line": _line_quadrant(trend) + " " + pd.Series(plunge).astype(str),
    }
    text = pd.Series("", index=range(n), dtype=object)
    for name, values in texts.items():
        text = text.where(style != name, values)
    return pd.DataFrame(
        {
            "attitude": text.to_numpy(),
            "notation": style,
            "mag_dip_direction": np.where(plane, dd, np.nan),
            "mag_dip": np.where(plane, dip, np.nan),
            "mag_trend": np.where(plane, np.nan, trend),
            "mag_plunge": np.where(plane, np.nan, plunge),
        },
        index=rows.index,
    )


def spoil(
    sheet: pd.DataFrame, key: pd.DataFrame, rng: np.random.Generator
) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Spoil a few good rows, once per rejection reason, and plant the warning-only cases.

    ``key`` is aligned with ``sheet`` and holds the magnetic values each text
    states (``mag_dip_direction``, ``mag_dip``). Returns both with duplicated
    rows inserted after their originals; the key gains the expected rejection
    ``reason`` and warning ``flag`` of each row (``""`` when none).
    """
    n = len(sheet)
    k = max(1, round(BAD_FRACTION * n / len(BAD_REASONS)))
    sheet = sheet.reset_index(drop=True)
    key = key.reset_index(drop=True).assign(reason="", flag="")
    is_bedding = (sheet["type"] == "bedding").to_numpy()
    order = rng.permutation(n)
    taken = np.zeros(n, bool)

    def take(eligible: NDArray, count: int) -> NDArray:
        pool = order[eligible[order] & ~taken[order]]
        picked = pool[:count]
        taken[picked] = True
        return picked

    def spoil_text(rows: NDArray, reason: str, texts: list[str]) -> None:
        sheet.loc[rows, "attitude"] = texts
        key.loc[rows, "reason"] = reason

    strike = (key["mag_dip_direction"].to_numpy() - 90.0) % 360.0
    dip = key["mag_dip"].to_numpy()
    rows = take(is_bedding, k)
    spoil_text(
        rows,
        "dip_out_of_range",
        [f"{s:03.0f}/{90 + d // 3 + 1:.0f}" for s, d in zip(strike[rows], dip[rows], strict=True)],
    )
    rows = take(is_bedding & (strike >= 1), k)
    spoil_text(
        rows,
        "azimuth_out_of_range",
        [f"{s + 360:.0f}/{d:02.0f}" for s, d in zip(strike[rows], dip[rows], strict=True)],
    )
    rows = take(is_bedding, k)
    spoil_text(rows, "unparseable", [UNPARSEABLE[i % len(UNPARSEABLE)] for i in range(rows.size)])
    rows = take(is_bedding, k)
    along = (np.round(strike[rows] / 45.0) * 45.0) % 360.0
    spoil_text(
        rows,
        "letter_contradicts_strike",
        [f"{a:03.0f}/{d:02.0f}{_letter(a)}" for a, d in zip(along, dip[rows], strict=True)],
    )

    rows = take(np.ones(n, bool), k)
    sheet.loc[rows, "lon"] = np.nan
    sheet.loc[rows[1::2], "lat"] = np.nan
    key.loc[rows, "reason"] = "missing_coordinates"
    rows = take(np.ones(n, bool), k)
    # typing slips: a latitude off by 100 degrees, a longitude off by 180: outside EPSG:4326's area of use
    sheet.loc[rows[0::2], "lat"] += 100.0
    sheet.loc[rows[1::2], "lon"] += 180.0
    key.loc[rows, "reason"] = "outside_crs_area"
    rows = take(np.ones(n, bool), k)
    sheet.loc[rows, "type"] = [UNKNOWN_TYPES[i % len(UNKNOWN_TYPES)] for i in range(rows.size)]
    key.loc[rows, "reason"] = "unknown_feature"

    # warning-only cases: the flattest and the steepest bedding, the strike closest to north
    for flag, score, text in (
        ("dip_zero", dip, "{s:03.0f}/00"),
        ("dip_vertical", -dip, "{s:03.0f}/90"),
        ("azimuth_360", np.minimum(strike, 360.0 - strike), "360/{d:02.0f}"),
    ):
        i = int(np.argmin(np.where(is_bedding & ~taken, score, np.inf)))
        taken[i] = True
        sheet.loc[i, "attitude"] = text.format(s=strike[i], d=dip[i])
        key.loc[i, "flag"] = flag
    note_row = take(np.ones(n, bool), 1)
    sheet.loc[note_row, "notes"] = SCRIPT_NOTE

    originals = take(np.ones(n, bool), k)
    new_order = np.argsort(np.concatenate([np.arange(n), originals + 0.5]), kind="stable")
    sheet = pd.concat([sheet, sheet.iloc[originals]], ignore_index=True).iloc[new_order]
    key = pd.concat([key, key.iloc[originals].assign(reason="duplicate_row")], ignore_index=True)
    return sheet.reset_index(drop=True), key.iloc[new_order].reset_index(drop=True)
