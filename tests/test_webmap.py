"""Web map building blocks without a browser: payloads, hillshade, assets, writing."""

from __future__ import annotations

import base64
import hashlib
import io
import json
from importlib import resources

import geopandas as gpd
import numpy as np
import pytest
import shapely
from PIL import Image
from pyproj import Transformer

from tests.common import PLANES
from tests.deliver_data import CRS, X0, Y0, attitudes, domains, elevation, thrust_traces
from thrustmap.errors import CRSError, InputError, OutputExistsError, ParameterError
from thrustmap.io.grid import Grid
from thrustmap.orientation import plane_to_normal
from thrustmap.webmap import map_html, write_map
from thrustmap.webmap.assets import leaflet_assets
from thrustmap.webmap.hillshade import hillshade, hillshade_overlay
from thrustmap.webmap.payload import (
    attitude_payload,
    fold_axis_payload,
    rank_colors,
    script_json,
    symbol_codes,
    thrust_payload,
    thumbnail_uri,
)


def test_leaflet_asset_matches_pinned_npm_tarball_digests():
    manifest = json.loads(
        resources.files("thrustmap").joinpath("_assets", "leaflet-manifest.json").read_text())
    # SHA-256 of leaflet-1.9.4.tgz from the npm registry (npm pack leaflet@1.9.4).
    assert manifest["tarball_sha256"] == (
        "84c65a256e50657896f54c33bd857b6849ebe94c817803be818bf32a3dde0b77")
    assets = leaflet_assets()
    assert 't.version="1.9.4"' in assets["js"]
    assert "sourceMappingURL" not in assets["js"]
    assert "url(images/" not in assets["css"]  # every image inlined as a data URI
    assert assets["licence"].startswith("BSD 2-Clause License")


def test_script_json_cannot_close_the_script_element():
    text = script_json({"a": "</script><script>alert(1)</script>", "b": "x & y", "c": "\u2028"})
    assert "<" not in text and ">" not in text and "&" not in text
    assert json.loads(text) == {"a": "</script><script>alert(1)</script>", "b": "x & y",
                                "c": "\u2028"}
    with pytest.raises(ValueError):
        script_json({"x": float("nan")})


@pytest.mark.parametrize("name, dip_direction, dip", PLANES)
def test_symbol_code_for_canonical_planes(name, dip_direction, dip):
    code = symbol_codes(np.array(["plane"]), np.array([dip]), np.array([False]))[0]
    # common practice: horizontal beds get the circled cross, vertical ones the crossed strike line
    expected = 1 if dip == 0 else 2 if dip == 90 else 0
    assert code == expected, name


def test_symbol_codes_follow_the_printed_label():
    # a 0.4 degree dip prints as "0", so it is drawn horizontal; 0.6 prints as "1": inclined
    codes = symbol_codes(np.array(["plane"] * 4), np.array([0.4, 0.6, 89.4, 89.6]),
                         np.zeros(4, bool))
    assert codes.tolist() == [1, 0, 0, 2]


def test_attitude_payload_coordinates_and_azimuths():
    frame = attitudes()
    p = attitude_payload(frame)
    lon, lat = Transformer.from_crs(CRS, "EPSG:4326", always_xy=True).transform(
        frame.geometry.x, frame.geometry.y)
    assert np.allclose(p["lon"], lon, atol=5e-7) and np.allclose(p["lat"], lat, atol=5e-7)
    assert all(len(f"{v:.10f}".rstrip("0").split(".")[1]) <= 6 for v in p["lon"])
    # planes carry the true-north dip direction, lines the trend
    assert p["az"][:2] == [90.0, 0.0] and p["az"][6] == 120.0
    assert p["code"] == [0, 1, 2, 3, 0, 0, 4, 5]
    names = [p["styles"][s]["name"] for s in p["style"]]
    assert names[4] == "cleavage / foliation" and names[5] == "fault plane"
    assert names[6] == "lineation"
    note = p["popup"]["values"][p["popup"]["columns"].index("note")]
    assert note[4] == "<script>alert(1)</script>"  # kept as text; the page shows it with textContent


def test_attitude_payload_refuses_bad_tables():
    frame = attitudes()
    magnetic = frame.assign(azimuth_ref=["true"] * 7 + ["magnetic"])
    with pytest.raises(InputError, match="row 8, field 'azimuth_ref'.*true-north"):
        attitude_payload(magnetic)
    no_dip = frame.copy()
    no_dip.loc[2, "dip"] = np.nan
    with pytest.raises(InputError, match="row 3, field 'dip_direction/dip'"):
        attitude_payload(no_dip)
    with pytest.raises(CRSError, match="layer attitudes.*no CRS"):
        attitude_payload(frame.set_crs(None, allow_override=True))
    with pytest.raises(InputError, match="missing column.*trend"):
        attitude_payload(frame.drop(columns=["trend"]))


def test_hanging_wall_side_from_side_text_and_dip_direction():
    t = thrust_traces()
    p = thrust_payload(t)
    sides = [f["side"] for f in p["features"]]
    # T1, T2 given as "left"; T3 digitised northwards with the hanging wall dipping 265:
    # west of a north-going trace is its left.
    assert sides == [-1, -1, -1]
    east = t.assign(hw_side=[None, None, None], hw_dip_direction=[85.0, 95.0, 265.0])
    assert [f["side"] for f in thrust_payload(east)["features"]] == [1, 1, -1]
    unknown = t.assign(hw_side=[None, None, None], hw_dip_direction=np.nan)
    feats = thrust_payload(unknown)["features"]
    assert [f["side"] for f in feats] == [0, 0, 0]
    assert ["hanging wall", "side unknown: no teeth drawn"] in feats[0]["rows"]
    with pytest.raises(InputError, match="hw_side"):
        thrust_payload(t.assign(hw_side=["up", "left", "left"]))


def test_thrust_labels_and_rank_colours():
    feats = thrust_payload(thrust_traces())["features"]
    assert [f["label"] for f in feats] == ["T1 · 1", "T2 · 3 OOS", "T3 · 2"]
    assert [f["oos"] for f in feats] == [False, True, False]
    assert feats[0]["color"] == rank_colors(np.array([1.0, 2.0, 3.0]))[0]
    assert rank_colors(np.array([5.0, 5.0])) == ["#2d2a6e", "#2d2a6e"]
    assert ["name", "Middle <b>thrust</b>"] in feats[1]["rows"]


def test_fold_axis_on_a_line_uses_its_midpoint():
    line = shapely.LineString([(X0, Y0), (X0, Y0 + 2000)])
    f = gpd.GeoDataFrame({"trend": [10.0], "plunge": [90.0]}, geometry=[line], crs=CRS)
    p = fold_axis_payload(f)
    _, lat = Transformer.from_crs(CRS, "EPSG:4326", always_xy=True).transform(X0, Y0 + 1000)
    assert abs(p["lat"][0] - lat) < 1e-6 and p["code"] == [6]


@pytest.mark.parametrize("dip_direction, dip", [(90.0, 30.0), (225.0, 10.0), (0.0, 60.0)])
def test_hillshade_matches_the_illumination_formula(dip_direction, dip):
    cell = 10.0
    ii, jj = np.mgrid[0:7, 0:7]
    east, north = jj * cell, -ii * cell
    slope = np.tan(np.radians(dip))
    z = -slope * (east * np.sin(np.radians(dip_direction)) + north * np.cos(np.radians(dip_direction)))
    got = hillshade(z, cell, azimuth=315.0, altitude=45.0)[3, 3]
    # Burrough & McDonnell (1998), Principles of Geographical Information Systems:
    # cos(zenith) cos(slope) + sin(zenith) sin(slope) cos(light azimuth - aspect).
    zen, s = np.radians(45.0), np.radians(dip)
    expected = np.cos(zen) * np.cos(s) + np.sin(zen) * np.sin(s) * np.cos(np.radians(315.0 - dip_direction))
    assert got == pytest.approx(max(expected, 0.0), abs=1e-9)
    # the same value from the project's orientation core: upward normal . light vector
    normal = -plane_to_normal(dip_direction, dip)
    light = np.array([np.sin(np.radians(315)) * np.cos(zen), np.cos(np.radians(315)) * np.cos(zen),
                      np.sin(zen)])
    assert got == pytest.approx(max(float(normal @ light), 0.0), abs=1e-9)


def test_hillshade_overlay_bounds_and_transparency():
    grid = elevation()
    uri, bounds = hillshade_overlay(grid)
    img = Image.open(io.BytesIO(base64.b64decode(uri.split(",", 1)[1])))
    assert img.mode == "RGBA" and max(img.size) <= 1200
    alpha = np.asarray(img)[..., 3]
    assert alpha.min() == 0 and alpha.max() == 255
    ny, nx = grid.values.shape
    xs = [grid.x0, grid.x0 + nx * grid.cell]
    ys = [grid.y0 - ny * grid.cell, grid.y0]
    lon, lat = Transformer.from_crs(CRS, "EPSG:4326", always_xy=True).transform(
        [xs[0], xs[1], xs[0], xs[1]], [ys[0], ys[0], ys[1], ys[1]])
    (s, w), (n, e) = bounds
    # the Web Mercator image covers the whole UTM grid, with little to spare (reference: pyproj)
    assert s <= min(lat) + 1e-6 and n >= max(lat) - 1e-6
    assert w <= min(lon) + 1e-6 and e >= max(lon) - 1e-6
    assert (n - s) < 1.05 * (max(lat) - min(lat)) and (e - w) < 1.05 * (max(lon) - min(lon))


def test_hillshade_overlay_refuses_non_grids():
    with pytest.raises(InputError, match="Grid with values"):
        hillshade_overlay(np.zeros((3, 3)))
    with pytest.raises(CRSError, match="projected"):
        hillshade_overlay(Grid(np.zeros((3, 3)), 15.0, 46.0, 0.01, "EPSG:4326"))
    with pytest.raises(CRSError, match="no CRS"):
        hillshade_overlay(Grid(np.zeros((3, 3)), X0, Y0, 10.0))
    with pytest.raises(InputError, match="no valid cell"):
        hillshade_overlay(Grid(np.full((3, 3), np.nan), X0, Y0, 10.0, CRS))
    with pytest.raises(ParameterError, match="cell size"):
        hillshade(np.zeros((3, 3)), 0.0)


def test_thumbnail_from_path_bytes_and_figure(tmp_path):
    import matplotlib.pyplot as plt

    path = tmp_path / "a.png"
    Image.new("RGB", (600, 300), "white").save(path)
    for source in (path, path.read_bytes()):
        img = Image.open(io.BytesIO(base64.b64decode(thumbnail_uri(source).split(",", 1)[1])))
        assert img.size == (240, 120)
    fig, _ = plt.subplots(figsize=(2, 2))
    assert thumbnail_uri(fig).startswith("data:image/png;base64,")
    with pytest.raises(InputError, match="not a PNG"):
        thumbnail_uri(b"not an image")
    with pytest.raises(InputError, match="cannot read"):
        thumbnail_uri(tmp_path / "missing.png")


def test_every_layer_is_optional():
    only_domains = map_html(domains=domains(), online_basemap=False)
    assert '"domains"' in only_domains and '"attitudes"' not in only_domains
    only_grid = map_html(elevation=elevation(), online_basemap=False)
    assert "Hillshade (offline)" in only_grid
    with pytest.raises(InputError, match="nothing to map"):
        map_html()
    with pytest.raises(ParameterError, match="symbol_size"):
        map_html(domains=domains(), symbol_size=0)


def test_write_map_is_atomic_and_refuses_overwrite(tmp_path):
    target = tmp_path / "map.html"
    write_map(target, domains=domains())
    digest = hashlib.sha256(target.read_bytes()).hexdigest()
    with pytest.raises(OutputExistsError):
        write_map(target, domains=domains())
    bad = attitudes().assign(azimuth_ref="grid")
    with pytest.raises(InputError):
        write_map(target, attitudes=bad, overwrite=True)
    assert hashlib.sha256(target.read_bytes()).hexdigest() == digest
    assert sorted(p.name for p in tmp_path.iterdir()) == ["map.html"]
    write_map(target, attitudes=attitudes(), overwrite=True)
    assert '"attitudes"' in target.read_text(encoding="utf-8")


def test_page_size_scales_with_compact_payload():
    # one symbol costs tens of bytes: rounding to 1e-6 degrees and no per-feature ids
    small = len(map_html(attitudes=attitudes(8), online_basemap=False))
    large = len(map_html(attitudes=attitudes(808), online_basemap=False))
    assert (large - small) / 800 < 120
