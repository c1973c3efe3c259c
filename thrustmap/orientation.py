"""Orientation maths for planes and lines, vectorised over numpy arrays.

Conventions
-----------
* Azimuths in degrees clockwise from north, in [0, 360).
* Planes internally as dip direction / dip; strike follows the right-hand rule
  (dip direction = strike + 90).
* Lines as trend / plunge, plunge positive downward; lower hemisphere.
* Unit vectors in a right-handed (east, north, up) frame, the frame of a
  projected CRS with elevation: a line of trend ``t`` and plunge ``p`` is
  ``(sin t cos p, cos t cos p, -sin p)``.
* A plane's pole is its downward normal: trend = dip direction + 180,
  plunge = 90 - dip.

Every function takes scalars or arrays, broadcasts, and returns NaN where an
input is NaN. Parsers never raise halfway through a column: they return values
plus a per-element error reason (empty string when the element parsed).
"""

from __future__ import annotations

import re

import numpy as np
from numpy.typing import ArrayLike, NDArray

from thrustmap.errors import AttitudeParseError

__all__ = [
    "normalize_azimuth",
    "strike_to_dip_direction",
    "dip_direction_to_strike",
    "plane_to_pole",
    "pole_to_plane",
    "line_to_vector",
    "vector_to_line",
    "plane_to_normal",
    "normal_to_plane",
    "lower_hemisphere",
    "angle_between_lines",
    "angle_between_planes",
    "rake_to_line",
    "line_to_rake",
    "plane_intersection",
    "parse_bearing",
    "parse_planes",
    "parse_plane",
    "parse_lines",
    "parse_line",
]

Float = NDArray[np.float64]

_LETTER_AZ = {"N": 0.0, "NE": 45.0, "E": 90.0, "SE": 135.0, "S": 180.0, "SW": 225.0, "W": 270.0, "NW": 315.0}


def normalize_azimuth(azimuth: ArrayLike) -> Float:
    """Wrap azimuths into [0, 360) degrees.

    Examples
    --------
    >>> normalize_azimuth([-10, 360, 725]).tolist()
    [350.0, 0.0, 5.0]
    """
    a = np.mod(np.asarray(azimuth, dtype=float), 360.0)
    return np.where(a >= 360.0, 0.0, a) + 0.0


def strike_to_dip_direction(strike: ArrayLike) -> Float:
    """Dip direction (degrees) of planes given by right-hand-rule strike (degrees).

    Examples
    --------
    >>> float(strike_to_dip_direction(300))
    30.0
    """
    return normalize_azimuth(np.asarray(strike, dtype=float) + 90.0)


def dip_direction_to_strike(dip_direction: ArrayLike) -> Float:
    """Right-hand-rule strike (degrees) of planes given by dip direction (degrees).

    Examples
    --------
    >>> float(dip_direction_to_strike(30))
    300.0
    """
    return normalize_azimuth(np.asarray(dip_direction, dtype=float) - 90.0)


def plane_to_pole(dip_direction: ArrayLike, dip: ArrayLike) -> tuple[Float, Float]:
    """Trend and plunge (degrees) of the lower-hemisphere poles to planes.

    Examples
    --------
    >>> [float(v) for v in plane_to_pole(90, 30)]
    [270.0, 60.0]
    """
    dd = np.asarray(dip_direction, dtype=float)
    d = np.asarray(dip, dtype=float)
    return normalize_azimuth(dd + 180.0), 90.0 - d


def pole_to_plane(trend: ArrayLike, plunge: ArrayLike) -> tuple[Float, Float]:
    """Dip direction and dip (degrees) of the planes whose poles are given.

    Poles with negative plunge (upper hemisphere) are first reversed.

    Examples
    --------
    >>> [float(v) for v in pole_to_plane(270, 60)]
    [90.0, 30.0]
    """
    t, p = lower_hemisphere(trend, plunge)
    return normalize_azimuth(t + 180.0), 90.0 - p


def line_to_vector(trend: ArrayLike, plunge: ArrayLike) -> Float:
    """Unit vectors (..., 3) in (east, north, up) of lines given by trend and plunge.

    Examples
    --------
    >>> np.round(line_to_vector(90, 0), 12).tolist()
    [1.0, 0.0, -0.0]
    """
    t = np.radians(np.asarray(trend, dtype=float))
    p = np.radians(np.asarray(plunge, dtype=float))
    cp = np.cos(p)
    return np.stack(np.broadcast_arrays(np.sin(t) * cp, np.cos(t) * cp, -np.sin(p)), axis=-1)


def vector_to_line(vector: ArrayLike) -> tuple[Float, Float]:
    """Trend and plunge (degrees) of vectors (..., 3) in (east, north, up), lower hemisphere.

    Vectors pointing up are reversed (lines are axial). Zero vectors give NaN.

    Examples
    --------
    >>> [round(float(v), 6) for v in vector_to_line([0, 1, 1])]
    [180.0, 45.0]
    """
    v = np.asarray(vector, dtype=float)
    norm = np.linalg.norm(v, axis=-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        u = v / np.where(norm > 0, norm, np.nan)[..., None]
    u = np.where((u[..., 2] > 0)[..., None], -u, u)
    e, n, z = u[..., 0], u[..., 1], u[..., 2]
    plunge = np.degrees(np.arcsin(np.clip(-z, -1.0, 1.0)))
    horizontal = np.hypot(e, n)
    trend = np.where(horizontal > 1e-12, np.degrees(np.arctan2(e, n)), 0.0)
    trend = np.where(np.isnan(plunge), np.nan, trend)
    return normalize_azimuth(trend), plunge + 0.0


def plane_to_normal(dip_direction: ArrayLike, dip: ArrayLike) -> Float:
    """Downward unit normals (..., 3) in (east, north, up) of planes (the poles as vectors)."""
    return line_to_vector(*plane_to_pole(dip_direction, dip))


def normal_to_plane(normal: ArrayLike) -> tuple[Float, Float]:
    """Dip direction and dip (degrees) of the planes with the given normals (either sense)."""
    return pole_to_plane(*vector_to_line(normal))


def lower_hemisphere(trend: ArrayLike, plunge: ArrayLike) -> tuple[Float, Float]:
    """Reverse lines with negative plunge so that every line points down.

    Examples
    --------
    >>> [float(v) for v in lower_hemisphere(10, -30)]
    [190.0, 30.0]
    """
    t = np.asarray(trend, dtype=float)
    p = np.asarray(plunge, dtype=float)
    up = p < 0
    return normalize_azimuth(np.where(up, t + 180.0, t)), np.where(up, -p, p) + 0.0


def _axial_angle(u: Float, v: Float) -> Float:
    c = np.abs(np.sum(u * v, axis=-1))
    return np.degrees(np.arccos(np.clip(c, 0.0, 1.0)))


def angle_between_lines(
    trend1: ArrayLike, plunge1: ArrayLike, trend2: ArrayLike, plunge2: ArrayLike
) -> Float:
    """Acute angle (degrees, 0-90) between lines, treated as axes.

    Examples
    --------
    >>> round(float(angle_between_lines(0, 0, 90, 0)), 6)
    90.0
    """
    return _axial_angle(line_to_vector(trend1, plunge1), line_to_vector(trend2, plunge2))


def angle_between_planes(
    dip_direction1: ArrayLike, dip1: ArrayLike, dip_direction2: ArrayLike, dip2: ArrayLike
) -> Float:
    """Acute dihedral angle (degrees, 0-90) between planes, the angle between their poles.

    Examples
    --------
    >>> round(float(angle_between_planes(90, 30, 270, 30)), 6)
    60.0
    """
    return _axial_angle(plane_to_normal(dip_direction1, dip1), plane_to_normal(dip_direction2, dip2))


def rake_to_line(
    dip_direction: ArrayLike,
    dip: ArrayLike,
    rake: ArrayLike,
    *,
    from_azimuth: ArrayLike | None = None,
) -> tuple[Float, Float]:
    """Trend and plunge (degrees) of a line lying in a plane, given its rake (pitch).

    Parameters
    ----------
    dip_direction, dip : array_like
        The plane, degrees.
    rake : array_like
        Angle in the plane, 0-180 degrees, measured from the strike end named by
        ``from_azimuth`` toward the down-dip direction.
    from_azimuth : array_like, optional
        Azimuth (degrees) of the strike end the rake is measured from. It is
        snapped to the nearer of the two strike ends. Default: the right-hand-rule
        strike.

    Returns
    -------
    trend, plunge : ndarray
        Lower-hemisphere line, degrees.

    Examples
    --------
    >>> [round(float(v), 6) for v in rake_to_line(90, 30, 90)]
    [90.0, 30.0]
    """
    dd = np.asarray(dip_direction, dtype=float)
    strike = dip_direction_to_strike(dd)
    if from_azimuth is not None:
        fa = np.asarray(from_azimuth, dtype=float)
        off = np.abs((fa - strike + 180.0) % 360.0 - 180.0)
        strike = np.where(off > 90.0, normalize_azimuth(strike + 180.0), strike)
    s = line_to_vector(strike, 0.0)
    d = line_to_vector(dd, dip)
    r = np.radians(np.asarray(rake, dtype=float))[..., None]
    return vector_to_line(np.cos(r) * s + np.sin(r) * d)


def line_to_rake(
    dip_direction: ArrayLike, dip: ArrayLike, trend: ArrayLike, plunge: ArrayLike
) -> Float:
    """Rake (degrees, 0-180) of a line measured from the plane's right-hand-rule strike.

    The line is first projected into the plane, so slightly inconsistent field
    pairs still give a rake.

    Examples
    --------
    >>> round(float(line_to_rake(90, 30, 90, 30)), 6)
    90.0
    """
    strike = dip_direction_to_strike(dip_direction)
    s = line_to_vector(strike, 0.0)
    d = line_to_vector(dip_direction, dip)
    v = line_to_vector(trend, plunge)
    a = np.sum(v * s, axis=-1)
    b = np.sum(v * d, axis=-1)
    b_sign = np.where(b < 0, -1.0, 1.0)
    return np.degrees(np.arctan2(np.abs(b), a * b_sign))


def plane_intersection(
    dip_direction1: ArrayLike, dip1: ArrayLike, dip_direction2: ArrayLike, dip2: ArrayLike
) -> tuple[Float, Float]:
    """Trend and plunge (degrees) of the line shared by two planes; NaN for parallel planes.

    Examples
    --------
    >>> [round(float(v), 6) for v in plane_intersection(90, 30, 270, 30)]
    [0.0, 0.0]
    """
    c = np.cross(plane_to_normal(dip_direction1, dip1), plane_to_normal(dip_direction2, dip2))
    c = np.where((np.linalg.norm(c, axis=-1) < 1e-9)[..., None], np.nan, c)
    return vector_to_line(c)


# --------------------------------------------------------------------------- parsing

_NUM = r"(\d+(?:\.\d*)?|\.\d+)"
_QUAD = re.compile(r"^([NS])\s*" + _NUM + r"\s*([EW])$")
_NUMBER = re.compile(r"^" + _NUM + r"$")
_SEP = re.compile(r"[\s/,;:]+")
_PLANE = re.compile(
    r"^(?P<az>[NSEW0-9.\-\s]+?)\s*[/,;:\s]\s*(?P<dip>" + _NUM + r")\s*(?P<letter>[NSEW]{1,2})?$"
)
_LINE_QUAD = re.compile(
    r"^(?P<plunge1>" + _NUM + r"\s*[/,;:\s]\s*)?(?P<az>[NS]\s*" + _NUM + r"\s*[EW])(?:\s*[/,;:\s]\s*(?P<plunge>" + _NUM + r"))?$"
)


def _bearing_one(text: str) -> tuple[float, str]:
    t = text.strip().upper()
    if t in ("N-S", "S-N", "NS"):
        return 0.0, ""
    if t in ("E-W", "W-E", "EW"):
        return 90.0, ""
    m = _QUAD.match(t)
    if m:
        a = float(m.group(2))
        if a > 90.0:
            return np.nan, "quadrant_angle_over_90"
        base, ew = m.group(1), m.group(3)
        if base == "N":
            return (a if ew == "E" else (360.0 - a) % 360.0), ""
        return (180.0 - a if ew == "E" else 180.0 + a), ""
    m = _NUMBER.match(t)
    if m:
        a = float(t)
        if a > 360.0:
            return np.nan, "azimuth_out_of_range"
        return a % 360.0, ""
    return np.nan, "unparseable"


def parse_bearing(texts: ArrayLike) -> tuple[Float, NDArray[np.object_]]:
    """Parse azimuths written as numbers, quadrant bearings (``N30E``) or ``N-S``/``E-W``.

    Returns
    -------
    azimuth : ndarray
        Degrees in [0, 360); NaN where the text could not be read. 360 reads as 0.
    error : ndarray of str
        Reason code per element, ``""`` where it parsed.

    Examples
    --------
    >>> parse_bearing(["N30E", "S10W", "N-S", "215"])[0].tolist()
    [30.0, 190.0, 0.0, 215.0]
    """
    arr = np.atleast_1d(np.asarray(texts, dtype=object))
    out = np.full(arr.shape, np.nan)
    err = np.full(arr.shape, "", dtype=object)
    for i, t in np.ndenumerate(arr):
        out[i], err[i] = _bearing_one("" if t is None else str(t))
    return out, err


def _letter_side(strike: float, letter: str) -> tuple[float, str]:
    """Pick the dip direction (strike +/- 90) on the side named by a compass letter."""
    target = _LETTER_AZ.get(letter)
    if target is None:
        return np.nan, "unknown_dip_letter"
    best, best_off = np.nan, 180.0
    for cand in ((strike + 90.0) % 360.0, (strike - 90.0) % 360.0):
        off = abs((cand - target + 180.0) % 360.0 - 180.0)
        if off < best_off - 1e-9:
            best, best_off = cand, off
        elif abs(off - best_off) <= 1e-9:
            best = np.nan
    if np.isnan(best) or best_off >= 90.0 - 1e-9:
        return np.nan, "letter_contradicts_strike"
    return best, ""


def _plane_one(text: str, azimuth: str) -> tuple[float, float, str]:
    t = re.sub(r"\s+", " ", text.strip().upper())
    if not t:
        return np.nan, np.nan, "missing"
    m = _PLANE.match(t)
    if not m:
        return np.nan, np.nan, "unparseable"
    az_text = m.group("az").strip()
    letter = m.group("letter") or ""
    az, err = _bearing_one(az_text)
    if err:
        return np.nan, np.nan, err
    dip = float(m.group("dip"))
    if dip > 90.0:
        return np.nan, np.nan, "dip_out_of_range"
    quadrant = not _NUMBER.match(az_text)
    if letter:
        strike = (az - 90.0) % 360.0 if (azimuth == "dip_direction" and not quadrant) else az
        return _with_dip(_letter_side(strike, letter), dip)
    if quadrant:
        if dip == 0.0:
            return (az + 90.0) % 360.0, dip, ""
        return np.nan, np.nan, "missing_dip_letter"
    if azimuth == "dip_direction":
        return az, dip, ""
    return (az + 90.0) % 360.0, dip, ""


def _with_dip(side: tuple[float, str], dip: float) -> tuple[float, float, str]:
    dd, err = side
    return (np.nan, np.nan, err) if err else (dd, dip, "")


_AZIMUTH_CHOICES = ("strike", "dip_direction")


def _check_choice(value: str, name: str, choices: tuple[str, ...]) -> None:
    if value not in choices:
        raise ValueError(f"{name}={value!r} is not valid; choose one of {', '.join(choices)}")


def parse_planes(
    texts: ArrayLike, *, azimuth: str = "strike"
) -> tuple[Float, Float, NDArray[np.object_]]:
    """Parse plane attitudes written in any of the common field notations.

    Accepted forms (case and separators ``/ , ; :`` or spaces are free):

    * ``030/45`` — azimuth and dip; the azimuth is a right-hand-rule strike or a
      dip direction as ``azimuth`` says;
    * ``030/45SE`` — a dip-quadrant letter decides the dip side and overrides the
      right-hand rule; a letter that cannot match the strike is an error;
    * ``N30E 45SE``, ``S10W 60W`` — quadrant strike with the dip side letter;
    * ``N-S 30E``, ``E-W 20N`` — cardinal strikes.

    Parameters
    ----------
    texts : array_like of str
        One attitude per element.
    azimuth : {"strike", "dip_direction"}
        What a bare numeric azimuth means. Keyword only.

    Returns
    -------
    dip_direction, dip : ndarray
        Degrees; NaN where the element did not parse.
    error : ndarray of str
        Reason code per element (``""`` when it parsed): ``missing``,
        ``unparseable``, ``dip_out_of_range``, ``azimuth_out_of_range``,
        ``quadrant_angle_over_90``, ``missing_dip_letter``,
        ``letter_contradicts_strike``, ``unknown_dip_letter``.

    Examples
    --------
    >>> dd, dip, err = parse_planes(["N30E 45SE", "030/45SE", "210/45NW", "N-S 30E"])
    >>> dd.tolist(), dip.tolist(), err.tolist()
    ([120.0, 120.0, 300.0, 90.0], [45.0, 45.0, 45.0, 30.0], ['', '', '', ''])
    """
    _check_choice(azimuth, "azimuth", _AZIMUTH_CHOICES)
    arr = np.atleast_1d(np.asarray(texts, dtype=object))
    dd = np.full(arr.shape, np.nan)
    dip = np.full(arr.shape, np.nan)
    err = np.full(arr.shape, "", dtype=object)
    for i, t in np.ndenumerate(arr):
        s = "" if t is None or (isinstance(t, float) and np.isnan(t)) else str(t)
        dd[i], dip[i], err[i] = _plane_one(s, azimuth)
    return dd, dip, err


def parse_plane(text: str, *, azimuth: str = "strike") -> tuple[float, float]:
    """Parse one plane attitude; see :func:`parse_planes` for the notations.

    Raises
    ------
    AttitudeParseError
        With the text and the reason when it cannot be read.

    Examples
    --------
    >>> parse_plane("S10W 60W")
    (280.0, 60.0)
    """
    dd, dip, err = parse_planes([text], azimuth=azimuth)
    if err[0]:
        raise AttitudeParseError(
            f"cannot read plane attitude {text!r}: {err[0].replace('_', ' ')}; expected e.g. "
            "'030/45', '030/45SE', 'N30E 45SE' or 'N-S 30E'",
            value=text,
        )
    return float(dd[0]), float(dip[0])


def _line_one(text: str) -> tuple[float, float, str]:
    t = re.sub(r"\s+", " ", text.strip().upper())
    if not t:
        return np.nan, np.nan, "missing"
    m = _LINE_QUAD.match(t)
    if m and (m.group("plunge") is None) != (m.group("plunge1") is None):
        az, err = _bearing_one(m.group("az"))
        if err:
            return np.nan, np.nan, err
        pl_text = m.group("plunge") or m.group("plunge1").strip(" /,;:")
        pl = float(pl_text)
    else:
        parts = [p for p in _SEP.split(t) if p]
        if len(parts) != 2 or not all(_NUMBER.match(p) for p in parts):
            return np.nan, np.nan, "unparseable"
        az, err = _bearing_one(parts[0])
        if err:
            return np.nan, np.nan, err
        pl = float(parts[1])
    if pl > 90.0:
        return np.nan, np.nan, "plunge_out_of_range"
    return az, pl, ""


def parse_lines(texts: ArrayLike) -> tuple[Float, Float, NDArray[np.object_]]:
    """Parse line attitudes: ``045/30`` (trend/plunge) or ``N30E 20`` / ``20 N30E``.

    Returns
    -------
    trend, plunge : ndarray
        Degrees; NaN where the element did not parse.
    error : ndarray of str
        Reason code per element, ``""`` when it parsed.

    Examples
    --------
    >>> parse_lines(["045/30", "N30E 20", "S20W/10"])[0].tolist()
    [45.0, 30.0, 200.0]
    """
    arr = np.atleast_1d(np.asarray(texts, dtype=object))
    tr = np.full(arr.shape, np.nan)
    pl = np.full(arr.shape, np.nan)
    err = np.full(arr.shape, "", dtype=object)
    for i, t in np.ndenumerate(arr):
        s = "" if t is None or (isinstance(t, float) and np.isnan(t)) else str(t)
        tr[i], pl[i], err[i] = _line_one(s)
    return tr, pl, err


def parse_line(text: str) -> tuple[float, float]:
    """Parse one line attitude; see :func:`parse_lines`.

    Raises
    ------
    AttitudeParseError
        With the text and the reason when it cannot be read.

    Examples
    --------
    >>> parse_line("N30E 20")
    (30.0, 20.0)
    """
    tr, pl, err = parse_lines([text])
    if err[0]:
        raise AttitudeParseError(
            f"cannot read line attitude {text!r}: {err[0].replace('_', ' ')}; expected e.g. "
            "'045/30' (trend/plunge) or 'N30E 20'",
            value=text,
        )
    return float(tr[0]), float(pl[0])
