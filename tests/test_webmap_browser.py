"""The web map in real headless Chromium, with the network cut off.

Skips only where no Chromium exists and CI is not set; with CI=true a missing
browser is a failure.
"""

from __future__ import annotations

import os
from pathlib import Path

import geopandas as gpd
import numpy as np
import pytest
import shapely
from PIL import Image
from pyproj import Proj, Transformer

from tests.deliver_data import (
    CRS,
    X0,
    Y0,
    attitudes,
    domains,
    elevation,
    fold_axes,
    sheets,
    thrust_traces,
)
from thrustmap.webmap import write_map
from thrustmap.webmap.headless import find_chromium, offline_browser, open_offline


def _browser_available() -> None:
    missing = []
    try:
        import playwright  # noqa: F401
    except ImportError:
        missing.append("the playwright package")
    if find_chromium() is None:
        missing.append("Chromium (apt-get install chromium)")
    if not missing:
        return
    reason = "browser tests need " + " and ".join(missing)
    if os.environ.get("CI", "").strip().lower() in ("true", "1", "yes"):
        pytest.fail(f"{reason}; CI=true, so this is a failure, not a skip")
    pytest.skip(reason)


@pytest.fixture(scope="module")
def browser():
    _browser_available()
    with offline_browser() as context:
        yield context


@pytest.fixture
def open_map(browser):
    pages = []

    def _open(path):
        page, report = open_offline(browser, path)
        pages.append((page, report))
        return page, report

    yield _open
    for page, report in pages:
        page.close()
        # any console error, page error, dialog or network attempt fails the test
        assert report.clean, report


def _to_lonlat(x, y):
    return Transformer.from_crs(CRS, "EPSG:4326", always_xy=True).transform(x, y)


def _container_point(page, lon, lat):
    xy = page.evaluate(
        "([lat, lon]) => { const p = thrustmap.map.latLngToContainerPoint([lat, lon]);"
        " return [p.x, p.y]; }", [lat, lon])
    box = page.locator(".folium-map").bounding_box()
    return box["x"] + xy[0], box["y"] + xy[1]


def _full_map(tmp_path, **kw):
    fig_path = tmp_path / "d1.png"
    Image.new("RGB", (300, 300), (240, 240, 255)).save(fig_path)
    return write_map(
        tmp_path / "map.html",
        attitudes=attitudes(), thrusts=thrust_traces(), sheets=sheets(), domains=domains(),
        fold_axes=fold_axes(), elevation=elevation(), figures={"D1": fig_path},
        title="Synthetic test map <i>not a place</i>", **kw,
    )


def test_renders_offline_with_counts_and_popup(tmp_path, open_map):
    path = _full_map(tmp_path)
    page, report = open_map(path)
    expected = {"attitudes": 8, "thrust_traces": 3, "thrust_sheets": 2, "domains": 2,
                "fold_axes": 2}
    assert page.evaluate("thrustmap.counts") == expected
    # the counts are in the DOM too, for anyone without the JS global
    counts = page.locator(".tm-counts")
    assert counts.get_attribute("data-thrust-traces") == "3"
    for key, n in expected.items():
        assert page.locator(f'.tm-legend-head[data-layer="{key}"]').get_attribute("data-count") == str(n)
    assert page.evaluate("thrustmap.drawn.attitudes") == 8  # every symbol in view was drawn
    assert page.evaluate("document.querySelectorAll('.leaflet-marker-icon').length") == 0
    assert page.title() == "Synthetic test map <i>not a place</i>"
    assert page.locator(".tm-title").inner_text().startswith("Synthetic test map <i>not a place</i>")
    assert "qualified geologist" in page.locator(".tm-caution").inner_text()
    # zoom onto the stations, then click the one with a script in its note
    page.evaluate("thrustmap.map.fitBounds(thrustmap.layers.attitudes.getBounds(), "
                  "{animate: false, padding: [80, 80]})")
    page.wait_for_timeout(300)
    station = attitudes().iloc[4]
    assert station["note"] == "<script>alert(1)</script>"
    lon, lat = _to_lonlat(station.geometry.x, station.geometry.y)
    page.mouse.click(*_container_point(page, lon, lat))
    popup = page.locator(".leaflet-popup-content")
    popup.wait_for(state="visible", timeout=5000)
    text = popup.inner_text()
    assert "<script>alert(1)</script>" in text  # shown as text ...
    assert popup.locator("script").count() == 0  # ... not as an element
    assert "315 / 60" in text  # cleavage dipping 60 towards 315 (dip direction / dip)
    assert "225 / 60" in text  # its right-hand-rule strike
    page.screenshot(path=tmp_path / "map.png")
    assert (tmp_path / "map.png").stat().st_size > 10_000
    assert report.load_seconds < 30


def test_domain_popup_has_statistics_and_stereonet(tmp_path, open_map):
    page, _ = open_map(_full_map(tmp_path, online_basemap=False))
    # inside domain D1, away from sheets, thrusts and stations
    lon, lat = _to_lonlat(X0 - 5800, Y0 - 5600)
    page.mouse.click(*_container_point(page, lon, lat))
    popup = page.locator(".leaflet-popup-content")
    popup.wait_for(state="visible", timeout=5000)
    text = popup.inner_text()
    assert "fisher_k" in text and "18.3" in text and "alpha95" in text
    src = popup.locator("img.tm-thumb").get_attribute("src")
    assert src.startswith("data:image/png;base64,")
    assert popup.locator("img.tm-thumb").evaluate("img => img.naturalWidth") == 240


def test_thrust_popup_escapes_markup(tmp_path, open_map):
    page, _ = open_map(_full_map(tmp_path))
    mid = thrust_traces().geometry.iloc[1].interpolate(0.9, normalized=True)  # away from stations
    lon, lat = _to_lonlat(mid.x, mid.y)
    page.mouse.click(*_container_point(page, lon, lat))
    popup = page.locator(".leaflet-popup-content")
    popup.wait_for(state="visible", timeout=5000)
    assert "Middle <b>thrust</b>" in popup.inner_text()
    assert popup.locator("b").count() == 0
    assert "T2 · 3 OOS" in popup.inner_text()


def _dark_pixels(png_path, center, radius):
    img = np.asarray(Image.open(png_path).convert("RGB"), dtype=float)
    lum = img @ np.array([0.299, 0.587, 0.114])
    yy, xx = np.nonzero(lum < 110)
    dx, dy = xx - center[0], yy - center[1]
    keep = np.hypot(dx, dy) <= radius
    return dx[keep].astype(float), dy[keep].astype(float)


def test_dip_tick_points_true_east_far_from_central_meridian(tmp_path, open_map):
    lon, lat = 19.6, 46.0  # 4.6 degrees east of the zone's central meridian (15 E)
    # Reference: pyproj meridian convergence (grid north vs true north) of EPSG:32633 there.
    convergence = Proj(CRS).get_factors(lon, lat).meridian_convergence
    assert convergence > 3.0
    x, y = Transformer.from_crs("EPSG:4326", CRS, always_xy=True).transform(lon, lat)
    bed = gpd.GeoDataFrame(
        {"kind": ["plane"], "feature": ["bedding"], "dip_direction": [90.0], "dip": [45.0],
         "azimuth_ref": ["true"], "dip_direction_grid": [90.0 - convergence]},
        geometry=[shapely.Point(x, y)], crs=CRS,
    )
    size = 120.0
    path = write_map(tmp_path / "east.html", attitudes=bed, symbol_size=size,
                     online_basemap=False)
    page, _ = open_map(path)
    page.evaluate(f"thrustmap.map.setView([{lat}, {lon}], 12, {{animate: false}})")
    page.wait_for_timeout(300)
    cx, cy = _container_point(page, lon, lat)
    shot = tmp_path / "east.png"
    page.screenshot(path=shot)
    dx, dy = _dark_pixels(shot, (cx, cy), size + 4)
    r = np.hypot(dx, dy)
    # Beyond the tick and its label only the strike line remains: it must run true north-south.
    far = (r > 0.78 * size) & (r < size - 3)
    assert far.sum() > 40
    _, vectors = np.linalg.eigh(np.cov(np.vstack([dx[far], dy[far]])))
    vx, vy = vectors[:, -1]  # principal axis of the strike-line pixels
    strike = np.degrees(np.arctan2(vx, -vy)) % 180.0
    assert min(strike, 180.0 - strike) < 1.0
    # The tick: pixels off the strike line, between the line and the label.
    tick = (r > 12) & (r < 0.6 * size - 6) & (np.abs(dx) > 4)
    assert tick.sum() > 40
    angle = np.degrees(np.arctan2(np.mean(dx[tick]), -np.mean(dy[tick]))) % 360.0
    # Dip direction 090 true: on the page (north up) the tick points east, to within a degree,
    # tighter than the grid-north error it would have here (convergence > 3 degrees).
    assert abs(angle - 90.0) < 1.0
    assert abs(angle - (90.0 - convergence)) > 2.0


def test_page_has_no_remote_assets(tmp_path):
    page = _full_map(tmp_path, online_basemap=False).read_text(encoding="utf-8")
    lower = page.lower()
    assert "<script src" not in lower and "<link" not in lower
    for cdn in ("jsdelivr", "cdnjs", "jquery", "bootstrap", "fontawesome", "unpkg", "d3js"):
        assert cdn not in lower, cdn
    assert "tile.openstreetmap.org" not in lower
    assert "<script>alert(1)" not in lower  # the note is escaped inside the page's JSON
    assert "BSD 2-Clause License" in page  # Leaflet's licence travels with its code


def test_sample_scenario_map_offline(tmp_path, open_map):
    import pandas as pd

    import thrustmap
    from thrustmap.io.grid import read_ascii_grid

    sample = Path(thrustmap.__file__).resolve().parents[1] / "sample_gis"
    if not sample.is_dir():
        pytest.skip("the bundled sample_gis/ exists only in a source checkout")
    field = thrustmap.read_attitudes(sample / "field_sheet.csv", crs=4326, azimuth_ref="magnetic",
                                     working_crs=32633).accepted
    gpkg = sample / "scenario.gpkg"
    traces = gpd.read_file(gpkg, layer="thrust_traces")
    found = thrustmap.analyze_thrusts(
        traces, study_area=gpd.read_file(gpkg, layer="study_area"),
        age_constraints=pd.read_csv(sample / "age_constraints.csv"), n_boot=50)
    domains_ = gpd.read_file(gpkg, layer="domains")
    path = write_map(tmp_path / "map.html", attitudes=field, thrusts=found.traces,
                     sheets=found.sheets, domains=domains_,
                     elevation=read_ascii_grid(sample / "elevation.asc"),
                     title="Synthetic scenario (invented data)")
    page, _ = open_map(path)
    assert page.evaluate("thrustmap.counts") == {
        "attitudes": len(field), "thrust_traces": len(traces),
        "thrust_sheets": len(found.sheets), "domains": len(domains_)}
    # the field note holding a script tag: shown as text in its popup, never run
    noted = field[field["notes"].astype(str).str.contains("<script>", regex=False)]
    assert len(noted) == 1
    lon, lat = _to_lonlat(noted.geometry.x.iloc[0], noted.geometry.y.iloc[0])
    page.evaluate(f"thrustmap.map.setView([{lat}, {lon}], 16, {{animate: false}})")
    page.wait_for_timeout(300)
    page.mouse.click(*_container_point(page, lon, lat))
    popup = page.locator(".leaflet-popup-content")
    popup.wait_for(state="visible", timeout=5000)
    assert "<script>" in popup.inner_text() and popup.locator("script").count() == 0
    # every measurement of that station is listed, not only the topmost symbol
    same_place = int(field.geometry.geom_equals(noted.geometry.iloc[0]).sum())
    assert same_place > 1 and popup.locator(".tm-pop").count() >= min(same_place, 8)
    page.screenshot(path=tmp_path / "scenario.png")
