"""Validation of the thrust inputs: traces, study area, attitudes and age constraints.

Every input row ends up either accepted or in the rejects table with a reason
code; nothing is dropped silently. Metric work happens in a projected CRS in
metres: geographic (or non-metre) input is reprojected to its local UTM zone.
"""

from __future__ import annotations

import logging
from collections.abc import Sequence
from typing import Any

import geopandas as gpd
import numpy as np
import pandas as pd
import pyproj
import shapely

from thrustmap.errors import CRSError, InputError
from thrustmap.io.sources import is_projected_metric
from thrustmap.thrusts._geometry import direction_sums, explode

__all__ = [
    "TRACE_REASONS",
    "CONSTRAINT_REASONS",
    "REJECT_COLUMNS",
    "working_crs",
    "prepare_traces",
    "prepare_area",
    "prepare_attitudes",
    "prepare_constraints",
    "rejects_frame",
]

log = logging.getLogger(__name__)

TRACE_REASONS = {
    "missing_geometry": "the row has no geometry or an empty one",
    "not_a_line": "the geometry is not a LineString or MultiLineString",
    "invalid_geometry": "the geometry is invalid (too few or non-finite coordinates)",
    "zero_length": "the trace has zero length",
    "self_intersection": "the trace crosses or touches itself",
    "missing_id": "thrust_id is empty",
    "duplicate_id": "thrust_id repeats an earlier accepted trace",
    "bad_hw_side": "hw_side is neither 'left' nor 'right'",
    "bad_hw_dip_direction": "hw_dip_direction is not an azimuth in [0, 360] degrees",
    "bad_dip": "dip is not a number in [0, 90] degrees",
    "hw_side_conflict": "hw_side and hw_dip_direction put the hanging wall on opposite sides",
    "hw_dip_direction_along_trace": "hw_dip_direction lies within 10 degrees of the trace direction",
    "hw_side_unresolved": "no hanging-wall side given and none could be inferred",
}
CONSTRAINT_REASONS = {
    "missing_id": "younger or older is empty",
    "self_constraint": "younger and older name the same thrust",
    "unknown_thrust": "the thrust named is not among the accepted traces",
    "duplicate_constraint": "the same (younger, older) pair appears on an earlier row",
}
REJECT_COLUMNS = ["layer", "source_row", "thrust_id", "reason", "field", "value", "message"]

_TYPE_NAMES = np.array(
    [
        None,
        "Point",
        "LineString",
        "LinearRing",
        "Polygon",
        "MultiPoint",
        "MultiLineString",
        "MultiPolygon",
        "GeometryCollection",
    ],
    dtype=object,
)


def working_crs(
    crs: Any, *, layer: str, sample: gpd.GeoSeries | None = None, source: str | None = None
) -> pyproj.CRS:
    """The metric CRS to work in for a layer in ``crs``.

    A projected CRS in metres is kept; a geographic or non-metre CRS is
    replaced by the UTM zone of the data (``sample``).

    Raises
    ------
    CRSError
        When ``crs`` is missing.

    Examples
    --------
    >>> working_crs("EPSG:32633", layer="thrust_traces").to_epsg()
    32633
    """
    if crs is None:
        raise CRSError(
            "the layer has no coordinate reference system; set one (e.g. "
            "GeoDataFrame.set_crs('EPSG:32633')) before analysing it",
            layer=layer,
            source=source,
        )
    crs = pyproj.CRS(crs)
    if is_projected_metric(crs):
        return crs
    if sample is None or sample.is_empty.all():
        raise CRSError(
            f"CRS {crs.name!r} is not a projected CRS in metres and there is no data to "
            "choose a UTM zone from",
            layer=layer,
            source=source,
        )
    utm = gpd.GeoSeries(sample[~sample.is_empty], crs=crs).estimate_utm_crs()
    log.info("layer %s: %s is not metric; working in %s", layer, crs.name, utm.name)
    return utm


def _where(obj: Any, layer: str) -> dict[str, Any]:
    """File and layer to name in messages: the reader's ``attrs`` when present."""
    attrs = getattr(obj, "attrs", None) or {}
    return {"source": attrs.get("source"), "layer": attrs.get("layer") or layer}


def _text(values: pd.Series) -> pd.Series:
    """Identifiers as stripped strings; None where missing. Whole floats lose their '.0'."""

    def one(v: Any) -> str | None:
        if v is None or (isinstance(v, float) and np.isnan(v)) or v is pd.NA:
            return None
        if isinstance(v, float) and v.is_integer():
            v = int(v)
        s = str(v).strip()
        return s or None

    return pd.Series([one(v) for v in values], index=values.index, dtype=object)


def _numbers(values: pd.Series) -> tuple[np.ndarray, np.ndarray]:
    """Floats (NaN where missing or unreadable) and a mask of unreadable non-missing values."""
    num = pd.to_numeric(values, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    missing = values.isna().to_numpy() | (values.astype(str).str.strip() == "").to_numpy()
    return num, np.isnan(num) & ~missing


def rejects_frame(rows: list[dict[str, Any]], original: pd.DataFrame | None = None) -> pd.DataFrame:
    """The rejects table: REJECT_COLUMNS plus the original columns of each rejected row.

    ``rows`` carry ``source_row`` (1-based) into ``original``; original
    columns clashing with a reject column get the prefix ``orig_``; geometries
    are kept as WKT in ``geometry_wkt``.

    Examples
    --------
    >>> rejects_frame([]).columns.tolist()[:4]
    ['layer', 'source_row', 'thrust_id', 'reason']
    """
    table = pd.DataFrame(rows, columns=REJECT_COLUMNS)
    table["source_row"] = table["source_row"].astype("int64")
    if original is None or table.empty:
        return table
    extra = pd.DataFrame(original).copy()
    if isinstance(original, gpd.GeoDataFrame):
        geom = extra.pop(original.geometry.name)
        extra["geometry_wkt"] = shapely.to_wkt(np.asarray(geom, dtype=object))
    extra = extra.rename(columns={c: f"orig_{c}" for c in extra.columns if c in REJECT_COLUMNS})
    extra = extra.reset_index(drop=True)
    picked = extra.iloc[table["source_row"].to_numpy() - 1].reset_index(drop=True)
    return pd.concat([table, picked], axis=1)


def _orient_parts(geoms: np.ndarray) -> np.ndarray:
    """Merge touching parts; orient the remaining parts like the first digitised part."""
    out = geoms.copy()
    multi = shapely.get_type_id(geoms) == 5
    if not multi.any():
        return out
    first = shapely.get_geometry(geoms[multi], 0)
    ref = direction_sums(first)
    merged = shapely.line_merge(geoms[multi])
    parts, owner = explode(merged)
    flip = np.sum(direction_sums(parts) * ref[owner], axis=1) < 0
    parts = np.where(flip, shapely.reverse(parts), parts)
    rebuilt = shapely.multilinestrings(parts, indices=owner)
    single = shapely.get_num_geometries(rebuilt) == 1
    rebuilt = np.where(single, shapely.get_geometry(rebuilt, 0), rebuilt)
    out[multi] = rebuilt
    return out


def prepare_traces(
    traces: gpd.GeoDataFrame, *, layer: str = "thrust_traces"
) -> tuple[gpd.GeoDataFrame, pd.DataFrame, pyproj.CRS]:
    """Validate thrust traces and bring them into a metric working CRS.

    Parameters
    ----------
    traces : GeoDataFrame
        (Multi)LineStrings with ``thrust_id`` and optionally ``name``,
        ``hw_side`` (``left``/``right`` of the digitising direction),
        ``hw_dip_direction`` (true-north azimuth, degrees) and ``dip`` (degrees).
    layer : str
        Layer name used in messages and in the rejects table.

    Returns
    -------
    accepted : GeoDataFrame
        Valid traces in the working CRS, 2-D, touching parts merged and parts of
        a multi-part trace oriented like its first part; columns ``source_row``,
        ``thrust_id``, ``name``, ``hw_side`` (``left``/``right``/None),
        ``hw_dip_direction``, ``dip`` plus the other original columns.
    rejected : DataFrame
        One row per rejected trace (see :func:`rejects_frame`), reason codes
        from ``TRACE_REASONS``.
    crs : pyproj.CRS
        The working CRS.

    Raises
    ------
    CRSError
        When the layer has no CRS.
    InputError
        When the layer is not a GeoDataFrame or has no ``thrust_id`` column.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from shapely import LineString
    >>> gdf = gpd.GeoDataFrame({"thrust_id": ["T1", "T1"]},
    ...     geometry=[LineString([(0, 0), (0, 10)]), LineString([(5, 0), (5, 10)])],
    ...     crs="EPSG:32633")
    >>> ok, bad, crs = prepare_traces(gdf)
    >>> len(ok), bad["reason"].tolist()
    (1, ['duplicate_id'])
    """
    if not isinstance(traces, gpd.GeoDataFrame):
        raise InputError(
            f"expected a GeoDataFrame of LineStrings, got {type(traces).__name__}", layer=layer
        )
    if "thrust_id" not in traces.columns:
        raise InputError(
            "the layer has no 'thrust_id' column; columns are: "
            + ", ".join(map(str, traces.columns)),
            **_where(traces, layer),
            field="thrust_id",
        )
    original = traces.reset_index(drop=True)
    where = _where(traces, layer)
    crs = working_crs(
        original.crs, layer=where["layer"], sample=original.geometry, source=where["source"]
    )
    geom_in = original.geometry
    if original.crs is not None and pyproj.CRS(original.crs) != crs:
        geom_in = geom_in.to_crs(crs)
    geoms = shapely.force_2d(np.asarray(geom_in, dtype=object))
    n = len(original)
    rows = np.arange(1, n + 1)
    reason = np.full(n, "", dtype=object)
    field = np.full(n, "", dtype=object)
    value = np.full(n, None, dtype=object)
    detail = np.full(n, "", dtype=object)

    def flag(mask: np.ndarray, code: str, fld: str, vals: Any = None, info: Any = "") -> None:
        new = mask & (reason == "")
        reason[new] = code
        field[new] = fld
        if vals is not None:
            value[new] = np.asarray(vals, dtype=object)[new]
        if isinstance(info, np.ndarray):
            detail[new] = info[new]

    missing = shapely.is_missing(geoms) | shapely.is_empty(geoms)
    flag(missing, "missing_geometry", "geometry")
    type_id = shapely.get_type_id(geoms)
    flag(~np.isin(type_id, (1, 5)), "not_a_line", "geometry", _TYPE_NAMES[type_id + 1])
    length = np.where(reason == "", shapely.length(geoms), np.nan)
    flag(length == 0.0, "zero_length", "geometry", length)
    valid = np.where(reason == "", shapely.is_valid(geoms), True)
    flag(~valid, "invalid_geometry", "geometry", shapely.is_valid_reason(geoms))
    good = reason == ""
    geoms[good] = _orient_parts(geoms[good])
    flag(~np.where(reason == "", shapely.is_simple(geoms), True), "self_intersection", "geometry")

    ids = _text(original["thrust_id"])
    flag(ids.isna().to_numpy(), "missing_id", "thrust_id", original["thrust_id"])
    pending = reason == ""
    dup = np.zeros(n, dtype=bool)
    first_row = np.zeros(n, dtype=object)
    if pending.any():
        pid = ids[pending]
        dmask = pid.duplicated(keep="first").to_numpy()
        dup[np.flatnonzero(pending)[dmask]] = True
        firsts = pd.Series(rows[pending], index=pid.to_numpy()).groupby(level=0).first()
        first_row[dup] = [f"first accepted on row {firsts[i]}" for i in ids[dup]]
    flag(dup, "duplicate_id", "thrust_id", ids, first_row)

    side_raw = original["hw_side"] if "hw_side" in original else pd.Series([None] * n)
    side_txt = _text(side_raw)
    side_norm = side_txt.str.lower()
    bad_side = side_norm.notna() & ~side_norm.isin(["left", "right"])
    flag(bad_side.to_numpy(), "bad_hw_side", "hw_side", side_raw)

    az_raw = (
        original["hw_dip_direction"] if "hw_dip_direction" in original else pd.Series([None] * n)
    )
    az, az_unreadable = _numbers(az_raw)
    flag(az_unreadable | (az < 0) | (az > 360), "bad_hw_dip_direction", "hw_dip_direction", az_raw)
    dip_raw = original["dip"] if "dip" in original else pd.Series([None] * n)
    dip, dip_unreadable = _numbers(dip_raw)
    flag(dip_unreadable | (dip < 0) | (dip > 90), "bad_dip", "dip", dip_raw)

    ok = reason == ""
    accepted = original.loc[ok].drop(columns=[original.geometry.name]).copy()
    accepted = accepted.rename(
        columns={c: f"orig_{c}" for c in accepted.columns if c == "source_row"}
    )
    accepted.insert(0, "source_row", rows[ok])
    accepted["thrust_id"] = ids[ok].to_numpy()
    accepted["name"] = (
        _text(original["name"])[ok].to_numpy() if "name" in original else np.full(ok.sum(), None)
    )
    accepted["hw_side"] = side_norm[ok].to_numpy()
    accepted["hw_dip_direction"] = np.mod(az[ok], 360.0)
    accepted["dip"] = dip[ok]
    accepted = gpd.GeoDataFrame(accepted, geometry=geoms[ok], crs=crs).reset_index(drop=True)

    bad = np.flatnonzero(~ok)
    records = [
        {
            "layer": layer,
            "source_row": int(rows[i]),
            "thrust_id": ids.iloc[i],
            "reason": reason[i],
            "field": field[i],
            "value": None if value[i] is None else str(value[i]),
            "message": TRACE_REASONS[reason[i]] + (f" ({detail[i]})" if detail[i] else ""),
        }
        for i in bad
    ]
    if records:
        counts = pd.Series([r["reason"] for r in records]).value_counts()
        log.warning(
            "layer %s: %d of %d traces rejected (%s)",
            layer,
            len(records),
            n,
            ", ".join(f"{k}: {v}" for k, v in counts.items()),
        )
    return accepted, rejects_frame(records, original), crs


def prepare_area(
    area: Any,
    *,
    crs: pyproj.CRS,
    input_crs: Any,
    traces: gpd.GeoDataFrame,
    layer: str = "study_area",
) -> shapely.Geometry:
    """The study area as one (Multi)Polygon in the working CRS.

    Parameters
    ----------
    area : GeoDataFrame, GeoSeries, shapely geometry or None
        Polygons (united); a bare shapely geometry is taken to be in the
        traces' input CRS. None gives the bounding box of the traces.
    crs : pyproj.CRS
        The working CRS.
    input_crs : CRS-like
        CRS of the trace layer as given.
    traces : GeoDataFrame
        Accepted traces in the working CRS (for the default).
    layer : str
        Layer name used in messages.

    Raises
    ------
    CRSError
        When a layer has no CRS.
    InputError
        When the area is empty, not polygonal or invalid.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from shapely import LineString
    >>> t = gpd.GeoDataFrame(geometry=[LineString([(0, 0), (10, 5)])], crs="EPSG:32633")
    >>> prepare_area(None, crs=t.crs, input_crs=t.crs, traces=t).bounds
    (0.0, 0.0, 10.0, 5.0)
    """
    if area is None:
        return shapely.box(*traces.total_bounds)
    if isinstance(area, gpd.GeoDataFrame):
        area = area.geometry
    if isinstance(area, gpd.GeoSeries):
        if area.crs is None:
            raise CRSError(
                "the layer has no coordinate reference system; set one", **_where(area, layer)
            )
        geom = shapely.union_all(np.asarray(area.to_crs(crs), dtype=object))
    elif isinstance(area, shapely.Geometry):
        geom = gpd.GeoSeries([area], crs=input_crs).to_crs(crs).iloc[0]
    else:
        raise InputError(
            f"expected polygons (GeoDataFrame, GeoSeries or shapely geometry), got "
            f"{type(area).__name__}",
            **_where(area, layer),
        )
    if geom is None or geom.is_empty:
        raise InputError("the study area is empty", **_where(area, layer))
    if shapely.get_type_id(geom) not in (3, 6):
        raise InputError(
            f"the study area must be polygons; got {geom.geom_type}",
            **_where(area, layer),
            field="geometry",
        )
    if not shapely.is_valid(geom):
        raise InputError(
            f"the study area is invalid ({shapely.is_valid_reason(geom)}); repair it first",
            **_where(area, layer),
            field="geometry",
        )
    return geom


_ATTITUDE_COLUMNS = ("feature", "kind", "dip_direction", "dip", "trend", "plunge", "sense")


def prepare_attitudes(
    attitudes: gpd.GeoDataFrame | None, *, crs: pyproj.CRS, layer: str = "attitudes"
) -> gpd.GeoDataFrame | None:
    """The attitude table (thrustmap's attitude contract) in the working CRS.

    Raises
    ------
    CRSError
        When the layer has no CRS.
    InputError
        When it is not a GeoDataFrame or lacks a contract column.

    Examples
    --------
    >>> prepare_attitudes(None, crs=None) is None
    True
    """
    if attitudes is None:
        return None
    if not isinstance(attitudes, gpd.GeoDataFrame):
        raise InputError(
            f"expected a GeoDataFrame of points, got {type(attitudes).__name__}", layer=layer
        )
    missing = [c for c in _ATTITUDE_COLUMNS if c not in attitudes.columns]
    if missing:
        raise InputError(
            "missing column(s) "
            + ", ".join(missing)
            + "; expected the attitude table columns "
            + ", ".join(_ATTITUDE_COLUMNS),
            **_where(attitudes, layer),
        )
    if attitudes.crs is None:
        raise CRSError(
            "the layer has no coordinate reference system; set one", **_where(attitudes, layer)
        )
    return attitudes.to_crs(crs) if pyproj.CRS(attitudes.crs) != crs else attitudes


def prepare_constraints(
    table: pd.DataFrame | None,
    accepted_ids: Sequence[str],
    rejected_ids: dict[str, str] | None = None,
    *,
    layer: str = "age_constraints",
) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Validate relative-age constraints (``younger``, ``older``, ``note``).

    Parameters
    ----------
    table : DataFrame or None
        One row per constraint: thrust ``younger`` formed after thrust ``older``.
    accepted_ids : sequence of str
        Ids of the accepted traces.
    rejected_ids : dict, optional
        Id to reject reason of rejected traces, quoted in messages.
    layer : str
        Layer name used in messages and the rejects table.

    Returns
    -------
    accepted : DataFrame
        ``source_row``, ``younger``, ``older``, ``note``.
    rejected : DataFrame
        Reason codes from ``CONSTRAINT_REASONS``.

    Raises
    ------
    InputError
        When ``younger`` or ``older`` columns are absent.

    Examples
    --------
    >>> import pandas as pd
    >>> ok, bad = prepare_constraints(
    ...     pd.DataFrame({"younger": ["T2", "T2"], "older": ["T1", "T9"]}), ["T1", "T2"])
    >>> ok["older"].tolist(), bad["reason"].tolist()
    (['T1'], ['unknown_thrust'])
    """
    cols = ["source_row", "younger", "older", "note"]
    if table is None:
        return pd.DataFrame(columns=cols), rejects_frame([])
    table = pd.DataFrame(table).reset_index(drop=True)
    for c in ("younger", "older"):
        if c not in table.columns:
            raise InputError(
                f"the table has no {c!r} column; columns are: "
                + ", ".join(map(str, table.columns)),
                **_where(table, layer),
                field=c,
            )
    rejected_ids = rejected_ids or {}
    known = set(accepted_ids)
    young = _text(table["younger"])
    old = _text(table["older"])
    note = _text(table["note"]) if "note" in table else pd.Series([None] * len(table))
    records = []
    keep = []
    seen: dict[tuple[str, str], int] = {}
    for i in range(len(table)):
        y, o, row = young.iloc[i], old.iloc[i], i + 1
        code, fld, val, msg = "", "", None, ""
        if y is None or o is None:
            code, fld = "missing_id", "younger" if y is None else "older"
        elif y == o:
            code, fld, val = "self_constraint", "younger", y
        elif y not in known or o not in known:
            fld = "younger" if y not in known else "older"
            val = y if y not in known else o
            code = "unknown_thrust"
            if val in rejected_ids:
                msg = f"thrust {val!r} was rejected ({rejected_ids[val]})"
        elif (y, o) in seen:
            code, fld, val = "duplicate_constraint", "younger", f"{y}>{o}"
            msg = f"first on row {seen[(y, o)]}"
        if code:
            records.append(
                {
                    "layer": layer,
                    "source_row": row,
                    "thrust_id": y,
                    "reason": code,
                    "field": fld,
                    "value": val,
                    "message": CONSTRAINT_REASONS[code] + (f" ({msg})" if msg else ""),
                }
            )
        else:
            seen[(y, o)] = row
            keep.append(i)
    accepted = pd.DataFrame(
        {
            "source_row": np.asarray(keep, dtype=np.int64) + 1,
            "younger": young.iloc[keep].to_numpy(dtype=object),
            "older": old.iloc[keep].to_numpy(dtype=object),
            "note": note.iloc[keep].fillna("").to_numpy(dtype=object),
        }
    )
    if records:
        log.warning("layer %s: %d of %d constraints rejected", layer, len(records), len(table))
    return accepted, rejects_frame(records, table)
