"""Sections: apparent dip, projection of attitudes, thrust crossings, down-plunge views."""

from types import SimpleNamespace

import geopandas as gpd
import mplstereonet.analysis
import numpy as np
import pytest
import shapely
from common import PLANES
from hypothesis import given, settings
from hypothesis import strategies as st

from thrustmap.errors import CRSError, InputError, ParameterError
from thrustmap.figures import save_figure
from thrustmap.orientation import angle_between_planes, line_to_vector, normal_to_plane
from thrustmap.sections import (
    _true_to_grid,
    apparent_dip,
    build_section,
    down_plunge,
    plot_down_plunge,
    plot_section,
    section_points,
    section_thrusts,
)

CRS = "EPSG:32633"
X0, Y0 = 720000.0, 5095000.0


def attitude_table(xy, *, kind="plane", dd=90.0, dip=30.0, trend=np.nan, plunge=np.nan, z=None, crs=CRS):
    n = len(xy)
    geoms = [shapely.Point(x, y) if z is None else shapely.Point(x, y, z[i]) for i, (x, y) in enumerate(xy)]
    return gpd.GeoDataFrame(
        {
            "source_row": np.arange(1, n + 1),
            "station": [f"S{i}" for i in range(n)],
            "feature": "bedding" if kind == "plane" else "hinge_line",
            "kind": kind,
            "dip_direction_grid": np.broadcast_to(dd, n).astype(float),
            "dip": np.broadcast_to(dip, n).astype(float),
            "trend_grid": np.broadcast_to(trend, n).astype(float),
            "plunge": np.broadcast_to(plunge, n).astype(float),
            "elevation": 123.0,  # an original column whose name clashes with an output
        },
        geometry=geoms,
        crs=crs,
    )


# --------------------------------------------------------------------------- apparent dip


@pytest.mark.parametrize(("name", "dd", "dip"), PLANES)
def test_apparent_dip_identities(name, dd, dip):
    # common practice: a section along the dip direction shows the true dip; along strike, zero
    assert apparent_dip(dd, dip, dd) == pytest.approx(dip, abs=1e-9)
    assert apparent_dip(dd, dip, dd + 90.0) == pytest.approx(0.0, abs=1e-9)
    assert apparent_dip(dd, dip, dd - 90.0) == pytest.approx(0.0, abs=1e-9)
    assert apparent_dip(dd, dip, dd + 180.0) == pytest.approx(-dip, abs=1e-9)


@pytest.mark.parametrize(
    ("dip", "from_strike", "expected"),
    # tan(apparent) = tan(dip) sin(angle from strike) [C, REFERENCES.md]; values [D]
    [(30.0, 45.0, 22.2077), (40.0, 30.0, 22.7605), (60.0, 10.0, 16.7396)],
)
def test_apparent_dip_worked_values(dip, from_strike, expected):
    strike = 20.0
    got = apparent_dip(strike + 90.0, dip, strike + from_strike)
    assert got == pytest.approx(expected, abs=5e-5)
    # reference library: mplstereonet.analysis.apparent_dip(true dip, azimuth from the dip direction)
    ref = mplstereonet.analysis.apparent_dip(dip, 90.0 - from_strike)[0]
    assert got == pytest.approx(ref, abs=1e-9)


@settings(max_examples=60, deadline=None)
@given(dd=st.floats(0, 360), dip=st.floats(0, 89.9), az=st.floats(0, 360))
def test_apparent_dip_matches_mplstereonet(dd, dip, az):
    ref = mplstereonet.analysis.apparent_dip(dip, dd - az)[0]
    assert apparent_dip(dd, dip, az) == pytest.approx(ref, abs=1e-8)


# --------------------------------------------------------------------------- section points


def test_section_points_selection_distance_offset():
    rng = np.random.default_rng(0)
    xy = np.column_stack([rng.uniform(X0 - 500, X0 + 2500, 300), rng.uniform(Y0 - 800, Y0 + 800, 300)])
    att = attitude_table(xy, dd=rng.uniform(0, 360, 300), dip=rng.uniform(0, 80, 300))
    line = shapely.LineString([(X0, Y0), (X0 + 2000, Y0)])
    out = section_points(att, gpd.GeoSeries([line], crs=CRS), buffer=200.0)
    # reference: shapely distances computed directly
    inside = shapely.distance(np.asarray(att.geometry.values), line) <= 200.0
    assert len(out) == inside.sum()
    assert set(out["source_row"]) == set(att.loc[inside, "source_row"])
    pts = shapely.get_coordinates(np.asarray(out.geometry.values))
    np.testing.assert_allclose(out["distance_m"], np.clip(pts[:, 0] - X0, 0, 2000), atol=1e-6)
    along = (pts[:, 0] >= X0) & (pts[:, 0] <= X0 + 2000)
    # east-running section: the right-hand side is south
    np.testing.assert_allclose(out["offset_m"][along], -(pts[along, 1] - Y0), atol=1e-6)
    assert out["distance_m"].is_monotonic_increasing
    np.testing.assert_allclose(out["section_azimuth_grid"], 90.0, atol=1e-9)
    np.testing.assert_allclose(out["apparent_dip"], apparent_dip(out["dip_direction_grid"], out["dip"], 90.0))
    assert "orig_elevation" in out.columns and (out["orig_elevation"] == 123.0).all()
    assert out["elevation"].isna().all() and (out["elevation_source"] == "").all()


def test_polyline_section_uses_the_local_segment():
    line = shapely.LineString([(X0, Y0), (X0 + 1000, Y0), (X0 + 1000, Y0 + 1000)])
    att = attitude_table([(X0 + 500, Y0 + 10), (X0 + 990, Y0 + 600)], dd=90.0, dip=30.0)
    out = section_points(att, line, buffer=50.0)
    np.testing.assert_allclose(out["section_azimuth_grid"], [90.0, 0.0], atol=1e-6)
    np.testing.assert_allclose(out["apparent_dip"], [30.0, 0.0], atol=1e-6)
    np.testing.assert_allclose(out["distance_m"], [500.0, 1600.0], atol=1e-6)
    np.testing.assert_allclose(out["angle_to_strike"], [90.0, 0.0], atol=1e-6)


def test_elevation_from_grid_or_z_and_line_plunges():
    grid = SimpleNamespace(values=np.full((40, 40), 850.0), x0=X0 - 1000, y0=Y0 + 1000, cell=50.0, crs=CRS)
    line = shapely.LineString([(X0, Y0), (X0 + 900, Y0)])
    lines = attitude_table([(X0 + 100, Y0), (X0 + 200, Y0), (X0 + 300, Y0)], kind="line",
                           trend=[90.0, 0.0, 270.0], plunge=[25.0, 25.0, 25.0], z=[10.0, 20.0, 30.0])
    with_grid = section_points(lines, line, buffer=10, grid=grid)
    assert (with_grid["elevation"] == 850.0).all() and (with_grid["elevation_source"] == "grid").all()
    from_z = section_points(lines, line, buffer=10)
    assert from_z["elevation"].tolist() == [10.0, 20.0, 30.0]
    # a line along the section shows its plunge, across it plunges vertically in projection
    np.testing.assert_allclose(from_z["apparent_plunge"], [25.0, 90.0, -25.0], atol=1e-9)
    assert from_z["apparent_dip"].isna().all()


def test_section_thrust_dip_directions():
    # REFERENCES.md [L]: pyproj meridian convergence in EPSG:32633 at 18E 45N is +2.122300;
    # grid azimuth = true azimuth - convergence
    from pyproj import Transformer

    x, y = Transformer.from_crs("EPSG:4326", CRS, always_xy=True).transform(18.0, 45.0)
    got, converted = _true_to_grid(np.array([90.0]), np.array([[x, y]]), CRS)
    assert converted and got[0] == pytest.approx(90.0 - 2.122300, abs=1e-5)

    section = shapely.LineString([(x - 2000, y), (x + 2000, y)])  # toward grid east
    north = shapely.LineString([(x - 500, y - 1000), (x - 500, y + 1000)])  # digitised toward grid north
    south = shapely.LineString([(x + 500, y + 1000), (x + 500, y - 1000)])  # digitised toward grid south
    traces = gpd.GeoDataFrame(
        {
            "thrust_id": ["T1", "T2", "T3", "T4"],
            "hw_side": ["right", None, None, "left"],
            "hw_dip_direction": [np.nan, 268.0, np.nan, np.nan],
            "dip": [30.0, 45.0, 20.0, np.nan],
        },
        geometry=[north, south, shapely.LineString([(x + 1500, y - 10), (x + 1500, y + 10)]), north.parallel_offset(300)],
        crs=CRS,
    )
    out = section_thrusts(traces, section).set_index("thrust_id")
    assert out.loc["T1", "dip_direction_grid"] == pytest.approx(90.0)
    assert out.loc["T1", "apparent_dip"] == pytest.approx(30.0)
    # 268 true is about 265.9 grid: the trace normal on that side is 270
    assert out.loc["T2", "dip_direction_grid"] == pytest.approx(270.0)
    assert out.loc["T2", "apparent_dip"] == pytest.approx(-45.0)
    assert out.loc["T3", "flags"] == "dip_direction_unknown" and np.isnan(out.loc["T3", "apparent_dip"])
    assert out.loc["T4", "flags"] == "dip_unknown"
    assert out["distance_m"].is_monotonic_increasing


def test_build_and_plot_section(tmp_path):
    grid = SimpleNamespace(values=np.tile(np.linspace(1200, 400, 60), (60, 1)), x0=X0 - 500, y0=Y0 + 1500,
                           cell=50.0, crs=CRS)
    rng = np.random.default_rng(4)
    xy = np.column_stack([rng.uniform(X0, X0 + 2000, 40), rng.uniform(Y0 - 100, Y0 + 100, 40)])
    att = attitude_table(xy, dd=rng.choice([90.0, 270.0], 40), dip=rng.uniform(10, 60, 40))
    traces = gpd.GeoDataFrame({"thrust_id": ["T1"], "hw_side": ["left"], "dip": [35.0]},
                               geometry=[shapely.LineString([(X0 + 1200, Y0 - 500), (X0 + 1200, Y0 + 500)])], crs=CRS)
    layers = build_section(gpd.GeoDataFrame({"name": ["A"]}, geometry=[shapely.LineString([(X0, Y0), (X0 + 2000, Y0)])],
                                            crs=CRS), att, buffer=150.0, thrusts=traces, grid=grid, section_id="A")
    assert layers["section_line"].loc[0, "n_points"] == 40
    assert layers["section_line"].loc[0, "azimuth_grid"] == pytest.approx(90.0)
    # digitised northward with the hanging wall on the left: dips west, back toward the section's start
    assert layers["section_thrusts"].loc[0, "apparent_dip"] == pytest.approx(-35.0)
    topo = layers["section_topography"]
    assert topo["elevation"].is_monotonic_decreasing and (topo["section_id"] == "A").all()
    for name, layer in layers.items():
        layer.to_file(tmp_path / "section.gpkg", layer=name, engine="pyogrio")
    back = gpd.read_file(tmp_path / "section.gpkg", layer="section_points", engine="pyogrio")
    np.testing.assert_allclose(back["apparent_dip"], layers["section_points"]["apparent_dip"])
    fig = plot_section(layers, vertical_exaggeration=2.0, decollement=(2000.0, -1500.0, 3.0))
    assert fig.axes[0].get_aspect() == 2.0
    base = [ln for ln in fig.axes[0].lines if ln.get_label() == "decollement"][0]
    assert base.get_ydata()[0] == pytest.approx(-1500.0 - 2000.0 * np.tan(np.radians(3.0)))
    assert fig.axes[0].get_ylim()[0] < base.get_ydata()[0]
    png, svg = save_figure(fig, tmp_path / "section")
    assert png.exists() and svg.exists()


# --------------------------------------------------------------------------- down-plunge


def test_down_plunge_geometry():
    trend, plunge = 60.0, 20.0
    axis = line_to_vector(trend, plunge)
    rng = np.random.default_rng(7)
    base = rng.uniform(-1000, 1000, (30, 3))
    shifted = base + rng.uniform(-3000, 3000, (30, 1)) * axis  # slid along the axis
    pts = np.vstack([base, shifted])
    # limbs of a cylindrical fold: planes that contain the axis
    helper = np.cross(axis, [0.0, 0.0, 1.0])
    helper /= np.linalg.norm(helper)
    other = np.cross(axis, helper)
    theta = np.radians(rng.uniform(0, 180, 60))
    normals = np.cos(theta)[:, None] * helper + np.sin(theta)[:, None] * other
    dd, dip = normal_to_plane(normals)
    frame = gpd.GeoDataFrame({"kind": "plane", "dip_direction_grid": dd, "dip": dip},
                             geometry=shapely.points(pts), crs=CRS)
    view = down_plunge(frame, trend_grid=trend, plunge=plunge)
    xy = view[["view_x_m", "view_y_m"]].to_numpy()
    # points on one line parallel to the axis fall on one point of the view
    np.testing.assert_allclose(xy[:30], xy[30:], atol=1e-6)
    # the view is the orthogonal projection onto the plane normal to the axis
    r = pts - pts.mean(axis=0)
    perpendicular = r - (r @ axis)[:, None] * axis
    np.testing.assert_allclose(np.hypot(xy[:, 0], xy[:, 1]), np.linalg.norm(perpendicular, axis=1), atol=1e-6)
    # common practice: the interlimb angle is measured in the profile plane normal to the hinge,
    # so the angle between two limbs' traces in the view is their dihedral angle
    a = np.radians(view["trace_angle"].to_numpy())
    trace_gap = np.degrees(np.arccos(np.abs(np.cos(a[:-1] - a[1:]))))
    np.testing.assert_allclose(trace_gap, angle_between_planes(dd[:-1], dip[:-1], dd[1:], dip[1:]), atol=1e-6)


def test_down_plunge_figure_and_errors(tmp_path):
    frame = attitude_table([(X0, Y0), (X0 + 100, Y0)], z=[0.0, 50.0])
    view = down_plunge(frame, trend_grid=0.0, plunge=30.0)
    png, _ = save_figure(plot_down_plunge(view), tmp_path / "dp")
    assert png.exists()
    with pytest.raises(ParameterError, match="no elevation"):
        down_plunge(attitude_table([(X0, Y0)]), trend_grid=0, plunge=10)
    with pytest.raises(ParameterError, match="plunge must be 0-90"):
        down_plunge(frame, trend_grid=0, plunge=95)


ERRORS = [
    (lambda: section_points(attitude_table([(X0, Y0)]), shapely.LineString([(X0, Y0), (X0 + 1, Y0)]), buffer=0),
     ParameterError, "buffer"),
    (lambda: section_points(attitude_table([(X0, Y0)]).drop(columns="dip_direction_grid"),
                            shapely.LineString([(X0, Y0), (X0 + 1, Y0)]), buffer=5),
     InputError, "layer attitudes, field 'dip_direction_grid'"),
    (lambda: section_points(attitude_table([(X0, Y0)]),
                            gpd.GeoSeries([shapely.LineString([(0, 0), (1, 0)])], crs="EPSG:32632"), buffer=5),
     CRSError, "reproject"),
    (lambda: section_points(attitude_table([(X0, Y0)]),
                            gpd.GeoSeries([shapely.LineString([(0, 0), (1, 0)])] * 2, crs=CRS), buffer=5),
     ParameterError, "2 features"),
    (lambda: section_thrusts(gpd.GeoDataFrame(geometry=[shapely.LineString([(0, 0), (1, 0)])]),
                             shapely.LineString([(0, 0), (1, 0)])), InputError, "thrust_id"),
    (lambda: plot_section(build_section(shapely.LineString([(X0, Y0), (X0 + 5, Y0)]),
                                        attitude_table([(X0, Y0)], crs=None), buffer=1), vertical_exaggeration=0),
     ParameterError, "vertical_exaggeration"),
    (lambda: plot_section(build_section(shapely.LineString([(X0, Y0), (X0 + 5, Y0)]),
                                        attitude_table([(X0, Y0)], crs=None), buffer=1), decollement=(1, 2)),
     ParameterError, "decollement"),
]


@pytest.mark.parametrize(("call", "error", "match"), ERRORS)
def test_errors(call, error, match):
    with pytest.raises(error, match=match):
        call()


def test_empty_section_still_gives_every_layer():
    att = attitude_table([(X0 + 5000, Y0 + 5000)])
    far = gpd.GeoDataFrame({"thrust_id": ["T1"]}, geometry=[shapely.LineString([(0, 0), (1, 1)])], crs=CRS)
    layers = build_section(shapely.LineString([(X0, Y0), (X0 + 100, Y0)]), att, buffer=10, thrusts=far)
    assert len(layers["section_points"]) == 0 and len(layers["section_thrusts"]) == 0
    assert "apparent_dip" in layers["section_points"].columns
    assert layers["section_line"].loc[0, "n_points"] == 0
    plot_section(layers)
