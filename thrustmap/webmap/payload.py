"""Layers turned into the compact JSON the web map's script draws.

Coordinates are longitude/latitude (EPSG:4326) rounded to 1e-6 degrees
(about 0.1 m); feature ids are dropped; attitude columns are stored column by
column, repeated texts dictionary-encoded. Every text is shown in the page
through ``textContent``, never parsed as HTML, and the JSON is made safe to
sit inside a ``<script>`` element.
"""

from __future__ import annotations

import base64
import io
import json
import logging
import os
from collections.abc import Mapping
from typing import Any

import geopandas as gpd
import numpy as np
import pandas as pd
import shapely

from thrustmap.errors import CRSError, InputError
from thrustmap.orientation import strike_to_dip_direction

__all__ = [
    "PLANE_FEATURES",
    "LINE_FEATURES",
    "SYMBOL_STYLES",
    "FOLD_AXIS_STYLE",
    "script_json",
    "symbol_codes",
    "attitude_payload",
    "fold_axis_payload",
    "thrust_payload",
    "area_payload",
    "rank_colors",
    "thumbnail_png",
    "thumbnail_uri",
    "format_value",
]

logger = logging.getLogger(__name__)

PLANE_FEATURES = ("bedding", "cleavage", "foliation", "fault", "thrust", "joint", "vein",
                  "axial_plane")
LINE_FEATURES = ("hinge_line", "lineation", "slickenline", "intersection_lineation")

# Symbol styles: name, colour, tick shape (0 line tick, 1 filled triangle), features.
SYMBOL_STYLES: tuple[tuple[str, str, int, tuple[str, ...]], ...] = (
    ("bedding", "#14213d", 0, ("bedding",)),
    ("cleavage / foliation", "#1f7a4d", 1, ("cleavage", "foliation", "axial_plane")),
    ("fault plane", "#b22a2a", 0, ("fault", "thrust")),
    ("joint / vein", "#6b4fa0", 0, ("joint", "vein")),
    ("lineation", "#9a5b00", 0, LINE_FEATURES),
    ("other plane", "#4a4a4a", 0, ()),
    ("other line", "#4a4a4a", 0, ()),
)
FOLD_AXIS_STYLE: tuple[str, str, int] = ("fold axis", "#c0186b", 0)

# Formation rank, oldest to youngest: indigo, plum, rose, ember, amber.
_RANK_RAMP = ("#2d2a6e", "#6a2c8f", "#b23a7a", "#e0603f", "#f2a541")
_UNRANKED = "#3a3a3a"
DOMAIN_COLORS = ("#1b7f79", "#a4508b", "#4f6d9a", "#b7752d", "#5b8c3a", "#8a5a44", "#3d6f8f",
                 "#9a4f4f")
SHEET_FILLS = ("#e9d8a6", "#cfe3d4", "#d8d2ec", "#f3d1c3", "#d4e4ef", "#e6e1c5")


def script_json(value: Any) -> str:
    """JSON safe to place inside an HTML ``<script>`` element.

    ``<``, ``>`` and ``&`` (and the JavaScript line separators) are written as
    ``\\u`` escapes, so no text can close the script element.

    Examples
    --------
    >>> script_json({"note": "</script><script>alert(1)</script>"})
    '{"note":"\\\\u003c/script\\\\u003e\\\\u003cscript\\\\u003ealert(1)\\\\u003c/script\\\\u003e"}'
    """
    text = json.dumps(value, separators=(",", ":"), ensure_ascii=False, allow_nan=False)
    for raw, escaped in (("<", "\\u003c"), (">", "\\u003e"), ("&", "\\u0026"),
                         ("\u2028", "\\u2028"), ("\u2029", "\\u2029")):
        text = text.replace(raw, escaped)
    return text


def _to_lonlat(frame: gpd.GeoDataFrame, layer: str) -> gpd.GeoDataFrame:
    if not isinstance(frame, gpd.GeoDataFrame):
        raise InputError(f"expected a GeoDataFrame, got {type(frame).__name__}", layer=layer)
    if frame.crs is None:
        raise CRSError("the layer has no CRS; set it with GeoDataFrame.set_crs()", layer=layer)
    return frame.to_crs("EPSG:4326")


def _round(values: Any, digits: int) -> list[Any]:
    arr = np.round(np.asarray(values, dtype=float), digits)
    return [None if not np.isfinite(v) else (int(v) if digits == 0 else float(v)) for v in arr]


def _coords(geom: shapely.Geometry) -> Any:
    """GeoJSON-style nested coordinates, rounded to 1e-6 degrees."""
    mapping = shapely.geometry.mapping(geom)

    def walk(c: Any) -> Any:
        if isinstance(c[0], int | float):
            return [round(c[0], 6), round(c[1], 6)]
        return [walk(x) for x in c]

    return walk(mapping["coordinates"])


def format_value(value: Any) -> str:
    """A cell value as display text: numbers to at most 2 decimals, booleans yes/no, missing empty.

    Examples
    --------
    >>> [format_value(v) for v in (31.2049, 5100000.0, True, None, float("nan"), "D1")]
    ['31.2', '5,100,000', 'yes', '', '', 'D1']
    """
    if value is None or (isinstance(value, float | np.floating) and np.isnan(value)):
        return ""
    if isinstance(value, bool | np.bool_):
        return "yes" if value else "no"
    if isinstance(value, float | np.floating):
        v = float(value)
        return f"{v:,.2f}".rstrip("0").rstrip(".") if abs(v) < 1e15 else f"{v:.4g}"
    if value is pd.NA or value is pd.NaT:
        return ""
    return str(value)


def _encode_column(series: pd.Series) -> Any:
    """A popup column as a list, or ``{"d": values, "i": codes}`` when texts repeat."""
    if pd.api.types.is_bool_dtype(series):
        return ["yes" if v else "no" for v in series]
    if pd.api.types.is_numeric_dtype(series):
        return _round(series, 2)
    texts = [format_value(v) for v in series]
    uniques = sorted(set(texts))
    if len(texts) > 8 and len(uniques) <= len(texts) // 4:
        index = {u: i for i, u in enumerate(uniques)}
        return {"d": uniques, "i": [index[t] for t in texts]}
    return texts


def symbol_codes(
    kind: np.ndarray, value: np.ndarray, overturned: np.ndarray
) -> np.ndarray:
    """Symbol code per row from its kind, its rounded dip/plunge and the overturned flag.

    Codes: 0 inclined plane, 1 horizontal plane (dip rounds to 0), 2 vertical
    plane (rounds to 90), 3 overturned plane, 4 plunging line, 5 horizontal
    line, 6 vertical line. The rounding is the one of the printed label, so a
    symbol and its label never disagree.

    Examples
    --------
    >>> symbol_codes(np.array(["plane"] * 4 + ["line"] * 3),
    ...              np.array([30, 0.2, 89.6, 70, 20, 0, 90.0]),
    ...              np.array([False, False, False, True, False, False, False])).tolist()
    [0, 1, 2, 3, 4, 5, 6]
    """
    v = np.round(np.asarray(value, dtype=float))
    plane = np.asarray(kind) == "plane"
    over = np.asarray(overturned, dtype=bool)
    code = np.where(plane, 0, 4)
    code = np.where(plane & (v >= 90), 2, code)
    code = np.where(plane & over, 3, code)
    code = np.where(plane & (v <= 0), 1, code)
    code = np.where(~plane & (v <= 0), 5, code)
    code = np.where(~plane & (v >= 90), 6, code)
    return code.astype(np.uint8)


def _kind(frame: pd.DataFrame) -> np.ndarray:
    if "kind" in frame.columns:
        kind = frame["kind"].astype(str).str.lower().to_numpy()
    else:
        has_plane = np.isfinite(frame["dip"].to_numpy(dtype=float)) if "dip" in frame else False
        kind = np.where(has_plane, "plane", "line")
    bad = ~np.isin(kind, ["plane", "line"])
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise InputError(f"kind must be 'plane' or 'line'; got {kind[i]!r}", layer="attitudes",
                         row=_row_label(frame, i), field="kind", value=kind[i])
    return kind


def _row_label(frame: pd.DataFrame, i: int) -> int:
    return int(frame["source_row"].iloc[i]) if "source_row" in frame.columns else i + 1


def _require(frame: pd.DataFrame, columns: tuple[str, ...], layer: str) -> None:
    missing = [c for c in columns if c not in frame.columns]
    if missing:
        raise InputError(
            f"missing column(s) {', '.join(missing)}; the layer holds {', '.join(map(str, frame.columns))}",
            layer=layer,
        )


def _check_north(frame: pd.DataFrame, layer: str) -> None:
    if "azimuth_ref" in frame.columns:
        refs = frame["azimuth_ref"].astype(str).str.lower()
        bad = refs != "true"
        if bad.any():
            i = int(np.flatnonzero(bad.to_numpy())[0])
            raise InputError(
                "the map draws true-north azimuths; convert the table first "
                "(thrustmap.read_attitudes reports true north)",
                layer=layer, row=_row_label(frame, i), field="azimuth_ref", value=refs.iloc[i],
            )


def _points_lonlat(frame: gpd.GeoDataFrame) -> tuple[np.ndarray, np.ndarray]:
    geom = frame.geometry
    kinds = shapely.get_type_id(geom.values)
    pts = np.where(kinds == 0, geom.values, shapely.point_on_surface(geom.values))
    lines = np.isin(kinds, [1, 5])
    if lines.any():
        pts[lines] = shapely.line_interpolate_point(geom.values[lines], 0.5, normalized=True)
    return shapely.get_x(pts), shapely.get_y(pts)


def _check_points(frame: gpd.GeoDataFrame, layer: str) -> None:
    empty = frame.geometry.isna().to_numpy() | shapely.is_empty(frame.geometry.values)
    if empty.any():
        i = int(np.flatnonzero(empty)[0])
        raise InputError("the row has no location (empty geometry)", layer=layer,
                         row=_row_label(frame, i), field="geometry")


def _orientation_payload(
    frame: gpd.GeoDataFrame,
    az: np.ndarray,
    val: np.ndarray,
    code: np.ndarray,
    style: np.ndarray,
    styles: list[dict[str, Any]],
    popup_columns: list[str],
) -> dict[str, Any]:
    lon, lat = _points_lonlat(frame)
    return {
        "n": len(frame),
        "lon": _round(lon, 6),
        "lat": _round(lat, 6),
        "az": _round(az % 360.0, 1),
        "val": _round(val, 0),
        "code": code.tolist(),
        "style": style.tolist(),
        "styles": styles,
        "popup": {
            "columns": popup_columns,
            "values": [_encode_column(frame[c]) for c in popup_columns],
        },
    }


_ATTITUDE_POPUP = ("station", "station_id", "source_row", "trend", "plunge", "sense", "flags",
                   "declination", "date", "note", "notes")


def attitude_payload(attitudes: gpd.GeoDataFrame) -> dict[str, Any]:
    """Strike-and-dip symbols and line arrows from an attitude table (CONTRACT schema).

    Planes use ``dip_direction``/``dip`` (or right-hand-rule ``strike``/``dip``)
    and lines ``trend``/``plunge``, all true north (a table whose
    ``azimuth_ref`` is not ``true`` is refused). Without a ``kind`` column a
    row with a dip is a plane, any other a line.
    The style (colour, tick shape) follows ``feature``.

    Raises
    ------
    InputError
        For missing columns, a non-true north reference, a row without a
        drawable orientation or without location.
    CRSError
        For a layer without CRS.

    Examples
    --------
    >>> import shapely
    >>> t = gpd.GeoDataFrame({"kind": ["plane"], "feature": ["bedding"], "dip_direction": [90.0],
    ...                       "dip": [30.0]}, geometry=[shapely.Point(18.5, 46.0)], crs=4326)
    >>> p = attitude_payload(t)
    >>> p["az"], p["val"], p["code"], p["styles"][p["style"][0]]["name"]
    ([90.0], [30], [0], 'bedding')
    """
    frame = _to_lonlat(attitudes, "attitudes")
    _check_north(frame, "attitudes")
    _check_points(frame, "attitudes")
    if "dip_direction" not in frame.columns and "strike" in frame.columns:
        # right-hand-rule strike, as field layers store it: the dip is 90 degrees clockwise
        frame = frame.assign(dip_direction=strike_to_dip_direction(frame["strike"].to_numpy(float)))
    kind = _kind(frame)
    plane = kind == "plane"
    if plane.any():
        _require(frame, ("dip_direction", "dip"), "attitudes")
    if (~plane).any():
        _require(frame, ("trend", "plunge"), "attitudes")
    n = len(frame)
    nan = np.full(n, np.nan)
    az = np.where(plane, frame.get("dip_direction", nan), frame.get("trend", nan)).astype(float)
    val = np.where(plane, frame.get("dip", nan), frame.get("plunge", nan)).astype(float)
    bad = ~(np.isfinite(az) & np.isfinite(val))
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        field = "dip_direction/dip" if plane[i] else "trend/plunge"
        raise InputError(f"no orientation to draw ({int(bad.sum())} such rows)",
                         layer="attitudes", row=_row_label(frame, i), field=field)
    over = frame["overturned"].fillna(False).astype(bool).to_numpy() if "overturned" in frame else np.zeros(n, bool)
    code = symbol_codes(kind, val, over)
    feature = frame["feature"].astype(str).str.lower().to_numpy() if "feature" in frame else np.where(plane, "bedding", "lineation")
    style = np.where(plane, 5, 6)
    for k, (_, _, _, features) in enumerate(SYMBOL_STYLES):
        style = np.where(np.isin(feature, features), k, style)
    styles = [{"name": name, "color": color, "tick": tick} for name, color, tick, _ in SYMBOL_STYLES]
    popup = [c for c in _ATTITUDE_POPUP if c in frame.columns]
    return _orientation_payload(frame, az, val, code, style, styles, popup)


def fold_axis_payload(fold_axes: gpd.GeoDataFrame) -> dict[str, Any]:
    """Plunge arrows from a fold-axis layer with ``trend`` and ``plunge`` (true north).

    ``axis_trend``/``axis_plunge`` (as the domain statistics write them) are
    read when ``trend``/``plunge`` are absent. Points are used as they are;
    lines at their midpoint, polygons at a point inside them. Every other
    column goes to the popup.

    Examples
    --------
    >>> import shapely
    >>> f = gpd.GeoDataFrame({"domain": ["D1"], "axis_trend": [175.0], "axis_plunge": [12.0]},
    ...                      geometry=[shapely.Point(18.5, 46.0)], crs=4326)
    >>> fold_axis_payload(f)["code"]
    [4]
    """
    frame = _to_lonlat(fold_axes, "fold_axes")
    trend, plunge = ("trend", "plunge") if "trend" in frame.columns else ("axis_trend", "axis_plunge")
    _require(frame, (trend, plunge), "fold_axes")
    _check_north(frame, "fold_axes")
    _check_points(frame, "fold_axes")
    az = frame[trend].to_numpy(dtype=float)
    val = frame[plunge].to_numpy(dtype=float)
    bad = ~(np.isfinite(az) & np.isfinite(val))
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise InputError("no trend/plunge to draw", layer="fold_axes", row=i + 1,
                         field=f"{trend}/{plunge}")
    n = len(frame)
    code = symbol_codes(np.full(n, "line"), val, np.zeros(n, bool))
    name, color, tick = FOLD_AXIS_STYLE
    geom = frame._geometry_column_name
    popup = [c for c in frame.columns if c not in (geom, trend, plunge)]
    return _orientation_payload(frame, az, val, code, np.zeros(n, np.uint8),
                                [{"name": name, "color": color, "tick": tick}], popup)


def rank_colors(rank: np.ndarray) -> list[str]:
    """Colour per formation rank (1 = oldest), interpolated along the rank ramp.

    Unranked (NaN) thrusts are dark grey.

    Examples
    --------
    >>> rank_colors(np.array([1, 2, np.nan]))
    ['#2d2a6e', '#f2a541', '#3a3a3a']
    """
    r = np.asarray(rank, dtype=float)
    ok = np.isfinite(r)
    if not ok.any():
        return [_UNRANKED] * len(r)
    lo, hi = np.nanmin(r), np.nanmax(r)
    t = np.where(ok, (r - lo) / (hi - lo) if hi > lo else 0.0, 0.0)
    ramp = np.array([[int(c[i:i + 2], 16) for i in (1, 3, 5)] for c in _RANK_RAMP], dtype=float)
    pos = t * (len(ramp) - 1)
    k = np.minimum(pos.astype(int), len(ramp) - 2)
    rgb = ramp[k] * (1 - (pos - k))[:, None] + ramp[k + 1] * (pos - k)[:, None]
    return [
        "#" + "".join(f"{int(round(v)):02x}" for v in c) if good else _UNRANKED
        for c, good in zip(rgb, ok, strict=True)
    ]


def _first_column(frame: pd.DataFrame, names: tuple[str, ...]) -> str | None:
    return next((c for c in names if c in frame.columns), None)


def _hanging_wall_side(frame: gpd.GeoDataFrame) -> np.ndarray:
    """+1 when the hanging wall lies right of the digitising direction, -1 left, 0 unknown.

    ``hw_side`` ("left"/"right") wins; otherwise ``hw_dip_direction`` (true
    north) is compared, in Web Mercator where true north is up, with the
    length-weighted direction of the trace.
    """
    n = len(frame)
    side = np.zeros(n, dtype=int)
    if "hw_side" in frame.columns:
        text = frame["hw_side"].astype(object).where(frame["hw_side"].notna(), "").astype(str).str.lower()
        bad = ~text.isin(["left", "right", "", "none", "nan"])
        if bad.any():
            i = int(np.flatnonzero(bad.to_numpy())[0])
            raise InputError("hw_side must be 'left' or 'right' of the digitising direction",
                             layer="thrust_traces", row=i + 1, field="hw_side", value=text.iloc[i])
        side = np.where(text == "right", 1, np.where(text == "left", -1, 0))
    if "hw_dip_direction" in frame.columns:
        dd = frame["hw_dip_direction"].to_numpy(dtype=float)
        todo = (side == 0) & np.isfinite(dd)
        if todo.any():
            merc = frame.geometry.to_crs("EPSG:3857").values
            coords, index = shapely.get_coordinates(merc, return_index=True)
            seg = np.diff(coords, axis=0)
            same = index[1:] == index[:-1]
            seg, owner = seg[same], index[1:][same]
            ex, ny = np.sin(np.radians(dd[owner])), np.cos(np.radians(dd[owner]))
            # z of (segment x dip vector): negative when the dip points right of travel
            cross = np.bincount(owner, seg[:, 0] * ny - seg[:, 1] * ex, minlength=n)
            side = np.where(todo, np.where(cross < 0, 1, np.where(cross > 0, -1, 0)), side)
    return side


def _rows(frame: pd.DataFrame, skip: tuple[str, ...] = ()) -> list[list[list[str]]]:
    cols = [c for c in frame.columns if c != getattr(frame, "_geometry_column_name", None)
            and c not in skip]
    return [[[str(c), format_value(v)] for c, v in zip(cols, row, strict=True) if format_value(v) != ""]
            for row in frame[cols].itertuples(index=False, name=None)]


def thrust_payload(thrusts: gpd.GeoDataFrame) -> dict[str, Any]:
    """Thrust traces with hanging-wall side, rank colour and out-of-sequence mark.

    Columns read when present: ``thrust_id`` or ``name`` (label),
    ``hw_side`` / ``hw_dip_direction`` (teeth side), ``rank`` (or
    ``formation_rank``/``order``; 1 = oldest) and ``out_of_sequence`` (or
    ``sequence`` = ``out``, as :func:`thrustmap.analyze_thrusts` writes it).

    Examples
    --------
    >>> import shapely
    >>> t = gpd.GeoDataFrame({"thrust_id": ["T1"], "hw_side": ["left"], "rank": [1]},
    ...                      geometry=[shapely.LineString([(18.5, 46.0), (18.5, 46.1)])], crs=4326)
    >>> f = thrust_payload(t)["features"][0]
    >>> f["side"], f["label"]
    (-1, 'T1 · 1')
    """
    frame = _to_lonlat(thrusts, "thrust_traces")
    rank_col = _first_column(frame, ("rank", "formation_rank", "order"))
    rank = frame[rank_col].to_numpy(dtype=float) if rank_col else np.full(len(frame), np.nan)
    oos_col = _first_column(frame, ("out_of_sequence", "oos"))
    if oos_col:
        oos = frame[oos_col].fillna(False).astype(bool).to_numpy()
    elif "sequence" in frame.columns:  # thrustmap.analyze_thrusts: "in" / "out"
        oos = (frame["sequence"].astype(str).str.lower() == "out").to_numpy()
    else:
        oos = np.zeros(len(frame), bool)
    id_col = _first_column(frame, ("thrust_id", "name"))
    side = _hanging_wall_side(frame)
    colors = rank_colors(rank)
    features = []
    for i, (geom, rows) in enumerate(zip(frame.geometry.values, _rows(frame), strict=True)):
        if geom is None or geom.is_empty:
            raise InputError("the trace has no geometry", layer="thrust_traces", row=i + 1)
        parts = shapely.get_parts(geom)
        label = format_value(frame[id_col].iloc[i]) if id_col else ""
        if np.isfinite(rank[i]):
            label = f"{label} · {int(rank[i])}".strip(" ·")
        if oos[i]:
            label = f"{label} OOS".strip()
        title = label or f"thrust {i + 1}"
        if side[i] == 0:
            rows = [*rows, ["hanging wall", "side unknown: no teeth drawn"]]
        features.append({
            "c": [_coords(p) for p in parts],
            "side": int(side[i]),
            "color": colors[i],
            "oos": bool(oos[i]),
            "label": label,
            "title": title,
            "rows": rows,
        })
    return {"features": features}


def thumbnail_png(figure: Any, *, width: int = 240) -> bytes:
    """PNG bytes from a path, PNG/JPEG bytes or a matplotlib Figure, at most ``width`` px wide.

    Raises
    ------
    InputError
        When the figure cannot be read as an image.

    Examples
    --------
    >>> import matplotlib.pyplot as plt
    >>> thumbnail_png(plt.figure(figsize=(4, 2), dpi=100), width=200)[:4]
    b'\\x89PNG'
    """
    from PIL import Image, UnidentifiedImageError

    if hasattr(figure, "savefig"):
        buf = io.BytesIO()
        figure.savefig(buf, format="png", dpi=100)
        raw = buf.getvalue()
    elif isinstance(figure, bytes | bytearray):
        raw = bytes(figure)
    else:
        try:
            with open(os.fspath(figure), "rb") as fh:
                raw = fh.read()
        except (OSError, TypeError) as exc:
            raise InputError(f"cannot read the figure: {exc}", source=str(figure)) from exc
    try:
        image = Image.open(io.BytesIO(raw))
        image.load()
    except UnidentifiedImageError as exc:
        raise InputError("the figure is not a PNG or JPEG image", source=str(figure)[:80]) from exc
    if image.width > width:
        image = image.resize((width, max(1, round(image.height * width / image.width))),
                             Image.Resampling.LANCZOS)
    out = io.BytesIO()
    image.convert("RGBA" if image.mode in ("RGBA", "LA", "P") else "RGB").save(
        out, format="PNG", optimize=True)
    return out.getvalue()


def thumbnail_uri(figure: Any, *, width: int = 240) -> str:
    """:func:`thumbnail_png` as a ``data:image/png;base64,`` URI.

    Examples
    --------
    >>> import matplotlib.pyplot as plt
    >>> thumbnail_uri(plt.figure(figsize=(2, 2))).startswith("data:image/png;base64,")
    True
    """
    return "data:image/png;base64," + base64.b64encode(thumbnail_png(figure, width=width)).decode(
        "ascii")


def area_payload(
    areas: gpd.GeoDataFrame,
    *,
    layer: str,
    label_columns: tuple[str, ...],
    figures: Mapping[str, Any] | None = None,
    outline: bool,
) -> dict[str, Any]:
    """Polygons with a label, a popup table and, for domains, a stereonet thumbnail.

    Parameters
    ----------
    areas : GeoDataFrame
        Polygon layer.
    layer : str
        Layer name, for messages.
    label_columns : tuple of str
        Candidate label columns, first present wins.
    figures : mapping, optional
        Label value to figure (path, bytes or matplotlib Figure) shown in the popup.
    outline : bool
        Domains (coloured dashed outline, faint fill) or sheets (pale fill).

    Examples
    --------
    >>> import shapely
    >>> d = gpd.GeoDataFrame({"domain": ["D1"], "n": [24]}, geometry=[shapely.box(18, 46, 19, 47)],
    ...                      crs=4326)
    >>> f = area_payload(d, layer="domains", label_columns=("domain",), outline=True)["features"][0]
    >>> f["label"], f["rows"]
    ('D1', [['domain', 'D1'], ['n', '24']])
    """
    frame = _to_lonlat(areas, layer)
    label_col = _first_column(frame, label_columns)
    figures = dict(figures or {})
    reps = shapely.point_on_surface(frame.geometry.values)
    features = []
    for i, (geom, rows) in enumerate(zip(frame.geometry.values, _rows(frame), strict=True)):
        if geom is None or geom.is_empty:
            raise InputError("the polygon has no geometry", layer=layer, row=i + 1)
        label = format_value(frame[label_col].iloc[i]) if label_col else ""
        palette = DOMAIN_COLORS if outline else SHEET_FILLS
        color = palette[i % len(palette)]
        feature = {
            "c": _coords(geom),
            "depth": 2 if geom.geom_type == "MultiPolygon" else 1,
            "color": color if outline else "#7d6f58",
            "fill": color,
            "label": label,
            "title": label or f"{layer} {i + 1}",
            "at": [round(shapely.get_x(reps[i]), 6), round(shapely.get_y(reps[i]), 6)],
            "rows": rows,
        }
        if label in figures:
            feature["image"] = thumbnail_uri(figures[label])
        features.append(feature)
    unused = sorted(set(figures) - {f["label"] for f in features})
    if unused:
        logger.warning("%s: no feature labelled %s; those figures are not shown",
                       layer, ", ".join(map(repr, unused)))
    return {
        "features": features,
        "weight": 2.0 if outline else 1.0,
        "dash": "6 4" if outline else None,
        "fillOpacity": 0.06 if outline else 0.35,
    }

