"""Fold geometry from bedding attitudes: pi-girdle axis, limbs, axial plane, Fleuty classes.

A cylindrical fold's bedding poles lie on a great circle (the pi-girdle) whose
pole is the fold axis: the eigenvector of the least eigenvalue of the poles'
orientation tensor. Its uncertainty comes from a seeded bootstrap. The two
limbs are found along the girdle from the bedding normals oriented toward
stratigraphic top (upward, reversed for overturned beds), which tells an open
fold from a tight one; the interlimb angle is 180 degrees minus the angle
between the limbs' mean normals, and the axial plane contains the axis and
bisects the limbs.

References
----------
Fleuty, M. J. (1964). The description of folds. Proc. Geol. Assoc. 75, 461-492
(classes as tabulated in Lisle, Geological Structures and Maps).
Woodcock, N. H. (1977). Specification of fabric shapes using an eigenvalue method.
GSA Bulletin 88, 1231-1236.
"""

from __future__ import annotations

import warnings
from dataclasses import asdict, dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from thrustmap.errors import DegenerateDataError, InputError, ParameterError, ThrustmapWarning
from thrustmap.orientation import (
    angle_between_lines,
    dip_direction_to_strike,
    line_to_rake,
    normal_to_plane,
    vector_to_line,
)
from thrustmap.stats import FEW, _checked, _components, _dot, _eigen, _lines, _tensor

__all__ = [
    "FoldFit",
    "fit_fold",
    "tightness_class",
    "plunge_class",
    "axial_surface_class",
    "TIGHTNESS_CLASSES",
    "PLUNGE_CLASSES",
    "AXIAL_SURFACE_CLASSES",
    "ISOCLINAL_LIMIT",
    "MIN_CYLINDRICITY",
]

Float = NDArray[np.float64]

#: Interlimb angles (degrees) at or below this are called isoclinal: Fleuty's
#: 0 degrees within the precision of field measurements (our choice).
ISOCLINAL_LIMIT = 1.0
#: Below this cylindricity (1 - S3/S2) fit_fold warns that the axis is poorly defined.
MIN_CYLINDRICITY = 0.5

# Fleuty (1964). Each limit belongs to the tighter (or steeper) class: an
# interlimb angle of exactly 120 is open, 70 close, 30 tight; a plunge or dip of
# exactly 10 is gentle, 30 moderate, 60 steep, 80 vertical/upright.
TIGHTNESS_CLASSES = ("gentle", "open", "close", "tight", "isoclinal", "mushroom")
PLUNGE_CLASSES = (
    "horizontal",
    "gently plunging",
    "moderately plunging",
    "steeply plunging",
    "vertical",
)
AXIAL_SURFACE_CLASSES = (
    "recumbent",
    "gently inclined",
    "moderately inclined",
    "steeply inclined",
    "upright",
    "reclined",
)
_DIP_LIMITS = (10.0, 30.0, 60.0, 80.0)
# A hinge pitching at least this much in a gently to steeply inclined axial
# surface makes the fold reclined (hinge plunging down the axial-surface dip).
_RECLINED_PITCH = 80.0
_BOOT_CHUNK = 4_000_000
_DEGENERATE = 1e-10


def _classify(values: ArrayLike, fn) -> NDArray[np.object_] | str:
    v = np.asarray(values, dtype=float)
    out = np.where(np.isnan(v), "", fn(np.nan_to_num(v))).astype(object)
    return str(out) if out.ndim == 0 else out


def tightness_class(interlimb_angle: ArrayLike) -> NDArray[np.object_] | str:
    """Fleuty (1964) tightness of folds from their interlimb angle.

    gentle 180-120, open 120-70, close 70-30, tight 30-0, isoclinal 0 (taken as
    at most :data:`ISOCLINAL_LIMIT` degree), mushroom for negative angles. A
    class limit belongs to the tighter class: 120 is open, 70 close, 30 tight.

    Parameters
    ----------
    interlimb_angle : array_like
        Degrees, -180 to 180.

    Returns
    -------
    str or ndarray of str
        ``""`` where the angle is NaN.

    Raises
    ------
    ParameterError
        Angles outside [-180, 180].

    Examples
    --------
    >>> tightness_class([150, 120, 69.5, 30, 0.2]).tolist()
    ['gentle', 'open', 'close', 'tight', 'isoclinal']
    """
    a = np.asarray(interlimb_angle, dtype=float)
    if np.any(np.abs(a[~np.isnan(a)]) > 180.0):
        raise ParameterError(
            f"interlimb angles must lie within -180 to 180 degrees; got {a[np.abs(a) > 180].tolist()[:5]}"
        )

    def fn(v):
        return np.select(
            [v < 0, v <= ISOCLINAL_LIMIT, v <= 30.0, v <= 70.0, v <= 120.0],
            ["mushroom", "isoclinal", "tight", "close", "open"],
            "gentle",
        )

    return _classify(a, fn)


def _check_dips(values: ArrayLike, what: str) -> Float:
    v = np.asarray(values, dtype=float)
    bad = ~np.isnan(v) & ((v < 0) | (v > 90))
    if np.any(bad):
        raise ParameterError(f"{what} must lie within 0-90 degrees; got {v[bad].tolist()[:5]}")
    return v


def plunge_class(plunge: ArrayLike) -> NDArray[np.object_] | str:
    """Fleuty (1964) term for the plunge of a fold hinge.

    horizontal 0-10, gently plunging 10-30, moderately plunging 30-60, steeply
    plunging 60-80, vertical 80-90; a limit belongs to the steeper class.

    Parameters
    ----------
    plunge : array_like
        Degrees, 0-90.

    Returns
    -------
    str or ndarray of str
        ``""`` where the plunge is NaN.

    Raises
    ------
    ParameterError
        Plunges outside 0-90.

    Examples
    --------
    >>> plunge_class(10)
    'gently plunging'
    """
    p = _check_dips(plunge, "plunges")
    return _classify(
        p,
        lambda v: np.asarray(PLUNGE_CLASSES, dtype=object)[
            np.searchsorted(_DIP_LIMITS, v, side="right")
        ],
    )


def axial_surface_class(
    dip: ArrayLike, *, hinge_pitch: ArrayLike | None = None
) -> NDArray[np.object_] | str:
    """Fleuty (1964) term for the attitude of a fold's axial surface.

    recumbent 0-10, gently inclined 10-30, moderately inclined 30-60, steeply
    inclined 60-80, upright 80-90 (a limit belongs to the steeper class).
    Given the hinge's pitch in the axial surface, an inclined fold whose hinge
    pitches 80 degrees or more (plunges down the axial-surface dip) is
    reclined.

    Parameters
    ----------
    dip : array_like
        Dip of the axial surface, degrees.
    hinge_pitch : array_like, optional
        Pitch (rake) of the hinge in the axial surface, 0-90 degrees from the
        strike. Keyword only.

    Returns
    -------
    str or ndarray of str
        ``""`` where the dip is NaN.

    Raises
    ------
    ParameterError
        Dips or pitches outside 0-90.

    Examples
    --------
    >>> axial_surface_class([85, 45, 45], hinge_pitch=[10, 10, 85]).tolist()
    ['upright', 'moderately inclined', 'reclined']
    """
    d = _check_dips(dip, "axial-surface dips")
    names = np.asarray(AXIAL_SURFACE_CLASSES[:5], dtype=object)

    def fn(v):
        out = names[np.searchsorted(_DIP_LIMITS, v, side="right")]
        if hinge_pitch is not None:
            pitch = _check_dips(hinge_pitch, "hinge pitches")
            reclined = (v >= _DIP_LIMITS[0]) & (v < _DIP_LIMITS[-1]) & (pitch >= _RECLINED_PITCH)
            out = np.where(reclined, "reclined", out)
        return out

    return _classify(d, fn)


@dataclass(frozen=True)
class FoldFit:
    """A cylindrical fold fitted to bedding attitudes.

    Angles in degrees; azimuths true or grid north as the input was.

    Attributes
    ----------
    n : int
        Number of bedding attitudes.
    axis_trend, axis_plunge : float
        Fold axis: the pole of the best-fit pi-girdle, the eigenvector of the
        least eigenvalue of the poles' orientation tensor.
    cone95 : float
        Half-angle of the 95 % bootstrap confidence cone about the axis: the
        95th percentile of the angles between the axis and the axes of
        ``n_boot`` resampled data sets (a resample whose axis is undefined
        counts as 90). NaN when ``n_boot`` is 0.
    cylindricity : float
        1 - S3 / S2 from the normalised eigenvalues S1 >= S2 >= S3 of the pole
        tensor: 1 for poles on a perfect great circle, near 0 when the poles
        show no girdle (spread as much off the girdle as along it).
    eigenvalues : tuple of float
        S1, S2, S3 (sum 1).
    girdle_dip_direction, girdle_dip : float
        The best-fit pi-girdle as a plane (its pole is the axis).
    interlimb_angle : float
        180 minus the angle between the mean normals of the two limbs, both
        oriented toward stratigraphic top and projected on the profile plane.
    tightness : str
        Fleuty (1964) class of the interlimb angle, see :func:`tightness_class`.
    plunge_class : str
        Fleuty (1964) term for the axis plunge, see :func:`plunge_class`.
    axial_surface_class : str
        Fleuty (1964) term for the axial plane, see :func:`axial_surface_class`.
    axial_plane_dip_direction, axial_plane_dip : float
        The plane containing the axis that bisects the two limbs.
    hinge_pitch : float
        Pitch of the axis in the axial plane, 0-90 from its strike.
    limb_dip_direction, limb_dip : tuple of float
        Mean attitude of each limb (a plane containing the axis).
    limb_n : tuple of int
        Attitudes assigned to each limb.
    hinge_n : int
        Number of measured hinge lines given (0 when none).
    hinge_trend, hinge_plunge : float
        Mean of the measured hinge lines (principal eigenvector); NaN when none.
    hinge_angle : float
        Angle between that mean and the pi-axis; NaN when no hinge lines.
    n_boot, seed : int
        Bootstrap settings used.
    """

    n: int
    axis_trend: float
    axis_plunge: float
    cone95: float
    cylindricity: float
    eigenvalues: tuple[float, float, float]
    girdle_dip_direction: float
    girdle_dip: float
    interlimb_angle: float
    tightness: str
    plunge_class: str
    axial_surface_class: str
    axial_plane_dip_direction: float
    axial_plane_dip: float
    hinge_pitch: float
    limb_dip_direction: tuple[float, float]
    limb_dip: tuple[float, float]
    limb_n: tuple[int, int]
    hinge_n: int
    hinge_trend: float
    hinge_plunge: float
    hinge_angle: float
    n_boot: int
    seed: int

    @property
    def axial_plane_strike(self) -> float:
        """Right-hand-rule strike of the axial plane, degrees."""
        return float(dip_direction_to_strike(self.axial_plane_dip_direction))

    def to_dict(self) -> dict[str, object]:
        """Flat mapping of scalar attributes (pairs split into ``_1``/``_2``) for tables.

        Examples
        --------
        >>> fit = fit_fold([90, 270, 90, 270, 80, 280], [30, 30, 40, 40, 35, 35], n_boot=0)
        >>> sorted(k for k in fit.to_dict() if k.startswith("limb_dip"))[:2]
        ['limb_dip_1', 'limb_dip_2']
        """
        out: dict[str, object] = {}
        for key, value in asdict(self).items():
            if isinstance(value, tuple):
                for i, v in enumerate(value, start=1):
                    out[f"{key}_{i}" if key != "eigenvalues" else f"s{i}"] = v
            else:
                out[key] = value
        out["axial_plane_strike"] = self.axial_plane_strike
        return out


def _planes(dip_direction: ArrayLike, dip: ArrayLike) -> Float:
    """Downward poles of planes as rows (3, N)."""
    dd, d = _checked(dip_direction, dip, "dip_direction/dip", angle="dip", low=0.0)
    # The pole trends opposite the dip direction and plunges 90 - dip.
    return _components(dd + 180.0, 90.0 - d)


def _bootstrap_cone(outer: Float, axis: Float, n_boot: int, seed: int) -> float:
    """95th percentile of the angle between ``axis`` and resampled least eigenvectors."""
    n = outer.shape[0]
    rng = np.random.default_rng(seed)
    angles = np.empty(n_boot)
    chunk = max(1, _BOOT_CHUNK // n)
    for start in range(0, n_boot, chunk):
        m = min(chunk, n_boot - start)
        idx = rng.integers(0, n, size=(m, n))
        flat = (idx + (np.arange(m) * n)[:, None]).ravel()
        counts = np.bincount(flat, minlength=m * n).reshape(m, n).astype(float)
        six = counts @ outer / n
        t = np.empty((m, 3, 3))
        t[:, 0, 0], t[:, 1, 1], t[:, 2, 2] = six[:, 0], six[:, 1], six[:, 2]
        t[:, 0, 1] = t[:, 1, 0] = six[:, 3]
        t[:, 0, 2] = t[:, 2, 0] = six[:, 4]
        t[:, 1, 2] = t[:, 2, 1] = six[:, 5]
        vals, vecs = np.linalg.eigh(t)
        cos = np.abs(vecs[:, :, 0] @ axis)
        ang = np.degrees(np.arccos(np.clip(cos, 0.0, 1.0)))
        undefined = (vals[:, 1] - vals[:, 0]) <= _DEGENERATE
        angles[start : start + m] = np.where(undefined, 90.0, ang)
    return float(np.percentile(angles, 95.0))


def _split_limbs(psi: Float) -> float:
    """Threshold splitting angles ``psi`` (radians) in two groups: 1-D 2-means from 0.

    Lloyd iterations on the sorted angles: the threshold moves to the midpoint
    of the two group means until the groups no longer change.
    """
    ordered = np.sort(psi)
    cum = np.concatenate([[0.0], np.cumsum(ordered)])
    n = ordered.size
    threshold = 0.0
    k = int(np.searchsorted(ordered, threshold))
    for _ in range(100):
        if k in (0, n):
            break
        threshold = 0.5 * (cum[k] / k + (cum[-1] - cum[k]) / (n - k))
        new = int(np.searchsorted(ordered, threshold))
        if new == k:
            break
        k = new
    return threshold


def fit_fold(
    dip_direction: ArrayLike,
    dip: ArrayLike,
    *,
    overturned: ArrayLike | None = None,
    seed: int = 0,
    n_boot: int = 1000,
    hinge_trend: ArrayLike | None = None,
    hinge_plunge: ArrayLike | None = None,
) -> FoldFit:
    """Fit a cylindrical fold to bedding attitudes (pi-girdle method).

    Parameters
    ----------
    dip_direction, dip : array_like
        Bedding planes, degrees.
    overturned : array_like of bool, optional
        True for overturned beds (stratigraphic top facing down). Needed to
        tell a tight fold with an overturned limb from an open one; without it
        every bed is taken as right way up. Keyword only.
    seed : int
        Seed of the bootstrap; the same data and seed give the same cone.
    n_boot : int
        Bootstrap resamples for ``cone95``; 0 skips the bootstrap (cone95 NaN).
        Its cost grows with ``n_boot`` times the number of attitudes.
    hinge_trend, hinge_plunge : array_like, optional
        Measured hinge lines in the same fold, degrees, to compare with the
        pi-axis.

    Returns
    -------
    FoldFit

    Raises
    ------
    DegenerateDataError
        No attitudes, or poles with no spread along a girdle (all parallel,
        one attitude), where the axis is undefined; limbs that cannot be
        separated.
    InputError
        Missing values, dips outside 0-90, arrays that do not pair up.
    ParameterError
        Negative ``n_boot``; hinge trends without plunges or the reverse.

    Warns
    -----
    ThrustmapWarning
        Fewer than 5 attitudes; cylindricity below :data:`MIN_CYLINDRICITY`
        (the axis is poorly defined).

    Examples
    --------
    >>> fit = fit_fold([120, 240, 110, 250, 100, 260, 180], [20, 20, 25, 25, 15, 15, 10])
    >>> round(fit.axis_trend), round(fit.axis_plunge), round(fit.interlimb_angle), fit.tightness
    (180, 8, 148, 'gentle')
    """
    if int(n_boot) != n_boot or n_boot < 0:
        raise ParameterError(f"fit_fold: n_boot = {n_boot!r} must be a whole number >= 0")
    n_boot = int(n_boot)
    poles = _planes(dip_direction, dip)
    n = poles.shape[1]
    flip = np.zeros(n, dtype=bool)
    if overturned is not None:
        flip = np.atleast_1d(np.asarray(overturned, dtype=bool)).ravel()
        if flip.shape != (n,):
            raise InputError(f"fit_fold: got {flip.size} overturned flags for {n} attitudes")
    if n < FEW:
        warnings.warn(
            f"fit_fold: only {n} attitude(s); a fold fitted to fewer than {FEW} is unreliable",
            ThrustmapWarning,
            stacklevel=2,
        )
    vals, vecs = _eigen(_tensor(poles))
    vals = vals / vals.sum()
    if vals[1] - vals[2] <= _DEGENERATE:
        raise DegenerateDataError(
            f"fit_fold: the {n} bedding pole(s) do not spread along a girdle (eigenvalues "
            f"S2 = {vals[1]:.3g}, S3 = {vals[2]:.3g}); the fold axis is undefined"
        )
    axis = vecs[:, 2] if vecs[2, 2] <= 0 else -vecs[:, 2]
    cylindricity = float(1.0 - vals[2] / vals[1])
    if cylindricity < MIN_CYLINDRICITY:
        warnings.warn(
            f"fit_fold: the poles hardly form a girdle (cylindricity {cylindricity:.2f} < "
            f"{MIN_CYLINDRICITY}); the fold axis is poorly defined",
            ThrustmapWarning,
            stacklevel=2,
        )
    axis_trend, axis_plunge = (float(v) for v in vector_to_line(axis))
    girdle_dd, girdle_dip = (float(v) for v in normal_to_plane(axis))

    cone95 = float("nan")
    if n_boot:
        e, nn, u = poles
        outer = np.column_stack([e * e, nn * nn, u * u, e * nn, e * u, nn * u])
        cone95 = _bootstrap_cone(outer, axis, n_boot, int(seed))

    # Normals toward stratigraphic top (the reversed pole unless overturned), in
    # coordinates (a, b) of the profile plane spanned by e1 and e2.
    top = np.full(n, -1.0)
    top[flip] = 1.0
    u1 = vecs[:, 0]
    u2 = np.cross(axis, u1)
    a = top * np.einsum("i,ij->j", u1, poles)
    b = top * np.einsum("i,ij->j", u2, poles)
    # Angles about the axis, from the mean direction of the normals.
    sum_a, sum_b = float(a.sum()), float(b.sum())
    ra, rb = (sum_a, sum_b) if np.hypot(sum_a, sum_b) > _DEGENERATE * n else (1.0, 0.0)
    psi = np.arctan2(b * ra - a * rb, a * ra + b * rb)
    first = (psi < _split_limbs(psi)).astype(float)
    if int(first.sum()) in (0, n):
        raise DegenerateDataError(f"fit_fold: the {n} attitudes cannot be split into two limbs")
    a1, b1 = _dot(a, first), _dot(b, first)
    limb_normals = []
    for sa, sb in ((a1, b1), (sum_a - a1, sum_b - b1)):
        v = sa * u1 + sb * u2
        limb_normals.append(v / np.linalg.norm(v))
    n1, n2 = limb_normals
    between = float(np.degrees(np.arccos(np.clip(n1 @ n2, -1.0, 1.0))))
    interlimb = 180.0 - between
    bisector = n1 - n2
    if np.linalg.norm(bisector) <= _DEGENERATE:
        raise DegenerateDataError(
            "fit_fold: the two limbs are parallel; the axial plane is undefined"
        )
    ap_dd, ap_dip = (float(v) for v in normal_to_plane(bisector))
    rake = float(line_to_rake(ap_dd, ap_dip, axis_trend, axis_plunge))
    pitch = min(rake, 180.0 - rake)
    limbs = [tuple(float(v) for v in normal_to_plane(m)) for m in (n1, n2)]

    hinge_n, h_trend, h_plunge, h_angle = _hinges(
        hinge_trend, hinge_plunge, axis_trend, axis_plunge
    )
    return FoldFit(
        n=n,
        axis_trend=axis_trend,
        axis_plunge=axis_plunge,
        cone95=cone95,
        cylindricity=cylindricity,
        eigenvalues=(float(vals[0]), float(vals[1]), float(vals[2])),
        girdle_dip_direction=girdle_dd,
        girdle_dip=girdle_dip,
        interlimb_angle=interlimb,
        tightness=tightness_class(interlimb),
        plunge_class=plunge_class(np.clip(axis_plunge, 0.0, 90.0)),
        axial_surface_class=axial_surface_class(np.clip(ap_dip, 0.0, 90.0), hinge_pitch=pitch),
        axial_plane_dip_direction=ap_dd,
        axial_plane_dip=ap_dip,
        hinge_pitch=pitch,
        limb_dip_direction=(limbs[0][0], limbs[1][0]),
        limb_dip=(limbs[0][1], limbs[1][1]),
        limb_n=(int(first.sum()), n - int(first.sum())),
        hinge_n=hinge_n,
        hinge_trend=h_trend,
        hinge_plunge=h_plunge,
        hinge_angle=h_angle,
        n_boot=n_boot,
        seed=int(seed),
    )


def _hinges(
    trend: ArrayLike | None, plunge: ArrayLike | None, axis_trend: float, axis_plunge: float
) -> tuple[int, float, float, float]:
    if trend is None and plunge is None:
        return 0, float("nan"), float("nan"), float("nan")
    if trend is None or plunge is None:
        raise ParameterError("fit_fold: give both hinge_trend and hinge_plunge, or neither")
    if np.size(trend) == 0 and np.size(plunge) == 0:
        return 0, float("nan"), float("nan"), float("nan")
    x = _lines(trend, plunge, what="hinge_trend/hinge_plunge")
    _, vecs = _eigen(_tensor(x))
    t, p = (float(v) for v in vector_to_line(vecs[:, 0]))
    angle = float(angle_between_lines(t, p, axis_trend, axis_plunge))
    return x.shape[1], t, p, angle
