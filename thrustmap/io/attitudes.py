"""Reading field attitudes into a validated, north-corrected attitude table.

:func:`read_attitudes` takes a field sheet (CSV, XLSX), a vector layer or an
in-memory table, finds its columns, reads planes and lines in numeric columns or
in one notation column, converts every azimuth to true north (and grid north of
the working CRS), and sorts every row into ``accepted`` or ``rejected`` with a
reason code. Nothing is dropped: ``len(accepted) + len(rejected)`` is the number
of input rows and ``source_row`` maps each back.

Checks, in order of precedence (a row keeps the first reason it fails on):
empty row, exact duplicate, coordinates (missing, not a point, outside the CRS's
area of use), feature type, attitude (missing, unparseable, out of range,
contradictory dip letter), slip sense and overturned values, then declination
and survey date when azimuths are magnetic.
"""

from __future__ import annotations

import logging
import os
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path

import geopandas as gpd
import numpy as np
import pandas as pd
import pyproj
import shapely
from numpy.typing import NDArray

from thrustmap.errors import CRSError, InputError, ParameterError
from thrustmap.io.cells import (
    Attitudes,
    Cells,
    read_features,
    read_lines,
    read_planes,
    read_words,
)
from thrustmap.io.columns import detect_columns
from thrustmap.io.sources import TABLE_SUFFIXES, is_projected_metric, read_source
from thrustmap.io.validation import FLAGS, REASONS, RowVerdicts, join_flags, reason_counts
from thrustmap.io.vocabulary import (
    FEATURE_WORDS,
    SENSE_WORDS,
    YES_NO_WORDS,
    canonical_words,
    feature_kind,
)
from thrustmap.north import convergence, igrf_period, parse_dates, true_to_grid
from thrustmap.north import declination as igrf_declination
from thrustmap.orientation import dip_direction_to_strike, normalize_azimuth

__all__ = ["read_attitudes", "AttitudeSet", "ATTITUDE_COLUMNS", "REJECT_COLUMNS", "AZIMUTH_REFS"]

log = logging.getLogger(__name__)

AZIMUTH_REFS = ("magnetic", "true", "grid")
_PLANE_AZIMUTHS = ("strike", "dip_direction")
ATTITUDE_COLUMNS = (
    "source_row",
    "station",
    "feature",
    "kind",
    "dip_direction",
    "dip",
    "strike",
    "trend",
    "plunge",
    "sense",
    "overturned",
    "azimuth_ref",
    "dip_direction_grid",
    "strike_grid",
    "trend_grid",
    "declination",
    "convergence",
    "azimuth_ref_input",
    "flags",
)
REJECT_COLUMNS = ("source_row", "reason", "field", "value", "message")
_RESERVED = frozenset(ATTITUDE_COLUMNS) | frozenset(REJECT_COLUMNS) | {"geometry"}

# Projects often run a little past a zone edge; the area check is for gross errors
# (swapped x/y, wrong zone, wrong CRS), so it allows this margin around the area of use.
_AREA_MARGIN_DEG = 1.0


Float = NDArray[np.float64]
Bool = NDArray[np.bool_]


@dataclass
class AttitudeSet:
    """Result of :func:`read_attitudes`.

    Attributes
    ----------
    accepted : GeoDataFrame
        Valid rows: the columns of :data:`ATTITUDE_COLUMNS`, then every original
        column (a clash gets the prefix ``orig_``), point geometry in ``crs``.
    rejected : DataFrame
        Rejected rows: :data:`REJECT_COLUMNS`, then the original columns (the
        source geometry as WKT in ``orig_geometry``).
    counts : dict
        ``accepted`` and ``rejected`` totals, then rows per reason code.
    flag_counts : dict
        Accepted rows per warning flag.
    source : str
        Where the rows came from (path and layer, or ``"input table"``).
    crs : pyproj.CRS or None
        Working CRS of ``accepted``.
    """

    accepted: gpd.GeoDataFrame
    rejected: pd.DataFrame
    counts: dict[str, int] = field(default_factory=dict)
    flag_counts: dict[str, int] = field(default_factory=dict)
    source: str = ""
    crs: pyproj.CRS | None = None

    def summary(self) -> str:
        """Counts as text: a total line, then one line per reason and per flag.

        Examples
        --------
        >>> import pandas as pd
        >>> table = pd.DataFrame({"x": [500000.0, 500000.0], "y": [5e6, 5e6], "attitude": ["030/45", "030/95"]})
        >>> print(read_attitudes(table, crs="EPSG:32633").summary())
        input table: 2 rows, 1 accepted, 1 rejected
          rejected dip_out_of_range: 1 (dip outside 0-90 degrees)
        """
        total = self.counts.get("accepted", 0) + self.counts.get("rejected", 0)
        lines = [
            f"{self.source}: {total} rows, {self.counts.get('accepted', 0)} accepted, "
            f"{self.counts.get('rejected', 0)} rejected"
        ]
        for code, n in self.counts.items():
            if code in REASONS:
                lines.append(f"  rejected {code}: {n} ({REASONS[code][0]})")
        for flag, n in self.flag_counts.items():
            lines.append(f"  flagged {flag}: {n} ({FLAGS[flag]})")
        return "\n".join(lines)

    def raise_if_rejected(self, *, show: int = 5) -> None:
        """Raise :class:`~thrustmap.errors.InputError` when any row was rejected.

        Parameters
        ----------
        show : int, default 5
            How many row messages to include. Keyword only.

        Raises
        ------
        InputError
            With the summary and the first ``show`` messages.
        """
        if self.rejected.empty:
            return
        first = "\n".join(self.rejected["message"].astype(str).head(show))
        more = len(self.rejected) - min(show, len(self.rejected))
        tail = f"\n... and {more} more" if more > 0 else ""
        raise InputError(f"rows were rejected\n{self.summary()}\n{first}{tail}")


def read_attitudes(
    source: str | os.PathLike | pd.DataFrame,
    *,
    crs: object = None,
    layer: str | None = None,
    columns: Mapping[str, str] | None = None,
    azimuth_ref: str = "true",
    declination: float | None = None,
    survey_date: object = None,
    working_crs: object = None,
    plane_azimuth: str = "strike",
    default_feature: str = "bedding",
    engine: str | None = None,
) -> AttitudeSet:
    """Read, validate and north-correct field attitudes.

    Parameters
    ----------
    source : path-like or (Geo)DataFrame
        A CSV/XLSX field sheet, a vector layer (GeoPackage, GeoJSON, Shapefile,
        ...), or a table already in memory. Rows are numbered from 1 in order
        (``source_row``), whatever the frame's index.
    crs : object, optional
        CRS of the coordinates (anything pyproj reads). Required for tables
        without one; must agree with a layer's own CRS. Never guessed.
    layer : str, optional
        Layer or sheet name, when the file holds several.
    columns : mapping, optional
        ``{field: header}`` overriding the header detection; fields are those of
        :data:`thrustmap.io.columns.FIELDS` (``x``, ``y``, ``station``,
        ``feature``, ``attitude``, ``strike``, ``dip_direction``, ``dip``,
        ``trend``, ``plunge``, ``rake``, ``sense``, ``overturned``, ``date``,
        ``declination``). Naming ``x`` and ``y`` takes positions from those
        columns even in a layer with geometry.
    azimuth_ref : {"true", "magnetic", "grid"}, default "true"
        North reference of the azimuths in the source. ``grid`` means grid north
        of the source CRS.
    declination : float, optional
        Declination for the whole dataset (degrees, east positive); per-row
        values in a declination column take precedence. Magnetic data only.
    survey_date : date-like, optional
        Date for an IGRF declination at each station, for rows without a
        declination value or date of their own. Magnetic data only.
    working_crs : object, optional
        Projected, metric CRS of the output. Default: the source CRS when it is
        projected and metric, else the local UTM zone (``estimate_utm_crs``).
    plane_azimuth : {"strike", "dip_direction"}, default "strike"
        What a bare azimuth in a notation column means (``030/45``): a
        right-hand-rule strike or a dip direction. Separate columns say it by
        their header.
    default_feature : str, default "bedding"
        Feature for rows without one (no feature column, or an empty cell).
    engine : {"pyogrio", "fiona"}, optional
        Vector I/O engine; default geopandas' default.

    Returns
    -------
    AttitudeSet
        ``accepted`` (GeoDataFrame), ``rejected`` (DataFrame), ``counts``,
        ``flag_counts``, ``source``, ``crs``.

    Raises
    ------
    CRSError
        When the source has no CRS and none is given, or they disagree.
    ParameterError
        For an invalid option (the message lists the valid values), or when
        magnetic azimuths come with no way to find a declination.
    InputError
        When ``columns`` names a missing header, two headers fit one field, or
        no coordinates can be found.
    SourceNotFoundError
        When the file is missing (an unreadable file is an ``InputError``).

    Examples
    --------
    >>> import pandas as pd
    >>> sheet = pd.DataFrame({
    ...     "stn": ["A1", "A2"], "easting": [500000.0, 501000.0],
    ...     "northing": [5000000.0, 5000000.0], "type": ["bedding", "hinge"],
    ...     "attitude": ["N30E 45SE", "045/30"]})
    >>> result = read_attitudes(sheet, crs="EPSG:32633")
    >>> result.accepted[["station", "feature", "dip_direction", "dip", "trend", "plunge"]].to_dict("records")[0]
    {'station': 'A1', 'feature': 'bedding', 'dip_direction': 120.0, 'dip': 45.0, 'trend': nan, 'plunge': nan}
    >>> result.accepted["trend"].tolist()[1]
    45.0
    """
    _check_choice(azimuth_ref, "azimuth_ref", AZIMUTH_REFS)
    _check_choice(plane_azimuth, "plane_azimuth", _PLANE_AZIMUTHS)
    default = _default_feature(default_feature)
    work_given = _given_working_crs(working_crs)
    frame, where, label = _load(source, layer, engine)
    src_crs = _source_crs(frame, crs, where)
    geom_name = _geometry_name(frame)
    originals = pd.DataFrame(frame.drop(columns=[geom_name]) if geom_name else frame).reset_index(
        drop=True
    )
    originals.columns = [str(c) for c in originals.columns]
    use_columns_xy = columns is not None and {"x", "y"} <= set(columns)
    mapping = detect_columns(
        originals.columns,
        columns,
        coordinates=geom_name is None or use_columns_xy,
        prefer_lonlat=src_crs.is_geographic,
        source=label,
    )
    survey_day = _check_north_options(azimuth_ref, declination, survey_date, mapping, src_crs)
    columns_cells = {c: Cells(originals[c], c) for c in originals.columns}
    cells = {name: columns_cells[header] for name, header in mapping.items()}
    n = len(originals)
    rows = np.arange(1, n + 1)
    verdicts = RowVerdicts(n)
    geoms = frame.geometry.to_numpy() if geom_name else None

    _check_empty_and_duplicates(originals, columns_cells, geoms, rows, verdicts)
    x, y = _coordinates(cells, geoms, verdicts, originals, label)
    lon, lat = _check_area(x, y, src_crs, cells, verdicts)
    feature, feature_flag = read_features(cells, default, n, verdicts)
    kind = feature_kind(feature)
    att = Attitudes.empty(n)
    read_planes(att, kind == "plane", cells, plane_azimuth, verdicts)
    read_lines(att, kind, cells, plane_azimuth, verdicts)
    sense = read_words(
        cells, "sense", SENSE_WORDS, "", verdicts, "reverse, normal, dextral, sinistral or empty"
    )
    overturned = read_words(
        cells, "overturned", YES_NO_WORDS, False, verdicts, "yes/no, true/false, 1/0 or empty"
    )
    if azimuth_ref == "magnetic":
        offset = _declinations(cells, declination, survey_day, lon, lat, verdicts)
    elif azimuth_ref == "grid":
        offset = convergence(x, y, src_crs)
    else:
        offset = np.zeros(n)

    ok = verdicts.ok
    work_crs = _working_crs(work_given, src_crs, lon[ok], lat[ok])
    sel = np.flatnonzero(ok)
    points = gpd.GeoSeries(shapely.points(x[sel], y[sel]), crs=src_crs).to_crs(work_crs)
    conv = convergence(points.x.to_numpy(), points.y.to_numpy(), work_crs)
    dd = normalize_azimuth(att.dip_direction[sel] + offset[sel])
    tr = normalize_azimuth(att.trend[sel] + offset[sel])
    strike = dip_direction_to_strike(dd)
    flag_masks = {
        "dip_zero": att.dip[sel] == 0.0,
        "dip_vertical": att.dip[sel] == 90.0,
        "plunge_vertical": att.plunge[sel] == 90.0,
        "azimuth_360": att.az360[sel],
        "feature_default": feature_flag[sel],
    }
    flags = join_flags(flag_masks, sel.size)
    station = (
        cells["station"].text[sel] if "station" in cells else np.full(sel.size, "", dtype=object)
    )
    canonical = {
        "source_row": rows[sel],
        "station": station,
        "feature": feature[sel],
        "kind": kind[sel],
        "dip_direction": dd,
        "dip": att.dip[sel],
        "strike": strike,
        "trend": tr,
        "plunge": att.plunge[sel],
        "sense": sense[sel],
        "overturned": overturned[sel].astype(bool),
        "azimuth_ref": np.full(sel.size, "true", dtype=object),
        "dip_direction_grid": true_to_grid(dd, conv),
        "strike_grid": true_to_grid(strike, conv),
        "trend_grid": true_to_grid(tr, conv),
        "declination": offset[sel] if azimuth_ref == "magnetic" else np.zeros(sel.size),
        "convergence": conv,
        "azimuth_ref_input": np.full(sel.size, azimuth_ref, dtype=object),
        "flags": flags,
    }
    renamed = _renamed(originals)
    accepted = gpd.GeoDataFrame(
        pd.concat([pd.DataFrame(canonical), renamed.iloc[sel].reset_index(drop=True)], axis=1),
        geometry=points.reset_index(drop=True).values,
        crs=work_crs,
    )
    rejected = _rejected(verdicts, rows, where, renamed, geoms)
    counts = {
        "accepted": int(sel.size),
        "rejected": int(n - sel.size),
        **reason_counts(verdicts.reason),
    }
    result = AttitudeSet(
        accepted=accepted,
        rejected=rejected,
        counts=counts,
        flag_counts={f: int(m.sum()) for f, m in flag_masks.items() if m.any()},
        source=label,
        crs=work_crs,
    )
    log.info("%s", result.summary())
    return result


# --------------------------------------------------------------------------- options


def _check_choice(value: str, name: str, choices: tuple[str, ...]) -> None:
    if value not in choices:
        raise ParameterError(f"{name}={value!r} is not valid; choose one of {', '.join(choices)}")


def _default_feature(value: str) -> str:
    canonical, known = canonical_words([value], FEATURE_WORDS)
    if not known[0]:
        raise ParameterError(
            f"default_feature={value!r} is not a known feature; choose one of "
            + ", ".join(sorted(set(FEATURE_WORDS.values())))
        )
    return str(canonical[0])


def _check_north_options(
    azimuth_ref: str,
    declination: float | None,
    survey_date: object,
    mapping: dict[str, str],
    src_crs: pyproj.CRS,
) -> np.datetime64:
    """Validate the north options; return the survey day (NaT when not given)."""
    if azimuth_ref != "magnetic":
        if declination is not None or survey_date is not None:
            raise ParameterError(
                f"declination= and survey_date= apply to magnetic azimuths only, but "
                f"azimuth_ref={azimuth_ref!r}; pass azimuth_ref='magnetic' if the azimuths are magnetic"
            )
        if azimuth_ref == "grid" and not src_crs.is_projected:
            raise ParameterError(
                f"azimuth_ref='grid' needs a projected source CRS; {src_crs.name} is not projected"
            )
        return np.datetime64("NaT")
    if declination is not None and not (np.isfinite(declination) and abs(declination) <= 180.0):
        raise ParameterError(
            f"declination={declination!r} is not valid; give degrees from -180 to 180, east positive"
        )
    day = np.datetime64("NaT")
    if survey_date is not None:
        day = parse_dates(survey_date).ravel()[0]
        start, end = igrf_period()
        if np.isnat(day) or not (start <= day <= end):
            raise ParameterError(
                f"survey_date={survey_date!r} is not valid; give an ISO date such as 2024-05-17 "
                f"from {start} to {end} (the IGRF period)"
            )
    if declination is None and np.isnat(day) and not {"declination", "date"} & set(mapping):
        raise ParameterError(
            "azimuth_ref='magnetic' needs a declination: give declination= (degrees, east "
            "positive), survey_date= (IGRF declination at each station), or a declination "
            "or date column"
        )
    return day


# --------------------------------------------------------------------------- source


def _load(source: object, layer: str | None, engine: str | None) -> tuple[pd.DataFrame, str, str]:
    """Frame, message prefix ("file x.csv, layer a") and label ("x.csv (layer a)") of a source.

    A frame read by :func:`thrustmap.io.sources.read_source` names its file in
    ``attrs``; other frames are "input table".
    """
    if isinstance(source, pd.DataFrame):
        if layer is not None:
            raise ParameterError("layer= applies to files, not to a table in memory")
        frame = source
    else:
        if layer is not None and Path(source).suffix.lower() in TABLE_SUFFIXES:
            raise ParameterError(
                f"file {source}: layer={layer!r} given, but a text table has no layers"
            )
        frame = read_source(source, layer=layer, engine=engine)
    path, name = frame.attrs.get("source"), frame.attrs.get("layer")
    if path is None:
        return frame, "input table", "input table"
    if name is None:
        return frame, f"file {path}", str(path)
    return frame, f"file {path}, layer {name}", f"{path} (layer {name})"


def _geometry_name(frame: pd.DataFrame) -> str | None:
    if not isinstance(frame, gpd.GeoDataFrame):
        return None
    name = frame.active_geometry_name
    return name if name is not None and name in frame.columns else None


def _source_crs(frame: pd.DataFrame, crs: object, where: str) -> pyproj.CRS:
    own = frame.crs if _geometry_name(frame) else frame.attrs.get("crs")
    given = None
    if crs is not None:
        try:
            given = pyproj.CRS.from_user_input(crs)
        except pyproj.exceptions.CRSError as exc:
            raise CRSError(f"crs={crs!r} is not a CRS pyproj knows ({exc})") from exc
    if own is not None:
        own = pyproj.CRS.from_user_input(own)
    if own is not None and given is not None and not own.equals(given, ignore_axis_order=True):
        raise CRSError(
            f"{where} declares CRS {own.to_string()} ({own.name}) but crs={crs!r} was given; "
            "drop crs= or reproject the data first"
        )
    chosen = own if own is not None else given
    if chosen is None:
        raise CRSError(
            f"{where} has no coordinate reference system and thrustmap never guesses one; "
            "pass crs=, e.g. crs='EPSG:4326' for longitude/latitude in WGS 84 or "
            "crs='EPSG:32633' for UTM zone 33N"
        )
    return pyproj.CRS.from_user_input(chosen)


def _renamed(originals: pd.DataFrame) -> pd.DataFrame:
    used = set(_RESERVED)
    names = []
    for c in originals.columns:
        name = c
        while name in used:
            name = f"orig_{name}"
        used.add(name)
        names.append(name)
    out = originals.copy()
    out.columns = names
    return out


# --------------------------------------------------------------------------- checks


def _check_empty_and_duplicates(
    originals: pd.DataFrame,
    columns_cells: dict[str, Cells],
    geoms: NDArray | None,
    rows: NDArray,
    verdicts: RowVerdicts,
) -> None:
    empty = np.ones(len(originals), dtype=bool)
    for c in columns_cells.values():
        empty &= c.blank
    key = originals.copy()
    if geoms is not None:
        empty &= shapely.is_missing(geoms) | shapely.is_empty(geoms)
        key["\0geometry"] = shapely.to_wkb(geoms)
    verdicts.reject(empty, "empty_row", "", "")
    try:
        dup = key.duplicated(keep="first").to_numpy()
    except TypeError:  # unhashable cells (lists from nested GeoJSON properties)
        key = key.astype(str)
        dup = key.duplicated(keep="first").to_numpy()
    if dup.any():
        hashes = pd.util.hash_pandas_object(key, index=False).to_numpy()
        first = pd.Series(rows).groupby(hashes).transform("min").to_numpy()
        detail = np.full(rows.size, "", dtype=object)
        detail[dup] = [f"same as row {r}" for r in first[dup]]
        verdicts.reject(dup, "duplicate_row", "", "", detail)


def _coordinates(
    cells: dict[str, Cells],
    geoms: NDArray | None,
    verdicts: RowVerdicts,
    originals: pd.DataFrame,
    label: str,
) -> tuple[Float, Float]:
    if "x" in cells and "y" in cells:
        cx, cy = cells["x"], cells["y"]
        bad_x = ~np.isfinite(cx.num)
        bad_y = ~np.isfinite(cy.num)
        verdicts.reject(bad_x, "missing_coordinates", cx.header, lambda: cx.text)
        verdicts.reject(bad_y, "missing_coordinates", cy.header, lambda: cy.text)
        return cx.num, cy.num
    if geoms is not None:
        missing = shapely.is_missing(geoms) | shapely.is_empty(geoms)
        kinds = shapely.get_type_id(geoms)
        not_point = ~missing & (kinds != shapely.GeometryType.POINT)
        verdicts.reject(missing, "missing_coordinates", "geometry", "")
        if not_point.any():
            verdicts.reject(not_point, "not_a_point", "geometry", _type_names(geoms, not_point))
        points = ~missing & ~not_point
        x = np.where(points, shapely.get_x(np.where(points, geoms, None)), np.nan)
        y = np.where(points, shapely.get_y(np.where(points, geoms, None)), np.nan)
        verdicts.reject(
            points & ~(np.isfinite(x) & np.isfinite(y)), "missing_coordinates", "geometry", ""
        )
        return x.astype(float), y.astype(float)
    found = ", ".join(repr(c) for c in originals.columns)
    raise InputError(
        "no coordinates: no x/y, easting/northing or lon/lat columns found; name them with "
        f"columns={{'x': ..., 'y': ...}}; columns found: {found}",
        source=label,
    )


def _type_names(geoms: NDArray, mask: Bool) -> NDArray[np.object_]:
    names = np.full(geoms.size, "", dtype=object)
    names[mask] = [g.geom_type for g in geoms[mask]]
    return names


def _check_area(
    x: Float, y: Float, crs: pyproj.CRS, cells: dict[str, Cells], verdicts: RowVerdicts
) -> tuple[Float, Float]:
    """Reject rows outside the CRS's area of use; return geographic lon/lat (WGS 84)."""
    finite = np.isfinite(x) & np.isfinite(y)
    to_geo = pyproj.Transformer.from_crs(crs, "EPSG:4326", always_xy=True)
    lon, lat = to_geo.transform(np.where(finite, x, 0.0), np.where(finite, y, 0.0), errcheck=False)
    lon = np.where(finite, np.asarray(lon, dtype=float), np.nan)
    lat = np.where(finite, np.asarray(lat, dtype=float), np.nan)
    valid = np.isfinite(lon) & np.isfinite(lat) & (np.abs(lat) <= 90.0) & (np.abs(lon) <= 180.0)
    if crs.is_geographic:
        # lon/lat beyond their ranges are errors, not wrap-arounds
        valid &= (np.abs(x) <= 180.0) & (np.abs(y) <= 90.0)
    inside = valid
    area = crs.area_of_use
    bounds_text = ""
    if area is not None:
        west, south, east, north = area.bounds
        m = _AREA_MARGIN_DEG
        in_lat = (lat >= south - m) & (lat <= north + m)
        if west <= east:
            in_lon = (lon >= west - m) & (lon <= east + m)
        else:  # area crossing the antimeridian
            in_lon = (lon >= west - m) | (lon <= east + m)
        inside = valid & in_lat & in_lon
        bounds_text = (
            f"{crs.name} is for longitude {west:g} to {east:g}, latitude {south:g} to {north:g}"
        )
    outside = finite & ~inside
    if outside.any():
        field = (
            f"{cells['x'].header}/{cells['y'].header}"
            if "x" in cells and "y" in cells
            else "geometry"
        )
        value = np.full(x.size, "", dtype=object)
        value[outside] = [
            f"{a!r}, {b!r}" for a, b in zip(x[outside].tolist(), y[outside].tolist(), strict=True)
        ]
        verdicts.reject(outside, "outside_crs_area", field, value, bounds_text)
    return lon, lat


# --------------------------------------------------------------------------- north


def _declinations(
    cells: dict[str, Cells],
    declination: float | None,
    survey_day: np.datetime64,
    lon: Float,
    lat: Float,
    verdicts: RowVerdicts,
) -> Float:
    """Declination per row: the row's own value, else the dataset's, else IGRF for its date."""
    n = lon.size
    decl = np.full(n, np.nan)
    if "declination" in cells:
        c = cells["declination"]
        bad = ~c.blank & ~(np.isfinite(c.num) & (np.abs(c.num) <= 180.0))
        verdicts.reject(bad, "bad_declination", c.header, lambda: c.text)
        decl = np.where(~c.blank & ~bad, c.num, np.nan)
    need = np.isnan(decl)
    if declination is not None:
        return np.where(need, float(declination), decl)
    day = np.full(n, survey_day, dtype="datetime64[D]")
    if "date" in cells:
        c = cells["date"]
        parsed = parse_dates(c.text)
        verdicts.reject(
            need & ~c.blank & np.isnat(parsed),
            "bad_date",
            c.header,
            c.text,
            "not an ISO date such as 2024-05-17",
        )
        day = np.where(c.blank, day, parsed)
        verdicts.reject(
            need & np.isnat(day),
            "bad_date",
            c.header,
            c.text,
            "no survey date: fill the cell or give survey_date=",
        )
    else:
        verdicts.reject(
            need & np.isnat(day),
            "bad_declination",
            cells["declination"].header,
            "",
            "no declination: fill the cell, or give declination= or survey_date=",
        )
    start, end = igrf_period()
    date_field = cells["date"].header if "date" in cells else "survey_date"
    verdicts.reject(
        need & ((day < start) | (day > end)),
        "bad_date",
        date_field,
        day.astype(str),
        f"outside the IGRF period {start} to {end}",
    )
    use = need & verdicts.ok
    if use.any():
        decl[use] = igrf_declination(lon[use], lat[use], day[use])
    return decl


def _given_working_crs(working_crs: object) -> pyproj.CRS | None:
    if working_crs is None:
        return None
    try:
        work = pyproj.CRS.from_user_input(working_crs)
    except pyproj.exceptions.CRSError as exc:
        raise CRSError(f"working_crs={working_crs!r} is not a CRS pyproj knows ({exc})") from exc
    if not is_projected_metric(work):
        raise ParameterError(
            f"working_crs={working_crs!r} must be a projected CRS in metres; {work.name} is not"
        )
    return work


def _working_crs(given: pyproj.CRS | None, src: pyproj.CRS, lon: Float, lat: Float) -> pyproj.CRS:
    if given is not None:
        return given
    if is_projected_metric(src):
        return src
    if lon.size == 0:
        log.info("no accepted rows: the working CRS stays %s", src.name)
        return src
    corners = gpd.GeoSeries(
        shapely.points([lon.min(), lon.max()], [lat.min(), lat.max()]), crs="EPSG:4326"
    )
    work = corners.estimate_utm_crs()
    log.info("working CRS %s (local UTM zone for %s)", work.name, src.name)
    return work


def _rejected(
    verdicts: RowVerdicts, rows: NDArray, where: str, renamed: pd.DataFrame, geoms: NDArray | None
) -> pd.DataFrame:
    bad = np.flatnonzero(~verdicts.ok)
    messages = verdicts.messages(rows, where)
    head = pd.DataFrame(
        {
            "source_row": rows[bad],
            "reason": verdicts.reason[bad],
            "field": verdicts.field[bad],
            "value": verdicts.value[bad],
            "message": messages[bad],
        }
    )
    parts = [head, renamed.iloc[bad].reset_index(drop=True)]
    if geoms is not None:
        wkt = shapely.to_wkt(geoms[bad])
        parts.append(pd.DataFrame({"orig_geometry": wkt}))
    return pd.concat(parts, axis=1)
