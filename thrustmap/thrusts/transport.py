"""Tectonic transport direction: given, from slickenlines, or from the trace geometry.

Priority: a direction given by the user; else the mean hanging-wall movement
direction of reverse-sense slickenlines on fault or thrust surfaces (Fisher
mean with its 95 % confidence cone); else the normal to the mean thrust strike
pointing away from the mean hanging-wall dip direction, i.e. toward the
foreland (with the spread of the strikes). The source is always reported.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

import geopandas as gpd
import numpy as np
import pyproj
import shapely
from numpy.typing import ArrayLike, NDArray

from thrustmap.errors import DegenerateDataError, ParameterError
from thrustmap.north import convergence as grid_convergence
from thrustmap.north import grid_to_true, magnetic_to_true, true_to_grid
from thrustmap.orientation import line_to_vector, normalize_azimuth
from thrustmap.stats import fisher_k_alpha
from thrustmap.thrusts._geometry import (
    axial_mean,
    azimuth_of,
    explode,
    left_normals,
    segments,
    unit_vectors,
)

__all__ = [
    "AZIMUTH_REFS",
    "TRANSPORT_SOURCES",
    "TransportDirection",
    "fisher_mean",
    "given_transport",
    "transport_from_slickenlines",
    "transport_from_traces",
]

TRANSPORT_SOURCES = ("given", "slickenlines", "trace_geometry")
SLIP_FEATURES = ("slickenline", "fault", "thrust")


@dataclass(frozen=True)
class TransportDirection:
    """The transport direction used by the analysis.

    Attributes
    ----------
    azimuth_grid, azimuth_true : float
        Azimuth toward which the hanging walls moved (toward the foreland),
        degrees from grid north of the working CRS and from true north.
    source : str
        ``given``, ``slickenlines`` or ``trace_geometry``.
    n : int
        Number of slickenlines or trace segments used (0 when given).
    cone : float
        95 % confidence cone (Fisher alpha95, degrees) of the slickenline mean;
        NaN for other sources or fewer than two slickenlines.
    spread : float
        Circular standard deviation (degrees) of the slickenline movement
        azimuths or of the thrust strikes; 0 when given.
    convergence : float
        Grid convergence (degrees) used to convert between the two norths.
    detail : str
        One sentence on how the direction was obtained.
    """

    azimuth_grid: float
    azimuth_true: float
    source: str
    n: int
    cone: float
    spread: float
    convergence: float
    detail: str

    def as_dict(self) -> dict[str, object]:
        """The fields as a plain dictionary."""
        return asdict(self)


def fisher_mean(
    vectors: ArrayLike, *, p: float = 0.05
) -> tuple[NDArray[np.float64], float, float, float]:
    """Fisher (1953) mean of unit vectors with the precision and confidence cone.

    Parameters
    ----------
    vectors : array_like, shape (n, 3)
        Unit vectors.
    p : float
        1 - confidence level (0.05 gives alpha95).

    Returns
    -------
    mean : ndarray, shape (3,)
        Mean unit vector.
    resultant : float
        Length R of the vector sum.
    kappa : float
        Precision k = (n - 1)/(n - R); inf when all vectors coincide, NaN for n < 2.
    cone : float
        Confidence cone half-angle (degrees), NaN for n < 2.

    Raises
    ------
    DegenerateDataError
        When there are no vectors or they sum to zero.

    Examples
    --------
    >>> m, r, k, a = fisher_mean([[1, 0, 0], [0.8, 0.6, 0], [0.8, -0.6, 0]])
    >>> m.tolist(), round(r, 4), round(k, 4), round(a, 1)
    ([1.0, 0.0, 0.0], 2.6, 5.0, 62.2)
    """
    v = np.asarray(vectors, dtype=float).reshape(-1, 3)
    n = len(v)
    s = v.sum(axis=0)
    r = float(np.linalg.norm(s))
    if n == 0 or r < 1e-12:
        raise DegenerateDataError(f"no mean direction: {n} vectors with resultant {r:.3g}")
    if n < 2:
        return s / r, r, float("nan"), float("nan")
    kappa, cone = fisher_k_alpha(n, r, conf=1.0 - p)
    return s / r, r, kappa, cone


AZIMUTH_REFS = ("true", "grid", "magnetic")


def given_transport(
    azimuth: float,
    *,
    azimuth_ref: str,
    convergence: float,
    declination: float | None = None,
) -> TransportDirection:
    """A transport azimuth supplied by the user.

    Parameters
    ----------
    azimuth : float
        Degrees, 0-360, toward the foreland.
    azimuth_ref : {"true", "grid", "magnetic"}
        North reference of ``azimuth``.
    convergence : float
        Grid convergence (degrees) at the study area.
    declination : float, optional
        Magnetic declination (degrees, east positive); needed for a magnetic
        azimuth (true = magnetic + declination).

    Raises
    ------
    ParameterError
        For an azimuth outside 0-360, an unknown reference, or a magnetic
        azimuth without a declination.

    Examples
    --------
    >>> given_transport(90.0, azimuth_ref="true", convergence=2.0).azimuth_grid
    88.0
    >>> given_transport(90.0, azimuth_ref="magnetic", convergence=2.0, declination=3.0).azimuth_true
    93.0
    """
    if azimuth_ref not in AZIMUTH_REFS:
        raise ParameterError(
            f"azimuth_ref = {azimuth_ref!r} is not one of: {', '.join(AZIMUTH_REFS)}"
        )
    az = float(azimuth)
    if not 0.0 <= az <= 360.0:
        raise ParameterError(f"transport_azimuth = {azimuth} degrees is outside 0-360")
    if azimuth_ref == "magnetic":
        if declination is None:
            raise ParameterError(
                "transport_azimuth is magnetic: give the declination (degrees, east positive)"
            )
        true = float(magnetic_to_true(az, float(declination)))
        grid = float(true_to_grid(true, convergence))
    elif azimuth_ref == "true":
        grid = float(true_to_grid(az, convergence))
    else:
        grid = float(normalize_azimuth(az))
    return TransportDirection(
        azimuth_grid=grid,
        azimuth_true=float(grid_to_true(grid, convergence)),
        source="given",
        n=0,
        cone=float("nan"),
        spread=0.0,
        convergence=float(convergence),
        detail=f"given by the user as {az:g} degrees ({azimuth_ref} north)"
        + (f", declination {declination:g} degrees" if azimuth_ref == "magnetic" else ""),
    )


def transport_from_slickenlines(
    attitudes: gpd.GeoDataFrame, *, crs: pyproj.CRS, convergence: float
) -> TransportDirection | None:
    """Mean hanging-wall movement direction of reverse-sense slickenlines.

    Rows used: ``feature`` slickenline, fault or thrust with a line
    (``trend``, ``plunge``, true north) and ``sense`` reverse. A reverse
    slickenline plunging down the dip records the hanging wall moving up the
    dip, toward ``trend + 180``. Trends are turned to grid north with the
    convergence at each station.

    Parameters
    ----------
    attitudes : GeoDataFrame
        The attitude table, points in ``crs``.
    crs : pyproj.CRS
        The working CRS.
    convergence : float
        Grid convergence (degrees) at the study area, for the true azimuth.

    Returns
    -------
    TransportDirection or None
        None when fewer than two usable slickenlines exist.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from shapely import Point
    >>> att = gpd.GeoDataFrame({"feature": ["slickenline"] * 2, "trend": [268.0, 272.0],
    ...     "plunge": [30.0, 30.0], "sense": ["reverse"] * 2},
    ...     geometry=[Point(500000, 5000000)] * 2, crs="EPSG:32633")
    >>> round(transport_from_slickenlines(att, crs=att.crs, convergence=0.0).azimuth_grid, 6)
    90.0
    """
    feature = attitudes["feature"].astype(str).str.strip().str.lower()
    sense = attitudes["sense"].fillna("").astype(str).str.strip().str.lower()
    trend = attitudes["trend"].to_numpy(dtype=float, na_value=np.nan)
    plunge = attitudes["plunge"].to_numpy(dtype=float, na_value=np.nan)
    pts = np.asarray(attitudes.geometry, dtype=object)
    x, y = shapely.get_x(pts), shapely.get_y(pts)
    use = (
        feature.isin(SLIP_FEATURES).to_numpy()
        & (sense == "reverse").to_numpy()
        & np.isfinite(trend)
        & np.isfinite(plunge)
        & np.isfinite(x)
    )
    if use.sum() < 2:
        return None
    conv = grid_convergence(x[use], y[use], crs)
    movement = -line_to_vector(true_to_grid(trend[use], conv), plunge[use])
    mean, _, kappa, cone = fisher_mean(movement)
    horizontal = np.hypot(mean[0], mean[1])
    if horizontal < 1e-9:
        raise DegenerateDataError("the mean slickenline is vertical: no transport azimuth")
    grid = float(azimuth_of(mean[:2]))
    az = unit_vectors(azimuth_of(movement[:, :2]))
    r = float(np.linalg.norm(az.mean(axis=0)))
    spread = float(np.degrees(np.sqrt(-2.0 * np.log(max(r, 1e-300)))))
    return TransportDirection(
        azimuth_grid=grid,
        azimuth_true=float(grid_to_true(grid, convergence)),
        source="slickenlines",
        n=int(use.sum()),
        cone=cone,
        spread=spread,
        convergence=float(convergence),
        detail=(
            f"Fisher mean hanging-wall movement of {int(use.sum())} reverse-sense slickenlines "
            f"(k = {kappa:.1f}, alpha95 = {cone:.1f} degrees)"
        ),
    )


def transport_from_traces(
    lines: ArrayLike, sides: ArrayLike, *, convergence: float
) -> TransportDirection | None:
    """Normal to the mean thrust strike, pointing away from the mean hanging-wall dip direction.

    Parameters
    ----------
    lines : array_like of LineString or MultiLineString
        Traces in the working CRS.
    sides : array_like of int
        Hanging-wall side per trace: +1 left, -1 right of the digitising
        direction, 0 unknown (used for the strike, not for the sense).
    convergence : float
        Grid convergence (degrees) at the study area.

    Returns
    -------
    TransportDirection or None
        None when no trace has a known hanging-wall side.

    Examples
    --------
    >>> from shapely import LineString
    >>> t = transport_from_traces([LineString([(0, 0), (0, 100)])], [1], convergence=0.0)
    >>> t.azimuth_grid, t.source
    (90.0, 'trace_geometry')
    """
    lines = np.asarray(lines, dtype=object)
    sides = np.asarray(sides, dtype=float)
    parts, owner = explode(lines)
    start, end, seg = segments(parts)
    vec = end - start
    length = np.hypot(vec[:, 0], vec[:, 1])
    keep = length > 0
    vec, length, seg_owner = vec[keep], length[keep], owner[seg[keep]]
    known = sides[seg_owner] != 0
    if not known.any():
        return None
    strike, spread, _ = axial_mean(azimuth_of(vec), length)
    hw = np.sum(sides[seg_owner][known, None] * left_normals(vec[known]), axis=0)
    hw_az = float(azimuth_of(hw))
    cand = normalize_azimuth(strike + 90.0)
    if float(np.dot(unit_vectors(cand), hw)) > 0:
        cand = normalize_azimuth(cand + 180.0)
    grid = float(cand)
    return TransportDirection(
        azimuth_grid=grid,
        azimuth_true=float(grid_to_true(grid, convergence)),
        source="trace_geometry",
        n=int(len(vec)),
        cone=float("nan"),
        spread=spread,
        convergence=float(convergence),
        detail=(
            f"normal to the mean thrust strike {strike:.1f}/{strike + 180.0:.1f} (grid) of "
            f"{len(vec)} trace segments, away from the mean hanging-wall dip direction "
            f"{hw_az:.1f} (grid)"
        ),
    )
