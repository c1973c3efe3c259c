"""Recognising attitude-table columns from the headers field sheets commonly use.

Headers are compared after lower-casing, dropping a bracketed unit (``Dip (deg)``)
and removing everything but letters and digits, so ``Dip_Dir``, ``dip dir`` and
``DIPDIR`` are one name. A user mapping ``{canonical: header}`` overrides the guess.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Mapping

from thrustmap.errors import InputError, ParameterError

__all__ = ["FIELDS", "normalize_header", "detect_columns"]

# canonical field -> (what it holds, header spellings after normalize_header)
FIELDS: dict[str, tuple[str, tuple[str, ...]]] = {
    "x": (
        "easting or longitude",
        (
            "x",
            "easting",
            "eastings",
            "east",
            "eastingm",
            "xcoord",
            "xcoordinate",
            "utme",
            "utmx",
            "utmeasting",
        ),
    ),
    "y": (
        "northing or latitude",
        (
            "y",
            "northing",
            "northings",
            "north",
            "northingm",
            "ycoord",
            "ycoordinate",
            "utmn",
            "utmy",
            "utmnorthing",
        ),
    ),
    "station": (
        "station identifier",
        (
            "station",
            "stationid",
            "stationno",
            "stationnumber",
            "stationname",
            "stn",
            "stnid",
            "stnno",
            "site",
            "siteid",
            "stop",
            "locality",
            "localityid",
            "outcrop",
            "outcropid",
            "waypoint",
            "wpt",
        ),
    ),
    "feature": (
        "feature measured (bedding, cleavage, fault, hinge line, ...)",
        (
            "feature",
            "featuretype",
            "type",
            "structure",
            "structuretype",
            "structtype",
            "measurementtype",
            "meastype",
        ),
    ),
    "attitude": (
        "attitude written as one notation (030/45, N30E 45SE, 045/30)",
        ("attitude", "orientation", "strikedip", "strikeanddip", "strikeslashdip", "att"),
    ),
    "strike": (
        "strike azimuth, right-hand rule unless a dip letter says otherwise",
        ("strike", "strikerhr", "rhrstrike", "strikeazimuth", "strk", "str"),
    ),
    "dip_direction": (
        "dip direction azimuth",
        ("dipdirection", "dipdir", "dipdirn", "dipazimuth", "dipaz", "azimuthofdip", "dd", "ddir"),
    ),
    "dip": (
        "dip angle, optionally with a dip letter (45SE)",
        ("dip", "dipangle", "dipamount", "inclinationofdip"),
    ),
    "trend": (
        "line trend (plunge direction)",
        (
            "trend",
            "trd",
            "plungedirection",
            "plungeazimuth",
            "lineationtrend",
            "trendazimuth",
            "bearing",
        ),
    ),
    "plunge": ("line plunge", ("plunge", "plg", "pl", "plungeangle", "lineationplunge")),
    "rake": (
        "rake (pitch) of a line in the plane, optionally with the strike end (35N)",
        ("rake", "pitch", "rakeangle"),
    ),
    "sense": (
        "slip sense of a fault lineation",
        ("sense", "slipsense", "shearsense", "movement", "movementsense", "kinematics"),
    ),
    "overturned": (
        "overturned bedding (yes/no)",
        ("overturned", "overturn", "ot", "inverted", "isoverturned", "upsidedown"),
    ),
    "date": (
        "survey date (ISO 8601)",
        (
            "date",
            "surveydate",
            "datesurveyed",
            "fielddate",
            "obsdate",
            "observationdate",
            "datetime",
            "day",
        ),
    ),
    "declination": (
        "magnetic declination, degrees east positive",
        ("declination", "magneticdeclination", "magdeclination", "magdec", "decl", "dec"),
    ),
}

_LONLAT = {
    "x": (
        "lon",
        "long",
        "longitude",
        "lng",
        "londd",
        "longdd",
        "longitudedd",
        "longwgs84",
        "lonwgs84",
    ),
    "y": ("lat", "latitude", "latdd", "latitudedd", "latwgs84"),
}

_LOOKUP = {spelling: name for name, (_, spellings) in FIELDS.items() for spelling in spellings}
_LOOKUP_LONLAT = {spelling: name for name, spellings in _LONLAT.items() for spelling in spellings}
_UNIT = re.compile(r"[\(\[].*?[\)\]]")
_NON_ALNUM = re.compile(r"[^a-z0-9]")


def normalize_header(header: object) -> str:
    """Header reduced for matching: lower case, bracketed unit dropped, letters and digits only.

    Examples
    --------
    >>> normalize_header(" Dip Dir. (deg) ")
    'dipdir'
    """
    return _NON_ALNUM.sub("", _UNIT.sub("", str(header).lower()))


def detect_columns(
    headers: Iterable[object],
    columns: Mapping[str, str] | None = None,
    *,
    coordinates: bool = True,
    prefer_lonlat: bool = False,
    source: str | None = None,
) -> dict[str, str]:
    """Map canonical fields to the headers of a table.

    Parameters
    ----------
    headers : iterable
        The table's column names, in order.
    columns : mapping of str to str, optional
        ``{canonical: header}`` chosen by the user; these win over detection.
    coordinates : bool, default True
        Look for x/y (or lon/lat) columns; off for layers whose geometry holds
        the position. Keyword only.
    prefer_lonlat : bool, default False
        When both an x/y and a lon/lat pair are present, take lon/lat (the CRS is
        geographic). Keyword only.
    source : str, optional
        File name for messages. Keyword only.

    Returns
    -------
    dict
        Canonical field name to header, for the fields found; lon/lat headers are
        returned under ``x`` and ``y``.

    Raises
    ------
    ParameterError
        When ``columns`` names a canonical field that does not exist.
    InputError
        When ``columns`` names a header the table lacks, or two headers match one
        field (the message lists the headers found).

    Examples
    --------
    >>> detect_columns(["Stn", "Easting", "Northing", "Strike (RHR)", "Dip", "Type"])
    {'x': 'Easting', 'y': 'Northing', 'station': 'Stn', 'feature': 'Type', 'strike': 'Strike (RHR)', 'dip': 'Dip'}
    """
    heads = list(headers)
    found_list = ", ".join(repr(str(h)) for h in heads)
    chosen: dict[str, str] = {}
    for name, header in (columns or {}).items():
        if name not in FIELDS:
            raise ParameterError(f"columns: unknown field {name!r}; fields are {', '.join(FIELDS)}")
        if header not in heads:
            raise InputError(
                f"columns: {name!r} is mapped to {header!r}, which is not a column; "
                f"columns found: {found_list}",
                source=source,
                field=str(header),
            )
        chosen[name] = header
    taken = set(chosen.values())
    hits: dict[str, list[object]] = {}
    lonlat: dict[str, list[object]] = {}
    for h in heads:
        if h in taken:
            continue
        key = normalize_header(h)
        if key in _LOOKUP:
            hits.setdefault(_LOOKUP[key], []).append(h)
        elif key in _LOOKUP_LONLAT:
            lonlat.setdefault(_LOOKUP_LONLAT[key], []).append(h)
    if not coordinates or ("x" in chosen or "y" in chosen):
        hits.pop("x", None)
        hits.pop("y", None)
        lonlat = {}
    elif lonlat.keys() == {"x", "y"} and (prefer_lonlat or not ("x" in hits and "y" in hits)):
        hits["x"], hits["y"] = lonlat["x"], lonlat["y"]
    detected: dict[str, str] = {}
    for name in FIELDS:
        if name in chosen or name not in hits:
            continue
        if len(hits[name]) > 1:
            both = " and ".join(repr(str(h)) for h in hits[name])
            raise InputError(
                f"columns {both} both look like {name!r} ({FIELDS[name][0]}); "
                f"say which with columns={{{name!r}: ...}}; columns found: {found_list}",
                source=source,
            )
        detected[name] = hits[name][0]
    return {
        name: chosen.get(name, detected.get(name))
        for name in FIELDS
        if name in chosen or name in detected
    }
