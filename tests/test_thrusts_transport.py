"""Transport direction: given, from slickenlines (Fisher mean and cone), or from trace geometry.

References: mplstereonet ``find_fisher_stats`` (Fisher 1953 mean and confidence
cone) and scipy.stats.circstd (circular standard deviation) run in the tests;
pyproj ``get_factors`` for the grid convergence.
"""

import mplstereonet
import numpy as np
import pyproj
import pytest
from scipy import stats

from tests.thrust_networks import CRS, X0, Y0, area, attitudes, box, line, parallel_set, traces
from thrustmap.errors import ParameterError
from thrustmap.thrusts import analyze_thrusts
from thrustmap.thrusts.transport import fisher_mean, transport_from_traces


def _convergence_at(x, y):
    lon, lat = pyproj.Transformer.from_crs(CRS, 4326, always_xy=True).transform(x, y)
    return float(pyproj.Proj(CRS).get_factors(lon, lat).meridian_convergence)


def test_given_true_azimuth_converted_with_pyproj_convergence():
    result = analyze_thrusts(parallel_set(3), transport_azimuth=90.0, scanline_interval=1000.0)
    centre = result.traces.geometry.union_all().envelope.centroid
    gamma = _convergence_at(centre.x, centre.y)
    assert gamma == pytest.approx(1.87, abs=0.05)  # east of the 15 E central meridian: positive
    assert result.transport.source == "given"
    assert result.transport.azimuth_grid == pytest.approx(
        90.0 - gamma, abs=1e-9
    )  # grid = true - convergence
    assert result.transport.azimuth_true == pytest.approx(90.0)


def test_given_azimuth_out_of_range():
    with pytest.raises(ParameterError, match="outside 0-360"):
        analyze_thrusts(parallel_set(2), transport_azimuth=400.0)
    with pytest.raises(ParameterError, match="azimuth_ref = 'compass' is not one of: true, grid"):
        analyze_thrusts(parallel_set(2), transport_azimuth=90.0, azimuth_ref="compass")
    with pytest.raises(ParameterError, match="give the declination"):
        analyze_thrusts(parallel_set(2), transport_azimuth=90.0, azimuth_ref="magnetic")


def test_given_magnetic_azimuth_uses_the_declination():
    # true = magnetic + declination (east positive): common practice
    kw = dict(study_area=area(box(-500, 0, 2500, 10000)), scanline_interval=1000.0)
    mag = analyze_thrusts(
        parallel_set(3), transport_azimuth=87.0, azimuth_ref="magnetic", declination=3.0, **kw
    )
    true = analyze_thrusts(parallel_set(3), transport_azimuth=90.0, **kw)
    assert mag.transport.azimuth_true == pytest.approx(90.0)
    assert mag.transport.azimuth_grid == pytest.approx(true.transport.azimuth_grid)


def test_slickenlines_give_the_hanging_wall_movement_and_cone():
    trend = np.array([262.0, 268.0, 275.0, 281.0, 270.0, 259.0])
    plunge = np.array([28.0, 35.0, 31.0, 25.0, 40.0, 33.0])
    rows = [
        (1500, 1000 * k, "slickenline", "line", np.nan, np.nan, t, p, "reverse")
        for k, (t, p) in enumerate(zip(trend, plunge, strict=True))
    ]
    rows.append(
        (1500, 9000, "slickenline", "line", np.nan, np.nan, 10.0, 20.0, "dextral")
    )  # not used
    rows.append(
        (1500, 9500, "slickenline", "line", np.nan, np.nan, 90.0, 30.0, "normal")
    )  # not used
    result = analyze_thrusts(parallel_set(3), attitudes=attitudes(rows), scanline_interval=1000.0)
    tr = result.transport
    assert tr.source == "slickenlines" and tr.n == 6
    # Reference: mplstereonet's Fisher statistics of the slickenlines themselves; the hanging
    # wall moved up the plunge, toward trend + 180 (reverse sense): common practice.
    # find_fisher_stats returns (r_value, cone, kappa), in that order (read in its source)
    (mean_plunge, mean_bearing), (_, cone, kappa) = mplstereonet.find_fisher_stats(
        plunge, trend, conf=95
    )
    gammas = np.array([_convergence_at(X0 + 1500, Y0 + 1000 * k) for k in range(6)])
    assert np.ptp(gammas) < 0.01  # stations close together: one convergence is enough for the check
    assert tr.azimuth_true == pytest.approx((mean_bearing + 180.0) % 360.0, abs=0.01)
    assert tr.cone == pytest.approx(cone, abs=0.01)
    assert f"k = {kappa:.1f}" in tr.detail


def test_fisher_mean_against_published_n_r():
    # Tauxe, Essentials of Paleomagnetism, ch. on Fisher statistics: N = 10, R = 9.1220 ->
    # k = 10.25, alpha95 = 15.8. Vectors built to have exactly that resultant.
    n, r = 10, 9.1220
    c = r / n
    angle = np.arccos(c)
    az = np.linspace(0, 2 * np.pi, n, endpoint=False)
    v = np.stack([np.sin(angle) * np.cos(az), np.sin(angle) * np.sin(az), np.full(n, c)], axis=1)
    _, res, k, a95 = fisher_mean(v)
    assert res == pytest.approx(r, abs=1e-9)
    assert k == pytest.approx(10.25, abs=0.01)
    assert a95 == pytest.approx(15.8, abs=0.05)


def test_trace_geometry_normal_to_mean_strike_toward_foreland():
    strikes = np.array([350.0, 10.0, 355.0, 5.0])
    geoms = []
    for k, s in enumerate(strikes):
        d = np.array([np.sin(np.radians(s)), np.cos(np.radians(s))]) * 5000
        geoms.append(line((k * 1000, 0), (k * 1000 + d[0], d[1])))
    gdf = traces([(f"T{k}", g, "left", None) for k, g in enumerate(geoms)])
    result = analyze_thrusts(
        gdf, study_area=area(box(-1000, 0, 5000, 5000)), scanline_interval=500.0
    )
    tr = result.transport
    assert tr.source == "trace_geometry"
    assert tr.azimuth_grid == pytest.approx(
        90.0, abs=1e-9
    )  # normal to 000, away from the west-dipping hanging walls
    # spread: circular standard deviation of the axes (angles doubled then halved), scipy reference
    expected = np.degrees(stats.circstd(np.radians(2 * strikes))) / 2
    assert tr.spread == pytest.approx(expected, rel=1e-9)


def test_trace_geometry_needs_a_known_side():
    assert transport_from_traces([line((0, 0), (0, 100))], [0], convergence=0.0) is None


def test_hanging_walls_east_reverse_the_transport():
    result = analyze_thrusts(parallel_set(3, side="right"), scanline_interval=1000.0)
    assert result.transport.azimuth_grid == pytest.approx(270.0)
