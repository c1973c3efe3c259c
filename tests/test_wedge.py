"""Critical Coulomb wedge: exact and small-angle tapers, envelope, states, pore ratio."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.stats import norm

from thrustmap.errors import DegenerateDataError, ParameterError, ThrustmapError
from thrustmap.figures import save_figure
from thrustmap.wedge import (
    assess_wedge,
    classify,
    critical_pore_ratio,
    critical_taper,
    envelope,
    extensional_taper,
    plot_envelope,
    state_probabilities,
)

SAND = dict(friction=30.0, basal_friction=10.0)


# --------------------------------------------------------------------------- check values


@pytest.mark.parametrize(
    ("kwargs", "beta", "exact", "approx"),
    [
        # Dahlen (1984) exact form and Davis, Suppe & Dahlen (1983) small-angle form,
        # values derived from the formulas in REFERENCES.md [D]
        (dict(pore_ratio=0.0), 0.0, 3.4365, 3.3676),
        (dict(pore_ratio=0.5, basal_pore_ratio=0.5), 3.0, 1.0799, 1.0257),
    ],
)
def test_reference_check_values(kwargs, beta, exact, approx):
    assert critical_taper(beta, **SAND, **kwargs) == pytest.approx(exact, abs=5e-5)
    assert critical_taper(beta, **SAND, **kwargs, method="small-angle") == pytest.approx(approx, abs=5e-5)


def test_exact_approaches_small_angle_at_small_angles():
    # Davis, Suppe & Dahlen (1983): the small-angle form is the limit of the exact
    # solution (Dahlen 1984) for small alpha, beta and basal friction; the gap must
    # shrink faster than the angles (second order).
    gaps = []
    for scale in (4.0, 2.0, 1.0, 0.5):
        kw = dict(friction=30.0, basal_friction=scale)
        beta = np.array([0.0, 0.5, 1.0]) * scale
        exact = critical_taper(beta, **kw)
        approx = critical_taper(beta, **kw, method="small-angle")
        gaps.append(np.max(np.abs(exact - approx) / (exact + beta)))
    assert gaps[-1] < 0.01
    assert all(later < 0.6 * earlier for earlier, later in zip(gaps, gaps[1:], strict=False))


def test_submarine_hydrostatic_equals_dry_subaerial():
    # Dahlen (1990) effective-slope form, invariant derived in REFERENCES.md [D]:
    # submarine with lambda = lambda_b = rho_w/rho equals the dry subaerial wedge.
    beta = np.array([-2.0, 0.0, 3.0, 8.0])
    for method in ("exact", "small-angle"):
        dry = critical_taper(beta, **SAND, method=method)
        wet = critical_taper(
            beta, **SAND, method=method, setting="submarine", pore_ratio=1030 / 2600,
            fluid_density=1030, rock_density=2600,
        )
        np.testing.assert_allclose(wet, dry, atol=1e-10)


def test_davis_suppe_dahlen_1983_example():
    # Davis, Suppe & Dahlen (1983), "Mechanics of fold-and-thrust belts and accretionary
    # wedges": effective internal friction mu = 1.03 and basal mu_b = 0.85 [abstract].
    # from memory: measured alpha ~ 2.9, beta ~ 6 and lambda ~ 0.7 -> loose tolerances.
    kw = dict(friction=math.degrees(math.atan(1.03)), basal_friction=math.degrees(math.atan(0.85)),
              pore_ratio=0.7)
    for method in ("exact", "small-angle"):
        alpha = critical_taper(6.0, **kw, method=method)
        assert alpha == pytest.approx(2.9, abs=1.0)  # from memory
        assert alpha + 6.0 == pytest.approx(8.9, rel=0.10)  # from memory


def test_branches_meet_at_the_infinite_slope():
    # common practice: a slab on a base dipping at the basal friction angle is at
    # limiting equilibrium, so both branches pass through alpha = -beta = phi_b (dry).
    assert critical_taper(-9.999, **SAND) == pytest.approx(9.999, abs=2e-3)
    assert extensional_taper(-10.0, **SAND) == pytest.approx(10.0, abs=1e-9)


# --------------------------------------------------------------------------- behaviour


def test_vectorised_and_scalar_agree():
    beta = np.array([0.0, 2.0, 5.0, np.nan])
    many = critical_taper(beta, **SAND)
    assert isinstance(critical_taper(2.0, **SAND), float)
    assert np.isnan(many[-1])
    assert many[1] == pytest.approx(critical_taper(2.0, **SAND))


def test_taper_falls_with_pore_pressure_and_rises_with_basal_friction():
    # Davis, Suppe & Dahlen (1983): weaker bases (higher lambda_b, lower mu_b) give narrower wedges
    assert critical_taper(2.0, **SAND, pore_ratio=0.0) > critical_taper(2.0, **SAND, pore_ratio=0.6)
    assert critical_taper(2.0, friction=30, basal_friction=15) > critical_taper(2.0, **SAND)


@settings(max_examples=40, deadline=None)
@given(
    phi=st.floats(15, 45),
    ratio=st.floats(0.1, 0.9),
    lam=st.floats(0.0, 0.9),
    method=st.sampled_from(["exact", "small-angle"]),
)
def test_envelope_points_lie_on_critical_taper(phi, ratio, lam, method):
    kw = dict(friction=phi, basal_friction=phi * ratio, pore_ratio=lam, method=method)
    env = envelope(**kw, n=41)
    comp = env[env["branch"] == "compressional"].iloc[1:-1]  # ends: effective slope = +-friction
    comp = comp[(comp["alpha"] + comp["beta"] > 0.01) & (comp["beta"].abs() < 80)]
    if comp.empty:
        return
    got = critical_taper(comp["beta"].to_numpy(), **kw)
    np.testing.assert_allclose(got, comp["alpha"].to_numpy(), atol=1e-7)


@pytest.mark.parametrize("method", ["exact", "small-angle"])
@pytest.mark.parametrize("beta", [-1.0, 0.0, 4.0, 10.0])
def test_classification_either_side_of_the_envelope(method, beta):
    kw = dict(**SAND, pore_ratio=0.4, method=method)
    alpha_c = critical_taper(beta, **kw)
    got = classify([alpha_c - 1.0, alpha_c, alpha_c + 0.2, alpha_c + 1.0], beta, **kw, tolerance=0.25)
    assert got.tolist() == ["sub-critical", "critical", "critical", "super-critical"]
    assert classify(alpha_c + 0.2, beta, **kw, tolerance=0.1) == "super-critical"


@pytest.mark.parametrize("method", ["exact", "small-angle"])
@pytest.mark.parametrize("basal", [None, 0.7])
def test_critical_pore_ratio_round_trip(method, basal):
    for lam in (0.0, 0.3, 0.6, 0.85):
        kw = dict(**SAND, pore_ratio=lam, basal_pore_ratio=basal, method=method)
        try:
            alpha = critical_taper(4.0, **kw)
        except ParameterError:
            continue  # effective basal friction above friction for this pair
        got = critical_pore_ratio(alpha, 4.0, **SAND, basal_pore_ratio=basal, method=method)
        assert got == pytest.approx(lam, abs=1e-7)
        assert classify(alpha, 4.0, **kw, tolerance=1e-6) == "critical"


def test_critical_pore_ratio_none_exists():
    # a super-critical dry wedge only moves further from critical as pressure rises
    with pytest.raises(DegenerateDataError, match="stays super-critical"):
        critical_pore_ratio(8.0, 5.0, **SAND)


def test_monte_carlo_matches_normal_probabilities():
    # reference: scipy.stats.norm; with beta fixed the state depends on alpha alone,
    # so P(critical) = Phi(tol/sd) - Phi(-tol/sd) and the tails split evenly.
    alpha_c = critical_taper(2.0, **SAND)
    u = state_probabilities(alpha_c, 2.0, alpha_sd=0.5, beta_sd=0.0, **SAND, tolerance=0.25,
                            samples=40000, seed=3)
    expected = norm.cdf(0.5) - norm.cdf(-0.5)
    assert u.probabilities["critical"] == pytest.approx(expected, abs=0.01)
    assert u.probabilities["sub-critical"] == pytest.approx((1 - expected) / 2, abs=0.01)
    assert sum(u.probabilities.values()) == pytest.approx(1.0)
    again = state_probabilities(alpha_c, 2.0, alpha_sd=0.5, beta_sd=0.0, **SAND, tolerance=0.25,
                                samples=40000, seed=3)
    assert again.probabilities == u.probabilities


def test_monte_carlo_counts_non_wedges_as_undefined():
    u = state_probabilities(0.5, 0.0, alpha_sd=1.0, beta_sd=0.0, **SAND, samples=2000, seed=1)
    assert u.probabilities["undefined"] == pytest.approx(norm.cdf(-0.5), abs=0.04)
    assert (u.state == "undefined").sum() == round(u.probabilities["undefined"] * 2000)


def test_assess_wedge_row():
    row = assess_wedge(1.0799, 3.0, alpha_sd=0.2, beta_sd=1.0, **SAND, pore_ratio=0.5).iloc[0]
    assert row["state"] == "critical"
    assert row["critical_pore_ratio"] == pytest.approx(0.5, abs=1e-3)
    assert row["critical_taper"] == pytest.approx(4.0799, abs=1e-3)
    assert row["extensional_alpha"] > row["critical_alpha"]
    assert row[["p_sub_critical", "p_critical", "p_super_critical", "p_undefined"]].sum() == pytest.approx(1.0)


def test_envelope_figure(tmp_path):
    env = envelope(**SAND)
    u = state_probabilities(5.0, 2.0, alpha_sd=1.0, beta_sd=2.0, **SAND, samples=500)
    fig = plot_envelope(env, alpha=5.0, beta=2.0, alpha_sd=1.0, beta_sd=2.0, uncertainty=u, title="test")
    ax = fig.axes[0]
    assert len(ax.lines) >= 2
    labels = ax.get_legend_handles_labels()[1]
    assert any(label.startswith("P(super-critical)") for label in labels)
    png, svg = save_figure(fig, tmp_path / "envelope")
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert "<svg" in svg.read_text()


# --------------------------------------------------------------------------- errors

ERRORS = [
    (critical_taper, (0,), dict(friction=0, basal_friction=10), ParameterError, r"friction = 0\.0 degrees is outside \(0, 90\)"),
    (critical_taper, (0,), dict(friction=90, basal_friction=10), ParameterError, r"friction = 90\.0"),
    (critical_taper, (0,), dict(friction=float("nan"), basal_friction=10), ParameterError, "finite"),
    (critical_taper, (0,), dict(friction="steep", basal_friction=10), ParameterError, "must be a number"),
    (critical_taper, (0,), dict(friction=30, basal_friction=-1), ParameterError, "basal_friction = -1"),
    (critical_taper, (0,), dict(friction=30, basal_friction=35), ParameterError, "exceeds friction"),
    (critical_taper, (0,), dict(**SAND, pore_ratio=1.0), ParameterError, r"pore_ratio = 1\.0 is outside \[0, 1\)"),
    (critical_taper, (0,), dict(**SAND, pore_ratio=-0.1), ParameterError, "pore_ratio"),
    (critical_taper, (0,), dict(**SAND, basal_pore_ratio=1.2), ParameterError, "basal_pore_ratio = 1.2"),
    (critical_taper, (0,), dict(**SAND, pore_ratio=0.9, basal_pore_ratio=0.0), ParameterError, "effective basal friction"),
    (critical_taper, (0,), dict(**SAND, setting="lake"), ParameterError, "subaerial, submarine"),
    (critical_taper, (0,), dict(**SAND, method="approx"), ParameterError, "exact, small-angle"),
    (critical_taper, (0,), dict(**SAND, setting="submarine", fluid_density=3000), ParameterError, "fluid_density"),
    (critical_taper, (0,), dict(**SAND, rock_density=0), ParameterError, "rock_density"),
    (critical_taper, (-12,), dict(**SAND), DegenerateDataError, r"beta = \[-12\.0\] degrees admits no critical wedge"),
    (critical_taper, (70,), dict(**SAND), DegenerateDataError, r"accepted beta lies in \(-10\.000, 65\.1"),
    (classify, (-1, 0.5), dict(**SAND), DegenerateDataError, "no wedge"),
    (classify, (35, 0), dict(**SAND), DegenerateDataError, "effective surface slope"),
    (classify, (3, 0), dict(**SAND, tolerance=-1), ParameterError, "tolerance"),
    (critical_pore_ratio, (-3, 1), dict(**SAND), DegenerateDataError, "no wedge"),
    (state_probabilities, (3, 1), dict(**SAND, alpha_sd=-1, beta_sd=1), ParameterError, "alpha_sd"),
    (state_probabilities, (3, 1), dict(**SAND, alpha_sd=1, beta_sd=1, samples=10), ParameterError, "samples"),
    (envelope, (), dict(**SAND, n=2), ParameterError, "at least 3"),
]


@pytest.mark.parametrize(("func", "args", "kwargs", "error", "match"), ERRORS)
def test_errors(func, args, kwargs, error, match):
    with pytest.raises(error, match=match) as info:
        func(*args, **kwargs)
    assert isinstance(info.value, ThrustmapError)
    assert isinstance(info.value, ValueError)
