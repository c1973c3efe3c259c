"""Density on the lower hemisphere against mplstereonet's density_grid.

Sources: Kamb (1959, Ice petrofabric observations from Blue Glacier) and
Vollmer (1995, C program for automatic contouring of spherical orientation data
using a modified Kamb method), as implemented by the reference library
mplstereonet (density_grid; LambertTransform for the equal-area net).
"""

import mplstereonet
import numpy as np
import pytest
import shapely
from mplstereonet.stereonet_transforms import LambertTransform

from thrustmap import stats
from thrustmap.errors import DegenerateDataError, ParameterError

TINY = np.finfo(float).tiny


def sample(n, seed, clustered):
    rng = np.random.default_rng(seed)
    if clustered:
        return rng.normal(140, 20, n) % 360, np.clip(rng.normal(40, 15, n), 0, 90)
    return rng.uniform(0, 360, n), np.degrees(np.arcsin(rng.uniform(0, 1, n)))


def reference(trend, plunge, **kw):
    lon, lat, z = mplstereonet.density_grid(plunge, trend, measurement="lines", **kw)
    # mplstereonet replaces zeros of the smoothed methods by the smallest float
    # (a plotting device); both are zero density.
    return lon, lat, np.where(z <= TINY, 0.0, z)


def assert_same(values, ref):
    # Relative difference <= 1e-6 where the density is positive; zeros must agree.
    np.testing.assert_array_equal(values == 0, ref == 0)
    pos = ref > 0
    np.testing.assert_allclose(values[pos], ref[pos], rtol=1e-6, atol=0)


@pytest.mark.parametrize("method", stats.DENSITY_METHODS)
@pytest.mark.parametrize(
    "n,gridsize,clustered",
    [(1, 10, False), (12, 31, True), (400, 40, False), (6000, 30, True), (6000, 25, False)],
)
def test_matches_density_grid(method, n, gridsize, clustered):
    # Reference library: mplstereonet.density_grid, same method, sigma and grid.
    trend, plunge = sample(n, n + gridsize, clustered)
    g = stats.density(trend, plunge, method=method, gridsize=gridsize)
    lon, lat, z = reference(trend, plunge, method=method, gridsize=gridsize)
    np.testing.assert_allclose(g.lon, lon, atol=1e-12)
    np.testing.assert_allclose(g.lat, lat, atol=1e-12)
    assert_same(g.values, z)
    assert g.n == n and g.method == method


@pytest.mark.parametrize("sigma", [1.5, 3.0, 5.0])
def test_sigma_and_weights_match_density_grid(sigma):
    # Reference library: mplstereonet.density_grid with weights normalised by their mean.
    trend, plunge = sample(3000, 7, True)
    w = np.random.default_rng(1).uniform(0.2, 3.0, 3000)
    for method in ("exponential_kamb", "kamb"):
        g = stats.density(trend, plunge, method=method, sigma=sigma, gridsize=30, weights=w)
        _, _, z = reference(trend, plunge, method=method, sigma=sigma, gridsize=30, weights=w)
        assert_same(g.values, z)


def test_single_pole_kamb_value():
    # mplstereonet's own test: one pole at (lon, lat) = (0, 0), i.e. a vertical line,
    # on a 10 x 10 grid with method kamb gives 1.6666667 (shared REFERENCES.md).
    g = stats.density([0.0], [90.0], method="kamb", gridsize=10)
    assert g.values.max() == pytest.approx(1.6666667, abs=1e-7)


def test_kamb_counting_cone_n100():
    # Kamb (1959) with sigma = 3, N = 100: A = 9/109, E = 8.2569, s = 2.7523
    # (shared REFERENCES.md, derived). All 100 data at one point: the node there
    # counts 100 -> (100 - 0.5)/2.7523 sigma.
    g = stats.density(np.full(100, 0.0), np.full(100, 90.0), method="kamb", gridsize=11)
    a = 9 / 109
    s = np.sqrt(100 * a * (1 - a))
    assert s == pytest.approx(2.7523, abs=1e-4)
    assert g.values.max() == pytest.approx((100 - 0.5) / s, rel=1e-12)


def test_net_coordinates_match_lambert_transform():
    # Reference library: mplstereonet's LambertTransform; its primitive has radius sqrt 2.
    g = stats.density([10, 20], [30, 40], gridsize=15)
    ll = np.column_stack([g.lon.ravel(), g.lat.ravel()])
    xy = LambertTransform(0, 0, 30).transform_non_affine(ll)
    np.testing.assert_allclose(g.x.ravel() * np.sqrt(2), xy[:, 0], atol=1e-12)
    np.testing.assert_allclose(g.y.ravel() * np.sqrt(2), xy[:, 1], atol=1e-12)
    # A node's trend/plunge lands at r = sqrt(1 - sin(plunge)) toward its trend.
    r = np.sqrt(1 - np.sin(np.radians(g.plunge)))
    np.testing.assert_allclose(g.x, r * np.sin(np.radians(g.trend)), atol=1e-12)
    np.testing.assert_allclose(g.y, r * np.cos(np.radians(g.trend)), atol=1e-12)


def test_contour_polygons_hold_their_nodes():
    trend, plunge = sample(500, 2, True)
    g = stats.density(trend, plunge, gridsize=60)
    levels = [2.0, 4.0, 6.0, 1e9]
    bands = g.contour_polygons(levels)
    assert list(bands["lower"]) == levels[:-1]
    assert all(bands.geometry.is_valid)
    pts = shapely.points(g.x.ravel(), g.y.ravel())
    v = g.values.ravel()
    for lower, upper, geom in zip(bands["lower"], bands["upper"], bands.geometry, strict=True):
        inside = (v > lower + 0.3) & (v < upper - 0.3)
        assert inside.any()
        assert shapely.contains(geom.buffer(1e-9), pts[inside]).all()
        outside = (v < lower - 0.3) | (v > upper + 0.3)
        assert not shapely.contains(geom.buffer(-1e-9), pts[outside]).any()
    areas = bands.geometry.area.to_numpy()
    assert np.all(areas <= np.pi)


@pytest.mark.parametrize(
    "kw,match",
    [
        ({"method": "schmidt"}, "exponential_kamb, kamb, linear_kamb"),
        ({"sigma": 0}, "sigma"),
        ({"gridsize": 1}, "gridsize"),
        ({"gridsize": 10.5}, "gridsize"),
        ({"weights": [1, -1]}, "weights"),
    ],
)
def test_bad_parameters(kw, match):
    with pytest.raises(ParameterError, match=match):
        stats.density([1, 2], [3, 4], **kw)


def test_bad_levels_and_no_data():
    g = stats.density([1, 2], [3, 4], gridsize=10)
    with pytest.raises(ParameterError, match="increasing"):
        g.contour_polygons([3, 2])
    with pytest.raises(DegenerateDataError):
        stats.density([], [])
