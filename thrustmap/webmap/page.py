"""Assemble the self-contained web map page with folium and write it atomically."""

from __future__ import annotations

import datetime as _dt
import html
import logging
import os
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import folium
import geopandas as gpd
import numpy as np
from branca.element import Element, MacroElement
from folium.template import Template

from thrustmap._version import __version__
from thrustmap.caution import CAUTION
from thrustmap.errors import InputError, ParameterError
from thrustmap.io.atomic import write_file
from thrustmap.webmap.assets import asset_text, leaflet_assets
from thrustmap.webmap.hillshade import hillshade_overlay
from thrustmap.webmap.payload import (
    FOLD_AXIS_STYLE,
    SYMBOL_STYLES,
    area_payload,
    attitude_payload,
    fold_axis_payload,
    rank_colors,
    script_json,
    thrust_payload,
)

__all__ = ["map_html", "write_map"]

logger = logging.getLogger(__name__)

_CODE_LABELS = {
    0: "inclined; dip in degrees",
    1: "horizontal",
    2: "vertical",
    3: "overturned; dip in degrees",
    4: "plunging; plunge in degrees",
    5: "horizontal",
    6: "vertical",
}
_ONLINE_TILES = "OpenStreetMap"


class _DataLayer(folium.map.Layer):
    """A thrustmap overlay built in the page by one of the script's layer factories."""

    _template = Template(
        """
        {% macro script(this, kwargs) %}
        var {{ this.get_name() }} = thrustmap.{{ this.factory }}(
            {{ this.key_json }}, {{ this.payload }}, {{ this.options_json }});
        {% endmacro %}
        """
    )

    def __init__(self, factory: str, key: str, payload: dict[str, Any], *, name: str,
                 options: dict[str, Any] | None = None) -> None:
        super().__init__(name=name, overlay=True, control=True, show=True)
        self._name = "ThrustmapLayer"
        self.factory = factory
        self.key_json = script_json(key)
        self.payload = script_json(payload)
        self.options_json = script_json(options or {})


class _Finish(MacroElement):
    """Title, legend, caution and the ready flag, added once every layer exists."""

    _template = Template(
        """
        {% macro script(this, kwargs) %}
        thrustmap.finish({{ this._parent.get_name() }}, {{ this.page }});
        {% endmacro %}
        """
    )

    def __init__(self, page: dict[str, Any]) -> None:
        super().__init__()
        self._name = "ThrustmapFinish"
        self.page = script_json(page)


def _attitude_legend(payload: dict[str, Any], styles: list[dict[str, Any]]) -> list[dict[str, Any]]:
    pairs = sorted(set(zip(payload["style"], payload["code"], strict=True)))
    return [
        {"kind": "symbol", "code": code, "style": styles[style],
         "label": f"{styles[style]['name']}, {_CODE_LABELS[code]}"}
        for style, code in pairs
    ]


def _thrust_legend(payload: dict[str, Any], thrusts: gpd.GeoDataFrame) -> list[dict[str, Any]]:
    feats = payload["features"]
    entries = [{"kind": "line", "color": "#3a3a3a", "teeth": True,
                "label": "thrust, teeth on the hanging wall"}]
    rank_col = next((c for c in ("rank", "formation_rank", "order") if c in thrusts.columns), None)
    if rank_col is not None and thrusts[rank_col].notna().any():
        ranks = np.unique(thrusts[rank_col].dropna().to_numpy(dtype=float))
        entries.append({"kind": "ramp", "colors": rank_colors(ranks),
                        "label": f"formation rank {int(ranks.min())} (oldest) "
                                 f"to {int(ranks.max())} (youngest)"})
    if any(f["oos"] for f in feats):
        entries.append({"kind": "line", "color": "#3a3a3a", "dash": [9, 5], "teeth": True,
                        "label": "out-of-sequence thrust (OOS)"})
    if any(f["side"] == 0 for f in feats):
        entries.append({"kind": "line", "color": "#3a3a3a", "teeth": False,
                        "label": "hanging-wall side unknown"})
    return entries


def _bounds(frames: list[gpd.GeoDataFrame], image_bounds: list[list[float]] | None) -> list[list[float]]:
    boxes = [f.to_crs("EPSG:4326").total_bounds for f in frames if len(f)]
    if image_bounds is not None:
        (s, w), (n, e) = image_bounds
        boxes.append(np.array([w, s, e, n]))
    if not boxes:
        raise InputError("nothing to map: every layer is empty or missing")
    b = np.array(boxes)
    south, west, north, east = b[:, 1].min(), b[:, 0].min(), b[:, 3].max(), b[:, 2].max()
    # at least ~1 km across, so that a single station opens at a useful zoom
    grow_lat, grow_lon = max(0.0, 0.01 - (north - south)) / 2, max(0.0, 0.014 - (east - west)) / 2
    return [[float(south - grow_lat), float(west - grow_lon)],
            [float(north + grow_lat), float(east + grow_lon)]]


def map_html(
    *,
    attitudes: gpd.GeoDataFrame | None = None,
    thrusts: gpd.GeoDataFrame | None = None,
    sheets: gpd.GeoDataFrame | None = None,
    domains: gpd.GeoDataFrame | None = None,
    fold_axes: gpd.GeoDataFrame | None = None,
    elevation: Any = None,
    figures: Mapping[str, Any] | None = None,
    title: str = "thrustmap structural map",
    subtitle: str | None = None,
    online_basemap: bool = True,
    symbol_size: float = 9.0,
    caution: str = CAUTION,
) -> str:
    """The web map page as one HTML string (see :func:`write_map` for the parameters).

    Examples
    --------
    >>> import shapely
    >>> pts = gpd.GeoDataFrame({"kind": ["plane"], "feature": ["bedding"], "dip_direction": [90.0],
    ...                         "dip": [30.0]}, geometry=[shapely.Point(770000, 5100000)],
    ...                        crs="EPSG:32633")
    >>> page = map_html(attitudes=pts, online_basemap=False)
    >>> "https://" in page.split("<body>")[1]
    False
    """
    if not symbol_size > 0:
        raise ParameterError(f"symbol_size must be a positive number of pixels; got {symbol_size!r}")
    frames = [f for f in (attitudes, thrusts, sheets, domains, fold_axes) if f is not None]
    image = hillshade_overlay(elevation) if elevation is not None else None
    bounds = _bounds(frames, image[1] if image else None)

    m = folium.Map(
        location=[(bounds[0][0] + bounds[1][0]) / 2, (bounds[0][1] + bounds[1][1]) / 2],
        tiles=None,
        prefer_canvas=True,
        zoom_start=11,
    )
    # The class defaults pull Leaflet, jQuery, Bootstrap and icon fonts from CDNs; the
    # page inlines Leaflet instead and needs nothing else.
    m.default_js = []
    m.default_css = []
    # Without a tile layer Leaflet has no zoom limits; one station would zoom to infinity.
    m.options.update(max_zoom=20, min_zoom=2)
    figure = m.get_root()
    figure.title = html.escape(title)
    lf = leaflet_assets()
    header = [
        ("tm_leaflet_css", f"<style>{lf['css']}</style>"),
        ("tm_css", f"<style>{asset_text('thrustmap-map.css')}</style>"),
        ("tm_leaflet_js", f"<script>/* Leaflet {lf['version']}\n{lf['licence']}*/\n{lf['js']}</script>"),
        ("tm_js", f"<script>{asset_text('thrustmap-map.js')}</script>"),
    ]
    for name, text in header:
        figure.header.add_child(Element(text), name=name)

    legend: list[dict[str, Any]] = []
    if image is not None:
        folium.raster_layers.ImageOverlay(
            image=image[0], bounds=image[1], name="Hillshade (offline)", opacity=0.85,
            pixelated=False,
        ).add_to(m)
        legend.append({"key": "hillshade", "title": "Background", "entries": [
            {"kind": "image", "label": "hillshade of the elevation grid"}]})
    if online_basemap:
        folium.TileLayer(_ONLINE_TILES, name="Online base map (needs network)", overlay=True,
                         show=False).add_to(m)
    if sheets is not None:
        payload = area_payload(sheets, layer="thrust_sheets", outline=False,
                               label_columns=("sheet", "sheet_id", "name", "thrust_id"))
        _DataLayer("areaLayer", "thrust_sheets", payload, name="Thrust sheets").add_to(m)
        legend.append({"key": "thrust_sheets", "title": "Thrust sheets", "entries": [
            {"kind": "area", "color": "#7d6f58", "fill": "#e9d8a6", "label": "thrust sheet"}]})
    if domains is not None:
        payload = area_payload(domains, layer="domains", outline=True, figures=figures,
                               label_columns=("domain", "name"))
        _DataLayer("areaLayer", "domains", payload, name="Structural domains").add_to(m)
        legend.append({"key": "domains", "title": "Structural domains", "entries": [
            {"kind": "area", "color": "#1b7f79", "fill": "rgba(27,127,121,0.08)", "dash": [6, 4],
             "label": "domain; click for its statistics"}]})
    if thrusts is not None:
        payload = thrust_payload(thrusts)
        _DataLayer("thrustLayer", "thrust_traces", payload, name="Thrust traces").add_to(m)
        legend.append({"key": "thrust_traces", "title": "Thrusts",
                       "entries": _thrust_legend(payload, thrusts)})
    if fold_axes is not None:
        payload = fold_axis_payload(fold_axes)
        _DataLayer("orientationLayer", "fold_axes", payload, name="Fold axes",
                   options={"size": symbol_size * 1.4, "weight": 2.2}).add_to(m)
        name, color, tick = FOLD_AXIS_STYLE
        style = {"name": name, "color": color, "tick": tick}
        legend.append({"key": "fold_axes", "title": "Fold axes", "entries": [
            {"kind": "symbol", "code": c, "style": style, "label": f"fold axis, {_CODE_LABELS[c]}"}
            for c in sorted(set(payload["code"]))]})
    if attitudes is not None:
        payload = attitude_payload(attitudes)
        _DataLayer("orientationLayer", "attitudes", payload, name="Attitudes",
                   options={"size": symbol_size}).add_to(m)
        styles = [{"name": n, "color": c, "tick": t} for n, c, t, _ in SYMBOL_STYLES]
        legend.append({"key": "attitudes", "title": "Attitudes (true north)",
                       "entries": _attitude_legend(payload, styles)})
    folium.LayerControl(collapsed=False, position="topright").add_to(m)
    stamp = _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%d %H:%M UTC")
    _Finish({
        "title": title,
        "subtitle": subtitle if subtitle is not None else f"thrustmap {__version__} · {stamp}",
        "caution": caution,
        "legend": legend,
        "bounds": bounds,
    }).add_to(m)
    return figure.render()


def write_map(
    path: str | os.PathLike[str],
    *,
    attitudes: gpd.GeoDataFrame | None = None,
    thrusts: gpd.GeoDataFrame | None = None,
    sheets: gpd.GeoDataFrame | None = None,
    domains: gpd.GeoDataFrame | None = None,
    fold_axes: gpd.GeoDataFrame | None = None,
    elevation: Any = None,
    figures: Mapping[str, Any] | None = None,
    title: str = "thrustmap structural map",
    subtitle: str | None = None,
    online_basemap: bool = True,
    symbol_size: float = 9.0,
    caution: str = CAUTION,
    overwrite: bool = False,
) -> Path:
    """Write a self-contained, offline web map of a run's layers as one HTML file.

    Leaflet 1.9.4 and the page's own script and styles are inlined: the page
    opens with no network. Every layer is optional and gets a toggle. Symbols
    are drawn on one canvas, so tens of thousands stay smooth.

    Parameters
    ----------
    path : str or path-like
        Target ``.html`` file.
    attitudes : GeoDataFrame, optional
        Accepted attitudes (CONTRACT schema): strike-and-dip symbols for planes
        (tick on the down-dip side, dip label; horizontal, vertical and
        overturned beds have their own symbols) and arrows for lines, rotated
        by their TRUE-north azimuths (Web Mercator keeps meridians vertical).
    thrusts : GeoDataFrame, optional
        Thrust traces: teeth on the hanging-wall side (``hw_side`` or
        ``hw_dip_direction``), coloured and labelled by ``rank`` (1 = oldest),
        ``out_of_sequence`` ones dashed and marked OOS.
    sheets : GeoDataFrame, optional
        Thrust-sheet polygons.
    domains : GeoDataFrame, optional
        Domain polygons (``domain`` column); their popup lists every column.
    fold_axes : GeoDataFrame, optional
        Fold axes with ``trend``/``plunge``: plunge arrows.
    elevation : Grid, optional
        Elevation grid (``thrustmap.io.grid.Grid`` or any object with
        ``values``, ``x0``, ``y0``, ``cell``, ``crs``): offline hillshade background.
    figures : mapping, optional
        Domain name to stereonet figure (PNG path, PNG bytes or matplotlib
        Figure), shown as a thumbnail in the domain's popup.
    title, subtitle : str
        Page title and the line under it (default: version and time).
    online_basemap : bool, default True
        Offer an online base map toggle (off at opening; it needs a network).
    symbol_size : float, default 9
        Half-length of a strike line, pixels.
    caution : str
        Caution line shown on the map.
    overwrite : bool, default False
        Replace an existing file.

    Returns
    -------
    Path
        The written file.

    Raises
    ------
    OutputExistsError
        When the file exists and ``overwrite`` is false.
    InputError
        For a layer missing a needed column, a non-true-north attitude table,
        a row without orientation or geometry, or nothing to map.
    CRSError
        For a layer without CRS.

    Examples
    --------
    >>> import tempfile, pathlib, shapely
    >>> pts = gpd.GeoDataFrame({"kind": ["plane"], "feature": ["bedding"],
    ...                         "dip_direction": [90.0], "dip": [30.0]},
    ...                        geometry=[shapely.Point(770000, 5100000)], crs="EPSG:32633")
    >>> out = write_map(pathlib.Path(tempfile.mkdtemp()) / "map.html", attitudes=pts)
    >>> out.stat().st_size > 100_000
    True
    """
    page = map_html(
        attitudes=attitudes, thrusts=thrusts, sheets=sheets, domains=domains,
        fold_axes=fold_axes, elevation=elevation, figures=figures, title=title,
        subtitle=subtitle, online_basemap=online_basemap, symbol_size=symbol_size,
        caution=caution,
    )
    out = write_file(path, page, overwrite=overwrite)
    logger.info("wrote web map %s (%d bytes)", out, len(page.encode("utf-8")))
    return out
