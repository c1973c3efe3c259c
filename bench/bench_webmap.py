"""Web map at scale: page size, load time and pan time in headless Chromium.

Ours (every symbol on one canvas path) against a reference built in the same
process: the usual folium page with one DOM marker (a rotated SVG strike/dip
icon) per point, same inlined Leaflet, same data. Goal for 10^4 symbols:
under 2.5 MB and under 1 s to load.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

import folium
import geopandas as gpd
import numpy as np
import shapely

from thrustmap.webmap import write_map
from thrustmap.webmap.assets import leaflet_assets
from thrustmap.webmap.headless import find_chromium, offline_browser, open_offline

SIZES = (1_000, 10_000)
GOAL_BYTES, GOAL_SECONDS = 2.5e6, 1.0

# A pan: the synchronous redraw in JavaScript, then until the second frame is presented.
_PAN_JS = """async () => {
    const t = performance.now();
    thrustmap.map.panBy([240, 120], {animate: false});
    const redraw = performance.now() - t;
    await new Promise(r => requestAnimationFrame(() => requestAnimationFrame(r)));
    return [redraw, performance.now() - t];
}"""


def _attitudes(n: int, seed: int = 0) -> gpd.GeoDataFrame:
    rng = np.random.default_rng(seed)
    x = rng.uniform(700_000, 740_000, n)
    y = rng.uniform(5_080_000, 5_110_000, n)
    dd = rng.uniform(0, 360, n).round(0)
    dip = rng.uniform(0, 90, n).round(0)
    feature = rng.choice(["bedding", "bedding", "cleavage", "fault", "joint"], n)
    return gpd.GeoDataFrame(
        {"source_row": np.arange(1, n + 1), "station": [f"S{i}" for i in range(n)],
         "feature": feature, "kind": "plane", "dip_direction": dd, "dip": dip,
         "strike": (dd - 90) % 360, "overturned": rng.random(n) < 0.02, "azimuth_ref": "true"},
        geometry=shapely.points(x, y), crs="EPSG:32633",
    )


def _reference_page(frame: gpd.GeoDataFrame, path: Path) -> None:
    """The DOM-marker way: one folium Marker with a rotated SVG DivIcon per attitude."""
    geo = frame.to_crs("EPSG:4326")
    m = folium.Map(location=[geo.geometry.y.mean(), geo.geometry.x.mean()], zoom_start=10,
                   tiles=None)
    m.default_js, m.default_css = [], []
    lf = leaflet_assets()
    m.get_root().header.add_child(folium.Element(f"<style>{lf['css']}</style>"))
    # folium adds each marker with Leaflet's default image icon before setting the DivIcon;
    # an empty DivIcon default keeps the page from asking for marker-icon.png.
    m.get_root().header.add_child(folium.Element(
        f"<script>{lf['js']}\nL.Marker.prototype.options.icon = L.divIcon({{html: ''}});</script>"))
    for lon, lat, dd, dip in zip(geo.geometry.x, geo.geometry.y, geo["dip_direction"],
                                 geo["dip"], strict=True):
        svg = (f'<svg width="24" height="24" style="transform:rotate({dd - 90:.0f}deg)">'
               '<path d="M2 12H22M12 12V18" stroke="#14213d" stroke-width="1.6"/></svg>'
               f'<span style="font-size:10px">{dip:.0f}</span>')
        folium.Marker([lat, lon], icon=folium.DivIcon(html=svg, icon_size=(24, 24)),
                      tooltip=None).add_to(m)
    m.get_root().script.add_child(folium.Element(
        "window.thrustmap = {ready: false};"
        "requestAnimationFrame(() => requestAnimationFrame(() => {"
        f" thrustmap.map = {m.get_name()}; thrustmap.ready = true; }}));"
    ))
    m.fit_bounds([[geo.geometry.y.min(), geo.geometry.x.min()],
                  [geo.geometry.y.max(), geo.geometry.x.max()]])
    path.write_text(m.get_root().render(), encoding="utf-8")


def _measure(context, path: Path) -> tuple[float, float, float, float]:
    page, report = open_offline(context, path, timeout_ms=180_000)
    redraw_ms, frame_ms = page.evaluate(_PAN_JS)
    page.close()
    if not report.clean:
        raise RuntimeError(f"{path.name}: {report}")
    return path.stat().st_size, report.load_seconds, redraw_ms, frame_ms


def run() -> dict[int, dict[str, float]]:
    """Print size, load and pan times for ours and the DOM-marker reference; return them."""
    if find_chromium() is None:
        print("bench_webmap: skipped, no Chromium (apt-get install chromium)")
        return {}
    results = {}
    with tempfile.TemporaryDirectory() as tmp, offline_browser() as context:
        for n in SIZES:
            frame = _attitudes(n)
            ours, ref = Path(tmp) / f"ours_{n}.html", Path(tmp) / f"ref_{n}.html"
            write_map(ours, attitudes=frame, online_basemap=False)
            _reference_page(frame, ref)
            o_size, o_load, o_redraw, o_pan = _measure(context, ours)
            r_size, r_load, r_redraw, r_pan = _measure(context, ref)
            results[n] = {"bytes": o_size, "load_s": o_load, "pan_redraw_ms": o_redraw,
                          "pan_ms": o_pan, "ref_bytes": r_size, "ref_load_s": r_load,
                          "ref_pan_redraw_ms": r_redraw, "ref_pan_ms": r_pan}
            print(f"{n:>6} symbols: canvas {o_size / 1e6:5.2f} MB, load {o_load:5.2f} s, "
                  f"pan {o_redraw:5.0f} ms redraw / {o_pan:5.0f} ms to frame | "
                  f"DOM markers {r_size / 1e6:5.2f} MB, load {r_load:5.2f} s, "
                  f"pan {r_redraw:5.0f} / {r_pan:6.0f} ms | ratio size x{r_size / o_size:.1f}, "
                  f"load x{r_load / o_load:.1f}, pan x{r_pan / max(o_pan, 1e-3):.1f}")
    big = results[max(SIZES)]
    met = big["bytes"] < GOAL_BYTES and big["load_s"] < GOAL_SECONDS
    print(f"goal for {max(SIZES)} symbols (< {GOAL_BYTES / 1e6} MB, < {GOAL_SECONDS} s): "
          f"{'met' if met else 'MISSED'}")
    return results


if __name__ == "__main__":
    run()
