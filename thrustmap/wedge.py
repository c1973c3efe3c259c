"""Critical taper of a non-cohesive Coulomb wedge: exact and small-angle solutions.

A fold-and-thrust belt or accretionary wedge grows toward a taper (surface
slope ``alpha`` plus decollement dip ``beta``) set by its internal friction,
the friction on its basal detachment and the pore-fluid pressure. This module
computes that critical taper, the stability envelope in (beta, alpha) space,
classifies a measured wedge and solves for the pore-fluid ratio that would make
it critical.

Conventions
-----------
* Angles in degrees. ``alpha`` is the surface slope, positive when the surface
  descends toward the toe (the foreland, the transport direction); ``beta`` is
  the dip of the decollement, positive when it dips toward the hinterland.
* ``friction`` and ``basal_friction`` are the angles of internal and basal
  friction (phi and phi_b), ``pore_ratio`` and ``basal_pore_ratio`` the
  Hubbert-Rubey ratios lambda and lambda_b (pore-fluid pressure over the
  vertical lithostatic stress, including any water column). In a submarine
  wedge hydrostatic pressure is ``lambda = fluid_density / rock_density``.
* The *compressional* branch is the lower boundary of the stability envelope:
  a wedge below it is sub-critical (it deforms internally and thickens), a
  wedge on it is critical, a wedge above it is super-critical (it slides
  without internal deformation). The *extensional* branch is the upper
  boundary, above which the wedge fails by normal faulting.

Exact solution (Dahlen 1984, J. Geophys. Res. 89, "Noncohesive critical
Coulomb wedges: an exact solution"; Dahlen 1990, Annu. Rev. Earth Planet.
Sci. 18)::

    mu_b' = mu_b (1 - lambda_b) / (1 - lambda),   phi_b' = atan(mu_b')
    alpha' = atan((1 - rho_w / rho) / (1 - lambda) * tan(alpha))
    psi_b = 1/2 asin(sin phi_b' / sin phi) - 1/2 phi_b'
    psi_0 = 1/2 asin(sin alpha' / sin phi) - 1/2 alpha'
    alpha + beta = psi_b - psi_0

with ``rho_w = 0`` on land. The extensional branch takes the other root of both
angles (``pi/2 - 1/2 asin(...) - 1/2 (...)``): the greatest principal stress
then stands steep instead of nearly parallel to the wedge.

Small-angle solution (Davis, Suppe & Dahlen 1983, J. Geophys. Res. 88,
"Mechanics of fold-and-thrust belts and accretionary wedges"), the limit of the
exact form for small angles::

    alpha + beta = (mu_b (1 - lambda_b) + (1 - rho_w/rho) beta)
                   / ((1 - rho_w/rho) + (1 - lambda) K)
    K = 2 sin phi / (1 - sin phi)        (compressional)
    K = -2 sin phi / (1 + sin phi)       (extensional)
"""

from __future__ import annotations

import logging
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike, NDArray
from scipy.optimize import brentq

from thrustmap.errors import DegenerateDataError, ParameterError
from thrustmap.figures import add_caution

if TYPE_CHECKING:
    from matplotlib.figure import Figure

__all__ = [
    "SETTINGS",
    "METHODS",
    "STATES",
    "critical_taper",
    "extensional_taper",
    "envelope",
    "classify",
    "critical_pore_ratio",
    "TaperUncertainty",
    "state_probabilities",
    "assess_wedge",
    "plot_envelope",
]

log = logging.getLogger(__name__)

Float = NDArray[np.float64]

SETTINGS = ("subaerial", "submarine")
METHODS = ("exact", "small-angle")
STATES = ("sub-critical", "critical", "super-critical")
UNDEFINED = "undefined"

_HALF_PI = 0.5 * np.pi


@dataclass(frozen=True)
class _Wedge:
    """Validated wedge parameters, angles in radians."""

    phi: float
    phi_b: float
    lam: float
    lam_b: float
    density_factor: float  # 1 - rho_w / rho
    method: str

    @property
    def mu_b_eff(self) -> float:
        return float(np.tan(self.phi_b) * (1.0 - self.lam_b) / (1.0 - self.lam))

    @property
    def phi_b_eff(self) -> float:
        return float(np.arctan(self.mu_b_eff))

    @property
    def slope_factor(self) -> float:
        """tan(alpha') / tan(alpha)."""
        return self.density_factor / (1.0 - self.lam)

    def with_pore_ratios(self, lam: float, lam_b: float) -> _Wedge:
        return _Wedge(self.phi, self.phi_b, lam, lam_b, self.density_factor, self.method)


def _number(value: Any, name: str, unit: str) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise ParameterError(f"{name} must be a number ({unit}); got {value!r}") from None
    if not np.isfinite(v):
        raise ParameterError(f"{name} must be a finite number ({unit}); got {value!r}")
    return v


def _choice(value: str, name: str, choices: tuple[str, ...]) -> str:
    if value not in choices:
        raise ParameterError(f"{name}={value!r} is not valid; choose one of: {', '.join(choices)}")
    return value


def _wedge(
    friction: float,
    basal_friction: float,
    pore_ratio: float,
    basal_pore_ratio: float | None,
    setting: str,
    method: str,
    fluid_density: float,
    rock_density: float,
) -> _Wedge:
    """Check the physical range of every parameter and convert to radians."""
    phi = _number(friction, "friction", "degrees")
    phi_b = _number(basal_friction, "basal_friction", "degrees")
    lam = _number(pore_ratio, "pore_ratio", "dimensionless")
    lam_b = lam if basal_pore_ratio is None else _number(basal_pore_ratio, "basal_pore_ratio", "dimensionless")
    _choice(setting, "setting", SETTINGS)
    _choice(method, "method", METHODS)
    rho = _number(rock_density, "rock_density", "kg/m3")
    rho_w = _number(fluid_density, "fluid_density", "kg/m3")
    for name, v in (("friction", phi), ("basal_friction", phi_b)):
        if not 0.0 < v < 90.0:
            raise ParameterError(
                f"{name} = {v} degrees is outside (0, 90); give the angle of "
                f"{'internal' if name == 'friction' else 'basal'} friction in degrees (e.g. 30 or 10)"
            )
    if phi_b > phi:
        raise ParameterError(
            f"basal_friction = {phi_b} degrees exceeds friction = {phi} degrees; a decollement "
            "stronger than the wedge would not slip (the wedge would fail above it): "
            "give basal_friction <= friction"
        )
    for name, v in (("pore_ratio", lam), ("basal_pore_ratio", lam_b)):
        if not 0.0 <= v < 1.0:
            raise ParameterError(
                f"{name} = {v} is outside [0, 1); lambda is pore-fluid pressure over lithostatic "
                "stress (0 dry, about 0.4 hydrostatic on land, 1 lithostatic)"
            )
    if rho <= 0:
        raise ParameterError(f"rock_density = {rho} kg/m3 must be positive (e.g. 2700)")
    density_factor = 1.0
    if setting == "submarine":
        if not 0.0 < rho_w < rho:
            raise ParameterError(
                f"fluid_density = {rho_w} kg/m3 must be positive and below rock_density = {rho} kg/m3"
            )
        density_factor = 1.0 - rho_w / rho
    w = _Wedge(np.radians(phi), np.radians(phi_b), lam, lam_b, density_factor, method)
    if w.phi_b_eff > w.phi + 1e-12:
        raise ParameterError(
            f"effective basal friction {np.degrees(w.phi_b_eff):.3f} degrees "
            f"(basal_friction {phi_b} with basal_pore_ratio {lam_b} against pore_ratio {lam}) "
            f"exceeds friction = {phi} degrees; the decollement would be stronger than the wedge: "
            "raise basal_pore_ratio or lower basal_friction"
        )
    return w


def _alpha_eff(alpha: Float, w: _Wedge) -> Float:
    return np.arctan(w.slope_factor * np.tan(alpha))


def _alpha_from_eff(alpha_eff: Float, w: _Wedge) -> Float:
    return np.arctan(np.tan(alpha_eff) / w.slope_factor)


def _psi_base(w: _Wedge, branch: str) -> float:
    pb = w.phi_b_eff
    a = float(np.arcsin(min(np.sin(pb) / np.sin(w.phi), 1.0)))
    return 0.5 * a - 0.5 * pb if branch == "compressional" else _HALF_PI - 0.5 * a - 0.5 * pb


def _psi_surface(alpha_eff: Float, w: _Wedge, branch: str) -> Float:
    a = np.arcsin(np.clip(np.sin(alpha_eff) / np.sin(w.phi), -1.0, 1.0))
    if branch == "compressional":
        return 0.5 * a - 0.5 * alpha_eff
    return _HALF_PI - 0.5 * a - 0.5 * alpha_eff


def _taper_residual(alpha: Float, beta: Float, w: _Wedge, branch: str) -> Float:
    """alpha + beta minus the critical taper at this alpha (radians); zero on the branch."""
    if w.method == "exact":
        crit = _psi_base(w, branch) - _psi_surface(_alpha_eff(alpha, w), w, branch)
        return alpha + beta - crit
    m = np.tan(w.phi_b) * (1.0 - w.lam_b)
    f = w.density_factor
    return alpha + beta - (m + f * beta) / _small_angle_denominator(w, branch)


def _small_angle_denominator(w: _Wedge, branch: str) -> float:
    s = np.sin(w.phi)
    k = 2.0 * s / (1.0 - s) if branch == "compressional" else -2.0 * s / (1.0 + s)
    return w.density_factor + (1.0 - w.lam) * k


def _alpha_limit(w: _Wedge) -> float:
    """Largest |alpha| (radians) whose effective slope stays below the friction angle."""
    return float(_alpha_from_eff(np.asarray(w.phi), w))


def _bisect(fun, lo: Float, hi: Float, iterations: int = 64) -> Float:
    """Vectorised bisection for a root of ``fun`` bracketed by [lo, hi] elementwise."""
    f_lo = fun(lo)
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        f_mid = fun(mid)
        same = np.sign(f_mid) == np.sign(f_lo)
        lo = np.where(same, mid, lo)
        f_lo = np.where(same, f_mid, f_lo)
        hi = np.where(same, hi, mid)
    return 0.5 * (lo + hi)


def _critical_alpha(beta: Float, w: _Wedge, branch: str) -> Float:
    """Critical alpha (radians) for each beta (radians); NaN where the branch has no solution."""
    beta = np.asarray(beta, dtype=float)
    if w.method == "small-angle":
        m = np.tan(w.phi_b) * (1.0 - w.lam_b)
        d = _small_angle_denominator(w, branch)
        if d <= 0:
            return np.full(beta.shape, np.nan)
        return (m + w.density_factor * beta) / d - beta
    lim = _alpha_limit(w)
    lo = np.full(beta.shape, -lim)
    hi = np.full(beta.shape, lim)

    def fun(a: Float) -> Float:
        return _taper_residual(a, beta, w, branch)

    f_lo, f_hi = fun(lo), fun(hi)
    ok = (np.sign(f_lo) != np.sign(f_hi)) | (f_lo == 0) | (f_hi == 0)
    ok &= np.isfinite(beta)
    root = _bisect(fun, lo, hi)
    return np.where(ok, root, np.nan)


def _beta_range(w: _Wedge) -> tuple[float, float]:
    """Open interval of beta (radians) with a critical compressional wedge of positive taper."""
    if w.method == "small-angle":
        lo = -np.tan(w.phi_b) * (1.0 - w.lam_b) / w.density_factor
        return float(lo), _HALF_PI
    lo = -float(_alpha_from_eff(np.asarray(w.phi_b_eff), w))
    lim = _alpha_limit(w)
    hi = _psi_base(w, "compressional") + lim + float(-_psi_surface(np.asarray(-w.phi), w, "compressional"))
    return lo, min(hi, _HALF_PI)


def _as_output(values: Float, like: ArrayLike) -> Float | float:
    return float(values) if np.ndim(like) == 0 else values


def critical_taper(
    beta: ArrayLike,
    *,
    friction: float,
    basal_friction: float,
    pore_ratio: float = 0.0,
    basal_pore_ratio: float | None = None,
    setting: str = "subaerial",
    method: str = "exact",
    fluid_density: float = 1000.0,
    rock_density: float = 2700.0,
) -> Float | float:
    """Critical surface slope alpha (degrees) of a compressional wedge over a decollement dipping beta.

    Parameters
    ----------
    beta : array_like
        Decollement dip, degrees, positive toward the hinterland.
    friction, basal_friction : float
        Angles of internal and basal friction, degrees, in (0, 90), with
        ``basal_friction <= friction``.
    pore_ratio : float
        Pore-fluid ratio lambda of the wedge, in [0, 1). Default 0 (dry).
    basal_pore_ratio : float, optional
        Pore-fluid ratio lambda_b on the decollement, in [0, 1); default equal
        to ``pore_ratio``.
    setting : {"subaerial", "submarine"}
        Whether water loads the wedge's surface.
    method : {"exact", "small-angle"}
        Dahlen (1984) exact solution, or the small-angle form of Davis, Suppe &
        Dahlen (1983).
    fluid_density, rock_density : float
        Densities, kg/m3 (fluid used only when submarine).

    Returns
    -------
    float or ndarray
        Critical alpha, degrees, on the lower (compressional) branch; NaN where
        ``beta`` is NaN.

    Raises
    ------
    ParameterError
        For parameters out of physical range or an unknown setting or method.
    DegenerateDataError
        For a beta with no critical wedge of positive taper; the message gives
        the accepted range.

    Examples
    --------
    >>> round(critical_taper(0, friction=30, basal_friction=10), 4)
    3.4365
    >>> round(critical_taper(0, friction=30, basal_friction=10, method="small-angle"), 4)
    3.3676
    """
    w = _wedge(friction, basal_friction, pore_ratio, basal_pore_ratio, setting, method, fluid_density, rock_density)
    b_deg = np.asarray(beta, dtype=float)
    b = np.radians(b_deg)
    lo, hi = _beta_range(w)
    bad = np.isfinite(b) & ((b <= lo) | (b >= hi))
    if np.any(bad):
        raise DegenerateDataError(
            f"beta = {np.unique(b_deg[bad]).tolist()} degrees admits no critical wedge for these "
            f"parameters (friction {friction}, basal_friction {basal_friction}, pore_ratio {pore_ratio}, "
            f"basal_pore_ratio {basal_pore_ratio}, {setting}, {method}); accepted beta lies in "
            f"({np.degrees(lo):.3f}, {np.degrees(hi):.3f}) degrees"
        )
    return _as_output(np.degrees(_critical_alpha(b, w, "compressional")), beta)


def extensional_taper(
    beta: ArrayLike,
    *,
    friction: float,
    basal_friction: float,
    pore_ratio: float = 0.0,
    basal_pore_ratio: float | None = None,
    setting: str = "subaerial",
    method: str = "exact",
    fluid_density: float = 1000.0,
    rock_density: float = 2700.0,
) -> Float | float:
    """Surface slope alpha (degrees) on the upper, extensional branch of the envelope.

    Parameters are those of :func:`critical_taper`.

    Returns
    -------
    float or ndarray
        Alpha, degrees, above which a wedge over a decollement dipping ``beta``
        fails by extension; NaN where the branch does not reach that beta
        (every surface slope below the friction limit is then free of
        extensional failure).

    Raises
    ------
    ParameterError
        For parameters out of physical range.

    Examples
    --------
    >>> round(extensional_taper(-10, friction=30, basal_friction=10), 4)
    10.0
    """
    w = _wedge(friction, basal_friction, pore_ratio, basal_pore_ratio, setting, method, fluid_density, rock_density)
    b = np.radians(np.asarray(beta, dtype=float))
    return _as_output(np.degrees(_critical_alpha(b, w, "extensional")), beta)


def envelope(
    *,
    friction: float,
    basal_friction: float,
    pore_ratio: float = 0.0,
    basal_pore_ratio: float | None = None,
    setting: str = "subaerial",
    method: str = "exact",
    fluid_density: float = 1000.0,
    rock_density: float = 2700.0,
    n: int = 361,
) -> pd.DataFrame:
    """The stability envelope of the wedge in (beta, alpha) space, both branches.

    Each branch is traced over surface slopes whose effective slope ranges over
    (-friction, friction); the two branches cross where the wedge degenerates
    into a slab parallel to its base (alpha + beta = 0).

    Parameters
    ----------
    friction, basal_friction, pore_ratio, basal_pore_ratio, setting, method, fluid_density, rock_density
        As for :func:`critical_taper`.
    n : int
        Points per branch (at least 3).

    Returns
    -------
    pandas.DataFrame
        Columns ``branch`` ("compressional" or "extensional"), ``beta`` and
        ``alpha`` (degrees), ordered by increasing alpha within each branch.

    Raises
    ------
    ParameterError
        For parameters out of physical range or ``n < 3``.

    Examples
    --------
    >>> env = envelope(friction=30, basal_friction=10, n=5)
    >>> env.groupby("branch").size().to_dict()
    {'compressional': 5, 'extensional': 5}
    """
    w = _wedge(friction, basal_friction, pore_ratio, basal_pore_ratio, setting, method, fluid_density, rock_density)
    if int(n) < 3:
        raise ParameterError(f"n = {n} points per branch is too few; give at least 3")
    a_eff = np.linspace(-w.phi, w.phi, int(n))
    alpha = _alpha_from_eff(a_eff, w)
    frames = []
    for branch in ("compressional", "extensional"):
        if method == "exact":
            beta = _psi_base(w, branch) - _psi_surface(a_eff, w, branch) - alpha
        else:
            # solve the linear small-angle relation for beta at each alpha
            m = np.tan(w.phi_b) * (1.0 - w.lam_b)
            d = _small_angle_denominator(w, branch)
            beta = (m - alpha * d) / (d - w.density_factor)
        frames.append(pd.DataFrame({"branch": branch, "beta": np.degrees(beta), "alpha": np.degrees(alpha)}))
    return pd.concat(frames, ignore_index=True)


def _state_codes(alpha: Float, beta: Float, w: _Wedge, tolerance: float) -> tuple[NDArray[np.object_], Float]:
    """State per element and the critical alpha (radians); "undefined" outside the wedge domain."""
    alpha_c = _critical_alpha(beta, w, "compressional")
    residual = _taper_residual(alpha, beta, w, "compressional")
    tol = np.radians(tolerance)
    near = np.isfinite(alpha_c) & (np.abs(alpha - alpha_c) <= tol)
    state = np.where(near, "critical", np.where(residual < 0, "sub-critical", "super-critical")).astype(object)
    undefined = ~_in_domain(alpha, beta, w)
    state[undefined] = UNDEFINED
    return state, alpha_c


def _in_domain(alpha: Float, beta: Float, w: _Wedge) -> NDArray[np.bool_]:
    ok = np.isfinite(alpha) & np.isfinite(beta) & (alpha + beta > 0) & (np.abs(beta) < _HALF_PI)
    if w.method == "exact":
        ok &= np.abs(_alpha_eff(alpha, w)) < w.phi
    return ok


def classify(
    alpha: ArrayLike,
    beta: ArrayLike,
    *,
    friction: float,
    basal_friction: float,
    pore_ratio: float = 0.0,
    basal_pore_ratio: float | None = None,
    setting: str = "subaerial",
    method: str = "exact",
    fluid_density: float = 1000.0,
    rock_density: float = 2700.0,
    tolerance: float = 0.25,
) -> NDArray[np.object_] | str:
    """State of measured wedges: "sub-critical", "critical" or "super-critical".

    A wedge is critical when its surface slope lies within ``tolerance`` of the
    critical slope for its decollement dip, sub-critical below and
    super-critical above (the compressional branch of the envelope).

    Parameters
    ----------
    alpha, beta : array_like
        Measured surface slope and decollement dip, degrees; broadcast together.
    friction, basal_friction, pore_ratio, basal_pore_ratio, setting, method, fluid_density, rock_density
        As for :func:`critical_taper`.
    tolerance : float
        Half-width of the critical band, degrees of surface slope (>= 0).

    Returns
    -------
    str or ndarray of str
        One state per wedge.

    Raises
    ------
    ParameterError
        For parameters out of physical range or a negative tolerance.
    DegenerateDataError
        For a measured geometry that is no wedge (alpha + beta <= 0, |beta| >= 90)
        or a surface steeper than the effective friction angle allows.

    Examples
    --------
    >>> classify([2.0, 3.4, 6.0], 0, friction=30, basal_friction=10).tolist()
    ['sub-critical', 'critical', 'super-critical']
    """
    w = _wedge(friction, basal_friction, pore_ratio, basal_pore_ratio, setting, method, fluid_density, rock_density)
    tol = _number(tolerance, "tolerance", "degrees")
    if tol < 0:
        raise ParameterError(f"tolerance = {tol} degrees must be >= 0")
    a_deg, b_deg = np.broadcast_arrays(np.asarray(alpha, dtype=float), np.asarray(beta, dtype=float))
    a, b = np.radians(a_deg), np.radians(b_deg)
    bad = ~_in_domain(a, b, w)
    if np.any(bad):
        pairs = [(float(x), float(y)) for x, y in zip(a_deg[bad].ravel(), b_deg[bad].ravel(), strict=True)]
        raise DegenerateDataError(
            f"(alpha, beta) = {pairs[:5]} degrees is no wedge for these parameters: a wedge needs "
            f"alpha + beta > 0, |beta| < 90 and |alpha| below "
            f"{np.degrees(_alpha_limit(w)):.3f} degrees (the slope at which the effective surface "
            "slope reaches the friction angle)"
        )
    state, _ = _state_codes(a, b, w, tol)
    return str(state) if state.ndim == 0 else state


def critical_pore_ratio(
    alpha: float,
    beta: float,
    *,
    friction: float,
    basal_friction: float,
    basal_pore_ratio: float | None = None,
    setting: str = "subaerial",
    method: str = "exact",
    fluid_density: float = 1000.0,
    rock_density: float = 2700.0,
) -> float:
    """Pore-fluid ratio lambda that makes a measured wedge exactly critical.

    Solved with Brent's method (``scipy.optimize.brentq``) over the lambdas for
    which the wedge is defined.

    Parameters
    ----------
    alpha, beta : float
        Measured surface slope and decollement dip, degrees.
    friction, basal_friction, setting, method, fluid_density, rock_density
        As for :func:`critical_taper`.
    basal_pore_ratio : float, optional
        Fixed lambda_b on the decollement; default: tied to lambda (equal).

    Returns
    -------
    float
        Lambda in [0, 1).

    Raises
    ------
    ParameterError
        For parameters out of physical range.
    DegenerateDataError
        When no lambda in [0, 1) makes the wedge critical; the message says
        whether the wedge stays sub- or super-critical over the whole range.

    Examples
    --------
    >>> lam = critical_pore_ratio(1.0799, 3, friction=30, basal_friction=10)
    >>> round(lam, 3)
    0.5
    """
    a_deg = _number(alpha, "alpha", "degrees")
    b_deg = _number(beta, "beta", "degrees")
    base = _wedge(friction, basal_friction, 0.0, basal_pore_ratio if basal_pore_ratio is not None else 0.0,
                  setting, method, fluid_density, rock_density)
    a, b = np.radians(a_deg), np.radians(b_deg)
    if not (a + b > 0 and abs(b) < _HALF_PI):
        raise DegenerateDataError(
            f"(alpha, beta) = ({a_deg}, {b_deg}) degrees is no wedge: need alpha + beta > 0 and |beta| < 90"
        )

    def wedge_at(lam: float) -> _Wedge:
        return base.with_pore_ratios(lam, lam if basal_pore_ratio is None else base.lam_b)

    # lambdas keeping the effective surface slope and basal friction below the friction angle
    hi = 1.0 - 1e-9
    if method == "exact" and a != 0:
        hi = min(hi, 1.0 - base.density_factor * abs(np.tan(a)) / np.tan(base.phi))
    if basal_pore_ratio is not None:
        hi = min(hi, 1.0 - np.tan(base.phi_b) * (1.0 - base.lam_b) / np.tan(base.phi))
    hi -= 1e-9
    if hi <= 0:
        raise DegenerateDataError(
            f"no pore ratio keeps this wedge defined: the surface slope alpha = {a_deg} degrees "
            f"(or the basal friction) already reaches the friction angle {friction} degrees when dry"
        )

    def f(lam: float) -> float:
        return float(_taper_residual(np.asarray(a), np.asarray(b), wedge_at(lam), "compressional"))

    f0, f1 = f(0.0), f(hi)
    # a wedge critical at a bracket end leaves a round-off residual (~1e-17 rad) whose
    # sign is arbitrary; taken literally it would hide the root on that end
    roundoff = 1e-12
    if abs(f0) <= roundoff:
        return 0.0
    if abs(f1) <= roundoff:
        return float(hi)
    if np.sign(f0) == np.sign(f1):
        state = "super-critical" if f0 > 0 else "sub-critical"
        tied = "lambda_b tied to lambda" if basal_pore_ratio is None else f"lambda_b = {basal_pore_ratio}"
        raise DegenerateDataError(
            f"no pore ratio in [0, {hi:.4f}] makes (alpha, beta) = ({a_deg}, {b_deg}) degrees critical "
            f"({tied}): the wedge stays {state} over the whole range"
        )
    return float(brentq(f, 0.0, hi, xtol=1e-12))


@dataclass(frozen=True)
class TaperUncertainty:
    """Monte Carlo propagation of measurement error in alpha and beta.

    Attributes
    ----------
    alpha, beta : ndarray
        Sampled surface slopes and decollement dips, degrees.
    state : ndarray of str
        State of each sample; "undefined" for samples that are no wedge.
    probabilities : dict
        Fraction of samples in each of "sub-critical", "critical",
        "super-critical" and "undefined".
    """

    alpha: Float
    beta: Float
    state: NDArray[np.object_]
    probabilities: dict[str, float]


def state_probabilities(
    alpha: float,
    beta: float,
    *,
    alpha_sd: float,
    beta_sd: float,
    friction: float,
    basal_friction: float,
    pore_ratio: float = 0.0,
    basal_pore_ratio: float | None = None,
    setting: str = "subaerial",
    method: str = "exact",
    fluid_density: float = 1000.0,
    rock_density: float = 2700.0,
    tolerance: float = 0.25,
    samples: int = 10000,
    seed: int = 0,
) -> TaperUncertainty:
    """Probability of each wedge state given normally distributed errors in alpha and beta.

    Parameters
    ----------
    alpha, beta : float
        Measured surface slope and decollement dip, degrees.
    alpha_sd, beta_sd : float
        Standard deviations of the measurements, degrees (>= 0).
    friction, basal_friction, pore_ratio, basal_pore_ratio, setting, method, fluid_density, rock_density
        As for :func:`critical_taper`.
    tolerance : float
        Half-width of the critical band, degrees.
    samples : int
        Number of Monte Carlo samples (>= 100).
    seed : int
        Seed of the random generator; the same seed gives the same answer.

    Returns
    -------
    TaperUncertainty

    Raises
    ------
    ParameterError
        For parameters out of range.

    Examples
    --------
    >>> u = state_probabilities(8.0, 2.0, alpha_sd=0.5, beta_sd=1.0, friction=30, basal_friction=10)
    >>> u.probabilities["super-critical"]
    1.0
    """
    w = _wedge(friction, basal_friction, pore_ratio, basal_pore_ratio, setting, method, fluid_density, rock_density)
    values = {
        name: _number(v, name, "degrees")
        for name, v in (("alpha", alpha), ("beta", beta), ("alpha_sd", alpha_sd), ("beta_sd", beta_sd),
                        ("tolerance", tolerance))
    }
    for name in ("alpha_sd", "beta_sd", "tolerance"):
        if values[name] < 0:
            raise ParameterError(f"{name} = {values[name]} degrees must be >= 0")
    n = int(samples)
    if n < 100:
        raise ParameterError(f"samples = {samples} is too few for probabilities; give at least 100")
    rng = np.random.default_rng(seed)
    a = rng.normal(values["alpha"], values["alpha_sd"], n)
    b = rng.normal(values["beta"], values["beta_sd"], n)
    state, _ = _state_codes(np.radians(a), np.radians(b), w, values["tolerance"])
    probabilities = {s: float(np.mean(state == s)) for s in (*STATES, UNDEFINED)}
    if probabilities[UNDEFINED] > 0:
        log.info("%d of %d samples are no wedge and counted as undefined", np.sum(state == UNDEFINED), n)
    return TaperUncertainty(a, b, state, probabilities)


def assess_wedge(
    alpha: float,
    beta: float,
    *,
    alpha_sd: float = 0.0,
    beta_sd: float = 0.0,
    friction: float,
    basal_friction: float,
    pore_ratio: float = 0.0,
    basal_pore_ratio: float | None = None,
    setting: str = "subaerial",
    method: str = "exact",
    fluid_density: float = 1000.0,
    rock_density: float = 2700.0,
    tolerance: float = 0.25,
    samples: int = 10000,
    seed: int = 0,
    uncertainty: TaperUncertainty | None = None,
) -> pd.DataFrame:
    """One-row summary of a measured wedge: critical slopes, state, probabilities, critical lambda.

    Parameters
    ----------
    alpha, beta, alpha_sd, beta_sd, tolerance, samples, seed
        As for :func:`state_probabilities`.
    uncertainty : TaperUncertainty, optional
        The :func:`state_probabilities` result for these same inputs, when the
        caller already has it (e.g. for a figure); computed otherwise.
    friction, basal_friction, pore_ratio, basal_pore_ratio, setting, method, fluid_density, rock_density
        As for :func:`critical_taper`.

    Returns
    -------
    pandas.DataFrame
        One row: the inputs, ``critical_alpha`` and ``extensional_alpha``
        (degrees, NaN where undefined), ``taper`` and ``critical_taper``
        (degrees), ``state``, ``p_sub_critical``, ``p_critical``,
        ``p_super_critical``, ``p_undefined``, ``critical_pore_ratio`` (lambda,
        lambda_b tied to lambda unless ``basal_pore_ratio`` is given) and
        ``note`` (why a value is missing).

    Raises
    ------
    ParameterError, DegenerateDataError
        As :func:`classify`.

    Examples
    --------
    >>> row = assess_wedge(5.0, 2.0, friction=30, basal_friction=10).iloc[0]
    >>> row["state"], round(float(row["critical_alpha"]), 3)
    ('super-critical', 2.106)
    """
    kw = dict(friction=friction, basal_friction=basal_friction, pore_ratio=pore_ratio,
              basal_pore_ratio=basal_pore_ratio, setting=setting, method=method,
              fluid_density=fluid_density, rock_density=rock_density)
    state = classify(alpha, beta, tolerance=tolerance, **kw)
    w = _wedge(friction, basal_friction, pore_ratio, basal_pore_ratio, setting, method, fluid_density, rock_density)
    b = np.radians(float(beta))
    alpha_c = float(np.degrees(_critical_alpha(np.asarray(b), w, "compressional")))
    alpha_e = float(np.degrees(_critical_alpha(np.asarray(b), w, "extensional")))
    odds = uncertainty
    if odds is None:
        odds = state_probabilities(alpha, beta, alpha_sd=alpha_sd, beta_sd=beta_sd,
                                   tolerance=tolerance, samples=samples, seed=seed, **kw)
    notes = []
    try:
        lam = critical_pore_ratio(alpha, beta, friction=friction, basal_friction=basal_friction,
                                  basal_pore_ratio=basal_pore_ratio, setting=setting, method=method,
                                  fluid_density=fluid_density, rock_density=rock_density)
    except DegenerateDataError as exc:
        lam = np.nan
        notes.append(f"critical_pore_ratio: {exc}")
    if not np.isfinite(alpha_c):
        notes.append("no critical slope on the compressional branch for this beta")
    row = {
        "alpha": float(alpha), "alpha_sd": float(alpha_sd), "beta": float(beta), "beta_sd": float(beta_sd),
        "friction": float(friction), "basal_friction": float(basal_friction), "pore_ratio": float(pore_ratio),
        "basal_pore_ratio": float(pore_ratio if basal_pore_ratio is None else basal_pore_ratio),
        "setting": setting, "method": method,
        "critical_alpha": alpha_c, "extensional_alpha": alpha_e,
        "taper": float(alpha) + float(beta), "critical_taper": alpha_c + float(beta),
        "state": state, "tolerance": float(tolerance),
        **{f"p_{s.replace('-', '_')}": p for s, p in odds.probabilities.items()},
        "samples": int(samples), "seed": int(seed),
        "critical_pore_ratio": lam, "note": "; ".join(notes),
    }
    return pd.DataFrame([row])


_STATE_COLOURS = {"sub-critical": "#b2182b", "critical": "#e08214", "super-critical": "#2166ac", UNDEFINED: "#7f7f7f"}


def plot_envelope(
    envelope_frame: pd.DataFrame,
    *,
    alpha: float | None = None,
    beta: float | None = None,
    alpha_sd: float = 0.0,
    beta_sd: float = 0.0,
    uncertainty: TaperUncertainty | None = None,
    title: str | None = None,
    ax: Any = None,
) -> Figure:
    """Figure of the stability envelope with the measured wedge and its uncertainty.

    Parameters
    ----------
    envelope_frame : pandas.DataFrame
        Output of :func:`envelope`.
    alpha, beta : float, optional
        Measured surface slope and decollement dip, degrees.
    alpha_sd, beta_sd : float
        One-standard-deviation error bars, degrees.
    uncertainty : TaperUncertainty, optional
        Monte Carlo samples drawn as a cloud coloured by state, with the
        probabilities in the legend.
    title : str, optional
        Axes title.
    ax : matplotlib Axes, optional
        Axes to draw on; a new figure otherwise.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> fig = plot_envelope(envelope(friction=30, basal_friction=10), alpha=5, beta=2)
    >>> len(fig.axes)
    1
    """
    import matplotlib.pyplot as plt

    if ax is None:
        fig, ax = plt.subplots(figsize=(7.0, 5.0), layout="constrained")
    else:
        fig = ax.figure
    comp = envelope_frame[envelope_frame["branch"] == "compressional"]
    ext = envelope_frame[envelope_frame["branch"] == "extensional"]
    # view around the measured wedge and the part of the envelope that matters for thrust belts
    b_lo, b_hi, a_lo, a_hi = -10.0, 30.0, -2.0, 20.0
    if alpha is not None and beta is not None:
        b_lo = min(b_lo, beta - 3 * beta_sd - 5)
        b_hi = max(b_hi, beta + 3 * beta_sd + 5)
        a_lo = min(a_lo, alpha - 3 * alpha_sd - 2)
        a_hi = max(a_hi, alpha + 3 * alpha_sd + 2)
    ax.fill_betweenx(comp["alpha"], b_lo - 100, comp["beta"], color=_STATE_COLOURS["sub-critical"],
                     alpha=0.08, lw=0)
    ax.fill_betweenx(ext["alpha"], b_lo - 100, ext["beta"], facecolor="none", hatch="//",
                     edgecolor="#999999", lw=0)
    ax.axhspan(envelope_frame["alpha"].max(), a_hi + 100, color="#dddddd", lw=0,
               label="surface steeper than friction allows")
    ax.plot(comp["beta"], comp["alpha"], color="black", lw=1.8, label="critical, compressional branch")
    ax.plot(ext["beta"], ext["alpha"], color="black", lw=1.2, ls="--", label="critical, extensional branch")
    if uncertainty is not None:
        pick = np.linspace(0, uncertainty.alpha.size - 1, min(uncertainty.alpha.size, 3000)).astype(int)
        for s in (*STATES, UNDEFINED):
            sel = pick[uncertainty.state[pick] == s]
            p = uncertainty.probabilities[s]
            if p == 0:
                continue
            ax.scatter(uncertainty.beta[sel], uncertainty.alpha[sel], s=3, color=_STATE_COLOURS[s], alpha=0.25,
                       lw=0)
            ax.plot([], [], "o", ms=4, color=_STATE_COLOURS[s], label=f"P({s}) = {p:.2f}")
    if alpha is not None and beta is not None:
        ax.errorbar([beta], [alpha], xerr=[beta_sd], yerr=[alpha_sd], fmt="o", color="black", mfc="white",
                    ms=7, capsize=3, zorder=5, label=f"measured wedge ({alpha:.2f}, {beta:.2f})")
    ax.text(0.03, 0.04, "sub-critical", transform=ax.transAxes, color=_STATE_COLOURS["sub-critical"])
    ax.text(0.97, 0.5, "stable\n(super-critical)", transform=ax.transAxes, ha="right",
            color=_STATE_COLOURS["super-critical"])
    ax.text(0.03, 0.93, "extensional failure", transform=ax.transAxes, color="#555555")
    ax.set_xlim(b_lo, b_hi)
    ax.set_ylim(a_lo, a_hi)
    ax.axhline(0, color="#cccccc", lw=0.6, zorder=0)
    ax.axvline(0, color="#cccccc", lw=0.6, zorder=0)
    ax.set_xlabel("decollement dip beta (degrees, positive toward the hinterland)")
    ax.set_ylabel("surface slope alpha (degrees, positive toward the toe)")
    if title:
        ax.set_title(title)
    ax.legend(loc="upper right", fontsize=8, framealpha=0.9)
    add_caution(ax)
    return fig
