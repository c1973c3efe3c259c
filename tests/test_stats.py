"""Fisher statistics, the orientation tensor and fabric shape.

Sources: Fisher (1953, Dispersion on a sphere) through the worked example in
Tauxe (Essentials of Paleomagnetism, ch. on Fisher statistics; shared
REFERENCES.md); Woodcock (1977, Specification of fabric shapes using an
eigenvalue method); Vollmer (1990, An application of eigenvalue methods to
structural domain analysis); reference libraries mplstereonet
(find_fisher_stats, eigenvectors) and scipy.stats (vonmises_fisher, chi2).
Samples come from the Fisher (1953) sampler of thrustmap.synth (checked against
mplstereonet in tests/test_synth.py), so they are the same on every scipy.
"""

import warnings

import mplstereonet
import numpy as np
import pytest
import scipy
from hypothesis import given
from hypothesis import strategies as st
from scipy import stats as sps

from tests.common import LINES
from thrustmap import stats
from thrustmap.errors import DegenerateDataError, InputError, ParameterError, ThrustmapWarning
from thrustmap.orientation import line_to_vector, vector_to_line
from thrustmap.synth._model import fisher

# scipy.stats.vonmises_fisher appeared in scipy 1.11 (the Debian 12 stack has 1.10).
SCIPY_HAS_VMF = tuple(int(p) for p in scipy.__version__.split(".")[:2]) >= (1, 11)


def fisher_sample(n, kappa, trend, plunge, seed):
    """Directions from a Fisher (1953) distribution about a lower-hemisphere mean."""
    mu = np.tile(line_to_vector(trend, plunge), (n, 1))
    return fisher(mu, kappa, np.random.default_rng(seed))


def as_lines(x):
    """Directions (possibly upward) as trend and signed plunge."""
    plunge = np.degrees(np.arcsin(-x[:, 2]))
    trend = np.degrees(np.arctan2(x[:, 0], x[:, 1])) % 360
    return trend, plunge


def ring(n, colatitude):
    """n directions equally spaced on a small circle about the vertical."""
    az = np.arange(n) * 360.0 / n
    return az, np.full(n, 90.0 - colatitude)


def test_tauxe_worked_example():
    # Tauxe, Essentials of Paleomagnetism, ch. 4 (Fisher 1953): N = 10, R = 9.1220
    # -> k = 10.25, alpha95 = 15.8. A ring of 10 unit vectors at angle theta about
    # the mean has R = 10 cos(theta).
    theta = np.degrees(np.arccos(0.9122))
    s = stats.fisher_stats(*ring(10, theta))
    assert s.n == 10
    assert s.r == pytest.approx(9.1220, abs=1e-9)
    assert s.k == pytest.approx(10.25, abs=0.005)
    assert s.alpha == pytest.approx(15.8, abs=0.05)
    assert s.mean_plunge == pytest.approx(90.0, abs=1e-9)


def test_fisher_k_alpha_from_n_and_r():
    # Tauxe, Essentials of Paleomagnetism, ch. 4 (Fisher 1953): N = 10, R = 9.1220
    # -> k = 10.25, alpha95 = 15.8.
    k, alpha = stats.fisher_k_alpha(10, 9.1220)
    assert k == pytest.approx(10.25, abs=0.005)
    assert alpha == pytest.approx(15.8, abs=0.05)
    # Fisher (1953): k = (N - 1)/(N - R) grows without bound as R -> N; no cone for R = 0.
    assert stats.fisher_k_alpha(4, 4.0) == (float("inf"), 0.0)
    assert stats.fisher_k_alpha(4, 0.0)[1] == 180.0
    with pytest.raises(DegenerateDataError, match="at least 2"):
        stats.fisher_k_alpha(1, 1.0)
    with pytest.raises(ParameterError, match="strictly between 0 and 1"):
        stats.fisher_k_alpha(10, 9.0, conf=1.0)


@pytest.mark.parametrize("conf", [0.95, 0.99])
def test_matches_mplstereonet_find_fisher_stats(conf):
    # Reference library: mplstereonet.find_fisher_stats returns
    # (plunge, bearing), (R/N, cone angle, kappa).
    x = fisher_sample(200, 30.0, 120.0, 55.0, seed=3)
    trend, plunge = as_lines(x)
    assert np.all(plunge > 0)
    (ref_plunge, ref_bearing), (ref_rn, ref_angle, ref_k) = mplstereonet.find_fisher_stats(
        plunge, trend, conf=100 * conf
    )
    for axial in (True, False):
        s = stats.fisher_stats(trend, plunge, conf=conf, axial=axial)
        assert s.mean_plunge == pytest.approx(ref_plunge, abs=1e-9)
        assert s.mean_trend == pytest.approx(ref_bearing, abs=1e-9)
        assert s.r / s.n == pytest.approx(ref_rn, rel=1e-12)
        assert s.k == pytest.approx(ref_k, rel=1e-10)
        assert s.alpha == pytest.approx(ref_angle, rel=1e-10)


@pytest.mark.skipif(not SCIPY_HAS_VMF, reason="scipy.stats.vonmises_fisher needs scipy >= 1.11")
def test_mean_direction_matches_scipy_vonmises_fisher():
    # Reference library: scipy.stats.vonmises_fisher.fit gives the mean direction
    # (equal to Fisher's) and the maximum-likelihood kappa (coth k - 1/k = R/N),
    # which approaches Fisher's k = (N-1)/(N-R) at large N and large kappa.
    x = fisher_sample(20000, 40.0, 300.0, 35.0, seed=11)
    mu, kappa = sps.vonmises_fisher.fit(x)
    s = stats.fisher_stats(*as_lines(x), axial=False)
    t, p = vector_to_line(mu)
    assert s.mean_trend == pytest.approx(float(t), abs=1e-8)
    assert s.mean_plunge == pytest.approx(float(p), abs=1e-8)
    assert s.k == pytest.approx(kappa, rel=1e-3)
    assert s.k == pytest.approx(40.0, rel=0.05)  # the sampler's kappa


def test_upward_direction_kept_when_not_axial():
    s = stats.fisher_stats([10, 10, 12, 8, 10], [-30, -32, -28, -30, -31], axial=False)
    assert s.mean_plunge < 0
    a = stats.fisher_stats([10, 10, 12, 8, 10], [-30, -32, -28, -30, -31])
    assert a.mean_plunge > 0 and abs(a.mean_trend - 190) < 2


def test_axial_cluster_across_the_horizon():
    # common practice: a near-horizontal cluster measured at both ends is one cluster.
    trend = [88, 92, 268, 272, 90, 270, 91, 269]
    plunge = [3, 2, 2, 3, 1, 4, 2, 1]
    s = stats.fisher_stats(trend, plunge)
    assert min(abs(s.mean_trend - 90), abs(s.mean_trend - 270)) < 2.5
    assert s.mean_plunge < 3
    assert s.k > 100
    with pytest.warns(ThrustmapWarning, match="not unimodal|dispersed"):
        d = stats.fisher_stats(trend, plunge, axial=False)
    assert d.k < 5


def test_all_parallel_gives_infinite_precision():
    # Fisher (1953): k = (N-1)/(N-R) grows without bound as R -> N.
    s = stats.fisher_stats([40] * 6, [30] * 6)
    assert s.k == np.inf
    assert s.alpha == pytest.approx(0.0, abs=1e-6)
    assert (s.mean_trend, s.mean_plunge) == pytest.approx((40.0, 30.0))


@pytest.mark.parametrize("n", [0, 1])
def test_fisher_needs_two(n):
    with pytest.raises(DegenerateDataError, match="measurements"):
        stats.fisher_stats([10.0] * n, [20.0] * n)


def test_few_measurements_warn():
    with pytest.warns(ThrustmapWarning, match="only 3 measurement"):
        stats.fisher_stats([10, 12, 14], [40, 42, 41])


def test_girdle_is_not_unimodal():
    # Woodcock (1977): K < 1 for girdles.
    trend = np.arange(0, 180, 10.0)
    with pytest.warns(ThrustmapWarning, match="girdle"):
        stats.fisher_stats(trend, np.zeros_like(trend))


def test_uniform_is_not_unimodal():
    x = np.random.default_rng(5).normal(size=(60, 3))
    with pytest.warns(ThrustmapWarning, match="uniform"):
        stats.fisher_stats(*vector_to_line(x))


def test_bingham_critical_value():
    # Reference library: scipy.stats.chi2 (Bingham's statistic is chi-square with 5 d.f.).
    assert stats._CHI2_5_95 == pytest.approx(sps.chi2.ppf(0.95, 5), rel=1e-12)


def test_too_dispersed_for_a_cone():
    # Fisher (1953): cos(alpha) = 1 - (N-R)/R ((1/p)^(1/(N-1)) - 1) falls below -1.
    trend, plunge = np.arange(0, 360, 60.0), np.full(6, 10.0)
    with pytest.warns(ThrustmapWarning, match="not unimodal"):
        with pytest.warns(ThrustmapWarning, match="too dispersed"):
            s = stats.fisher_stats(trend, plunge, axial=False)
    assert s.r == pytest.approx(6 * np.sin(np.radians(10)))
    assert s.alpha == 180.0


@pytest.mark.parametrize(
    "trend,plunge,exc,match",
    [
        ([1, np.nan, 3], [1, 2, 3], InputError, "position"),
        ([1, 2], [1, 2, 3], InputError, "pair up"),
    ],
)
def test_bad_input(trend, plunge, exc, match):
    with pytest.raises(exc, match=match):
        stats.fisher_stats(trend, plunge)


@pytest.mark.parametrize("conf", [0, 1, 95])
def test_conf_range(conf):
    with pytest.raises(ParameterError, match="conf"):
        stats.fisher_stats([1, 2, 3, 4, 5], [10, 11, 12, 13, 14], conf=conf)


# ------------------------------------------------------------------ tensor and shape


def test_tensor_matches_mplstereonet_eigenvectors():
    # Reference library: mplstereonet.eigenvectors adds antipodes and uses np.cov,
    # so its eigenvalues are ours times 2N/(2N-1) (shared REFERENCES.md).
    rng = np.random.default_rng(2)
    trend = rng.uniform(0, 360, 40)
    plunge = rng.uniform(0, 90, 40)
    t = stats.orientation_tensor(trend, plunge)
    ref_plunge, ref_bearing, ref_vals = mplstereonet.eigenvectors(
        plunge, trend, measurement="lines"
    )
    n = 40
    assert t.eigenvalues == pytest.approx(ref_vals * (2 * n - 1) / (2 * n), rel=1e-10)
    assert np.sum(t.eigenvalues) == pytest.approx(1.0)
    for i in range(3):
        from thrustmap.orientation import angle_between_lines

        assert angle_between_lines(t.trend[i], t.plunge[i], ref_bearing[i], ref_plunge[i]) < 1e-6
    assert np.all(t.eigenvectors[2] <= 0)


def test_tensor_few_warns_and_empty_raises():
    with pytest.warns(ThrustmapWarning, match="only 1"):
        t = stats.orientation_tensor([30], [20])
    assert t.eigenvalues == pytest.approx([1, 0, 0], abs=1e-12)
    with pytest.raises(DegenerateDataError):
        stats.orientation_tensor([], [])


@pytest.mark.parametrize("name,trend,plunge", LINES)
def test_tensor_of_one_line_is_the_line(name, trend, plunge):
    with pytest.warns(ThrustmapWarning):
        t = stats.orientation_tensor([trend], [plunge])
    from thrustmap.orientation import angle_between_lines

    # 1e-5 degrees: the arccos in angle_between_lines resolves no finer near zero
    # (a dot product one ulp below 1 already reads 1.2e-6 degrees)
    assert angle_between_lines(t.trend[0], t.plunge[0], trend, plunge) < 1e-5


def test_woodcock_vollmer_values():
    # Woodcock (1977) K = ln(S1/S2)/ln(S2/S3), C = ln(S1/S3); Vollmer (1990)
    # P = S1-S2, G = 2(S2-S3), R = 3 S3; S = (0.6, 0.3, 0.1) -> K = 0.630930,
    # C = 1.791759, P = 0.3, G = 0.4, R = 0.3 (shared REFERENCES.md, derived).
    f = stats.fabric_shape([0.1, 0.6, 0.3])
    assert f.K == pytest.approx(0.630930, abs=1e-6)
    assert f.C == pytest.approx(1.791759, abs=1e-6)
    assert (f.P, f.G, f.R) == pytest.approx((0.3, 0.4, 0.3))


@given(st.lists(st.floats(0.0, 1.0), min_size=3, max_size=3).filter(lambda v: sum(v) > 1e-3))
def test_vollmer_components_sum_to_one(values):
    # Vollmer (1990): P + G + R = 1.
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ThrustmapWarning)  # isotropic draws
        f = stats.fabric_shape(values)
    assert f.P + f.G + f.R == pytest.approx(1.0)
    assert min(f.P, f.G, f.R) >= 0


def test_shape_limits():
    # Woodcock (1977): a perfect cluster (S2 = S3) has K -> infinity, a girdle with
    # S1 = S2 has K = 0, a perfect great circle S3 = 0 has C -> infinity.
    cluster = stats.fabric_shape([1.0, 0.0, 0.0])
    assert cluster.K == np.inf and cluster.C == np.inf and cluster.P == 1.0
    girdle = stats.fabric_shape([0.5, 0.5, 0.0])
    assert girdle.K == 0.0 and girdle.C == np.inf and girdle.G == 1.0
    with pytest.warns(ThrustmapWarning, match="undefined"):
        iso = stats.fabric_shape([1, 1, 1])
    assert np.isnan(iso.K) and iso.R == pytest.approx(1.0)


def test_shape_stack_and_errors():
    f = stats.fabric_shape([[0.6, 0.3, 0.1], [0.8, 0.1, 0.1]])
    assert f.K.shape == (2,) and f.K[1] == np.inf
    with pytest.raises(InputError, match="3 eigenvalues"):
        stats.fabric_shape([0.5, 0.5])
    with pytest.raises(InputError, match="non-negative"):
        stats.fabric_shape([0.5, 0.6, -0.1])


def test_tensor_shape_property():
    t = stats.orientation_tensor(np.arange(0, 360, 20.0), np.full(18, 5.0))
    assert t.shape.K < 1  # Woodcock (1977): a girdle


@pytest.mark.parametrize(
    "trend", [0.0, 45.0, 90.0, 135.0, 180.0, 270.0, 359.999, 360.0, -90.0, 450.0]
)
@pytest.mark.parametrize("plunge", [-90.0, -30.0, 0.0, 30.0, 89.9, 90.0])
def test_fast_components_match_line_to_vector(trend, plunge):
    # The sine/square-root components equal orientation.line_to_vector.
    fast = stats._components(np.array([trend]), np.array([plunge]))[:, 0]
    # At a quarter-turn trend the cosine comes from a sine of +-1, where a sine one
    # ulp off (numpy 1.24's vectorised sin) gives sqrt(2 eps) ~ 1.5e-8: the bound
    # documented in stats._components. Elsewhere the match is to round-off.
    quarter = trend % 180.0 == 90.0
    np.testing.assert_allclose(
        fast, line_to_vector(trend, plunge), rtol=0, atol=2e-8 if quarter else 1e-13
    )


@given(st.floats(-720, 720), st.floats(-90, 90))
def test_fast_components_close_everywhere(trend, plunge):
    fast = stats._components(np.array([trend]), np.array([plunge]))[:, 0]
    np.testing.assert_allclose(fast, line_to_vector(trend, plunge), rtol=0, atol=2e-8)
    assert np.linalg.norm(fast) == pytest.approx(1.0, abs=1e-15)


def test_plunge_range_checked():
    with pytest.raises(InputError, match="plunge at position 1 is 95.0.*-90 to 90"):
        stats.fisher_stats([10, 20, 30], [10, 95, 20])


def test_mean_plane_matches_fit_pole_example():
    # mplstereonet.fit_pole([270, 65, 280, 300], [20, 15, 10, 5]) -> (296.4826, 5.9629)
    # (shared REFERENCES.md): the plane whose pole is the S1 eigenvector of the poles.
    from thrustmap.orientation import plane_to_pole, pole_to_plane, strike_to_dip_direction

    poles = plane_to_pole(strike_to_dip_direction([270, 65, 280, 300]), [20, 15, 10, 5])
    with pytest.warns(ThrustmapWarning, match="only 4"):
        t = stats.orientation_tensor(*poles)
    dd, dip = pole_to_plane(t.trend[0], t.plunge[0])
    assert (float(dd) - 90) % 360 == pytest.approx(296.4826, abs=1e-4)
    assert float(dip) == pytest.approx(5.9629, abs=1e-4)
